//! Property tests for the CSV loader: arbitrary bytes never panic
//! `Dataset::read`; generated CSV-like text (missing tokens, quoted cells
//! with commas, quotes and line breaks, a byte-order mark, CRLF line ends,
//! ragged rows) either loads with one row per data record, each cell read
//! as written, or is refused with the line of the first ragged record.

use causeway::Error;
use causeway::data::{Dataset, ReadOptions};
use proptest::prelude::*;

/// One cell as written in the file, and what it holds.
#[derive(Debug, Clone)]
enum Cell {
    /// A number, written in one of several ways.
    Number(f64, String),
    /// A missing-value token (possibly quoted or padded).
    Missing(String),
    /// Text that is not a number.
    Text(String),
}

impl Cell {
    fn written(&self) -> &str {
        match self {
            Cell::Number(_, s) | Cell::Missing(s) | Cell::Text(s) => s,
        }
    }
}

fn cell() -> impl Strategy<Value = Cell> {
    prop_oneof![
        4 => (-1e6f64..1e6).prop_map(|v| Cell::Number(v, format!("{v}"))),
        1 => (-1000i32..1000).prop_map(|v| Cell::Number(f64::from(v), format!(" {v} "))),
        1 => (-5.0f64..5.0).prop_map(|v| Cell::Number(v, format!("\"{v}\""))),
        1 => (0.0f64..1.0).prop_map(|v| Cell::Number(v * 1e-300, format!("{:e}", v * 1e-300))),
        2 => prop_oneof![
            Just(""), Just("NA"), Just("na"), Just("NaN"), Just("nan"), Just("."),
            Just(" NA "), Just("\"NA\""), Just("\"\""),
        ]
        .prop_map(|s| Cell::Missing(s.to_string())),
        1 => prop_oneof![
            Just("heavy"), Just("\"a,b\""), Just("\"say \"\"hi\"\"\""), Just("\"two\nlines\""),
            Just("\"crlf\r\ninside\""), Just("x y"), Just("\"1,5\""), Just("é"), Just("1.2.3"),
        ]
        .prop_map(|s| Cell::Text(s.to_string())),
    ]
}

/// A generated file: header width, rows of cells, and how it is laid out.
#[derive(Debug, Clone)]
struct File {
    width: usize,
    rows: Vec<Vec<Cell>>,
    bom: bool,
    crlf: bool,
    final_newline: bool,
}

impl File {
    fn text(&self) -> (String, Vec<usize>) {
        let end = if self.crlf { "\r\n" } else { "\n" };
        let mut s = String::new();
        if self.bom {
            s.push('\u{feff}');
        }
        let header: Vec<String> = (0..self.width).map(|j| format!("c{j}")).collect();
        s.push_str(&header.join(","));
        // The 1-based line on which each record starts.
        let mut starts = Vec::new();
        for (i, row) in self.rows.iter().enumerate() {
            s.push_str(end);
            starts.push(s.matches('\n').count() + 1);
            let cells: Vec<&str> = row.iter().map(Cell::written).collect();
            s.push_str(&cells.join(","));
            if i + 1 == self.rows.len() && self.final_newline {
                s.push_str(end);
            }
        }
        if self.rows.is_empty() && self.final_newline {
            s.push_str(end);
        }
        (s, starts)
    }
}

/// A record with one unquoted empty cell is a blank line, which the loader
/// skips (documented in src/data/read.rs); the generator writes "NA" there.
fn not_blank(mut row: Vec<Cell>) -> Vec<Cell> {
    if row.len() == 1 && row[0].written().is_empty() {
        row[0] = Cell::Missing("NA".into());
    }
    row
}

fn file() -> impl Strategy<Value = File> {
    (1usize..5)
        .prop_flat_map(|width| {
            let row = prop_oneof![
                12 => proptest::collection::vec(cell(), width..=width),
                1 => proptest::collection::vec(cell(), 1..7),
            ]
            .prop_map(not_blank);
            (
                Just(width),
                proptest::collection::vec(row, 0..25),
                any::<bool>(),
                any::<bool>(),
                any::<bool>(),
            )
        })
        .prop_map(|(width, rows, bom, crlf, final_newline)| File {
            width,
            rows,
            bom,
            crlf,
            final_newline,
        })
}

fn read(bytes: &[u8]) -> Result<Dataset, Error> {
    Dataset::read(bytes, "p.csv", &ReadOptions::default())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn arbitrary_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..2000)) {
        let _ = read(&bytes);
        let keep = ReadOptions { keep: Some(vec!["a".into(), "b".into()]), ..ReadOptions::default() };
        let _ = Dataset::read(&bytes[..], "p.csv", &keep);
    }

    #[test]
    fn csv_like_bytes_never_panic(
        lines in proptest::collection::vec(
            "(\u{feff})?([a-c0-9.\" ,]|NA|NaN|inf|-|e|\r|\u{e9}){0,12}", 0..10),
        crlf in any::<bool>(),
    ) {
        let text = lines.join(if crlf { "\r\n" } else { "\n" });
        if let Ok(d) = read(text.as_bytes()) {
            // Whatever loads has fewer rows than the text has lines (LF,
            // CRLF or a lone CR end a line, as for the CSV reader).
            let lines = text.matches('\n').count() + text.matches('\r').count()
                - text.matches("\r\n").count() + 1;
            prop_assert!(d.nrows() < lines, "{} rows from {} lines: {:?}", d.nrows(), lines, text);
        }
    }

    #[test]
    fn generated_csv_loads_row_for_row(f in file()) {
        let (text, starts) = f.text();
        let result = read(text.as_bytes());
        let ragged = f.rows.iter().position(|r| r.len() != f.width);
        match (ragged, result) {
            (Some(k), Err(Error::Input(m))) => {
                let place = format!("p.csv:{}:", starts[k]);
                prop_assert!(m.starts_with(&place), "{:?} should start with {:?}\n{:?}", m, place, text);
                prop_assert!(m.contains("fields but the header has") || m.contains("field but the header has"), "{}", m);
            }
            (None, Err(Error::Input(m))) if f.rows.is_empty() => {
                prop_assert!(m.contains("no data rows"), "{}", m);
            }
            (None, Ok(d)) => {
                prop_assert_eq!(d.nrows(), f.rows.len(), "{:?}", text);
                let names: Vec<String> = (0..f.width).map(|j| format!("c{j}")).collect();
                prop_assert_eq!(d.names(), &names[..]);
                for (j, name) in names.iter().enumerate() {
                    let col = d.column(name).unwrap();
                    prop_assert_eq!(col.len(), f.rows.len());
                    let has_text = f.rows.iter().any(|r| matches!(r[j], Cell::Text(_)));
                    prop_assert_eq!(col.is_text(), has_text, "column {}", name);
                    for (i, row) in f.rows.iter().enumerate() {
                        match &row[j] {
                            Cell::Missing(_) => prop_assert!(col.is_missing(i), "row {} col {}", i, j),
                            Cell::Number(v, _) => {
                                prop_assert!(!col.is_missing(i));
                                prop_assert_eq!(col.values[i], *v, "row {} col {}", i, j);
                            }
                            Cell::Text(_) => prop_assert!(!col.is_missing(i) && col.values[i].is_nan()),
                        }
                    }
                }
            }
            (r, other) => prop_assert!(false, "ragged {:?}: unexpected {:?}\n{:?}", r, other.map(|d| d.nrows()), text),
        }
    }
}
