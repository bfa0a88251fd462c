//! The amplifier list (`a`): every part of the library grouped by where
//! it was found (built-in, user library, project), narrowed by typing;
//! Enter applies the highlighted part (every amplifier field, one
//! undoable change, and says which changed). `A` saves the edited
//! amplifier as a part: it asks the name, then where (project or user
//! library), and never replaces a file without a yes.

use super::{App, Mode, Prompt};
use crate::files::parts::{file_name, project_dir, save_part, Library};
use crate::model::part::{amp_values, changed_fields, Origin, Part};
use crate::ui::field::Field;
use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use std::path::PathBuf;

/// The open amplifier list.
#[derive(Debug, Clone, PartialEq)]
pub struct PartList {
    pub lib: Library,
    /// The search text typed so far.
    pub filter: String,
    /// The highlighted entry, an index into [`PartList::shown`].
    pub selected: usize,
}

impl PartList {
    /// The parts the search text matches (every word, letter case aside,
    /// in the name, the class or the group), in group order: built-in,
    /// user library, project.
    pub fn shown(&self) -> Vec<usize> {
        let words: Vec<String> = self
            .filter
            .split_whitespace()
            .map(str::to_lowercase)
            .collect();
        let mut out = Vec::new();
        for origin in Origin::ALL {
            for (i, f) in self.lib.parts.iter().enumerate() {
                if f.origin != origin {
                    continue;
                }
                let hay =
                    format!("{} {} {}", f.part.name, f.part.class, origin.title()).to_lowercase();
                if words.iter().all(|w| hay.contains(w.as_str())) {
                    out.push(i);
                }
            }
        }
        out
    }
}

/// Where `A` saves a part.
#[derive(Debug, Clone, PartialEq)]
pub struct SaveTarget {
    pub part: Part,
    pub dir: PathBuf,
    pub origin: Origin,
}

/// The status line's room on an 80-column screen.
const STATUS_ROOM: usize = 78;

/// "changed a0, gbw, …" naming as many fields as fit in `room`
/// characters, then "+N more"; "nothing changed" for none.
pub fn changed_text(changed: &[&str], room: usize) -> String {
    if changed.is_empty() {
        return "nothing changed".into();
    }
    let mut out = format!("changed {}", changed[0]);
    for (i, f) in changed.iter().enumerate().skip(1) {
        let left = changed.len() - i - 1;
        let tail = if left > 0 {
            format!(" +{left} more")
        } else {
            String::new()
        };
        if out.chars().count() + 2 + f.len() + tail.len() > room {
            out += &format!(" +{} more", changed.len() - i);
            return out;
        }
        out += &format!(", {f}");
    }
    out
}

impl App {
    /// The project library of the edited stage: `parts/` beside its file.
    fn project_parts(&self) -> PathBuf {
        project_dir(self.slot().path.as_deref())
    }

    /// `a`: read the library afresh and open the list.
    pub(super) fn start_parts(&mut self) {
        let lib = Library::gather(self.user_parts.as_deref(), Some(&self.project_parts()));
        let bad = lib.bad.len();
        // Start on the part last applied, when it is still there.
        let list = PartList {
            lib,
            filter: String::new(),
            selected: 0,
        };
        let selected = self
            .last_part
            .as_ref()
            .and_then(|p| {
                list.shown()
                    .iter()
                    .position(|&i| list.lib.parts[i].part.name == p.name)
            })
            .unwrap_or(0);
        self.mode = Mode::Parts(Box::new(PartList { selected, ..list }));
        let mut msg =
            "amplifier: type to search, ↑↓ choose, Enter applies, Esc cancels".to_string();
        if bad > 0 {
            msg += &format!(" ({bad} part file(s) could not be read: listed with their errors)");
        }
        self.info(msg);
    }

    pub(super) fn on_parts_key(&mut self, key: KeyEvent, mut list: Box<PartList>) {
        let n = list.shown().len();
        match key.code {
            KeyCode::Esc => return self.info("amplifier unchanged"),
            KeyCode::Enter => {
                let shown = list.shown();
                match shown.get(list.selected) {
                    Some(&i) => {
                        let f = list.lib.parts[i].clone();
                        return self.apply_part(f.part);
                    }
                    None => {
                        self.mode = Mode::Parts(list);
                        return self.error("no part matches the search: Backspace widens it");
                    }
                }
            }
            KeyCode::Up => list.selected = list.selected.saturating_sub(1),
            KeyCode::Down => list.selected = (list.selected + 1).min(n.saturating_sub(1)),
            KeyCode::PageUp => list.selected = list.selected.saturating_sub(10),
            KeyCode::PageDown => list.selected = (list.selected + 10).min(n.saturating_sub(1)),
            KeyCode::Backspace => {
                list.filter.pop();
                list.selected = 0;
            }
            KeyCode::Char('u') if key.modifiers.contains(KeyModifiers::CONTROL) => {
                list.filter.clear();
                list.selected = 0;
            }
            KeyCode::Char(c)
                if !key.modifiers.contains(KeyModifiers::CONTROL)
                    && list.filter.chars().count() < 40 =>
            {
                list.filter.push(c);
                list.selected = 0;
            }
            _ => {}
        }
        self.mode = Mode::Parts(list);
    }

