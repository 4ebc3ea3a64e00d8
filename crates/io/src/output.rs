//! Result writing: atomic file replacement, JSON, CSV and aligned text tables.
//!
//! Every file is written through [`write_atomic`]: a reader (or a crash) sees
//! either the old file or the complete new one, never a torn write.

use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Why a result could not be written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum OutputError {
    /// File system error.
    #[error("cannot write {path}: {source}")]
    Io {
        /// The file being written.
        path: PathBuf,
        /// The system's error.
        source: std::io::Error,
    },
    /// Serialisation to JSON failed.
    #[error("cannot serialise to JSON for {path}: {source}")]
    Json {
        /// The file being written.
        path: PathBuf,
        /// The serialiser's error.
        source: serde_json::Error,
    },
    /// A table row has the wrong number of cells.
    #[error("table row {row} has {got} cells, but the table has {want} columns")]
    RowWidth {
        /// Row index (0-based, headers excluded).
        row: usize,
        /// Cells given.
        got: usize,
        /// Number of columns.
        want: usize,
    },
    /// CSV encoding failed.
    #[error("CSV encoding failed: {0}")]
    Csv(String),
}

fn io_error(path: &Path) -> impl FnOnce(std::io::Error) -> OutputError + '_ {
    move |source| OutputError::Io {
        path: path.to_path_buf(),
        source,
    }
}

/// Writes `bytes` to `path` atomically: a temporary file in the same folder,
/// flushed to disk (fsync), then renamed over `path`; the folder is synced
/// too where the platform allows. Missing parent folders are created.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), OutputError> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).map_err(io_error(path))?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".twistmode-")
        .suffix(".tmp")
        .tempfile_in(&dir)
        .map_err(io_error(path))?;
    tmp.write_all(bytes).map_err(io_error(path))?;
    #[cfg(unix)]
    {
        // Temporary files are created private (0600); results are ordinary files.
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(path).map_or(0o644, |m| m.permissions().mode() & 0o7777);
        tmp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(mode))
            .map_err(io_error(path))?;
    }
    tmp.as_file().sync_all().map_err(io_error(path))?;
    tmp.persist(path).map_err(|e| OutputError::Io {
        path: path.to_path_buf(),
        source: e.error,
    })?;
    #[cfg(unix)]
    if let Ok(d) = std::fs::File::open(&dir) {
        // Makes the rename itself durable; failure only weakens durability.
        let _ = d.sync_all();
    }
    Ok(())
}

/// Writes any serialisable value as pretty-printed JSON (with a final newline), atomically.
pub fn write_json<T: Serialize + ?Sized>(path: &Path, value: &T) -> Result<(), OutputError> {
    let mut bytes = serde_json::to_vec_pretty(value).map_err(|source| OutputError::Json {
        path: path.to_path_buf(),
        source,
    })?;
    bytes.push(b'\n');
    write_atomic(path, &bytes)
}

/// How a column's cells are aligned in text output.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Align {
    /// Left-aligned (text).
    Left,
    /// Right-aligned (numbers).
    Right,
}

/// A simple table of strings: one header row and rows of equal width.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Table {
    headers: Vec<String>,
    rows: Vec<Vec<String>>,
}

impl Table {
    /// An empty table with these column headers.
    pub fn new<S: Into<String>>(headers: impl IntoIterator<Item = S>) -> Table {
        Table {
            headers: headers.into_iter().map(Into::into).collect(),
            rows: Vec::new(),
        }
    }

    /// Appends a row; it must have one cell per column.
    pub fn try_push_row<S: Into<String>>(
        &mut self,
        row: impl IntoIterator<Item = S>,
    ) -> Result<(), OutputError> {
        let row: Vec<String> = row.into_iter().map(Into::into).collect();
        if row.len() != self.headers.len() {
            return Err(OutputError::RowWidth {
                row: self.rows.len(),
                got: row.len(),
                want: self.headers.len(),
            });
        }
        self.rows.push(row);
        Ok(())
    }

    /// Column headers.
    pub fn headers(&self) -> &[String] {
        &self.headers
    }

    /// Data rows.
    pub fn rows(&self) -> &[Vec<String>] {
        &self.rows
    }

