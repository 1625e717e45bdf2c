//! Constraint formulas over "factor == level" atoms, their evaluation on full and partial
//! rows, and the text syntax scripts use to write them.

use std::fmt;

use crate::model::{Factor, UNSET};

/// A boolean formula over the levels of a row.
///
/// ```
/// use heddle_generator::{Expr, Factor};
/// let factors = [Factor::numbered("f1", 2), Factor::numbered("f2", 2)];
/// let e = Expr::parse("f1 == 0 && !(f2 != 1)", &factors).unwrap();
/// assert!(e.eval(&[0, 1]));
/// assert!(!e.eval(&[0, 0]));
/// ```
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub enum Expr {
    /// Factor `factor` is at level `level`.
    Is {
        /// Factor index.
        factor: usize,
        /// Level index.
        level: u8,
    },
    /// Negation.
    Not(Box<Expr>),
    /// Conjunction.
    And(Box<Expr>, Box<Expr>),
    /// Disjunction.
    Or(Box<Expr>, Box<Expr>),
}

impl Expr {
    /// `factor == level`.
    pub fn is(factor: usize, level: u8) -> Self {
        Expr::Is { factor, level }
    }

    /// `factor != level`.
    pub fn is_not(factor: usize, level: u8) -> Self {
        Expr::Not(Box::new(Expr::is(factor, level)))
    }

    /// `self && other`.
    pub fn and(self, other: Expr) -> Self {
        Expr::And(Box::new(self), Box::new(other))
    }

    /// `self || other`.
    pub fn or(self, other: Expr) -> Self {
        Expr::Or(Box::new(self), Box::new(other))
    }

    /// `!self`.
    #[allow(clippy::should_implement_trait)]
    pub fn not(self) -> Self {
        Expr::Not(Box::new(self))
    }

    /// Value on a complete row.
    pub fn eval(&self, row: &[u8]) -> bool {
        match self {
            Expr::Is { factor, level } => row[*factor] == *level,
            Expr::Not(e) => !e.eval(row),
            Expr::And(a, b) => a.eval(row) && b.eval(row),
            Expr::Or(a, b) => a.eval(row) || b.eval(row),
        }
    }

    /// Value on a partial row whose unset entries are [`UNSET`]: `None` when it depends
    /// on an unset entry (Kleene's three-valued logic).
    pub fn eval_partial(&self, row: &[u8]) -> Option<bool> {
        match self {
            Expr::Is { factor, level } => match row[*factor] {
                UNSET => None,
                l => Some(l == *level),
            },
            Expr::Not(e) => e.eval_partial(row).map(|v| !v),
            Expr::And(a, b) => match (a.eval_partial(row), b.eval_partial(row)) {
                (Some(false), _) | (_, Some(false)) => Some(false),
                (Some(true), Some(true)) => Some(true),
                _ => None,
            },
            Expr::Or(a, b) => match (a.eval_partial(row), b.eval_partial(row)) {
                (Some(true), _) | (_, Some(true)) => Some(true),
                (Some(false), Some(false)) => Some(false),
                _ => None,
            },
        }
    }

    /// Adds the factors the formula mentions to `out` (sorted, without repeats).
    pub fn collect_factors(&self, out: &mut Vec<usize>) {
        match self {
            Expr::Is { factor, .. } => {
                if let Err(pos) = out.binary_search(factor) {
                    out.insert(pos, *factor);
                }
            }
            Expr::Not(e) => e.collect_factors(out),
            Expr::And(a, b) | Expr::Or(a, b) => {
                a.collect_factors(out);
                b.collect_factors(out);
            }
        }
    }

    /// The first reference to a factor or level outside `levels` (level counts).
    pub fn check_refs(&self, levels: &[usize]) -> Result<(), (usize, u8)> {
        match self {
            Expr::Is { factor, level } => {
                if *factor < levels.len() && (*level as usize) < levels[*factor] {
                    Ok(())
                } else {
                    Err((*factor, *level))
                }
            }
            Expr::Not(e) => e.check_refs(levels),
            Expr::And(a, b) | Expr::Or(a, b) => {
                a.check_refs(levels)?;
                b.check_refs(levels)
            }
        }
    }

    /// Renders the formula in the text syntax, with factor names and level labels.
    pub fn display<'a>(&'a self, factors: &'a [Factor]) -> impl fmt::Display + 'a {
        Shown { e: self, factors }
    }

    /// Parses the text syntax: atoms `NAME == LABEL` and `NAME != LABEL` combined with
    /// `&&`, `||`, `!` and parentheses (`!` binds tightest, then `&&`, then `||`). A label
    /// is a run of characters other than whitespace, parentheses, `&`, `|` and `!`, or a
    /// quoted string (`'…'` or `"…"`).
    pub fn parse(src: &str, factors: &[Factor]) -> Result<Expr, ParseError> {
        let mut p = Parser { src, pos: 0, factors };
        let e = p.or()?;
        p.skip_ws();
        if p.pos < src.len() {
            return Err(p.error_here(
                "unexpected text after the expression",
                "join atoms with `&&` or `||`",
            ));
        }
        Ok(e)
    }
}

