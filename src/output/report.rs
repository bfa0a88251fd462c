//! The headless report: the engine's results as readable text or as one
//! JSON object (keys documented in the README).

use crate::engine::analysis::{cmrr_db, Analysis, Circuit};
use crate::judge::figures::{delta, figure, key_figures, Reading, Section, FIGURES};
use crate::judge::spread_figures::unit_and_label;
use crate::judge::{Evaluation, Warning};
use crate::model::params::{Group, PARAMS};
use crate::model::scenario::Scenario;
use crate::model::stages::GainUnit;
use crate::model::values::{fmt_eng, fmt_fixed, fmt_plain, printable};
use crate::num::refine::phase_deg;
use crate::study::over_temperature::{over_temperature, OverTemperature};
use serde::Serialize;
use std::io::{self, Write};

/// A number for JSON: null where undefined or infinite.
fn fin(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

#[derive(Debug, Clone, Serialize)]
pub struct PointReport {
    pub f_hz: f64,
    pub gain_mag: Option<f64>,
    pub gain_db: Option<f64>,
    pub gain_phase_deg: Option<f64>,
    pub zout_mag: Option<f64>,
    pub zout_phase_deg: Option<f64>,
    /// |Zout| at the amplifier pin (before riso; riso and load removed).
    pub zout_pin_mag: Option<f64>,
    pub zin_mag: Option<f64>,
    pub zin_phase_deg: Option<f64>,
    pub loop_mag: Option<f64>,
    pub loop_phase_deg: Option<f64>,
    pub noise_density: Option<f64>,
    /// Two inputs: |A_d/A_cm| in dB there (null when unbounded); left out
    /// for a kind with one input.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cmrr_db: Option<Option<f64>>,
}

#[derive(Debug, Clone, Serialize)]
pub struct NoiseReport {
    pub key: &'static str,
    pub label: &'static str,
    pub rms: Option<f64>,
    pub share: Option<f64>,
}

/// The JSON report: the title, every JSON figure of the figure table (in
/// its order, null where undefined), the band, the noise sources, the
/// points asked for and the warnings.
#[derive(Debug, Clone)]
pub struct Report {
    pub title: String,
    /// The unit of the stage's gain figures ("V/V" or "V/A").
    pub gain_unit: GainUnit,
    pub figures: Vec<(&'static str, Option<f64>)>,
    /// The step response's figures (and, when asked, its waveform).
    pub step: serde_json::Map<String, serde_json::Value>,
    pub band_hz: (f64, f64),
    /// The reference input, echoed where the file gives one.
    pub reference: Option<crate::model::scenario::Reference>,
    pub noise_sources: Vec<NoiseReport>,
    pub points: Vec<PointReport>,
    pub warnings: Vec<Warning>,
    /// The figures at the temperature range's ends (with `temp_range`).
    pub over_temperature: Option<OverTemperature>,
}

impl Serialize for Report {
    fn serialize<S: serde::Serializer>(&self, ser: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = ser.serialize_map(Some(self.figures.len() + 5))?;
        m.serialize_entry("title", &self.title)?;
        m.serialize_entry("gain_unit", self.gain_unit.text())?;
        for (key, v) in &self.figures {
            m.serialize_entry(key, v)?;
        }
        m.serialize_entry("step", &self.step)?;
        m.serialize_entry("band_hz", &self.band_hz)?;
        if let Some(r) = &self.reference {
            m.serialize_entry("reference", r)?;
        }
        m.serialize_entry("noise_sources", &self.noise_sources)?;
        m.serialize_entry("points", &self.points)?;
        m.serialize_entry("warnings", &self.warnings)?;
        if let Some(o) = &self.over_temperature {
            let rows: serde_json::Map<String, serde_json::Value> = o
                .rows
                .iter()
                .map(|r| (r.key.to_string(), serde_json::json!(r.values)))
                .collect();
            m.serialize_entry(
                "over_temperature",
                &serde_json::json!({"temperatures_c": o.temperatures, "figures": rows}),
            )?;
        }
        m.end()
    }
}

/// The figures at one frequency, solved exactly there (not interpolated).
pub fn point_report(circuit: &Circuit, a: &Analysis, f_hz: f64) -> PointReport {
    match circuit.eval(f_hz) {
        Some(p) => PointReport {
            f_hz,
            gain_mag: fin(p.gain.norm()),
            gain_db: fin(20.0 * p.gain.norm().log10()),
            gain_phase_deg: fin(phase_deg(p.gain)),
            zout_mag: fin(p.zout.norm()),
            zout_phase_deg: fin(phase_deg(p.zout)),
            zout_pin_mag: fin(p.zout_pin.norm()),
            zin_mag: p.zin.and_then(|z| fin(z.norm())),
            zin_phase_deg: p.zin.and_then(|z| fin(phase_deg(z))),
            loop_mag: fin(p.loop_gain.norm()),
            loop_phase_deg: fin(a.loop_phase_at(circuit, f_hz)),
            noise_density: fin(p.noise_density()),
            cmrr_db: p.cm_gain.map(|cm| fin(cmrr_db(p.gain, cm))),
        },
        None => PointReport {
            f_hz,
            gain_mag: None,
            gain_db: None,
            gain_phase_deg: None,
            zout_mag: None,
            zout_phase_deg: None,
            zout_pin_mag: None,
            zin_mag: None,
            zin_phase_deg: None,
            loop_mag: None,
            loop_phase_deg: None,
            noise_density: None,
            cmrr_db: circuit.net.drive2.map(|_| None),
        },
    }
}

/// The step's figures; one that needs an input not given is left out
/// (`current_limited` without `amp.iout`), and `reason` says why the
/// figures are null when the stage is held at a rail before the step.
fn step_object(e: &Evaluation) -> serde_json::Map<String, serde_json::Value> {
    let mut m: serde_json::Map<String, serde_json::Value> = FIGURES
        .iter()
        .filter(|f| f.shown.json && f.section == Section::Step)
        .filter(|f| {
            f.null_in_json
                || !(f.needs_input && f.read(e) == crate::judge::figures::Reading::Undefined)
        })
        .map(|f| (f.key.to_string(), f.json_value(e)))
        .collect();
    // A current step is in amperes: its size is `size_a`.
    if e.analysis.gain_unit == GainUnit::VoltsPerAmp {
        if let Some(v) = m.remove("size_v") {
            m.insert("size_a".into(), v);
        }
    }
    if let Some(reason) = e.analysis.step.reason {
        m.insert("reason".into(), reason.into());
    }
    m
}

impl Report {
    pub fn new(s: &Scenario, e: &Evaluation, at: &[f64]) -> Report {
        let circuit = Circuit::new(s);
        Report {
            title: s.title.clone(),
            gain_unit: e.analysis.gain_unit,
            figures: FIGURES
                .iter()
                .filter(|f| f.shown.json && f.section.json_object().is_none() && f.applies_to(e))
                .map(|f| (f.key, f.json(e)))
                .collect(),
            step: step_object(e),
            band_hz: s.band,
            reference: s.reference,
            noise_sources: e
                .analysis
                .noise_sources
                .iter()
                .map(|n| NoiseReport {
                    key: n.key,
                    label: n.label,
                    rms: fin(n.rms),
                    share: fin(n.share),
                })
                .collect(),
            points: at
                .iter()
                .map(|&f| point_report(&circuit, &e.analysis, f))
                .collect(),
            warnings: e.warnings.clone(),
            over_temperature: over_temperature(s),
        }
    }

    pub fn write_json(&self, w: &mut impl Write) -> io::Result<()> {
        serde_json::to_writer_pretty(&mut *w, self)?;
        writeln!(w)
    }

    /// Add `n` samples of the step waveform (`t_s`, `v`) to the step object.
    pub fn with_waveform(mut self, e: &Evaluation, n: usize) -> Report {
        let (t, v) = if e.analysis.unstable() {
            (Vec::new(), Vec::new())
        } else {
            e.analysis.step.waveform(n)
        };
        let nums =
            |x: Vec<f64>| serde_json::Value::from(x.into_iter().map(fin).collect::<Vec<_>>());
        self.step.insert("t_s".into(), nums(t));
        self.step.insert("v".into(), nums(v));
        self
    }
}

pub fn severity_mark(w: &Warning) -> &'static str {
    match w.severity {
        crate::judge::Severity::Severe => "!!",
        crate::judge::Severity::Warning => "! ",
        crate::judge::Severity::Info => "i ",
    }
}

/// The scenario's parameters, one line per group, from the parameter table.
fn write_parameters(s: &Scenario, w: &mut impl Write) -> io::Result<()> {
    let mut groups: Vec<Group> = Vec::new();
    for p in PARAMS.iter() {
        if !groups.contains(&p.group) {
            groups.push(p.group);
        }
    }
    // The value column: after the longest group name and two spaces (the
    // figures' column, 18, when that is wider), so no name runs into its
    // values.
    let name_w = groups
        .iter()
        .map(|g| g.title().chars().count() + 1)
        .fold(18, usize::max);
    for g in groups {
        let items: Vec<String> = PARAMS
            .iter()
            .filter(|p| p.group == g && p.applies(s) && p.given(s))
            .map(|p| (p, p.display(s)))
            .filter(|(_, v)| v != "none")
            .map(|(p, v)| format!("{} {v}", p.label))
            .collect();
        // A group with nothing given (supply and signal in an older file)
        // has no line, so such files report as before.
        if items.is_empty() {
            continue;
        }
        let name = g.title().to_lowercase();
        writeln!(w, "  {name:<name_w$} {}", items.join(", "))?;
    }
    Ok(())
}

/// The figures of one section of the text report.
fn write_section(sec: Section, e: &Evaluation, w: &mut impl Write) -> io::Result<()> {
    if !sec.shown_for(e) {
        return Ok(());
    }
    writeln!(w)?;
    writeln!(w, "{}", sec.title())?;
    if let (Section::Step, Some(reason)) = (sec, e.analysis.step.reason) {
        let size = figure("size_v").map_or_else(String::new, |f| {
            f.number_for(e.analysis.gain_unit, e.analysis.step.size_v, false)
        });
        writeln!(w, "  {:<18} {size}", "step size")?;
        return writeln!(w, "  {:<18} none: {reason}", "figures");
    }
    if let (Section::Kick, Some(why)) = (sec, kick_blank(e)) {
        return writeln!(w, "  {:<18} none: {why}", "figures");
    }
    for f in FIGURES
        .iter()
        .filter(|f| f.section == sec && f.shown.text && f.applies_to(e))
    {
        let r = f.read(e);
        if f.needs_input && r == crate::judge::figures::Reading::Undefined {
            continue;
        }
        writeln!(w, "  {:<18} {}", f.label_in(e), f.text_in(e, r))?;
    }
    Ok(())
}

/// Why a stage with a sampler has no kick figures, when it has none.
fn kick_blank(e: &Evaluation) -> Option<&'static str> {
    let k = e.analysis.kick.as_ref()?;
    if k.error_v.is_some() {
        return None;
    }
    Some(k.reason.unwrap_or(if e.analysis.unstable() {
        "the stage is unstable"
    } else {
        "the sampling capacitor does not settle in the window"
    }))
}

