//! The spec table: one entry per limit of a scenario's `spec` block, the
//! only place a limit's field, the figure it holds and its pass rule are
//! written. The spread, `check` and the `spec` warning all read [`LIMITS`].
//!
//! To add a limit: the field in [`Spec`], one entry here (its figure must
//! be one of the spread figures).

use crate::judge::warnings::{Code, Severity, Warning};
use crate::model::scenario::{Scenario, Spec};
use crate::model::values::fmt_plain;

/// When a figure meets its limit (a value equal to the limit passes).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rule {
    AtMost,
    AtLeast,
    /// |value| ≤ limit.
    MagnitudeAtMost,
}

/// One limit of the spec.
#[derive(Debug)]
pub struct Limit {
    /// The field in the `spec` block (also its name in `check`).
    pub field: &'static str,
    /// The spread figures it holds; with two, the smaller one counts.
    pub figures: &'static [&'static str],
    pub rule: Rule,
    get: fn(&Spec) -> Option<f64>,
    /// Whether this entry holds the field for a stage (a field with two
    /// entries: each holds different figures).
    applies: fn(&Scenario) -> bool,
}

fn always(_: &Scenario) -> bool {
    true
}

/// The step has its own settling threshold (`step.settle_bits` or
/// `step.settle_to`): `settle_max_s` then holds `settle_to_s`.
fn thresholded(s: &Scenario) -> bool {
    s.step.and_then(|x| x.threshold()).is_some()
}

impl PartialEq for Limit {
    fn eq(&self, other: &Limit) -> bool {
        self.field == other.field
    }
}

use Rule::*;

/// Every limit, in file order; `settle_max_s` has two entries: the
/// 0.1 % settling time, or `settle_to_s` when the step has a threshold.
pub static LIMITS: [Limit; 13] = [
    Limit {
        field: "gain_error_max",
        figures: &["target_error"],
        rule: MagnitudeAtMost,
        get: |s| s.gain_error_max,
        applies: always,
    },
    Limit {
        field: "f_3db_min",
        figures: &["f_3db_hz"],
        rule: AtLeast,
        get: |s| s.f_3db_min,
        applies: always,
    },
    Limit {
        field: "peaking_max_db",
        figures: &["peaking_db"],
        rule: AtMost,
        get: |s| s.peaking_max_db,
        applies: always,
    },
    Limit {
        field: "pm_min_deg",
        figures: &["phase_margin_deg"],
        rule: AtLeast,
        get: |s| s.pm_min_deg,
        applies: always,
    },
    Limit {
        field: "zout_max_ohm",
        figures: &["zout_at_ohm"],
        rule: AtMost,
        get: |s| s.zout_max_ohm,
        applies: always,
    },
    Limit {
        field: "noise_rms_max",
        figures: &["noise_rms"],
        rule: AtMost,
        get: |s| s.noise_rms_max,
        applies: always,
    },
    Limit {
        field: "offset_max_v",
        figures: &["out_offset_max_v"],
        rule: AtMost,
        get: |s| s.offset_max_v,
        applies: always,
    },
    Limit {
        field: "headroom_min_v",
        figures: &["headroom_low_v", "headroom_high_v"],
        rule: AtLeast,
        get: |s| s.headroom_min_v,
        applies: always,
    },
    Limit {
        field: "supply_rejection_min_db",
        figures: &["supply_rejection_db"],
        rule: AtLeast,
        get: |s| s.supply_rejection_min_db,
        applies: always,
    },
    Limit {
        field: "settle_max_s",
        figures: &["settle_01pct_s"],
        rule: AtMost,
        get: |s| s.settle_max_s,
        applies: |s| !thresholded(s),
    },
    Limit {
        field: "settle_max_s",
        figures: &["settle_to_s"],
        rule: AtMost,
        get: |s| s.settle_max_s,
        applies: thresholded,
    },
    Limit {
        field: "kick_error_max_lsb",
        figures: &["kick_error_lsb"],
        rule: AtMost,
        get: |s| s.kick_error_max_lsb,
        applies: always,
    },
    Limit {
        field: "cmrr_min_db",
        figures: &["cmrr_dc_db"],
        rule: AtLeast,
        get: |s| s.cmrr_min_db,
        applies: always,
    },
];

impl Limit {
    /// The limit's value in this scenario's spec, when given.
    pub fn value(&self, s: &Scenario) -> Option<f64> {
        s.spec
            .as_ref()
            .filter(|_| (self.applies)(s))
            .and_then(self.get)
    }

    /// The value the limit holds from the figures a stage gives (`read`
    /// looks one up by key): the smaller of two; None if any is undefined.
    pub fn held(&self, read: impl Fn(&str) -> Option<f64>) -> Option<f64> {
        self.figures
            .iter()
            .map(|k| read(k))
            .try_fold(f64::INFINITY, |m, v| v.map(|v| m.min(v)))
    }

