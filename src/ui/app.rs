//! The workbench model: one or two candidate stages (A and B), each with
//! its analysis and plot-ready traces, plus the selection, mode and status.
//! `on_key` is the only way state changes; the view only reads.

use super::field::Field;
use super::keys::{self, Action, FieldAction, FieldKey};
use super::theme::Theme;
use crate::engine::analysis::{Circuit, Point};
use crate::files::storage::{self, Original};
pub use crate::files::storage::{leading_comments, write_atomic};
use crate::judge::{evaluate, evaluate_with, Evaluation};
use crate::model::params::{self, param, Direction, ParamRef, PARAMS};
use crate::model::scenario::{Amp, Scenario};
use crate::model::values;
pub use crate::output::traces::Traces;
use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyEventKind};
use serde::Deserialize;
use std::path::{Path, PathBuf};

mod cursor;
mod helper_lists;
mod part_list;
mod sheet_form;
use helper_lists::{list_key, ListKey};
pub use helper_lists::{Choices, Pick};
pub use part_list::{changed_text, PartList, SaveTarget};
pub use sheet_form::{rows as sheet_rows, Entry as SheetEntry, Row as SheetRow, SheetForm};

/// Which plot the upper right panel shows: a view of the registry that
/// the workbench shows (`v` steps through them).
pub use crate::output::views::ViewId;

/// Where the workbench writes a figure of `view`: `STEM-VIEW.svg` beside
/// the stage's file (`loopwright-VIEW.svg` here for a stage without one),
/// or `STEM-VIEW-2.svg` and on when that name is taken.
pub fn figure_path(stage: Option<&Path>, view: &str) -> PathBuf {
    let dir = stage
        .and_then(|p| p.parent())
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let stem = stage
        .and_then(|p| p.file_stem())
        .map_or("loopwright".into(), |s| s.to_string_lossy().into_owned());
    let mut path = dir.join(format!("{stem}-{view}.svg"));
    for n in 2..10_000 {
        if std::fs::symlink_metadata(&path).is_err() {
            break;
        }
        path = dir.join(format!("{stem}-{view}-{n}.svg"));
    }
    path
}

/// One candidate stage and everything derived from it.
#[derive(Debug, Clone)]
pub struct Slot {
    pub scenario: Scenario,
    /// The figures and warnings of `scenario`.
    pub eval: Evaluation,
    pub traces: Traces,
    /// The solved point at the chosen probe frequency.
    pub probe: Option<Point>,
    /// The cursor readout there: the figures of `report --at`.
    pub readout: Option<crate::output::report::PointReport>,
    pub path: Option<PathBuf>,
    pub dirty: bool,
    /// The stage as loaded or last saved (None for a copy, never saved):
    /// a stage edited back to it is no longer unsaved.
    pub saved: Option<Scenario>,
    /// The file's text and stamp as loaded (or last saved): saving patches
    /// the changed numbers into it and checks it was not changed meanwhile.
    pub original: Option<Original>,
    /// What to call the stage while it has no file.
    pub untitled: String,
    /// The scenario before the last change (one level of undo).
    pub undo: Option<Scenario>,
    /// Whether the last Backspace took a change back (the next puts it back).
    pub undone: bool,
}

impl Slot {
    /// A stage, its file (if any) and that file as loaded.
    pub fn new(
        scenario: Scenario,
        path: Option<PathBuf>,
        original: Option<Original>,
        probe_hz: f64,
    ) -> Slot {
        let eval = evaluate(&scenario);
        let mut slot = Slot {
            traces: Traces::new(&eval.analysis),
            eval,
            probe: None,
            readout: None,
            saved: Some(scenario.clone()),
            scenario,
            path,
            dirty: false,
            original,
            untitled: "(built-in demo)".into(),
            undo: None,
            undone: false,
        };
        slot.set_probe(probe_hz);
        slot
    }

    /// Re-run the engine after a change to the scenario (already
    /// validated by the caller).
    fn refresh(&mut self, probe_hz: f64) {
        self.eval = evaluate_with(&self.scenario, &[]);
        self.traces = Traces::new(&self.eval.analysis);
        self.set_probe(probe_hz);
    }

    /// Solve the stage at the probe frequency (the "Zout at" figure).
    fn set_probe(&mut self, probe_hz: f64) {
        let c = Circuit::new(&self.scenario);
        self.probe = c.eval(probe_hz);
        self.readout = Some(crate::output::report::point_report(
            &c,
            &self.eval.analysis,
            probe_hz,
        ));
    }

    pub fn name(&self) -> String {
        self.path
            .as_ref()
            .and_then(|p| p.file_name())
            .map(|n| values::printable(&n.to_string_lossy()))
            .unwrap_or_else(|| self.untitled.clone())
    }
}

/// A generic op-amp model from the archetype library.
#[derive(Debug, Clone, Deserialize)]
pub struct Archetype {
    pub name: String,
    pub amp: Amp,
}

