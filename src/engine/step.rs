//! The step response: the load voltage after the source EMF steps by
//! `size` volts at t = 0, in the time domain, from the same netlist as the
//! frequency analyses (so the two always agree).
//!
//! # Method
//! The netlist gives `C·x' + G·x = b·E(t)` ([`Netlist::time_equations`]).
//! 1. An ideal source's node is known (it is E): its column moves to the
//!    right-hand side, its KCL row and branch go.
//! 2. Coordinates: the capacitor graph's components each keep their node
//!    voltages as states when a capacitor ties them to ground (or to the
//!    known node); a floating component keeps the differences to its first
//!    node, and its common mode is algebraic (its capacitor currents cancel).
//!    The op-amp's states x1 (and x2) are states. Every other unknown is
//!    algebraic. The transformation is exact (entries 0 and ±1).
//! 3. The algebraic unknowns are eliminated (a Schur complement), leaving
//!    `z' = A·z + f·E` and `y = c·z + d·E` exactly (index-1 system).
//! 4. Each operating mode (linear, slewing up or down, held at a rail) is a
//!    linear system in the augmented state `[z; 1]`: slewing replaces x1's
//!    row by ±slew, a rail by 0. Within a mode the state is propagated
//!    EXACTLY by `e^{M·h}`, computed as `e^{M·h} − I` by scaling and
//!    squaring ([`dense::expm1`]: truncation below 1e-22 relative, then
//!    double rounding amplified by the squarings, ~1e-13 relative on the
//!    stages tested). This is the matrix-exponential solution of the linear
//!    model; it is unconditionally stable for any stiffness, and its only
//!    time-stepping is the sampling of the waveform and, where a limit
//!    switches on or off, the location of that instant.
//! 5. Sampling: steps of h0 = 1/(32·f_ref) (f_ref the crossover or f−3dB),
//!    doubling every block of 16 steps, so the window grows geometrically
//!    and a slow pole–zero tail hundreds of crossover periods long is
//!    followed to its end. Each step is also propagated to its midpoint;
//!    where the cubic Hermite interpolant (from y and y' at the ends, both
//!    exact) misses the midpoint by more than 1e-7 of the final value, the
//!    step is halved (down to 1/16384 of h0). In the linear tail the
//!    threshold is also 1e-4 of the remaining deviation from the final
//!    value (down to 1e-10 of it), so a settling band is crossed within
//!    about 1e-4 of its own width. Crossings, peaks and the waveform are
//!    read from those interpolants, so the figures carry an interpolation
//!    error below about 1e-7 of the final value, and settling is read
//!    down to [`SETTLE_FLOOR`] (1 ppm) and no finer.
//!    In the linear mode the state is propagated as its deviation from
//!    the equilibrium of the full DC solution at the new EMF, so the
//!    rounding of e^{M·h} − I (amplified by the doublings on a stiff
//!    stage) scales with that deviation and does not shift the level the
//!    waveform tends to.
//! 6. The window ends once the mode is final (linear or at a rail), the
//!    propagator over one step has ∞-norm ≤ 1/2 and 30 such steps have
//!    passed since the last switch: every mode has then decayed by more
//!    than 2^-30 since (and a later excursion cannot reach the bands).
//! 7. Limits switch at events: leaving the linear mode when x1's linear
//!    rate passes ±slew or x1 reaches a rail; leaving slewing when the
//!    linear rate falls back inside ±slew; leaving a rail when the linear
//!    rate points back inside. Each instant is bracketed on the step,
//!    guessed on the interpolant and refined on exact propagations.

use crate::engine::netlist::{Netlist, TimeEquations};
use crate::model::scenario::Scenario;
use crate::num::dense::{double_step, expm1, Lu, Mat};
use crate::num::eigen::eigenvalues_wide;
use crate::num::refine::refine_max_to;
use num_complex::Complex64 as C64;

pub use crate::model::scenario::DEFAULT_STEP_V;

/// Why a stage held at a rail before the step has no step figures.
pub const HELD_HIGH: &str = "held at the + rail before the step";
pub const HELD_LOW: &str = "held at the − rail before the step";

/// The finest settling band [`StepResponse::settle_to`] reads: 1 ppm of
/// the final value (the waveform is held to [`TOL`] of it, a tenth of the
/// band, and the drift of the exact propagation is far below).
pub const SETTLE_FLOOR: f64 = 1e-6;

/// The settling bands the figures report: 1 %, 0.1 %, 0.01 %.
pub const BANDS: [f64; 3] = [1e-2, 1e-3, 1e-4];

/// One point of the waveform: y(t) = V(load)(t) − V(load)(0⁻) and its rate
/// just before and just after t (they differ where a limit switches).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    pub t: f64,
    pub y: f64,
    pub d_before: f64,
    pub d_after: f64,
}

/// The step response and its figures (see the README for each).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct StepResponse {
    pub size_v: f64,
    pub final_v: Option<f64>,
    pub rise_s: Option<f64>,
    /// When y first reaches 10 % (the start of the rise).
    pub rise_start_s: Option<f64>,
    pub overshoot_pct: Option<f64>,
    pub peak_time_s: Option<f64>,
    /// Settling to [`BANDS`].
    pub settle_s: [Option<f64>; 3],
    /// The stage's own settling threshold (`step.settle_bits` or
    /// `step.settle_to`, a fraction of the final value) and the time the
    /// response last lies outside it.
    pub threshold: Option<f64>,
    pub settle_to_s: Option<f64>,
    pub slew_limited: Option<bool>,
    pub clipped: Option<bool>,
    /// The output current reached ±`amp.iout` (None without a limit).
    pub current_limited: Option<bool>,
    /// Why the figures are null when the model has them but they would
    /// mislead (the output held at a rail before the step).
    pub reason: Option<&'static str>,
    /// The waveform (empty when it was not computed).
    pub samples: Vec<Sample>,
    /// The window ended in a final mode (so settling can be read).
    pub ended: bool,
}

impl StepResponse {
    fn blank(size_v: f64) -> StepResponse {
        StepResponse {
            size_v,
            ..StepResponse::default()
        }
    }

    /// The settling time to a band `band` of the final value (the last
    /// time |y/final − 1| exceeds it); None where the response does not
    /// settle or below [`SETTLE_FLOOR`], the finest band the method
    /// resolves.
    pub fn settle_to(&self, band: f64) -> Option<f64> {
        if band.is_nan() || band < SETTLE_FLOOR || !self.ended || self.samples.len() < 2 {
            return None;
        }
        let fin = self.final_v.filter(|v| *v != 0.0 && v.is_finite())?;
        Wave {
            s: &self.samples,
            fin,
        }
        .last_outside(band)
    }

