//! Drawing: reads the App, never changes it.

use super::app::{App, Choices, Mode, ShortPlot, Slot, ViewId};
use super::field::Field;
use super::keys;
use super::plot::{decade_label, nice_linear, nice_log, Joining, LogPlot, Stroke, Trace, VMark};
use super::widgets::{block, compact, field_spans, fitted, wrap_words};
use crate::judge::figures::{key_figures, row_figures, Figure, Reading, Section, Unit};
use crate::judge::Severity;
use crate::model::params::Group;
use crate::model::values::{fmt_eng, fmt_fixed, spelled};
use crate::output::views::MarkKind;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Clear, Paragraph, Widget};
use ratatui::Frame;

/// The smallest terminal the workbench lays out for.
pub const MIN_W: u16 = 80;
pub const MIN_H: u16 = 24;

/// Rows inside the Bode plot below which it shows magnitude or phase, not
/// both (at 80×24 it has 10).
const BOTH_ROWS: u16 = 14;

/// Rows inside the response plot of a two-input stage from which it shows
/// the magnitude, the phase and the CMRR together (at 120×40 it has 17).
const ALL_ROWS: u16 = 17;

/// Frequency window of the response and impedance plots (log10 Hz).
const X_WINDOW: (f64, f64) = (0.0, 9.0);

pub fn draw(frame: &mut Frame, app: &App) {
    let area = frame.area();
    let buf = frame.buffer_mut();
    crate::model::values::with_ascii_units(app.theme.ascii, || render(app, area, buf));
}

pub fn render(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    if area.width < MIN_W || area.height < MIN_H {
        let msg = format!(
            "Terminal {}x{} is too small: enlarge it to at least {MIN_W}x{MIN_H}",
            area.width, area.height
        );
        // Wrapped, so the whole request shows even at 20×5.
        Paragraph::new(msg)
            .wrap(ratatui::widgets::Wrap { trim: true })
            .render(area, buf);
        return;
    }
    let figures_h = if app.slots.len() > 1 { 4 } else { 2 };
    // Warnings wrap: as many rows as they need, up to 3 (4 on tall screens).
    let cap = match (area.height >= 30, app.slots.len() > 1) {
        (true, _) => 4,
        (false, false) => 3,
        (false, true) => 2,
    };
    let width = area.width.max(1) as usize;
    let needed: usize = app
        .strip_warnings()
        .iter()
        .skip(app.warn_scroll)
        .map(|w| warning_rows(w.1, width))
        .sum();
    let n_warn = needed.clamp(1, cap) as u16;
    let [title, body, cursor, figures, warnings, status] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Fill(1),
        Constraint::Length(app.slots.len() as u16),
        Constraint::Length(figures_h),
        Constraint::Length(n_warn + 1),
        Constraint::Length(1),
    ])
    .areas(area);
    let pane_w = if area.width >= 110 { 38 } else { 33 };
    let [params, right] =
        Layout::horizontal([Constraint::Length(pane_w), Constraint::Fill(1)]).areas(body);
    let [upper, lower] = Layout::vertical([Constraint::Fill(3), Constraint::Fill(2)]).areas(right);

    title_bar(app, title, buf);
    param_pane(app, params, buf);
    match app.view {
        ViewId::Response | ViewId::Loop => bode(app, upper, buf),
        ViewId::Noise => noise_plot(app, upper, buf),
        ViewId::Envelope => envelope_plot(app, upper, buf),
        ViewId::Step => step_plot(app, upper, buf),
        ViewId::Settling => settling_plot(app, upper, buf),
        ViewId::Kick => kick_plot(app, upper, buf),
        ViewId::Spread => super::spread_view::spread_plot(app, upper, buf),
        // Not in the workbench's cycle: the lower panel shows it.
        ViewId::Impedance => impedance_plot(app, upper, buf),
    }
    impedance_plot(app, lower, buf);
    super::readout::draw(app, cursor, buf);
    figures_table(app, figures, buf);
    warnings_strip(app, warnings, buf);
    status_line(app, status, buf);
    match &app.mode {
        Mode::Help => help_overlay(app, area, buf),
        Mode::Open {
            files,
            selected,
            typed,
        } => open_overlay(app, area, buf, files, *selected, typed),
        Mode::Choose(list) => choose_overlay(app, area, buf, list),
        Mode::Parts(list) => super::part_list_view::draw(app, area, buf, list),
        Mode::Sheet(form) => super::sheet_view::draw(app, area, buf, form),
        _ => {}
    }
    if app.theme.ascii {
        asciify(area, buf);
    }
}

/// One ASCII character for each non-ASCII symbol the screen uses, so the
/// layout stays put: Ω as the RKM R, µ as u, ° as o, √Hz as rHz.
pub fn ascii_char(c: char) -> char {
    match c {
        'Ω' => 'R',
        'µ' | 'μ' => 'u',
        '°' => 'o',
        '√' => 'r',
        '−' | '—' | '–' | '─' => '-',
        'Δ' => 'D',
        '≠' => '#',
        '·' | '•' => '.',
        '∥' | '│' => '|',
        '├' => '+',
        '▸' => '>',
        '◂' => '<',
        '┆' => ':',
        '≥' => '>',
        '≤' => '<',
        '…' => '.',
        '±' => '~',
        '↑' => '^',
        '↓' => 'v',
        '←' => '<',
        '→' => '>',
        '↔' => '=',
        '×' => 'x',
        '∠' => '<',
        c if c.is_ascii() => c,
        _ => '?',
    }
}

fn asciify(area: Rect, buf: &mut ratatui::buffer::Buffer) {
    for y in area.y..area.y + area.height {
        for x in area.x..area.x + area.width {
            let cell = &mut buf[(x, y)];
            if !cell.symbol().is_ascii() {
                let mapped: String = cell.symbol().chars().map(ascii_char).take(1).collect();
                cell.set_symbol(&mapped);
            }
        }
    }
}

/// The top line: each stage's label, file and an "edited" mark, the
/// edited stage's title, and the program's name at the right.
fn title_bar(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let t = &app.theme;
    let two = app.slots.len() > 1;
    let mut spans = vec![Span::raw(" ")];
    for (i, s) in app.slots.iter().enumerate() {
        if i > 0 {
            spans.push(Span::styled(" │ ", t.dim));
        }
        let label = if two && i == app.active {
            format!("{}▸", App::slot_label(i))
        } else {
            App::slot_label(i).to_string()
        };
        spans.push(Span::styled(label, t.title));
        spans.push(Span::styled(format!(" {}", s.name()), t.normal));
        if s.dirty {
            spans.push(Span::styled(" edited", t.warning));
        }
    }
    spans.push(Span::styled(
        format!(
            " · {}",
            crate::model::values::printable(&app.slot().scenario.title)
        ),
        t.title,
    ));
    let used: usize = spans.iter().map(|s| s.width()).sum();
    let name = " loopwright ";
    let room = (area.width as usize).saturating_sub(used);
    if room > name.len() {
        spans.push(Span::raw(" ".repeat(room - name.len())));
        spans.push(Span::styled(name, t.dim));
    }
    Paragraph::new(Line::from(spans)).render(area, buf);
}

