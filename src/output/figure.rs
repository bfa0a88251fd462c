//! What a figure is, whatever draws it: one stage to draw, a view's axes,
//! curves and marks, and a chart a view draws itself.

use crate::judge::Evaluation;
use crate::model::scenario::Scenario;
use crate::output::traces::Traces;
use plotters::prelude::*;

/// One stage to draw.
pub struct Evaluated<'a> {
    pub scenario: &'a Scenario,
    pub eval: &'a Evaluation,
}

/// A vertical axis: its description and whether the values are log10 of
/// the quantity (labels then in engineering notation with `unit`).
#[derive(Clone, Copy)]
pub struct Axis {
    pub desc: &'static str,
    pub log_unit: Option<&'static str>,
    /// The description where every stage drawn has its gain in V/A (the
    /// gain's level is then in dBΩ); None: `desc` for every stage.
    pub in_ohms: Option<&'static str>,
}

/// One curve of a view for one stage.
pub struct Curve {
    pub name: &'static str,
    /// Drawn against the right-hand axis.
    pub right: bool,
    pub points: Vec<(f64, f64)>,
    /// 0: the view's main quantity; 1, 2, 3: secondary lines (limits,
    /// ceilings) in their own colours and a thinner stroke.
    pub tone: u8,
    /// A quantity of its own (a CMRR beside a gain): drawn in a panel
    /// under the chart, on this axis, against the same frequencies.
    pub own_axis: Option<Axis>,
}

/// Every view, in `--view` order; the registry (`views`) gives each its
/// entry.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ViewId {
    Response,
    Loop,
    Noise,
    Impedance,
    Envelope,
    Step,
    Settling,
    Kick,
    Spread,
}

/// What a mark marks; the figures and the workbench each write its text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum MarkKind {
    /// The closed-loop f−3dB (of a stable stage only).
    F3db,
    /// The loop's crossover, with the phase margin where there is one.
    Crossover,
    /// An edge of the stage's band.
    Band,
    /// Where a need first passes a limit (the envelope's ceilings).
    Limit,
}

/// A vertical mark at a frequency, with its text.
pub struct Mark {
    pub kind: MarkKind,
    pub f_hz: f64,
    pub text: String,
}

/// A view that draws its own chart (linear axes: time, a histogram) in
/// the area above the footer.
/// It is given the view's title for its heading.
pub type OwnChart = fn(
    &DrawingArea<SVGBackend, plotters::coord::Shift>,
    &str,
    &[Evaluated],
    Look,
    u32,
) -> anyhow::Result<()>;

/// One view: what it shows, and what it needs of a stage.
pub struct View {
    pub id: ViewId,
    pub name: &'static str,
    pub title: &'static str,
    /// One line for help: what the view draws and what it marks.
    pub about: &'static str,
    /// Whether the workbench shows it (the `v` key's cycle).
    pub workbench: bool,
    /// Why this stage cannot be drawn in the view (an input it lacks).
    pub needs: fn(&Evaluated) -> Option<String>,
    pub left: Axis,
    pub right: Option<Axis>,
    pub curves: fn(&Traces) -> Vec<Curve>,
    /// The marks a stage gets in this view: decided here once, for the
    /// figures, the note and the workbench.
    pub marks: fn(&Evaluated) -> Vec<Mark>,
    /// Some: a chart of its own instead of the frequency chart.
    pub own: Option<OwnChart>,
}

/// The magnitude axis in dB.
pub const DB: Axis = Axis {
    desc: "magnitude (dB)",
    log_unit: None,
    in_ohms: None,
};
/// The closed-loop gain's level: dB, or dBΩ for a transimpedance.
pub const GAIN_DB: Axis = Axis {
    in_ohms: Some("transimpedance (dBΩ)"),
    ..DB
};
/// A two-input stage's CMRR in dB (its own panel under the response).
pub const CMRR_DB: Axis = Axis {
    desc: "CMRR (dB)",
    log_unit: None,
    in_ohms: None,
};
/// The phase axis in degrees.
pub const DEG: Axis = Axis {
    desc: "phase (°)",
    log_unit: None,
    in_ohms: None,
};

/// Size and look of a figure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Look {
    pub width: u32,
    pub height: u32,
    pub mono: bool,
}

impl Default for Look {
    /// 800 × 500 px in colour: fits a page and a slide.
    fn default() -> Look {
        Look {
            width: 800,
            height: 500,
            mono: false,
        }
    }
}
