//! Builds the stage as a small netlist and stamps its modified-nodal matrix
//! at any complex frequency. Topologies differ only in how the builder wires
//! the same elements; the solver never knows which one it has.

use crate::model::scenario::{present, Amp, Feedback, Scenario};
use crate::model::stages::{kind, Element as Kinds, Input, Kind, Node, PartDecl, KINDS};
use crate::num::solver::{Matrix, Vector, MAXN, ZERO};
use num_complex::Complex64 as C64;

/// Logical nodes of a stage, before zero-ohm wires are merged.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[repr(usize)]
enum Pin {
    Gnd,
    /// Source EMF.
    Src,
    /// The stage's input terminal, after the source resistance.
    Term,
    /// The op-amp's + pin, as the outside sees it.
    InP,
    /// Behind the voltage-noise generator: the amplifier's sensed + input
    /// (rin, cin and the + current noise stay at the pins).
    InPi,
    InN,
    /// Amplifier output pin, where feedback is taken.
    Amp,
    /// Behind ro: the controlled source.
    Int,
    /// Load terminal.
    Out,
    /// The second input's EMF and terminal ([`Input::Pair`]).
    Src2,
    Term2,
    /// A node held at a DC-only level ([`Node::Bias`]).
    Bias,
    /// The reference input's EMF and its node (after its resistance):
    /// where [`Node::Reference`] is when the scenario gives a reference.
    RefSrc,
    Ref,
}
const PINS: usize = 14;
/// The pins that are only an EMF's far end: merged with ground behind a
/// Norton source, or with the terminal when the source is ideal; never a
/// node of their own.
const EMF_PINS: usize = 3;

/// What a noise source is, so rules can tell what the designer can change.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoiseKind {
    /// A resistor of the stage (rg, rf, riso): the designer picks it.
    StageResistor,
    /// The signal source's own resistance (either input's): given by the
    /// application.
    SourceResistance,
    /// The amplifier's voltage noise.
    AmpVoltage,
    /// The amplifier's current noise at one input.
    AmpCurrent,
    /// The shot noise of a current input's DC current: given by the
    /// application.
    SourceShot,
}

/// A noise source of the stage and the way it couples in.
#[derive(Debug, Clone)]
pub struct NoiseSource {
    /// Stable key (JSON) and the name shown to people.
    pub key: &'static str,
    pub label: &'static str,
    pub kind: NoiseKind,
    pub coupling: Coupling,
    /// White density: A²/Hz for currents, V²/Hz for voltages.
    pub white: f64,
    /// 1/f corner in Hz (0 = none): density · (1 + fc/f).
    pub corner: f64,
}

#[derive(Debug, Clone, Copy)]
pub enum Coupling {
    /// A current from node `a` to node `b` (row indices, None = ground).
    Current(Option<usize>, Option<usize>),
    /// A voltage in series with a branch (its row index).
    Branch(usize),
}

impl NoiseSource {
    /// Density at frequency f (with the 1/f rise): unbounded at DC when a
    /// corner is given (reported as undefined), white without one.
    pub fn density(&self, f: f64) -> f64 {
        match (self.corner > 0.0 && self.white > 0.0, f > 0.0) {
            (true, true) => self.white * (1.0 + self.corner / f),
            (true, false) => f64::INFINITY,
            (false, _) => self.white,
        }
    }
}

#[derive(Debug, Clone, Copy)]
enum Element {
    Conductance(Option<usize>, Option<usize>, f64),
    Capacitance(Option<usize>, Option<usize>, f64),
}

/// The op-amp model a netlist is built with.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AmpModel {
    /// The scenario's model: finite A(s), rin, cin, ro.
    Real,
    /// A nullor: no input current, zero differential input, zero output
    /// resistance (the same passive network around an ideal op-amp).
    Nullor,
}

/// The stamped form of one stage.
#[derive(Debug, Clone)]
pub struct Netlist {
    /// Unknowns: node voltages, then the branches (input 1's ideal EMF,
    /// noise probe, amplifier, input 2's ideal EMF, the held levels).
    pub dim: usize,
    elements: Vec<Element>,
    /// How input 1 (the only input of most kinds) drives the stage.
    pub drive: Drive,
    /// How input 2 drives the stage ([`Input::Pair`]).
    pub drive2: Option<Drive>,
    /// The share of one unit of the kind's signal each input carries
    /// ([`Input::signal_weights`]).
    pub weights: (f64, f64),
    /// The DC-only EMFs: their level in the operating point, ground in
    /// every frequency analysis.
    pub held: Vec<Held>,
    /// The branch of the voltage generator in series with the + input
    /// (noise and offset).
    pub en_row: usize,
    /// The + and − pins and the amplifier's output pin.
    pub inp: Option<usize>,
    pub inn: Option<usize>,
    pub amp_node: Option<usize>,
    /// The unknown whose equation carries the controlled source: its
    /// branch row (ideal output) or the output node (Norton form).
    pub amp_row: usize,
    /// Norton form: the source is a current (A/ro)·Vd into the output node
    /// with ro to ground; 0 when it is a voltage-source branch.
    inv_ro: f64,
    en_nodes: (Option<usize>, Option<usize>),
    /// Amplifier: output node, sense + and − nodes.
    amp_out: Option<usize>,
    sense_p: Option<usize>,
    sense_n: Option<usize>,
    a0: f64,
    wp1: f64,
    wp2: Option<f64>,
    model: AmpModel,
    pub out: Option<usize>,
    pub term: Option<usize>,
    /// Input 2's terminal ([`Node::Input2`]).
    pub term2: Option<usize>,
    /// How the input terminal reaches into the stage (the source's own
    /// resistance left out): decides an open input structurally.
    pub input_paths: InputPaths,
    /// The same for input 2 (its own source resistance left out).
    pub input2_paths: Option<InputPaths>,
    /// The isolation resistor between the amplifier pin and the load
    /// terminal, ohms (0 when absent: the two are one node).
    pub riso: f64,
    /// The feedback is taken at the load terminal (after riso): the pin
    /// impedance with riso taken out is then no closed loop's.
    pub feedback_at_load: bool,
    /// Load at the out node (removed for Zout).
    pub load_g: f64,
    pub load_c: f64,
    pub noise: Vec<NoiseSource>,
    /// The amplifier's common-mode error per volt of V_cm (the average of
    /// the two pins), in series with the + input (None: infinite rejection
    /// or a nullor).
    pub cm_error: Option<Rejection>,
    /// The error per volt of supply ripple, in the same place.
    pub supply_error: Option<Rejection>,
}

