//! The SVG views on linear axes: the step response against time (with the
//! ±0.1 % settling band and the settling-time mark) and the tolerance
//! spread's histograms (with the spec limits). Both are entries of
//! [`crate::output::views::VIEWS`] and share its styles, legend and footer.

use crate::model::values::{fmt_eng, fmt_plain, nice_linear, printable};
use crate::output::ink;
use crate::output::svg::{
    err, head, slot_name, style, text_width, titled, trace, Chart, Entry, Evaluated, Keyed, Look,
    Placer,
};
use crate::study::spread::{self, unit_and_label, FigureSpread, SpreadResult, BINS};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{Pos, VPos};

type Area<'a, 'b> = DrawingArea<SVGBackend<'b>, Shift>;
/// A curve's points (x, y) in data units.
type Curve = Vec<(f64, f64)>;

/// The step view needs a step response (none for an unstable loop).
pub fn needs_step(s: &Evaluated) -> Option<String> {
    s.eval.analysis.step.view_end().is_none().then(|| {
        format!(
            "{} has no step response to draw (its loop is unstable)",
            printable(&s.scenario.title)
        )
    })
}

/// A linear axis over `range` with about `n` labelled steps.
fn axis(range: (f64, f64), n: usize) -> ((f64, f64), Keyed) {
    let ((lo, hi), ticks) = nice_linear(range.0, range.1, n);
    ((lo, hi), Keyed::new((lo, hi), ticks, Vec::new()))
}

/// Where a chart's data land on the page.
fn frame_of(chart: &Chart) -> ink::Frame {
    let (x, y) = (chart.x_range(), chart.y_range());
    ink::Frame::of(chart.plotting_area(), (x.start, x.end), (y.start, y.end))
}

/// A vertical line over the chart with its text beside it near the top.
fn vmark<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    placer: &mut Placer,
    x: f64,
    (y0, y1): (f64, f64),
    text: String,
    (color, font): (RGBColor, u32),
) -> anyhow::Result<()> {
    let line = PathElement::new(vec![(x, y0), (x, y1)], color.mix(0.6).stroke_width(1));
    chart.draw_series(std::iter::once(line)).map_err(err)?;
    let frame = frame_of(chart);
    let (dx, dy, h) = placer.place(&frame, x, &text, font);
    let style = ("sans-serif", font)
        .into_font()
        .color(&color)
        .pos(Pos::new(h, VPos::Top));
    let label = EmptyElement::at((x, frame.y.1)) + Text::new(text, (dx, dy), style);
    chart.draw_series(std::iter::once(label)).map_err(err)?;
    Ok(())
}

/// The step waveforms to draw: in volts, or each divided by its own final
/// value when the stages step by different sizes (then comparable).
/// Waveforms, one per stage.
type Waves = Vec<Vec<(f64, f64)>>;

/// The waveforms and, when each is divided by its final value, the axis
/// description that says so.
fn step_waves(stages: &[Evaluated], end: f64) -> (Waves, Option<&'static str>) {
    let responses: Vec<_> = stages.iter().map(|s| &s.eval.analysis.step).collect();
    let (waves, divided) = crate::engine::step::shown_waves(&responses, end, 400);
    (waves, divided.then_some("output / its final value"))
}

