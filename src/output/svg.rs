//! Figures as SVG (`loopwright plot`, `report --md --figures`): one view of
//! one or two stages drawn with plotters' SVG backend — log-frequency axis
//! with a decade grid, engineering-notation labels, units on the axes, the
//! workbench's marks, A and B in two styles with a legend, the title and a
//! footer with the key figures.
//!
//! The views themselves are the registry in [`crate::output::views`].

use crate::judge::figures::key_figures;
use crate::model::values::{fmt_eng, printable};
pub use crate::output::figure::{Axis, Curve, Evaluated, Look, Mark, OwnChart, View, DEG};
use crate::output::ink;
pub use crate::output::labels::text_width;
pub(crate) use crate::output::labels::{em, Placer};
use crate::output::traces::Traces;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint};
use plotters::prelude::*;
use std::ops::Range;

/// Accepted figure sizes in pixels (each side).
pub const SIZE: (u32, u32) = (200, 8000);

/// The look of every figure, decided here in one place for a printed
/// design review:
/// - A's main curves: a deep blue, 2.2 px; B's: a burnt orange, 1.6 px
///   with open rings every tenth point, so A and B differ in grey print too.
/// - The right-hand axis (phase) in a lighter tone of the same stage,
///   1.4 px and dashed, so gain and phase never read as one curve.
/// - Secondary lines (ceilings, |Zin|): green, violet, grey at 1.2 px.
/// - Marks: thin rules in the stage's colour with the text set beside
///   the rule, never on it; the legend sits above the plot, right-aligned.
/// - Every curve is drawn at sub-pixel precision ([`crate::output::ink`]).
pub(crate) struct Style {
    pub(crate) color: RGBColor,
    pub(crate) width: f64,
    pub(crate) dash: Option<(f64, f64)>,
    pub(crate) rings: bool,
}

impl Style {
    /// Its pen for [`ink`].
    pub(crate) fn pen(&self) -> ink::Pen {
        ink::Pen {
            color: self.color,
            width: self.width,
            dash: self.dash,
            rings: self.rings,
            opacity: 1.0,
        }
    }
}

pub(crate) fn style(slot: usize, right: bool, mono: bool) -> Style {
    let color = match (mono, slot, right) {
        (true, 0, _) => RGBColor(0, 0, 0),
        (true, _, _) => RGBColor(90, 90, 90),
        (false, 0, false) => RGBColor(22, 70, 150),
        (false, 0, true) => RGBColor(90, 140, 205),
        (false, _, false) => RGBColor(190, 80, 20),
        (false, _, true) => RGBColor(225, 145, 85),
    };
    Style {
        color,
        width: match (right, slot) {
            (true, _) => 1.4,
            (false, 0) => 2.2,
            (false, _) => 1.6,
        },
        dash: right.then_some((6.0, 3.0)),
        rings: slot > 0,
    }
}

/// A secondary line's style (tone 1, 2, 3): its own colour (grey levels
/// in mono), thin; B's with rings as its main curves.
fn tone_style(slot: usize, tone: u8, mono: bool) -> Style {
    let palette = if mono {
        [
            RGBColor(70, 70, 70),
            RGBColor(120, 120, 120),
            RGBColor(160, 160, 160),
        ]
    } else {
        [
            RGBColor(30, 130, 60),
            RGBColor(130, 60, 170),
            RGBColor(110, 110, 110),
        ]
    };
    Style {
        color: palette[usize::from(tone.clamp(1, 3)) - 1],
        width: 1.2,
        dash: None,
        rings: slot > 0,
    }
}

/// How one curve of one stage is drawn.
fn curve_style(slot: usize, c: &Curve, mono: bool) -> Style {
    if c.tone == 0 {
        style(slot, c.right, mono)
    } else {
        tone_style(slot, c.tone, mono)
    }
}

/// Round a range outwards to a step, with at least one step of span.
fn outward(lo: f64, hi: f64, step: f64) -> (f64, f64) {
    let (a, b) = ((lo / step).floor() * step, (hi / step).ceil() * step);
    if b > a {
        (a, b)
    } else {
        (a - step, b + step)
    }
}