    /// The end of the simulated window.
    pub fn window_s(&self) -> Option<f64> {
        self.samples.last().map(|s| s.t)
    }

    /// How much of the waveform a plot shows: half as much again as the
    /// 0.1 % settling time (and past the settling to the stage's own
    /// threshold), or the whole window when it does not settle.
    pub fn view_end(&self) -> Option<f64> {
        let own = self.settle_to_s.map_or(0.0, |t| 1.2 * t);
        self.settle_s[1]
            .filter(|t| *t > 0.0)
            .map(|t| (1.5 * t).max(own))
            .or(self.window_s())
    }

    /// y(t), interpolated on the waveform (None outside it).
    pub fn at(&self, t: f64) -> Option<f64> {
        let s = &self.samples;
        if s.is_empty() || t < 0.0 || t > s[s.len() - 1].t {
            return None;
        }
        let i = s.partition_point(|p| p.t <= t).clamp(1, s.len() - 1);
        Some(hermite(&s[i - 1], &s[i], t))
    }

    /// `n` evenly spaced points (t, y) from 0 to `end`, within the window.
    pub fn sampled(&self, end: f64, n: usize) -> Vec<(f64, f64)> {
        (0..n)
            .map(|i| end * i as f64 / (n.max(2) - 1) as f64)
            .filter_map(|t| self.at(t).map(|y| (t, y)))
            .collect()
    }

    /// `n` evenly spaced samples of y(t) from 0 to twice the 0.01 %
    /// settling time (or to the end of the window when that is undefined).
    pub fn waveform(&self, n: usize) -> (Vec<f64>, Vec<f64>) {
        let Some(end) = self.window_s() else {
            return (Vec::new(), Vec::new());
        };
        let end = self.settle_s[2]
            .filter(|&t| t > 0.0)
            .map_or(end, |t| (2.0 * t).min(end));
        let t: Vec<f64> = (0..n)
            .map(|i| {
                if n > 1 {
                    end * i as f64 / (n - 1) as f64
                } else {
                    0.0
                }
            })
            .collect();
        let v = t.iter().map(|&t| self.at(t).unwrap_or(f64::NAN)).collect();
        (t, v)
    }
}

/// The cubic Hermite interpolant between two samples.
fn hermite(a: &Sample, b: &Sample, t: f64) -> f64 {
    let h = b.t - a.t;
    if h <= 0.0 {
        return b.y;
    }
    let s = (t - a.t) / h;
    let (s2, s3) = (s * s, s * s * s);
    (2.0 * s3 - 3.0 * s2 + 1.0) * a.y
        + (s3 - 2.0 * s2 + s) * h * a.d_after
        + (-2.0 * s3 + 3.0 * s2) * b.y
        + (s3 - s2) * h * b.d_before
}

/// The large-signal limits that apply (only those whose fields are given).
#[derive(Debug, Clone, Copy)]
pub(super) struct Limits {
    slew: Option<f64>,
    rails: Option<(f64, f64)>,
    iout: Option<f64>,
}

pub(super) fn limits_of(s: &Scenario) -> Limits {
    Limits {
        slew: s.amp.slew.filter(|v| *v > 0.0),
        rails: s.supply.map(|p| s.amp.usable_rails(&p)),
        iout: s.amp.iout.filter(|v| *v > 0.0),
    }
}

/// The reduced linear model `z' = A·z + f·E + f0`, `y = c·z + d·E + d0`
/// (`f0`, `d0` from the DC-only EMFs at their levels).
#[derive(Clone)]
pub(super) struct Reduced {
    r: usize,
    a: Mat,
    f: Vec<f64>,
    f0: Vec<f64>,
    pub(super) c: Vec<f64>,
    pub(super) d: f64,
    d0: f64,
    /// z jumps by `jump·ΔE` when the known node steps by ΔE.
    jump: Vec<f64>,
    x1: usize,
    /// The op-amp's second state, when it has a second pole.
    x2: Option<usize>,
    /// The amplifier's output current `i = ci·z + ce·E + ce0` (None where
    /// it is not a function of the states).
    current: Option<(Vec<f64>, f64, f64)>,
    /// Each state as (full unknown, minus this one): a node voltage, a
    /// difference of two, or an op-amp state.
    pub(super) coords: Vec<(usize, Option<usize>)>,
}

/// Union–find over the unknowns.
fn find(parent: &mut [usize], mut i: usize) -> usize {
    while parent[i] != i {
        parent[i] = parent[parent[i]];
        i = parent[i];
    }
    i
}

/// The reduced equations' coordinates: x = to_x·z.
struct Coordinates {
    to_x: Mat,
    /// The unknowns that are states, in order.
    dynamic: Vec<usize>,
    /// For a state that is a difference, the unknown it is taken from.
    reference: Vec<Option<usize>>,
}

/// Capacitor components of `c`: grounded ones keep every node as a state,
/// floating ones the differences to their first node (the common mode is
/// then algebraic).
fn coordinates(c: &Mat) -> Coordinates {
    let m = c.rows;
    let mut parent: Vec<usize> = (0..m).collect();
    for i in 0..m {
        for j in 0..m {
            if i != j && c[(i, j)] != 0.0 {
                let (a, b) = (find(&mut parent, i), find(&mut parent, j));
                parent[a.max(b)] = a.min(b);
            }
        }
    }
    let mut to_x = Mat::identity(m);
    let mut dynamic = Vec::new();
    let mut reference = vec![None; m];
    for root in 0..m {
        let members: Vec<usize> = (0..m)
            .filter(|&i| c[(i, i)] != 0.0 && find(&mut parent, i) == root)
            .collect();
        if members.is_empty() {
            continue;
        }
        let total: f64 = members
            .iter()
            .flat_map(|&i| members.iter().map(move |&j| (i, j)))
            .map(|(i, j)| c[(i, j)])
            .sum();
        let scale: f64 = members.iter().map(|&i| c[(i, i)]).sum();
        if total.abs() > 1e-9 * scale {
            dynamic.extend(&members);
        } else {
            let r0 = members[0];
            for &j in &members[1..] {
                to_x[(j, r0)] = 1.0;
                reference[j] = Some(r0);
                dynamic.push(j);
            }
        }
    }
    dynamic.sort_unstable();
    Coordinates {
        to_x,
        dynamic,
        reference,
    }
}

