//! The scenario: one amplifier stage, its op-amp model, source, load and
//! environment, in SI units. Stored as RON; errors name the field, line and
//! column.

use super::eseries::Series;
use super::filetext;
use serde::{Deserialize, Serialize};
use std::fmt;

/// The newest file-format version this build reads and writes.
pub const FORMAT_VERSION: u32 = 1;

fn default_version() -> u32 {
    FORMAT_VERSION
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Topology {
    NonInverting,
    Inverting,
    Follower,
}

impl Topology {
    pub fn name(self) -> &'static str {
        match self {
            Topology::NonInverting => "NonInverting",
            Topology::Inverting => "Inverting",
            Topology::Follower => "Follower",
        }
    }

    /// Next topology in the order NonInverting → Inverting → Follower.
    pub fn cycle(self) -> Topology {
        match self {
            Topology::NonInverting => Topology::Inverting,
            Topology::Inverting => Topology::Follower,
            Topology::Follower => Topology::NonInverting,
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Stage {
    pub topology: Topology,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub rg: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub rf: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub cf: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub riso: Option<f64>,
    pub series: Series,
    pub tolerance: f64,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Amp {
    pub a0: f64,
    pub gbw: f64,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub fp2: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub rin: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub cin: Option<f64>,
    pub ro: f64,
    pub vnoise: f64,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub vnoise_corner: Option<f64>,
    pub inoise: f64,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub inoise_corner: Option<f64>,
    /// Input offset voltage magnitude (V), sign unknown, in series with
    /// the + input where the voltage noise sits.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub vos: Option<f64>,
    /// Offset drift magnitude (V/°C) away from 25 °C.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub vos_drift: Option<f64>,
    /// Input bias current (A, signed): positive flows into each pin.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ib: Option<f64>,
    /// Input offset current magnitude |ib+ − ib−| (A), sign unknown.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ios: Option<f64>,
    /// Slew rate (V/s); absent or 0 = no limit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub slew: Option<f64>,
    /// How close the internal output gets to the negative / positive rail (V).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub swing_neg: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub swing_pos: Option<f64>,
    /// Where the input common-mode range ends inside the negative /
    /// positive rail (V; negative = beyond the rail).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cm_neg: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cm_pos: Option<f64>,
    /// Output current limit magnitude (A); absent or 0 = no limit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub iout: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Source {
    pub r: f64,
    /// DC level of the source EMF (V).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dc: Option<f64>,
    /// Peak amplitude of the signal at the source EMF (V): the level the
    /// signal limits are checked at.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub peak: Option<f64>,
}

/// The supply rails (V), neg below pos.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Supply {
    pub neg: f64,
    pub pos: f64,
}

impl Default for Supply {
    /// What a rail typed into an absent supply starts from.
    fn default() -> Supply {
        Supply {
            neg: -15.0,
            pos: 15.0,
        }
    }
}

/// The step of the source EMF for the step response (V, not zero).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Step {
    pub size: f64,
}

/// How a varied part is drawn within its spread.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum Dist {
    /// Uniform over ±tolerance.
    #[default]
    Uniform,
    /// Normal with tolerance = 3σ, truncated at ±tolerance.
    Normal,
}

impl Dist {
    pub fn name(self) -> &'static str {
        match self {
            Dist::Uniform => "Uniform",
            Dist::Normal => "Normal",
        }
    }
}

/// How the parts of a built stage vary (the resistors within
/// `stage.tolerance`; absent spreads are 0).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spread {
    #[serde(default)]
    pub dist: Dist,
    /// cf within ±cap_tol (fraction).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cap_tol: Option<f64>,
    /// The gain-bandwidth within ±gbw_tol (fraction).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gbw_tol: Option<f64>,
    /// The open-loop gain between a0_min and amp.a0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub a0_min: Option<f64>,
    /// The open-loop output resistance within ±ro_tol (fraction).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ro_tol: Option<f64>,
    /// Monte Carlo trials (2000 without it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trials: Option<u32>,
    /// The generator's seed (1 without it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub seed: Option<u64>,
}