/// The range of the curves on one side, rounded out: decades for a log
/// axis, 45° for phase, 20 dB for magnitude.
fn y_range(curves: &[&Curve], axis: Axis) -> (f64, f64) {
    let ys = curves.iter().flat_map(|c| c.points.iter().map(|p| p.1));
    let (lo, hi) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| {
        (a.min(y), b.max(y))
    });
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let step = match (axis.log_unit, axis.desc == DEG.desc) {
        (Some(_), _) => 1.0,
        (None, true) => 45.0,
        (None, false) => 20.0,
    };
    outward(lo, hi, step)
}

/// Whole steps in a range (the key points of an axis).
fn steps(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    let n = ((hi - lo) / step).round().max(0.0) as usize;
    (0..=n).map(|i| lo + step * i as f64).collect()
}

/// The label of a value on an axis.
fn label(axis: Axis, y: f64) -> String {
    match axis.log_unit {
        Some(u) => fmt_eng(10f64.powf(y), u).replace(' ', ""),
        None => format!("{y:.0}"),
    }
}

/// Key points of a vertical axis: every decade, 45° or 20 dB, thinned to
/// at most about 10 labels.
fn y_keys(axis: Axis, (lo, hi): (f64, f64)) -> Vec<f64> {
    let base = match (axis.log_unit, axis.desc == DEG.desc) {
        (Some(_), _) => 1.0,
        (None, true) => 45.0,
        (None, false) => 20.0,
    };
    let mut step = base;
    while (hi - lo) / step > 10.0 {
        step *= 2.0;
    }
    steps(lo, hi, step)
        .into_iter()
        .filter(|y| *y <= hi + 1e-9)
        .collect()
}

/// The x range: whole decades around every stage's sweep.
fn x_range(curves: &[Vec<Curve>]) -> (f64, f64) {
    let xs = curves
        .iter()
        .flatten()
        .flat_map(|c| c.points.iter().map(|p| p.0));
    let (lo, hi) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    if !(lo.is_finite() && hi.is_finite()) {
        return (-2.0, 9.0);
    }
    outward(lo, hi, 1.0)
}

/// The light grid lines: 2 … 9 within each decade.
fn minor_decades(lo: f64, hi: f64) -> Vec<f64> {
    steps(lo, hi, 1.0)
        .into_iter()
        .flat_map(|d| (2..10).map(move |m| d + f64::from(m).log10()))
        .filter(|x| *x < hi)
        .collect()
}

/// The footer lines: each stage's key figures.
fn footer(stages: &[Evaluated]) -> Vec<String> {
    let tags = ["A", "B"];
    stages
        .iter()
        .zip(tags)
        .map(|(s, tag)| {
            let cells: Vec<String> = key_figures()
                .map(|f| {
                    let name = f.short.replace("{f}", "1kHz");
                    format!("{name} {}", f.cell_in(s.eval, f.read(s.eval), false))
                })
                .collect();
            let tag = if stages.len() > 1 { tag } else { "" };
            format!("{tag} {}", cells.join(" · ")).trim().to_string()
        })
        .collect()
}

/// The caption: the view, then the title of A (and of B).
fn caption(view: &View, stages: &[Evaluated]) -> String {
    titled(view.title, stages)
}

/// A heading, then the title of A (and of B).
pub(crate) fn titled(heading: &str, stages: &[Evaluated]) -> String {
    let titles: Vec<String> = stages
        .iter()
        .map(|s| printable(&s.scenario.title))
        .collect();
    format!("{heading} — {}", titles.join(" vs "))
}

