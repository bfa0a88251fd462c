//! The view registry: every view of a stage, its name, title, one-line
//! description, traces and marks, in `--view` order, and whether the
//! workbench shows it. The SVG figures, `plot --help`, the Markdown note
//! and the workbench (its `v` cycle, titles, help and marks) read it.
//!
//! To add a view: one variant of [`ViewId`] and one entry in [`VIEWS`]
//! (its axes, traces and marks).

use crate::model::values::{fmt_eng, printable};
use crate::output::figure::{
    Axis, Curve, Evaluated, Mark, OwnChart, View, CMRR_DB, DB, DEG, GAIN_DB,
};
pub use crate::output::figure::{MarkKind, ViewId};
use crate::output::kick;
use crate::output::settling;
use crate::output::svg_linear;
use crate::output::traces::Traces;

fn nothing_needed(_: &Evaluated) -> Option<String> {
    None
}

fn curve(name: &'static str, right: bool, points: &[(f64, f64)]) -> Curve {
    Curve {
        name,
        right,
        points: points.to_vec(),
        tone: 0,
        own_axis: None,
    }
}

fn no_marks(_: &Evaluated) -> Vec<Mark> {
    Vec::new()
}

fn no_curves(_: &Traces) -> Vec<Curve> {
    Vec::new()
}

fn f3db_mark(s: &Evaluated) -> Vec<Mark> {
    s.eval
        .analysis
        .f_3db_hz
        .filter(|_| !s.eval.analysis.unstable())
        .map(|f| Mark {
            kind: MarkKind::F3db,
            f_hz: f,
            text: format!("f−3dB {}", fmt_eng(f, "Hz")),
        })
        .into_iter()
        .collect()
}

fn crossover_mark(s: &Evaluated) -> Vec<Mark> {
    let e = s.eval;
    e.analysis
        .crossover_hz
        .map(|f| Mark {
            kind: MarkKind::Crossover,
            f_hz: f,
            text: match e.analysis.phase_margin_deg {
                Some(pm) => format!("margin {pm:.0}° @ {}", fmt_eng(f, "Hz")),
                None => format!("crossover {}", fmt_eng(f, "Hz")),
            },
        })
        .into_iter()
        .collect()
}

fn band_marks(s: &Evaluated) -> Vec<Mark> {
    let (lo, hi) = s.scenario.band;
    vec![
        Mark {
            kind: MarkKind::Band,
            f_hz: lo,
            text: format!("band {}", fmt_eng(lo, "Hz")),
        },
        Mark {
            kind: MarkKind::Band,
            f_hz: hi,
            text: format!("band {}", fmt_eng(hi, "Hz")),
        },
    ]
}

/// A view drawn on linear axes by `chart`.
const fn linear(
    (id, name, title, about): (ViewId, &'static str, &'static str, &'static str),
    needs: fn(&Evaluated) -> Option<String>,
    chart: OwnChart,
) -> View {
    View {
        id,
        name,
        title,
        about,
        workbench: true,
        needs,
        left: DB,
        right: None,
        curves: no_curves,
        marks: no_marks,
        own: Some(chart),
    }
}

/// |Zout| at the load terminal, |Zin| in its own tone and, where riso
/// makes it differ, |Zout| at the amplifier pin.
fn impedance_curves(t: &Traces) -> Vec<Curve> {
    let mut c = vec![
        curve("|Zout|", false, &t.zout),
        Curve {
            tone: 1,
            ..curve("|Zin|", false, &t.zin)
        },
    ];
    let differs = t.zout_pin.len() != t.zout.len()
        || t.zout_pin
            .iter()
            .zip(&t.zout)
            .any(|(p, z)| (p.1 - z.1).abs() > 1e-6);
    if differs {
        c.push(Curve {
            tone: 2,
            ..curve("|Zout| at the pin", false, &t.zout_pin)
        });
    }
    c
}

/// The CMRR curve's name: where it was drawn at the ceiling, it says so.
pub fn cmrr_name(t: &Traces) -> &'static str {
    if t.cmrr_clamped {
        "CMRR (above 160 dB drawn at 160 dB)"
    } else {
        "CMRR"
    }
}

