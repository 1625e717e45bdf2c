//! The two text forms of a formula, written and read by one renderer and one grammar:
//!
//! - the human syntax, with factor names and level labels: `codec == rle && !(level != 3)`
//!   ([`Expr::parse`], [`Expr::display`]) — what people type on the command line and read
//!   in reports;
//! - the formula over level indices: `0=2&!(1=0|3=1)` ([`Expr::parse_formula`],
//!   [`Expr::to_formula`]) — what records store, so that a reader rebuilds the exclude
//!   without any label table or Rust parser. Its text is canonical (one text per formula:
//!   no spaces, no redundant parentheses, decimal numbers without leading zeros) and
//!   [`FORMULA_VERSION`] names the syntax, so that a record can say which one it holds.
//!
//! Both read `!` tightest, then `&&`/`&`, then `||`/`|`, binary operators grouping to the
//! left. Both refuse nesting deeper than [`MAX_FORMULA_DEPTH`] with a located error instead
//! of recursing until the stack ends, and both renderers work without recursion.

use std::fmt;

use super::Expr;
use crate::factor::Factor;
use crate::limits::MAX_FORMULA_DEPTH;

/// Version of the formula syntax of [`Expr::to_formula`]: a record that stores formulas
/// stores this beside them; a reader refuses versions it does not know.
pub const FORMULA_VERSION: u32 = 1;

/// A syntax or reference error in a formula, located in the source.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ParseError {
    /// Byte offset where the problem starts.
    pub offset: usize,
    /// Length in bytes of the offending text (at least 1 unless at the end).
    pub len: usize,
    /// Column where the problem starts, counted in characters from 1.
    pub column: usize,
    /// What is wrong, lower case.
    pub message: String,
    /// What to do about it.
    pub hint: String,
}

impl ParseError {
    fn new(
        src: &str,
        offset: usize,
        len: usize,
        message: impl Into<String>,
        hint: impl Into<String>,
    ) -> Self {
        let offset = offset.min(src.len());
        ParseError {
            offset,
            len,
            column: src[..offset].chars().count() + 1,
            message: message.into(),
            hint: hint.into(),
        }
    }

    /// Renders the error with the source line and a caret under the offending text.
    pub fn render(&self, src: &str) -> String {
        format!(
            "{}\n  {src}\n  {}\n  hint: {}",
            self.message,
            self.caret(src),
            self.hint
        )
    }

    /// Carets under the offending part of `src` (the text that was parsed), to print
    /// on the line below it.
    pub fn caret(&self, src: &str) -> String {
        let start = self.offset.min(src.len());
        let end = (self.offset + self.len).min(src.len());
        let pad = " ".repeat(src.get(..start).map_or(0, |s| s.chars().count()));
        let marks = "^".repeat(src.get(start..end).map_or(0, |s| s.chars().count()).max(1));
        format!("{pad}{marks}")
    }
}

impl fmt::Display for ParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} at column {}\n  hint: {}",
            self.message, self.column, self.hint
        )
    }
}

impl std::error::Error for ParseError {}

impl Expr {
    /// Renders the formula in the human syntax, with factor names and level labels (a
    /// label that would not read back as one token is quoted). Reading the text back with
    /// [`Expr::parse`] gives this formula again.
    pub fn display<'a>(&'a self, factors: &'a [Factor]) -> impl fmt::Display + 'a {
        Named { e: self, factors }
    }

    /// The formula over level indices, in the canonical syntax of version
    /// [`FORMULA_VERSION`]: atoms `F=L` (factor and level indices), `!`, `&`, `|` and
    /// parentheses only where the grouping needs them.
    ///
    /// ```
    /// use heddle_generator::Expr;
    /// let e = Expr::is(0, 2).and(Expr::is(1, 0).or(Expr::is(3, 1)).not());
    /// assert_eq!(e.to_formula(), "0=2&!(1=0|3=1)");
    /// assert_eq!(Expr::parse_formula("0=2&!(1=0|3=1)", &[3, 2, 2, 2]), Ok(e));
    /// ```
    pub fn to_formula(&self) -> String {
        let mut out = String::new();
        // writing to a String cannot fail
        let _ = render(
            self,
            &INDICES,
            &mut |f, l, neg, w| {
                debug_assert!(!neg, "the index syntax has no negated atom");
                write!(w, "{f}={l}")
            },
            &mut out,
        );
        out
    }