/// A linear axis with the grid lines we choose: bold ones (labelled) and
/// light ones (the 2 … 9 lines of a decade).
#[derive(Clone)]
pub struct Keyed {
    lo: f64,
    hi: f64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl Keyed {
    pub(crate) fn new((lo, hi): (f64, f64), bold: Vec<f64>, light: Vec<f64>) -> Keyed {
        Keyed {
            lo,
            hi,
            bold,
            light,
        }
    }
}

impl Ranged for Keyed {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, v: &f64, limit: (i32, i32)) -> i32 {
        let t = (v - self.lo) / (self.hi - self.lo);
        limit.0 + (t * f64::from(limit.1 - limit.0)).round() as i32
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.light.clone()
        } else {
            self.bold.clone()
        }
    }

    fn range(&self) -> Range<f64> {
        self.lo..self.hi
    }
}

/// The right margin of a chart: room for half the last x label.
pub(crate) const RIGHT_MARGIN: u32 = 28;

/// Lines of `text` no wider than `width`, broken after `sep` (or at
/// spaces when a piece is still too wide); a word is never cut.
pub(crate) fn wrap(text: &str, sep: &str, width: f64, font: u32) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut cur = String::new();
    let pieces: Vec<String> = text
        .split(sep)
        .flat_map(|p| {
            if text_width(p, font) <= width {
                vec![p.to_string()]
            } else {
                p.split(' ').map(str::to_string).collect()
            }
        })
        .collect();
    let joint = |p: &str| {
        if sep == " · " && !p.contains(' ') {
            " "
        } else {
            sep
        }
    };
    for p in pieces {
        let next = if cur.is_empty() {
            p.clone()
        } else {
            format!("{cur}{}{p}", joint(&p))
        };
        if cur.is_empty() || text_width(&next, font) <= width {
            cur = next;
        } else {
            lines.push(std::mem::take(&mut cur));
            cur = p;
        }
    }
    if !cur.is_empty() {
        lines.push(cur);
    }
    lines
}

/// One legend entry: its name and how its curve is drawn.
pub(crate) type Entry = (String, Style);

/// The top of every figure: the heading, centred and wrapped, then the
/// legend in rows (outside the plot, so it hides no curve). Returns the
/// area left for the chart.
pub(crate) fn head<'b>(
    area: &DrawingArea<SVGBackend<'b>, plotters::coord::Shift>,
    heading: &str,
    entries: &[Entry],
    font: u32,
) -> anyhow::Result<DrawingArea<SVGBackend<'b>, plotters::coord::Shift>> {
    head_sized(area, heading, entries, (font, font + 4))
}

/// [`head`] with the heading in its own font size.
pub(crate) fn head_sized<'b>(
    area: &DrawingArea<SVGBackend<'b>, plotters::coord::Shift>,
    heading: &str,
    entries: &[Entry],
    (font, big): (u32, u32),
) -> anyhow::Result<DrawingArea<SVGBackend<'b>, plotters::coord::Shift>> {
    use plotters::style::text_anchor::{HPos, Pos, VPos};
    let (w, _) = area.dim_in_pixel();
    let lines = wrap(heading, " ", f64::from(w) - 24.0, big);
    let mut y = 8i32;
    for l in &lines {
        let style = ("sans-serif", big)
            .into_font()
            .color(&BLACK)
            .pos(Pos::new(HPos::Center, VPos::Top));
        area.draw(&Text::new(l.clone(), (w as i32 / 2, y), style))
            .map_err(err)?;
        y += (em(big) * 1.3).ceil() as i32;
    }
    // Legend entries left to right, wrapped: a 24 px sample, a gap, the name.
    let (mut x, row_h) = (12.0, (em(font) * 1.5).ceil() as i32);
    let right = f64::from(w) - 12.0;
    if !entries.is_empty() {
        y += 2;
    }
    for (i, (name, st)) in entries.iter().enumerate() {
        let wide = 30.0 + text_width(name, font) + 16.0;
        if i > 0 && x + wide > right {
            x = 12.0;
            y += row_h;
        }
        let mid = f64::from(y) + em(font) / 2.0;
        let token = ink::sample(24.0, &st.pen());
        let piece_at = (x as i32, mid as i32);
        area.draw(&ink::placeholder(token, piece_at)).map_err(err)?;
        let style = ("sans-serif", font)
            .into_font()
            .color(&RGBColor(40, 40, 40))
            .pos(Pos::new(HPos::Left, VPos::Top));
        area.draw(&Text::new(name.clone(), ((x + 30.0) as i32, y), style))
            .map_err(err)?;
        x += wide;
    }
    if !entries.is_empty() {
        y += row_h;
    }
    Ok(area.split_vertically(y as u32 + 2).1)
}

