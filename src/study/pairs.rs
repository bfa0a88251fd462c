//! Resistor pairs for a target gain: E-series (rg, rf) pairs ranked by
//! how close their gain comes, then by the thermal noise they add at the
//! output, then by the load they put on it.
//!
//! The gain of a pair is the stage's ideal gain (an ideal amplifier) with
//! what lies around the network: a source resistance in series with rg
//! (inverting stage) and riso into a resistive load (a divider after the
//! feedback point). The search aims rf at the target through them, so the
//! pairs compensate the source and the divider.

use crate::model::eseries::Series;
use crate::model::params::{GAIN_TARGET, OHMS};
use crate::model::scenario::Topology;
use crate::model::values::{fmt_eng, fmt_plain};
use serde::Serialize;
use std::cmp::Ordering;
use std::fmt;

/// Boltzmann constant, J/K (exact since the 2019 SI redefinition).
pub const BOLTZMANN: f64 = 1.380649e-23;
/// The temperature the noise column is given at: 25 °C in kelvin.
pub const NOISE_TEMP_K: f64 = 298.15;
/// The rf values searched: 1 Ω to 10 MΩ.
pub const RF_RANGE: (f64, f64) = (1.0, 10.0e6);
/// Relative gain errors this close count as equal (floating-point noise:
/// 10k/1k and 100k/10k are the same ratio).
pub const TIE: f64 = 1e-12;

/// What to search for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Query {
    /// The gain magnitude wanted (for Inverting, rf/rg).
    pub target: f64,
    pub series: Series,
    pub topology: Topology,
    /// rg runs over every series value in this range (Ω, ends included).
    pub rg_range: (f64, f64),
    /// How many pairs to return.
    pub count: usize,
    /// The source resistance, Ω (0: none). In an inverting stage it is in
    /// series with rg; a non-inverting input draws no current from it.
    pub source_r: f64,
    /// riso between the amplifier output (where the feedback is taken) and
    /// the load, Ω (0: none).
    pub riso: f64,
    /// The load resistance, Ω (None: no resistive load).
    pub load_r: Option<f64>,
}

impl Query {
    /// Non-inverting on E24, rg from 1 kΩ to 100 kΩ, the best ten.
    pub fn new(target: f64) -> Query {
        Query {
            target,
            series: Series::E24,
            topology: Topology::NonInverting,
            rg_range: (1.0e3, 100.0e3),
            count: 10,
            source_r: 0.0,
            riso: 0.0,
            load_r: None,
        }
    }

    /// The source resistance in series with rg: the source's own in an
    /// inverting stage, 0 otherwise.
    pub fn series_r(&self) -> f64 {
        match self.topology.kind().source_in_network {
            true => self.source_r,
            false => 0.0,
        }
    }

    /// What riso and the load leave of the output: rl/(rl + riso), 1
    /// without both.
    pub fn divider(&self) -> f64 {
        match self.load_r {
            Some(rl) if self.riso > 0.0 => rl / (rl + self.riso),
            _ => 1.0,
        }
    }

    /// The ideal gain magnitude of a pair with the source and the divider:
    /// rf/(rg + rs)·d (Inverting) or (1 + rf/rg)·d.
    pub fn gain_of(&self, rg: f64, rf: f64) -> f64 {
        let d = self.divider();
        match self.topology.kind().pairs {
            Some(p) => (p.gain)(rf / (rg + self.series_r())) * d,
            None => (1.0 + rf / rg) * d,
        }
    }

    /// The rf that gives the target exactly from this rg.
    fn ideal_rf(&self, rg: f64) -> f64 {
        let aim = self.target / self.divider();
        match self.topology.kind().pairs {
            Some(p) => (p.ratio)(aim) * (rg + self.series_r()),
            None => (aim - 1.0) * rg,
        }
    }
}

/// Which part of a [`Query`] is wrong.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QueryField {
    Target,
    Topology,
    RgMin,
    RgMax,
    Count,
    SourceR,
    Riso,
    LoadR,
}

/// A query that cannot be answered, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct QueryProblem {
    pub field: QueryField,
    pub message: String,
}

