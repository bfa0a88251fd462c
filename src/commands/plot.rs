//! `plot`: one view of one or two stages into an SVG file.

use crate::files::storage;
use crate::judge::{evaluate, Evaluation};
use crate::model::Scenario;
use crate::output::{svg, views};
use anyhow::{bail, Result};
use clap::builder::PossibleValuesParser;
use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `plot`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The stage A, and optionally a stage B drawn beside it.
    #[arg(value_name = "FILE", required = true, num_args = 1..=2)]
    pub files: Vec<PathBuf>,
    /// Which view to draw.
    #[arg(long, default_value = "response",
          value_parser = PossibleValuesParser::new(crate::output::views::VIEWS.iter().map(|v| v.name)))]
    pub view: String,
    /// The SVG file to write (`-`: standard output).
    #[arg(short = 'o', long = "output", value_name = "OUT.svg")]
    pub output: PathBuf,
    /// Width in pixels.
    #[arg(long, default_value_t = 800)]
    pub width: u32,
    /// Height in pixels.
    #[arg(long, default_value_t = 500)]
    pub height: u32,
    /// Black and grey only, for print.
    #[arg(long)]
    pub mono: bool,
    /// Overwrite OUT.svg if it exists.
    #[arg(long)]
    pub force: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let Some(view) = views::view(&args.view) else {
        bail!(
            "unknown view `{}`: use {}",
            args.view,
            views::view_names().join(", ")
        );
    };
    let output = &args.output;
    if let Some(ext) = output.extension().and_then(|e| e.to_str()) {
        if !ext.eq_ignore_ascii_case("svg") {
            bail!("{}: plot writes SVG; name the file .svg", output.display());
        }
    }
    let to_stdout = output.as_os_str() == "-";
    if !to_stdout {
        storage::refuse_existing(output, args.force)?;
    }
    let scenarios = args
        .files
        .iter()
        .map(|f| Scenario::load(f))
        .collect::<Result<Vec<_>, _>>()?;
    let evals: Vec<Evaluation> = scenarios.iter().map(evaluate).collect();
    let stages: Vec<_> = scenarios
        .iter()
        .zip(&evals)
        .map(|(scenario, eval)| svg::Evaluated { scenario, eval })
        .collect();
    let look = svg::Look {
        width: args.width,
        height: args.height,
        mono: args.mono,
    };
    let svg = svg::render(view, &stages, look)?;
    if to_stdout {
        return super::emit(svg.as_bytes());
    }
    let written = storage::write_output(output, &svg, args.force)?;
    // Only a note: a stderr that cannot take it does not undo the write.
    let _ = writeln!(std::io::stderr(), "wrote {}", written.display());
    Ok(ExitCode::SUCCESS)
}