/// The equations without the known nodes and their branches: G and C on
/// the kept unknowns, the sources' drive β·E and its derivative's γ·Ė, and
/// the constant drive κ of the DC-only EMFs.
struct Kept {
    keep: Vec<usize>,
    g: Mat,
    c: Mat,
    beta: Vec<f64>,
    gamma: Vec<f64>,
    kappa: Vec<f64>,
}

/// `a + b`, exactly `a` when `b` is zero (no DC-only EMF leaves every
/// figure as it was, signed zeros included).
fn plus(a: f64, b: f64) -> f64 {
    if b == 0.0 {
        a
    } else {
        a + b
    }
}

/// Step 1: the known nodes and their branches leave; E (and the held
/// levels) move to the right.
fn without_known(eq: &TimeEquations) -> Kept {
    let n = eq.n;
    let full = |a: &[f64]| Mat {
        rows: n,
        cols: n,
        a: a.to_vec(),
    };
    let gone: Vec<usize> = eq
        .fixed
        .iter()
        .chain(&eq.held)
        .flat_map(|&(k, br, _)| [k, br])
        .collect();
    let keep: Vec<usize> = (0..n).filter(|i| !gone.contains(i)).collect();
    let m = keep.len();
    let (mut beta, mut gamma, mut kappa) = (vec![0.0; m], vec![0.0; m], vec![0.0; m]);
    for (i, &row) in keep.iter().enumerate() {
        beta[i] = eq.b[row];
        kappa[i] = eq.k[row];
        for (j, &(k, _, w)) in eq.fixed.iter().enumerate() {
            beta[i] -= eq.g[row * n + k] * w;
            let dc = eq.c[row * n + k] * w;
            gamma[i] = if j == 0 { dc } else { gamma[i] + dc };
        }
        for &(k, _, level) in &eq.held {
            kappa[i] = plus(kappa[i], -eq.g[row * n + k] * level);
        }
    }
    Kept {
        g: full(&eq.g).select(&keep, &keep),
        c: full(&eq.c).select(&keep, &keep),
        keep,
        beta,
        gamma,
        kappa,
    }
}

/// x = T·z = T_d·z_d + T_a·(P·z_d + p·E): the unknowns from the states
/// (matrix) and from the source (vector).
fn unknowns_from_states(
    to_x: &Mat,
    idx: (&[usize], &[usize]),
    p: (&Mat, &[f64]),
) -> (Mat, Vec<f64>) {
    let (d_idx, a_idx) = idx;
    let m = to_x.rows;
    let (td, ta) = (to_x.select(&all(m), d_idx), to_x.select(&all(m), a_idx));
    if a_idx.is_empty() {
        return (td, vec![0.0; m]);
    }
    let tap = ta.mul(p.0);
    let xz = Mat {
        rows: m,
        cols: d_idx.len(),
        a: td.a.iter().zip(&tap.a).map(|(x, y)| x + y).collect(),
    };
    (xz, ta.mul_vec(p.1))
}

pub(super) fn reduce(eq: &TimeEquations) -> Option<Reduced> {
    let Kept {
        keep,
        g,
        c,
        beta,
        gamma,
        kappa,
    } = without_known(eq);
    let m = keep.len();
    // 2. States from the capacitor graph.
    let Coordinates {
        to_x,
        dynamic,
        reference,
    } = coordinates(&c);
    let algebraic: Vec<usize> = (0..m).filter(|i| !dynamic.contains(i)).collect();
    // Tᵀ·M·T and Tᵀ·v.
    let tt = transpose(&to_x);
    let (gz, cz) = (tt.mul(&g).mul(&to_x), tt.mul(&c).mul(&to_x));
    let (bz, kz, k0z) = (tt.mul_vec(&beta), tt.mul_vec(&gamma), tt.mul_vec(&kappa));
    // 3. Eliminate the algebraic unknowns.
    let (d_idx, a_idx) = (&dynamic, &algebraic);
    let cdd = Lu::factor(&cz.select(d_idx, d_idx))?;
    let gaa = (!a_idx.is_empty())
        .then(|| Lu::factor(&gz.select(a_idx, a_idx)))
        .map_or(Some(None), |lu| lu.map(Some))?;
    let (gdd, gda, gad) = (
        gz.select(d_idx, d_idx),
        gz.select(d_idx, a_idx),
        gz.select(a_idx, d_idx),
    );
    // z_a = P·z_d + p·E + p0
    let (p_mat, p_vec, p0) = match &gaa {
        Some(lu) => (
            lu.solve_mat(&gad).scaled(-1.0),
            lu.solve(&pick(&bz, a_idx)),
            lu.solve(&pick(&k0z, a_idx)),
        ),
        None => (Mat::zeros(0, d_idx.len()), Vec::new(), Vec::new()),
    };
    let r = d_idx.len();
    let schur = gdd.sub(&gda.mul(&p_mat).scaled(-1.0));
    let a = cdd.solve_mat(&schur).scaled(-1.0);
    // The state equations' drive: cdd⁻¹·(v_d − G_da·p).
    let drive = |v: &[f64], p: &[f64]| {
        let mut rhs = pick(v, d_idx);
        for (x, y) in rhs.iter_mut().zip(&gda.mul_vec(p)) {
            *x -= y;
        }
        cdd.solve(&rhs)
    };
    let (f, f0) = (drive(&bz, &p_vec), drive(&k0z, &p0));
    let jump: Vec<f64> = cdd.solve(&pick(&kz, d_idx)).iter().map(|v| -v).collect();
    let (xz, xe) = unknowns_from_states(&to_x, (d_idx, a_idx), (&p_mat, &p_vec));
    let (_, xe0) = unknowns_from_states(&to_x, (d_idx, a_idx), (&p_mat, &p0));
    // The load terminal (never the known node) among the kept unknowns.
    let out = keep.iter().position(|&i| Some(i) == eq.out)?;
    let x1 = d_idx.iter().position(|&i| keep[i] == eq.x1)?;
    let x2 = eq.x2.and_then(|k| d_idx.iter().position(|&i| keep[i] == k));
    let current = amp_current(eq, &keep, &xz, (&xe, &xe0));
    let finite = |v: &[f64]| v.iter().all(|v| v.is_finite());
    (a.is_finite() && finite(&f) && finite(&f0)).then(|| Reduced {
        r,
        c: xz.row(out).to_vec(),
        d: xe[out],
        d0: xe0[out],
        a,
        f,
        f0,
        jump,
        x1,
        x2,
        current,
        coords: d_idx
            .iter()
            .map(|&i| (keep[i], reference[i].map(|r| keep[r])))
            .collect(),
    })
}

