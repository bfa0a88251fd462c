//! loopwright: a terminal workbench for op-amp feedback amplifier stages.
//!
//! [`engine`] holds the analysis (no terminal code); [`report`] turns its
//! results into text or JSON; [`ui`] is the terminal workbench; the binary
//! in `main.rs` dispatches commands.
//!
//! ```
//! use loopwright::engine::{analyze, scenario};
//! // The built-in demo: a non-inverting stage, rf 10 kΩ over rg 1 kΩ.
//! let s = scenario::demo();
//! let a = analyze(&s);
//! // Textbook ideal gain 1 + rf/rg = 11; finite loop gain makes it a little less.
//! assert!((a.ideal_gain - 11.0).abs() < 1e-9);
//! assert!(a.dc_gain < a.ideal_gain && a.gain_error < 0.0);
//! assert!(a.phase_margin_deg.unwrap() > 45.0);
//! ```

pub mod cli;
pub mod design;
pub mod engine;
pub mod helpers_cmd;
pub mod note;
pub mod plot_linear;
pub mod plot_svg;
pub mod report;
pub mod storage;
pub mod sweep;
pub mod ui;
