//! Command-line arguments.

use crate::engine::params::HERTZ;
use crate::engine::values::{fmt_eng, parse_quantity};
use crate::engine::{Series, Topology};
use crate::helpers_cmd as helpers;
use clap::builder::PossibleValuesParser;
use clap::{Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// A frequency from the command line: engineering notation (`1k`, `2.5MHz`).
/// `0` is DC; a unit other than hertz, a negative value or one above the
/// widest sweep is refused.
pub fn parse_frequency(text: &str) -> Result<f64, String> {
    let (v, unit) = parse_quantity(text).map_err(|e| e.to_string())?;
    if !unit.is_empty() && unit != "Hz" {
        return Err(format!(
            "`{text}` is not a frequency: give hertz (1k, 2.5MHz), not {unit}"
        ));
    }
    if v.is_sign_negative() && v != 0.0 {
        return Err(format!("`{text}`: a frequency must not be negative"));
    }
    if v > HERTZ.1 {
        return Err(format!(
            "`{text}` is above {}, the highest frequency loopwright solves",
            fmt_eng(HERTZ.1, "Hz")
        ));
    }
    // `-0` is DC too, written as 0.
    Ok(v.abs())
}

const SWEEP_HELP: &str = "Columns: f_hz,gain_mag,gain_db,gain_phase_deg,loop_mag,loop_db,\
loop_phase_deg,zout_mag,zout_phase_deg,zin_mag,zin_phase_deg,noise_density (SI units; an \
empty cell where undefined). Without --from, --to or --ppd the rows are the analysis \
sweep's points; the values equal `report --at` at the same frequency.";

const PLOT_HELP: &str = "Views: response (closed-loop gain and phase, f−3dB marked), loop (loop \
gain and phase, crossover and phase margin marked), noise (output noise density, band edges \
marked), impedance (|Zout| and |Zin|), envelope (the peak needed at the internal output under \
its swing, slew and current ceilings; needs source.peak), step (the step response against time, \
±0.1 % band and settling time marked), spread (histograms of gain error, f−3dB and phase margin \
over the tolerances, spec limits marked).";

const SPREAD_HELP: &str = "What varies: rg, rf and riso within ±stage.tolerance, and as the \
scenario's `spread` block gives: cf (cap_tol), gbw (gbw_tol), a0 (a0_min to a0), ro (ro_tol). \
Every corner of those extremes is analysed, then the Monte Carlo trials; the same seed gives \
the same result on any number of cores.";

/// The shells `completions` writes for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum CompletionShell {
    Bash,
    Zsh,
    Fish,
}

