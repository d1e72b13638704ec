//! Where a dataset comes from: its format, told by its first bytes (else by
//! its name), and the one place where the cells of every format become
//! stored columns.
//!
//! | format | recognised by | read by |
//! | --- | --- | --- |
//! | delimited text | anything else | `read.rs` |
//! | gzip or zstd compressed text | `1f 8b`, `28 b5 2f fd`; `.gz`, `.zst` | [`text`], then `read.rs` |
//! | Parquet | `PAR1`; `.parquet` | [`parquet`]: only the used columns, a row group at a time |
//! | Arrow IPC file (Feather 2) | `ARROW1`; `.arrow`, `.feather` | [`arrow`]: only the used columns, a batch at a time |
//! | Stata `.dta` | `<stata_dta>` (117-119), a version byte (102-116); `.dta` | [`stata`] |
//!
//! Typed cells ([`Cell`]) are stored by [`Builder`], which applies the
//! rules of the text reader: a NaN or a null is missing, a text cell is
//! read as a delimited text cell is (missing-value tokens, numbers in
//! text, cells unfit as text refused). Binary formats have no lines: a
//! message names row `i` (1-based) as line `i + 1`, the line it would have
//! in a delimited text export with a header.

pub(crate) mod arrow;
pub(crate) mod parquet;
pub(crate) mod stata;
pub(crate) mod text;

use super::read::missing_token;
use super::{Column, Dataset};
use crate::{Error, Result};
use std::path::Path;

/// A compression of delimited text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Compression {
    /// gzip (one member or several).
    Gzip,
    /// Zstandard.
    Zstd,
}

/// The format of a data file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Delimited text, compressed or not.
    Text(Option<Compression>),
    /// Apache Parquet.
    Parquet,
    /// The Arrow IPC file format (also Feather version 2).
    Arrow,
    /// Stata's `.dta`.
    Stata,
}

impl Format {
    /// The format that the first bytes `prefix` announce, if any.
    pub fn from_content(prefix: &[u8]) -> Option<Format> {
        let old_stata = prefix.len() >= 4
            && (102..=116).contains(&prefix[0])
            && matches!(prefix[1], 1 | 2)
            && prefix[2] == 1
            && prefix[3] == 0;
        if prefix.starts_with(b"\x1f\x8b") {
            Some(Format::Text(Some(Compression::Gzip)))
        } else if prefix.starts_with(b"\x28\xb5\x2f\xfd") {
            Some(Format::Text(Some(Compression::Zstd)))
        } else if prefix.starts_with(b"PAR1") {
            Some(Format::Parquet)
        } else if prefix.starts_with(b"ARROW1") {
            Some(Format::Arrow)
        } else if prefix.starts_with(b"<stata_dta>") || old_stata {
            Some(Format::Stata)
        } else {
            None
        }
    }

    /// The format a file name implies by its extension: `.parquet`,
    /// `.arrow` or `.feather`, `.dta`, or text (`.gz` and `.zst` compressed).
    pub fn from_name(path: &Path) -> Format {
        let ext = |p: &Path| {
            p.extension()
                .and_then(|e| e.to_str())
                .map(str::to_ascii_lowercase)
                .unwrap_or_default()
        };
        match ext(path).as_str() {
            "parquet" => Format::Parquet,
            "arrow" | "feather" => Format::Arrow,
            "dta" => Format::Stata,
            "gz" => Format::Text(Some(Compression::Gzip)),
            "zst" => Format::Text(Some(Compression::Zstd)),
            _ => Format::Text(None),
        }
    }

    /// The format of a file whose first bytes are `prefix` and whose name
    /// is `path`: by content, else by name. A name that announces a binary
    /// format over content that is plain text is refused.
    pub fn detect(prefix: &[u8], path: Option<&Path>, source: &str) -> Result<Format> {
        if let Some(f) = Format::from_content(prefix) {
            return Ok(f);
        }
        let named = path.map_or(Format::Text(None), Format::from_name);
        let looks_text = !prefix.is_empty() && super::read::not_text(prefix).is_none();
        match named {
            Format::Text(Some(c)) if !prefix.is_empty() => Err(Error::input(format!(
                "{source}: is named as {} compressed but is not: its first bytes are not a {} header",
                c.name(),
                c.name()
            ))),
            Format::Parquet | Format::Arrow | Format::Stata if looks_text => Err(Error::input(format!(
                "{source}: is named as a {} file but holds delimited text; give it a .csv, .tsv or .txt name",
                named.name()
            ))),
            f => Ok(f),
        }
    }

    /// The format's name in messages.
    pub fn name(self) -> &'static str {
        match self {
            Format::Text(None) => "delimited text",
            Format::Text(Some(c)) => c.name(),
            Format::Parquet => "Parquet",
            Format::Arrow => "Arrow IPC",
            Format::Stata => "Stata",
        }
    }
}

impl Compression {
    /// The compression's name.
    pub fn name(self) -> &'static str {
        match self {
            Compression::Gzip => "gzip",
            Compression::Zstd => "zstd",
        }
    }
}

