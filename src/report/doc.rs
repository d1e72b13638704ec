//! A format-neutral document: headings, paragraphs, lists and tables. Each
//! command lays out its results once as a [`Doc`]; the exporters in this
//! folder (text, markdown, latex, csv) render it. JSON is the serde form of
//! the command's result struct, not of the document.

use serde::Serialize;

/// Column alignment in a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    /// Left-aligned (names, text).
    Left,
    /// Right-aligned (numbers).
    Right,
}

/// A table: a header row and rows of cells already formatted as text.
#[derive(Debug, Clone, Default)]
pub struct Table {
    /// A short caption.
    pub caption: String,
    /// Column headings.
    pub headers: Vec<String>,
    /// Alignment per column.
    pub align: Vec<Align>,
    /// Body rows; each has one cell per heading.
    pub rows: Vec<Vec<String>>,
    /// Notes printed under the table.
    pub notes: Vec<String>,
}

impl Table {
    /// A table with these headings; columns after the first are right-aligned.
    pub fn new(caption: &str, headers: &[&str]) -> Self {
        let align = (0..headers.len())
            .map(|i| if i == 0 { Align::Left } else { Align::Right })
            .collect();
        Table {
            caption: caption.to_string(),
            headers: headers.iter().map(|h| h.to_string()).collect(),
            align,
            rows: Vec::new(),
            notes: Vec::new(),
        }
    }

    /// Sets the alignment of column `i`.
    pub fn align(mut self, i: usize, a: Align) -> Self {
        self.align[i] = a;
        self
    }

    /// Appends a row (padded or cut to the number of headings).
    pub fn row(&mut self, cells: Vec<String>) {
        let mut cells = cells;
        cells.resize(self.headers.len(), String::new());
        self.rows.push(cells);
    }
}

/// One cell of a [`DataTable`]: a number, a label, or nothing.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    /// A number, written in full precision (empty when not finite).
    Num(f64),
    /// A count.
    Count(usize),
    /// A label.
    Text(String),
    /// A missing value (an empty cell).
    Empty,
}

impl Cell {
    /// A number, or an empty cell for `None`.
    pub fn opt(v: Option<f64>) -> Cell {
        v.map_or(Cell::Empty, Cell::Num)
    }

    /// The cell as written in a data file: numbers in full (shortest
    /// round-trip) precision, in exponent form beyond the magnitudes met in
    /// practice ([`crate::data::value_text`]), nothing for a missing or
    /// non-finite value.
    pub fn plain(&self) -> String {
        match self {
            Cell::Num(v) if v.is_finite() => crate::data::value_text(*v),
            Cell::Num(_) | Cell::Empty => String::new(),
            Cell::Count(n) => n.to_string(),
            Cell::Text(s) => s.clone(),
        }
    }
}

/// A machine-readable table: one row per observation, one column per
/// variable, numbers kept as numbers. The data formats (CSV) write these;
/// the reading formats (text, Markdown, LaTeX) skip them.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct DataTable {
    /// A short name, also the file stem in a report bundle (`estimates`).
    pub name: String,
    /// Column names (lower case, no spaces).
    pub headers: Vec<String>,
    /// Rows; each has one cell per column.
    pub rows: Vec<Vec<Cell>>,
}

impl DataTable {
    /// An empty table with these columns.
    pub fn new(name: &str, headers: &[&str]) -> Self {
        DataTable {
            name: name.to_string(),
            headers: headers.iter().map(|h| h.to_string()).collect(),
            rows: Vec::new(),
        }
    }

    /// Appends a row (padded with empty cells or cut to the columns).
    pub fn row(&mut self, mut cells: Vec<Cell>) {
        cells.resize(self.headers.len(), Cell::Empty);
        self.rows.push(cells);
    }

    /// Appends the rows of `other` (same columns).
    pub fn extend(&mut self, other: DataTable) {
        debug_assert_eq!(self.headers, other.headers);
        self.rows.extend(other.rows);
    }
}

