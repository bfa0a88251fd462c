//! The workbench's design-helper lists: resistor pairs for a typed gain
//! (`r`) and the stabilising options (`m`), shown in one list overlay;
//! Enter applies the highlighted row as one undoable change.

use super::{App, Mode, Prompt};
use crate::model::scenario::Topology;
use crate::model::values::{fmt_eng, fmt_plain, parse_value};
use crate::output::helper_tables;
use crate::output::tighten_text;
use crate::study::pairs::{self, Query};
use crate::study::stabilize::{self, Part};
use crate::study::tighten::{Tightening, MAX_PARTS};
use crate::ui::field::Field;
use ratatui::crossterm::event::{KeyCode, KeyEvent};

/// What Enter applies from a helper's list.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pick {
    /// rg and rf, as one change.
    Pair { rg: f64, rf: f64 },
    /// riso or cf.
    Part(Part, f64),
    /// Parts' own tolerances (`stage.part_tolerance`), as one change.
    Tolerances([Option<(&'static str, f64)>; MAX_PARTS]),
}

/// A design helper's list: aligned rows (a header first), what each row
/// applies and the highlighted one.
#[derive(Debug, Clone, PartialEq)]
pub struct Choices {
    pub title: String,
    pub header: String,
    pub rows: Vec<String>,
    pub picks: Vec<Pick>,
    pub selected: usize,
    /// A line under the rows.
    pub note: String,
}

impl Choices {
    /// A list from a header and rows of cells (aligned together).
    fn new(title: String, header: &[&str], cells: &[Vec<String>], picks: Vec<Pick>) -> Choices {
        let mut lines = crate::output::helper_tables::table(header, cells).into_iter();
        Choices {
            title,
            header: lines.next().unwrap_or_default(),
            rows: lines.collect(),
            picks,
            selected: 0,
            note: String::new(),
        }
    }
}

/// What a key does in a list overlay.
pub(super) enum ListKey {
    Move(usize),
    Apply,
    Leave,
}

/// ↑↓ (k j) move within `len` rows, Enter applies, any other key leaves.
pub(super) fn list_key(key: &KeyEvent, sel: usize, len: usize) -> ListKey {
    match key.code {
        KeyCode::Up | KeyCode::Char('k') => ListKey::Move(sel.saturating_sub(1)),
        KeyCode::Down | KeyCode::Char('j') => ListKey::Move((sel + 1).min(len.saturating_sub(1))),
        KeyCode::Enter => ListKey::Apply,
        _ => ListKey::Leave,
    }
}

impl App {
    /// `r`: ask for the target gain (the stage's own gain offered).
    pub(super) fn start_pairs(&mut self) {
        let s = &self.slot().scenario;
        if !s.stage.topology.has_resistors() {
            let what = match s.stage.topology {
                Topology::Follower => "a follower has no rg or rf".to_string(),
                t => format!("a {} stage has nothing to pair", t.name()),
            };
            self.error(format!(
                "{what}: resistor pairs are for {} stages",
                Topology::with_resistors(" and ")
            ));
            return;
        }
        // The spec's aim when it gives one, else the gain the ratio names.
        let aim = s.spec.as_ref().and_then(|x| x.gain_target);
        let gain = aim.unwrap_or(self.slot().eval.analysis.nominal_gain);
        let now = fmt_plain(gain.abs(), 6);
        self.mode = Mode::Prompt(Prompt::Gain, Field::offering(&now));
        self.info("target gain (the magnitude, e.g. 11); Enter lists resistor pairs, Esc cancels");
    }

    /// The best pairs for a typed gain on the stage's series and topology.
    pub(super) fn list_pairs(&mut self, text: &str) {
        let target = match parse_value(text) {
            Ok(v) => v,
            Err(e) => return self.error(format!("{e} (no pairs listed)")),
        };
        let s = &self.slot().scenario;
        // The stage's own source resistance and load divider: the gains
        // listed are what this stage would give with each pair.
        let q = Query {
            series: s.stage.series,
            topology: s.stage.topology,
            source_r: s.source.r.unwrap_or(0.0),
            riso: s.stage.riso.unwrap_or(0.0),
            load_r: s.load.r,
            ..Query::new(target)
        };
        let found = match pairs::find(&q) {
            Ok(found) => found,
            Err(p) => return self.error(format!("gain {}: {p} (no pairs listed)", text.trim())),
        };
        let cells: Vec<Vec<String>> = found.iter().map(helper_tables::pair_cells).collect();
        let picks = found
            .iter()
            .map(|p| Pick::Pair { rg: p.rg, rf: p.rf })
            .collect();
        let title = format!(
            " Pairs for gain {} ({}, rg {} to {}; ↑↓ Enter, Esc) ",
            fmt_plain(target, 6),
            q.series,
            fmt_eng(q.rg_range.0, "Ω"),
            fmt_eng(q.rg_range.1, "Ω")
        );
        let header = helper_tables::pair_header(q.topology);
        let mut list = Choices::new(title, &header, &cells, picks);
        let mut notes = helper_tables::surroundings(&q);
        notes.push("closest gain first; ties: lower resistor noise, then lower load".into());
        list.note = notes.join("; ");
        self.mode = Mode::Choose(list);
        self.info("resistor pairs: ↑↓ choose, Enter applies rg and rf, Esc cancels");
    }

    /// `m`: the stabilising options of the edited stage at 60°.
    pub(super) fn list_fixes(&mut self) {
        let target = stabilize::DEFAULT_MARGIN_DEG;
        let o = match stabilize::options(&self.slot().scenario, target) {
            Ok(o) => o,
            Err(e) => return self.error(e.to_string()),
        };
        if let Some(reason) = o.reason() {
            return self.error(reason);
        }
        let cells: Vec<Vec<String>> = o.options.iter().map(helper_tables::fix_cells).collect();
        let picks = o
            .options
            .iter()
            .map(|f| Pick::Part(f.part, f.value))
            .collect();
        // A stage that already meets the target says so first.
        let title = match o.already_met {
            true => format!(" Already meets {target}°: no change needed; options (↑↓ Enter, Esc) "),
            false => format!(" Stabilising options for {target}° (↑↓ Enter, Esc) "),
        };
        let mut list = Choices::new(title, &helper_tables::fix_header(&o), &cells, picks);
        let mut notes = vec![helper_tables::margin_now_text(&o)];
        notes.extend(helper_tables::notes_after(&o));
        list.note = notes.join("; ");
        self.mode = Mode::Choose(list);
        self.info("stabilising options: ↑↓ choose, Enter applies the part, Esc cancels");
    }

    /// `T`: start the search for the tolerance upgrades that reach the
    /// spec's yield (on its own thread: seconds on a large stage); its
    /// list opens when it ends.
    pub(super) fn list_tightening(&mut self) {
        let s = &self.slot().scenario;
        if s.spec.is_none() {
            return self.error("no spec: give limits and spec.yield_min to tighten towards");
        }
        let s = s.clone();
        self.tightening.start(&s);
        self.info("tightening: searching (Esc cancels)");
    }

    /// The search's options as a list, as `tighten` prints them.
    pub(super) fn show_tightening(&mut self, t: Tightening) {
        let lines = tighten_text::summary(&t);
        if t.choices.is_empty() {
            return self.error(lines.join("; "));
        }
        let picks = t
            .choices
            .iter()
            .map(|c| {
                let mut p = [None; MAX_PARTS];
                for (slot, u) in p.iter_mut().zip(&c.upgrades) {
                    *slot = Some((u.part, u.to));
                }
                Pick::Tolerances(p)
            })
            .collect();
        let title = format!(
            " Tighten to a yield of {} (↑↓ Enter, Esc) ",
            fmt_plain(100.0 * t.now.yield_min, 4) + " %"
        );
        let mut list = Choices::new(
            title,
            &["option", "tighten", "yield"],
            &tighten_text::rows(&t),
            picks,
        );
        list.note = format!(
            "yield now {} %; each option verified by {} trials with the stage's seed",
            fmt_plain(100.0 * t.now.yield_frac.unwrap_or(0.0), 4),
            crate::study::tighten::RUN_TRIALS
        );
        self.mode = Mode::Choose(list);
        self.info("tolerance upgrades: ↑↓ choose, Enter sets the parts' tolerances, Esc cancels");
    }

    /// Apply one row of a helper's list as one change (one undo step).
    pub(super) fn apply_pick(&mut self, pick: Pick) {
        let label = Self::slot_label(self.active);
        let done = match pick {
            Pick::Pair { rg, rf } => {
                let pairs = self.slot().scenario.stage.topology.kind().pairs;
                let [a, b] = pairs.map_or(["rg", "rf"], |p| p.names());
                self.change("resistor pair", |s| {
                    if let Some(p) = s.stage.topology.kind().pairs {
                        for [x, y] in std::iter::once(p.parts).chain(p.also) {
                            param_set(s, x, rg);
                            param_set(s, y, rf);
                        }
                    }
                    Ok(())
                });
                format!("{a} {}, {b} {}", fmt_eng(rg, "Ω"), fmt_eng(rf, "Ω"))
            }
            Pick::Part(part, v) => {
                self.change(part.name(), |s| {
                    *s = part.applied(s, v);
                    Ok(())
                });
                format!("{} {}", part.name(), fmt_eng(v, part.unit()))
            }
            Pick::Tolerances(p) => {
                let set: Vec<(&str, f64)> = p.iter().flatten().copied().collect();
                self.change("part tolerances", |s| {
                    for (name, t) in &set {
                        s.stage.part_tolerance.set(name, Some(*t));
                    }
                    Ok(())
                });
                let items: Vec<String> = set
                    .iter()
                    .map(|(n, t)| format!("{n} ±{}%", fmt_plain(100.0 * t, 3)))
                    .collect();
                items.join(", ")
            }
        };
        if self.status_kind == super::StatusKind::Info {
            self.info(format!("{label}: {done} (Backspace takes it back)"));
        }
    }
}

/// Set one parameter of a stage by its path.
fn param_set(s: &mut crate::model::scenario::Scenario, path: &str, v: f64) {
    if let Some(p) = crate::model::params::param(path) {
        p.set(s, Some(v));
    }
}
