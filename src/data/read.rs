//! Reading a CSV file with a header row into columns (csv crate, byte
//! records, no text allocated per cell). A UTF-8 byte-order mark and CRLF
//! line ends are accepted; blank lines are skipped.
//!
//! Line numbers in messages come from [`LineCounter`], which watches the
//! bytes as the CSV reader takes them: the reader's own record positions
//! count only LF and are taken before a CRLF's LF and before skipped blank
//! lines, so they would name the line before the right one.

use super::{Column, Dataset};
use crate::{Error, Result};
use std::collections::{HashMap, VecDeque};
use std::io::Read;
use std::path::Path;

/// A reader that notes where every CR and LF byte lies, so that the line on
/// which a record's first byte stands can be told from its byte offset. A
/// line ends at LF, at CRLF, or at a CR that no LF follows. Only the breaks
/// read ahead of the last record asked about are remembered.
pub(crate) struct LineCounter<R> {
    inner: R,
    /// Bytes handed out so far.
    offset: u64,
    /// Offsets of the CR and LF bytes not yet passed, with the byte.
    breaks: VecDeque<(u64, u8)>,
    /// Line ends before the first entry of `breaks`.
    lines_before: u64,
}

impl<R: Read> LineCounter<R> {
    pub(crate) fn new(inner: R) -> Self {
        LineCounter {
            inner,
            offset: 0,
            breaks: VecDeque::new(),
            lines_before: 0,
        }
    }

    /// Does the break at index `k` of `breaks` end a line? A CR does not
    /// when an LF follows it (the LF ends the line). Every break before a
    /// record's content has been read, and so has the byte after it.
    fn ends_line(&self, k: usize) -> bool {
        let (at, byte) = self.breaks[k];
        byte == b'\n' || self.breaks.get(k + 1) != Some(&(at + 1, b'\n'))
    }

    /// The 1-based line of the first byte at or after `start` that is not
    /// a CR or LF: where a record's content begins when the CSV reader says
    /// the record starts at `start`. Calls must not go backwards.
    pub(crate) fn line_of_record(&mut self, start: u64) -> u64 {
        while let Some(&(at, _)) = self.breaks.front() {
            if at >= start {
                break;
            }
            self.lines_before += u64::from(self.ends_line(0));
            self.breaks.pop_front();
        }
        // Line ends (and blank lines) between `start` and the content.
        let mut lines = self.lines_before;
        let mut pos = start;
        let mut k = 0;
        while let Some(&(at, _)) = self.breaks.get(k) {
            if at != pos {
                break;
            }
            lines += u64::from(self.ends_line(k));
            pos += 1;
            k += 1;
        }
        lines + 1
    }
}

impl<R: Read> Read for LineCounter<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        for (k, &b) in buf[..n].iter().enumerate() {
            if b == b'\n' || b == b'\r' {
                self.breaks.push_back((self.offset + k as u64, b));
            }
        }
        self.offset += n as u64;
        Ok(n)
    }
}

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
            .from_reader(LineCounter::new(reader));
        let mut rec = csv::ByteRecord::new();
        let fail = |e: csv::Error| csv_error(source, e);
        // The line on which the record just read begins.
        let line_of = |rdr: &mut csv::Reader<LineCounter<R>>, rec: &csv::ByteRecord| {
            let start = rec.position().map_or(0, |p| p.byte());
            rdr.get_mut().line_of_record(start)
        };
        if !rdr.read_byte_record(&mut rec).map_err(fail)? {
            return Err(Error::input(format!(
                "{source}:1: the file is empty; a header row naming the columns is needed"
            )));
        }
        let header_line = line_of(&mut rdr, &rec);
        let names = header(&rec, source, header_line)?;
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
        while rdr.read_byte_record(&mut rec).map_err(fail)? {
            let line = line_of(&mut rdr, &rec);
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
                header_line + 1
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

fn header(rec: &csv::ByteRecord, source: &str, line: u64) -> Result<Vec<String>> {
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
                "{source}:{line}:{}: the column name is not valid UTF-8",
                j + 1
            ))
        })?;
        if name.is_empty() {
            return Err(Error::input(format!(
                "{source}:{line}:{}: a column has no name",
                j + 1
            )));
        }
        if let Some(first) = seen.insert(name.to_string(), j + 1) {
            return Err(Error::input(format!(
                "{source}:{line}:{}: duplicate column name '{name}' (also column {first})",
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Reads `bytes` in chunks of `chunk` bytes.
    struct Chunked<'a>(&'a [u8], usize);

    impl Read for Chunked<'_> {
        fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
            let n = self.0.len().min(self.1).min(buf.len());
            buf[..n].copy_from_slice(&self.0[..n]);
            self.0 = &self.0[n..];
            Ok(n)
        }
    }

    /// The line of every record, as the loader sees it.
    fn lines(bytes: &[u8], chunk: usize) -> Vec<u64> {
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .from_reader(LineCounter::new(Chunked(bytes, chunk)));
        let mut rec = csv::ByteRecord::new();
        let mut out = Vec::new();
        while rdr.read_byte_record(&mut rec).unwrap() {
            let start = rec.position().unwrap().byte();
            out.push(rdr.get_mut().line_of_record(start));
        }
        out
    }

    #[test]
    fn record_lines_for_every_kind_of_line_end() {
        let cases: &[(&[u8], &[u64])] = &[
            (b"a,b\n1,2\n3,4\n", &[1, 2, 3]),
            (b"a,b\r\n1,2\r\n3,4\r\n", &[1, 2, 3]),
            (b"a,b\r1,2\r3,4", &[1, 2, 3]),
            (b"a,b\r\n\r\n1,2\r\n\n\n3,4", &[1, 3, 6]),
            (b"\n\na,b\n1,2\n", &[3, 4]),
            (b"a,b\r\n\"x\r\ny\",2\r\n3,4\r\n", &[1, 2, 4]),
            (b"a,b\n\"x\n\ny\",2\n3,4", &[1, 2, 5]),
        ];
        for (bytes, want) in cases {
            for chunk in [1, 2, 3, 8192] {
                assert_eq!(
                    lines(bytes, chunk),
                    *want,
                    "{:?} in chunks of {chunk}",
                    String::from_utf8_lossy(bytes)
                );
            }
        }
    }

    #[test]
    fn crlf_errors_name_the_right_line() {
        let e = Dataset::read(&b"a,b\r\n1,2\r\n\r\n3\r\n"[..], "d.csv", &ReadOptions::default()).unwrap_err();
        assert!(
            e.to_string().starts_with("d.csv:4:2: this row has 1 field"),
            "{e}"
        );
        let d = Dataset::read(&b"a,b\r\n1,2\r\nx,4\r\n"[..], "d.csv", &ReadOptions::default()).unwrap();
        let c = d.column("a").unwrap().first_text.clone().unwrap();
        assert_eq!((c.line, c.column, c.text.as_str()), (3, 1, "x"));
    }
}
