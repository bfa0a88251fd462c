//! One analysis call: every figure the views show, from one netlist solved
//! by modified nodal analysis at each frequency (one LU per point).

pub use super::netlist::MAX_NOISE;
use super::netlist::{AmpModel, Coupling, LoadState, Netlist, NoiseKind};
use super::scenario::{present, Scenario, Topology};
use super::solver::{Lu, Vector, MAXN, ZERO};
use num_complex::Complex64 as C64;
use std::cell::RefCell;
use std::f64::consts::PI;

/// Default sweep: 0.01 Hz to 1 GHz.
pub const SWEEP_START_HZ: f64 = 0.01;
pub const SWEEP_STOP_HZ: f64 = 1.0e9;
/// Points per decade of the sweep.
pub const POINTS_PER_DECADE: usize = 30;

/// Input impedances above this are reported as open (the solve cannot
/// resolve them against the source's own current).
pub const ZIN_OPEN_OHM: f64 = 1.0e15;

/// Everything solved at one frequency.
#[derive(Debug, Clone, Copy)]
pub struct Point {
    pub f_hz: f64,
    /// Closed-loop gain V(out)/V(source EMF).
    pub gain: C64,
    /// Loop gain (return ratio of the controlled source).
    pub loop_gain: C64,
    /// Output impedance at the load terminal, load removed, riso included
    /// (source EMF shorted, its r in place).
    pub zout: C64,
    /// Output impedance at the amplifier's output pin (before riso), with
    /// riso and the load removed (source EMF shorted, its r in place).
    pub zout_pin: C64,
    /// Input impedance seen by the source, source r excluded; None = open.
    pub zin: Option<C64>,
    /// Output noise density contributions, V²/Hz, in netlist noise order.
    pub noise_psd: [f64; MAX_NOISE],
    /// The signal inside the stage, per volt of source EMF.
    pub signals: Signals,
}

/// Where the signal goes inside the stage, per volt of source EMF.
#[derive(Debug, Clone, Copy, Default)]
pub struct Signals {
    /// The load terminal (the closed-loop gain).
    pub out: C64,
    /// The internal output V(int) = A(s)·vd, behind ro.
    pub int: C64,
    /// The + input pin (outside the offset and noise generator).
    pub pin: C64,
    /// The current out of the amplifier, through ro (A per volt).
    pub amp_i: C64,
}

impl Point {
    pub fn noise_density(&self) -> f64 {
        self.noise_psd.iter().sum::<f64>().sqrt()
    }
}

/// A netlist ready to be evaluated at any frequency.
pub struct Circuit {
    pub net: Netlist,
    /// Reused matrix storage, so a point costs no large copies.
    work: RefCell<Lu>,
}

impl Circuit {
    pub fn new(s: &Scenario) -> Circuit {
        Circuit {
            net: Netlist::build(s, AmpModel::Real),
            work: RefCell::new(Lu::zeroed()),
        }
    }