/// The gain and its phase; with two inputs, the CMRR on an axis of its
/// own (a panel under the gain: a rejection is not a gain), at most
/// 160 dB.
fn response_curves(t: &Traces) -> Vec<Curve> {
    let mut c = vec![
        curve("gain", false, &t.gain_db),
        curve("phase", true, &t.gain_phase),
    ];
    if !t.cmrr_db.is_empty() {
        c.push(Curve {
            tone: 2,
            own_axis: Some(CMRR_DB),
            ..curve(cmrr_name(t), false, &t.cmrr_db)
        });
    }
    c
}

/// The loop gain T and its phase, with the amplifier's open-loop gain |A|
/// and the noise gain |1/β| = |A/T|: T in dB is the gap between the two,
/// and the rate at which they close is the margin.
fn loop_curves(t: &Traces) -> Vec<Curve> {
    vec![
        curve("loop gain |T|", false, &t.loop_db),
        curve("loop phase", true, &t.loop_phase),
        Curve {
            tone: 1,
            ..curve("open-loop gain |A|", false, &t.open_loop_db)
        },
        Curve {
            tone: 2,
            ..curve("noise gain |1/β| = |A/T|", false, &t.noise_gain_db)
        },
    ]
}

/// The envelope needs the signal's peak.
fn needs_peak(s: &Evaluated) -> Option<String> {
    s.scenario.signal_peak().is_none().then(|| {
        format!(
            "the envelope view needs {} (the signal's peak at the source); \
             “{}” gives none",
            s.scenario.peak_field(),
            printable(&s.scenario.title)
        )
    })
}

/// The ceilings where they matter: up to two decades above the largest need.
fn envelope_curves(t: &Traces) -> Vec<Curve> {
    let top = t
        .env_need
        .iter()
        .map(|p| p.1)
        .fold(f64::NEG_INFINITY, f64::max)
        + 2.0;
    let under = |pts: &[(f64, f64)]| -> Vec<(f64, f64)> {
        pts.iter().copied().filter(|p| p.1 <= top).collect()
    };
    // The swing ceiling is flat: drawn on the need's frequencies.
    let swing: Vec<(f64, f64)> = t
        .env_swing
        .first()
        .map(|s| t.env_need.iter().map(|p| (p.0, s.1)).collect())
        .unwrap_or_default();
    let mut c = vec![curve("need", false, &t.env_need)];
    for (tone, (name, pts)) in [
        ("swing ceiling", &swing),
        ("slew ceiling", &t.env_slew),
        ("current ceiling", &t.env_current),
    ]
    .into_iter()
    .enumerate()
    {
        let pts = under(pts);
        if !pts.is_empty() {
            c.push(Curve {
                tone: tone as u8 + 1,
                ..curve(name, false, &pts)
            });
        }
    }
    c
}

/// The band edges and where the need first passes a ceiling.
fn envelope_marks(s: &Evaluated) -> Vec<Mark> {
    let mut m = band_marks(s);
    if let Some((f, what)) = s.eval.analysis.limits.envelope_limit {
        m.push(Mark {
            kind: MarkKind::Limit,
            f_hz: f,
            text: format!("passes the {what} ceiling at {}", fmt_eng(f, "Hz")),
        });
    }
    m
}

