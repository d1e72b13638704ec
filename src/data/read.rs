//! Reading a delimited text file with a header row into columns (csv
//! crate, byte records, no text allocated per cell). The separator is a
//! comma, a tab or a semicolon: given, implied by a `.tsv` name, or detected
//! from the header line ([`Delimiter::sniff`]); fields in double quotes may
//! hold it. A UTF-8 byte-order mark and CRLF line ends are accepted; blank
//! lines are skipped.
//!
//! Line numbers in messages come from [`LineCounter`], which watches the
//! bytes as the CSV reader takes them: the reader's own record positions
//! count only LF and are taken before a CRLF's LF and before skipped blank
//! lines, so they would name the line before the right one.

use super::Dataset;
use super::source::{self, Builder, Cell, Format, Input, text, text::Routed};
use crate::{Advice, Error, Remedy, Result, Setting};
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
    /// The field separator; `None` detects it from the header line (see
    /// [`Delimiter::sniff`]).
    pub delimiter: Option<Delimiter>,
}

/// The field separator of a delimited text file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delimiter {
    /// `,`
    Comma,
    /// A tab.
    Tab,
    /// `;`
    Semicolon,
}

impl Delimiter {
    /// Every separator, in the order that breaks ties when detecting.
    pub const ALL: [Delimiter; 3] = [Delimiter::Comma, Delimiter::Tab, Delimiter::Semicolon];

    /// The byte that separates fields.
    pub fn byte(self) -> u8 {
        match self {
            Delimiter::Comma => b',',
            Delimiter::Tab => b'\t',
            Delimiter::Semicolon => b';',
        }
    }

    /// The separator's name: comma, tab or semicolon.
    pub fn name(self) -> &'static str {
        match self {
            Delimiter::Comma => "comma",
            Delimiter::Tab => "tab",
            Delimiter::Semicolon => "semicolon",
        }
    }

    /// The separator a file name implies: tab for `.tsv` (also `.tsv.gz`
    /// and `.tsv.zst`), else none.
    pub fn from_path(path: &Path) -> Option<Delimiter> {
        let ext = |p: &Path| Some(p.extension()?.to_str()?.to_ascii_lowercase());
        let mut e = ext(path)?;
        if e == "gz" || e == "zst" {
            e = ext(Path::new(path.file_stem()?))?;
        }
        (e == "tsv").then_some(Delimiter::Tab)
    }

    /// The separator of the text that starts with `prefix`: the one of
    /// comma, tab and semicolon found most often, outside double quotes, on
    /// the first line that is not blank (the header); ties go to the
    /// earlier in [`Delimiter::ALL`]; comma when none is there (one column).
    pub fn sniff(prefix: &[u8]) -> Delimiter {
        let counts = first_line_counts(prefix);
        let mut best = Delimiter::Comma;
        for d in Delimiter::ALL {
            if counts[d as usize] > counts[best as usize] {
                best = d;
            }
        }
        best
    }
}

/// How often each separator of [`Delimiter::ALL`] appears outside double
/// quotes on the first line of `prefix` that is not blank.
fn first_line_counts(prefix: &[u8]) -> [usize; 3] {
    let prefix = prefix.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(prefix);
    let start = prefix
        .iter()
        .position(|&b| b != b'\n' && b != b'\r')
        .unwrap_or(prefix.len());
    let mut counts = [0usize; 3];
    let mut quoted = false;
    for &b in &prefix[start..] {
        match b {
            b'"' => quoted = !quoted,
            b'\n' | b'\r' if !quoted => break,
            _ if quoted => {}
            _ => {
                if let Some(d) = Delimiter::ALL.into_iter().find(|d| d.byte() == b) {
                    counts[d as usize] += 1;
                }
            }
        }
    }
    counts
}

/// Bytes read ahead to detect the separator: up to the end of the header
/// line, and at most this many.
const SNIFF_LIMIT: usize = 1 << 20;

/// A reader whose first bytes, read ahead, are given back first.
type Replayed<R> = std::io::Chain<std::io::Cursor<Vec<u8>>, R>;

/// `reader` with its separator: `given`, or detected from the bytes
/// before the header line's end (which are then read again).
/// Refused when [`not_text`] finds them not to be delimited text.
fn with_delimiter<R: Read>(
    mut reader: R,
    given: Option<Delimiter>,
    source: &str,
) -> Result<(Delimiter, Replayed<R>)> {
    let mut prefix = Vec::new();
    let mut buf = [0u8; 8192];
    loop {
        let n = reader.read(&mut buf).map_err(|e| Error::io(source, e))?;
        prefix.extend_from_slice(&buf[..n]);
        let has_line = prefix
            .iter()
            .skip_while(|&&b| b == b'\n' || b == b'\r')
            .any(|&b| b == b'\n' || b == b'\r');
        if n == 0 || (has_line && prefix.len() >= 512) || prefix.len() >= SNIFF_LIMIT {
            break;
        }
    }
    if let Some(what) = not_text(&prefix[..prefix.len().min(8192)]) {
        return Err(Error::input(format!("{source}: {what}")));
    }
    let d = given.unwrap_or_else(|| Delimiter::sniff(&prefix));
    Ok((d, std::io::Cursor::new(prefix).chain(reader)))
}

