use anyhow::{bail, Context, Result};
use clap::{CommandFactory, Parser};
use loopwright::cli::{Cli, Command, CompletionShell};
use loopwright::engine::{evaluate, scenario, Evaluation, Scenario, Series};
use loopwright::report::{write_text, Comparison, Report};
use loopwright::ui::app::Stage;
use loopwright::{design, helpers_cmd, note, plot_svg, storage, sweep};
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

fn load(path: Option<&Path>) -> Result<Scenario> {
    match path {
        Some(p) => Ok(Scenario::load(p)?),
        None => Ok(scenario::demo()),
    }
}

/// `report`: text, JSON or the Markdown note (with its figures).
fn report(
    file: Option<&Path>,
    json: bool,
    at: &[f64],
    waveform: Option<u32>,
    md: bool,
    figures: Option<&Path>,
    force: bool,
) -> Result<Vec<u8>> {
    let s = load(file)?;
    let a = evaluate(&s);
    let mut buf = Vec::new();
    if md {
        let links = match figures {
            Some(dir) => write_figures(&s, &a, file, dir, force)?,
            None => Vec::new(),
        };
        note::write_markdown(&s, &a, &links, &mut buf)?;
    } else if json {
        let r = Report::new(&s, &a, at);
        match waveform {
            Some(n) => r.with_waveform(&a, n as usize),
            None => r,
        }
        .write_json(&mut buf)?;
    } else {
        write_text(&Report::new(&s, &a, at), &s, &a, &mut buf)?;
    }
    Ok(buf)
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
    let stage = [plot_svg::Stage {
        scenario: s,
        eval: e,
    }];
    // The views this stage can be drawn in (the envelope needs a peak).
    let views: Vec<_> = plot_svg::VIEWS
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
        let svg =
            plot_svg::render(v, &stage, plot_svg::Look::default()).map_err(anyhow::Error::msg)?;
        storage::write_output(p, &svg, force)?;
        links.push((v.title.to_string(), p.to_string_lossy().into_owned()));
    }
    Ok(links)
}

/// `plot`: one view of one or two stages into an SVG file.
fn plot(
    files: &[PathBuf],
    view: &str,
    output: &Path,
    look: plot_svg::Look,
    force: bool,
) -> Result<()> {
    let Some(view) = plot_svg::view(view) else {
        bail!(
            "unknown view `{view}`: use {}",
            plot_svg::view_names().join(", ")
        );
    };
    if let Some(ext) = output.extension().and_then(|e| e.to_str()) {
        if !ext.eq_ignore_ascii_case("svg") {
            bail!("{}: plot writes SVG; name the file .svg", output.display());
        }
    }
    storage::refuse_existing(output, force)?;
    let scenarios = files
        .iter()
        .map(|f| Scenario::load(f))
        .collect::<Result<Vec<_>, _>>()?;
    let evals: Vec<Evaluation> = scenarios.iter().map(evaluate).collect();
    let stages: Vec<_> = scenarios
        .iter()
        .zip(&evals)
        .map(|(scenario, eval)| plot_svg::Stage { scenario, eval })
        .collect();
    let svg = plot_svg::render(view, &stages, look).map_err(anyhow::Error::msg)?;
    let written = storage::write_output(output, &svg, force)?;
    eprintln!("wrote {}", written.display());
    Ok(())
}

/// `sweep`: the rows as CSV or JSON columns.
fn sweep_rows(
    file: &Path,
    range: sweep::Range,
    step: Option<usize>,
    json: bool,
) -> Result<Vec<u8>> {
    let s = Scenario::load(file)?;
    let a = evaluate(&s);
    let mut buf = Vec::new();
    if let Some(n) = step {
        let rows = sweep::step_rows(&a, n).map_err(anyhow::Error::msg)?;
        let names = &sweep::STEP_COLUMNS;
        match json {
            true => sweep::write_json(names, &rows, &mut buf)?,
            false => sweep::write_csv(names, &rows, &mut buf)?,
        }
        return Ok(buf);
    }
    let freqs = range.frequencies(&a).map_err(anyhow::Error::msg)?;
    let rows = sweep::rows(&s, &a, &freqs);
    match json {
        true => sweep::write_json(&sweep::COLUMNS, &rows, &mut buf)?,
        false => sweep::write_csv(&sweep::COLUMNS, &rows, &mut buf)?,
    }
    Ok(buf)
}

/// `completions` and `manual`: generated from the same clap definitions.
fn generated(command: &Command) -> Result<Option<Vec<u8>>> {
    let mut buf = Vec::new();
    let mut cmd = Cli::command();
    match command {
        Command::Completions { shell } => {
            let shell = match shell {
                CompletionShell::Bash => clap_complete::Shell::Bash,
                CompletionShell::Zsh => clap_complete::Shell::Zsh,
                CompletionShell::Fish => clap_complete::Shell::Fish,
            };
            clap_complete::generate(shell, &mut cmd, "loopwright", &mut buf);
        }
        Command::Manual { output, force } => {
            if let Some(p) = output {
                storage::refuse_existing(p, *force)?;
            }
            clap_mangen::Man::new(cmd).render(&mut buf)?;
            if let Some(p) = output {
                storage::write_output(p, &String::from_utf8_lossy(&buf), *force)?;
                return Ok(Some(Vec::new()));
            }
        }
        _ => return Ok(None),
    }
    Ok(Some(buf))
}