fn param_pane(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let t = &app.theme;
    let slot = app.slot();
    let s = &slot.scenario;
    let label = if app.slots.len() > 1 {
        format!(" Parameters {} ", App::slot_label(app.active))
    } else {
        " Parameters ".to_string()
    };
    let b = block(app, label);
    let inner = b.inner(area);
    b.render(area, buf);
    let differs_mark = if t.ascii { "#" } else { "≠" };
    let mut lines: Vec<Line> = Vec::new();
    let mut selected_line = 0;
    let mut group: Option<Group> = None;
    // The label column: the longest label and two spaces, so that no
    // label runs into its value.
    let label_w = crate::model::params::PARAMS
        .iter()
        .map(|p| p.label.chars().count())
        .max()
        .unwrap_or(10)
        + 2;
    let value_w = (inner.width as usize).saturating_sub(label_w + 11);
    for p in app.visible() {
        if group != Some(p.group) {
            group = Some(p.group);
            lines.push(Line::styled(p.group.title(), t.group));
        }
        let diff = app.differs(p);
        let mark = if diff { differs_mark } else { " " };
        let value = p.display(s);
        let note = match p.series_note(s) {
            Some((name, true)) => Span::styled(format!(" {name}"), t.dim),
            Some((name, false)) => Span::styled(format!(" off {name}"), t.off_series),
            None => Span::raw(""),
        };
        let is_sel = p == app.selected;
        let row_style = if is_sel { t.selected } else { t.normal };
        if is_sel {
            selected_line = lines.len();
        }
        // The selected row: a pointer as well as reverse video.
        let pointer = match (is_sel, t.ascii) {
            (false, _) => " ",
            (true, false) => "▸",
            (true, true) => ">",
        };
        let mut spans = vec![
            Span::styled(mark, if diff { t.differs } else { t.normal }),
            Span::styled(format!("{pointer}{:<label_w$}", p.label), row_style),
        ];
        match (&app.mode, is_sel) {
            (Mode::Edit(field), true) => {
                let shown = field.text().chars().count() + 1;
                spans.extend(field_spans(field, row_style, t.normal));
                spans.push(Span::styled(
                    " ".repeat(value_w.saturating_sub(shown)),
                    row_style,
                ));
            }
            _ => {
                spans.push(Span::styled(format!("{value:<value_w$}"), row_style));
                spans.push(note);
            }
        }
        lines.push(Line::from(spans));
    }
    let h = inner.height as usize;
    let scroll = (selected_line + 1).saturating_sub(h);
    // Keep the group title in view when scrolling back to the top.
    let scroll = scroll.min(lines.len().saturating_sub(h));
    let below = lines.len().saturating_sub(scroll + h);
    Paragraph::new(lines)
        .scroll((scroll as u16, 0))
        .render(inner, buf);
    scroll_marks(app, area, (scroll, below), buf);
}

/// Where the pane's rows run past its edges: "▲ 5 more" in the top
/// border, "▼ 12 more" in the bottom one.
fn scroll_marks(
    app: &App,
    area: Rect,
    (above, below): (usize, usize),
    buf: &mut ratatui::buffer::Buffer,
) {
    let (up, down) = if app.theme.ascii {
        ("^", "v")
    } else {
        ("▲", "▼")
    };
    for (n, arrow, y) in [
        (above, up, area.y),
        (below, down, area.y + area.height.saturating_sub(1)),
    ] {
        let text = format!(" {arrow} {n} more ");
        let w = text.chars().count() as u16;
        if n == 0 || area.width < w + 4 || area.height < 3 {
            continue;
        }
        let x = area.x + area.width - w - 2;
        buf.set_string(x, y, &text, app.theme.dim);
    }
}

/// The A/B legend for a plot title, or the view hint with one stage.
fn legend(app: &App) -> String {
    if app.slots.len() > 1 {
        if app.theme.ascii {
            "  A *** B ooo".into()
        } else {
            "  A ─── B ···".into()
        }
    } else {
        "  (v: next view)".into()
    }
}

/// How slot i's traces are drawn: A solid, B dotted.
fn slot_style(app: &App, i: usize) -> (ratatui::style::Style, Stroke) {
    if i == 0 {
        (app.theme.trace_a, Stroke::Solid)
    } else {
        (app.theme.trace_b, Stroke::Dotted)
    }
}

/// Traces for each slot: A solid, B dotted.
fn traces<'a>(
    app: &'a App,
    pick: impl Fn(&'a Slot) -> &'a [(f64, f64)],
    label: Option<&str>,
    joining: Joining,
) -> Vec<Trace<'a>> {
    app.slots
        .iter()
        .enumerate()
        .map(|(i, s)| Trace {
            points: pick(s),
            style: slot_style(app, i).0,
            stroke: slot_style(app, i).1,
            label: if i == app.active {
                label.map(str::to_string)
            } else {
                None
            },
            label_at: 0.85,
            minor: false,
            joining,
        })
        .collect()
}

fn visible_range<'a>(sets: impl Iterator<Item = &'a [(f64, f64)]>, x: (f64, f64)) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for set in sets {
        for &(px, py) in set {
            if px >= x.0 && px <= x.1 {
                lo = lo.min(py);
                hi = hi.max(py);
            }
        }
    }
    (lo, hi)
}

fn plot<'a>(
    app: &App,
    traces: Vec<Trace<'a>>,
    x: (f64, f64),
    y: ((f64, f64), Vec<(f64, String)>),
    marks: Vec<VMark>,
) -> LogPlot<'a> {
    LogPlot {
        traces,
        x_range: x,
        y_range: y.0,
        y_ticks: y.1,
        marks,
        markers: app.theme.markers(),
        label_style: app.theme.dim,
        mark_style: app.theme.marker,
        rule: if app.theme.ascii { "|" } else { "│" },
        tick: if app.theme.ascii { "+" } else { "├" },
        x_labels: true,
        x_ticks: None,
        grid: Some(if app.theme.ascii {
            ('.', ':')
        } else {
            ('·', '┊')
        }),
        cursor: Some((app.probe_hz.log10(), app.theme.cursor())),
    }
}

fn linear_axis(range: (f64, f64), ticks: usize, unit: &str) -> ((f64, f64), Vec<(f64, String)>) {
    let (r, t) = nice_linear(range.0, range.1, ticks);
    (
        r,
        t.into_iter().map(|v| (v, format!("{v}{unit}"))).collect(),
    )
}

/// A y axis: its range (log10) and its labelled values.
type YAxis = ((f64, f64), Vec<(f64, String)>);

fn log_axis(range: (f64, f64), ticks: usize, unit: &str) -> YAxis {
    let (r, t) = nice_log(range.0, range.1, ticks);
    let mut labelled: Vec<(f64, String)> = t
        .into_iter()
        .map(|v| (v, decade_label(v as i32, unit)))
        .collect();
    // With two decades or fewer, also mark 2 and 5 within each decade.
    if r.1 - r.0 <= 2.0 && ticks >= 4 {
        let mut d = r.0;
        while d < r.1 {
            for m in [2.0f64, 5.0] {
                let v = d + m.log10();
                labelled.push((v, compact(10f64.powf(v), unit)));
            }
            d += 1.0;
        }
    }
    (r, labelled)
}

/// "A " / "B " before a mark's label when two stages are shown.
fn tag(app: &App, slot: usize) -> &'static str {
    match (app.slots.len() > 1, slot) {
        (false, _) => "",
        (true, 0) => "A ",
        (true, _) => "B ",
    }
}

/// A slot as the view registry takes it.
fn stage_of(s: &Slot) -> crate::output::figure::Evaluated<'_> {
    crate::output::figure::Evaluated {
        scenario: &s.scenario,
        eval: &s.eval,
    }
}

/// The marks the registry gives a stage in the current view (the one
/// decision the figures share), each as the workbench writes it.
fn registry_marks(app: &App, s: &Slot) -> Vec<VMark> {
    app.view
        .marks(&stage_of(s))
        .iter()
        .map(|m| VMark {
            x: m.f_hz.log10(),
            label: match m.kind {
                MarkKind::F3db => "-3dB",
                MarkKind::Crossover => "fc",
                MarkKind::Band => "band",
                MarkKind::Limit => "!",
            }
            .into(),
        })
        .collect()
}

/// One stage's marks on the Bode view: the registry's (f−3dB on the
/// response of a stable stage, the crossover on the loop view), the gain
/// margin on the loop view; and its phase-margin note at the crossover
/// (on the loop view only), each label tagged with the stage.
fn bode_marks(app: &App, s: &Slot, tag: &str) -> (Vec<VMark>, Vec<VMark>) {
    let a = &s.eval.analysis;
    let loop_view = app.view == ViewId::Loop;
    let mark = |f: f64, label: String| VMark {
        x: f.log10(),
        label: format!("{tag}{label}"),
    };
    let mut marks: Vec<VMark> = registry_marks(app, s)
        .into_iter()
        .map(|m| VMark {
            label: format!("{tag}{}", m.label),
            ..m
        })
        .collect();
    if let (Some(f), Some(gm), true) = (a.phase_180_hz, a.gain_margin_db, loop_view) {
        let text = format!("gain margin {} dB @ {}", fmt_fixed(gm, 0), fmt_eng(f, "Hz"));
        marks.push(mark(f, text));
    }
    // The margin is a property of the loop: written on its view only, on
    // the phase plot (or the magnitude when the phase is not shown), at
    // the crossover the registry marks.
    let mut margin = Vec::new();
    let crossover = app
        .view
        .marks(&stage_of(s))
        .into_iter()
        .find(|m| m.kind == MarkKind::Crossover);
    if let (Some(c), Some(pm)) = (crossover, a.phase_margin_deg) {
        let text = format!(
            "margin {}{} @ {}",
            fmt_fixed(pm, 0),
            spelled("°"),
            fmt_eng(c.f_hz, "Hz")
        );
        margin.push(mark(c.f_hz, text));
    }
    (marks, margin)
}

