//! The headless report: the engine's results as readable text or as one
//! JSON object (keys documented in the README).

use crate::engine::analysis::{phase_deg, Analysis, Circuit};
use crate::engine::scenario::{present, Scenario, Topology};
use crate::engine::values::{fmt_eng, fmt_eng_sig, printable};
use crate::engine::Warning;
use serde::Serialize;
use std::io::{self, Write};

/// A number for JSON: null where undefined or infinite.
fn fin(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

fn fin_opt(x: Option<f64>) -> Option<f64> {
    x.and_then(fin)
}

#[derive(Debug, Clone, Serialize)]
pub struct PointReport {
    pub f_hz: f64,
    pub gain_mag: Option<f64>,
    pub gain_db: Option<f64>,
    pub gain_phase_deg: Option<f64>,
    pub zout_mag: Option<f64>,
    pub zout_phase_deg: Option<f64>,
    pub zin_mag: Option<f64>,
    pub zin_phase_deg: Option<f64>,
    pub loop_mag: Option<f64>,
    pub loop_phase_deg: Option<f64>,
    pub noise_density: Option<f64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct NoiseReport {
    pub key: &'static str,
    pub label: &'static str,
    pub rms: Option<f64>,
    pub share: Option<f64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Report {
    pub title: String,
    pub ideal_gain: Option<f64>,
    pub dc_gain: Option<f64>,
    pub gain_error: Option<f64>,
    pub f_3db_hz: Option<f64>,
    pub peaking_db: Option<f64>,
    pub crossover_hz: Option<f64>,
    pub phase_margin_deg: Option<f64>,
    pub gain_margin_db: Option<f64>,
    pub zout_dc_ohm: Option<f64>,
    pub zin_dc_ohm: Option<f64>,
    /// |Zout| at 1 kHz, the workbench's default probe frequency.
    pub zout_1khz_ohm: Option<f64>,
    pub noise_density_1khz: Option<f64>,
    pub noise_rms: Option<f64>,
    pub loop_gain_dc: Option<f64>,
    pub band_hz: (f64, f64),
    pub noise_sources: Vec<NoiseReport>,
    pub points: Vec<PointReport>,
    pub warnings: Vec<Warning>,
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
            zin_mag: p.zin.and_then(|z| fin(z.norm())),
            zin_phase_deg: p.zin.and_then(|z| fin(phase_deg(z))),
            loop_mag: fin(p.loop_gain.norm()),
            loop_phase_deg: fin(a.loop_phase_at(circuit, f_hz)),
            noise_density: fin(p.noise_density()),
        },
        None => PointReport {
            f_hz,
            gain_mag: None,
            gain_db: None,
            gain_phase_deg: None,
            zout_mag: None,
            zout_phase_deg: None,
            zin_mag: None,
            zin_phase_deg: None,
            loop_mag: None,
            loop_phase_deg: None,
            noise_density: None,
        },
    }
}

impl Report {
    pub fn new(s: &Scenario, a: &Analysis, at: &[f64]) -> Report {
        let circuit = Circuit::new(s);
        Report {
            title: s.title.clone(),
            ideal_gain: fin(a.ideal_gain),
            dc_gain: fin(a.dc_gain),
            gain_error: fin(a.gain_error),
            f_3db_hz: fin_opt(a.f_3db_hz),
            peaking_db: fin(a.peaking_db),
            crossover_hz: fin_opt(a.crossover_hz),
            phase_margin_deg: fin_opt(a.phase_margin_deg),
            gain_margin_db: fin_opt(a.gain_margin_db),
            zout_dc_ohm: fin(a.zout_dc_ohm),
            zin_dc_ohm: fin_opt(a.zin_dc_ohm),
            zout_1khz_ohm: circuit.eval(1.0e3).and_then(|p| fin(p.zout.norm())),
            noise_density_1khz: fin(a.noise_density_1khz),
            noise_rms: fin(a.noise_rms),
            loop_gain_dc: fin(a.loop_gain_dc),
            band_hz: s.band,
            noise_sources: a
                .noise_sources
                .iter()
                .map(|n| NoiseReport {
                    key: n.key,
                    label: n.label,
                    rms: fin(n.rms),
                    share: fin(n.share),
                })
                .collect(),
            points: at.iter().map(|&f| point_report(&circuit, a, f)).collect(),
            warnings: a.warnings.clone(),
        }
    }

    pub fn write_json(&self, w: &mut impl Write) -> io::Result<()> {
        serde_json::to_writer_pretty(&mut *w, self)?;
        writeln!(w)
    }
}

fn opt(v: Option<f64>, unit: &str) -> String {
    v.map(|x| fmt_eng(x, unit)).unwrap_or_else(|| "none".into())
}

fn db(x: f64) -> String {
    format!("{:.1} dB", 20.0 * x.abs().log10())
}

/// One line describing the stage's parts.
pub fn stage_line(s: &Scenario) -> String {
    let st = &s.stage;
    let mut parts = vec![st.topology.name().to_string()];
    if st.topology != Topology::Follower {
        if let Some(rg) = st.rg {
            parts.push(format!("rg {}", fmt_eng(rg, "Ω")));
        }
    }
    match st.rf {
        Some(rf) if rf > 0.0 => parts.push(format!("rf {}", fmt_eng(rf, "Ω"))),
        _ if st.topology == Topology::Follower => parts.push("rf wire".into()),
        _ => {}
    }
    if let Some(cf) = present(st.cf) {
        parts.push(format!("cf {}", fmt_eng(cf, "F")));
    }
    if let Some(r) = present(st.riso) {
        parts.push(format!("riso {}", fmt_eng(r, "Ω")));
    }
    parts.push(format!(
        "{} ±{}",
        st.series,
        fmt_eng_sig(st.tolerance * 100.0, "%", 3)
    ));
    parts.join(", ")
}

pub fn severity_mark(w: &Warning) -> &'static str {
    match w.severity {
        crate::engine::Severity::Severe => "!!",
        crate::engine::Severity::Warning => "! ",
        crate::engine::Severity::Info => "i ",
    }
}

