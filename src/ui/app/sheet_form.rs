//! The datasheet form (`d`): one row per figure of the datasheet-figures
//! format (README "Amplifier models from datasheet figures"), each typed
//! as the pane's values are, and the amplifier derived from them live by
//! `datasheet::derive` (the derivation of `loopwright amp`). `a` applies
//! it to the edited stage like a part, `A` saves it as a part (the `A`
//! flow: name, place, never replacing unasked), `o` fills the rows from a
//! figures file, Esc leaves the stage as it was. The rows typed are kept
//! for the next `d`.

use super::{App, Mode, Prompt};
use crate::files::figures::{derive_file, read_figures, sources, unusable};
use crate::model::datasheet::{
    derive, Circuit, Derivation, Derived, Figures, NoiseFigures, Num, Problem, RangeFigures,
    RejectionFigures, SwingFigures, Take, TypMax, Zout,
};
use crate::model::part::Part;
use crate::model::values::{fmt_compact, fmt_eng_sig, parse_value, printable};
use crate::ui::field::Field;
use crate::ui::keys::{self, FieldAction, FieldKey};
use ratatui::crossterm::event::{KeyCode, KeyEvent};

/// How a row is entered.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Entry {
    /// A number of either sign (output levels, supply rails).
    Any,
    /// A number above 0.
    Positive,
    /// A number of 0 or more.
    NonNegative,
    /// A number in the accepted range of this `amp` field, as the pane.
    Amp(&'static str),
    /// The part's name (free text).
    Name,
    /// Typical or maximum (← → or Enter switch).
    Take,
    /// Non-inverting or inverting (← → or Enter switch).
    Circuit,
}

/// One row of the form: a figure of the figures file.
#[derive(Debug, Clone, Copy)]
pub struct Row {
    /// The figure's place in the figures file (`zout.at`; noise spots as
    /// `vnoise.f1`, `vnoise.e1`; the swing's supply as `swing.supply_neg`).
    pub key: &'static str,
    pub label: &'static str,
    pub unit: &'static str,
    /// The heading drawn above the row ("" inside a group).
    pub group: &'static str,
    pub entry: Entry,
}

const fn row(key: &'static str, label: &'static str, unit: &'static str, entry: Entry) -> Row {
    Row {
        key,
        label,
        unit,
        group: "",
        entry,
    }
}

const fn head(group: &'static str, r: Row) -> Row {
    Row { group, ..r }
}

use Entry::{Amp, Any, NonNegative, Positive};

/// One noise density's eight rows (spots, density at f, white, corner).
macro_rules! noise_rows {
    ($group:expr, $p:literal, $unit:literal) => {
        [
            head($group, row(concat!($p, ".f1"), "spot 1 at", "Hz", Positive)),
            row(concat!($p, ".e1"), "spot 1 density", $unit, Positive),
            row(concat!($p, ".f2"), "spot 2 at", "Hz", Positive),
            row(concat!($p, ".e2"), "spot 2 density", $unit, Positive),
            row(concat!($p, ".density"), "or density", $unit, Positive),
            row(concat!($p, ".at"), "density at", "Hz", Positive),
            row(
                concat!($p, ".white"),
                "or white level",
                $unit,
                Amp(concat!("amp.", $p)),
            ),
            row(concat!($p, ".corner"), "1/f corner", "Hz", NonNegative),
        ]
    };
}

/// A figure printed as typical and maximum: two rows.
macro_rules! typmax_rows {
    ($p:literal, $unit:literal) => {
        [
            row(
                concat!($p, ".typ"),
                concat!($p, " typ"),
                $unit,
                Amp(concat!("amp.", $p)),
            ),
            row(
                concat!($p, ".max"),
                concat!($p, " max"),
                $unit,
                Amp(concat!("amp.", $p)),
            ),
        ]
    };
}