/// One block of a document.
#[derive(Debug, Clone)]
pub enum Block {
    /// A section heading.
    Heading(String),
    /// A heading one level below [`Block::Heading`].
    Subheading(String),
    /// A paragraph of plain text.
    Para(String),
    /// A bulleted list.
    List(Vec<String>),
    /// A table.
    Table(Table),
    /// A figure file, relative to the document (report bundles only).
    Figure {
        /// Path of the SVG file.
        path: String,
        /// What it shows.
        caption: String,
    },
    /// A warning to the reader.
    Warning(String),
    /// A machine-readable table, written only by the data formats.
    Data(DataTable),
}

/// The reproducibility stamp that every output carries.
#[derive(Debug, Clone, Serialize)]
pub struct Stamp {
    /// Tool name and version.
    pub tool: ToolInfo,
    /// The full command line.
    pub command: String,
    /// The random seed (bootstrap, simulation).
    pub seed: u64,
    /// Every input file with its SHA-256.
    pub files: Vec<FileStamp>,
}

/// Name and version of the tool.
#[derive(Debug, Clone, Serialize)]
pub struct ToolInfo {
    /// Always "causeway".
    pub name: String,
    /// The crate version.
    pub version: String,
}

impl Default for ToolInfo {
    fn default() -> Self {
        ToolInfo {
            name: "causeway".into(),
            version: env!("CARGO_PKG_VERSION").into(),
        }
    }
}

/// An input file and the SHA-256 of its bytes.
#[derive(Debug, Clone, Serialize)]
pub struct FileStamp {
    /// The path as given.
    pub path: String,
    /// Lower-case hex SHA-256 of the bytes read.
    pub sha256: String,
}

impl FileStamp {
    /// The stamp of `bytes` read from `path`.
    pub fn of(path: &str, bytes: &[u8]) -> Self {
        use sha2::{Digest, Sha256};
        let digest = Sha256::digest(bytes);
        FileStamp {
            path: path.to_string(),
            sha256: digest.iter().map(|b| format!("{b:02x}")).collect(),
        }
    }
}

impl Stamp {
    /// One line per fact, for the footers of the text formats.
    pub fn lines(&self) -> Vec<String> {
        let mut v = vec![
            format!("{} {}", self.tool.name, self.tool.version),
            format!("command: {}", self.command),
            format!("seed: {}", self.seed),
        ];
        for f in &self.files {
            v.push(format!("input {} sha256 {}", f.path, f.sha256));
        }
        v
    }
}

/// A document: a title, blocks, the caution and the stamp.
#[derive(Debug, Clone)]
pub struct Doc {
    /// The title.
    pub title: String,
    /// The body.
    pub blocks: Vec<Block>,
    /// The reproducibility stamp.
    pub stamp: Option<Stamp>,
}

/// The caution every report carries.
pub const CAUTION: &str = "An estimate is only as valid as the declared graph and the usual assumptions: \
no unmeasured confounding beyond the graph, positivity, consistency, and correctly specified models. \
It does not replace study design review, subject-matter and clinical judgement, or the ethics and \
reporting rules that apply to your work.";

/// A renderer of documents in one format.
pub trait Exporter {
    /// The document as text in this format.
    fn render(&self, doc: &Doc) -> String;
}

/// How many items of a list cut at a cap are shown, in words: `12` when all
/// of them are, `50 shown of 340` when the list was cut, and `50 shown of at
/// least 1000` when the count itself stopped early (`complete` false). The
/// one wording of every capped list in the reports.
pub fn shown_of(shown: usize, total: usize, complete: bool) -> String {
    match (complete, shown >= total) {
        (true, true) => total.to_string(),
        (true, false) => format!("{shown} shown of {total}"),
        (false, _) => format!("{shown} shown of at least {}", total.max(shown)),
    }
}

#[cfg(test)]
mod shown_tests {
    use super::shown_of;

    #[test]
    fn capped_lists_say_how_many_exist() {
        assert_eq!(shown_of(3, 3, true), "3");
        assert_eq!(shown_of(50, 340, true), "50 shown of 340");
        assert_eq!(shown_of(50, 1000, false), "50 shown of at least 1000");
        assert_eq!(shown_of(7, 7, false), "7 shown of at least 7");
    }
}
