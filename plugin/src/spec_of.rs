//! The engine's view of a recorded spec: rebuilt from the spec line so the report can
//! ask the engine what another λ would cost. Excludes are parsed back from their
//! recorded source text with the attribute's own exclude parser.

use heddle::record::SpecRecord;
use heddle_generator::{Factor, Spec};

/// The generator spec a spec line describes.
pub fn spec_of(rec: &SpecRecord) -> Result<Spec, String> {
    let factors: Vec<Factor> = rec
        .factors
        .iter()
        .map(|f| Factor::new(f.name.clone(), f.labels.clone()))
        .collect();
    let mut spec = Spec::new(factors.clone())
        .strength(rec.strength as usize)
        .lambda(rec.lambda)
        .seed(rec.seed);
    for text in &rec.excludes {
        let e: syn::Expr = syn::parse_str(text).map_err(|e| format!("exclude `{text}`: {e}"))?;
        let mut errs = heddle_syntax::diag::Errors::default();
        match heddle_syntax::exclude::convert(&e, &factors, &mut errs) {
            Some(x) => spec.excludes.push(x),
            None => return Err(format!("exclude `{text}` does not match the recorded levels")),
        }
    }
    Ok(spec)
}
