//! Stage kinds as data. Each kind is one file here declaring its parts
//! (name, two named nodes, resistor or capacitor, the parameter it reads,
//! the tolerance it spreads with), its input, where the reference returns,
//! its output terminal, the unit of its gain and its ideal gain from its
//! parts; [`KINDS`] is the registry. The netlist builder, the analyses,
//! the rules, the spread and the views read these declarations and never
//! ask which kind they have.

use crate::model::scenario::{Scenario, Stage, Topology};

mod common;
mod difference;
mod follower;
mod inverting;
mod non_inverting;
mod transimpedance;

/// The named nodes a kind wires its parts between. The builder maps them
/// onto the netlist: `Reference` is ground (through the reference input
/// where there is one), `Feedback` is the amplifier pin or the load
/// terminal, as the stage takes its feedback.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Node {
    Ground,
    /// Where the ground side of the stage returns.
    Reference,
    /// The stage's input terminal, after the source resistance.
    Input,
    /// The amplifier's + and − pins.
    Plus,
    Minus,
    /// The amplifier's output pin (before riso).
    AmpOut,
    /// Where the feedback is taken.
    Feedback,
    /// The load terminal (after riso).
    Load,
    /// The second input's terminal, after its own source resistance
    /// ([`Input::Pair`]).
    Input2,
    /// A node held at the kind's DC-only level ([`Kind::bias`]): that
    /// level in the operating point, ground in every frequency analysis
    /// (ground itself when the kind declares no level).
    Bias,
}

/// What a part is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Element {
    /// Ohms; zero (or absent, read as its default) joins the two nodes.
    Resistor,
    /// Farads; zero or absent is no part.
    Capacitor,
    /// Always a wire.
    Wire,
}

/// Which tolerance a part spreads with.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Tolerance {
    /// The stage's resistor tolerance (`stage.tolerance`).
    Resistor,
    /// The spread block's capacitor tolerance (`spread.cap_tol`).
    Capacitor,
    /// The spread block's photodiode capacitance tolerance
    /// (`spread.cd_tol`).
    Diode,
    /// It does not spread (a wire).
    None,
}

/// One part of a kind.
#[derive(Debug, Clone, Copy)]
pub struct PartDecl {
    /// Its name: the noise source key and label of a resistor.
    pub name: &'static str,
    pub a: Node,
    pub b: Node,
    pub element: Element,
    /// The parameter it reads (a `PARAMS` path; "" for a wire).
    pub param: &'static str,
    pub read: fn(&Scenario) -> Option<f64>,
    /// The value used when the parameter is absent.
    pub absent: f64,
    /// Whether the kind needs it (validation refuses it absent).
    pub required: bool,
    /// The value the part starts with when a kind switch brings it in.
    pub start: Option<f64>,
    /// The part is left out unless this other part has a value above 0
    /// (cf across an rf that is a wire would short nothing).
    pub with: Option<&'static str>,
    pub tolerance: Tolerance,
}

impl PartDecl {
    /// The part's value in this stage (its default when absent).
    pub fn value(&self, s: &Scenario) -> f64 {
        (self.read)(s).unwrap_or(self.absent)
    }
}

/// A wire between two nodes.
pub const fn wire(a: Node, b: Node) -> PartDecl {
    PartDecl {
        name: "wire",
        a,
        b,
        element: Element::Wire,
        param: "",
        read: |_| None,
        absent: 0.0,
        required: false,
        start: None,
        with: None,
        tolerance: Tolerance::None,
    }
}

/// The stage's inputs.
#[derive(Debug, Clone, Copy)]
pub enum Input {
    /// A voltage EMF behind the source resistance, returning to ground,
    /// into [`Node::Input`].
    Voltage,
    /// A current from ground into [`Node::Input`] (no source resistance:
    /// what shunts the source is the kind's own parts). The gain is V/A.
    Current,
    /// Two voltage inputs, each EMF returning to ground: input 1 behind
    /// the source resistance into [`Node::Input`], input 2 behind `r2`
    /// into [`Node::Input2`]. The signal is their difference, driven as
    /// V1 = −1/2, V2 = +1/2 per volt.
    Pair {
        /// Input 2's source resistance (ohms; 0 is an ideal EMF).
        r2: fn(&Scenario) -> f64,
    },
}

