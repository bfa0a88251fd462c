//! A part: one amplifier the designer keeps, with its name, its class,
//! the model's values and, for each value, an optional note of where it
//! came from (document, page, typical or maximum, condition). Types only;
//! `files/parts.rs` reads and writes them.

use crate::model::params::{Access, PARAMS};
use crate::model::scenario::{Amp, Scenario};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The classes a part may name (any other text is kept as written).
pub const CLASSES: [&str; 6] = [
    "general purpose",
    "precision",
    "low noise",
    "fast",
    "rail-to-rail",
    "high impedance",
];

/// One amplifier of a library.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Part {
    pub name: String,
    #[serde(default)]
    pub class: String,
    pub amp: Amp,
    /// Where each value came from, by `amp` field (`gbw: "p. 4, typical"`).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub notes: BTreeMap<String, String>,
}

/// Where a part was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Origin {
    /// The `parts/` folder beside the scenario.
    Project,
    /// The user's library in the platform's configuration folder.
    User,
    /// The generic archetypes shipped with loopwright.
    BuiltIn,
}

impl Origin {
    pub const ALL: [Origin; 3] = [Origin::BuiltIn, Origin::User, Origin::Project];

    pub fn title(self) -> &'static str {
        match self {
            Origin::BuiltIn => "built-in",
            Origin::User => "user library",
            Origin::Project => "project",
        }
    }
}

/// The `amp` fields (as the parameter table lists them), without `amp.`.
pub fn amp_fields() -> impl Iterator<Item = &'static str> {
    PARAMS.iter().filter_map(|p| p.path.strip_prefix("amp."))
}

/// Whether `field` is an `amp` field a note may be about.
pub fn is_amp_field(field: &str) -> bool {
    amp_fields().any(|f| f == field)
}

/// The amplifier's present values by field name, in the table's order.
pub fn amp_values(s: &Scenario) -> Vec<(&'static str, f64)> {
    PARAMS
        .iter()
        .filter_map(|p| {
            let field = p.path.strip_prefix("amp.")?;
            match p.access {
                Access::Number { get, .. } => get(s).map(|v| (field, v)),
                Access::Choice { .. } => None,
            }
        })
        .collect()
}

/// The amplifier fields whose value differs between two stages (present
/// in one and absent in the other counts), in the table's order.
pub fn changed_fields(old: &Scenario, new: &Scenario) -> Vec<&'static str> {
    let (a, b) = (amp_values(old), amp_values(new));
    let get = |l: &[(&'static str, f64)], f: &str| l.iter().find(|(n, _)| *n == f).map(|(_, v)| *v);
    let mut out: Vec<&'static str> = Vec::new();
    for f in amp_fields() {
        if get(&a, f) != get(&b, f) && !out.contains(&f) {
            out.push(f);
        }
    }
    out
}