/// The CSV reader over `reader` with separator `d`.
fn csv_reader<R: Read>(reader: R, d: Delimiter) -> csv::Reader<R> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(d.byte())
        .from_reader(reader)
}

/// The missing-value words exporters write, matched ignoring ASCII case.
/// Words that name real levels (`none` for a dose group, `missing` for a
/// tooth) are not among them: in a column of numbers they are reported as
/// stray cells instead.
const MISSING_WORDS: [&[u8]; 5] = [b"na", b"n/a", b"nan", b"null", b"#n/a"];

/// Is this (trimmed) cell a missing-value token? The empty cell; `.`, `-`
/// and `?`; Stata's extended missing codes `.a` to `.z` (lower case, as
/// Stata writes them); and the words `NA`, `N/A`, `NaN`, `NULL` and `#N/A`
/// in any ASCII case.
pub(crate) fn missing_token(raw: &[u8]) -> bool {
    match raw {
        b"" | b"." | b"-" | b"?" => true,
        [b'.', c] => c.is_ascii_lowercase(),
        _ => raw.len() <= 7 && MISSING_WORDS.iter().any(|w| w.eq_ignore_ascii_case(raw)),
    }
}

/// The compression format a file's first bytes announce (by its magic
/// number), if any: gzip, zstd, bzip2, xz, zip or 7z.
pub fn compressed(prefix: &[u8]) -> Option<&'static str> {
    const MAGIC: [(&[u8], &str); 6] = [
        (b"\x1f\x8b", "gzip"),
        (b"\x28\xb5\x2f\xfd", "zstd"),
        (b"BZh", "bzip2"),
        (b"\xfd7zXZ\x00", "xz"),
        (b"PK\x03\x04", "zip"),
        (b"7z\xbc\xaf\x27\x1c", "7z"),
    ];
    MAGIC
        .into_iter()
        .find(|(magic, name)| {
            prefix.starts_with(magic) && (*name != "bzip2" || prefix.get(3).is_some_and(u8::is_ascii_digit))
        })
        .map(|m| m.1)
}

/// What the first bytes of a file say when it is not delimited text: a
/// compressed file ([`compressed`]), or binary data (a NUL byte, or many
/// bytes that are neither UTF-8 text nor line ends and tabs).
pub fn not_text(prefix: &[u8]) -> Option<String> {
    if let Some(name) = compressed(prefix) {
        return Some(format!(
            "looks compressed ({name}); decompress it first: only gzip and zstd are read"
        ));
    }
    if let Some(at) = prefix.iter().position(|&b| b == 0) {
        return Some(format!(
            "is not delimited text: it holds binary data (a NUL byte at offset {at})"
        ));
    }
    let bad = prefix
        .utf8_chunks()
        .map(|c| {
            c.invalid().len()
                + c.valid()
                    .chars()
                    .filter(|&ch| ch.is_control() && !matches!(ch, '\n' | '\r' | '\t'))
                    .count()
        })
        .sum::<usize>();
    // A text file in another encoding has a few such bytes; binary data
    // has many.
    (bad * 10 > prefix.len() && bad >= 4).then(|| {
        format!(
            "is not delimited text: {bad} of its first {} bytes are neither UTF-8 text nor line ends",
            prefix.len()
        )
    })
}

fn trim(raw: &[u8]) -> &[u8] {
    raw.trim_ascii()
}

impl Dataset {
    /// Reads a dataset from `reader`; `source` names it in messages (a
    /// path, or `<stdin>`). The format is told by the first bytes: gzip or
    /// zstd compressed text is decompressed as it is read, Parquet, Arrow
    /// IPC and Stata files are read whole into memory first (see
    /// [`super::source`]), anything else is delimited text. Errors name the
    /// line and, where there is one, the column.
    pub fn read<'a, R: Read + 'a>(reader: R, source: &str, opts: &ReadOptions) -> Result<Dataset> {
        match text::route(reader, source)? {
            Routed::Text(r) => Dataset::read_text(r, source, opts),
            Routed::Binary(f, bytes) => {
                source::binary_read(f, &Input::Bytes(bytes.into()), source, opts.keep.as_deref())
            }
        }
    }