/// Each noise source's rms and share, largest first.
fn write_noise_shares(e: &Evaluation, w: &mut impl Write) -> io::Result<()> {
    let mut shares: Vec<_> = e.analysis.noise_sources.iter().collect();
    shares.sort_by(|x, y| y.share.total_cmp(&x.share));
    for n in shares {
        writeln!(
            w,
            "    {:<22}{:>12}  {:5.1} %",
            n.label,
            fmt_eng(n.rms, "V"),
            n.share * 100.0
        )?;
    }
    Ok(())
}

/// The "Over temperature" section: each figure at the range's ends and
/// at temp_c.
fn write_over_temperature(
    o: &OverTemperature,
    gain: crate::model::stages::GainUnit,
    w: &mut impl Write,
) -> io::Result<()> {
    writeln!(w)?;
    writeln!(
        w,
        "Over temperature (resistor coefficients at the signs that move each figure most)"
    )?;
    let head: Vec<String> = std::iter::once("figure".to_string())
        .chain(
            o.temperatures
                .iter()
                .map(|t| format!("{} °C", crate::model::values::fmt_plain(*t, 4))),
        )
        .collect();
    let rows: Vec<Vec<String>> =
        o.rows
            .iter()
            .map(|r| {
                let (unit, label) = unit_and_label(r.key, gain);
                std::iter::once(label.to_string())
                    .chain(r.values.iter().map(|v| {
                        v.map_or("—".into(), |v| unit.number(v, false).replace(' ', ""))
                    }))
                    .collect()
            })
            .collect();
    let head: Vec<&str> = head.iter().map(String::as_str).collect();
    for line in crate::output::helper_tables::aligned(&head, &rows, true) {
        writeln!(w, "  {line}")?;
    }
    // Each row takes its own signs, so two rows may move apart (the gain
    // up, its error against the target down); the spec and `check` judge
    // the nominal with the coefficients at 0.
    writeln!(
        w,
        "  (each row at its own worst signs, so rows need not agree with one another;\n   \
         the spec and check judge the nominal stage with the coefficients at 0)"
    )?;
    Ok(())
}
use crate::judge::figures::CMRR_CEILING_DB as CMRR_SHOWN_DB;

