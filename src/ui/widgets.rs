//! Small pieces every pane draws with: a bordered block in the theme's
//! style, compact value text for table cells, a text field's spans and
//! words wrapped to a width.

use super::app::App;
use super::field::Field;
use crate::model::values::fmt_eng;
use ratatui::style::Modifier;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders};

/// A bordered block with a title, in the theme's style.
pub fn block<'a>(app: &App, title: impl Into<Line<'a>>) -> Block<'a> {
    Block::default()
        .borders(Borders::ALL)
        .border_set(app.theme.border())
        .border_style(app.theme.dim)
        .title(title)
        .title_style(app.theme.title)
}

/// Compact text for a value in a table cell (no space before the unit).
pub fn compact(v: f64, unit: &str) -> String {
    fmt_eng(v, unit).replace(' ', "")
}

/// A caption for a border `width` cells wide: its items (split after
/// " · ", ", " and ": ") in order, dropping whole items from the end until
/// it fits with a space each side, so that no number is ever cut. The
/// items come most important first, so what is dropped is the least.
pub fn fitted(text: &str, width: u16) -> String {
    let room = usize::from(width).saturating_sub(4);
    let text = text.trim();
    // Items, each with the separator that ends it.
    let mut items: Vec<&str> = Vec::new();
    let mut rest = text;
    while !rest.is_empty() {
        let cut = [" · ", ", ", ": "]
            .iter()
            .filter_map(|sep| rest.find(sep).map(|i| i + sep.len()))
            .min()
            .unwrap_or(rest.len());
        items.push(&rest[..cut]);
        rest = &rest[cut..];
    }
    let mut out = String::new();
    for item in items {
        let next = format!("{out}{item}");
        if next.trim_end().chars().count() > room {
            break;
        }
        out = next;
    }
    let out = out
        .trim_end()
        .trim_end_matches(['·', ',', ':'])
        .trim_end()
        .to_string();
    if out.is_empty() {
        String::new()
    } else {
        format!(" {out} ")
    }
}

/// A text field: an offered old value underlined (typing replaces it),
/// otherwise the text with the cursor cell in `cursor` style (`_` at the
/// end).
pub fn field_spans(
    field: &Field,
    base: ratatui::style::Style,
    cursor: ratatui::style::Style,
) -> Vec<Span<'static>> {
    if field.offered() {
        return vec![
            Span::styled(field.text(), base.add_modifier(Modifier::UNDERLINED)),
            Span::styled("_", cursor),
        ];
    }
    let (before, at, after) = field.parts();
    vec![
        Span::styled(before, base),
        Span::styled(at.map_or("_".to_string(), String::from), cursor),
        Span::styled(after, base),
    ]
}

/// Text broken at spaces into lines of at most `width` characters (a word
/// longer than that gets a line of its own); at least one line.
pub fn wrap_words(text: &str, width: usize) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        let need = line.chars().count() + usize::from(!line.is_empty()) + word.chars().count();
        if !line.is_empty() && need > width.max(1) {
            out.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    out.push(line);
    out
}
