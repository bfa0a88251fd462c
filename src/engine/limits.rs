//! DC errors and signal limits: the offset and bias errors at the load, and
//! whether the internal output (behind ro), the + input, the slew rate and
//! the output current stay inside what the amplifier and its rails allow
//! over the signal band (the scenario's band). Pure: figures from the same
//! netlist the small-signal analysis solves.
//!
//! Everything here is linear superposition at the operating point: one DC
//! factorisation gives the transfer from the source, from a current
//! injected into each input pin and from a voltage in series with the
//! non-inverting input, to every place that matters; the band maxima come
//! from the sweep's solutions.

use crate::engine::circuit::{Circuit, Signals, Sweep};
use crate::engine::netlist::{Excitation, Netlist};
use crate::model::scenario::{present, Scenario};
use crate::model::stages::Node;
use crate::num::refine::refine_max;
use crate::num::solver::{Lu, Vector, MAXN, ZERO};
use num_complex::Complex64 as C64;
use std::f64::consts::PI;

/// The DC transfers to one place: per volt of source EMF (`src`), per
/// ampere injected into the + and − pins (`zp`, `zn`), per volt in series
/// with the + input (`hvos`); and the level the DC-only EMFs set there
/// (`held`, volts or amperes, 0 without them).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Transfers {
    pub src: f64,
    /// Per volt of common mode at both inputs (0 with one input).
    pub cm: f64,
    pub zp: f64,
    pub zn: f64,
    pub hvos: f64,
    pub held: f64,
}

/// The DC transfers to the load, the internal output, the + pin, the
/// amplifier's output current and the pins' common mode (their average).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct DcTransfers {
    pub out: Transfers,
    pub int: Transfers,
    pub pin: Transfers,
    pub amp_i: Transfers,
    pub cm: Transfers,
}

/// What the current out of the amplifier mostly feeds at its peak.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Drawn {
    LoadCapacitance,
    LoadResistance,
    Feedback,
}

/// One frequency of the output envelope at the internal output (V peak).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EnvelopePoint {
    pub f_hz: f64,
    /// The peak the signal needs there.
    pub need: f64,
    /// slew/(2πf), without a slew limit None.
    pub slew_ceiling: Option<f64>,
    /// (iout − |I_dc|)/|Y(f)|, without a current limit None.
    pub current_ceiling: Option<f64>,
}

/// The band maximum of one quantity and where it is.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct BandMax {
    pub value: f64,
    pub f_hz: f64,
}

/// Every DC-error and signal-limit figure (None without its inputs).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Limits {
    /// Any DC-error input given (vos, drift, ib, ios, source dc).
    pub dc_given: bool,
    /// source.peak given.
    pub signal_given: bool,
    pub out_bias_v: Option<f64>,
    pub out_offset_max_v: Option<f64>,
    pub out_dc_v: Option<f64>,
    pub int_dc_v: Option<f64>,
    pub int_peak_v: Option<f64>,
    pub int_low_v: Option<f64>,
    pub int_high_v: Option<f64>,
    pub headroom_low_v: Option<f64>,
    pub headroom_high_v: Option<f64>,
    pub cm_low_v: Option<f64>,
    pub cm_high_v: Option<f64>,
    pub cm_headroom_v: Option<f64>,
    pub slew_needed_v_per_s: Option<f64>,
    pub fpbw_hz: Option<f64>,
    pub iout_peak_a: Option<f64>,
    pub bias_balance_ohm: Option<f64>,
    // Details for the rules and the envelope view.
    pub dc: DcTransfers,
    /// vos at temp_c: vos + drift·|temp_c − 25 °C|.
    pub vos_at_temp: f64,
    /// The uncertainty of the internal output and of the + pin (V).
    pub int_u_v: f64,
    pub pin_u_v: f64,
    /// The amplifier's output current at the operating point (A).
    pub i_dc_a: f64,
    /// Where the slew need and the current peak are.
    pub slew_at_hz: f64,
    pub iout_at_hz: f64,
    pub iout_drawn: Option<Drawn>,
    /// The part of the offset bound the bias and offset currents make (V).
    pub offset_from_bias_v: f64,
    /// The flat swing ceiling of the envelope (V peak), with a supply.
    pub swing_ceiling_v: Option<f64>,
    pub envelope: Vec<EnvelopePoint>,
    /// The first frequency where the need crosses a ceiling, and which.
    pub envelope_limit: Option<(f64, &'static str)>,
    /// Without `source.peak`: the headroom of the DC operating point
    /// alone (the rules read it; no figure shows it).
    pub dc_only: Option<DcOnly>,
}

