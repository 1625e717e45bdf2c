//! `exclude(...)` formulas written in Rust tokens, turned into the engine's [`Expr`].
//!
//! An exclude is a Rust boolean expression over comparisons `name == level` and
//! `name != level`, combined with `&&`, `||`, `!` and parentheses. `name` is a parameter
//! and `level` one of the expressions of its `#[levels(...)]`, matched by canonical text
//! ([`crate::text`]), so `Codec :: Delta` finds the level `Codec::Delta`.

use heddle_generator::{Expr, Factor};
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
    match e {
        syn::Expr::Paren(p) => convert(&p.expr, factors, errs),
        syn::Expr::Group(g) => convert(&g.expr, factors, errs),
        syn::Expr::Unary(u) if matches!(u.op, UnOp::Not(_)) => convert(&u.expr, factors, errs).map(Expr::not),
        syn::Expr::Binary(b) => match b.op {
            BinOp::And(_) | BinOp::Or(_) => {
                let l = convert(&b.left, factors, errs);
                let r = convert(&b.right, factors, errs);
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