/// The step response of each stage against time, the ±0.1 % band around
/// A's final value and each stage's 0.1 % settling time.
pub fn step_chart(
    area: &Area,
    heading: &str,
    stages: &[Evaluated],
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    let end = stages
        .iter()
        .filter_map(|s| s.eval.analysis.step.view_end())
        .fold(0.0, f64::max);
    let (waves, normalised) = step_waves(stages, end);
    let final_a = match normalised {
        Some(_) => Some(1.0),
        None => stages[0].eval.analysis.step.final_v,
    };
    let band: Vec<f64> = final_a.map_or(Vec::new(), |f| vec![f * 0.999, f * 1.001]);
    let (lo, hi) = waves
        .iter()
        .flatten()
        .map(|p| p.1)
        .chain(band.iter().copied())
        .fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
    let ((x0, _), x_axis) = axis((0.0, end), 8);
    let (yr, y_axis) = axis((lo, hi), 8);
    let sizes: Vec<String> = stages
        .iter()
        .map(|s| fmt_eng(s.eval.analysis.step.size_v, s.scenario.input_unit()))
        .collect();
    let entries = step_entries(stages, !band.is_empty(), look);
    let area = head(
        area,
        &titled(&format!("{heading}, {} step", sizes.join(" / ")), stages),
        &entries,
        font,
    )?;
    let mut chart = ChartBuilder::on(&area)
        .margin(12)
        .margin_right(crate::output::svg::RIGHT_MARGIN)
        .x_label_area_size(font * 3)
        .y_label_area_size(font * 5)
        .build_cartesian_2d(x_axis, y_axis)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .y_desc(normalised.unwrap_or("output at the load (V)"))
        .x_label_formatter(&|x| fmt_eng(*x, "s").replace(' ', ""))
        .y_label_formatter(&|y| match normalised {
            Some(_) => fmt_plain(*y, 4),
            None => fmt_eng(*y, "V").replace(' ', ""),
        })
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    // The band: shaded with dashed edges, at least 6 px tall so that it
    // reads at a glance (0.2 % of the axis is under a pixel).
    if let [lo_b, hi_b] = band[..] {
        let frame = frame_of(&chart);
        let token = ink::band(&frame, (lo_b, hi_b), 6.0, band_style(look).color);
        chart
            .draw_series(std::iter::once(ink::placeholder(token, (x0, lo_b))))
            .map_err(err)?;
    }
    marks_and_waves(&mut chart, stages, (&waves, &band), yr, (look, font))
}

/// The step chart's marks (each stage's settling and other times, with
/// texts kept off the curves, the band and each other) and its waves.
fn marks_and_waves<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    stages: &[Evaluated],
    (waves, band): (&[Curve], &[f64]),
    yr: (f64, f64),
    (look, font): (Look, u32),
) -> anyhow::Result<()> {
    let frame = frame_of(chart);
    let mut placer = Placer::default();
    if let [lo_b, hi_b] = band[..] {
        placer.avoid_band(&frame, (lo_b, hi_b), 6.0);
    }
    let marks: Vec<(usize, f64, String)> = stages
        .iter()
        .enumerate()
        .flat_map(|(slot, s)| step_marks(s).into_iter().map(move |(x, t)| (slot, x, t)))
        .collect();
    for w in waves {
        placer.avoid_curve(&frame, w);
    }
    for (_, x, _) in &marks {
        placer.avoid_rule(&frame, *x);
    }
    for (slot, x, text) in marks {
        let color = style(slot, false, look.mono).color;
        vmark(chart, &mut placer, x, yr, text, (color, font))?;
    }
    for (slot, w) in waves.iter().enumerate() {
        trace(chart, &frame, w, &style(slot, false, look.mono))?;
    }
    Ok(())
}

/// The step chart's legend: the settling band (when drawn), then each
/// stage's output; a stage held at a rail before the step has no figures,
/// and its name says why.
fn step_entries(stages: &[Evaluated], band: bool, look: Look) -> Vec<Entry> {
    let shade = (
        "±0.1 % of the final value (shaded)".to_string(),
        band_style(look),
    );
    let outputs = stages.iter().enumerate().map(|(slot, s)| {
        let mut name = slot_name(stages.len(), slot, "output");
        if let Some(reason) = s.eval.analysis.step.reason {
            name = format!("{name} (no figures: {reason})");
        }
        (name, style(slot, false, look.mono))
    });
    band.then_some(shade).into_iter().chain(outputs).collect()
}

/// The settling band's look: a teal (grey in mono) shade.
fn band_style(look: Look) -> crate::output::svg::Style {
    crate::output::svg::Style {
        color: if look.mono {
            RGBColor(110, 110, 110)
        } else {
            RGBColor(20, 140, 130)
        },
        width: 6.0,
        dash: None,
        rings: false,
    }
}

