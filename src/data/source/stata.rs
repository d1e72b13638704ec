//! Stata `.dta` files (the `dta` crate; format versions 102 to 119, among
//! them 117, 118 and 119 of Stata 13 and later). Numbers of every storage
//! type (byte, int, long, float, double) are numbers; the missing codes
//! `.` and `.a` to `.z` are missing (and counted under that token); `str#`
//! and `strL` strings are text. A variable with value labels is read as
//! its labels: each labelled value becomes the text of its label, so the
//! labels are the levels of a categorical variable (a value without a
//! label stays its number, written as text).

use super::{Builder, Cell, line_of_row};
use crate::{Error, Result};
use dta::stata::dta::dta_error::{DtaError, FormatErrorKind};
use dta::stata::dta::dta_reader::DtaReader;
use dta::stata::dta::long_string_ref::LongStringRef;
use dta::stata::dta::long_string_table::LongStringTable;
use dta::stata::dta::value::Value;
use dta::stata::dta::value_label_table::ValueLabelTable;
use dta::stata::missing_value::MissingValue;
use std::io::{Read, Seek};

fn refused(source: &str, e: DtaError) -> Error {
    match &e {
        DtaError::Format(f) => match f.kind() {
            FormatErrorKind::UnsupportedRelease { release } => Error::input(format!(
                "{source}: a Stata file of format version {release}, which is not read: versions 102 to 119 \
                 are (Stata 13 and later write 117 to 119); save it in one of those or export it as text"
            )),
            FormatErrorKind::Truncated { .. } => {
                Error::input(format!("{source}: the Stata file is cut short ({e})"))
            }
            _ => Error::input(format!("{source}: not a readable Stata file: {e}")),
        },
        DtaError::Io { source: io, .. } if io.kind() == std::io::ErrorKind::UnexpectedEof => {
            Error::input(format!("{source}: the Stata file is cut short ({e})"))
        }
        _ => Error::input(format!("{source}: not a readable Stata file: {e}")),
    }
}

/// The variable names of a Stata file.
pub(crate) fn header<R: Read + Seek>(reader: R, source: &str) -> Result<Vec<String>> {
    let schema = DtaReader::new()
        .from_reader(reader)
        .read_header()
        .and_then(|h| h.read_schema())
        .map_err(|e| refused(source, e))?;
    Ok(schema
        .schema()
        .variables()
        .iter()
        .map(|v| v.name().to_string())
        .collect())
}

/// A cell as the data section holds it, before long strings and value
/// labels (which follow the data) are known.
enum Raw {
    Number(f64),
    Missing(MissingValue),
    Text(String),
    Long(LongStringRef),
}

/// Reads the variables in `keep` (all when `None`) of a Stata file.
pub(crate) fn read<R: Read + Seek>(
    reader: R,
    source: &str,
    keep: Option<&[String]>,
) -> Result<crate::data::Dataset> {
    let fail = |e| refused(source, e);
    let mut chars = DtaReader::new()
        .from_reader(reader)
        .read_header()
        .and_then(|h| h.read_schema())
        .map_err(fail)?;
    let variables = chars.schema().variables().to_vec();
    let encoding = chars.encoding();
    let names = variables.iter().map(|v| v.name().to_string()).collect();
    let mut columns = Builder::new(source, names, keep)?;
    let kept = columns.kept();
    chars.skip_to_end().map_err(fail)?;
    let mut records = chars.into_record_reader().map_err(fail)?;
    let mut raw: Vec<Vec<Raw>> = kept.iter().map(|_| Vec::new()).collect();
    while let Some(record) = records.read_lazy_record().map_err(fail)? {
        for (k, &j) in kept.iter().enumerate() {
            raw[k].push(match record.value(j).map_err(fail)? {
                Value::Byte(v) => match v {
                    dta::stata::stata_byte::StataByte::Present(x) => Raw::Number(x.into()),
                    dta::stata::stata_byte::StataByte::Missing(m) => Raw::Missing(m),
                },
                Value::Int(v) => match v {
                    dta::stata::stata_int::StataInt::Present(x) => Raw::Number(x.into()),
                    dta::stata::stata_int::StataInt::Missing(m) => Raw::Missing(m),
                },
                Value::Long(v) => match v {
                    dta::stata::stata_long::StataLong::Present(x) => Raw::Number(x.into()),
                    dta::stata::stata_long::StataLong::Missing(m) => Raw::Missing(m),
                },
                Value::Float(v) => match v {
                    dta::stata::stata_float::StataFloat::Present(x) => Raw::Number(x.into()),
                    dta::stata::stata_float::StataFloat::Missing(m) => Raw::Missing(m),
                },
                Value::Double(v) => match v {
                    dta::stata::stata_double::StataDouble::Present(x) => Raw::Number(x),
                    dta::stata::stata_double::StataDouble::Missing(m) => Raw::Missing(m),
                },
                Value::String(s) => Raw::Text(s.into_owned()),
                Value::LongStringRef(r) => Raw::Long(r),
            });
        }
    }
    let mut long = records.into_long_string_reader().map_err(fail)?;
    let mut strings = LongStringTable::for_reading();
    long.read_remaining_into(&mut strings).map_err(fail)?;
    let mut labels = long.into_value_label_reader().map_err(fail)?;
    let mut sets = ValueLabelTable::new();
    labels.read_remaining_into(&mut sets).map_err(fail)?;
    let nrows = raw.first().map_or(0, Vec::len);
    for (k, &j) in kept.iter().enumerate() {
        let variable = &variables[j];
        let labelled = sets.get(variable.value_label_name()).is_some();
        for (i, cell) in raw[k].iter().enumerate() {
            let line = line_of_row(i);
            let token;
            let text;
            let cell = match cell {
                Raw::Number(v) if labelled => {
                    let label = (v.fract() == 0.0 && *v >= i32::MIN as f64 && *v <= i32::MAX as f64)
                        .then(|| sets.label_for(variable, *v as i32))
                        .flatten();
                    text = label.map_or_else(|| super::super::value_text(*v), str::to_string);
                    Cell::Text(text.as_bytes())
                }
                Raw::Number(v) => Cell::Number(*v),
                Raw::Missing(m) => {
                    token = m.to_string();
                    Cell::Missing(&token)
                }
                Raw::Text(s) => Cell::Text(s.as_bytes()),
                Raw::Long(r) => match strings.get(r) {
                    Some(s) => {
                        text = s.data_str(encoding).map(|t| t.into_owned()).ok_or_else(|| {
                            Error::input(format!(
                                "{source}:{line}:{}: the long string of variable '{}' is binary data, not text",
                                j + 1,
                                variable.name()
                            ))
                        })?;
                        Cell::Text(text.as_bytes())
                    }
                    // A strL reference (0, 0) is the empty string.
                    None if r.variable() == 0 && r.observation() == 0 => Cell::Missing(""),
                    None => {
                        return Err(Error::input(format!(
                            "{source}:{line}:{}: variable '{}' refers to a long string the file does not hold",
                            j + 1,
                            variable.name()
                        )));
                    }
                },
            };
            columns.push(j, line, cell)?;
        }
    }
    columns.finish(
        nrows,
        format!("{source}: the file has variables but no observations"),
    )
}