    /// Stamp and factor the matrix at s into the workspace.
    fn factor_at(&self, s: C64) -> Option<std::cell::RefMut<'_, Lu>> {
        let mut lu = self.work.borrow_mut();
        self.net.stamp_into(s, lu.matrix(), LoadState::Attached);
        lu.factor_in_place(self.net.dim).ok()?;
        Some(lu)
    }

    /// The driving-point impedance at `node` with the load removed from
    /// the matrix: one more factorisation, for the points where taking the
    /// load out of the loaded impedance would cancel digits. At the
    /// amplifier pin this is Zout_pin: without the load, riso carries no
    /// current and the load terminal floats.
    fn unloaded_at(&self, s: C64, node: Option<usize>) -> Option<C64> {
        let net = &self.net;
        let o = node?;
        let mut m = [[ZERO; MAXN]; MAXN];
        net.stamp_into(s, &mut m, LoadState::Removed);
        let lu = Lu::factor(m, net.dim).ok()?;
        let mut e = [ZERO; MAXN];
        e[o] = C64::new(1.0, 0.0);
        Some(lu.solve(&e)[o])
    }

    /// The impedance at `node` without the shunt `y` that the loaded
    /// driving-point impedance `z_par` includes: 1/(1/Z∥ − y), solved again
    /// without the load when that subtraction would lose more than about
    /// six digits (a high impedance behind a low load).
    fn unshunted(&self, s: C64, node: Option<usize>, z_par: C64, y: C64) -> C64 {
        if y == ZERO {
            return z_par;
        }
        let kept = C64::new(1.0, 0.0) - y * z_par;
        if kept.norm() > 1e-6 {
            return z_par / kept;
        }
        self.unloaded_at(s, node).unwrap_or(z_par / kept)
    }

    /// Zout_pin: the driving-point impedance at the amplifier's output pin
    /// (one more pair of triangular solves with the same factors), with
    /// the riso + load branch taken out.
    fn zout_pin(&self, lu: &Lu, s: C64) -> C64 {
        let net = &self.net;
        let Some(a) = net.amp_node else {
            return ZERO;
        };
        let mut e = [ZERO; MAXN];
        e[a] = C64::new(1.0, 0.0);
        let z_par = lu.solve(&e)[a];
        self.unshunted(s, net.amp_node, z_par, net.pin_shunt_admittance(s))
    }

    /// Like [`Circuit::eval`], with all-zero figures where the matrix is
    /// singular (never for a valid scenario).
    pub fn eval_or_blank(&self, f_hz: f64) -> Point {
        self.eval(f_hz).unwrap_or(Point {
            f_hz,
            gain: ZERO,
            loop_gain: ZERO,
            zout: ZERO,
            zout_pin: ZERO,
            zin: None,
            noise_psd: [0.0; MAX_NOISE],
            signals: Signals::default(),
        })
    }

    /// The signals of a solution vector at s.
    fn signals_of(&self, s: C64, x: &[C64]) -> Signals {
        let net = &self.net;
        Signals {
            out: Netlist::node_v(x, net.out),
            int: net.int_v(s, x),
            pin: Netlist::node_v(x, net.inp),
            amp_i: net.amp_current(s, x),
        }
    }

    /// The signals at one frequency (one LU, one solve), or zeros where
    /// the matrix is singular.
    pub fn signals_at(&self, f_hz: f64) -> Signals {
        let s = C64::new(0.0, 2.0 * PI * f_hz);
        match self.factor_at(s) {
            Some(lu) => {
                let x = lu.solve(&self.net.drive_rhs());
                self.signals_of(s, &x[..self.net.dim])
            }
            None => Signals::default(),
        }
    }

    /// Solve the full matrix at one frequency for several right-hand
    /// sides with one factorisation.
    pub fn solve_at(&self, f_hz: f64, rhs: &[Vector]) -> Option<Vec<Vector>> {
        let lu = self.factor_at(C64::new(0.0, 2.0 * PI * f_hz))?;
        Some(rhs.iter().map(|b| lu.solve(b)).collect())
    }

    /// The gain solve (source EMF = 1 V) and the amplifier-row solve in
    /// one pass: the solution vector, the closed-loop gain and the loop
    /// gain (Sherman–Morrison: T = A·y/(1 − A·y)).
    fn gain_and_loop_solve(&self, lu: &Lu, s: C64) -> (Vector, C64, C64) {
        let net = &self.net;
        let mut e = [ZERO; MAXN];
        e[net.amp_row] = C64::new(1.0, 0.0);
        let (mut x, mut w) = ([ZERO; MAXN], [ZERO; MAXN]);
        lu.solve_pair(&net.drive_rhs(), &e, &mut x, &mut w);
        let gain = Netlist::node_v(&x[..net.dim], net.out);
        let ay = net.loop_factor(s) * net.minus_vd(&w[..net.dim]);
        (x, gain, ay / (C64::new(1.0, 0.0) - ay))
    }

    /// Closed-loop gain and loop gain only (for the refinements), or zeros
    /// where the matrix is singular.
    pub fn gain_and_loop(&self, f_hz: f64) -> (C64, C64) {
        let s = C64::new(0.0, 2.0 * PI * f_hz);
        match self.factor_at(s) {
            Some(lu) => {
                let (_, gain, loop_gain) = self.gain_and_loop_solve(&lu, s);
                (gain, loop_gain)
            }
            None => (ZERO, ZERO),
        }
    }

    /// Solve at frequency f (f = 0 is DC). None if the matrix is singular.
    pub fn eval(&self, f_hz: f64) -> Option<Point> {
        let net = &self.net;
        let s = C64::new(0.0, 2.0 * PI * f_hz);
        let lu = self.factor_at(s)?;
        let n = net.dim;

        // Gain, loop gain and Zin: source EMF = 1 V.
        let (x, gain, loop_gain) = self.gain_and_loop_solve(&lu, s);
        let i_in = net.source_current(&x[..n]);
        let v_term = Netlist::node_v(&x[..n], net.term);
        let zin = if i_in == ZERO {
            None
        } else {
            let z = v_term / i_in;
            let m2 = z.norm_sqr();
            (m2.is_finite() && m2 < ZIN_OPEN_OHM * ZIN_OPEN_OHM).then_some(z)
        };

        // Adjoint: transimpedance from every node/branch to V(out).
        let mut z = [ZERO; MAXN];
        if let Some(o) = net.out {
            let mut eo = [ZERO; MAXN];
            eo[o] = C64::new(1.0, 0.0);
            lu.solve_transposed_into(&eo, &mut z);
        }
        let z_par = Netlist::node_v(&z[..n], net.out);
        let zout = self.unshunted(s, net.out, z_par, net.load_admittance(s));
        let zout_pin = self.zout_pin(&lu, s);
        let mut noise_psd = [0.0; MAX_NOISE];
        for (k, src) in net.noise.iter().enumerate() {
            let h = match src.coupling {
                Coupling::Current(a, b) => Netlist::node_v(&z, a) - Netlist::node_v(&z, b),
                Coupling::Branch(r) => z[r],
            };
            noise_psd[k] = h.norm_sqr() * src.density(f_hz);
        }
        Some(Point {
            f_hz,
            gain,
            loop_gain,
            zout,
            zout_pin,
            zin,
            noise_psd,
            signals: self.signals_of(s, &x[..n]),
        })
    }
}