/// An error that an amplifier rejects by a figure in dB up to a corner
/// and 20 dB/decade less above it: k0·(1 + s/ω_c) per volt.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rejection {
    /// 10^(−dB/20).
    pub k0: f64,
    /// 2π·corner (rad/s); None: flat.
    pub w_corner: Option<f64>,
}

impl Rejection {
    /// From a figure in dB and its corner in Hz (None without a figure).
    pub fn of(db: Option<f64>, corner: Option<f64>) -> Option<Rejection> {
        db.map(|db| Rejection {
            k0: 10f64.powf(-db / 20.0),
            w_corner: corner.map(|f| 2.0 * std::f64::consts::PI * f),
        })
    }

    /// The error per volt at s.
    pub fn at(&self, s: C64) -> C64 {
        match self.w_corner {
            Some(w) => self.k0 * (C64::new(1.0, 0.0) + s / w),
            None => C64::new(self.k0, 0.0),
        }
    }
}

/// A voltage-source branch in a row-major `n`×`n` matrix: row `row`
/// senses `node` and its current enters that node's equation.
fn branch(g: &mut [f64], n: usize, row: usize, node: Option<usize>, sign: f64) {
    if let Some(i) = node {
        g[row * n + i] += sign;
        g[i * n + row] += sign;
    }
}

/// The time-domain equations `C·x' + G·x = b·E(t)` of a stage (row-major
/// `n`×`n` matrices; see [`Netlist::time_equations`]).
#[derive(Debug, Clone)]
pub struct TimeEquations {
    pub n: usize,
    pub g: Vec<f64>,
    pub c: Vec<f64>,
    /// The right-hand side per volt of the kind's signal.
    pub b: Vec<f64>,
    /// The constant right-hand side of the DC-only EMFs at their levels.
    pub k: Vec<f64>,
    /// The nodes an ideal signal EMF fixes: (node, its branch row, volts
    /// per volt of signal).
    pub fixed: Vec<(usize, usize, f64)>,
    /// The nodes an ideal DC-only EMF holds: (node, branch row, level).
    pub held: Vec<(usize, usize, f64)>,
    /// The load terminal.
    pub out: Option<usize>,
    /// The op-amp's first internal state (the one the slew and swing
    /// limits act on) and, with a second pole, the second.
    pub x1: usize,
    pub x2: Option<usize>,
    pub tau1: f64,
    /// The amplifier's output current (through ro) as a sum of
    /// coefficient × unknown.
    pub amp_current: Vec<(usize, f64)>,
}

/// Whether the load is stamped (it is removed to read Zout exactly).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LoadState {
    Attached,
    Removed,
}

/// How one input (or DC-only EMF) drives the stage: a voltage source is a
/// Norton current into its terminal when it has resistance (one unknown
/// fewer), else an EMF branch; a current input is a current.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Drive {
    /// 1 V behind `g` siemens, stamped as a conductance and a current `g`.
    Norton { node: Option<usize>, g: f64 },
    /// An ideal EMF: V(node) = 1 V, with its branch current at `row`.
    Branch { node: Option<usize>, row: usize },
    /// 1 A from ground into `node`.
    Current { node: Option<usize> },
}

impl Drive {
    /// Add `w` units of this drive to a right-hand side.
    fn add_to(self, b: &mut [C64], w: f64) {
        match self {
            Drive::Norton { node: Some(i), g } => b[i] += C64::new(g * w, 0.0),
            Drive::Branch { row, .. } => b[row] += C64::new(w, 0.0),
            Drive::Current { node: Some(i) } => b[i] += C64::new(w, 0.0),
            Drive::Norton { node: None, .. } | Drive::Current { node: None } => {}
        }
    }

    /// The branch row and node of an ideal EMF.
    fn branch(self) -> Option<(usize, Option<usize>)> {
        match self {
            Drive::Branch { node, row } => Some((row, node)),
            _ => None,
        }
    }
}

/// A DC-only EMF: `level` volts in the operating point, 0 V (its node at
/// AC ground through its resistance) in every frequency analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Held {
    pub drive: Drive,
    pub level: f64,
}

/// A right-hand side the stage can be solved for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Excitation {
    /// One unit (V or A) of the kind's signal: each input at its weight.
    Signal,
    /// One unit at input 1 (0) or input 2 (1), the other input at 0.
    Input(usize),
    /// Both inputs at one unit (the common mode of a pair).
    CommonMode,
    /// The DC-only EMFs at their levels (no signal): the constant part of
    /// the operating point.
    Held,
}

/// Most noise sources a stage has (both inputs' source resistances, the
/// kind's resistors, en, in+, in−).
pub const MAX_NOISE: usize = 12;

/// Boltzmann constant, J/K (SI 2019, exact).
pub const BOLTZMANN: f64 = 1.380649e-23;
/// Elementary charge, C (SI 2019, exact).
pub const ELEMENTARY_CHARGE: f64 = 1.602_176_634e-19;

