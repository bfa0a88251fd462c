//! Which tolerances to tighten so a stage reaches `spec.yield_min`: the
//! smallest sets of part upgrades along the usual tolerance steps, each
//! verified by a Monte Carlo with the stage's own seed. The search is
//! bounded: at most [`MAX_PARTS`] parts upgraded, candidates taken in the
//! order of their variance shares in the figures the failing limits
//! hold, at most [`MAX_RUNS`] verifications of [`RUN_TRIALS`] trials.
//! Where no part upgrade reaches the yield, the amplifier's spread (a0,
//! gbw, ro) is tried alone and the bound it would need is given.

use crate::model::params::param;
use crate::model::scenario::Scenario;
use crate::model::stages::Tolerance;
use crate::study::spread::{knobs, part_tolerance, spread, Run, SpreadResult};
use std::sync::atomic::{AtomicBool, Ordering};

/// The resistor tolerance steps (fractions), loosest first (common practice).
pub const RESISTOR_STEPS: [f64; 5] = [0.05, 0.02, 0.01, 0.005, 0.001];
/// The capacitor tolerance steps (fractions), loosest first (common practice).
pub const CAPACITOR_STEPS: [f64; 5] = [0.2, 0.1, 0.05, 0.02, 0.01];
/// The most parts one option upgrades.
pub const MAX_PARTS: usize = 3;
/// The most Monte Carlo verifications a search makes.
pub const MAX_RUNS: usize = 64;
/// Trials of each verification.
pub const RUN_TRIALS: u32 = 2000;
/// The candidates (by share) whose sets are tried.
const CANDIDATES: usize = 4;

/// One part's new tolerance.
#[derive(Debug, Clone, PartialEq)]
pub struct Upgrade {
    pub part: &'static str,
    pub from: f64,
    pub to: f64,
    /// How many steps down its ladder.
    pub steps: usize,
}

/// A set of upgrades and the yield it was verified at.
#[derive(Debug, Clone, PartialEq)]
pub struct Choice {
    pub upgrades: Vec<Upgrade>,
    pub yield_frac: f64,
}

impl Choice {
    /// The stage with these tolerances (as `stage.part_tolerance`).
    pub fn applied(&self, s: &Scenario) -> Scenario {
        let mut t = s.clone();
        for u in &self.upgrades {
            t.stage.part_tolerance.set(u.part, Some(u.to));
        }
        t
    }

    fn steps(&self) -> usize {
        self.upgrades.iter().map(|u| u.steps).sum()
    }
}

/// What the amplifier's spread alone would need.
#[derive(Debug, Clone, PartialEq)]
pub struct AmpBound {
    /// `a0`, `gbw` or `ro`.
    pub part: &'static str,
    /// The spread field and the value it would need.
    pub field: &'static str,
    pub value: f64,
    pub yield_frac: f64,
}

/// The search's answer.
#[derive(Debug, Clone, PartialEq)]
pub struct Tightening {
    /// The stage as it is.
    pub now: SpreadResult,
    /// The options, fewest parts first, then the least tightening.
    pub choices: Vec<Choice>,
    /// When no part upgrade reaches the yield: the amplifier's bounds.
    pub amp: Vec<AmpBound>,
    /// Monte Carlo verifications made.
    pub runs: usize,
}

impl Tightening {
    /// Whether the stage already meets its yield (or has no spec).
    pub fn already(&self) -> bool {
        self.now.yield_frac.is_none_or(|y| y >= self.now.yield_min)
    }
}

/// A part that may be upgraded: its name, class and the tighter steps.
struct Candidate {
    name: &'static str,
    from: f64,
    ladder: Vec<f64>,
}

/// The steps tighter than `tol` (a tolerance between steps starts at the
/// next tighter one).
pub fn ladder(tol: f64, class: Tolerance) -> Vec<f64> {
    let steps: &[f64] = match class {
        Tolerance::Resistor => &RESISTOR_STEPS,
        Tolerance::Capacitor => &CAPACITOR_STEPS,
        // A photodiode's capacitance is the diode's, not a grade to buy.
        Tolerance::Diode | Tolerance::None => &[],
    };
    steps
        .iter()
        .copied()
        .filter(|x| *x < tol * (1.0 - 1e-9))
        .collect()
}

