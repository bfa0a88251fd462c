//! The spread as text or JSON, and one file's check as JSON. No analysis
//! here, only reading
//! [`SpreadResult`].

use crate::model::values::{fmt_compact, fmt_plain};
use crate::study::spread::{unit_and_label, SpreadResult, BINS};
use anyhow::Result;
use serde_json::{json, Value};
use std::io::Write;
use std::path::Path;

fn or_null(v: Option<f64>) -> Value {
    v.filter(|x| x.is_finite())
        .map_or(Value::Null, |x| json!(x))
}

fn corner_json(at: &[(&str, f64)]) -> Value {
    at.iter()
        .map(|(field, value)| json!({"field": field, "value": value}))
        .collect()
}

/// `spread --json`: one object with the keys.
pub fn spread_json(r: &SpreadResult) -> Value {
    let figures: Vec<Value> = r
        .figures
        .iter()
        .map(|f| {
            json!({
                "key": f.key,
                "nominal": or_null(f.nominal),
                "mean": or_null(f.mean),
                "std": or_null(f.std),
                "min": or_null(f.min),
                "max": or_null(f.max),
                "p_low": or_null(f.p_low),
                "p_high": or_null(f.p_high),
                "corner_min": or_null(f.corner_min),
                "corner_max": or_null(f.corner_max),
                "corner_min_at": corner_json(&f.corner_min_at),
                "corner_max_at": corner_json(&f.corner_max_at),
                "undefined": f.undefined,
                "histogram": f.histogram.to_vec(),
                "contributions": f.contributions.iter().map(|c| json!({
                    "part": c.part,
                    "share": c.share,
                    "sensitivity": c.sensitivity,
                })).collect::<Vec<_>>(),
            })
        })
        .collect();
    let mut v = json!({
        "trials": r.trials,
        "seed": r.seed,
        "dist": r.dist.name(),
        "figures": figures,
        "yield": or_null(r.yield_frac),
    });
    // Only over a temperature range: where each trial was judged.
    if r.temperatures.len() > 1 {
        v["temperatures_c"] = json!(r.temperatures);
    }
    // Only when the corners leave parts out (more than 2^10 corners).
    if r.corner_knobs.len() < r.knobs.len() {
        v["corner_parts"] = json!(r
            .corner_knobs
            .iter()
            .map(|&i| r.knobs[i].field)
            .collect::<Vec<_>>());
    }
    v
}

/// A value of a spread figure as text ("—" when undefined).
fn cell(r: &SpreadResult, key: &str, v: Option<f64>) -> String {
    v.map_or("—".into(), |v| {
        unit_and_label(key, r.gain_unit)
            .0
            .number(v, false)
            .replace(' ', "")
    })
}

/// `spread` as text: the varied parts, the figure table, the limits and
/// the yield.
pub fn write_spread(r: &SpreadResult, title: &str, out: &mut impl Write) -> Result<()> {
    writeln!(out, "Spread of {title}")?;
    writeln!(
        out,
        "{} trial{}, seed {}, {} within each tolerance",
        r.trials,
        if r.trials == 1 { "" } else { "s" },
        r.seed,
        r.dist.name().to_lowercase()
    )?;
    match (r.knobs.len(), r.corner_knobs.len()) {
        (0, _) => writeln!(out, "No part varies: every trial is the nominal stage.")?,
        (k, c) if c == k => writeln!(out, "Varied parts ({} corners):", 1usize << k)?,
        (k, c) => writeln!(
            out,
            "Varied parts ({} corners of the {c} of {k} parts with the largest first-order \
             effect on the gain; the others stay nominal at the corners):",
            1usize << c
        )?,
    }
    for k in &r.knobs {
        writeln!(
            out,
            "  {:<12} {} to {}",
            k.field,
            fmt_compact(k.lo),
            fmt_compact(k.hi)
        )?;
    }
    if let [lo, t, hi] = r.temperatures[..] {
        writeln!(
            out,
            "Each trial at {} °C, {} °C and {} °C: the figures are each trial's worst of the three",
            fmt_plain(lo, 4),
            fmt_plain(t, 4),
            fmt_plain(hi, 4)
        )?;
    }
    writeln!(out)?;
    write_figure_table(r, out)?;
    write_shares(r, out)?;
    if !r.limits.is_empty() || r.yield_frac.is_some() {
        writeln!(out)?;
        write_limits(r, out)?;
    }
    Ok(())
}