    /// The figure that sets the held value: of two, the smaller (or an
    /// undefined one), so a message names the rail that fails.
    pub fn held_key(&self, read: impl Fn(&str) -> Option<f64>) -> &'static str {
        let mut best: Option<(&'static str, Option<f64>)> = None;
        for &k in self.figures {
            let v = read(k);
            best = match best {
                None => Some((k, v)),
                Some((_, None)) => best,
                Some((_, Some(b))) => match v {
                    None => Some((k, v)),
                    Some(x) if x < b => Some((k, v)),
                    _ => best,
                },
            };
        }
        best.map_or(self.figures[0], |(k, _)| k)
    }

    /// Whether one figure's value meets the limit on its own.
    pub fn figure_passes(&self, value: Option<f64>, limit: f64) -> bool {
        self.passes(value, limit)
    }

    /// Whether a value meets the limit; an undefined one does not.
    pub fn passes(&self, value: Option<f64>, limit: f64) -> bool {
        value.is_some_and(|v| match self.rule {
            AtMost => v <= limit,
            AtLeast => v >= limit,
            MagnitudeAtMost => v.abs() <= limit,
        })
    }

    /// Where the limit stands on its figure's axis: the value, or −value
    /// and +value for a limit on the magnitude.
    pub fn edges(&self, limit: f64) -> Vec<f64> {
        match self.rule {
            MagnitudeAtMost => vec![-limit, limit],
            AtMost | AtLeast => vec![limit],
        }
    }

    /// The sign the limit is written with: ≥, ≤ or ±.
    pub fn sign(&self) -> &'static str {
        match self.rule {
            AtLeast => "≥",
            AtMost => "≤",
            MagnitudeAtMost => "±",
        }
    }

    /// Of two values, the one further from passing (undefined is worst).
    pub fn worse(&self, a: Option<f64>, b: Option<f64>) -> Option<f64> {
        let (Some(x), Some(y)) = (a, b) else {
            return a.or(b);
        };
        let x_worse = match self.rule {
            AtMost => x > y,
            AtLeast => x < y,
            MagnitudeAtMost => x.abs() > y.abs(),
        };
        Some(if x_worse { x } else { y })
    }

    /// "pm_min_deg 41.2 < 50": how a value fails the limit, in plain SI
    /// numbers (the field's name carries the unit) for scripts and logs.
    pub fn failure(&self, value: Option<f64>, limit: f64) -> String {
        self.failure_with(value, limit, |v| fmt_plain(v, 4))
    }

    /// The same for the screen: "phase margin 41.2° < 50° (pm_min_deg)",
    /// labelled by the figure `key` that fails (one of [`Limit::figures`]).
    pub fn failure_readable(
        &self,
        key: &str,
        gain: crate::model::stages::GainUnit,
        value: Option<f64>,
        limit: f64,
    ) -> String {
        let (unit, label) = crate::judge::spread_figures::unit_and_label(key, gain);
        let text = self.failure_with(value, limit, |v| unit.number(v, false));
        let named = text.replacen(self.field, label, 1);
        format!("{named} ({})", self.field)
    }

    fn failure_with(&self, value: Option<f64>, limit: f64, num: impl Fn(f64) -> String) -> String {
        let Some(v) = value else {
            return format!("{} undefined (limit {})", self.field, num(limit));
        };
        let (shown, op) = match self.rule {
            AtMost => (v, ">"),
            AtLeast => (v, "<"),
            MagnitudeAtMost => (v.abs(), ">"),
        };
        let bar = if self.rule == MagnitudeAtMost {
            "|"
        } else {
            ""
        };
        format!(
            "{} {bar}{}{bar} {op} {}",
            self.field,
            num(shown),
            num(limit)
        )
    }
}

/// The limits a scenario's spec gives, with their values.
pub fn given(s: &Scenario) -> Vec<(&'static Limit, f64)> {
    LIMITS
        .iter()
        .filter_map(|l| l.value(s).map(|v| (l, v)))
        .collect()
}

/// The fraction of trials that must meet every limit (1 without it).
pub fn yield_min(s: &Scenario) -> f64 {
    s.spec.as_ref().and_then(|x| x.yield_min).unwrap_or(1.0)
}

