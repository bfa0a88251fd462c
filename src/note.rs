//! The one-page Markdown design note (`report --md`): title and notes, the
//! parts from the parameter table, the figures from the figure table, the
//! warnings and, with `--figures DIR`, links to the SVG figures.

use crate::engine::figures::{Section, FIGURES};
use crate::engine::params::PARAMS;
use crate::engine::scenario::Scenario;
use crate::engine::values::{fmt_eng, printable};
use crate::engine::Evaluation;
use std::io::{self, Write};

/// Text for one Markdown table cell: control characters escaped, `|` and
/// backslashes escaped.
fn cell(text: &str) -> String {
    printable(text).replace('\\', "\\\\").replace('|', "\\|")
}

/// A line of running text with the Markdown marks that could change it escaped.
fn plain(text: &str) -> String {
    let mut out = String::new();
    for c in printable(text).chars() {
        if "\\`*_[]<>#|".contains(c) {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

/// The parts: every present parameter; resistors with their series and
/// the stage's tolerance.
fn write_parts(s: &Scenario, w: &mut impl Write) -> io::Result<()> {
    writeln!(w, "## Parts")?;
    writeln!(w)?;
    writeln!(w, "| part | value | series | tolerance |")?;
    writeln!(w, "| --- | --- | --- | --- |")?;
    let tolerance = PARAMS
        .iter()
        .find(|p| p.path == "stage.tolerance")
        .map(|p| p.display(s))
        .unwrap_or_default();
    for p in PARAMS.iter().filter(|p| p.applies(s)) {
        let value = p.display(s);
        if value == "none" {
            continue;
        }
        let (series, tol) = match p.series_note(s) {
            Some((name, true)) => (name, tolerance.clone()),
            Some((name, false)) => (format!("off {name}"), tolerance.clone()),
            None => (String::new(), String::new()),
        };
        writeln!(
            w,
            "| {} (`{}`) | {} | {} | {} |",
            cell(p.label),
            p.path,
            cell(&value),
            cell(&series),
            cell(&tol)
        )?;
    }
    Ok(())
}

/// Every figure of the text report, grouped by its section.
fn write_figures(s: &Scenario, e: &Evaluation, w: &mut impl Write) -> io::Result<()> {
    writeln!(w, "## Key figures")?;
    writeln!(w)?;
    writeln!(w, "| figure | value |")?;
    writeln!(w, "| --- | --- |")?;
    for sec in Section::ALL {
        for f in FIGURES.iter().filter(|f| f.section == sec && f.shown.text) {
            writeln!(w, "| {} | {} |", cell(f.label), cell(&f.text(f.read(e))))?;
        }
    }
    writeln!(
        w,
        "| noise band | {} to {} |",
        fmt_eng(s.band.0, "Hz"),
        fmt_eng(s.band.1, "Hz")
    )?;
    Ok(())
}

fn write_warnings(e: &Evaluation, w: &mut impl Write) -> io::Result<()> {
    writeln!(w, "## Warnings")?;
    writeln!(w)?;
    if e.warnings.is_empty() {
        return writeln!(w, "No warnings.");
    }
    for x in &e.warnings {
        writeln!(
            w,
            "- **{}** `{}`: {}",
            x.severity.name(),
            x.code,
            plain(&x.text)
        )?;
    }
    Ok(())
}

/// The note. `figures` are (caption, link) pairs, links as written.
pub fn write_markdown(
    s: &Scenario,
    e: &Evaluation,
    figures: &[(String, String)],
    w: &mut impl Write,
) -> io::Result<()> {
    writeln!(w, "# {}", plain(&s.title))?;
    writeln!(w)?;
    if let Some(notes) = s.notes.as_deref().filter(|n| !n.trim().is_empty()) {
        for line in notes.lines() {
            writeln!(w, "{}", plain(line))?;
        }
        writeln!(w)?;
    }
    writeln!(
        w,
        "*Figures from a small-signal, linear model: verify them on the bench.*"
    )?;
    writeln!(w)?;
    write_parts(s, w)?;
    writeln!(w)?;
    write_figures(s, e, w)?;
    writeln!(w)?;
    write_warnings(e, w)?;
    if !figures.is_empty() {
        writeln!(w)?;
        writeln!(w, "## Figures")?;
        for (caption, link) in figures {
            writeln!(w)?;
            writeln!(w, "![{}]({})", plain(caption), link.replace(' ', "%20"))?;
        }
    }
    Ok(())
}