#[derive(Debug, Parser)]
#[command(
    name = "loopwright",
    version,
    about = "Terminal workbench for op-amp feedback amplifier stages",
    long_about = "Terminal workbench for op-amp feedback amplifier stages.\n\n\
        With no command, opens the workbench on the built-in demo, on FILE, or on two \
        candidate stages A and B.\n\
        Results come from small-signal models: verify them on the bench.",
    args_conflicts_with_subcommands = true
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,

    /// Scenario files to open (one, or two to compare as A and B).
    #[arg(value_name = "FILE", num_args = 0..=2)]
    pub files: Vec<PathBuf>,

    /// Plain ASCII plot and border characters.
    #[arg(long)]
    pub ascii: bool,

    /// No colour (also when NO_COLOR is set).
    #[arg(long = "no-color")]
    pub no_color: bool,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the analysis of a scenario (the built-in demo without FILE).
    Report {
        file: Option<PathBuf>,
        /// One JSON object instead of text.
        #[arg(long)]
        json: bool,
        /// Also report the figures at this frequency (repeatable; `1k`, `2.5M`).
        #[arg(long = "at", value_name = "HZ", value_parser = parse_frequency, allow_hyphen_values = true)]
        at: Vec<f64>,
        /// With --json: add N samples of the step response (`t_s`, `v`)
        /// from 0 to twice its 0.01 % settling time.
        #[arg(long, value_name = "N", requires = "json", value_parser = clap::value_parser!(u32).range(2..=1_000_000))]
        waveform: Option<u32>,
        /// A one-page Markdown design note: parts, figures, warnings.
        #[arg(long, conflicts_with = "json")]
        md: bool,
        /// With --md: also write each view as SVG into DIR (made if missing)
        /// and link them from the note.
        #[arg(long, value_name = "DIR", requires = "md")]
        figures: Option<PathBuf>,
        /// Overwrite figures that already exist.
        #[arg(long)]
        force: bool,
    },
    /// Draw one view of a stage (and of a second stage B) as an SVG figure.
    #[command(after_help = PLOT_HELP)]
    Plot {
        /// The stage A, and optionally a stage B drawn beside it.
        #[arg(value_name = "FILE", required = true, num_args = 1..=2)]
        files: Vec<PathBuf>,
        /// Which view to draw.
        #[arg(long, default_value = "response",
              value_parser = PossibleValuesParser::new(crate::plot_svg::VIEWS.iter().map(|v| v.name)))]
        view: String,
        /// The SVG file to write.
        #[arg(short = 'o', long = "output", value_name = "OUT.svg")]
        output: PathBuf,
        /// Width in pixels.
        #[arg(long, default_value_t = 800)]
        width: u32,
        /// Height in pixels.
        #[arg(long, default_value_t = 500)]
        height: u32,
        /// Black and grey only, for print.
        #[arg(long)]
        mono: bool,
        /// Overwrite OUT.svg if it exists.
        #[arg(long)]
        force: bool,
    },
    /// Print shell completions for loopwright.
    Completions {
        #[arg(value_enum)]
        shell: CompletionShell,
    },
    /// Write the man page (to stdout, or to a file with -o).
    Manual {
        /// The file to write (roff).
        #[arg(short = 'o', long = "output", value_name = "FILE")]
        output: Option<PathBuf>,
        /// Overwrite FILE if it exists.
        #[arg(long)]
        force: bool,
    },
    /// Compare two candidate stages side by side.
    Compare {
        a: PathBuf,
        b: PathBuf,
        /// Both full reports and their differences as one JSON object.
        #[arg(long)]
        json: bool,
    },
    /// Print the frequency sweep as CSV (a header row, then one row per
    /// frequency) or as one JSON object of column arrays.
    #[command(after_help = SWEEP_HELP)]
    Sweep {
        file: PathBuf,
        /// Lowest frequency (with --to/--ppd: a log grid instead of the analysis sweep).
        #[arg(long, value_name = "HZ", value_parser = parse_frequency)]
        from: Option<f64>,
        /// Highest frequency.
        #[arg(long, value_name = "HZ", value_parser = parse_frequency)]
        to: Option<f64>,
        /// Points per decade of the log grid (30 without it).
        #[arg(long, value_name = "N")]
        ppd: Option<u32>,
        /// CSV (the default).
        #[arg(long, conflicts_with = "json")]
        csv: bool,
        /// One JSON object: each column name holds an array, null where undefined.
        #[arg(long)]
        json: bool,
        /// The step response instead: columns t_s,v, evenly sampled from 0 to
        /// twice the 0.01 % settling time.
        #[arg(long, conflicts_with_all = ["from", "to", "ppd"])]
        step: bool,
        /// With --step: how many samples (1000 without it).
        #[arg(long, value_name = "N", requires = "step", value_parser = clap::value_parser!(u32).range(2..=1_000_000))]
        points: Option<u32>,
    },
    /// The spread of every figure over the parts' tolerances: worst case by
    /// corners and Monte Carlo, and the yield against the spec.
    #[command(after_help = SPREAD_HELP)]
    Spread {
        file: PathBuf,
        /// Monte Carlo trials (the scenario's `spread.trials`, else 2000).
        #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
        trials: Option<u32>,
        /// The generator's seed (the scenario's `spread.seed`, else 1).
        #[arg(long, value_name = "S")]
        seed: Option<u64>,
        /// One JSON object instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Check each file against its spec: PASS or FAIL per file. Exit 0
    /// when all pass, 1 when any fails, 2 when a file cannot be read.
    Check {
        #[arg(value_name = "FILE", required = true, num_args = 1..)]
        files: Vec<PathBuf>,
        /// Monte Carlo trials (each file's `spread.trials`, else 2000).
        #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
        trials: Option<u32>,
        /// One JSON object instead of text.
        #[arg(long)]
        json: bool,
        /// Each limit with nominal, worst trial and pass/fail, and the yield.
        #[arg(long, short = 'v')]
        verbose: bool,
    },
    /// Print the base values of one decade of an IEC 60063 series.
    Series {
        /// E3, E6, E12, E24, E48, E96 or E192.
        name: String,
    },
    /// E-series (rg, rf) pairs for a gain, closest first (ties: lower
    /// resistor noise, then lower output load).
    Pairs {
        /// The gain magnitude (NonInverting: 1 + rf/rg; Inverting: rf/rg).
        #[arg(value_name = "GAIN", value_parser = helpers::parse_gain, allow_negative_numbers = true)]
        gain: f64,
        /// The series both resistors come from.
        #[arg(long, default_value = "E24", value_parser = helpers::parse_series)]
        series: Series,
        /// NonInverting or Inverting.
        #[arg(long, default_value = "NonInverting", value_parser = helpers::parse_pair_topology)]
        topology: Topology,
        /// Smallest rg (`1k`, `4k7`).
        #[arg(long = "rg-min", value_name = "OHMS", default_value = "1k", value_parser = helpers::parse_resistance, allow_negative_numbers = true)]
        rg_min: f64,
        /// Largest rg.
        #[arg(long = "rg-max", value_name = "OHMS", default_value = "100k", value_parser = helpers::parse_resistance, allow_negative_numbers = true)]
        rg_max: f64,
        /// How many pairs to list.
        #[arg(long, default_value_t = 10, value_parser = clap::value_parser!(u32).range(1..=10_000))]
        count: u32,
        /// One JSON object: `target` and `pairs` (rg, rf, gain, error, noise_density, load_ohm).
        #[arg(long)]
        json: bool,
    },
    /// The smallest riso (stage's series) and cf (E12) that reach a
    /// phase-margin target, each with the figures it gives.
    Stabilize {
        file: PathBuf,
        /// The phase-margin target, degrees.
        #[arg(long, value_name = "DEG", default_value = "60", value_parser = helpers::parse_margin, allow_negative_numbers = true)]
        margin: f64,
        /// One JSON object: `target_deg`, `options`, `reason`.
        #[arg(long)]
        json: bool,
    },
}
