//! `pairs`: E-series (rg, rf) pairs for a gain.

use super::emit;
use crate::model::{Series, Topology};
use crate::output::helper_tables;
use crate::study::pairs::Query;
use anyhow::Result;
use std::process::ExitCode;

// The options of `pairs`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The gain magnitude (NonInverting: 1 + rf/rg; Inverting: rf/rg;
    /// Difference: r2/r1 with r3 = r1, r4 = r2).
    #[arg(value_name = "GAIN", value_parser = super::parse::parse_gain, allow_negative_numbers = true)]
    pub gain: f64,
    /// The series both resistors come from.
    #[arg(long, default_value = "E24", value_parser = super::parse::parse_series)]
    pub series: Series,
    #[arg(long, default_value = "NonInverting", value_parser = super::parse::parse_pair_topology,
          help = super::parse::pair_topology_help())]
    pub topology: Topology,
    /// Smallest rg (`1k`, `4k7`).
    #[arg(long = "rg-min", value_name = "OHMS", default_value = "1k", value_parser = super::parse::parse_resistance, allow_negative_numbers = true)]
    pub rg_min: f64,
    /// Largest rg.
    #[arg(long = "rg-max", value_name = "OHMS", default_value = "100k", value_parser = super::parse::parse_resistance, allow_negative_numbers = true)]
    pub rg_max: f64,
    /// How many pairs to list.
    #[arg(long, default_value_t = 10, value_parser = clap::value_parser!(u32).range(1..=10_000))]
    pub count: u32,
    /// The source resistance (inverting: in series with rg); the gain and
    /// the rf chosen for each rg take it into account.
    #[arg(long = "source-r", value_name = "OHMS", default_value = "0", value_parser = super::parse::parse_resistance_or_zero, allow_negative_numbers = true)]
    pub source_r: f64,
    /// A resistor between the output (where the feedback is taken) and the load.
    #[arg(long, value_name = "OHMS", default_value = "0", value_parser = super::parse::parse_resistance_or_zero, allow_negative_numbers = true)]
    pub riso: f64,
    /// The load resistance: with --riso, the gain is the gain at the load.
    #[arg(long = "load-r", value_name = "OHMS", value_parser = super::parse::parse_resistance, allow_negative_numbers = true)]
    pub load_r: Option<f64>,
    /// One JSON object: `target` and `pairs` (rg, rf, gain, error, noise_density, load_ohm).
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let q = Query {
        target: args.gain,
        series: args.series,
        topology: args.topology,
        rg_range: (args.rg_min, args.rg_max),
        count: args.count as usize,
        source_r: args.source_r,
        riso: args.riso,
        load_r: args.load_r,
    };
    emit(&helper_tables::pairs_output(&q, args.json)?)
}