fn bode(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let loop_view = app.view == ViewId::Loop;
    let title = format!(" {}{} ", app.view.title(), legend(app));
    let mut b = block(app, title);
    if !loop_view {
        b = b.title_bottom(Line::styled(
            fitted(&gains_line(app), area.width),
            app.theme.dim,
        ));
    }
    let inner = b.inner(area);
    b.render(area, buf);
    let with_cmrr = !loop_view && app.slots.iter().any(|s| !s.traces.cmrr_db.is_empty());
    let [mag, phase, cmrr] = bode_areas(app, inner, with_cmrr);
    cmrr_plot(app, cmrr, buf);
    let x = X_WINDOW;
    let (mag_tr, ph_tr): (Vec<Trace>, Vec<Trace>) = if loop_view {
        (
            loop_magnitudes(app),
            traces(app, |s| &s.traces.loop_phase, None, Joining::Continuous),
        )
    } else {
        (
            traces(app, |s| &s.traces.gain_db, None, Joining::Continuous),
            traces(app, |s| &s.traces.gain_phase, None, Joining::Continuous),
        )
    };
    let (lo, hi) = visible_range(mag_tr.iter().map(|t| t.points), x);
    let rows = mag.height as usize;
    let plot_rows = rows.saturating_sub(usize::from(phase.height == 0));
    let unit = if loop_view {
        "dB".into()
    } else {
        gain_db_unit(app)
    };
    let y = match gain_zoom(app, plot_rows).filter(|_| !loop_view && !app.full_range) {
        Some((r, exact)) => zoom_axis(r, exact, (rows / 2).max(2), &unit),
        None => linear_axis((lo.max(hi - 100.0), hi + 5.0), (rows / 2).max(2), &unit),
    };
    // Each stage's marks; where B's fall on A's (the same stage twice),
    // A's alone, untagged.
    let per: Vec<_> = app
        .slots
        .iter()
        .enumerate()
        .map(|(i, s)| bode_marks(app, s, tag(app, i)))
        .collect();
    let at = |m: &[VMark]| m.iter().map(|v| v.x).collect::<Vec<f64>>();
    let (mut marks, mut margin) = if per.len() > 1 && at(&per[0].0) == at(&per[1].0) {
        bode_marks(app, &app.slots[0], "")
    } else {
        per.into_iter()
            .fold((Vec::new(), Vec::new()), |(mut m, mut g), (a, b)| {
                m.extend(a);
                g.extend(b);
                (m, g)
            })
    };
    if phase.height == 0 {
        marks.append(&mut margin);
    }
    // The magnitude shares its frequency axis with the phase plot below.
    let mut mag_plot = plot(app, mag_tr, x, y, marks);
    mag_plot.x_labels = phase.height == 0;
    mag_plot.render(mag, buf);
    let (plo, phi) = visible_range(ph_tr.iter().map(|t| t.points), x);
    let prow = phase.height.saturating_sub(1) as usize;
    let (r, t) = super::plot::phase_scale(plo, phi, prow.max(3));
    let y = (r, t.into_iter().map(|v| (v, format!("{v}°"))).collect());
    let mut phase_plot = plot(app, ph_tr, x, y, margin);
    phase_plot.x_labels = cmrr.height == 0;
    phase_plot.render(phase, buf);
}

/// The Bode plot's magnitude, phase and (two inputs, response view) CMRR
/// areas; too short for all of them, the one the g key chose (an unused
/// area has no height).
fn bode_areas(app: &App, inner: Rect, with_cmrr: bool) -> [Rect; 3] {
    let none = Rect { height: 0, ..inner };
    let tall = if with_cmrr { ALL_ROWS } else { BOTH_ROWS };
    if inner.height >= tall && with_cmrr {
        let fill = [
            Constraint::Fill(3),
            Constraint::Fill(2),
            Constraint::Fill(2),
        ];
        return Layout::vertical(fill).areas(inner);
    }
    if inner.height >= tall {
        let [m, p] = Layout::vertical([Constraint::Fill(3), Constraint::Fill(2)]).areas(inner);
        return [m, p, none];
    }
    match app.short_plot {
        ShortPlot::Phase => [none, inner, none],
        ShortPlot::Cmrr if with_cmrr => [none, none, inner],
        _ => [inner, none, none],
    }
}

/// The CMRR of each two-input stage against frequency, on its own dB
/// axis; a CMRR above 160 dB (or unbounded) is drawn at 160 dB and the
/// trace's name says so.
fn cmrr_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    if area.height == 0 {
        return;
    }
    let clamped = app.slots.iter().any(|s| s.traces.cmrr_clamped);
    let label = if clamped {
        "CMRR (>160dB at 160)"
    } else {
        "CMRR"
    };
    let tr = traces(app, |s| &s.traces.cmrr_db, Some(label), Joining::Continuous);
    let (lo, hi) = visible_range(tr.iter().map(|t| t.points), X_WINDOW);
    let rows = (area.height as usize).saturating_sub(1);
    let y = zoom_axis((lo - 5.0, hi + 5.0), true, rows.max(2), "dB");
    plot(app, tr, X_WINDOW, y, Vec::new()).render(area, buf);
}

/// The loop view's magnitudes: each stage's loop gain, then the active
/// stage's open-loop gain |A| (dim) and noise gain |1/β| = |A/T| (its
/// own tone) in its stroke, labelled: the loop gain is the gap between
/// them (two stages' four would bury the margins; the active stage's
/// show, and switching stage shows the other's).
fn loop_magnitudes(app: &App) -> Vec<Trace<'_>> {
    type Pick = fn(&Slot) -> &[(f64, f64)];
    let mut tr = traces(
        app,
        |s| &s.traces.loop_db,
        Some("loop"),
        Joining::Continuous,
    );
    for t in &mut tr {
        t.minor = true;
    }
    let others: [(&str, Style, Pick); 2] = [
        ("open loop", app.theme.dim, |s| &s.traces.open_loop_db),
        ("noise gain", app.theme.trace_2, |s| &s.traces.noise_gain_db),
    ];
    for (name, style, pick) in others {
        tr.push(Trace {
            points: pick(app.slot()),
            style,
            stroke: slot_style(app, app.active).1,
            label: Some(name.to_string()),
            label_at: 0.02,
            minor: true,
            joining: Joining::Continuous,
        });
    }
    tr
}

/// The closed-loop gain of every stage in the middle of its band (the
/// passband) and the highest gain of the sweep (the peak), in dB.
fn passband_and_peak(app: &App) -> Vec<(f64, f64)> {
    let mid = |pts: &[(f64, f64)], x: f64| {
        let i = pts.iter().position(|p| p.0 >= x)?;
        Some(pts[i].1)
    };
    app.slots
        .iter()
        .filter_map(|s| {
            let pts = &s.traces.gain_db;
            let x = (s.scenario.band.0 * s.scenario.band.1).sqrt().log10();
            let peak = pts.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
            mid(pts, x)
                .filter(|v| v.is_finite() && peak.is_finite())
                .map(|v| (v, peak))
        })
        .collect()
}