/// The parts that spread and can be tightened, largest share first in
/// the figures the failing limits hold.
fn candidates(s: &Scenario, now: &SpreadResult) -> Vec<Candidate> {
    let failing: Vec<&str> = now
        .limits
        .iter()
        .filter(|l| l.failed > 0 || !l.nominal_pass)
        .flat_map(|l| l.limit.figures.iter().copied())
        .collect();
    let share = |name: &str| -> f64 {
        now.figures
            .iter()
            .filter(|f| failing.contains(&f.key))
            .flat_map(|f| f.contributions.iter())
            .filter(|c| c.part == name)
            .map(|c| c.share)
            .sum()
    };
    let varied: Vec<&str> = knobs(s).iter().map(|k| k.name).collect();
    let mut out: Vec<(f64, Candidate)> = s
        .stage
        .topology
        .kind()
        .parts
        .iter()
        .filter(|p| varied.contains(&p.name))
        .filter_map(|p| {
            let from = part_tolerance(s, p.name, p.tolerance)?;
            let ladder = ladder(from, p.tolerance);
            let sh = share(p.name);
            (!ladder.is_empty() && sh > 0.0).then_some((
                sh,
                Candidate {
                    name: p.name,
                    from,
                    ladder,
                },
            ))
        })
        .collect();
    out.sort_by(|a, b| b.0.total_cmp(&a.0));
    out.into_iter().take(CANDIDATES).map(|(_, c)| c).collect()
}

/// The verifications: each a spread of [`RUN_TRIALS`] with the stage's seed.
struct Verifier<'a> {
    seed: Option<u64>,
    runs: usize,
    progress: Option<&'a (dyn Fn(usize) + Sync)>,
    cancel: Option<&'a AtomicBool>,
}

impl Verifier<'_> {
    /// The yield of a stage, or None when the budget is spent (or the
    /// search was cancelled).
    fn yield_of(&mut self, s: &Scenario) -> Option<f64> {
        if self.runs >= MAX_RUNS || self.cancel.is_some_and(|c| c.load(Ordering::Relaxed)) {
            return None;
        }
        self.runs += 1;
        if let Some(p) = self.progress {
            p(self.runs);
        }
        let r = spread(
            s,
            &Run {
                trials: Some(RUN_TRIALS),
                seed: self.seed,
                cancel: self.cancel,
                ..Run::default()
            },
        );
        // The nominal stage must pass too.
        let nominal = r.limits.iter().all(|l| l.nominal_pass);
        Some(r.yield_frac.unwrap_or(1.0)).map(|y| if nominal { y } else { 0.0 })
    }
}

/// Every way to give `k` parts a level each (1-based steps down their
/// ladders), least total first, the tightest last.
fn levels(lens: &[usize]) -> Vec<Vec<usize>> {
    let mut all: Vec<Vec<usize>> = vec![Vec::new()];
    for &n in lens {
        all = all
            .into_iter()
            .flat_map(|v| {
                (1..=n).map(move |l| {
                    let mut w = v.clone();
                    w.push(l);
                    w
                })
            })
            .collect();
    }
    all.sort_by_key(|v| (v.iter().sum::<usize>(), v.iter().copied().max()));
    all
}

/// The subsets of `n` candidates with `k` members, in share order.
fn subsets(n: usize, k: usize) -> Vec<Vec<usize>> {
    if k == 0 {
        return vec![Vec::new()];
    }
    if n < k {
        return Vec::new();
    }
    let mut out: Vec<Vec<usize>> = subsets(n - 1, k - 1)
        .into_iter()
        .map(|mut v| {
            v.push(n - 1);
            v
        })
        .collect();
    out.extend(subsets(n - 1, k));
    out.sort();
    out
}