impl fmt::Display for QueryProblem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for QueryProblem {}

/// One (rg, rf) pair and what it gives (serialised with these names).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Pair {
    pub rg: f64,
    pub rf: f64,
    /// The gain magnitude: 1 + rf/rg (NonInverting) or rf/rg (Inverting).
    pub gain: f64,
    /// (gain − target)/target, signed.
    pub error: f64,
    /// Thermal noise of rg and rf at the output at 25 °C, V/√Hz.
    pub noise_density: f64,
    /// The resistance the network puts on the output, Ω.
    pub load_ohm: f64,
}

impl Pair {
    /// The figures of one pair for a query's target, source and load.
    pub fn new(q: &Query, rg: f64, rf: f64) -> Pair {
        let gain = q.gain_of(rg, rf);
        // The kind says what the pair puts on the output (an inverting
        // input is a virtual ground: rg loads the source, only rf the
        // output).
        let pairs = q.topology.kind().pairs;
        let load_ohm = pairs.map_or(rf + rg, |p| (p.load)(rg, rf));
        let four_kt = 4.0 * BOLTZMANN * NOISE_TEMP_K;
        // rf's own noise reaches the amplifier output at gain 1, rg's at
        // rf/(rg + rs) (rf/rg non-inverting): Johnson–Nyquist density 4kTR
        // each, uncorrelated.
        let rg_gain = rf / (rg + q.series_r());
        // A matched second half (r3 = rg, r4 = rf on the + input) adds
        // rg ∥ rf at the + pin, amplified by the noise gain 1 + rg_gain.
        let mirror = match pairs.and_then(|p| p.also) {
            Some(_) => four_kt * rg * rf / (rg + rf) * (1.0 + rg_gain).powi(2),
            None => 0.0,
        };
        let noise_density = (four_kt * rf + four_kt * rg * rg_gain * rg_gain + mirror).sqrt();
        Pair {
            rg,
            rf,
            gain,
            error: (gain - q.target) / q.target,
            noise_density,
            load_ohm,
        }
    }
}

fn problem(field: QueryField, message: String) -> QueryProblem {
    QueryProblem { field, message }
}

/// Refuse a query without an answer: the problem names the field; its
/// message says what is wrong with the field's value (without repeating it).
pub fn check(q: &Query) -> Result<(), QueryProblem> {
    let (lo, hi) = q.rg_range;
    let fail = |field, message: &str| Err(problem(field, message.to_string()));
    if !q.topology.has_resistors() {
        let choices = Topology::with_resistors(" or ");
        return fail(
            QueryField::Topology,
            &format!("a follower has no rg or rf: use {choices}"),
        );
    }
    if !(q.target.is_finite() && q.target > 0.0) {
        return fail(QueryField::Target, "must be above 0 (give the magnitude)");
    }
    for (field, r) in [
        (QueryField::SourceR, q.source_r),
        (QueryField::Riso, q.riso),
    ] {
        if !(r.is_finite() && (0.0..=OHMS.1).contains(&r)) {
            return Err(problem(
                field,
                format!("must be 0 to {}", fmt_eng(OHMS.1, "Ω")),
            ));
        }
    }
    if let Some(m) = q.load_r.and_then(outside_ohms) {
        return Err(problem(QueryField::LoadR, m));
    }
    if q.topology == Topology::NonInverting && q.target / q.divider() <= 1.0 {
        if q.divider() < 1.0 {
            return fail(
                QueryField::Target,
                "must be above 1 after riso and the load (the stage's gain is (1 + rf/rg) × rl/(rl + riso))",
            );
        }
        return fail(
            QueryField::Target,
            "must be above 1 for a non-inverting stage (its gain is 1 + rf/rg)",
        );
    }
    if q.target > GAIN_TARGET.1 {
        return Err(problem(
            QueryField::Target,
            format!(
                "is above {}, the largest gain loopwright accepts",
                fmt_plain(GAIN_TARGET.1, 6)
            ),
        ));
    }
    if !(lo.is_finite() && lo > 0.0) {
        return fail(QueryField::RgMin, "must be above 0 Ω");
    }
    if let Some(m) = outside_ohms(lo) {
        return Err(problem(QueryField::RgMin, m));
    }
    if let Some(m) = outside_ohms(hi) {
        return Err(problem(QueryField::RgMax, m));
    }
    if !(hi.is_finite() && hi >= lo) {
        return fail(QueryField::RgMax, "is below the bottom of the rg range");
    }
    if q.series.values_between(lo, hi).is_empty() {
        return Err(problem(
            QueryField::RgMax,
            format!("leaves no {} value for rg", q.series),
        ));
    }
    reachable(q)?;
    if q.count == 0 {
        return fail(QueryField::Count, "must be at least 1");
    }
    Ok(())
}

