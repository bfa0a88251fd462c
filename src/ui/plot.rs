//! Log-frequency plots: log10 mapping, decade ticks with engineering
//! labels, scales chosen from the data, and a widget that draws traces on a
//! ratatui Canvas with its own axis labels.

use crate::model::values::fmt_eng;
pub use crate::model::values::nice_linear;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::symbols::Marker;
use ratatui::widgets::Widget;

/// How a trace is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stroke {
    /// Line segments between the points.
    Solid,
    /// Every other point, unjoined.
    Dotted,
}

/// How neighbouring points are joined.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Joining {
    /// Always.
    Continuous,
    /// Not across a jump of more than 180° (principal-value phase).
    BreakAtWrap,
}

/// One curve: (log10 f, y) points, already finite.
pub struct Trace<'a> {
    pub points: &'a [(f64, f64)],
    pub style: Style,
    pub stroke: Stroke,
    /// A name printed on the trace, at `label_at` (0 = left, 1 = right).
    pub label: Option<String>,
    pub label_at: f64,
    /// A secondary curve: its label is placed after the marks' (a margin
    /// or a bandwidth is read before a curve's name), where cells remain.
    pub minor: bool,
    pub joining: Joining,
}

impl<'a> Trace<'a> {
    /// A continuous, unnamed, major trace.
    pub fn plain(points: &'a [(f64, f64)], (style, stroke): (Style, Stroke)) -> Trace<'a> {
        Trace {
            points,
            style,
            stroke,
            label: None,
            label_at: 0.85,
            minor: false,
            joining: Joining::Continuous,
        }
    }

    /// The same trace with a name printed at `at` (0 = left, 1 = right).
    pub fn named(self, label: Option<String>, at: f64) -> Trace<'a> {
        Trace {
            label,
            label_at: at,
            ..self
        }
    }
}

/// A vertical marker with a short label.
pub struct VMark {
    pub x: f64,
    pub label: String,
}

pub struct LogPlot<'a> {
    pub traces: Vec<Trace<'a>>,
    pub x_range: (f64, f64),
    pub y_range: (f64, f64),
    /// Tick positions (in plot units) and their labels.
    pub y_ticks: Vec<(f64, String)>,
    pub marks: Vec<VMark>,
    pub markers: (Marker, Marker),
    pub label_style: Style,
    pub mark_style: Style,
    /// The y axis: a rule along the plot's left edge (`rule`) with a tick
    /// mark (`tick`) at each labelled value, one column from its label.
    pub rule: &'static str,
    pub tick: &'static str,
    /// Whether the bottom row carries the decade labels.
    pub x_labels: bool,
    /// Labels for a linear x axis (the step view's time) instead of
    /// decades: (position, label).
    pub x_ticks: Option<Vec<(f64, String)>>,
    /// Grid lines in `label_style` at the y ticks and the decades (or the
    /// x ticks), under the traces: (across, down) characters; None: none.
    pub grid: Option<(char, char)>,
    /// The frequency cursor (in x units) and its style: a solid column in
    /// the cells no trace holds.
    pub cursor: Option<(f64, Style)>,
}

pub use crate::output::traces::finite;

/// Label of a decade: 10^d Hz or Ω as "1", "10", "100", "1k", "10M", "1m".
pub fn decade_label(d: i32, unit: &str) -> String {
    fmt_eng(10f64.powi(d), unit).replace(' ', "")
}

/// The decades to label between two log10 bounds, thinned so labels of
/// `label_w` columns fit into `cols` columns.
pub fn decade_ticks(lo: f64, hi: f64, cols: u16, label_w: u16) -> Vec<i32> {
    let first = lo.ceil() as i32;
    let last = hi.floor() as i32;
    if last < first {
        return Vec::new();
    }
    let n = (last - first + 1) as u16;
    let per = ((cols / (label_w + 1).max(1)).max(1)).min(n.max(1));
    let stride = n.div_ceil(per).max(1) as i32;
    (first..=last)
        .filter(|d| (d - first) % stride == 0)
        .collect()
}

