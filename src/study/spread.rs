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
use crate::judge::spread_figures::{read, target, worse_of, When, CMRR, SPREAD_FIGURES};
use crate::judge::Evaluation;
use crate::model::params::param;
use crate::model::scenario::{Dist, Scenario};
use crate::model::stages::Tolerance;
use crate::model::temperature::{at_temperature, drifting_resistors, temperatures};
pub use crate::study::shares::{Contribution, Knob};
use crate::study::tally::Stream;
pub use crate::study::tally::{histogram, quantile, BINS, P_HIGH, P_LOW};
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use rand_pcg::Pcg64;
use rayon::prelude::*;

/// Monte Carlo trials without `spread.trials`.
pub const DEFAULT_TRIALS: u32 = 2000;
/// The seed without `spread.seed`.
pub const DEFAULT_SEED: u64 = 1;
/// The most parts whose every combination of extremes is solved: 2^10
/// corners. Beyond it the corners take the parts with the largest
/// first-order effect on the gain ([`corner_knobs`]), the rest nominal.
pub const MAX_CORNER_KNOBS: usize = 10;

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
    /// Each varied part's first-order share of the variance, largest
    /// first (empty where the figure does not move or is undefined).
    pub contributions: Vec<Contribution>,
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
    /// Over a temperature range: where the nominal stage is furthest from
    /// passing, and where the worst trial is (None without a range).
    pub nominal_at: Option<f64>,
    pub worst_at: Option<f64>,
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
    /// The temperatures each trial is judged at (one without a range).
    pub temperatures: Vec<f64>,
    /// The unit of the stage's gain (its gain figures read in ohms for
    /// V/A).
    pub gain_unit: crate::model::stages::GainUnit,
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

/// The parts that vary, with their extremes: the kind's resistors and the
/// reference input's r within the stage tolerance, then its capacitors and
/// the reference's c with the capacitor tolerance (each part of the kind
/// within its own `stage.part_tolerance` where given), a photodiode's
/// capacitance with `spread.cd_tol`, gbw, a0 and ro as
/// the spread block gives (the reference's level does not spread).
pub fn knobs(s: &Scenario) -> Vec<Knob> {
    let b = s.spread.clone().unwrap_or_default();
    let spread = |name: &'static str, field: &'static str, tol: Option<f64>| {
        let p = param(field)?;
        let v = p.get(s).filter(|v| *v != 0.0 && p.applies(s))?;
        let tol = tol.filter(|t| *t > 0.0)?;
        Some(Knob {
            name,
            field,
            lo: v * (1.0 - tol),
            hi: v * (1.0 + tol),
        })
    };
    let a0 = b.a0_min.filter(|lo| *lo < s.amp.a0).map(|lo| Knob {
        name: "a0",
        field: "amp.a0",
        lo,
        hi: s.amp.a0,
    });
    let parts = s.stage.topology.kind().parts;
    let of = |tolerance: Tolerance| {
        parts
            .iter()
            .filter(move |p| p.tolerance == tolerance)
            .map(move |p| spread(p.name, p.param, part_tolerance(s, p.name, tolerance)))
    };
    // The reference input's r (a divider of the stage's resistors) spreads
    // with their tolerance, its bypass capacitor with the capacitors'.
    of(Tolerance::Resistor)
        .chain([spread(
            "reference_r",
            "reference.r",
            Some(s.stage.tolerance),
        )])
        .chain(of(Tolerance::Capacitor))
        .chain([spread("reference_c", "reference.c", b.cap_tol)])
        .chain(of(Tolerance::Diode))
        .chain([
            spread("gbw", "amp.gbw", b.gbw_tol),
            a0,
            spread("ro", "amp.ro", b.ro_tol),
        ])
        .flatten()
        .collect()
}

/// The tolerance a part spreads with: its own where `stage.part_tolerance`
/// names it, else its class's (`stage.tolerance`, `spread.cap_tol`).
pub fn part_tolerance(s: &Scenario, name: &str, class: Tolerance) -> Option<f64> {
    let own = s.stage.part_tolerance.get(name);
    match class {
        Tolerance::Resistor => own.or(Some(s.stage.tolerance)),
        Tolerance::Capacitor => own.or(s.spread.as_ref().and_then(|b| b.cap_tol)),
        Tolerance::Diode => own.or(s.spread.as_ref().and_then(|b| b.cd_tol)),
        Tolerance::None => None,
    }
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
    trial_draws(seed, index, dist, n, 0).0
}