/// The noisy resistors a stage can have: the source's own, and every
/// resistor a kind declares (labelled by its name).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Noisy {
    Source,
    Source2,
    Reference,
    Part(&'static str),
}
/// The amplifier's noise sources: en and in at each input.
const AMP_NOISE: usize = 3;
const _: () = {
    // Every kind's resistors, the source's and the amplifier's fit.
    let mut i = 0;
    while i < KINDS.len() {
        let parts = KINDS[i].parts;
        let sources = match KINDS[i].input {
            Input::Voltage => 1,
            // A current input's shot noise.
            Input::Current => 1,
            Input::Pair { .. } => 2,
        };
        // The reference input's resistance is one more.
        let (mut j, mut n) = (0, sources + 1 + AMP_NOISE);
        while j < parts.len() {
            if matches!(parts[j].element, Kinds::Resistor) {
                n += 1;
            }
            j += 1;
        }
        assert!(n <= MAX_NOISE);
        i += 1;
    }
};
/// At most every pin but ground and the EMF pins is a node (an EMF is
/// merged with ground behind a Norton source, or with its terminal when
/// the source is ideal), plus at most six branches (both inputs' ideal
/// EMFs, the held level, an ideal reference, the voltage-noise probe, the
/// amplifier output): the matrix always fits.
const _: () = assert!(PINS - 1 - EMF_PINS + 6 <= MAXN);

/// One two-terminal part between logical pins.
#[derive(Debug, Clone, Copy)]
enum Part {
    /// Ohms (zero = a wire) and, when it is noisy, which noise it carries.
    Resistor(Pin, Pin, f64, Option<Noisy>),
    Capacitor(Pin, Pin, f64),
    Wire(Pin, Pin),
}

/// The netlist pin a kind's named node is: the feedback point is the
/// amplifier pin or the load terminal, as the stage takes it; the held
/// node is ground unless the kind gives it a level, the reference ground
/// unless the scenario gives a reference input.
fn pin(n: Node, feedback: Feedback, held: bool, reference: bool) -> Pin {
    match n {
        Node::Reference if reference => Pin::Ref,
        Node::Ground | Node::Reference => Pin::Gnd,
        Node::Bias if held => Pin::Bias,
        Node::Bias => Pin::Gnd,
        Node::Input => Pin::Term,
        Node::Input2 => Pin::Term2,
        Node::Plus => Pin::InP,
        Node::Minus => Pin::InN,
        Node::Feedback if feedback == Feedback::Load => Pin::Out,
        Node::AmpOut | Node::Feedback => Pin::Amp,
        Node::Load => Pin::Out,
    }
}

/// The parts the stage's kind declares, on netlist pins.
fn kind_parts<'a>(s: &'a Scenario, decl: &'static Kind) -> impl Iterator<Item = Part> + 'a {
    let st = &s.stage;
    let held = decl.bias.is_some();
    let reference = s.reference.is_some();
    let shown = move |d: &PartDecl| {
        d.with
            .and_then(|w| decl.parts.iter().find(|p| p.name == w))
            .is_none_or(|w| w.value(s) > 0.0)
    };
    decl.parts
        .iter()
        .filter(move |d| shown(d))
        .filter_map(move |d| {
            let pin = |n| pin(n, st.feedback, held, reference);
            let (a, b) = (pin(d.a), pin(d.b));
            match d.element {
                Kinds::Wire => Some(Part::Wire(a, b)),
                Kinds::Resistor => {
                    Some(Part::Resistor(a, b, d.value(s), Some(Noisy::Part(d.name))))
                }
                Kinds::Capacitor => present(Some(d.value(s))).map(|c| Part::Capacitor(a, b, c)),
            }
        })
}

/// A voltage source's EMF pin and resistance: with resistance, the EMF is
/// shorted into ground and the source becomes a Norton current into its
/// terminal; the resistor (and its noise) then runs from the terminal to
/// ground. Without, the EMF pin is the terminal.
fn emf_parts(p: &mut Vec<Part>, emf: Pin, term: Pin, r: f64, noisy: Noisy) {
    if r > 0.0 {
        p.push(Part::Wire(emf, Pin::Gnd));
    }
    p.push(Part::Resistor(emf, term, r, Some(noisy)));
}

/// Input 2's source resistance, for a kind with two inputs.
fn second_r(s: &Scenario, decl: &Kind) -> Option<f64> {
    match decl.input {
        Input::Pair { r2 } => Some(r2(s)),
        Input::Voltage | Input::Current => None,
    }
}

/// Every part of the stage: the inputs, the kind's parts, amplifier.
fn parts(s: &Scenario, decl: &'static Kind, model: AmpModel) -> Vec<Part> {
    use Pin::*;
    let amp = &s.amp;
    let mut p = Vec::new();
    if !matches!(decl.input, Input::Current) {
        emf_parts(&mut p, Src, Term, s.source.r.unwrap_or(0.0), Noisy::Source);
    }
    if let Some(r2) = second_r(s, decl) {
        emf_parts(&mut p, Src2, Term2, r2, Noisy::Source2);
    }
    // The reference input: its EMF behind r, the bypass capacitor after r.
    if let Some(rf) = s.reference {
        emf_parts(&mut p, RefSrc, Ref, rf.r, Noisy::Reference);
        if let Some(c) = present(rf.c).filter(|_| rf.r > 0.0) {
            p.push(Part::Capacitor(Ref, Gnd, c));
        }
    }
    p.extend(kind_parts(s, decl));
    match model {
        AmpModel::Real => {
            if let Some(rin) = amp.rin {
                p.push(Part::Resistor(InP, InN, rin, None));
            }
            if let Some(cin) = present(amp.cin) {
                p.push(Part::Capacitor(InP, Gnd, cin));
                p.push(Part::Capacitor(InN, Gnd, cin));
            }
            // The controlled source is stamped in Norton form (one node and
            // one branch fewer): ro runs from the output to ground and a
            // current A·Vd/ro flows into the output.
            if amp.ro > 0.0 {
                p.push(Part::Wire(Int, Gnd));
            }
            p.push(Part::Resistor(Int, Amp, amp.ro, None));
        }
        AmpModel::Nullor => p.push(Part::Wire(Int, Amp)),
    }
    p
}