/// Every view, in `--view` order.
pub static VIEWS: [View; 9] = [
    View {
        id: ViewId::Response,
        name: "response",
        title: "Closed-loop response",
        about: "closed-loop gain and phase, f−3dB marked",
        workbench: true,
        needs: nothing_needed,
        left: GAIN_DB,
        right: Some(DEG),
        curves: response_curves,
        marks: f3db_mark,
        own: None,
    },
    View {
        id: ViewId::Loop,
        name: "loop",
        title: "Loop gain",
        about: "loop gain and phase, the amplifier's open-loop gain |A| and the noise \
                gain |1/β| = |A/T| (the loop gain is the gap between them), crossover and \
                phase margin marked",
        workbench: true,
        needs: nothing_needed,
        left: DB,
        right: Some(DEG),
        curves: loop_curves,
        marks: crossover_mark,
        own: None,
    },
    View {
        id: ViewId::Noise,
        name: "noise",
        title: "Output noise density",
        about: "output noise density, band edges marked",
        workbench: true,
        needs: nothing_needed,
        left: Axis {
            desc: "noise density (V/√Hz)",
            log_unit: Some("V"),
            in_ohms: None,
        },
        right: None,
        curves: |t| vec![curve("noise", false, &t.noise)],
        marks: band_marks,
        own: None,
    },
    View {
        id: ViewId::Impedance,
        name: "impedance",
        title: "Output and input impedance",
        about: "|Zout| and |Zin|",
        workbench: false,
        needs: nothing_needed,
        left: Axis {
            desc: "|Z| (Ω)",
            log_unit: Some("Ω"),
            in_ohms: None,
        },
        right: None,
        curves: impedance_curves,
        marks: no_marks,
        own: None,
    },
    View {
        id: ViewId::Envelope,
        name: "envelope",
        title: "Output envelope",
        about: "the peak needed at the internal output under its swing, slew and current ceilings; needs source.peak (source.ipeak for a current input)",
        workbench: true,
        needs: needs_peak,
        left: Axis {
            desc: "peak at the internal output (V)",
            log_unit: Some("V"),
            in_ohms: None,
        },
        right: None,
        curves: envelope_curves,
        marks: envelope_marks,
        own: None,
    },
    linear(
        (
            ViewId::Step,
            "step",
            "Step response",
            "the step response against time, ±0.1 % band and settling time marked",
        ),
        svg_linear::needs_step,
        svg_linear::step_chart,
    ),
    linear(
        (
            ViewId::Settling,
            "settling",
            "Step settling",
            "|output / final − 1| of the step on a log axis against time, \
             1 %, 0.1 % and 0.01 % rules and the times each is last left",
        ),
        settling::needs_settling,
        settling::settling_chart,
    ),
    linear(
        (
            ViewId::Kick,
            "kick",
            "Sampling kick",
            "|V − the DC level| of the load terminal and the sampling capacitor \
             after the converter's switch closes, on a log axis against time; \
             half an LSB and the acquisition time marked; needs load.sample",
        ),
        kick::needs_kick,
        kick::kick_chart,
    ),
    linear(
        (
            ViewId::Spread,
            "spread",
            "Spread over the tolerances",
            "histograms of gain error, f−3dB and phase margin over the tolerances, \
             spec limits marked",
        ),
        nothing_needed,
        svg_linear::spread_chart,
    ),
];

impl ViewId {
    /// Every view, in `--view` order.
    pub const ALL: [ViewId; 9] = [
        ViewId::Response,
        ViewId::Loop,
        ViewId::Noise,
        ViewId::Impedance,
        ViewId::Envelope,
        ViewId::Step,
        ViewId::Settling,
        ViewId::Kick,
        ViewId::Spread,
    ];

    /// The view's entry in the registry.
    pub fn view(self) -> &'static View {
        &VIEWS[self as usize]
    }

    pub fn name(self) -> &'static str {
        self.view().name
    }

    pub fn title(self) -> &'static str {
        self.view().title
    }

    /// The views the workbench shows, in order.
    pub fn shown() -> impl Iterator<Item = ViewId> {
        ViewId::ALL.into_iter().filter(|v| v.view().workbench)
    }

    /// The next view the workbench shows after this one, round.
    pub fn next_shown(self) -> ViewId {
        let after = ViewId::ALL[self as usize + 1..].iter().copied();
        after
            .chain(ViewId::ALL)
            .find(|v| v.view().workbench)
            .unwrap_or(self)
    }

    /// The marks a stage gets in this view (the one decision).
    pub fn marks(self, s: &Evaluated) -> Vec<Mark> {
        (self.view().marks)(s)
    }
}

/// `plot --help`'s list: each view with what it draws and marks.
pub fn plot_help() -> String {
    let each: Vec<String> = VIEWS
        .iter()
        .map(|v| format!("{} ({})", v.name, v.about))
        .collect();
    format!("Views: {}.", each.join(", "))
}

/// The workbench's `v` help: the views it cycles through.
pub fn cycle_help() -> String {
    let names: Vec<&str> = ViewId::shown().map(ViewId::name).collect();
    format!("view: {}", names.join(" "))
}

/// The view with this name.
pub fn view(name: &str) -> Option<&'static View> {
    VIEWS.iter().find(|v| v.name == name)
}

/// The view names, for help and errors.
pub fn view_names() -> Vec<&'static str> {
    VIEWS.iter().map(|v| v.name).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_id_names_its_own_entry() {
        for (i, id) in ViewId::ALL.into_iter().enumerate() {
            assert_eq!(VIEWS[i].id, id);
            assert_eq!(id as usize, i);
        }
    }
}
