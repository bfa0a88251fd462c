//! Reading a datasheet-figures file (`loopwright amp FROM.ron`) and
//! deriving the amplifier from it, every error placed at its file, line
//! and column.

use crate::files::filetext;
use crate::files::load::{field_positions, locate, ron_error, ron_options};
use crate::model::datasheet::{derive, Derivation, Figures};
use crate::model::ScenarioError;
use std::path::Path;

/// Parse figures from RON text and derive the model. `file` only labels
/// errors.
pub fn derive_text(text: &str, file: Option<&str>) -> Result<(Figures, Derivation), ScenarioError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let fields = field_positions(text);
    let figures: Figures = ron_options()
        .from_str(text)
        .map_err(|e| ron_error(&e, &fields, file))?;
    let derivation = derive(&figures).map_err(|p| {
        let pos = locate(&fields, &p.field);
        ScenarioError {
            file: file.map(str::to_string),
            field: Some(p.field.clone()),
            // A missing figure has no place of its own: the file's start.
            line: Some(pos.map_or(1, |f| f.line)),
            col: Some(pos.map_or(1, |f| f.col)),
            message: p.message,
        }
    })?;
    // The derived model must be one a stage file accepts; a value out of
    // range is placed at the figure it came from.
    if let Some((field, message)) = unusable(&derivation.amp) {
        let pos = sources(&field)
            .iter()
            .find_map(|f| fields.iter().find(|x| x.path == *f));
        return Err(ScenarioError {
            file: file.map(str::to_string),
            field: Some(pos.map_or(field.clone(), |f| f.path.clone())),
            line: Some(pos.map_or(1, |f| f.line)),
            col: Some(pos.map_or(1, |f| f.col)),
            message,
        });
    }
    Ok((figures, derivation))
}

/// The first `amp` value a stage file would refuse, as its field (`ro`)
/// and a message ("gives amp.ro, which is not usable: …").
pub fn unusable(amp: &crate::model::scenario::Amp) -> Option<(String, String)> {
    let mut s = crate::files::load::demo();
    s.amp = amp.clone();
    let problems = s.validate().err()?;
    let p = problems.iter().find(|p| p.field.starts_with("amp."))?;
    let message = format!("gives {}, which is not usable: {}", p.field, p.message);
    Some((p.field["amp.".len()..].to_string(), message))
}

/// The figures a model value is derived from (README table), by their
/// top-level name in the figures file.
pub fn sources(amp_field: &str) -> Vec<&str> {
    match amp_field {
        "a0" => vec!["gain_db", "a0"],
        "gbw" => vec!["gbw", "unity", "phase_margin"],
        "fp2" => vec!["phase_margin", "fp2"],
        "ro" => vec!["zout", "ro"],
        "cin" => vec!["cin", "cin_cm", "cin_diff"],
        "vnoise" | "vnoise_corner" => vec!["vnoise"],
        "inoise" | "inoise_corner" => vec!["inoise"],
        "swing_neg" | "swing_pos" => vec!["swing"],
        "cm_neg" | "cm_pos" => vec!["input_range"],
        "cmrr_db" | "cmrr_corner" => vec!["cmrr"],
        "psrr_db" | "psrr_corner" => vec!["psrr"],
        other => vec![other],
    }
}

/// Read a figures file without deriving (the workbench's form fills its
/// rows from it; the figures need not be complete).
pub fn read_figures(path: &Path) -> Result<Figures, ScenarioError> {
    let name = path.display().to_string();
    let text = read(path, &name)?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    let fields = field_positions(text);
    ron_options()
        .from_str(text)
        .map_err(|e| ron_error(&e, &fields, Some(&name)))
}

/// Read a figures file and derive the model.
pub fn derive_file(path: &Path) -> Result<(Figures, Derivation), ScenarioError> {
    let name = path.display().to_string();
    let text = read(path, &name)?;
    derive_text(&text, Some(&name))
}

/// A small text file, with its errors as a `ScenarioError`.
pub fn read(path: &Path, name: &str) -> Result<String, ScenarioError> {
    filetext::read_text(path, filetext::MAX_BYTES).map_err(|e| {
        let (line, col, message) = match e {
            filetext::TextError::File(m) => (None, None, m),
            filetext::TextError::Encoding { line, col, byte } => (
                Some(line),
                Some(col),
                format!("the file is not UTF-8 text (byte 0x{byte:02X}); save it as UTF-8"),
            ),
        };
        ScenarioError {
            file: Some(name.to_string()),
            field: None,
            line,
            col,
            message,
        }
    })
}