const GAIN: [Row; 8] = [
    head("part", row("part", "name", "", Entry::Name)),
    row("take", "copy figures", "", Entry::Take),
    head("open-loop gain", row("gain_db", "gain", "dB", Positive)),
    row("a0", "or as a ratio a0", "", Amp("amp.a0")),
    row("gbw", "gain-bandwidth", "Hz", Amp("amp.gbw")),
    row("unity", "or unity-gain f_u", "Hz", Amp("amp.gbw")),
    row("phase_margin", "phase margin", "°", Any),
    row("fp2", "or 2nd pole fp2", "Hz", Amp("amp.fp2")),
];

const OUTPUT_INPUTS: [Row; 9] = [
    head("output impedance", row("ro", "ro", "Ω", Amp("amp.ro"))),
    row("zout.ohms", "or |Z_cl|", "Ω", Positive),
    row("zout.at", "|Z_cl| at", "Hz", Positive),
    row("zout.gain", "test circuit gain", "", Positive),
    row("zout.circuit", "test circuit", "", Entry::Circuit),
    head("inputs", row("rin", "rin", "Ω", Amp("amp.rin"))),
    row("cin", "cin per pin", "F", Amp("amp.cin")),
    row("cin_cm", "or C_cm", "F", NonNegative),
    row("cin_diff", "and C_diff", "F", NonNegative),
];

const SWING: [Row; 9] = [
    head(
        "output swing",
        row("swing.neg", "from − rail", "V", Amp("amp.swing_neg")),
    ),
    row("swing.pos", "from + rail", "V", Amp("amp.swing_pos")),
    row("swing.low", "or low level", "V", Any),
    row("swing.high", "high level", "V", Any),
    row("swing.supply_neg", "on supply −", "V", Any),
    row("swing.supply_pos", "supply +", "V", Any),
    row("swing.load", "at load", "Ω", Amp("amp.swing_load")),
    head(
        "input range inside the rails",
        row("input_range.neg", "from − rail", "V", Amp("amp.cm_neg")),
    ),
    row("input_range.pos", "from + rail", "V", Amp("amp.cm_pos")),
];

/// A rejection ratio's three rows (minimum, typical, corner).
macro_rules! rejection_rows {
    ($group:expr, $p:literal) => {
        [
            head(
                $group,
                row(
                    concat!($p, ".min"),
                    concat!($p, " min"),
                    "dB",
                    Amp(concat!("amp.", $p, "_db")),
                ),
            ),
            row(
                concat!($p, ".typ"),
                concat!($p, " typ"),
                "dB",
                Amp(concat!("amp.", $p, "_db")),
            ),
            row(
                concat!($p, ".corner"),
                "falls above",
                "Hz",
                Amp(concat!("amp.", $p, "_corner")),
            ),
        ]
    };
}

const CMRR: [Row; 3] = rejection_rows!("common-mode rejection", "cmrr");
const PSRR: [Row; 3] = rejection_rows!("supply rejection", "psrr");

const VNOISE: [Row; 8] = noise_rows!("voltage noise", "vnoise", "V/√Hz");
const INOISE: [Row; 8] = noise_rows!("current noise", "inoise", "A/√Hz");
const SLEW: [Row; 2] = typmax_rows!("slew", "V/s");
const VOS: [Row; 2] = typmax_rows!("vos", "V");
const DRIFT: [Row; 2] = typmax_rows!("vos_drift", "V/°C");
const IB: [Row; 2] = typmax_rows!("ib", "A");
const IOS: [Row; 2] = typmax_rows!("ios", "A");
const IOUT: [Row; 2] = typmax_rows!("iout", "A");

/// Every row in the form's order.
pub fn rows() -> Vec<Row> {
    let mut copied: Vec<Row> = [SLEW, VOS, DRIFT, IB, IOS, IOUT].concat();
    copied[0].group = "copied as typical or maximum";
    [
        &GAIN[..],
        &OUTPUT_INPUTS[..],
        &VNOISE[..],
        &INOISE[..],
        &SWING[..],
        &copied[..],
        &CMRR[..],
        &PSRR[..],
    ]
    .concat()
}