impl Input {
    /// How much of one volt (or ampere) of the kind's signal each input
    /// carries: (input 1, input 2).
    pub fn signal_weights(self) -> (f64, f64) {
        match self {
            Input::Voltage | Input::Current => (1.0, 0.0),
            Input::Pair { .. } => (-0.5, 0.5),
        }
    }
}

/// The unit of a kind's gain.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum GainUnit {
    /// V/V.
    #[default]
    VoltsPerVolt,
    /// V/A (a current input).
    VoltsPerAmp,
}

impl GainUnit {
    pub fn text(self) -> &'static str {
        match self {
            GainUnit::VoltsPerVolt => "V/V",
            GainUnit::VoltsPerAmp => "V/A",
        }
    }

    /// The unit of the gain's level, 20·log10 of its magnitude: dB of a
    /// ratio, dBΩ of a transimpedance in ohms.
    pub fn db(self) -> &'static str {
        match self {
            GainUnit::VoltsPerVolt => "dB",
            GainUnit::VoltsPerAmp => "dBΩ",
        }
    }
}

/// The E-series pairs a kind with a gain ratio can search (`pairs`).
#[derive(Debug, Clone, Copy)]
pub struct Pairs {
    /// The gain magnitude of a ratio rf/rg.
    pub gain: fn(f64) -> f64,
    /// The ratio rf/rg for a gain magnitude.
    pub ratio: fn(f64) -> f64,
    /// The gain magnitude must be above this, and why.
    pub above: Option<(f64, &'static str)>,
    /// The resistance the pair puts on the output at DC, from (rg, rf).
    pub load: fn(f64, f64) -> f64,
    /// The parameters the pair sets: the rg-like and the rf-like part
    /// (their names are the pair's JSON keys and column heads).
    pub parts: [&'static str; 2],
    /// Parameters set to the same two values (a matched second half).
    pub also: Option<[&'static str; 2]>,
}

impl Pairs {
    /// The two parts' names (`rg`, `rf`), from their parameter paths.
    pub fn names(&self) -> [&'static str; 2] {
        self.parts.map(|p| p.rsplit('.').next().unwrap_or(p))
    }
}

/// One stage kind.
#[derive(Debug, Clone, Copy)]
pub struct Kind {
    pub topology: Topology,
    /// Its parts, in the order their noise is listed.
    pub parts: &'static [PartDecl],
    pub input: Input,
    /// The amplifier pin tied to the reference, if any (its level is the
    /// reference's, not the signal's).
    pub reference: Option<Node>,
    /// The output terminal.
    pub output: Node,
    /// The DC-only level of [`Node::Bias`] (volts, held through 0 Ω), if
    /// the kind has such a node.
    pub bias: Option<fn(&Scenario) -> f64>,
    pub gain_unit: GainUnit,
    /// The ideal gain from the parts alone (the resistor ratio).
    pub gain: fn(&Stage) -> f64,
    /// Whether the gain is negative (a gain target must be too).
    pub negative: bool,
    /// Whether the source resistance adds to a part of the gain network
    /// (the input is not straight into a high-impedance pin).
    pub source_in_network: bool,
    /// The DC resistance the feedback network puts on the point where
    /// the feedback is taken (the − input's level follows from the kind).
    pub feedback_load: fn(&Stage) -> f64,
    /// The parts that belong to the signal source (a photodiode's own
    /// capacitance and shunt), by name: the input impedance is read with
    /// each at its absent value, as a voltage source's resistance is left
    /// out of it.
    pub source_parts: &'static [&'static str],
    /// The parts `stabilize` offers, by name.
    pub stabilize: &'static [&'static str],
    pub pairs: Option<Pairs>,
}

/// Every kind, in the order of [`Topology::ALL`].
pub static KINDS: [&Kind; 5] = [
    &non_inverting::KIND,
    &inverting::KIND,
    &follower::KIND,
    &transimpedance::KIND,
    &difference::KIND,
];

/// The kind of a topology.
pub fn kind(t: Topology) -> &'static Kind {
    KINDS
        .iter()
        .find(|k| k.topology == t)
        .copied()
        .unwrap_or(KINDS[0])
}

impl Kind {
    /// The part reading `param`, if the kind has one.
    pub fn part(&self, param: &str) -> Option<&'static PartDecl> {
        self.parts.iter().find(|p| p.param == param)
    }

    /// Whether anything in the kind returns to [`Node::Reference`] (a
    /// reference input can be given).
    pub fn has_reference(&self) -> bool {
        self.parts
            .iter()
            .any(|p| p.a == Node::Reference || p.b == Node::Reference)
    }

    /// Whether the kind has a part of this name.
    pub fn has(&self, name: &str) -> bool {
        self.parts.iter().any(|p| p.name == name)
    }
}

