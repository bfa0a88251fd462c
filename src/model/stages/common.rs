//! Parts several kinds share: rf and cf across the feedback, riso at the
//! output.

use super::{Element, Node::*, PartDecl, Tolerance};

/// rf from the feedback point to the − pin (zero or absent: a wire).
pub const RF: PartDecl = PartDecl {
    name: "rf",
    a: Feedback,
    b: Minus,
    element: Element::Resistor,
    param: "stage.rf",
    read: |s| s.stage.rf,
    absent: 0.0,
    required: true,
    start: Some(10e3),
    with: None,
    tolerance: Tolerance::Resistor,
};

/// cf from the amplifier's output pin to the − pin, only across an rf.
pub const CF: PartDecl = PartDecl {
    name: "cf",
    a: AmpOut,
    b: Minus,
    element: Element::Capacitor,
    param: "stage.cf",
    read: |s| s.stage.cf,
    absent: 0.0,
    required: false,
    start: None,
    with: Some("rf"),
    tolerance: Tolerance::Capacitor,
};

/// riso from the amplifier's output pin to the load terminal.
pub const RISO: PartDecl = PartDecl {
    name: "riso",
    a: AmpOut,
    b: Load,
    element: Element::Resistor,
    param: "stage.riso",
    read: |s| s.stage.riso,
    absent: 0.0,
    required: false,
    start: None,
    with: None,
    tolerance: Tolerance::Resistor,
};
