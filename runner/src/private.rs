//! The interface between the `#[cover]` expansion (`heddle-syntax`'s `expand` module,
//! its only user) and this crate: not for use by hand, and exempt from semver. Change
//! both sides together.
//!
//! Each generated row test calls one of the `run*` functions with the suite's static
//! description, the row index and the body. The body runs under `catch_unwind`; the
//! outcome is recorded; then a panic is resumed and an `Err` returned, so libtest judges
//! the row exactly as if heddle were not there (`#[should_panic]` included).

use crate::current;
use crate::message;
use crate::record::Outcome;
use crate::recorder::{self, Recorder, RowResult};
use crate::setup;
use std::any::Any;
use std::fmt::{self, Debug};
use std::future::Future;
use std::panic::{self, AssertUnwindSafe};
use std::pin::pin;
use std::task::Poll;
use std::time::Instant;

/// One parameter of the annotated function.
#[derive(Debug)]
pub struct Factor {
    /// Parameter name.
    pub name: &'static str,
    /// Level labels: the level expressions' source text, whitespace-normalised.
    pub labels: &'static [&'static str],
}

/// A focus set of the annotated function: factors covered at a higher strength.
#[derive(Debug)]
pub struct FocusSet {
    /// Factor indices, as the attribute names them.
    pub factors: &'static [u32],
    /// Strength over these factors.
    pub strength: u32,
    /// Index over these factors.
    pub lambda: u32,
}

/// Everything the runtime knows about one annotated function, emitted as a `static`.
#[derive(Debug)]
pub struct Suite {
    /// `CARGO_PKG_NAME` of the crate holding the test.
    pub krate: &'static str,
    /// Test file relative to the crate root, `/`-separated.
    pub file: &'static str,
    /// The cargo selector of the target the rows are compiled into (`--test hub`,
    /// `--lib`), as a rerun command passes it; empty when the layout does not tell.
    pub target: &'static str,
    /// The annotated function's name.
    pub function: &'static str,
    /// `module_path!()` of the generated rows module.
    pub module: &'static str,
    /// Parameters in declaration order.
    pub factors: &'static [Factor],
    /// Strength t.
    pub strength: u32,
    /// Index λ.
    pub lambda: u32,
    /// Seed of the rows.
    pub seed: u64,
    /// Each exclude as the engine's formula over level indices (`0=2&1=0`).
    pub excludes: &'static [&'static str],
    /// Level index per factor, per row.
    pub rows: &'static [&'static [u8]],
    /// The name of each row's test function (`row_03`), as the expansion chose it.
    pub row_names: &'static [&'static str],
    /// Spec fingerprint (the one the pins file stores).
    pub fingerprint: &'static str,
    /// Whether the rows came from the pins file.
    pub pinned: bool,
    /// Whether the function carries `#[should_panic]`.
    pub should_panic: bool,
    /// The `expected = "…"` text of its `#[should_panic]`: a panic whose message does not
    /// contain it is a failure, as libtest decides.
    pub should_panic_expected: Option<&'static str>,
    /// How many rows the row budget lets run when it leaves some out (the rows past it
    /// are compiled with `#[ignore]`); `None` when every row runs.
    pub budget: Option<u32>,
    /// How many of the last rows are follow-up rows (`cargo heddle probe`), not the
    /// design's.
    pub followups: u32,
    /// Focus sets (empty when there are none).
    pub focus: &'static [FocusSet],
}

/// The process-wide recorder every row test writes through.
static GLOBAL: Recorder = Recorder::new(setup::from_process, recorder::warn_stderr);

/// Runs one row of a sync fn returning `()`: records the outcome, re-raises a panic.
pub fn run(suite: &'static Suite, row: usize, body: impl FnOnce()) {
    run_in(&GLOBAL, suite, row, body)
}

/// Runs one row of a sync fn returning `Result<(), E>`: records `Err` as a failure and
/// returns it wrapped so its `Debug` names the suite, row, labels and rerun command.
pub fn run_result<E: Debug>(
    suite: &'static Suite,
    row: usize,
    body: impl FnOnce() -> Result<(), E>,
) -> Result<(), RowError<E>> {
    run_result_in(&GLOBAL, suite, row, body)
}

/// Async form of [`run`]: a panic while the future is polled is caught too.
pub async fn run_async<F: Future<Output = ()>>(suite: &'static Suite, row: usize, body: F) {
    GLOBAL.start(suite, row);
    let start = Instant::now();
    let caught = catch_future(suite, row, body).await;
    finish_unit(&GLOBAL, suite, row, caught, start);
}

/// Async form of [`run_result`].
pub async fn run_async_result<E: Debug, F: Future<Output = Result<(), E>>>(
    suite: &'static Suite,
    row: usize,
    body: F,
) -> Result<(), RowError<E>> {
    GLOBAL.start(suite, row);
    let start = Instant::now();
    let caught = catch_future(suite, row, body).await;
    finish_result(&GLOBAL, suite, row, caught, start)
}

