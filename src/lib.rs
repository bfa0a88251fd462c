//! loopwright: a terminal workbench for op-amp feedback amplifier stages.
//!
//! [`engine`] holds the analysis (no terminal code); [`report`] turns its
//! results into text or JSON; the binary in `main.rs` dispatches commands.

pub mod cli;
pub mod engine;
pub mod report;
pub mod ui;