/// The readable text report.
pub fn write_text(r: &Report, s: &Scenario, a: &Analysis, w: &mut impl Write) -> io::Result<()> {
    let am = &s.amp;
    writeln!(w, "{}", printable(&r.title))?;
    writeln!(w, "  stage       {}", stage_line(s))?;
    let mut amp = vec![
        format!("a0 {} ({})", fmt_eng(am.a0, ""), db(am.a0)),
        format!("gbw {}", fmt_eng(am.gbw, "Hz")),
    ];
    if let Some(f) = am.fp2 {
        amp.push(format!("fp2 {}", fmt_eng(f, "Hz")));
    }
    amp.push(format!("ro {}", fmt_eng(am.ro, "Ω")));
    if let Some(x) = am.rin {
        amp.push(format!("rin {}", fmt_eng(x, "Ω")));
    }
    if let Some(x) = present(am.cin) {
        amp.push(format!("cin {}", fmt_eng(x, "F")));
    }
    writeln!(w, "  amplifier   {}", amp.join(", "))?;
    writeln!(
        w,
        "  noise model en {}/√Hz, in {}/√Hz",
        fmt_eng(am.vnoise, "V"),
        fmt_eng(am.inoise, "A")
    )?;
    let mut env = vec![format!("source r {}", fmt_eng(s.source.r, "Ω"))];
    if let Some(x) = s.load.r {
        env.push(format!("load r {}", fmt_eng(x, "Ω")));
    }
    if let Some(x) = present(s.load.c) {
        env.push(format!("load c {}", fmt_eng(x, "F")));
    }
    env.push(format!("{} °C", s.temp_c));
    writeln!(w, "  around      {}", env.join(", "))?;
    writeln!(w)?;
    writeln!(w, "Gain")?;
    writeln!(w, "  ideal         {:.6}", a.ideal_gain)?;
    writeln!(
        w,
        "  DC            {:.6}  ({}, error {:+.4} %)",
        a.dc_gain,
        db(a.dc_gain),
        a.gain_error * 100.0
    )?;
    writeln!(w, "  f−3dB         {}", opt(a.f_3db_hz, "Hz"))?;
    writeln!(w, "  peaking       {:.2} dB", a.peaking_db)?;
    writeln!(w)?;
    writeln!(w, "Loop")?;
    writeln!(
        w,
        "  DC loop gain  {} ({})",
        fmt_eng(a.loop_gain_dc, ""),
        db(a.loop_gain_dc)
    )?;
    writeln!(w, "  crossover     {}", opt(a.crossover_hz, "Hz"))?;
    writeln!(
        w,
        "  phase margin  {}",
        a.phase_margin_deg
            .map(|p| format!("{p:.1}°"))
            .unwrap_or_else(|| "none".into())
    )?;
    writeln!(
        w,
        "  gain margin   {}",
        match (a.gain_margin_db, a.phase_180_hz) {
            (Some(g), Some(f)) => format!("{g:.1} dB at {}", fmt_eng(f, "Hz")),
            _ => "none (phase never reaches −180° below 1 GHz)".into(),
        }
    )?;
    writeln!(w)?;
    writeln!(w, "Impedance")?;
    writeln!(w, "  Zout at DC    {}", fmt_eng(a.zout_dc_ohm, "Ω"))?;
    writeln!(
        w,
        "  Zin at DC     {}",
        a.zin_dc_ohm
            .map(|z| fmt_eng(z, "Ω"))
            .unwrap_or_else(|| "open (no DC path, or above 1 PΩ)".into())
    )?;
    writeln!(w)?;
    writeln!(
        w,
        "Noise at the load, {} to {}",
        fmt_eng(s.band.0, "Hz"),
        fmt_eng(s.band.1, "Hz")
    )?;
    writeln!(
        w,
        "  at 1 kHz      {}/√Hz",
        fmt_eng(a.noise_density_1khz, "V")
    )?;
    writeln!(w, "  rms           {}", fmt_eng(a.noise_rms, "V"))?;
    let mut shares: Vec<_> = a.noise_sources.iter().collect();
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
    if !r.points.is_empty() {
        writeln!(w)?;
        writeln!(
            w,
            "{:>12} {:>10} {:>8} {:>12} {:>8} {:>12} {:>10} {:>8} {:>14}",
            "f", "gain", "phase", "Zout", "phase", "Zin", "loop", "phase", "noise"
        )?;
        for p in &r.points {
            let num = |v: Option<f64>, u: &str| v.map(|x| fmt_eng(x, u)).unwrap_or("—".into());
            let deg = |v: Option<f64>| v.map(|x| format!("{x:.1}°")).unwrap_or("—".into());
            writeln!(
                w,
                "{:>12} {:>10} {:>8} {:>12} {:>8} {:>12} {:>10} {:>8} {:>14}",
                fmt_eng(p.f_hz, "Hz"),
                num(p.gain_mag, ""),
                deg(p.gain_phase_deg),
                num(p.zout_mag, "Ω"),
                deg(p.zout_phase_deg),
                p.zin_mag.map(|x| fmt_eng(x, "Ω")).unwrap_or("open".into()),
                num(p.loop_mag, ""),
                deg(p.loop_phase_deg),
                format!("{}/√Hz", num(p.noise_density, "V")),
            )?;
        }
    }
    writeln!(w)?;
    if a.warnings.is_empty() {
        writeln!(w, "No warnings.")?;
    } else {
        writeln!(w, "Warnings")?;
        for x in &a.warnings {
            writeln!(
                w,
                "  {} {:<8} {}: {}",
                severity_mark(x),
                x.severity.name(),
                x.code,
                x.text
            )?;
        }
    }
    Ok(())
}

