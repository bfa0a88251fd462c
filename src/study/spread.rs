//! The spread of a stage's figures over the parts' tolerances: worst case
//! by corners and Monte Carlo, and the yield against the spec.
//!
//! What varies is a list of [`Knob`]s, each a field of the parameter table
//! with its lowest and highest value; every trial sets them through the
//! table and analyses the stage at [`TRIAL`] depth. Each trial's random
//! stream comes from the seed and the trial's index alone, and the results
//! are reduced in trial order, so the output does not depend on the number
//! of threads.

use crate::engine::analysis::{analyze_to, Depth, FULL, TRIAL};
use crate::judge::spec::{self, Limit};
pub use crate::judge::spread_figures::unit_and_label;
use crate::judge::spread_figures::{read, target, When, SPREAD_FIGURES};
use crate::judge::Evaluation;
use crate::model::params::param;
use crate::model::scenario::{Dist, Scenario};
use crate::model::stages::Tolerance;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use rand_pcg::Pcg64;
use rayon::prelude::*;

/// Monte Carlo trials without `spread.trials`.
pub const DEFAULT_TRIALS: u32 = 2000;
/// The seed without `spread.seed`.
pub const DEFAULT_SEED: u64 = 1;
/// Histogram bins from min to max.
pub const BINS: usize = 20;
/// The Monte Carlo percentiles: ±3σ of a normal distribution.
pub const P_LOW: f64 = 0.00135;
pub const P_HIGH: f64 = 0.99865;

/// The most parts whose every combination of extremes is solved: 2^10
/// corners. Beyond it the corners take the parts with the largest
/// first-order effect on the gain ([`corner_knobs`]), the rest nominal.
pub const MAX_CORNER_KNOBS: usize = 10;

/// One varied part: a parameter-table field between two values.
#[derive(Debug, Clone, PartialEq)]
pub struct Knob {
    pub field: &'static str,
    pub lo: f64,
    pub hi: f64,
}

