//! The spread view: histograms of the gain error, f−3dB and phase margin
//! over the edited stage's tolerances, with the spec limits marked and the
//! yield; it only reads the background job's [`SpreadResult`].

use super::app::App;
use super::widgets::block;
use crate::model::values::fmt_plain;
use crate::study::spread::{unit_and_label, FigureSpread, SpreadResult, BINS};
use ratatui::buffer::Buffer;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::text::Line;
use ratatui::widgets::{Paragraph, Widget};

/// A histogram's name in a narrow panel.
fn short_name(key: &str) -> &'static str {
    match key {
        "target_error" => "gain error",
        "f_3db_hz" => "f−3dB",
        "phase_margin_deg" => "margin",
        "settle_01pct_s" => "settling",
        other => crate::judge::figures::figure(other).map_or("", |f| f.short),
    }
}

/// Eighth blocks for the bar tops.
const EIGHTHS: [char; 8] = ['▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'];

pub fn spread_plot(app: &App, area: Rect, buf: &mut Buffer) {
    let job = &app.spread;
    // Over the workbench's cap: the title says so, short enough to fit.
    let capped = if job.capped_from.is_some() {
        ", capped"
    } else {
        ""
    };
    let title = format!(
        " {}, {}, {} trials{capped} ",
        app.view.title(),
        App::slot_label(app.active),
        job.total
    );
    let b = block(app, title);
    let inner = b.inner(area);
    b.render(area, buf);
    if inner.height < 2 || inner.width < 12 {
        return;
    }
    let [head, body] = Layout::vertical([Constraint::Length(2), Constraint::Fill(1)]).areas(inner);
    let Some(r) = &job.result else {
        let text = format!(
            "computing the spread: {} of {} trials…",
            job.done(),
            job.total
        );
        Paragraph::new(Line::styled(text, app.theme.dim)).render(head, buf);
        return;
    };
    Paragraph::new(yield_lines(app, r)).render(head, buf);
    let keys = crate::study::spread::shown_figures(r, 4);
    let cols = Layout::horizontal(vec![Constraint::Fill(1); keys.len()]).split(body);
    for (key, col) in keys.iter().zip(cols.iter()) {
        if let Some(f) = r.figure(key) {
            panel(app, r, (f, short_name(key)), *col, buf);
        }
    }
}

/// "yield 73.5 % (needs ≥ 99 %): FAILS the spec" or the lack of a spec,
/// then the limits trials fail.
fn yield_lines(app: &App, r: &SpreadResult) -> Vec<Line<'static>> {
    let corners = format!("{} corners", 1usize << r.knobs.len());
    match r.yield_frac {
        Some(y) => {
            let pass = r.passes();
            let failing: Vec<String> = r
                .limits
                .iter()
                .filter(|l| l.failed > 0 || !l.nominal_pass)
                .map(|l| {
                    let names: Vec<&str> = crate::study::spread::failing_figures(r, l)
                        .into_iter()
                        .map(short_name)
                        .collect();
                    format!("{} {} of {}", names.join("/"), l.failed, r.trials)
                })
                .collect();
            let failing = if failing.is_empty() {
                "every trial meets every limit".to_string()
            } else {
                format!("trials failing: {}", failing.join(", "))
            };
            let text = format!(
                "yield {} % (needs ≥ {} %): {} · {corners}",
                fmt_plain(100.0 * y, 4),
                fmt_plain(100.0 * r.yield_min, 4),
                if pass {
                    "meets the spec"
                } else {
                    "FAILS the spec"
                }
            );
            let style = if pass {
                app.theme.normal
            } else {
                app.theme.warning
            };
            vec![
                Line::styled(text, style),
                Line::styled(failing, app.theme.dim),
            ]
        }
        None => vec![Line::styled(
            format!("no spec in the file: no yield · {corners}"),
            app.theme.dim,
        )],
    }
}

/// Counts per column: bins merged into equal groups (the most groups, up
/// to `w`, that split the bins evenly, so every bar holds as many bins),
/// then widened to fill `w` columns.
pub fn columns(h: &[usize; BINS], w: usize) -> Vec<usize> {
    let groups = (1..=BINS.min(w))
        .rev()
        .find(|g| BINS.is_multiple_of(*g))
        .unwrap_or(1);
    let per = BINS / groups;
    let merged: Vec<usize> = h.chunks(per).map(|c| c.iter().sum()).collect();
    (0..w).map(|i| merged[i * groups / w]).collect()
}

