//! Arrow IPC files (arrow-ipc), and the cells of Arrow arrays, which
//! Parquet files are also read into: integers, floats and booleans (as
//! 0 and 1) are numbers, decimals are read from their decimal text,
//! strings (also dictionary-encoded) are text, nulls are missing. Dates,
//! times and nested types are refused, naming the column.

use super::{Builder, Cell, line_of_row};
use crate::{Error, Result};
use arrow_array::cast::AsArray;
use arrow_array::types::{
    Decimal128Type, Decimal256Type, Float16Type, Float32Type, Float64Type, Int8Type, Int16Type, Int32Type,
    Int64Type, UInt8Type, UInt16Type, UInt32Type, UInt64Type,
};
use arrow_array::{Array, RecordBatch};
use arrow_schema::{ArrowError, DataType, Schema};
use std::io::{Read, Seek};

/// The column names of an Arrow schema.
pub(crate) fn names(schema: &Schema) -> Vec<String> {
    schema.fields().iter().map(|f| f.name().clone()).collect()
}

fn refused(source: &str, e: ArrowError) -> Error {
    Error::input(format!("{source}: not a readable Arrow IPC file: {e}"))
}

/// The column names of the Arrow IPC file `reader` holds.
pub(crate) fn header<R: Read + Seek>(reader: R, source: &str) -> Result<Vec<String>> {
    let r = arrow_ipc::reader::FileReader::try_new(reader, None).map_err(|e| refused(source, e))?;
    Ok(names(&r.schema()))
}

/// Reads the columns in `keep` (all when `None`) of the Arrow IPC file that
/// `open` opens (twice: for the schema, then for the kept columns).
pub(crate) fn read<R: Read + Seek>(
    open: impl Fn() -> Result<R>,
    source: &str,
    keep: Option<&[String]>,
) -> Result<crate::data::Dataset> {
    let schema = arrow_ipc::reader::FileReader::try_new(open()?, None)
        .map_err(|e| refused(source, e))?
        .schema();
    let mut columns = Builder::new(source, names(&schema), keep)?;
    let kept = columns.kept();
    let reader = arrow_ipc::reader::FileReader::try_new(open()?, Some(kept.clone()))
        .map_err(|e| refused(source, e))?;
    let mut nrows = 0;
    for batch in reader {
        let batch = batch.map_err(|e| refused(source, e))?;
        push_batch(&mut columns, &batch, &kept, nrows)?;
        nrows += batch.num_rows();
    }
    columns.finish(nrows, format!("{source}: the file has columns but no rows"))
}

/// Stores the rows of `batch`, whose columns are the file's columns
/// `kept`, from row `first` of the file on.
pub(crate) fn push_batch(
    columns: &mut Builder,
    batch: &RecordBatch,
    kept: &[usize],
    first: usize,
) -> Result<()> {
    for (k, &j) in kept.iter().enumerate() {
        let name = columns.names()[j].clone();
        let source = columns.source.clone();
        each_cell(batch.column(k).as_ref(), &name, &source, &mut |i, cell| {
            columns.push(j, line_of_row(first + i), cell)
        })?;
    }
    Ok(())
}

/// A cell kept beyond its array (a dictionary's values).
enum Owned {
    Number(f64),
    Text(Vec<u8>),
    Missing,
}