    /// Reads a formula written by [`Expr::to_formula`] (syntax version
    /// [`FORMULA_VERSION`]) for factors with these level counts. Only the canonical text
    /// is accepted (no spaces, no leading zeros), so that every formula has one text.
    ///
    /// ```
    /// use heddle_generator::Expr;
    /// let e = Expr::parse_formula("!0=1|1=0&2=2", &[2, 2, 3]).unwrap();
    /// assert!(e.eval(&[0, 1, 0]));
    /// assert!(!e.eval(&[1, 1, 2]));
    /// let err = Expr::parse_formula("0=1&4=0", &[2, 2, 3]).unwrap_err();
    /// assert_eq!(err.column, 5);
    /// ```
    pub fn parse_formula(text: &str, levels: &[usize]) -> Result<Expr, ParseError> {
        let e = Grammar::run(Indices {
            src: text,
            pos: 0,
            levels,
        })?;
        // the grammar also reads redundant parentheses: the one text is the rendered one
        let canonical = e.to_formula();
        if canonical != text {
            let at = canonical
                .bytes()
                .zip(text.bytes())
                .take_while(|(a, b)| a == b)
                .count();
            return Err(ParseError::new(
                text,
                at,
                1,
                "the formula is not in its canonical form",
                format!("write it as `{canonical}`"),
            ));
        }
        Ok(e)
    }

    /// Parses the human syntax: atoms `NAME == LABEL` and `NAME != LABEL` combined with
    /// `&&`, `||`, `!` and parentheses (`!` binds tightest, then `&&`, then `||`). A label
    /// is a run of characters other than whitespace, parentheses, `&`, `|` and `!`, or a
    /// quoted string (`'…'` or `"…"`, in which the quote doubled stands for itself).
    /// Nesting deeper than [`MAX_FORMULA_DEPTH`] is an
    /// error located at the operator that goes too deep.
    pub fn parse(src: &str, factors: &[Factor]) -> Result<Expr, ParseError> {
        Grammar::run(Names { src, pos: 0, factors })
    }
}

/// Operator spellings of a syntax.
struct Style {
    and: &'static str,
    or: &'static str,
    /// Whether `!` on an atom is written into the atom (`a != x`).
    negated_atoms: bool,
}

const INDICES: Style = Style {
    and: "&",
    or: "|",
    negated_atoms: false,
};

const NAMES: Style = Style {
    and: " && ",
    or: " || ",
    negated_atoms: true,
};

/// Binding strength: `||` 1, `&&` 2, `!` and atoms 3.
fn precedence(e: &Expr) -> u8 {
    match e {
        Expr::Or(..) => 1,
        Expr::And(..) => 2,
        Expr::Not(_) | Expr::Is { .. } => 3,
    }
}

type AtomWriter<'a> = dyn FnMut(usize, u8, bool, &mut dyn fmt::Write) -> fmt::Result + 'a;

