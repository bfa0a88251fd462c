//! The settling view: how far the step response still is from its final
//! value, |y(t)/final − 1|, on a logarithmic axis against time, from 100 %
//! down to 1 ppm, with rules at the 1 %, 0.1 % and 0.01 % bands and the
//! times where the curve last leaves each (the step's settling times), and
//! a rule at the stage's own threshold (`step.settle_bits`, `settle_to`). A
//! slow tail or a ringing that a linear step plot hides shows here. The
//! SVG chart and the workbench both read [`curve`] and [`rules`].

use crate::engine::step::{StepResponse, BANDS};
use crate::model::values::{fmt_eng, printable};
use crate::output::figure::Evaluated;
use crate::output::ink;
use crate::output::svg::{
    err, head, slot_name, style, titled, trace, Chart, Entry, Keyed, Look, Placer,
};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// The floor of the axis: 1 ppm (log10).
pub const FLOOR_LOG: f64 = -6.0;

/// The view needs a step response that settles somewhere (a final value).
pub fn needs_settling(s: &Evaluated) -> Option<String> {
    let r = &s.eval.analysis.step;
    (r.view_end().is_none() || r.final_v.is_none_or(|f| f == 0.0)).then(|| {
        format!(
            "{} has no settling to draw (no step response with a final value)",
            printable(&s.scenario.title)
        )
    })
}

/// How far a plot of settling runs: half as much again as the slowest
/// 0.01 % settling time, or the whole window.
pub fn end_of(responses: &[&StepResponse]) -> f64 {
    responses
        .iter()
        .filter_map(|r| {
            r.settle_s[2]
                .filter(|t| *t > 0.0)
                .map(|t| 1.5 * t)
                .or(r.window_s())
        })
        .fold(0.0, f64::max)
}

/// (t, log10 |y/final − 1|) at `n` even times from 0 to `end`, held at
/// the floor below 1 ppm. Empty without a final value.
pub fn curve(r: &StepResponse, end: f64, n: usize) -> Vec<(f64, f64)> {
    let Some(f) = r.final_v.filter(|f| *f != 0.0) else {
        return Vec::new();
    };
    r.sampled(end, n)
        .into_iter()
        .map(|(t, y)| (t, (y / f - 1.0).abs().log10().max(FLOOR_LOG)))
        .collect()
}

/// A band's name: "1 %", "0.1 %", "0.01 %".
pub fn band_name(b: f64) -> String {
    format!("{} %", crate::model::values::fmt_plain(100.0 * b, 3))
}

/// A level's label on the axis (log10 of the fraction): percent down to
/// 0.01 %, then ppm.
pub fn level_label(y: f64) -> String {
    let v = 10f64.powf(y);
    if v >= 0.99e-4 {
        band_name(v)
    } else {
        format!("{} ppm", crate::model::values::fmt_plain(v * 1e6, 3))
    }
}

/// The rules: each band (log10 level) with the time the stage's response
/// last leaves it, when it does settle there; then the stage's own
/// threshold (`step.settle_bits` or `step.settle_to`) when it has one.
pub fn rules(r: &StepResponse) -> Vec<(f64, Option<f64>)> {
    BANDS
        .iter()
        .zip(r.settle_s)
        .map(|(b, t)| (b.log10(), t))
        .chain(r.threshold.map(|b| (b.log10(), r.settle_to_s)))
        .collect()
}

/// The levels (log10) the chart rules: the bands, then each stage's own
/// threshold.
pub fn rule_levels(responses: &[&StepResponse]) -> Vec<f64> {
    let mut levels: Vec<f64> = BANDS.iter().map(|b| b.log10()).collect();
    for t in responses.iter().filter_map(|r| r.threshold) {
        if !levels.iter().any(|l| (l - t.log10()).abs() < 1e-9) {
            levels.push(t.log10());
        }
    }
    levels
}

/// A chart of time (linear, from 0 to `end`) against a level on a log
/// axis (log10 units, a tick each decade), with its descriptions and the
/// level's label.
pub(crate) struct DecadeAxes {
    pub end: f64,
    pub levels: (f64, f64),
    pub desc: (&'static str, &'static str),
    pub label: fn(f64) -> String,
}

/// The chart and its mesh for [`DecadeAxes`] (the settling and kick views).
pub(crate) fn decade_chart<'a, 'b>(
    area: &'a DrawingArea<SVGBackend<'b>, Shift>,
    axes: &DecadeAxes,
    font: u32,
) -> anyhow::Result<Chart<'a, 'b>> {
    let ((x0, x1), x_ticks) = crate::model::values::nice_linear(0.0, axes.end, 8);
    let (floor, top) = axes.levels;
    let decades: Vec<f64> = (0..=(top - floor) as i32)
        .map(|i| floor + f64::from(i))
        .collect();
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .margin_right(crate::output::svg::RIGHT_MARGIN)
        .x_label_area_size(font * 3)
        .y_label_area_size(font * 5)
        .build_cartesian_2d(
            Keyed::new((x0, x1), x_ticks, Vec::new()),
            Keyed::new((floor, top), decades, Vec::new()),
        )
        .map_err(err)?;
    let label = axes.label;
    chart
        .configure_mesh()
        .x_desc(axes.desc.0)
        .y_desc(axes.desc.1)
        .x_label_formatter(&|x| fmt_eng(*x, "s").replace(' ', ""))
        .y_label_formatter(&|y| label(*y))
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    Ok(chart)
}

