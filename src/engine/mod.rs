//! Solving: the netlist of a stage, the circuit at each frequency, the sweep
//! and its figures, DC errors and signal limits, and the step response. It
//! reads the model and the numerics and knows nothing of judging, studies,
//! outputs or terminals.
//!
//! Inside: `circuit` (the solved network at one frequency, the sweep's
//! points) ← `limits`, `step` ← `analysis` (which composes them).

pub mod analysis;
pub mod circuit;
pub mod kick;
pub mod limits;
pub mod netlist;
pub mod step;

pub use analysis::{analyze, Analysis};
pub use circuit::{Circuit, Point};
