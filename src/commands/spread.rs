//! `spread`: every figure's spread over the tolerances, as text or JSON,
//! with a progress bar on a terminal.

use super::emit;
use crate::model::Scenario;
use crate::output::spread_text;
use crate::study::spread::{spread, trials_of, Run, SpreadResult};
use anyhow::Result;
use indicatif::{ProgressBar, ProgressDrawTarget};
use std::io::IsTerminal;
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

// The options of `spread`.
#[derive(Debug, clap::Args)]
pub struct Args {
    pub file: PathBuf,
    /// Monte Carlo trials (the scenario's `spread.trials`, else 2000).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
    pub trials: Option<u32>,
    /// The generator's seed (the scenario's `spread.seed`, else 1).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let s = Scenario::load(&args.file)?;
    let r = spread_with_progress(&s, args.trials, args.seed);
    let mut buf = Vec::new();
    if args.json {
        serde_json::to_writer_pretty(&mut buf, &spread_text::spread_json(&r))?;
        buf.push(b'\n');
    } else {
        spread_text::write_spread(&r, &s.title, &mut buf)?;
    }
    emit(&buf)
}

/// How long a run goes before the progress bar shows.
const QUIET_FOR: Duration = Duration::from_millis(500);

/// Run the spread with a progress bar on stderr when it is a terminal and
/// the run lasts more than about half a second; nothing on stderr else.
pub fn spread_with_progress(s: &Scenario, trials: Option<u32>, seed: Option<u64>) -> SpreadResult {
    let n = trials_of(s, trials) as u64;
    let bar = ProgressBar::with_draw_target(Some(n), ProgressDrawTarget::hidden());
    let terminal = std::io::stderr().is_terminal();
    let shown = AtomicBool::new(false);
    let start = Instant::now();
    let progress = |done: usize| {
        if terminal && !shown.load(Ordering::Relaxed) && start.elapsed() > QUIET_FOR {
            shown.store(true, Ordering::Relaxed);
            bar.set_draw_target(ProgressDrawTarget::stderr());
        }
        bar.set_position(done as u64);
    };
    let r = spread(
        s,
        &Run {
            trials,
            seed,
            progress: Some(&progress),
            ..Run::default()
        },
    );
    bar.finish_and_clear();
    r
}