pub(crate) type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<Keyed, Keyed>>;

pub(crate) fn err(e: impl std::fmt::Display) -> anyhow::Error {
    anyhow::anyhow!("cannot draw the figure: {e}")
}

/// Draw `view` of the stages (A first) as an SVG document.
pub fn render(view: &View, stages: &[Evaluated], look: Look) -> anyhow::Result<String> {
    if let Some(why) = stages.iter().find_map(|s| (view.needs)(s)) {
        anyhow::bail!(why);
    }
    for side in [look.width, look.height] {
        if !(SIZE.0..=SIZE.1).contains(&side) {
            anyhow::bail!(
                "figure size {side} px: give {} to {} px per side",
                SIZE.0,
                SIZE.1
            );
        }
    }
    let traces: Vec<Traces> = stages
        .iter()
        .map(|s| Traces::new(&s.eval.analysis))
        .collect();
    let mut svg = String::new();
    ink::begin();
    {
        let root = SVGBackend::with_string(&mut svg, (look.width, look.height)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let font = (look.height / 50).clamp(10, 16);
        let lines: Vec<String> = footer(stages)
            .iter()
            .flat_map(|l| wrap(l, " · ", f64::from(look.width) - 20.0, font))
            .collect();
        let foot_h = (lines.len() as u32 + 1) * (font + 4);
        let (upper, lower) = root.split_vertically(look.height.saturating_sub(foot_h));
        match view.own {
            Some(chart) => chart(&upper, view.title, stages, look, font)?,
            None => draw_chart(&upper, view, stages, &traces, look, font)?,
        }
        for (i, l) in lines.iter().enumerate() {
            let y = (i as u32 * (font + 4) + 4) as i32;
            lower
                .draw(&Text::new(
                    l.clone(),
                    (10, y),
                    ("sans-serif", font).into_font(),
                ))
                .map_err(err)?;
        }
        root.present().map_err(err)?;
    }
    Ok(ink::finish(svg))
}

/// The plot area: axes, grid, curves, marks and legend.
fn draw_chart(
    area: &DrawingArea<SVGBackend, plotters::coord::Shift>,
    view: &View,
    stages: &[Evaluated],
    traces: &[Traces],
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    let all: Vec<Vec<Curve>> = traces.iter().map(|t| (view.curves)(t)).collect();
    let entries = legend_entries(&all, look);
    let (x0, x1) = x_range(&all);
    // A quantity of its own goes to a panel under the chart.
    let (curves, below) = apart(all);
    let area = head(area, &caption(view, stages), &entries, font)?;
    let x_keys = decade_keys((x0, x1), f64::from(area.dim_in_pixel().0), font);
    let right_size = if view.right.is_some() { font * 4 } else { 0 };
    let with_panel = below.is_some();
    let area = match below {
        Some((axis, lower)) => {
            let (_, h) = area.dim_in_pixel();
            let (upper, under) = area.split_vertically(h * 3 / 5);
            let panel = Panel {
                axis,
                x: ((x0, x1), x_keys.clone()),
                right_size,
                look,
                font,
            };
            draw_below(&under, &lower, &panel)?;
            upper
        }
        None => area,
    };
    let side = |right: bool| -> Vec<&Curve> {
        curves
            .iter()
            .flatten()
            .filter(|c| c.right == right)
            .collect()
    };
    let ly = y_range(&side(false), view.left);
    let mut builder = ChartBuilder::on(&area);
    // Over a panel the frequencies are labelled once, under the panel.
    let x_labels = if with_panel { 0 } else { font * 3 };
    builder
        .margin(12)
        .margin_bottom(if with_panel { 4 } else { 12 })
        .margin_right(RIGHT_MARGIN)
        .x_label_area_size(x_labels)
        .y_label_area_size(font * 5)
        .right_y_label_area_size(right_size);
    let x_axis = Keyed::new((x0, x1), x_keys, minor_decades(x0, x1));
    // Over a panel the chart is short: its labelled steps fitted to it.
    let fit = with_panel.then(|| f64::from(area.dim_in_pixel().1) - 16.0);
    let fit_keys = |keys: Vec<f64>| match fit {
        Some(h) => fitted(keys, h, font),
        None => keys,
    };
    let y_axis = Keyed::new(ly, fit_keys(y_keys(view.left, ly)), Vec::new());
    let chart = builder.build_cartesian_2d(x_axis, y_axis).map_err(err)?;
    let ry = view.right.map(|axis| y_range(&side(true), axis));
    let plot = Plot {
        view,
        stages,
        curves: &curves,
        ly,
        ry,
        right_keys: view.right.zip(ry).map(|(a, r)| fit_keys(y_keys(a, r))),
        look,
        font,
    };
    match view.right {
        Some(axis) => draw_two_sided(chart, &plot, axis, (x0, x1)),
        None => {
            let mut chart = chart;
            draw_primary(&mut chart, &plot)
        }
    }
}

/// The legend: every drawn curve of every stage, named and styled.
fn legend_entries(all: &[Vec<Curve>], look: Look) -> Vec<Entry> {
    let n = all.len();
    all.iter()
        .enumerate()
        .flat_map(|(slot, cs)| {
            cs.iter()
                .filter(|c| !c.points.is_empty())
                .map(move |c| (legend_name(n, slot, c), curve_style(slot, c, look.mono)))
        })
        .collect()
}

/// The frequency axis's labelled decades: every decade where the labels
/// fit the chart's `width` (px), else every other one.
fn decade_keys((x0, x1): (f64, f64), width: f64, font: u32) -> Vec<f64> {
    let plot_w = width - f64::from(font * 9);
    let keys = steps(x0, x1, 1.0);
    if text_width("100mHz", font) * 1.6 * keys.len() as f64 > plot_w {
        keys.into_iter().step_by(2).collect()
    } else {
        keys
    }
}

/// The curves of the chart, and those with an axis of their own (the
/// axis of the first of them; None when there are none).
#[allow(clippy::type_complexity)]
fn apart(all: Vec<Vec<Curve>>) -> (Vec<Vec<Curve>>, Option<(Axis, Vec<Vec<Curve>>)>) {
    let axis = all
        .iter()
        .flatten()
        .filter(|c| !c.points.is_empty())
        .find_map(|c| c.own_axis);
    let (mut main, mut lower) = (Vec::new(), Vec::new());
    for cs in all {
        let (own, rest): (Vec<Curve>, Vec<Curve>) =
            cs.into_iter().partition(|c| c.own_axis.is_some());
        main.push(rest);
        lower.push(own);
    }
    (main, axis.map(|a| (a, lower)))
}

/// The panel under a chart: its axis, the chart's x range and keys, the
/// chart's right-hand label room (so the two plot areas line up).
struct Panel {
    axis: Axis,
    x: ((f64, f64), Vec<f64>),
    right_size: u32,
    look: Look,
    font: u32,
}

/// A quantity of its own under the chart: the same frequencies, its own
/// axis and ticks, as many labelled steps as the panel's height holds.
fn draw_below(
    area: &DrawingArea<SVGBackend, plotters::coord::Shift>,
    curves: &[Vec<Curve>],
    p: &Panel,
) -> anyhow::Result<()> {
    let ((x0, x1), x_keys) = p.x.clone();
    let font = p.font;
    let refs: Vec<&Curve> = curves.iter().flatten().collect();
    // At least two steps of the axis, so a flat curve has a scale.
    let ly = match y_range(&refs, p.axis) {
        (lo, hi) if hi - lo < 40.0 => (hi - 40.0, hi),
        r => r,
    };
    // The plot's height: the panel less its margins and the x labels.
    let plot_h = f64::from(area.dim_in_pixel().1) - f64::from(4 + 6 + font * 3);
    // In a short panel the lowest label would meet the first frequency's
    // label under it: the steps above it are labelled.
    let short = plot_h < f64::from(font) * 6.0;
    let above = y_keys(p.axis, ly)
        .into_iter()
        .filter(|y| !short || *y > ly.0);
    let keys = fitted(above.collect(), plot_h, font);
    // The chart's right-hand label room kept empty, so the plots line up.
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .margin_top(4)
        .margin_bottom(6)
        .margin_right(RIGHT_MARGIN + p.right_size)
        .x_label_area_size(font * 3)
        .y_label_area_size(font * 5)
        .build_cartesian_2d(
            Keyed::new((x0, x1), x_keys, minor_decades(x0, x1)),
            Keyed::new(ly, keys, Vec::new()),
        )
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc(p.axis.desc)
        .x_label_formatter(&|x| fmt_eng(10f64.powf(*x), "Hz").replace(' ', ""))
        .y_label_formatter(&|y| label(p.axis, *y))
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    draw_curves(&mut chart, curves, false, p.look)
}

/// Every other key (every fourth, …) until their labels fit `height` px
/// (a line and a half of `font` each); at least two stay.
fn fitted(keys: Vec<f64>, height: f64, font: u32) -> Vec<f64> {
    let mut step = 1;
    loop {
        let kept: Vec<f64> = keys.iter().copied().step_by(step).collect();
        if kept.len() <= 2 || kept.len() as f64 * f64::from(font) * 1.6 <= height {
            return kept;
        }
        step *= 2;
    }
}

/// What the parts of one chart share.
struct Plot<'p> {
    view: &'p View,
    stages: &'p [Evaluated<'p>],
    curves: &'p [Vec<Curve>],
    ly: (f64, f64),
    /// The right-hand axis's range and labelled steps, when the view
    /// has one.
    ry: Option<(f64, f64)>,
    right_keys: Option<Vec<f64>>,
    look: Look,
    font: u32,
}