/// The two pins of a part.
fn ends(part: &Part) -> (Pin, Pin) {
    match *part {
        Part::Resistor(p, q, ..) | Part::Capacitor(p, q, _) | Part::Wire(p, q) => (p, q),
    }
}

/// Merge the pins joined by wires and zero-ohm resistors, then number the
/// merged nodes (ground is None): each pin's row index. A pin no part
/// touches (an input the kind does not have) gets no row; the sensed +
/// input, reached only through the noise probe's branch, always does.
fn number_nodes(parts: &[Part]) -> ([Option<usize>; PINS], usize) {
    let mut b = Builder {
        parent: std::array::from_fn(|i| i),
    };
    let mut used = [false; PINS];
    used[Pin::InPi as usize] = true;
    for part in parts {
        let (p, q) = ends(part);
        used[p as usize] = true;
        used[q as usize] = true;
        match *part {
            Part::Wire(p, q) => b.wire(p, q),
            Part::Resistor(p, q, 0.0, _) => b.wire(p, q),
            _ => {}
        }
    }
    let mut index = [None; PINS];
    let mut count = 0;
    let gnd_root = b.find(Pin::Gnd as usize);
    for p in 0..PINS {
        let r = b.find(p);
        if r == gnd_root || !used[p] {
            continue;
        }
        if index[r].is_none() {
            index[r] = Some(count);
            count += 1;
        }
        index[p] = index[r];
    }
    (index, count)
}

/// The admittance elements and the resistors' thermal noise.
fn stamp_parts(
    parts: &[Part],
    node: impl Fn(Pin) -> Option<usize>,
    kt: f64,
) -> (Vec<Element>, Vec<NoiseSource>) {
    let mut elements = Vec::new();
    let mut noise = Vec::new();
    for part in parts {
        match *part {
            Part::Resistor(p, q, r, tag) if r != 0.0 && node(p) != node(q) => {
                let (a, c) = (node(p), node(q));
                elements.push(Element::Conductance(a, c, 1.0 / r));
                if let Some((key, label, kind)) = tag.map(|t| match t {
                    Noisy::Source => ("source_r", "source r", NoiseKind::SourceResistance),
                    Noisy::Source2 => (
                        "source_r2",
                        "source r, input 2",
                        NoiseKind::SourceResistance,
                    ),
                    Noisy::Reference => ("reference_r", "reference r", NoiseKind::StageResistor),
                    Noisy::Part(name) => (name, name, NoiseKind::StageResistor),
                }) {
                    noise.push(NoiseSource {
                        key,
                        label,
                        kind,
                        coupling: Coupling::Current(a, c),
                        white: 4.0 * kt / r,
                        corner: 0.0,
                    });
                }
            }
            Part::Capacitor(p, q, c) if node(p) != node(q) => {
                elements.push(Element::Capacitance(node(p), node(q), c));
            }
            _ => {}
        }
    }
    (elements, noise)
}

/// The amplifier's own noise: en in the branch `en_row`, in at each input.
fn amp_noise(amp: &Amp, en_row: usize, node: impl Fn(Pin) -> Option<usize>) -> [NoiseSource; 3] {
    let current = |key, label, pin| NoiseSource {
        key,
        label,
        kind: NoiseKind::AmpCurrent,
        coupling: Coupling::Current(node(pin), None),
        white: amp.inoise * amp.inoise,
        corner: amp.inoise_corner.unwrap_or(0.0),
    };
    [
        NoiseSource {
            key: "vnoise",
            label: "amp voltage noise",
            kind: NoiseKind::AmpVoltage,
            coupling: Coupling::Branch(en_row),
            white: amp.vnoise * amp.vnoise,
            corner: amp.vnoise_corner.unwrap_or(0.0),
        },
        current("inoise_plus", "amp current noise +", Pin::InP),
        current("inoise_minus", "amp current noise −", Pin::InN),
    ]
}

/// Whether current from the source can enter the stage: through
/// resistors and wires alone (at DC), or through capacitors too.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct InputPaths {
    pub dc: bool,
    pub any: bool,
}

/// An input terminal's paths to ground, its own source resistor left out
/// (it is the source's, not the stage's); the amplifier's output source
/// joins its internal node to ground, and so does every EMF (the other
/// input's, a held level). The + input's noise generator leads only to
/// the sensing input, which draws no current, so it is no path.
fn input_paths(parts: &[Part], term: Pin, own: Noisy) -> InputPaths {
    let reaches = |with_caps: bool| {
        let mut b = Builder {
            parent: std::array::from_fn(|i| i),
        };
        for p in [Pin::Int, Pin::Bias, Pin::Src, Pin::Src2, Pin::RefSrc] {
            b.wire(p, Pin::Gnd);
        }
        for part in parts {
            match *part {
                Part::Wire(p, q) => b.wire(p, q),
                Part::Resistor(p, q, _, tag) if tag != Some(own) => b.wire(p, q),
                Part::Capacitor(p, q, _) if with_caps => b.wire(p, q),
                _ => {}
            }
        }
        b.find(term as usize) == b.find(Pin::Gnd as usize)
    };
    InputPaths {
        dc: reaches(false),
        any: reaches(true),
    }
}