/// A phase scale in degrees with steps of 45°, 90° or 180° (whichever
/// gives at most `max_ticks` ticks).
pub fn phase_scale(min: f64, max: f64, max_ticks: usize) -> ((f64, f64), Vec<f64>) {
    if !min.is_finite() || !max.is_finite() {
        return ((-180.0, 180.0), vec![-180.0, 0.0, 180.0]);
    }
    let scale = |step: f64| {
        let lo = (min / step).floor() * step;
        let hi = ((max / step).ceil() * step).max(lo + step);
        let n = ((hi - lo) / step).round() as usize + 1;
        (
            (lo, hi),
            (0..n).map(|i| lo + step * i as f64).collect::<Vec<f64>>(),
        )
    };
    [45.0, 90.0, 180.0]
        .into_iter()
        .map(scale)
        .find(|(_, t)| t.len() <= max_ticks.max(2))
        .unwrap_or_else(|| scale(360.0))
}

/// A log scale (in log10 units) covering the data, ticks at decades.
pub fn nice_log(min_log: f64, max_log: f64, max_ticks: usize) -> ((f64, f64), Vec<f64>) {
    if !min_log.is_finite() || !max_log.is_finite() {
        return ((0.0, 1.0), vec![0.0, 1.0]);
    }
    let lo = min_log.floor();
    let mut hi = max_log.ceil();
    if hi <= lo {
        hi = lo + 1.0;
    }
    let n = (hi - lo) as usize + 1;
    let stride = n.div_ceil(max_ticks.max(2)).max(1);
    let ticks = (0..n).step_by(stride).map(|i| lo + i as f64).collect();
    ((lo, hi), ticks)
}

impl Widget for &LogPlot<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let label_rows = u16::from(self.x_labels);
        if area.width < 12 || area.height < 2 + label_rows {
            return;
        }
        let label_w = self.label_width();
        let plot = Rect {
            x: area.x + label_w + 2,
            y: area.y,
            width: area.width.saturating_sub(label_w + 2),
            height: area.height.saturating_sub(label_rows),
        };
        if plot.width < 4 || plot.height < 2 {
            return;
        }
        self.draw_y_ticks(area, label_w, plot, buf);
        self.draw_x_labels(plot, buf);
        self.draw_cells(plot, buf);
    }
}

