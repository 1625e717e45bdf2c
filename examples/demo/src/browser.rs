//! Debian's Chromium, headless, as the judge of the HTML report: it loads a page from a
//! file, hands back the DOM it built and every console message it logged, and takes a
//! screenshot. Only the command line is used (`--dump-dom`, `--screenshot`, console
//! messages on stderr through `--enable-logging=stderr`), so no driver or protocol
//! client is needed; each load gets a fresh profile directory and a time limit.
//!
//! The browser is `HEDDLE_CHROMIUM` when set (empty means unset), else `chromium` or
//! `chromium-browser` on the `PATH`.

use std::ffi::OsString;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use cargo_heddle::failure::{Diagnostic, Failure, found, usage};

/// The variable naming the browser to use.
pub const BROWSER_VAR: &str = "HEDDLE_CHROMIUM";

/// How long one browser invocation may take before it is ended.
const LIMIT: Duration = Duration::from_secs(120);

/// The flags of every invocation: headless, and nothing that reaches the network or
/// needs a sandbox the container cannot give.
const FLAGS: [&str; 9] = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--hide-scrollbars",
];

/// A headless Chromium.
#[derive(Clone, Debug)]
pub struct Browser {
    program: PathBuf,
}

/// What loading a page showed.
#[derive(Clone, Debug)]
pub struct Loaded {
    /// The DOM as the browser built it, serialised.
    pub dom: String,
    /// Every console message logged while loading (the report has no script, so any
    /// message is a problem: a blocked fetch, a parse error).
    pub console: Vec<String>,
}

impl Browser {
    /// The browser to use; `Ok(None)` with the reason when none is installed.
    pub fn find() -> Result<Result<Browser, String>, Failure> {
        match std::env::var_os(BROWSER_VAR).filter(|v| !v.is_empty()) {
            Some(p) => {
                let program = PathBuf::from(&p);
                if program.is_file() {
                    Ok(Ok(Browser { program }))
                } else {
                    Err(usage(
                        Diagnostic::new(format!(
                            "`{BROWSER_VAR}` names `{}`, which is not a file",
                            program.display()
                        ))
                        .hint(format!(
                            "set it to the browser's executable, e.g. `{BROWSER_VAR}=/usr/bin/chromium`, or unset it"
                        )),
                    ))
                }
            }
            None => Ok(on_path(&["chromium", "chromium-browser"])
                .map(|program| Browser { program })
                .ok_or_else(|| {
                    "no `chromium` on the PATH (install it with `apt-get install -y chromium`, or set `HEDDLE_CHROMIUM`)"
                        .to_string()
                })),
        }
    }

    /// Loads `page` and returns the DOM and the console messages.
    pub fn load(&self, page: &Path) -> Result<Loaded, Failure> {
        self.capture(page, None)
    }

    /// Loads `page` as [`Browser::load`] does and, in the same browser run, takes the
    /// screenshot [`Browser::screenshot`] would: one start of the browser instead of two.
    pub fn load_and_screenshot(
        &self,
        page: &Path,
        shot: &Path,
        width: u32,
        height: u32,
    ) -> Result<Loaded, Failure> {
        self.capture(page, Some((shot, width, height)))
    }

    fn capture(&self, page: &Path, shot: Option<(&Path, u32, u32)>) -> Result<Loaded, Failure> {
        let mut args = vec![
            OsString::from("--enable-logging=stderr"),
            "--v=0".into(),
            "--dump-dom".into(),
        ];
        let shot = shot.map(|(path, width, height)| {
            let path = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
            args.extend(screenshot_args(&path, width, height));
            path
        });
        let out = self.invoke(&args, page)?;
        if let Some(path) = shot {
            written(&path)?;
        }
        let console = out
            .stderr
            .lines()
            .filter(|l| l.contains(":CONSOLE"))
            .map(str::to_string)
            .collect();
        Ok(Loaded {
            dom: out.stdout,
            console,
        })
    }

