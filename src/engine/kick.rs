//! The sampling kick: a converter's sampling capacitor `c`, charged to
//! `from` volts, is switched onto the load terminal through the switch's
//! resistance `r` at t = 0, with the stage at its DC operating point (the
//! source EMF held at `source.dc`).
//!
//! # Method
//! The same time-domain machinery as the step ([`crate::engine::step`]):
//! the netlist's equations `C·x' + G·x = b·E` get one more unknown, the
//! sampling capacitor's node, tied to the load terminal by the switch's
//! conductance 1/r and to ground by c ([`with_sampler`]). The frequency
//! analyses and the step never see it. The extended equations are reduced
//! as the step's are (the sampling node is a state), and the state starts
//! at the DC solution of the extended equations (where the sampling node
//! sits at the load's level) with the sampling node set to `from`. With E
//! held, it is propagated exactly per limit mode (linear, slewing, held at
//! a rail, current-limited) until it has settled; once with the load
//! terminal as the output and once with the sampling node, so each
//! waveform is held to the step's interpolation tolerance (1e-7 of the
//! charge step ΔV, 1e-4 of the remaining deviation in the linear tail).
//!
//! The dip is read on the exact samples (each an exact propagation; the
//! steps are halved where the waveform bends). The sampling capacitor's
//! half-LSB settling is the step's `settle_to` on its own waveform, so it
//! is read down to 1 ppm of ΔV (`SETTLE_FLOOR`) and no finer.
//!
//! The DC error of the conversions' average current c·ΔV·rate is one more
//! DC solve of the stage (without the sampler) with that current drawn
//! from the load terminal: the stage's DC output resistance, whatever it
//! is made of, carries it.

use crate::engine::netlist::{Netlist, TimeEquations};
use crate::engine::step::{
    dc_state, held_reason, limits_of, reduce, states_of, Reduced, Sample, Sim, StepResponse,
};
use crate::model::scenario::{Sample as Sampler, Scenario};
use crate::num::dense::{Lu, Mat};

/// The kick's figures and waveforms (see the README for each).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Kick {
    /// The load terminal's DC level (V).
    pub level_v: f64,
    /// Half an LSB of the converter (V).
    pub half_lsb_v: f64,
    /// When the acquisition ends (s).
    pub acquire_s: f64,
    /// The largest deviation of the load terminal from its level (signed).
    pub dip_v: Option<f64>,
    /// The sampling capacitor's voltage minus the level at `acquire_s`.
    pub error_v: Option<f64>,
    /// |error_v| in LSB.
    pub error_lsb: Option<f64>,
    /// The last time the sampling capacitor's error exceeds half an LSB.
    pub settle_s: Option<f64>,
    /// The load's DC shift from the conversions' average current.
    pub dc_error_v: Option<f64>,
    /// V(load) − level after the switch closes (final value 0).
    pub load: StepResponse,
    /// V(sampling capacitor) − `from` (final value: level − from).
    pub cap: StepResponse,
    /// Why the figures are null when the stage has a sampler.
    pub reason: Option<&'static str>,
}

impl Kick {
    /// The sampling capacitor's error V(c) − level at t (within the window).
    pub fn cap_error_at(&self, t: f64) -> Option<f64> {
        Some(self.cap.at(t)? - self.cap.final_v?)
    }

    /// The load terminal's deviation from its level at t.
    pub fn load_dev_at(&self, t: f64) -> Option<f64> {
        self.load.at(t)
    }

    /// How far a plot runs: past the acquisition time and the half-LSB
    /// settling, within the window.
    pub fn view_end(&self) -> Option<f64> {
        let window = self.cap.window_s()?.min(self.load.window_s()?);
        let want = (1.5 * self.acquire_s).max(1.2 * self.settle_s.unwrap_or(0.0));
        Some(want.min(window)).filter(|t| *t > 0.0)
    }
}

/// The time-domain equations with the sampler: one more unknown (the
/// sampling node, last), 1/r to the load terminal, c to ground. Returns
/// the equations and the sampling node's index.
pub fn with_sampler(eq: &TimeEquations, r: f64, c: f64) -> Option<(TimeEquations, usize)> {
    let (n, load) = (eq.n, eq.out?);
    let m = n + 1;
    let grow = |a: &[f64]| -> Vec<f64> {
        let mut out = vec![0.0; m * m];
        for i in 0..n {
            out[i * m..i * m + n].copy_from_slice(&a[i * n..i * n + n]);
        }
        out
    };
    let (mut g, mut cm) = (grow(&eq.g), grow(&eq.c));
    let (s, y) = (n, 1.0 / r);
    g[load * m + load] += y;
    g[s * m + s] += y;
    g[load * m + s] -= y;
    g[s * m + load] -= y;
    cm[s * m + s] += c;
    let (mut b, mut k) = (eq.b.clone(), eq.k.clone());
    b.push(0.0);
    k.push(0.0);
    let ext = TimeEquations {
        n: m,
        g,
        c: cm,
        b,
        k,
        fixed: eq.fixed.clone(),
        held: eq.held.clone(),
        out: eq.out,
        x1: eq.x1,
        x2: eq.x2,
        tau1: eq.tau1,
        amp_current: eq.amp_current.clone(),
    };
    Some((ext, s))
}

