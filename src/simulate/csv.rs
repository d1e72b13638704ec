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

/// Writes the observed columns of `data` as CSV.
pub fn write_csv<W: Write>(data: &SimData, w: W) -> std::io::Result<()> {
    let mut out = ::csv::WriterBuilder::new()
        .terminator(::csv::Terminator::Any(b'\n'))
        .from_writer(w);
    let cols: Vec<&Column> = data.observed.iter().map(|&v| &data.columns[v]).collect();
    out.write_record(data.observed.iter().map(|&v| data.names[v].as_str()))?;
    let mut record: Vec<String> = Vec::with_capacity(cols.len());
    for i in 0..data.rows() {
        record.clear();
        for c in &cols {
            record.push(match c {
                Column::Numeric(v) => format_number(v[i]),
                Column::Categorical { levels, codes } => levels[codes[i]].clone(),
            });
        }
        out.write_record(&record)?;
    }
    out.flush()?;
    Ok(())
}
