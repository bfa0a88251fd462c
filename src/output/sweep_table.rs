//! The frequency sweep as data: one row per frequency with the same
//! figures as `report --at` (from [`report::point_report`]), written as
//! CSV or as one JSON object of column arrays.

use crate::engine::analysis::{Analysis, Circuit};
use crate::model::params::HERTZ;
use crate::model::scenario::Scenario;
use crate::model::values::fmt_eng;
use crate::num::refine::log_grid;
use crate::output::report::{point_report, PointReport};
use std::io::{self, Write};

/// The column names, in order: the CSV header and the JSON keys.
pub const COLUMNS: [&str; 13] = [
    "f_hz",
    "gain_mag",
    "gain_db",
    "gain_phase_deg",
    "loop_mag",
    "loop_db",
    "loop_phase_deg",
    "zout_mag",
    "zout_phase_deg",
    "zin_mag",
    "zin_phase_deg",
    "noise_density",
    "cmrr_db",
];

/// Most rows a sweep may have.
pub const MAX_ROWS: usize = 2000;

/// One row: the values of [`COLUMNS`], None where undefined.
pub type Row = [Option<f64>; 13];

/// The row of one `--at` point, with the loop gain also in dB.
pub fn row(p: &PointReport) -> Row {
    let loop_db = p
        .loop_mag
        .map(|m| 20.0 * m.log10())
        .filter(|v| v.is_finite());
    [
        Some(p.f_hz),
        p.gain_mag,
        p.gain_db,
        p.gain_phase_deg,
        p.loop_mag,
        loop_db,
        p.loop_phase_deg,
        p.zout_mag,
        p.zout_phase_deg,
        p.zin_mag,
        p.zin_phase_deg,
        p.noise_density,
        p.cmrr_db.flatten(),
    ]
}

/// Which frequencies to sweep: the analysis sweep, or a log grid.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Range {
    pub from: Option<f64>,
    pub to: Option<f64>,
    pub per_decade: Option<u32>,
}

impl Range {
    /// The frequencies: the analysis sweep points when nothing is given,
    /// otherwise a log grid from `from` to `to` (each defaulting to the
    /// analysis sweep's end) at `per_decade` points (30 by default).
    pub fn frequencies(&self, a: &Analysis) -> anyhow::Result<Vec<f64>> {
        let pts = &a.sweep.points;
        if *self == Range::default() {
            return Ok(pts.iter().map(|p| p.f_hz).collect());
        }
        let lo = self.from.or(pts.first().map(|p| p.f_hz)).unwrap_or(0.01);
        let hi = self.to.or(pts.last().map(|p| p.f_hz)).unwrap_or(1e9);
        if lo <= 0.0 {
            anyhow::bail!("--from must be above 0 Hz: the sweep is log-spaced");
        }
        if lo < HERTZ.0 {
            anyhow::bail!(
                "--from {lo:e} Hz is below {}, the lowest frequency the sweep accepts",
                fmt_eng(HERTZ.0, "Hz")
            );
        }
        if hi <= lo {
            anyhow::bail!(
                "--to ({}) must be above --from ({})",
                fmt_eng(hi, "Hz"),
                fmt_eng(lo, "Hz")
            );
        }
        let ppd = self.per_decade.unwrap_or(30);
        if ppd == 0 {
            anyhow::bail!("--ppd must be at least 1");
        }
        let rows = ((hi / lo).log10() * f64::from(ppd)).ceil() + 1.0;
        if rows > MAX_ROWS as f64 {
            anyhow::bail!(
                "{rows} rows asked for; at most {MAX_ROWS}: narrow the range or lower --ppd"
            );
        }
        Ok(log_grid(lo, hi, f64::from(ppd)))
    }
}

/// The rows at these frequencies, each solved exactly there.
pub fn rows(s: &Scenario, a: &Analysis, freqs: &[f64]) -> Vec<Row> {
    let circuit = Circuit::new(s);
    freqs
        .iter()
        .map(|&f| row(&point_report(&circuit, a, f)))
        .collect()
}

/// The step response's columns (`sweep --step`).
pub const STEP_COLUMNS: [&str; 2] = ["t_s", "v"];

/// Samples of the step response without `--points`.
pub const STEP_POINTS: usize = 1000;

/// The step waveform's rows: `n` even samples from 0 to twice the 0.01 %
/// settling time (as `report --waveform`); an error when the stage has no
/// step response.
pub fn step_rows(a: &Analysis, n: usize) -> anyhow::Result<Vec<[Option<f64>; 2]>> {
    let (t, v) = a.step.waveform(n);
    if t.is_empty() {
        anyhow::bail!("the stage has no step response (its loop is unstable)");
    }
    Ok(t.into_iter()
        .zip(v)
        .map(|(t, v)| [Some(t), Some(v).filter(|v| v.is_finite())])
        .collect())
}

/// CSV: the header, then one line per row; `{}` prints the shortest text
/// that reads back to the same double; an empty cell where undefined.
pub fn write_csv<R: AsRef<[Option<f64>]>>(
    names: &[&str],
    rows: &[R],
    w: &mut impl Write,
) -> io::Result<()> {
    writeln!(w, "{}", names.join(","))?;
    for r in rows {
        let cells: Vec<String> = r
            .as_ref()
            .iter()
            .map(|v| v.map(|x| format!("{x}")).unwrap_or_default())
            .collect();
        writeln!(w, "{}", cells.join(","))?;
    }
    Ok(())
}

/// The columns in order, for serde.
struct Columns<'a, R>(&'a [&'a str], &'a [R]);

impl<R: AsRef<[Option<f64>]>> serde::Serialize for Columns<'_, R> {
    fn serialize<S: serde::Serializer>(&self, ser: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = ser.serialize_map(Some(self.0.len()))?;
        for (i, name) in self.0.iter().enumerate() {
            let col: Vec<Option<f64>> = self.1.iter().map(|r| r.as_ref()[i]).collect();
            m.serialize_entry(name, &col)?;
        }
        m.end()
    }
}

/// JSON: one object, each column name holding its array in column order
/// (null where undefined).
pub fn write_json<R: AsRef<[Option<f64>]>>(
    names: &[&str],
    rows: &[R],
    w: &mut impl Write,
) -> io::Result<()> {
    serde_json::to_writer(&mut *w, &Columns(names, rows))?;
    writeln!(w)
}