/// The gain view's range in dB: from a little above the peak to 40 dB
/// under the passband; where that would squeeze peaking of 1 dB or more
/// into fewer than 2.5 rows, finer (the peak one row from the top),
/// covering every stage's passband; true when that finer range is to be
/// kept as it is. None: no gain to scale to.
fn gain_zoom(app: &App, rows: usize) -> Option<((f64, f64), bool)> {
    let pp = passband_and_peak(app);
    let pass = pp.iter().map(|p| p.0).reduce(f64::min)?;
    let peak = pp.iter().map(|p| p.1).fold(pass, f64::max);
    let peaking = pp.iter().map(|p| p.1 - p.0).fold(0.0, f64::max);
    let intervals = rows.saturating_sub(1).max(1) as f64;
    let wide = (pass - 40.0, peak + 3.0);
    let fine = if peaking >= 1.0 {
        peaking / 2.5
    } else {
        f64::INFINITY
    };
    let both = (peak - pass) / (intervals - 2.0).max(1.0);
    let per_row = fine.max(both).max(0.1);
    if per_row * intervals >= wide.1 - wide.0 {
        return Some((wide, false));
    }
    let hi = peak + per_row;
    Some(((hi - per_row * intervals, hi), true))
}

/// A dB axis over `range`, rounded out to grid steps unless `exact`, with
/// ticks at round steps inside it.
fn zoom_axis(
    range: (f64, f64),
    exact: bool,
    ticks: usize,
    unit: &str,
) -> ((f64, f64), Vec<(f64, String)>) {
    let ((lo, hi), t) = nice_linear(range.0, range.1, ticks);
    let r = if exact { range } else { (lo, hi) };
    let labelled = t
        .into_iter()
        .filter(|v| *v >= r.0 - 1e-9 && *v <= r.1 + 1e-9)
        .map(|v| (v, format!("{}{unit}", fmt_plain_db(v))))
        .collect();
    (r, labelled)
}

/// A tick value in dB without a trailing ".0" or a negative zero.
fn fmt_plain_db(v: f64) -> String {
    let v = if v.abs() < 1e-9 { 0.0 } else { v };
    let s = format!("{v:.1}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The unit of the gain axis: dB, or dBΩ where every stage shown is a
/// transimpedance (a mixed pair keeps plain dB).
fn gain_db_unit(app: &App) -> String {
    use crate::model::stages::GainUnit;
    let unit = app.slot().eval.analysis.gain_unit;
    let alike = app.slots.iter().all(|s| s.eval.analysis.gain_unit == unit);
    spelled(if alike {
        unit.db()
    } else {
        GainUnit::VoltsPerVolt.db()
    })
}

/// The stage's gains, from the figure table's gain ratios: nominal, with
/// the passive network, and the DC gain; a gain in ohms has its level in
/// dBΩ after the first ("nominal −1.000MΩ (120.0dBΩ)").
fn gains_line(app: &App) -> String {
    let slot = app.slot();
    let cells: Vec<String> = crate::judge::figures::FIGURES
        .iter()
        .filter(|f| f.section == Section::Gain && f.unit == Unit::Ratio)
        .filter(|f| f.applies_to(&slot.eval))
        .enumerate()
        .map(|(i, f)| {
            let r = f.read(&slot.eval);
            let cell = f.cell_in(&slot.eval, r, false);
            let level = match (r, f.unit_in(&slot.eval)) {
                (Reading::Value(v), Unit::Si(_)) if i == 0 && v != 0.0 => {
                    let unit = slot.eval.analysis.gain_unit.db();
                    format!(
                        " ({}{})",
                        fmt_fixed(20.0 * v.abs().log10(), 1),
                        spelled(unit)
                    )
                }
                _ => String::new(),
            };
            format!("{} {}{level}", f.short, trim_zeros(&cell))
        })
        .collect();
    let who = if app.slots.len() > 1 {
        format!("{} ", App::slot_label(app.active))
    } else {
        String::new()
    };
    format!(" {who}{} ", cells.join(" · "))
}

/// "11.0000" → "11", "10.9980" → "10.998"; other text unchanged.
fn trim_zeros(cell: &str) -> String {
    if cell.contains('.')
        && cell
            .chars()
            .all(|c| c.is_ascii_digit() || "+-.".contains(c))
    {
        cell.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        cell.to_string()
    }
}

/// The noise view's bottom line: each stage's band rms, and with one
/// stage the largest sources.
fn noise_summary(app: &App) -> String {
    if app.slots.len() > 1 {
        let each: Vec<String> = app
            .slots
            .iter()
            .enumerate()
            .map(|(i, s)| {
                format!(
                    "{}band rms {}",
                    tag(app, i),
                    compact(s.eval.analysis.noise_rms, "V")
                )
            })
            .collect();
        return format!(" {} ", each.join(" · "));
    }
    let a = &app.slot().eval;
    let mut shares: Vec<_> = a.analysis.noise_sources.iter().collect();
    shares.sort_by(|a, b| b.share.total_cmp(&a.share));
    let top: Vec<String> = shares
        .iter()
        .take(3)
        .filter(|n| n.share >= 0.005)
        .map(|n| format!("{} {:.0}%", n.label, n.share * 100.0))
        .collect();
    format!(
        " band rms {}: {} ",
        compact(a.analysis.noise_rms, "V"),
        top.join(", ")
    )
}

fn noise_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let title = format!(" {} {}{} ", app.view.title(), spelled("V/√Hz"), legend(app));
    let b = block(app, title).title_bottom(Line::styled(
        fitted(&noise_summary(app), area.width),
        app.theme.dim,
    ));
    let inner = b.inner(area);
    b.render(area, buf);
    // Every stage's band, a decade either side.
    let (lo_f, hi_f) = app.slots.iter().fold((f64::INFINITY, 0.0f64), |(a, b), s| {
        (a.min(s.scenario.band.0), b.max(s.scenario.band.1))
    });
    let x = (
        (lo_f.log10() - 1.0).max(-2.0),
        (hi_f.log10() + 1.0).min(9.0),
    );
    let tr = traces(app, |s| &s.traces.noise, None, Joining::Continuous);
    let (lo, hi) = visible_range(tr.iter().map(|t| t.points), x);
    let y = log_axis((lo, hi), (inner.height as usize / 2).max(2), "");
    let marks = all_band_marks(app);
    plot(app, tr, x, y, marks).render(inner, buf);
}

/// Each stage's band edges (one set when the bands are the same).
fn all_band_marks(app: &App) -> Vec<VMark> {
    let same = app
        .slots
        .windows(2)
        .all(|w| w[0].scenario.band == w[1].scenario.band);
    if same {
        return registry_marks(app, app.slot());
    }
    tagged_marks(app, |s| registry_marks(app, s))
}

/// Every stage's marks from `of`, each label tagged with its stage.
fn tagged_marks(app: &App, of: impl Fn(&Slot) -> Vec<VMark>) -> Vec<VMark> {
    let of = &of;
    app.slots
        .iter()
        .enumerate()
        .flat_map(|(i, s)| {
            of(s).into_iter().map(move |m| VMark {
                label: format!("{}{}", tag(app, i), m.label),
                ..m
            })
        })
        .collect()
}

/// The output envelope at the internal output across the band: the
/// signal's need (A solid, B dotted) under the swing, slew and current
/// ceilings, with a mark where the need first passes one.
fn envelope_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let slot = app.slot();
    let (s, l) = (&slot.scenario, &slot.eval.analysis.limits);
    let title = format!(" {} V{} ", app.view.title(), legend(app));
    let bottom = match (l.int_peak_v, l.envelope_limit) {
        (None, _) => " give source peak for the envelope ".to_string(),
        // Where the need passes a ceiling first: it matters more than the
        // peak, which a narrow caption drops.
        (Some(p), Some((f, what))) => format!(
            " passes the {what} ceiling at {} · peak {} ",
            compact(f, "Hz"),
            compact(p, "V")
        ),
        (Some(p), None) => format!(" peak {}: under every ceiling ", compact(p, "V")),
    };
    let b =
        block(app, title).title_bottom(Line::styled(fitted(&bottom, area.width), app.theme.dim));
    let inner = b.inner(area);
    b.render(area, buf);
    let x = (
        (s.band.0.log10() - 0.5).max(-2.0),
        (s.band.1.log10() + 0.5).min(12.0),
    );
    let mut tr = traces(
        app,
        |s| &s.traces.env_need,
        Some("need"),
        Joining::Continuous,
    );
    type Pick = fn(&Slot) -> &[(f64, f64)];
    let ceilings: [(Pick, &str, f64); 3] = [
        (|s| &s.traces.env_swing, "swing", 0.1),
        (|s| &s.traces.env_slew, "slew", 0.45),
        (|s| &s.traces.env_current, "current", 0.75),
    ];
    for (pick, name, at) in ceilings {
        for (i, sl) in app.slots.iter().enumerate() {
            tr.push(Trace {
                points: pick(sl),
                style: app.theme.trace_2,
                stroke: if i == 1 {
                    Stroke::Dotted
                } else {
                    Stroke::Solid
                },
                label: (i == app.active).then(|| name.to_string()),
                label_at: at,
                minor: false,
                joining: Joining::Continuous,
            });
        }
    }
    let (lo, hi) = visible_range(tr.iter().map(|t| t.points), x);
    // The ceilings where they matter: up to two decades above the largest
    // need (as the SVG), so the need and the ceilings it meets get rows
    // of their own.
    let (_, need_top) = visible_range(tr.iter().take(app.slots.len()).map(|t| t.points), x);
    let hi = if need_top.is_finite() {
        hi.min(need_top + 2.0)
    } else {
        hi
    };
    let (lo, hi) = if lo.is_finite() {
        (lo.max(hi - 6.0), hi)
    } else {
        (-1.0, 1.0)
    };
    let rows = inner.height.saturating_sub(1);
    let y = apart(slot, x, (lo, hi), rows)
        .unwrap_or_else(|| log_axis((lo, hi), (inner.height as usize / 2).max(2), ""));
    // The band edges and where the need first passes a ceiling.
    let marks = registry_marks(app, slot);
    plot(app, tr, x, y, marks).render(inner, buf);
}