/// The frequency sweep, in plot-ready form.
#[derive(Debug, Clone, Default)]
pub struct Sweep {
    pub points: Vec<Point>,
    /// arg T in degrees, unwrapped continuously from DC.
    pub loop_phase_deg: Vec<f64>,
}

/// One noise source's part of the total.
#[derive(Debug, Clone, PartialEq)]
pub struct NoiseShare {
    pub key: &'static str,
    pub label: &'static str,
    pub kind: NoiseKind,
    /// rms over the band, V.
    pub rms: f64,
    /// Fraction of the total noise power over the band (the shares sum to 1).
    pub share: f64,
}

/// All results of one scenario.
#[derive(Debug, Clone)]
pub struct Analysis {
    /// What the designer means: 1 + rf/rg, −rf/rg, or 1 for a follower.
    pub nominal_gain: f64,
    /// The DC gain of the passive network around an ideal amplifier
    /// (source resistance, riso and load included).
    pub ideal_gain: f64,
    pub dc_gain: f64,
    pub gain_error: f64,
    pub f_3db_hz: Option<f64>,
    pub peaking_db: f64,
    pub loop_gain_dc: f64,
    pub crossover_hz: Option<f64>,
    pub phase_margin_deg: Option<f64>,
    pub gain_margin_db: Option<f64>,
    /// Where arg T first reaches −180°.
    pub phase_180_hz: Option<f64>,
    /// Phase margin of the same stage without the load capacitance (only
    /// computed when there is one).
    pub phase_margin_without_load_c: Option<f64>,
    pub zout_dc_ohm: f64,
    pub zin_dc_ohm: Option<f64>,
    /// |Zout| at 1 kHz.
    pub zout_1khz_ohm: Option<f64>,
    /// |Zout| where the spec holds it ([`zout_probe_hz`]).
    pub zout_at_ohm: Option<f64>,
    pub noise_density_1khz: f64,
    pub noise_rms: f64,
    pub noise_sources: Vec<NoiseShare>,
    pub sweep: Sweep,
    /// The point at DC.
    pub dc: Point,
    /// DC errors and signal limits (their figures are None without their
    /// inputs).
    pub limits: super::limits::Limits,
    /// The response to a step of the source EMF (time domain).
    pub step: super::step::StepResponse,
}