/// The amplifier's output current in the states: its weights on them,
/// on the EMF and the constant (`xe`: the kept unknowns' EMF and constant
/// parts); null when a term is not finite or a node is not kept.
fn amp_current(
    eq: &TimeEquations,
    keep: &[usize],
    xz: &Mat,
    (xe, xe0): (&[f64], &[f64]),
) -> Option<(Vec<f64>, f64, f64)> {
    eq.amp_current
        .iter()
        .try_fold(
            (vec![0.0; xz.cols], 0.0, 0.0),
            |(mut ci, ce, ce0), &(u, k)| {
                let row = keep.iter().position(|&i| i == u)?;
                for (c, v) in ci.iter_mut().zip(xz.row(row)) {
                    *c += k * v;
                }
                Some((ci, ce + k * xe[row], plus(ce0, k * xe0[row])))
            },
        )
        .filter(|(ci, ce, ce0)| ci.iter().all(|v| v.is_finite()) && (ce + ce0).is_finite())
}

/// The entries of `v` at `idx`, in order.
fn pick(v: &[f64], idx: &[usize]) -> Vec<f64> {
    idx.iter().map(|&i| v[i]).collect()
}

fn all(n: usize) -> Vec<usize> {
    (0..n).collect()
}

fn transpose(m: &Mat) -> Mat {
    let mut t = Mat::zeros(m.cols, m.rows);
    for i in 0..m.rows {
        for j in 0..m.cols {
            t[(j, i)] = m[(i, j)];
        }
    }
    t
}

/// How the amplifier's first state moves.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Mode {
    Linear,
    SlewUp,
    SlewDown,
    High,
    Low,
    /// The output current held at +iout / −iout.
    SourceLimit,
    SinkLimit,
}

const MODES: [Mode; 7] = [
    Mode::Linear,
    Mode::SlewUp,
    Mode::SlewDown,
    Mode::High,
    Mode::Low,
    Mode::SourceLimit,
    Mode::SinkLimit,
];

impl Mode {
    /// +1 or −1 for a current-limited mode.
    fn current_sign(self) -> Option<f64> {
        match self {
            Mode::SourceLimit => Some(1.0),
            Mode::SinkLimit => Some(-1.0),
            _ => None,
        }
    }
}

/// Steps per block after the first (the first has twice as many).
const BLOCK: usize = 16;
/// Halvings a step may take below h0.
const DEPTH: usize = 14;
/// Blocks at most: the window is at most 2^MAX_BLOCKS·32·h0.
const MAX_BLOCKS: usize = 90;
/// Limit switchings at most (a guard against chattering).
const MAX_EVENTS: usize = 2000;
/// Samples at most: past this no step is halved and the window ends, so
/// a pathological stage costs bounded time (its figures are then null).
const MAX_SAMPLES: usize = 20_000;
/// Interpolation tolerance relative to the final value.
const TOL: f64 = 1e-7;
/// In the linear tail, the interpolation tolerance relative to the
/// remaining deviation from the final value…
const TAIL_TOL: f64 = 1e-4;
/// …but never below this share of the final value.
const TAIL_FLOOR: f64 = 1e-10;
/// The smallest overshoot reported (relative): ten times [`TOL`].
const OVERSHOOT_FLOOR: f64 = 1e-6;

pub(super) struct Sim<'a> {
    red: &'a Reduced,
    lim: Limits,

    h0: f64,
    /// Per mode: the augmented matrix and its ladder of e^{M·h} − I with
    /// h = h0·2^(level − DEPTH).
    mats: Vec<Mat>,
    ladders: Vec<Vec<Option<Mat>>>,
    /// The augmented output row ĉ (y = ĉ·[z; 1]).
    out: Vec<f64>,
    tol: f64,
    pub(super) samples: Vec<Sample>,
    slewed: bool,
    clipped: bool,
    /// The augmented current row (i = ĉi·[z; 1]) and the sum of its
    /// entries on the rows a current-limited mode replaces, when the
    /// current limit applies.
    current: Option<(Vec<f64>, f64)>,
    current_limited: bool,
    /// The linear mode's equilibrium [z∞; 1], from the DC solution of the
    /// full equations (A·z∞ + f·E = 0 solved through the reduced A would
    /// lose the digits its stiffness costs).
    pub(super) rest: Option<Vec<f64>>,
    events: usize,
    last_event: f64,
}

fn mode_index(m: Mode) -> usize {
    MODES.iter().position(|x| *x == m).unwrap_or(0)
}

/// The state matrix [A f; 0 0] of one mode: the linear one as it is; a
/// current limit holds the output current (ĉi·z' = 0 sets the held rows'
/// common rate from the other rows, exactly linear); a slew or rail mode
/// sets x1's rate to the slew rate or to zero.
fn mode_matrix(
    mode: Mode,
    lin: &Mat,
    red: &Reduced,
    lim: &Limits,
    (current, held): (&Option<(Vec<f64>, f64)>, &[usize]),
) -> Mat {
    let r = red.r;
    let mut m = lin.clone();
    if mode.current_sign().is_some() {
        if let Some((row, sum)) = current {
            let mut rate = vec![0.0; r + 1];
            for j in (0..r).filter(|j| !held.contains(j)) {
                for (c, v) in rate.iter_mut().zip(lin.row(j)) {
                    *c -= row[j] * v / sum;
                }
            }
            for &k in held {
                for (c, v) in rate.iter().enumerate() {
                    m[(k, c)] = *v;
                }
            }
        }
        return m;
    }
    let rate = match mode {
        Mode::Linear | Mode::SourceLimit | Mode::SinkLimit => return m,
        Mode::SlewUp => lim.slew.unwrap_or(0.0),
        Mode::SlewDown => -lim.slew.unwrap_or(0.0),
        Mode::High | Mode::Low => 0.0,
    };
    for j in 0..r {
        m[(red.x1, j)] = 0.0;
    }
    m[(red.x1, r)] = rate;
    m
}

