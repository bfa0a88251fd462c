//! A stage at another temperature. The values a file gives hold at
//! `temp_c`; at t the kind's resistors move by their own coefficients
//! (ppm/°C), gbw by `amp.gbw_tc`, and the engine reads t itself for the
//! thermal noise (kT), the offset drift and the bias currents. Evaluating
//! a stage at t is evaluating the scenario this builds: no formula of its
//! own.

use crate::model::params::param;
use crate::model::scenario::Scenario;
use crate::model::stages::{Element, Tolerance};

/// The kind's resistors that drift (their parameter paths), in the order
/// the kind declares them; a part left out (zero, absent) does not.
pub fn drifting_resistors(s: &Scenario) -> Vec<&'static str> {
    s.stage
        .topology
        .kind()
        .parts
        .iter()
        .filter(|p| p.element == Element::Resistor && p.tolerance == Tolerance::Resistor)
        .filter(|p| {
            param(p.param)
                .and_then(|q| q.get(s))
                .is_some_and(|v| v > 0.0)
        })
        .map(|p| p.param)
        .collect()
}

/// The temperatures a stage is judged at: the range's ends and `temp_c`
/// between them, or `temp_c` alone.
pub fn temperatures(s: &Scenario) -> Vec<f64> {
    match s.temp_range {
        Some((lo, hi)) => vec![lo, s.temp_c, hi],
        None => vec![s.temp_c],
    }
}

/// The stage at `t` °C, each drifting resistor with its coefficient
/// (ppm/°C, in the order of [`drifting_resistors`]; missing ones are 0).
pub fn at_temperature(s: &Scenario, t: f64, tc_ppm: &[f64]) -> Scenario {
    let mut out = s.clone();
    let dt = t - s.temp_c;
    out.temp_c = t;
    for (path, tc) in drifting_resistors(s).into_iter().zip(tc_ppm) {
        if let (Some(p), true) = (param(path), *tc != 0.0) {
            if let Some(v) = p.get(s) {
                p.set(&mut out, Some(v * (1.0 + tc * 1e-6 * dt)));
            }
        }
    }
    if let Some(k) = s.amp.gbw_tc {
        out.amp.gbw = s.amp.gbw * (1.0 + k * dt);
    }
    out
}