/// One stage's settling-time marks: (time, text).
fn step_marks(s: &Evaluated) -> Vec<(f64, String)> {
    let r = &s.eval.analysis.step;
    let mut out = Vec::new();
    if let Some(ts) = r.settle_s[1] {
        out.push((ts, format!("ts 0.1 % {}", fmt_eng(ts, "s"))));
    }
    // The stage's own threshold (half an LSB of N bits, or a fraction).
    if let (Some(b), Some(ts)) = (r.threshold, r.settle_to_s) {
        let level = crate::output::settling::level_label(b.log10());
        out.push((ts, format!("ts {level} {}", fmt_eng(ts, "s"))));
    }
    out
}

/// A histogram's name over its panel.
fn panel_name(key: &str) -> &str {
    match key {
        "f_3db_hz" => "f−3dB",
        other => crate::judge::spread_figures::label(other),
    }
}

/// A histogram as one step outline: up and down each bin from min to max.
fn outline(f: &FigureSpread, scale: f64) -> Vec<(f64, f64)> {
    let (Some(lo), Some(hi)) = (f.min, f.max) else {
        return Vec::new();
    };
    let w = if hi > lo {
        (hi - lo) / BINS as f64
    } else {
        1.0
    };
    let mut pts = vec![(lo * scale, 0.0)];
    for (i, &c) in f.histogram.iter().enumerate() {
        let (a, b) = (lo + w * i as f64, lo + w * (i + 1) as f64);
        pts.push((a * scale, c as f64));
        pts.push((b * scale, c as f64));
    }
    pts.push(((lo + w * BINS as f64) * scale, 0.0));
    pts
}

/// The value of a figure that every trial gives alike to the digits the
/// text views show (None where it spreads or is undefined).
fn steady_value(f: &FigureSpread, unit: crate::judge::figures::Reads) -> Option<f64> {
    let (lo, hi) = (f.min?, f.max?);
    (unit.number(lo, false) == unit.number(hi, false)).then_some(lo)
}

/// The spread of each stage: three histograms side by side, the spec's
/// limits marked, the yield in each stage's legend.
pub fn spread_chart(
    area: &Area,
    heading: &str,
    stages: &[Evaluated],
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    let results: Vec<SpreadResult> = stages
        .iter()
        .map(|s| spread::spread(s.scenario, &spread::Run::default()))
        .collect();
    let yields: Vec<String> = results
        .iter()
        .map(|r| match r.yield_frac {
            Some(y) => format!("yield {} %", fmt_plain(100.0 * y, 4)),
            None => "no spec".into(),
        })
        .collect();
    let title = format!(
        "{heading}, {} trials ({})",
        results[0].trials,
        yields.join(" vs ")
    );
    let entries: Vec<Entry> = if results.len() > 1 {
        (0..results.len())
            .map(|slot| {
                (
                    ["A", "B"][slot.min(1)].to_string(),
                    style(slot, false, look.mono),
                )
            })
            .collect()
    } else {
        Vec::new()
    };
    let body = head(area, &titled(&title, stages), &entries, font)?;
    // A's histograms (and B's of the same figures).
    let keys = spread::shown_figures(&results[0], 4);
    for (panel, key) in body.split_evenly((1, keys.len())).iter().zip(&keys) {
        histogram_panel(panel, &results, (key, panel_name(key)), look, font)?;
    }
    Ok(())
}

