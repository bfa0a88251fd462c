//! Which part moves each spread figure: every varied part's share of the
//! figure's variance to first order (propagation of errors, textbook),
//! (∂F/∂p·σ_p)² over their sum. ∂F/∂p is a central difference at the
//! nominal stage (each knob at the middle of its interval, so a0 at the
//! middle of `a0_min … a0`), σ_p the standard deviation of the part's
//! draw: uniform over ±t gives t/√3; a normal with t = 3σ truncated at ±t
//! gives 0.9866·t/3 (the truncated normal's variance, 1 − 6φ(3)/(2Φ(3) − 1)
//! = 0.97334 of σ², textbook).

use crate::model::params::param;
use crate::model::scenario::{Dist, Scenario};
use rayon::prelude::*;

/// One varied part: a parameter-table field between two values.
#[derive(Debug, Clone, PartialEq)]
pub struct Knob {
    /// The part's name (`rf`), or the amplifier figure's (`gbw`).
    pub name: &'static str,
    pub field: &'static str,
    pub lo: f64,
    pub hi: f64,
}

/// One part's part in a figure's spread.
#[derive(Debug, Clone, PartialEq)]
pub struct Contribution {
    /// The part (`rf`) or the amplifier figure (`a0`).
    pub part: &'static str,
    /// Its fraction of the first-order variance (0 to 1).
    pub share: f64,
    /// ∂F/∂p at the nominal stage, in the figure's unit per the part's.
    pub sensitivity: f64,
}

/// The standard deviation of a knob's value as the spread draws it.
pub fn sigma(k: &Knob, dist: Dist) -> f64 {
    let half = 0.5 * (k.hi - k.lo);
    match dist {
        Dist::Uniform => half / 3f64.sqrt(),
        Dist::Normal => 0.9866 * half / 3.0,
    }
}

/// The central-difference step: a fiftieth of the knob's half-span.
const STEP: f64 = 0.02;

/// One stage's figures.
type Row = Vec<Option<f64>>;

/// The figures one stage gives, in a fixed order.
pub type Values<'a> = &'a (dyn Fn(&Scenario) -> Vec<Option<f64>> + Sync);

/// For each of the `n` figures `values` gives, the knobs' shares, largest
/// first; an empty list where a figure does not move or is undefined at a
/// step.
pub fn contributions(
    s: &Scenario,
    values: Values,
    n: usize,
    knobs: &[Knob],
    dist: Dist,
) -> Vec<Vec<Contribution>> {
    let mid = |s: &Scenario, knob: Option<(usize, f64)>| {
        let mut t = s.clone();
        for (i, k) in knobs.iter().enumerate() {
            let d = knob.filter(|(j, _)| *j == i).map_or(0.0, |(_, d)| d);
            let v = 0.5 * (k.lo + k.hi) + d * 0.5 * (k.hi - k.lo);
            if let Some(p) = param(k.field) {
                p.set(&mut t, Some(v));
            }
        }
        t
    };
    // Each knob a step down and up: 2 solves per knob.
    let sides: Vec<(Row, Row)> = (0..knobs.len())
        .into_par_iter()
        .map(|i| {
            (
                values(&mid(s, Some((i, -STEP)))),
                values(&mid(s, Some((i, STEP)))),
            )
        })
        .collect();
    (0..n)
        .map(|j| {
            let slopes: Option<Vec<f64>> = sides
                .iter()
                .zip(knobs)
                .map(|((lo, hi), k)| Some((hi[j]? - lo[j]?) / (STEP * (k.hi - k.lo))))
                .collect();
            // The size of the figure, to tell a move from rounding.
            let scale = sides
                .iter()
                .flat_map(|(lo, hi)| [lo[j], hi[j]])
                .flatten()
                .fold(1.0, |m: f64, v| m.max(v.abs()));
            slopes.map_or_else(Vec::new, |d| shares(knobs, &d, dist, scale))
        })
        .collect()
}

/// The shares from the slopes, largest first (empty when nothing moves:
/// a first-order spread below 1e-12 of the figure's size is rounding).
fn shares(knobs: &[Knob], slopes: &[f64], dist: Dist, scale: f64) -> Vec<Contribution> {
    let parts: Vec<f64> = knobs
        .iter()
        .zip(slopes)
        .map(|(k, d)| (d * sigma(k, dist)).powi(2))
        .collect();
    let total: f64 = parts.iter().sum();
    if !(total.sqrt() > 1e-12 * scale && total.is_finite()) {
        return Vec::new();
    }
    let mut out: Vec<Contribution> = knobs
        .iter()
        .zip(slopes)
        .zip(&parts)
        .map(|((k, d), v)| Contribution {
            part: k.name,
            share: v / total,
            sensitivity: *d,
        })
        .collect();
    out.sort_by(|a, b| b.share.total_cmp(&a.share));
    out
}
