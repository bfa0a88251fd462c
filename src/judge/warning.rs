//! What a design warning is: a stable code, a severity and a sentence
//! carrying the numbers; what a rule sees; the thresholds the rules share.

use crate::engine::analysis::Analysis;
use crate::model::scenario::{FieldProblem, Scenario};
use serde::Serialize;
use std::fmt;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Info,
    Warning,
    Severe,
}

impl Severity {
    pub fn name(self) -> &'static str {
        match self {
            Severity::Info => "info",
            Severity::Warning => "warning",
            Severity::Severe => "severe",
        }
    }
}

/// A warning's stable code (the JSON and README name it by `as_str`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Code {
    InputInvalid,
    PhaseMargin,
    NoCrossover,
    LoadCapacitance,
    Peaking,
    GainError,
    LoadDivider,
    ResistorNoise,
    HeavyOutputLoad,
    OffSeries,
    ValueRange,
    OutputSwing,
    InputRange,
    Slew,
    OutputCurrent,
    DcOffset,
    SampleKick,
    Spec,
    ReferenceImbalance,
}

impl Code {
    pub const ALL: [Code; 19] = [
        Code::InputInvalid,
        Code::PhaseMargin,
        Code::NoCrossover,
        Code::LoadCapacitance,
        Code::Peaking,
        Code::GainError,
        Code::LoadDivider,
        Code::ResistorNoise,
        Code::HeavyOutputLoad,
        Code::OffSeries,
        Code::ValueRange,
        Code::OutputSwing,
        Code::InputRange,
        Code::Slew,
        Code::OutputCurrent,
        Code::DcOffset,
        Code::SampleKick,
        Code::Spec,
        Code::ReferenceImbalance,
    ];

    /// The stable kebab-case name.
    pub fn as_str(self) -> &'static str {
        match self {
            Code::InputInvalid => "input-invalid",
            Code::PhaseMargin => "phase-margin",
            Code::NoCrossover => "no-crossover",
            Code::LoadCapacitance => "load-capacitance",
            Code::Peaking => "peaking",
            Code::GainError => "gain-error",
            Code::LoadDivider => "load-divider",
            Code::ResistorNoise => "resistor-noise",
            Code::HeavyOutputLoad => "heavy-output-load",
            Code::OffSeries => "off-series",
            Code::ValueRange => "value-range",
            Code::OutputSwing => "output-swing",
            Code::InputRange => "input-range",
            Code::Slew => "slew",
            Code::OutputCurrent => "output-current",
            Code::DcOffset => "dc-offset",
            Code::SampleKick => "sample-kick",
            Code::Spec => "spec",
            Code::ReferenceImbalance => "reference-imbalance",
        }
    }
}

impl fmt::Display for Code {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl PartialEq<&str> for Code {
    fn eq(&self, other: &&str) -> bool {
        self.as_str() == *other
    }
}

impl Serialize for Code {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Warning {
    pub code: Code,
    pub severity: Severity,
    pub text: String,
}

/// Phase margin below this is a warning (common practice).
pub const PM_WARN_DEG: f64 = 45.0;
/// Phase margin below this is severe (common practice).
pub const PM_SEVERE_DEG: f64 = 30.0;
/// Phase margin the load capacitance may take before it is noted, and
/// before it is a warning (common practice: cable and load capacitance vary).
pub const LOAD_C_INFO_DEG: f64 = 10.0;
pub const LOAD_C_WARN_DEG: f64 = 20.0;
pub const PEAKING_WARN_DB: f64 = 1.0;
pub const PEAKING_SEVERE_DB: f64 = 3.0;
/// The amplifier output should not see less than this (common practice).
pub const HEAVY_LOAD_OHM: f64 = 300.0;
/// Resistors' share of the output noise power above which they "dominate".
pub const RESISTOR_NOISE_SHARE: f64 = 0.5;
/// The source resistance's share above which it, not the design, sets the
/// noise (the resistor-noise warning then says so instead of advising).
pub const SOURCE_NOISE_SHARE: f64 = 0.5;
/// Output headroom below this share of the supply span is a warning
/// (common practice: rails and swing vary with load and temperature).
pub const HEADROOM_WARN_SHARE: f64 = 0.05;
/// Slew need above this share of the slew rate is a warning (common
/// practice: distortion rises well before the slew limit).
pub const SLEW_WARN_SHARE: f64 = 0.7;
/// Output current above this share of the limit is a warning (common practice).
pub const IOUT_WARN_SHARE: f64 = 0.8;
/// Worst-case output offset above this share of the output signal's
/// peak is a warning (common practice).
pub const OFFSET_WARN_SHARE: f64 = 0.01;

/// The sampling capacitor's error at the end of the acquisition above
/// this many LSB is a warning (half an LSB: common practice).
pub const KICK_WARN_LSB: f64 = 0.5;
/// A CMRR moved by more than this from what the stage's parts give is
/// a warning (the usual 3 dB of a figure that matters).
pub const CMRR_MOVE_DB: f64 = 3.0;

/// What a rule sees: the scenario, its figures and its field problems.
pub struct Context<'a> {
    pub s: &'a Scenario,
    pub a: &'a Analysis,
    pub problems: &'a [FieldProblem],
}

/// A design rule: appends its warnings (if any).
pub type Rule = fn(&Context, &mut Vec<Warning>);

/// Append one warning.
pub fn push(out: &mut Vec<Warning>, code: Code, severity: Severity, text: String) {
    out.push(Warning {
        code,
        severity,
        text,
    });
}
