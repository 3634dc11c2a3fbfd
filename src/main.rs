//! The gravline binary: parse the command line, call the library, print errors on one line.

use std::process::ExitCode;

fn main() -> ExitCode {
    match gravline_cli::run() {
        Ok(code) => code,
        Err(e) => {
            eprintln!("gravline: error: {e:#}");
            ExitCode::from(2)
        }
    }
}

#[path = "cli.rs"]
mod gravline_cli;