/// Bytes read to tell a file's format (and whether text is text).
pub(crate) const PREFIX: usize = 8192;

/// The first bytes of the file at `path`.
pub(crate) fn prefix_of(path: &Path) -> Result<Vec<u8>> {
    use std::io::Read;
    let f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut head = Vec::with_capacity(PREFIX);
    f.take(PREFIX as u64)
        .read_to_end(&mut head)
        .map_err(|e| Error::io(path, e))?;
    Ok(head)
}

/// Why the first bytes of a data file show it cannot be read, if they do:
/// not delimited text (see [`super::not_text`]) and not a format read
/// here either.
pub fn unreadable(prefix: &[u8]) -> Option<String> {
    match Format::from_content(prefix) {
        Some(_) => None,
        None => super::read::not_text(prefix),
    }
}

/// A cell of a typed format, as [`Builder::push`] stores it.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Cell<'a> {
    /// A number (NaN is missing).
    Number(f64),
    /// Text, read as a cell of delimited text is.
    Text(&'a [u8]),
    /// A missing value, shown in the report as `token` (empty for a null).
    Missing(&'a str),
}

/// Columns filled cell by cell: the one conversion of every format's cells
/// into [`Column`]s.
pub(crate) struct Builder {
    source: String,
    names: Vec<String>,
    columns: Vec<Option<Column>>,
}

impl Builder {
    /// Columns named `names` (checked: none empty, none twice), keeping
    /// those in `keep` (all when `None`).
    pub(crate) fn new(source: &str, names: Vec<String>, keep: Option<&[String]>) -> Result<Builder> {
        check_names(source, &names)?;
        let columns = names
            .iter()
            .map(|n| keep.is_none_or(|k| k.contains(n)).then(Column::default))
            .collect();
        Ok(Builder {
            source: source.to_string(),
            names,
            columns,
        })
    }

    /// The positions (0-based) of the kept columns, in file order.
    pub(crate) fn kept(&self) -> Vec<usize> {
        (0..self.columns.len())
            .filter(|&j| self.columns[j].is_some())
            .collect()
    }

    /// The column names.
    pub(crate) fn names(&self) -> &[String] {
        &self.names
    }

    /// Stores `cell` as the next cell of column `j` (0-based), which lies on
    /// `line` of the file; a column not kept ignores it.
    pub(crate) fn push(&mut self, j: usize, line: u64, cell: Cell) -> Result<()> {
        let Some(c) = self.columns[j].as_mut() else {
            return Ok(());
        };
        match cell {
            Cell::Number(v) if v.is_nan() => {
                c.note_missing(line, j + 1);
                c.push_token(b"NaN");
            }
            Cell::Number(v) => c.push_number(v, line, j + 1),
            Cell::Missing(token) => {
                c.note_missing(line, j + 1);
                c.push_token(token.as_bytes());
            }
            Cell::Text(raw) => {
                let raw = raw.trim_ascii();
                if missing_token(raw) {
                    c.note_missing(line, j + 1);
                    c.push_token(raw);
                } else if let Some(why) = super::column::unfit(raw) {
                    return Err(Error::input(format!(
                        "{}:{line}:{}: the cell of column '{}' holds {why}: '{}'",
                        self.source,
                        j + 1,
                        self.names[j],
                        super::column::escaped(raw)
                    )));
                } else {
                    c.push(raw, line, j + 1);
                }
            }
        }
        Ok(())
    }

    /// The dataset of `nrows` rows; refused with the message `empty` when
    /// there is none.
    pub(crate) fn finish(self, nrows: usize, empty: String) -> Result<Dataset> {
        if nrows == 0 {
            return Err(Error::input(empty));
        }
        let mut columns = self.columns;
        for c in columns.iter_mut().flatten() {
            debug_assert_eq!(c.len(), nrows);
            c.shrink();
        }
        Ok(Dataset {
            source: self.source,
            names: self.names,
            columns,
            nrows,
        })
    }
}

/// Refuses a file with no columns, a column without a name, or two columns
/// of one name (a binary format's header).
pub(crate) fn check_names(source: &str, names: &[String]) -> Result<()> {
    if names.is_empty() {
        return Err(Error::input(format!("{source}: the file has no columns")));
    }
    for (j, n) in names.iter().enumerate() {
        if n.trim().is_empty() {
            return Err(Error::input(format!("{source}: column {} has no name", j + 1)));
        }
        if let Some(first) = names[..j].iter().position(|m| m == n) {
            return Err(Error::input(format!(
                "{source}: duplicate column name '{n}' (columns {} and {})",
                first + 1,
                j + 1
            )));
        }
    }
    Ok(())
}

/// The line a message gives for row `i` (0-based) of a binary format.
pub(crate) fn line_of_row(i: usize) -> u64 {
    i as u64 + 2
}

/// The bytes of a binary-format file: the file itself (read in parts) or
/// all of it in memory (standard input, a pipe).
pub(crate) enum Input<'a> {
    /// A regular file.
    File(&'a Path),
    /// The whole content.
    Bytes(bytes::Bytes),
}

impl Input<'_> {
    fn file(path: &Path) -> Result<std::fs::File> {
        std::fs::File::open(path).map_err(|e| Error::io(path, e))
    }
}