/// Writes `e` with an explicit stack (any depth renders). A child is parenthesised when it
/// binds more loosely than its place needs: the left operand of a binary operator needs
/// that operator's strength, the right one more (operators group to the left), the operand
/// of `!` an atom's. So the text reads back as the same tree.
fn render(e: &Expr, style: &Style, atom: &mut AtomWriter<'_>, out: &mut dyn fmt::Write) -> fmt::Result {
    enum Task<'e> {
        Node(&'e Expr, u8),
        Text(&'static str),
    }
    let mut stack = vec![Task::Node(e, 0)];
    while let Some(task) = stack.pop() {
        let (e, need) = match task {
            Task::Text(s) => {
                out.write_str(s)?;
                continue;
            }
            Task::Node(e, need) => (e, need),
        };
        let prec = precedence(e);
        if prec < need {
            out.write_str("(")?;
            stack.push(Task::Text(")"));
        }
        match e {
            Expr::Is { factor, level } => atom(*factor, *level, false, out)?,
            Expr::Not(inner) => match &**inner {
                Expr::Is { factor, level } if style.negated_atoms => atom(*factor, *level, true, out)?,
                inner => {
                    out.write_str("!")?;
                    stack.push(Task::Node(inner, 3));
                }
            },
            Expr::And(a, b) | Expr::Or(a, b) => {
                let op = if prec == 2 { style.and } else { style.or };
                stack.push(Task::Node(b, prec + 1));
                stack.push(Task::Text(op));
                stack.push(Task::Node(a, prec));
            }
        }
    }
    Ok(())
}

struct Named<'a> {
    e: &'a Expr,
    factors: &'a [Factor],
}

impl fmt::Display for Named<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let fs = self.factors;
        render(
            self.e,
            &NAMES,
            &mut |factor, level, neg, w| {
                let op = if neg { "!=" } else { "==" };
                match fs.get(factor) {
                    Some(fac) => match fac.levels.get(level as usize) {
                        Some(label) => write!(w, "{} {op} {}", fac.name, Quoted(label)),
                        None => write!(w, "{} {op} #{level}", fac.name),
                    },
                    None => write!(w, "#{factor} {op} #{level}"),
                }
            },
            f,
        )
    }
}

/// A label as the human syntax reads it: bare when it is one token, else quoted.
struct Quoted<'a>(&'a str);

impl fmt::Display for Quoted<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = self.0;
        let bare = !s.is_empty() && !s.starts_with(['\'', '"']) && !s.contains(label_end);
        if bare {
            f.write_str(s)
        } else if s.contains('\'') && s.contains('"') {
            write!(f, "'{}'", s.replace('\'', "''"))
        } else if s.contains('\'') {
            write!(f, "\"{s}\"")
        } else {
            write!(f, "'{s}'")
        }
    }
}

/// Characters that end a bare label.
fn label_end(c: char) -> bool {
    c.is_whitespace() || "()&|!".contains(c)
}

/// The tokens the grammar asks for.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Tok {
    Or,
    And,
    Not,
    Open,
    Close,
}

/// What differs between the two syntaxes: how tokens and atoms are spelled.
trait Lexer {
    fn src(&self) -> &str;
    /// Byte offset of the next token (after any white space the syntax allows).
    fn here(&mut self) -> usize;
    /// Consumes `tok` if it comes next.
    fn eat(&mut self, tok: Tok) -> bool;
    /// Reads an atom; returns it and its depth (a negated atom is two levels).
    fn atom(&mut self) -> Result<(Expr, usize), ParseError>;
    /// How each token is written, in the order of [`Tok`].
    const TOKENS: [&'static str; 5];
    /// The hint for text left after a complete formula.
    const JOIN_HINT: &'static str;

    fn spelling(&self, tok: Tok) -> &'static str {
        Self::TOKENS[tok as usize]
    }
}

/// Operator precedence parsing over either syntax, with explicit stacks (so no input can
/// exhaust the call stack), tracking the depth of the tree it builds and how many `(` and
/// `!` are open, both held to [`MAX_FORMULA_DEPTH`].
struct Grammar<L> {
    lex: L,
    /// Operators waiting for their operands, with where they stand in the source.
    ops: Vec<(Tok, usize)>,
    /// Finished operands and their depths.
    operands: Vec<(Expr, usize)>,
    /// `(` and `!` on `ops`.
    open: usize,
}

/// Binding strength of an operator on the stack (`(` binds nothing: it waits for `)`).
fn binds(tok: Tok) -> u8 {
    match tok {
        Tok::Or => 1,
        Tok::And => 2,
        Tok::Not => 3,
        Tok::Open | Tok::Close => 0,
    }
}

impl<L: Lexer> Grammar<L> {
    fn run(lex: L) -> Result<Expr, ParseError> {
        let mut g = Grammar {
            lex,
            ops: Vec::new(),
            operands: Vec::new(),
            open: 0,
        };
        g.parse()
    }

