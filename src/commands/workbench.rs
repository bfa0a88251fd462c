//! The workbench, the program without a command: every file is loaded before
//! the terminal is touched, so a bad file leaves a normal screen with the
//! error on it. Each file is read once: its text keeps the comments.

use crate::files::load::demo;
use crate::model::Scenario;
use crate::ui::app::Opened;
use crate::ui::Looks;
use anyhow::{Context, Result};
use std::path::PathBuf;
use std::process::ExitCode;

// The options of the workbench (the program without a command).
#[derive(Debug, clap::Args)]
pub struct Args {
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

pub fn run(args: &Args) -> Result<ExitCode> {
    let stages = if args.files.is_empty() {
        vec![Opened::from((demo(), None))]
    } else {
        args.files
            .iter()
            .map(|p| {
                let (scenario, text) = Scenario::read(p)?;
                Ok(Opened {
                    scenario,
                    path: Some(p.clone()),
                    text,
                })
            })
            .collect::<Result<Vec<_>>>()
            .context("cannot open the workbench")?
    };
    let looks = Looks::resolve(args.no_color, args.ascii);
    crate::ui::run(stages, looks)
}