/// A figure's spread.
#[derive(Debug, Clone, PartialEq)]
pub struct FigureSpread {
    pub key: &'static str,
    pub nominal: Option<f64>,
    pub mean: Option<f64>,
    /// Sample standard deviation (n − 1).
    pub std: Option<f64>,
    pub min: Option<f64>,
    pub max: Option<f64>,
    /// The 0.135 % and 99.865 % points.
    pub p_low: Option<f64>,
    pub p_high: Option<f64>,
    /// The figure at its lowest and highest corner, and those corners.
    pub corner_min: Option<f64>,
    pub corner_max: Option<f64>,
    pub corner_min_at: Vec<(&'static str, f64)>,
    pub corner_max_at: Vec<(&'static str, f64)>,
    /// Trials where the figure is undefined (or the loop unstable).
    pub undefined: usize,
    pub histogram: [usize; BINS],
}

impl FigureSpread {
    /// Whether a trial went below the lowest corner, and above the
    /// highest, by more than rounding (a millionth of the corner span, and
    /// never by less than 1e-12: a figure that does not move is noise).
    pub fn beyond_corners(&self) -> (bool, bool) {
        let (Some(lo), Some(hi)) = (self.corner_min, self.corner_max) else {
            return (false, false);
        };
        let eps = (1e-6 * (hi - lo))
            .max(1e-9 * lo.abs().max(hi.abs()))
            .max(1e-12);
        (
            self.min.is_some_and(|m| m < lo - eps),
            self.max.is_some_and(|m| m > hi + eps),
        )
    }
}

/// A spec limit against the nominal stage and the trials.
#[derive(Debug, Clone, PartialEq)]
pub struct LimitCheck {
    pub limit: &'static Limit,
    pub value: f64,
    pub nominal: Option<f64>,
    /// The trial value furthest from passing (None: one was undefined).
    pub worst: Option<f64>,
    pub nominal_pass: bool,
    /// Trials that fail this limit.
    pub failed: usize,
}

/// Everything a spread run gives.
#[derive(Debug, Clone, PartialEq)]
pub struct SpreadResult {
    pub trials: usize,
    pub seed: u64,
    pub dist: Dist,
    pub knobs: Vec<Knob>,
    /// The knobs the corners combine (indices into `knobs`): all of them
    /// up to [`MAX_CORNER_KNOBS`].
    pub corner_knobs: Vec<usize>,
    pub figures: Vec<FigureSpread>,
    pub limits: Vec<LimitCheck>,
    /// Fraction of trials meeting every limit; None without a spec.
    pub yield_frac: Option<f64>,
    pub yield_min: f64,
}

impl SpreadResult {
    /// Whether the stage meets its spec: nominal and yield.
    pub fn passes(&self) -> bool {
        self.limits.iter().all(|l| l.nominal_pass)
            && self.yield_frac.is_none_or(|y| y >= self.yield_min)
    }

    /// The figure's spread, if it is in the table.
    pub fn figure(&self, key: &str) -> Option<&FigureSpread> {
        self.figures.iter().find(|f| f.key == key)
    }
}

/// The parts that vary, with their extremes: the kind's resistors within
/// the stage tolerance, then its capacitors with the capacitor tolerance,
/// gbw, a0 and ro as the spread block gives.
pub fn knobs(s: &Scenario) -> Vec<Knob> {
    let b = s.spread.clone().unwrap_or_default();
    let t = s.stage.tolerance;
    let spread = |field: &'static str, tol: Option<f64>| {
        let p = param(field)?;
        let v = p.get(s).filter(|v| *v != 0.0 && p.applies(s))?;
        let tol = tol.filter(|t| *t > 0.0)?;
        Some(Knob {
            field,
            lo: v * (1.0 - tol),
            hi: v * (1.0 + tol),
        })
    };
    let a0 = b.a0_min.filter(|lo| *lo < s.amp.a0).map(|lo| Knob {
        field: "amp.a0",
        lo,
        hi: s.amp.a0,
    });
    let parts = s.stage.topology.kind().parts;
    let of = |tolerance: Tolerance, tol: Option<f64>| {
        parts
            .iter()
            .filter(move |p| p.tolerance == tolerance)
            .map(move |p| spread(p.param, tol))
    };
    of(Tolerance::Resistor, Some(t))
        .chain(of(Tolerance::Capacitor, b.cap_tol))
        .chain([spread("amp.gbw", b.gbw_tol), a0, spread("amp.ro", b.ro_tol)])
        .flatten()
        .collect()
}

/// The knobs the corners combine: every one while there are at most
/// `max`, else the `max` with the largest first-order effect on the DC
/// gain (|gain at the top − gain at the bottom| with the others nominal),
/// in their own order.
pub fn corner_knobs(s: &Scenario, knobs: &[Knob], max: usize) -> Vec<usize> {
    if knobs.len() <= max {
        return (0..knobs.len()).collect();
    }
    let gain_at = |i: usize, v: f64| {
        let mut t = s.clone();
        if let Some(p) = param(knobs[i].field) {
            p.set(&mut t, Some(v));
        }
        analyze_to(&t, TRIAL).dc_gain
    };
    let effect: Vec<f64> = (0..knobs.len())
        .map(|i| (gain_at(i, knobs[i].hi) - gain_at(i, knobs[i].lo)).abs())
        .collect();
    let mut order: Vec<usize> = (0..knobs.len()).collect();
    order.sort_by(|a, b| effect[*b].total_cmp(&effect[*a]).then(a.cmp(b)));
    order.truncate(max);
    order.sort_unstable();
    order
}

/// The stage with each knob at `at(i, knob)`.
fn with_values(s: &Scenario, knobs: &[Knob], at: impl Fn(usize, &Knob) -> f64) -> Scenario {
    let mut t = s.clone();
    for (i, k) in knobs.iter().enumerate() {
        if let Some(p) = param(k.field) {
            p.set(&mut t, Some(at(i, k)));
        }
    }
    t
}

/// A 64-bit mix (SplitMix64's finaliser) so neighbouring trial indices
/// give unrelated streams.
pub fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Trial `index`'s draws in [−1, 1], one per knob.
pub fn draws(seed: u64, index: u64, dist: Dist, n: usize) -> Vec<f64> {
    let mut rng = Pcg64::seed_from_u64(mix(seed ^ mix(index)));
    (0..n)
        .map(|_| match dist {
            Dist::Uniform => rng.random_range(-1.0..=1.0),
            Dist::Normal => loop {
                let z: f64 = rng.sample::<f64, _>(StandardNormal) / 3.0;
                if z.abs() <= 1.0 {
                    break z;
                }
            },
        })
        .collect()
}

/// What the spread needs to know about the stage, worked out once.
struct Plan {
    keys: Vec<&'static str>,
    /// The gain target_error is measured against.
    target: f64,
    depth: Depth,
}

impl Plan {
    fn new(s: &Scenario, nominal: &Evaluation) -> Plan {
        let limits = spec::given(s);
        let held = |key: &str| limits.iter().any(|(l, _)| l.figures.contains(&key));
        let keys = SPREAD_FIGURES
            .iter()
            .filter(|(key, when)| match when {
                When::Always => true,
                When::Given => held(key) || read(nominal, key, 1.0).is_some(),
                When::Held => held(key),
            })
            .map(|(key, _)| *key)
            .collect();
        let target = target(s, nominal);
        let depth = Depth {
            step: held("settle_01pct_s"),
            ..TRIAL
        };
        Plan {
            keys,
            target,
            depth,
        }
    }

