//! The design helpers `pairs` and `stabilize`: their text tables and JSON objects from the engine's results (the
//! workbench's lists reuse the rows).

use crate::model::values::{fmt_compact, fmt_eng, fmt_fixed, fmt_plain};
use crate::model::Scenario;
use crate::study::pairs::{self, Pair, Query, QueryField};
use crate::study::stabilize::{self, Fix, Options};
use anyhow::{bail, Result};
use serde::Serialize;

/// How the command line names each field of a pairs query.
fn option_name(field: QueryField) -> &'static str {
    match field {
        QueryField::Target => "GAIN",
        QueryField::Topology => "--topology",
        QueryField::RgMin => "--rg-min",
        QueryField::RgMax => "--rg-max",
        QueryField::Count => "--count",
        QueryField::SourceR => "--source-r",
        QueryField::Riso => "--riso",
        QueryField::LoadR => "--load-r",
    }
}

/// The value of a query field as typed back to the user.
fn field_value(q: &Query, field: QueryField) -> String {
    match field {
        QueryField::Target => fmt_plain(q.target, 6),
        QueryField::Topology => q.topology.name().into(),
        QueryField::RgMin => fmt_compact(q.rg_range.0),
        QueryField::RgMax => fmt_compact(q.rg_range.1),
        QueryField::Count => q.count.to_string(),
        QueryField::SourceR => fmt_compact(q.source_r),
        QueryField::Riso => fmt_compact(q.riso),
        QueryField::LoadR => q.load_r.map_or("none".into(), fmt_compact),
    }
}

/// The pairs for a query, or an error naming the option and its value.
pub fn find_pairs(q: &Query) -> Result<Vec<Pair>> {
    pairs::find(q).or_else(|p| {
        // A range problem also shows the other end of the range.
        let context = match p.field {
            QueryField::RgMax => format!(" (--rg-min {})", field_value(q, QueryField::RgMin)),
            _ => String::new(),
        };
        bail!(
            "{} {}: {}{context}",
            option_name(p.field),
            field_value(q, p.field),
            p.message
        )
    })
}

/// Lines of a table: each column as wide as its widest cell, two spaces
/// apart, the header first.
pub fn table(header: &[&str], rows: &[Vec<String>]) -> Vec<String> {
    aligned(header, rows, false)
}

/// A table's lines, each column as wide as its widest cell, two spaces
/// apart; `numbers_right`: every column after the first right-aligned.
pub fn aligned(header: &[&str], rows: &[Vec<String>], numbers_right: bool) -> Vec<String> {
    let mut widths: Vec<usize> = header.iter().map(|h| h.chars().count()).collect();
    for row in rows {
        for (w, cell) in widths.iter_mut().zip(row) {
            *w = (*w).max(cell.chars().count());
        }
    }
    let line = |cells: Vec<&str>| {
        let padded: Vec<String> = cells
            .iter()
            .zip(&widths)
            .enumerate()
            .map(|(i, (c, w))| match numbers_right && i > 0 {
                true => format!("{c:>w$}"),
                false => format!("{c:<w$}"),
            })
            .collect();
        padded.join("  ").trim_end().to_string()
    };
    std::iter::once(line(header.to_vec()))
        .chain(
            rows.iter()
                .map(|r| line(r.iter().map(String::as_str).collect())),
        )
        .collect()
}

/// What the gain column takes into account besides rf and rg, one line
/// each (none when nothing does).
pub fn surroundings(q: &Query) -> Vec<String> {
    let mut lines = Vec::new();
    if q.source_r > 0.0 {
        lines.push(match q.series_r() > 0.0 {
            true => format!(
                "gain with the {} source resistance in series with rg",
                fmt_eng(q.source_r, "Ω")
            ),
            false => format!(
                "the {} source resistance does not change the gain (a non-inverting input draws no current)",
                fmt_eng(q.source_r, "Ω")
            ),
        });
    }
    match (q.riso > 0.0, q.load_r) {
        (true, Some(rl)) => lines.push(format!(
            "gain at the load: riso {} into {} leaves × {}",
            fmt_eng(q.riso, "Ω"),
            fmt_eng(rl, "Ω"),
            fmt_plain(q.divider(), 6)
        )),
        (false, Some(rl)) => lines.push(format!(
            "the {} load does not change the gain (no riso: the feedback holds the output)",
            fmt_eng(rl, "Ω")
        )),
        _ => {}
    }
    lines
}

