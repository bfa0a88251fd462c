//! Saving scenario files without losing anything the user wrote: the text
//! to write (changed numbers patched into the original text, so comments,
//! spacing and line endings stay), the external-change check, the atomic
//! write (through symbolic links, in place for hard links, mode and owner
//! kept) and rescue files. No terminal code.

use crate::files::filetext;
use crate::files::load::{field_positions, FieldPos};
use crate::model::params::PARAMS;
use crate::model::scenario::Scenario;
use crate::model::values::{fmt_like, parse_value};
use atomic_write_file::AtomicWriteFile;
use std::io::{self, Write};
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};
use std::time::SystemTime;

/// Size and modification time of a file, to tell whether another program
/// changed it.
#[derive(Debug, Clone, PartialEq)]
pub struct Stamp {
    len: u64,
    modified: Option<SystemTime>,
}

/// The stamp of the file a path names (through links).
pub fn stamp(path: &Path) -> Option<Stamp> {
    let m = std::fs::metadata(path).ok()?;
    Some(Stamp {
        len: m.len(),
        modified: m.modified().ok(),
    })
}

/// A file as it was loaded (or last saved): its text and its stamp.
#[derive(Debug, Clone, PartialEq)]
pub struct Original {
    pub text: String,
    pub stamp: Option<Stamp>,
}

impl Original {
    /// Read a file's text and stamp (None when it cannot be read).
    pub fn read(path: &Path) -> Option<Original> {
        let stamp = stamp(path);
        let text = filetext::read_text(path, filetext::MAX_BYTES).ok()?;
        Some(Original { text, stamp })
    }

    /// Whether the file at `path` is no longer what was loaded: its text
    /// differs (read and compared every time: another program may keep the
    /// size and put the modification time back; a touched but equal file
    /// is not a change), or it is gone.
    pub fn changed_on_disk(&self, path: &Path) -> bool {
        filetext::read_text(path, filetext::MAX_BYTES).ok().as_ref() != Some(&self.text)
    }
}

/// The leading `//` comment lines of a scenario file.
pub fn leading_comments(text: &str) -> String {
    let mut out = String::new();
    for line in text.lines() {
        let t = line.trim_start();
        if t.starts_with("//") {
            out.push_str(line);
            out.push('\n');
        } else if !t.is_empty() {
            break;
        }
    }
    out
}

/// Byte length of the leading comment (and blank) lines.
fn header_len(text: &str) -> usize {
    let mut n = 0;
    for line in text.split_inclusive('\n') {
        let t = line.trim_start();
        if t.is_empty() || t.starts_with("//") {
            n += line.len();
        } else {
            break;
        }
    }
    n
}

/// Whether the text has a comment (`//` or `/* */`, outside strings) at or
/// after byte `from`.
fn comment_after(text: &str, from: usize) -> bool {
    let b = text.as_bytes();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'"' => {
                i += 1;
                while i < b.len() && b[i] != b'"' {
                    i += if b[i] == b'\\' { 2 } else { 1 };
                }
            }
            b'/' if i + 1 < b.len() && (b[i + 1] == b'/' || b[i + 1] == b'*') => {
                if i >= from {
                    return true;
                }
                let end = if b[i + 1] == b'/' { "\n" } else { "*/" };
                i = text[i + 2..].find(end).map_or(b.len(), |k| i + 2 + k);
            }
            _ => {}
        }
        i += 1;
    }
    false
}

/// The text to save and whether it loses comments of the original.
#[derive(Debug, Clone, PartialEq)]
pub struct Rendered {
    pub text: String,
    /// True when comments beyond the leading lines cannot be kept (the set
    /// of fields changed, so the file is rewritten whole).
    pub drops_comments: bool,
}

