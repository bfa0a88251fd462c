//! The follower: the signal into the + pin, the − pin at the feedback
//! point through rf (usually absent: a wire).

use super::{wire, GainUnit, Input, Kind, Node::*, PartDecl};
use crate::model::scenario::Topology;

pub static KIND: Kind = Kind {
    topology: Topology::Follower,
    parts: &[
        wire(Input, Plus),
        PartDecl {
            required: false,
            start: None,
            ..super::common::RF
        },
        super::common::CF,
        super::common::RISO,
    ],
    input: Input::Voltage,
    reference: None,
    output: Load,
    bias: None,
    gain_unit: GainUnit::VoltsPerVolt,
    gain: |_| 1.0,
    negative: false,
    source_in_network: false,
    // A follower's rf carries only the input current.
    feedback_load: |_| f64::INFINITY,
    source_parts: &[],
    stabilize: &["riso"],
    pairs: None,
};