/// Why an rg end lies outside the accepted resistance range, if it does.
fn outside_ohms(r: f64) -> Option<String> {
    let range = || format!("{} to {}", fmt_eng(OHMS.0, "Ω"), fmt_eng(OHMS.1, "Ω"));
    (!(OHMS.0..=OHMS.1).contains(&r))
        .then(|| format!("is outside the accepted resistance range {}", range()))
}

/// Refuse a gain that no rf within [`RF_RANGE`] reaches from any rg of the
/// range (every row would be rf's end of the range, far off the gain).
fn reachable(q: &Query) -> Result<(), QueryProblem> {
    let (lo, hi) = q.rg_range;
    let (rf_lo, rf_hi) = RF_RANGE;
    if q.ideal_rf(lo) > rf_hi || q.ideal_rf(hi) < rf_lo {
        return Err(problem(
            QueryField::Target,
            format!(
                "needs an rf outside {} to {} for every rg from {} to {}",
                fmt_eng(rf_lo, "Ω"),
                fmt_eng(rf_hi, "Ω"),
                fmt_eng(lo, "Ω"),
                fmt_eng(hi, "Ω")
            ),
        ));
    }
    Ok(())
}

/// The ranking: |error| ascending, where a run of errors each within
/// [`TIE`] of the run's first counts as one tie; inside a tie lower noise
/// first, then lower load, then lower rg. Sorts in place.
pub fn rank(pairs: &mut [Pair]) {
    pairs.sort_by(|a, b| a.error.abs().total_cmp(&b.error.abs()));
    let mut start = 0;
    while start < pairs.len() {
        let lead = pairs[start].error.abs();
        let end = start
            + pairs[start..]
                .iter()
                .take_while(|p| p.error.abs() - lead <= TIE)
                .count();
        pairs[start..end].sort_by(tie_order);
        start = end;
    }
}

fn tie_order(a: &Pair, b: &Pair) -> Ordering {
    a.noise_density
        .total_cmp(&b.noise_density)
        .then(a.load_ohm.total_cmp(&b.load_ohm))
        .then(a.rg.total_cmp(&b.rg))
}

/// Up to `n` rf values on each side of `ideal`, from an increasing list.
fn nearest(rf: &[f64], ideal: f64, n: usize) -> &[f64] {
    let split = rf.partition_point(|&v| v < ideal);
    &rf[split.saturating_sub(n)..(split + n).min(rf.len())]
}

/// The best `q.count` pairs, best first.
///
/// For each rg only the `count` rf values nearest the ideal on either side
/// are tried. This gives the same list as trying every rf: on each side
/// the error grows with every step away from the ideal (by far more than
/// [`TIE`]), so a pair beyond them has `count` pairs of its own rg in
/// strictly earlier ties, and cannot make the list.
pub fn find(q: &Query) -> Result<Vec<Pair>, QueryProblem> {
    check(q)?;
    let rf_values = q.series.values_between(RF_RANGE.0, RF_RANGE.1);
    let mut pairs: Vec<Pair> = q
        .series
        .values_between(q.rg_range.0, q.rg_range.1)
        .into_iter()
        .flat_map(|rg| {
            nearest(&rf_values, q.ideal_rf(rg), q.count)
                .iter()
                .map(move |&rf| Pair::new(q, rg, rf))
        })
        .collect();
    rank(&mut pairs);
    pairs.truncate(q.count);
    Ok(pairs)
}
