//! What a row is made of: factors with labelled levels, and rows of level indices. The
//! formulas ([`crate::Expr`]) and the spec ([`crate::Spec`]) both build on this module, so
//! it depends on neither.

/// One row of a design: the level index chosen for every factor, in factor order.
pub type Row = Vec<u8>;

/// Sentinel for "no level chosen yet" in partial rows; level indices never reach it
/// because a factor has at most [`crate::MAX_LEVELS`] levels.
pub const UNSET: u8 = u8::MAX;

/// A factor: a name and the labels of its levels, in order.
///
/// ```
/// use heddle_generator::Factor;
/// let codec = Factor::new("codec", ["plain", "rle", "delta"]);
/// assert_eq!(codec.levels.len(), 3);
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Factor {
    /// Name, unique within the spec; constraints refer to it.
    pub name: String,
    /// Level labels, unique within the factor; constraints refer to them.
    pub levels: Vec<String>,
}

impl Factor {
    /// A factor from a name and its level labels.
    pub fn new<S: Into<String>>(name: impl Into<String>, levels: impl IntoIterator<Item = S>) -> Self {
        Factor {
            name: name.into(),
            levels: levels.into_iter().map(Into::into).collect(),
        }
    }

    /// A factor with `count` levels labelled `0`, `1`, … (the form `V^N` specs use).
    pub fn numbered(name: impl Into<String>, count: usize) -> Self {
        Factor::new(name, (0..count).map(|i| i.to_string()))
    }

    /// The index of the level with this label.
    pub fn level_index(&self, label: &str) -> Option<u8> {
        self.levels.iter().position(|l| l == label).map(|i| i as u8)
    }
}