/// The file text for a scenario. With the original text and the same set
/// of fields present, only the values that changed are replaced in it;
/// otherwise the scenario is written whole after the original's leading
/// comments. Either way the original's line ending and byte-order mark are
/// kept and the text ends with a line ending.
pub fn render(s: &Scenario, original: Option<&str>) -> Rendered {
    let Some(orig) = original else {
        return Rendered {
            text: with_final_newline(s.to_ron(), "\n"),
            drops_comments: false,
        };
    };
    let (bom, body) = match orig.strip_prefix('\u{feff}') {
        Some(b) => ("\u{feff}", b),
        None => ("", orig),
    };
    let eol = if body.contains("\r\n") { "\r\n" } else { "\n" };
    let patched = patch(body, s).filter(|t| Scenario::from_ron(t, None).as_ref() == Ok(s));
    let (text, drops_comments) = match patched {
        Some(t) => (t, false),
        None => {
            let whole = format!("{}{}", leading_comments(body), s.to_ron());
            let whole = if eol == "\r\n" {
                whole.replace("\r\n", "\n").replace('\n', "\r\n")
            } else {
                whole
            };
            (whole, comment_after(body, header_len(body)))
        }
    };
    Rendered {
        text: format!("{bom}{}", with_final_newline(text, eol)),
        drops_comments,
    }
}

fn with_final_newline(mut text: String, eol: &str) -> String {
    if !text.ends_with('\n') {
        text.push_str(eol);
    }
    text
}

/// Byte range of the value that starts at or after `off`: a string, a
/// bracketed tuple, or a bare token.
fn value_span(text: &str, off: usize) -> (usize, usize) {
    let b = text.as_bytes();
    let mut i = off;
    while i < b.len() && b[i].is_ascii_whitespace() {
        i += 1;
    }
    let start = i;
    match b.get(i) {
        Some(b'"') => {
            i += 1;
            while i < b.len() && b[i] != b'"' {
                i += if b[i] == b'\\' { 2 } else { 1 };
            }
            (start, (i + 1).min(b.len()))
        }
        Some(b'(') => {
            let mut depth = 0;
            while i < b.len() {
                match b[i] {
                    b'(' => depth += 1,
                    b')' => {
                        depth -= 1;
                        if depth == 0 {
                            return (start, i + 1);
                        }
                    }
                    _ => {}
                }
                i += 1;
            }
            (start, i)
        }
        _ => {
            while i < b.len() && !matches!(b[i], b',' | b')' | b'/') && !b[i].is_ascii_whitespace()
            {
                i += 1;
            }
            (start, i)
        }
    }
}

/// Two value texts mean the same: equal text, or the same numbers
/// (`1e3` and `1000.0`), element by element for a tuple.
fn same_value(a: &str, b: &str) -> bool {
    if a == b {
        return true;
    }
    let parts = |t: &str| -> Vec<String> {
        t.trim_matches(|c| c == '(' || c == ')')
            .split(',')
            .map(|p| p.trim().to_string())
            .collect()
    };
    let (pa, pb) = (parts(a), parts(b));
    pa.len() == pb.len()
        && pa.iter().zip(&pb).all(|(x, y)| {
            x == y || matches!((x.parse::<f64>(), y.parse::<f64>()), (Ok(u), Ok(v)) if u == v)
        })
}

/// A new value's text in the written form of the old one: a number the
/// file gave as a string (`"19k1"`, `"4.7n"`) stays a string in the same
/// notation; a tuple element by element.
fn written_like(old: &str, new: &str) -> String {
    let inner = |t: &str| -> Option<Vec<String>> {
        let t = t.strip_prefix('(')?.strip_suffix(')')?;
        Some(t.split(',').map(|x| x.trim().to_string()).collect())
    };
    if let (Some(a), Some(b)) = (inner(old), inner(new)) {
        if a.len() == b.len() {
            let parts: Vec<String> = a.iter().zip(&b).map(|(x, y)| written_like(x, y)).collect();
            return format!("({})", parts.join(", "));
        }
    }
    match (
        old.strip_prefix('"').and_then(|o| o.strip_suffix('"')),
        new.parse::<f64>(),
    ) {
        (Some(text), Ok(v)) if parse_value(text).is_ok() => format!("\"{}\"", fmt_like(text, v)),
        _ => new.to_string(),
    }
}

/// The file's field paths whose values differ between two scenarios (a
/// tuple such as `band` is one field).
fn changed_fields(a: &Scenario, b: &Scenario) -> Vec<&'static str> {
    let mut out = Vec::new();
    let mut push = |p: &'static str| {
        if !out.contains(&p) {
            out.push(p);
        }
    };
    if a.version != b.version {
        push("version");
    }
    if a.title != b.title {
        push("title");
    }
    if a.notes != b.notes {
        push("notes");
    }
    for p in PARAMS.iter() {
        if p.raw(a) != p.raw(b) || p.value_text(a) != p.value_text(b) {
            push(crate::model::params::file_field(p.path));
        }
    }
    if a.stage.part_tolerance != b.stage.part_tolerance {
        push("stage.part_tolerance");
    }
    if a.band != b.band {
        push("band");
    }
    out
}

