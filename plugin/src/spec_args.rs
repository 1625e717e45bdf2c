//! SPEC tokens of `cargo heddle design`: `V^N` (N factors of V levels, named by position
//! `f1`, `f2`, … and labelled `0` … `V-1`) and `NAME=L1,L2,…` (one named factor).

use heddle_generator::{Factor, Focus, MAX_LEVELS, Row, check_lambda, check_strength};
use heddle_syntax::keywords as kw;
use heddle_syntax::require::row_of;

use crate::failure::{Diagnostic, Failure, usage};

/// Factors described by the SPEC tokens, in order.
pub fn parse_specs(tokens: &[String]) -> Result<Vec<Factor>, Failure> {
    let mut factors = Vec::new();
    for tok in tokens {
        if let Some((v, n)) = tok.split_once('^') {
            let v = parse_count(tok, v, "level count")?;
            let n = parse_count(tok, n, "factor count")?;
            if v > MAX_LEVELS {
                return Err(usage(
                    Diagnostic::new(format!(
                        "malformed SPEC `{tok}`: {v} levels, at most {MAX_LEVELS} are supported"
                    ))
                    .hint("split the factor into two, or sample its levels"),
                ));
            }
            if n > heddle_generator::MAX_FACTORS {
                return Err(usage(
                    Diagnostic::new(format!(
                        "malformed SPEC `{tok}`: {n} factors, at most {} are supported",
                        heddle_generator::MAX_FACTORS
                    ))
                    .hint("split the factors into designs of their own"),
                ));
            }
            for _ in 0..n {
                let name = format!("f{}", factors.len() + 1);
                factors.push(Factor::numbered(name, v));
            }
        } else if let Some((name, labels)) = tok.split_once('=') {
            if name.is_empty() || !name.chars().all(|c| c.is_alphanumeric() || c == '_' || c == '-') {
                return Err(usage(
                    Diagnostic::new(format!("malformed SPEC `{tok}`: `{name}` is not a factor name"))
                        .hint("names use letters, digits, `_` and `-`"),
                ));
            }
            let labels: Vec<&str> = labels.split(',').collect();
            // `a==b` is an exclude typed where a factor belongs, not a level `=b`
            if let Some(bad) = labels.iter().find(|l| l.contains('=')) {
                return Err(usage(
                    Diagnostic::new(format!("malformed SPEC `{tok}`: level `{bad}` contains `=`"))
                        .hint("write `NAME=L1,L2,…`; a condition on levels goes in `--exclude`"),
                ));
            }
            if let Some(bad) = labels
                .iter()
                .find(|l| l.is_empty() || l.chars().any(char::is_whitespace))
            {
                return Err(usage(
                    Diagnostic::new(format!(
                        "malformed SPEC `{tok}`: level `{bad}` is empty or contains whitespace"
                    ))
                    .hint("write `NAME=L1,L2,…` with non-empty labels"),
                ));
            }
            factors.push(Factor::new(name, labels));
        } else {
            return Err(usage(
                Diagnostic::new(format!("malformed SPEC `{tok}`"))
                    .hint("write `V^N` (N factors of V levels) or `NAME=L1,L2,…`"),
            ));
        }
    }
    if factors.is_empty() {
        return Err(usage(
            Diagnostic::new("no factors given").hint("write for example `3^4` or `os=linux,mac`"),
        ));
    }
    Ok(factors)
}

/// A required row written `NAME=LABEL,NAME=LABEL` (`--require`): the labels' level
/// indices, [`UNSET`](heddle_generator::UNSET) for the factors it leaves out.
pub fn parse_required(text: &str, factors: &[Factor]) -> Result<Row, Failure> {
    let names = || heddle_syntax::diag::list(factors.iter().map(|f| &f.name));
    let bad =
        |what: String, hint: String| usage(Diagnostic::new(format!("`--require {text}`: {what}")).hint(hint));
    let mut cells = Vec::new();
    for part in text.split(',') {
        let Some((name, label)) = part.split_once('=') else {
            return Err(bad(
                format!("`{part}` is not `NAME=LEVEL`"),
                "write e.g. `--require 'os=mac,f1=0'`; factors left out are chosen by the engine".into(),
            ));
        };
        let (name, label) = (name.trim(), label.trim());
        let Some(c) = factors.iter().position(|f| f.name == name) else {
            return Err(bad(
                format!("unknown factor `{name}`"),
                format!("the factors are {}", names()),
            ));
        };
        let Some(l) = factors[c].level_index(label) else {
            return Err(bad(
                format!("`{label}` is not a level of `{name}`"),
                format!(
                    "the levels of `{name}` are {}",
                    heddle_syntax::diag::list(&factors[c].levels)
                ),
            ));
        };
        cells.push((c, l));
    }
    row_of(factors.len(), &cells).map_err(|i| {
        bad(
            format!("`{}` is given twice", factors[cells[i].0].name),
            "give each factor once per row; another row is another `--require`".into(),
        )
    })
}

/// A focus set written as the attribute's inside, `NAME,NAME,…[,strength=S][,lambda=L]`
/// (`--focus`): factors covered at strength S (one above `base` unless given) and index L
/// (`lambda` unless given). The engine checks the strength against the set.
pub fn parse_focus(text: &str, factors: &[Factor], base: usize, lambda: u32) -> Result<Focus, Failure> {
    let focus = read_focus(text, factors, base, lambda)?;
    let names: Vec<&str> = factors.iter().map(|f| f.name.as_str()).collect();
    focus
        .validate(0, &names, base)
        .map_err(|e| usage(Diagnostic::from(&e).at(format!("`--focus {text}`"))))?;
    Ok(focus)
}