/// What the form holds: a number per row (by key), the name, the two
/// choices, the selected row and any entry under way.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SheetForm {
    pub values: std::collections::BTreeMap<&'static str, f64>,
    pub name: String,
    pub take: Take,
    pub inverting: bool,
    pub selected: usize,
    /// The selected row's value being typed.
    pub typing: Option<Field>,
    /// A figures file's path being typed (`o`).
    pub loading: Option<Field>,
}

impl SheetForm {
    fn num(&self, key: &str) -> Option<Num> {
        self.values.get(key).copied().map(Num)
    }

    /// The row's value as shown ("" when not given).
    pub fn shown(&self, r: &Row) -> String {
        match r.entry {
            Entry::Name => printable(&self.name),
            Entry::Take => ["typical", "maximum"][usize::from(self.take == Take::Maximum)].into(),
            Entry::Circuit => ["non-inverting", "inverting"][usize::from(self.inverting)].into(),
            // Degrees stay on the number (68°), as the pane writes them.
            _ if r.unit == "°" => self.values.get(r.key).map_or(String::new(), |v| {
                fmt_eng_sig(*v, r.unit, 4).replace(" °", "°")
            }),
            _ => self
                .values
                .get(r.key)
                .map_or(String::new(), |v| fmt_eng_sig(*v, r.unit, 4)),
        }
    }

    /// The text offered when the row is edited.
    fn edit_text(&self, r: &Row) -> String {
        match r.entry {
            Entry::Name => self.name.clone(),
            _ => self
                .values
                .get(r.key)
                .map_or(String::new(), |v| fmt_compact(*v)),
        }
    }

    /// Take typed text into a row: parsed and checked as the pane does
    /// (an empty text or `none` clears it). Ok: what was set.
    pub fn enter(&mut self, r: &Row, text: &str) -> Result<String, Refused> {
        let t = text.trim();
        if r.entry == Entry::Name {
            self.name = t.to_string();
            return Ok(format!("name → {}", printable(t)));
        }
        if t.is_empty() || t.eq_ignore_ascii_case("none") {
            self.values.remove(r.key);
            return Ok(format!("{} ({}) cleared", r.label, r.key));
        }
        let refuse = |why: String| Refused { row: *r, why };
        let v = parse_value(t).map_err(|e| refuse(e.to_string()))?;
        check(r.entry, v).map_err(|why| refuse(format!("`{t}`: {why}")))?;
        self.values.insert(r.key, v);
        Ok(format!("{} ({}) → {}", r.label, r.key, self.shown(r)))
    }

    /// ← →, Enter on a choice row: the other choice.
    fn switch(&mut self, r: &Row) {
        match r.entry {
            Entry::Take => {
                self.take = match self.take {
                    Take::Typical => Take::Maximum,
                    Take::Maximum => Take::Typical,
                }
            }
            Entry::Circuit => self.inverting = !self.inverting,
            _ => {}
        }
    }

    /// A group of rows given together: none, or all of them.
    fn together<const N: usize>(
        &self,
        field: &str,
        keys: [&str; N],
    ) -> Result<Option<[Num; N]>, Problem> {
        let got: Vec<Option<Num>> = keys.iter().map(|k| self.num(k)).collect();
        if got.iter().all(Option::is_none) {
            return Ok(None);
        }
        let missing: Vec<&str> = keys
            .iter()
            .zip(&got)
            .filter(|(_, g)| g.is_none())
            .map(|(k, _)| *k)
            .collect();
        if !missing.is_empty() {
            return Err(Problem::new(
                field,
                format!("needs {} too (or none of its rows)", missing.join(", ")),
            ));
        }
        Ok(Some(std::array::from_fn(|i| got[i].unwrap_or(Num(0.0)))))
    }

