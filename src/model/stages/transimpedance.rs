//! The transimpedance stage (a photodiode's current into a voltage): the
//! signal current into the − pin, the + pin at the reference, rf (∥ cf)
//! from the feedback point to the − pin, and the diode's own capacitance
//! `cd` and shunt resistance `rsh` from the − pin to its far terminal,
//! held at `source.bias` (DC only; AC ground).

use super::{wire, Element, GainUnit, Input, Kind, Node::*, PartDecl, Tolerance};
use crate::model::scenario::Topology;

pub static KIND: Kind = Kind {
    topology: Topology::Transimpedance,
    parts: &[
        wire(Plus, Reference),
        wire(Input, Minus),
        super::common::RF,
        super::common::CF,
        super::common::RISO,
        PartDecl {
            name: "cd",
            a: Minus,
            b: Bias,
            element: Element::Capacitor,
            param: "source.cd",
            read: |s| s.source.cd,
            absent: 0.0,
            required: false,
            start: None,
            with: None,
            tolerance: Tolerance::Diode,
        },
        PartDecl {
            name: "rsh",
            a: Minus,
            b: Bias,
            element: Element::Resistor,
            param: "source.rsh",
            read: |s| s.source.rsh,
            // Absent: no shunt path at all.
            absent: f64::INFINITY,
            required: false,
            start: None,
            with: None,
            tolerance: Tolerance::None,
        },
    ],
    input: Input::Current,
    reference: Some(Plus),
    output: Load,
    bias: Some(|s| s.source.bias.unwrap_or(0.0)),
    gain_unit: GainUnit::VoltsPerAmp,
    // The current flows into the − pin: the output falls by rf per ampere.
    gain: |st| -st.rf.unwrap_or(0.0),
    negative: true,
    source_in_network: false,
    // The − input is a virtual ground: only rf loads the feedback point.
    feedback_load: |st| st.rf.unwrap_or(0.0),
    // The diode's own capacitance and shunt: the source's, not the
    // stage's input impedance.
    source_parts: &["cd", "rsh"],
    stabilize: &["riso", "cf"],
    pairs: None,
};
