//! Stabilising options for a stage that drives its load: the smallest
//! riso and the smallest cf that reach a phase-margin target, each found
//! by solving the modified stage with [`analyze`], with the figures that
//! show what the fix costs.

use crate::engine::analysis::{analyze, Analysis};
use crate::model::eseries::{Series, CAPACITOR_SERIES};
use crate::model::scenario::{present, Feedback, Scenario, Topology};
pub use crate::model::stages::Flat;
use crate::model::values::fmt_eng;
use serde::Serialize;

/// The riso values searched (Ω), on the stage's own series.
pub const RISO_RANGE: (f64, f64) = (0.1, 1.0e3);
/// The cf values searched (F), on E12.
pub const CF_RANGE: (f64, f64) = (0.1e-12, 10.0e-9);
/// The target the workbench asks for (degrees; common practice for a
/// well-damped loop).
pub const DEFAULT_MARGIN_DEG: f64 = 60.0;

/// The part a fix changes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Part {
    Riso,
    Cf,
    /// cf with the feedback taken at the load (after the stage's riso):
    /// the in-loop option.
    #[serde(rename = "cf_feedback_at_load")]
    CfAtLoad,
    /// A cf near the maximally flat value of a current-input stage.
    #[serde(rename = "cf_flat")]
    CfFlat,
}

impl Part {
    /// The part's name in the scenario and in the JSON.
    pub fn name(self) -> &'static str {
        match self {
            Part::Riso => "riso",
            Part::Cf => "cf",
            Part::CfAtLoad => "cf, feedback at load",
            Part::CfFlat => "cf, flat",
        }
    }

    pub fn unit(self) -> &'static str {
        match self {
            Part::Riso => "Ω",
            Part::Cf | Part::CfAtLoad | Part::CfFlat => "F",
        }
    }

    /// The series it is searched on and the range.
    fn search(self, s: &Scenario) -> (Series, (f64, f64)) {
        match self {
            Part::Riso => (s.stage.series, RISO_RANGE),
            Part::Cf | Part::CfAtLoad | Part::CfFlat => (CAPACITOR_SERIES, CF_RANGE),
        }
    }

    /// The part's value in the stage as it is (None: absent).
    pub fn present(self, s: &Scenario) -> Option<f64> {
        match self {
            Part::Riso => s.stage.riso,
            Part::Cf | Part::CfAtLoad | Part::CfFlat => s.stage.cf,
        }
    }

    /// The stage with this part set to `value` (the other part as it was).
    pub fn applied(self, s: &Scenario, value: f64) -> Scenario {
        let mut out = s.clone();
        match self {
            Part::Riso => out.stage.riso = Some(value),
            Part::Cf | Part::CfFlat => out.stage.cf = Some(value),
            Part::CfAtLoad => {
                out.stage.cf = Some(value);
                out.stage.feedback = Feedback::Load;
            }
        }
        out
    }
}

/// One option: a part value and the stage's figures with it (serialised
/// with these names).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Fix {
    pub part: Part,
    pub value: f64,
    pub phase_margin_deg: Option<f64>,
    pub peaking_db: f64,
    pub f_3db_hz: Option<f64>,
    pub zout_dc_ohm: f64,
    /// The value of the part the stage has now, which the option replaces
    /// (absent: the option adds the part).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub replaces: Option<f64>,
    /// The 0.1 % settling time of the stage's step with the option (only
    /// when the stage has a `step`; None there: it does not settle).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub settle_01pct_s: Option<Option<f64>>,
}

impl Fix {
    fn new(s: &Scenario, part: Part, value: f64, a: &Analysis) -> Fix {
        Fix {
            part,
            value,
            phase_margin_deg: a.phase_margin_deg,
            peaking_db: a.peaking_db,
            f_3db_hz: a.f_3db_hz,
            zout_dc_ohm: a.zout_dc_ohm,
            replaces: part.present(s),
            settle_01pct_s: s.step.as_ref().map(|_| a.step.settle_s[1]),
        }
    }
}

/// The options for one stage and target.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    pub target_deg: f64,
    /// The stage's own phase margin (None: no crossover).
    pub margin_now: Option<f64>,
    /// The stage's own 0.1 % settling time, when it has a `step` (inner
    /// None: it does not settle).
    pub settle_now: Option<Option<f64>>,
    /// Whether the stage as it is already meets the target.
    pub already_met: bool,
    /// riso first, then cf (where the topology has rf), then cf with the
    /// feedback at the load (where there is an riso); only parts for
    /// which some value in range reaches the target.
    pub options: Vec<Fix>,
    /// Parts searched without success, each with its range in words.
    pub misses: Vec<String>,
    /// A current-input stage's maximally flat cf ([`Scenario::flat_cf`]).
    pub flat: Option<Flat>,
}