impl<'a> Sim<'a> {
    pub(super) fn new(
        red: &'a Reduced,
        lim: Limits,
        e1: f64,
        y0: f64,
        h0: f64,
        scale: f64,
    ) -> Sim<'a> {
        let r = red.r;
        let mut lin = Mat::zeros(r + 1, r + 1);
        for i in 0..r {
            for j in 0..r {
                lin[(i, j)] = red.a[(i, j)];
            }
            lin[(i, r)] = plus(red.f[i] * e1, red.f0[i]);
        }
        // The rows a current-limited mode replaces: the state behind ro
        // (and x1 with it when there are two).
        let held: Vec<usize> = [Some(red.x1), red.x2].into_iter().flatten().collect();
        let current = red
            .current
            .as_ref()
            .filter(|_| lim.iout.is_some())
            .map(|(ci, ce, ce0)| {
                let mut row = ci.clone();
                row.push(plus(ce * e1, *ce0));
                let sum: f64 = held.iter().map(|&k| ci[k]).sum();
                (row, sum)
            })
            .filter(|(_, sum)| *sum != 0.0 && sum.is_finite());
        let mats = MODES
            .iter()
            .map(|&mode| mode_matrix(mode, &lin, red, &lim, (&current, &held)))
            .collect();
        let mut out = red.c.clone();
        out.push(plus(red.d * e1, red.d0) - y0);
        Sim {
            red,
            lim,

            h0,
            mats,
            ladders: vec![vec![None; DEPTH + MAX_BLOCKS + 2]; MODES.len()],
            out,
            tol: TOL * scale,
            samples: Vec::new(),
            slewed: false,
            clipped: false,
            current,
            current_limited: false,
            rest: None,
            events: 0,
            last_event: 0.0,
        }
    }

    fn step_len(&self, level: usize) -> f64 {
        self.h0 * 2f64.powi(level as i32 - DEPTH as i32)
    }

    /// e^{M·h} − I for a ladder level (built by doubling from below).
    fn ladder(&mut self, mode: Mode, level: usize) -> &Mat {
        let k = mode_index(mode);
        if self.ladders[k][level].is_none() {
            let below = (0..level).rev().find(|&l| self.ladders[k][l].is_some());
            let (mut l, mut d) = match below {
                Some(l) => (
                    l,
                    self.ladders[k][l]
                        .clone()
                        .unwrap_or_else(|| Mat::identity(1)),
                ),
                None => (0, expm1(&self.mats[k], self.step_len(0))),
            };
            self.ladders[k][l] = Some(d.clone());
            while l < level {
                d = double_step(&d);
                l += 1;
                self.ladders[k][l] = Some(d.clone());
            }
        }
        self.ladders[k][level].as_ref().expect("filled above")
    }

    fn rate_lin(&self, z: &[f64]) -> f64 {
        let row = self.mats[0].row(self.red.x1);
        row.iter().zip(z).map(|(a, b)| a * b).sum()
    }

    fn y(&self, z: &[f64]) -> f64 {
        self.out.iter().zip(z).map(|(a, b)| a * b).sum()
    }

    fn dy(&self, mode: Mode, z: &[f64]) -> f64 {
        let m = &self.mats[mode_index(mode)];
        let dz = m.mul_vec(z);
        self.out.iter().zip(&dz).map(|(a, b)| a * b).sum()
    }

    /// The amplifier's output current (A), when its limit applies.
    fn current_at(&self, z: &[f64]) -> Option<f64> {
        self.current
            .as_ref()
            .map(|(row, _)| row.iter().zip(z).map(|(a, b)| a * b).sum())
    }

    /// The switching functions of a mode: (value, the mode it leads to);
    /// a mode is left where one becomes positive.
    fn switches(&self, mode: Mode, z: &[f64]) -> [(f64, Mode); 3] {
        let r = self.rate_lin(z);
        let x1 = z[self.red.x1];
        let off = (f64::NEG_INFINITY, mode);
        let slew = |sign: f64, to: Mode| match self.lim.slew {
            Some(sr) => (sign * r - sr, to),
            None => off,
        };
        let rail = |value: f64, to: Mode| match self.lim.rails {
            Some(_) => (value, to),
            None => off,
        };
        let iout = self.lim.iout.unwrap_or(f64::INFINITY);
        let current = |sign: f64| match self.current_at(z) {
            Some(i) => {
                let to = if sign > 0.0 {
                    Mode::SourceLimit
                } else {
                    Mode::SinkLimit
                };
                (sign * i - iout, to)
            }
            None => off,
        };
        let (lo, hi) = self.lim.rails.unwrap_or((f64::NEG_INFINITY, f64::INFINITY));
        match mode {
            Mode::Linear => {
                // Either limit; the rails first when both apply.
                let s = if r >= 0.0 {
                    slew(1.0, Mode::SlewUp)
                } else {
                    slew(-1.0, Mode::SlewDown)
                };
                let c = if x1 >= 0.5 * (lo + hi) || lo == f64::NEG_INFINITY {
                    rail(x1 - hi, Mode::High)
                } else {
                    rail(lo - x1, Mode::Low)
                };
                let i = self.current_at(z).unwrap_or(0.0);
                [c, s, current(if i >= 0.0 { 1.0 } else { -1.0 })]
            }
            Mode::SlewUp => [
                rail(x1 - hi, Mode::High),
                (self.lim.slew.unwrap_or(0.0) - r, Mode::Linear),
                current(1.0),
            ],
            Mode::SlewDown => [
                rail(lo - x1, Mode::Low),
                (self.lim.slew.unwrap_or(0.0) + r, Mode::Linear),
                current(-1.0),
            ],
            Mode::High => [(-r, Mode::Linear), current(1.0), off],
            Mode::Low => [(r, Mode::Linear), current(-1.0), off],
            Mode::SourceLimit | Mode::SinkLimit => self.current_limit_exits(mode, z),
        }
    }

    /// The ways out of a current limit: the rail it pushes towards; back
    /// to the mode the amplifier would otherwise be in (linear or slewing),
    /// where that no longer pushes the current outward; slewing, when the
    /// held rate passes the slew rate.
    fn current_limit_exits(&self, mode: Mode, z: &[f64]) -> [(f64, Mode); 3] {
        let (r, x1) = (self.rate_lin(z), z[self.red.x1]);
        let off = (f64::NEG_INFINITY, mode);
        let sign = mode.current_sign().unwrap_or(1.0);
        let other = match self.lim.slew {
            Some(sr) if r > sr => Mode::SlewUp,
            Some(sr) if r < -sr => Mode::SlewDown,
            _ => Mode::Linear,
        };
        let back = match &self.current {
            Some((row, _)) => {
                let dz = self.mats[mode_index(other)].mul_vec(z);
                let di: f64 = row.iter().zip(&dz).map(|(a, b)| a * b).sum();
                (-sign * di, other)
            }
            None => (1.0, Mode::Linear),
        };
        let held_rate = self.mats[mode_index(mode)].mul_vec(z)[self.red.x1];
        let fast = match self.lim.slew {
            Some(sr) if sign * held_rate > sr => (
                sign * held_rate - sr,
                if sign > 0.0 {
                    Mode::SlewUp
                } else {
                    Mode::SlewDown
                },
            ),
            _ => off,
        };
        let edge = match self.lim.rails {
            Some((_, hi)) if sign > 0.0 => (x1 - hi, Mode::High),
            Some((lo, _)) => (lo - x1, Mode::Low),
            None => off,
        };
        [edge, back, fast]
    }

    /// The mode a state starts in.
    fn mode_at(&self, z: &[f64]) -> Mode {
        let mut mode = Mode::Linear;
        for _ in 0..4 {
            match self.switches(mode, z).iter().find(|(g, _)| *g > 0.0) {
                Some(&(_, to)) if to != Mode::Linear || mode != Mode::Linear => mode = to,
                _ => break,
            }
        }
        mode
    }

    fn push(&mut self, t: f64, y: f64, d_before: f64, d_after: f64) {
        self.samples.push(Sample {
            t,
            y,
            d_before,
            d_after,
        });
    }

    fn enter(&mut self, mode: Mode, z: &mut [f64]) {
        match mode {
            Mode::SlewUp | Mode::SlewDown => self.slewed = true,
            Mode::High | Mode::Low => {
                self.clipped = true;
                if let Some((lo, hi)) = self.lim.rails {
                    z[self.red.x1] = if mode == Mode::High { hi } else { lo };
                }
            }
            Mode::SourceLimit | Mode::SinkLimit => {
                self.current_limited = true;
                // Start exactly at the limit (the event is taken at the
                // end of the finest step, a hair past it).
                let sign = mode.current_sign().unwrap_or(1.0);
                if let Some(k2) = self.red.x2 {
                    z[self.red.x1] = z[k2];
                }
                if let (Some(i), Some((_, sum)), Some(iout)) =
                    (self.current_at(z), &self.current, self.lim.iout)
                {
                    let shift = (sign * iout - i) / sum;
                    z[self.red.x1] += shift;
                    if let Some(k2) = self.red.x2 {
                        z[k2] += shift;
                    }
                }
            }
            Mode::Linear => {}
        }
    }

    /// Advance one step of ladder level `level` from (t, z) in `mode`,
    /// exactly; halve it where the interpolant misses the midpoint or a
    /// limit switches within it, so a switching is taken at the end of a
    /// finest step (h0/16384: its instant is that close). Returns the mode
    /// at the end.
    fn advance(&mut self, mode: Mode, t: f64, z: &mut Vec<f64>, level: usize) -> Mode {
        let h = self.step_len(level);
        // In the linear mode the state moves as its deviation from the
        // equilibrium, so the propagator's rounding scales with that
        // deviation and dies with it (no drift of the level it tends to).
        let rest = self.rest.clone().filter(|_| mode == Mode::Linear);
        let prop = |d: &Mat, z: &[f64]| -> Vec<f64> {
            match &rest {
                Some(zr) => {
                    let w: Vec<f64> = z.iter().zip(zr).map(|(a, b)| a - b).collect();
                    let dw = d.mul_vec(&w);
                    zr.iter()
                        .zip(&w)
                        .zip(&dw)
                        .map(|((r, w), d)| r + w + d)
                        .collect()
                }
                None => {
                    let dz = d.mul_vec(z);
                    z.iter().zip(&dz).map(|(a, b)| a + b).collect()
                }
            }
        };
        let z1 = prop(self.ladder(mode, level), z);
        let zm = (level > 0).then(|| prop(self.ladder(mode, level - 1), z));
        let (y0, y1) = (self.y(z), self.y(&z1));
        let (d0, d1) = (self.dy(mode, z), self.dy(mode, &z1));
        let crossed = |sim: &Self, zz: &[f64]| sim.switches(mode, zz).iter().any(|(g, _)| *g > 0.0);
        let event = crossed(self, &z1) || zm.as_ref().is_some_and(|m| crossed(self, m));
        if let Some(zm) = &zm {
            let ym = self.y(zm);
            let guess = 0.5 * (y0 + y1) + h * (d0 - d1) / 8.0;
            let budget = self.samples.len() < MAX_SAMPLES;
            // In the tail the tolerance follows the deviation from the
            // final level down to TAIL_FLOOR, so a band down to
            // SETTLE_FLOOR is crossed where the model crosses it.
            let tol = match &rest {
                Some(zr) => {
                    let dev = (ym - self.y(zr)).abs();
                    self.tol
                        .min((TAIL_TOL * dev).max(TAIL_FLOOR * self.tol / TOL))
                }
                None => self.tol,
            };
            if budget && ((guess - ym).abs() > tol || event) {
                let m1 = self.advance(mode, t, z, level - 1);
                return self.advance(m1, t + 0.5 * h, z, level - 1);
            }
            let dm = self.dy(mode, zm);
            self.push(t + 0.5 * h, ym, dm, dm);
        }
        *z = z1;
        if !event {
            self.push(t + h, y1, d1, d1);
            return mode;
        }
        // A limit switched within this finest step: switch at its end.
        let (_, to) = self
            .switches(mode, z)
            .into_iter()
            .fold(
                (f64::NEG_INFINITY, mode),
                |a, b| if b.0 > a.0 { b } else { a },
            );
        let mut next = to;
        self.enter(next, z);
        if self.switches(next, z).iter().any(|(g, _)| *g > 0.0) {
            next = self.mode_at(z);
            self.enter(next, z);
        }
        self.events += 1;
        self.last_event = t + h;
        let y = self.y(z);
        let d_after = self.dy(next, z);
        self.push(t + h, y, d1, d_after);
        next
    }

    /// Run from the state z (augmented, t = 0) until the mode is final
    /// and settled or a guard ends the window: the last mode, and whether
    /// the window ended settled. `bound` is the size past which a state
    /// counts as diverging (times 1e12).
    pub(super) fn run(&mut self, z: &mut Vec<f64>, bound: f64) -> (Mode, bool) {
        let mut mode = self.mode_at(z);
        self.enter(mode, z);
        let (y, d) = (self.y(z), self.dy(mode, z));
        self.push(0.0, y, d, d);
        let mut t = 0.0;
        let mut ended = false;
        'blocks: for block in 0..MAX_BLOCKS {
            let (level, steps) = if block == 0 {
                (DEPTH, 2 * BLOCK)
            } else {
                (DEPTH + block, BLOCK)
            };
            let h = self.step_len(level);
            for _ in 0..steps {
                mode = self.advance(mode, t, z, level);
                t += h;
                if !z.iter().all(|v| v.is_finite()) || z.iter().any(|v| v.abs() > 1e12 * bound) {
                    break 'blocks;
                }
                if self.events >= MAX_EVENTS || self.samples.len() >= MAX_SAMPLES {
                    break 'blocks;
                }
            }
            if self.settled(mode, level, t) {
                ended = true;
                break;
            }
        }
        self.samples.retain(|p| p.y.is_finite());
        (mode, ended)
    }

    /// Whether the deviation in a final mode has died out over one step.
    fn settled(&mut self, mode: Mode, level: usize, t: f64) -> bool {
        if matches!(
            mode,
            Mode::SlewUp | Mode::SlewDown | Mode::SourceLimit | Mode::SinkLimit
        ) {
            return false;
        }
        let (r, x1) = (self.red.r, self.red.x1);
        let h = self.step_len(level);
        let d = self.ladder(mode, level);
        let held = mode != Mode::Linear;
        let norm = (0..r)
            .filter(|&i| !(held && i == x1))
            .map(|i| {
                (0..r)
                    .filter(|&j| !(held && j == x1))
                    .map(|j| (d[(i, j)] + if i == j { 1.0 } else { 0.0 }).abs())
                    .sum::<f64>()
            })
            .fold(0.0, f64::max);
        norm <= 0.5 && t - self.last_event >= 30.0 * h
    }
}