/// One figure's histograms (A and B outlined in their styles) and limits.
fn histogram_panel(
    area: &Area,
    results: &[SpreadResult],
    (key, name): (&str, &str),
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    let gain = results.first().map(|r| r.gain_unit).unwrap_or_default();
    let (reads, _) = unit_and_label(key, gain);
    let unit = reads.unit;
    // Fractions are drawn in percent.
    let scale = if key == "target_error" { 100.0 } else { 1.0 };
    // A figure every trial gives the same value (to the shown digits) is
    // one mark with "no spread", not a full-height bar.
    let (steady, outlines) = steady_and_outlines(results, key, reads, scale);
    let marks = panel_marks(results, &steady, (key, scale), look);
    let xs = outlines
        .iter()
        .flatten()
        .map(|p| p.0)
        .chain(marks.iter().map(|m| m.0));
    let (lo, hi) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    let top = panel_top(&outlines, results[0].trials);
    // As many labelled steps as fit the panel's width.
    let room = f64::from(area.dim_in_pixel().0) - f64::from(font * 4 + 20);
    let fit = (room / (crate::output::svg::text_width("-00.00kHz", font) * 1.3)).floor() as usize;
    let (_, x_axis) = axis((lo, hi), fit.clamp(1, 4));
    let (yr, y_axis) = axis((0.0, top * 1.15), 5);
    let unit_text = unit_text(unit);
    let (heading, in_heading) = panel_heading(name, &marks, area.dim_in_pixel().0, font);
    let area = crate::output::svg::head_sized(area, &heading, &[], (font, font + 2))?;
    let mut chart = ChartBuilder::on(&area)
        .margin(10)
        .margin_right(crate::output::svg::RIGHT_MARGIN)
        .x_label_area_size(font * 3)
        .y_label_area_size(font * 4)
        .build_cartesian_2d(x_axis, y_axis)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc(format!("{name} ({unit_text})"))
        .y_desc("trials")
        .x_label_formatter(&|x| match unit {
            crate::judge::figures::Unit::Si(u) => fmt_eng(*x, u).replace(' ', ""),
            _ => fmt_plain(*x, 4),
        })
        .y_label_formatter(&|y| format!("{y:.0}"))
        .label_style(("sans-serif", font).into_font())
        .axis_desc_style(("sans-serif", font).into_font())
        .draw()
        .map_err(err)?;
    let frame = frame_of(&chart);
    let mut placer = Placer::default();
    for o in &outlines {
        placer.avoid_curve(&frame, o);
    }
    for (x, _, _) in &marks {
        placer.avoid_rule(&frame, *x);
    }
    for (x, text, color) in marks {
        if in_heading {
            let line = PathElement::new(vec![(x, yr.0), (x, yr.1)], color.mix(0.6).stroke_width(1));
            chart.draw_series(std::iter::once(line)).map_err(err)?;
        } else {
            vmark(&mut chart, &mut placer, x, yr, text, (color, font))?;
        }
    }
    draw_outlines(&mut chart, &outlines, look)
}

/// Per result: the one value every trial gives (to the shown digits), or
/// else the histogram's outline (in the panel's `scale`).
fn steady_and_outlines(
    results: &[SpreadResult],
    key: &str,
    reads: crate::judge::figures::Reads,
    scale: f64,
) -> (Vec<Option<f64>>, Vec<Curve>) {
    let steady: Vec<Option<f64>> = results
        .iter()
        .map(|r| r.figure(key).and_then(|f| steady_value(f, reads)))
        .collect();
    let outlines = results
        .iter()
        .zip(&steady)
        .map(|(r, st)| match (r.figure(key), st) {
            (Some(f), None) => outline(f, scale),
            _ => Vec::new(),
        })
        .collect();
    (steady, outlines)
}

/// A panel's axis unit.
fn unit_text(unit: crate::judge::figures::Unit) -> &'static str {
    match unit {
        crate::judge::figures::Unit::Si(u) => u,
        crate::judge::figures::Unit::Degrees => "°",
        crate::judge::figures::Unit::Lsb => "LSB",
        _ => "%",
    }
}

/// The top of a panel's count axis: the tallest bin; without a histogram
/// every trial (the mark is all of them).
fn panel_top(outlines: &[Vec<(f64, f64)>], trials: usize) -> f64 {
    let floor = match outlines.iter().all(Vec::is_empty) {
        true => trials as f64,
        false => 1.0,
    };
    outlines.iter().flatten().map(|p| p.1).fold(floor, f64::max)
}

