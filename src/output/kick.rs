//! The kick view: after the converter's switch closes, how far the load
//! terminal and the sampling capacitor are from the load's DC level,
//! |V − level|, on a logarithmic axis in volts against time, with a rule
//! at half an LSB, a rule at the end of the acquisition and a dot where
//! the capacitor last leaves the half-LSB band. The SVG chart and the
//! workbench both read [`curves`], [`levels`] and [`end_of`].

use crate::engine::kick::Kick;
use crate::model::values::{fmt_eng, printable};
use crate::output::figure::Evaluated;
use crate::output::ink;
use crate::output::settling::{decade_chart, DecadeAxes};
use crate::output::svg::{err, head, slot_name, style, titled, trace, Entry, Look};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// The view needs a kick with waveforms (a `load.sample` block on a
/// stable stage).
pub fn needs_kick(s: &Evaluated) -> Option<String> {
    let k = s.eval.analysis.kick.as_ref();
    match k {
        None => Some(format!(
            "{} has no sampling capacitor to draw (give load.sample)",
            printable(&s.scenario.title)
        )),
        Some(k) if k.view_end().is_none() => Some(format!(
            "{} has no kick to draw ({})",
            printable(&s.scenario.title),
            k.reason.unwrap_or("its loop is unstable")
        )),
        Some(_) => None,
    }
}

/// How far a plot runs: the longest of the stages' views.
pub fn end_of(kicks: &[&Kick]) -> f64 {
    kicks
        .iter()
        .filter_map(|k| k.view_end())
        .fold(0.0, f64::max)
}

/// (load terminal, sampling capacitor): (t, log10 |V − level|) at `n` even
/// times from 0 to `end`, held at `floor` below it.
pub type Pair = (Vec<(f64, f64)>, Vec<(f64, f64)>);

/// The two curves of one stage.
pub fn curves(k: &Kick, end: f64, n: usize, floor: f64) -> Pair {
    let times = (0..n).map(move |i| end * i as f64 / (n.max(2) - 1) as f64);
    let log = |v: f64| v.abs().log10().max(floor);
    let load = times
        .clone()
        .filter_map(|t| k.load_dev_at(t).map(|v| (t, log(v))))
        .collect();
    let cap = times
        .filter_map(|t| k.cap_error_at(t).map(|v| (t, log(v))))
        .collect();
    (load, cap)
}

/// The vertical range (log10 V): from two decades under the smallest half
/// LSB to the decade over the largest deviation drawn.
pub fn levels(kicks: &[&Kick]) -> (f64, f64) {
    let half = kicks
        .iter()
        .map(|k| k.half_lsb_v)
        .filter(|v| *v > 0.0)
        .fold(f64::INFINITY, f64::min);
    let floor = if half.is_finite() {
        half.log10().floor() - 2.0
    } else {
        -9.0
    };
    let dev = kicks
        .iter()
        .flat_map(|k| [k.dip_v, k.cap.final_v])
        .flatten()
        .map(f64::abs)
        .fold(0.0, f64::max);
    let top = if dev > 0.0 {
        dev.log10().ceil().max(floor + 1.0)
    } else {
        floor + 3.0
    };
    (floor, top)
}

/// A level's label on the axis (log10 V).
pub fn level_label(y: f64) -> String {
    fmt_eng(10f64.powf(y), "V")
}