/// The envelope's y axis narrowed so that the need (at the band's low
/// end) and the flat swing ceiling lie at least 1.2 rows apart on a plot
/// of `rows` text rows, both inside with room around them, labelled at
/// 1, 2 and 5 of each decade; None where the given range already does
/// it, or where the two are within 5 % (one level, as good as touching).
fn apart(slot: &Slot, x: (f64, f64), (lo, hi): (f64, f64), rows: u16) -> Option<YAxis> {
    let need = slot.traces.env_need.iter().find(|p| p.0 >= x.0)?.1;
    let swing = slot.traces.env_swing.first()?.1;
    let d = (swing - need).abs();
    // Distances of 5 % and less: one level.
    if d < 1.05f64.log10() || rows < 3 {
        return None;
    }
    let span = f64::from(rows) * d / 1.2;
    if hi.ceil() - lo.floor() <= span {
        return None;
    }
    let mid = (need + swing) / 2.0;
    let range = (mid - span / 2.0, mid + span / 2.0);
    let ticks = (range.0.floor() as i32..=range.1.ceil() as i32)
        .flat_map(|dec| [1.0f64, 2.0, 5.0].map(|m| f64::from(dec) + m.log10()))
        .filter(|v| *v >= range.0 && *v <= range.1)
        .map(|v| (v, compact(10f64.powf(v), "")))
        .collect();
    Some((range, ticks))
}

/// The step view's bottom line: overshoot, settling, limits.
fn step_summary(app: &App) -> String {
    let each: Vec<String> = (0..app.slots.len())
        .map(|i| format!("{}{}", tag(app, i), stage_step_summary(&app.slots[i])))
        .collect();
    format!(" {} ", each.join(" · "))
}

/// One stage's overshoot and settling (or why not).
fn stage_step_summary(slot: &Slot) -> String {
    let r = &slot.eval.analysis.step;
    let pct = |v: f64| format!("{}%", crate::model::values::fmt_plain(v, 3));
    match (r.final_v, r.settle_s[1]) {
        _ if slot.eval.analysis.unstable() => "unstable: no step response".to_string(),
        _ if r.reason.is_some() => format!("no figures: {}", r.reason.unwrap_or_default()),
        (Some(_), Some(ts)) => {
            let mut t = format!(
                "overshoot {}, 0.1 % in {}",
                pct(r.overshoot_pct.unwrap_or(0.0)),
                compact(ts, "s")
            );
            if r.slew_limited == Some(true) {
                t.push_str(", slewing");
            }
            if r.clipped == Some(true) {
                t.push_str(", at a rail");
            }
            if r.current_limited == Some(true) {
                t.push_str(", current-limited");
            }
            t
        }
        _ => "does not settle in the window".to_string(),
    }
}

/// One time window for every stage: 1.5 × the slowest 0.1 % settling
/// (the simulated window where a stage does not settle).
fn step_window(app: &App) -> f64 {
    app.slots
        .iter()
        .filter_map(|s| s.eval.analysis.step.view_end())
        .fold(0.0, f64::max)
}

/// Marks at the 10 % and 90 % points and at the 0.1 % settling time.
fn step_marks(r: &crate::engine::step::StepResponse) -> Vec<VMark> {
    let mut marks = Vec::new();
    if let (Some(t10), Some(rise)) = (r.rise_start_s, r.rise_s) {
        marks.push(VMark {
            x: t10,
            label: "10%".into(),
        });
        marks.push(VMark {
            x: t10 + rise,
            label: "90%".into(),
        });
    }
    if let Some(ts) = r.settle_s[1] {
        marks.push(VMark {
            x: ts,
            label: "ts".into(),
        });
    }
    // The stage's own threshold: its level names the mark.
    if let (Some(b), Some(ts)) = (r.threshold, r.settle_to_s) {
        let level = crate::output::settling::level_label(b.log10());
        marks.push(VMark {
            x: ts,
            label: level.replace(' ', ""),
        });
    }
    marks
}

/// Every stage's step marks, tagged A and B when there are two.
fn all_step_marks(app: &App) -> Vec<VMark> {
    tagged_marks(app, |s| step_marks(&s.eval.analysis.step))
}

/// The step response on a linear time axis: each stage's waveform, A's
/// final value and ±0.1 % band, and the marks of [`step_marks`].
fn step_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let r = &app.slot().eval.analysis.step;
    let end = step_window(app);
    let n = (area.width as usize * 4).clamp(50, 600);
    let responses: Vec<_> = app.slots.iter().map(|s| &s.eval.analysis.step).collect();
    let (waves, divided) = crate::engine::step::shown_waves(&responses, end, n);
    let sizes: Vec<String> = app
        .slots
        .iter()
        .map(|s| compact(s.eval.analysis.step.size_v, s.scenario.input_unit()))
        .collect();
    let unit = if divided { "output / final value" } else { "V" };
    let title = format!(
        " {}, {} step, {unit}{} ",
        app.view.title(),
        sizes.join(" / "),
        legend(app)
    );
    let b = block(app, title).title_bottom(Line::styled(
        fitted(&step_summary(app), area.width),
        app.theme.dim,
    ));
    let inner = b.inner(area);
    b.render(area, buf);
    if end <= 0.0 {
        return;
    }
    let final_shown = if divided { Some(1.0) } else { r.final_v };
    let lines: Vec<Vec<(f64, f64)>> = final_shown
        .map(|f| {
            [1.0, 1.001, 0.999]
                .iter()
                .map(|k| vec![(0.0, f * k), (end, f * k)])
                .collect()
        })
        .unwrap_or_default();
    // The band lines first, under the waveforms.
    let mut tr: Vec<Trace> = Vec::new();
    for (i, l) in lines.iter().enumerate().rev() {
        let final_name = (i == 0).then(|| "final".to_string());
        tr.push(Trace::plain(l, (app.theme.dim, Stroke::Solid)).named(final_name, 0.9));
    }
    for (i, w) in waves.iter().enumerate() {
        tr.push(Trace::plain(w, slot_style(app, i)));
    }
    let (lo, hi) = tr
        .iter()
        .flat_map(|t| t.points.iter().map(|p| p.1))
        .fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
    let ((y0, y1), yt) = nice_linear(lo, hi, (inner.height as usize / 2).max(2));
    let y_ticks = yt.into_iter().map(|v| (v, compact(v, ""))).collect();
    let mut p = plot(
        app,
        tr,
        (0.0, end),
        ((y0, y1), y_ticks),
        all_step_marks(app),
    );
    p.x_ticks = Some(time_ticks(end, inner.width));
    // Time, not frequency: no cursor.
    p.cursor = None;
    p.render(inner, buf);
}