/// The SVG chart: every stage's curve, the band rules, each stage's
/// settling times, and the spec's settling time when one is set.
pub fn settling_chart(
    area: &DrawingArea<SVGBackend, Shift>,
    heading: &str,
    stages: &[Evaluated],
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    let responses: Vec<&StepResponse> = stages.iter().map(|s| &s.eval.analysis.step).collect();
    let end = end_of(&responses);
    let curves: Vec<Vec<(f64, f64)>> = responses.iter().map(|r| curve(r, end, 1200)).collect();
    let top = curves
        .iter()
        .flatten()
        .map(|p| p.1)
        .fold(0.0f64, f64::max)
        .ceil();
    let entries: Vec<Entry> = (0..stages.len())
        .map(|slot| {
            let name = slot_name(stages.len(), slot, "|output / final − 1|");
            (name, style(slot, false, look.mono))
        })
        .collect();
    let area = head(area, &titled(heading, stages), &entries, font)?;
    let axes = DecadeAxes {
        end,
        levels: (FLOOR_LOG, top),
        desc: ("time after the step (s)", "|output / final − 1|"),
        label: level_label,
    };
    let mut chart = decade_chart(&area, &axes, font)?;
    let (x0, x1) = (chart.x_range().start, chart.x_range().end);
    let rule = RGBColor(110, 110, 110);
    for y in rule_levels(&responses) {
        let line = PathElement::new(vec![(x0, y), (x1, y)], rule.stroke_width(1));
        chart.draw_series(std::iter::once(line)).map_err(err)?;
    }
    let frame = {
        let (x, y) = (chart.x_range(), chart.y_range());
        ink::Frame::of(chart.plotting_area(), (x.start, x.end), (y.start, y.end))
    };
    // The texts keep off every curve, band rule and spec rule.
    let spec_ts: Vec<Option<f64>> = stages
        .iter()
        .map(|s| {
            let spec_t = s.scenario.spec.as_ref().and_then(|sp| sp.settle_max_s);
            spec_t.filter(|t| *t <= x1)
        })
        .collect();
    let mut placer = Placer::default();
    for c in &curves {
        placer.avoid_curve(&frame, c);
    }
    for y in rule_levels(&responses) {
        placer.avoid_level(&frame, y);
    }
    for t in spec_ts.iter().flatten() {
        placer.avoid_rule(&frame, *t);
    }
    for (slot, (s, c)) in stages.iter().zip(&curves).enumerate() {
        let st = style(slot, false, look.mono);
        trace(&mut chart, &frame, c, &st)?;
        let spec = spec_ts[slot].map(|t| (t, top));
        settle_texts(
            &mut chart,
            (&frame, &mut placer),
            &s.eval.analysis.step,
            spec,
            (&st, font),
        )?;
    }
    Ok(())
}

/// One stage's settling texts: a dot where its curve last leaves each
/// band with the time beside it, and the spec's settling time as a rule
/// (`spec`: the time and the chart's top) with its text.
fn settle_texts(
    chart: &mut Chart,
    (frame, placer): (&ink::Frame, &mut Placer),
    step: &StepResponse,
    spec: Option<(f64, f64)>,
    (st, font): (&crate::output::svg::Style, u32),
) -> anyhow::Result<()> {
    let (x0, x1) = (chart.x_range().start, chart.x_range().end);
    let text_style = |h| {
        ("sans-serif", font)
            .into_font()
            .color(&st.color)
            .pos(Pos::new(h, VPos::Top))
    };
    for (y, t) in rules(step) {
        let Some(t) = t else { continue };
        let text = format!("{} at {}", level_label(y), fmt_eng(t, "s"));
        // A dot where the curve last leaves the band, its time set in
        // the first free corner: above and right of the dot, or below
        // and left of it in the chart's right part.
        let dot = Circle::new((t, y), 3, st.color.filled());
        chart.draw_series(std::iter::once(dot)).map_err(err)?;
        let left_first = (t - x0) / (x1 - x0) > 0.6;
        let (dx, dy) = placer.place_by_dot(frame, (t, y), &text, (font, left_first));
        let label = EmptyElement::at((t, y)) + Text::new(text, (dx, dy), text_style(HPos::Left));
        chart.draw_series(std::iter::once(label)).map_err(err)?;
    }
    if let Some((tmax, top)) = spec {
        let line = PathElement::new(
            vec![(tmax, FLOOR_LOG), (tmax, top)],
            st.color.mix(0.7).stroke_width(1),
        );
        chart.draw_series(std::iter::once(line)).map_err(err)?;
        let text = format!("spec: settled by {}", fmt_eng(tmax, "s"));
        let (dx, dy, h) = placer.place(frame, tmax, &text, font);
        let label = EmptyElement::at((tmax, top)) + Text::new(text, (dx, dy), text_style(h));
        chart.draw_series(std::iter::once(label)).map_err(err)?;
    }
    Ok(())
}
