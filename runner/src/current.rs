//! The row a `#[cover]` body is running, for the body itself: per-row snapshot names,
//! temporary directories and log lines are one call away.
//!
//! The runtime sets a thread-local around the body of a sync row, and around each poll
//! of an async row's future (so a row whose future moves between a multi-threaded
//! runtime's threads still sees its row on every poll). Work the body hands to other
//! threads or spawned tasks does not see it: take the [`RowInfo`] first (it is `Copy`)
//! and move it along.

use std::cell::Cell;

use crate::__private::Suite;
use crate::message;

thread_local! {
    static CURRENT: Cell<Option<(&'static Suite, usize)>> = const { Cell::new(None) };
}

/// One row of a `#[cover]` function, as its body sees it.
///
/// ```
/// use heddle_test::{cover, current_row};
///
/// #[cover(strength = 2)]
/// fn snapshot(#[levels(1, 8)] batch: usize, #[levels("plain", "delta")] codec: &str) {
///     let row = current_row().expect("inside a row");
///     // a snapshot name and a scratch directory of this row's own
///     let snapshot = format!("{}.snap", row.slug()); // snapshot-row_03.snap
///     let dir = std::env::temp_dir().join(row.slug());
///     assert!(snapshot.starts_with("snapshot-row_"));
///     assert_eq!(row.label("codec"), Some(format!("{codec:?}").as_str()));
///     # let _ = (batch, dir);
/// }
/// # for (b, c) in [(1, "plain")] { assert!(current_row().is_none()); let _ = (b, c); }
/// ```
#[derive(Clone, Copy, Debug)]
pub struct RowInfo {
    suite: &'static Suite,
    row: usize,
}

impl RowInfo {
    /// The annotated function's name (`roundtrip`).
    pub fn function(&self) -> &'static str {
        self.suite.function
    }

    /// The row's index in the design (0-based).
    pub fn index(&self) -> usize {
        self.row
    }

    /// Rows of the design.
    pub fn rows(&self) -> usize {
        self.suite.rows.len()
    }

    /// The row's test function name (`row_03`).
    pub fn name(&self) -> &'static str {
        message::row_name(self.suite, self.row)
    }

    /// The row's libtest name (`roundtrip::row_03`), as `cargo test` and nextest
    /// filter by it.
    pub fn test_name(&self) -> String {
        message::test_name(self.suite, self.row)
    }

    /// `function-row_NN`: unique per row of a crate's tests (the macro refuses two
    /// annotated functions of one name in a file), made of characters every file system
    /// and snapshot tool accepts.
    pub fn slug(&self) -> String {
        format!("{}-{}", self.function(), self.name())
    }

    /// Every parameter with the label (source text) of its level in this row, in
    /// declaration order.
    pub fn labels(&self) -> Vec<(&'static str, &'static str)> {
        self.suite
            .factors
            .iter()
            .map(|f| f.name)
            .zip(message::row_labels(self.suite, self.row))
            .collect()
    }

    /// The label of one parameter's level in this row.
    pub fn label(&self, parameter: &str) -> Option<&'static str> {
        self.labels()
            .into_iter()
            .find(|(p, _)| *p == parameter)
            .map(|(_, l)| l)
    }

    /// The seed the rows were generated with.
    pub fn seed(&self) -> u64 {
        self.suite.seed
    }
}

/// The row the calling `#[cover]` body is running; `None` outside a row body (and in
/// threads or tasks the body started: see the module docs).
pub fn current_row() -> Option<RowInfo> {
    CURRENT.with(Cell::get).map(|(suite, row)| RowInfo { suite, row })
}

/// Runs `f` with `(suite, row)` as the current row, restoring the previous one after
/// (also when `f` panics).
pub(crate) fn within<T>(suite: &'static Suite, row: usize, f: impl FnOnce() -> T) -> T {
    struct Restore(Option<(&'static Suite, usize)>);
    impl Drop for Restore {
        fn drop(&mut self) {
            CURRENT.with(|c| c.set(self.0));
        }
    }
    let _restore = Restore(CURRENT.with(|c| c.replace(Some((suite, row)))));
    f()
}
