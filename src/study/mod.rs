//! Studies: many solves of one stage. The tolerance spread (corners and
//! Monte Carlo), E-series pairs for a gain, and the stabilising options.

pub mod over_temperature;
pub mod pairs;
pub mod shares;
pub mod spread;
pub mod stabilize;
pub mod tally;
pub mod tighten;
