//! Named styles: a 16-colour palette by default, a mono one for NO_COLOR
//! (emphasis by bold/reverse/underline only, never by colour alone).

use ratatui::style::{Color, Modifier, Style};
use ratatui::symbols::border;
use ratatui::symbols::Marker;

#[derive(Debug, Clone)]
pub struct Theme {
    pub color: bool,
    pub ascii: bool,
    pub normal: Style,
    pub dim: Style,
    pub title: Style,
    pub group: Style,
    pub selected: Style,
    pub differs: Style,
    pub off_series: Style,
    pub trace_a: Style,
    pub trace_b: Style,
    pub trace_2: Style,
    pub marker: Style,
    pub severe: Style,
    pub warning: Style,
    pub info: Style,
    pub status: Style,
    pub error: Style,
}

pub const ASCII_BORDER: border::Set = border::Set {
    top_left: "+",
    top_right: "+",
    bottom_left: "+",
    bottom_right: "+",
    vertical_left: "|",
    vertical_right: "|",
    horizontal_top: "-",
    horizontal_bottom: "-",
};

impl Theme {
    pub fn new(color: bool, ascii: bool) -> Theme {
        let base = Style::default();
        if color {
            Theme {
                color,
                ascii,
                normal: base,
                dim: base.fg(Color::DarkGray),
                title: base.add_modifier(Modifier::BOLD),
                group: base.fg(Color::Cyan).add_modifier(Modifier::BOLD),
                selected: base.add_modifier(Modifier::REVERSED),
                differs: base.fg(Color::Magenta).add_modifier(Modifier::BOLD),
                off_series: base.fg(Color::Yellow),
                trace_a: base.fg(Color::Green),
                trace_b: base.fg(Color::LightMagenta),
                trace_2: base.fg(Color::Cyan),
                marker: base.fg(Color::Yellow),
                severe: base.fg(Color::Red).add_modifier(Modifier::BOLD),
                warning: base.fg(Color::Yellow),
                info: base.fg(Color::Cyan),
                status: base,
                error: base.fg(Color::Red).add_modifier(Modifier::BOLD),
            }
        } else {
            Theme {
                color,
                ascii,
                normal: base,
                dim: base,
                title: base.add_modifier(Modifier::BOLD),
                group: base.add_modifier(Modifier::BOLD | Modifier::UNDERLINED),
                selected: base.add_modifier(Modifier::REVERSED),
                differs: base.add_modifier(Modifier::BOLD),
                off_series: base.add_modifier(Modifier::UNDERLINED),
                trace_a: base,
                trace_b: base,
                trace_2: base,
                marker: base,
                severe: base.add_modifier(Modifier::BOLD),
                warning: base,
                info: base,
                status: base,
                error: base.add_modifier(Modifier::BOLD),
            }
        }
    }

    pub fn border(&self) -> border::Set<'static> {
        if self.ascii {
            ASCII_BORDER
        } else {
            border::ROUNDED
        }
    }

    /// Marker of the A trace (solid line) and the B trace (dots).
    pub fn markers(&self) -> (Marker, Marker) {
        if self.ascii {
            (Marker::Custom('*'), Marker::Custom('o'))
        } else {
            (Marker::Braille, Marker::Dot)
        }
    }

    /// The frequency cursor: bold in the marker colour (bold alone in mono).
    pub fn cursor(&self) -> Style {
        self.marker.add_modifier(Modifier::BOLD)
    }

    /// Severity symbols: severe, warning, info.
    pub fn symbols(&self) -> [&'static str; 3] {
        if self.ascii {
            ["!! ", "!  ", "i  "]
        } else {
            ["✖ ", "▲ ", "• "]
        }
    }
}

/// Whether the locale can show Unicode (LC_ALL, LC_CTYPE, LANG in that order).
pub fn locale_is_utf8() -> bool {
    for var in ["LC_ALL", "LC_CTYPE", "LANG"] {
        if let Ok(v) = std::env::var(var) {
            if !v.is_empty() {
                let v = v.to_ascii_lowercase();
                return v.contains("utf-8") || v.contains("utf8");
            }
        }
    }
    false
}
