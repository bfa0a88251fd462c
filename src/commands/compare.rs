//! `compare`: two candidate stages side by side, as text or JSON.

use super::emit;
use crate::judge::evaluate;
use crate::model::Scenario;
use crate::output::report::Comparison;
use crate::study::spread::{spread, Run};
use anyhow::Result;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `compare`.
#[derive(Debug, clap::Args)]
pub struct Args {
    pub a: PathBuf,
    pub b: PathBuf,
    /// Both full reports and their differences as one JSON object.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let (sa, sb) = (Scenario::load(&args.a)?, Scenario::load(&args.b)?);
    let yield_of = |s: &Scenario| {
        s.spec
            .as_ref()
            .and_then(|_| spread(s, &Run::default()).yield_frac)
    };
    let c = Comparison::new(&sa, &evaluate(&sa), &sb, &evaluate(&sb))
        .with_yields(yield_of(&sa), yield_of(&sb));
    let mut buf = Vec::new();
    if args.json {
        c.write_json(&mut buf)?;
    } else {
        c.write_text(&mut buf)?;
    }
    emit(&buf)
}
