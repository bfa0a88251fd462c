//! The amplifier library: part files (RON, one part or a list) read from
//! the built-in archetypes, the user's library in the platform's
//! configuration folder, and the `parts/` folder beside the scenario.
//! A bad file is reported with its file, line and column and never stops
//! the others from being read. Saving writes a new file and never
//! replaces one.

use crate::files::figures::read;
use crate::files::load::{demo, field_positions, ron_error, ron_options, FieldPos};
use crate::files::storage;
use crate::model::part::{amp_fields, is_amp_field, Origin, Part};
use crate::model::scenario::Amp;
use crate::model::ScenarioError;
use serde::Deserialize;
use std::path::{Path, PathBuf};

/// The environment variable that names the user library's folder instead
/// of the platform's configuration folder (tests set it; so may a user).
pub const USER_DIR_VAR: &str = "LOOPWRIGHT_PARTS";

/// The most part files read from one folder.
pub const MAX_FILES: usize = 1000;

/// The user library's folder: `$LOOPWRIGHT_PARTS`, or `parts/` in the
/// platform's configuration folder for loopwright (on Linux
/// `$XDG_CONFIG_HOME/loopwright/parts`, by default
/// `~/.config/loopwright/parts`). `None` when there is no home folder.
pub fn user_dir() -> Option<PathBuf> {
    if let Some(d) = std::env::var_os(USER_DIR_VAR).filter(|d| !d.is_empty()) {
        return Some(PathBuf::from(d));
    }
    directories::ProjectDirs::from("", "", "loopwright").map(|p| p.config_dir().join("parts"))
}

/// The project folder beside a scenario file (`parts/` in its folder), or
/// in the current folder without one.
pub fn project_dir(scenario: Option<&Path>) -> PathBuf {
    let base = scenario
        .and_then(Path::parent)
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    base.join("parts")
}

/// One part and where it was found.
#[derive(Debug, Clone, PartialEq)]
pub struct Found {
    pub origin: Origin,
    /// The file it was read from (none for the built-ins).
    pub file: Option<PathBuf>,
    pub part: Part,
}

/// A file of a library that could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct Bad {
    pub origin: Origin,
    pub error: ScenarioError,
}

/// Every part found, grouped by origin (built-in, user, project), and the
/// files that could not be read.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Library {
    pub parts: Vec<Found>,
    pub bad: Vec<Bad>,
    pub user_dir: Option<PathBuf>,
    pub project_dir: Option<PathBuf>,
}

impl Library {
    /// Read the three sources: the built-ins, the user library's folder
    /// (`user`, normally [`user_dir`]) and the project's `parts/` folder.
    pub fn gather(user: Option<&Path>, project: Option<&Path>) -> Library {
        let mut lib = Library {
            parts: built_ins(),
            bad: Vec::new(),
            user_dir: user.map(Path::to_path_buf),
            project_dir: project.map(Path::to_path_buf),
        };
        for (origin, dir) in [
            (Origin::User, lib.user_dir.clone()),
            (Origin::Project, lib.project_dir.clone()),
        ] {
            if let Some(dir) = dir {
                lib.read_folder(origin, &dir);
            }
        }
        lib
    }

    fn read_folder(&mut self, origin: Origin, dir: &Path) {
        let Ok(entries) = std::fs::read_dir(dir) else {
            return; // no folder: no parts there
        };
        let mut files: Vec<PathBuf> = entries
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "ron"))
            .collect();
        files.sort();
        files.truncate(MAX_FILES);
        for f in files {
            match read_part_file(&f) {
                Ok(parts) => self.parts.extend(parts.into_iter().map(|part| Found {
                    origin,
                    file: Some(f.clone()),
                    part,
                })),
                Err(error) => self.bad.push(Bad { origin, error }),
            }
        }
    }

    /// The parts whose name is `name` (letter case aside), project first.
    pub fn named(&self, name: &str) -> Vec<&Found> {
        let mut out: Vec<&Found> = self
            .parts
            .iter()
            .filter(|f| f.part.name.eq_ignore_ascii_case(name.trim()))
            .collect();
        out.sort_by_key(|f| f.origin);
        out
    }
}

/// The archetypes shipped in assets/ as parts.
pub fn built_ins() -> Vec<Found> {
    #[derive(Deserialize)]
    struct Archetype {
        name: String,
        amp: Amp,
    }
    let list: Vec<Archetype> = ron_options()
        .from_str(include_str!("../../assets/amps.ron"))
        .unwrap_or_default();
    list.into_iter()
        .map(|a| Found {
            origin: Origin::BuiltIn,
            file: None,
            part: Part {
                class: class_of(&a.name).to_string(),
                notes: {
                    let mut s = demo();
                    s.amp = a.amp.clone();
                    crate::model::part::amp_values(&s)
                        .into_iter()
                        .map(|(f, _)| {
                            (
                                f.to_string(),
                                "generic, typical for the class, from memory".to_string(),
                            )
                        })
                        .collect()
                },
                name: a.name,
                amp: a.amp,
            },
        })
        .collect()
}

/// The class an archetype's name implies.
fn class_of(name: &str) -> &'static str {
    match name {
        n if n.contains("low-noise") => "low noise",
        n if n.contains("precision") => "precision",
        n if n.contains("rail-to-rail") => "rail-to-rail",
        n if n.contains("fast") => "fast",
        n if n.contains("JFET") => "high impedance",
        _ => "general purpose",
    }
}