/// A row's `Err`, carrying the row's context so libtest's `Error: {:?}` line says which
/// configuration failed and how to rerun it.
pub struct RowError<E> {
    error: E,
    context: String,
}

impl<E> RowError<E> {
    /// The body's error.
    pub fn error(&self) -> &E {
        &self.error
    }

    /// The body's error, unwrapped.
    pub fn into_error(self) -> E {
        self.error
    }
}

impl<E: Debug> Debug for RowError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // the context's first line ends with "returned an error"; the error follows it
        let (head, rest) = self.context.split_once('\n').unwrap_or((&self.context, ""));
        write!(f, "{head}: {:?}\n{rest}", self.error)
    }
}

impl<E: Debug> fmt::Display for RowError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        Debug::fmt(self, f)
    }
}

impl<E: Debug + std::error::Error + 'static> std::error::Error for RowError<E> {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        Some(&self.error)
    }
}

type Payload = Box<dyn Any + Send>;

/// Polls `body` to completion, each poll under `catch_unwind` and with its row as the
/// current row ([`crate::current_row`]); after a panic the future is dropped unpolled.
async fn catch_future<T, F: Future<Output = T>>(
    suite: &'static Suite,
    row: usize,
    body: F,
) -> Result<T, Payload> {
    let mut body = pin!(body);
    std::future::poll_fn(move |cx| {
        match current::within(suite, row, || {
            panic::catch_unwind(AssertUnwindSafe(|| body.as_mut().poll(cx)))
        }) {
            Ok(Poll::Pending) => Poll::Pending,
            Ok(Poll::Ready(v)) => Poll::Ready(Ok(v)),
            Err(payload) => Poll::Ready(Err(payload)),
        }
    })
    .await
}

/// [`run`] against a given recorder.
pub(crate) fn run_in(rec: &Recorder, suite: &'static Suite, row: usize, body: impl FnOnce()) {
    rec.start(suite, row);
    let start = Instant::now();
    // AssertUnwindSafe: the panic is always resumed, so nobody observes state the body
    // left half-updated
    let caught = current::within(suite, row, || panic::catch_unwind(AssertUnwindSafe(body)));
    finish_unit(rec, suite, row, caught, start);
}

/// [`run_result`] against a given recorder.
pub(crate) fn run_result_in<E: Debug>(
    rec: &Recorder,
    suite: &'static Suite,
    row: usize,
    body: impl FnOnce() -> Result<(), E>,
) -> Result<(), RowError<E>> {
    rec.start(suite, row);
    let start = Instant::now();
    let caught = current::within(suite, row, || panic::catch_unwind(AssertUnwindSafe(body)));
    finish_result(rec, suite, row, caught, start)
}

fn finish_unit(
    rec: &Recorder,
    suite: &'static Suite,
    row: usize,
    caught: Result<(), Payload>,
    start: Instant,
) {
    if caught.is_ok() && suite.should_panic {
        let duration = start.elapsed();
        let text = "did not panic as `#[should_panic]` expects";
        // libtest fails the test itself; this explains which row it was
        explain(&message::context(suite, row, text));
        let message = Some(text.to_string());
        record(rec, suite, row, Outcome::Failed, message, duration);
        return;
    }
    // a `()` row is a `Result` row that cannot return `Err`: passes and panics are
    // recorded by the one path
    let _ = finish_result::<std::convert::Infallible>(rec, suite, row, caught.map(Ok), start);
}

fn finish_result<E: Debug>(
    rec: &Recorder,
    suite: &'static Suite,
    row: usize,
    caught: Result<Result<(), E>, Payload>,
    start: Instant,
) -> Result<(), RowError<E>> {
    let duration = start.elapsed();
    match caught {
        Ok(Ok(())) => {
            record(rec, suite, row, Outcome::Passed, None, duration);
            Ok(())
        }
        Ok(Err(error)) => {
            let message = Some(format!("{error:?}"));
            record(rec, suite, row, Outcome::Failed, message, duration);
            let context = message::context(suite, row, "returned an error");
            Err(RowError { error, context })
        }
        Err(payload) => panicked(rec, suite, row, payload, duration),
    }
}