impl LogPlot<'_> {
    /// Width in columns of the widest y tick label.
    fn label_width(&self) -> u16 {
        self.y_ticks
            .iter()
            .map(|(_, l)| l.chars().count() as u16)
            .max()
            .unwrap_or(0)
    }

    /// The y axis left of the plot: the rule, tick marks and labels.
    fn draw_y_ticks(&self, area: Rect, label_w: u16, plot: Rect, buf: &mut Buffer) {
        let (y0, y1) = self.y_range;
        for row in plot.y..plot.y + plot.height {
            buf.set_string(plot.x - 1, row, self.rule, self.label_style);
        }
        // Ticks on the rows where a trace at the value lands.
        let map = Mapping::new(self, plot);
        let mut used_rows = Vec::new();
        for (v, label) in &self.y_ticks {
            if *v < y0 - 1e-9 || *v > y1 + 1e-9 {
                continue;
            }
            let row = plot.y + map.row(*v);
            if used_rows.contains(&row) {
                continue;
            }
            used_rows.push(row);
            let w = label.chars().count() as u16;
            buf.set_string(area.x + label_w - w, row, label, self.label_style);
            buf.set_string(plot.x - 1, row, self.tick, self.label_style);
        }
    }

    /// X labels at decades on the row below the plot, when enabled.
    fn draw_x_labels(&self, plot: Rect, buf: &mut Buffer) {
        if !self.x_labels {
            return;
        }
        let (x0, x1) = self.x_range;
        let mut next_free = plot.x;
        let ticks: Vec<(f64, String)> = match &self.x_ticks {
            Some(t) => t.clone(),
            None => decade_ticks(x0, x1, plot.width, 4)
                .into_iter()
                .map(|d| (d as f64, decade_label(d, "")))
                .collect(),
        };
        for (d, label) in ticks {
            if d < x0 - 1e-12 * (x1 - x0).abs() || d > x1 + 1e-12 * (x1 - x0).abs() {
                continue;
            }
            let frac = (d - x0) / (x1 - x0);
            let col = plot.x + (frac * (plot.width - 1) as f64).round() as u16;
            let w = label.chars().count() as u16;
            let start = col.saturating_sub(w / 2).max(plot.x);
            let start = start.min(plot.x + plot.width - w.min(plot.width));
            if start < next_free {
                continue;
            }
            buf.set_string(start, plot.y + plot.height, &label, self.label_style);
            next_free = start + w + 1;
        }
    }

    /// The plot's cells: the grid under everything, the marks' dotted
    /// columns under the traces, the traces merged per cell, then the
    /// labels where they cover no trace cell.
    fn draw_cells(&self, plot: Rect, buf: &mut Buffer) {
        let map = Mapping::new(self, plot);
        let traces: Vec<Dots> = self.traces.iter().map(|t| trace_dots(t, &map)).collect();
        let marks = self.mark_dots(&map);
        let mut taken: Vec<bool> = (0..plot.width as usize * plot.height as usize)
            .map(|i| traces.iter().any(|d| d.bits[i] != 0))
            .collect();
        self.draw_grid(plot, &map, &taken, &marks, buf);
        for (i, &t) in taken.iter().enumerate() {
            let pos = cell_pos(plot, i);
            if t {
                self.draw_trace_cell(&traces, i, &mut buf[pos]);
            } else if marks.bits[i] != 0 {
                let sym = match self.ascii_marks() {
                    Some(_) => ":".to_string(),
                    None => braille(marks.bits[i]).to_string(),
                };
                buf[pos].set_symbol(&sym).set_style(self.mark_style);
            }
        }
        self.draw_cursor(plot, &map, &mut taken, buf);
        self.draw_trace_labels(false, plot, &traces, &mut taken, buf);
        for (i, m) in self.marks.iter().enumerate() {
            if m.x < self.x_range.0 || m.x > self.x_range.1 {
                continue;
            }
            let col = (map.dot(m.x, self.y_range.0).0.round() / 2.0) as u16;
            // Where the whole note finds no free cells, its part before
            // " @ " (the frequency is the mark's own place).
            let short = m.label.split_once(" @ ").map(|(head, _)| head);
            for text in std::iter::once(m.label.as_str()).chain(short) {
                if let Some(spot) = mark_label_spot(col, i as u16, text, &taken, plot) {
                    put_label(plot, spot, text, self.mark_style, &mut taken, buf);
                    break;
                }
            }
        }
        self.draw_trace_labels(true, plot, &traces, &mut taken, buf);
    }

    /// The names of the main (or the minor) traces, each where it covers
    /// no trace cell and no label.
    fn draw_trace_labels(
        &self,
        minor: bool,
        plot: Rect,
        traces: &[Dots],
        taken: &mut [bool],
        buf: &mut Buffer,
    ) {
        for (i, t) in self.traces.iter().enumerate() {
            let Some(label) = t.label.as_ref().filter(|_| t.minor == minor) else {
                continue;
            };
            if let Some((c, r)) = trace_label_spot(t, label, (traces, i), taken, plot) {
                put_label(plot, (c, r), label, t.style, taken, buf);
            }
        }
    }

    /// The cursor's column: a rule in the free cells (trace cells keep
    /// their dots), taken so no label covers it.
    fn draw_cursor(&self, plot: Rect, map: &Mapping, taken: &mut [bool], buf: &mut Buffer) {
        let Some((x, style)) = self.cursor else {
            return;
        };
        if !(self.x_range.0..=self.x_range.1).contains(&x) || plot.width == 0 {
            return;
        }
        let col = ((map.dot(x, self.y_range.0).0.round() / 2.0) as u16).min(plot.width - 1);
        let sym = if self.ascii_marks().is_some() {
            "|"
        } else {
            "│"
        };
        for row in 0..plot.height {
            let i = row as usize * plot.width as usize + col as usize;
            if !taken[i] {
                buf[(plot.x + col, plot.y + row)]
                    .set_symbol(sym)
                    .set_style(style);
                taken[i] = true;
            }
        }
    }

    /// The trace markers as characters when the theme is plain ASCII.
    fn ascii_marks(&self) -> Option<(char, char)> {
        match self.markers {
            (Marker::Custom(a), Marker::Custom(b)) => Some((a, b)),
            _ => None,
        }
    }

    /// A cell with trace dots: every trace's dots merged (A's are never
    /// wiped by B's), in the style of the first trace drawn there. In
    /// ASCII the first trace's own mark.
    fn draw_trace_cell(&self, traces: &[Dots], i: usize, cell: &mut ratatui::buffer::Cell) {
        let hits: Vec<usize> = (0..traces.len())
            .filter(|&t| traces[t].bits[i] != 0)
            .collect();
        let style = self.traces[hits[0]].style;
        let sym = match self.ascii_marks() {
            // The first trace drawn there shows its own mark (a cell
            // of two traces is not a third symbol: that made walls of it).
            Some((solid, dotted)) => match self.traces[hits[0]].stroke {
                Stroke::Solid => solid,
                _ => dotted,
            },
            None => braille(hits.iter().fold(0, |b, &t| b | traces[t].bits[i])),
        };
        cell.set_symbol(&sym.to_string()).set_style(style);
    }

    /// Vertical marks as dotted columns (every other dot row).
    fn mark_dots(&self, map: &Mapping) -> Dots {
        let mut d = Dots::new(map.w, map.h);
        for m in &self.marks {
            if m.x < self.x_range.0 || m.x > self.x_range.1 {
                continue;
            }
            let x = map.dot(m.x, self.y_range.0).0.round() as i64;
            for y in (0..map.h as i64 * 4).step_by(2) {
                d.set(x, y);
            }
        }
        d
    }

    /// Grid lines at the y ticks and at decades (or the x ticks) in the
    /// cells that hold neither a trace nor a mark.
    fn draw_grid(&self, plot: Rect, map: &Mapping, taken: &[bool], marks: &Dots, buf: &mut Buffer) {
        let Some((across, down)) = self.grid else {
            return;
        };
        let (x0, x1) = self.x_range;
        let (y0, y1) = self.y_range;
        let xs: Vec<f64> = match &self.x_ticks {
            Some(t) => t.iter().map(|p| p.0).collect(),
            // The labelled decades: every one where they are wide enough.
            None => decade_ticks(x0, x1, plot.width, 4)
                .into_iter()
                .map(f64::from)
                .collect(),
        };
        let cols: Vec<u16> = xs
            .into_iter()
            .filter(|x| *x > x0 && *x <= x1)
            .map(|x| (map.dot(x, y0).0.round() / 2.0) as u16)
            .collect();
        let rows: Vec<u16> = (self.y_ticks.iter())
            .filter(|(v, _)| *v >= y0 - 1e-9 && *v <= y1 + 1e-9)
            .map(|(v, _)| map.row(*v))
            .collect();
        for i in 0..taken.len() {
            let (col, row) = (i as u16 % plot.width, i as u16 / plot.width);
            if taken[i] || marks.bits[i] != 0 {
                continue;
            }
            let sym = if cols.contains(&col) {
                down
            } else if rows.contains(&row) {
                across
            } else {
                continue;
            };
            buf[cell_pos(plot, i)]
                .set_symbol(&sym.to_string())
                .set_style(self.label_style);
        }
    }
}