/// The operating point's own headroom (no signal): to the usable rails
/// (low, high) and to the common-mode range, with the + input's span.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct DcOnly {
    pub headroom_low_v: Option<f64>,
    pub headroom_high_v: Option<f64>,
    pub cm_headroom_v: Option<f64>,
    pub cm_low_v: Option<f64>,
    pub cm_high_v: Option<f64>,
}

/// A right-hand side with one unit entry (none for a merged node).
fn unit_rhs(row: Option<usize>) -> Vector {
    let mut b = [ZERO; MAXN];
    if let Some(i) = row {
        b[i] = C64::new(1.0, 0.0);
    }
    b
}

/// The DC transfers from one factorisation at s = 0: the source, a unit
/// current into each pin, a unit voltage in the + input's generator and,
/// where the stage has them, the DC-only EMFs at their levels.
pub fn dc_transfers(circuit: &Circuit) -> Option<DcTransfers> {
    let net = &circuit.net;
    let mut rhs = vec![
        net.drive_rhs(),
        unit_rhs(net.inp),
        unit_rhs(net.inn),
        unit_rhs(Some(net.en_row)),
    ];
    if !net.held.is_empty() {
        rhs.push(net.rhs(Excitation::Held));
    }
    let cm_at = rhs.len();
    if net.drive2.is_some() {
        rhs.push(net.rhs(Excitation::CommonMode));
    }
    let x = circuit.solve_at(0.0, &rhs)?;
    let held_at = (!net.held.is_empty()).then_some(4);
    let cm_at = net.drive2.map(|_| cm_at);
    let read = |f: &dyn Fn(&[C64]) -> C64| Transfers {
        src: f(&x[0][..net.dim]).re,
        cm: cm_at.map_or(0.0, |i| f(&x[i][..net.dim]).re),
        zp: f(&x[1][..net.dim]).re,
        zn: f(&x[2][..net.dim]).re,
        hvos: f(&x[3][..net.dim]).re,
        held: held_at.map_or(0.0, |i| f(&x[i][..net.dim]).re),
    };
    Some(DcTransfers {
        out: read(&|v| Netlist::node_v(v, net.out)),
        int: read(&|v| net.int_v(ZERO, v)),
        pin: read(&|v| Netlist::node_v(v, net.inp)),
        amp_i: read(&|v| net.amp_current(ZERO, v)),
        cm: read(&|v| (Netlist::node_v(v, net.inp) + Netlist::node_v(v, net.inn)) * 0.5),
    })
}

/// The DC operating point and its uncertainty at one place.
struct Dc {
    source_dc: f64,
    /// The common-mode DC level (two inputs; 0 otherwise).
    cm: f64,
    ib: f64,
    ios: f64,
    /// vos at temp_c and the common-mode error at the operating point:
    /// both sit in series with the + input, their signs unknown.
    vos: f64,
    /// |V_cm,dc|·10^(−cmrr_db/20) (0 without cmrr_db).
    cm_error: f64,
}

impl Dc {
    /// DC(X): the source's DC level, the (known, signed) bias currents
    /// and the DC-only EMFs.
    fn level(&self, t: &Transfers) -> f64 {
        held_plus(
            t.src * self.source_dc + t.cm * self.cm - self.ib * (t.zp + t.zn),
            t.held,
        )
    }
    /// u(X): the unknown-sign offset voltage and offset current.
    fn uncertainty(&self, t: &Transfers) -> f64 {
        self.vos * t.hvos.abs() + 0.5 * self.ios * (t.zp - t.zn).abs()
    }
}

/// `v` with the DC-only EMFs' level added (exactly `v` without them).
fn held_plus(v: f64, held: f64) -> f64 {
    if held == 0.0 {
        v
    } else {
        v + held
    }
}

/// z_p + z_n at the load with a resistor r in series with the + input.
fn bias_sum_with(s: &Scenario, r: f64) -> Option<f64> {
    let net = Netlist::build_balanced(s, r);
    let lu = Lu::factor(net.stamp(ZERO), net.dim).ok()?;
    let v = |row| Netlist::node_v(&lu.solve(&unit_rhs(row))[..net.dim], net.out).re;
    Some(v(net.inp) + v(net.inn))
}

