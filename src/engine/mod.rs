//! The analysis engine: values, E-series, scenario, netlist, solver,
//! analyses and warnings. It knows nothing of terminals; every view reads
//! its results.

pub mod analysis;
pub mod eseries;
pub mod filetext;
pub mod netlist;
pub mod scenario;
pub mod solver;
pub mod values;
pub mod warnings;

pub use analysis::{analyze, Analysis, Circuit, Point};
pub use eseries::Series;
pub use scenario::{Scenario, ScenarioError, Topology};
pub use warnings::{Severity, Warning};
