//! The figures that spread over the tolerances: which, when, and how each
//! reads. All but [`TARGET_ERROR`] are entries of the figure table;
//! that one is the DC gain's error against the spec's target (or the
//! nominal stage's network gain).

use crate::judge::figures::{figure, Reads, Unit};
use crate::judge::Evaluation;
use crate::model::scenario::Scenario;
use crate::model::stages::GainUnit;

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

/// Which way a spread figure gets worse: over a temperature range each
/// trial shows its worst of the temperatures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Worse {
    Lower,
    Higher,
    /// Larger in magnitude (an error around 0).
    Larger,
    /// Further from the nominal stage's value.
    Away,
}

/// The figures that spread, in report order, and which way each gets
/// worse. `target_error` is computed here; the rest are read from the
/// figure table.
pub const SPREAD_FIGURES: [(&str, When, Worse); 17] = [
    ("dc_gain", When::Always, Worse::Away),
    (TARGET_ERROR, When::Always, Worse::Larger),
    ("f_3db_hz", When::Always, Worse::Lower),
    ("peaking_db", When::Always, Worse::Higher),
    ("phase_margin_deg", When::Always, Worse::Lower),
    ("gain_margin_db", When::Always, Worse::Lower),
    ("zout_dc_ohm", When::Always, Worse::Higher),
    ("zout_at_ohm", When::Given, Worse::Higher),
    ("noise_rms", When::Always, Worse::Higher),
    ("out_offset_max_v", When::Given, Worse::Higher),
    ("headroom_low_v", When::Given, Worse::Lower),
    ("headroom_high_v", When::Given, Worse::Lower),
    ("supply_rejection_db", When::Given, Worse::Lower),
    (CMRR, When::Given, Worse::Lower),
    ("settle_01pct_s", When::Held, Worse::Higher),
    ("settle_to_s", When::Held, Worse::Higher),
    ("kick_error_lsb", When::Held, Worse::Higher),
];

/// The worse of two values of a figure (`nominal`: the nominal stage's
/// value, for [`Worse::Away`]); an undefined value is the worst.
pub fn worse_of(key: &str, a: Option<f64>, b: Option<f64>, nominal: Option<f64>) -> Option<f64> {
    let (a, b) = (a?, b?);
    let side = SPREAD_FIGURES
        .iter()
        .find(|f| f.0 == key)
        .map_or(Worse::Higher, |f| f.2);
    let b_worse = match side {
        Worse::Lower => b < a,
        Worse::Higher => b > a,
        Worse::Larger => b.abs() > a.abs(),
        Worse::Away => nominal.is_some_and(|n| (b - n).abs() > (a - n).abs()),
    };
    Some(if b_worse { b } else { a })
}

/// The spread figures that need the time domain (a step and a kick per
/// trial) when a limit holds them.
pub const TIME_DOMAIN: [&str; 3] = ["settle_01pct_s", "settle_to_s", "kick_error_lsb"];
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

/// A spread figure's name (whatever the stage's gain unit).
pub fn label(key: &str) -> &str {
    unit_and_label(key, GainUnit::VoltsPerVolt).1
}

/// How a spread figure reads: its unit (with its word for an unbounded
/// value) and its name. Every key of [`SPREAD_FIGURES`] and of the spec's
/// limits resolves (a test checks it); any other key reads as itself, in
/// no unit. A gain of a stage whose gain is in V/A reads in ohms, its DC
/// gain named a transimpedance.
pub fn unit_and_label(key: &str, gain: GainUnit) -> (Reads, &str) {
    if key == TARGET_ERROR {
        return (
            Reads::plain(Unit::Fraction),
            "gain error against the target",
        );
    }
    match figure(key) {
        Some(f) => (f.reads_for(gain), f.label_for(gain)),
        None => (Reads::plain(Unit::Ratio), key),
    }
}