    /// One stage's spread figures, in `keys` order.
    fn values(&self, s: &Scenario) -> Vec<Option<f64>> {
        let e = Evaluation {
            analysis: analyze_to(s, self.depth),
            warnings: Vec::new(),
        };
        self.keys.iter().map(|k| read(&e, k, self.target)).collect()
    }
}

/// The p-quantile of sorted values: h = (n − 1)·p, linear between the
/// neighbours of h.
pub fn quantile(sorted: &[f64], p: f64) -> Option<f64> {
    let n = sorted.len();
    if n == 0 {
        return None;
    }
    let h = (n - 1) as f64 * p;
    let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
    Some(sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo]))
}

/// 20 equal bins from min to max (all in the first when min = max).
pub fn histogram(values: &[f64], min: f64, max: f64) -> [usize; BINS] {
    let mut h = [0; BINS];
    for &v in values {
        let i = if max > min {
            (((v - min) / (max - min)) * BINS as f64).floor() as usize
        } else {
            0
        };
        h[i.min(BINS - 1)] += 1;
    }
    h
}

/// Mean, sample standard deviation, min, max, percentiles and histogram
/// of one figure's defined trial values.
fn statistics(key: &'static str, nominal: Option<f64>, column: &[Option<f64>]) -> FigureSpread {
    let mut v: Vec<f64> = column.iter().flatten().copied().collect();
    v.sort_by(f64::total_cmp);
    let n = v.len();
    // An unbounded value (a null CMRR) counts in the percentiles, not in
    // the mean and deviation.
    let finite: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
    let nf = finite.len();
    let mean = (nf > 0).then(|| finite.iter().sum::<f64>() / nf as f64);
    let std = mean.filter(|_| nf > 1).map(|m| {
        let ss: f64 = finite.iter().map(|x| (x - m).powi(2)).sum();
        (ss / (nf - 1) as f64).sqrt()
    });
    let (min, max) = (v.first().copied(), v.last().copied());
    // A figure no part moves differs only by rounding between trials.
    let still = matches!((min, max), (Some(a), Some(b)) if b - a <= 1e-12 * a.abs().max(b.abs()));
    let std = if still { std.map(|_| 0.0) } else { std };
    FigureSpread {
        key,
        nominal,
        mean,
        std,
        min,
        max,
        p_low: quantile(&v, P_LOW),
        p_high: quantile(&v, P_HIGH),
        corner_min: None,
        corner_max: None,
        corner_min_at: Vec::new(),
        corner_max_at: Vec::new(),
        undefined: column.len() - n,
        histogram: match (min, max) {
            (Some(lo), Some(hi)) => histogram(&v, lo, hi),
            _ => [0; BINS],
        },
    }
}

/// The corner of index `c`: knob i at its top when bit i is set.
fn corner(knobs: &[Knob], c: usize) -> Vec<(&'static str, f64)> {
    knobs
        .iter()
        .enumerate()
        .map(|(i, k)| (k.field, if c >> i & 1 == 1 { k.hi } else { k.lo }))
        .collect()
}

/// Every corner's figures, then each figure's lowest and highest corner.
fn corners(s: &Scenario, plan: &Plan, knobs: &[Knob], figures: &mut [FigureSpread]) {
    let n = 1usize << knobs.len();
    let rows: Vec<Vec<Option<f64>>> = (0..n)
        .into_par_iter()
        .map(|c| {
            let at = corner(knobs, c);
            plan.values(&with_values(s, knobs, |i, _| at[i].1))
        })
        .collect();
    for (j, f) in figures.iter_mut().enumerate() {
        let defined = rows
            .iter()
            .enumerate()
            .filter_map(|(c, r)| Some((c, r[j]?)));
        let lo = defined.clone().min_by(|a, b| a.1.total_cmp(&b.1));
        let hi = defined.max_by(|a, b| a.1.total_cmp(&b.1));
        if let (Some(lo), Some(hi)) = (lo, hi) {
            (f.corner_min, f.corner_min_at) = (Some(lo.1), corner(knobs, lo.0));
            (f.corner_max, f.corner_max_at) = (Some(hi.1), corner(knobs, hi.0));
        }
    }
}

