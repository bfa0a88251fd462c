//! The key table: every key of the workbench's normal mode, the action it
//! takes and its help text. The event handler dispatches on [`Action`];
//! the help overlay, the hint line and the README's key table list the
//! same entries (a test checks the README).
//!
//! To add a key: one [`Action`] variant, one entry in [`KEYS`], one arm in
//! `App::act`.

use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};

/// What a key does.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Action {
    SelectUp,
    SelectDown,
    StepUp,
    StepDown,
    TypeValue,
    CycleSeries,
    SnapToSeries,
    NextView,
    WriteFigure,
    ProbeFrequency,
    CursorDown,
    CursorUp,
    CursorJump,
    ScrollWarningsDown,
    ScrollWarningsUp,
    PickArchetype,
    SavePart,
    FromFigures,
    ResistorPairs,
    StabilizeOptions,
    TightenOptions,
    CopyToOther,
    SwitchSlot,
    Undo,
    EditTitle,
    GainOrPhase,
    GainRange,
    Save,
    SaveAs,
    Open,
    Help,
    Quit,
    QuitNow,
}

/// One key of the table.
#[derive(Debug, Clone, Copy)]
pub struct Key {
    pub code: KeyCode,
    pub ctrl: bool,
}

const fn k(c: char) -> Key {
    Key {
        code: KeyCode::Char(c),
        ctrl: false,
    }
}

const fn code(code: KeyCode) -> Key {
    Key { code, ctrl: false }
}

/// One binding: the keys, how they are written, the action and its help.
#[derive(Debug, Clone, Copy)]
pub struct Binding {
    pub keys: &'static [Key],
    /// The keys as the help and the README write them.
    pub shown: &'static str,
    pub action: Action,
    pub help: &'static str,
    /// A few words for the hint line (None: not in it).
    pub hint: Option<&'static str>,
}

impl Binding {
    /// The help as shown: the `v` key's lists the views from the registry.
    pub fn help_text(&self) -> std::borrow::Cow<'static, str> {
        match self.action {
            Action::NextView => crate::output::views::cycle_help().into(),
            _ => self.help.into(),
        }
    }
}