/// The buffer position of cell i of the plot (row-major).
fn cell_pos(plot: Rect, i: usize) -> (u16, u16) {
    let w = plot.width as usize;
    (plot.x + (i % w) as u16, plot.y + (i / w) as u16)
}

/// The braille character of a cell's dot bits.
fn braille(bits: u8) -> char {
    char::from_u32(0x2800 + u32::from(bits)).unwrap_or(' ')
}

/// The bit of the dot in column c (0, 1) and row r (0..4, from the top)
/// of a braille cell (Unicode's dot numbering 1-2-3-7, 4-5-6-8).
const DOT_BITS: [[u8; 4]; 2] = [[0x01, 0x02, 0x04, 0x40], [0x08, 0x10, 0x20, 0x80]];

/// Plot units to dot coordinates: 2 dots across and 4 down per cell.
struct Mapping {
    x: (f64, f64),
    y: (f64, f64),
    w: u16,
    h: u16,
}

impl Mapping {
    fn new(p: &LogPlot<'_>, plot: Rect) -> Mapping {
        Mapping {
            x: p.x_range,
            y: p.y_range,
            w: plot.width,
            h: plot.height,
        }
    }

    /// (column, row) of a point in dots, row 0 at the top; unrounded.
    fn dot(&self, x: f64, y: f64) -> (f64, f64) {
        let fx = (x - self.x.0) / (self.x.1 - self.x.0);
        let fy = (self.y.1 - y) / (self.y.1 - self.y.0);
        (
            fx * (2.0 * self.w as f64 - 1.0),
            fy * (4.0 * self.h as f64 - 1.0),
        )
    }

    /// The cell row where a value's dot lands (tick marks, grid lines).
    fn row(&self, y: f64) -> u16 {
        let r = self.dot(self.x.0, y).1.round().max(0.0) as u16 / 4;
        r.min(self.h.saturating_sub(1))
    }
}

