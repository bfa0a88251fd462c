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
                    format!("{name} {}", f.cell(f.read(s.eval), false))
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
        let lines = footer(stages);
        let font = (look.height / 50).clamp(10, 16);
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
    let curves: Vec<Vec<Curve>> = traces.iter().map(|t| (view.curves)(t)).collect();
    let side = |right: bool| -> Vec<&Curve> {
        curves
            .iter()
            .flatten()
            .filter(|c| c.right == right)
            .collect()
    };
    let (x0, x1) = x_range(&curves);
    let ly = y_range(&side(false), view.left);
    let x_keys = steps(x0, x1, 1.0);
    let mut builder = ChartBuilder::on(area);
    builder
        .caption(caption(view, stages), ("sans-serif", font + 4).into_font())
        .margin(12)
        .x_label_area_size(font * 3)
        .y_label_area_size(font * 5)
        .right_y_label_area_size(if view.right.is_some() { font * 4 } else { 0 });
    let x_axis = Keyed::new((x0, x1), x_keys, minor_decades(x0, x1));
    let y_axis = Keyed::new(ly, y_keys(view.left, ly), Vec::new());
    let chart = builder.build_cartesian_2d(x_axis, y_axis).map_err(err)?;
    let plot = Plot {
        view,
        stages,
        curves: &curves,
        ly,
        look,
        font,
    };
    match view.right {
        Some(axis) => draw_two_sided(chart, &plot, axis, (x0, x1)),
        None => {
            let mut chart = chart;
            draw_primary(&mut chart, &plot)?;
            legend(&mut chart, font)
        }
    }
}

/// What the parts of one chart share.
struct Plot<'p> {
    view: &'p View,
    stages: &'p [Evaluated<'p>],
    curves: &'p [Vec<Curve>],
    ly: (f64, f64),
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
        .y_desc(left.desc)
        .x_label_formatter(&|x| fmt_eng(10f64.powf(*x), "Hz").replace(' ', ""))
        .y_label_formatter(&|y| label(left, *y))
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    draw_marks(chart, p.stages, p.view, p.ly, p.look, font)?;
    draw_curves(chart, p.curves, false, p.look)
}

/// Curves on the right-hand axis too (phase beside magnitude).
fn draw_two_sided<'a, 'b: 'a>(
    chart: Chart<'a, 'b>,
    p: &Plot,
    axis: Axis,
    (x0, x1): (f64, f64),
) -> anyhow::Result<()> {
    let (curves, look, font) = (p.curves, p.look, p.font);
    let right: Vec<&Curve> = curves.iter().flatten().filter(|c| c.right).collect();
    let ry = y_range(&right, axis);
    let mut chart = chart.set_secondary_coord(
        Keyed::new((x0, x1), steps(x0, x1, 1.0), Vec::new()),
        Keyed::new(ry, y_keys(axis, ry), Vec::new()),
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
                .map_err(err)?
                .label(legend_name(curves.len(), slot, c))
                .legend(legend_sample(&st));
        }
    }
    legend(&mut chart, font)
}

fn legend_name(n: usize, slot: usize, c: &Curve) -> String {
    if n > 1 {
        format!("{} {}", ["A", "B"][slot.min(1)], c.name)
    } else {
        c.name.to_string()
    }
}

/// A legend's sample of a style: a 24 px stroke in its pen (dashed when
/// the curve is).
pub(crate) fn legend_sample(st: &Style) -> impl Fn((i32, i32)) -> Text<'static, (i32, i32), String> {
    let pen = st.pen();
    move |(x, y)| ink::placeholder(ink::sample(24.0, &pen), (x, y))
}

/// Draw one curve at sub-pixel precision with its legend entry.
pub(crate) fn trace<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    frame: &ink::Frame,
    points: &[(f64, f64)],
    st: &Style,
    name: String,
) -> anyhow::Result<()> {
    let token = ink::polyline(frame, points, &st.pen());
    let at = (frame.x.0, frame.y.0);
    chart
        .draw_series(std::iter::once(ink::placeholder(token, at)))
        .map_err(err)?
        .label(name)
        .legend(legend_sample(st));
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
            trace(chart, &frame, &c.points, &st, legend_name(curves.len(), slot, c))?;
        }
    }
    Ok(())
}

pub(crate) fn legend<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, font: u32) -> anyhow::Result<()> {
    legend_at(chart, font, SeriesLabelPosition::LowerLeft)
}

/// The legend box at a chosen corner.
pub(crate) fn legend_at<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    font: u32,
    at: SeriesLabelPosition,
) -> anyhow::Result<()> {
    chart
        .configure_series_labels()
        .label_font(("sans-serif", font).into_font())
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .position(at)
        .draw()
        .map_err(err)
}

/// Each stage's marks: a thin vertical line with its text near the top.
fn draw_marks<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    stages: &[Evaluated],
    view: &View,
    (y0, y1): (f64, f64),
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    for (slot, s) in stages.iter().enumerate() {
        let color = if look.mono {
            RGBColor(60, 60, 60)
        } else {
            style(slot, false, false).color
        };
        for (i, m) in (view.marks)(s).iter().enumerate() {
            let x = m.f_hz.log10();
            if !x.is_finite() {
                continue;
            }
            let line = PathElement::new(vec![(x, y0), (x, y1)], color.mix(0.6).stroke_width(1));
            chart.draw_series(std::iter::once(line)).map_err(err)?;
            let row = (slot * 2 + i) as f64 + 1.0;
            let y = y1 - (y1 - y0) * 0.05 * row;
            let text = Text::new(
                m.text.clone(),
                (x, y),
                ("sans-serif", font).into_font().color(&color),
            );
            chart.draw_series(std::iter::once(text)).map_err(err)?;
        }
    }
    Ok(())
}
