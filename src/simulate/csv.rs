//! Simulated data as CSV: a header of the observed nodes' names in the
//! graph's declaration order, one row per draw, `\n` line ends, fields quoted
//! only when they need it (RFC 4180).
//!
//! Numbers are written as the shortest decimal that reads back as the same
//! binary value (Rust's float formatting, which does not depend on the
//! platform), never in exponent form; binary nodes print as 0 and 1,
//! categorical nodes as their level names.

use super::{Column, SimData};
use std::io::Write;

/// The text of a simulated number: the shortest decimal that reads back as
/// `x` exactly, with negative zero written as 0.
pub fn format_number(x: f64) -> String {
    if x == 0.0 { "0".to_string() } else { format!("{x}") }
}

/// The I/O error behind a CSV writer's error, keeping its kind (a closed
/// pipe stays one).
fn io_error(e: ::csv::Error) -> std::io::Error {
    match e.into_kind() {
        ::csv::ErrorKind::Io(e) => e,
        other => std::io::Error::other(format!("{other:?}")),
    }
}

/// A CSV writer of simulated rows: the header, then one record at a time.
struct Rows<W: Write> {
    out: ::csv::Writer<W>,
    record: Vec<String>,
}

impl<W: Write> Rows<W> {
    /// Writes the header of `names`.
    fn new<'a>(w: W, names: impl Iterator<Item = &'a str>) -> std::io::Result<Self> {
        let mut out = ::csv::WriterBuilder::new()
            .terminator(::csv::Terminator::Any(b'\n'))
            .from_writer(w);
        out.write_record(names).map_err(io_error)?;
        Ok(Rows {
            out,
            record: Vec::new(),
        })
    }

    /// Writes one record.
    fn write(&mut self, fields: impl Iterator<Item = String>) -> std::io::Result<()> {
        self.record.clear();
        self.record.extend(fields);
        self.out.write_record(&self.record).map_err(io_error)
    }

    /// Flushes what is buffered.
    fn finish(mut self) -> std::io::Result<()> {
        self.out.flush()
    }
}

/// The CSV output of [`super::Model::write_to`]: numbers by
/// [`format_number`], categorical cells as their level names.
pub struct CsvSink<W: Write> {
    out: Option<W>,
    rows: Option<Rows<W>>,
    levels: Vec<Option<Vec<String>>>,
}

impl<W: Write> CsvSink<W> {
    /// CSV written to `out`.
    pub fn new(out: W) -> Self {
        CsvSink {
            out: Some(out),
            rows: None,
            levels: Vec::new(),
        }
    }
}

impl<W: Write> super::RowSink for CsvSink<W> {
    fn start(&mut self, columns: &[(&str, Option<&[String]>)]) -> std::io::Result<()> {
        let out = self
            .out
            .take()
            .ok_or_else(|| std::io::Error::other("CSV output started twice"))?;
        self.rows = Some(Rows::new(out, columns.iter().map(|c| c.0))?);
        self.levels = columns.iter().map(|c| c.1.map(<[String]>::to_vec)).collect();
        Ok(())
    }

    fn block(&mut self, values: &[f64]) -> std::io::Result<()> {
        let rows = self
            .rows
            .as_mut()
            .ok_or_else(|| std::io::Error::other("CSV output not started"))?;
        for row in values.chunks_exact(self.levels.len().max(1)) {
            rows.write(row.iter().zip(&self.levels).map(|(&x, levels)| match levels {
                Some(l) => l[x as usize].clone(),
                None => format_number(x),
            }))?;
        }
        Ok(())
    }

    fn finish(&mut self) -> std::io::Result<()> {
        match self.rows.take() {
            Some(rows) => rows.finish(),
            None => Ok(()),
        }
    }
}

/// Writes the observed columns of `data` as CSV.
pub fn write_csv<W: Write>(data: &SimData, w: W) -> std::io::Result<()> {
    let cols: Vec<&Column> = data.observed.iter().map(|&v| &data.columns[v]).collect();
    let mut out = Rows::new(w, data.observed.iter().map(|&v| data.names[v].as_str()))?;
    for i in 0..data.rows() {
        out.write(cols.iter().map(|c| match c {
            Column::Numeric(v) => format_number(v[i]),
            Column::Categorical { levels, codes } => levels[codes[i]].clone(),
        }))?;
    }
    out.finish()
}