/// Run options: trials and seed (the scenario's or the defaults when None),
/// a progress callback, called with each finished trial's count, and a
/// flag that stops the run early (its result is then meaningless).
#[derive(Default)]
pub struct Run<'a> {
    pub trials: Option<u32>,
    pub seed: Option<u64>,
    pub progress: Option<&'a (dyn Fn(usize) + Sync)>,
    pub cancel: Option<&'a std::sync::atomic::AtomicBool>,
}

impl Run<'_> {
    fn cancelled(&self) -> bool {
        self.cancel
            .is_some_and(|c| c.load(std::sync::atomic::Ordering::Relaxed))
    }
}

/// How many trials a run makes: the asked number, else the scenario's,
/// else [`DEFAULT_TRIALS`].
pub fn trials_of(s: &Scenario, asked: Option<u32>) -> usize {
    asked
        .or(s.spread.as_ref().and_then(|b| b.trials))
        .unwrap_or(DEFAULT_TRIALS) as usize
}

/// The spread of a valid scenario, on a thread pool of its own (one
/// thread per core; see [`spread_on`]).
pub fn spread(s: &Scenario, run: &Run) -> SpreadResult {
    spread_on(rayon::ThreadPoolBuilder::new().build(), s, run)
}

/// The spread on a pool that outlives it (the workbench keeps one for
/// all its jobs, so a new job starts no threads).
pub fn spread_in(pool: &rayon::ThreadPool, s: &Scenario, run: &Run) -> SpreadResult {
    pool.install(|| spread_here(s, run))
}

/// The spread on `pool`. When there is none (a
/// process limit leaves no threads to start), the spread runs on the
/// calling thread alone: the same result (each trial's draws depend only
/// on the seed and its index), only slower.
pub fn spread_on(
    pool: Result<rayon::ThreadPool, rayon::ThreadPoolBuildError>,
    s: &Scenario,
    run: &Run,
) -> SpreadResult {
    let pool = pool.or_else(|_| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .use_current_thread()
            .build()
    });
    match pool {
        Ok(pool) => pool.install(|| spread_here(s, run)),
        // Not even the calling thread could be taken: the loops below then
        // run on rayon's global pool as before.
        Err(_) => spread_here(s, run),
    }
}

fn spread_here(s: &Scenario, run: &Run) -> SpreadResult {
    let b = s.spread.clone().unwrap_or_default();
    let trials = trials_of(s, run.trials);
    let seed = run.seed.or(b.seed).unwrap_or(DEFAULT_SEED);
    let nominal = Evaluation {
        analysis: analyze_to(s, FULL),
        warnings: Vec::new(),
    };
    let plan = Plan::new(s, &nominal);
    let knobs = knobs(s);
    let rows = trial_rows(s, &plan, &knobs, (seed, b.dist, trials), run);
    let nominal_values: Vec<Option<f64>> = plan
        .keys
        .iter()
        .map(|k| read(&nominal, k, plan.target))
        .collect();
    let mut figures: Vec<FigureSpread> = plan
        .keys
        .iter()
        .enumerate()
        .map(|(j, k)| {
            let column: Vec<Option<f64>> = rows.iter().map(|r| r[j]).collect();
            statistics(k, nominal_values[j], &column)
        })
        .collect();
    let corner_knobs = corner_knobs(s, &knobs, MAX_CORNER_KNOBS);
    if !run.cancelled() {
        let chosen: Vec<Knob> = corner_knobs.iter().map(|&i| knobs[i].clone()).collect();
        corners(s, &plan, &chosen, &mut figures);
    }
    let (limits, yield_frac) = check_limits(s, &plan, &nominal_values, &rows);
    SpreadResult {
        trials,
        seed,
        dist: b.dist,
        knobs,
        corner_knobs,
        figures,
        limits,
        yield_frac,
        yield_min: spec::yield_min(s),
    }
}

/// Trials run in blocks of this many, in order: a cancelled run stops at
/// the end of the block it is in (its trials are skipped at once) and
/// holds no rows past it.
const BLOCK: usize = 4096;

