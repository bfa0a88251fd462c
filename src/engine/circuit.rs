//! The stage's network ready to solve at any frequency, and what one solve
//! gives: a [`Point`] of the sweep and the [`Signals`] inside the stage.

pub use crate::engine::netlist::MAX_NOISE;
use crate::engine::netlist::{AmpModel, Coupling, Excitation, LoadState, Netlist};
use crate::model::scenario::Scenario;
use crate::num::refine::log_grid;
use crate::num::solver::{Lu, Vector, MAXN, ZERO};
use num_complex::Complex64 as C64;
use std::cell::RefCell;
use std::f64::consts::PI;

/// Default sweep: 0.01 Hz to 1 GHz.
pub const SWEEP_START_HZ: f64 = 0.01;
pub const SWEEP_STOP_HZ: f64 = 1.0e9;
/// Points per decade of the sweep.
pub const POINTS_PER_DECADE: usize = 30;

/// Input impedances above this are reported as open (the solve cannot
/// resolve them against the source's own current). An input with no path
/// into the stage (no resistor or rin at DC, no capacitor either at any
/// frequency) is open whatever the solve gives.
pub const ZIN_OPEN_OHM: f64 = 1.0e15;

/// Below this |A·y| the loop gain is read from the passive network instead
/// (see `Circuit::passive_loop`): the full solve keeps about 16 digits of
/// the largest signal, so a loop gain under 1e-6 may keep fewer than ten.
const PASSIVE_LOOP_BELOW: f64 = 1e-6;

/// Everything solved at one frequency.
#[derive(Debug, Clone, Copy)]
pub struct Point {
    pub f_hz: f64,
    /// Closed-loop gain V(out)/V(source EMF).
    pub gain: C64,
    /// Loop gain (return ratio of the controlled source).
    pub loop_gain: C64,
    /// The amplifier's open-loop gain A(f) as modelled (a0 and its
    /// poles): with the loop gain T, the noise gain 1/β = A/T.
    pub open_loop: C64,
    /// Output impedance at the load terminal, load removed, riso included
    /// (source EMF shorted, its r in place).
    pub zout: C64,
    /// Output impedance at the amplifier's output pin (before riso), with
    /// riso and the load removed (source EMF shorted, its r in place).
    pub zout_pin: C64,
    /// Input impedance seen by the source, source r excluded (and the
    /// source's own parts a kind declares, a photodiode's cd and rsh);
    /// None = open.
    /// With two inputs, input 1's (input 2's EMF at 0 V behind its own
    /// source resistance).
    pub zin: Option<C64>,
    /// The common-mode gain V(out)/V with both input EMFs at 1 V: a1 + a2
    /// (None with one input).
    pub cm_gain: Option<C64>,
    /// Output noise density contributions, V²/Hz, in netlist noise order.
    pub noise_psd: [f64; MAX_NOISE],
    /// The signal inside the stage, per volt of source EMF.
    pub signals: Signals,
    /// With two inputs, the same per volt of common mode (both EMFs at
    /// 1 V); None with one input.
    pub cm_signals: Option<Signals>,
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

    /// The noise gain 1/β = A/T: the gain the loop closes to, where the
    /// open-loop gain |A| and it meet the loop gain is 1 (NaN without a
    /// loop).
    pub fn noise_gain(&self) -> C64 {
        self.open_loop / self.loop_gain
    }
}

/// A netlist ready to be evaluated at any frequency.
pub struct Circuit {
    pub net: Netlist,
    /// Reused matrix storage, so a point costs no large copies.
    work: RefCell<Lu>,
    /// The stage without its source's own parts (`Kind::source_parts`):
    /// where the input impedance is read, when the kind declares any.
    bare: Option<Box<Circuit>>,
}

impl Circuit {
    pub fn new(s: &Scenario) -> Circuit {
        let bare = without_source(s);
        Circuit {
            bare: bare.map(|b| Box::new(Circuit::of(Netlist::build(&b, AmpModel::Real)))),
            ..Circuit::of(Netlist::build(s, AmpModel::Real))
        }
    }

