//! `series`: one decade of an IEC 60063 series.

use super::emit;
use super::parse::parse_series;
use anyhow::Result;
use std::process::ExitCode;

// The options of `series`.
#[derive(Debug, clap::Args)]
pub struct Args {
    #[arg(help = crate::model::names::sentence(&crate::model::Series::NAMES, " or "))]
    pub name: String,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let series = parse_series(&args.name)?;
    let digits = series.digits() - 1;
    let mut buf = String::new();
    for v in series.base_values() {
        buf.push_str(&format!("{v:.digits$}\n"));
    }
    emit(buf.as_bytes())
}