/// Wrap an angle in degrees into (−180, 180].
pub fn principal_deg(d: f64) -> f64 {
    let mut x = d % 360.0;
    if x <= -180.0 {
        x += 360.0;
    } else if x > 180.0 {
        x -= 360.0;
    }
    x
}

/// Phase of z in degrees, principal value in (−180, 180].
pub fn phase_deg(z: C64) -> f64 {
    principal_deg(z.arg().to_degrees())
}

/// arg z unwrapped to the branch nearest `reference` (degrees).
pub fn unwrap_near(z: C64, reference: f64) -> f64 {
    let p = z.arg().to_degrees();
    p + 360.0 * ((reference - p) / 360.0).round()
}

/// Most sweep points, whatever the band (18 decades at 30 per decade fit).
const MAX_SWEEP_POINTS: usize = 2000;

/// `per_decade` log-spaced frequencies from `lo` to `hi` (both ends
/// included; at most [`MAX_SWEEP_POINTS`]).
pub fn log_grid(lo: f64, hi: f64, per_decade: f64) -> Vec<f64> {
    let decades = hi.log10() - lo.log10();
    if !(decades.is_finite() && decades > 0.0) {
        return vec![lo];
    }
    let n = ((decades * per_decade).ceil() as usize).clamp(1, MAX_SWEEP_POINTS);
    (0..=n)
        .map(|i| lo * 10f64.powf(decades * i as f64 / n as f64))
        .collect()
}

/// The log-spaced sweep frequencies from `lo` to `hi`.
pub fn sweep_frequencies(lo: f64, hi: f64) -> Vec<f64> {
    log_grid(lo, hi, POINTS_PER_DECADE as f64)
}

/// The bracket around the first sweep point `i` where a condition holds:
/// the point before it, or far below the first point.
fn bracket(freqs: impl Fn(usize) -> f64, i: usize) -> (f64, f64) {
    let below = if i == 0 {
        freqs(0) * 1e-3
    } else {
        freqs(i - 1)
    };
    (below, freqs(i))
}

/// Refine a sign change of g(f) between fa and fb on ln f.
fn refine_between(fa: f64, fb: f64, g: impl Fn(f64) -> f64) -> f64 {
    refine_root(fa.ln(), fb.ln(), |x| g(x.exp())).exp()
}

/// Find x in [a, b] where g changes sign (g(a), g(b) of opposite signs),
/// on x = ln f, by the Illinois variant of regula falsi.
fn refine_root(mut a: f64, mut b: f64, g: impl Fn(f64) -> f64) -> f64 {
    let (mut ga, mut gb) = (g(a), g(b));
    if ga == 0.0 {
        return a;
    }
    if gb == 0.0 {
        return b;
    }
    let mut side = 0;
    for _ in 0..60 {
        let c = if (ga - gb).abs() > 0.0 {
            (a * gb - b * ga) / (gb - ga)
        } else {
            0.5 * (a + b)
        };
        let c = if c.is_finite() && c > a.min(b) && c < a.max(b) {
            c
        } else {
            0.5 * (a + b)
        };
        let gc = g(c);
        if gc == 0.0 || (b - a).abs() < 1e-12 * (1.0 + c.abs()) {
            return c;
        }
        if gc.signum() == gb.signum() {
            b = c;
            gb = gc;
            if side == -1 {
                ga *= 0.5;
            }
            side = -1;
        } else {
            a = c;
            ga = gc;
            if side == 1 {
                gb *= 0.5;
            }
            side = 1;
        }
        if (b - a).abs() < 1e-10 {
            break;
        }
    }
    0.5 * (a + b)
}

