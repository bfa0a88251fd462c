//! The analysis engine: values, E-series, scenario, parameter and figure
//! tables, netlist, solver, analyses and warnings. It knows nothing of
//! terminals; every view reads its results.
//!
//! Dependencies run one way: `analysis` computes figures from the
//! `netlist`; `warnings` reads an `Analysis`; [`evaluate`] composes the two.

pub mod analysis;
pub mod dense;
pub mod eseries;
pub mod figures;
pub mod filetext;
pub mod limit_rules;
pub mod limits;
pub mod netlist;
pub mod pairs;
pub mod params;
pub mod scenario;
pub mod solver;
pub mod spec;
pub mod spread;
pub mod stabilize;
pub mod step;
pub mod traces;
pub mod values;
pub mod warnings;

pub use analysis::{analyze, Analysis, Circuit, Point};
pub use eseries::Series;
pub use scenario::{FieldProblem, Scenario, ScenarioError, Topology};
pub use warnings::{Code, Severity, Warning};

/// A stage's figures and the warnings the design rules give for them.
#[derive(Debug, Clone)]
pub struct Evaluation {
    pub analysis: Analysis,
    pub warnings: Vec<Warning>,
}

impl std::ops::Deref for Evaluation {
    type Target = Analysis;
    fn deref(&self) -> &Analysis {
        &self.analysis
    }
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
        let failed = spec::nominal_warnings(s, &e);
        e.warnings.extend(failed);
        e.warnings.sort_by_key(|x| std::cmp::Reverse(x.severity));
    }
    e
}