    /// A netlist built elsewhere (a kind given directly) ready to solve.
    pub fn of(net: Netlist) -> Circuit {
        Circuit {
            net,
            work: RefCell::new(Lu::zeroed()),
            bare: None,
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
    /// the riso + load branch taken out; NaN with the feedback at the load.
    fn zout_pin(&self, lu: &Lu, s: C64) -> C64 {
        let net = &self.net;
        let Some(a) = net.amp_node else {
            return ZERO;
        };
        // With the feedback taken after riso, taking riso out opens the
        // loop: there is no closed-loop pin impedance to give (NaN, read
        // as null).
        if net.feedback_at_load {
            return C64::new(f64::NAN, f64::NAN);
        }
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
            open_loop: ZERO,
            zout: ZERO,
            zout_pin: ZERO,
            zin: None,
            cm_gain: None,
            noise_psd: [0.0; MAX_NOISE],
            signals: Signals::default(),
            cm_signals: None,
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
        self.signals_for(f_hz, &self.net.drive_rhs())
    }

    /// The signals per volt of common mode at one frequency (zeros with
    /// one input or where the matrix is singular).
    pub fn cm_signals_at(&self, f_hz: f64) -> Signals {
        match self.net.drive2 {
            Some(_) => self.signals_for(f_hz, &self.net.rhs(Excitation::CommonMode)),
            None => Signals::default(),
        }
    }

    fn signals_for(&self, f_hz: f64, rhs: &Vector) -> Signals {
        let s = C64::new(0.0, 2.0 * PI * f_hz);
        match self.factor_at(s) {
            Some(lu) => {
                let x = lu.solve(rhs);
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
        let loop_gain = match ay.norm() < PASSIVE_LOOP_BELOW {
            true => self
                .passive_loop(s)
                .unwrap_or(ay / (C64::new(1.0, 0.0) - ay)),
            false => ay / (C64::new(1.0, 0.0) - ay),
        };
        (x, gain, loop_gain)
    }

    /// The loop gain from the passive network (the amplifier's gain set to
    /// 0): T = loop_factor · minus_vd(M₀⁻¹ e_amp). Where T is tiny, the full
    /// matrix's amplifier entries (A/ro against a milliohm load and a
    /// teraohm rf) swamp the pin voltage that carries it, and the
    /// Sherman–Morrison form can return noise, even of the wrong sign; the
    /// passive matrix has no such entries. One more factorisation, at those
    /// points only.
    fn passive_loop(&self, s: C64) -> Option<C64> {
        let net = &self.net;
        let mut m = [[ZERO; MAXN]; MAXN];
        net.stamp_passive_into(s, &mut m);
        let lu = Lu::factor(m, net.dim).ok()?;
        let mut e = [ZERO; MAXN];
        e[net.amp_row] = C64::new(1.0, 0.0);
        let w = lu.solve(&e);
        let t = net.loop_factor(s) * net.minus_vd(&w[..net.dim]);
        t.is_finite().then_some(t)
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

    /// Input `k`'s impedance (0 or 1) from a solve with its EMF at 1 V and
    /// the other's at 0 V: its terminal's voltage over the current it
    /// delivers, its own source resistance excluded; None when open.
    fn zin_of(&self, k: usize, f_hz: f64, x: &[C64]) -> Option<C64> {
        let net = &self.net;
        let (paths, term) = match k {
            0 => (net.input_paths, net.term),
            _ => (net.input2_paths?, net.term2),
        };
        let i_in = net.input_current(k, 1.0, x);
        let open = !paths.any || (f_hz == 0.0 && !paths.dc);
        if open || i_in == ZERO {
            return None;
        }
        let z = Netlist::node_v(x, term) / i_in;
        let m2 = z.norm_sqr();
        (m2.is_finite() && m2 < ZIN_OPEN_OHM * ZIN_OPEN_OHM).then_some(z)
    }

    /// Input `k`'s impedance at one frequency (see [`Circuit::eval`]'s
    /// `zin`): None when open, singular or absent.
    pub fn zin_input(&self, k: usize, f_hz: f64) -> Option<C64> {
        let e = Excitation::Input(k);
        let x = self.solve_at(f_hz, &[self.net.rhs(e)])?;
        self.zin_of(k, f_hz, &x[0][..self.net.dim])
    }

    /// Solve at frequency f (f = 0 is DC). None if the matrix is singular.
    pub fn eval(&self, f_hz: f64) -> Option<Point> {
        let net = &self.net;
        let s = C64::new(0.0, 2.0 * PI * f_hz);
        let lu = self.factor_at(s)?;
        let n = net.dim;

        // Gain, loop gain and Zin: source EMF = 1 V.
        let (x, gain, loop_gain) = self.gain_and_loop_solve(&lu, s);
        // Input 1 alone: the signal solve when it carries the whole signal.
        let zin = match &self.bare {
            Some(bare) => bare.zin_input(0, f_hz),
            None if net.weights == (1.0, 0.0) => self.zin_of(0, f_hz, &x[..n]),
            None => self.zin_of(0, f_hz, &lu.solve(&net.rhs(Excitation::Input(0)))[..n]),
        };
        let cm_signals = net
            .drive2
            .map(|_| self.signals_of(s, &lu.solve(&net.rhs(Excitation::CommonMode))[..n]));

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
            open_loop: net.open_loop(s),
            zout,
            zout_pin,
            zin,
            cm_gain: cm_signals.map(|c| c.out),
            noise_psd,
            signals: self.signals_of(s, &x[..n]),
            cm_signals,
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

/// The log-spaced sweep frequencies from `lo` to `hi`.
pub fn sweep_frequencies(lo: f64, hi: f64) -> Vec<f64> {
    log_grid(lo, hi, POINTS_PER_DECADE as f64)
}

/// The stage without its source's own parts (the kind's `source_parts`),
/// each at its absent value; None where the kind declares none.
fn without_source(s: &Scenario) -> Option<Scenario> {
    let kind = s.stage.topology.kind();
    if kind.source_parts.is_empty() {
        return None;
    }
    let mut bare = s.clone();
    for p in kind
        .parts
        .iter()
        .filter(|p| kind.source_parts.contains(&p.name))
    {
        if let Some(param) = crate::model::params::param(p.param) {
            param.set(&mut bare, None);
        }
    }
    Some(bare)
}