/// One `spec` warning per limit the nominal stage fails, with the numbers.
pub fn nominal_warnings(s: &Scenario, e: &crate::judge::Evaluation) -> Vec<Warning> {
    let target = crate::judge::spread_figures::target(s, e);
    given(s)
        .into_iter()
        .filter_map(|(l, limit)| {
            let read = |k: &str| crate::judge::spread_figures::read(e, k, target);
            let v = l.held(read);
            (!l.passes(v, limit)).then(|| Warning {
                code: Code::Spec,
                severity: Severity::Warning,
                text: format!(
                    "misses its spec: {}{}",
                    l.failure_readable(l.held_key(read), e.analysis.gain_unit, v, limit),
                    cmrr_cause(l, s, e)
                ),
            })
        })
        .collect()
}

/// Over a temperature range: one `spec` warning per limit the nominal
/// stage meets at `temp_c` but misses at an end of the range, naming the
/// end where it is worst. The ends are judged as `check` judges them:
/// the stage built at that temperature with every resistor coefficient at
/// 0 (gbw by `amp.gbw_tc`; the engine reads the temperature for noise,
/// drift and bias currents), against the target found at `temp_c`.
pub fn range_end_warnings(s: &Scenario, e: &crate::judge::Evaluation) -> Vec<Warning> {
    let limits = given(s);
    let Some((lo, hi)) = s.temp_range.filter(|_| !limits.is_empty()) else {
        return Vec::new();
    };
    let target = crate::judge::spread_figures::target(s, e);
    let ends: Vec<(f64, crate::judge::Evaluation)> = [lo, hi]
        .into_iter()
        .map(|t| {
            let at = crate::model::temperature::at_temperature(s, t, &[]);
            let analysis = crate::engine::analyze(&at);
            (
                t,
                crate::judge::Evaluation {
                    analysis,
                    warnings: Vec::new(),
                },
            )
        })
        .collect();
    limits
        .into_iter()
        .filter_map(|(l, limit)| {
            let read_in = |ev: &crate::judge::Evaluation, k: &str| {
                crate::judge::spread_figures::read(ev, k, target)
            };
            if !l.passes(l.held(|k| read_in(e, k)), limit) {
                return None; // said at temp_c already
            }
            let mut worst: Option<(f64, Option<f64>, &str)> = None;
            for (t, ev) in &ends {
                let v = l.held(|k| read_in(ev, k));
                let failing = !l.passes(v, limit);
                let worse = match worst {
                    None => true,
                    Some((_, None, _)) => false,
                    Some((_, w, _)) => v.is_none() || l.worse(w, v) != w,
                };
                if failing && worse {
                    worst = Some((*t, v, l.held_key(|k| read_in(ev, k))));
                }
            }
            let (t, v, key) = worst?;
            Some(Warning {
                code: Code::Spec,
                severity: Severity::Warning,
                text: format!(
                    "misses its spec at {} °C (the nominal stage, the resistors' coefficients at 0): {}",
                    crate::model::values::fmt_plain(t, 4),
                    l.failure_readable(key, e.analysis.gain_unit, v, limit)
                ),
            })
        })
        .collect()
}

/// For a missed `cmrr_min_db`: which sets the stage's CMRR, the network
/// (the resistors' mismatch, with the sources and the reference) or the
/// amplifier's own rejection, whichever alone gives the lower figure.
fn cmrr_cause(l: &Limit, s: &Scenario, e: &crate::judge::Evaluation) -> String {
    if l.field != "cmrr_min_db" {
        return String::new();
    }
    let db = |v: f64| format!("{} dB", fmt_plain(v, 4));
    match (e.analysis.cmrr_network_dc_db, s.amp.cmrr_db) {
        (Some(net), Some(amp)) if amp < net => format!(
            "; the amplifier's own CMRR dominates ({} against the resistors' {}): \
             an amplifier with a higher cmrr_db",
            db(amp),
            if net.is_finite() {
                db(net)
            } else {
                "unbounded".into()
            }
        ),
        (Some(net), Some(amp)) => format!(
            "; the resistor mismatch dominates (the resistors give {} against the amplifier's {}): \
             tighter or matched resistors",
            db(net),
            db(amp)
        ),
        _ => "; the resistor mismatch sets it (the amplifier's own CMRR is not given): \
              tighter or matched resistors"
            .into(),
    }
}

#[cfg(test)]
mod keys_resolve {
    use super::*;
    use crate::judge::figures::figure;
    use crate::judge::spread_figures::{SPREAD_FIGURES, TARGET_ERROR};

    /// Every key the spread and the spec name resolves to a figure.
    #[test]
    fn every_key_resolves() {
        let keys = SPREAD_FIGURES.iter().map(|f| f.0);
        let held = LIMITS.iter().flat_map(|l| l.figures.iter().copied());
        for key in keys.chain(held) {
            assert!(
                key == TARGET_ERROR || figure(key).is_some(),
                "`{key}` names no figure"
            );
            assert!(
                SPREAD_FIGURES.iter().any(|f| f.0 == key),
                "`{key}` does not spread"
            );
        }
    }
}
