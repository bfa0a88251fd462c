//! `sweep`: the frequency sweep (or the step response) as CSV or JSON columns.

use super::emit;
use super::parse::parse_frequency;
use crate::judge::evaluate;
use crate::model::Scenario;
use crate::output::sweep_table;
use anyhow::Result;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `sweep`.
#[derive(Debug, clap::Args)]
pub struct Args {
    pub file: PathBuf,
    /// Lowest frequency (with --to/--ppd: a log grid instead of the analysis sweep).
    #[arg(long, value_name = "HZ", value_parser = parse_frequency)]
    pub from: Option<f64>,
    /// Highest frequency.
    #[arg(long, value_name = "HZ", value_parser = parse_frequency)]
    pub to: Option<f64>,
    /// Points per decade of the log grid (30 without it).
    #[arg(long, value_name = "N")]
    pub ppd: Option<u32>,
    /// CSV (the default).
    #[arg(long, conflicts_with = "json")]
    pub csv: bool,
    /// One JSON object: each column name holds an array, null where undefined.
    #[arg(long)]
    pub json: bool,
    /// The step response instead: columns t_s,v, evenly sampled from 0 to
    /// twice the 0.01 % settling time.
    #[arg(long, conflicts_with_all = ["from", "to", "ppd"])]
    pub step: bool,
    /// With --step: how many samples (1000 without it).
    #[arg(long, value_name = "N", requires = "step", value_parser = clap::value_parser!(u32).range(2..=1_000_000))]
    pub points: Option<u32>,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let s = Scenario::load(&args.file)?;
    let a = evaluate(&s);
    let mut buf = Vec::new();
    if args.step {
        let n = args.points.map_or(sweep_table::STEP_POINTS, |n| n as usize);
        let rows = sweep_table::step_rows(&a.analysis, n)?;
        write(args.json, &sweep_table::STEP_COLUMNS, &rows, &mut buf)?;
        return emit(&buf);
    }
    let range = sweep_table::Range {
        from: args.from,
        to: args.to,
        per_decade: args.ppd,
    };
    let freqs = range.frequencies(&a.analysis)?;
    let rows = sweep_table::rows(&s, &a.analysis, &freqs);
    write(args.json, &sweep_table::COLUMNS, &rows, &mut buf)?;
    emit(&buf)
}

/// The rows as JSON columns or as CSV.
fn write<R: AsRef<[Option<f64>]>>(
    json: bool,
    names: &[&str],
    rows: &[R],
    buf: &mut Vec<u8>,
) -> std::io::Result<()> {
    match json {
        true => sweep_table::write_json(names, rows, buf),
        false => sweep_table::write_csv(names, rows, buf),
    }
}
