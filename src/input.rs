//! Input files read with a bound: the size is checked from the file's
//! metadata before reading, and reading stops past the bound for files
//! whose size the system does not know (`/dev/zero`, a pipe), so no input
//! can make a reader grow without end.

use std::io::Read;
use std::path::Path;

/// Largest description, machine or job profile read, bytes (a board with
/// every station table filled is a few kilobytes).
pub const TEXT_LIMIT: u64 = 1 << 20;

/// Reads at most `limit` bytes of `path`; a longer file is refused with its
/// size, or with "more than" when its size is not known in advance.
pub fn read_bounded(path: &Path, limit: u64) -> Result<Vec<u8>, String> {
    let file = std::fs::File::open(path).map_err(|e| e.to_string())?;
    let meta = file.metadata().map_err(|e| e.to_string())?;
    if meta.is_dir() {
        return Err("is a folder, not a file".into());
    }
    if meta.len() > limit {
        return Err(format!(
            "the file is {} bytes; at most {limit} bytes are read for this kind of file",
            meta.len()
        ));
    }
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| e.to_string())?;
    if bytes.len() as u64 > limit {
        return Err(format!(
            "the file runs past {limit} bytes, the most read for this kind of file"
        ));
    }
    Ok(bytes)
}

/// Text of a bounded file that must be UTF-8; a stray byte is placed by
/// line and column so it can be found in an editor.
pub fn read_text(path: &Path, limit: u64) -> Result<String, String> {
    let bytes = read_bounded(path, limit)?;
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let bytes = e.as_bytes();
        let line = 1 + bytes[..at].iter().filter(|&&b| b == b'\n').count();
        let start = bytes[..at]
            .iter()
            .rposition(|&b| b == b'\n')
            .map_or(0, |p| p + 1);
        let column = 1 + String::from_utf8_lossy(&bytes[start..at]).chars().count();
        format!(
            "line {line}, column {column}: byte 0x{:02X} is not UTF-8 text; save the file as UTF-8 (a Latin-1 ° or é does this)",
            bytes[at]
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_endless_file_stops_at_the_bound() {
        let e = read_bounded(Path::new("/dev/zero"), 1000).unwrap_err();
        assert!(e.contains("runs past 1000 bytes"), "{e}");
    }

    #[test]
    fn a_latin1_byte_is_placed_by_line_and_column() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("b.yaml");
        // 0xB0 is the degree sign in Latin-1 (ISO 8859-1), a lone
        // continuation byte in UTF-8 (RFC 3629).
        std::fs::write(&p, b"name: x\nnotes: 7\xB0 tail\n").unwrap();
        let e = read_text(&p, TEXT_LIMIT).unwrap_err();
        assert!(e.starts_with("line 2, column 9: byte 0xB0"), "{e}");
    }
}
