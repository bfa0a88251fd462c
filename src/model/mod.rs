//! What a stage is: the scenario types, values and their notation (SI and
//! IEC 60062 RKM), the IEC 60063 series, and the parameter table with its
//! ranges and validation. Nothing here solves or reads files.

pub mod datasheet;
pub mod eseries;
pub mod names;
pub mod params;
pub mod part;
pub mod scenario;
pub mod stages;
pub mod temperature;
pub mod values;

pub use eseries::Series;
pub use scenario::{FieldProblem, Scenario, ScenarioError, Topology};
