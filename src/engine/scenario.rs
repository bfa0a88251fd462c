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
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rg: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rf: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cf: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub riso: Option<f64>,
    pub series: Series,
    pub tolerance: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Amp {
    pub a0: f64,
    pub gbw: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fp2: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rin: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cin: Option<f64>,
    pub ro: f64,
    pub vnoise: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub vnoise_corner: Option<f64>,
    pub inoise: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub inoise_corner: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Source {
    pub r: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Load {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub r: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
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
    pub temp_c: f64,
    pub band: (f64, f64),
    #[serde(default, skip_serializing_if = "Option::is_none")]
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

fn ron_options() -> ron::Options {
    ron::Options::default().with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
}

impl Scenario {
    /// Parse and validate RON text. `file` only labels the error.
    pub fn from_ron(text: &str, file: Option<&str>) -> Result<Scenario, ScenarioError> {
        // A UTF-8 byte-order mark (U+FEFF) is not part of the text.
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let fields = field_positions(text);
        let at = |f: &FieldPos, field: &str, message: String| ScenarioError {
            file: file.map(str::to_string),
            field: Some(field.into()),
            line: Some(f.line),
            col: Some(f.col),
            message,
        };
        // Versions are checked first, so a newer file is reported as such
        // rather than as an unknown field.
        if let Some(v) = fields.iter().find(|f| f.path == "version") {
            let token = value_token(&text[v.value_offset..]);
            match token.parse::<u32>() {
                Ok(n) if n > FORMAT_VERSION => {
                    return Err(at(
                        v,
                        "version",
                        format!(
                            "file format version {n} is newer than this loopwright reads \
                             (up to {FORMAT_VERSION}); update loopwright"
                        ),
                    ))
                }
                Ok(0) => {
                    return Err(at(
                        v,
                        "version",
                        format!("0 is not a file format version (versions start at 1; this loopwright writes {FORMAT_VERSION})"),
                    ))
                }
                Ok(_) => {}
                Err(_) => {
                    return Err(at(
                        v,
                        "version",
                        format!(
                            "`{token}` is not a file format version: it must be a whole number \
                             (this loopwright writes {FORMAT_VERSION})"
                        ),
                    ))
                }
            }
        }
        if let Some(t) = fields.iter().find(|f| f.path == "stage.topology") {
            let token = value_token(&text[t.value_offset..]);
            let names = [
                Topology::NonInverting,
                Topology::Inverting,
                Topology::Follower,
            ];
            if !names.iter().any(|n| n.name() == token) {
                let list: Vec<&str> = names.iter().map(|n| n.name()).collect();
                return Err(at(
                    t,
                    "stage.topology",
                    format!("`{token}` is not a topology: use {}", list.join(", ")),
                ));
            }
        }
        let scenario: Scenario = ron_options().from_str(text).map_err(|e| {
            let field = match &e.code {
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
                    field_at(&fields, e.span.start.line, e.span.start.col)
                }
                _ => None,
            };
            let message = match &e.code {
                ron::Error::MissingStructField { field, .. } => {
                    format!("required field `{field}` is missing")
                }
                other => other.to_string(),
            };
            ScenarioError {
                file: file.map(str::to_string),
                field,
                line: Some(e.span.start.line),
                col: Some(e.span.start.col),
                message,
            }
        })?;
        if let Err(problems) = scenario.validate() {
            let p = &problems[0];
            // The field itself, or (when it is missing) the part that should hold it.
            let mut path = p.field.as_str();
            let pos = loop {
                if let Some(f) = fields.iter().find(|f| f.path == path) {
                    break Some(f);
                }
                match path.rfind('.') {
                    Some(i) => path = &path[..i],
                    None => break None,
                }
            };
            return Err(ScenarioError {
                file: file.map(str::to_string),
                field: Some(p.field.clone()),
                line: pos.map(|f| f.line),
                col: pos.map(|f| f.col),
                message: p.message.clone(),
            });
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
            .separate_tuple_members(false)
            .extensions(ron::extensions::Extensions::IMPLICIT_SOME);
        ron::ser::to_string_pretty(self, config).unwrap_or_else(|e| format!("// {e}"))
    }

    /// Check every field; all problems are returned, in file order.
    pub fn validate(&self) -> Result<(), Vec<FieldProblem>> {
        let mut p = Vec::new();
        let mut check =
            |field: &str, v: f64, ok: bool, rule: &str| check_field(&mut p, field, v, ok, rule);
        let pos = "must be greater than zero";
        let nonneg = "must not be negative (0 means absent)";
        let s = &self.stage;
        let gain_stage = s.topology != Topology::Follower;
        let needs = |name: &str| format!("is missing: a {} stage needs {name}", s.topology.name());
        match s.rg {
            Some(v) => check("stage.rg", v, v > 0.0, pos),
            None if gain_stage => check("stage.rg", 0.0, false, &needs("rg")),
            None => {}
        }
        match s.rf {
            Some(v) if gain_stage => check("stage.rf", v, v > 0.0, pos),
            Some(v) => check(
                "stage.rf",
                v,
                v >= 0.0,
                "must not be negative (0 means a wire)",
            ),
            None if gain_stage => check("stage.rf", 0.0, false, &needs("rf")),
            None => {}
        }
        if let Some(v) = s.cf {
            check("stage.cf", v, v >= 0.0, nonneg);
        }
        if let Some(v) = s.riso {
            check("stage.riso", v, v >= 0.0, nonneg);
        }
        check(
            "stage.tolerance",
            s.tolerance,
            s.tolerance > 0.0 && s.tolerance < 1.0,
            "must be a fraction between 0 and 1 (0.01 = 1 %)",
        );
        let a = &self.amp;
        check("amp.a0", a.a0, a.a0 >= 1.0, "must be at least 1");
        check("amp.gbw", a.gbw, a.gbw > 0.0, pos);
        if let Some(v) = a.fp2 {
            check("amp.fp2", v, v > 0.0, pos);
        }
        if let Some(v) = a.rin {
            check("amp.rin", v, v > 0.0, pos);
        }
        if let Some(v) = a.cin {
            check("amp.cin", v, v >= 0.0, nonneg);
        }
        check("amp.ro", a.ro, a.ro > 0.0, pos);
        check("amp.vnoise", a.vnoise, a.vnoise >= 0.0, nonneg);
        if let Some(v) = a.vnoise_corner {
            check("amp.vnoise_corner", v, v >= 0.0, nonneg);
        }
        check("amp.inoise", a.inoise, a.inoise >= 0.0, nonneg);
        if let Some(v) = a.inoise_corner {
            check("amp.inoise_corner", v, v >= 0.0, nonneg);
        }
        check(
            "source.r",
            self.source.r,
            self.source.r >= 0.0,
            "must not be negative (0 means an ideal source)",
        );
        if let Some(v) = self.load.r {
            check("load.r", v, v > 0.0, pos);
        }
        if let Some(v) = self.load.c {
            check("load.c", v, v >= 0.0, nonneg);
        }
        check(
            "temp_c",
            self.temp_c,
            self.temp_c > -273.15,
            "is below absolute zero",
        );
        let (lo, hi) = self.band;
        check(
            "band",
            lo,
            lo > 0.0,
            "(band start) must be greater than zero",
        );
        check(
            "band",
            hi,
            hi > lo,
            "(band end) must be above the band start",
        );
        if p.is_empty() {
            Ok(())
        } else {
            Err(p)
        }
    }
}

fn check_field(p: &mut Vec<FieldProblem>, field: &str, v: f64, ok: bool, rule: &str) {
    if !v.is_finite() {
        p.push(FieldProblem {
            field: field.into(),
            message: format!("{v} is not a finite number"),
        });
    } else if !ok {
        // A missing value has no number to show.
        let message = if rule.starts_with("is missing") {
            format!("the field {rule}")
        } else {
            format!("{v} {rule}")
        };
        p.push(FieldProblem {
            field: field.into(),
            message,
        });
    }
}

fn outer_path(outer: &str) -> String {
    match outer {
        "Stage" => "stage".into(),
        "Amp" => "amp".into(),
        "Source" => "source".into(),
        "Load" => "load".into(),
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
    let bytes: Vec<(usize, char)> = text.char_indices().collect();
    let mut out = Vec::new();
    let mut depth = 0usize;
    let mut names: Vec<String> = Vec::new();
    let (mut line, mut col) = (1usize, 1usize);
    let mut i = 0;
    let advance = |c: char, line: &mut usize, col: &mut usize| {
        if c == '\n' {
            *line += 1;
            *col = 1;
        } else {
            *col += 1;
        }
    };
    while i < bytes.len() {
        let (off, c) = bytes[i];
        let next = bytes.get(i + 1).map(|x| x.1);
        if c == '/' && next == Some('/') {
            while i < bytes.len() && bytes[i].1 != '\n' {
                advance(bytes[i].1, &mut line, &mut col);
                i += 1;
            }
            continue;
        }
        if c == '/' && next == Some('*') {
            advance(c, &mut line, &mut col);
            advance('*', &mut line, &mut col);
            i += 2;
            while i < bytes.len() {
                if bytes[i].1 == '*' && bytes.get(i + 1).map(|x| x.1) == Some('/') {
                    advance('*', &mut line, &mut col);
                    advance('/', &mut line, &mut col);
                    i += 2;
                    break;
                }
                advance(bytes[i].1, &mut line, &mut col);
                i += 1;
            }
            continue;
        }
        if c == '"' {
            advance(c, &mut line, &mut col);
            i += 1;
            while i < bytes.len() {
                let ch = bytes[i].1;
                advance(ch, &mut line, &mut col);
                i += 1;
                if ch == '\\' && i < bytes.len() {
                    advance(bytes[i].1, &mut line, &mut col);
                    i += 1;
                } else if ch == '"' {
                    break;
                }
            }
            continue;
        }
        if c.is_ascii_alphabetic() || c == '_' {
            let (sl, sc) = (line, col);
            let mut j = i;
            let mut ident = String::new();
            while j < bytes.len() && (bytes[j].1.is_ascii_alphanumeric() || bytes[j].1 == '_') {
                ident.push(bytes[j].1);
                advance(bytes[j].1, &mut line, &mut col);
                j += 1;
            }
            // Look past spaces for a single ':'.
            let mut k = j;
            while k < bytes.len() && (bytes[k].1 == ' ' || bytes[k].1 == '\t') {
                k += 1;
            }
            if k < bytes.len() && bytes[k].1 == ':' && bytes.get(k + 1).map(|x| x.1) != Some(':') {
                let d = depth.max(1);
                names.truncate(d - 1);
                names.push(ident);
                let value_offset = bytes.get(k + 1).map(|x| x.0).unwrap_or(text.len());
                out.push(FieldPos {
                    path: names.join("."),
                    line: sl,
                    col: sc,
                    offset: off,
                    value_offset,
                });
            }
            i = j;
            continue;
        }
        match c {
            '(' | '[' | '{' => depth += 1,
            ')' | ']' | '}' => {
                depth = depth.saturating_sub(1);
                names.truncate(depth);
            }
            _ => {}
        }
        advance(c, &mut line, &mut col);
        i += 1;
    }
    out
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
    /// Every field as (dotted name, value text), in file order; absent
    /// optional fields read "none". Used to list what differs between two
    /// stages.
    pub fn field_list(&self) -> Vec<(&'static str, String)> {
        use super::values::fmt_compact;
        let num = |v: f64| fmt_compact(v);
        let opt = |v: Option<f64>| v.map(fmt_compact).unwrap_or_else(|| "none".into());
        let st = &self.stage;
        let a = &self.amp;
        vec![
            ("title", self.title.clone()),
            ("stage.topology", st.topology.name().into()),
            ("stage.rg", opt(st.rg)),
            ("stage.rf", opt(st.rf)),
            ("stage.cf", opt(present(st.cf))),
            ("stage.riso", opt(present(st.riso))),
            ("stage.series", st.series.name().into()),
            ("stage.tolerance", num(st.tolerance)),
            ("amp.a0", num(a.a0)),
            ("amp.gbw", num(a.gbw)),
            ("amp.fp2", opt(a.fp2)),
            ("amp.rin", opt(a.rin)),
            ("amp.cin", opt(present(a.cin))),
            ("amp.ro", num(a.ro)),
            ("amp.vnoise", num(a.vnoise)),
            ("amp.vnoise_corner", opt(present(a.vnoise_corner))),
            ("amp.inoise", num(a.inoise)),
            ("amp.inoise_corner", opt(present(a.inoise_corner))),
            ("source.r", num(self.source.r)),
            ("load.r", opt(self.load.r)),
            ("load.c", opt(present(self.load.c))),
            ("temp_c", num(self.temp_c)),
            (
                "band",
                format!(
                    "{} to {}",
                    fmt_compact(self.band.0),
                    fmt_compact(self.band.1)
                ),
            ),
        ]
    }

    /// The fields whose values differ: (name, value in self, value in other).
    pub fn differences(&self, other: &Scenario) -> Vec<(&'static str, String, String)> {
        self.field_list()
            .into_iter()
            .zip(other.field_list())
            .filter(|(a, b)| a.1 != b.1)
            .map(|(a, b)| (a.0, a.1, b.1))
            .collect()
    }
}
