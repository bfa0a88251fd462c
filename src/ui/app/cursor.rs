//! The frequency cursor: a vertical line on the frequency plots that
//! `,` and `.` move along the sweep and `;` jumps to the stage's marks
//! (f−3dB, crossover, the band edges); the readout under the plots gives
//! each stage's values there, the same numbers as `report --at`.

use super::App;
use crate::model::values::fmt_eng;

/// How far one `,` or `.` moves the cursor: a tenth of a decade.
pub const STEP_DECADES: f64 = 0.1;

impl App {
    /// The edited stage's sweep ends: where the cursor may go.
    pub fn cursor_range(&self) -> (f64, f64) {
        let pts = &self.slot().eval.analysis.sweep.points;
        match (pts.first(), pts.last()) {
            (Some(a), Some(b)) => (a.f_hz, b.f_hz),
            _ => (
                crate::engine::analysis::SWEEP_START_HZ,
                crate::engine::analysis::SWEEP_STOP_HZ,
            ),
        }
    }

    /// Put the cursor at `f` (within the sweep) and solve every stage there.
    pub fn put_cursor(&mut self, f: f64) {
        let (lo, hi) = self.cursor_range();
        let f = f.clamp(lo, hi);
        self.probe_hz = f;
        for s in &mut self.slots {
            s.set_probe(f);
        }
    }

    /// `,` and `.`: a tenth of a decade down or up.
    pub fn move_cursor(&mut self, up: bool) {
        let k = 10f64.powf(if up { STEP_DECADES } else { -STEP_DECADES });
        self.put_cursor(self.probe_hz * k);
        self.info(format!("cursor at {}", fmt_eng(self.probe_hz, "Hz")));
    }

    /// The places `;` jumps to, in frequency order: f−3dB, the crossover
    /// and the band edges of the edited stage.
    pub fn cursor_marks(&self) -> Vec<(f64, &'static str)> {
        let a = &self.slot().eval;
        let s = &self.slot().scenario;
        let mut m: Vec<(f64, &'static str)> = [
            (a.analysis.f_3db_hz, "f−3dB"),
            (a.analysis.crossover_hz, "crossover"),
            (Some(s.band.0), "band start"),
            (Some(s.band.1), "band end"),
        ]
        .into_iter()
        .filter_map(|(f, name)| f.map(|f| (f, name)))
        .collect();
        m.sort_by(|x, y| x.0.total_cmp(&y.0));
        m
    }

    /// `;`: the next mark above the cursor (round to the first).
    pub fn jump_cursor(&mut self) {
        let marks = self.cursor_marks();
        let next = marks
            .iter()
            .find(|(f, _)| *f > self.probe_hz * (1.0 + 1e-9))
            .or(marks.first())
            .copied();
        if let Some((f, name)) = next {
            self.put_cursor(f);
            self.info(format!(
                "cursor at {name}, {}",
                fmt_eng(self.probe_hz, "Hz")
            ));
        }
    }
}