/// The step's settling: |output / final − 1| on a log axis against time,
/// rules at 1 %, 0.1 % and 0.01 %, marks where each stage last leaves
/// each band (the same curve and times as the SVG view).
fn settling_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    use crate::output::settling;
    let responses: Vec<_> = app.slots.iter().map(|s| &s.eval.analysis.step).collect();
    let end = settling::end_of(&responses);
    let n = (area.width as usize * 4).clamp(50, 600);
    let curves: Vec<Vec<(f64, f64)>> = responses
        .iter()
        .map(|r| settling::curve(r, end, n))
        .collect();
    let mut title = format!(" {}, |output/final − 1|{} ", app.view.title(), legend(app));
    if title.chars().count() + 2 > usize::from(area.width) {
        title = format!(" {}{} ", app.view.title(), legend(app));
    }
    let b = block(app, title).title_bottom(Line::styled(
        fitted(&step_summary(app), area.width),
        app.theme.dim,
    ));
    let inner = b.inner(area);
    b.render(area, buf);
    if end <= 0.0 || curves.iter().all(Vec::is_empty) {
        return;
    }
    let rules: Vec<Vec<(f64, f64)>> = settling::rule_levels(&responses)
        .into_iter()
        .map(|y| vec![(0.0, y), (end, y)])
        .collect();
    let mut tr: Vec<Trace> = Vec::new();
    for l in &rules {
        tr.push(Trace::plain(l, (app.theme.dim, Stroke::Solid)).named(None, 0.9));
    }
    for (i, c) in curves.iter().enumerate() {
        tr.push(Trace::plain(c, slot_style(app, i)));
    }
    let top = curves
        .iter()
        .flatten()
        .map(|p| p.1)
        .fold(0.0f64, f64::max)
        .ceil();
    let floor = settling::FLOOR_LOG;
    let y_ticks = decade_ticks((floor, top), inner.height, settling::level_label);
    let x_ticks = time_ticks(end, inner.width);
    let marks = tagged_marks(app, |s| {
        settling::rules(&s.eval.analysis.step)
            .into_iter()
            .filter_map(|(y, t)| {
                t.map(|x| VMark {
                    x,
                    label: settling::level_label(y).replace(' ', ""),
                })
            })
            .collect()
    });
    let mut p = plot(app, tr, (0.0, end), ((floor, top), y_ticks), marks);
    p.x_ticks = Some(x_ticks);
    p.cursor = None;
    p.render(inner, buf);
}

/// Ticks every decade of a log axis (log10 units) when there is room,
/// else every other one, labelled by `label`.
fn decade_ticks(
    (floor, top): (f64, f64),
    height: u16,
    label: fn(f64) -> String,
) -> Vec<(f64, String)> {
    let every = if f64::from(height) >= 2.0 * (top - floor) {
        1
    } else {
        2
    };
    (0..=(top - floor) as i32)
        .filter(|i| (top as i32 - floor as i32 - i) % every == 0)
        .map(|i| {
            let y = floor + f64::from(i);
            (y, label(y).replace(' ', ""))
        })
        .collect()
}

/// Ticks of a time axis from 0 to `end` for a plot `width` cells wide.
fn time_ticks(end: f64, width: u16) -> Vec<(f64, String)> {
    let ((_, _), xt) = nice_linear(0.0, end, (width as usize / 12).max(2));
    xt.into_iter()
        .filter(|t| *t <= end)
        .map(|t| (t, compact(t, "s")))
        .collect()
}

/// The kick view's bottom line: each stage's error at the end of the
/// acquisition and when it is within half an LSB (or why there is none).
fn kick_summary(app: &App) -> String {
    let each: Vec<String> = (0..app.slots.len())
        .map(|i| {
            let text = match app.slots[i].eval.analysis.kick.as_ref() {
                None => "give load.sample for the kick".to_string(),
                Some(k) => match (k.error_lsb, k.settle_s) {
                    (Some(l), Some(t)) => format!(
                        "{l:.2} LSB at {}, ½ LSB in {}",
                        compact(k.acquire_s, "s"),
                        compact(t, "s")
                    ),
                    _ => format!("no figures: {}", k.reason.unwrap_or("no settled kick")),
                },
            };
            format!("{}{text}", tag(app, i))
        })
        .collect();
    format!(" {} ", each.join(" · "))
}

/// The sampling kick: |V − DC level| of each stage's sampling capacitor
/// (solid) and load terminal (dotted) on a log axis against time, a rule
/// at A's half LSB, marks at the acquisition time and the ½ LSB time.
fn kick_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    use crate::output::kick;
    let kicks: Vec<_> = app
        .slots
        .iter()
        .filter_map(|s| s.eval.analysis.kick.as_ref())
        .collect();
    let title = format!(" {}, |V − DC level|{} ", app.view.title(), legend(app));
    let b = block(app, title).title_bottom(Line::styled(
        fitted(&kick_summary(app), area.width),
        app.theme.dim,
    ));
    let inner = b.inner(area);
    b.render(area, buf);
    let end = kick::end_of(&kicks);
    if end <= 0.0 {
        return;
    }
    let (floor, top) = kick::levels(&kicks);
    let n = (area.width as usize * 4).clamp(50, 600);
    let pairs: Vec<kick::Pair> = kicks
        .iter()
        .map(|k| kick::curves(k, end, n, floor))
        .collect();
    let half: Vec<Vec<(f64, f64)>> = app
        .slot()
        .eval
        .analysis
        .kick
        .iter()
        .map(|k| vec![(0.0, k.half_lsb_v.log10()), (end, k.half_lsb_v.log10())])
        .collect();
    let mut tr: Vec<Trace> = half
        .iter()
        .map(|l| Trace::plain(l, (app.theme.dim, Stroke::Solid)).named(Some("½LSB".into()), 0.95))
        .collect();
    for (i, (load, cap)) in pairs.iter().enumerate() {
        let (style, stroke) = slot_style(app, i);
        for (points, stroke) in [(load, Stroke::Dotted), (cap, stroke)] {
            tr.push(Trace::plain(points, (style, stroke)));
        }
    }
    let y_ticks = decade_ticks((floor, top), inner.height, kick::level_label);
    let marks = tagged_marks(app, kick_marks);
    let mut p = plot(app, tr, (0.0, end), ((floor, top), y_ticks), marks);
    p.x_ticks = Some(time_ticks(end, inner.width));
    p.cursor = None;
    p.render(inner, buf);
}

/// A stage's kick marks: the end of the acquisition, the ½ LSB time.
fn kick_marks(s: &Slot) -> Vec<VMark> {
    let Some(k) = s.eval.analysis.kick.as_ref() else {
        return Vec::new();
    };
    let mut m = vec![VMark {
        x: k.acquire_s,
        label: "acq".into(),
    }];
    if let Some(t) = k.settle_s.filter(|t| *t > 0.0) {
        m.push(VMark {
            x: t,
            label: "½LSB".into(),
        });
    }
    m
}

fn impedance_plot(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let ab = if app.slots.len() > 1 {
        legend(app)
    } else {
        String::new()
    };
    let title = format!(" Impedance |Zout| pin |Zin| {}{ab} ", spelled("Ω"));
    let b =
        block(app, title).title_bottom(Line::styled(impedance_caption(area.width), app.theme.dim));
    let inner = b.inner(area);
    b.render(area, buf);
    let x = X_WINDOW;
    // The pin traces first, under Zout: without riso the two coincide.
    let mut tr = pin_traces(app);
    tr.extend(traces(
        app,
        |s| &s.traces.zout,
        Some("Zout"),
        Joining::Continuous,
    ));
    for (i, s) in app.slots.iter().enumerate() {
        tr.push(Trace {
            points: &s.traces.zin,
            style: app.theme.trace_2,
            stroke: if i == 1 {
                Stroke::Dotted
            } else {
                Stroke::Solid
            },
            label: (i == app.active).then(|| "Zin".to_string()),
            label_at: 0.02,
            minor: false,
            joining: Joining::Continuous,
        });
    }
    let (lo, hi) = visible_range(tr.iter().map(|t| t.points), x);
    let y = log_axis(
        (lo, hi.min(lo + 18.0)),
        (inner.height as usize / 2).max(2),
        "",
    );
    plot(app, tr, x, y, Vec::new()).render(inner, buf);
}

