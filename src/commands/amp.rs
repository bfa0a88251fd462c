//! `amp`: the amplifier model from the figures a datasheet prints.

use super::emit;
use crate::files::figures::derive_file;
use crate::model::datasheet::{Derivation, Take};
use anyhow::Result;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `amp`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The datasheet-figures file (RON; README "Amplifier models from datasheet figures").
    #[arg(value_name = "FROM.ron")]
    pub from: PathBuf,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let (figures, d) = derive_file(&args.from)?;
    let name = figures.part.as_deref().map(crate::model::values::printable);
    let take = match figures.take {
        Take::Typical => "typical",
        Take::Maximum => "maximum",
    };
    emit(amp_block(&d, &args.from.display().to_string(), name.as_deref(), take).as_bytes())
}

/// A number as RON writes it, to six significant digits.
pub fn ron_number(x: f64) -> String {
    let rounded: f64 = format!("{x:.5e}").parse().unwrap_or(x);
    format!("{rounded:?}")
}

/// The `amp: (...)` block, each value with its formula and inputs.
pub fn amp_block(d: &Derivation, file: &str, part: Option<&str>, take: &str) -> String {
    let mut out = String::new();
    let part = part.map(|p| format!(" ({p})")).unwrap_or_default();
    out += &format!("// The amplifier model from the datasheet figures in {file}{part}.\n");
    out += &match d.given {
        "gbw" => {
            "// Given: the gain-bandwidth gbw (not the unity-gain frequency f_u).\n".to_string()
        }
        _ => "// Given: the unity-gain frequency f_u (not the gain-bandwidth gbw).\n".to_string(),
    };
    out += &format!("// Copied figures: {take} where both typical and maximum are printed.\n");
    out += "amp: (\n";
    let width = d
        .values
        .iter()
        .map(|v| v.field.len() + ron_number(v.value).len())
        .max()
        .unwrap_or(0)
        + 7;
    for v in &d.values {
        let entry = format!("    {}: {},", v.field, ron_number(v.value));
        out += &format!("{entry:<width$} // {}\n", v.how);
    }
    out += "),\n";
    out
}