    fn parse(&mut self) -> Result<Expr, ParseError> {
        loop {
            // an operand: any number of `!` and `(`, then an atom
            loop {
                let at = self.lex.here();
                let tok = if self.lex.eat(Tok::Not) {
                    Tok::Not
                } else if self.lex.eat(Tok::Open) {
                    Tok::Open
                } else {
                    break;
                };
                self.open += 1;
                if self.open >= MAX_FORMULA_DEPTH {
                    return Err(self.too_deep(at));
                }
                self.ops.push((tok, at));
            }
            let atom = self.lex.atom()?;
            self.operands.push(atom);
            // then `)` closing groups, and a binary operator or the end
            loop {
                let at = self.lex.here();
                if self.lex.eat(Tok::Close) {
                    self.reduce_above(0)?;
                    match self.ops.pop() {
                        Some((Tok::Open, _)) => self.open -= 1,
                        _ => {
                            return Err(self.error(
                                at,
                                "unmatched `)`",
                                "remove it or open a group before it",
                            ));
                        }
                    }
                    continue;
                }
                let tok = if self.lex.eat(Tok::And) {
                    Tok::And
                } else if self.lex.eat(Tok::Or) {
                    Tok::Or
                } else {
                    return self.finish(at);
                };
                // binary operators group to the left: finish those that bind as tightly
                self.reduce_above(binds(tok) - 1)?;
                self.ops.push((tok, at));
                break;
            }
        }
    }

    /// At `at` the formula cannot continue: everything must be closed there.
    fn finish(&mut self, at: usize) -> Result<Expr, ParseError> {
        self.reduce_above(0)?;
        if let Some(&(Tok::Open, _)) = self.ops.last() {
            let (open, close) = (self.lex.spelling(Tok::Open), self.lex.spelling(Tok::Close));
            return Err(self.error(
                at,
                format!("expected `{close}`"),
                format!("close every `{open}` with `{close}`"),
            ));
        }
        if at < self.lex.src().len() {
            return Err(self.error(at, "unexpected text after the expression", L::JOIN_HINT));
        }
        match self.operands.pop() {
            Some((e, _)) => Ok(e),
            // an atom was read before any exit, so an operand is left
            None => Err(self.error(at, "empty formula", "write `NAME == LEVEL`")),
        }
    }

    /// Applies the operators on top of the stack that bind more tightly than `floor`.
    fn reduce_above(&mut self, floor: u8) -> Result<(), ParseError> {
        while let Some(&(tok, at)) = self.ops.last() {
            if binds(tok) <= floor {
                return Ok(());
            }
            self.ops.pop();
            let (e, d) = match tok {
                Tok::Not => {
                    self.open -= 1;
                    let (e, d) = self.operand(at)?;
                    (e.not(), d + 1)
                }
                _ => {
                    let (b, db) = self.operand(at)?;
                    let (a, da) = self.operand(at)?;
                    let e = if tok == Tok::And { a.and(b) } else { a.or(b) };
                    (e, da.max(db) + 1)
                }
            };
            if d > MAX_FORMULA_DEPTH {
                return Err(self.too_deep(at));
            }
            self.operands.push((e, d));
        }
        Ok(())
    }

    fn operand(&mut self, at: usize) -> Result<(Expr, usize), ParseError> {
        // every operator was pushed after an operand or before one that was read since
        self.operands.pop().ok_or_else(|| {
            self.error(
                at,
                "operator without an operand",
                "write `NAME == LEVEL` on both sides",
            )
        })
    }

    fn error(&self, at: usize, message: impl Into<String>, hint: impl Into<String>) -> ParseError {
        let src = self.lex.src();
        let len = src
            .get(at..)
            .and_then(|r| r.chars().next())
            .map_or(0, char::len_utf8);
        ParseError::new(src, at, len, message, hint)
    }

    fn too_deep(&self, at: usize) -> ParseError {
        self.error(
            at,
            format!("the formula nests deeper than {MAX_FORMULA_DEPTH} levels"),
            "split it into several simpler excludes",
        )
    }
}