/// One layer of braille dots over the plot's cells.
struct Dots {
    w: u16,
    h: u16,
    bits: Vec<u8>,
}

impl Dots {
    fn new(w: u16, h: u16) -> Dots {
        Dots {
            w,
            h,
            bits: vec![0; w as usize * h as usize],
        }
    }

    /// Set the dot at (x, y) in dots; outside the plot it is ignored.
    fn set(&mut self, x: i64, y: i64) {
        if x < 0 || y < 0 || x >= 2 * self.w as i64 || y >= 4 * self.h as i64 {
            return;
        }
        let i = (y / 4) as usize * self.w as usize + (x / 2) as usize;
        self.bits[i] |= DOT_BITS[(x % 2) as usize][(y % 4) as usize];
    }
}

/// Where a pen is along a trace: a dotted pen sets every other dot of
/// its path, counted across segments.
struct Pen {
    every: usize,
    count: usize,
    last: Option<(i64, i64)>,
}

impl Pen {
    /// The dots of a segment (in dot coordinates), clipped to the plot.
    fn line(&mut self, d: &mut Dots, a: (f64, f64), b: (f64, f64)) {
        let hi = (2.0 * d.w as f64 - 0.5, 4.0 * d.h as f64 - 0.5);
        let Some((a, b)) = clip(a, b, (-0.5, -0.5), hi) else {
            return;
        };
        let n = (b.0 - a.0).abs().max((b.1 - a.1).abs()).ceil().max(1.0) as usize;
        for k in 0..=n {
            let t = k as f64 / n as f64;
            let p = (
                (a.0 + t * (b.0 - a.0)).round() as i64,
                (a.1 + t * (b.1 - a.1)).round() as i64,
            );
            if self.last == Some(p) {
                continue;
            }
            self.last = Some(p);
            if self.count.is_multiple_of(self.every) {
                d.set(p.0, p.1);
            }
            self.count += 1;
        }
    }
}

