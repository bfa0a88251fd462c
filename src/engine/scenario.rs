//! The scenario: one amplifier stage, its op-amp model, source, load and
//! environment, in SI units. Stored as RON; errors name the field, line and
//! column.

use super::eseries::Series;
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
        let fields = field_positions(text);
        // Versions are checked first, so a newer file is reported as such
        // rather than as an unknown field.
        if let Some(v) = fields.iter().find(|f| f.path == "version") {
            let rest = &text[v.value_offset..];
            let digits: String = rest
                .trim_start()
                .chars()
                .take_while(|c| c.is_ascii_digit())
                .collect();
            if let Ok(n) = digits.parse::<u32>() {
                if n > FORMAT_VERSION {
                    return Err(ScenarioError {
                        file: file.map(str::to_string),
                        field: Some("version".into()),
                        line: Some(v.line),
                        col: Some(v.col),
                        message: format!(
                            "file format version {n} is newer than this loopwright reads \
                             (up to {FORMAT_VERSION}); update loopwright"
                        ),
                    });
                }
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
    /// scenario does not hold, such as comments).
    pub fn read(path: &std::path::Path) -> Result<(Scenario, String), ScenarioError> {
        let name = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| ScenarioError {
            file: Some(name.clone()),
            field: None,
            line: None,
            col: None,
            message: format!("cannot read the file: {e}"),
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