fn write_figure_table(r: &SpreadResult, out: &mut impl Write) -> Result<()> {
    let head = [
        "figure",
        "nominal",
        "mean",
        "std",
        "min",
        "max",
        "0.135%",
        "99.865%",
        "corner lo",
        "corner hi",
        "undef",
        "histogram",
    ];
    let mut rows = vec![head.iter().map(|h| h.to_string()).collect::<Vec<_>>()];
    let mut inside = false;
    for f in &r.figures {
        let (below, above) = f.beyond_corners();
        let mark = |on: bool| if on { " *" } else { "" };
        inside |= below || above;
        rows.push(vec![
            unit_and_label(f.key, r.gain_unit).1.to_string(),
            cell(r, f.key, f.nominal),
            cell(r, f.key, f.mean),
            cell(r, f.key, f.std),
            format!("{}{}", cell(r, f.key, f.min), mark(below)),
            format!("{}{}", cell(r, f.key, f.max), mark(above)),
            cell(r, f.key, f.p_low),
            cell(r, f.key, f.p_high),
            cell(r, f.key, f.corner_min),
            cell(r, f.key, f.corner_max),
            f.undefined.to_string(),
            sparkline(&f.histogram),
        ]);
    }
    write_columns(&rows, out)?;
    if inside {
        writeln!(
            out,
            "* a trial went beyond the corners: this figure's extreme lies inside the \
             tolerance box, not at a corner"
        )?;
    }
    Ok(())
}

/// The parts' shares of each figure's variance, a line per figure.
fn write_shares(r: &SpreadResult, out: &mut impl Write) -> Result<()> {
    if r.figures.iter().all(|f| f.contributions.is_empty()) {
        return Ok(());
    }
    writeln!(out)?;
    writeln!(
        out,
        "What moves each figure (each part's share of the variance, first order):"
    )?;
    let width = r
        .figures
        .iter()
        .map(|f| unit_and_label(f.key, r.gain_unit).1.chars().count())
        .max()
        .unwrap_or(0);
    for f in r.figures.iter().filter(|f| !f.contributions.is_empty()) {
        let label = unit_and_label(f.key, r.gain_unit).1;
        let pad = " ".repeat(width - label.chars().count());
        writeln!(out, "  {label}{pad}  {}", share_list(&f.contributions, 4))?;
    }
    Ok(())
}

/// The first `most` shares of a figure as text ("rf 50 %, rg 50 %"),
/// leaving out parts below 0.5 %.
pub fn share_list(c: &[crate::study::spread::Contribution], most: usize) -> String {
    let items: Vec<String> = c
        .iter()
        .filter(|c| c.share >= 0.005)
        .take(most)
        .map(|c| format!("{} {} %", c.part, fmt_plain(100.0 * c.share, 2)))
        .collect();
    if items.is_empty() {
        "—".into()
    } else {
        items.join(", ")
    }
}

/// " at 85 °C" over a temperature range, else nothing.
pub fn at_temp(t: Option<f64>) -> String {
    t.map_or(String::new(), |t| format!(" at {} °C", fmt_plain(t, 4)))
}

/// Rows of cells (the first the header): the first column left, the
/// numbers right-aligned.
fn write_columns(rows: &[Vec<String>], out: &mut impl Write) -> Result<()> {
    let Some((header, body)) = rows.split_first() else {
        return Ok(());
    };
    let header: Vec<&str> = header.iter().map(String::as_str).collect();
    for line in crate::output::helper_tables::aligned(&header, body, true) {
        writeln!(out, "{line}")?;
    }
    Ok(())
}

