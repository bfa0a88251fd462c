//! Meaning: the figure table, the warning rules, the spec limits, and
//! [`evaluate`], which joins a stage's analysis with the rules' warnings.
//!
//! Inside: `warnings` (the warning type, the rule context and the rule list)
//! ← `limit_rules` (the large-signal rules it lists), `figures`, `spec`.

pub mod figures;
pub mod limit_rules;
pub mod spec;
pub mod spread_figures;
pub mod warning;
pub mod warnings;

use crate::engine::{analyze, Analysis};
use crate::model::{FieldProblem, Scenario};
pub use warnings::{Code, Severity, Warning};

/// A stage's figures and the warnings the design rules give for them.
#[derive(Debug, Clone)]
pub struct Evaluation {
    pub analysis: Analysis,
    pub warnings: Vec<Warning>,
}

/// Validate, analyse and apply every design rule.
pub fn evaluate(s: &Scenario) -> Evaluation {
    let problems = s.validate().err().unwrap_or_default();
    evaluate_with(s, &problems)
}

/// Analyse and apply the rules, given the scenario's field problems (from
/// one [`Scenario::validate`] call the caller already made).
pub fn evaluate_with(s: &Scenario, problems: &[FieldProblem]) -> Evaluation {
    let analysis = analyze(s);
    let warnings = warnings::check(&warnings::Context {
        s,
        a: &analysis,
        problems,
    });
    let mut e = Evaluation { analysis, warnings };
    // The spec reads the stage's figures as the spread does.
    if problems.is_empty() {
        let mut failed = spec::nominal_warnings(s, &e);
        failed.extend(spec::range_end_warnings(s, &e));
        e.warnings.extend(failed);
        e.warnings.sort_by_key(|x| std::cmp::Reverse(x.severity));
    }
    e
}
