//! `completions`: shell completions from the clap definitions.

use super::{emit, Cli};
use anyhow::Result;
use clap::{CommandFactory, ValueEnum};
use std::process::ExitCode;

/// The shells `completions` writes for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CompletionShell {
    Bash,
    Zsh,
    Fish,
}

// The options of `completions`.
#[derive(Debug, clap::Args)]
pub struct Args {
    #[arg(value_enum)]
    pub shell: CompletionShell,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let shell = match args.shell {
        CompletionShell::Bash => clap_complete::Shell::Bash,
        CompletionShell::Zsh => clap_complete::Shell::Zsh,
        CompletionShell::Fish => clap_complete::Shell::Fish,
    };
    let mut buf = Vec::new();
    clap_complete::generate(shell, &mut Cli::command(), "loopwright", &mut buf);
    emit(&buf)
}