fn read_focus(text: &str, factors: &[Factor], base: usize, lambda: u32) -> Result<Focus, Failure> {
    let names = || heddle_syntax::diag::list(factors.iter().map(|f| &f.name));
    let bad =
        |what: String, hint: String| usage(Diagnostic::new(format!("`--focus {text}`: {what}")).hint(hint));
    let example = || {
        "write e.g. `--focus 'codec,unit,workers'` or `--focus 'codec,unit,workers,strength=3'`".to_string()
    };
    let mut cols = Vec::new();
    let (mut strength, mut index) = (None, None);
    for part in text.split(',').map(str::trim) {
        match part.split_once('=').map(|(k, v)| (k.trim(), v.trim())) {
            Some((key, value)) if key == kw::STRENGTH || key == kw::LAMBDA => {
                let n = value
                    .parse::<u64>()
                    .ok()
                    .filter(|_| value.bytes().all(|b| b.is_ascii_digit()))
                    .ok_or_else(|| bad(format!("`{value}` is not a whole number"), example()))?;
                let slot = if key == kw::STRENGTH {
                    &mut strength
                } else {
                    &mut index
                };
                if slot.replace(n).is_some() {
                    return Err(bad(format!("`{key}` is given twice"), example()));
                }
            }
            Some((key, _)) => {
                return Err(bad(
                    format!("unknown key `{key}`"),
                    format!(
                        "after the factor names, `{}=S` and `{}=L` may follow",
                        kw::STRENGTH,
                        kw::LAMBDA
                    ),
                ));
            }
            None if part.is_empty() => return Err(bad("an empty factor name".into(), example())),
            None => {
                let Some(c) = factors.iter().position(|f| f.name == part) else {
                    return Err(bad(
                        format!("unknown factor `{part}`"),
                        format!("the factors are {}", names()),
                    ));
                };
                if cols.contains(&c) {
                    return Err(bad(
                        format!("`{part}` is named twice"),
                        "name each factor once".into(),
                    ));
                }
                cols.push(c);
            }
        }
    }
    // the engine's range checks, in its words
    let fail = |e: heddle_generator::Error| usage(Diagnostic::from(&e).at(format!("`--focus {text}`")));
    let strength = match strength {
        Some(s) => check_strength(s).map_err(fail)?,
        None => base + 1,
    };
    let lambda = match index {
        Some(l) => check_lambda(l).map_err(fail)?,
        None => lambda,
    };
    Ok(Focus::new(cols, strength).lambda(lambda))
}

fn parse_count(tok: &str, s: &str, what: &str) -> Result<usize, Failure> {
    // digits only: `usize::from_str` would also take a leading `+`
    let digits = !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    match s.parse::<usize>() {
        Ok(n) if n >= 1 && digits => Ok(n),
        _ => Err(usage(
            Diagnostic::new(format!(
                "malformed SPEC `{tok}`: `{s}` is not a {what} of at least 1"
            ))
            .hint("write `V^N`, for example `3^4`"),
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use heddle_generator::UNSET;

    fn toks(s: &[&str]) -> Vec<String> {
        s.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn mixed_tokens_number_by_position() {
        let f = parse_specs(&toks(&["2^2", "os=linux,mac,bsd", "3^1"])).unwrap();
        let names: Vec<&str> = f.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(names, ["f1", "f2", "os", "f4"]);
        assert_eq!(f[2].levels, ["linux", "mac", "bsd"]);
        assert_eq!(f[3].levels, ["0", "1", "2"]);
    }

    #[test]
    fn required_rows_by_label() {
        let f = parse_specs(&toks(&["2^2", "os=linux,mac,bsd"])).unwrap();
        assert_eq!(parse_required("os=bsd,f1=1", &f).unwrap(), vec![1, UNSET, 2]);
        assert_eq!(parse_required(" f2 = 0 ", &f).unwrap(), vec![UNSET, 0, UNSET]);
        for (bad, says) in [
            ("os", "`os` is not `NAME=LEVEL`"),
            ("cpu=x", "unknown factor `cpu`"),
            ("os=win", "`win` is not a level of `os`"),
            ("os=mac,os=bsd", "`os` is given twice"),
        ] {
            let err = parse_required(bad, &f).unwrap_err();
            assert_eq!(err.code(), 2, "{bad}");
            assert!(err.to_string().contains(says), "{bad}: {err}");
            assert!(err.diagnostic().hint.is_some(), "{bad}");
        }
    }

    #[test]
    fn malformed_tokens_are_refused() {
        for bad in [
            "3",
            "3^0",
            "0^3",
            "x^2",
            "256^2",
            "=a,b",
            "os=",
            "os=a,,b",
            "a b=c",
            "+3^2",
            "3^+2",
            "a==b",
            "os=linux,=mac",
            " 3^2",
        ] {
            let err = parse_specs(&toks(&[bad])).unwrap_err();
            assert_eq!(err.code(), 2, "{bad}");
            assert!(err.to_string().contains("malformed SPEC"), "{bad}: {err}");
            assert!(err.diagnostic().hint.is_some(), "{bad}: {err}");
        }
        let too_many = format!("2^{}", heddle_generator::MAX_FACTORS + 1);
        let err = parse_specs(&[too_many]).unwrap_err();
        assert!(err.diagnostic().hint.is_some(), "{err}");
    }
}
