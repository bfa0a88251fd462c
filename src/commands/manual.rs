//! `manual`: the man page from the clap definitions.

use super::{emit, Cli};
use crate::files::storage;
use anyhow::Result;
use clap::CommandFactory;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `manual`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The file to write (roff; `-`: standard output).
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Overwrite FILE if it exists.
    #[arg(long)]
    pub force: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let output = args.output.as_ref().filter(|p| p.as_os_str() != "-");
    if let Some(p) = output {
        storage::refuse_existing(p, args.force)?;
    }
    let mut buf = Vec::new();
    clap_mangen::Man::new(Cli::command()).render(&mut buf)?;
    match output {
        Some(p) => {
            storage::write_output(p, &String::from_utf8_lossy(&buf), args.force)?;
            Ok(ExitCode::SUCCESS)
        }
        None => emit(&buf),
    }
}