/// The table of figures at the `--at` frequencies (the gain in ohms for
/// a transimpedance).
fn write_points(
    points: &[PointReport],
    unit: crate::model::stages::GainUnit,
    w: &mut impl Write,
) -> io::Result<()> {
    if points.is_empty() {
        return Ok(());
    }
    writeln!(w)?;
    let two = points.iter().any(|p| p.cmrr_db.is_some());
    let cmrr_head = if two {
        format!(" {:>10}", "CMRR")
    } else {
        String::new()
    };
    writeln!(
        w,
        "{:>12} {:>10} {:>8} {:>12} {:>8} {:>12} {:>12} {:>10} {:>8} {:>14}{cmrr_head}",
        "f", "gain", "phase", "Zout", "phase", "Zout pin", "Zin", "loop", "phase", "noise"
    )?;
    let num = |v: Option<f64>, u: &str| v.map(|x| fmt_eng(x, u)).unwrap_or("—".into());
    let deg = |v: Option<f64>| {
        v.map(|x| format!("{}°", fmt_fixed(x, 1)))
            .unwrap_or("—".into())
    };
    let ratio = |v: Option<f64>| v.map(|x| fmt_plain(x, 3)).unwrap_or("—".into());
    for p in points {
        let cmrr = match p.cmrr_db {
            Some(Some(v)) if v > CMRR_SHOWN_DB => format!(" {:>10}", "> 160 dB"),
            Some(Some(v)) => format!(" {:>10}", format!("{} dB", fmt_fixed(v, 1))),
            Some(None) => format!(" {:>10}", "unbounded"),
            None => String::new(),
        };
        writeln!(
            w,
            "{:>12} {:>10} {:>8} {:>12} {:>8} {:>12} {:>12} {:>10} {:>8} {:>14}{cmrr}",
            fmt_eng(p.f_hz, "Hz"),
            match unit {
                crate::model::stages::GainUnit::VoltsPerAmp => num(p.gain_mag, "Ω"),
                crate::model::stages::GainUnit::VoltsPerVolt => ratio(p.gain_mag),
            },
            deg(p.gain_phase_deg),
            num(p.zout_mag, "Ω"),
            deg(p.zout_phase_deg),
            num(p.zout_pin_mag, "Ω"),
            p.zin_mag.map(|x| fmt_eng(x, "Ω")).unwrap_or("open".into()),
            ratio(p.loop_mag),
            deg(p.loop_phase_deg),
            format!("{}/√Hz", num(p.noise_density, "V")),
        )?;
    }
    Ok(())
}

