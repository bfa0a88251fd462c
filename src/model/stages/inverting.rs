//! The inverting stage: the signal through rg into the − pin, the + pin
//! at the reference, rf (∥ cf) from the feedback point to the − pin.

use super::{wire, Element, GainUnit, Input, Kind, Node::*, Pairs, PartDecl, Tolerance};
use crate::model::scenario::Topology;

pub static KIND: Kind = Kind {
    topology: Topology::Inverting,
    parts: &[
        wire(Plus, Reference),
        PartDecl {
            name: "rg",
            a: Input,
            b: Minus,
            element: Element::Resistor,
            param: "stage.rg",
            read: |s| s.stage.rg,
            absent: 1.0,
            required: true,
            start: Some(1e3),
            with: None,
            tolerance: Tolerance::Resistor,
        },
        super::common::RF,
        super::common::CF,
        super::common::RISO,
    ],
    input: Input::Voltage,
    reference: Some(Plus),
    output: Load,
    bias: None,
    gain_unit: GainUnit::VoltsPerVolt,
    gain: |st| -st.rf.unwrap_or(0.0) / st.rg.unwrap_or(0.0),
    negative: true,
    source_in_network: true,
    // The − input is a virtual ground: only rf loads the feedback point.
    feedback_load: |st| st.rf.unwrap_or(0.0),
    source_parts: &[],
    stabilize: &["riso", "cf"],
    pairs: Some(Pairs {
        gain: |ratio| ratio,
        ratio: |gain| gain,
        above: None,
        // rg loads the source, only rf the output.
        load: |_, rf| rf,
        parts: ["stage.rg", "stage.rf"],
        also: None,
    }),
};
