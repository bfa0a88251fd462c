//! The cursor readout: one line per stage under the plots with the values
//! at the frequency cursor (the figures of `report --at` there).

use super::app::App;
use crate::engine::values::{fmt_eng_sig, fmt_fixed};
use crate::report::PointReport;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

fn eng(v: f64, unit: &str) -> String {
    fmt_eng_sig(v, unit, 3).replace(' ', "")
}

/// The readout's parts for one stage, most important first.
pub fn parts(r: &PointReport) -> Vec<String> {
    let db = |m: f64| fmt_fixed(20.0 * m.log10(), 1);
    let deg = |p: Option<f64>| p.map_or(String::new(), |p| format!(" ∠{}°", fmt_fixed(p, 1)));
    let mut out = Vec::new();
    if let Some(g) = r.gain_mag {
        out.push(format!("gain {}dB{}", db(g), deg(r.gain_phase_deg)));
    }
    if let Some(l) = r.loop_mag {
        out.push(format!("loop {}dB{}", db(l), deg(r.loop_phase_deg)));
    }
    if let Some(z) = r.zout_mag {
        out.push(format!("|Zout| {}", eng(z, "Ω")));
    }
    out.push(match r.zin_mag {
        Some(z) => format!("|Zin| {}", eng(z, "Ω")),
        None => "|Zin| open".into(),
    });
    if let Some(n) = r.noise_density {
        out.push(format!("en {}", eng(n, "V/√Hz")));
    }
    out
}

/// Each stage's line: its label, the cursor, then as many parts as fit.
pub fn draw(app: &App, area: Rect, buf: &mut Buffer) {
    let width = area.width as usize;
    for (i, slot) in app.slots.iter().enumerate() {
        if i as u16 >= area.height {
            break;
        }
        let head = format!("{} @ {}", App::slot_label(i), eng(app.probe_hz, "Hz"));
        let mut text = head.clone();
        if let Some(r) = &slot.readout {
            for p in parts(r) {
                if text.chars().count() + 3 + p.chars().count() > width {
                    break;
                }
                text = format!("{text} · {p}");
            }
        }
        let rest = text[head.len()..].to_string();
        let line = Line::from(vec![
            Span::styled(head, app.theme.marker),
            Span::styled(rest, app.theme.normal),
        ]);
        let row = Rect {
            y: area.y + i as u16,
            height: 1,
            ..area
        };
        Paragraph::new(line).render(row, buf);
    }
}