/// The closed-loop poles (rad/s): the eigenvalues of the reduced linear
/// model z' = M·z (the generalised eigenvalues of the pencil C·x' + G·x
/// with the source EMF held), small ones to their own relative precision
/// ([`eigenvalues_wide`]). None where the model has no time-domain form.
pub fn closed_loop_poles(net: &Netlist) -> Option<Vec<C64>> {
    let red = reduce(&net.time_equations()?)?;
    eigenvalues_wide(&red.a)
}

/// Relative tolerance of the pole verdict: a pole counts as unstable when
/// its real part exceeds this share of its magnitude (above the rounding
/// of the eigenvalues, far below any margin worth reading).
pub const POLE_TOLERANCE: f64 = 1e-6;

/// Whether poles lie in the right half-plane: any with Re > tol·|p|.
pub fn any_unstable(poles: &[C64]) -> bool {
    poles.iter().any(|p| p.re > POLE_TOLERANCE * p.norm())
}

/// The stage's step response (None where the model has no time-domain
/// form: around a nullor or with an index-2 loop of capacitors and ideal
/// sources).
pub fn step_response(s: &Scenario, net: &Netlist, f_ref: f64, unstable: bool) -> StepResponse {
    let size = s.step_size();
    if unstable || !(f_ref.is_finite() && f_ref > 0.0) {
        return StepResponse::blank(size);
    }
    let Some(eq) = net.time_equations() else {
        return StepResponse::blank(size);
    };
    let Some(red) = reduce(&eq) else {
        return StepResponse::blank(size);
    };
    let mut r = simulate(s, &eq, &red, size, f_ref).unwrap_or_else(|| StepResponse::blank(size));
    r.threshold = s.step.and_then(|x| x.threshold());
    r.settle_to_s = r
        .threshold
        .filter(|_| r.reason.is_none())
        .and_then(|band| r.settle_to(band));
    r
}