    fn noise(&self, p: &str) -> Result<Option<NoiseFigures>, Problem> {
        let k = |s: &str| format!("{p}.{s}");
        let keys = [k("f1"), k("e1"), k("f2"), k("e2")];
        let spots = self
            .together(p, keys.each_ref().map(String::as_str))?
            .map(|[f1, e1, f2, e2]| vec![(f1, e1), (f2, e2)]);
        let n = NoiseFigures {
            spots,
            density: self.num(&k("density")),
            at: self.num(&k("at")),
            white: self.num(&k("white")),
            corner: self.num(&k("corner")),
        };
        Ok((n != NoiseFigures::default()).then_some(n))
    }

    fn typmax(&self, p: &str) -> Option<TypMax> {
        let t = TypMax {
            typ: self.num(&format!("{p}.typ")),
            max: self.num(&format!("{p}.max")),
        };
        (t != TypMax::default()).then_some(t)
    }

    fn rejection(&self, p: &str) -> Option<RejectionFigures> {
        let r = RejectionFigures {
            min: self.num(&format!("{p}.min")),
            typ: self.num(&format!("{p}.typ")),
            corner: self.num(&format!("{p}.corner")),
        };
        (r != RejectionFigures::default()).then_some(r)
    }

    fn swing(&self) -> Result<Option<SwingFigures>, Problem> {
        let supply = self
            .together("swing", ["swing.supply_neg", "swing.supply_pos"])?
            .map(|[n, p]| (n, p));
        let s = SwingFigures {
            neg: self.num("swing.neg"),
            pos: self.num("swing.pos"),
            low: self.num("swing.low"),
            high: self.num("swing.high"),
            supply,
            load: self.num("swing.load"),
        };
        Ok((s != SwingFigures::default()).then_some(s))
    }

    /// The rows as the figures of a file.
    pub fn figures(&self) -> Result<Figures, Problem> {
        let zout = self
            .together("zout", ["zout.ohms", "zout.at", "zout.gain"])?
            .map(|[ohms, at, gain]| Zout {
                ohms,
                at,
                gain,
                circuit: [Circuit::NonInverting, Circuit::Inverting][usize::from(self.inverting)],
            });
        let input_range = self
            .together("input_range", ["input_range.neg", "input_range.pos"])?
            .map(|[neg, pos]| RangeFigures { neg, pos });
        Ok(Figures {
            part: (!self.name.trim().is_empty()).then(|| self.name.trim().to_string()),
            take: self.take,
            gain_db: self.num("gain_db"),
            a0: self.num("a0"),
            gbw: self.num("gbw"),
            unity: self.num("unity"),
            phase_margin: self.num("phase_margin"),
            fp2: self.num("fp2"),
            ro: self.num("ro"),
            zout,
            rin: self.num("rin"),
            cin: self.num("cin"),
            cin_cm: self.num("cin_cm"),
            cin_diff: self.num("cin_diff"),
            vnoise: self.noise("vnoise")?,
            inoise: self.noise("inoise")?,
            swing: self.swing()?,
            input_range,
            slew: self.typmax("slew"),
            vos: self.typmax("vos"),
            vos_drift: self.typmax("vos_drift"),
            ib: self.typmax("ib"),
            ios: self.typmax("ios"),
            iout: self.typmax("iout"),
            cmrr: self.rejection("cmrr"),
            psrr: self.rejection("psrr"),
        })
    }

