//! One analysis call: every figure the views show, from one netlist solved
//! by modified nodal analysis at each frequency (one LU per point).

use crate::engine::circuit::sweep_frequencies;
pub use crate::engine::circuit::{
    Circuit, Point, Signals, Sweep, POINTS_PER_DECADE, SWEEP_START_HZ, SWEEP_STOP_HZ, ZIN_OPEN_OHM,
};
pub use crate::engine::netlist::MAX_NOISE;
use crate::engine::netlist::{AmpModel, Netlist, NoiseKind};
use crate::model::scenario::{present, Scenario};
use crate::model::stages::GainUnit;
use crate::num::refine::{
    bracket, log_grid, refine_between, refine_max, segment_integral, unwrap_near,
};
use crate::num::solver::{Lu, ZERO};
use num_complex::Complex64 as C64;

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
    /// The DC gain's error against the spec's aim (`spec.gain_target`, else
    /// the network gain), when the spec gives an aim or a gain-error limit.
    pub target_error: Option<f64>,
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
    /// Two inputs: each input's impedance at DC (its own source resistance
    /// removed, the other EMF at 0 V behind its source resistance).
    pub zin1_dc_ohm: Option<f64>,
    pub zin2_dc_ohm: Option<f64>,
    /// Two inputs: the common-mode gain at DC, A_cm = a1 + a2 (signed).
    pub cm_gain_dc: Option<f64>,
    /// Two inputs: CMRR = |A_d/A_cm| at DC in dB; infinite where |A_cm|
    /// is below [`CMRR_NULL`]·|A_d| (read as unbounded).
    pub cmrr_dc_db: Option<f64>,
    /// Two inputs: the same CMRR with both sources and the reference input
    /// ideal (0 Ω), from the stage's own parts alone (the
    /// `reference-imbalance` rule compares).
    pub cmrr_parts_dc_db: Option<f64>,
    /// Two inputs, where the amplifier gives its own `cmrr_db`: the CMRR
    /// with that rejection infinite (the network's share; the `spec`
    /// warning names which of the two dominates).
    pub cmrr_network_dc_db: Option<f64>,
    /// |Zout| at 1 kHz.
    pub zout_1khz_ohm: Option<f64>,
    /// |Zout| where the spec holds it ([`zout_probe_hz`]).
    pub zout_at_ohm: Option<f64>,
    pub noise_density_1khz: f64,
    pub noise_rms: f64,
    pub noise_sources: Vec<NoiseShare>,
    /// 20·log10 |ΔV_supply/ΔV_out| at `supply.ripple_hz` (DC without it),
    /// when the amplifier gives `psrr_db` (None: unbounded).
    pub supply_rejection_db: Option<f64>,
    /// The peak output ripple (V), when `supply.ripple` is given.
    pub ripple_out_v: Option<f64>,
    /// The unit of the stage's gain (V/A for a current input).
    pub gain_unit: GainUnit,
    /// A current input's noise referred to the input: the output density
    /// at 1 kHz over |gain| there (A/√Hz), and √∫ (e_out/|gain|)² df over
    /// the band (A); None for voltage inputs.
    pub noise_current_density_1khz: Option<f64>,
    pub noise_current_rms: Option<f64>,
    pub sweep: Sweep,
    /// The point at DC.
    pub dc: Point,
    /// DC errors and signal limits (their figures are None without their
    /// inputs).
    pub limits: crate::engine::limits::Limits,
    /// The response to a step of the source EMF (time domain).
    pub step: crate::engine::step::StepResponse,
    /// The sampling capacitor's kick (None without `load.sample`, or in
    /// an analysis without the time domain).
    pub kick: Option<crate::engine::kick::Kick>,
    /// The closed-loop poles, rad/s (empty where the model has no
    /// time-domain form).
    pub poles: Vec<C64>,
    /// The stability verdict from those poles: false when one lies in the
    /// right half-plane; None when they could not be computed.
    pub stable: Option<bool>,
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
    let fc = refine_between(fa, fb, |f| loop_at(f).norm_sqr().ln());
    // Below the first sweep point the phase there is no guide (the loop
    // may turn by a half-circle or more between fc and it): place it from
    // DC as the sweep's own first point is placed.
    let phase = if i == 0 {
        phase_anchor(&loop_at, t_dc, fc)
    } else {
        unwrap_near(loop_at(fc), grid[i - 1].2)
    };
    Some((fc, 180.0 + phase))
}