/// Under the impedance plot: where each Zout is taken, as long as it fits.
fn impedance_caption(width: u16) -> String {
    let room = usize::from(width.saturating_sub(2));
    [
        "Zout at the load terminal, riso included, load removed · pin: at the amplifier pin, before riso",
        "Zout at the load terminal (riso in, load removed) · pin: before riso",
        "Zout at load, riso in, no load; pin: at amp",
        "Zout at load, riso in, no load",
    ]
    .iter()
    .map(|t| format!(" {t} "))
    .find(|t| t.chars().count() <= room)
    .unwrap_or_default()
}

/// |Zout| at the amplifier pin (riso and load removed), per stage in its
/// stroke, dim; labelled "pin" where riso makes it differ from Zout.
fn pin_traces(app: &App) -> Vec<Trace<'_>> {
    app.slots
        .iter()
        .enumerate()
        .map(|(i, s)| Trace {
            points: &s.traces.zout_pin,
            style: app.theme.dim,
            stroke: slot_style(app, i).1,
            label: (i == app.active
                && crate::model::scenario::present(s.scenario.stage.riso).is_some())
            .then(|| "pin".to_string()),
            label_at: 0.3,
            minor: false,
            joining: Joining::Continuous,
        })
        .collect()
}

/// A key figure of one stage; the |Zout| figure at the chosen frequency.
fn reading(f: &Figure, s: &Slot) -> Reading {
    if f.at_probe {
        f.read_value(&s.eval, s.probe.map(|p| p.zout.norm()))
    } else {
        f.read(&s.eval)
    }
}

fn figure_cells(s: &Slot, cols: &[&Figure]) -> Vec<String> {
    cols.iter()
        .map(|f| f.cell_in(&s.eval, reading(f, s), false))
        .collect()
}

fn delta_cells(a: &Slot, b: &Slot, cols: &[&Figure]) -> Vec<String> {
    let past = |f: &Figure, r: Reading| f.ceiling.is_some_and(|c| r.value().is_some_and(|v| v > c));
    cols.iter()
        .map(|f| match (reading(f, a), reading(f, b)) {
            _ if f.units_differ(a.eval.analysis.gain_unit, b.eval.analysis.gain_unit) => "—".into(),
            (x, y) if past(f, x) || past(f, y) => "—".into(),
            (Reading::Value(x), Reading::Value(y)) => {
                f.cell_in(&a.eval, Reading::Value(y - x), true)
            }
            _ => "—".into(),
        })
        .collect()
}

/// The key figures, a figure of the stage's kind (the CMRR of two
/// inputs) right after the key figures of its section so it keeps its
/// place at 80 columns, then the figures a stage defines only with its
/// inputs (headroom, offset) when some stage has them.
fn figure_columns(app: &App) -> (Vec<&'static Figure>, usize) {
    let given = |f: &Figure| {
        app.slots.iter().any(|s| match f.applies {
            Some(_) => f.applies_to(&s.eval),
            None => matches!(f.read(&s.eval), Reading::Value(_)),
        })
    };
    let mut cols: Vec<&'static Figure> = key_figures().collect();
    for f in row_figures().filter(|f| f.applies.is_some() && given(f)) {
        let at = cols
            .iter()
            .rposition(|c| c.section == f.section)
            .map_or(cols.len(), |i| i + 1);
        cols.insert(at, f);
    }
    let fixed = cols.len();
    cols.extend(row_figures().filter(|f| f.applies.is_none() && given(f)));
    (cols, fixed)
}

/// The warning count's key in the figure table.
const WARNINGS_KEY: &str = "warnings";

/// The figures row keeps at least this many columns, however narrow.
const MIN_FIGURE_COLUMNS: usize = 5;

/// A usual cell's width for a unit ("-0.9995", "-0.001%", "3.83MHz").
fn usual_width(unit: crate::judge::figures::Unit) -> usize {
    use crate::judge::figures::Unit;
    match unit {
        Unit::Ratio | Unit::Si(_) | Unit::Percent => 7,
        Unit::Fraction | Unit::Lsb => 8,
        Unit::Db => 6,
        Unit::Degrees | Unit::Count => 4,
        Unit::Flag => 3,
    }
}

/// A header's width at the widest cursor text ("12.6M"), so a column
/// named after the cursor's frequency keeps its place as the cursor moves.
fn widest_header(f: &Figure) -> usize {
    f.short.replace("{f}", "12.6M").chars().count()
}

fn figures_table(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let t = &app.theme;
    let probe = compact(app.probe_hz, "");
    let (mut cols, fixed) = figure_columns(app);
    let widths = loop {
        let header: Vec<String> = cols
            .iter()
            .map(|f| f.short.replace("{f}", &probe))
            .collect();
        let mut rows: Vec<Vec<String>> = app.slots.iter().map(|s| figure_cells(s, &cols)).collect();
        if app.slots.len() > 1 {
            rows.push(delta_cells(&app.slots[0], &app.slots[1], &cols));
        }
        // At least a usual cell's width, so columns keep their places
        // as values change from key to key.
        let widths: Vec<usize> = (0..header.len())
            .map(|c| {
                rows.iter()
                    .map(|cells| cells[c].chars().count())
                    .chain([
                        header[c].chars().count(),
                        widest_header(cols[c]),
                        usual_width(cols[c].unit),
                    ])
                    .max()
                    .unwrap_or(4)
            })
            .collect();
        let total: usize = 2 + widths.iter().map(|w| w + 1).sum::<usize>();
        // The optional columns go first when the row is too wide, then
        // the key figures from the end, down to the first few; the
        // warning count stays to the last (it says where to look next).
        if total <= area.width as usize || cols.len() <= fixed.min(MIN_FIGURE_COLUMNS) {
            break widths;
        }
        let last = cols.len() - 1;
        let drop = match cols[last].key == WARNINGS_KEY && last > 0 {
            true => last - 1,
            false => last,
        };
        cols.remove(drop);
    };
    let header: Vec<String> = cols
        .iter()
        .map(|f| f.short.replace("{f}", &probe))
        .collect();
    let mut rows: Vec<(&str, Vec<String>)> = app
        .slots
        .iter()
        .enumerate()
        .map(|(i, s)| (App::slot_label(i), figure_cells(s, &cols)))
        .collect();
    if app.slots.len() > 1 {
        rows.push(("Δ", delta_cells(&app.slots[0], &app.slots[1], &cols)));
    }
    let mut lines = Vec::new();
    let mut head = vec![Span::styled("  ", t.dim)];
    for (h, w) in header.iter().zip(&widths) {
        head.push(Span::styled(format!(" {h:>w$}"), t.dim));
    }
    lines.push(Line::from(head));
    for (label, cells) in rows {
        let mut spans = vec![Span::styled(format!("{label:<2}"), t.title)];
        for (c, w) in cells.iter().zip(&widths) {
            spans.push(Span::raw(format!(" {c:>w$}")));
        }
        lines.push(Line::from(spans));
    }
    Paragraph::new(lines).render(area, buf);
}

/// Rows a warning takes when wrapped to `width` (symbol, severity, code, text).
fn warning_rows(w: &crate::judge::Warning, width: usize) -> usize {
    // Symbol, severity, an A/B tag, the code and the text.
    (w.text.chars().count() + w.code.as_str().len() + 15).div_ceil(width.max(1))
}

