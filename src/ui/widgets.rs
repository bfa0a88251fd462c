//! Small pieces every pane draws with: a bordered block in the theme's
//! style, and compact value text for table cells.

use super::app::App;
use crate::model::values::fmt_eng;
use ratatui::text::Line;
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
