//! The figures that spread over the tolerances: which, when, and how each
//! reads. All but [`TARGET_ERROR`] are entries of the figure table;
//! that one is the DC gain's error against the spec's target (or the
//! nominal stage's network gain).

use crate::judge::figures::{figure, Unit};
use crate::judge::Evaluation;
use crate::model::scenario::Scenario;

/// The spread figure that is not in the figure table.
pub const TARGET_ERROR: &str = "target_error";

/// When a spread figure is in the table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum When {
    Always,
    /// When the nominal stage defines it, or a limit holds it.
    Given,
    /// Only when a limit holds it (a step per trial costs more).
    Held,
}

/// The figures that spread, in report order. `target_error` is computed
/// here; the rest are read from the figure table.
pub const SPREAD_FIGURES: [(&str, When); 14] = [
    ("dc_gain", When::Always),
    (TARGET_ERROR, When::Always),
    ("f_3db_hz", When::Always),
    ("peaking_db", When::Always),
    ("phase_margin_deg", When::Always),
    ("gain_margin_db", When::Always),
    ("zout_dc_ohm", When::Always),
    ("zout_at_ohm", When::Given),
    ("noise_rms", When::Always),
    ("out_offset_max_v", When::Given),
    ("headroom_low_v", When::Given),
    ("headroom_high_v", When::Given),
    ("settle_01pct_s", When::Held),
    (CMRR, When::Given),
];

/// The CMRR at DC: an unbounded one (a null in the figure table) reads
/// as +∞ here, so it passes a minimum.
pub const CMRR: &str = "cmrr_dc_db";

/// The gain `target_error` is measured against: the spec's target, or
/// the nominal stage's network gain.
pub fn target(s: &Scenario, nominal: &Evaluation) -> f64 {
    s.spec
        .as_ref()
        .and_then(|x| x.gain_target)
        .unwrap_or(nominal.analysis.ideal_gain)
}

/// A spread figure of an evaluated stage (None: undefined or unstable).
pub fn read(e: &Evaluation, key: &str, target: f64) -> Option<f64> {
    if key == TARGET_ERROR {
        let g = figure("dc_gain")?.read(e).value()?;
        return Some((g - target) / target).filter(|v| v.is_finite());
    }
    if key == CMRR && !e.analysis.unstable() {
        return e.analysis.cmrr_dc_db;
    }
    figure(key)?.read(e).value()
}

/// How a spread figure reads: its unit and its name. Every key of
/// [`SPREAD_FIGURES`] and of the spec's limits resolves (a test checks it);
/// any other key reads as itself, in no unit.
pub fn unit_and_label(key: &str) -> (Unit, &str) {
    if key == TARGET_ERROR {
        return (Unit::Fraction, "gain error against the target");
    }
    match figure(key) {
        Some(f) => (f.unit, f.label),
        None => (Unit::Ratio, key),
    }
}