fn write_warnings(warnings: &[Warning], w: &mut impl Write) -> io::Result<()> {
    writeln!(w)?;
    if warnings.is_empty() {
        return writeln!(w, "No warnings.");
    }
    writeln!(w, "Warnings")?;
    for x in warnings {
        writeln!(
            w,
            "  {} {:<8} {}: {}",
            severity_mark(x),
            x.severity.name(),
            x.code,
            x.text
        )?;
    }
    Ok(())
}

/// The readable text report.
pub fn write_text(r: &Report, s: &Scenario, e: &Evaluation, w: &mut impl Write) -> io::Result<()> {
    writeln!(w, "{}", printable(&r.title))?;
    write_parameters(s, w)?;
    for sec in Section::ALL {
        write_section(sec, e, w)?;
        if sec == Section::Noise {
            writeln!(
                w,
                "  band {} to {}",
                fmt_eng(s.band.0, "Hz"),
                fmt_eng(s.band.1, "Hz")
            )?;
            write_noise_shares(e, w)?;
        }
    }
    if let Some(o) = &r.over_temperature {
        write_over_temperature(o, e.analysis.gain_unit, w)?;
    }
    write_points(&r.points, e.analysis.gain_unit, w)?;
    write_warnings(&e.warnings, w)
}

/// One row of the A/B table: a figure for A and B and their difference.
#[derive(Debug, Clone, Serialize)]
pub struct FigureDelta {
    pub key: &'static str,
    pub a: Option<f64>,
    pub b: Option<f64>,
    /// b − a, null where either is undefined.
    pub delta: Option<f64>,
    /// What A's and B's values are, for the text (an undefined figure
    /// reads in its own word: "none", "unbounded"; "unstable").
    #[serde(skip)]
    pub readings: [Reading; 2],
}

