//! The stage at the ends of its temperature range and at `temp_c`: each
//! spread figure of the nominal stage at each temperature, the resistors'
//! temperature coefficients (±`stage.tc_ppm`) at the signs that move that
//! figure furthest from its value at `temp_c`. Each point is the scenario
//! built at that temperature (`model::temperature`), analysed in full.

use crate::engine::analysis::{analyze_to, FULL};
use crate::judge::spread_figures::{read, target, worse_of, SPREAD_FIGURES};
use crate::judge::Evaluation;
use crate::model::scenario::Scenario;
use crate::model::temperature::{at_temperature, drifting_resistors, temperatures};

/// The most resistors whose signs are all combined (2^6 solves per end).
const MAX_SIGNED: usize = 6;

/// One figure at each temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct TempRow {
    pub key: &'static str,
    pub values: Vec<Option<f64>>,
}

/// The figures over the range (None without `temp_range`).
#[derive(Debug, Clone, PartialEq)]
pub struct OverTemperature {
    pub temperatures: Vec<f64>,
    pub rows: Vec<TempRow>,
}

/// The figures a valid scenario gives at the ends of its range and at
/// `temp_c`; only the figures the nominal stage defines.
pub fn over_temperature(s: &Scenario) -> Option<OverTemperature> {
    s.temp_range?;
    let temps = temperatures(s);
    let eval = |t: &Scenario| Evaluation {
        analysis: analyze_to(t, FULL),
        warnings: Vec::new(),
    };
    let nominal = eval(s);
    let aim = target(s, &nominal);
    let keys: Vec<&'static str> = SPREAD_FIGURES
        .iter()
        .map(|f| f.0)
        .filter(|k| read(&nominal, k, aim).is_some())
        .collect();
    let n = drifting_resistors(s).len().min(MAX_SIGNED);
    let tc = s.stage.tc_ppm.unwrap_or(0.0);
    let signs: Vec<Vec<f64>> = if tc > 0.0 {
        (0..1usize << n)
            .map(|c| {
                (0..n)
                    .map(|i| if c >> i & 1 == 1 { tc } else { -tc })
                    .collect()
            })
            .collect()
    } else {
        vec![Vec::new()]
    };
    let mid: Vec<Option<f64>> = keys.iter().map(|k| read(&nominal, k, aim)).collect();
    let mut columns: Vec<Vec<Option<f64>>> = Vec::new();
    for &t in &temps {
        if t == s.temp_c {
            columns.push(mid.clone());
            continue;
        }
        let evals: Vec<Evaluation> = signs
            .iter()
            .map(|c| eval(&at_temperature(s, t, c)))
            .collect();
        columns.push(
            keys.iter()
                .zip(&mid)
                .map(|(k, m)| {
                    let vals = evals.iter().map(|e| read(e, k, aim));
                    vals.reduce(|a, b| worse_of(k, a, b, *m)).flatten()
                })
                .collect(),
        );
    }
    let rows = keys
        .iter()
        .enumerate()
        .map(|(j, k)| TempRow {
            key: k,
            values: columns.iter().map(|c| c[j]).collect(),
        })
        .collect();
    Some(OverTemperature {
        temperatures: temps,
        rows,
    })
}
