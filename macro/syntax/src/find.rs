//! Finding annotated functions in a whole source file, for the plugin: the same parse
//! and validation as the macro, driven from the file instead of from the compiler.

use syn::spanned::Spanned;
use syn::{Attribute, Ident, Item, ItemFn};

use crate::args::Args;
use crate::ast::{CoverFn, is_cover_path};
use crate::defaults::Defaults;
use crate::pins::PinKey;
use crate::validate::{CoverSpec, validate};

/// An annotated function in a parsed file, borrowed from it.
pub struct Annotated<'a> {
    /// The `#[cover]` attribute.
    pub attr: &'a Attribute,
    /// The function.
    pub item: &'a ItemFn,
    /// The inline modules it sits in, outermost first.
    pub modules: Vec<&'a Ident>,
}

/// Every function carrying `#[cover]` (or `#[heddle_test::cover]`), at file level or in
/// inline modules, in source order. Functions nested in other items are not looked at:
/// the attribute's expansion does not work there.
pub fn annotated(file: &syn::File) -> Vec<Annotated<'_>> {
    let mut out = Vec::new();
    walk(&file.items, &mut Vec::new(), &mut out);
    out
}

fn walk<'a>(items: &'a [Item], modules: &mut Vec<&'a Ident>, out: &mut Vec<Annotated<'a>>) {
    for item in items {
        match item {
            Item::Fn(f) => {
                if let Some(attr) = f.attrs.iter().find(|a| is_cover_path(a.path())) {
                    out.push(Annotated {
                        attr,
                        item: f,
                        modules: modules.clone(),
                    });
                }
            }
            Item::Mod(m) => {
                if let Some((_, items)) = &m.content {
                    modules.push(&m.ident);
                    walk(items, modules, out);
                    modules.pop();
                }
            }
            _ => {}
        }
    }
}

/// One annotated function of a source file, analysed.
#[derive(Debug)]
pub struct Found {
    /// The function's name.
    pub function: String,
    /// The inline modules it sits in, outermost first.
    pub modules: Vec<String>,
    /// 1-based line of its `#[cover]` attribute.
    pub line: usize,
    /// Its spec, or every error the macro would report.
    pub spec: Result<CoverSpec, syn::Error>,
}

impl Found {
    /// The key of its pin, for a file at `file` (relative to the crate root).
    pub fn pin_key(&self, file: &str) -> PinKey {
        PinKey::new(file, self.function.clone())
    }
}

impl Annotated<'_> {
    /// Parses and validates the function exactly as the macro does.
    pub fn analyse(&self, defaults: &Defaults) -> Found {
        let spec = Args::from_attribute(self.attr).and_then(|args| {
            validate(CoverFn::new(&args, self.item, Some(self.attr)), defaults).map(|c| c.spec)
        });
        Found {
            function: syn::ext::IdentExt::unraw(&self.item.sig.ident).to_string(),
            modules: self.modules.iter().map(|m| m.to_string()).collect(),
            line: self.attr.span().start().line,
            spec,
        }
    }
}

/// Parses a Rust source file and analyses every annotated function in it. Fails only
/// when the file itself does not parse.
///
/// ```
/// use heddle_syntax::{Defaults, find::analyse_source};
/// let src = "#[cover(lambda = 2)]\nfn f(#[levels(1, 2)] a: u8, #[levels(true, false)] b: bool) {}";
/// let found = analyse_source(src, &Defaults::default()).unwrap();
/// let spec = found[0].spec.as_ref().unwrap();
/// assert_eq!(spec.spec.factors[0].levels, ["1", "2"]);
/// assert_eq!(spec.spec.lambda, 2);
/// ```
pub fn analyse_source(src: &str, defaults: &Defaults) -> Result<Vec<Found>, syn::Error> {
    // lexing does not recurse, parsing does: the depth is checked in between (text that
    // does not lex is left to `parse_file`, which says why)
    if let Ok(tokens) = src.strip_prefix('\u{feff}').unwrap_or(src).parse() {
        crate::nesting::check(
            &tokens,
            "the file",
            crate::expand::FUNCTION_TOO_DEEP,
            crate::nesting::Scope::Item,
        )?;
    }
    let file = syn::parse_file(src)?;
    Ok(annotated(&file).iter().map(|a| a.analyse(defaults)).collect())
}