/// The flat cf's nearest capacitor-series value and the next one up,
/// each with its figures.
fn flat_fixes(s: &Scenario, flat: Option<Flat>) -> Vec<Fix> {
    let Some(Flat::Cf(c)) = flat else {
        return Vec::new();
    };
    let near = CAPACITOR_SERIES.nearest(c);
    [near, CAPACITOR_SERIES.next_above(near)]
        .into_iter()
        .filter_map(|v| {
            let trial = Part::CfFlat.applied(s, v);
            trial.validate().ok()?;
            Some(Fix::new(s, Part::CfFlat, v, &analyze(&trial)))
        })
        .collect()
}

impl Options {
    /// Why the list is empty (None when it is not).
    pub fn reason(&self) -> Option<String> {
        self.options.is_empty().then(|| {
            format!(
                "no value reaches {}° of phase margin: {}",
                self.target_deg,
                self.misses.join("; ")
            )
        })
    }
}

/// Whether an analysis meets a phase-margin target.
///
/// `analyze` gives no phase margin in two cases: |T| is below 1 at DC (a
/// loop that never reaches unity gain cannot oscillate, so it counts as
/// meeting any target, but only when |T| stays below 1 at every sweep
/// point too), or |T| never falls through 1 within the sweep (no margin
/// can be read: not met). An unstable loop (a closed-loop pole in the right
/// half-plane, whatever its margin reads) never meets it.
pub fn meets(a: &Analysis, target_deg: f64) -> bool {
    if a.unstable() {
        return false;
    }
    match a.phase_margin_deg {
        Some(pm) => pm >= target_deg,
        None => {
            a.dc.loop_gain.norm() < 1.0 && a.sweep.points.iter().all(|p| p.loop_gain.norm() < 1.0)
        }
    }
}

/// The parts a topology can be stabilised with: those its kind offers.
pub fn parts(topology: Topology) -> Vec<Part> {
    let offered = topology.kind().stabilize;
    [Part::Riso, Part::Cf]
        .into_iter()
        .filter(|p| offered.contains(&p.name()))
        .collect()
}

/// The parts `stabilize` tries on this stage: its kind's, and, where the
/// kind has a cf and the stage an riso with the feedback at the pin, cf
/// with the feedback moved after riso (the in-loop option).
pub fn parts_for(s: &Scenario) -> Vec<Part> {
    let mut out = parts(s.stage.topology);
    let in_loop = out.contains(&Part::Cf)
        && s.stage.feedback == Feedback::Pin
        && present(s.stage.riso).is_some();
    if in_loop {
        out.push(Part::CfAtLoad);
    }
    out
}

/// The smallest value of `part` that meets the target: the series values
/// are scanned upward from the bottom of the range and the first whose
/// margin is at least the target is taken. The margin need not grow with
/// the value, so a larger value may fail again; "smallest" means this
/// first one, not the start of a range that keeps working.
pub fn smallest(s: &Scenario, part: Part, target_deg: f64) -> Option<Fix> {
    let (series, (lo, hi)) = part.search(s);
    series.values_between(lo, hi).into_iter().find_map(|v| {
        let trial = part.applied(s, v);
        trial.validate().ok()?;
        let a = analyze(&trial);
        meets(&a, target_deg).then(|| Fix::new(s, part, v, &a))
    })
}

/// The target must be a margin a loop can have.
pub fn check_target(target_deg: f64) -> anyhow::Result<()> {
    if target_deg.is_finite() && target_deg > 0.0 && target_deg < 180.0 {
        Ok(())
    } else {
        Err(anyhow::anyhow!("must be above 0° and below 180°"))
    }
}

/// The options for a valid scenario.
pub fn options(s: &Scenario, target_deg: f64) -> anyhow::Result<Options> {
    check_target(target_deg)?;
    let now = analyze(s);
    let mut out = Options {
        target_deg,
        margin_now: now.phase_margin_deg,
        settle_now: s.step.as_ref().map(|_| now.step.settle_s[1]),
        already_met: meets(&now, target_deg),
        options: Vec::new(),
        misses: Vec::new(),
        flat: s.flat_cf(),
    };
    for part in parts_for(s) {
        match smallest(s, part, target_deg) {
            Some(fix) => out.options.push(fix),
            None => {
                let (series, (lo, hi)) = part.search(s);
                out.misses.push(format!(
                    "{} from {} to {} on {series}",
                    part.name(),
                    fmt_eng(lo, part.unit()),
                    fmt_eng(hi, part.unit())
                ));
            }
        }
    }
    out.options.extend(flat_fixes(s, out.flat));
    Ok(out)
}
