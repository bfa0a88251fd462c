//! The warnings a scenario raises.

use loopwright::model::scenario::Scenario;

/// The warnings of a scenario. Every test gets them through here, so a
/// change in how the engine hands them out touches one place.
pub fn warnings_of(s: &Scenario) -> Vec<loopwright::judge::Warning> {
    loopwright::judge::evaluate(s).warnings
}

/// The warning with `code`, if the scenario raises it.
pub fn warning(s: &Scenario, code: &str) -> Option<loopwright::judge::Warning> {
    warnings_of(s).into_iter().find(|w| w.code == code)
}
