//! The command line: the clap definitions and one file per command, each
//! with its options (`Args`) and its `run`. [`run`] is the one exhaustive
//! match; adding a command is a file here and one variant of [`Command`].

pub mod amp;
pub mod check;
pub mod compare;
pub mod completions;
pub mod manual;
pub mod pairs;
pub mod parse;
pub mod parts;
pub mod plot;
pub mod report;
pub mod series;
pub mod spread;
pub mod stabilize;
pub mod sweep;
pub mod tighten;
pub mod workbench;

use crate::files::load::demo;
use crate::model::Scenario;
use anyhow::Result;
use clap::{Parser, Subcommand};
use std::io::{self, Write};
use std::path::Path;
use std::process::ExitCode;

const SWEEP_HELP: &str = "Columns: f_hz,gain_mag,gain_db,gain_phase_deg,loop_mag,loop_db,\
loop_phase_deg,zout_mag,zout_phase_deg,zin_mag,zin_phase_deg,noise_density (SI units; an \
empty cell where undefined). Without --from, --to or --ppd the rows are the analysis \
sweep's points; the values equal `report --at` at the same frequency.";

const SPREAD_HELP: &str = "What varies: rg, rf and riso within ±stage.tolerance, and as the \
scenario's `spread` block gives: cf (cap_tol), gbw (gbw_tol), a0 (a0_min to a0), ro (ro_tol). \
Every corner of those extremes is analysed, then the Monte Carlo trials; the same seed gives \
the same result on any number of cores.";

#[derive(Debug, Parser)]
#[command(
    name = "loopwright",
    version,
    about = "Terminal workbench for op-amp feedback amplifier stages",
    long_about = "Terminal workbench for op-amp feedback amplifier stages.\n\n\
        With no command, opens the workbench on the built-in demo, on FILE, or on two \
        candidate stages A and B.\n\
        Stage kinds (stage.topology): NonInverting, Inverting, Follower, Transimpedance, \
        Difference.\n\
        Results come from small-signal models: verify them on the bench.",
    args_conflicts_with_subcommands = true
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,

    #[command(flatten)]
    pub workbench: workbench::Args,
}

/// The commands; each is a file of this folder with its `Args` and `run`.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Print the analysis of a scenario (the built-in demo without FILE).
    Report(report::Args),
    /// Draw one view of a stage (and of a second stage B) as an SVG figure.
    #[command(after_help = crate::output::views::plot_help())]
    Plot(plot::Args),
    /// Print shell completions for loopwright.
    Completions(completions::Args),
    /// Write the man page (to stdout, or to a file with -o).
    Manual(manual::Args),
    /// Compare two candidate stages side by side.
    Compare(compare::Args),
    /// Print the frequency sweep as CSV (a header row, then one row per
    /// frequency) or as one JSON object of column arrays.
    #[command(after_help = SWEEP_HELP)]
    Sweep(sweep::Args),
    /// The spread of every figure over the parts' tolerances: worst case by
    /// corners and Monte Carlo, and the yield against the spec.
    #[command(after_help = SPREAD_HELP)]
    Spread(spread::Args),
    /// Check each file against its spec: PASS or FAIL per file. Exit 0
    /// when all pass, 1 when any fails, 2 when a file cannot be read.
    Check(check::Args),
    /// Print the base values of one decade of an IEC 60063 series.
    Series(series::Args),
    /// E-series (rg, rf) pairs for a gain, closest first (ties: lower
    /// resistor noise, then lower output load).
    Pairs(pairs::Args),
    /// The smallest riso (stage's series) and cf (E12) that reach a
    /// phase-margin target, each with the figures it gives.
    Stabilize(stabilize::Args),
    /// The smallest sets of tolerance upgrades (resistors along 5, 2, 1,
    /// 0.5, 0.1 %; capacitors along 20, 10, 5, 2, 1 %) that bring the
    /// yield to `spec.yield_min`, each verified by a Monte Carlo.
    Tighten(tighten::Args),
    /// The amplifier model (an `amp` block) from the figures a datasheet
    /// prints, each value with its formula and inputs.
    Amp(amp::Args),
    /// The amplifier library: the built-in archetypes, the user's parts and
    /// the project's `parts/`; `parts show NAME` prints one with its notes.
    Parts(parts::Args),
}

/// Run the command (the workbench without one); the exit code is the caller's.
pub fn run(cli: Cli) -> Result<ExitCode> {
    let Some(command) = &cli.command else {
        return workbench::run(&cli.workbench);
    };
    match command {
        Command::Report(a) => report::run(a),
        Command::Plot(a) => plot::run(a),
        Command::Completions(a) => completions::run(a),
        Command::Manual(a) => manual::run(a),
        Command::Compare(a) => compare::run(a),
        Command::Sweep(a) => sweep::run(a),
        Command::Spread(a) => spread::run(a),
        Command::Check(a) => check::run(a),
        Command::Series(a) => series::run(a),
        Command::Pairs(a) => pairs::run(a),
        Command::Stabilize(a) => stabilize::run(a),
        Command::Tighten(a) => tighten::run(a),
        Command::Amp(a) => amp::run(a),
        Command::Parts(a) => parts::run(a),
    }
}

/// A stage file, or the built-in demo without one.
fn load(path: Option<&Path>) -> Result<Scenario> {
    match path {
        Some(p) => Ok(Scenario::load(p)?),
        None => Ok(demo()),
    }
}

/// Write a command's whole output to stdout at once.
fn emit(buf: &[u8]) -> Result<ExitCode> {
    write_stdout(buf)?;
    Ok(ExitCode::SUCCESS)
}

/// Write to stdout, and fail when it was closed when loopwright started.
fn write_stdout(buf: &[u8]) -> Result<()> {
    if stdout_was_closed() {
        anyhow::bail!("stdout is closed: the output could not be written");
    }
    let mut out = io::stdout().lock();
    out.write_all(buf)?;
    out.flush()?;
    Ok(())
}

/// Whether stdout was closed at start. The runtime puts `/dev/null`,
/// opened read-write, in place of a closed standard descriptor, so a write
/// would be lost with exit code 0; a shell's `>/dev/null` opens it
/// write-only. Linux only (it reads `/proc/self`); elsewhere false.
fn stdout_was_closed() -> bool {
    if !cfg!(target_os = "linux") {
        return false;
    }
    let is_null = std::fs::read_link("/proc/self/fd/1").is_ok_and(|p| p == Path::new("/dev/null"));
    let read_write = || {
        let info = std::fs::read_to_string("/proc/self/fdinfo/1").unwrap_or_default();
        let flags = info
            .lines()
            .find_map(|l| l.strip_prefix("flags:"))
            .and_then(|f| u32::from_str_radix(f.trim(), 8).ok());
        // O_ACCMODE is 3; O_RDWR is 2.
        flags.is_some_and(|f| f & 3 == 2)
    };
    is_null && read_write()
}
