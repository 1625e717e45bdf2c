//! Every word of the attribute syntax, in one place, so the macro, the plugin and the
//! messages can never spell one differently. (Names of the files heddle reads live with
//! their formats: [`crate::defaults`], [`crate::pins`].)

/// The attribute: `#[cover(...)]` (also reached as `#[heddle_test::cover(...)]`).
pub const COVER: &str = "cover";
/// The crate whose path prefix may qualify the attribute (`#[heddle_test::cover]`).
pub const CRATE: &str = "heddle_test";
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
/// Key: a row the design must contain, by level labels, `require(name = level, …)`;
/// parameters left out are chosen by the engine; repeatable.
pub const REQUIRE: &str = "require";
/// Key: factors covered at a higher strength than the rest, `focus(codec, unit, workers)`,
/// at the base strength + 1 unless `strength = N` is given inside (`lambda = N` too);
/// repeatable.
pub const FOCUS: &str = "focus";
/// Key: how many rows of the design run by default, `budget(12)` or `budget(25%)`.
pub const BUDGET: &str = "budget";
/// Every key `#[cover(...)]` accepts, in the order messages list them.
pub const KEYS: &[&str] = &[STRENGTH, LAMBDA, SEED, EXCLUDE, REQUIRE, FOCUS, BUDGET];
/// The keys a `focus(…)` accepts besides parameter names.
pub const FOCUS_KEYS: &[&str] = &[STRENGTH, LAMBDA];

/// libtest's attribute, which `#[cover]` writes itself on every row.
pub const TEST: &str = "test";
/// Attribute moved from the function to every row.
pub const IGNORE: &str = "ignore";
/// Attribute moved from the function to every row.
pub const SHOULD_PANIC: &str = "should_panic";
/// Attribute copied to the generated module so it disappears with the function.
pub const CFG: &str = "cfg";