/// The human syntax: names, labels, spaced operators.
struct Names<'a> {
    src: &'a str,
    pos: usize,
    factors: &'a [Factor],
}

impl Names<'_> {
    fn rest(&self) -> &str {
        &self.src[self.pos..]
    }

    fn skip_ws(&mut self) {
        let trimmed = self.rest().trim_start();
        self.pos = self.src.len() - trimmed.len();
    }

    fn eat_str(&mut self, tok: &str) -> bool {
        self.skip_ws();
        if self.rest().starts_with(tok) {
            self.pos += tok.len();
            true
        } else {
            false
        }
    }

    fn error(
        &self,
        at: usize,
        len: usize,
        message: impl Into<String>,
        hint: impl Into<String>,
    ) -> ParseError {
        ParseError::new(self.src, at, len, message, hint)
    }

    fn error_here(&self, message: &str, hint: &str) -> ParseError {
        let len = self.rest().chars().next().map_or(0, char::len_utf8);
        self.error(self.pos, len, message, hint)
    }
}

impl Lexer for Names<'_> {
    const TOKENS: [&'static str; 5] = ["||", "&&", "!", "(", ")"];
    const JOIN_HINT: &'static str = "join atoms with `&&` or `||`";

    fn src(&self) -> &str {
        self.src
    }

    fn here(&mut self) -> usize {
        self.skip_ws();
        self.pos
    }

    fn eat(&mut self, tok: Tok) -> bool {
        match tok {
            Tok::Not => {
                self.skip_ws();
                if self.rest().starts_with('!') && !self.rest().starts_with("!=") {
                    self.pos += 1;
                    true
                } else {
                    false
                }
            }
            tok => self.eat_str(self.spelling(tok)),
        }
    }

    fn atom(&mut self) -> Result<(Expr, usize), ParseError> {
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
            return Err(self.error(
                start,
                name_len,
                format!("unknown factor `{name}`"),
                format!("factors are: {}", known.join(", ")),
            ));
        };
        let negated = if self.eat_str("==") {
            false
        } else if self.eat_str("!=") {
            true
        } else {
            return Err(self.error_here("expected `==` or `!=`", "write `NAME == LEVEL`"));
        };
        self.skip_ws();
        let lstart = self.pos;
        let label: String = match self.rest().chars().next() {
            Some(q @ ('\'' | '"')) => {
                // the quote doubled stands for itself (`'it''s'`, as SQL strings do), so
                // a label holding both kinds of quote can still be named
                let body = &self.rest()[1..];
                let mut label = String::new();
                let mut at = 0;
                loop {
                    let Some(end) = body[at..].find(q) else {
                        return Err(self.error_here("unterminated quoted level", "close the quote"));
                    };
                    label.push_str(&body[at..at + end]);
                    at += end + 1;
                    if body[at..].starts_with(q) {
                        label.push(q);
                        at += 1;
                    } else {
                        break;
                    }
                }
                self.pos += 1 + at;
                label
            }
            _ => {
                let len = self.rest().find(label_end).unwrap_or(self.rest().len());
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
            return Err(self.error(
                lstart,
                self.pos - lstart,
                format!("`{label}` is not a level of factor `{}`", f.name),
                format!("levels of `{}` are: {}", f.name, f.levels.join(", ")),
            ));
        };
        let atom = Expr::is(factor, level);
        Ok(if negated { (atom.not(), 2) } else { (atom, 1) })
    }
}

/// The index syntax: canonical, no white space.
struct Indices<'a> {
    src: &'a str,
    pos: usize,
    levels: &'a [usize],
}

