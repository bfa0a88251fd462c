//! `stabilize`: the smallest riso and cf that reach a phase-margin target.

use super::emit;
use crate::model::Scenario;
use crate::output::helper_tables;
use anyhow::Result;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `stabilize`.
#[derive(Debug, clap::Args)]
pub struct Args {
    pub file: PathBuf,
    /// The phase-margin target, degrees.
    #[arg(long, value_name = "DEG", default_value = "60", value_parser = super::parse::parse_margin, allow_negative_numbers = true)]
    pub margin: f64,
    /// One JSON object: `target_deg`, `options`, `reason`.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let s = Scenario::load(&args.file)?;
    emit(&helper_tables::stabilize_output(
        &s,
        args.margin,
        args.json,
    )?)
}
