//! Reading the files a case names (the case itself, property tables, surface data) with
//! bounds: only regular files, at most [`CASE_MAX_BYTES`] / [`DATA_MAX_BYTES`] bytes and
//! [`DATA_MAX_LINES`] lines, so `/dev/zero`, a FIFO or a mistaken multi-gigabyte file is
//! refused at once instead of being read until memory runs out. A byte-order mark is
//! dropped. Messages name the file, never its content.

use std::io::Read;
use std::path::Path;

/// Largest case file, bytes.
pub const CASE_MAX_BYTES: u64 = 1 << 20;
/// Largest table or data file, bytes.
pub const DATA_MAX_BYTES: u64 = 16 << 20;
/// Most lines in a table or data file.
pub const DATA_MAX_LINES: usize = 200_000;

/// Read a text file of at most `max_bytes` (and `max_lines` lines, if given).
pub fn text_file(path: &Path, max_bytes: u64, max_lines: Option<usize>) -> Result<String, String> {
    let meta = std::fs::metadata(path).map_err(|e| format!("cannot be read: {e}"))?;
    if !meta.is_file() {
        return Err("is not a regular file (a folder, device or pipe): give the path of a text file".into());
    }
    if meta.len() > max_bytes {
        return Err(format!("is {} bytes, more than the {max_bytes} bytes hxgrid reads from such a file: is it the right file?", meta.len()));
    }
    let file = std::fs::File::open(path).map_err(|e| format!("cannot be read: {e}"))?;
    let mut bytes = Vec::new();
    // The size can change between the check and the read: never take more than the cap.
    file.take(max_bytes + 1).read_to_end(&mut bytes).map_err(|e| format!("cannot be read: {e}"))?;
    if bytes.len() as u64 > max_bytes {
        return Err(format!("is more than the {max_bytes} bytes hxgrid reads from such a file: is it the right file?"));
    }
    let text = String::from_utf8(bytes).map_err(|_| "is not UTF-8 text: save it as plain text (UTF-8)".to_string())?;
    if let Some(limit) = max_lines {
        let lines = text.lines().count();
        if lines > limit {
            return Err(format!("has {lines} lines, more than the {limit} hxgrid reads from such a file"));
        }
    }
    Ok(match text.strip_prefix('\u{feff}') {
        Some(rest) => rest.to_string(),
        None => text,
    })
}

/// A property table file, parsed.
pub fn table(path: &Path) -> Result<crate::fluid::TableFluid, crate::fluid::TableError> {
    let name = path.display().to_string();
    let text = text_file(path, DATA_MAX_BYTES, Some(DATA_MAX_LINES)).map_err(|problem| crate::fluid::TableError { file: name.clone(), line: 0, problem })?;
    crate::fluid::TableFluid::parse(&text, &name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn devices_folders_and_huge_files_are_refused_without_reading_them() {
        assert!(text_file(Path::new("/dev/zero"), DATA_MAX_BYTES, None).unwrap_err().contains("not a regular file"));
        assert!(text_file(Path::new("/"), DATA_MAX_BYTES, None).unwrap_err().contains("not a regular file"));
        let dir = crate::scratch::Scratch::new("read");
        let p = dir.join("table.csv");
        std::fs::write(&p, "\u{feff}a\nb\nc\n").unwrap();
        assert_eq!(text_file(&p, 100, Some(3)).unwrap(), "a\nb\nc\n");
        assert!(text_file(&p, 100, Some(2)).unwrap_err().contains("3 lines"));
        assert!(text_file(&p, 4, None).unwrap_err().contains("bytes"));
    }
}