/// The DC operating point for an EMF `e` (x1 held at `hold` when given).
pub(super) fn operating_point(eq: &TimeEquations, e: f64, hold: Option<f64>) -> Option<Vec<f64>> {
    let n = eq.n;
    let mut g = Mat {
        rows: n,
        cols: n,
        a: eq.g.clone(),
    };
    let mut b: Vec<f64> =
        eq.b.iter()
            .zip(&eq.k)
            .map(|(v, k)| plus(v * e, *k))
            .collect();
    if let Some(v) = hold {
        for j in 0..n {
            g[(eq.x1, j)] = 0.0;
        }
        g[(eq.x1, eq.x1)] = 1.0;
        b[eq.x1] = v;
    }
    let x = Lu::factor(&g)?.solve(&b);
    x.iter().all(|v| v.is_finite()).then_some(x)
}

/// Which rail a state held at DC sits at (x1 its amplifier state).
pub(super) fn held_reason(lim: &Limits, x1: f64) -> &'static str {
    if lim.rails.is_some_and(|(lo, hi)| x1 >= 0.5 * (lo + hi)) {
        HELD_HIGH
    } else {
        HELD_LOW
    }
}

/// Where x1 sits at DC, held inside the rails.
pub(super) fn dc_state(eq: &TimeEquations, e: f64, lim: &Limits) -> Option<(Vec<f64>, bool)> {
    let x = operating_point(eq, e, None)?;
    match lim.rails {
        Some((lo, hi)) if x[eq.x1] > hi || x[eq.x1] < lo => {
            let rail = x[eq.x1].clamp(lo, hi);
            Some((operating_point(eq, e, Some(rail))?, true))
        }
        _ => Some((x, false)),
    }
}

fn simulate(
    s: &Scenario,
    eq: &TimeEquations,
    red: &Reduced,
    size: f64,
    f_ref: f64,
) -> Option<StepResponse> {
    let lim = limits_of(s);
    let e0 = s.signal_dc().unwrap_or(0.0);
    let e1 = e0 + size;
    let out = eq.out?;
    let (x0, held) = dc_state(eq, e0, &lim)?;
    // Past a rail at the operating point: the amplifier is not in its
    // linear range before the step, and figures read off a waveform that
    // starts there would mislead (the waveform is kept for the plot).
    let reason = held.then(|| held_reason(&lim, x0[eq.x1]));
    let y0 = x0[out];
    // z(0⁻) from the full unknowns: the dynamic coordinates are node
    // voltages, differences of them, or the op-amp's states.
    let z0 = states_of(red, &x0);
    let mut z: Vec<f64> = z0
        .iter()
        .zip(&red.jump)
        .map(|(v, j)| v + j * size)
        .collect();
    z.push(1.0);
    let linear_final = operating_point(eq, e1, None)?[out] - y0;
    let scale = linear_final.abs().max(size.abs() * 1e-6).max(1e-15);
    let h0 = 1.0 / (32.0 * f_ref);
    let mut sim = Sim::new(red, lim, e1, y0, h0, scale);
    let mut rest = states_of(red, &operating_point(eq, e1, None)?);
    rest.push(1.0);
    sim.rest = Some(rest);
    let (mode, ended) = sim.run(&mut z, 1.0 + e1.abs() + scale);
    let final_v = if ended {
        match mode {
            Mode::Linear => Some(linear_final),
            Mode::High | Mode::Low => {
                let rail = z[red.x1];
                Some(operating_point(eq, e1, Some(rail))?[out] - y0)
            }
            _ => None,
        }
    } else {
        None
    };
    let mut r = StepResponse {
        size_v: size,
        final_v,
        slew_limited: Some(sim.slewed),
        clipped: Some(sim.clipped),
        current_limited: sim.current.is_some().then_some(sim.current_limited),
        samples: std::mem::take(&mut sim.samples),
        ended,
        reason,
        ..StepResponse::default()
    };
    if reason.is_some() {
        r.final_v = None;
        r.ended = false;
        return Some(r);
    }
    figures(&mut r, ended);
    Some(r)
}