/// The total resistance from the + pin to what it returns to that makes
/// z_p + z_n = 0 at the load: the series resistor to add at the + input,
/// plus the reference input's own r where the + pin is tied to it. Any
/// transfer depends on one resistor as (α + βR)/(1 + γR) (bilinear
/// theorem), so α = f(0) and two more solves fix the root −α/β.
fn bias_balance(s: &Scenario, alpha: f64) -> Option<f64> {
    let r1 = s.stage.rf.filter(|r| *r > 0.0).unwrap_or(1.0e3);
    let r2 = 10.0 * r1;
    let (f1, f2) = (bias_sum_with(s, r1)?, bias_sum_with(s, r2)?);
    // β·R − γ·R·f(R) = f(R) − α at R1 and R2.
    let det = r1 * r2 * (f1 - f2);
    if det == 0.0 || !det.is_finite() {
        return None;
    }
    let beta = ((f1 - alpha) * (-r2 * f2) + r1 * f1 * (f2 - alpha)) / det;
    let tied = s.stage.topology.kind().reference == Some(Node::Plus);
    let r = match s.reference {
        Some(rf) if tied => -alpha / beta + rf.r,
        _ => -alpha / beta,
    };
    (r.is_finite() && r > 0.0).then_some(r)
}

/// What drives the stage for a band maximum: the signal (the source's
/// EMF, or the differential pair) or the common mode (both inputs at 1 V).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Driven {
    Signal,
    CommonMode,
}

impl Driven {
    /// The signals of one sweep point under this drive (zeros where the
    /// stage has no common mode).
    fn of(self, p: &crate::engine::circuit::Point) -> Signals {
        match self {
            Driven::Signal => p.signals,
            Driven::CommonMode => p.cm_signals.unwrap_or_default(),
        }
    }

    fn at(self, circuit: &Circuit, f_hz: f64) -> Signals {
        match self {
            Driven::Signal => circuit.signals_at(f_hz),
            Driven::CommonMode => circuit.cm_signals_at(f_hz),
        }
    }
}

/// The largest g over the sweep points inside the band (its edges are
/// sweep points), refined between the neighbours of an inner maximum.
fn band_max(
    sweep: &Sweep,
    band: (f64, f64),
    circuit: &Circuit,
    driven: Driven,
    g: impl Fn(f64, &Signals) -> f64,
) -> BandMax {
    let pts: Vec<_> = sweep
        .points
        .iter()
        .filter(|p| p.f_hz >= band.0 && p.f_hz <= band.1)
        .collect();
    let Some((i, best)) = pts
        .iter()
        .map(|p| g(p.f_hz, &driven.of(p)))
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(&b.1))
    else {
        return BandMax::default();
    };
    let mut out = BandMax {
        value: best,
        f_hz: pts[i].f_hz,
    };
    if i > 0 && i + 1 < pts.len() {
        let (a, b) = (pts[i - 1].f_hz.ln(), pts[i + 1].f_hz.ln());
        let (x, v) = refine_max(a, b, |x| g(x.exp(), &driven.at(circuit, x.exp())));
        if v > out.value {
            out = BandMax {
                value: v,
                f_hz: x.exp(),
            };
        }
    }
    out
}

/// What the amplifier's current feeds at f: the load capacitance, the
/// load resistance or the feedback network (whichever takes most).
fn drawn_by(circuit: &Circuit, f_hz: f64) -> Drawn {
    let net = &circuit.net;
    let sig = circuit.signals_at(f_hz);
    let w = 2.0 * PI * f_hz;
    let i_c = (sig.out * C64::new(0.0, w * net.load_c)).norm();
    let i_r = (sig.out * net.load_g).norm();
    let i_fb = (sig.amp_i - sig.out * net.load_admittance(C64::new(0.0, w))).norm();
    if i_c >= i_r && i_c >= i_fb {
        Drawn::LoadCapacitance
    } else if i_r >= i_fb {
        Drawn::LoadResistance
    } else {
        Drawn::Feedback
    }
}

/// The DC errors at the load (section "DC errors").
fn dc_errors(s: &Scenario, l: &mut Limits, dc: &Dc, dc_gain: f64) {
    let a = &s.amp;
    let out = l.dc.out;
    l.out_bias_v = a.ib.map(|_| -dc.ib * (out.zp + out.zn));
    let bias = l.out_bias_v.unwrap_or(0.0);
    l.offset_from_bias_v = bias.abs() + 0.5 * dc.ios * (out.zp - out.zn).abs();
    if a.vos.is_some() || a.ib.is_some() || a.ios.is_some() || dc.cm_error > 0.0 {
        l.out_offset_max_v =
            Some(bias.abs() + dc.vos * out.hvos.abs() + 0.5 * dc.ios * (out.zp - out.zn).abs());
    }
    if s.signal_dc().is_some() || s.source.cm.is_some() || a.ib.is_some() || out.held != 0.0 {
        let cm = out.cm * dc.cm;
        l.out_dc_v = Some(held_plus(dc_gain * dc.source_dc + cm + bias, out.held));
    }
}