    /// The form filled from a figures file's figures.
    pub fn from_figures(f: &Figures) -> SheetForm {
        let mut form = SheetForm {
            name: f.part.clone().unwrap_or_default(),
            take: f.take,
            inverting: f.zout.is_some_and(|z| z.circuit == Circuit::Inverting),
            ..SheetForm::default()
        };
        let mut put = |key: &'static str, v: Option<Num>| {
            if let Some(v) = v {
                form.values.insert(key, v.0);
            }
        };
        for (key, v) in [
            ("gain_db", f.gain_db),
            ("a0", f.a0),
            ("gbw", f.gbw),
            ("unity", f.unity),
            ("phase_margin", f.phase_margin),
            ("fp2", f.fp2),
            ("ro", f.ro),
            ("zout.ohms", f.zout.map(|z| z.ohms)),
            ("zout.at", f.zout.map(|z| z.at)),
            ("zout.gain", f.zout.map(|z| z.gain)),
            ("rin", f.rin),
            ("cin", f.cin),
            ("cin_cm", f.cin_cm),
            ("cin_diff", f.cin_diff),
            ("input_range.neg", f.input_range.map(|r| r.neg)),
            ("input_range.pos", f.input_range.map(|r| r.pos)),
        ] {
            put(key, v);
        }
        for (keys, n) in [(&VNOISE, &f.vnoise), (&INOISE, &f.inoise)] {
            for (r, v) in keys.iter().zip(noise_values(n)) {
                put(r.key, v);
            }
        }
        let s = f.swing.unwrap_or_default();
        let swing = [
            s.neg,
            s.pos,
            s.low,
            s.high,
            s.supply.map(|x| x.0),
            s.supply.map(|x| x.1),
            s.load,
        ];
        for (r, v) in SWING.iter().zip(swing) {
            put(r.key, v);
        }
        for (keys, t) in [
            (&SLEW, f.slew),
            (&VOS, f.vos),
            (&DRIFT, f.vos_drift),
            (&IB, f.ib),
            (&IOS, f.ios),
            (&IOUT, f.iout),
        ] {
            let t = t.unwrap_or_default();
            put(keys[0].key, t.typ);
            put(keys[1].key, t.max);
        }
        for (keys, r) in [(&CMRR, f.cmrr), (&PSRR, f.psrr)] {
            let r = r.unwrap_or_default();
            for (row, v) in keys.iter().zip([r.min, r.typ, r.corner]) {
                put(row.key, v);
            }
        }
        form
    }

    /// The amplifier the rows give (the derivation of `loopwright amp`),
    /// or why they cannot give one: the figure and the reason.
    pub fn derivation(&self) -> Result<Derivation, Problem> {
        let d = derive(&self.figures()?)?;
        match unusable(&d.amp) {
            Some((field, message)) => Err(Problem::new(&field, message)),
            None => Ok(d),
        }
    }

    /// Whether a derived value comes from the selected row's figure.
    pub fn from_selected(&self, d: &Derived) -> bool {
        let rows = rows();
        let Some(r) = rows.get(self.selected) else {
            return false;
        };
        let top = r.key.split('.').next().unwrap_or(r.key);
        sources(d.field).contains(&top)
    }

    /// The derived amplifier as a part: the name typed (or "from
    /// datasheet"), each value's formula and inputs as its note.
    fn part(&self, d: &Derivation) -> Part {
        let name = match self.name.trim() {
            "" => "from datasheet".to_string(),
            n => n.to_string(),
        };
        let notes = d
            .values
            .iter()
            .map(|v| (v.field.to_string(), format!("datasheet form: {}", v.how)))
            .collect();
        Part {
            name,
            class: String::new(),
            amp: d.amp.clone(),
            notes,
        }
    }
}

/// A noise figure's values in the order of its eight rows (the first two
/// spots only: a file with more is refused when derived).
fn noise_values(n: &Option<NoiseFigures>) -> [Option<Num>; 8] {
    let n = n.clone().unwrap_or_default();
    let spot = |i: usize| n.spots.as_ref().and_then(|s| s.get(i).copied());
    let (s1, s2) = (spot(0), spot(1));
    [
        s1.map(|s| s.0),
        s1.map(|s| s.1),
        s2.map(|s| s.0),
        s2.map(|s| s.1),
        n.density,
        n.at,
        n.white,
        n.corner,
    ]
}

/// A typed figure the form refused: its row and why (the text included).
#[derive(Debug, Clone)]
pub struct Refused {
    pub row: Row,
    pub why: String,
}

impl std::fmt::Display for Refused {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let r = &self.row;
        write!(f, "{} ({}): {} (value unchanged)", r.label, r.key, self.why)
    }
}