/// A voltage source's drive: a Norton current into its terminal behind
/// resistance, else an EMF branch (taking the next free row).
/// The held levels' ideal EMFs, each with its branch row from `next`:
/// the kind's bias level (straight onto its node), then the reference
/// input through its resistance.
fn held_levels(
    s: &Scenario,
    decl: &Kind,
    node: impl Fn(Pin) -> Option<usize>,
    next: &mut usize,
) -> Vec<Held> {
    let bias = decl.bias.map(|level| Held {
        drive: voltage_drive(node(Pin::Bias), node(Pin::Bias), 0.0, next),
        level: level(s),
    });
    let reference = s.reference.map(|rf| Held {
        drive: voltage_drive(node(Pin::RefSrc), node(Pin::Ref), rf.r, next),
        level: rf.v,
    });
    bias.into_iter().chain(reference).collect()
}

/// Schottky: a DC current I carries a white current noise of 2·q·|I|
/// A²/Hz, injected where the input current enters (`term`).
fn shot_noise(s: &Scenario, term: Option<usize>) -> NoiseSource {
    NoiseSource {
        key: "shot",
        label: "input shot noise",
        kind: NoiseKind::SourceShot,
        coupling: Coupling::Current(None, term),
        white: 2.0 * ELEMENTARY_CHARGE * s.signal_dc().unwrap_or(0.0).abs(),
        corner: 0.0,
    }
}

/// Add `v.0` at column `at.0` and `v.1` at column `at.1` of row `row`
/// (a node on ground adds nothing).
fn add_pair(m: &mut Matrix, row: usize, at: (Option<usize>, Option<usize>), v: (C64, C64)) {
    for (i, v) in [(at.0, v.0), (at.1, v.1)] {
        if let Some(i) = i {
            m[row][i] += v;
        }
    }
}

fn voltage_drive(emf: Option<usize>, term: Option<usize>, r: f64, next: &mut usize) -> Drive {
    if r > 0.0 {
        Drive::Norton {
            node: term,
            g: 1.0 / r,
        }
    } else {
        *next += 1;
        Drive::Branch {
            node: emf,
            row: *next - 1,
        }
    }
}

struct Builder {
    parent: [usize; PINS],
}

impl Builder {
    fn find(&mut self, p: usize) -> usize {
        let mut r = p;
        while self.parent[r] != r {
            r = self.parent[r];
        }
        self.parent[p] = r;
        r
    }
    fn wire(&mut self, a: Pin, b: Pin) {
        let (ra, rb) = (self.find(a as usize), self.find(b as usize));
        if ra != rb {
            // Ground always stays the root of its set.
            if rb == Pin::Gnd as usize {
                self.parent[ra] = rb;
            } else {
                self.parent[rb] = ra;
            }
        }
    }
}

impl Netlist {
    /// The stage with the scenario's op-amp model, or around a nullor.
    pub fn build(s: &Scenario, model: AmpModel) -> Netlist {
        Netlist::build_kind(s, kind(s.stage.topology), model)
    }

    /// The stage wired as `decl` declares (whatever kind the scenario
    /// names): the same builder for every kind.
    pub fn build_kind(s: &Scenario, decl: &'static Kind, model: AmpModel) -> Netlist {
        Netlist::build_with(s, decl, model, parts(s, decl, model))
    }

    /// The stage with a resistor `r` added in series with the + input
    /// (from the + pin to ground in an inverting stage): the bias-current
    /// balance resistor.
    pub fn build_balanced(s: &Scenario, r: f64) -> Netlist {
        use Pin::*;
        let decl = kind(s.stage.topology);
        let parts = parts(s, decl, AmpModel::Real)
            .into_iter()
            .map(|p| match p {
                Part::Wire(Term, InP) => Part::Resistor(Term, InP, r, None),
                Part::Wire(InP, Gnd) => Part::Resistor(InP, Gnd, r, None),
                Part::Wire(InP, Ref) => Part::Resistor(InP, Ref, r, None),
                other => other,
            })
            .collect();
        Netlist::build_with(s, decl, AmpModel::Real, parts)
    }