impl Indices<'_> {
    /// A decimal number without leading zeros, with its start.
    fn number(&mut self, what: &str) -> Result<(usize, usize), ParseError> {
        let start = self.pos;
        let digits = self.src[start..]
            .find(|c: char| !c.is_ascii_digit())
            .unwrap_or(self.src.len() - start);
        let text = &self.src[start..start + digits];
        let hint = "write `FACTOR=LEVEL` with indices counted from 0, e.g. `0=2`";
        if digits == 0 {
            let found = if start == self.src.len() {
                ", found the end"
            } else {
                ""
            };
            let len = self.src[start..].chars().next().map_or(0, char::len_utf8);
            return Err(ParseError::new(
                self.src,
                start,
                len,
                format!("expected a {what} index{found}"),
                hint,
            ));
        }
        if digits > 1 && text.starts_with('0') {
            return Err(ParseError::new(
                self.src,
                start,
                digits,
                format!("{what} index `{text}` has a leading zero"),
                "write indices without leading zeros (the formula text is canonical)",
            ));
        }
        self.pos += digits;
        // an overlong number is out of range like any other too-large index
        Ok((text.parse().unwrap_or(usize::MAX), start))
    }
}

impl Lexer for Indices<'_> {
    const TOKENS: [&'static str; 5] = ["|", "&", "!", "(", ")"];
    const JOIN_HINT: &'static str = "join atoms with `&` or `|`";

    fn src(&self) -> &str {
        self.src
    }

    fn here(&mut self) -> usize {
        self.pos
    }

    fn eat(&mut self, tok: Tok) -> bool {
        let s = self.spelling(tok);
        if self.src[self.pos..].starts_with(s) {
            self.pos += s.len();
            true
        } else {
            false
        }
    }

    fn atom(&mut self) -> Result<(Expr, usize), ParseError> {
        let (factor, fstart) = self.number("factor")?;
        if !self.eat_str_eq() {
            let at = self.pos;
            let len = self.src[at..].chars().next().map_or(0, char::len_utf8);
            return Err(ParseError::new(
                self.src,
                at,
                len,
                "expected `=`",
                "write `FACTOR=LEVEL`, e.g. `0=2`",
            ));
        }
        let (level, lstart) = self.number("level")?;
        let Some(&count) = self.levels.get(factor) else {
            return Err(ParseError::new(
                self.src,
                fstart,
                lstart - 1 - fstart,
                format!("factor index {} is out of range", &self.src[fstart..lstart - 1]),
                format!("there are {} factors, numbered from 0", self.levels.len()),
            ));
        };
        if level >= count {
            return Err(ParseError::new(
                self.src,
                lstart,
                self.pos - lstart,
                format!(
                    "level index {} is out of range for factor {factor}",
                    &self.src[lstart..self.pos]
                ),
                format!("factor {factor} has {count} levels, numbered from 0"),
            ));
        }
        // below a level count, which is at most MAX_LEVELS = 255
        Ok((Expr::is(factor, level as u8), 1))
    }
}