/// First fall of |T| through 1 on a grid of (f, T, unwrapped arg T in
/// degrees), refined on ln f: (crossover Hz, phase margin degrees).
fn crossover(
    t_dc: C64,
    grid: &[(f64, C64, f64)],
    loop_at: impl Fn(f64) -> C64,
) -> Option<(f64, f64)> {
    if t_dc.norm() < 1.0 {
        return None;
    }
    let i = grid.iter().position(|g| g.1.norm() < 1.0)?;
    let (fa, fb) = bracket(|k| grid[k].0, i);
    let ref_phase = if i == 0 {
        unwrap_near(t_dc, 0.0)
    } else {
        grid[i - 1].2
    };
    let fc = refine_between(fa, fb, |f| loop_at(f).norm_sqr().ln());
    Some((fc, 180.0 + unwrap_near(loop_at(fc), ref_phase)))
}

/// Maximise g on [a, b] by golden-section search (to 1e-6 in its unit).
pub(super) fn refine_max(a: f64, b: f64, g: impl Fn(f64) -> f64) -> (f64, f64) {
    refine_max_to(a, b, 1e-6, g)
}

/// Maximise g on [a, b] by golden-section search until the bracket is
/// `tol` wide: (where, the maximum).
pub(super) fn refine_max_to(
    mut a: f64,
    mut b: f64,
    tol: f64,
    g: impl Fn(f64) -> f64,
) -> (f64, f64) {
    let r = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - r * (b - a);
    let mut d = a + r * (b - a);
    let (mut gc, mut gd) = (g(c), g(d));
    while (b - a).abs() > tol {
        if gc > gd {
            b = d;
            d = c;
            gd = gc;
            c = b - r * (b - a);
            gc = g(c);
        } else {
            a = c;
            c = d;
            gc = gd;
            d = a + r * (b - a);
            gd = g(d);
        }
    }
    if gc > gd {
        (c, gc)
    } else {
        (d, gd)
    }
}

/// ∫ S df over [f1, f2] for a density that follows a power law between the
/// end values (exact for white and 1/f stretches).
fn segment_integral(f1: f64, s1: f64, f2: f64, s2: f64) -> f64 {
    if s1 <= 0.0 || s2 <= 0.0 {
        return 0.5 * (s1 + s2) * (f2 - f1);
    }
    let l = (f2 / f1).ln();
    let alpha = (s2 / s1).ln() / l;
    let bexp = (alpha + 1.0) * l;
    let factor = if bexp.abs() < 1e-12 {
        1.0
    } else {
        bexp.exp_m1() / bexp
    };
    s1 * f1 * l * factor
}

/// Integrated noise power per source over the band, V².
fn band_power(points: &[Point], lo: f64, hi: f64, n_src: usize) -> Vec<f64> {
    let mut p = vec![0.0; n_src];
    for w in points.windows(2) {
        let (a, b) = (&w[0], &w[1]);
        if b.f_hz <= lo || a.f_hz >= hi {
            continue;
        }
        for (k, acc) in p.iter_mut().enumerate() {
            *acc += segment_integral(a.f_hz, a.noise_psd[k], b.f_hz, b.noise_psd[k]);
        }
    }
    p
}

/// The gain the resistor ratio sets: 1 + rf/rg, −rf/rg, or 1.
pub fn nominal_gain(s: &Scenario) -> f64 {
    let (rg, rf) = (s.stage.rg.unwrap_or(0.0), s.stage.rf.unwrap_or(0.0));
    match s.stage.topology {
        Topology::NonInverting => 1.0 + rf / rg,
        Topology::Inverting => -rf / rg,
        Topology::Follower => 1.0,
    }
}

