//! `cargo heddle`: the command-line side of heddle.

use std::process::ExitCode;

fn main() -> ExitCode {
    match cargo_heddle::cli::run(std::env::args_os()) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.code())
        }
    }
}
