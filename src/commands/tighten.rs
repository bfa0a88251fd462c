//! `tighten`: the smallest sets of tolerance upgrades that bring a stage
//! to its `spec.yield_min`, each verified by a Monte Carlo.

use super::emit;
use crate::model::Scenario;
use crate::output::tighten_text;
use crate::study::tighten::tighten;
use anyhow::Result;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `tighten`.
#[derive(Debug, clap::Args)]
pub struct Args {
    pub file: PathBuf,
    /// One JSON object: `yield`, `yield_min`, `options`, `amplifier`.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let s = Scenario::load(&args.file)?;
    let t = tighten(&s, None, None);
    let mut buf = Vec::new();
    if args.json {
        serde_json::to_writer_pretty(&mut buf, &tighten_text::json(&t))?;
        buf.push(b'\n');
    } else {
        buf.extend_from_slice(tighten_text::text(&t, &s.title).as_bytes());
    }
    emit(&buf)
}
