//! MatrixMarket exchange (coordinate format, an open standard of the NIST Matrix Market).

use std::fmt::Write as _;
use std::io::{BufRead, BufWriter, Write};
use std::path::Path;

use faer::c64;
use faer::sparse::SparseColMat;

use crate::{sparse_from_triplets, EigenError};

/// Writes `a` as `%%MatrixMarket matrix coordinate complex general`, 1-based indices,
/// 17 significant digits (round-trips exactly).
pub fn write_matrix_market(path: &Path, a: &SparseColMat<usize, c64>) -> Result<(), EigenError> {
    let io = |source| EigenError::Io {
        path: path.display().to_string(),
        source,
    };
    let file = std::fs::File::create(path).map_err(io)?;
    let mut w = BufWriter::new(file);
    let a = a.as_ref();
    let nnz = a.compute_nnz();
    let mut line = String::with_capacity(80);
    writeln!(w, "%%MatrixMarket matrix coordinate complex general").map_err(io)?;
    writeln!(w, "{} {} {}", a.nrows(), a.ncols(), nnz).map_err(io)?;
    for j in 0..a.ncols() {
        for (i, v) in a.row_idx_of_col(j).zip(a.val_of_col(j)) {
            line.clear();
            let _ = write!(line, "{} {} {:.16e} {:.16e}", i + 1, j + 1, v.re, v.im);
            writeln!(w, "{line}").map_err(io)?;
        }
    }
    w.flush().map_err(io)
}

/// Reads a coordinate MatrixMarket file (`real`, `integer` or `complex`; `general` or
/// `symmetric`); duplicates are summed.
pub fn read_matrix_market(path: &Path) -> Result<SparseColMat<usize, c64>, EigenError> {
    let name = path.display().to_string();
    let file = std::fs::File::open(path).map_err(|source| EigenError::Io {
        path: name.clone(),
        source,
    })?;
    let bad = |line: usize, message: String| EigenError::MatrixMarket {
        path: name.clone(),
        line,
        message,
    };
    let mut lines = std::io::BufReader::new(file).lines().enumerate();
    let (_, header) = lines.next().ok_or_else(|| bad(1, "empty file".into()))?;
    let header = header
        .map_err(|source| EigenError::Io {
            path: name.clone(),
            source,
        })?
        .to_lowercase();
    let words: Vec<&str> = header.split_whitespace().collect();
    if words.len() < 5
        || words[0] != "%%matrixmarket"
        || words[1] != "matrix"
        || words[2] != "coordinate"
    {
        return Err(bad(1, format!("unsupported header '{header}'")));
    }
    let complex = match words[3] {
        "complex" => true,
        "real" | "integer" => false,
        f => return Err(bad(1, format!("unsupported field '{f}'"))),
    };
    let symmetric = match words[4] {
        "general" => false,
        "symmetric" => true,
        s => return Err(bad(1, format!("unsupported symmetry '{s}'"))),
    };
    let mut size: Option<(usize, usize, usize)> = None;
    let mut triplets = Vec::new();
    for (k, line) in lines {
        let line = line.map_err(|source| EigenError::Io {
            path: name.clone(),
            source,
        })?;
        let t = line.trim();
        if t.is_empty() || t.starts_with('%') {
            continue;
        }
        let f: Vec<&str> = t.split_whitespace().collect();
        let num = |s: &str| {
            s.parse::<f64>()
                .map_err(|e| bad(k + 1, format!("'{s}': {e}")))
        };
        let idx = |s: &str| {
            s.parse::<usize>()
                .map_err(|e| bad(k + 1, format!("'{s}': {e}")))
        };
        match size {
            None => {
                if f.len() != 3 {
                    return Err(bad(k + 1, "size line needs 3 integers".into()));
                }
                let s = (idx(f[0])?, idx(f[1])?, idx(f[2])?);
                triplets.reserve(s.2);
                size = Some(s);
            }
            Some((nr, nc, _)) => {
                let need = if complex { 4 } else { 3 };
                if f.len() < need {
                    return Err(bad(k + 1, format!("entry needs {need} fields")));
                }
                let (i, j) = (idx(f[0])?, idx(f[1])?);
                if i == 0 || j == 0 || i > nr || j > nc {
                    return Err(bad(k + 1, format!("index ({i}, {j}) outside {nr}x{nc}")));
                }
                let v = c64::new(num(f[2])?, if complex { num(f[3])? } else { 0.0 });
                triplets.push((i - 1, j - 1, v));
                if symmetric && i != j {
                    triplets.push((j - 1, i - 1, v));
                }
            }
        }
    }
    let (nr, nc, nnz) = size.ok_or_else(|| bad(2, "missing size line".into()))?;
    let stored = if symmetric {
        triplets.iter().filter(|t| t.0 >= t.1).count()
    } else {
        triplets.len()
    };
    if stored != nnz {
        return Err(bad(
            2,
            format!("size line announces {nnz} entries, file has {stored}"),
        ));
    }
    sparse_from_triplets(nr, nc, &triplets)
}
