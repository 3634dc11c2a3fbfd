//! The gravline binary: parse the command line, call the library, print errors on one line.

use std::process::ExitCode;

fn main() -> ExitCode {
    match gravline_cli::run() {
        Ok(code) => code,
        Err(e) => {
            eprintln!("error: {}", one_line(&e));
            ExitCode::from(2)
        }
    }
}

/// The error and its causes on one line, each cause once: a cause whose text the message
/// already holds (an OS error quoted by its context) is not repeated.
fn one_line(e: &anyhow::Error) -> String {
    let mut text = String::new();
    for cause in e.chain() {
        let part = cause.to_string();
        if !text.contains(&part) {
            if !text.is_empty() {
                text.push_str(": ");
            }
            text.push_str(&part);
        }
    }
    let not_found = e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::NotFound)
    });
    if not_found {
        text.push_str("; check the path (relative to the current folder) and its spelling");
    }
    text
}

#[path = "cli.rs"]
mod gravline_cli;