struct Shown<'a> {
    e: &'a Expr,
    factors: &'a [Factor],
}

impl fmt::Display for Shown<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fn go(e: &Expr, fs: &[Factor], f: &mut fmt::Formatter<'_>, parent: u8) -> fmt::Result {
            // precedence: 1 = or, 2 = and, 3 = unary
            match e {
                Expr::Is { factor, level } => {
                    write!(
                        f,
                        "{} == {}",
                        fs[*factor].name, fs[*factor].levels[*level as usize]
                    )
                }
                Expr::Not(inner) => match &**inner {
                    Expr::Is { factor, level } => {
                        write!(
                            f,
                            "{} != {}",
                            fs[*factor].name, fs[*factor].levels[*level as usize]
                        )
                    }
                    other => {
                        write!(f, "!(")?;
                        go(other, fs, f, 0)?;
                        write!(f, ")")
                    }
                },
                Expr::And(a, b) | Expr::Or(a, b) => {
                    let (prec, op) = if matches!(e, Expr::And(..)) {
                        (2, "&&")
                    } else {
                        (1, "||")
                    };
                    if parent > prec {
                        write!(f, "(")?;
                    }
                    go(a, fs, f, prec)?;
                    write!(f, " {op} ")?;
                    go(b, fs, f, prec)?;
                    if parent > prec {
                        write!(f, ")")?;
                    }
                    Ok(())
                }
            }
        }
        go(self.e, self.factors, f, 0)
    }
}

/// A syntax or reference error in a constraint, located by byte offsets into the source.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ParseError {
    /// Byte offset where the problem starts.
    pub offset: usize,
    /// Length in bytes of the offending text (at least 1 unless at the end).
    pub len: usize,
    /// What is wrong, lower case.
    pub message: String,
    /// What to do about it.
    pub hint: String,
}

impl ParseError {
    /// Renders the error with the source line and a caret under the offending text.
    pub fn render(&self, src: &str) -> String {
        let caret = " ".repeat(src[..self.offset.min(src.len())].chars().count());
        let marks = "^".repeat(
            src[self.offset.min(src.len())..(self.offset + self.len).min(src.len())]
                .chars()
                .count()
                .max(1),
        );
        format!(
            "{}\n  {src}\n  {caret}{marks}\n  hint: {}",
            self.message, self.hint
        )
    }
}

impl fmt::Display for ParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} at offset {}", self.message, self.offset)
    }
}

impl std::error::Error for ParseError {}

struct Parser<'a> {
    src: &'a str,
    pos: usize,
    factors: &'a [Factor],
}