pub const ARCHETYPES_RON: &str = include_str!("../../assets/amps.ron");

/// The archetype library shipped in assets/.
pub fn archetypes() -> Vec<Archetype> {
    ron::Options::default()
        .with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
        .from_str(ARCHETYPES_RON)
        .unwrap_or_default()
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StatusKind {
    Info,
    Error,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Prompt {
    SaveAs,
    Probe,
    Title,
    /// The target gain the resistor pairs are listed for.
    Gain,
    /// The name the amplifier is saved under as a part.
    PartName,
}

impl Prompt {
    /// The prompt's label in the status line.
    pub fn label(self) -> &'static str {
        match self {
            Prompt::SaveAs => "save as",
            Prompt::Probe => "cursor at (Hz)",
            Prompt::Title => "title",
            Prompt::Gain => "target gain",
            Prompt::PartName => "part name",
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub enum Mode {
    Normal,
    /// Typing a new value for the selected parameter.
    Edit(Field),
    /// Typing a path, frequency or title in the status line.
    Prompt(Prompt, Field),
    /// Choosing a file to open.
    Open {
        files: Vec<PathBuf>,
        selected: usize,
        typed: Field,
    },
    /// The other slot has unsaved changes: copy over them?
    ConfirmCopy,
    /// Choosing a part from the amplifier library (`a`).
    Parts(Box<PartList>),
    /// Saving the amplifier as this part: project or user library?
    PartWhere(Box<crate::model::part::Part>),
    /// The part's file exists: replace it?
    PartReplace(Box<SaveTarget>),
    /// The datasheet form (`d`).
    Sheet(Box<SheetForm>),
    /// Choosing from a design helper's list (resistor pairs, stabilising
    /// options).
    Choose(Choices),
    Help,
    ConfirmQuit,
    /// The edited stage has unsaved changes: open this file over it?
    ConfirmOpen(PathBuf),
    /// Saving to this file needs a yes first (the question asked).
    ConfirmSave(PathBuf, SaveAsk),
}

/// The questions a save may ask, in the order asked.
/// The one plot a Bode view too short for all shows (the g key's cycle;
/// the CMRR only on a two-input stage's response view).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ShortPlot {
    Magnitude,
    Phase,
    Cmrr,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum SaveAsk {
    /// Save-as onto a file that exists.
    Overwrite,
    /// The file is read-only (no write permission for anyone).
    ReadOnly,
    /// The file changed on disk since it was loaded or saved.
    Changed,
    /// Comments other than the leading ones cannot be kept.
    Comments,
    /// Nothing left to ask.
    Write,
}

impl SaveAsk {
    fn next(self) -> SaveAsk {
        match self {
            SaveAsk::Overwrite => SaveAsk::ReadOnly,
            SaveAsk::ReadOnly => SaveAsk::Changed,
            SaveAsk::Changed => SaveAsk::Comments,
            SaveAsk::Comments | SaveAsk::Write => SaveAsk::Write,
        }
    }
}

/// A stage to open the workbench on: the scenario, its file and that
/// file's text (for the comments the scenario does not hold).
#[derive(Debug, Clone)]
pub struct Opened {
    pub scenario: Scenario,
    pub path: Option<PathBuf>,
    pub text: String,
}

impl From<(Scenario, Option<PathBuf>)> for Opened {
    fn from((scenario, path): (Scenario, Option<PathBuf>)) -> Opened {
        Opened {
            scenario,
            path,
            text: String::new(),
        }
    }
}

pub struct App {
    pub slots: Vec<Slot>,
    pub active: usize,
    pub selected: ParamRef,
    pub view: ViewId,
    pub probe_hz: f64,
    pub mode: Mode,
    pub status: String,
    pub status_kind: StatusKind,
    pub warn_scroll: usize,
    pub theme: Theme,
    pub running: bool,
    pub archetypes: Vec<Archetype>,
    /// The user's part library (None: none; the workbench sets it from
    /// the platform's folders, so a test never reads the real home).
    pub user_parts: Option<PathBuf>,
    /// The part last applied or saved (its name is offered on save).
    pub last_part: Option<crate::model::part::Part>,
    /// Where the Bode view is too short for all its plots, the one shown.
    pub short_plot: ShortPlot,
    /// The datasheet form as last left (`d` reopens it).
    pub sheet_draft: Option<Box<SheetForm>>,
    /// The part `A` of the datasheet form is saving (its name still to
    /// be typed); None when `A` saves the stage's amplifier.
    pub pending_part: Option<crate::model::part::Part>,
    /// The gain view over its full range instead of the zoomed one.
    pub full_range: bool,
    /// The spread view's background Monte Carlo of the edited stage.
    pub spread: super::spread_job::SpreadJob,
    /// `T`'s tolerance search, running beside the keys.
    pub tightening: super::tighten_job::TightenJob,
    /// The rescue copies found at start, listed first by `o`.
    pub rescued: Vec<PathBuf>,
}

/// A copy's title: the original's with the slot it came from, once.
fn copy_title(title: &str, from: &str) -> String {
    let base = title
        .rsplit_once(" (copy of ")
        .filter(|(_, tail)| tail.len() == 2 && tail.ends_with(')'))
        .map_or(title, |(head, _)| head);
    format!("{base} (copy of {from})")
}

/// The `.ron` files in the current folder and in scenarios/.
pub fn scenario_files() -> Vec<PathBuf> {
    let mut out = Vec::new();
    for dir in [PathBuf::from("."), PathBuf::from("scenarios")] {
        if let Ok(rd) = std::fs::read_dir(&dir) {
            let mut v: Vec<PathBuf> = rd
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| {
                    // Stage files, and the rescue copies of one
                    // (`s.ron.rescue`, `s.ron.rescue-2`).
                    let name = p
                        .file_name()
                        .map(|n| n.to_string_lossy())
                        .unwrap_or_default();
                    p.extension().and_then(|e| e.to_str()) == Some("ron")
                        || name.contains(".ron.rescue")
                })
                .collect();
            v.sort();
            out.extend(v);
        }
    }
    out
}

impl App {
    pub fn new(stages: Vec<impl Into<Opened>>, theme: Theme) -> App {
        let probe_hz = 1e3;
        let slots: Vec<Slot> = stages
            .into_iter()
            .take(2)
            .map(|st| {
                let st: Opened = st.into();
                // Each file as loaded, for saving back into it: the text
                // read at start-up, or (without it) the file itself.
                let original = match (&st.path, st.text.is_empty()) {
                    (Some(p), false) => Some(Original {
                        stamp: storage::stamp(p),
                        text: st.text,
                    }),
                    (Some(p), true) => Original::read(p),
                    (None, _) => None,
                };
                Slot::new(st.scenario, st.path, original, probe_hz)
            })
            .collect();
        let mut app = App {
            slots,
            active: 0,
            selected: param("stage.rf").unwrap_or(&PARAMS[0]),
            view: ViewId::Response,
            probe_hz,
            mode: Mode::Normal,
            status: String::new(),
            status_kind: StatusKind::Info,
            warn_scroll: 0,
            theme,
            running: true,
            archetypes: archetypes(),
            user_parts: None,
            last_part: None,
            short_plot: ShortPlot::Magnitude,
            sheet_draft: None,
            pending_part: None,
            full_range: false,
            spread: Default::default(),
            tightening: Default::default(),
            rescued: Vec::new(),
        };
        app.start_selection();
        app
    }

    /// The first row selected: rf where the stage has one, else the first
    /// part its kind declares (r1 of a difference stage).
    fn start_selection(&mut self) {
        let vis = self.visible();
        if vis.contains(&self.selected) {
            return;
        }
        let kind = self.slot().scenario.stage.topology.kind();
        self.selected = kind
            .parts
            .iter()
            .filter_map(|p| vis.iter().find(|v| v.path == p.param))
            .copied()
            .next()
            .unwrap_or(vis[0]);
    }

    /// Between events: keep the spread view's job on the edited stage and
    /// pick up its progress. True when the screen should be redrawn.
    pub fn tick(&mut self) -> bool {
        let tightening = self.tick_tightening();
        if self.view != ViewId::Spread {
            // Off the view, a running spread only costs the editing time.
            self.spread.stop();
            return tightening;
        }
        let s = &self.slots[self.active].scenario;
        self.spread.follow(s);
        self.spread.poll() | tightening
    }

    /// `T`'s search: its list when it ends, its progress meanwhile; an
    /// edit of the stage (or a switch to the other one) cancels it.
    fn tick_tightening(&mut self) -> bool {
        if !self.tightening.running() {
            return false;
        }
        if self.tightening.for_scenario.as_ref() != Some(&self.slots[self.active].scenario) {
            self.tightening.stop();
            self.info("tightening cancelled: the stage changed");
            return true;
        }
        match self.tightening.poll() {
            Ok(t) => {
                if matches!(self.mode, Mode::Normal) {
                    self.show_tightening(t);
                }
                true
            }
            Err(moved) => {
                if moved {
                    let p = self.tightening.progress();
                    self.info(format!("tightening: {p} (Esc cancels)"));
                }
                moved
            }
        }
    }

    pub fn slot(&self) -> &Slot {
        &self.slots[self.active]
    }

    /// The warnings strip: every stage's warnings with its slot, worst
    /// first (A before B at the same severity).
    pub fn strip_warnings(&self) -> Vec<(usize, &crate::judge::Warning)> {
        let mut w: Vec<(usize, &crate::judge::Warning)> = self
            .slots
            .iter()
            .enumerate()
            .flat_map(|(i, s)| s.eval.warnings.iter().map(move |x| (i, x)))
            .collect();
        w.sort_by_key(|x| std::cmp::Reverse(x.1.severity));
        w
    }

    pub fn slot_label(i: usize) -> &'static str {
        if i == 0 {
            "A"
        } else {
            "B"
        }
    }

    /// Parameters shown for the active stage, in pane order.
    pub fn visible(&self) -> Vec<ParamRef> {
        let s = &self.slot().scenario;
        PARAMS.iter().filter(|p| p.applies(s)).collect()
    }

    fn info(&mut self, msg: impl Into<String>) {
        self.status = msg.into();
        self.status_kind = StatusKind::Info;
    }

    fn error(&mut self, msg: impl Into<String>) {
        self.status = msg.into();
        self.status_kind = StatusKind::Error;
    }

    /// Apply a change to the active scenario; keep it only if it is valid.
    fn change(&mut self, what: &str, f: impl FnOnce(&mut Scenario) -> anyhow::Result<()>) {
        if self.apply_change(what, f) {
            let shown = self.selected.display(&self.slot().scenario);
            self.report_change(what, &shown);
        }
    }

    /// Apply a change to the edited stage's scenario if it validates;
    /// false (and an error on the status line) when it does not.
    fn apply_change(
        &mut self,
        what: &str,
        f: impl FnOnce(&mut Scenario) -> anyhow::Result<()>,
    ) -> bool {
        let mut s = self.slot().scenario.clone();
        if let Err(e) = f(&mut s) {
            self.error(format!("{what}: {e} (value unchanged)"));
            return false;
        }
        if let Err(problems) = s.validate() {
            let p = &problems[0];
            self.error(format!("{}: {} (value unchanged)", p.field, p.message));
            return false;
        }
        let probe = self.probe_hz;
        let slot = &mut self.slots[self.active];
        if slot.scenario != s {
            slot.undone = false;
            slot.undo = Some(std::mem::replace(&mut slot.scenario, s));
            slot.dirty = slot.saved.as_ref() != Some(&slot.scenario);
            slot.refresh(probe);
        }
        true
    }

    fn report_change(&mut self, what: &str, shown: &str) {
        self.info(format!(
            "{}: {what} → {shown}",
            Self::slot_label(self.active)
        ));
        self.warn_scroll = 0;
    }

    fn move_selection(&mut self, down: bool) {
        let vis = self.visible();
        let i = vis.iter().position(|p| *p == self.selected).unwrap_or(0);
        let j = if down {
            (i + 1).min(vis.len() - 1)
        } else {
            i.saturating_sub(1)
        };
        self.selected = vis[j];
    }

    /// The g key: the next plot a short Bode view shows (magnitude, phase,
    /// and the CMRR where a stage has two inputs).
    fn next_short_plot(&mut self) {
        let cmrr = self.slots.iter().any(|s| !s.traces.cmrr_db.is_empty());
        self.short_plot = match self.short_plot {
            ShortPlot::Magnitude => ShortPlot::Phase,
            ShortPlot::Phase if cmrr => ShortPlot::Cmrr,
            _ => ShortPlot::Magnitude,
        };
        let which = match self.short_plot {
            ShortPlot::Magnitude => "magnitude",
            ShortPlot::Phase => "phase",
            ShortPlot::Cmrr => "CMRR",
        };
        self.info(format!("a short Bode plot shows the {which}"));
    }

    /// A selected row the stage no longer shows (another kind, another
    /// slot) gives way to the nearest shown row above it in pane order.
    fn ensure_visible_selection(&mut self) {
        let vis = self.visible();
        if vis.contains(&self.selected) {
            return;
        }
        let at = PARAMS.iter().position(|p| p == self.selected).unwrap_or(0);
        self.selected = PARAMS[..at]
            .iter()
            .rev()
            .find(|p| vis.contains(p))
            .unwrap_or(vis[0]);
    }

    pub fn on_key(&mut self, key: KeyEvent) {
        if key.kind == KeyEventKind::Release {
            return;
        }
        if keys::action_for(&key) == Some(Action::QuitNow) {
            self.running = false;
            return;
        }
        let mode = std::mem::replace(&mut self.mode, Mode::Normal);
        match mode {
            Mode::Normal => {
                // A message lasts until the next key; then the hint line
                // about the selected parameter shows again.
                self.status.clear();
                if key.code == KeyCode::Esc && self.tightening.running() {
                    self.tightening.stop();
                    return self.info("tightening cancelled");
                }
                if let Some(action) = keys::action_for(&key) {
                    self.act(action);
                }
            }
            // Any key closes help.
            Mode::Help => {}
            Mode::ConfirmOpen(path) => match key.code {
                KeyCode::Char('y') | KeyCode::Char('Y') => self.open_checked(&path, false),
                _ => self.info("not opened: the edited stage is kept"),
            },
            Mode::ConfirmSave(path, ask) => match key.code {
                KeyCode::Char('y') | KeyCode::Char('Y') => self.save_checked(&path, ask.next()),
                _ => self.info("not saved: your changes are kept in memory"),
            },
            Mode::ConfirmCopy => match key.code {
                KeyCode::Char('y') | KeyCode::Char('Y') => self.copy_to_other(false),
                _ => self.info("not copied: the other stage is kept"),
            },
            Mode::ConfirmQuit => match key.code {
                KeyCode::Char('y') | KeyCode::Char('Y') => self.running = false,
                _ => self.info("quit cancelled"),
            },
            Mode::Edit(buf) => {
                if let Some(text) = self.on_text_key(key, buf, Mode::Edit) {
                    let p = self.selected;
                    self.change(p.label, |s| p.apply_text(s, &text));
                }
            }
            Mode::Prompt(kind, buf) => {
                if let Some(text) = self.on_text_key(key, buf, move |b| Mode::Prompt(kind, b)) {
                    match kind {
                        Prompt::SaveAs => self.save_as(&text),
                        Prompt::Probe => self.set_probe(&text),
                        Prompt::Title => {
                            let title = text.trim().to_string();
                            if self.apply_change("title", |s| {
                                s.title = title.clone();
                                Ok(())
                            }) {
                                self.report_change("title", &title);
                            }
                        }
                        Prompt::Gain => self.list_pairs(&text),
                        Prompt::PartName => self.part_named(&text),
                    }
                }
            }
            Mode::Open {
                files,
                selected,
                typed,
            } => self.on_open_key(key, files, selected, typed),
            Mode::Parts(list) => self.on_parts_key(key, list),
            Mode::PartWhere(part) => self.on_part_where_key(key, part),
            Mode::PartReplace(target) => self.on_part_replace_key(key, target),
            Mode::Sheet(form) => self.on_sheet_key(key, form),
            Mode::Choose(list) => self.on_choose_key(key, list),
        }
    }

    fn on_choose_key(&mut self, key: KeyEvent, mut list: Choices) {
        match list_key(&key, list.selected, list.picks.len()) {
            ListKey::Move(i) => {
                list.selected = i;
                self.mode = Mode::Choose(list);
            }
            ListKey::Apply => {
                if let Some(&pick) = list.picks.get(list.selected) {
                    self.apply_pick(pick);
                }
            }
            ListKey::Leave => self.info("stage unchanged"),
        }
    }

    /// Line editing shared by value entry and prompts. Returns the text on
    /// Enter; Esc cancels; other keys keep the mode open.
    fn on_text_key(
        &mut self,
        key: KeyEvent,
        mut field: Field,
        reopen: impl Fn(Field) -> Mode,
    ) -> Option<String> {
        match keys::field_key(&key) {
            FieldKey::Edit(FieldAction::Apply) => return Some(field.text()),
            FieldKey::Edit(FieldAction::Cancel) => {
                self.info("cancelled");
                return None;
            }
            FieldKey::Edit(a) => field.edit(a),
            FieldKey::Type(c) => field.insert(c),
            FieldKey::Ignore => {}
        }
        self.mode = reopen(field);
        None
    }

    fn on_open_key(&mut self, key: KeyEvent, files: Vec<PathBuf>, mut sel: usize, mut buf: Field) {
        match (key.code, keys::field_key(&key)) {
            (_, FieldKey::Edit(FieldAction::Cancel)) => {
                self.info("open cancelled");
                return;
            }
            (_, FieldKey::Edit(FieldAction::Apply)) => {
                let typed = buf.text();
                let path = if typed.trim().is_empty() {
                    files.get(sel).cloned()
                } else {
                    Some(PathBuf::from(typed.trim()))
                };
                if let Some(p) = path {
                    self.open(&p);
                }
                return;
            }
            (KeyCode::Up, _) => sel = sel.saturating_sub(1),
            (KeyCode::Down, _) => sel = (sel + 1).min(files.len().saturating_sub(1)),
            (_, FieldKey::Edit(a)) => buf.edit(a),
            (_, FieldKey::Type(c)) => buf.insert(c),
            (_, FieldKey::Ignore) => {}
        }
        self.mode = Mode::Open {
            files,
            selected: sel,
            typed: buf,
        };
    }

    /// Carry out one action of the key table.
    fn act(&mut self, action: Action) {
        match action {
            Action::Quit => self.quit(),
            Action::QuitNow => self.running = false,
            Action::SelectUp => self.move_selection(false),
            Action::SelectDown => self.move_selection(true),
            Action::StepUp => self.step(Direction::Up),
            Action::StepDown => self.step(Direction::Down),
            Action::TypeValue => self.start_edit(),
            Action::CycleSeries => self.cycle_series(),
            Action::SnapToSeries => self.snap(),
            Action::NextView => {
                self.view = self.view.next_shown();
                self.info(format!("view: {}", self.view.title()));
            }
            Action::WriteFigure => self.write_figure(),
            Action::CursorDown => self.move_cursor(false),
            Action::CursorUp => self.move_cursor(true),
            Action::CursorJump => self.jump_cursor(),
            Action::ProbeFrequency => {
                let now = values::fmt_compact(self.probe_hz);
                self.mode = Mode::Prompt(Prompt::Probe, Field::offering(&now));
                self.info("cursor frequency (e.g. 10k); Enter applies");
            }
            Action::ScrollWarningsDown => {
                let n = self.strip_warnings().len();
                self.warn_scroll = (self.warn_scroll + 1).min(n.saturating_sub(1));
            }
            Action::ScrollWarningsUp => self.warn_scroll = self.warn_scroll.saturating_sub(1),
            Action::Help => self.mode = Mode::Help,
            Action::Save => self.save(),
            Action::SaveAs => self.start_save_as(),
            Action::Open => {
                let mut files = self.rescued.clone();
                files.extend(
                    scenario_files()
                        .into_iter()
                        .filter(|f| !self.rescued.contains(f)),
                );
                self.mode = Mode::Open {
                    files,
                    selected: 0,
                    typed: Field::default(),
                };
                self.info("open: ↑↓ choose, or type a path; Enter opens, Esc cancels");
            }
            Action::PickArchetype => self.start_pick(),
            Action::SavePart => self.start_save_part(),
            Action::FromFigures => self.start_sheet(),
            Action::ResistorPairs => self.start_pairs(),
            Action::StabilizeOptions => self.list_fixes(),
            Action::TightenOptions => self.list_tightening(),
            Action::CopyToOther => self.copy_to_other(true),
            Action::SwitchSlot => self.switch_slot(),
            Action::Undo => self.undo(),
            Action::GainOrPhase => self.next_short_plot(),
            Action::GainRange => {
                self.full_range = !self.full_range;
                let range = ["peak and passband", "full range"][usize::from(self.full_range)];
                self.info(format!("the gain view shows the {range}"));
            }
            Action::EditTitle => {
                let title = self.slot().scenario.title.clone();
                self.mode = Mode::Prompt(Prompt::Title, Field::offering(&title));
                self.info("title: type a new one (or ← → to edit it); Enter applies, Esc cancels");
            }
        }
    }

    /// Write the plot view of every stage (A first) as SVG next to the
    /// active stage's file, under a name not yet taken, and say where.
    fn write_figure(&mut self) {
        let view = self.view.view();
        let stages: Vec<_> = self
            .slots
            .iter()
            .map(|s| crate::output::svg::Evaluated {
                scenario: &s.scenario,
                eval: &s.eval,
            })
            .collect();
        let svg = match crate::output::svg::render(view, &stages, Default::default()) {
            Ok(svg) => svg,
            Err(e) => return self.error(e.to_string()),
        };
        let path = figure_path(self.slot().path.as_deref(), view.name);
        match storage::write_output(&path, &svg, false) {
            Ok(p) => self.info(format!(
                "figure written to {}",
                values::printable(&p.display().to_string())
            )),
            Err(e) => self.error(format!("figure not written: {e}")),
        }
    }

    fn quit(&mut self) {
        let dirty: Vec<&str> = self
            .slots
            .iter()
            .enumerate()
            .filter(|(_, s)| s.dirty)
            .map(|(i, _)| Self::slot_label(i))
            .collect();
        if dirty.is_empty() {
            self.running = false;
        } else {
            self.mode = Mode::ConfirmQuit;
            self.error(format!(
                "unsaved changes in {}: quit anyway? y = quit, any other key = stay",
                dirty.join(" and ")
            ));
        }
    }

    fn step(&mut self, dir: Direction) {
        let p = self.selected;
        let what = match dir {
            Direction::Up => "step up",
            Direction::Down => "step down",
        };
        let mut moved = true;
        self.change(what, |s| {
            moved = p.step(s, dir);
            Ok(())
        });
        if !moved && self.status_kind == StatusKind::Info {
            self.info(format!(
                "{}: {} stays at {} (accepted {})",
                Self::slot_label(self.active),
                p.label,
                p.display(&self.slot().scenario),
                p.range_text()
            ));
        }
        self.ensure_visible_selection();
    }

    fn start_edit(&mut self) {
        let p = self.selected;
        self.mode = Mode::Edit(Field::offering(&p.edit_text(&self.slot().scenario)));
        self.info(format!(
            "type a value for {} (4k7, 2.2n, 10M …); Enter applies, Esc cancels",
            p.label
        ));
    }

    fn cycle_series(&mut self) {
        self.change("series", |s| {
            s.stage.series = s.stage.series.cycle();
            Ok(())
        });
        let s = &self.slot().scenario.stage.series;
        self.info(format!("resistors now step along {s}"));
    }

    fn snap(&mut self) {
        let mut count = 0;
        self.change("snap to series", |s| {
            count = params::snap_resistors(s);
            Ok(())
        });
        let series = self.slot().scenario.stage.series;
        self.info(format!(
            "{count} resistor(s) snapped to the nearest {series} value"
        ));
    }

    fn start_save_as(&mut self) {
        let start = self
            .slot()
            .path
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_default();
        self.mode = Mode::Prompt(Prompt::SaveAs, Field::offering(&start));
        self.info("save as: type a path (.ron is added); Enter saves, Esc cancels");
    }

    /// At start: name the rescue copies an earlier run left for the stages
    /// opened (or, for a stage without a file, in the current folder),
    /// newest first; `o` lists them to open. True when there were some.
    pub fn offer_rescues(&mut self) -> bool {
        let mut found = Vec::new();
        for (i, slot) in self.slots.iter().enumerate() {
            let base = storage::rescue_path(slot.path.as_deref(), Self::slot_label(i));
            found.extend(storage::rescue_files(&base));
        }
        if found.is_empty() {
            return false;
        }
        let names: Vec<String> = found.iter().map(|p| p.display().to_string()).collect();
        self.rescued = found;
        self.info(format!(
            "an earlier run left unsaved changes in {} (newest first): o lists them to open",
            names.join(", ")
        ));
        true
    }

    /// `a`: the amplifier list of every part, grouped by where it was
    /// found (the archetypes are its built-in group).
    fn start_pick(&mut self) {
        self.start_parts();
    }

    fn switch_slot(&mut self) {
        if self.slots.len() > 1 {
            self.active = 1 - self.active;
            self.ensure_visible_selection();
            self.info(format!("editing {}", Self::slot_label(self.active)));
        } else {
            self.info("only one stage: c copies it into B");
        }
    }

    fn set_probe(&mut self, text: &str) {
        let (lo, hi) = self.cursor_range();
        let range = format!(
            "{} to {}",
            values::fmt_eng(lo, "Hz"),
            values::fmt_eng(hi, "Hz")
        );
        match values::parse_value(text) {
            Ok(f) if (lo..=hi).contains(&f) => {
                self.put_cursor(f);
                self.info(format!("cursor at {}", values::fmt_eng(f, "Hz")));
            }
            Ok(f) => self.error(format!(
                "{} is outside the sweep, {range} (cursor unchanged)",
                values::fmt_eng(f, "Hz")
            )),
            Err(e) => self.error(format!("{e} (unchanged)")),
        }
    }

    /// Copy the edited stage into the other slot; over unsaved changes
    /// there, ask first when `ask`.
    fn copy_to_other(&mut self, ask: bool) {
        let from = Self::slot_label(self.active);
        let to = Self::slot_label(1 - self.active);
        if ask && self.slots.len() > 1 && self.slots[1 - self.active].dirty {
            self.mode = Mode::ConfirmCopy;
            self.error(format!(
                "{to} has unsaved changes: copy {from} over them? y = copy, any other key = keep {to}"
            ));
            return;
        }
        let mut copy = self.slot().clone();
        copy.dirty = true;
        copy.saved = None;
        copy.path = None;
        copy.original = None;
        copy.undo = None;
        copy.scenario.title = copy_title(&copy.scenario.title, from);
        copy.refresh(self.probe_hz);
        copy.untitled = format!("(copy of {from}, not saved)");
        if self.slots.len() == 1 {
            self.slots.push(copy);
        } else {
            let other = 1 - self.active;
            self.slots[other] = copy;
        }
        self.info(format!(
            "copied {from} into {to}; Tab switches which one you edit"
        ));
    }

    /// Take back the last change to the edited stage (a second time puts
    /// it back).
    fn undo(&mut self) {
        let probe = self.probe_hz;
        let label = Self::slot_label(self.active);
        let slot = &mut self.slots[self.active];
        let Some(before) = slot.undo.take() else {
            self.info(format!("{label}: nothing to take back"));
            return;
        };
        slot.undo = Some(std::mem::replace(&mut slot.scenario, before));
        slot.dirty = slot.saved.as_ref() != Some(&slot.scenario);
        slot.undone = !slot.undone;
        let what = if slot.undone {
            "last change taken back (Backspace again puts it back)"
        } else {
            "change put back (Backspace again takes it back)"
        };
        slot.refresh(probe);
        self.ensure_visible_selection();
        self.warn_scroll = 0;
        self.info(format!("{label}: {what}"));
    }

    pub fn save(&mut self) {
        match self.slot().path.clone() {
            Some(p) => self.save_to(&p),
            None => {
                self.mode = Mode::Prompt(Prompt::SaveAs, Field::default());
                self.info("no file yet: type a path to save to (.ron is added)");
            }
        }
    }

    fn save_as(&mut self, text: &str) {
        let t = text.trim();
        if t.is_empty() {
            self.error("no path given: not saved");
            return;
        }
        // A folder is no file name: `.ron` added to it would make a hidden
        // `dir/.ron`.
        let as_typed = PathBuf::from(t);
        if t.ends_with('/') || as_typed.is_dir() || as_typed.file_name().is_none() {
            self.error(format!(
                "could not save {t}: it is a folder; type a file name in it (for example {})",
                as_typed.join("stage.ron").display()
            ));
            return;
        }
        let mut p = as_typed;
        if p.extension().and_then(|e| e.to_str()) != Some("ron") {
            p = PathBuf::from(format!("{t}.ron"));
        }
        self.save_to(&p);
    }

    fn save_to(&mut self, p: &Path) {
        self.save_checked(p, SaveAsk::Overwrite);
    }

    /// Save after asking, from `from` on, whatever needs a yes.
    fn save_checked(&mut self, p: &Path, from: SaveAsk) {
        let slot = self.slot();
        let rendered = storage::render(
            &slot.scenario,
            slot.original.as_ref().map(|o| o.text.as_str()),
        );
        let same_file = slot.path.as_deref() == Some(p);
        let shown = p.display();
        let ask = if from <= SaveAsk::Overwrite && !same_file && p.is_file() {
            Some((SaveAsk::Overwrite, format!("{shown} exists: overwrite it?")))
        } else if from <= SaveAsk::ReadOnly && storage::read_only(p) {
            Some((
                SaveAsk::ReadOnly,
                format!("{shown} is read-only: overwrite it anyway (it stays read-only)?"),
            ))
        } else if from <= SaveAsk::Changed
            && same_file
            && slot.original.as_ref().is_some_and(|o| o.changed_on_disk(p))
        {
            Some((
                SaveAsk::Changed,
                format!(
                    "{shown} was changed by another program since it was loaded: overwrite it?"
                ),
            ))
        } else if from <= SaveAsk::Comments && rendered.drops_comments {
            Some((
                SaveAsk::Comments,
                "the fields changed, so the file is rewritten and only its leading comments \
                 are kept: save anyway?"
                    .to_string(),
            ))
        } else {
            None
        };
        if let Some((kind, question)) = ask {
            self.mode = Mode::ConfirmSave(p.to_path_buf(), kind);
            self.error(format!("{question} y = save, any other key = keep editing"));
            return;
        }
        match storage::write_atomic(p, &rendered.text) {
            Ok(w) => {
                let slot = &mut self.slots[self.active];
                slot.path = Some(p.to_path_buf());
                slot.dirty = false;
                slot.saved = Some(slot.scenario.clone());
                slot.original = Some(Original {
                    stamp: storage::stamp(p),
                    text: rendered.text,
                });
                let mut msg = format!("saved {shown}");
                if w.path != p {
                    msg.push_str(&format!(" (the link's target {})", w.path.display()));
                }
                if let Some((n, backup)) = &w.hard_links {
                    msg.push_str(&format!(
                        "; it has {n} hard links, so it was written in place after a copy to {}",
                        backup.display()
                    ));
                }
                self.info(msg);
            }
            Err(e) => self.error(format!(
                "could not save {shown}: {e}; your changes are kept in memory"
            )),
        }
    }

    /// Open a file into the edited slot. A file that does not load is
    /// reported and changes nothing; a good one over unsaved changes asks
    /// first (and is read again on yes, in case it changed meanwhile).
    fn open(&mut self, p: &Path) {
        self.open_checked(p, true);
    }

    fn open_checked(&mut self, p: &Path, ask_if_dirty: bool) {
        let (s, text) = match Scenario::read(p) {
            Ok(loaded) => loaded,
            Err(e) => {
                self.error(format!("not opened, kept the open scenario: {e}"));
                return;
            }
        };
        if ask_if_dirty && self.slot().dirty {
            self.mode = Mode::ConfirmOpen(p.to_path_buf());
            self.error(format!(
                "{} has unsaved changes: open {} over them? y = open, any other key = keep",
                Self::slot_label(self.active),
                p.display()
            ));
            return;
        }
        let original = Original {
            stamp: storage::stamp(p),
            text,
        };
        self.slots[self.active] =
            Slot::new(s, Some(p.to_path_buf()), Some(original), self.probe_hz);
        self.ensure_visible_selection();
        self.info(format!(
            "opened {} into {}",
            p.display(),
            Self::slot_label(self.active)
        ));
    }

    /// Whether a parameter differs between A and B.
    pub fn differs(&self, p: ParamRef) -> bool {
        if self.slots.len() < 2 {
            return false;
        }
        let (a, b) = (&self.slots[0].scenario, &self.slots[1].scenario);
        p.display(a) != p.display(b)
    }
}
