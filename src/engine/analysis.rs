//! One analysis call: every figure the views show, from one netlist solved
//! by modified nodal analysis at each frequency (one LU per point).

use super::netlist::{Coupling, Netlist};
use super::scenario::{present, Scenario};
use super::solver::{Lu, Vector, MAXN, ZERO};
use super::warnings::{self, Warning};
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

/// Most noise sources a stage has (source r, rg, rf, riso, en, in+, in−).
pub const MAX_NOISE: usize = 8;

/// Everything solved at one frequency.
#[derive(Debug, Clone, Copy)]
pub struct Point {
    pub f_hz: f64,
    /// Closed-loop gain V(out)/V(source EMF).
    pub gain: C64,
    /// Loop gain (return ratio of the controlled source).
    pub loop_gain: C64,
    /// Output impedance at the load terminal, load removed.
    pub zout: C64,
    /// Input impedance seen by the source, source r excluded; None = open.
    pub zin: Option<C64>,
    /// Output noise density contributions, V²/Hz, in netlist noise order.
    pub noise_psd: [f64; MAX_NOISE],
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
            net: Netlist::build(s),
            work: RefCell::new(Lu::zeroed()),
        }
    }

    /// Stamp and factor the matrix at s into the workspace.
    fn factor_at(&self, s: C64) -> Option<std::cell::RefMut<'_, Lu>> {
        let mut lu = self.work.borrow_mut();
        self.net.stamp_into(s, lu.matrix());
        lu.factor_in_place(self.net.dim).ok()?;
        Some(lu)
    }

    /// Like [`Circuit::eval`], with all-zero figures where the matrix is
    /// singular (never for a valid scenario).
    pub fn eval_or_blank(&self, f_hz: f64) -> Point {
        self.eval(f_hz).unwrap_or(Point {
            f_hz,
            gain: ZERO,
            loop_gain: ZERO,
            zout: ZERO,
            zin: None,
            noise_psd: [0.0; MAX_NOISE],
        })
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
        let yl = net.load_admittance(s);
        let zout = if yl == ZERO {
            z_par
        } else {
            1.0 / (1.0 / z_par - yl)
        };
        let mut noise_psd = [0.0; MAX_NOISE];
        for (k, src) in net.noise.iter().enumerate().take(MAX_NOISE) {
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
            zin,
            noise_psd,
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
    /// rms over the band, V.
    pub rms: f64,
    /// Fraction of the total noise power over the band (the shares sum to 1).
    pub share: f64,
}

/// All results of one scenario.
#[derive(Debug, Clone)]
pub struct Analysis {
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
    pub noise_density_1khz: f64,
    pub noise_rms: f64,
    pub noise_sources: Vec<NoiseShare>,
    pub sweep: Sweep,
    pub warnings: Vec<Warning>,
    /// The point at DC.
    pub dc: Point,
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

/// The log-spaced sweep frequencies from `lo` to `hi`.
pub fn sweep_frequencies(lo: f64, hi: f64) -> Vec<f64> {
    let decades = (hi / lo).log10();
    let n = (decades * POINTS_PER_DECADE as f64).ceil().max(1.0) as usize;
    (0..=n)
        .map(|i| lo * 10f64.powf(decades * i as f64 / n as f64))
        .collect()
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
    let (fa, ref_phase) = if i == 0 {
        (grid[0].0 * 1e-3, unwrap_near(t_dc, 0.0))
    } else {
        (grid[i - 1].0, grid[i - 1].2)
    };
    let fc = refine_root(fa.ln(), grid[i].0.ln(), |x| {
        loop_at(x.exp()).norm_sqr().ln()
    })
    .exp();
    Some((fc, 180.0 + unwrap_near(loop_at(fc), ref_phase)))
}

/// Maximise g on [a, b] by golden-section search.
fn refine_max(mut a: f64, mut b: f64, g: impl Fn(f64) -> f64) -> (f64, f64) {
    let r = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - r * (b - a);
    let mut d = a + r * (b - a);
    let (mut gc, mut gd) = (g(c), g(d));
    while (b - a).abs() > 1e-6 {
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

/// Run every analysis of the scenario. The scenario must be valid
/// ([`Scenario::validate`]); an invalid one gives NaN-free but meaningless
/// results and an input warning.
pub fn analyze(s: &Scenario) -> Analysis {
    let circuit = Circuit::new(s);
    let ideal = Netlist::build_ideal(s);
    let ideal_gain = Lu::factor(ideal.stamp(ZERO), ideal.dim)
        .ok()
        .map(|lu| Netlist::node_v(&lu.solve(&ideal.drive_rhs()), ideal.out).re)
        .unwrap_or(f64::NAN);

    let eval = |f: f64| circuit.eval_or_blank(f);
    let gain_at = |f: f64| circuit.gain_and_loop(f).0;
    let loop_at = |f: f64| circuit.gain_and_loop(f).1;
    let dc = eval(0.0);
    let dc_gain = dc.gain.re;

    // Sweep, widened to cover the noise band.
    let (band_lo, band_hi) = s.band;
    let lo = SWEEP_START_HZ.min(band_lo);
    let hi = SWEEP_STOP_HZ.max(band_hi);
    let mut freqs = sweep_frequencies(lo, hi);
    for f in [band_lo, band_hi] {
        if let Err(i) = freqs.binary_search_by(|x| x.total_cmp(&f)) {
            freqs.insert(i, f);
        }
    }
    let points: Vec<Point> = freqs.iter().map(|&f| eval(f)).collect();
    let mut loop_phase_deg = Vec::with_capacity(points.len());
    let mut prev = unwrap_near(dc.loop_gain, 0.0);
    for p in &points {
        prev = unwrap_near(p.loop_gain, prev);
        loop_phase_deg.push(prev);
    }

    // f−3dB: first fall of |H| through |dc|/√2.
    let target = dc_gain.abs() / 2f64.sqrt();
    let f_3db_hz = points.iter().position(|p| p.gain.norm() < target).map(|i| {
        let fa = if i == 0 {
            lo * 1e-3
        } else {
            points[i - 1].f_hz
        };
        let fb = points[i].f_hz;
        let g = |x: f64| 0.5 * gain_at(x.exp()).norm_sqr().ln() - target.ln();
        refine_root(fa.ln(), fb.ln(), g).exp()
    });

    // Peaking: max |H| relative to DC.
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
    let peak = if imax > 0 && imax + 1 < points.len() {
        let (_, v) = refine_max(
            points[imax - 1].f_hz.ln(),
            points[imax + 1].f_hz.ln(),
            |x| gain_at(x.exp()).norm(),
        );
        v.max(points[imax].gain.norm())
    } else {
        points[imax].gain.norm()
    };
    let peaking_db = if dc_gain != 0.0 {
        (20.0 * (peak / dc_gain.abs()).log10()).max(0.0)
    } else {
        0.0
    };

    // Crossover and phase margin.
    let loop_gain_dc = dc.loop_gain.re;
    let grid: Vec<(f64, C64, f64)> = points
        .iter()
        .zip(&loop_phase_deg)
        .map(|(p, ph)| (p.f_hz, p.loop_gain, *ph))
        .collect();
    let (crossover_hz, phase_margin_deg) = match crossover(dc.loop_gain, &grid, loop_at) {
        Some((fc, pm)) => (Some(fc), Some(pm)),
        None => (None, None),
    };

    // What the load capacitance costs: the same loop without it, on a
    // coarse grid (4 points per decade) up to its crossover.
    let phase_margin_without_load_c = match (present(s.load.c), phase_margin_deg) {
        (Some(_), Some(_)) => {
            let mut bare = s.clone();
            bare.load.c = None;
            let c2 = Circuit::new(&bare);
            let t0 = c2.gain_and_loop(0.0).1;
            let mut grid = Vec::new();
            let mut prev = unwrap_near(t0, 0.0);
            let decades = (hi / lo).log10();
            let n = (decades * 4.0).ceil() as usize;
            for i in 0..=n {
                let f = lo * 10f64.powf(decades * i as f64 / n as f64);
                let t = c2.gain_and_loop(f).1;
                prev = unwrap_near(t, prev);
                grid.push((f, t, prev));
                if t.norm() < 1.0 {
                    break;
                }
            }
            crossover(t0, &grid, |f| c2.gain_and_loop(f).1).map(|(_, pm)| pm)
        }
        _ => None,
    };

    // Gain margin: where the unwrapped phase first reaches −180°.
    let mut gain_margin_db = None;
    let mut phase_180_hz = None;
    if let Some(i) = loop_phase_deg.iter().position(|&p| p <= -180.0) {
        let (fa, fb, ref_phase) = if i == 0 {
            (lo * 1e-3, points[0].f_hz, unwrap_near(dc.loop_gain, 0.0))
        } else {
            (points[i - 1].f_hz, points[i].f_hz, loop_phase_deg[i - 1])
        };
        let g = |x: f64| unwrap_near(loop_at(x.exp()), ref_phase) + 180.0;
        let f180 = refine_root(fa.ln(), fb.ln(), g).exp();
        let t = loop_at(f180).norm();
        if t > 0.0 {
            gain_margin_db = Some(-20.0 * t.log10());
            phase_180_hz = Some(f180);
        }
    }

    // Noise.
    let n_src = circuit.net.noise.len().min(MAX_NOISE);
    let powers = band_power(&points, band_lo, band_hi, n_src);
    let total: f64 = powers.iter().sum();
    let noise_sources = circuit
        .net
        .noise
        .iter()
        .zip(&powers)
        .map(|(src, &pw)| NoiseShare {
            key: src.key,
            label: src.label,
            rms: pw.sqrt(),
            share: if total > 0.0 { pw / total } else { 0.0 },
        })
        .collect();
    let noise_density_1khz = eval(1.0e3).noise_density();

    let gain_error = if ideal_gain != 0.0 && ideal_gain.is_finite() {
        (dc_gain - ideal_gain) / ideal_gain
    } else {
        0.0
    };
    let mut a = Analysis {
        ideal_gain,
        dc_gain,
        gain_error,
        f_3db_hz,
        peaking_db,
        loop_gain_dc,
        crossover_hz,
        phase_margin_deg,
        gain_margin_db,
        phase_180_hz,
        phase_margin_without_load_c,
        zout_dc_ohm: dc.zout.re,
        zin_dc_ohm: dc.zin.map(|z| z.re),
        noise_density_1khz,
        noise_rms: total.sqrt(),
        noise_sources,
        sweep: Sweep {
            points,
            loop_phase_deg,
        },
        warnings: Vec::new(),
        dc,
    };
    a.warnings = warnings::check(s, &a);
    a
}

impl Analysis {
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