    /// Alignment of each column: right when every non-empty cell is a number.
    pub fn alignments(&self) -> Vec<Align> {
        (0..self.headers.len())
            .map(|c| {
                let mut cells = self
                    .rows
                    .iter()
                    .map(|r| r[c].trim())
                    .filter(|s| !s.is_empty());
                let numeric = cells.clone().next().is_some()
                    && cells.all(|s| s.parse::<f64>().is_ok() || s == "-");
                if numeric {
                    Align::Right
                } else {
                    Align::Left
                }
            })
            .collect()
    }

    /// Plain text with aligned columns (two spaces apart), a dashed rule under
    /// the headers, and a final newline. Widths count characters, not bytes.
    pub fn to_text(&self) -> String {
        let width = |s: &str| s.chars().count();
        let widths: Vec<usize> = (0..self.headers.len())
            .map(|c| {
                self.rows
                    .iter()
                    .map(|r| width(&r[c]))
                    .chain([width(&self.headers[c])])
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let align = self.alignments();
        let line = |cells: &[String]| -> String {
            let parts: Vec<String> = cells
                .iter()
                .enumerate()
                .map(|(c, s)| {
                    let pad = " ".repeat(widths[c] - width(s));
                    match align[c] {
                        Align::Left => format!("{s}{pad}"),
                        Align::Right => format!("{pad}{s}"),
                    }
                })
                .collect();
            parts.join("  ").trim_end().to_string() + "\n"
        };
        let rule: Vec<String> = widths.iter().map(|w| "-".repeat(*w)).collect();
        let mut out = line(&self.headers);
        out.push_str(&line(&rule));
        for r in &self.rows {
            out.push_str(&line(r));
        }
        out
    }

    /// The table as CSV bytes (RFC 4180 quoting, header row first).
    pub fn to_csv(&self) -> Result<Vec<u8>, OutputError> {
        let mut w = csv::Writer::from_writer(Vec::new());
        let csv_err = |e: csv::Error| OutputError::Csv(e.to_string());
        w.write_record(&self.headers).map_err(csv_err)?;
        for r in &self.rows {
            w.write_record(r).map_err(csv_err)?;
        }
        w.into_inner().map_err(|e| OutputError::Csv(e.to_string()))
    }

    /// Writes the table as CSV, atomically.
    pub fn write_csv(&self, path: &Path) -> Result<(), OutputError> {
        write_atomic(path, &self.to_csv()?)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_table_aligns_numbers_right_and_text_left() {
        let mut t = Table::new(["mode", "f (GHz)", "Q"]);
        t.try_push_row(["TE 1", "6.2031", "1.2e4"]).unwrap();
        t.try_push_row(["quasi-TM 12", "10.5", "987"]).unwrap();
        let text = t.to_text();
        let want = "\
mode         f (GHz)      Q
-----------  -------  -----
TE 1          6.2031  1.2e4
quasi-TM 12     10.5    987
";
        assert_eq!(text, want);
        assert!(matches!(
            t.try_push_row(["only one"]),
            Err(OutputError::RowWidth {
                got: 1,
                want: 3,
                ..
            })
        ));
    }

    #[test]
    fn csv_quotes_when_needed() {
        let mut t = Table::new(["name", "value"]);
        t.try_push_row(["a, b", "say \"hi\""]).unwrap();
        let s = String::from_utf8(t.to_csv().unwrap()).unwrap();
        // RFC 4180: fields with commas or quotes are quoted, quotes doubled.
        assert_eq!(s, "name,value\n\"a, b\",\"say \"\"hi\"\"\"\n");
    }

    #[test]
    fn atomic_write_replaces_and_leaves_no_temporaries() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("sub").join("result.json");
        write_json(&path, &serde_json::json!({"f": 6.2e9, "q": [1, 2]})).unwrap();
        write_json(&path, &serde_json::json!({"f": 7.0e9})).unwrap();
        let back: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        assert_eq!(back["f"], 7.0e9);
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(&path).unwrap().permissions().mode();
            assert_eq!(mode & 0o777, 0o644);
        }
        let names: Vec<_> = std::fs::read_dir(path.parent().unwrap())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names, vec![std::ffi::OsString::from("result.json")]);
    }
}
