//! Parsers for command-line values: frequencies, gains, margins,
//! resistances, series and topologies, each refusing with the value it got.

use crate::model::params::HERTZ;
use crate::model::values::{fmt_eng, parse_quantity};
use crate::model::{Series, Topology};
use crate::study::stabilize;
use anyhow::{anyhow, bail, Context, Result};

/// A frequency from the command line: engineering notation (`1k`, `2.5MHz`).
/// `0` is DC; a unit other than hertz, a negative value or one above the
/// widest sweep is refused.
pub fn parse_frequency(text: &str) -> Result<f64> {
    let (v, unit) = parse_quantity(text)?;
    if !unit.is_empty() && unit != "Hz" {
        bail!("`{text}` is not a frequency: give hertz (1k, 2.5MHz), not {unit}");
    }
    if v.is_sign_negative() && v != 0.0 {
        bail!("`{text}`: a frequency must not be negative");
    }
    if v > HERTZ.1 {
        bail!(
            "`{text}` is above {}, the highest frequency loopwright solves",
            fmt_eng(HERTZ.1, "Hz")
        );
    }
    // `-0` is DC too, written as 0.
    Ok(v.abs())
}

/// A plain number (no unit), in engineering notation or RKM code.
fn parse_number(text: &str, what: &str) -> Result<f64> {
    let (v, unit) = parse_quantity(text)?;
    if !unit.is_empty() {
        bail!("`{text}`: {what} takes no unit ({unit})");
    }
    Ok(v)
}

/// The GAIN of `pairs`: a plain number (checked against the topology later).
pub fn parse_gain(text: &str) -> Result<f64> {
    parse_number(text, "a gain")
}

/// The `--margin` of `stabilize`, in degrees.
pub fn parse_margin(text: &str) -> Result<f64> {
    let v = parse_number(text.trim_end_matches('°'), "a margin in degrees")?;
    stabilize::check_target(v).map_err(|e| anyhow!("`{text}` {e}"))?;
    Ok(v)
}

/// A resistance: `1k`, `4k7`, `100kΩ`.
pub fn parse_resistance(text: &str) -> Result<f64> {
    let v = parse_resistance_or_zero(text)?;
    if v <= 0.0 {
        bail!("`{text}`: a resistance must be above 0");
    }
    Ok(v)
}

/// A resistance that may be 0 (none), never negative.
pub fn parse_resistance_or_zero(text: &str) -> Result<f64> {
    let (v, unit) = parse_quantity(text)?;
    if !matches!(unit.as_str(), "" | "Ω" | "ohm" | "ohms" | "Ohm") {
        bail!("`{text}` is not a resistance: give ohms, not {unit}");
    }
    if v < 0.0 {
        bail!("`{text}`: a resistance cannot be below 0");
    }
    Ok(v)
}

/// An IEC 60063 series name.
pub fn parse_series(text: &str) -> Result<Series> {
    Series::parse(text).with_context(|| {
        let names: Vec<&str> = Series::ALL.iter().map(|s| s.name()).collect();
        format!("unknown series `{text}`: use {}", names.join(", "))
    })
}

/// The `--topology` help of `pairs`: every kind, the ones with a
/// resistor ratio first.
pub fn pair_topology_help() -> String {
    let without: Vec<&str> = Topology::ALL
        .into_iter()
        .filter(|t| !t.has_resistors())
        .map(|t| t.name())
        .collect();
    format!(
        "{} ({}: no resistor ratio sets the gain)",
        Topology::with_resistors(" or "),
        without.join(" and ")
    )
}

/// A kind whose gain a resistor ratio sets (NonInverting, Inverting,
/// Difference; a follower has no rg and rf).
pub fn parse_pair_topology(text: &str) -> Result<Topology> {
    Topology::ALL
        .into_iter()
        .filter(|t| t.has_resistors())
        .find(|t| t.name().eq_ignore_ascii_case(text.trim()))
        .with_context(|| {
            let without = Topology::ALL
                .into_iter()
                .find(|t| t.name().eq_ignore_ascii_case(text.trim()))
                .filter(|t| *t != Topology::Follower);
            match without {
                Some(t) => format!(
                    "`{text}`: a {} stage has nothing to pair (no rf/rg ratio sets its gain); use {}",
                    t.name(),
                    Topology::with_resistors(" or ")
                ),
                None => format!(
                    "`{text}`: use {} (a follower has no rg or rf)",
                    Topology::with_resistors(" or ")
                ),
            }
        })
}