/// Read a part file: one part `( name: …, amp: (…) )` or a list `[ … ]`.
pub fn read_part_file(path: &Path) -> Result<Vec<Part>, ScenarioError> {
    let name = path.display().to_string();
    let text = read(path, &name)?;
    parts_from_ron(&text, Some(&name))
}

/// Parse part-file text; `file` only labels errors.
pub fn parts_from_ron(text: &str, file: Option<&str>) -> Result<Vec<Part>, ScenarioError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let fields = field_positions(text);
    let parts: Vec<Part> = if first_token(text) == Some('[') {
        ron_options().from_str(text)
    } else {
        ron_options().from_str::<Part>(text).map(|p| vec![p])
    }
    .map_err(|e| ron_error(&e, &fields, file))?;
    // Each part's `amp` position, in order, places its own problems.
    let amps: Vec<&FieldPos> = fields.iter().filter(|f| f.path == "amp").collect();
    let names: Vec<&FieldPos> = fields.iter().filter(|f| f.path == "name").collect();
    for (k, part) in parts.iter().enumerate() {
        let at = |path: &str| {
            let after = amps.get(k).map_or(0, |a| a.offset);
            fields
                .iter()
                .find(|f| f.path == path && f.offset >= after)
                .or(amps.get(k).copied())
        };
        let err = |pos: Option<&FieldPos>, field: &str, message: String| ScenarioError {
            file: file.map(str::to_string),
            field: Some(field.to_string()),
            line: Some(pos.map_or(1, |p| p.line)),
            col: Some(pos.map_or(1, |p| p.col)),
            message,
        };
        if part.name.trim().is_empty() {
            return Err(err(
                names.get(k).copied(),
                "name",
                "a part needs a name".into(),
            ));
        }
        let mut s = demo();
        s.amp = part.amp.clone();
        if let Err(problems) = s.validate() {
            if let Some(p) = problems.iter().find(|p| p.field.starts_with("amp.")) {
                return Err(err(at(&p.field), &p.field, p.message.clone()));
            }
        }
        if let Some(key) = part.notes.keys().find(|k| !is_amp_field(k)) {
            let pos = find_text(text, &format!("\"{key}\""));
            return Err(err(
                pos.as_ref().or(names.get(k).copied()),
                &format!("notes.{key}"),
                format!(
                    "a note is about an `amp` field ({}), not `{key}`",
                    amp_fields().collect::<Vec<_>>().join(", ")
                ),
            ));
        }
    }
    Ok(parts)
}

/// The first character that is not space, a comment or an attribute.
fn first_token(text: &str) -> Option<char> {
    let mut rest = text;
    loop {
        rest = rest.trim_start();
        if let Some(r) = rest.strip_prefix("//") {
            rest = r.split_once('\n').map_or("", |(_, r)| r);
        } else if let Some(r) = rest.strip_prefix("/*") {
            rest = r.split_once("*/").map_or("", |(_, r)| r);
        } else if let Some(r) = rest.strip_prefix("#!") {
            rest = r.split_once(']').map_or("", |(_, r)| r);
        } else {
            return rest.chars().next();
        }
    }
}

/// Where a piece of text first stands (1-based line and column).
fn find_text(text: &str, needle: &str) -> Option<FieldPos> {
    let offset = text.find(needle)?;
    let before = &text[..offset];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    Some(FieldPos {
        path: needle.to_string(),
        line,
        col,
        offset,
        value_offset: offset,
    })
}

/// The part file's text: the part with each value's note beside it.
pub fn part_to_ron(part: &Part) -> String {
    let mut s = demo();
    s.amp = part.amp.clone();
    let mut out = String::from("(\n");
    out += &format!("    name: {:?},\n", part.name);
    out += &format!("    class: {:?},\n", part.class);
    out += "    amp: (\n";
    for (field, v) in crate::model::part::amp_values(&s) {
        out += &format!("        {field}: {v:?},\n");
    }
    out += "    ),\n";
    if !part.notes.is_empty() {
        out += "    notes: {\n";
        for (k, n) in &part.notes {
            out += &format!("        {k:?}: {n:?},\n");
        }
        out += "    },\n";
    }
    out += ")\n";
    out
}

/// A file name for a part: its name with every character that is not a
/// letter, digit, `-` or `_` made `-`.
pub fn file_name(name: &str) -> String {
    let stem: String = name
        .trim()
        .chars()
        .map(|c| {
            if c.is_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '-'
            }
        })
        .collect();
    format!("{}.ron", if stem.is_empty() { "part" } else { &stem })
}

/// Save a part into `dir` (made when missing). An existing file is only
/// replaced when `replace` is given (the caller asked first); the write is
/// atomic, so a failure leaves the old file whole.
pub fn save_part(dir: &Path, part: &Part, replace: bool) -> std::io::Result<PathBuf> {
    std::fs::create_dir_all(dir)?;
    let path = dir.join(file_name(&part.name));
    storage::refuse_not_regular(&path)?;
    if !replace && std::fs::symlink_metadata(&path).is_ok() {
        return Err(std::io::Error::new(
            std::io::ErrorKind::AlreadyExists,
            format!("{} exists", path.display()),
        ));
    }
    storage::write_atomic(&path, &part_to_ron(part))?;
    Ok(path)
}
