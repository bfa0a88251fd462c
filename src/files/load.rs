//! Reading a stage file: safe file text, RON with every error placed at its
//! field, line and column, the positions of the fields in the text (the save
//! patches them), and the built-in demo.

use crate::files::filetext;
use crate::model::scenario::{FieldProblem, Scenario, ScenarioError, FORMAT_VERSION};
use crate::model::Topology;

/// The loader's options: a present optional field is a bare value (files
/// that also carry the `#![enable(implicit_some)]` header read the same).
pub(crate) fn ron_options() -> ron::Options {
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
        check_one_threshold(&fields, file)?;
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
    if Topology::NAMES.contains(&token) {
        return Ok(());
    }
    Err(error_at(
        t,
        "stage.topology",
        format!(
            "`{token}` is not a topology: use {}",
            Topology::NAMES.join(", ")
        ),
        file,
    ))
}

/// Refuse a step that gives both `settle_bits` and `settle_to`, naming
/// where each stands.
fn check_one_threshold(fields: &[FieldPos], file: Option<&str>) -> Result<(), ScenarioError> {
    let at = |path: &str| fields.iter().find(|f| f.path == path);
    let (Some(bits), Some(to)) = (at("step.settle_bits"), at("step.settle_to")) else {
        return Ok(());
    };
    Err(error_at(
        to,
        "step.settle_to",
        format!(
            "step.settle_bits (line {}, column {}) and step.settle_to (line {}, column {}) \
             both set the settling threshold; give one",
            bits.line, bits.col, to.line, to.col
        ),
        file,
    ))
}

/// Turn a RON parse error into a ScenarioError naming the field, if known.
pub(crate) fn ron_error(
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
        | ron::Error::DuplicateStructField { .. }
        // A value our own reader refused (an SI or RKM string).
        | ron::Error::Message(_) => {
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
pub(crate) fn locate<'a>(fields: &'a [FieldPos], field: &str) -> Option<&'a FieldPos> {
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
        "Sample" => "load.sample".into(),
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
    // Each name with the nesting depth it stands at: `supply: Some((neg: …,
    // pos: …))` puts `pos` beside `neg`, not inside it.
    let mut names: Vec<(usize, String)> = Vec::new();
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
                names.retain(|(d, _)| *d < depth);
                names.push((depth, ident));
                let path: Vec<&str> = names.iter().map(|(_, n)| n.as_str()).collect();
                out.push(FieldPos {
                    path: path.join("."),
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
                    names.retain(|(d, _)| *d <= depth);
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