/// One edit of the original text: replace `range` with `text`.
struct Edit {
    at: (usize, usize),
    text: String,
}

/// The parent of a dotted path ("" at the top).
fn parent(path: &str) -> &str {
    path.rsplit_once('.').map_or("", |p| p.0)
}

/// The last name of a dotted path.
fn name(path: &str) -> &str {
    path.rsplit_once('.').map_or(path, |p| p.1)
}

/// The rest of the line after `at`, without a `//` comment.
fn rest_of_line(text: &str, at: usize) -> &str {
    let line = &text[at..text[at..].find('\n').map_or(text.len(), |k| at + k)];
    line.split("//").next().unwrap_or("")
}

/// Start of the line holding `at`, and its indentation.
fn line_start(text: &str, at: usize) -> (usize, &str) {
    let start = text[..at].rfind('\n').map_or(0, |k| k + 1);
    let indent_len = text[start..]
        .find(|c: char| c != ' ' && c != '\t')
        .unwrap_or(0);
    (start, &text[start..start + indent_len])
}

/// After the end of the line holding `at` (past its line ending).
fn next_line(text: &str, at: usize) -> usize {
    text[at..].find('\n').map_or(text.len(), |k| at + k + 1)
}

/// A value written by the serializer, on one line: a block's fields joined
/// with ", " and no trailing comma.
fn one_line(value: &str) -> String {
    let joined: Vec<&str> = value.lines().map(str::trim).collect();
    joined
        .join(" ")
        .replace("( ", "(")
        .replace(", )", ")")
        .replace(",)", ")")
}

/// Insert `field: value` into the original's block of `path`'s parent, next
/// to the sibling before it in the serializer's order, in the block's style.
fn insert(body: &str, fo: &[FieldPos], new: &str, fnew: &[FieldPos], path: &str) -> Option<Edit> {
    let g = fnew.iter().position(|f| f.path == path)?;
    let (v0, v1) = value_span(new, fnew[g].value_offset);
    let field = format!("{}: {}", name(path), one_line(&new[v0..v1]));
    let siblings = |f: &&FieldPos| parent(&f.path) == parent(path) && f.path != path;
    let before = fnew[..g]
        .iter()
        .filter(siblings)
        .rev()
        .find_map(|f| fo.iter().find(|o| o.path == f.path));
    let eol = if body.contains("\r\n") { "\r\n" } else { "\n" };
    if let Some(s) = before {
        let end = value_span(body, s.value_offset).1;
        let rest = rest_of_line(body, end).trim();
        let rest = rest.strip_prefix(',').unwrap_or(rest).trim();
        if !rest.is_empty() {
            return Some(Edit {
                at: (end, end),
                text: format!(", {field}"),
            });
        }
        // The sibling ends its line: a line of its own, indented alike.
        let comma = rest_of_line(body, end).trim_start().starts_with(',');
        let (start, indent) = line_start(body, s.offset);
        let _ = start;
        let at = next_line(body, end);
        let lead = if comma { "" } else { "," };
        let tail = if comma { "," } else { "" };
        if at >= body.len() && !body.ends_with('\n') {
            return None;
        }
        return Some(Edit {
            at: (end, at),
            text: format!(
                "{lead}{}{eol}{indent}{field}{tail}{eol}",
                &body[end..at].trim_end_matches(['\r', '\n'])
            ),
        });
    }
    // The first of its block: before the sibling after it.
    let after = fnew[g + 1..]
        .iter()
        .filter(siblings)
        .find_map(|f| fo.iter().find(|o| o.path == f.path))?;
    let (start, indent) = line_start(body, after.offset);
    if start + indent.len() == after.offset {
        Some(Edit {
            at: (start, start),
            text: format!("{indent}{field},{eol}"),
        })
    } else {
        Some(Edit {
            at: (after.offset, after.offset),
            text: format!("{field}, "),
        })
    }
}

