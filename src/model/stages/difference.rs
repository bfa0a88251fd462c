//! The difference amplifier: input 1 through r1 into the − pin, r2 (∥ cf)
//! from the feedback point back to it; input 2 through r3 into the + pin,
//! r4 (∥ c4) from the + pin to the reference. Each input's EMF returns to
//! ground behind its own source resistance (`source.r`, `source.r_plus`).

use super::{Element, GainUnit, Input, Kind, Node::*, Pairs, PartDecl, Tolerance};
use crate::model::scenario::Topology;

/// A resistor of the kind: required, spreading with the resistor tolerance.
const fn resistor(
    name: &'static str,
    a: super::Node,
    b: super::Node,
    param: &'static str,
    read: fn(&crate::model::scenario::Scenario) -> Option<f64>,
    start: f64,
) -> PartDecl {
    PartDecl {
        name,
        a,
        b,
        element: Element::Resistor,
        param,
        read,
        absent: 1.0,
        required: true,
        start: Some(start),
        with: None,
        tolerance: Tolerance::Resistor,
    }
}

pub static KIND: Kind = Kind {
    topology: Topology::Difference,
    parts: &[
        resistor("r1", Input, Minus, "stage.r1", |s| s.stage.r1, 10e3),
        resistor("r2", Feedback, Minus, "stage.r2", |s| s.stage.r2, 10e3),
        PartDecl {
            with: Some("r2"),
            ..super::common::CF
        },
        resistor("r3", Input2, Plus, "stage.r3", |s| s.stage.r3, 10e3),
        resistor("r4", Plus, Reference, "stage.r4", |s| s.stage.r4, 10e3),
        PartDecl {
            name: "c4",
            a: Plus,
            b: Reference,
            element: Element::Capacitor,
            param: "stage.c4",
            read: |s| s.stage.c4,
            absent: 0.0,
            required: false,
            start: None,
            with: Some("r4"),
            tolerance: Tolerance::Capacitor,
        },
        super::common::RISO,
    ],
    input: Input::Pair {
        r2: |s| s.source.r_plus.or(s.source.r).unwrap_or(0.0),
    },
    reference: None,
    output: Load,
    bias: None,
    gain_unit: GainUnit::VoltsPerVolt,
    // A_d = r2/r1 (the matched stage's differential gain).
    gain: |st| st.r2.unwrap_or(0.0) / st.r1.unwrap_or(0.0),
    negative: false,
    source_in_network: true,
    // The − pin follows the + pin, which sits near the reference: r2
    // loads the feedback point.
    feedback_load: |st| st.r2.unwrap_or(0.0),
    source_parts: &[],
    stabilize: &["riso", "cf"],
    pairs: Some(Pairs {
        gain: |ratio| ratio,
        ratio: |gain| gain,
        above: None,
        load: |_, rf| rf,
        parts: ["stage.r1", "stage.r2"],
        also: Some(["stage.r3", "stage.r4"]),
    }),
};