/// The part of segment a–b inside the box lo–hi (Liang–Barsky).
fn clip(
    a: (f64, f64),
    b: (f64, f64),
    lo: (f64, f64),
    hi: (f64, f64),
) -> Option<((f64, f64), (f64, f64))> {
    let d = (b.0 - a.0, b.1 - a.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [
        (-d.0, a.0 - lo.0),
        (d.0, hi.0 - a.0),
        (-d.1, a.1 - lo.1),
        (d.1, hi.1 - a.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else if p < 0.0 {
            t0 = t0.max(q / p);
        } else {
            t1 = t1.min(q / p);
        }
    }
    (t0 <= t1).then_some((
        (a.0 + t0 * d.0, a.1 + t0 * d.1),
        (a.0 + t1 * d.0, a.1 + t1 * d.1),
    ))
}

/// A trace's dots: joined segments (not across a phase wrap where asked),
/// every dot when solid, every other one when dotted.
fn trace_dots(t: &Trace<'_>, map: &Mapping) -> Dots {
    let mut d = Dots::new(map.w, map.h);
    let every = if t.stroke == Stroke::Dotted { 2 } else { 1 };
    let mut pen = Pen {
        every,
        count: 0,
        last: None,
    };
    if let [only] = t.points {
        let p = map.dot(only.0, only.1);
        pen.line(&mut d, p, p);
    }
    for w in t.points.windows(2) {
        if t.joining == Joining::BreakAtWrap && (w[1].1 - w[0].1).abs() > 180.0 {
            continue;
        }
        pen.line(&mut d, map.dot(w[0].0, w[0].1), map.dot(w[1].0, w[1].1));
    }
    d
}

/// Whether `len` cells from (col, row) are inside the plot and free.
fn free(taken: &[bool], plot: Rect, col: i32, row: i32, len: u16) -> bool {
    let (w, h) = (plot.width as i32, plot.height as i32);
    if col < 0 || row < 0 || row >= h || col + len as i32 > w {
        return false;
    }
    (col..col + len as i32).all(|c| !taken[(row * w + c) as usize])
}

/// A spot for a trace's name right above or below the trace, as near to
/// `label_at` as there is one that covers no trace cell and no label:
/// first where the trace keeps to one row under the name and no other
/// trace runs in the row beyond the name (so it sits beside its own
/// trace), then where the trace keeps to one row, then anywhere.
fn trace_label_spot(
    t: &Trace<'_>,
    label: &str,
    (all, own): (&[Dots], usize),
    taken: &[bool],
    plot: Rect,
) -> Option<(u16, u16)> {
    let len = label.chars().count() as u16;
    let w = plot.width as i32;
    let start = ((t.label_at * (w - 1) as f64).round() as i32).min(w - len as i32);
    let dots = &all[own];
    let any_in = |d: &Dots, row: i32, col: i32| {
        (0..plot.height as i32).contains(&row)
            && (col..col + len as i32).any(|c| d.bits[(row * w + c) as usize] != 0)
    };
    for pass in 0..3 {
        for off in 0..2 * w {
            let col = start
                + if off % 2 == 0 {
                    off / 2
                } else {
                    -(off + 1) / 2
                };
            if col < 0 || col + len as i32 > w {
                continue;
            }
            let rows: Vec<i32> = (0..plot.height as i32)
                .filter(|r| any_in(dots, *r, col))
                .collect();
            let (Some(&top), Some(&bottom)) = (rows.first(), rows.last()) else {
                continue;
            };
            if pass < 2 && top != bottom {
                continue;
            }
            for (row, beyond) in [(top - 1, top - 2), (bottom + 1, bottom + 2)] {
                let alone = pass > 0
                    || all
                        .iter()
                        .enumerate()
                        .all(|(j, d)| j == own || !(any_in(d, beyond, col) || any_in(d, row, col)));
                if alone && free(taken, plot, col, row, len) {
                    return Some((col as u16, row as u16));
                }
            }
        }
    }
    None
}

/// A spot for a mark's label: on, right of or left of its column, from
/// row `first` on (then the rows above), covering no trace cell.
fn mark_label_spot(
    col: u16,
    first: u16,
    label: &str,
    taken: &[bool],
    plot: Rect,
) -> Option<(u16, u16)> {
    let len = label.chars().count() as i32;
    let col = col as i32;
    let h = plot.height as i32;
    let rows = (first as i32..h).chain(0..first as i32);
    // On the mark, right of it, left of it, then anywhere it still
    // touches the mark's column.
    let starts: Vec<i32> = [col, col + 1, col - len]
        .into_iter()
        .chain((col - len..=col).rev())
        .collect();
    for row in rows {
        for &start in &starts {
            let start = start.min(plot.width as i32 - len);
            if free(taken, plot, start, row, len as u16) {
                return Some((start as u16, row as u16));
            }
        }
    }
    None
}

/// Write a label at a plot cell and mark its cells taken.
fn put_label(
    plot: Rect,
    (col, row): (u16, u16),
    label: &str,
    style: Style,
    taken: &mut [bool],
    buf: &mut Buffer,
) {
    buf.set_string(plot.x + col, plot.y + row, label, style);
    let w = plot.width as usize;
    // The cells either side too, so other labels keep a space away.
    let end = (col as usize + label.chars().count() + 1).min(w);
    for c in (col as usize).saturating_sub(1)..end {
        taken[row as usize * w + c] = true;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decade_labels_are_engineering() {
        assert_eq!(decade_label(1, ""), "10");
        assert_eq!(decade_label(3, ""), "1k");
        assert_eq!(decade_label(6, ""), "1M");
        assert_eq!(decade_label(-3, "Ω"), "1mΩ");
    }

    #[test]
    fn ticks_thin_out_when_narrow() {
        assert_eq!(decade_ticks(0.0, 9.0, 100, 4).len(), 10);
        let few = decade_ticks(0.0, 9.0, 20, 4);
        assert!(few.len() <= 4 && few[0] == 0);
    }

    #[test]
    fn phase_scale_steps() {
        let ((lo, hi), t) = phase_scale(-200.0, 180.0, 5);
        assert_eq!((lo, hi), (-360.0, 180.0));
        assert_eq!(t, vec![-360.0, -180.0, 0.0, 180.0]);
        let ((lo, hi), _) = phase_scale(-91.0, -1.0, 4);
        assert_eq!((lo, hi), (-135.0, 0.0));
    }

    #[test]
    fn nice_scales() {
        let ((lo, hi), t) = nice_linear(-3.0, 41.0, 4);
        assert!(lo <= -3.0 && hi >= 41.0);
        assert!(t.len() >= 3);
        let ((lo, hi), t) = nice_log(-2.3, 1.7, 6);
        assert_eq!((lo, hi), (-3.0, 2.0));
        assert_eq!(t.first(), Some(&-3.0));
    }
}