/// The reduced coordinates of a full solution vector.
pub(super) fn states_of(red: &Reduced, x: &[f64]) -> Vec<f64> {
    red.coords
        .iter()
        .map(|&(i, minus)| x[i] - minus.map_or(0.0, |j| x[j]))
        .collect()
}

/// Points inside one interpolation interval where crossings are looked for.
const SUB: usize = 8;

/// The waveform's interpolants, normalised to the final value.
struct Wave<'s> {
    s: &'s [Sample],
    fin: f64,
}

impl Wave<'_> {
    /// q = y/final on interval i at t.
    fn q(&self, i: usize, t: f64) -> f64 {
        hermite(&self.s[i - 1], &self.s[i], t) / self.fin
    }

    /// Interval i sampled at SUB + 1 points (t, q).
    fn points(&self, i: usize) -> impl Iterator<Item = (f64, f64)> + '_ {
        let (a, b) = (self.s[i - 1].t, self.s[i].t);
        (0..=SUB).map(move |k| {
            let t = a + (b - a) * k as f64 / SUB as f64;
            (t, self.q(i, t))
        })
    }

    /// Where on interval i between lo (outside) and hi `inside` starts.
    fn bisect(&self, i: usize, mut lo: f64, mut hi: f64, inside: impl Fn(f64) -> bool) -> f64 {
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if inside(self.q(i, mid)) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        0.5 * (lo + hi)
    }

    /// The first time q reaches a level (from below).
    fn first(&self, level: f64) -> Option<f64> {
        if self.s[0].y / self.fin >= level {
            return Some(0.0);
        }
        for i in 1..self.s.len() {
            let mut prev = self.s[i - 1].t;
            for (t, v) in self.points(i) {
                if v >= level {
                    return Some(self.bisect(i, prev, t, |v| v >= level));
                }
                prev = t;
            }
        }
        None
    }

    /// The largest q and when: the best sub-point, refined around it.
    fn peak(&self) -> (f64, f64) {
        let mut best = (f64::NEG_INFINITY, 0.0, 1, 0);
        for i in 1..self.s.len() {
            for (k, (t, v)) in self.points(i).enumerate() {
                if v > best.0 {
                    best = (v, t, i, k);
                }
            }
        }
        let (_, _, i, k) = best;
        let (a, b) = (self.s[i - 1].t, self.s[i].t);
        let width = (b - a) / SUB as f64;
        let lo = (a + width * (k as f64 - 1.0)).max(a);
        let hi = (a + width * (k as f64 + 1.0)).min(b);
        // A bracket 1e-12 of its width, never below the doubles' spacing.
        let tol = (1e-12 * (hi - lo))
            .max(8.0 * f64::EPSILON * hi.abs())
            .max(f64::MIN_POSITIVE);
        let (t, v) = refine_max_to(lo, hi, tol, |t| self.q(i, t));
        if v > best.0 {
            (v, t)
        } else {
            (best.0, best.1)
        }
    }

    /// The last time |q − 1| exceeds `band` (0 if never; None when the
    /// window ends outside it).
    fn last_outside(&self, band: f64) -> Option<f64> {
        let out = |v: f64| (v - 1.0).abs() > band;
        let s = self.s;
        if out(s[s.len() - 1].y / self.fin) {
            return None;
        }
        for i in (1..s.len()).rev() {
            let pts: Vec<(f64, f64)> = self.points(i).collect();
            if let Some(j) = (0..pts.len()).rev().find(|&j| out(pts[j].1)) {
                let hi = pts[(j + 1).min(pts.len() - 1)].0;
                return Some(self.bisect(i, pts[j].0, hi, |v| !out(v)));
            }
        }
        Some(0.0)
    }
}

/// The figures read off the waveform's interpolants.
fn figures(r: &mut StepResponse, ended: bool) {
    let Some(fin) = r.final_v.filter(|v| *v != 0.0 && v.is_finite()) else {
        return;
    };
    if r.samples.len() < 2 {
        return;
    }
    let w = Wave { s: &r.samples, fin };
    let (t10, t90) = (w.first(0.1), w.first(0.9));
    let rise = t10.zip(t90).map(|(a, b)| b - a);
    let (peak_q, peak_t) = w.peak();
    // Below OVERSHOOT_FLOOR an excess is the interpolation's own error
    // (TOL) on a response that creeps up to its final value: none.
    let over = peak_q - 1.0;
    let over = if over > OVERSHOOT_FLOOR { over } else { 0.0 };
    let settle = BANDS.map(|band| w.last_outside(band).filter(|_| ended));
    r.rise_s = rise;
    r.rise_start_s = t10.filter(|_| rise.is_some());
    r.overshoot_pct = Some(100.0 * over);
    r.peak_time_s = (over > 0.0).then_some(peak_t);
    r.settle_s = settle;
}

/// Waveforms to draw side by side, `n` samples each from 0 to `end`: in
/// volts, or each divided by its own final value when the stages step by
/// different sizes or settle more than twice apart (one would lie flat on
/// the other's scale). True when divided.
pub fn shown_waves(
    responses: &[&StepResponse],
    end: f64,
    n: usize,
) -> (Vec<Vec<(f64, f64)>>, bool) {
    let comparable = |a: &StepResponse, b: &StepResponse| {
        let ratio = match (a.final_v, b.final_v) {
            (Some(x), Some(y)) if x != 0.0 && y != 0.0 => (x / y).abs(),
            _ => 1.0,
        };
        a.size_v == b.size_v && (0.5..=2.0).contains(&ratio)
    };
    let same = responses.windows(2).all(|w| comparable(w[0], w[1]));
    let waves = responses
        .iter()
        .map(|r| {
            let w = r.sampled(end, n);
            match (same, r.final_v) {
                (false, Some(f)) if f != 0.0 => w.into_iter().map(|(t, v)| (t, v / f)).collect(),
                _ => w,
            }
        })
        .collect();
    (waves, !same)
}