/// Remove a field with its comma, and its line when nothing else is on it.
fn delete(body: &str, f: &FieldPos) -> Edit {
    let (_, v1) = value_span(body, f.value_offset);
    let mut end = v1;
    let b = body.as_bytes();
    while end < b.len() && (b[end] == b' ' || b[end] == b'\t') {
        end += 1;
    }
    let comma = b.get(end) == Some(&b',');
    if comma {
        end += 1;
        while end < b.len() && (b[end] == b' ' || b[end] == b'\t') {
            end += 1;
        }
    }
    let (start, indent) = line_start(body, f.offset);
    let alone = start + indent.len() == f.offset && rest_of_line(body, end).trim().is_empty();
    if alone && comma {
        return Edit {
            at: (start, next_line(body, end)),
            text: String::new(),
        };
    }
    let mut begin = f.offset;
    if !comma {
        // The last of its block: take the comma before it instead.
        let before = body[..begin].trim_end();
        if before.ends_with(',') {
            begin = before.len() - 1;
        }
    }
    Edit {
        at: (begin, end),
        text: String::new(),
    }
}

/// The original text with only what changed edited: a changed value
/// replaced in place, an added field inserted in its block in the file's
/// style (a missing block as one line), a removed field deleted with its
/// text. None when the text cannot be patched (the caller writes it whole).
fn patch(body: &str, s: &Scenario) -> Option<String> {
    let before = Scenario::from_ron(body, None).ok()?;
    let new = s.to_ron();
    let (fo, fnew) = (field_positions(body), field_positions(&new));
    if fo
        .iter()
        .enumerate()
        .any(|(i, f)| fo[..i].iter().any(|g| g.path == f.path))
    {
        return None;
    }
    let mut edits: Vec<Edit> = Vec::new();
    // Fields and blocks already added or removed whole.
    let mut added: Vec<String> = Vec::new();
    for path in changed_fields(&before, s) {
        let old = fo.iter().find(|f| f.path == path);
        let now = fnew.iter().find(|f| f.path == path);
        match (old, now) {
            (Some(f), Some(g)) => {
                let (a0, a1) = value_span(body, f.value_offset);
                let (b0, b1) = value_span(&new, g.value_offset);
                if !same_value(&body[a0..a1], &new[b0..b1]) {
                    edits.push(Edit {
                        at: (a0, a1),
                        text: written_like(&body[a0..a1], &one_line(&new[b0..b1])),
                    });
                }
            }
            (Some(_), None) => {
                // The outermost part the new text lacks: the field, or its block.
                let mut at = path.to_string();
                while !parent(&at).is_empty() && !fnew.iter().any(|f| f.path == parent(&at)) {
                    at = parent(&at).to_string();
                }
                let f = fo.iter().find(|f| f.path == at)?;
                if !added.contains(&at) {
                    edits.push(delete(body, f));
                    added.push(at);
                }
            }
            (None, Some(_)) => {
                // The outermost part the original lacks: the field, or its block.
                let mut at = path.to_string();
                while !parent(&at).is_empty() && !fo.iter().any(|f| f.path == parent(&at)) {
                    at = parent(&at).to_string();
                }
                if !added.contains(&at) {
                    edits.push(insert(body, &fo, &new, &fnew, &at)?);
                    added.push(at);
                }
            }
            (None, None) => {}
        }
    }
    edits.sort_by_key(|e| std::cmp::Reverse(e.at));
    if edits.windows(2).any(|w| w[1].at.1 > w[0].at.0) {
        return None;
    }
    let mut out = body.to_string();
    for e in edits {
        out.replace_range(e.at.0..e.at.1, &e.text);
    }
    Some(out)
}

/// What a save did besides writing the text.
#[derive(Debug, Clone, PartialEq)]
pub struct Written {
    /// The file written (a symbolic link's target).
    pub path: PathBuf,
    /// When the file has several hard links: how many, and the backup
    /// copy made before writing it in place.
    pub hard_links: Option<(u64, PathBuf)>,
    /// Stale temporary files of earlier saves removed from the folder.
    pub cleaned: usize,
}

/// Follow symbolic links at the last component to the file they name.
fn resolve_links(path: &Path) -> io::Result<PathBuf> {
    let mut p = path.to_path_buf();
    for _ in 0..40 {
        match std::fs::symlink_metadata(&p) {
            Ok(m) if m.file_type().is_symlink() => {
                let t = std::fs::read_link(&p)?;
                p = match p.parent() {
                    Some(dir) if t.is_relative() => dir.join(t),
                    _ => t,
                };
            }
            _ => return Ok(p),
        }
    }
    Err(io::Error::other(format!(
        "{}: too many levels of symbolic links",
        path.display()
    )))
}