/// Trial `index`'s draws: one per knob in [−1, 1] as `dist` says, then
/// `tc` more, uniform in [−1, 1], for the resistors' temperature
/// coefficients (drawn after the knobs, so the knobs' draws are the same
/// with a temperature range as without).
pub fn trial_draws(seed: u64, index: u64, dist: Dist, n: usize, tc: usize) -> (Vec<f64>, Vec<f64>) {
    let mut rng = Pcg64::seed_from_u64(mix(seed ^ mix(index)));
    let knobs = knob_draws(&mut rng, dist, n);
    let tcs = (0..tc).map(|_| rng.random_range(-1.0..=1.0)).collect();
    (knobs, tcs)
}

fn knob_draws(rng: &mut Pcg64, dist: Dist, n: usize) -> Vec<f64> {
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
    /// The temperatures each stage is judged at.
    temps: Vec<f64>,
    /// How many resistors drift, and their coefficient bound (ppm/°C);
    /// none are drawn without a temperature range.
    drifting: usize,
    tc_ppm: f64,
}

/// One stage's figures at each of the plan's temperatures.
type Rows = Vec<Vec<Option<f64>>>;

impl Plan {
    fn new(s: &Scenario, nominal: &Evaluation) -> Plan {
        let limits = spec::given(s);
        let held = |key: &str| limits.iter().any(|(l, _)| l.figures.contains(&key));
        let keys = SPREAD_FIGURES
            .iter()
            .filter(|(key, when, _)| match when {
                When::Always => true,
                When::Given => held(key) || read(nominal, key, 1.0).is_some(),
                When::Held => held(key),
            })
            .map(|(key, _, _)| *key)
            .collect();
        let target = target(s, nominal);
        let depth = Depth {
            step: crate::judge::spread_figures::TIME_DOMAIN
                .iter()
                .any(|k| held(k)),
            ..TRIAL
        };
        let temps = temperatures(s);
        let tc_ppm = s.stage.tc_ppm.filter(|_| temps.len() > 1).unwrap_or(0.0);
        let drifting = if tc_ppm > 0.0 {
            drifting_resistors(s).len()
        } else {
            0
        };
        Plan {
            keys,
            target,
            depth,
            temps,
            drifting,
            tc_ppm,
        }
    }

    /// One stage's spread figures at each temperature, the drifting
    /// resistors with coefficients `tc` (ppm/°C).
    fn rows(&self, s: &Scenario, tc: &[f64]) -> Rows {
        if self.temps.len() == 1 {
            return vec![self.values(s)];
        }
        self.temps
            .iter()
            .map(|t| self.values(&at_temperature(s, *t, tc)))
            .collect()
    }

    /// Figure by figure, the worst of the temperatures' values.
    fn worst(&self, rows: &Rows, nominal: &[Option<f64>]) -> Vec<Option<f64>> {
        (0..self.keys.len())
            .map(|j| {
                rows.iter().skip(1).fold(rows[0][j], |w, r| {
                    worse_of(self.keys[j], w, r[j], nominal[j])
                })
            })
            .collect()
    }

