use anyhow::{bail, Context, Result};
use clap::Parser;
use loopwright::cli::{Cli, Command};
use loopwright::engine::{evaluate, scenario, Scenario, Series};
use loopwright::report::{write_text, Comparison, Report};
use loopwright::sweep;
use loopwright::ui::app::Stage;
use std::io::{self, Write};
use std::path::Path;
use std::process::ExitCode;

fn load(path: Option<&Path>) -> Result<Scenario> {
    match path {
        Some(p) => Ok(Scenario::load(p)?),
        None => Ok(scenario::demo()),
    }
}

fn run(cli: Cli) -> Result<()> {
    let stdout = io::stdout();
    let mut out = stdout.lock();
    match cli.command {
        Some(Command::Report { file, json, at }) => {
            let s = load(file.as_deref())?;
            let a = evaluate(&s);
            let r = Report::new(&s, &a, &at);
            let mut buf = Vec::new();
            if json {
                r.write_json(&mut buf)?;
            } else {
                write_text(&r, &s, &a, &mut buf)?;
            }
            out.write_all(&buf)?;
        }
        Some(Command::Compare { a, b, json }) => {
            let (sa, sb) = (Scenario::load(&a)?, Scenario::load(&b)?);
            let c = Comparison::new(&sa, &evaluate(&sa), &sb, &evaluate(&sb));
            let mut buf = Vec::new();
            if json {
                c.write_json(&mut buf)?;
            } else {
                c.write_text(&mut buf)?;
            }
            out.write_all(&buf)?;
        }
        Some(Command::Sweep {
            file,
            from,
            to,
            ppd,
            csv: _,
            json,
        }) => {
            let s = Scenario::load(&file)?;
            let a = evaluate(&s);
            let range = sweep::Range {
                from,
                to,
                per_decade: ppd,
            };
            let freqs = range.frequencies(&a).map_err(anyhow::Error::msg)?;
            let rows = sweep::rows(&s, &a, &freqs);
            let mut buf = Vec::new();
            if json {
                sweep::write_json(&rows, &mut buf)?;
            } else {
                sweep::write_csv(&rows, &mut buf)?;
            }
            out.write_all(&buf)?;
        }
        Some(Command::Series { name }) => {
            let Some(series) = Series::parse(&name) else {
                bail!("unknown series `{name}`: use E3, E6, E12, E24, E48, E96 or E192");
            };
            let digits = series.digits() - 1;
            let mut buf = String::new();
            for v in series.base_values() {
                buf.push_str(&format!("{v:.digits$}\n"));
            }
            out.write_all(buf.as_bytes())?;
        }
        None => {
            drop(out);
            // Load every file before the terminal is touched, so a bad file
            // leaves a normal screen with the error on it.
            // Each file is read once: its text keeps the comments.
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
            return loopwright::ui::run(stages, looks);
        }
    }
    out.flush()?;
    Ok(())
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(()) => ExitCode::SUCCESS,
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
