//! The engine's general inputs, checked through `Netlist` on small
//! resistor networks declared as throw-away kinds (no kind of the program
//! is involved): a current input, a pair of voltage inputs and a DC-only
//! held level. Expected node voltages are nodal analysis by hand (common
//! practice), recomputed here from the resistor values.

use crate::support::closed_forms::assert_rel;
use crate::support::stages::plain;
use loopwright::engine::netlist::{AmpModel, Excitation, Netlist};
use loopwright::engine::step::step_response;
use loopwright::model::scenario::{Scenario, Supply, Topology};
use loopwright::model::stages::{
    wire, Element, GainUnit, Input, Kind, Node, Node::*, PartDecl, Tolerance,
};
use loopwright::num::solver::{Lu, Vector, ZERO};
use num_complex::Complex64 as C64;

/// A fixed resistor between two named nodes (its value is its default).
const fn res(name: &'static str, a: Node, b: Node, ohms: f64) -> PartDecl {
    PartDecl {
        name,
        a,
        b,
        element: Element::Resistor,
        param: "",
        read: |_| None,
        absent: ohms,
        required: false,
        start: None,
        with: None,
        tolerance: Tolerance::Resistor,
    }
}

/// A kind with the given parts and input, nothing else.
const fn test_kind(parts: &'static [PartDecl], input: Input) -> Kind {
    Kind {
        topology: Topology::NonInverting,
        parts,
        input,
        reference: None,
        output: Load,
        bias: None,
        gain_unit: GainUnit::VoltsPerVolt,
        gain: |_| 1.0,
        negative: false,
        source_in_network: false,
        feedback_load: |_| f64::INFINITY,
        source_parts: &[],
        stabilize: &[],
        pairs: None,
    }
}

/// 1 A into a node with 1 kΩ to ground and 2 kΩ + 3 kΩ to ground through
/// the − pin.
static CURRENT: Kind = test_kind(
    &[
        wire(Plus, Ground),
        res("ra", Input, Ground, 1e3),
        res("rb", Input, Minus, 2e3),
        res("rc", Minus, Ground, 3e3),
        wire(AmpOut, Load),
    ],
    Input::Current,
);

/// Two terminals, each with its own shunt, joined by 2 kΩ; input 2's
/// source resistance 2 kΩ.
const PAIR_PARTS: &[PartDecl] = &[
    wire(Plus, Ground),
    wire(Minus, Ground),
    res("ra", Input, Ground, 3e3),
    res("rb", Input2, Ground, 6e3),
    res("rc", Input, Input2, 2e3),
    wire(AmpOut, Load),
];
static PAIR: Kind = test_kind(PAIR_PARTS, Input::Pair { r2: |_| 2e3 });
static PAIR_IDEAL: Kind = test_kind(PAIR_PARTS, Input::Pair { r2: |_| 0.0 });

/// A follower whose + pin sits on a divider from the held node (1 kΩ) and
/// the input (the source's 1 kΩ) to 4 kΩ to ground; the held level is
/// read from `stage.rg` so a test can move it.
static HELD: Kind = Kind {
    bias: Some(|s| s.stage.rg.unwrap_or(0.0)),
    ..test_kind(
        &[
            wire(Input, Plus),
            res("rb", Bias, Plus, 1e3),
            res("rc", Plus, Ground, 4e3),
            wire(Minus, Feedback),
            wire(AmpOut, Load),
        ],
        Input::Voltage,
    )
};

/// A stage with no amplifier input parts (rin, cin absent) to load the
/// network; the source's resistance is `r`.
fn scenario(r: f64) -> Scenario {
    let mut s = plain(Topology::NonInverting, 1e3, 1e3);
    s.source.r = Some(r);
    s
}

/// The DC solution of the netlist for one excitation.
fn dc(net: &Netlist, e: Excitation) -> Vector {
    let lu = Lu::factor(net.stamp(ZERO), net.dim).expect("a regular network");
    lu.solve(&net.rhs(e))
}

fn v(x: &Vector, n: Option<usize>) -> f64 {
    Netlist::node_v(x, n).re
}