impl Indices<'_> {
    fn eat_str_eq(&mut self) -> bool {
        if self.src[self.pos..].starts_with('=') {
            self.pos += 1;
            true
        } else {
            false
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::factor::UNSET;

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
        // operators group to the left
        let e = Expr::parse("f1 == 0 && f1 == 1 && codec == rle", &fs()).unwrap();
        assert_eq!(e, Expr::is(0, 0).and(Expr::is(0, 1)).and(Expr::is(1, 1)));
        let e = Expr::parse("!!f1 == 2", &fs()).unwrap();
        assert_eq!(e, Expr::is(0, 2).not().not());
    }

    #[test]
    fn display_round_trips() {
        let src = "(f1 == 0 || f1 == 1) && !(codec == rle && f1 != 2)";
        let e = Expr::parse(src, &fs()).unwrap();
        let shown = e.display(&fs()).to_string();
        assert_eq!(shown, src);
        assert_eq!(Expr::parse(&shown, &fs()).unwrap(), e);
        // right-nested groups keep their parentheses, labels that are not one token
        // their quotes
        let odd = vec![Factor::new("a", ["x y", "'q", "(p)"]), Factor::numbered("b", 2)];
        let e = Expr::is(0, 0).and(Expr::is(0, 1).and(Expr::is_not(0, 2)));
        let shown = e.display(&odd).to_string();
        assert_eq!(shown, "a == 'x y' && (a == \"'q\" && a != '(p)')");
        assert_eq!(Expr::parse(&shown, &odd).unwrap(), e);
        // a label with both kinds of quote: the quote doubled inside its quotes
        let both = vec![Factor::new("a", ["it's \"x\"", "''", "\""])];
        for (level, text) in [(0u8, "a == 'it''s \"x\"'"), (1, "a == \"''\""), (2, "a == '\"'")] {
            let e = Expr::is(0, level);
            assert_eq!(e.display(&both).to_string(), text);
            assert_eq!(Expr::parse(text, &both), Ok(e), "{text}");
        }
        assert_eq!(Expr::parse("a == \"it's \"\"x\"\"\"", &both), Ok(Expr::is(0, 0)));
        assert!(Expr::parse("a == 'it''s", &both).is_err());
    }

    #[test]
    fn errors_are_located() {
        let err = Expr::parse("f1 == 0 && colour == red", &fs()).unwrap_err();
        assert_eq!((err.offset, err.len, err.column), (11, 6, 12));
        assert!(err.message.contains("unknown factor `colour`"));
        let err = Expr::parse("f1 == 7", &fs()).unwrap_err();
        assert_eq!(err.offset, 6);
        assert!(err.message.contains("`7` is not a level of factor `f1`"));
        let err = Expr::parse("(f1 == 0", &fs()).unwrap_err();
        assert!(err.message.contains("expected `)`"));
        assert_eq!(err.column, 9);
        let err = Expr::parse("f1 == 0)", &fs()).unwrap_err();
        assert!(err.message.contains("unmatched `)`"), "{err}");
        let err = Expr::parse("f1 = 0", &fs()).unwrap_err();
        assert!(err.message.contains("expected `==` or `!=`"));
        let err = Expr::parse("f1 == 0 f1 == 1", &fs()).unwrap_err();
        assert!(err.message.contains("unexpected text"));
        let err = Expr::parse("f1 == 0 &&", &fs()).unwrap_err();
        assert!(err.message.contains("found the end"));
        let err = Expr::parse("", &fs()).unwrap_err();
        assert!(err.message.contains("found the end"));
        assert!(err.render("").contains('^'));
        // columns count characters, not bytes
        let accents = [Factor::new("codec", ["é"])];
        let err = Expr::parse("codec == 'é' && f9 == 0", &accents).unwrap_err();
        assert_eq!(err.column, 17);
        assert!(err.to_string().contains("at column 17"));
        assert!(err.to_string().contains("hint: "));
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

    /// splitmix64 (Steele, Lea & Flood 2014) for random formulas.
    fn mix(state: &mut u64) -> u64 {
        *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = *state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    fn random(state: &mut u64, levels: &[usize], depth: u32) -> Expr {
        let pick = if depth == 0 { 0 } else { mix(state) % 4 };
        match pick {
            0 => {
                let f = (mix(state) % levels.len() as u64) as usize;
                Expr::is(f, (mix(state) % levels[f] as u64) as u8)
            }
            1 => random(state, levels, depth - 1).and(random(state, levels, depth - 1)),
            2 => random(state, levels, depth - 1).or(random(state, levels, depth - 1)),
            _ => random(state, levels, depth - 1).not(),
        }
    }

    #[test]
    fn formulas_round_trip_exactly() {
        let levels = [3, 2, 12, 255, 1];
        let factors: Vec<Factor> = levels
            .iter()
            .enumerate()
            .map(|(i, &v)| Factor::numbered(format!("f{i}"), v))
            .collect();
        let mut state = 7;
        for _ in 0..2000 {
            let e = random(&mut state, &levels, 6);
            let text = e.to_formula();
            assert_eq!(Expr::parse_formula(&text, &levels), Ok(e.clone()), "{text}");
            assert!(!text.contains(' '));
            // and the human syntax gives the same tree
            let shown = e.display(&factors).to_string();
            assert_eq!(Expr::parse(&shown, &factors), Ok(e), "{shown}");
        }
        assert_eq!(Expr::is(3, 254).to_formula(), "3=254");
        assert_eq!(
            Expr::is(0, 1).or(Expr::is(1, 0)).and(Expr::is(2, 0)).to_formula(),
            "(0=1|1=0)&2=0"
        );
        assert_eq!(Expr::is(0, 1).not().not().to_formula(), "!!0=1");
    }

    #[test]
    fn formula_text_is_canonical_and_checked() {
        let levels = [3, 2];
        for (text, column, part) in [
            ("", 1, "expected a factor index, found the end"),
            ("0 = 1", 2, "expected `=`"),
            ("00=1", 1, "leading zero"),
            ("0=01", 3, "leading zero"),
            ("2=0", 1, "factor index 2 is out of range"),
            ("0=3", 3, "level index 3 is out of range for factor 0"),
            ("1=99999999999999999999999", 3, "out of range"),
            ("0=1&", 5, "found the end"),
            ("(0=1", 5, "expected `)`"),
            ("0=1)", 4, "unmatched `)`"),
            ("0=1 ", 4, "unexpected text"),
            ("0=1&&1=0", 5, "expected a factor index"),
            ("a=1", 1, "expected a factor index"),
            // redundant parentheses: one text per formula
            ("(0=1)", 1, "not in its canonical form"),
            ("0=1&(1=0)", 5, "not in its canonical form"),
            ("(0=1&1=0)|1=1", 1, "not in its canonical form"),
        ] {
            let err = Expr::parse_formula(text, &levels).expect_err(text);
            assert_eq!(err.column, column, "{text}: {err}");
            assert!(err.message.contains(part), "{text}: {err}");
            assert!(!err.hint.is_empty());
        }
        assert_eq!(FORMULA_VERSION, 1);
    }

    #[test]
    fn deep_nesting_is_an_error_not_a_stack_overflow() {
        let factors = fs();
        for n in [MAX_FORMULA_DEPTH, 100_000] {
            let parens = format!("{}0=1{}", "(".repeat(n), ")".repeat(n));
            let err = Expr::parse_formula(&parens, &[3, 3]).unwrap_err();
            assert!(err.message.contains("nests deeper"), "{err}");
            assert_eq!(err.column, MAX_FORMULA_DEPTH);
            let nots = format!("{}0=1", "!".repeat(n));
            let err = Expr::parse_formula(&nots, &[3, 3]).unwrap_err();
            assert!(err.message.contains("nests deeper"), "{err}");
            let human = format!("{}f1 == 0{}", "(".repeat(n), ")".repeat(n));
            let err = Expr::parse(&human, &factors).unwrap_err();
            assert!(err.message.contains("nests deeper"), "{err}");
            assert_eq!(err.column, MAX_FORMULA_DEPTH);
            let human = format!("{}f1 == 0", "! ".repeat(n));
            let err = Expr::parse(&human, &factors).unwrap_err();
            assert!(err.message.contains("nests deeper"), "{err}");
            assert_eq!(err.column, 2 * MAX_FORMULA_DEPTH - 1);
        }
        // just within the limit: MAX − 1 `!` around an atom is MAX levels
        let nots = format!("{}0=1", "!".repeat(MAX_FORMULA_DEPTH - 1));
        let e = Expr::parse_formula(&nots, &[3, 3]).unwrap();
        assert!(!e.depth_exceeds(MAX_FORMULA_DEPTH));
        assert!(e.depth_exceeds(MAX_FORMULA_DEPTH - 1));
        assert_eq!(e.to_formula(), nots);
        // a long chain is as deep as it is long (operators group to the left)
        let chain = |n: usize| vec!["0=1"; n].join("&");
        assert!(Expr::parse_formula(&chain(MAX_FORMULA_DEPTH), &[3, 3]).is_ok());
        let err = Expr::parse_formula(&chain(100_000), &[3, 3]).unwrap_err();
        assert!(err.message.contains("nests deeper"), "{err}");
        assert_eq!(err.offset, 4 * (MAX_FORMULA_DEPTH - 1) + 3);
    }
}