/// How old a named temporary file of the atomic write must be before a
/// later save removes it: a save holds it for well under a second, so one
/// this old belongs to a save that was killed.
pub const STALE_AFTER: std::time::Duration = std::time::Duration::from_secs(60);

/// Whether `name` is a temporary file a save of ours may leave: the
/// atomic-write-file crate's `.BASE.XXXXXX` (a dot, the target's name, a
/// dot and six ASCII letters or digits) for a stage file, its `.bak`, a
/// rescue file or an SVG figure; or `.NAME.ron.tmp-PID` of older versions
/// (Some(pid) then).
fn temporary_kind(name: &str) -> Option<Option<&str>> {
    let hidden = name.strip_prefix('.')?;
    if let Some((stem, pid)) = hidden.rsplit_once(".tmp-") {
        let pid_ok = !pid.is_empty() && pid.bytes().all(|c| c.is_ascii_digit());
        return (pid_ok && stem.ends_with(".ron")).then_some(Some(pid));
    }
    let (base, suffix) = hidden.rsplit_once('.')?;
    let random = suffix.len() == 6 && suffix.bytes().all(|c| c.is_ascii_alphanumeric());
    let ours = [".ron", ".ron.bak", ".svg"]
        .iter()
        .any(|e| base.ends_with(e))
        || base.contains(".rescue");
    (random && ours && suffix != "rescue").then_some(None)
}

/// Remove the temporary files that an earlier save left behind when it was
/// killed: `.NAME.ron.tmp-PID` whose PID no longer runs, and the atomic
/// write's `.NAME.ron.XXXXXX` not modified for [`STALE_AFTER`].
fn clean_stale(dir: &Path) -> usize {
    let Ok(rd) = std::fs::read_dir(dir) else {
        return 0;
    };
    let procs = Path::new("/proc/self").exists();
    let now = SystemTime::now();
    let mut n = 0;
    for e in rd.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(kind) = temporary_kind(&name) else {
            continue;
        };
        let Ok(m) = e.metadata() else { continue };
        let stale = match kind {
            Some(pid) => procs && !Path::new("/proc").join(pid).exists(),
            None => m
                .modified()
                .ok()
                .and_then(|t| now.duration_since(t).ok())
                .is_some_and(|age| age >= STALE_AFTER),
        };
        if stale && m.is_file() && std::fs::remove_file(e.path()).is_ok() {
            n += 1;
        }
    }
    n
}

/// Write a file so that it is either the old or the new text, never half:
/// an unnamed temporary file in the same folder, synced, renamed over the
/// target and the folder synced (atomic-write-file), keeping mode and
/// (where allowed) owner. A symbolic link's target is written, not the
/// link. A file with several hard links is copied to `NAME.bak` and then
/// written in place, so every link sees the new text.
pub fn write_atomic(path: &Path, text: &str) -> io::Result<Written> {
    let target = resolve_links(path)?;
    refuse_not_regular(&target)?;
    let meta = std::fs::metadata(&target).ok();
    let dir = match target.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let cleaned = clean_stale(&dir);
    if let Some(m) = meta.filter(|m| m.is_file() && m.nlink() > 1) {
        let mut backup = target.clone().into_os_string();
        backup.push(".bak");
        let backup = PathBuf::from(backup);
        let old = std::fs::read(&target)?;
        commit(&backup, &old).map_err(|e| {
            io::Error::new(
                e.kind(),
                format!(
                    "cannot copy it to {}: {e}; it is unchanged",
                    backup.display()
                ),
            )
        })?;
        let f = std::fs::OpenOptions::new().write(true).open(&target)?;
        overwrite_in_place(&f, &old, text.as_bytes()).map_err(|e| {
            io::Error::new(
                e.kind(),
                format!("{e}; a copy of the old text is in {}", backup.display()),
            )
        })?;
        return Ok(Written {
            path: target,
            hard_links: Some((m.nlink(), backup)),
            cleaned,
        });
    }
    commit(&target, text.as_bytes())?;
    Ok(Written {
        path: target,
        hard_links: None,
        cleaned,
    })
}

