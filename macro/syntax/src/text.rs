//! Canonical text of token sequences.
//!
//! A level's label is its source text with whitespace normalised. Spans cannot give the
//! source text of a whole expression on stable Rust, and `TokenStream`'s own `Display`
//! differs between the compiler and `proc-macro2`'s fallback (and may change between
//! releases), while the label feeds the fingerprint that the macro and the plugin must
//! agree on. So the text is rebuilt from the tokens with fixed spacing rules close to
//! rustfmt's: `Codec :: Delta` and `Codec::Delta` are the same level, written
//! `Codec::Delta`; `Foo{a:1}` is written `Foo { a: 1 }`.

use proc_macro2::{Delimiter, Spacing, TokenStream, TokenTree};
use quote::ToTokens;

/// The canonical text of anything that prints as tokens.
///
/// ```
/// let e: syn::Expr = syn::parse_str("Codec :: Delta").unwrap();
/// assert_eq!(heddle_syntax::text::canonical(&e), "Codec::Delta");
/// ```
pub fn canonical<T: ToTokens + ?Sized>(tokens: &T) -> String {
    let mut w = Writer {
        out: String::new(),
        state: State::Expect,
        generic_depth: 0,
    };
    w.stream(tokens.to_token_stream());
    w.out.truncate(w.out.trim_end().len());
    w.out
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum State {
    /// An operand is expected (start, after an opening delimiter, a comma or a binary
    /// operator): the next operator is a prefix one.
    Expect,
    /// Just after an operand: the next operator is a binary one.
    Operand,
    /// After `::`, `.`, a prefix operator and the like: nothing may be spaced off.
    Tight,
}

struct Writer {
    out: String,
    state: State,
    generic_depth: usize,
}

impl Writer {
    fn stream(&mut self, ts: TokenStream) {
        let mut iter = ts.into_iter().peekable();
        while let Some(tt) = iter.next() {
            match tt {
                TokenTree::Ident(i) => self.word(&i.to_string()),
                TokenTree::Literal(l) => self.word(&l.to_string()),
                TokenTree::Group(g) => self.group(g.delimiter(), g.stream()),
                TokenTree::Punct(p) => {
                    let mut op = String::from(p.as_char());
                    let mut spacing = p.spacing();
                    // a joint punct followed by a punct is one multi-character operator
                    // (`==`, `::`, `..=`); a lone `'` before an ident starts a lifetime
                    while spacing == Spacing::Joint {
                        match iter.peek() {
                            Some(TokenTree::Punct(next)) => {
                                op.push(next.as_char());
                                spacing = next.spacing();
                                iter.next();
                            }
                            _ => break,
                        }
                    }
                    self.operator(&op);
                }
            }
        }
    }

    fn word(&mut self, w: &str) {
        if self.state == State::Operand {
            self.out.push(' ');
        }
        self.out.push_str(w);
        self.state = State::Operand;
    }

    fn group(&mut self, delim: Delimiter, inner: TokenStream) {
        let (open, close) = match delim {
            Delimiter::Parenthesis => ("(", ")"),
            Delimiter::Bracket => ("[", "]"),
            Delimiter::Brace => ("{", "}"),
            Delimiter::None => {
                // an invisible group (from a `macro_rules` fragment) is transparent
                self.stream(inner);
                return;
            }
        };
        if delim == Delimiter::Brace && self.state == State::Operand {
            self.out.push(' ');
        }
        let saved = (self.state, self.generic_depth);
        self.out.push_str(open);
        self.state = State::Expect;
        self.generic_depth = 0;
        let empty = inner.is_empty();
        if delim == Delimiter::Brace && !empty {
            self.out.push(' ');
        }
        self.stream(inner);
        self.out.truncate(self.out.trim_end().len());
        if delim == Delimiter::Brace && !empty {
            self.out.push(' ');
        }
        self.out.push_str(close);
        self.generic_depth = saved.1;
        self.state = State::Operand;
    }

    fn operator(&mut self, op: &str) {
        if self.generic_depth > 0 && op.chars().all(|c| c == '>') {
            self.out.push_str(op);
            self.generic_depth = self.generic_depth.saturating_sub(op.len());
            self.state = State::Operand;
            return;
        }
        match op {
            "::" | "." | "'" | "#" | "$" | ".." | "..=" => {
                self.out.push_str(op);
                self.state = State::Tight;
            }
            "," | ";" => {
                self.out.push_str(op);
                self.out.push(' ');
                self.state = State::Expect;
            }
            ":" => {
                self.out.push_str(": ");
                self.state = State::Expect;
            }
            "?" => {
                self.out.push_str(op);
                self.state = State::Operand;
            }
            "!" if self.state == State::Operand => {
                // a macro call's bang: `vec![…]`
                self.out.push_str(op);
                self.state = State::Tight;
            }
            "<" if self.state != State::Operand || self.generic_depth > 0 => {
                // `::<` of a turbofish, `<T as Trait>` of a qualified path, or nested
                self.out.push_str(op);
                self.generic_depth += 1;
                self.state = State::Tight;
            }
            _ if self.state == State::Operand => {
                self.out.push(' ');
                self.out.push_str(op);
                self.out.push(' ');
                self.state = State::Expect;
            }
            _ => {
                // prefix operator: `-1`, `!x`, `&x`, `*x`
                self.out.push_str(op);
                self.state = State::Tight;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::canonical;

    fn c(src: &str) -> String {
        let e: syn::Expr = syn::parse_str(src).expect("test input is a valid expression");
        canonical(&e)
    }

    // Expected texts follow rustfmt's spacing for expressions (common practice).
    #[test]
    fn paths_calls_and_literals() {
        assert_eq!(c("Codec :: Delta"), "Codec::Delta");
        assert_eq!(c("Codec::Delta"), "Codec::Delta");
        assert_eq!(c("Some( 3 )"), "Some(3)");
        assert_eq!(c("Duration::from_millis(10)"), "Duration::from_millis(10)");
        assert_eq!(c("\"a  b\""), "\"a  b\"");
        assert_eq!(c("1_000u32"), "1_000u32");
        assert_eq!(c("x . len ( )"), "x.len()");
        assert_eq!(c("i32::MAX"), "i32::MAX");
        assert_eq!(c("f(a,b,)"), "f(a, b,)");
    }

    #[test]
    fn operators() {
        assert_eq!(c("-1"), "-1");
        assert_eq!(c("1+2*3"), "1 + 2 * 3");
        assert_eq!(c("a - -1"), "a - -1");
        assert_eq!(c("!x"), "!x");
        assert_eq!(c("&[1u8,2]"), "&[1u8, 2]");
        assert_eq!(c("&mut x"), "&mut x");
        assert_eq!(c("a==b&&!(c!=d)"), "a == b && !(c != d)");
        assert_eq!(c("1..5"), "1..5");
        assert_eq!(c("x as u8"), "x as u8");
        assert_eq!(c("f()?"), "f()?");
    }

    #[test]
    fn structs_macros_and_generics() {
        assert_eq!(c("Foo{a:1,b:2}"), "Foo { a: 1, b: 2 }");
        assert_eq!(c("Foo {}"), "Foo {}");
        assert_eq!(c("vec ! [1, 2]"), "vec![1, 2]");
        assert_eq!(c("Vec :: < u8 > :: new()"), "Vec::<u8>::new()");
        assert_eq!(c("Vec::<Vec<u8>>::new()"), "Vec::<Vec<u8>>::new()");
        assert_eq!(c("<u8 as Default>::default()"), "<u8 as Default>::default()");
        assert_eq!(c("(1, \"x\")"), "(1, \"x\")");
    }

    #[test]
    fn whitespace_never_matters() {
        let a = c("Config { retries : 3 , mode : Mode :: Fast }");
        let b = c("Config{retries:3,mode:Mode::Fast}");
        assert_eq!(a, b);
        assert_eq!(a, "Config { retries: 3, mode: Mode::Fast }");
    }
}
