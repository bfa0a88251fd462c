//! The cursor readout: one line per stage under the plots with the values
//! at the frequency cursor (the figures of `report --at` there).

use super::app::App;
use crate::judge::figures::Reading;
use crate::model::stages::GainUnit;
use crate::model::values::fmt_fixed;
use crate::output::report::PointReport;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

use super::widgets::compact as eng;

/// The readout's parts for one stage, most important first (a line too
/// narrow drops whole parts from the end: |Zin|, then |Zout|); the gain's
/// level in its unit (dB, or dBΩ for a transimpedance).
pub fn parts(r: &PointReport, unit: GainUnit) -> Vec<String> {
    let db = |m: f64| fmt_fixed(20.0 * m.log10(), 1);
    let deg = |p: Option<f64>, d| {
        p.map_or(String::new(), |p| {
            format!("∠{}{}", fmt_fixed(p, d), crate::model::values::spelled("°"))
        })
    };
    let mut out = Vec::new();
    if let Some(g) = r.gain_mag {
        let u = crate::model::values::spelled(unit.db());
        out.push(format!("gain {}{u}{}", db(g), deg(r.gain_phase_deg, 1)));
    }
    // Two inputs: the CMRR there (an unbounded one in the figure's word).
    if let Some(c) = r.cmrr_db {
        let cmrr = crate::judge::figures::figure("cmrr_dc_db").map(|f| match c {
            Some(v) => f.cell(Reading::Value(v), false),
            None => f.undefined_word().into(),
        });
        out.push(format!("CMRR {}", cmrr.unwrap_or_default()));
    }
    if let Some(l) = r.loop_mag {
        out.push(format!("loop {}dB{}", db(l), deg(r.loop_phase_deg, 0)));
    }
    if let Some(n) = r.noise_density {
        out.push(format!("en {}", eng(n, "V/√Hz")));
    }
    if let Some(z) = r.zout_mag {
        out.push(format!("Zout {}", eng(z, "Ω")));
    }
    out.push(match r.zin_mag {
        Some(z) => format!("Zin {}", eng(z, "Ω")),
        None => "Zin open".into(),
    });
    out
}

/// The head and the parts joined by the widest separator that lets all
/// of them fit; else single spaces and as many parts as fit.
fn fit(head: &str, parts: &[String], width: usize) -> String {
    let len = |sep: &str| {
        head.chars().count()
            + parts
                .iter()
                .map(|p| sep.chars().count() + p.chars().count())
                .sum::<usize>()
    };
    let sep = [" · ", "  "]
        .into_iter()
        .find(|s| len(s) <= width)
        .unwrap_or(" ");
    let mut text = head.to_string();
    for p in parts {
        if text.chars().count() + sep.chars().count() + p.chars().count() > width {
            break;
        }
        text = format!("{text}{sep}{p}");
    }
    text
}

/// Each stage's line: its label, the cursor, then as many parts as fit.
pub fn draw(app: &App, area: Rect, buf: &mut Buffer) {
    let width = area.width as usize;
    for (i, slot) in app.slots.iter().enumerate() {
        if i as u16 >= area.height {
            break;
        }
        let head = format!("{} @ {}", App::slot_label(i), eng(app.probe_hz, "Hz"));
        let unit = slot.eval.analysis.gain_unit;
        let parts = slot
            .readout
            .as_ref()
            .map(|r| parts(r, unit))
            .unwrap_or_default();
        let text = fit(&head, &parts, width);
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