/// The internal output's range and its headroom to the usable rails.
fn output_range(s: &Scenario, l: &mut Limits, dc: &Dc, peak: f64, int_max: f64) {
    let int_dc = dc.level(&l.dc.int);
    let int_peak = peak * int_max;
    l.int_u_v = dc.uncertainty(&l.dc.int);
    let spread = int_peak + l.int_u_v;
    l.int_dc_v = Some(int_dc);
    l.int_peak_v = Some(int_peak);
    l.int_low_v = Some(int_dc - spread);
    l.int_high_v = Some(int_dc + spread);
    if let Some(sup) = s.supply {
        let (lo, hi) = s.amp.usable_rails(&sup);
        l.headroom_low_v = Some(int_dc - spread - lo);
        l.headroom_high_v = Some(hi - (int_dc + spread));
        l.swing_ceiling_v = Some((hi - (int_dc + l.int_u_v)).min(int_dc - l.int_u_v - lo));
    }
}

/// The + pin's range and its headroom to the common-mode limits.
fn input_range(s: &Scenario, l: &mut Limits, dc: &Dc, pin_peak: f64) {
    // A + pin tied to a grounded reference sits at 0 V; with a reference
    // input it moves with that level (and the bias current through r).
    let grounded = s.reference.is_none();
    let (lo, hi) = if grounded && s.stage.topology.kind().reference == Some(Node::Plus) {
        (0.0, 0.0)
    } else {
        l.pin_u_v = dc.uncertainty(&l.dc.pin);
        let c = dc.level(&l.dc.pin);
        (c - pin_peak - l.pin_u_v, c + pin_peak + l.pin_u_v)
    };
    l.cm_low_v = Some(lo);
    l.cm_high_v = Some(hi);
    if let Some(sup) = s.supply {
        let a = &s.amp;
        l.cm_headroom_v = Some(
            (lo - (sup.neg + a.cm_neg.unwrap_or(0.0)))
                .min((sup.pos - a.cm_pos.unwrap_or(0.0)) - hi),
        );
    }
}

/// The envelope at the internal output on the sweep points in the band:
/// the signal's peak and, with two inputs, the common mode's at each
/// frequency.
fn envelope(s: &Scenario, l: &mut Limits, sweep: &Sweep, peak: f64) {
    let cm_peak = s.source.cm_peak.unwrap_or(0.0).abs();
    let slew = present(s.amp.slew);
    let iout = present(s.amp.iout);
    l.envelope = sweep
        .points
        .iter()
        .filter(|p| p.f_hz >= s.band.0 && p.f_hz <= s.band.1)
        .map(|p| {
            let y = p.signals.amp_i.norm() / p.signals.int.norm();
            let cm = cm_peak * Driven::CommonMode.of(p).int.norm();
            EnvelopePoint {
                f_hz: p.f_hz,
                need: peak * p.signals.int.norm() + cm,
                slew_ceiling: slew.map(|sr| sr / (2.0 * PI * p.f_hz)),
                current_ceiling: iout
                    .map(|i| (i - l.i_dc_a.abs()).max(0.0) / y)
                    .filter(|v| v.is_finite()),
            }
        })
        .collect();
    l.envelope_limit = l.envelope.iter().find_map(|e| {
        [
            (l.swing_ceiling_v, "swing"),
            (e.slew_ceiling, "slew"),
            (e.current_ceiling, "current"),
        ]
        .into_iter()
        .find(|(c, _)| c.is_some_and(|c| e.need > c))
        .map(|(_, name)| (e.f_hz, name))
    });
}

/// The signal's band maximum of g, and the common mode's (0 without
/// `source.cm_peak` or a second input), each where it is largest: both
/// are peaks "anywhere in the band", so the need is their sum.
fn signal_and_cm_max(
    s: &Scenario,
    circuit: &Circuit,
    sweep: &Sweep,
    g: impl Fn(f64, &Signals) -> f64,
) -> (BandMax, f64) {
    let signal = band_max(sweep, s.band, circuit, Driven::Signal, &g);
    let cm_peak = s.source.cm_peak.unwrap_or(0.0);
    let cm = if cm_peak != 0.0 && circuit.net.drive2.is_some() {
        cm_peak.abs() * band_max(sweep, s.band, circuit, Driven::CommonMode, &g).value
    } else {
        0.0
    };
    (signal, cm)
}

