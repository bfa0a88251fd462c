//! The non-inverting stage: the signal into the + pin, rg from the −
//! pin to the reference, rf (∥ cf) from the feedback point to the − pin.

use super::{wire, Element, GainUnit, Input, Kind, Node::*, Pairs, PartDecl, Tolerance};
use crate::model::scenario::Topology;

pub static KIND: Kind = Kind {
    topology: Topology::NonInverting,
    parts: &[
        wire(Input, Plus),
        PartDecl {
            name: "rg",
            a: Minus,
            b: Reference,
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
    reference: None,
    output: Load,
    bias: None,
    gain_unit: GainUnit::VoltsPerVolt,
    gain: |st| 1.0 + st.rf.unwrap_or(0.0) / st.rg.unwrap_or(0.0),
    negative: false,
    source_in_network: false,
    // rf and rg in series from the feedback point to the reference.
    feedback_load: |st| st.rf.unwrap_or(0.0) + st.rg.unwrap_or(0.0),
    source_parts: &[],
    stabilize: &["riso", "cf"],
    pairs: Some(Pairs {
        gain: |ratio| 1.0 + ratio,
        ratio: |gain| gain - 1.0,
        above: Some((
            1.0,
            "must be above 1 for a non-inverting stage (its gain is 1 + rf/rg)",
        )),
        load: |rg, rf| rf + rg,
        parts: ["stage.rg", "stage.rf"],
        also: None,
    }),
};