/// The limits table: limit, nominal, worst trial, trials failing, pass.
pub fn write_limits(r: &SpreadResult, out: &mut impl Write) -> Result<()> {
    let mut rows = vec![[
        "limit",
        "value",
        "nominal",
        "worst trial",
        "failing",
        "nominal is",
    ]
    .iter()
    .map(|h| h.to_string())
    .collect::<Vec<_>>()];
    for l in &r.limits {
        let key = l.limit.figures[0];
        rows.push(vec![
            l.limit.field.to_string(),
            cell(r, key, Some(l.value)),
            cell(r, key, l.nominal),
            cell(r, key, l.worst),
            format!("{}/{}", l.failed, r.trials),
            if l.nominal_pass { "pass" } else { "FAIL" }.into(),
        ]);
    }
    write_columns(&rows, out)?;
    match r.yield_frac {
        Some(y) => writeln!(
            out,
            "yield {} % of {} trials (needs ≥ {} %): {}",
            fmt_plain(100.0 * y, 4),
            r.trials,
            fmt_plain(100.0 * r.yield_min, 4),
            if r.passes() { "PASS" } else { "FAIL" }
        )?,
        None => writeln!(out, "no spec: no yield")?,
    }
    Ok(())
}

/// Why a stage fails its spec, in one line ("pm_min_deg 41.2 < 50").
pub fn failures(r: &SpreadResult) -> String {
    let mut why: Vec<String> = r
        .limits
        .iter()
        .filter(|l| !l.nominal_pass)
        .map(|l| {
            format!(
                "{}{}",
                l.limit.failure(l.nominal, l.value),
                at_temp(l.nominal_at)
            )
        })
        .collect();
    if let Some(y) = r.yield_frac.filter(|y| *y < r.yield_min) {
        // The limit that fails the most trials.
        let most = r
            .limits
            .iter()
            .filter(|l| l.failed > 0)
            .max_by_key(|l| l.failed);
        let by = most.map_or(String::new(), |l| {
            format!(
                " ({} fails {} of {} trials{})",
                l.limit.field,
                l.failed,
                r.trials,
                l.worst_at.map_or(String::new(), |t| format!(
                    ", the worst{}",
                    at_temp(Some(t))
                ))
            )
        });
        why.push(format!(
            "yield {} < {}{by}",
            fmt_plain(y, 4),
            fmt_plain(r.yield_min, 4)
        ));
    }
    why.join("; ")
}

/// One file's check as JSON.
pub fn check_json(file: &Path, r: Option<&SpreadResult>) -> Value {
    let Some(r) = r else {
        return json!({"file": file.display().to_string(), "spec": false, "pass": true});
    };
    let limits: Vec<Value> = r
        .limits
        .iter()
        .map(|l| {
            let mut v = json!({
                "field": l.limit.field,
                "limit": l.value,
                "nominal": or_null(l.nominal),
                "worst": or_null(l.worst),
                "failed": l.failed,
                "pass": l.nominal_pass,
            });
            // Over a temperature range: where each was found.
            if let (Some(n), Some(w)) = (l.nominal_at, l.worst_at) {
                v["nominal_at_c"] = json!(n);
                v["worst_at_c"] = json!(w);
            }
            v
        })
        .collect();
    json!({
        "file": file.display().to_string(),
        "spec": true,
        "pass": r.passes(),
        "limits": limits,
        "trials": r.trials,
        "yield": or_null(r.yield_frac),
        "yield_min": r.yield_min,
    })
}

/// The histogram as a row of block characters (for text views).
pub fn sparkline(h: &[usize; BINS]) -> String {
    const BARS: [char; 8] = ['▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'];
    let top = h.iter().copied().max().unwrap_or(0).max(1);
    h.iter()
        .map(|&c| match c {
            0 => ' ',
            c => BARS[((c * 8 - 1) / top).min(7)],
        })
        .collect()
}