/// The columns of a pairs row.
pub const PAIR_HEADER: [&str; 6] = ["rg", "rf", "gain", "error", "noise (25 °C)", "load"];

/// The pair's part names for a kind (`rg`, `rf` where it has none).
pub fn pair_names(q: &Query) -> [&'static str; 2] {
    q.topology.kind().pairs.map_or(["rg", "rf"], |p| p.names())
}

/// The columns of a pairs row, the first two named as the kind's parts.
pub fn pair_header(t: crate::model::Topology) -> [&'static str; 6] {
    let mut h = PAIR_HEADER;
    if let Some(p) = t.kind().pairs {
        [h[0], h[1]] = p.names();
    }
    h
}

/// The JSON pairs keyed by the kind's part names (`r1`, `r2`) rather
/// than `rg`, `rf`.
fn rename_pair_keys(v: &mut serde_json::Value, names: [&str; 2]) {
    let Some(rows) = v.get_mut("pairs").and_then(|p| p.as_array_mut()) else {
        return;
    };
    for row in rows.iter_mut().filter_map(|r| r.as_object_mut()) {
        for (old, new) in ["rg", "rf"].into_iter().zip(names) {
            if old != new {
                if let Some(x) = row.remove(old) {
                    row.insert(new.into(), x);
                }
            }
        }
    }
}

/// A signed relative error in percent: `+0.23 %`, `-1.5 %`, `0 %`.
fn signed_percent(e: f64) -> String {
    let text = fmt_plain(e * 100.0, 3);
    if e > 0.0 && !text.starts_with('-') && text != "0" {
        format!("+{text} %")
    } else {
        format!("{text} %")
    }
}

pub fn pair_cells(p: &Pair) -> Vec<String> {
    vec![
        fmt_eng(p.rg, "Ω"),
        fmt_eng(p.rf, "Ω"),
        fmt_plain(p.gain, 6),
        signed_percent(p.error),
        fmt_eng(p.noise_density, "V/√Hz"),
        fmt_eng(p.load_ohm, "Ω"),
    ]
}

/// The columns of a stabilising option; `settling` only when the stage
/// has a step.
pub fn fix_header(o: &Options) -> Vec<&'static str> {
    let mut h = vec!["part", "value", "margin", "peaking", "f−3dB", "Zout DC"];
    if o.settle_now.is_some() {
        h.push("settling 0.1 %");
    }
    h
}

fn or_none(v: Option<f64>, show: impl Fn(f64) -> String) -> String {
    v.map_or("none".into(), show)
}

/// An option's value: `10 nF → 100 fF` when it replaces a part the stage
/// has, `100 fF (added)` when the stage has none.
fn fix_value(f: &Fix) -> String {
    let unit = f.part.unit();
    match f.replaces {
        Some(old) => format!("{} → {}", fmt_eng(old, unit), fmt_eng(f.value, unit)),
        None => format!("{} (added)", fmt_eng(f.value, unit)),
    }
}

pub fn fix_cells(f: &Fix) -> Vec<String> {
    let mut cells = vec![
        f.part.name().into(),
        fix_value(f),
        or_none(f.phase_margin_deg, |m| format!("{}°", fmt_fixed(m, 1))),
        format!("{} dB", fmt_fixed(f.peaking_db, 2)),
        or_none(f.f_3db_hz, |v| fmt_eng(v, "Hz")),
        fmt_eng(f.zout_dc_ohm, "Ω"),
    ];
    if let Some(settle) = f.settle_01pct_s {
        cells.push(or_none(settle, |t| fmt_eng(t, "s")));
    }
    cells
}

#[derive(Serialize)]
struct PairsJson<'a> {
    target: f64,
    pairs: &'a [Pair],
}

