//! Drawing the datasheet form (`d`): the rows of figures on the left
//! (grouped, the selected one scrolled into view, its value's entry in
//! place), the amplifier derived from them on the right, each value with
//! its formula and inputs (those the selected figure gives highlighted and
//! scrolled into view), or why the figures give none; the keys under them.

use super::app::{sheet_rows, App, SheetForm};
use super::widgets::{block, field_spans, wrap_words};
use crate::model::datasheet::Derivation;
use crate::model::values::fmt_eng_sig;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::text::{Line, Span};
use ratatui::widgets::{Clear, Paragraph, Widget};

/// The keys, long and short (the short one fits 80 columns).
const KEYS_WIDE: &str =
    "↑↓ row · type or Enter: edit · Del clears · ← → choice · a applies · A saves as a part · o loads a file · Esc leaves";
const KEYS_NARROW: &str = "↑↓ Enter/type · Del clears · a applies · A saves part · o file · Esc";

pub fn draw(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer, form: &SheetForm) {
    // The whole screen: the form shows the messages itself, wrapped.
    let r = area;
    Clear.render(r, buf);
    let b = block(app, " Amplifier from datasheet figures ");
    let inner = b.inner(r);
    b.render(r, buf);
    let message = match app.status.is_empty() {
        true => Vec::new(),
        false => wrap_words(&app.status, usize::from(inner.width)),
    };
    let style = match app.status_kind {
        super::app::StatusKind::Error => app.theme.error,
        super::app::StatusKind::Info => app.theme.status,
    };
    let foot_h = 1 + message.len().min(3) as u16;
    let [body, foot] =
        Layout::vertical([Constraint::Fill(1), Constraint::Length(foot_h)]).areas(inner);
    let left_w = if inner.width >= 110 { 44 } else { 38 };
    let [left, gap, right] = Layout::horizontal([
        Constraint::Length(left_w),
        Constraint::Length(1),
        Constraint::Fill(1),
    ])
    .areas(body);
    form_rows(app, left, buf, form);
    for y in gap.y..gap.y + gap.height {
        buf[(gap.x, y)].set_symbol("│").set_style(app.theme.dim);
    }
    derived(app, right, buf, form);
    let keys = match &form.loading {
        Some(f) => {
            let mut spans = vec![Span::styled("figures file: ", app.theme.title)];
            spans.extend(field_spans(f, app.theme.normal, app.theme.selected));
            Line::from(spans)
        }
        None if usize::from(foot.width) >= KEYS_WIDE.chars().count() => {
            Line::styled(KEYS_WIDE, app.theme.dim)
        }
        None => Line::styled(KEYS_NARROW, app.theme.dim),
    };
    let mut lines: Vec<Line> = message
        .into_iter()
        .take(3)
        .map(|l| Line::styled(l, style))
        .collect();
    lines.push(keys);
    Paragraph::new(lines).render(foot, buf);
}

/// The rows under their group headings, the selected one in view.
fn form_rows(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer, form: &SheetForm) {
    let t = &app.theme;
    let mut lines: Vec<Line> = Vec::new();
    let mut at = 0;
    for (i, r) in sheet_rows().iter().enumerate() {
        if !r.group.is_empty() {
            lines.push(Line::styled(r.group, t.group));
        }
        let selected = i == form.selected;
        let style = if selected { t.selected } else { t.normal };
        let mut spans = vec![Span::styled(format!(" {:<17} ", r.label), style)];
        match (&form.typing, selected) {
            (Some(f), true) => {
                spans.extend(field_spans(f, t.normal, t.selected));
                spans.push(Span::styled(format!(" {}", r.unit), t.dim));
            }
            _ => {
                let shown = form.shown(r);
                match shown.is_empty() {
                    true => spans.push(Span::styled("—", t.dim)),
                    false => spans.push(Span::styled(shown, style)),
                }
            }
        }
        if selected {
            at = lines.len();
        }
        lines.push(Line::from(spans));
    }
    let h = usize::from(area.height).max(1);
    let start = at.saturating_sub(h / 2).min(lines.len().saturating_sub(h));
    let shown: Vec<Line> = lines.into_iter().skip(start).take(h).collect();
    Paragraph::new(shown).render(area, buf);
}

/// The derived values with their formulas, or why there are none.
fn derived(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer, form: &SheetForm) {
    let t = &app.theme;
    let width = usize::from(area.width).saturating_sub(2).max(8);
    let lines: Vec<Line> = match form.derivation() {
        Err(p) => {
            let mut out = vec![Line::styled("no amplifier from these figures:", t.error)];
            for l in wrap_words(&format!("{}: {}", p.field, p.message), width + 1) {
                out.push(Line::styled(l, t.error));
            }
            out
        }
        Ok(d) => return derived_values(app, area, buf, form, &d),
    };
    Paragraph::new(lines).render(area, buf);
}

fn derived_values(
    app: &App,
    area: Rect,
    buf: &mut ratatui::buffer::Buffer,
    form: &SheetForm,
    d: &Derivation,
) {
    let t = &app.theme;
    let width = usize::from(area.width).saturating_sub(2).max(8);
    let given = match d.given {
        "gbw" => "gbw given",
        _ => "f_u given",
    };
    let head = Line::styled(format!("the amplifier, live ({given}):"), t.title);
    let mut lines = Vec::new();
    let mut first = None;
    for v in &d.values {
        let linked = form.from_selected(v);
        if linked && first.is_none() {
            first = Some(lines.len());
        }
        let unit = crate::model::params::param(&format!("amp.{}", v.field)).map_or("", |p| p.unit);
        let style = if linked { t.selected } else { t.normal };
        lines.push(Line::styled(
            format!("{} = {}", v.field, fmt_eng_sig(v.value, unit, 4)),
            style,
        ));
        for l in wrap_words(&v.how, width) {
            lines.push(Line::styled(format!("  {l}"), t.dim));
        }
    }
    // The heading stays; the values scroll to those of the selected figure.
    let h = usize::from(area.height).saturating_sub(1).max(1);
    let start = first.unwrap_or(0).min(lines.len().saturating_sub(h));
    let mut shown = vec![head];
    shown.extend(lines.into_iter().skip(start).take(h));
    Paragraph::new(shown).render(area, buf);
}
