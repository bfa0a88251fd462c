//! `report`: the analysis of one stage as text, JSON or a Markdown note
//! (with its figures as SVG files).

use super::parse::parse_frequency;
use super::{emit, load};
use crate::files::storage;
use crate::judge::{evaluate, Evaluation};
use crate::model::Scenario;
use crate::output::report::{write_text, Report};
use crate::output::{note, svg, views};
use anyhow::{Context, Result};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

// The options of `report`.
#[derive(Debug, clap::Args)]
pub struct Args {
    pub file: Option<PathBuf>,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Also report the figures at this frequency (repeatable; `1k`, `2.5M`).
    #[arg(long = "at", value_name = "HZ", value_parser = parse_frequency, allow_hyphen_values = true)]
    pub at: Vec<f64>,
    /// With --json: add N samples of the step response (`t_s`, `v`)
    /// from 0 to twice its 0.01 % settling time.
    #[arg(long, value_name = "N", requires = "json", value_parser = clap::value_parser!(u32).range(2..=1_000_000))]
    pub waveform: Option<u32>,
    /// A one-page Markdown design note: parts, figures, warnings.
    #[arg(long, conflicts_with = "json")]
    pub md: bool,
    /// With --md: also write each view as SVG into DIR (made if missing)
    /// and link them from the note.
    #[arg(long, value_name = "DIR", requires = "md")]
    pub figures: Option<PathBuf>,
    /// Overwrite figures that already exist.
    #[arg(long)]
    pub force: bool,
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let file = args.file.as_deref();
    let s = load(file)?;
    let a = evaluate(&s);
    let mut buf = Vec::new();
    if args.md {
        let links = match &args.figures {
            Some(dir) => write_figures(&s, &a, file, dir, args.force)?,
            None => Vec::new(),
        };
        note::write_markdown(&s, &a, &links, &mut buf)?;
    } else if args.json {
        let r = Report::new(&s, &a, &args.at);
        match args.waveform {
            Some(n) => r.with_waveform(&a, n as usize),
            None => r,
        }
        .write_json(&mut buf)?;
    } else {
        write_text(&Report::new(&s, &a, &args.at), &s, &a, &mut buf)?;
    }
    emit(&buf)
}

/// Every available view as `DIR/STEM-VIEW.svg`; (caption, link) pairs.
/// Existing files are refused before anything is written.
fn write_figures(
    s: &Scenario,
    e: &Evaluation,
    file: Option<&Path>,
    dir: &Path,
    force: bool,
) -> Result<Vec<(String, String)>> {
    let stem = file
        .and_then(|f| f.file_stem())
        .map_or("demo".into(), |f| f.to_string_lossy().into_owned());
    let stage = [svg::Evaluated {
        scenario: s,
        eval: e,
    }];
    // The views this stage can be drawn in (the envelope needs a peak).
    let views: Vec<_> = views::VIEWS
        .iter()
        .filter(|v| (v.needs)(&stage[0]).is_none())
        .collect();
    let paths: Vec<PathBuf> = views
        .iter()
        .map(|v| dir.join(format!("{stem}-{}.svg", v.name)))
        .collect();
    for p in &paths {
        storage::refuse_existing(p, force)?;
    }
    std::fs::create_dir_all(dir).with_context(|| format!("cannot make {}", dir.display()))?;
    let mut links = Vec::new();
    for (v, p) in views.iter().zip(&paths) {
        let svg = svg::render(v, &stage, svg::Look::default())?;
        storage::write_output(p, &svg, force)?;
        links.push((v.title.to_string(), p.to_string_lossy().into_owned()));
    }
    Ok(links)
}
