//! The data stage: a CSV file read into columns, the complete-case sample an
//! analysis uses, the analysis frame, and the design matrices of the models.
//!
//! - [`Dataset::read`] reads a CSV with a header row into one `Vec<f64>` per
//!   column (NaN = missing); text columns also keep level codes.
//! - [`Dataset::complete_cases`] gives the rows complete for a list of
//!   columns and the `sample` counts the report shows.
//! - [`Frame`] holds the analysis columns of those rows, coded by [`Kind`].
//! - [`Design`] lists model terms (intercept, binary, dummies of categorical
//!   columns, linear / quadratic / restricted cubic spline terms of continuous
//!   ones, exposure products) and fills blocks of rows on demand through
//!   [`Rows`]; a [`Store`] keeps a design's rows in memory when they fit a
//!   fixed budget, so that repeated passes read them instead. The spline basis follows
//!   Harrell, *Regression Modeling Strategies*, 2nd ed. (2015), sec. 2.4.5.
//!
//! Missing values are the tokens empty, `.`, `-`, `?`, Stata's `.a` to
//! `.z`, and `NA`, `N/A`, `NaN`, `NULL`, `#N/A` in any ASCII case; the report counts the cells each token made missing, and a
//! row missing any column an analysis uses is dropped. Infinite values are
//! never used: a column used by an analysis that holds one is an input
//! error naming the line and column (mark the cell missing or recode it).
//! A cell of a column read holding a control character or bytes that are
//! not UTF-8 is an input error naming its line and column, shown escaped.
//!
//! Coding a column ([`Frame`]) refuses two things up front, before any
//! design is built: a column of numbers with a few stray cells, unless it
//! is named categorical ([`Column::stray_error`]), and a categorical column
//! with too many levels ([`MAX_LEVELS`], or an identifier-like one).

mod column;
mod design;
mod frame;
mod kernel;
mod pass;
mod read;
mod sample;
pub mod source;
mod spline;
mod store;

pub use column::{Cell, Column, escaped, value_text};
pub use design::{
    Design, DesignRows, Factor, Setting, Shape, Term, Transform, covariate_terms, largest_magnitude,
    unit_scale,
};
pub use frame::{
    ExposureChoice, ExposureCoding, Frame, ID_LIKE_FROM, Kind, MAX_EXPOSURE_LEVELS, MAX_LEVELS, Role,
};
pub(crate) use kernel::{expit_into, gram_lower_add};
pub use pass::{BLOCK, Block, DenseRows, Rows, map_rows, reduce, reduce_into, with_buffer};
pub use read::{Delimiter, ReadOptions, compressed, not_text};
pub use sample::{
    DROPPED_SHARE_NOTE, Imputed, ImputedColumn, MissingData, PATTERNS_SHOWN, Pattern, Sample, WeightRange,
    tokens_note,
};
pub use source::{Compression, Format, unreadable};
pub use spline::{rcs_basis, rcs_knots};
pub use store::Store;

/// A CSV file read into columns.
#[derive(Debug, Clone)]
pub struct Dataset {
    source: String,
    names: Vec<String>,
    columns: Vec<Option<Column>>,
    nrows: usize,
}

impl Dataset {
    /// A dataset from numeric columns (NaN = missing), e.g. simulated data;
    /// `source` names it in messages. Columns must have equal lengths.
    pub fn from_columns(source: &str, columns: Vec<(String, Vec<f64>)>) -> crate::Result<Dataset> {
        let nrows = columns.first().map_or(0, |c| c.1.len());
        let mut names = Vec::with_capacity(columns.len());
        let mut cols = Vec::with_capacity(columns.len());
        for (name, values) in columns {
            if values.len() != nrows {
                return Err(crate::Error::input(format!(
                    "{source}: column '{name}' has {} values, the first column {nrows}",
                    values.len()
                )));
            }
            if names.contains(&name) {
                return Err(crate::Error::input(format!(
                    "{source}: duplicate column name '{name}'"
                )));
            }
            let first_infinite = values.iter().position(|v| v.is_infinite()).map(|i| Cell {
                line: i as u64 + 2,
                column: names.len() + 1,
                text: format!("{}", values[i]),
            });
            let first_nonpositive = values.iter().position(|&v| v <= 0.0).map(|i| Cell {
                line: i as u64 + 2,
                column: names.len() + 1,
                text: value_text(values[i]),
            });
            let first_missing = values
                .iter()
                .position(|v| v.is_nan())
                .map(|i| (i as u64 + 2, names.len() + 1));
            names.push(name);
            cols.push(Some(Column {
                values,
                first_infinite,
                first_nonpositive,
                first_missing,
                ..Column::default()
            }));
        }
        Ok(Dataset {
            source: source.to_string(),
            names,
            columns: cols,
            nrows,
        })
    }

    /// The name used for the file in messages (a path, or `<stdin>`).
    pub fn source(&self) -> &str {
        &self.source
    }

    /// Every header name, in file order (also those not kept).
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Number of data rows.
    pub fn nrows(&self) -> usize {
        self.nrows
    }

    /// Is `name` a column header of the file?
    pub fn has_column(&self, name: &str) -> bool {
        self.names.iter().any(|n| n == name)
    }

    /// 1-based position of column `name` in the header.
    pub fn position(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name).map(|i| i + 1)
    }

    /// The stored column `name`; `None` when there is no such header or the
    /// column was not kept (see [`ReadOptions::keep`]).
    pub fn column(&self, name: &str) -> Option<&Column> {
        let i = self.names.iter().position(|n| n == name)?;
        self.columns[i].as_ref()
    }

    /// The stored column `name`, to fill its imputed cells.
    pub(crate) fn column_mut(&mut self, name: &str) -> crate::Result<&mut Column> {
        let i = self.names.iter().position(|n| n == name);
        i.and_then(|i| self.columns[i].as_mut())
            .ok_or_else(|| crate::Error::Internal(format!("column '{name}' is not stored")))
    }

    /// The column `name`, or an input error naming the file.
    pub fn require(&self, name: &str) -> crate::Result<&Column> {
        self.column(name).ok_or_else(|| {
            crate::Error::input(format!(
                "{}: no column '{name}' (columns are matched to names exactly, case-sensitive){}",
                self.source,
                crate::error::nearest_names(name, self.names.iter().map(String::as_str))
            ))
        })
    }
}
