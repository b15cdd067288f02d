//! The `tidetally` command-line tool: parses arguments once, runs one command, and turns any
//! error into a one-line message on stderr and a non-zero exit code.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = tidetally_server::cli::Cli::parse();
    match tidetally_server::cli::run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(err) => {
            // One line: the chain of causes joined by ": ".
            eprintln!("tidetally: error: {err:#}");
            ExitCode::from(2)
        }
    }
}