/// Limits a built stage must meet; each present one is checked on the
/// nominal design and on every trial (equal to the limit passes).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spec {
    /// The gain the error is measured against (the nominal stage's
    /// network gain without it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gain_target: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gain_error_max: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub f_3db_min: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub peaking_max_db: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pm_min_deg: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zout_max_ohm: Option<f64>,
    /// Where zout_max_ohm applies (0 or absent: DC).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zout_at_hz: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub noise_rms_max: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub offset_max_v: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub settle_max_s: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub headroom_min_v: Option<f64>,
    /// The fraction of trials that must meet every limit (1 without it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub yield_min: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Load {
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub r: Option<f64>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub c: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    #[serde(default = "default_version")]
    pub version: u32,
    pub title: String,
    pub stage: Stage,
    pub amp: Amp,
    pub source: Source,
    pub load: Load,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub supply: Option<Supply>,
    /// The step the time-domain analysis applies (10 mV without it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub step: Option<Step>,
    pub temp_c: f64,
    pub band: (f64, f64),
    /// How the parts vary from board to board.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spread: Option<Spread>,
    /// The limits every board must meet.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spec: Option<Spec>,
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "bare"
    )]
    pub notes: Option<String>,
}

/// A value that is present and non-zero (zero means "absent" for the
/// optional parts such as cf, riso, cin and the noise corners).
pub fn present(v: Option<f64>) -> Option<f64> {
    v.filter(|x| *x != 0.0)
}

/// A problem with one field of a scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldProblem {
    /// Dotted path, e.g. `stage.rg`.
    pub field: String,
    pub message: String,
}

/// A scenario that could not be loaded or is not valid.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioError {
    pub file: Option<String>,
    pub field: Option<String>,
    /// 1-based line and column, when the position is known.
    pub line: Option<usize>,
    pub col: Option<usize>,
    pub message: String,
}

impl fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(file) = &self.file {
            write!(f, "{file}:")?;
        }
        if let (Some(l), Some(c)) = (self.line, self.col) {
            write!(f, "{l}:{c}:")?;
        }
        if self.file.is_some() || self.line.is_some() {
            f.write_str(" ")?;
        }
        if let Some(field) = &self.field {
            write!(f, "field `{field}`: ")?;
        }
        f.write_str(&self.message)
    }
}

impl std::error::Error for ScenarioError {}

/// A present optional value is written bare (`rf: 10000.0`), as the
/// loader reads it; absent ones are skipped.
fn bare<T: Serialize, S: serde::Serializer>(v: &Option<T>, s: S) -> Result<S::Ok, S::Error> {
    match v {
        Some(x) => x.serialize(s),
        None => s.serialize_none(),
    }
}

/// The loader's options: a present optional field is a bare value (files
/// that also carry the `#![enable(implicit_some)]` header read the same).
fn ron_options() -> ron::Options {
    ron::Options::default().with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
}

impl Scenario {
    /// Parse and validate RON text. `file` only labels the error.
    pub fn from_ron(text: &str, file: Option<&str>) -> Result<Scenario, ScenarioError> {
        // A UTF-8 byte-order mark (U+FEFF) is not part of the text.
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let fields = field_positions(text);
        // Versions are checked first, so a newer file is reported as such
        // rather than as an unknown field.
        check_version(text, &fields, file)?;
        check_topology(text, &fields, file)?;
        let scenario: Scenario = ron_options()
            .from_str(text)
            .map_err(|e| ron_error(&e, &fields, file))?;
        if let Err(problems) = scenario.validate() {
            return Err(validation_error(&problems[0], &fields, file));
        }
        Ok(scenario)
    }

    /// Read a scenario file.
    pub fn load(path: &std::path::Path) -> Result<Scenario, ScenarioError> {
        Scenario::read(path).map(|(s, _)| s)
    }