/// Calls `f` with every row's cell of `array`, column `name`.
fn each_cell(
    array: &dyn Array,
    name: &str,
    source: &str,
    f: &mut dyn FnMut(usize, Cell) -> Result<()>,
) -> Result<()> {
    macro_rules! numbers {
        ($t:ty, $conv:expr) => {{
            let a = array.as_primitive::<$t>();
            for i in 0..a.len() {
                if a.is_null(i) {
                    f(i, Cell::Missing(""))?;
                } else {
                    f(i, Cell::Number($conv(a.value(i))))?;
                }
            }
        }};
    }
    macro_rules! texts {
        ($a:expr) => {{
            let a = $a;
            for i in 0..a.len() {
                if a.is_null(i) {
                    f(i, Cell::Missing(""))?;
                } else {
                    f(i, Cell::Text(a.value(i).as_ref()))?;
                }
            }
        }};
    }
    macro_rules! decimals {
        ($t:ty) => {{
            let a = array.as_primitive::<$t>();
            for i in 0..a.len() {
                if a.is_null(i) {
                    f(i, Cell::Missing(""))?;
                } else {
                    f(i, Cell::Text(a.value_as_string(i).as_bytes()))?;
                }
            }
        }};
    }
    match array.data_type() {
        DataType::Null => {
            for i in 0..array.len() {
                f(i, Cell::Missing(""))?;
            }
        }
        DataType::Boolean => {
            let a = array.as_boolean();
            for i in 0..a.len() {
                if a.is_null(i) {
                    f(i, Cell::Missing(""))?;
                } else {
                    f(i, Cell::Number(if a.value(i) { 1.0 } else { 0.0 }))?;
                }
            }
        }
        DataType::Int8 => numbers!(Int8Type, f64::from),
        DataType::Int16 => numbers!(Int16Type, f64::from),
        DataType::Int32 => numbers!(Int32Type, f64::from),
        DataType::Int64 => numbers!(Int64Type, |v: i64| v as f64),
        DataType::UInt8 => numbers!(UInt8Type, f64::from),
        DataType::UInt16 => numbers!(UInt16Type, f64::from),
        DataType::UInt32 => numbers!(UInt32Type, f64::from),
        DataType::UInt64 => numbers!(UInt64Type, |v: u64| v as f64),
        DataType::Float16 => numbers!(Float16Type, |v: HalfFloat| v.to_f64()),
        DataType::Float32 => numbers!(Float32Type, f64::from),
        DataType::Float64 => numbers!(Float64Type, |v: f64| v),
        DataType::Decimal128(..) => decimals!(Decimal128Type),
        DataType::Decimal256(..) => decimals!(Decimal256Type),
        DataType::Utf8 => texts!(array.as_string::<i32>()),
        DataType::LargeUtf8 => texts!(array.as_string::<i64>()),
        DataType::Utf8View => texts!(array.as_string_view()),
        DataType::Dictionary(..) => {
            let d = array.as_any_dictionary();
            let mut values = Vec::with_capacity(d.values().len());
            each_cell(d.values().as_ref(), name, source, &mut |_, cell| {
                values.push(match cell {
                    Cell::Number(v) => Owned::Number(v),
                    Cell::Text(t) => Owned::Text(t.to_vec()),
                    Cell::Missing(_) => Owned::Missing,
                });
                Ok(())
            })?;
            for (i, k) in d.normalized_keys().into_iter().enumerate() {
                let cell = match values.get(k) {
                    _ if array.is_null(i) => Cell::Missing(""),
                    Some(Owned::Number(v)) => Cell::Number(*v),
                    Some(Owned::Text(t)) => Cell::Text(t),
                    Some(Owned::Missing) | None => Cell::Missing(""),
                };
                f(i, cell)?;
            }
        }
        other => {
            let what = match other {
                DataType::Date32
                | DataType::Date64
                | DataType::Timestamp(..)
                | DataType::Time32(_)
                | DataType::Time64(_)
                | DataType::Duration(_)
                | DataType::Interval(_) => "dates or times",
                DataType::Binary
                | DataType::LargeBinary
                | DataType::BinaryView
                | DataType::FixedSizeBinary(_) => "binary values",
                _ => "nested values",
            };
            return Err(Error::input(format!(
                "{source}: column '{name}' holds {what} (type {other}); numbers, booleans and text are read: \
                 convert it to a number (for a date, say, days since a start date) or to text first"
            )));
        }
    }
    Ok(())
}

/// Arrow's half-precision float.
type HalfFloat = <Float16Type as arrow_array::ArrowPrimitiveType>::Native;