/// The DC gain of the same passive network around a nullor.
fn ideal_gain(s: &Scenario) -> f64 {
    let ideal = Netlist::build(s, AmpModel::Nullor);
    Lu::factor(ideal.stamp(ZERO), ideal.dim)
        .ok()
        .map(|lu| Netlist::node_v(&lu.solve(&ideal.drive_rhs()), ideal.out).re)
        .unwrap_or(f64::NAN)
}

/// The sweep, widened to cover the band, with the band edges as points and
/// the loop phase unwrapped from DC.
fn run_sweep(circuit: &Circuit, band: (f64, f64), dc: &Point, per_decade: f64) -> Sweep {
    let (band_lo, band_hi) = band;
    let mut freqs = log_grid(
        SWEEP_START_HZ.min(band_lo),
        SWEEP_STOP_HZ.max(band_hi),
        per_decade,
    );
    // A coarser sweep keeps the full density inside the band, where the
    // noise is integrated on the points.
    if per_decade < POINTS_PER_DECADE as f64 {
        freqs.retain(|f| *f < band_lo || *f > band_hi);
        freqs.extend(sweep_frequencies(band_lo, band_hi));
        freqs.sort_by(f64::total_cmp);
    }
    for f in [band_lo, band_hi] {
        if let Err(i) = freqs.binary_search_by(|x| x.total_cmp(&f)) {
            freqs.insert(i, f);
        }
    }
    let points: Vec<Point> = freqs.iter().map(|&f| circuit.eval_or_blank(f)).collect();
    let mut loop_phase_deg = Vec::with_capacity(points.len());
    let mut prev = unwrap_near(dc.loop_gain, 0.0);
    for p in &points {
        prev = unwrap_near(p.loop_gain, prev);
        loop_phase_deg.push(prev);
    }
    Sweep {
        points,
        loop_phase_deg,
    }
}

/// f−3dB: the first fall of |H| through |dc|/√2.
fn f_3db(circuit: &Circuit, points: &[Point], dc_gain: f64) -> Option<f64> {
    let target = dc_gain.abs() / 2f64.sqrt();
    let i = points.iter().position(|p| p.gain.norm() < target)?;
    let (fa, fb) = bracket(|k| points[k].f_hz, i);
    Some(refine_between(fa, fb, |f| {
        0.5 * circuit.gain_and_loop(f).0.norm_sqr().ln() - target.ln()
    }))
}

/// Peaking: the largest |H| relative to DC, in dB (never below 0).
fn peaking_db(circuit: &Circuit, points: &[Point], dc_gain: f64) -> f64 {
    let (imax, _) = points
        .iter()
        .enumerate()
        .fold((0, 0.0), |(bi, bv), (i, p)| {
            let m = p.gain.norm();
            if m > bv {
                (i, m)
            } else {
                (bi, bv)
            }
        });
    let on_grid = points[imax].gain.norm();
    let peak = if imax > 0 && imax + 1 < points.len() {
        let (a, b) = (points[imax - 1].f_hz.ln(), points[imax + 1].f_hz.ln());
        let (_, v) = refine_max(a, b, |x| circuit.gain_and_loop(x.exp()).0.norm());
        v.max(on_grid)
    } else {
        on_grid
    };
    if dc_gain != 0.0 {
        (20.0 * (peak / dc_gain.abs()).log10()).max(0.0)
    } else {
        0.0
    }
}

/// The loop on a sweep as (f, T, unwrapped arg T).
fn loop_grid(sweep: &Sweep) -> Vec<(f64, C64, f64)> {
    sweep
        .points
        .iter()
        .zip(&sweep.loop_phase_deg)
        .map(|(p, ph)| (p.f_hz, p.loop_gain, *ph))
        .collect()
}

/// Gain margin and where the unwrapped loop phase first reaches −180°.
fn gain_margin(circuit: &Circuit, sweep: &Sweep, t_dc: C64) -> Option<(f64, f64)> {
    let phases = &sweep.loop_phase_deg;
    let i = phases.iter().position(|&p| p <= -180.0)?;
    let (fa, fb) = bracket(|k| sweep.points[k].f_hz, i);
    let ref_phase = if i == 0 {
        unwrap_near(t_dc, 0.0)
    } else {
        phases[i - 1]
    };
    let loop_at = |f: f64| circuit.gain_and_loop(f).1;
    let f180 = refine_between(fa, fb, |f| unwrap_near(loop_at(f), ref_phase) + 180.0);
    let t = loop_at(f180).norm();
    (t > 0.0).then(|| (-20.0 * t.log10(), f180))
}