    /// Read a scenario file, also returning its text (for what the
    /// scenario does not hold, such as comments). Only a regular file of at
    /// most [`filetext::MAX_BYTES`] is read; a FIFO or device is refused
    /// without blocking.
    pub fn read(path: &std::path::Path) -> Result<(Scenario, String), ScenarioError> {
        let name = path.display().to_string();
        let text = filetext::read_text(path, filetext::MAX_BYTES).map_err(|e| {
            let (line, col, message) = match e {
                filetext::TextError::File(m) => (None, None, m),
                filetext::TextError::Encoding { line, col, byte } => (
                    Some(line),
                    Some(col),
                    format!("the file is not UTF-8 text (byte 0x{byte:02X}); save it as UTF-8"),
                ),
            };
            ScenarioError {
                file: Some(name.clone()),
                field: None,
                line,
                col,
                message,
            }
        })?;
        let s = Scenario::from_ron(&text, Some(&name))?;
        Ok((s, text))
    }

    /// Pretty RON in the documented shape, stable field order.
    pub fn to_ron(&self) -> String {
        let config = ron::ser::PrettyConfig::new()
            .depth_limit(2)
            .separate_tuple_members(false);
        ron::ser::to_string_pretty(self, config).unwrap_or_else(|e| format!("// {e}"))
    }

    /// Check every field against the parameter table; all problems are
    /// returned, in file order.
    pub fn validate(&self) -> Result<(), Vec<FieldProblem>> {
        let p = super::params::problems(self);
        if p.is_empty() {
            Ok(())
        } else {
            Err(p)
        }
    }
}

/// An error about `field`, placed where the field stands in the text.
fn error_at(pos: &FieldPos, field: &str, message: String, file: Option<&str>) -> ScenarioError {
    ScenarioError {
        file: file.map(str::to_string),
        field: Some(field.into()),
        line: Some(pos.line),
        col: Some(pos.col),
        message,
    }
}

/// Refuse a `version` that is newer than this build, zero, or not a number.
fn check_version(text: &str, fields: &[FieldPos], file: Option<&str>) -> Result<(), ScenarioError> {
    let Some(v) = fields.iter().find(|f| f.path == "version") else {
        return Ok(());
    };
    let token = value_token(&text[v.value_offset..]);
    let message = match token.parse::<u32>() {
        Ok(n) if n > FORMAT_VERSION => format!(
            "file format version {n} is newer than this loopwright reads \
             (up to {FORMAT_VERSION}); update loopwright"
        ),
        Ok(0) => format!("0 is not a file format version (versions start at 1; this loopwright writes {FORMAT_VERSION})"),
        Ok(_) => return Ok(()),
        Err(_) => format!(
            "`{token}` is not a file format version: it must be a whole number \
             (this loopwright writes {FORMAT_VERSION})"
        ),
    };
    Err(error_at(v, "version", message, file))
}

/// Refuse a `stage.topology` that names no known topology.
fn check_topology(
    text: &str,
    fields: &[FieldPos],
    file: Option<&str>,
) -> Result<(), ScenarioError> {
    let Some(t) = fields.iter().find(|f| f.path == "stage.topology") else {
        return Ok(());
    };
    let token = value_token(&text[t.value_offset..]);
    let names = [
        Topology::NonInverting,
        Topology::Inverting,
        Topology::Follower,
    ];
    if names.iter().any(|n| n.name() == token) {
        return Ok(());
    }
    let list: Vec<&str> = names.iter().map(|n| n.name()).collect();
    Err(error_at(
        t,
        "stage.topology",
        format!("`{token}` is not a topology: use {}", list.join(", ")),
        file,
    ))
}

/// Turn a RON parse error into a ScenarioError naming the field, if known.
fn ron_error(
    e: &ron::error::SpannedError,
    fields: &[FieldPos],
    file: Option<&str>,
) -> ScenarioError {
    let message = match &e.code {
        ron::Error::MissingStructField { field, .. } => {
            format!("required field `{field}` is missing")
        }
        other => other.to_string(),
    };
    ScenarioError {
        file: file.map(str::to_string),
        field: ron_error_field(e, fields),
        line: Some(e.span.start.line),
        col: Some(e.span.start.col),
        message,
    }
}