/// The grid, the left axis, the marks and the left-axis curves.
fn draw_primary<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, p: &Plot) -> anyhow::Result<()> {
    let left = p.view.left;
    let font = p.font;
    chart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc(left_desc(left, p.stages))
        .x_label_formatter(&|x| fmt_eng(10f64.powf(*x), "Hz").replace(' ', ""))
        .y_label_formatter(&|y| label(left, *y))
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    draw_marks(chart, p)?;
    draw_curves(chart, p.curves, false, p.look)
}

/// The left axis's description: its V/A one where it has one and every
/// stage's gain is in V/A.
fn left_desc(axis: Axis, stages: &[Evaluated]) -> &'static str {
    use crate::model::stages::GainUnit;
    let ohms = stages
        .iter()
        .all(|s| s.eval.analysis.gain_unit == GainUnit::VoltsPerAmp);
    match axis.in_ohms {
        Some(desc) if ohms && !stages.is_empty() => desc,
        _ => axis.desc,
    }
}

/// Curves on the right-hand axis too (phase beside magnitude).
fn draw_two_sided<'a, 'b: 'a>(
    chart: Chart<'a, 'b>,
    p: &Plot,
    axis: Axis,
    (x0, x1): (f64, f64),
) -> anyhow::Result<()> {
    let (curves, look, font) = (p.curves, p.look, p.font);
    let ry = p.ry.unwrap_or((0.0, 1.0));
    let mut chart = chart.set_secondary_coord(
        Keyed::new((x0, x1), steps(x0, x1, 1.0), Vec::new()),
        Keyed::new(ry, p.right_keys.clone().unwrap_or_default(), Vec::new()),
    );
    draw_primary(&mut chart, p)?;
    chart
        .configure_secondary_axes()
        .y_desc(axis.desc)
        .y_label_formatter(&|y| label(axis, *y))
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    let frame = ink::Frame::of(chart.plotting_area(), (x0, x1), p.ly).with_y(ry);
    for (slot, cs) in curves.iter().enumerate() {
        for c in cs.iter().filter(|c| c.right && !c.points.is_empty()) {
            let st = style(slot, true, look.mono);
            let token = ink::polyline(&frame, &c.points, &st.pen());
            chart
                .draw_secondary_series(std::iter::once(ink::placeholder(token, (x0, ry.0))))
                .map_err(err)?;
        }
    }
    Ok(())
}

