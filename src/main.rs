//! The binary: parse the command line, run the command, own the exit code.

use clap::Parser;
use loopwright::commands::{self, Cli};
use std::io::{self, Write};
use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = Cli::parse();
    match commands::run(cli) {
        Ok(code) => code,
        Err(e) => {
            let broken_pipe = e.chain().any(|c| {
                c.downcast_ref::<io::Error>()
                    .is_some_and(|io| io.kind() == io::ErrorKind::BrokenPipe)
            });
            if broken_pipe {
                return ExitCode::SUCCESS;
            }
            // A stderr that cannot take the message (full, closed) must not
            // panic: the exit code still tells the failure.
            let _ = writeln!(io::stderr(), "loopwright: {e:#}");
            ExitCode::FAILURE
        }
    }
}