/// The dotted field a RON parse error is about, if it names or points at one.
fn ron_error_field(e: &ron::error::SpannedError, fields: &[FieldPos]) -> Option<String> {
    match &e.code {
        ron::Error::MissingStructField { field, outer } => Some(match outer {
            Some(o) => format!("{}.{field}", outer_path(o)),
            None => field.to_string(),
        })
        .map(|p| p.trim_start_matches('.').to_string()),
        // A value of the wrong kind sits in the field before it;
        // a syntax error names no field (the nesting may be broken).
        ron::Error::InvalidValueForType { .. }
        | ron::Error::ExpectedFloat
        | ron::Error::ExpectedInteger
        | ron::Error::ExpectedString
        | ron::Error::ExpectedStringEnd
        | ron::Error::ExpectedBoolean
        | ron::Error::ExpectedOption
        | ron::Error::ExpectedIdentifier
        | ron::Error::ExpectedStructLike
        | ron::Error::ExpectedNamedStructLike(_)
        | ron::Error::ExpectedArray
        | ron::Error::ExpectedDifferentLength { .. }
        | ron::Error::IntegerOutOfBounds
        | ron::Error::NoSuchEnumVariant { .. }
        | ron::Error::NoSuchStructField { .. }
        | ron::Error::DuplicateStructField { .. } => {
            field_at(fields, e.span.start.line, e.span.start.col)
        }
        _ => None,
    }
}

/// Turn a validation problem into a ScenarioError placed at its field.
fn validation_error(p: &FieldProblem, fields: &[FieldPos], file: Option<&str>) -> ScenarioError {
    let pos = locate(fields, &p.field);
    ScenarioError {
        file: file.map(str::to_string),
        field: Some(p.field.clone()),
        line: pos.map(|f| f.line),
        col: pos.map(|f| f.col),
        message: p.message.clone(),
    }
}

/// The field itself, or (when it is missing) the part that should hold it.
fn locate<'a>(fields: &'a [FieldPos], field: &str) -> Option<&'a FieldPos> {
    let mut path = field;
    loop {
        if let Some(f) = fields.iter().find(|f| f.path == path) {
            return Some(f);
        }
        match path.rfind('.') {
            Some(i) => path = &path[..i],
            None => return None,
        }
    }
}

fn outer_path(outer: &str) -> String {
    match outer {
        "Stage" => "stage".into(),
        "Amp" => "amp".into(),
        "Source" => "source".into(),
        "Load" => "load".into(),
        "Supply" => "supply".into(),
        "Step" => "step".into(),
        "Spread" => "spread".into(),
        "Spec" => "spec".into(),
        _ => String::new(),
    }
}

/// Where a field name stands in the text, and where its value starts.
#[derive(Debug, Clone)]
pub struct FieldPos {
    pub path: String,
    pub line: usize,
    pub col: usize,
    pub offset: usize,
    pub value_offset: usize,
}

/// Scan RON text for `name:` fields, tracking nesting so each gets a dotted
/// path (`stage.rg`, `load.r`). Strings and comments are skipped.
pub fn field_positions(text: &str) -> Vec<FieldPos> {
    let mut cur = Cursor::new(text);
    let mut out = Vec::new();
    let mut depth = 0usize;
    let mut names: Vec<String> = Vec::new();
    while let Some(c) = cur.peek(0) {
        let next = cur.peek(1);
        if c == '/' && next == Some('/') {
            cur.skip_line_comment();
        } else if c == '/' && next == Some('*') {
            cur.skip_block_comment();
        } else if c == '"' {
            cur.skip_string();
        } else if c.is_ascii_alphabetic() || c == '_' {
            let (offset, line, col) = (cur.offset(), cur.line, cur.col);
            let ident = cur.ident();
            if let Some(value_offset) = cur.colon_after() {
                names.truncate(depth.max(1) - 1);
                names.push(ident);
                out.push(FieldPos {
                    path: names.join("."),
                    line,
                    col,
                    offset,
                    value_offset,
                });
            }
        } else {
            match c {
                '(' | '[' | '{' => depth += 1,
                ')' | ']' | '}' => {
                    depth = depth.saturating_sub(1);
                    names.truncate(depth);
                }
                _ => {}
            }
            cur.bump();
        }
    }
    out
}