impl Topology {
    /// The kind this topology names.
    pub fn kind(self) -> &'static Kind {
        kind(self)
    }

    /// Whether the stage has an rg and an rf ratio to pick pairs for.
    pub fn has_resistors(self) -> bool {
        kind(self).pairs.is_some()
    }

    /// The topologies with an rg and an rf, as a list for messages: `sep`
    /// between the names (" or ", " and ").
    pub fn with_resistors(sep: &str) -> String {
        let names: Vec<&str> = Topology::ALL
            .into_iter()
            .filter(|t| t.has_resistors())
            .map(Topology::name)
            .collect();
        names.join(sep)
    }
}

impl Input {
    /// Whether the kind is driven by a current (its source fields are
    /// `idc`, `ipeak`, `cd`, `rsh`, `bias` and its step `size_a`).
    pub fn is_current(self) -> bool {
        matches!(self, Input::Current)
    }
}

/// The maximally flat cf of a current-input stage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Flat {
    /// 2·ω_t·R_f·C_i ≤ 1: the response is flat without a cf.
    NotNeeded,
    /// The exact value, farads.
    Cf(f64),
}

impl Scenario {
    /// The maximally flat cf of a stage driven by a current (second-order
    /// analysis with a single-pole amplifier, common practice): C_f =
    /// √(2·ω_t·R_f·C_i − 1)/(ω_t·R_f), ω_t = 2π·gbw, C_i the capacitance the
    /// kind puts from the − input to AC ground plus the pin's cin. None for a
    /// voltage input or without an rf.
    pub fn flat_cf(&self) -> Option<Flat> {
        let s = self;
        let k = s.stage.topology.kind();
        if !s.current_input() {
            return None;
        }
        let rf = k.parts.iter().find(|p| p.name == "rf")?.value(s);
        let grounded = |n: Node| matches!(n, Node::Ground | Node::Reference | Node::Bias);
        let ci: f64 = k
            .parts
            .iter()
            .filter(|p| p.element == Element::Capacitor)
            .filter(|p| {
                (p.a == Node::Minus && grounded(p.b)) || (p.b == Node::Minus && grounded(p.a))
            })
            .map(|p| p.value(s))
            .sum::<f64>()
            + crate::model::scenario::present(s.amp.cin).unwrap_or(0.0);
        let wt = 2.0 * std::f64::consts::PI * s.amp.gbw;
        let x = 2.0 * wt * rf * ci - 1.0;
        Some(if x <= 0.0 || rf <= 0.0 {
            Flat::NotNeeded
        } else {
            Flat::Cf(x.sqrt() / (wt * rf))
        })
    }

    /// Whether the stage's input is a current.
    pub fn current_input(&self) -> bool {
        kind(self.stage.topology).input.is_current()
    }

    /// The input's DC level: the source EMF's (V) or the input current
    /// (A), as the kind's input is driven.
    pub fn signal_dc(&self) -> Option<f64> {
        if self.current_input() {
            self.source.idc
        } else {
            self.source.dc
        }
    }

    /// The signal's peak at the input (V or A), the level the limits are
    /// checked at.
    pub fn signal_peak(&self) -> Option<f64> {
        if self.current_input() {
            self.source.ipeak
        } else {
            self.source.peak
        }
    }

    /// The unit of the kind's input signal: "A" for a current, else "V".
    pub fn input_unit(&self) -> &'static str {
        if self.current_input() {
            "A"
        } else {
            "V"
        }
    }

    /// The file field of the signal's peak at the input.
    pub fn peak_field(&self) -> &'static str {
        if self.current_input() {
            "source.ipeak"
        } else {
            "source.peak"
        }
    }

    /// The step the time-domain analysis applies (V or A).
    pub fn step_size(&self) -> f64 {
        use crate::model::scenario::{DEFAULT_STEP_A, DEFAULT_STEP_V};
        if self.current_input() {
            self.step.and_then(|x| x.size_a).unwrap_or(DEFAULT_STEP_A)
        } else {
            self.step.and_then(|x| x.size).unwrap_or(DEFAULT_STEP_V)
        }
    }

    /// The gain the kind's parts set (its resistor ratio).
    pub fn nominal_gain(&self) -> f64 {
        (kind(self.stage.topology).gain)(&self.stage)
    }
}