    /// Set every amplifier field from a part, as one undoable change, and
    /// say which fields changed.
    pub(super) fn apply_part(&mut self, part: Part) {
        let before = self.slot().scenario.clone();
        let amp = part.amp.clone();
        if !self.apply_change("amplifier", |s| {
            s.amp = amp;
            Ok(())
        }) {
            return;
        }
        let changed = changed_fields(&before, &self.slot().scenario);
        let slot = Self::slot_label(self.active);
        let head = format!(
            "{slot}: {} set; ",
            crate::model::values::printable(&part.name)
        );
        self.info(
            head.clone()
                + &changed_text(&changed, STATUS_ROOM.saturating_sub(head.chars().count())),
        );
        self.last_part = Some(part);
    }

    /// `A`: ask the part's name (the last applied part's offered).
    pub(super) fn start_save_part(&mut self) {
        let offer = self
            .last_part
            .as_ref()
            .map(|p| p.name.clone())
            .unwrap_or_default();
        self.pending_part = None;
        self.mode = Mode::Prompt(Prompt::PartName, Field::offering(&offer));
        self.info("save the amplifier as a part: type its name; Enter goes on, Esc cancels");
    }

    /// The name typed: ask where.
    pub(super) fn part_named(&mut self, name: &str) {
        let name = name.trim();
        if name.is_empty() {
            return self.error("a part needs a name (not saved)");
        }
        if let Some(part) = self.pending_part.take() {
            // `A` of the datasheet form: the derived amplifier and its notes.
            let name = name.to_string();
            return self.ask_part_place(Part { name, ..part });
        }
        let s = &self.slot().scenario;
        // Notes of the last applied part stay with the values they were about.
        let notes = self
            .last_part
            .as_ref()
            .map(|p| {
                let mut was = crate::files::load::demo();
                was.amp = p.amp.clone();
                let old = amp_values(&was);
                let now = amp_values(s);
                p.notes
                    .iter()
                    .filter(|(k, _)| {
                        let get =
                            |l: &[(&str, f64)]| l.iter().find(|(f, _)| f == k).map(|(_, v)| *v);
                        get(&old) == get(&now)
                    })
                    .map(|(k, v)| (k.clone(), v.clone()))
                    .collect()
            })
            .unwrap_or_default();
        let class = self
            .last_part
            .as_ref()
            .map(|p| p.class.clone())
            .unwrap_or_default();
        let part = Part {
            name: name.to_string(),
            class,
            amp: s.amp.clone(),
            notes,
        };
        self.ask_part_place(part);
    }

    /// Ask where the part goes: project or user library.
    fn ask_part_place(&mut self, part: Part) {
        self.mode = Mode::PartWhere(Box::new(part));
        let user = match &self.user_parts {
            Some(d) => crate::model::values::printable(&d.display().to_string()),
            None => "none: set LOOPWRIGHT_PARTS".into(),
        };
        self.info(format!(
            "save where? p = project ({}), u = user library ({user}), Esc cancels",
            self.project_parts().display()
        ));
    }

    pub(super) fn on_part_where_key(&mut self, key: KeyEvent, part: Box<Part>) {
        let (origin, dir) =
            match key.code {
                KeyCode::Char('p') | KeyCode::Char('P') => (Origin::Project, self.project_parts()),
                KeyCode::Char('u') | KeyCode::Char('U') => match self.user_parts.clone() {
                    Some(d) => (Origin::User, d),
                    None => return self.error(
                        "no user library folder (no home folder): set LOOPWRIGHT_PARTS; not saved",
                    ),
                },
                _ => return self.info("part not saved"),
            };
        let target = SaveTarget {
            part: *part,
            dir,
            origin,
        };
        let path = target.dir.join(file_name(&target.part.name));
        if std::fs::symlink_metadata(&path).is_ok() {
            self.error(format!(
                "{} exists: replace it? y = replace, any other key = keep it",
                path.display()
            ));
            self.mode = Mode::PartReplace(Box::new(target));
            return;
        }
        self.write_part(target, false);
    }

    pub(super) fn on_part_replace_key(&mut self, key: KeyEvent, target: Box<SaveTarget>) {
        match key.code {
            KeyCode::Char('y') | KeyCode::Char('Y') => self.write_part(*target, true),
            _ => self.info("part not saved: the file is kept"),
        }
    }

    fn write_part(&mut self, t: SaveTarget, replace: bool) {
        match save_part(&t.dir, &t.part, replace) {
            Ok(path) => {
                self.info(format!(
                    "part {} saved in the {} library: {}",
                    crate::model::values::printable(&t.part.name),
                    t.origin.title(),
                    path.display()
                ));
                self.last_part = Some(t.part);
            }
            Err(e) => self.error(format!("part not saved: {e}")),
        }
    }
}
