//! Parquet files (the `parquet` crate's Arrow reader): only the used
//! columns are decoded (a projection), a row group at a time, and their
//! Arrow arrays become cells as those of an Arrow IPC file do
//! ([`super::arrow`]).

use super::Builder;
use crate::{Error, Result};
use parquet::arrow::ProjectionMask;
use parquet::arrow::arrow_reader::ParquetRecordBatchReaderBuilder;
use parquet::errors::ParquetError;
use parquet::file::reader::ChunkReader;

fn refused(source: &str, e: impl std::fmt::Display) -> Error {
    Error::input(format!("{source}: not a readable Parquet file: {e}"))
}

/// The reader of the Parquet file `input` (its footer read).
fn open<T: ChunkReader + 'static>(input: T, source: &str) -> Result<ParquetRecordBatchReaderBuilder<T>> {
    ParquetRecordBatchReaderBuilder::try_new(input).map_err(|e: ParquetError| refused(source, e))
}

/// The column names of a Parquet file, from its footer.
pub(crate) fn header<T: ChunkReader + 'static>(input: T, source: &str) -> Result<Vec<String>> {
    Ok(super::arrow::names(open(input, source)?.schema()))
}

/// Reads the columns in `keep` (all when `None`) of a Parquet file.
pub(crate) fn read<T: ChunkReader + 'static>(
    input: T,
    source: &str,
    keep: Option<&[String]>,
) -> Result<crate::data::Dataset> {
    let builder = open(input, source)?;
    let mut columns = Builder::new(source, super::arrow::names(builder.schema()), keep)?;
    let kept = columns.kept();
    let mask = ProjectionMask::roots(builder.parquet_schema(), kept.iter().copied());
    let reader = builder
        .with_projection(mask)
        .build()
        .map_err(|e| refused(source, e))?;
    let mut nrows = 0;
    for batch in reader {
        let batch = batch.map_err(|e| refused(source, e))?;
        super::arrow::push_batch(&mut columns, &batch, &kept, nrows)?;
        nrows += batch.num_rows();
    }
    columns.finish(nrows, format!("{source}: the file has columns but no rows"))
}