/// The column names of a binary-format file.
pub(crate) fn binary_header(format: Format, input: &Input, source: &str) -> Result<Vec<String>> {
    let names = match (format, input) {
        (Format::Parquet, Input::File(p)) => parquet::header(Input::file(p)?, source)?,
        (Format::Parquet, Input::Bytes(b)) => parquet::header(b.clone(), source)?,
        (Format::Arrow, Input::File(p)) => arrow::header(Input::file(p)?, source)?,
        (Format::Arrow, Input::Bytes(b)) => arrow::header(std::io::Cursor::new(b.clone()), source)?,
        (Format::Stata, Input::File(p)) => stata::header(std::io::BufReader::new(Input::file(p)?), source)?,
        (Format::Stata, Input::Bytes(b)) => stata::header(std::io::Cursor::new(b.clone()), source)?,
        (Format::Text(_), _) => {
            return Err(Error::Internal("delimited text routed as a binary format".into()));
        }
    };
    check_names(source, &names)?;
    Ok(names)
}

/// The columns in `keep` (all when `None`) of a binary-format file.
pub(crate) fn binary_read(
    format: Format,
    input: &Input,
    source: &str,
    keep: Option<&[String]>,
) -> Result<Dataset> {
    match (format, input) {
        (Format::Parquet, Input::File(p)) => parquet::read(Input::file(p)?, source, keep),
        (Format::Parquet, Input::Bytes(b)) => parquet::read(b.clone(), source, keep),
        (Format::Arrow, Input::File(p)) => arrow::read(|| Input::file(p), source, keep),
        (Format::Arrow, Input::Bytes(b)) => arrow::read(|| Ok(std::io::Cursor::new(b.clone())), source, keep),
        (Format::Stata, Input::File(p)) => {
            stata::read(std::io::BufReader::new(Input::file(p)?), source, keep)
        }
        (Format::Stata, Input::Bytes(b)) => stata::read(std::io::Cursor::new(b.clone()), source, keep),
        (Format::Text(_), _) => Err(Error::Internal("delimited text routed as a binary format".into())),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Delimiter;

    #[test]
    fn formats_are_told_by_content_before_name() {
        let named = |bytes: &[u8], name: &str| Format::detect(bytes, Some(Path::new(name)), name);
        assert_eq!(named(b"PAR1\x15\x04", "x.csv").unwrap(), Format::Parquet);
        assert_eq!(named(b"ARROW1\0\0", "x.txt").unwrap(), Format::Arrow);
        assert_eq!(named(b"<stata_dta><header>", "x").unwrap(), Format::Stata);
        // Stata 114, little-endian, file type 1.
        assert_eq!(
            named(b"\x72\x02\x01\x00\x05\x00", "x.bin").unwrap(),
            Format::Stata
        );
        assert_eq!(
            named(b"\x1f\x8b\x08\0", "x.csv").unwrap(),
            Format::Text(Some(Compression::Gzip))
        );
        assert_eq!(
            named(b"\x28\xb5\x2f\xfd", "x").unwrap(),
            Format::Text(Some(Compression::Zstd))
        );
        // Text that starts with a letter in the old Stata versions' range.
        assert_eq!(named(b"q,r\n1,2\n", "x.csv").unwrap(), Format::Text(None));
        // An empty file goes by its name (its reader says what is wrong).
        assert_eq!(named(b"", "x.parquet").unwrap(), Format::Parquet);
        let e = named(b"a,b\n1,2\n", "x.dta").unwrap_err().to_string();
        assert_eq!(
            e,
            "x.dta: is named as a Stata file but holds delimited text; give it a .csv, .tsv or .txt name"
        );
        let e = named(b"a,b\n", "x.csv.zst").unwrap_err().to_string();
        assert!(e.contains("is named as zstd compressed but is not"), "{e}");
        assert_eq!(Format::from_name(Path::new("A.FEATHER")), Format::Arrow);
    }

    #[test]
    fn compressed_tab_separated_names_imply_tab() {
        for name in ["a.tsv", "a.tsv.gz", "a.TSV.zst"] {
            assert_eq!(
                Delimiter::from_path(Path::new(name)),
                Some(Delimiter::Tab),
                "{name}"
            );
        }
        for name in ["a.csv.gz", "a.gz", "tsv.gz", "a.zst"] {
            assert_eq!(Delimiter::from_path(Path::new(name)), None, "{name}");
        }
    }

    #[test]
    fn binary_names_must_be_distinct_and_present() {
        let names = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert!(check_names("f", &names(&["a", "b"])).is_ok());
        let e = check_names("f", &names(&["a", "b", "a"]))
            .unwrap_err()
            .to_string();
        assert_eq!(e, "f: duplicate column name 'a' (columns 1 and 3)");
        let e = check_names("f", &names(&["a", " "])).unwrap_err().to_string();
        assert_eq!(e, "f: column 2 has no name");
        assert!(check_names("f", &[]).is_err());
    }
}