fn series(name: &str) -> Result<Vec<u8>> {
    let Some(series) = Series::parse(name) else {
        bail!("unknown series `{name}`: use E3, E6, E12, E24, E48, E96 or E192");
    };
    let digits = series.digits() - 1;
    let mut buf = String::new();
    for v in series.base_values() {
        buf.push_str(&format!("{v:.digits$}\n"));
    }
    Ok(buf.into_bytes())
}

fn compare(a: &Path, b: &Path, json: bool) -> Result<Vec<u8>> {
    let (sa, sb) = (Scenario::load(a)?, Scenario::load(b)?);
    let c = Comparison::new(&sa, &evaluate(&sa), &sb, &evaluate(&sb));
    let mut buf = Vec::new();
    if json {
        c.write_json(&mut buf)?;
    } else {
        c.write_text(&mut buf)?;
    }
    Ok(buf)
}

/// The workbench: every file is loaded before the terminal is touched,
/// so a bad file leaves a normal screen with the error on it. Each file is
/// read once: its text keeps the comments.
fn workbench(cli: &Cli) -> Result<()> {
    let stages = if cli.files.is_empty() {
        vec![Stage::from((scenario::demo(), None))]
    } else {
        cli.files
            .iter()
            .map(|p| {
                let (scenario, text) = Scenario::read(p)?;
                Ok(Stage {
                    scenario,
                    path: Some(p.clone()),
                    text,
                })
            })
            .collect::<Result<Vec<_>>>()
            .context("cannot open the workbench")?
    };
    let looks = loopwright::ui::Looks::resolve(cli.no_color, cli.ascii);
    loopwright::ui::run(stages, looks)
}

/// `spread`: text or JSON.
fn spread(file: &Path, trials: Option<u32>, seed: Option<u64>, json: bool) -> Result<Vec<u8>> {
    let s = Scenario::load(file)?;
    let r = design::spread_with_progress(&s, trials, seed);
    let mut buf = Vec::new();
    if json {
        serde_json::to_writer_pretty(&mut buf, &design::spread_json(&r))?;
        buf.push(b'\n');
    } else {
        design::write_spread(&r, &s.title, &mut buf)?;
    }
    Ok(buf)
}

/// The analysis commands' output (None: not one of them).
fn analysis_output(command: &Command) -> Result<Option<Vec<u8>>> {
    Ok(Some(match command {
        Command::Report {
            file,
            json,
            at,
            waveform,
            md,
            figures,
            force,
        } => report(
            file.as_deref(),
            *json,
            at,
            *waveform,
            *md,
            figures.as_deref(),
            *force,
        )?,
        Command::Compare { a, b, json } => compare(a, b, *json)?,
        Command::Sweep {
            file,
            from,
            to,
            ppd,
            csv: _,
            json,
            step,
            points,
        } => {
            let range = sweep::Range {
                from: *from,
                to: *to,
                per_decade: *ppd,
            };
            let step = step.then(|| points.map_or(sweep::STEP_POINTS, |n| n as usize));
            sweep_rows(file, range, step, *json)?
        }
        Command::Plot {
            files,
            view,
            output,
            width,
            height,
            mono,
            force,
        } => {
            let look = plot_svg::Look {
                width: *width,
                height: *height,
                mono: *mono,
            };
            plot(files, view, output, look, *force)?;
            Vec::new()
        }
        Command::Series { name } => series(name)?,
        _ => return Ok(None),
    }))
}

/// The spread and design-helper commands' output (None: not one of them).
fn design_output(command: &Command) -> Result<Option<Vec<u8>>> {
    Ok(Some(match command {
        Command::Spread {
            file,
            trials,
            seed,
            json,
        } => spread(file, *trials, *seed, *json)?,
        Command::Pairs {
            gain,
            series,
            topology,
            rg_min,
            rg_max,
            count,
            json,
        } => {
            let q = loopwright::engine::pairs::Query {
                target: *gain,
                series: *series,
                topology: *topology,
                rg_range: (*rg_min, *rg_max),
                count: *count as usize,
            };
            helpers_cmd::pairs_output(&q, *json)?
        }
        Command::Stabilize { file, margin, json } => {
            helpers_cmd::stabilize_output(file, *margin, *json)?
        }
        _ => return Ok(None),
    }))
}

fn run(cli: Cli) -> Result<ExitCode> {
    let Some(command) = &cli.command else {
        return workbench(&cli).map(|_| ExitCode::SUCCESS);
    };
    if let Command::Check {
        files,
        trials,
        json,
        verbose,
    } = command
    {
        let c = design::check(files, *trials, *json, *verbose);
        io::stderr().write_all(&c.stderr)?;
        let mut out = io::stdout().lock();
        out.write_all(&c.stdout)?;
        out.flush()?;
        return Ok(ExitCode::from(c.code));
    }
    let buf = match analysis_output(command)? {
        Some(buf) => buf,
        None => match design_output(command)? {
            Some(buf) => buf,
            None => generated(command)?.unwrap_or_default(),
        },
    };
    let stdout = io::stdout();
    let mut out = stdout.lock();
    out.write_all(&buf)?;
    out.flush()?;
    Ok(ExitCode::SUCCESS)
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        Err(e) => {
            let broken_pipe = e.chain().any(|c| {
                c.downcast_ref::<io::Error>()
                    .is_some_and(|io| io.kind() == io::ErrorKind::BrokenPipe)
            });
            if broken_pipe {
                return ExitCode::SUCCESS;
            }
            eprintln!("loopwright: {e:#}");
            ExitCode::FAILURE
        }
    }
}