/// `pairs`: the table or the JSON object.
pub fn pairs_output(q: &Query, json: bool) -> Result<Vec<u8>> {
    let found = find_pairs(q)?;
    let mut buf = Vec::new();
    if json {
        let out = PairsJson {
            target: q.target,
            pairs: &found,
        };
        match pair_names(q) {
            ["rg", "rf"] => serde_json::to_writer_pretty(&mut buf, &out)?,
            names => {
                let mut value = serde_json::to_value(&out)?;
                rename_pair_keys(&mut value, names);
                serde_json::to_writer_pretty(&mut buf, &value)?;
            }
        }
        buf.push(b'\n');
        return Ok(buf);
    }
    let head = format!(
        "Resistor pairs for gain {} ({}, {}, rg {} to {}), best first\n",
        fmt_plain(q.target, 6),
        q.topology.name(),
        q.series,
        fmt_eng(q.rg_range.0, "Ω"),
        fmt_eng(q.rg_range.1, "Ω"),
    );
    buf.extend_from_slice(head.as_bytes());
    for line in surroundings(q) {
        buf.extend_from_slice(format!("  {line}\n").as_bytes());
    }
    let rows: Vec<Vec<String>> = found.iter().map(pair_cells).collect();
    for line in table(&pair_header(q.topology), &rows) {
        buf.extend_from_slice(format!("  {line}\n").as_bytes());
    }
    Ok(buf)
}

#[derive(Serialize)]
struct StabilizeJson<'a> {
    target_deg: f64,
    options: &'a [Fix],
    reason: Option<String>,
}

/// What the stage's margin is now, against the target, in words.
pub fn margin_now_text(o: &Options) -> String {
    let now = o
        .margin_now
        .map_or("no crossover".into(), |m| format!("{}°", fmt_fixed(m, 1)));
    let settle = match o.settle_now {
        Some(Some(t)) => format!(", settling to 0.1 % in {}", fmt_eng(t, "s")),
        Some(None) => ", its step does not settle to 0.1 %".into(),
        None => String::new(),
    };
    if o.already_met {
        format!(
            "no change needed: the stage already meets {}° (now {now}{settle}); \
             the options listed are only the smallest values that would also meet it",
            o.target_deg
        )
    } else {
        format!(
            "phase margin now {now}, below the {}° target{settle}",
            o.target_deg
        )
    }
}

/// The stabilising options of a stage (errors as text).
pub fn options_for(s: &Scenario, margin: f64) -> Result<Options> {
    stabilize::options(s, margin).or_else(|e| bail!("--margin {margin}: {e}"))
}

/// What the maximally flat cf of a current-input stage is, if it has one.
pub fn flat_text(o: &Options) -> Option<String> {
    Some(match o.flat? {
        stabilize::Flat::NotNeeded => {
            "no cf is needed for a flat response (2·ω_t·rf·C_i ≤ 1)".to_string()
        }
        stabilize::Flat::Cf(c) => format!(
            "maximally flat cf {}: √(2·ω_t·rf·C_i − 1)/(ω_t·rf), C_i = cd + cin; \
             `cf, flat` rows are its nearest E12 value and the next one up",
            crate::model::values::fmt_eng_sig(c, "F", 3)
        ),
    })
}

/// What follows the options' table (`stabilize` and the workbench's
/// list): the parts that reach no value, then the flat cf of a
/// current-input stage or that it needs none.
pub fn notes_after(o: &Options) -> Vec<String> {
    let misses = o
        .misses
        .iter()
        .map(|m| format!("none reaches the target: {m}"));
    misses.chain(flat_text(o)).collect()
}

/// `stabilize`: the options as text or the JSON object.
pub fn stabilize_output(s: &Scenario, margin: f64, json: bool) -> Result<Vec<u8>> {
    let o = options_for(s, margin)?;
    let mut buf = Vec::new();
    if json {
        let out = StabilizeJson {
            target_deg: o.target_deg,
            options: &o.options,
            reason: o.reason(),
        };
        serde_json::to_writer_pretty(&mut buf, &out)?;
        buf.push(b'\n');
        return Ok(buf);
    }
    let mut text = format!(
        "Stabilising options for {}: target {}° phase margin\n  {}\n",
        crate::model::values::printable(&s.title),
        o.target_deg,
        margin_now_text(&o)
    );
    let rows: Vec<Vec<String>> = o.options.iter().map(fix_cells).collect();
    if !rows.is_empty() {
        for line in table(&fix_header(&o), &rows) {
            text.push_str(&format!("  {line}\n"));
        }
    }
    for line in notes_after(&o) {
        text.push_str(&format!("  {line}\n"));
    }
    buf.extend_from_slice(text.as_bytes());
    Ok(buf)
}