    /// The index of `temp_c` among the temperatures.
    fn at_nominal(&self) -> usize {
        if self.temps.len() == 1 {
            0
        } else {
            1
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

    /// The figures as the variance shares take them: each as it is,
    /// but the CMRR as the signed common-mode error ρ = A_cm/A_d it is
    /// −20·log10|·| of. ρ is linear in the parts near a match, where the
    /// CMRR in dB is not (unbounded at the match itself), and both give
    /// the same shares to first order wherever the CMRR is finite.
    fn share_values(&self, s: &Scenario) -> Vec<Option<f64>> {
        let e = Evaluation {
            analysis: analyze_to(s, self.depth),
            warnings: Vec::new(),
        };
        self.keys
            .iter()
            .map(|k| match *k {
                CMRR => common_mode_error(&e),
                _ => read(&e, k, self.target),
            })
            .collect()
    }
}

/// A_cm/A_d of a two-input stage (None for one input or unstable).
fn common_mode_error(e: &Evaluation) -> Option<f64> {
    let a = &e.analysis;
    let cm = a.cm_gain_dc.filter(|_| !a.unstable())?;
    Some(cm / a.dc_gain).filter(|v| v.is_finite())
}

/// The CMRR's shares were taken on ρ = A_cm/A_d: its sensitivity in dB
/// by the chain rule, ∂CMRR/∂p = −(20/ln 10)·(∂ρ/∂p)/ρ at the nominal ρ
/// (infinite, written null, where the nominal CMRR is unbounded).
fn cmrr_sensitivities(shares: &mut [Contribution], rho: Option<f64>) {
    let k = -20.0 / std::f64::consts::LN_10;
    for c in shares {
        c.sensitivity = match rho {
            Some(r) if r != 0.0 => k * c.sensitivity / r,
            _ => f64::INFINITY,
        };
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

/// Every corner's figures (the worst of the temperatures, the resistors'
/// coefficients at 0), then each figure's lowest and highest corner.
fn corners(
    s: &Scenario,
    plan: &Plan,
    knobs: &[Knob],
    nominal: &[Option<f64>],
    figures: &mut [FigureSpread],
) {
    let n = 1usize << knobs.len();
    let rows: Vec<Vec<Option<f64>>> = (0..n)
        .into_par_iter()
        .map(|c| {
            let at = corner(knobs, c);
            plan.worst(
                &plan.rows(&with_values(s, knobs, |i, _| at[i].1), &[]),
                nominal,
            )
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
    let nominal_values: Vec<Option<f64>> = plan
        .keys
        .iter()
        .map(|k| read(&nominal, k, plan.target))
        .collect();
    let mut tally = Tally::new(s, &plan, &nominal_values);
    run_trials(s, &plan, &knobs, (seed, b.dist, trials), run, &mut tally);
    // The nominal stage at each temperature: temp_c's row is the full
    // analysis itself.
    let mut nominal_rows = plan.rows(s, &[]);
    nominal_rows[plan.at_nominal()] = nominal_values.clone();
    let mut shares = crate::study::shares::contributions(
        s,
        &|t: &Scenario| plan.share_values(t),
        plan.keys.len(),
        &knobs,
        b.dist,
    );
    if let Some(j) = plan.keys.iter().position(|k| *k == CMRR) {
        cmrr_sensitivities(&mut shares[j], common_mode_error(&nominal));
    }
    let mut figures: Vec<FigureSpread> = plan
        .keys
        .iter()
        .enumerate()
        .map(|(j, k)| {
            let mut f = figure_spread(k, nominal_values[j], &tally.figures[j]);
            f.contributions = shares[j].clone();
            f
        })
        .collect();
    let corner_knobs = corner_knobs(s, &knobs, MAX_CORNER_KNOBS);
    if !run.cancelled() {
        let chosen: Vec<Knob> = corner_knobs.iter().map(|&i| knobs[i].clone()).collect();
        corners(s, &plan, &chosen, &nominal_values, &mut figures);
    }
    let (limits, yield_frac) = tally.limits(s, &plan, &nominal_rows);
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
        temperatures: plan.temps.clone(),
        gain_unit: s.stage.topology.kind().gain_unit,
    }
}

/// A figure's streamed statistics, its corners and shares still to come.
fn figure_spread(key: &'static str, nominal: Option<f64>, stream: &Stream) -> FigureSpread {
    let t = stream.finish();
    FigureSpread {
        key,
        nominal,
        mean: t.mean,
        std: t.std,
        min: t.min,
        max: t.max,
        p_low: t.p_low,
        p_high: t.p_high,
        corner_min: None,
        corner_max: None,
        corner_min_at: Vec::new(),
        corner_max_at: Vec::new(),
        undefined: t.undefined,
        histogram: t.histogram,
        contributions: Vec::new(),
    }
}

/// Trials run in blocks of this many, in order: a cancelled run stops at
/// the end of the block it is in (its trials are skipped at once). Only
/// one block's rows are held at a time; the [`Tally`] takes them in trial
/// order, so its sums do not depend on the thread count.
const BLOCK: usize = 4096;

/// Every trial's figures at each temperature, handed to `tally` in trial
/// order one block at a time; after a cancel, the rest are skipped.
fn run_trials(
    s: &Scenario,
    plan: &Plan,
    knobs: &[Knob],
    (seed, dist, trials): (u64, Dist, usize),
    run: &Run,
    tally: &mut Tally,
) {
    let done = std::sync::atomic::AtomicUsize::new(0);
    for start in (0..trials).step_by(BLOCK) {
        if run.cancelled() {
            break;
        }
        let end = (start + BLOCK).min(trials);
        let block: Vec<Rows> = (start as u64..end as u64)
            .into_par_iter()
            .map(|i| {
                if run.cancelled() {
                    return Vec::new();
                }
                let (u, tc) = trial_draws(seed, i, dist, knobs.len(), plan.drifting);
                let t = with_values(s, knobs, |j, k| {
                    0.5 * (k.lo + k.hi) + 0.5 * (k.hi - k.lo) * u[j]
                });
                let tc: Vec<f64> = tc.iter().map(|x| x * plan.tc_ppm).collect();
                let row = plan.rows(&t, &tc);
                if let Some(p) = run.progress {
                    p(done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1);
                }
                row
            })
            .collect();
        if run.cancelled() {
            // The result is meaningless; the block is freed here.
            break;
        }
        for rows in &block {
            tally.push(plan, rows);
        }
    }
}

/// A limit's held value over the temperatures: the one furthest from
/// passing, and its temperature (None when undefined at one).
fn held_over(l: &Limit, plan: &Plan, rows: &Rows) -> (Option<f64>, Option<f64>, bool) {
    let col = |key: &str| plan.keys.iter().position(|k| *k == key);
    let mut worst: Option<(f64, f64)> = None;
    let mut undefined = false;
    for (r, t) in rows.iter().zip(&plan.temps) {
        let v = l.held(|k| col(k).and_then(|j| r[j]));
        undefined |= v.is_none();
        let w = l.worse(worst.map(|w| w.0), v);
        if w != worst.map(|w| w.0) || worst.is_none() {
            worst = w.map(|w| (w, *t));
        }
    }
    (worst.map(|w| w.0), worst.map(|w| w.1), undefined)
}

/// One limit over the trials so far.
struct LimitTally {
    limit: &'static Limit,
    value: f64,
    worst: Option<f64>,
    worst_at: Option<f64>,
    undefined: bool,
    failed: usize,
}

/// What the trials give, taken one trial at a time: each figure's
/// [`Stream`] (its worst over the temperatures), each limit's worst and
/// failures, and the trials passing every limit. Its size does not
/// depend on the number of trials.
struct Tally {
    nominal: Vec<Option<f64>>,
    figures: Vec<Stream>,
    limits: Vec<LimitTally>,
    trials: usize,
    passing: usize,
}

impl Tally {
    fn new(s: &Scenario, plan: &Plan, nominal: &[Option<f64>]) -> Tally {
        let limits = spec::given(s)
            .into_iter()
            .map(|(limit, value)| LimitTally {
                limit,
                value,
                worst: None,
                worst_at: None,
                undefined: false,
                failed: 0,
            })
            .collect();
        Tally {
            nominal: nominal.to_vec(),
            figures: plan.keys.iter().map(|_| Stream::new()).collect(),
            limits,
            trials: 0,
            passing: 0,
        }
    }

    /// One trial's figures at each temperature. Over a temperature range
    /// a trial passes only if it passes at every temperature.
    fn push(&mut self, plan: &Plan, rows: &Rows) {
        for (f, v) in self.figures.iter_mut().zip(plan.worst(rows, &self.nominal)) {
            f.push(v);
        }
        let mut passes = true;
        for t in &mut self.limits {
            let (v, at, undef) = held_over(t.limit, plan, rows);
            t.undefined |= undef;
            let w = t.limit.worse(t.worst, v);
            if w != t.worst {
                (t.worst, t.worst_at) = (w, at);
            }
            if undef || !t.limit.passes(v, t.value) {
                t.failed += 1;
                passes = false;
            }
        }
        self.trials += 1;
        self.passing += usize::from(passes);
    }

    /// Each given limit on the nominal stage and the trials; the yield.
    fn limits(&self, s: &Scenario, plan: &Plan, nominal: &Rows) -> (Vec<LimitCheck>, Option<f64>) {
        let ranged = plan.temps.len() > 1;
        let limits = self
            .limits
            .iter()
            .map(|t| {
                let (nominal, nominal_at, nominal_undef) = held_over(t.limit, plan, nominal);
                LimitCheck {
                    limit: t.limit,
                    value: t.value,
                    nominal: nominal.filter(|_| !nominal_undef),
                    worst: t.worst.filter(|_| !t.undefined),
                    nominal_pass: !nominal_undef && t.limit.passes(nominal, t.value),
                    failed: t.failed,
                    nominal_at: nominal_at.filter(|_| ranged),
                    worst_at: t.worst_at.filter(|_| ranged),
                }
            })
            .collect();
        let n = self.trials.max(1) as f64;
        let yield_frac = s.spec.as_ref().map(|_| self.passing as f64 / n);
        (limits, yield_frac)
    }
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
