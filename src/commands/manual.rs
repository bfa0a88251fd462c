//! `manual`: the man page from the clap definitions; with `--dir`, the
//! page of every command too (the pages the main one names).

use super::{emit, Cli};
use crate::files::storage;
use anyhow::{bail, Result};
use clap::CommandFactory;
use clap_mangen::Man;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

// The options of `manual`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The file to write (roff; `-`: standard output).
    #[arg(
        short = 'o',
        long = "output",
        value_name = "FILE",
        conflicts_with = "dir"
    )]
    pub output: Option<PathBuf>,
    /// Write loopwright.1 and a page per command (loopwright-report.1, …)
    /// into DIR (made when missing).
    #[arg(long, value_name = "DIR")]
    pub dir: Option<PathBuf>,
    /// Overwrite FILE (or the pages in DIR) if it exists.
    #[arg(long)]
    pub force: bool,
}

/// The command tree as the pages show it: no `help` command (its page
/// would only repeat `--help`), built so each command knows its full name.
fn tree() -> clap::Command {
    let mut cmd = Cli::command().disable_help_subcommand(true);
    cmd.build();
    cmd
}

/// Where the main page says how its command pages are made.
const SEE_ALSO: &str = ".SH \"SEE ALSO\"\nThe page of each command above is written, with this one, by\n\\fBloopwright manual \\-\\-dir\\fR \\fIDIR\\fR.\n";

/// One page as text; the main page (with commands) gets [`SEE_ALSO`]
/// before its version.
fn page(cmd: &clap::Command) -> Result<(String, String)> {
    let man = Man::new(cmd.clone());
    let mut buf = Vec::new();
    man.render(&mut buf)?;
    let mut text = String::from_utf8_lossy(&buf).into_owned();
    if cmd.has_subcommands() {
        let at = text.find(".SH VERSION").unwrap_or(text.len());
        text.insert_str(at, SEE_ALSO);
    }
    Ok((man.get_filename(), text))
}

/// Every page: the main one first, then each command's, in order.
pub fn pages() -> Result<Vec<(String, String)>> {
    let cmd = tree();
    let mut out = vec![page(&cmd)?];
    for sub in cmd.get_subcommands().filter(|s| !s.is_hide_set()) {
        out.push(page(sub)?);
    }
    Ok(out)
}

fn write_dir(dir: &Path, force: bool) -> Result<ExitCode> {
    if dir.exists() && !dir.is_dir() {
        bail!("--dir {}: not a folder", dir.display());
    }
    std::fs::create_dir_all(dir)
        .map_err(|e| anyhow::anyhow!("--dir {}: cannot make it: {e}", dir.display()))?;
    let pages = pages()?;
    // Refuse before writing the first, so a refusal writes nothing.
    for (name, _) in &pages {
        storage::refuse_existing(&dir.join(name), force)?;
    }
    for (name, text) in &pages {
        storage::write_output(&dir.join(name), text, force)?;
    }
    Ok(ExitCode::SUCCESS)
}

pub fn run(args: &Args) -> Result<ExitCode> {
    if let Some(dir) = &args.dir {
        return write_dir(dir, args.force);
    }
    let output = args.output.as_ref().filter(|p| p.as_os_str() != "-");
    if let Some(p) = output {
        storage::refuse_existing(p, args.force)?;
    }
    let (_, text) = page(&tree())?;
    match output {
        Some(p) => {
            storage::write_output(p, &text, args.force)?;
            Ok(ExitCode::SUCCESS)
        }
        None => emit(text.as_bytes()),
    }
}