/// What the load capacitance costs: the phase margin of the same loop
/// without it, on a coarse grid (4 points per decade) up to its crossover.
fn margin_without_load_c(s: &Scenario, lo: f64, hi: f64) -> Option<f64> {
    let mut bare = s.clone();
    bare.load.c = None;
    let c2 = Circuit::new(&bare);
    let t0 = c2.gain_and_loop(0.0).1;
    let mut grid = Vec::new();
    let mut prev = unwrap_near(t0, 0.0);
    for f in log_grid(lo, hi, 4.0) {
        let t = c2.gain_and_loop(f).1;
        prev = unwrap_near(t, prev);
        grid.push((f, t, prev));
        if t.norm() < 1.0 {
            break;
        }
    }
    crossover(t0, &grid, |f| c2.gain_and_loop(f).1).map(|(_, pm)| pm)
}

/// Each noise source's rms over the band and share of the total power;
/// the total rms.
fn noise_shares(net: &Netlist, points: &[Point], band: (f64, f64)) -> (Vec<NoiseShare>, f64) {
    let powers = band_power(points, band.0, band.1, net.noise.len());
    let total: f64 = powers.iter().sum();
    let shares = net
        .noise
        .iter()
        .zip(&powers)
        .map(|(src, &pw)| NoiseShare {
            key: src.key,
            label: src.label,
            kind: src.kind,
            rms: pw.sqrt(),
            share: if total > 0.0 { pw / total } else { 0.0 },
        })
        .collect();
    (shares, total.sqrt())
}

/// How thoroughly [`analyze_to`] works.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Depth {
    /// Sweep points per decade.
    pub per_decade: f64,
    /// Whether to run the step response.
    pub step: bool,
    /// Whether to find the phase margin without the load capacitance.
    pub bare_margin: bool,
}

/// Everything, on the full sweep: the reports and the workbench.
pub const FULL: Depth = Depth {
    per_decade: POINTS_PER_DECADE as f64,
    step: true,
    bare_margin: true,
};

/// One spread trial: a third of the sweep points outside the band (the
/// figures are refined between them, and the band keeps its points for
/// the noise, so they agree with [`FULL`] to the report's precision; a
/// test checks it), no step unless a limit needs it.
pub const TRIAL: Depth = Depth {
    per_decade: 10.0,
    step: false,
    bare_margin: false,
};

/// Run every analysis of the scenario: figures only (the design rules are
/// applied by [`crate::engine::evaluate`]). The scenario must be valid
/// ([`Scenario::validate`]); an invalid one gives meaningless results.
pub fn analyze(s: &Scenario) -> Analysis {
    analyze_to(s, FULL)
}

/// Where a spec holds |Zout| (DC without `zout_at_hz`), when it does.
pub fn zout_probe_hz(s: &Scenario) -> Option<f64> {
    let spec = s.spec.as_ref()?;
    (spec.zout_max_ohm.is_some() || spec.zout_at_hz.is_some())
        .then(|| spec.zout_at_hz.unwrap_or(0.0))
}