/// The limits on this figure: the values they mark (two for a ± limit),
/// their sign and the trials failing them.
fn marks<'r>(
    r: &'r SpreadResult,
    key: &'r str,
) -> impl Iterator<Item = (Vec<f64>, &'static str, usize)> + 'r {
    r.limits
        .iter()
        .filter(move |l| l.limit.figures.contains(&key))
        .map(|l| (l.limit.edges(l.value), l.limit.sign(), l.failed))
}

/// One histogram: its name, the bars, the range, the limit and, where
/// the panel is tall enough, the parts that move the figure most.
fn panel(app: &App, r: &SpreadResult, shown: (&FigureSpread, &str), area: Rect, buf: &mut Buffer) {
    let (f, label) = shown;
    let area = Rect {
        width: area.width.saturating_sub(1),
        ..area
    };
    if area.height < 4 || area.width < 6 {
        return;
    }
    let (unit, _) = unit_and_label(f.key, r.gain_unit);
    let cell = |v: f64| unit.cell(v, false);
    let [name, bars, axis, foot, movers] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Fill(1),
        Constraint::Length(1),
        Constraint::Length(1),
        // The movers' line only where the bars keep four rows.
        Constraint::Length(u16::from(area.height >= 8)),
    ])
    .areas(area);
    let spread = match (f.mean, f.std) {
        (Some(m), Some(s)) => format!(" {}±{}", cell(m), cell(s)),
        _ => String::new(),
    };
    let fits = label.chars().count() + spread.chars().count() <= usize::from(name.width);
    let head = if fits {
        format!("{label}{spread}")
    } else {
        label.to_string()
    };
    Paragraph::new(Line::styled(head, app.theme.title)).render(name, buf);
    let (Some(lo), Some(hi)) = (f.min, f.max) else {
        Paragraph::new(Line::styled("undefined in every trial", app.theme.dim)).render(bars, buf);
        return;
    };
    if cell(lo) == cell(hi) {
        no_spread(app, &cell(lo), bars, axis, buf);
    } else {
        draw_bars(app, &f.histogram, bars, buf);
        let ends = cell(lo).chars().count() + cell(hi).chars().count();
        let axis_text = match (axis.width as usize).checked_sub(ends) {
            Some(gap) if gap > 0 => format!("{}{}{}", cell(lo), " ".repeat(gap), cell(hi)),
            _ => format!("from {}", cell(lo)),
        };
        Paragraph::new(Line::styled(axis_text, app.theme.dim)).render(axis, buf);
    }
    limit_notes(app, r, f, (lo, hi), (bars, foot), buf);
    if movers.height > 0 && !f.contributions.is_empty() {
        let items: Vec<String> = f
            .contributions
            .iter()
            .filter(|c| c.share >= 0.005)
            .take(3)
            .map(|c| format!("{} {}%", c.part, fmt_plain(100.0 * c.share, 2)))
            .collect();
        Paragraph::new(Line::styled(items.join(" "), app.theme.dim)).render(movers, buf);
    }
}

/// Every trial gives the same value to the shown digits: one mark and
/// "no spread", not a full-height bar.
fn no_spread(app: &App, value: &str, bars: Rect, axis: Rect, buf: &mut Buffer) {
    let mid = bars.x + bars.width / 2;
    let mark = if app.theme.ascii { "|" } else { "┃" };
    buf[(mid, bars.y + bars.height - 1)]
        .set_symbol(mark)
        .set_style(app.theme.trace_a);
    let text = "no spread";
    let w = text.len() as u16;
    let at = Rect {
        x: bars.x + bars.width.saturating_sub(w) / 2,
        y: bars.y + bars.height.saturating_sub(1) / 2,
        width: w.min(bars.width),
        height: 1,
    };
    Paragraph::new(Line::styled(text, app.theme.dim)).render(at, buf);
    let pad = (axis.width as usize).saturating_sub(value.chars().count()) / 2;
    Paragraph::new(Line::styled(
        format!("{}{value}", " ".repeat(pad)),
        app.theme.dim,
    ))
    .render(axis, buf);
}

/// The limits on the figure: dashed rules on the bars (arrows where off
/// the chart) and the line under the axis.
fn limit_notes(
    app: &App,
    r: &SpreadResult,
    f: &FigureSpread,
    (lo, hi): (f64, f64),
    (bars, foot): (Rect, Rect),
    buf: &mut Buffer,
) {
    let (unit, _) = unit_and_label(f.key, r.gain_unit);
    let cell = |v: f64| unit.cell(v, false);
    let mut notes = Vec::new();
    let span = hi - lo;
    for (values, op, failed) in marks(r, f.key) {
        let (mut left, mut right) = ("", "");
        for v in &values {
            let x = if span > 0.0 { (v - lo) / span } else { 0.5 };
            if x < 0.0 {
                left = "◂";
            } else if x > 1.0 {
                right = "▸";
            } else {
                let col = bars.x + ((x * f64::from(bars.width - 1)).round() as u16);
                for y in bars.y..bars.y + bars.height {
                    if buf[(col, y)].symbol() == " " {
                        buf[(col, y)].set_symbol("┆").set_style(app.theme.warning);
                    }
                }
            }
        }
        // Arrows: the limit lies off the chart on that side.
        let side = format!("{left}{right}");
        let side = if side.is_empty() { side } else { side + " " };
        let fails = if failed > 0 {
            format!("{failed} fail")
        } else {
            "ok".into()
        };
        let shown = values.last().copied().unwrap_or(0.0);
        notes.push(format!("{side}{op}{} {fails}", cell(shown)));
    }
    let style = if notes.iter().any(|n| !n.ends_with(" ok")) {
        app.theme.warning
    } else {
        app.theme.dim
    };
    Paragraph::new(Line::styled(notes.join(" "), style)).render(foot, buf);
}

/// The histogram as columns of eighth blocks, tallest at full height.
fn draw_bars(app: &App, h: &[usize; BINS], area: Rect, buf: &mut Buffer) {
    let counts = columns(h, area.width as usize);
    let top = counts.iter().copied().max().unwrap_or(0).max(1);
    let rows = usize::from(area.height);
    for (i, &n) in counts.iter().enumerate() {
        // In eighths of a row; a non-zero count shows at least one eighth.
        let eighths = if n == 0 {
            0
        } else {
            (n * rows * 8).div_ceil(top).max(1)
        };
        for row in 0..rows {
            let filled = eighths.saturating_sub(row * 8).min(8);
            if filled == 0 {
                break;
            }
            let (x, y) = (area.x + i as u16, area.y + area.height - 1 - row as u16);
            let sym = if app.theme.ascii {
                "#".to_string()
            } else {
                EIGHTHS[filled - 1].to_string()
            };
            buf[(x, y)].set_symbol(&sym).set_style(app.theme.trace_a);
        }
    }
}