/// Every binding of the normal mode, in help order.
pub const KEYS: &[Binding] = &[
    Binding {
        keys: &[code(KeyCode::Up), k('k')],
        shown: "↑ ↓, k j",
        action: Action::SelectUp,
        help: "select a parameter",
        hint: None,
    },
    Binding {
        keys: &[code(KeyCode::Down), k('j')],
        shown: "",
        action: Action::SelectDown,
        help: "",
        hint: None,
    },
    Binding {
        keys: &[code(KeyCode::Right), k('l'), k('+'), k('=')],
        shown: "← →, h l, - +",
        action: Action::StepUp,
        help: "step: resistors E-series, capacitors E12, models 1-2-5",
        hint: None,
    },
    Binding {
        keys: &[code(KeyCode::Left), k('h'), k('-')],
        shown: "",
        action: Action::StepDown,
        help: "",
        hint: None,
    },
    Binding {
        keys: &[code(KeyCode::Enter)],
        shown: "Enter",
        action: Action::TypeValue,
        help: "type a value (4k7, 2.2n, none); Enter applies, Esc cancels",
        hint: Some("Enter types"),
    },
    Binding {
        keys: &[k('e')],
        shown: "e",
        action: Action::CycleSeries,
        help: "cycle the stage's E-series",
        hint: None,
    },
    Binding {
        keys: &[k('n')],
        shown: "n",
        action: Action::SnapToSeries,
        help: "snap every resistor to its nearest series value",
        hint: None,
    },
    Binding {
        keys: &[k('v')],
        shown: "v",
        action: Action::NextView,
        // The list of views comes from the registry: see `help_text`.
        help: "next view",
        hint: None,
    },
    Binding {
        keys: &[k('p')],
        shown: "p",
        action: Action::WriteFigure,
        help: "write the plot view as SVG next to the stage's file",
        hint: None,
    },
    // Two plot keys share one help row (the help fits 80×24).
    Binding {
        keys: &[k('g')],
        shown: "g, z",
        action: Action::GainOrPhase,
        help: "g: gain, phase or CMRR if short · z: zoomed or full range",
        hint: None,
    },
    Binding {
        keys: &[k('z')],
        shown: "",
        action: Action::GainRange,
        help: "",
        hint: None,
    },
    Binding {
        keys: &[k('f')],
        shown: "f , . ;",
        action: Action::ProbeFrequency,
        help: "frequency cursor: type it, move ±0.1 decade, jump to marks",
        hint: None,
    },
    Binding {
        keys: &[k(',')],
        shown: "",
        action: Action::CursorDown,
        help: "cursor down a tenth of a decade",
        hint: None,
    },
    Binding {
        keys: &[k('.')],
        shown: "",
        action: Action::CursorUp,
        help: "cursor up a tenth of a decade",
        hint: None,
    },
    Binding {
        keys: &[k(';')],
        shown: "",
        action: Action::CursorJump,
        help: "cursor to the next of f−3dB, crossover, band edges",
        hint: None,
    },
    Binding {
        keys: &[k(']'), code(KeyCode::PageDown)],
        shown: "[ ], PgUp PgDn",
        action: Action::ScrollWarningsDown,
        help: "scroll the warnings",
        hint: None,
    },
    Binding {
        keys: &[k('['), code(KeyCode::PageUp)],
        shown: "",
        action: Action::ScrollWarningsUp,
        help: "",
        hint: None,
    },
    // Picking and saving a part share one help row (the help fits 80×24).
    Binding {
        keys: &[k('a')],
        shown: "a, A, d",
        action: Action::PickArchetype,
        help: "a: pick a part · A: save it as one · d: datasheet form",
        hint: None,
    },
    Binding {
        keys: &[k('A')],
        shown: "",
        action: Action::SavePart,
        help: "",
        hint: None,
    },
    Binding {
        keys: &[k('d')],
        shown: "",
        action: Action::FromFigures,
        help: "",
        hint: None,
    },
    // The three design helpers share one help row (the help fits 80×24).
    Binding {
        keys: &[k('r')],
        shown: "r, m, T",
        action: Action::ResistorPairs,
        help: "r: rg, rf for a gain · m: riso, cf for 60° · T: tolerances",
        hint: None,
    },
    Binding {
        keys: &[k('m')],
        shown: "",
        action: Action::StabilizeOptions,
        help: "",
        hint: None,
    },
    Binding {
        keys: &[k('T')],
        shown: "",
        action: Action::TightenOptions,
        help: "",
        hint: None,
    },
    Binding {
        keys: &[k('c')],
        shown: "c",
        action: Action::CopyToOther,
        help: "copy this stage into the other slot (A ↔ B)",
        hint: None,
    },
    Binding {
        keys: &[code(KeyCode::Backspace)],
        shown: "Backspace",
        action: Action::Undo,
        help: "take back the last change to this stage (again: put it back)",
        hint: None,
    },
    Binding {
        keys: &[k('t')],
        shown: "t",
        action: Action::EditTitle,
        help: "edit the stage's title",
        hint: None,
    },
    Binding {
        keys: &[code(KeyCode::Tab), k('b')],
        shown: "Tab, b",
        action: Action::SwitchSlot,
        help: "switch between A and B",
        hint: None,
    },
    Binding {
        keys: &[k('s')],
        shown: "s",
        action: Action::Save,
        help: "save to the stage's file (asks for a path if it has none)",
        hint: None,
    },
    Binding {
        keys: &[k('S')],
        shown: "S",
        action: Action::SaveAs,
        help: "save under a new name (.ron added)",
        hint: None,
    },
    Binding {
        keys: &[k('o')],
        shown: "o",
        action: Action::Open,
        help: "open a scenario file (asks first over unsaved changes)",
        hint: None,
    },
    Binding {
        keys: &[k('?')],
        shown: "?",
        action: Action::Help,
        help: "this help (any key closes it)",
        hint: Some("? keys"),
    },
    Binding {
        keys: &[k('q')],
        shown: "q",
        action: Action::Quit,
        help: "quit (asks first if there are unsaved changes)",
        hint: None,
    },
    Binding {
        keys: &[Key {
            code: KeyCode::Char('c'),
            ctrl: true,
        }],
        shown: "Ctrl-C",
        action: Action::QuitNow,
        help: "quit at once, in any mode",
        hint: None,
    },
];

/// What a key does in a text field (a value, the title, a path, a
/// frequency).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FieldAction {
    Apply,
    Cancel,
    Left,
    Right,
    Home,
    End,
    Backspace,
    Delete,
    Clear,
    DeleteWord,
}