/// Why a number does not fit its row.
#[derive(Debug, Clone, PartialEq)]
enum Misfit {
    NotFinite(f64),
    NotAbove0,
    Negative,
    /// Refused by the amplifier field the row fills (`path`).
    AsField(&'static str, String),
}

impl std::fmt::Display for Misfit {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Misfit::NotFinite(v) => write!(f, "{v} is not a finite number"),
            Misfit::NotAbove0 => f.write_str("must be above 0"),
            Misfit::Negative => f.write_str("must be 0 or more"),
            Misfit::AsField(path, message) => write!(f, "as {path}, {message}"),
        }
    }
}

/// The check of a typed number: its sign, or the `amp` field's range as
/// the pane accepts it (the same message).
fn check(entry: Entry, v: f64) -> Result<(), Misfit> {
    if !v.is_finite() {
        return Err(Misfit::NotFinite(v));
    }
    match entry {
        Positive if v <= 0.0 => Err(Misfit::NotAbove0),
        NonNegative if v < 0.0 => Err(Misfit::Negative),
        Amp(path) => {
            let Some(p) = crate::model::params::param(path) else {
                return Ok(());
            };
            let mut s = crate::files::load::demo();
            p.set(&mut s, Some(v));
            match p.check(&s) {
                Some(problem) => Err(Misfit::AsField(path, problem.message)),
                None => Ok(()),
            }
        }
        _ => Ok(()),
    }
}

/// A key in a one-line entry: `Some(Some(text))` on Enter, `Some(None)`
/// on Esc, `None` while typing goes on (the field edited).
fn entry_key(key: &KeyEvent, field: &mut Field) -> Option<Option<String>> {
    match keys::field_key(key) {
        FieldKey::Edit(FieldAction::Apply) => return Some(Some(field.text())),
        FieldKey::Edit(FieldAction::Cancel) => return Some(None),
        FieldKey::Edit(a) => field.edit(a),
        FieldKey::Type(c) => field.insert(c),
        FieldKey::Ignore => {}
    }
    None
}

/// The form's keys outside an entry.
const MOVES: [(KeyCode, isize); 6] = [
    (KeyCode::Up, -1),
    (KeyCode::Down, 1),
    (KeyCode::PageUp, -10),
    (KeyCode::PageDown, 10),
    (KeyCode::Home, -1000),
    (KeyCode::End, 1000),
];

impl App {
    /// `d`: open the form as it was left.
    pub(super) fn start_sheet(&mut self) {
        let form = self.sheet_draft.take().unwrap_or_default();
        self.mode = Mode::Sheet(form);
        self.info(
            "datasheet form: ↑↓ a row, type its value; a applies, A saves a part, Esc leaves",
        );
    }

    /// Leave the form (kept for the next `d`).
    fn keep_sheet(&mut self, form: Box<SheetForm>) {
        self.sheet_draft = Some(form);
    }

    pub(super) fn on_sheet_key(&mut self, key: KeyEvent, mut form: Box<SheetForm>) {
        if let Some(field) = form.typing.take() {
            return self.on_sheet_entry(key, form, field);
        }
        if let Some(field) = form.loading.take() {
            return self.on_sheet_load(key, form, field);
        }
        let rows = rows();
        let r = rows[form.selected.min(rows.len() - 1)];
        let choice = matches!(r.entry, Entry::Take | Entry::Circuit);
        let number = !choice && r.entry != Entry::Name;
        if let Some(&(_, by)) = MOVES.iter().find(|(c, _)| *c == key.code) {
            form.selected = form.selected.saturating_add_signed(by).min(rows.len() - 1);
        } else {
            match key.code {
                KeyCode::Esc => {
                    self.keep_sheet(form);
                    return self
                        .info("datasheet form left: stage unchanged (d reopens it as typed)");
                }
                KeyCode::Enter | KeyCode::Left | KeyCode::Right if choice => form.switch(&r),
                KeyCode::Enter => form.typing = Some(Field::offering(&form.edit_text(&r))),
                KeyCode::Delete | KeyCode::Backspace if choice => {
                    self.info(format!("{} is a choice: ← → switch it", r.label));
                }
                KeyCode::Delete | KeyCode::Backspace => match form.enter(&r, "") {
                    Ok(msg) => self.info(msg),
                    Err(e) => self.error(e.to_string()),
                },
                KeyCode::Char('a') => return self.sheet_apply(form),
                KeyCode::Char('A') => return self.sheet_save(form),
                KeyCode::Char('o') => {
                    form.loading = Some(Field::default());
                    self.info("figures file: type its path; Enter fills the form, Esc cancels");
                }
                KeyCode::Char(c) if number && (c.is_ascii_digit() || "+-.".contains(c)) => {
                    let mut f = Field::default();
                    f.insert(c);
                    form.typing = Some(f);
                }
                _ => {}
            }
        }
        self.mode = Mode::Sheet(form);
    }