/// The signal limits over the band (section "Signal limits"): the
/// signal's peak at each transfer's band maximum plus, with two inputs,
/// `source.cm_peak` at the common-mode transfer's band maximum.
fn signal_limits(s: &Scenario, l: &mut Limits, dc: &Dc, circuit: &Circuit, sweep: &Sweep) {
    let Some(peak) = s.signal_peak() else {
        return;
    };
    l.signal_given = true;
    let (int_max, int_cm) = signal_and_cm_max(s, circuit, sweep, |_, g| g.int.norm());
    let (pin_max, pin_cm) = signal_and_cm_max(s, circuit, sweep, |_, g| g.pin.norm());
    let (slew_max, slew_cm) =
        signal_and_cm_max(s, circuit, sweep, |f, g| 2.0 * PI * f * g.int.norm());
    let (i_max, i_cm) = signal_and_cm_max(s, circuit, sweep, |_, g| g.amp_i.norm());
    output_range(s, l, dc, 1.0, peak * int_max.value + int_cm);
    input_range(s, l, dc, peak * pin_max.value + pin_cm);
    l.slew_needed_v_per_s = Some(peak * slew_max.value + slew_cm);
    l.slew_at_hz = slew_max.f_hz;
    l.fpbw_hz = present(s.amp.slew)
        .map(|sr| sr / (2.0 * PI * peak * int_max.value))
        .filter(|f| f.is_finite());
    l.iout_peak_a = Some(l.i_dc_a.abs() + peak * i_max.value + i_cm);
    l.iout_at_hz = i_max.f_hz;
    l.iout_drawn = Some(drawn_by(circuit, i_max.f_hz));
    envelope(s, l, sweep, peak);
}

/// Every DC-error and signal-limit figure of the stage (the scenario must
/// be valid). `dc_gain` is the analysis's closed-loop gain at DC.
pub fn limits(s: &Scenario, circuit: &Circuit, sweep: &Sweep, dc_gain: f64) -> Limits {
    let a = &s.amp;
    let mut l = Limits {
        dc_given: a.vos.is_some()
            || a.vos_drift.is_some()
            || a.ib.is_some()
            || a.ios.is_some()
            || s.signal_dc().is_some()
            || s.source.cm.is_some()
            || !circuit.net.held.is_empty(),
        ..Limits::default()
    };
    if !l.dc_given && s.signal_peak().is_none() {
        return l;
    }
    let Some(t) = dc_transfers(circuit) else {
        return l;
    };
    l.dc = t;
    l.vos_at_temp = a.vos.unwrap_or(0.0) + a.vos_drift.unwrap_or(0.0) * (s.temp_c - 25.0).abs();
    let mut dc = Dc {
        source_dc: s.signal_dc().unwrap_or(0.0),
        cm: s.source.cm.unwrap_or(0.0),
        ib: a.current_at_temp(a.ib.unwrap_or(0.0), s.temp_c),
        ios: a.current_at_temp(a.ios.unwrap_or(0.0), s.temp_c),
        vos: l.vos_at_temp,
        cm_error: 0.0,
    };
    if let Some(k) = circuit.net.cm_error {
        dc.cm_error = dc.level(&t.cm).abs() * k.k0;
        dc.vos += dc.cm_error;
    }
    l.i_dc_a = dc.level(&t.amp_i);
    dc_errors(s, &mut l, &dc, dc_gain);
    if a.ib.is_some_and(|ib| ib != 0.0) {
        l.bias_balance_ohm = bias_balance(s, t.out.zp + t.out.zn);
    }
    signal_limits(s, &mut l, &dc, circuit, sweep);
    if s.signal_peak().is_none() && s.supply.is_some() {
        let mut t = l.clone();
        output_range(s, &mut t, &dc, 0.0, 0.0);
        input_range(s, &mut t, &dc, 0.0);
        l.dc_only = Some(DcOnly {
            headroom_low_v: t.headroom_low_v,
            headroom_high_v: t.headroom_high_v,
            cm_headroom_v: t.cm_headroom_v,
            cm_low_v: t.cm_low_v,
            cm_high_v: t.cm_high_v,
        });
    }
    l
}