/// The output noise referred to the input through |gain| at each point,
/// integrated over the band (input units², the same exact power-law
/// segments as the output's).
fn input_referred_power(points: &[Point], lo: f64, hi: f64) -> f64 {
    let referred = |p: &Point| p.noise_psd.iter().sum::<f64>() / p.gain.norm_sqr();
    points
        .windows(2)
        .filter(|w| w[1].f_hz > lo && w[0].f_hz < hi)
        .map(|w| segment_integral(w[0].f_hz, referred(&w[0]), w[1].f_hz, referred(&w[1])))
        .sum()
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

/// (G − aim)/aim, where the spec gives an aim or a gain-error limit; the
/// aim is `spec.gain_target`, else the network gain.
fn target_error(s: &Scenario, dc_gain: f64, ideal_gain: f64) -> Option<f64> {
    let spec = s.spec.as_ref()?;
    let aim = match (spec.gain_target, spec.gain_error_max) {
        (Some(t), _) => t,
        (None, Some(_)) => ideal_gain,
        (None, None) => return None,
    };
    Some((dc_gain - aim) / aim).filter(|v| v.is_finite())
}

/// Below this |A_cm|/|A_d| the common-mode gain is taken as rounding: the
/// CMRR is unbounded.
pub const CMRR_NULL: f64 = 1e-12;

/// CMRR = |A_d/A_cm| in dB from the differential and common-mode gains;
/// infinite where |A_cm| < [`CMRR_NULL`]·|A_d|.
pub fn cmrr_db(a_d: C64, a_cm: C64) -> f64 {
    if a_cm.norm() < CMRR_NULL * a_d.norm() {
        f64::INFINITY
    } else {
        20.0 * (a_d.norm() / a_cm.norm()).log10()
    }
}

/// The DC CMRR of the stage with both sources and the reference input
/// ideal (0 Ω): its own parts alone.
fn cmrr_of_parts(s: &Scenario) -> Option<f64> {
    cmrr_with(s, |ideal| {
        ideal.source.r = Some(0.0);
        ideal.source.r_plus = Some(0.0);
        if let Some(r) = ideal.reference.as_mut() {
            (r.r, r.c) = (0.0, None);
        }
    })
}

/// The DC CMRR of the stage as it is but for the amplifier's own
/// rejection (infinite): the resistors' and the sources' share.
fn cmrr_without_amp(s: &Scenario) -> Option<f64> {
    cmrr_with(s, |ideal| ideal.amp.cmrr_db = None)
}

/// The DC CMRR of the stage after `edit`.
fn cmrr_with(s: &Scenario, edit: impl Fn(&mut Scenario)) -> Option<f64> {
    let mut ideal = s.clone();
    edit(&mut ideal);
    let p = Circuit::new(&ideal).eval(0.0)?;
    p.cm_gain.map(|cm| cmrr_db(p.gain, cm))
}

/// The DC gain of the same passive network around a nullor.
fn ideal_gain(s: &Scenario) -> f64 {
    let ideal = Netlist::build(s, AmpModel::Nullor);
    Lu::factor(ideal.stamp(ZERO), ideal.dim)
        .ok()
        .map(|lu| Netlist::node_v(&lu.solve(&ideal.drive_rhs()), ideal.out).re)
        .unwrap_or(f64::NAN)
}

/// Lowest frequency the phase anchor walks down to: below every pole a
/// valid stage can have (1 F behind 10 TΩ is 1.6e-14 Hz).
const ANCHOR_FLOOR_HZ: f64 = 1e-17;

/// Whether T(f) has reached its DC value (to 1e-4 relative).
fn settled(t: C64, t_dc: C64) -> bool {
    (t / t_dc - 1.0).norm() < 1e-4
}

/// arg T unwrapped from `phase` at `fa` to `fb`, halving the step (in ln f)
/// wherever the phase would move by more than 45° at once.
fn unwrap_across(loop_at: &impl Fn(f64) -> C64, fa: f64, phase: f64, fb: f64, depth: u32) -> f64 {
    let next = unwrap_near(loop_at(fb), phase);
    if (next - phase).abs() <= 45.0 || depth == 0 {
        return next;
    }
    let mid = (fa * fb).sqrt();
    let at_mid = unwrap_across(loop_at, fa, phase, mid, depth - 1);
    unwrap_across(loop_at, mid, at_mid, fb, depth - 1)
}

/// The loop phase at `f0` on its right branch, continued from DC. T(0) is
/// real, so the phase there is 0° (or 180°); each loop pole and zero below
/// `f0` adds its ∓90° on the way up. Rather than count them from the
/// model, T is evaluated on a grid going down from `f0` (10 points a
/// decade) until it has stayed within 1e-4 of T(0) for a whole decade (a
/// pole or zero further down would move it), and the phase is unwrapped
/// back up that grid from the DC branch. Without a finite, non-zero T(0)
/// the principal value at `f0` is taken.
pub fn phase_anchor(loop_at: impl Fn(f64) -> C64, t_dc: C64, f0: f64) -> f64 {
    if !(t_dc.norm().is_finite() && t_dc.norm() > 0.0) {
        return unwrap_near(loop_at(f0), 0.0);
    }
    let step = 10f64.powf(0.1);
    let mut grid = vec![f0];
    let mut f = f0;
    let mut quiet = 0;
    while f > ANCHOR_FLOOR_HZ && quiet < 10 {
        f /= step;
        grid.push(f);
        quiet = if settled(loop_at(f), t_dc) {
            quiet + 1
        } else {
            0
        };
    }
    let mut below = grid[grid.len() - 1];
    let mut phase = unwrap_near(loop_at(below), unwrap_near(t_dc, 0.0));
    for &f in grid.iter().rev().skip(1) {
        phase = unwrap_across(&loop_at, below, phase, f, 8);
        below = f;
    }
    phase
}

/// The sweep, widened to cover the band, with the band edges as points and
/// the loop phase unwrapped from DC (its first point from [`phase_anchor`]).
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
    let loop_at = |f: f64| circuit.gain_and_loop(f).1;
    let mut prev = match points.first() {
        Some(p) => phase_anchor(loop_at, dc.loop_gain, p.f_hz),
        None => unwrap_near(dc.loop_gain, 0.0),
    };
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
fn gain_margin(circuit: &Circuit, sweep: &Sweep) -> Option<(f64, f64)> {
    let phases = &sweep.loop_phase_deg;
    let i = phases.iter().position(|&p| p <= -180.0)?;
    let (fa, fb) = bracket(|k| sweep.points[k].f_hz, i);
    let ref_phase = phases[i.saturating_sub(1)];
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
    let mut prev = phase_anchor(|f| c2.gain_and_loop(f).1, t0, lo);
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

/// The supply ripple at the load: (rejection in dB, peak output ripple).
/// The ripple's error sits in series with the + input, so one solve for
/// its right-hand side at the ripple's frequency gives ΔV_out/ΔV_supply.
fn supply_ripple(s: &Scenario, circuit: &Circuit) -> (Option<f64>, Option<f64>) {
    let supply = s.supply.as_ref();
    let ripple = supply.and_then(|x| x.ripple);
    if s.amp.psrr_db.is_none() && ripple.is_none() {
        return (None, None);
    }
    let f = supply.and_then(|x| x.ripple_hz).unwrap_or(0.0);
    let net = &circuit.net;
    let rhs = net.ripple_rhs(C64::new(0.0, 2.0 * std::f64::consts::PI * f));
    let Some(x) = circuit.solve_at(f, &[rhs]) else {
        return (None, None);
    };
    let h = Netlist::node_v(&x[0][..net.dim], net.out).norm();
    let rejection = Some(-20.0 * h.log10()).filter(|v| v.is_finite());
    (rejection, ripple.map(|r| r * h).filter(|v| v.is_finite()))
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
/// applied by [`crate::judge::evaluate`]). The scenario must be valid
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
    let gm = gain_margin(&circuit, &sweep);
    let (noise_sources, noise_rms) = noise_shares(&circuit.net, &sweep.points, s.band);
    let (supply_rejection_db, ripple_out_v) = supply_ripple(s, &circuit);
    let limits = crate::engine::limits::limits(s, &circuit, &sweep, dc_gain);
    let f_3db_hz = f_3db(&circuit, &sweep.points, dc_gain);
    let (poles, stable, unstable) = verdict(&circuit, phase_margin_deg);
    let f_ref = time_reference(s, cross.map(|c| c.0), f_3db_hz);
    let (step, kick) = if depth.step {
        (
            crate::engine::step::step_response(s, &circuit.net, f_ref, unstable),
            crate::engine::kick::kick(s, &circuit.net, f_ref, unstable),
        )
    } else {
        Default::default()
    };
    let at_1k = circuit.eval_or_blank(1.0e3);
    let (noise_current_density_1khz, noise_current_rms) = input_current_noise(s, &at_1k, &sweep);
    Analysis {
        nominal_gain: s.nominal_gain(),
        ideal_gain,
        dc_gain,
        gain_error: relative_error(dc_gain, ideal_gain),
        target_error: target_error(s, dc_gain, ideal_gain),
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
        zin1_dc_ohm: circuit.net.drive2.and(dc.zin.map(|z| z.re)),
        zin2_dc_ohm: circuit.zin_input(1, 0.0).map(|z| z.re),
        cm_gain_dc: dc.cm_gain.map(|z| z.re),
        cmrr_dc_db: dc.cm_gain.map(|cm| cmrr_db(dc.gain, cm)),
        cmrr_parts_dc_db: dc.cm_gain.and_then(|_| cmrr_of_parts(s)),
        cmrr_network_dc_db: dc
            .cm_gain
            .filter(|_| s.amp.cmrr_db.is_some())
            .and_then(|_| cmrr_without_amp(s)),
        zout_1khz_ohm: circuit.eval(1.0e3).map(|p| p.zout.norm()),
        zout_at_ohm: zout_probe_hz(s).and_then(|f| circuit.eval(f).map(|p| p.zout.norm())),
        noise_density_1khz: at_1k.noise_density(),
        noise_rms,
        noise_sources,
        supply_rejection_db,
        ripple_out_v,
        gain_unit: s.stage.topology.kind().gain_unit,
        noise_current_density_1khz,
        noise_current_rms,
        sweep,
        dc,
        limits,
        step,
        kick,
        poles: poles.unwrap_or_default(),
        stable,
    }
}

/// The closed loop's poles, whether it is stable (from the poles; null
/// when they could not be found), and whether the time-domain analyses
/// treat it as unstable (the poles, else a margin at or below zero).
fn verdict(
    circuit: &Circuit,
    phase_margin_deg: Option<f64>,
) -> (Option<Vec<C64>>, Option<bool>, bool) {
    let poles = crate::engine::step::closed_loop_poles(&circuit.net);
    let stable = poles
        .as_ref()
        .map(|p| !crate::engine::step::any_unstable(p));
    let unstable = match stable {
        Some(st) => !st,
        None => phase_margin_deg.is_some_and(|p| p <= 0.0),
    };
    (poles, stable, unstable)
}

/// A current input's noise referred to the input: its density at 1 kHz
/// and its RMS over the band (null for a voltage input).
fn input_current_noise(s: &Scenario, at_1k: &Point, sweep: &Sweep) -> (Option<f64>, Option<f64>) {
    let current = s.current_input();
    let density = current
        .then(|| at_1k.noise_density() / at_1k.gain.norm())
        .filter(|v| v.is_finite());
    let rms = current
        .then(|| input_referred_power(&sweep.points, s.band.0, s.band.1).sqrt())
        .filter(|v| v.is_finite());
    (density, rms)
}

/// (value − ideal)/ideal, zero when the ideal is zero or not finite.
fn relative_error(value: f64, ideal: f64) -> f64 {
    if ideal != 0.0 && ideal.is_finite() {
        (value - ideal) / ideal
    } else {
        0.0
    }
}

/// The frequency the time-domain analyses (the step, the kick) take their
/// first step from: the loop's fastest closed-loop figure (crossover or
/// f−3dB, else the gain-bandwidth).
fn time_reference(s: &Scenario, crossover: Option<f64>, f_3db: Option<f64>) -> f64 {
    match (crossover, f_3db) {
        (Some(a), Some(b)) => a.max(b),
        (a, b) => a.or(b).unwrap_or(s.amp.gbw),
    }
}

impl Analysis {
    /// Whether the loop is unstable: a closed-loop pole in the right
    /// half-plane, whatever the margin reads (by the phase margin, at or
    /// below 0°, only where the poles could not be computed). Its
    /// closed-loop figures then mean nothing.
    pub fn unstable(&self) -> bool {
        match self.stable {
            Some(stable) => !stable,
            None => self.phase_margin_deg.is_some_and(|pm| pm <= 0.0),
        }
    }

    /// The real part of the rightmost closed-loop pole, rad/s.
    pub fn rightmost_pole_re(&self) -> Option<f64> {
        self.poles.iter().map(|p| p.re).reduce(f64::max)
    }

    /// Unwrapped loop phase (degrees) at any frequency: continued from the
    /// nearest sweep point below it, stepping on a sweep-density grid past
    /// the end of the sweep so no wrap is missed.
    pub fn loop_phase_at(&self, circuit: &Circuit, f_hz: f64) -> f64 {
        let pts = &self.sweep.points;
        let (mut f, mut phase) = match pts.iter().rposition(|p| p.f_hz <= f_hz) {
            Some(i) => (pts[i].f_hz, self.sweep.loop_phase_deg[i]),
            None => {
                let loop_at = |f: f64| circuit.gain_and_loop(f).1;
                return phase_anchor(loop_at, self.dc.loop_gain, f_hz);
            }
        };
        let step = 10f64.powf(1.0 / POINTS_PER_DECADE as f64);
        while f > 0.0 && f * step < f_hz {
            f *= step;
            phase = unwrap_near(circuit.gain_and_loop(f).1, phase);
        }
        unwrap_near(circuit.gain_and_loop(f_hz).1, phase)
    }
}
