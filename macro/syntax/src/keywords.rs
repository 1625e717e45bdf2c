//! Every word of the attribute syntax and of the files heddle reads, in one place, so the
//! macro, the plugin and the messages can never spell one differently.

/// The attribute: `#[cover(...)]` (also reached as `#[heddle::cover(...)]`).
pub const COVER: &str = "cover";
/// The crate whose path prefix may qualify the attribute (`#[heddle::cover]`).
pub const CRATE: &str = "heddle";
/// The proc-macro crate, a path prefix accepted too (`#[heddle_macros::cover]`).
pub const MACRO_CRATE: &str = "heddle_macros";
/// The parameter attribute listing a factor's levels: `#[levels(a, b, c)]`.
pub const LEVELS: &str = "levels";
/// Key: strength t of the covering array.
pub const STRENGTH: &str = "strength";
/// Key: index λ (how many rows cover each t-way combination).
pub const LAMBDA: &str = "lambda";
/// Key: the seed of the engine's random choices.
pub const SEED: &str = "seed";
/// Key: a constraint ruling rows out, `exclude(EXPR)`; repeatable.
pub const EXCLUDE: &str = "exclude";
/// Every key `#[cover(...)]` accepts, in the order messages list them.
pub const KEYS: &[&str] = &[STRENGTH, LAMBDA, SEED, EXCLUDE];

/// Strength when neither the attribute nor the crate sets one.
pub const DEFAULT_STRENGTH: usize = 2;
/// λ when neither the attribute nor the crate sets one.
pub const DEFAULT_LAMBDA: u32 = 1;

/// The table of crate-wide defaults: `[package.metadata.heddle]`.
pub const METADATA_TABLE: &str = "heddle";
/// Keys the defaults table accepts.
pub const METADATA_KEYS: &[&str] = &[STRENGTH, LAMBDA, SEED];
/// The manifest the defaults live in.
pub const MANIFEST_FILE: &str = "Cargo.toml";

/// Name of the pins file at the crate root.
pub const PINS_FILE: &str = "heddle-pins.toml";
/// Version of the pins file format this crate reads and writes.
pub const PINS_FORMAT: u32 = 1;
/// The command that (re)writes pins, quoted by stale-pin messages.
pub const PIN_COMMAND: &str = "cargo heddle pin";

/// libtest's attribute, which `#[cover]` writes itself on every row.
pub const TEST: &str = "test";
/// Attribute moved from the function to every row.
pub const IGNORE: &str = "ignore";
/// Attribute moved from the function to every row.
pub const SHOULD_PANIC: &str = "should_panic";
/// Attribute copied to the generated module so it disappears with the function.
pub const CFG: &str = "cfg";