fn warnings_strip(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let t = &app.theme;
    let tagged = app.strip_warnings();
    let w: Vec<&crate::judge::Warning> = tagged.iter().map(|x| x.1).collect();
    // How many warnings fit, each wrapped to the width.
    let width = area.width.max(1) as usize;
    let mut rows = 0;
    let mut shown = 0;
    for x in w.iter().skip(app.warn_scroll) {
        rows += warning_rows(x, width);
        if rows > area.height.saturating_sub(1) as usize && shown > 0 {
            break;
        }
        shown += 1;
    }
    let more = if w.len() > shown || app.warn_scroll > 0 {
        format!(
            " {}–{} of {} ([ ] scroll)",
            app.warn_scroll + 1,
            (app.warn_scroll + shown).min(w.len()),
            w.len()
        )
    } else {
        String::new()
    };
    let title = if app.slots.len() > 1 {
        format!(" Warnings of A and B{more} ")
    } else {
        format!(" Warnings{more} ")
    };
    let b = Block::default()
        .borders(Borders::TOP)
        .border_set(t.border())
        .border_style(t.dim)
        .title(title)
        .title_style(t.title);
    let inner = b.inner(area);
    b.render(area, buf);
    let sym = t.symbols();
    let lines: Vec<Line> = if w.is_empty() {
        vec![Line::styled("no warnings", t.dim)]
    } else {
        tagged
            .iter()
            .skip(app.warn_scroll)
            .take(shown)
            .map(|&(slot, x)| {
                let (s, style) = match x.severity {
                    Severity::Severe => (sym[0], t.severe),
                    Severity::Warning => (sym[1], t.warning),
                    Severity::Info => (sym[2], t.info),
                };
                let tag = if app.slots.len() > 1 {
                    format!("{} ", App::slot_label(slot))
                } else {
                    String::new()
                };
                Line::from(vec![
                    Span::styled(format!("{s}{:<8}", x.severity.name()), style),
                    Span::styled(tag, t.marker),
                    Span::styled(format!("{} ", x.code), t.dim),
                    Span::raw(x.text.clone()),
                ])
            })
            .collect()
    };
    Paragraph::new(lines)
        .wrap(ratatui::widgets::Wrap { trim: false })
        .render(inner, buf);
}

fn status_line(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    let t = &app.theme;
    let line = match &app.mode {
        Mode::Edit(b) => {
            let mut spans = vec![Span::styled(format!(" {} = ", app.selected.label), t.title)];
            spans.extend(field_spans(b, t.normal, t.selected));
            spans.push(Span::styled(field_hint(b), t.dim));
            Line::from(spans)
        }
        Mode::Prompt(kind, b) => {
            let mut spans = vec![Span::styled(format!(" {}: ", kind.label()), t.title)];
            spans.extend(field_spans(b, t.normal, t.selected));
            spans.push(Span::styled(field_hint(b), t.dim));
            Line::from(spans)
        }
        Mode::Normal if app.status.is_empty() => param_hint(app),
        _ => {
            let style = match app.status_kind {
                super::app::StatusKind::Error => t.error,
                super::app::StatusKind::Info => t.status,
            };
            Line::styled(format!(" {}", app.status), style)
        }
    };
    Paragraph::new(line).render(area, buf);
}

/// The hint line: what ← → do to the selected value (the value each way,
/// how it steps), its accepted range, then the table's hint keys.
fn param_hint(app: &App) -> Line<'static> {
    let t = &app.theme;
    let p = app.selected;
    let s = &app.slot().scenario;
    let (down, up) = p.step_preview(s);
    let end = |v: Option<String>| v.unwrap_or_else(|| "end".into());
    let mut spans = vec![
        Span::styled(format!(" {} ", p.label), t.title),
        Span::styled(p.display(s), t.normal),
        Span::styled(format!("  ← {}  → {} ", end(down), end(up)), t.normal),
        Span::styled(p.step_text(s), t.dim),
    ];
    if p.choice(s).is_none() {
        spans.push(Span::styled(format!(" · {}", p.range_text()), t.dim));
    }
    if let Some(note) = p.note {
        spans.push(Span::styled(format!(" · {note}"), t.dim));
    }
    spans.push(Span::styled(format!(" · {}", keys::hint_line()), t.dim));
    Line::from(spans)
}

/// What the field keys do now, in a few words.
fn field_hint(field: &Field) -> &'static str {
    if field.offered() {
        "   typing replaces · ← → edit · Enter applies · Esc cancels"
    } else {
        "   Enter applies · Esc cancels · Ctrl-U clears"
    }
}

fn centered(area: Rect, w: u16, h: u16) -> Rect {
    let w = w.min(area.width);
    let h = h.min(area.height);
    Rect {
        x: area.x + (area.width - w) / 2,
        y: area.y + (area.height - h) / 2,
        width: w,
        height: h,
    }
}

fn help_overlay(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer) {
    // The legend only where it fits below every key.
    let n_keys = keys::help_rows().count();
    let legend = (area.height as usize).saturating_sub(n_keys + 2);
    let rows: Vec<(&str, std::borrow::Cow<str>)> = keys::help_rows()
        .map(|b| (b.shown, b.help_text()))
        .chain(
            keys::LEGEND
                .iter()
                .map(|&(k, h)| (k, h.into()))
                .take(legend),
        )
        .collect();
    let r = centered(area, 78, rows.len() as u16 + 2);
    Clear.render(r, buf);
    let mut b = block(app, " Keys ");
    let hidden = keys::LEGEND.len().saturating_sub(legend);
    if hidden > 0 {
        let more = format!(" {hidden} more notes on a taller terminal, all in the README ");
        b = b.title_bottom(Line::styled(more, app.theme.dim));
    }
    let inner = b.inner(r);
    b.render(r, buf);
    let lines: Vec<Line> = rows
        .into_iter()
        .map(|(k, d)| {
            Line::from(vec![
                Span::styled(format!(" {k:<15}"), app.theme.title),
                Span::raw(d),
            ])
        })
        .collect();
    Paragraph::new(lines).render(inner, buf);
}

fn open_overlay(
    app: &App,
    area: Rect,
    buf: &mut ratatui::buffer::Buffer,
    files: &[std::path::PathBuf],
    sel: usize,
    typed: &Field,
) {
    let h = (files.len() as u16 + 4).min(area.height.saturating_sub(2));
    let r = centered(area, 70, h);
    Clear.render(r, buf);
    let b = block(
        app,
        " Open a scenario (↑↓ choose or type a path, Enter, Esc) ",
    );
    let inner = b.inner(r);
    b.render(r, buf);
    let mut lines = vec![Line::from(vec![Span::styled(" path: ", app.theme.title)])];
    lines[0]
        .spans
        .extend(field_spans(typed, app.theme.normal, app.theme.selected));
    let visible = inner.height.saturating_sub(1) as usize;
    let start = sel.saturating_sub(visible.saturating_sub(1));
    for (i, f) in files.iter().enumerate().skip(start).take(visible) {
        let style = if i == sel && typed.is_empty() {
            app.theme.selected
        } else {
            app.theme.normal
        };
        lines.push(Line::styled(format!("  {}", f.display()), style));
    }
    if files.is_empty() {
        lines.push(Line::styled(
            "  (no .ron files here or in scenarios/)",
            app.theme.dim,
        ));
    }
    Paragraph::new(lines).render(inner, buf);
}

/// A list overlay: a title, an optional dim header, rows (the selected
/// one highlighted, scrolled into view) and a dim note under them. The
/// design helpers' lists use it.
fn list_overlay(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer, list: ListView) {
    // The note wraps at word boundaries inside the box (2 border, 2 indent).
    let note = wrap_words(list.note, 76.min(area.width).saturating_sub(4) as usize);
    let extra = 2 + note.len() as u16 + u16::from(!list.header.is_empty());
    let h = (list.rows.len() as u16 + extra).min(area.height.saturating_sub(2));
    let r = centered(area, 76, h);
    Clear.render(r, buf);
    let b = block(app, list.title);
    let inner = b.inner(r);
    b.render(r, buf);
    let mut lines = Vec::new();
    if !list.header.is_empty() {
        lines.push(Line::styled(format!("  {}", list.header), app.theme.dim));
    }
    let room = (inner.height as usize)
        .saturating_sub(lines.len() + note.len())
        .max(1);
    let start = list.selected.saturating_sub(room - 1);
    for (i, row) in list.rows.iter().enumerate().skip(start).take(room) {
        let style = if i == list.selected {
            app.theme.selected
        } else {
            app.theme.normal
        };
        lines.push(Line::styled(format!("  {row}"), style));
    }
    for part in note {
        lines.push(Line::styled(format!("  {part}"), app.theme.dim));
    }
    Paragraph::new(lines).render(inner, buf);
}

/// What [`list_overlay`] draws.
struct ListView<'a> {
    title: &'a str,
    header: &'a str,
    rows: &'a [String],
    selected: usize,
    note: &'a str,
}

fn choose_overlay(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer, c: &Choices) {
    let list = ListView {
        title: &c.title,
        header: &c.header,
        rows: &c.rows,
        selected: c.selected,
        note: &c.note,
    };
    list_overlay(app, area, buf, list);
}
