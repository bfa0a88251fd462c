//! loopwright: a terminal workbench for op-amp feedback amplifier stages.
//!
//! The layers, lowest first; each reads only the layers below it:
//! - [`num`] pure numerics and [`model`] what a stage is;
//! - [`files`] reading and saving stage files, and [`engine`] solving a stage;
//! - [`judge`] what the figures mean: the figure table, warnings, spec limits;
//! - [`study`] many solves: spread, pairs, stabilize;
//! - [`output`] text, JSON, CSV, Markdown and SVG, with no terminal;
//! - [`commands`] the command line and [`ui`] the workbench.
//!
//! ```
//! use loopwright::engine::analyze;
//! use loopwright::files::load::demo;
//! // The built-in demo: a non-inverting stage, rf 10 kΩ over rg 1 kΩ.
//! let s = demo();
//! let a = analyze(&s);
//! // Textbook ideal gain 1 + rf/rg = 11; finite loop gain makes it a little less.
//! assert!((a.ideal_gain - 11.0).abs() < 1e-9);
//! assert!(a.dc_gain < a.ideal_gain && a.gain_error < 0.0);
//! assert!(a.phase_margin_deg.unwrap() > 45.0);
//! ```

pub mod commands;
pub mod engine;
pub mod files;
pub mod judge;
pub mod model;
pub mod num;
pub mod output;
pub mod study;
pub mod ui;