/// One row of the A/B table: a figure for A and B and their difference.
#[derive(Debug, Clone, Serialize)]
pub struct FigureDelta {
    pub key: &'static str,
    pub a: Option<f64>,
    pub b: Option<f64>,
    /// b − a, null where either is undefined.
    pub delta: Option<f64>,
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
}

#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    pub a: Report,
    pub b: Report,
    pub differences: Differences,
}

impl Comparison {
    pub fn new(sa: &Scenario, aa: &Analysis, sb: &Scenario, ab: &Analysis) -> Comparison {
        let a = Report::new(sa, aa, &[]);
        let b = Report::new(sb, ab, &[]);
        let pick = |r: &Report| -> Vec<(&'static str, Option<f64>)> {
            vec![
                ("dc_gain", r.dc_gain),
                ("gain_error", r.gain_error),
                ("f_3db_hz", r.f_3db_hz),
                ("peaking_db", r.peaking_db),
                ("phase_margin_deg", r.phase_margin_deg),
                ("gain_margin_db", r.gain_margin_db),
                ("zout_dc_ohm", r.zout_dc_ohm),
                ("zout_1khz_ohm", r.zout_1khz_ohm),
                ("noise_rms", r.noise_rms),
                ("warnings", Some(r.warnings.len() as f64)),
            ]
        };
        let figures = pick(&a)
            .into_iter()
            .zip(pick(&b))
            .map(|((key, x), (_, y))| FigureDelta {
                key,
                a: x,
                b: y,
                delta: match (x, y) {
                    (Some(x), Some(y)) => fin(y - x),
                    _ => None,
                },
            })
            .collect();
        let parameters = sa
            .differences(sb)
            .into_iter()
            .map(|(field, a, b)| ParamDiff { field, a, b })
            .collect();
        Comparison {
            a,
            b,
            differences: Differences {
                figures,
                parameters,
            },
        }
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
        for f in &self.differences.figures {
            let (label, unit) = match f.key {
                "dc_gain" => ("gain", ""),
                "gain_error" => ("gain error %", "%"),
                "f_3db_hz" => ("f−3dB", "Hz"),
                "peaking_db" => ("peaking dB", "dB"),
                "phase_margin_deg" => ("phase margin °", "°"),
                "gain_margin_db" => ("gain margin dB", "dB"),
                "zout_dc_ohm" => ("Zout at DC", "Ω"),
                "zout_1khz_ohm" => ("|Zout| at 1 kHz", "Ω"),
                "noise_rms" => ("noise rms", "V"),
                _ => ("warnings", "#"),
            };
            let show = |v: Option<f64>, signed: bool| -> String {
                let Some(v) = v else {
                    return "none".into();
                };
                let sign = if signed && v > 0.0 { "+" } else { "" };
                match unit {
                    "" => format!("{sign}{v:.5}"),
                    "%" => format!("{sign}{:.4}", v * 100.0),
                    "dB" | "°" => format!("{sign}{v:.1}"),
                    "#" => format!("{sign}{v:.0}"),
                    u => format!("{sign}{}", fmt_eng(v, u)),
                }
            };
            writeln!(
                w,
                "{:<18} {:>14} {:>14} {:>14}",
                label,
                show(f.a, false),
                show(f.b, false),
                show(f.delta, true)
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