fn legend_name(n: usize, slot: usize, c: &Curve) -> String {
    slot_name(n, slot, c.name)
}

/// A legend name for stage `slot` of `n`: "A name" / "B name" when two
/// stages are drawn, the bare name for one.
pub(crate) fn slot_name(n: usize, slot: usize, name: &str) -> String {
    if n > 1 {
        format!("{} {name}", ["A", "B"][slot.min(1)])
    } else {
        name.to_string()
    }
}

/// Draw one curve at sub-pixel precision (its legend entry is drawn by
/// [`head`]).
pub(crate) fn trace<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    frame: &ink::Frame,
    points: &[(f64, f64)],
    st: &Style,
) -> anyhow::Result<()> {
    let token = ink::polyline(frame, points, &st.pen());
    let at = (frame.x.0, frame.y.0);
    chart
        .draw_series(std::iter::once(ink::placeholder(token, at)))
        .map_err(err)?;
    Ok(())
}

/// The curves of one side, each one path, with their legend entries.
fn draw_curves<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    curves: &[Vec<Curve>],
    right: bool,
    look: Look,
) -> anyhow::Result<()> {
    let r = (chart.x_range(), chart.y_range());
    let frame = ink::Frame::of(
        chart.plotting_area(),
        (r.0.start, r.0.end),
        (r.1.start, r.1.end),
    );
    for (slot, cs) in curves.iter().enumerate() {
        for c in cs
            .iter()
            .filter(|c| c.right == right && !c.points.is_empty())
        {
            let st = curve_style(slot, c, look.mono);
            trace(chart, &frame, &c.points, &st)?;
        }
    }
    Ok(())
}

