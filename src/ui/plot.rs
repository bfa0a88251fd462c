//! Log-frequency plots: log10 mapping, decade ticks with engineering
//! labels, scales chosen from the data, and a widget that draws traces on a
//! ratatui Canvas with its own axis labels.

use crate::engine::values::fmt_eng;
pub use crate::engine::values::nice_linear;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::symbols::Marker;
use ratatui::widgets::canvas::{Canvas, Context, Line as CLine, Points};
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
    pub joining: Joining,
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
}

/// y of a trace at x, by linear interpolation.
fn value_at(points: &[(f64, f64)], x: f64) -> Option<f64> {
    let i = points.iter().position(|p| p.0 >= x)?;
    if i == 0 {
        return Some(points[0].1);
    }
    let (a, b) = (points[i - 1], points[i]);
    let t = if b.0 > a.0 {
        (x - a.0) / (b.0 - a.0)
    } else {
        0.0
    };
    Some(a.1 + t * (b.1 - a.1))
}

pub use crate::engine::traces::finite;

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
        self.draw_canvas(plot, buf);
        self.draw_mark_labels(plot, buf);
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
        let mut used_rows = Vec::new();
        for (v, label) in &self.y_ticks {
            if *v < y0 - 1e-9 || *v > y1 + 1e-9 {
                continue;
            }
            let frac = (y1 - v) / (y1 - y0);
            let row = plot.y + (frac * (plot.height - 1) as f64).round() as u16;
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

    /// The canvas with the vertical marks, the traces and their names.
    fn draw_canvas(&self, plot: Rect, buf: &mut Buffer) {
        let (x0, x1) = self.x_range;
        let (y0, y1) = self.y_range;
        let canvas = Canvas::default()
            .x_bounds([x0, x1])
            .y_bounds([y0, y1])
            .marker(self.markers.0)
            .paint(|ctx| {
                // Vertical marks first, under the traces.
                self.paint_marks(ctx);
                ctx.layer();
                for t in &self.traces {
                    self.paint_trace(ctx, t);
                    ctx.layer();
                }
                self.paint_trace_labels(ctx, plot.width);
            });
        canvas.render(plot, buf);
    }

    /// Vertical marks as dotted columns of points.
    fn paint_marks(&self, ctx: &mut Context<'_>) {
        let (y0, y1) = self.y_range;
        for m in &self.marks {
            let n = 24;
            let pts: Vec<(f64, f64)> = (0..=n)
                .filter(|i| i % 2 == 0)
                .map(|i| (m.x, y0 + (y1 - y0) * i as f64 / n as f64))
                .collect();
            ctx.draw(&Points {
                coords: &pts,
                color: self.mark_style.fg.unwrap_or_default(),
            });
        }
    }

    /// One trace: every other point when dotted, else line segments that
    /// skip phase wraps.
    fn paint_trace(&self, ctx: &mut Context<'_>, t: &Trace<'_>) {
        let (solid, dotted) = self.markers;
        let color = t.style.fg.unwrap_or_default();
        if t.stroke == Stroke::Dotted {
            ctx.marker(dotted);
            let every: Vec<(f64, f64)> = t.points.iter().step_by(2).copied().collect();
            ctx.draw(&Points {
                coords: &every,
                color,
            });
        } else {
            ctx.marker(solid);
            for w in t.points.windows(2) {
                if t.joining == Joining::BreakAtWrap && (w[1].1 - w[0].1).abs() > 180.0 {
                    continue;
                }
                ctx.draw(&CLine {
                    x1: w[0].0,
                    y1: w[0].1,
                    x2: w[1].0,
                    y2: w[1].1,
                    color,
                });
            }
        }
    }

    /// Trace names printed on their traces, kept inside the plot.
    fn paint_trace_labels(&self, ctx: &mut Context<'_>, width: u16) {
        let (x0, x1) = self.x_range;
        let (y0, y1) = self.y_range;
        let cell = (x1 - x0) / width.max(1) as f64;
        for t in &self.traces {
            if let Some(label) = &t.label {
                let len = label.chars().count() as f64 + 1.0;
                let x = (x0 + (x1 - x0) * t.label_at).min(x1 - cell * len);
                if let Some(y) = value_at(t.points, x) {
                    if y >= y0 && y <= y1 {
                        let line = ratatui::text::Line::styled(label.clone(), t.style);
                        ctx.print(x, y, line);
                    }
                }
            }
        }
    }

    /// Mark labels, one row apart so they never overprint.
    fn draw_mark_labels(&self, plot: Rect, buf: &mut Buffer) {
        let (x0, x1) = self.x_range;
        for (i, m) in self.marks.iter().enumerate() {
            if m.x < x0 || m.x > x1 || i as u16 >= plot.height {
                continue;
            }
            let col = plot.x + ((m.x - x0) / (x1 - x0) * (plot.width - 1) as f64).round() as u16;
            let w = m.label.chars().count() as u16;
            let col = col.min(plot.x + plot.width.saturating_sub(w));
            buf.set_string(col, plot.y + i as u16, &m.label, self.mark_style);
        }
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