/// Reserve the blocks for `len` bytes of an open file without changing
/// its text (posix_fallocate(3)); an error (no space) leaves it as it was.
fn reserve(f: &std::fs::File, len: u64, old_len: u64) -> io::Result<()> {
    use std::os::fd::AsRawFd;
    let want = libc::off_t::try_from(len).map_err(io::Error::other)?;
    // SAFETY: a valid open descriptor; posix_fallocate only allocates.
    let rc = unsafe { libc::posix_fallocate(f.as_raw_fd(), 0, want) };
    match rc {
        0 => Ok(()),
        // A file system that cannot reserve: then the length is checked by
        // writing it whole below, before anything is lost.
        libc::EOPNOTSUPP | libc::EINVAL => Ok(()),
        e => {
            // Emulated reservation may have lengthened it: take that back.
            f.set_len(old_len)?;
            Err(io::Error::from_raw_os_error(e))
        }
    }
}

/// Replace an open file's text with `new` in place (for a file with hard
/// links, which a rename would split): the space for the longer of the two
/// is reserved first, so a full disk fails before a byte is changed; if a
/// write fails anyway, the old text is put back.
fn overwrite_in_place(f: &std::fs::File, old: &[u8], new: &[u8]) -> io::Result<()> {
    use std::os::unix::fs::FileExt;
    let (old_len, new_len) = (old.len() as u64, new.len() as u64);
    reserve(f, new_len.max(old_len), old_len).map_err(|e| {
        io::Error::new(
            e.kind(),
            format!("cannot reserve the space: {e}; the file is unchanged"),
        )
    })?;
    let written = f
        .write_all_at(new, 0)
        .and_then(|()| f.set_len(new_len))
        .and_then(|()| f.sync_all());
    if let Err(e) = written {
        let back = f
            .write_all_at(old, 0)
            .and_then(|()| f.set_len(old_len))
            .and_then(|()| f.sync_all());
        let how = if back.is_ok() {
            "the old text was put back"
        } else {
            "the file may be damaged"
        };
        return Err(io::Error::new(e.kind(), format!("{e}; {how}")));
    }
    Ok(())
}

/// Write an output file (a figure, a man page): an existing file is
/// refused unless `force`; the text goes through [`write_atomic`], so a
/// failed write leaves no partial file behind.
pub fn write_output(path: &Path, text: &str, force: bool) -> io::Result<PathBuf> {
    refuse_existing(path, force)?;
    write_atomic(path, text)
        .map(|w| w.path)
        .map_err(|e| io::Error::new(e.kind(), format!("cannot write {}: {e}", path.display())))
}

/// An error when `path` names something that is not a regular file (a
/// folder, a FIFO, a device node, a socket; through symbolic links), with
/// or without `force`: saving there would replace it with a file.
pub fn refuse_not_regular(path: &Path) -> io::Result<()> {
    match std::fs::metadata(path) {
        Ok(m) if !m.is_file() => {
            let what = if m.is_dir() {
                "a folder"
            } else {
                "not a regular file"
            };
            Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!("{} is {what}: refusing to replace it", path.display()),
            ))
        }
        _ => Ok(()),
    }
}

/// An error when `path` exists (as anything, a dangling link too) and
/// `force` is not given, and always when it is not a regular file.
pub fn refuse_existing(path: &Path, force: bool) -> io::Result<()> {
    refuse_not_regular(path)?;
    if !force && std::fs::symlink_metadata(path).is_ok() {
        return Err(io::Error::new(
            io::ErrorKind::AlreadyExists,
            format!("{} exists: give --force to overwrite it", path.display()),
        ));
    }
    Ok(())
}

fn commit(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut f = AtomicWriteFile::open(path)?;
    f.write_all(bytes)?;
    f.commit()
}

/// Where the rescue copy of an unsaved stage goes: `NAME.ron.rescue` next
/// to its file, or `./loopwright-A.rescue.ron` for a stage without one.
pub fn rescue_path(path: Option<&Path>, label: &str) -> PathBuf {
    match path.and_then(|p| p.file_name().map(|n| (p, n))) {
        Some((p, name)) => {
            let mut n = name.to_os_string();
            n.push(".rescue");
            p.with_file_name(n)
        }
        None => PathBuf::from(format!("loopwright-{label}.rescue.ron")),
    }
}