#[derive(Debug, Clone, Serialize)]
pub struct ParamDiff {
    pub field: &'static str,
    pub a: String,
    pub b: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct Differences {
    pub figures: Vec<FigureDelta>,
    pub parameters: Vec<ParamDiff>,
    /// The yield over the tolerances against each stage's spec (fraction,
    /// null for a stage without a spec); absent when neither has one.
    #[serde(rename = "yield", skip_serializing_if = "Option::is_none")]
    pub yields: Option<FigureDelta>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    pub a: Report,
    pub b: Report,
    pub differences: Differences,
}

/// Figures `compare` adds to the key figures when either stage has them:
/// the error against the spec's aim, the worst-case offset and headroom,
/// the settling to the step's threshold, the sampling kick, the supply
/// rejection and the output ripple; with two inputs, the common-mode gain
/// and the CMRR.
const COMPARED_WHEN_GIVEN: [&str; 12] = [
    "target_error",
    "cm_gain_dc",
    "cmrr_dc_db",
    "out_offset_max_v",
    "headroom_low_v",
    "headroom_high_v",
    "settle_to_s",
    "kick_dip_v",
    "kick_error_lsb",
    "kick_settle_s",
    "supply_rejection_db",
    "ripple_out_v",
];

impl Comparison {
    pub fn new(sa: &Scenario, ea: &Evaluation, sb: &Scenario, eb: &Evaluation) -> Comparison {
        // The key figures, then the design-check figures either stage has.
        let checks = COMPARED_WHEN_GIVEN
            .iter()
            .filter_map(|k| figure(k))
            .filter(|f| f.json(ea).is_some() || f.json(eb).is_some());
        let figures = key_figures()
            .chain(checks)
            .map(|f| FigureDelta {
                key: f.key,
                a: f.json(ea),
                b: f.json(eb),
                delta: delta(f, ea, eb),
                readings: [f.read(ea), f.read(eb)],
            })
            .collect();
        let parameters = sa
            .differences(sb)
            .into_iter()
            .map(|(field, a, b)| ParamDiff { field, a, b })
            .collect();
        Comparison {
            a: Report::new(sa, ea, &[]),
            b: Report::new(sb, eb, &[]),
            differences: Differences {
                figures,
                parameters,
                yields: None,
            },
        }
    }

    /// With each stage's yield against its spec (None: no spec).
    pub fn with_yields(mut self, a: Option<f64>, b: Option<f64>) -> Comparison {
        if a.is_some() || b.is_some() {
            self.differences.yields = Some(FigureDelta {
                key: "yield",
                a,
                b,
                delta: a.zip(b).map(|(x, y)| y - x),
                readings: [a, b].map(|v| v.map_or(Reading::Undefined, Reading::Value)),
            });
        }
        self
    }

    pub fn write_json(&self, w: &mut impl Write) -> io::Result<()> {
        serde_json::to_writer_pretty(&mut *w, self)?;
        writeln!(w)
    }

    /// The side-by-side table and the differing parameters, as text.
    pub fn write_text(&self, w: &mut impl Write) -> io::Result<()> {
        writeln!(w, "A: {}", printable(&self.a.title))?;
        writeln!(w, "B: {}", printable(&self.b.title))?;
        writeln!(w)?;
        writeln!(
            w,
            "{:<18} {:>14} {:>14} {:>14}",
            "figure", "A", "B", "B − A"
        )?;
        for d in &self.differences.figures {
            let Some(f) = figure(d.key) else { continue };
            let (ua, ub) = (self.a.gain_unit, self.b.gain_unit);
            let delta = match d.delta {
                _ if f.units_differ(ua, ub) => "—".into(),
                Some(v) => f.number_for(ua, v, true),
                None => "none".into(),
            };
            // Named in the stages' unit (a transimpedance), where they share it.
            let label = if ua == ub { f.label_for(ua) } else { f.label };
            writeln!(
                w,
                "{:<18} {:>14} {:>14} {:>14}",
                label,
                f.column(ua, d.readings[0]),
                f.column(ub, d.readings[1]),
                delta
            )?;
        }
        if let Some(y) = &self.differences.yields {
            let show = |v: Option<f64>, sign: &str| {
                v.map_or("no spec".into(), |v| {
                    format!("{} %", fmt_signed(v * 100.0, sign))
                })
            };
            writeln!(
                w,
                "{:<18} {:>14} {:>14} {:>14}",
                "yield",
                show(y.a, ""),
                show(y.b, ""),
                y.delta.map_or("none".into(), |_| show(y.delta, "+"))
            )?;
        }
        writeln!(w)?;
        if self.differences.parameters.is_empty() {
            writeln!(w, "The two stages have the same parameters.")?;
        } else {
            writeln!(w, "Parameters that differ")?;
            for p in &self.differences.parameters {
                let (a, b) = (printable(&p.a), printable(&p.b));
                writeln!(w, "  {:<20} A {a:<16} B {b}", p.field)?;
            }
        }
        Ok(())
    }
}

/// A percentage to two decimals, with `sign` before a positive value.
fn fmt_signed(v: f64, sign: &str) -> String {
    let text = fmt_fixed(v, 2);
    if v > 0.0 {
        format!("{sign}{text}")
    } else {
        text
    }
}