/// Each stage's marks: a thin rule with its text beside it, in the first
/// place from the top that no curve, rule or other text takes.
fn draw_marks<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, p: &Plot) -> anyhow::Result<()> {
    use plotters::style::text_anchor::{Pos, VPos};
    let (y0, y1) = p.ly;
    let frame = {
        let r = chart.x_range();
        ink::Frame::of(chart.plotting_area(), (r.start, r.end), (y0, y1))
    };
    let marks: Vec<(usize, Mark)> = p
        .stages
        .iter()
        .enumerate()
        .flat_map(|(slot, s)| (p.view.marks)(s).into_iter().map(move |m| (slot, m)))
        .filter(|(_, m)| m.f_hz.log10().is_finite())
        .collect();
    let mut placer = Placer::default();
    for c in p.curves.iter().flatten() {
        match (c.right, p.ry) {
            (false, _) => placer.avoid_curve(&frame, &c.points),
            (true, Some(ry)) => placer.avoid_curve(&frame.with_y(ry), &c.points),
            (true, None) => {}
        }
    }
    for (_, m) in &marks {
        placer.avoid_rule(&frame, m.f_hz.log10());
    }
    for (slot, m) in &marks {
        let color = if p.look.mono {
            RGBColor(60, 60, 60)
        } else {
            style(*slot, false, false).color
        };
        let x = m.f_hz.log10();
        let line = PathElement::new(vec![(x, y0), (x, y1)], color.mix(0.6).stroke_width(1));
        chart.draw_series(std::iter::once(line)).map_err(err)?;
        let (dx, dy, h) = placer.place(&frame, x, &m.text, p.font);
        let style = ("sans-serif", p.font)
            .into_font()
            .color(&color)
            .pos(Pos::new(h, VPos::Top));
        let label = EmptyElement::at((x, y1)) + Text::new(m.text.clone(), (dx, dy), style);
        chart.draw_series(std::iter::once(label)).map_err(err)?;
    }
    Ok(())
}
