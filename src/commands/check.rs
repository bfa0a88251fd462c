//! `check`: each file against its spec, PASS or FAIL, with the exit code
//! CI reads (0 all pass, 1 a file fails, 2 a file cannot be read).

use super::spread::spread_with_progress;
use crate::model::Scenario;
use crate::output::spread_text::{check_json, failures, write_limits};
use crate::study::spread::SpreadResult;
use anyhow::Result;
use serde_json::json;
use std::io::{self, Write};
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `check`.
#[derive(Debug, clap::Args)]
pub struct Args {
    #[arg(value_name = "FILE", required = true, num_args = 1..)]
    pub files: Vec<PathBuf>,
    /// Monte Carlo trials (each file's `spread.trials`, else 2000).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=1_000_000))]
    pub trials: Option<u32>,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Each limit with nominal, worst trial and pass/fail, and the yield.
    #[arg(long, short = 'v')]
    pub verbose: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let c = check(&args.files, args.trials, args.json, args.verbose);
    // The file problems are told on stderr; when it cannot take them the
    // exit code (2) still says so.
    let _ = io::stderr().write_all(&c.stderr);
    super::write_stdout(&c.stdout)?;
    Ok(ExitCode::from(c.code))
}

/// What `check` gives: the output and the exit code (0 all pass, 1 a
/// file fails its spec, 2 a file could not be read; 2 wins).
pub struct Checked {
    pub stdout: Vec<u8>,
    pub stderr: Vec<u8>,
    pub code: u8,
}

/// `check FILE...`: one line per file, or the table with `verbose`.
pub fn check(
    files: &[std::path::PathBuf],
    trials: Option<u32>,
    json_out: bool,
    verbose: bool,
) -> Checked {
    let (mut stdout, mut stderr, mut code) = (Vec::new(), Vec::new(), 0u8);
    let mut all = Vec::new();
    for file in files {
        let s = match Scenario::load(file) {
            Ok(s) => s,
            Err(e) => {
                let _ = writeln!(stderr, "loopwright: {e}");
                all.push(json!({"file": file.display().to_string(), "error": e.to_string(), "pass": false}));
                code = 2;
                continue;
            }
        };
        let r = s
            .spec
            .is_some()
            .then(|| spread_with_progress(&s, trials, None));
        let pass = r.as_ref().is_none_or(SpreadResult::passes);
        if !pass && code == 0 {
            code = 1;
        }
        all.push(check_json(file, r.as_ref()));
        if json_out {
            continue;
        }
        let name = file.display();
        let _ = match &r {
            None => writeln!(stdout, "PASS {name} (no spec)"),
            Some(r) if pass => writeln!(stdout, "PASS {name}"),
            Some(r) => writeln!(stdout, "FAIL {name}: {}", failures(r)),
        };
        if let (true, Some(r)) = (verbose, &r) {
            let _ = write_limits(r, &mut stdout).and_then(|_| Ok(writeln!(stdout)?));
        }
    }
    if json_out {
        let doc = json!({"pass": code == 0, "files": all});
        let _ = writeln!(
            stdout,
            "{}",
            serde_json::to_string_pretty(&doc).unwrap_or_default()
        );
    }
    Checked {
        stdout,
        stderr,
        code,
    }
}