    /// Takes a screenshot of `page` in a window of `width` × `height` CSS pixels, as a
    /// PNG at `shot`.
    pub fn screenshot(&self, page: &Path, shot: &Path, width: u32, height: u32) -> Result<(), Failure> {
        let shot = std::path::absolute(shot).unwrap_or_else(|_| shot.to_path_buf());
        self.invoke(&screenshot_args(&shot, width, height), page)?;
        written(&shot)
    }

    /// Runs the browser on a page with a fresh profile, ending it after [`LIMIT`].
    fn invoke(&self, args: &[OsString], page: &Path) -> Result<Output, Failure> {
        let page = std::path::absolute(page).unwrap_or_else(|_| page.to_path_buf());
        let profile = tempfile::tempdir()
            .map_err(|e| found(format!("cannot make a browser profile directory: {e}")))?;
        let mut user_data = OsString::from("--user-data-dir=");
        user_data.push(profile.path());
        let mut url = OsString::from("file://");
        url.push(&page);
        let mut child = Command::new(&self.program)
            .args(FLAGS)
            .arg(user_data)
            .args(args)
            .arg(url)
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .map_err(|e| found(format!("cannot start `{}`: {e}", self.program.display())))?;
        // both pipes are drained on threads, so a chatty browser never blocks on them
        let drain = |r: Option<Box<dyn Read + Send>>| {
            std::thread::spawn(move || {
                let mut s = String::new();
                if let Some(mut r) = r {
                    let _ = r.read_to_string(&mut s);
                }
                s
            })
        };
        let stdout = drain(child.stdout.take().map(|r| Box::new(r) as Box<dyn Read + Send>));
        let stderr = drain(child.stderr.take().map(|r| Box::new(r) as Box<dyn Read + Send>));
        let start = Instant::now();
        let status = loop {
            match child.try_wait() {
                Ok(Some(status)) => break Some(status),
                Ok(None) if start.elapsed() < LIMIT => std::thread::sleep(Duration::from_millis(50)),
                _ => {
                    let _ = child.kill();
                    let _ = child.wait();
                    break None;
                }
            }
        };
        let out = Output {
            stdout: stdout.join().unwrap_or_default(),
            stderr: stderr.join().unwrap_or_default(),
        };
        match status {
            Some(s) if s.success() => Ok(out),
            Some(s) => Err(found(
                Diagnostic::new(format!("`{}` exited with {s}", self.program.display()))
                    .hint(format!("its last words: {}", last_line(&out.stderr))),
            )),
            None => Err(found(
                Diagnostic::new(format!(
                    "`{}` did not finish within {} s and was stopped",
                    self.program.display(),
                    LIMIT.as_secs()
                ))
                .hint(format!("its last words: {}", last_line(&out.stderr))),
            )),
        }
    }
}

struct Output {
    stdout: String,
    stderr: String,
}

/// The flags that make a browser run write a PNG of the page at `shot`.
fn screenshot_args(shot: &Path, width: u32, height: u32) -> [OsString; 2] {
    let mut arg = OsString::from("--screenshot=");
    arg.push(shot);
    [arg, format!("--window-size={width},{height}").into()]
}

/// Whether the browser wrote the screenshot it was asked for.
fn written(shot: &Path) -> Result<(), Failure> {
    if shot.is_file() {
        Ok(())
    } else {
        Err(found(
            Diagnostic::new(format!("the browser wrote no screenshot at `{}`", shot.display()))
                .hint("check that the directory exists and is writable"),
        ))
    }
}

fn last_line(s: &str) -> &str {
    s.lines()
        .rev()
        .find(|l| !l.trim().is_empty())
        .unwrap_or("(nothing)")
}

/// The first of `names` found as a file in a directory of the `PATH`.
fn on_path(names: &[&str]) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    names.iter().find_map(|n| {
        std::env::split_paths(&path)
            .map(|d| d.join(n))
            .find(|p| p.is_file())
    })
}
