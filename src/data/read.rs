//! Reading a CSV file with a header row into columns (csv crate, byte
//! records, no text allocated per cell). A UTF-8 byte-order mark and CRLF
//! line ends are accepted; blank lines are skipped.

use super::{Column, Dataset};
use crate::{Error, Result};
use std::collections::HashMap;
use std::io::Read;
use std::path::Path;

/// Options for [`Dataset::read`].
#[derive(Debug, Clone, Default)]
pub struct ReadOptions {
    /// Store only these columns (others are checked for shape but not kept).
    /// `None` keeps every column.
    pub keep: Option<Vec<String>>,
}

/// Is this cell a missing-value token (empty, NA, NaN, `.`)?
pub(crate) fn is_missing_token(raw: &[u8]) -> bool {
    matches!(raw, b"" | b"NA" | b"na" | b"NaN" | b"nan" | b".")
}

fn trim(raw: &[u8]) -> &[u8] {
    raw.trim_ascii()
}

impl Dataset {
    /// Reads CSV from `reader`; `source` names it in messages (a path, or
    /// `<stdin>`). Errors name the line and, where there is one, the column.
    pub fn read<R: Read>(reader: R, source: &str, opts: &ReadOptions) -> Result<Dataset> {
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .from_reader(reader);
        let mut rec = csv::ByteRecord::new();
        let fail = |e: csv::Error| csv_error(source, e);
        if !rdr.read_byte_record(&mut rec).map_err(fail)? {
            return Err(Error::input(format!(
                "{source}:1: the file is empty; a header row naming the columns is needed"
            )));
        }
        let names = header(&rec, source)?;
        let keep: Vec<bool> = match &opts.keep {
            Some(k) => names.iter().map(|n| k.contains(n)).collect(),
            None => vec![true; names.len()],
        };
        let mut columns: Vec<Option<Column>> = keep
            .iter()
            .map(|&k| if k { Some(Column::default()) } else { None })
            .collect();
        let width = names.len();
        let mut nrows = 0usize;
        let mut last_line = 1u64;
        while rdr.read_byte_record(&mut rec).map_err(fail)? {
            let line = rec.position().map_or(last_line + 1, |p| p.line());
            last_line = line;
            if rec.len() != width {
                let col = rec.len().min(width) + 1;
                let unit = if rec.len() == 1 { "field" } else { "fields" };
                return Err(Error::input(format!(
                    "{source}:{line}:{col}: this row has {} {unit} but the header has {width}",
                    rec.len()
                )));
            }
            for (j, col) in columns.iter_mut().enumerate() {
                if let Some(c) = col {
                    let raw = trim(&rec[j]);
                    if is_missing_token(raw) {
                        c.push_missing();
                    } else {
                        c.push(raw, line, j + 1);
                    }
                }
            }
            nrows += 1;
        }
        if nrows == 0 {
            return Err(Error::input(format!(
                "{source}:{}: the file has a header but no data rows",
                last_line + 1
            )));
        }
        for c in columns.iter_mut().flatten() {
            c.shrink();
        }
        Ok(Dataset {
            source: source.to_string(),
            names,
            columns,
            nrows,
        })
    }

    /// Reads the CSV file at `path` (the command line maps `-` to stdin
    /// and calls [`Dataset::read`] itself).
    pub fn open(path: &Path, opts: &ReadOptions) -> Result<Dataset> {
        let f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
        Dataset::read(
            std::io::BufReader::with_capacity(1 << 16, f),
            &path.display().to_string(),
            opts,
        )
    }
}

fn header(rec: &csv::ByteRecord, source: &str) -> Result<Vec<String>> {
    let mut names = Vec::with_capacity(rec.len());
    let mut seen: HashMap<String, usize> = HashMap::new();
    for (j, raw) in rec.iter().enumerate() {
        let raw = if j == 0 {
            raw.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(raw)
        } else {
            raw
        };
        let name = std::str::from_utf8(trim(raw)).map_err(|_| {
            Error::input(format!(
                "{source}:1:{}: the column name is not valid UTF-8",
                j + 1
            ))
        })?;
        if name.is_empty() {
            return Err(Error::input(format!(
                "{source}:1:{}: a column has no name",
                j + 1
            )));
        }
        if let Some(first) = seen.insert(name.to_string(), j + 1) {
            return Err(Error::input(format!(
                "{source}:1:{}: duplicate column name '{name}' (also column {first})",
                j + 1
            )));
        }
        names.push(name.to_string());
    }
    Ok(names)
}

fn csv_error(source: &str, e: csv::Error) -> Error {
    let line = e.position().map(|p| p.line());
    let place = match line {
        Some(l) => format!("{source}:{l}"),
        None => source.to_string(),
    };
    match e.into_kind() {
        csv::ErrorKind::Io(io) => Error::io(source, io),
        other => Error::input(format!("{place}: cannot read the CSV: {other:?}")),
    }
}