/// A panel's heading: its name, joined by the marks' texts when the panel
/// is too narrow to set them beside their rules (then true).
fn panel_heading(
    name: &str,
    marks: &[(f64, String, RGBColor)],
    width: u32,
    font: u32,
) -> (String, bool) {
    let room = f64::from(width) - f64::from(font * 4 + 50);
    let widest = marks
        .iter()
        .map(|m| text_width(&m.1, font))
        .fold(0.0, f64::max);
    if widest * 1.6 <= room {
        return (name.to_string(), false);
    }
    let texts = std::iter::once(name.to_string()).chain(marks.iter().map(|m| m.1.clone()));
    (texts.collect::<Vec<_>>().join(" · "), true)
}

/// A panel's marks: each stage's "no spread" value, then the limits, as
/// (x in the panel's scale, text, colour).
fn panel_marks(
    results: &[SpreadResult],
    steady: &[Option<f64>],
    (key, scale): (&str, f64),
    look: Look,
) -> Vec<(f64, String, RGBColor)> {
    let gain = results.first().map(|r| r.gain_unit).unwrap_or_default();
    let (unit, _) = unit_and_label(key, gain);
    let mut marks = Vec::new();
    for (slot, v) in steady.iter().enumerate() {
        let Some(v) = v else { continue };
        let tag = if results.len() > 1 {
            ["A ", "B "][slot.min(1)]
        } else {
            ""
        };
        let text = format!("{tag}no spread: {}", unit.number(*v, false));
        marks.push((v * scale, text, style(slot, false, look.mono).color));
    }
    for (slot, x, text) in tagged_limits(results, key, scale) {
        let color = match (look.mono, slot) {
            (true, _) => RGBColor(0, 0, 0),
            (false, 0) => RGBColor(200, 30, 30),
            (false, _) => RGBColor(150, 30, 110),
        };
        marks.push((x, text, color));
    }
    marks
}

/// Each stage's histogram outline in its style (A solid, B with rings).
fn draw_outlines<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    outlines: &[Vec<(f64, f64)>],
    look: Look,
) -> anyhow::Result<()> {
    for (slot, pts) in outlines.iter().enumerate().filter(|(_, p)| !p.is_empty()) {
        let st = style(slot, false, look.mono);
        let frame = frame_of(chart);
        trace(chart, &frame, pts, &st)?;
    }
    Ok(())
}

/// Every stage's limits on one figure: (stage, x, text), tagged A and B
/// when there are two.
fn tagged_limits(results: &[SpreadResult], key: &str, scale: f64) -> Vec<(usize, f64, String)> {
    results
        .iter()
        .enumerate()
        .flat_map(|(slot, r)| {
            let tag = if results.len() > 1 {
                ["A ", "B "][slot.min(1)]
            } else {
                ""
            };
            limit_marks(r, key, scale)
                .into_iter()
                .map(move |(x, text)| (slot, x, format!("{tag}{text}")))
        })
        .collect()
}

/// The spec limits on one figure, as (x, text) in the panel's scale.
fn limit_marks(r: &SpreadResult, key: &str, scale: f64) -> Vec<(f64, String)> {
    let (unit, _) = unit_and_label(key, r.gain_unit);
    let mut out = Vec::new();
    for l in r.limits.iter().filter(|l| l.limit.figures.contains(&key)) {
        let value = unit.cell(l.value, false);
        // A magnitude limit's edges: the lower (−) first, then the upper.
        for (i, x) in l.limit.edges(l.value).into_iter().enumerate() {
            let text = match (l.limit.sign(), i) {
                ("±", 0) => format!("limit −{value}"),
                ("±", _) => format!("limit +{value}"),
                (sign, _) => format!("limit {sign} {value}"),
            };
            out.push((x * scale, text));
        }
    }
    out
}