#[test]
fn a_current_input_drives_its_node() {
    let s = scenario(50.0);
    let net = Netlist::build_kind(&s, &CURRENT, AmpModel::Real);
    // Nodal analysis by hand: 1 A into 1 kΩ ∥ (2 kΩ + 3 kΩ); the − pin
    // is the 3 kΩ share of that voltage (divider).
    let v_in = 1.0 / (1.0 / 1e3 + 1.0 / 5e3);
    let x = dc(&net, Excitation::Signal);
    assert_rel("input node", v(&x, net.term), v_in, 1e-12);
    assert_rel("− pin", v(&x, net.inn), v_in * 3e3 / 5e3, 1e-12);
    assert_eq!(net.input_current(0, 1.0, &x), C64::new(1.0, 0.0));
    // One input: its own excitation is the signal.
    assert_eq!(dc(&net, Excitation::Input(0)), x);
    // A current source has no resistance of its own: no source noise.
    assert!(net.noise.iter().all(|n| n.key != "source_r"));
}

/// The two terminal voltages of the pair network for EMFs e1, e2 behind
/// r1, r2 (nodal analysis by hand, Cramer's rule on the 2×2 system).
fn pair_by_hand(e1: f64, e2: f64, r1: f64, r2: f64) -> (f64, f64) {
    let (ga, gb, gc) = (1.0 / 3e3, 1.0 / 6e3, 1.0 / 2e3);
    let (a11, a12, a22) = (1.0 / r1 + ga + gc, -gc, 1.0 / r2 + gb + gc);
    let (b1, b2) = (e1 / r1, e2 / r2);
    let det = a11 * a22 - a12 * a12;
    ((b1 * a22 - a12 * b2) / det, (a11 * b2 - a12 * b1) / det)
}

#[test]
fn a_pair_of_inputs_gives_each_excitation() {
    let s = scenario(1e3);
    let net = Netlist::build_kind(&s, &PAIR, AmpModel::Real);
    // The kind's signal is the difference: V1 = −1/2, V2 = +1/2.
    for (e, (e1, e2)) in [
        (Excitation::Input(0), (1.0, 0.0)),
        (Excitation::Input(1), (0.0, 1.0)),
        (Excitation::CommonMode, (1.0, 1.0)),
        (Excitation::Signal, (-0.5, 0.5)),
    ] {
        let x = dc(&net, e);
        let (v1, v2) = pair_by_hand(e1, e2, 1e3, 2e3);
        assert_rel(&format!("{e:?} input 1"), v(&x, net.term), v1, 1e-12);
        assert_rel(&format!("{e:?} input 2"), v(&x, net.term2), v2, 1e-12);
        // Each source's current through its own resistance (Ohm's law).
        let i2 = net.input_current(1, e2, &x).re;
        assert_rel(&format!("{e:?} current 2"), i2, (e2 - v2) / 2e3, 1e-9);
    }
    let keys: Vec<&str> = net.noise.iter().map(|n| n.key).collect();
    assert!(keys.contains(&"source_r") && keys.contains(&"source_r2"));
    assert!(net.input2_paths.is_some_and(|p| p.dc && p.any));
}

#[test]
fn an_ideal_pair_fixes_both_terminals() {
    let s = scenario(0.0);
    let net = Netlist::build_kind(&s, &PAIR_IDEAL, AmpModel::Real);
    let x = dc(&net, Excitation::Signal);
    assert_rel("input 1", v(&x, net.term), -0.5, 1e-12);
    assert_rel("input 2", v(&x, net.term2), 0.5, 1e-12);
    // Input 1's current: what leaves its terminal into 3 kΩ and 2 kΩ
    // (Kirchhoff's current law at the node).
    let want = -0.5 / 3e3 + (-0.5 - 0.5) / 2e3;
    assert_rel("current 1", net.input_current(0, -0.5, &x).re, want, 1e-12);
}

#[test]
fn a_held_level_is_dc_only() {
    let mut s = scenario(1e3);
    s.stage.rg = Some(2.5);
    let net = Netlist::build_kind(&s, &HELD, AmpModel::Real);
    // Nodal analysis at the + pin: (E − V)/1k + (Vb − V)/1k = V/4k.
    let g = 1.0 / 1e3 + 1.0 / 1e3 + 1.0 / 4e3;
    let held = dc(&net, Excitation::Held);
    assert_rel(
        "+ pin, held level alone",
        v(&held, net.inp),
        2.5 / 1e3 / g,
        1e-12,
    );
    // In a frequency analysis the held node is ground.
    for s_hz in [ZERO, C64::new(0.0, 2.0 * std::f64::consts::PI * 1e3)] {
        let lu = Lu::factor(net.stamp(s_hz), net.dim).expect("regular");
        let x = lu.solve(&net.drive_rhs());
        assert_rel("+ pin per volt", v(&x, net.inp), 1.0 / 1e3 / g, 1e-12);
    }
}

