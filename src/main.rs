//! The binary: parse the command line, run the command, own the exit code.

use clap::Parser;
use loopwright::commands::{self, Cli};
use std::io;
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
            eprintln!("loopwright: {e:#}");
            ExitCode::FAILURE
        }
    }
}