    fn build_with(s: &Scenario, decl: &'static Kind, model: AmpModel, parts: Vec<Part>) -> Netlist {
        use Pin::*;
        let (index, count) = number_nodes(&parts);
        let node = |p: Pin| index[p as usize];
        let kt = BOLTZMANN * (s.temp_c + 273.15);
        let (elements, mut noise) = stamp_parts(&parts, node, kt);
        // Rows: the nodes, input 1's ideal EMF, the noise probe, the
        // amplifier's branch, then input 2's ideal EMF and the held level.
        let mut next = count;
        let drive = match decl.input {
            Input::Current => Drive::Current { node: node(Term) },
            _ => voltage_drive(node(Src), node(Term), s.source.r.unwrap_or(0.0), &mut next),
        };
        let en_row = next;
        let norton_amp = model == AmpModel::Real && s.amp.ro > 0.0;
        let amp_row = if norton_amp {
            next += 1;
            node(Amp).unwrap_or(0)
        } else {
            next += 2;
            en_row + 1
        };
        let drive2 =
            second_r(s, decl).map(|r2| voltage_drive(node(Src2), node(Term2), r2, &mut next));
        let held = held_levels(s, decl, node, &mut next);
        noise.extend(amp_noise(&s.amp, en_row, node));
        if decl.input.is_current() {
            noise.push(shot_noise(s, node(Term)));
        }
        let amp = &s.amp;
        Netlist {
            dim: next,
            inv_ro: if norton_amp { 1.0 / amp.ro } else { 0.0 },
            elements,
            drive,
            drive2,
            weights: decl.input.signal_weights(),
            held,
            en_row,
            amp_row,
            en_nodes: (node(InP), node(InPi)),
            inp: node(InP),
            inn: node(InN),
            amp_node: node(Amp),
            amp_out: node(Int),
            sense_p: node(InPi),
            sense_n: node(InN),
            a0: amp.a0,
            wp1: 2.0 * std::f64::consts::PI * amp.gbw / amp.a0,
            wp2: amp.fp2.map(|f| 2.0 * std::f64::consts::PI * f),
            model,
            out: node(Out),
            term: node(Term),
            term2: node(Term2),
            input_paths: input_paths(&parts, Term, Noisy::Source),
            input2_paths: drive2.map(|_| input_paths(&parts, Term2, Noisy::Source2)),
            riso: s.stage.riso.unwrap_or(0.0),
            feedback_at_load: s.stage.feedback == Feedback::Load
                && s.stage.riso.unwrap_or(0.0) > 0.0,
            load_g: s.load.r.map(|r| 1.0 / r).unwrap_or(0.0),
            load_c: s.load.c.unwrap_or(0.0),
            noise,
            cm_error: Rejection::of(amp.cmrr_db, amp.cmrr_corner)
                .filter(|_| model == AmpModel::Real),
            supply_error: Rejection::of(amp.psrr_db, amp.psrr_corner),
        }
    }