#[test]
fn a_held_level_sets_the_steps_starting_point() {
    // The follower's output sits at the + pin's DC level: 2.5 V · 0.8 k/
    // 2.25 k ≈ 1.11 V from a 2.5 V level, 0.22 V from 0.5 V (the divider
    // above). Rails 0 to 1 V: the first starts past the top rail, the
    // second inside.
    let step = |level: f64| {
        let mut s = scenario(1e3);
        s.stage.rg = Some(level);
        s.supply = Some(Supply {
            neg: 0.0,
            pos: 1.0,
            ..Supply::default()
        });
        let net = Netlist::build_kind(&s, &HELD, AmpModel::Real);
        step_response(&s, &net, 1e5, false)
    };
    assert!(step(2.5).reason.is_some(), "1.11 V is past the 1 V rail");
    let inside = step(0.5);
    assert_eq!(inside.reason, None);
    // The small step's own size is linear: 0.1 V (the default step is
    // the scenario's) through the divider 1k/(1k + 1k ∥ 4k)… read as
    // final/size = (1/1k)/g with g the + pin's conductance sum.
    let g = 1.0 / 1e3 + 1.0 / 1e3 + 1.0 / 4e3;
    let want = inside.size_v * (1.0 / 1e3) / g;
    let got = inside.final_v.expect("the follower settles");
    assert_rel("step's final value", got, want, 1e-4);
}

#[test]
fn a_held_level_leaves_a_slewing_step_as_it_was() {
    // Slew-limited step (textbook: the output ramps at the slew rate, so
    // 10–90 % takes 0.8·ΔV/SR while the error stays large): a 2.25 V step
    // through the divider above moves the output by 1 V; 0.1 V/µs gives
    // 8 µs. The held level only shifts where it starts (no rails here).
    let g = 1.0 / 1e3 + 1.0 / 1e3 + 1.0 / 4e3;
    let size = 2.25;
    let out_step = size * (1.0 / 1e3) / g;
    for level in [0.0, 0.5, -3.0] {
        let mut s = scenario(1e3);
        s.stage.rg = Some(level);
        s.amp.slew = Some(1e5);
        s.step = Some(loopwright::model::scenario::Step::of(size));
        let net = Netlist::build_kind(&s, &HELD, AmpModel::Real);
        let r = step_response(&s, &net, 1e5, false);
        assert_eq!(r.slew_limited, Some(true), "level {level}");
        let rise = r.rise_s.expect("it rises");
        assert_rel(
            &format!("rise at level {level}"),
            rise,
            0.8 * out_step / 1e5,
            1e-3,
        );
    }
}

#[test]
fn a_held_level_sets_the_operating_point() {
    use loopwright::engine::circuit::{Circuit, Sweep};
    use loopwright::engine::limits::limits;
    let mut s = scenario(1e3);
    s.stage.rg = Some(2.5);
    s.supply = Some(Supply {
        neg: 0.0,
        pos: 5.0,
        ..Supply::default()
    });
    let circuit = Circuit::of(Netlist::build_kind(&s, &HELD, AmpModel::Real));
    // The + pin at 2.5 V · (1/1k)/g (the divider above); the follower's
    // output there within its loop gain a0 = 1e5 (1/(1 + 1/a0)).
    let g = 1.0 / 1e3 + 1.0 / 1e3 + 1.0 / 4e3;
    let pin = 2.5 / 1e3 / g;
    let out = pin / (1.0 + 1.0 / s.amp.a0);
    let l = limits(&s, &circuit, &Sweep::default(), 0.0);
    assert!(l.dc_given, "a held level is a DC input");
    assert_rel("+ pin level", l.dc.pin.held, pin, 1e-12);
    assert_rel("output level", l.out_dc_v.expect("a DC level"), out, 1e-9);
    // Headroom to the 5 V rail from the output's DC level alone.
    let high = l.dc_only.and_then(|d| d.headroom_high_v).expect("a supply");
    assert_rel("headroom to 5 V", high, 5.0 - out, 1e-9);
}
