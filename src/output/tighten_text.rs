//! The `tighten` options as a table or JSON (the workbench's list reuses
//! the rows). No search here, only reading [`Tightening`].

use crate::model::values::fmt_plain;
use crate::study::tighten::{AmpBound, Choice, Tightening, MAX_PARTS, MAX_RUNS, RUN_TRIALS};
use serde_json::{json, Value};

/// A tolerance as a percentage ("0.1%").
fn pct(t: f64) -> String {
    format!("{}%", fmt_plain(100.0 * t, 3))
}

/// A yield as text ("99.6 %").
fn yield_text(y: f64) -> String {
    format!("{} %", fmt_plain(100.0 * y, 4))
}

/// One option's upgrades as text ("rf 1% → 0.1%, rg 1% → 0.5%").
pub fn choice_text(c: &Choice) -> String {
    let items: Vec<String> = c
        .upgrades
        .iter()
        .map(|u| format!("{} {} → {}", u.part, pct(u.from), pct(u.to)))
        .collect();
    items.join(", ")
}

/// What an amplifier bound means, in words ("a0 ≥ 180000 across units").
pub fn bound_text(b: &AmpBound) -> String {
    match b.part {
        "a0" => format!("a0 ≥ {} across units", fmt_plain(b.value, 4)),
        part => format!("{part} within ±{} across units", pct(b.value)),
    }
}

/// The lines under the table: why there is none, or the amplifier's bounds.
pub fn summary(t: &Tightening) -> Vec<String> {
    if t.now.yield_frac.is_none() {
        return vec!["no spec: nothing to reach".into()];
    }
    if t.already() {
        return vec!["the stage already meets its yield: nothing to tighten".into()];
    }
    let mut out = Vec::new();
    if t.choices.is_empty() {
        out.push(format!(
            "no upgrade of up to {MAX_PARTS} parts reaches the yield ({} run{})",
            t.runs,
            if t.runs == 1 { "" } else { "s" }
        ));
        if t.amp.is_empty() {
            out.push("nor does the amplifier's spread alone: the design itself must change".into());
        }
        for b in &t.amp {
            out.push(format!(
                "only the amplifier's spread can reach it: {} (yield {})",
                bound_text(b),
                yield_text(b.yield_frac)
            ));
        }
    }
    out
}

/// The table's rows: option number, upgrades, verified yield.
pub fn rows(t: &Tightening) -> Vec<Vec<String>> {
    t.choices
        .iter()
        .enumerate()
        .map(|(i, c)| {
            vec![
                (i + 1).to_string(),
                choice_text(c),
                yield_text(c.yield_frac),
            ]
        })
        .collect()
}

/// `tighten` as text.
pub fn text(t: &Tightening, title: &str) -> String {
    let mut out = format!("Tighten {title}\n");
    if let Some(y) = t.now.yield_frac {
        out += &format!(
            "yield now {} of {RUN_TRIALS} trials (seed {}), needs ≥ {}\n",
            yield_text(y),
            t.now.seed,
            yield_text(t.now.yield_min)
        );
    }
    if !t.choices.is_empty() {
        out += &format!(
            "Options, fewest parts first, each verified by {RUN_TRIALS} trials with the same seed \
             ({} of at most {MAX_RUNS} runs):\n",
            t.runs
        );
        let header = ["option", "tighten", "yield"];
        for line in crate::output::helper_tables::aligned(&header, &rows(t), false) {
            out += &line;
            out.push('\n');
        }
    }
    for line in summary(t) {
        out += &line;
        out.push('\n');
    }
    out
}

/// `tighten --json`.
pub fn json(t: &Tightening) -> Value {
    let options: Vec<Value> = t
        .choices
        .iter()
        .map(|c| {
            json!({
                "upgrades": c.upgrades.iter().map(|u| json!({
                    "part": u.part, "from": u.from, "to": u.to,
                })).collect::<Vec<_>>(),
                "yield": c.yield_frac,
            })
        })
        .collect();
    let amp: Vec<Value> = t
        .amp
        .iter()
        .map(|b| json!({"part": b.part, "field": b.field, "value": b.value, "yield": b.yield_frac, "text": bound_text(b)}))
        .collect();
    json!({
        "yield": t.now.yield_frac,
        "yield_min": t.now.yield_min,
        "trials": RUN_TRIALS,
        "seed": t.now.seed,
        "options": options,
        "amplifier": amp,
        "runs": t.runs,
    })
}
