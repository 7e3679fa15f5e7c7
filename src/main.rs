//! The `blanksmith` command: parses arguments, runs the command
//! (`commands::run`), prints what it returns once, and exits with its code:
//! 0 done, 1 findings (the volume certificate failed, `check` found
//! problems, or `make` could make no programs), 2 bad input or a system
//! error.

use std::io::Write as _;
use std::process::ExitCode;

use blanksmith::commands::cli::Cli;
use blanksmith::commands::run::run;
use clap::Parser as _;

fn main() -> ExitCode {
    match run(Cli::parse()) {
        Ok(o) => {
            emit(&o.stdout);
            eprint!("{}", o.stderr);
            ExitCode::from(o.code)
        }
        Err(e) => {
            eprintln!("blanksmith: error: {e}");
            ExitCode::from(2)
        }
    }
}

/// Standard output, written as a whole: a reader that stops early
/// (`blanksmith report | head`) ends the run quietly instead of a panic.
fn emit(text: &str) {
    let mut out = std::io::stdout().lock();
    if let Err(e) = out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            std::process::exit(0);
        }
        eprintln!("blanksmith: error: standard output: {e}");
        std::process::exit(2);
    }
}