/// The `n`th rescue name for a base from [`rescue_path`]: the base itself
/// for 1, else `NAME.ron.rescue-N` / `loopwright-A.rescue-N.ron`.
fn numbered(base: &Path, n: usize) -> PathBuf {
    if n <= 1 {
        return base.to_path_buf();
    }
    let name = base
        .file_name()
        .map(|x| x.to_string_lossy().into_owned())
        .unwrap_or_default();
    let named = match name.strip_suffix(".ron") {
        Some(stem) => format!("{stem}-{n}.ron"),
        None => format!("{name}-{n}"),
    };
    base.with_file_name(named)
}

/// Where a new rescue copy goes without replacing an older one: the first
/// of `base`, `base-2`, `base-3`, … that does not exist.
pub fn free_rescue_path(base: &Path) -> PathBuf {
    (1..)
        .map(|n| numbered(base, n))
        .find(|p| std::fs::symlink_metadata(p).is_err())
        .unwrap_or_else(|| base.to_path_buf())
}

/// The rescue copies an earlier run left for `base` (see
/// [`rescue_path`]), newest first.
pub fn rescue_files(base: &Path) -> Vec<PathBuf> {
    let mut found: Vec<(std::time::SystemTime, PathBuf)> = Vec::new();
    // The numbers are dense unless a copy was removed: look a little past
    // each gap.
    let mut misses = 0;
    for n in 1.. {
        let p = numbered(base, n);
        match std::fs::metadata(&p) {
            Ok(m) if m.is_file() => {
                misses = 0;
                found.push((m.modified().unwrap_or(std::time::UNIX_EPOCH), p));
            }
            _ => {
                misses += 1;
                if misses > 16 {
                    break;
                }
            }
        }
    }
    found.sort_by_key(|f| std::cmp::Reverse(f.0));
    found.into_iter().map(|(_, p)| p).collect()
}

/// Whether a file exists and nobody may write it (no write bit at all):
/// saving over it needs a yes.
pub fn read_only(path: &Path) -> bool {
    std::fs::metadata(path).is_ok_and(|m| m.is_file() && m.permissions().readonly())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_compare_as_numbers() {
        assert!(same_value("1e3", "1000.0"));
        assert!(same_value("(10.0, 1e5)", "(10.0, 100000.0)"));
        assert!(!same_value("1e3", "1100.0"));
        assert!(!same_value("\"a\"", "\"b\""));
    }

    #[test]
    fn spans_of_values() {
        let t = "x: \"a,b\" , y: (1, 2) z: 1e3/*c*/";
        assert_eq!(&t[value_span(t, 2).0..value_span(t, 2).1], "\"a,b\"");
        assert_eq!(&t[value_span(t, 13).0..value_span(t, 13).1], "(1, 2)");
        assert_eq!(&t[value_span(t, 23).0..value_span(t, 23).1], "1e3");
    }

    #[test]
    fn comments_after_the_header() {
        let t = "// top\n(\n  a: \"//x\",\n)\n";
        assert!(!comment_after(t, header_len(t)));
        assert!(comment_after("// top\n( /* c */ )", 7));
    }

    #[test]
    fn temporary_names() {
        // The atomic-write-file crate's fallback: "." + name + "." + 6 random.
        assert_eq!(temporary_kind(".s.ron.PWe6vb"), Some(None));
        assert_eq!(temporary_kind(".s.ron.bak.a1B2c3"), Some(None));
        assert_eq!(temporary_kind(".out.svg.Zz09aa"), Some(None));
        assert_eq!(temporary_kind(".s.ron.tmp-42"), Some(Some("42")));
        assert_eq!(temporary_kind(".s.ron.rescue"), None);
        assert_eq!(temporary_kind("s.ron.PWe6vb"), None);
        assert_eq!(temporary_kind(".s.ron.PWe6v"), None);
        assert_eq!(temporary_kind(".notes.txt.PWe6vb"), None);
        assert_eq!(temporary_kind(".s.ron.tmp-"), None);
    }

    #[test]
    fn rescue_paths() {
        assert_eq!(
            rescue_path(Some(Path::new("d/s.ron")), "A"),
            PathBuf::from("d/s.ron.rescue")
        );
        assert_eq!(
            rescue_path(None, "B"),
            PathBuf::from("loopwright-B.rescue.ron")
        );
    }
}