/// The SVG chart: each stage's two curves, its half-LSB rule and settling
/// dot, and its acquisition time.
pub fn kick_chart(
    area: &DrawingArea<SVGBackend, Shift>,
    heading: &str,
    stages: &[Evaluated],
    look: Look,
    font: u32,
) -> anyhow::Result<()> {
    let kicks: Vec<&Kick> = stages
        .iter()
        .filter_map(|s| s.eval.analysis.kick.as_ref())
        .collect();
    let end = end_of(&kicks);
    let (floor, top) = levels(&kicks);
    let pairs: Vec<Pair> = kicks.iter().map(|k| curves(k, end, 1200, floor)).collect();
    let mut entries: Vec<Entry> = Vec::new();
    for slot in 0..kicks.len() {
        let name = |n| slot_name(kicks.len(), slot, n);
        entries.push((name("sampling capacitor"), style(slot, false, look.mono)));
        entries.push((name("load terminal"), style(slot, true, look.mono)));
    }
    let area = head(area, &titled(heading, stages), &entries, font)?;
    let axes = DecadeAxes {
        end,
        levels: (floor, top),
        desc: (
            "time after the switch closes (s)",
            "|V − the load's DC level|",
        ),
        label: |y| level_label(y).replace(' ', ""),
    };
    let mut chart = decade_chart(&area, &axes, font)?;
    let (x0, x1) = (chart.x_range().start, chart.x_range().end);
    let frame = {
        let (x, y) = (chart.x_range(), chart.y_range());
        ink::Frame::of(chart.plotting_area(), (x.start, x.end), (y.start, y.end))
    };
    for (slot, (k, (load, cap))) in kicks.iter().zip(&pairs).enumerate() {
        let st = style(slot, false, look.mono);
        trace(&mut chart, &frame, load, &style(slot, true, look.mono))?;
        trace(&mut chart, &frame, cap, &st)?;
        let at = Placed {
            color: st.color,
            font,
            slot,
        };
        marks(&mut chart, k, (x0, x1), (floor, top), &at)?;
    }
    Ok(())
}

/// Where a stage's mark texts go: its colour, the font and its slot.
struct Placed {
    color: RGBColor,
    font: u32,
    slot: usize,
}

/// One stage's half-LSB rule, its settling dot and its acquisition time.
fn marks<'a, 'b: 'a>(
    chart: &mut crate::output::svg::Chart<'a, 'b>,
    k: &Kick,
    (x0, x1): (f64, f64),
    (floor, top): (f64, f64),
    at: &Placed,
) -> anyhow::Result<()> {
    let text_style = |h, v| {
        ("sans-serif", at.font)
            .into_font()
            .color(&at.color)
            .pos(Pos::new(h, v))
    };
    let dy = 16 * at.slot as i32;
    let half = k.half_lsb_v.log10();
    let rule = PathElement::new(
        vec![(x0, half), (x1, half)],
        at.color.mix(0.6).stroke_width(1),
    );
    chart.draw_series(std::iter::once(rule)).map_err(err)?;
    let text = format!("½ LSB {}", fmt_eng(k.half_lsb_v, "V"));
    let label = EmptyElement::at((x1, half))
        + Text::new(text, (-4, -4 - dy), text_style(HPos::Right, VPos::Bottom));
    chart.draw_series(std::iter::once(label)).map_err(err)?;
    if k.acquire_s <= x1 {
        let line = PathElement::new(
            vec![(k.acquire_s, floor), (k.acquire_s, top)],
            at.color.mix(0.7).stroke_width(1),
        );
        chart.draw_series(std::iter::once(line)).map_err(err)?;
        let text = match k.error_lsb {
            Some(l) => format!("acquire {}: {l:.2} LSB", fmt_eng(k.acquire_s, "s")),
            None => format!("acquire {}", fmt_eng(k.acquire_s, "s")),
        };
        let label = EmptyElement::at((k.acquire_s, top))
            + Text::new(text, (4, 4 + dy), text_style(HPos::Left, VPos::Top));
        chart.draw_series(std::iter::once(label)).map_err(err)?;
    }
    if let Some(t) = k.settle_s.filter(|t| *t > 0.0 && *t <= x1) {
        let dot = Circle::new((t, half), 3, at.color.filled());
        chart.draw_series(std::iter::once(dot)).map_err(err)?;
        let text = format!("within ½ LSB at {}", fmt_eng(t, "s"));
        let label = EmptyElement::at((t, half))
            + Text::new(text, (-6, 4 + dy), text_style(HPos::Right, VPos::Top));
        chart.draw_series(std::iter::once(label)).map_err(err)?;
    }
    Ok(())
}