/// One key of a text field.
#[derive(Debug, Clone, Copy)]
pub struct FieldBinding {
    pub keys: &'static [Key],
    pub shown: &'static str,
    pub action: FieldAction,
    pub help: &'static str,
}

const fn ctrl(c: char) -> Key {
    Key {
        code: KeyCode::Char(c),
        ctrl: true,
    }
}

/// Every key of a text field, in help order. Other characters are typed;
/// other control keys do nothing.
pub const FIELD_KEYS: &[FieldBinding] = &[
    FieldBinding {
        keys: &[code(KeyCode::Enter)],
        shown: "Enter",
        action: FieldAction::Apply,
        help: "apply",
    },
    FieldBinding {
        keys: &[code(KeyCode::Esc)],
        shown: "Esc",
        action: FieldAction::Cancel,
        help: "cancel",
    },
    FieldBinding {
        keys: &[code(KeyCode::Left)],
        shown: "←",
        action: FieldAction::Left,
        help: "cursor left (keeps the old value to edit)",
    },
    FieldBinding {
        keys: &[code(KeyCode::Right)],
        shown: "→",
        action: FieldAction::Right,
        help: "cursor right",
    },
    FieldBinding {
        keys: &[code(KeyCode::Home)],
        shown: "Home",
        action: FieldAction::Home,
        help: "cursor to the start",
    },
    FieldBinding {
        keys: &[code(KeyCode::End)],
        shown: "End",
        action: FieldAction::End,
        help: "cursor to the end",
    },
    FieldBinding {
        keys: &[code(KeyCode::Backspace)],
        shown: "Backspace",
        action: FieldAction::Backspace,
        help: "delete before the cursor (the whole old value while it is offered)",
    },
    FieldBinding {
        keys: &[code(KeyCode::Delete)],
        shown: "Del",
        action: FieldAction::Delete,
        help: "delete under the cursor",
    },
    FieldBinding {
        keys: &[ctrl('u')],
        shown: "Ctrl-U",
        action: FieldAction::Clear,
        help: "clear the field (the POSIX line-kill character)",
    },
    FieldBinding {
        keys: &[ctrl('w')],
        shown: "Ctrl-W",
        action: FieldAction::DeleteWord,
        help: "delete the word before the cursor (the POSIX word-erase character)",
    },
];

/// What a key does in a text field: an editing action, a character to
/// type, or nothing.
pub enum FieldKey {
    Edit(FieldAction),
    Type(char),
    Ignore,
}

pub fn field_key(ev: &KeyEvent) -> FieldKey {
    if let Some(b) = FIELD_KEYS
        .iter()
        .find(|b| b.keys.iter().any(|k| k.matches(ev)))
    {
        return FieldKey::Edit(b.action);
    }
    let control = ev
        .modifiers
        .intersects(KeyModifiers::CONTROL | KeyModifiers::ALT);
    match ev.code {
        KeyCode::Char(c) if !control && !c.is_control() => FieldKey::Type(c),
        _ => FieldKey::Ignore,
    }
}

/// What the plots and marks mean, shown under the keys in the help.
pub const LEGEND: &[(&str, &str)] = &[
    (
        "plots",
        "A solid, B dotted; -3dB and fc: f−3dB, loop crossover",
    ),
    (
        "typing",
        "typing replaces; ← → Home End edit; Ctrl-U/W clear line/word",
    ),
    (
        "marks",
        "≠ (or *) differs between A and B; off E24: not on series",
    ),
];

impl Key {
    fn matches(&self, ev: &KeyEvent) -> bool {
        let ctrl = ev.modifiers.contains(KeyModifiers::CONTROL);
        self.code == ev.code && self.ctrl == ctrl
    }
}

/// The action a key press takes in normal mode, if any.
pub fn action_for(ev: &KeyEvent) -> Option<Action> {
    KEYS.iter()
        .find(|b| b.keys.iter().any(|k| k.matches(ev)))
        .map(|b| b.action)
}

/// The bindings the help lists (a pair such as ↑/↓ is one row).
pub fn help_rows() -> impl Iterator<Item = &'static Binding> {
    KEYS.iter().filter(|b| !b.shown.is_empty())
}

/// The default hint line, from the table.
pub fn hint_line() -> String {
    KEYS.iter()
        .filter_map(|b| b.hint)
        .collect::<Vec<_>>()
        .join(" · ")
}
