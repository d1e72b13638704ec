//! Simulated data as Parquet: one row group per 65,536 rows (zstd
//! compressed), written as the blocks arrive, so memory stays bounded.
//! Numbers (binary nodes too) are 64-bit floats (a negative zero written
//! as 0, as in the CSV), categorical nodes their
//! level names as strings; columns in the order of the CSV header.

use std::io::Write;
use std::sync::Arc;

use arrow_array::{ArrayRef, Float64Array, RecordBatch, StringArray};
use arrow_schema::{DataType, Field, Schema};
use parquet::arrow::ArrowWriter;
use parquet::basic::{Compression, ZstdLevel};
use parquet::file::properties::WriterProperties;

/// Rows in a row group.
const ROW_GROUP: usize = 1 << 16;

/// The Parquet output of [`super::Model::write_to`].
pub struct ParquetSink<W: Write + Send> {
    out: Option<W>,
    writer: Option<ArrowWriter<W>>,
    schema: Arc<Schema>,
    levels: Vec<Option<Vec<String>>>,
}

impl<W: Write + Send> ParquetSink<W> {
    /// Parquet written to `out`.
    pub fn new(out: W) -> Self {
        ParquetSink {
            out: Some(out),
            writer: None,
            schema: Arc::new(Schema::empty()),
            levels: Vec::new(),
        }
    }
}

fn io(e: parquet::errors::ParquetError) -> std::io::Error {
    match e {
        parquet::errors::ParquetError::External(e) => match e.downcast::<std::io::Error>() {
            Ok(io) => *io,
            Err(other) => std::io::Error::other(other.to_string()),
        },
        other => std::io::Error::other(other.to_string()),
    }
}

impl<W: Write + Send> super::RowSink for ParquetSink<W> {
    fn start(&mut self, columns: &[(&str, Option<&[String]>)]) -> std::io::Result<()> {
        let out = self
            .out
            .take()
            .ok_or_else(|| std::io::Error::other("Parquet output started twice"))?;
        let fields: Vec<Field> = columns
            .iter()
            .map(|(name, levels)| {
                let t = if levels.is_some() {
                    DataType::Utf8
                } else {
                    DataType::Float64
                };
                Field::new(*name, t, false)
            })
            .collect();
        self.schema = Arc::new(Schema::new(fields));
        self.levels = columns.iter().map(|c| c.1.map(<[String]>::to_vec)).collect();
        let props = WriterProperties::builder()
            .set_compression(Compression::ZSTD(ZstdLevel::default()))
            .set_max_row_group_row_count(Some(ROW_GROUP))
            .set_created_by(format!("causeway {}", env!("CARGO_PKG_VERSION")))
            .build();
        self.writer = Some(ArrowWriter::try_new(out, self.schema.clone(), Some(props)).map_err(io)?);
        Ok(())
    }

    fn block(&mut self, values: &[f64]) -> std::io::Result<()> {
        let width = self.levels.len().max(1);
        let arrays: Vec<ArrayRef> = self
            .levels
            .iter()
            .enumerate()
            .map(|(j, levels)| {
                let cells = values.chunks_exact(width).map(|row| row[j]);
                match levels {
                    Some(l) => Arc::new(
                        cells
                            .map(|x| Some(l[x as usize].as_str()))
                            .collect::<StringArray>(),
                    ) as ArrayRef,
                    // A negative zero is written as 0, as in the CSV.
                    None => Arc::new(cells.map(|x| x + 0.0).collect::<Float64Array>()) as ArrayRef,
                }
            })
            .collect();
        let batch = RecordBatch::try_new(self.schema.clone(), arrays).map_err(std::io::Error::other)?;
        let writer = self
            .writer
            .as_mut()
            .ok_or_else(|| std::io::Error::other("Parquet output not started"))?;
        writer.write(&batch).map_err(io)
    }

    fn finish(&mut self) -> std::io::Result<()> {
        match self.writer.take() {
            Some(w) => w.close().map(|_| ()).map_err(io),
            None => Ok(()),
        }
    }
}