    /// Reads delimited text from `reader`.
    fn read_text<R: Read>(reader: R, source: &str, opts: &ReadOptions) -> Result<Dataset> {
        let (delimiter, reader) = with_delimiter(reader, opts.delimiter, source)?;
        let mut rdr = csv_reader(LineCounter::new(reader), delimiter);
        let mut rec = csv::ByteRecord::new();
        let fail = |e: csv::Error| csv_error(source, e);
        // The line on which the record just read begins.
        let line_of = |rdr: &mut csv::Reader<LineCounter<_>>, rec: &csv::ByteRecord| {
            let start = rec.position().map_or(0, |p| p.byte());
            rdr.get_mut().line_of_record(start)
        };
        if !rdr.read_byte_record(&mut rec).map_err(fail)? {
            return Err(Error::input(format!(
                "{source}:1: the file is empty; a header row naming the columns is needed"
            )));
        }
        let header_line = line_of(&mut rdr, &rec);
        let names = header(&rec, source, header_line, delimiter, opts.delimiter.is_some())?;
        let mut columns = Builder::new(source, names, opts.keep.as_deref())?;
        let kept = columns.kept();
        let width = columns.names().len();
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
            for &j in &kept {
                columns.push(j, line, Cell::Text(&rec[j]))?;
            }
            nrows += 1;
        }
        columns.finish(
            nrows,
            format!(
                "{source}:{}: the file has a header but no data rows",
                header_line + 1
            ),
        )
    }

    /// Reads the data file at `path`, of any format read here: told by its
    /// first bytes, else by its name (see [`super::source::Format`]).
    /// Without a separator in `opts`, delimited text named `.tsv` is read
    /// as tab-separated and any other is detected (the command line maps
    /// `-` to stdin and calls [`Dataset::read`] itself).
    pub fn open(path: &Path, opts: &ReadOptions) -> Result<Dataset> {
        let source = path.display().to_string();
        match Format::detect(&source::prefix_of(path)?, Some(path), &source)? {
            Format::Text(c) => {
                let f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
                let reader = text::decompress(std::io::BufReader::with_capacity(1 << 16, f), c, &source)?;
                let opts = ReadOptions {
                    delimiter: opts.delimiter.or_else(|| Delimiter::from_path(path)),
                    ..opts.clone()
                };
                Dataset::read_text(reader, &source, &opts)
            }
            f => source::binary_read(f, &Input::File(path), &source, opts.keep.as_deref()),
        }
    }

    /// The column names of the data in `reader` alone, checked as
    /// [`Dataset::read`] checks them; the format is told as there, and
    /// `given` is the separator of delimited text as in [`ReadOptions`].
    pub fn read_header<'a, R: Read + 'a>(
        reader: R,
        source: &str,
        given: Option<Delimiter>,
    ) -> Result<Vec<String>> {
        match text::route(reader, source)? {
            Routed::Text(r) => text_header(r, source, given),
            Routed::Binary(f, bytes) => source::binary_header(f, &Input::Bytes(bytes.into()), source),
        }
    }

    /// The column names of the data file at `path` alone (for Parquet,
    /// Arrow and Stata files, from their schema without reading the data);
    /// `given` as in [`Dataset::read_header`], else implied by a `.tsv`
    /// name or detected.
    pub fn open_header(path: &Path, given: Option<Delimiter>) -> Result<Vec<String>> {
        let source = path.display().to_string();
        match Format::detect(&source::prefix_of(path)?, Some(path), &source)? {
            Format::Text(c) => {
                let f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
                let reader = text::decompress(f, c, &source)?;
                text_header(reader, &source, given.or_else(|| Delimiter::from_path(path)))
            }
            f => source::binary_header(f, &Input::File(path), &source),
        }
    }
}

/// The column names of the header line of delimited text.
fn text_header<R: Read>(reader: R, source: &str, given: Option<Delimiter>) -> Result<Vec<String>> {
    let (delimiter, reader) = with_delimiter(reader, given, source)?;
    let mut rdr = csv_reader(LineCounter::new(reader), delimiter);
    let mut rec = csv::ByteRecord::new();
    if !rdr.read_byte_record(&mut rec).map_err(|e| csv_error(source, e))? {
        return Err(Error::input(format!(
            "{source}:1: the file is empty; a header row naming the columns is needed"
        )));
    }
    let start = rec.position().map_or(0, |p| p.byte());
    let line = rdr.get_mut().line_of_record(start);
    header(&rec, source, line, delimiter, given.is_some())
}

/// The refusal of a header that is one field holding another separator:
/// the file was read with the wrong one.
fn one_field_header(name: &str, source: &str, line: u64, used: Delimiter) -> Result<()> {
    let counts = first_line_counts(name.as_bytes());
    let Some(likely) = Delimiter::ALL
        .into_iter()
        .filter(|&d| d != used && counts[d as usize] > 0)
        .max_by_key(|&d| counts[d as usize])
    else {
        return Ok(());
    };
    let plural = match likely {
        Delimiter::Comma => "commas",
        Delimiter::Tab => "tabs",
        Delimiter::Semicolon => "semicolons",
    };
    Err(Error::input(format!(
        "{source}:{line}: read as {}-separated, the header is one field of {} characters containing {plural} \
         (the file looks {}-separated)",
        used.name(),
        name.chars().count(),
        likely.name(),
    ))
    .advised(Advice::one(
        Remedy::Choose(Setting::Delimiter, vec![likely.name().to_string()]),
        "",
    )))
}

/// The column names of the header record; `given` when the separator was
/// not detected (detection never leaves another separator outside quotes).
fn header(
    rec: &csv::ByteRecord,
    source: &str,
    line: u64,
    delimiter: Delimiter,
    given: bool,
) -> Result<Vec<String>> {
    if given
        && rec.len() == 1
        && let Ok(name) = std::str::from_utf8(&rec[0])
    {
        one_field_header(name, source, line, delimiter)?;
    }
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