    /// A key while a row's value is typed: Enter takes it (or refuses it
    /// with the row, the text and why), Esc drops it.
    fn on_sheet_entry(&mut self, key: KeyEvent, mut form: Box<SheetForm>, mut field: Field) {
        match entry_key(&key, &mut field) {
            Some(Some(text)) => {
                let rows = rows();
                let r = rows[form.selected.min(rows.len() - 1)];
                match form.enter(&r, &text) {
                    Ok(msg) => self.info(msg),
                    Err(e) => self.error(e.to_string()),
                }
            }
            Some(None) => self.info("entry dropped: the row is unchanged"),
            None => form.typing = Some(field),
        }
        self.mode = Mode::Sheet(form);
    }

    /// A key while a figures file's path is typed: Enter fills every row
    /// from the file (a bad file is reported at file:line:column and the
    /// rows stay), Esc drops it.
    fn on_sheet_load(&mut self, key: KeyEvent, mut form: Box<SheetForm>, mut field: Field) {
        match entry_key(&key, &mut field) {
            Some(Some(text)) => {
                let path = std::path::PathBuf::from(text.trim());
                match read_figures(&path) {
                    Ok(f) => {
                        let selected = form.selected;
                        form = Box::new(SheetForm {
                            selected,
                            ..SheetForm::from_figures(&f)
                        });
                        let shown = printable(&path.display().to_string());
                        match derive_file(&path) {
                            Ok(_) => self.info(format!(
                                "the form holds the figures of {shown}; a applies them"
                            )),
                            // Placed in the file, as `loopwright amp` says it.
                            Err(e) => self.error(format!(
                                "{e} (the form holds the file's figures: fix them here)"
                            )),
                        }
                    }
                    Err(e) => self.error(format!("{e} (form unchanged)")),
                }
            }
            Some(None) => self.info("no file read"),
            None => form.loading = Some(field),
        }
        self.mode = Mode::Sheet(form);
    }

    /// `a`: set the stage's amplifier from the derivation, as a part is
    /// applied; figures that cannot be reconciled keep the form open.
    fn sheet_apply(&mut self, form: Box<SheetForm>) {
        match form.derivation() {
            Ok(d) => {
                let part = form.part(&d);
                self.keep_sheet(form);
                self.apply_part(part);
            }
            Err(p) => {
                self.mode = Mode::Sheet(form);
                self.error(format!("not applied: {}: {}", p.field, p.message));
            }
        }
    }

    /// `A`: save the derived amplifier as a part (asks the name, then
    /// where; never replaces a file unasked).
    fn sheet_save(&mut self, form: Box<SheetForm>) {
        match form.derivation() {
            Ok(d) => {
                let part = form.part(&d);
                self.keep_sheet(form);
                self.mode = Mode::Prompt(Prompt::PartName, Field::offering(&part.name));
                self.pending_part = Some(part);
                self.info("save the derived amplifier as a part: type its name; Enter goes on, Esc cancels");
            }
            Err(p) => {
                self.mode = Mode::Sheet(form);
                self.error(format!("not saved: {}: {}", p.field, p.message));
            }
        }
    }
}
