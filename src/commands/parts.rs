//! `parts`: the amplifier library (built-in, the user's, the project's).

use super::emit;
use crate::files::load::demo;
use crate::files::parts::{project_dir, user_dir, Found, Library, USER_DIR_VAR};
use crate::model::part::{amp_values, Origin};
use crate::model::values::{fmt_eng_sig, printable};
use anyhow::Result;
use std::path::PathBuf;
use std::process::ExitCode;

// The options of `parts`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "The user library is the folder named by LOOPWRIGHT_PARTS, or parts/ in \
    the platform's configuration folder (on Linux ~/.config/loopwright/parts); the project's is \
    parts/ beside the stage file given with --stage (or in the current folder)."
)]
pub struct Args {
    #[command(subcommand)]
    pub action: Option<Action>,
    /// The stage file whose folder's parts/ is the project library.
    #[arg(long, value_name = "FILE", global = true)]
    pub stage: Option<PathBuf>,
}

#[derive(Debug, clap::Subcommand)]
pub enum Action {
    /// List every part, grouped by where it was found (the default).
    List,
    /// Print one part (by name) as an `amp` block with each value's note.
    Show {
        /// The part's name (letter case aside).
        name: String,
    },
}

pub fn run(args: &Args) -> Result<ExitCode> {
    let lib = Library::gather(
        user_dir().as_deref(),
        Some(&project_dir(args.stage.as_deref())),
    );
    match &args.action {
        None | Some(Action::List) => emit(list(&lib).as_bytes()),
        Some(Action::Show { name }) => {
            let found = lib.named(name);
            if found.is_empty() {
                anyhow::bail!(
                    "no part named `{}`: `loopwright parts` lists them",
                    printable(name)
                );
            }
            let mut out = String::new();
            for (i, f) in found.iter().enumerate() {
                if i > 0 {
                    out += "\n";
                }
                out += &show(f);
            }
            emit(out.as_bytes())
        }
    }
}

fn folder(origin: Origin, lib: &Library) -> String {
    let d = match origin {
        Origin::BuiltIn => return String::new(),
        Origin::User => lib.user_dir.as_ref(),
        Origin::Project => lib.project_dir.as_ref(),
    };
    match d {
        Some(d) => format!(" ({})", printable(&d.display().to_string())),
        None => format!(" (no home folder; set {USER_DIR_VAR})"),
    }
}

/// The list: each group's parts (name, class, gbw, voltage noise), and
/// each file that could not be read with its error.
pub fn list(lib: &Library) -> String {
    let mut out = String::new();
    for origin in Origin::ALL {
        out += &format!("{}{}\n", origin.title(), folder(origin, lib));
        let parts: Vec<&Found> = lib.parts.iter().filter(|f| f.origin == origin).collect();
        let bad: Vec<_> = lib.bad.iter().filter(|b| b.origin == origin).collect();
        if parts.is_empty() && bad.is_empty() {
            out += "  (none)\n";
        }
        for f in parts {
            let p = &f.part;
            out += &format!(
                "  {:<28} {:<16} gbw {}, {}\n",
                printable(&p.name),
                printable(&p.class),
                fmt_eng_sig(p.amp.gbw, "Hz", 3),
                fmt_eng_sig(p.amp.vnoise, "V/√Hz", 3)
            );
        }
        for b in bad {
            out += &format!("  ! {}\n", b.error);
        }
    }
    out
}

/// One part: its name, class and origin, then the `amp` block with each
/// value's note.
pub fn show(f: &Found) -> String {
    let p = &f.part;
    let mut out = format!("// {}", printable(&p.name));
    if !p.class.is_empty() {
        out += &format!(" ({})", printable(&p.class));
    }
    out += &format!(", {}", f.origin.title());
    if let Some(file) = &f.file {
        out += &format!(": {}", printable(&file.display().to_string()));
    }
    out += "\namp: (\n";
    let mut s = demo();
    s.amp = p.amp.clone();
    let rows: Vec<(String, Option<&String>)> = amp_values(&s)
        .into_iter()
        .map(|(field, v)| {
            (
                format!("    {field}: {},", super::amp::ron_number(v)),
                p.notes.get(field),
            )
        })
        .collect();
    let width = rows
        .iter()
        .map(|(r, _)| r.chars().count())
        .max()
        .unwrap_or(0)
        + 1;
    for (row, note) in rows {
        match note {
            Some(n) => out += &format!("{row:<width$}// {}\n", printable(n)),
            None => out += &format!("{row}\n"),
        }
    }
    out += "),\n";
    out
}