/// Where the two runs start: the state, the equilibrium, the EMF, the
/// first step and the scale of the waveform.
struct Start {
    z: Vec<f64>,
    rest: Vec<f64>,
    e: f64,
    h0: f64,
    scale: f64,
}

/// One run of the kick with `red`'s output row: the waveform y − y0 and
/// whether the window ended settled.
fn follow(s: &Scenario, red: &Reduced, start: &Start, y0: f64) -> (Vec<Sample>, bool) {
    let mut sim = Sim::new(red, limits_of(s), start.e, y0, start.h0, start.scale);
    sim.rest = Some(start.rest.clone());
    let mut z = start.z.clone();
    let bound = 1.0 + start.e.abs() + start.scale;
    let (_, ended) = sim.run(&mut z, bound);
    (std::mem::take(&mut sim.samples), ended)
}

/// The kick of the scenario's sampler (None without `load.sample`).
pub fn kick(s: &Scenario, net: &Netlist, f_ref: f64, unstable: bool) -> Option<Kick> {
    let smp = s.load.sample?;
    let mut k = Kick {
        half_lsb_v: 0.5 * smp.lsb(),
        acquire_s: smp.acquire,
        ..Kick::default()
    };
    if unstable || !(f_ref.is_finite() && f_ref > 0.0) {
        return Some(k);
    }
    let Some(eq) = net.time_equations() else {
        return Some(k);
    };
    run(s, &smp, &eq, f_ref, &mut k);
    Some(k)
}

/// The two runs and the figures, into `k` (left blank where the model has
/// no time-domain form).
fn run(s: &Scenario, smp: &Sampler, eq: &TimeEquations, f_ref: f64, k: &mut Kick) -> Option<()> {
    let e = s.source.dc.unwrap_or(0.0);
    let (ext, node) = with_sampler(eq, smp.r, smp.c)?;
    let red = reduce(&ext)?;
    let at = red
        .coords
        .iter()
        .position(|&(i, m)| i == node && m.is_none())?;
    let (x0, held) = dc_state(&ext, e, &limits_of(s))?;
    let load = ext.out?;
    k.level_v = x0[load];
    if held {
        k.reason = Some(held_reason(&limits_of(s), x0[ext.x1]));
        return None;
    }
    let dv = k.level_v - smp.from_v();
    let mut rest = states_of(&red, &x0);
    rest.push(1.0);
    let mut z = rest.clone();
    z[at] = smp.from_v();
    let start = Start {
        z,
        rest,
        e,
        h0: 1.0 / (32.0 * f_ref),
        scale: dv.abs().max(k.half_lsb_v),
    };
    let (load_wave, load_ended) = follow(s, &red, &start, k.level_v);
    let mut cap_red = red.clone();
    cap_red.c = (0..red.coords.len())
        .map(|i| f64::from(u8::from(i == at)))
        .collect();
    cap_red.d = 0.0;
    let (cap_wave, cap_ended) = follow(s, &cap_red, &start, smp.from_v());
    k.load = waveform(load_wave, load_ended, 0.0);
    k.cap = waveform(cap_wave, cap_ended, dv);
    figures(k, smp, dv);
    k.dc_error_v = smp
        .rate
        .and_then(|rate| dc_shift(eq, e, smp.c * dv * rate))
        .map(|v| v - k.level_v);
    Some(())
}

/// A waveform as a step response towards `final_v` (for its interpolation
/// and settling readers).
fn waveform(samples: Vec<Sample>, ended: bool, final_v: f64) -> StepResponse {
    StepResponse {
        size_v: final_v,
        final_v: ended.then_some(final_v),
        samples,
        ended,
        ..StepResponse::default()
    }
}

/// The figures read off the two waveforms.
fn figures(k: &mut Kick, smp: &Sampler, dv: f64) {
    k.dip_v = k
        .load
        .samples
        .iter()
        .map(|p| p.y)
        .reduce(|a, b| if b.abs() > a.abs() { b } else { a });
    let last = k.cap.samples.last().map(|p| p.y - dv);
    k.error_v = k
        .cap_error_at(smp.acquire)
        .or(last.filter(|_| k.cap.ended && k.cap.window_s() < Some(smp.acquire)));
    k.error_lsb = k.error_v.map(|v| v.abs() / smp.lsb());
    k.settle_s = if dv.abs() <= k.half_lsb_v {
        Some(0.0)
    } else {
        k.cap.settle_to(k.half_lsb_v / dv.abs())
    };
}

/// The load terminal's DC level with a current `i` drawn from it (the
/// stage without the sampler).
fn dc_shift(eq: &TimeEquations, e: f64, i: f64) -> Option<f64> {
    let n = eq.n;
    let g = Mat {
        rows: n,
        cols: n,
        a: eq.g.clone(),
    };
    let mut b: Vec<f64> = eq.b.iter().map(|v| v * e).collect();
    let out = eq.out?;
    b[out] -= i;
    let x = Lu::factor(&g)?.solve(&b);
    Some(x[out]).filter(|v| v.is_finite())
}