/// A position in RON text that counts 1-based lines and columns.
struct Cursor {
    chars: Vec<(usize, char)>,
    len: usize,
    i: usize,
    line: usize,
    col: usize,
}

impl Cursor {
    /// A cursor at the start of `text`.
    fn new(text: &str) -> Cursor {
        Cursor {
            chars: text.char_indices().collect(),
            len: text.len(),
            i: 0,
            line: 1,
            col: 1,
        }
    }

    /// The character `k` places after the cursor.
    fn peek(&self, k: usize) -> Option<char> {
        self.chars.get(self.i + k).map(|x| x.1)
    }

    /// Byte offset of the character under the cursor.
    fn offset(&self) -> usize {
        self.chars[self.i].0
    }

    /// Step over one character, moving to the next line after a newline.
    fn bump(&mut self) {
        if self.chars[self.i].1 == '\n' {
            self.line += 1;
            self.col = 1;
        } else {
            self.col += 1;
        }
        self.i += 1;
    }

    /// Skip a `//` comment up to (not including) the line end.
    fn skip_line_comment(&mut self) {
        while self.peek(0).is_some_and(|c| c != '\n') {
            self.bump();
        }
    }

    /// Skip a `/* … */` comment, or to the end when it is not closed.
    fn skip_block_comment(&mut self) {
        self.bump();
        self.bump();
        while self.peek(0).is_some() {
            if self.peek(0) == Some('*') && self.peek(1) == Some('/') {
                self.bump();
                self.bump();
                break;
            }
            self.bump();
        }
    }

    /// Skip a string literal with its escapes, or to the end when unclosed.
    fn skip_string(&mut self) {
        self.bump();
        while let Some(ch) = self.peek(0) {
            self.bump();
            if ch == '\\' && self.peek(0).is_some() {
                self.bump();
            } else if ch == '"' {
                break;
            }
        }
    }

    /// Read an identifier (letters, digits, `_`) starting at the cursor.
    fn ident(&mut self) -> String {
        let mut ident = String::new();
        while let Some(c) = self
            .peek(0)
            .filter(|c| c.is_ascii_alphanumeric() || *c == '_')
        {
            ident.push(c);
            self.bump();
        }
        ident
    }

    /// When a single `:` follows past spaces, the byte offset after it
    /// (the cursor does not move).
    fn colon_after(&self) -> Option<usize> {
        let mut k = self.i;
        while k < self.chars.len() && (self.chars[k].1 == ' ' || self.chars[k].1 == '\t') {
            k += 1;
        }
        let single = k < self.chars.len()
            && self.chars[k].1 == ':'
            && self.chars.get(k + 1).map(|x| x.1) != Some(':');
        single.then(|| self.chars.get(k + 1).map(|x| x.0).unwrap_or(self.len))
    }
}

/// The value text that starts a field's value: up to a separator, a
/// bracket, a comment or a line end (`1.5`, `NonInverting`, `1e3`).
fn value_token(rest: &str) -> &str {
    let rest = rest.trim_start();
    let end = rest
        .find(|c: char| c == ',' || c == ')' || c == '(' || c == '/' || c.is_whitespace())
        .unwrap_or(rest.len());
    &rest[..end]
}

/// The field whose definition most recently precedes a position.
fn field_at(fields: &[FieldPos], line: usize, col: usize) -> Option<String> {
    fields
        .iter()
        .rev()
        .find(|f| (f.line, f.col) <= (line, col))
        .map(|f| f.path.clone())
}

/// The built-in demo scenario (embedded in the binary).
pub const DEMO_RON: &str = include_str!("../../assets/demo.ron");

pub fn demo() -> Scenario {
    Scenario::from_ron(DEMO_RON, Some("assets/demo.ron")).expect("the built-in demo is valid")
}

impl Scenario {
    /// The fields whose values differ: (name, value in self, value in other).
    pub fn differences(&self, other: &Scenario) -> Vec<(&'static str, String, String)> {
        super::params::field_list(self)
            .into_iter()
            .zip(super::params::field_list(other))
            .filter(|(a, b)| a.1 != b.1)
            .map(|(a, b)| (a.0, a.1, b.1))
            .collect()
    }
}