/// The search on a valid scenario with a spec. `progress` hears the count
/// of verifications made; `cancel` set ends the search early (the workbench
/// drops what it returns then).
pub fn tighten(
    s: &Scenario,
    progress: Option<&(dyn Fn(usize) + Sync)>,
    cancel: Option<&AtomicBool>,
) -> Tightening {
    let seed = s.spread.as_ref().and_then(|b| b.seed);
    let now = spread(
        s,
        &Run {
            trials: Some(RUN_TRIALS),
            seed,
            cancel,
            ..Run::default()
        },
    );
    let mut v = Verifier {
        seed,
        runs: 0,
        progress,
        cancel,
    };
    let mut t = Tightening {
        choices: Vec::new(),
        amp: Vec::new(),
        runs: 0,
        now,
    };
    if t.already() {
        return t;
    }
    let cands = candidates(s, &t.now);
    for k in 1..=MAX_PARTS.min(cands.len()) {
        for set in subsets(cands.len(), k) {
            if let Some(c) = best_for(s, &cands, &set, &mut v) {
                t.choices.push(c);
            }
        }
        if !t.choices.is_empty() {
            break;
        }
    }
    t.choices.sort_by(|a, b| {
        (a.upgrades.len(), a.steps())
            .cmp(&(b.upgrades.len(), b.steps()))
            .then(b.yield_frac.total_cmp(&a.yield_frac))
    });
    if t.choices.is_empty() {
        t.amp = amp_bounds(s, &mut v, t.now.yield_min);
    }
    t.runs = v.runs;
    t
}

/// The least tightening of one set of candidates that reaches the yield:
/// the tightest levels first (if even they fail, the set cannot), then
/// the levels from the least.
fn best_for(s: &Scenario, cands: &[Candidate], set: &[usize], v: &mut Verifier) -> Option<Choice> {
    let need = spec_yield(s);
    let lens: Vec<usize> = set.iter().map(|&i| cands[i].ladder.len()).collect();
    let choice = |lv: &[usize], y: f64| Choice {
        upgrades: set
            .iter()
            .zip(lv)
            .map(|(&i, &l)| Upgrade {
                part: cands[i].name,
                from: cands[i].from,
                to: cands[i].ladder[l - 1],
                steps: l,
            })
            .collect(),
        yield_frac: y,
    };
    let tightest = lens.clone();
    let top = choice(&tightest, 0.0);
    let y = v.yield_of(&top.applied(s))?;
    if y < need {
        return None;
    }
    let mut found = choice(&tightest, y);
    for lv in levels(&lens).into_iter().filter(|lv| *lv != tightest) {
        let c = choice(&lv, 0.0);
        let y = v.yield_of(&c.applied(s))?;
        if y >= need {
            found = choice(&lv, y);
            break;
        }
    }
    Some(found)
}

fn spec_yield(s: &Scenario) -> f64 {
    crate::judge::spec::yield_min(s)
}

/// The amplifier's spread fields, what "no spread" is for each, and the
/// part name shown.
const AMP_SPREADS: [(&str, &str); 3] = [
    ("a0", "spread.a0_min"),
    ("gbw", "spread.gbw_tol"),
    ("ro", "spread.ro_tol"),
];

/// For each amplifier spread that varies: the loosest bound (by
/// bisection, 6 halvings) that reaches the yield with the parts as they
/// are, when taking that spread away entirely reaches it.
fn amp_bounds(s: &Scenario, v: &mut Verifier, need: f64) -> Vec<AmpBound> {
    let varied: Vec<&str> = knobs(s).iter().map(|k| k.name).collect();
    let mut out = Vec::new();
    for (part, field) in AMP_SPREADS {
        let Some(p) = param(field).filter(|_| varied.contains(&part)) else {
            continue;
        };
        let now = p.get(s).unwrap_or(0.0);
        // a0_min rises to a0; the others fall to 0.
        let best = if part == "a0" { s.amp.a0 } else { 0.0 };
        let at = |x: f64| {
            let mut t = s.clone();
            p.set(&mut t, Some(x));
            t
        };
        let Some(y) = v.yield_of(&at(best)) else {
            break;
        };
        if y < need {
            continue;
        }
        let (mut good, mut bad, mut good_y) = (best, now, y);
        for _ in 0..6 {
            let mid = 0.5 * (good + bad);
            match v.yield_of(&at(mid)) {
                Some(y) if y >= need => (good, good_y) = (mid, y),
                Some(_) => bad = mid,
                None => break,
            }
        }
        out.push(AmpBound {
            part,
            field,
            value: good,
            yield_frac: good_y,
        });
    }
    out
}