/// [`analyze`] to the given depth.
pub fn analyze_to(s: &Scenario, depth: Depth) -> Analysis {
    let circuit = Circuit::new(s);
    let ideal_gain = ideal_gain(s);
    let dc = circuit.eval_or_blank(0.0);
    let dc_gain = dc.gain.re;
    let sweep = run_sweep(&circuit, s.band, &dc, depth.per_decade);
    let (lo, hi) = (
        sweep.points.first().map_or(SWEEP_START_HZ, |p| p.f_hz),
        sweep.points.last().map_or(SWEEP_STOP_HZ, |p| p.f_hz),
    );
    let cross = crossover(dc.loop_gain, &loop_grid(&sweep), |f| {
        circuit.gain_and_loop(f).1
    });
    let phase_margin_deg = cross.map(|c| c.1);
    let margin_without = present(s.load.c)
        .and(phase_margin_deg)
        .filter(|_| depth.bare_margin)
        .and_then(|_| margin_without_load_c(s, lo, hi));
    let gm = gain_margin(&circuit, &sweep, dc.loop_gain);
    let (noise_sources, noise_rms) = noise_shares(&circuit.net, &sweep.points, s.band);
    let limits = super::limits::limits(s, &circuit, &sweep, dc_gain);
    let f_3db_hz = f_3db(&circuit, &sweep.points, dc_gain);
    let step = if depth.step {
        step_of(s, &circuit, cross.map(|c| c.0), f_3db_hz, phase_margin_deg)
    } else {
        Default::default()
    };
    let gain_error = if ideal_gain != 0.0 && ideal_gain.is_finite() {
        (dc_gain - ideal_gain) / ideal_gain
    } else {
        0.0
    };
    Analysis {
        nominal_gain: nominal_gain(s),
        ideal_gain,
        dc_gain,
        gain_error,
        f_3db_hz,
        peaking_db: peaking_db(&circuit, &sweep.points, dc_gain),
        loop_gain_dc: dc.loop_gain.re,
        crossover_hz: cross.map(|c| c.0),
        phase_margin_deg,
        gain_margin_db: gm.map(|g| g.0),
        phase_180_hz: gm.map(|g| g.1),
        phase_margin_without_load_c: margin_without,
        zout_dc_ohm: dc.zout.re,
        zin_dc_ohm: dc.zin.map(|z| z.re),
        zout_1khz_ohm: circuit.eval(1.0e3).map(|p| p.zout.norm()),
        zout_at_ohm: zout_probe_hz(s).and_then(|f| circuit.eval(f).map(|p| p.zout.norm())),
        noise_density_1khz: circuit.eval_or_blank(1.0e3).noise_density(),
        noise_rms,
        noise_sources,
        sweep,
        dc,
        limits,
        step,
    }
}

/// The step response, sampled from the loop's fastest closed-loop figure
/// (crossover or f−3dB, else the gain-bandwidth); none when unstable.
fn step_of(
    s: &Scenario,
    circuit: &Circuit,
    crossover: Option<f64>,
    f_3db: Option<f64>,
    pm: Option<f64>,
) -> super::step::StepResponse {
    let f_ref = match (crossover, f_3db) {
        (Some(a), Some(b)) => a.max(b),
        (a, b) => a.or(b).unwrap_or(s.amp.gbw),
    };
    let unstable = pm.is_some_and(|p| p <= 0.0);
    super::step::step_response(s, &circuit.net, f_ref, unstable)
}

impl Analysis {
    /// Whether the loop is unstable (phase margin at or below 0°): its
    /// closed-loop figures then mean nothing.
    pub fn unstable(&self) -> bool {
        self.phase_margin_deg.is_some_and(|pm| pm <= 0.0)
    }

    /// Unwrapped loop phase (degrees) at any frequency: continued from the
    /// nearest sweep point below it, stepping on a sweep-density grid past
    /// the end of the sweep so no wrap is missed.
    pub fn loop_phase_at(&self, circuit: &Circuit, f_hz: f64) -> f64 {
        let pts = &self.sweep.points;
        let (mut f, mut phase) = match pts.iter().rposition(|p| p.f_hz <= f_hz) {
            Some(i) => (pts[i].f_hz, self.sweep.loop_phase_deg[i]),
            None => (0.0, unwrap_near(self.dc.loop_gain, 0.0)),
        };
        let step = 10f64.powf(1.0 / POINTS_PER_DECADE as f64);
        while f > 0.0 && f * step < f_hz {
            f *= step;
            phase = unwrap_near(circuit.gain_and_loop(f).1, phase);
        }
        unwrap_near(circuit.gain_and_loop(f_hz).1, phase)
    }
}
