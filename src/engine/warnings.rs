//! Design warnings: rules of thumb a designer checks, each with a stable
//! code, a severity and a sentence carrying the numbers.

use super::analysis::Analysis;
use super::scenario::{present, Scenario, Topology};
use super::values::fmt_eng;
use serde::Serialize;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Info,
    Warning,
    Severe,
}

impl Severity {
    pub fn name(self) -> &'static str {
        match self {
            Severity::Info => "info",
            Severity::Warning => "warning",
            Severity::Severe => "severe",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Warning {
    pub code: &'static str,
    pub severity: Severity,
    pub text: String,
}

/// Phase margin below this is a warning (common practice).
pub const PM_WARN_DEG: f64 = 45.0;
/// Phase margin below this is severe (common practice).
pub const PM_SEVERE_DEG: f64 = 30.0;
/// Phase margin the load capacitance may take before it is noted, and
/// before it is a warning (common practice: cable and load capacitance vary).
pub const LOAD_C_INFO_DEG: f64 = 10.0;
pub const LOAD_C_WARN_DEG: f64 = 20.0;
pub const PEAKING_WARN_DB: f64 = 1.0;
pub const PEAKING_SEVERE_DB: f64 = 3.0;
/// The amplifier output should not see less than this (common practice).
pub const HEAVY_LOAD_OHM: f64 = 300.0;
/// Resistors' share of the output noise power above which they "dominate".
pub const RESISTOR_NOISE_SHARE: f64 = 0.5;

fn push(out: &mut Vec<Warning>, code: &'static str, severity: Severity, text: String) {
    out.push(Warning {
        code,
        severity,
        text,
    });
}

fn parallel(rs: &[f64]) -> f64 {
    let g: f64 = rs.iter().filter(|r| r.is_finite()).map(|r| 1.0 / r).sum();
    if g > 0.0 {
        1.0 / g
    } else {
        f64::INFINITY
    }
}

/// All warnings for a scenario and its analysis, worst first.
pub fn check(s: &Scenario, a: &Analysis) -> Vec<Warning> {
    let mut w = Vec::new();
    if let Err(problems) = s.validate() {
        for p in problems {
            push(
                &mut w,
                "input-invalid",
                Severity::Severe,
                format!("{}: {}", p.field, p.message),
            );
        }
    }
    let load_note = match present(s.load.c) {
        Some(c) => format!(" with {} load", fmt_eng(c, "F")),
        None => String::new(),
    };
    let fix = if present(s.load.c).is_some() && present(s.stage.riso).is_none() {
        "; an isolation resistor before the load capacitance usually restores it"
    } else if present(s.load.c).is_some() {
        "; a larger isolation resistor or a feedback capacitor usually restores it"
    } else {
        "; a feedback capacitor or a higher noise gain usually restores it"
    };
    match (a.crossover_hz, a.phase_margin_deg) {
        (Some(fc), Some(pm)) if pm < PM_WARN_DEG => {
            let sev = if pm < PM_SEVERE_DEG {
                Severity::Severe
            } else {
                Severity::Warning
            };
            let what = if pm <= 0.0 {
                "the stage is unstable: phase margin"
            } else {
                "phase margin"
            };
            push(
                &mut w,
                "phase-margin",
                sev,
                format!(
                    "{what} {pm:.0}° at {}{load_note} (aim for at least {PM_WARN_DEG:.0}°){fix}",
                    fmt_eng(fc, "Hz")
                ),
            );
        }
        (None, _) => push(
            &mut w,
            "no-crossover",
            Severity::Warning,
            format!(
                "loop gain never crosses 1 between {} and {} (DC loop gain {:.3}): phase margin undefined",
                fmt_eng(a.sweep.points.first().map(|p| p.f_hz).unwrap_or(0.0), "Hz"),
                fmt_eng(a.sweep.points.last().map(|p| p.f_hz).unwrap_or(0.0), "Hz"),
                a.loop_gain_dc
            ),
        ),
        _ => {}
    }
    // The classic trap: the load capacitance eats phase margin.
    if let (Some(c), Some(pm), Some(bare)) = (
        present(s.load.c),
        a.phase_margin_deg,
        a.phase_margin_without_load_c,
    ) {
        let cost = bare - pm;
        if cost >= LOAD_C_INFO_DEG {
            let sev = if cost >= LOAD_C_WARN_DEG {
                Severity::Warning
            } else {
                Severity::Info
            };
            push(
                &mut w,
                "load-capacitance",
                sev,
                format!(
                    "the {} load takes {cost:.0}° of phase margin ({pm:.0}° with it, {bare:.0}° \
                     without); more cable or a bigger capacitor takes more{fix}",
                    fmt_eng(c, "F")
                ),
            );
        }
    }
    if a.peaking_db > PEAKING_WARN_DB {
        let sev = if a.peaking_db > PEAKING_SEVERE_DB {
            Severity::Severe
        } else {
            Severity::Warning
        };
        push(
            &mut w,
            "peaking",
            sev,
            format!(
                "closed-loop gain peaks {:.1} dB above its DC value{}",
                a.peaking_db,
                a.f_3db_hz
                    .map(|f| format!(" before rolling off at {}", fmt_eng(f, "Hz")))
                    .unwrap_or_default()
            ),
        );
    }
    if a.gain_error.abs() > s.stage.tolerance {
        push(
            &mut w,
            "gain-error",
            Severity::Warning,
            format!(
                "DC gain {:.4} is {:.2} % off the ideal {:.4}, more than the {:.2} % resistor tolerance; \
                 more loop gain (lower noise gain or a higher-gain amplifier) reduces it",
                a.dc_gain,
                a.gain_error * 100.0,
                a.ideal_gain,
                s.stage.tolerance * 100.0
            ),
        );
    }
    let resistor_noise: Vec<_> = a
        .noise_sources
        .iter()
        .filter(|n| matches!(n.key, "source_r" | "rg" | "rf" | "riso"))
        .collect();
    let resistor_share: f64 = resistor_noise.iter().map(|n| n.share).sum();
    if resistor_share > RESISTOR_NOISE_SHARE && a.noise_rms > 0.0 {
        let top = resistor_noise
            .iter()
            .max_by(|x, y| x.share.total_cmp(&y.share))
            .map(|n| format!(" ({} alone {:.0} %)", n.label, n.share * 100.0))
            .unwrap_or_default();
        push(
            &mut w,
            "resistor-noise",
            Severity::Info,
            format!(
                "resistor thermal noise is {:.0} % of the output noise power{top}; lower resistor values reduce it",
                resistor_share * 100.0
            ),
        );
    }
    // What the amplifier output drives at DC: the feedback network and the load.
    let st = &s.stage;
    let rf = st.rf.unwrap_or(0.0);
    let feedback = match st.topology {
        Topology::NonInverting => rf + st.rg.unwrap_or(0.0),
        Topology::Inverting => rf,
        // A follower's rf carries only the input current.
        Topology::Follower => f64::INFINITY,
    };
    let load = match s.load.r {
        Some(r) => r + st.riso.unwrap_or(0.0),
        None => f64::INFINITY,
    };
    let seen = parallel(&[feedback, load]);
    if seen < HEAVY_LOAD_OHM {
        push(
            &mut w,
            "heavy-output-load",
            Severity::Warning,
            format!(
                "the amplifier output drives {} at DC (feedback {} ∥ load {}), {} per volt of \
                 output; below about {} the output current and heating grow: raise the resistor \
                 values",
                fmt_eng(seen, "Ω"),
                fmt_eng(feedback, "Ω"),
                fmt_eng(load, "Ω"),
                fmt_eng(1.0 / seen, "A"),
                fmt_eng(HEAVY_LOAD_OHM, "Ω")
            ),
        );
    }
    // Resistor values off their series, and values outside the usual range.
    let mut resistors: Vec<(&str, f64)> = Vec::new();
    if st.topology != Topology::Follower {
        if let Some(rg) = st.rg {
            resistors.push(("rg", rg));
        }
    }
    if rf > 0.0 {
        resistors.push(("rf", rf));
    }
    if let Some(riso) = present(st.riso) {
        resistors.push(("riso", riso));
    }
    for (name, r) in &resistors {
        if r.is_finite() && *r > 0.0 && !st.series.contains(*r) {
            push(
                &mut w,
                "off-series",
                Severity::Info,
                format!(
                    "{name} = {} is not an {} value (nearest {})",
                    fmt_eng(*r, "Ω"),
                    st.series,
                    fmt_eng(st.series.nearest(*r), "Ω")
                ),
            );
        }
        if *r > 10.0e6 {
            push(
                &mut w,
                "value-range",
                Severity::Info,
                format!(
                    "{name} = {} is very high: leakage, board capacitance and its own noise matter",
                    fmt_eng(*r, "Ω")
                ),
            );
        }
    }
    if let Some(rin) = s.amp.rin {
        if rf > 0.0 && rf > 0.1 * rin {
            push(
                &mut w,
                "value-range",
                Severity::Info,
                format!(
                    "rf = {} is not small against the amplifier input resistance {}",
                    fmt_eng(rf, "Ω"),
                    fmt_eng(rin, "Ω")
                ),
            );
        }
    }
    if s.amp.gbw > s.amp.a0 * 1.0e9 {
        push(
            &mut w,
            "value-range",
            Severity::Info,
            format!(
                "the dominant pole gbw/a0 = {} is unusually high for a voltage-feedback op-amp",
                fmt_eng(s.amp.gbw / s.amp.a0, "Hz")
            ),
        );
    }
    w.sort_by_key(|x| std::cmp::Reverse(x.severity));
    w
}
