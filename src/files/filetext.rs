//! Reading a text file the user named, safely: only a regular file, never
//! blocking on a FIFO or a device, never more than a cap. Std only (and
//! libc for the one open flag std does not name).

use std::fs::{File, OpenOptions};
use std::io::Read;
use std::os::unix::fs::{FileTypeExt, OpenOptionsExt};
use std::path::Path;

/// The largest scenario file read (1 MiB); a hand-written stage is a few
/// hundred bytes.
pub const MAX_BYTES: u64 = 1 << 20;

/// Why a file's text could not be had.
#[derive(Debug, Clone, PartialEq)]
pub enum TextError {
    /// Not readable, not a regular file, or too big: the sentence says which.
    File(String),
    /// Not UTF-8: 1-based line and column (in characters) of the first bad byte.
    Encoding { line: usize, col: usize, byte: u8 },
}

/// What kind of file this is, in words, when it is not a regular file.
fn kind_name(t: std::fs::FileType) -> Option<&'static str> {
    if t.is_file() {
        None
    } else if t.is_dir() {
        Some("a folder")
    } else if t.is_fifo() {
        Some("a FIFO (named pipe)")
    } else if t.is_char_device() {
        Some("a character device")
    } else if t.is_block_device() {
        Some("a block device")
    } else if t.is_socket() {
        Some("a socket")
    } else {
        Some("not a plain file")
    }
}

fn not_regular(kind: &str) -> TextError {
    TextError::File(format!("{kind}, not a regular file"))
}

fn too_big(len: u64, cap: u64) -> TextError {
    TextError::File(format!(
        "larger than {} KiB ({len} bytes or more): not a scenario file",
        cap / 1024
    ))
}

/// Read at most `cap` bytes of a regular file. The kind is checked on the
/// path first (without opening it), then again on the opened handle, which
/// is opened non-blocking so a FIFO swapped in between cannot hang us.
pub fn read_bytes(path: &Path, cap: u64) -> Result<Vec<u8>, TextError> {
    let io = |e: std::io::Error| TextError::File(format!("cannot read the file: {e}"));
    let meta = std::fs::metadata(path).map_err(io)?;
    if let Some(kind) = kind_name(meta.file_type()) {
        return Err(not_regular(kind));
    }
    if meta.len() > cap {
        return Err(too_big(meta.len(), cap));
    }
    let file: File = OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK)
        .open(path)
        .map_err(io)?;
    let meta = file.metadata().map_err(io)?;
    if let Some(kind) = kind_name(meta.file_type()) {
        return Err(not_regular(kind));
    }
    let mut bytes = Vec::with_capacity(meta.len().min(cap) as usize);
    file.take(cap + 1).read_to_end(&mut bytes).map_err(io)?;
    if bytes.len() as u64 > cap {
        return Err(too_big(bytes.len() as u64, cap));
    }
    Ok(bytes)
}

/// The text of UTF-8 bytes, or the position of the first bad byte.
pub fn utf8(bytes: Vec<u8>) -> Result<String, TextError> {
    String::from_utf8(bytes).map_err(|e| {
        let bytes = e.as_bytes();
        let good = e.utf8_error().valid_up_to();
        // The prefix is valid UTF-8 by definition of valid_up_to.
        let before = std::str::from_utf8(&bytes[..good]).unwrap_or("");
        let line = before.matches('\n').count() + 1;
        let col = before.rsplit('\n').next().unwrap_or("").chars().count() + 1;
        TextError::Encoding {
            line,
            col,
            byte: bytes[good],
        }
    })
}

/// Read a regular file of at most `cap` bytes as UTF-8 text.
pub fn read_text(path: &Path, cap: u64) -> Result<String, TextError> {
    read_bytes(path, cap).and_then(utf8)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn position_of_a_bad_byte() {
        // 0xFF never appears in UTF-8 (RFC 3629, section 1).
        let e = utf8(b"ab\ncd\xFFe".to_vec()).unwrap_err();
        assert_eq!(
            e,
            TextError::Encoding {
                line: 2,
                col: 3,
                byte: 0xFF
            }
        );
        assert_eq!(utf8("µ\n".as_bytes().to_vec()).unwrap(), "µ\n");
    }

    #[test]
    fn a_folder_is_not_read() {
        let e = read_text(Path::new("/"), MAX_BYTES).unwrap_err();
        assert!(matches!(e, TextError::File(m) if m.contains("folder")));
    }
}
