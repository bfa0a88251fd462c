//! Drawing the amplifier list (`a`): the search line, then each group
//! (built-in, user library, project) with its parts and the files that
//! could not be read, the highlighted part scrolled into view.

use super::app::{App, PartList};
use super::widgets::{block, compact};
use crate::model::part::Origin;
use crate::model::values::printable;
use ratatui::layout::Rect;
use ratatui::text::Line;
use ratatui::widgets::{Clear, Paragraph, Widget};

/// The list's width on a wide screen.
const WIDTH: u16 = 76;

/// Cut text to `n` characters (an ellipsis marks the cut).
fn cut(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(n.saturating_sub(1)).collect();
        t.push('…');
        t
    }
}

pub fn draw(app: &App, area: Rect, buf: &mut ratatui::buffer::Buffer, list: &PartList) {
    let w = WIDTH.min(area.width);
    let shown = list.shown();
    // Tall enough for every line when the screen has room (search line,
    // three group titles, the rows, the unreadable files, the note).
    let want = 2 + 4 + 3 + shown.len().max(3) + list.lib.bad.len();
    let h = (want as u16).min(area.height.saturating_sub(2)).max(3);
    let r = Rect {
        x: area.x + (area.width - w) / 2,
        y: area.y + (area.height - h) / 2,
        width: w,
        height: h,
    };
    Clear.render(r, buf);
    let b = block(app, " Amplifier: parts (type to search, ↑↓ Enter, Esc) ");
    let inner = b.inner(r);
    b.render(r, buf);
    let room = inner.width as usize;
    let (lines, at) = group_lines(app, list, &shown, room);
    let search = format!(
        "search: {}▏  {} of {} parts",
        printable(&list.filter),
        shown.len(),
        list.lib.parts.len()
    );
    let note = "Enter sets every amplifier field · outside the list, A saves it as a part";
    // The search line, the note, and as many list lines as fit.
    let fit = (inner.height as usize).saturating_sub(2).max(1);
    let start = at
        .saturating_sub(fit - 1)
        .min(lines.len().saturating_sub(fit));
    let mut out = vec![Line::styled(cut(&search, room), app.theme.title)];
    out.extend(lines.into_iter().skip(start).take(fit));
    while out.len() < fit + 1 {
        out.push(Line::raw(""));
    }
    out.push(Line::styled(cut(note, room), app.theme.dim));
    Paragraph::new(out).render(inner, buf);
}

/// A group's title: its origin and, for the folders, where it is.
fn group_title(list: &PartList, origin: Origin) -> String {
    let folder = match origin {
        Origin::BuiltIn => None,
        Origin::User => Some(
            list.lib
                .user_dir
                .as_ref()
                .map_or("none".into(), |d| d.display().to_string()),
        ),
        Origin::Project => list
            .lib
            .project_dir
            .as_ref()
            .map(|d| d.display().to_string()),
    };
    match folder {
        Some(f) => format!("{} ({})", origin.title(), printable(&f)),
        None => origin.title().to_string(),
    }
}

/// Every line below the search line (each group: its title, its shown
/// parts, its unreadable files) and which one is highlighted.
fn group_lines<'a>(
    app: &App,
    list: &PartList,
    shown: &[usize],
    room: usize,
) -> (Vec<Line<'a>>, usize) {
    let mut lines: Vec<Line> = Vec::new();
    let mut at = 0;
    for origin in Origin::ALL {
        lines.push(Line::styled(
            cut(&group_title(list, origin), room),
            app.theme.group,
        ));
        let mut any = false;
        for (k, &i) in shown.iter().enumerate() {
            let f = &list.lib.parts[i];
            if f.origin != origin {
                continue;
            }
            any = true;
            let p = &f.part;
            let row = format!(
                "  {:<26} {:<15} gbw {:>7}  en {:>6}/√Hz",
                cut(&printable(&p.name), 26),
                cut(&printable(&p.class), 15),
                compact(p.amp.gbw, "Hz"),
                compact(p.amp.vnoise, "V")
            );
            let style = if k == list.selected {
                at = lines.len();
                app.theme.selected
            } else {
                app.theme.normal
            };
            lines.push(Line::styled(cut(&row, room), style));
        }
        for bad in list.lib.bad.iter().filter(|b| b.origin == origin) {
            any = true;
            let text = printable(&bad.error.to_string());
            lines.push(Line::styled(
                cut(&format!("  ! {text}"), room),
                app.theme.error,
            ));
        }
        if !any {
            let none = if list.filter.is_empty() {
                "  (none)"
            } else {
                "  (no match)"
            };
            lines.push(Line::styled(none, app.theme.dim));
        }
    }
    (lines, at)
}
