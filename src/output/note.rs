//! The one-page Markdown design note (`report --md`): title and notes, the
//! parts from the parameter table, the figures from the figure table, the
//! warnings and, with `--figures DIR`, links to the SVG figures.

use crate::judge::figures::{Section, FIGURES};
use crate::judge::Evaluation;
use crate::model::params::PARAMS;
use crate::model::scenario::Scenario;
use crate::model::values::{fmt_eng, fmt_plain, printable};
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
    // Each of the kind's parts with its own tolerance where it has one.
    let kind = s.stage.topology.kind();
    let tolerance = |path: &str| {
        kind.part(path)
            .and_then(|d| crate::study::spread::part_tolerance(s, d.name, d.tolerance))
            .map_or(String::new(), |t| format!("±{}%", fmt_plain(100.0 * t, 3)))
    };
    for p in PARAMS.iter().filter(|p| p.applies(s) && p.given(s)) {
        let value = p.display(s);
        if value == "none" {
            continue;
        }
        let (series, tol) = match p.series_note(s) {
            Some((name, true)) => (name, tolerance(p.path)),
            Some((name, false)) => (format!("off {name}"), tolerance(p.path)),
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
    // As the text report: a section only where its inputs are given, a
    // figure that needs an input left out when it has none.
    for sec in Section::ALL.into_iter().filter(|s| s.shown_for(e)) {
        for f in FIGURES
            .iter()
            .filter(|f| f.section == sec && f.shown.text && f.applies_to(e))
        {
            let r = f.read(e);
            if f.needs_input && r == crate::judge::figures::Reading::Undefined {
                continue;
            }
            writeln!(
                w,
                "| {} | {} |",
                cell(f.label_in(e)),
                cell(&f.text_in(e, r))
            )?;
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

/// The spec over the tolerances: each limit on the nominal stage and the
/// worst trial, and the yield (the numbers of `check --verbose`).
fn write_spec(s: &Scenario, w: &mut impl Write) -> io::Result<()> {
    use crate::study::spread::{spread, unit_and_label, Run};
    if s.spec.is_none() {
        return Ok(());
    }
    let r = spread(s, &Run::default());
    writeln!(w)?;
    writeln!(w, "## Spec over the tolerances")?;
    writeln!(w)?;
    writeln!(
        w,
        "| limit | value | nominal | worst trial | trials failing |"
    )?;
    writeln!(w, "| --- | --- | --- | --- | --- |")?;
    for l in &r.limits {
        let unit = unit_and_label(l.limit.figures[0], r.gain_unit).0;
        let num = |v: Option<f64>| v.map_or("undefined".to_string(), |v| unit.number(v, false));
        let nominal = format!(
            "{}{}",
            num(l.nominal),
            if l.nominal_pass {
                String::new()
            } else {
                format!(
                    " (fails{})",
                    crate::output::spread_text::at_temp(l.nominal_at)
                )
            }
        );
        writeln!(
            w,
            "| `{}` | {} | {} | {} | {} of {} |",
            l.limit.field,
            num(Some(l.value)),
            cell(&nominal),
            num(l.worst),
            l.failed,
            r.trials
        )?;
    }
    writeln!(w)?;
    let verdict = if r.passes() { "meets" } else { "does not meet" };
    if let Some(y) = r.yield_frac {
        writeln!(
            w,
            "Yield {} % over {} trials (the spec asks {} %): the stage {verdict} its spec.",
            fmt_plain(100.0 * y, 4),
            r.trials,
            fmt_plain(100.0 * r.yield_min, 4)
        )?;
    }
    write_movers(&r, w)
}

/// What moves each figure: the parts' shares of its variance.
fn write_movers(r: &crate::study::spread::SpreadResult, w: &mut impl Write) -> io::Result<()> {
    use crate::study::spread::unit_and_label;
    if r.figures.iter().all(|f| f.contributions.is_empty()) {
        return Ok(());
    }
    writeln!(w)?;
    writeln!(
        w,
        "What moves each figure (each part's share of its variance, first order):"
    )?;
    writeln!(w)?;
    for f in r.figures.iter().filter(|f| !f.contributions.is_empty()) {
        let list = crate::output::spread_text::share_list(&f.contributions, 4);
        writeln!(
            w,
            "- {}: {}",
            unit_and_label(f.key, r.gain_unit).1,
            cell(&list)
        )?;
    }
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
    write_spec(s, w)?;
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