impl Parser<'_> {
    fn rest(&self) -> &str {
        &self.src[self.pos..]
    }

    fn skip_ws(&mut self) {
        let trimmed = self.rest().trim_start();
        self.pos = self.src.len() - trimmed.len();
    }

    fn eat(&mut self, tok: &str) -> bool {
        self.skip_ws();
        if self.rest().starts_with(tok) {
            self.pos += tok.len();
            true
        } else {
            false
        }
    }

    fn error_here(&self, message: &str, hint: &str) -> ParseError {
        let len = self.rest().chars().next().map_or(0, char::len_utf8);
        ParseError {
            offset: self.pos,
            len,
            message: message.into(),
            hint: hint.into(),
        }
    }

    fn or(&mut self) -> Result<Expr, ParseError> {
        let mut e = self.and()?;
        while self.eat("||") {
            e = e.or(self.and()?);
        }
        Ok(e)
    }

    fn and(&mut self) -> Result<Expr, ParseError> {
        let mut e = self.unary()?;
        while self.eat("&&") {
            e = e.and(self.unary()?);
        }
        Ok(e)
    }

    fn unary(&mut self) -> Result<Expr, ParseError> {
        self.skip_ws();
        if self.rest().starts_with('!') && !self.rest().starts_with("!=") {
            self.pos += 1;
            return Ok(self.unary()?.not());
        }
        if self.eat("(") {
            let e = self.or()?;
            if !self.eat(")") {
                return Err(self.error_here("expected `)`", "close every `(` with `)`"));
            }
            return Ok(e);
        }
        self.atom()
    }

    fn atom(&mut self) -> Result<Expr, ParseError> {
        self.skip_ws();
        let start = self.pos;
        let name_len = self
            .rest()
            .char_indices()
            .find(|&(i, c)| !(c == '_' || c.is_alphanumeric() || (i > 0 && c == '-')))
            .map_or(self.rest().len(), |(i, _)| i);
        if name_len == 0 {
            return Err(if self.pos == self.src.len() {
                self.error_here("expected a factor name, found the end", "write `NAME == LEVEL`")
            } else {
                self.error_here("expected a factor name", "write `NAME == LEVEL`")
            });
        }
        let name = &self.src[start..start + name_len];
        self.pos += name_len;
        let Some(factor) = self.factors.iter().position(|f| f.name == name) else {
            let known: Vec<&str> = self.factors.iter().map(|f| f.name.as_str()).collect();
            return Err(ParseError {
                offset: start,
                len: name_len,
                message: format!("unknown factor `{name}`"),
                hint: format!("factors are: {}", known.join(", ")),
            });
        };
        let negated = if self.eat("==") {
            false
        } else if self.eat("!=") {
            true
        } else {
            return Err(self.error_here("expected `==` or `!=`", "write `NAME == LEVEL`"));
        };
        self.skip_ws();
        let lstart = self.pos;
        let label: String = match self.rest().chars().next() {
            Some(q @ ('\'' | '"')) => {
                let body = self.rest()[1..].to_string();
                let Some(end) = body.find(q) else {
                    return Err(self.error_here("unterminated quoted level", "close the quote"));
                };
                self.pos += end + 2;
                body[..end].to_string()
            }
            _ => {
                let len = self
                    .rest()
                    .find(|c: char| c.is_whitespace() || "()&|!".contains(c))
                    .unwrap_or(self.rest().len());
                if len == 0 {
                    return Err(
                        self.error_here("expected a level after the operator", "write `NAME == LEVEL`")
                    );
                }
                self.pos += len;
                self.src[lstart..self.pos].to_string()
            }
        };
        let f = &self.factors[factor];
        let Some(level) = f.level_index(&label) else {
            return Err(ParseError {
                offset: lstart,
                len: self.pos - lstart,
                message: format!("`{label}` is not a level of factor `{}`", f.name),
                hint: format!("levels of `{}` are: {}", f.name, f.levels.join(", ")),
            });
        };
        let atom = Expr::is(factor, level);
        Ok(if negated { atom.not() } else { atom })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fs() -> Vec<Factor> {
        vec![
            Factor::numbered("f1", 3),
            Factor::new("codec", ["plain", "rle", "Codec::Delta"]),
        ]
    }

    #[test]
    fn precedence_and_negation() {
        let e = Expr::parse("f1 == 0 || f1 == 1 && codec != rle", &fs()).unwrap();
        // && binds tighter than ||
        assert!(e.eval(&[0, 1]));
        assert!(!e.eval(&[1, 1]));
        assert!(e.eval(&[1, 0]));
        let e = Expr::parse("!(f1 == 0 || f1 == 1) && codec == Codec::Delta", &fs()).unwrap();
        assert!(e.eval(&[2, 2]));
        assert!(!e.eval(&[0, 2]));
        let e = Expr::parse("codec == 'plain'", &fs()).unwrap();
        assert!(e.eval(&[0, 0]));
    }

    #[test]
    fn display_round_trips() {
        let src = "(f1 == 0 || f1 == 1) && !(codec == rle && f1 != 2)";
        let e = Expr::parse(src, &fs()).unwrap();
        let shown = e.display(&fs()).to_string();
        assert_eq!(Expr::parse(&shown, &fs()).unwrap(), e);
    }

    #[test]
    fn errors_are_located() {
        let err = Expr::parse("f1 == 0 && colour == red", &fs()).unwrap_err();
        assert_eq!((err.offset, err.len), (11, 6));
        assert!(err.message.contains("unknown factor `colour`"));
        let err = Expr::parse("f1 == 7", &fs()).unwrap_err();
        assert_eq!(err.offset, 6);
        assert!(err.message.contains("`7` is not a level of factor `f1`"));
        let err = Expr::parse("(f1 == 0", &fs()).unwrap_err();
        assert!(err.message.contains("expected `)`"));
        let err = Expr::parse("f1 = 0", &fs()).unwrap_err();
        assert!(err.message.contains("expected `==` or `!=`"));
        let err = Expr::parse("f1 == 0 f1 == 1", &fs()).unwrap_err();
        assert!(err.message.contains("unexpected text"));
        let err = Expr::parse("", &fs()).unwrap_err();
        assert!(err.message.contains("found the end"));
        assert!(err.render("").contains('^'));
    }

    #[test]
    fn partial_evaluation_is_kleene() {
        let e = Expr::parse("f1 == 0 && codec == rle", &fs()).unwrap();
        assert_eq!(e.eval_partial(&[1, UNSET]), Some(false));
        assert_eq!(e.eval_partial(&[0, UNSET]), None);
        assert_eq!(e.eval_partial(&[0, 1]), Some(true));
        let e = Expr::parse("f1 == 0 || codec == rle", &fs()).unwrap();
        assert_eq!(e.eval_partial(&[UNSET, 1]), Some(true));
    }
}