/// Records a panic, explains the row on stderr (libtest shows a failing test's captured
/// output) and resumes unwinding with the original payload, so `#[should_panic(expected
/// = …)]` still sees the original message.
fn panicked(
    rec: &Recorder,
    suite: &'static Suite,
    row: usize,
    payload: Payload,
    duration: std::time::Duration,
) -> ! {
    let text = panic_text(&*payload);
    let (outcome, headline) = match (suite.should_panic, suite.should_panic_expected) {
        (true, Some(expected)) if !text.contains(expected) => (
            Outcome::Failed,
            "panicked, but without the text `#[should_panic(expected = …)]` asks for",
        ),
        (true, _) => (
            Outcome::PanickedExpected,
            "panicked (expected by `#[should_panic]`)",
        ),
        (false, _) => (Outcome::Failed, "panicked"),
    };
    explain(&message::context(suite, row, headline));
    record(rec, suite, row, outcome, Some(text), duration);
    panic::resume_unwind(payload)
}

/// Records one row's outcome.
fn record(
    rec: &Recorder,
    suite: &'static Suite,
    row: usize,
    outcome: Outcome,
    message: Option<String>,
    duration: std::time::Duration,
) {
    rec.record(
        suite,
        &RowResult {
            row,
            outcome,
            message,
            duration,
        },
    );
}

/// Prints a row's context through libtest's output capture (so it shows with a failing
/// test's output). `eprintln!` panics when stderr is gone; that panic must not escape,
/// or a `#[should_panic]` row that did not panic would pass.
fn explain(text: &str) {
    let _ = panic::catch_unwind(|| eprintln!("{text}"));
}

/// The message of a panic payload (`panic!` gives `&str` or `String`).
pub(crate) fn panic_text(payload: &(dyn Any + Send)) -> String {
    if let Some(s) = payload.downcast_ref::<&str>() {
        s.to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "<panic payload that is not a string>".to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::setup::{Config, SetupError};

    static SUITE: Suite = Suite {
        krate: "demo",
        file: "tests/t.rs",
        target: "--test t",
        function: "f",
        module: "t::f",
        factors: &[Factor {
            name: "x",
            labels: &["1", "2"],
        }],
        strength: 1,
        lambda: 1,
        seed: 5,
        excludes: &[],
        rows: &[&[0], &[1]],
        row_names: &["row_00", "row_01"],
        fingerprint: "fp",
        pinned: false,
        should_panic: false,
        should_panic_expected: None,
        budget: None,
        followups: 0,
        focus: &[],
    };

    fn off() -> Result<Config, SetupError> {
        Err(SetupError::NoBuildDir {
            exe: "/nowhere".into(),
        })
    }

    fn silent(_: &str) {}

    #[test]
    fn panic_text_reads_both_string_payloads() {
        assert_eq!(panic_text(&"static"), "static");
        assert_eq!(panic_text(&String::from("owned")), "owned");
        assert_eq!(panic_text(&42u8), "<panic payload that is not a string>");
    }

    #[test]
    fn panics_are_resumed_with_the_original_payload() {
        let rec = Recorder::new(off, silent);
        let caught = panic::catch_unwind(|| run_in(&rec, &SUITE, 1, || std::panic::panic_any(7u32)));
        assert_eq!(caught.unwrap_err().downcast_ref::<u32>(), Some(&7));
    }

    #[test]
    fn err_is_returned_with_context_in_debug() {
        let rec = Recorder::new(off, silent);
        let err = run_result_in(&rec, &SUITE, 1, || Err::<(), _>("bad")).unwrap_err();
        assert_eq!(*err.error(), "bad");
        let text = format!("{err:?}");
        assert!(
            text.starts_with("heddle: `f` row 1 of 2 (`f::row_01`) returned an error: \"bad\"\n  x = 2\n"),
            "{text}"
        );
        assert!(
            text.ends_with(&format!("rerun: {}", message::rerun_command(&SUITE, 1))),
            "{text}"
        );
        assert_eq!(
            run_result_in(&rec, &SUITE, 0, || Ok::<(), &str>(())).map_err(|_| ()),
            Ok(())
        );
    }

    #[test]
    fn the_body_sees_its_row_and_nothing_leaks_after() {
        let rec = Recorder::new(off, silent);
        assert!(crate::current_row().is_none());
        run_in(&rec, &SUITE, 1, || {
            let r = crate::current_row().expect("inside the body");
            assert_eq!((r.function(), r.index(), r.name()), ("f", 1, "row_01"));
            assert_eq!(r.test_name(), "f::row_01");
            assert_eq!(r.labels(), vec![("x", "2")]);
            assert_eq!(r.slug(), "f-row_01");
        });
        assert!(crate::current_row().is_none());
        let _ = panic::catch_unwind(|| run_in(&rec, &SUITE, 0, || panic!("boom")));
        assert!(crate::current_row().is_none(), "restored after a panic");
    }

    #[test]
    fn async_rows_are_send_when_their_body_is() {
        fn assert_send<T: Send>(_: &T) {}
        let fut = run_async(&SUITE, 0, async {});
        assert_send(&fut);
        let fut = run_async_result(&SUITE, 0, async { Ok::<(), String>(()) });
        assert_send(&fut);
    }
}