/// Every trial's figures in trial order; after a cancel, the rows so far.
fn trial_rows(
    s: &Scenario,
    plan: &Plan,
    knobs: &[Knob],
    (seed, dist, trials): (u64, Dist, usize),
    run: &Run,
) -> Vec<Vec<Option<f64>>> {
    let done = std::sync::atomic::AtomicUsize::new(0);
    let mut rows: Vec<Vec<Option<f64>>> = Vec::new();
    for start in (0..trials).step_by(BLOCK) {
        if run.cancelled() {
            break;
        }
        let end = (start + BLOCK).min(trials);
        let block: Vec<Vec<Option<f64>>> = (start as u64..end as u64)
            .into_par_iter()
            .map(|i| {
                if run.cancelled() {
                    return Vec::new();
                }
                let u = draws(seed, i, dist, knobs.len());
                let t = with_values(s, knobs, |j, k| {
                    0.5 * (k.lo + k.hi) + 0.5 * (k.hi - k.lo) * u[j]
                });
                let row = plan.values(&t);
                if let Some(p) = run.progress {
                    p(done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1);
                }
                row
            })
            .collect();
        rows.extend(block);
    }
    if run.cancelled() {
        // The result is meaningless; what it computed is freed now.
        rows.clear();
    }
    rows
}

/// Each given limit on the nominal stage and the trials; the yield.
fn check_limits(
    s: &Scenario,
    plan: &Plan,
    nominal: &[Option<f64>],
    rows: &[Vec<Option<f64>>],
) -> (Vec<LimitCheck>, Option<f64>) {
    let col = |key: &str| plan.keys.iter().position(|k| *k == key);
    let held = |l: &Limit, row: &[Option<f64>]| l.held(|k| col(k).and_then(|j| row[j]));
    let given = spec::given(s);
    let mut passing = vec![true; rows.len()];
    let limits = given
        .iter()
        .map(|&(l, value)| {
            let (mut worst, mut undefined, mut failed) = (None, false, 0);
            for (i, r) in rows.iter().enumerate() {
                let v = held(l, r);
                undefined |= v.is_none();
                worst = l.worse(worst, v);
                if !l.passes(v, value) {
                    failed += 1;
                    passing[i] = false;
                }
            }
            let nominal = held(l, nominal);
            LimitCheck {
                limit: l,
                value,
                nominal,
                worst: worst.filter(|_| !undefined),
                nominal_pass: l.passes(nominal, value),
                failed,
            }
        })
        .collect();
    let n = rows.len().max(1) as f64;
    let yield_frac = s
        .spec
        .as_ref()
        .map(|_| passing.iter().filter(|p| **p).count() as f64 / n);
    (limits, yield_frac)
}

/// The figures of a limit that fail it in some trial or at the nominal
/// (of the two rails' headroom, only the failing rail), in limit order.
pub fn failing_figures(r: &SpreadResult, l: &LimitCheck) -> Vec<&'static str> {
    if l.failed == 0 && l.nominal_pass {
        return Vec::new();
    }
    let fails = |key: &str| {
        let Some(f) = r.figure(key) else {
            return false;
        };
        let edge_fails = [f.min, f.max, f.nominal]
            .into_iter()
            .any(|v| v.is_some() && !l.limit.figure_passes(v, l.value));
        edge_fails || f.undefined > 0
    };
    let keys: Vec<&'static str> = l
        .limit
        .figures
        .iter()
        .copied()
        .filter(|k| fails(k))
        .collect();
    if keys.is_empty() {
        l.limit.figures.iter().copied().take(1).collect()
    } else {
        keys
    }
}

/// The histograms a view draws: first the figure of every limit that
/// trials fail (the failing rail of two), so the reason for a low yield
/// is on the chart, then the gain error, f−3dB and the phase margin, at
/// most `most` in all (never fewer than the failing ones).
pub fn shown_figures(r: &SpreadResult, most: usize) -> Vec<&'static str> {
    let mut keys: Vec<&'static str> = Vec::new();
    for l in r.limits.iter().filter(|l| l.failed > 0) {
        for key in failing_figures(r, l) {
            if !keys.contains(&key) && r.figure(key).is_some() {
                keys.push(key);
            }
        }
    }
    let failing = keys.len();
    for key in ["target_error", "f_3db_hz", "phase_margin_deg"] {
        if !keys.contains(&key) {
            keys.push(key);
        }
    }
    keys.truncate(most.max(failing));
    keys
}
