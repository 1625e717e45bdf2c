//! `exclude(...)` formulas written in Rust tokens, turned into the engine's [`Expr`].
//!
//! An exclude is a Rust boolean expression over comparisons `name == level` and
//! `name != level`, combined with `&&`, `||`, `!` and parentheses. `name` is a parameter
//! and `level` one of the expressions of its `#[levels(...)]`, matched by canonical text
//! ([`crate::text`]), so `Codec :: Delta` finds the level `Codec::Delta`.

use heddle_generator::{Expr, Factor, MAX_FORMULA_DEPTH};
use syn::spanned::Spanned;
use syn::{BinOp, UnOp};

use crate::diag::Errors;
use crate::keywords as kw;
use crate::resolve;
use crate::text::canonical;

const HINT: &str =
    "write comparisons `name == level` or `name != level`, joined with `&&`, `||`, `!` and parentheses";

/// Converts one exclude; every problem found is added to `errs` (all of them, not just
/// the first), and `None` is returned when there was any.
pub fn convert(e: &syn::Expr, factors: &[Factor], errs: &mut Errors) -> Option<Expr> {
    // a long chain `a == 1 && b == 2 && …` nests one level per operator; refused here,
    // before converting recurses through it, at the engine's own limit
    if let Some(span) = deeper_than(e, MAX_FORMULA_DEPTH) {
        errs.at_span(
            span,
            format!(
                "`{}(…)` nests deeper than {MAX_FORMULA_DEPTH} operators",
                kw::EXCLUDE
            ),
            "split it into several `exclude(…)`: a row is left out when any of them holds",
        );
        return None;
    }
    convert_within_limit(e, factors, errs)
}

/// Where `e`, read as the engine will read it (an operator adds a level, a comparison
/// is one level, `!=` two), first goes deeper than `limit`: the span of that operator.
/// Walks with an explicit stack, so any depth is measured without recursing.
fn deeper_than(e: &syn::Expr, limit: usize) -> Option<proc_macro2::Span> {
    let mut stack: Vec<(&syn::Expr, usize)> = vec![(e, 1)];
    while let Some((e, depth)) = stack.pop() {
        let (span, children): (proc_macro2::Span, [Option<&syn::Expr>; 2]) = match e {
            syn::Expr::Paren(p) => {
                stack.push((&p.expr, depth));
                continue;
            }
            syn::Expr::Group(g) => {
                stack.push((&g.expr, depth));
                continue;
            }
            syn::Expr::Unary(u) => (u.op.span(), [Some(&u.expr), None]),
            syn::Expr::Binary(b) if matches!(b.op, BinOp::And(_) | BinOp::Or(_)) => {
                (b.op.span(), [Some(&b.left), Some(&b.right)])
            }
            syn::Expr::Binary(b) => (b.op.span(), [None, None]),
            // anything else is an error of its own, reported by the conversion
            _ => continue,
        };
        let levels = match e {
            syn::Expr::Binary(b) if matches!(b.op, BinOp::Ne(_)) => 2,
            _ => 1,
        };
        if depth + levels - 1 > limit {
            return Some(span);
        }
        stack.extend(children.into_iter().flatten().map(|c| (c, depth + 1)));
    }
    None
}

fn convert_within_limit(e: &syn::Expr, factors: &[Factor], errs: &mut Errors) -> Option<Expr> {
    match e {
        syn::Expr::Paren(p) => convert_within_limit(&p.expr, factors, errs),
        syn::Expr::Group(g) => convert_within_limit(&g.expr, factors, errs),
        syn::Expr::Unary(u) if matches!(u.op, UnOp::Not(_)) => {
            convert_within_limit(&u.expr, factors, errs).map(Expr::not)
        }
        syn::Expr::Binary(b) => match b.op {
            BinOp::And(_) | BinOp::Or(_) => {
                let l = convert_within_limit(&b.left, factors, errs);
                let r = convert_within_limit(&b.right, factors, errs);
                let (l, r) = (l?, r?);
                Some(if matches!(b.op, BinOp::And(_)) {
                    l.and(r)
                } else {
                    l.or(r)
                })
            }
            BinOp::Eq(_) | BinOp::Ne(_) => atom(b, factors, errs),
            op => {
                errs.at(
                    op,
                    format!("`{}` is not supported in `{}(…)`", canonical(&op), kw::EXCLUDE),
                    HINT,
                );
                None
            }
        },
        other => {
            errs.at(
                other,
                format!(
                    "expected a comparison `name == level` in `{}(…)`, found `{}`",
                    kw::EXCLUDE,
                    canonical(other)
                ),
                HINT,
            );
            None
        }
    }
}

fn atom(b: &syn::ExprBinary, factors: &[Factor], errs: &mut Errors) -> Option<Expr> {
    let (fi, level) =
        resolve::name_and_level(&b.left, &canonical(&b.op), &b.right, factors, kw::EXCLUDE, errs)?;
    let is = Expr::is(fi, level);
    Some(if matches!(b.op, BinOp::Ne(_)) {
        is.not()
    } else {
        is
    })
}