    /// Every ideal EMF's branch and node: the inputs', then the held ones.
    fn branches(&self) -> impl Iterator<Item = (usize, Option<usize>)> + '_ {
        [Some(self.drive), self.drive2]
            .into_iter()
            .flatten()
            .chain(self.held.iter().map(|h| h.drive))
            .filter_map(Drive::branch)
    }

    /// Open-loop gain A(s) of the model.
    pub fn open_loop(&self, s: C64) -> C64 {
        let mut d = C64::new(1.0, 0.0) + s / self.wp1;
        if let Some(w2) = self.wp2 {
            d *= C64::new(1.0, 0.0) + s / w2;
        }
        self.a0 / d
    }

    /// The factor of the amplifier's rank-one term in the matrix: A(s) for
    /// a voltage-source branch, A(s)/ro in Norton form.
    pub fn loop_factor(&self, s: C64) -> C64 {
        if self.inv_ro > 0.0 {
            self.open_loop(s) * self.inv_ro
        } else {
            self.open_loop(s)
        }
    }

    /// Load admittance at s.
    pub fn load_admittance(&self, s: C64) -> C64 {
        self.load_g + s * self.load_c
    }

    /// The admittance the amplifier pin sees into riso and the load, at s
    /// (the load alone when riso is absent): the shunt removed for Zout_pin.
    pub fn pin_shunt_admittance(&self, s: C64) -> C64 {
        let yl = self.load_admittance(s);
        if self.out == self.amp_node || self.riso == 0.0 {
            yl
        } else {
            yl / (C64::new(1.0, 0.0) + self.riso * yl)
        }
    }

    /// The full matrix at s (load attached, amplifier active).
    pub fn stamp(&self, s: C64) -> Matrix {
        let mut m = [[ZERO; MAXN]; MAXN];
        self.stamp_into(s, &mut m, LoadState::Attached);
        m
    }

    /// Stamp the matrix at s into `m` (its leading `dim`×`dim` block).
    pub fn stamp_into(&self, s: C64, m: &mut Matrix, load: LoadState) {
        self.stamp_with(s, m, load, true);
    }

    /// The same matrix with the amplifier's gain set to 0 (the passive
    /// network the loop closes through; the controlled source's row stays,
    /// holding the internal output at 0): its solve for a unit drive of the
    /// amplifier row gives the return ratio T = loop_factor · minus_vd
    /// directly, with no (1 − A·y) to divide out.
    pub fn stamp_passive_into(&self, s: C64, m: &mut Matrix) {
        self.stamp_with(s, m, LoadState::Attached, false);
    }

    fn stamp_with(&self, s: C64, m: &mut Matrix, load: LoadState, active: bool) {
        for row in m.iter_mut().take(self.dim) {
            row[..self.dim].fill(ZERO);
        }
        let mut admit = |a: Option<usize>, b: Option<usize>, y: C64| {
            if let Some(i) = a {
                m[i][i] += y;
            }
            if let Some(j) = b {
                m[j][j] += y;
            }
            if let (Some(i), Some(j)) = (a, b) {
                m[i][j] -= y;
                m[j][i] -= y;
            }
        };
        for e in &self.elements {
            match *e {
                Element::Conductance(a, b, g) => admit(a, b, C64::new(g, 0.0)),
                Element::Capacitance(a, b, c) => admit(a, b, s * c),
            }
        }
        if load == LoadState::Attached {
            admit(self.out, None, self.load_admittance(s));
        }
        let one = C64::new(1.0, 0.0);
        // Ideal EMFs: V(src) = E; the current leaves src into the source.
        for (row, node) in self.branches() {
            if let Some(i) = node {
                m[row][i] += one;
                m[i][row] += one;
            }
        }
        // Voltage-noise probe: V(inp) − V(inp_i) = e (0 V here).
        let (p, n) = self.en_nodes;
        let en_row = self.en_row;
        add_pair(m, en_row, (p, n), (one, -one));
        for (i, v) in [(p, one), (n, -one)] {
            if let Some(i) = i {
                m[i][en_row] += v;
            }
        }
        // The common-mode error: V(inp_i) = V(inp) + κ(s)·V_cm.
        if let Some(k) = self.cm_error {
            self.stamp_cm(&mut |i, v| m[en_row][i] += v, k.at(s));
        }
        self.stamp_amp(s, m, active);
    }

    /// The amplifier's row: V(int) − A·(V(+) − V(−)) = 0, or the nullor
    /// V(+) = V(−), or in Norton form the current (A/ro)·(V(+) − V(−))
    /// into the output (nothing when `active` is false).
    fn stamp_amp(&self, s: C64, m: &mut Matrix, active: bool) {
        let one = C64::new(1.0, 0.0);
        let r = self.amp_row;
        let sense = (self.sense_p, self.sense_n);
        if self.inv_ro > 0.0 {
            if active {
                let g = self.loop_factor(s);
                add_pair(m, r, sense, (-g, g));
            }
            return;
        }
        if let Some(i) = self.amp_out {
            m[i][r] += one;
        }
        if self.model == AmpModel::Nullor {
            add_pair(m, r, sense, (one, -one));
        } else {
            if let Some(i) = self.amp_out {
                m[r][i] += one;
            }
            let a = if active { self.open_loop(s) } else { ZERO };
            add_pair(m, r, sense, (-a, a));
        }
    }

    /// Add `k`·V_cm to a row: `k/2` at each pin's column (`add(column,
    /// value)`); a pin on ground adds nothing.
    fn stamp_cm<T: Copy + std::ops::Mul<f64, Output = T>>(
        &self,
        add: &mut impl FnMut(usize, T),
        k: T,
    ) {
        for i in [self.inp, self.inn].into_iter().flatten() {
            add(i, k * 0.5);
        }
    }

    /// Right-hand side for 1 V of supply ripple at s: its error in the +
    /// input's generator row (zero with infinite rejection).
    pub fn ripple_rhs(&self, s: C64) -> Vector {
        let mut b = [ZERO; MAXN];
        if let Some(k) = self.supply_error {
            b[self.en_row] = -k.at(s);
        }
        b
    }

    /// The internal output V(int) = A(s)·(V(+) − V(−)) of a solution.
    pub fn int_v(&self, s: C64, x: &[C64]) -> C64 {
        -self.open_loop(s) * self.minus_vd(x)
    }

    /// The current out of the amplifier (through ro) of a solution: in
    /// Norton form (V(int) − V(amp))/ro, else the output branch's current.
    pub fn amp_current(&self, s: C64, x: &[C64]) -> C64 {
        if self.inv_ro > 0.0 {
            (self.int_v(s, x) - Self::node_v(x, self.amp_node)) * self.inv_ro
        } else {
            -x[self.amp_row]
        }
    }

    /// −(V(+) − V(−)) of a solution vector: cᵀx in M = M0 + A·e·cᵀ.
    pub fn minus_vd(&self, x: &[C64]) -> C64 {
        let v = |n: Option<usize>| n.map(|i| x[i]).unwrap_or(ZERO);
        v(self.sense_n) - v(self.sense_p)
    }

    /// Right-hand side for one unit of the kind's signal.
    pub fn drive_rhs(&self) -> Vector {
        self.rhs(Excitation::Signal)
    }

    /// The right-hand side of an excitation (see [`Excitation`]).
    pub fn rhs(&self, e: Excitation) -> Vector {
        let mut b = [ZERO; MAXN];
        let (w1, w2) = match e {
            Excitation::Signal => self.weights,
            Excitation::Input(0) => (1.0, 0.0),
            Excitation::Input(_) => (0.0, 1.0),
            Excitation::CommonMode => (1.0, 1.0),
            Excitation::Held => (0.0, 0.0),
        };
        if w1 != 0.0 {
            self.drive.add_to(&mut b, w1);
        }
        if let (Some(d), true) = (self.drive2, w2 != 0.0) {
            d.add_to(&mut b, w2);
        }
        if e == Excitation::Held {
            for h in &self.held {
                h.drive.add_to(&mut b, h.level);
            }
        }
        b
    }

    /// Current the source delivers into the stage from the signal solve
    /// (input 1 at its weight).
    pub fn source_current(&self, x: &[C64]) -> C64 {
        self.input_current(0, self.weights.0, x)
    }

    /// The current input `k` (0 or 1) delivers into its terminal in a
    /// solution where its EMF (or current) is `e`.
    pub fn input_current(&self, k: usize, e: f64, x: &[C64]) -> C64 {
        let drive = if k == 0 {
            Some(self.drive)
        } else {
            self.drive2
        };
        match drive {
            Some(Drive::Norton { node, g }) => (C64::new(e, 0.0) - Self::node_v(x, node)) * g,
            Some(Drive::Branch { row, .. }) => -x[row],
            Some(Drive::Current { .. }) => C64::new(e, 0.0),
            None => ZERO,
        }
    }

    /// The stage's equations in the time domain, `C·x' + G·x = b·E(t)`,
    /// from the same elements as [`Netlist::stamp_into`]: every resistor,
    /// capacitor and the load, the ideal source and noise-probe branches,
    /// and the op-amp's gain as two internal states (`x1`, and `x2` with a
    /// second pole): τ1·x1' = a0·vd − x1, τ2·x2' = x1 − x2, the controlled
    /// source behind ro being the last of them. So its transfer function is
    /// exactly the frequency-domain A(s) = a0/((1 + s/ωp1)(1 + s/ωp2)).
    /// None around a nullor (no time-domain model).
    pub fn time_equations(&self) -> Option<TimeEquations> {
        if self.model == AmpModel::Nullor {
            return None;
        }
        let x1 = self.dim;
        let x2 = self.wp2.map(|_| x1 + 1);
        let n = self.dim + 1 + usize::from(x2.is_some());
        let mut eq = TimeEquations {
            n,
            g: vec![0.0; n * n],
            c: vec![0.0; n * n],
            b: vec![0.0; n],
            k: vec![0.0; n],
            fixed: Vec::new(),
            held: Vec::new(),
            out: self.out,
            x1,
            x2,
            tau1: 1.0 / self.wp1,
            amp_current: Vec::new(),
        };
        fn admit(m: &mut [f64], n: usize, a: Option<usize>, b: Option<usize>, y: f64) {
            if let Some(i) = a {
                m[i * n + i] += y;
            }
            if let Some(j) = b {
                m[j * n + j] += y;
            }
            if let (Some(i), Some(j)) = (a, b) {
                m[i * n + j] -= y;
                m[j * n + i] -= y;
            }
        }
        for e in &self.elements {
            match *e {
                Element::Conductance(a, b, g) => admit(&mut eq.g, n, a, b, g),
                Element::Capacitance(a, b, c) => admit(&mut eq.c, n, a, b, c),
            }
        }
        admit(&mut eq.g, n, self.out, None, self.load_g);
        admit(&mut eq.c, n, self.out, None, self.load_c);
        let real = |v: Vector| v[..self.dim].iter().map(|z| z.re).collect::<Vec<f64>>();
        eq.b[..self.dim].copy_from_slice(&real(self.drive_rhs()));
        eq.k[..self.dim].copy_from_slice(&real(self.rhs(Excitation::Held)));
        for (row, node) in self.branches() {
            branch(&mut eq.g, n, row, node, 1.0);
            // The node an ideal EMF fixes leaves the state equations: a
            // signal input's moves with the signal, a held one is constant.
            if let Some(i) = node {
                match self
                    .held
                    .iter()
                    .find(|h| h.drive.branch() == Some((row, node)))
                {
                    Some(h) => eq.held.push((i, row, h.level)),
                    None => eq.fixed.push((i, row, eq.b[row])),
                }
            }
        }
        let (p, q) = self.en_nodes;
        branch(&mut eq.g, n, self.en_row, p, 1.0);
        branch(&mut eq.g, n, self.en_row, q, -1.0);
        if let Some(k) = self.cm_error {
            let row = self.en_row * n;
            self.stamp_cm(&mut |i, v: f64| eq.g[row + i] += v, k.k0);
        }
        self.stamp_amp_states(&mut eq);
        Some(eq)
    }

    /// The op-amp in the time-domain equations: its states x1 (and x2)
    /// and the controlled source behind ro they drive.
    ///
    /// With a common-mode corner the error κ0·(1 + s/ω_c)·V_cm has a
    /// derivative term; A(s)·κ(s) is still proper, and the amplifier's
    /// first state is kept as x̃1 = x1 − K·V_cm with K = a0·κ0·ω_p1/ω_c,
    /// which obeys τ1·x̃1' = a0·vd − x̃1 − K·V_cm (vd with the flat part of
    /// the error in it): no derivative of a pin is needed, and wherever x1
    /// drives the next stage x̃1 + K·V_cm stands in for it. The transfer is
    /// exactly the frequency-domain one; the slew and rail limits then act
    /// on x̃1.
    fn stamp_amp_states(&self, eq: &mut TimeEquations) {
        let (n, x1, x2) = (eq.n, eq.x1, eq.x2);
        let last = x2.unwrap_or(x1);
        let r = self.amp_row;
        let feed = self.feed_through();
        // A coefficient c on x1 in `row` also takes c·K·V_cm.
        let through = |eq: &mut TimeEquations, row: usize, c: f64| {
            self.stamp_cm(&mut |i, v: f64| eq.g[row * n + i] += v, c * feed);
        };
        if self.inv_ro > 0.0 {
            // The current x/ro into the output node (Norton form).
            eq.g[r * n + last] -= self.inv_ro;
            eq.amp_current.push((last, self.inv_ro));
            if last == x1 && feed != 0.0 {
                through(eq, r, -self.inv_ro);
                let mut cm = Vec::new();
                self.stamp_cm(&mut |i, v: f64| cm.push((i, v)), self.inv_ro * feed);
                eq.amp_current.extend(cm);
            }
            if let Some(i) = self.amp_node {
                eq.amp_current.push((i, -self.inv_ro));
            }
        } else {
            eq.amp_current.push((r, -1.0));
            // V(int) = x through the output branch.
            branch(&mut eq.g, n, r, self.amp_out, 1.0);
            eq.g[r * n + last] -= 1.0;
            if last == x1 {
                through(eq, r, -1.0);
            }
        }
        eq.c[x1 * n + x1] = eq.tau1;
        eq.g[x1 * n + x1] = 1.0;
        through(eq, x1, 1.0);
        if let Some(i) = self.sense_p {
            eq.g[x1 * n + i] -= self.a0;
        }
        if let Some(i) = self.sense_n {
            eq.g[x1 * n + i] += self.a0;
        }
        if let (Some(k), Some(w2)) = (x2, self.wp2) {
            eq.c[k * n + k] = 1.0 / w2;
            eq.g[k * n + k] = 1.0;
            eq.g[k * n + x1] = -1.0;
            through(eq, k, -1.0);
        }
    }

    /// K = a0·κ0·ω_p1/ω_c: how much of V_cm the amplifier's first state
    /// carries past x̃1 (0 without a common-mode corner).
    fn feed_through(&self) -> f64 {
        match self.cm_error {
            Some(Rejection {
                k0,
                w_corner: Some(w),
            }) => self.a0 * k0 * self.wp1 / w,
            _ => 0.0,
        }
    }

    pub fn node_v(x: &[C64], n: Option<usize>) -> C64 {
        n.map(|i| x[i]).unwrap_or(ZERO)
    }
}
