//! `cargo run -p heddle-demo`: the greenhouse demo, its report and where the HTML page is.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let args = heddle_demo::quickstart::DemoArgs::parse();
    match heddle_demo::quickstart::run(&args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.code())
        }
    }
}
