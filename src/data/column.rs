//! One stored CSV column: numbers (NaN = missing) and, for a column that
//! holds text, a level code for every row.

use crate::{Error, Result};
use std::collections::HashMap;

/// Code of a missing cell in a text column.
pub(crate) const MISSING: u32 = u32::MAX;

/// A cell of the file, kept to name it in a message.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    /// 1-based line of the file.
    pub line: u64,
    /// 1-based column number.
    pub column: usize,
    /// The cell's text.
    pub text: String,
}

/// Level codes of a column that holds text.
#[derive(Debug, Clone, Default)]
pub(crate) struct TextCodes {
    pub codes: Vec<u32>,
    pub levels: Vec<String>,
    index: HashMap<Vec<u8>, u32>,
}

impl TextCodes {
    fn code(&mut self, raw: &[u8]) -> u32 {
        if let Some(&c) = self.index.get(raw) {
            return c;
        }
        let c = self.levels.len() as u32;
        self.levels.push(String::from_utf8_lossy(raw).into_owned());
        self.index.insert(raw.to_vec(), c);
        c
    }
}

/// A stored column.
#[derive(Debug, Clone, Default)]
pub struct Column {
    /// The numeric value of every row: NaN when missing or not a number.
    pub values: Vec<f64>,
    pub(crate) text: Option<TextCodes>,
    /// The first cell that is not a number (the column holds text).
    pub first_text: Option<Cell>,
    /// The first cell holding an infinite value.
    pub first_infinite: Option<Cell>,
}

impl Column {
    /// Appends a missing cell.
    pub(crate) fn push_missing(&mut self) {
        self.values.push(f64::NAN);
        if let Some(t) = &mut self.text {
            t.codes.push(MISSING);
        }
    }

    /// Appends a cell that is not a missing token.
    pub(crate) fn push(&mut self, raw: &[u8], line: u64, column: usize) {
        let parsed = std::str::from_utf8(raw).ok().and_then(|s| s.parse::<f64>().ok());
        match parsed {
            Some(v) if v.is_nan() => return self.push_missing(),
            Some(v) => {
                if v.is_infinite() && self.first_infinite.is_none() {
                    self.first_infinite = Some(cell(raw, line, column));
                }
                self.values.push(v);
            }
            None => {
                if self.first_text.is_none() {
                    self.first_text = Some(cell(raw, line, column));
                    self.start_text();
                }
                self.values.push(f64::NAN);
            }
        }
        if let Some(t) = &mut self.text {
            let c = t.code(raw);
            t.codes.push(c);
        }
    }

    /// Turns on level codes; earlier (numeric) rows get their number's
    /// shortest text as level.
    fn start_text(&mut self) {
        let mut t = TextCodes::default();
        t.codes.reserve(self.values.capacity());
        for &v in &self.values {
            let c = if v.is_nan() {
                MISSING
            } else {
                t.code(format!("{v}").as_bytes())
            };
            t.codes.push(c);
        }
        self.text = Some(t);
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        self.values.len()
    }

    /// True when the column has no rows.
    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// Is row `i` missing?
    pub fn is_missing(&self, i: usize) -> bool {
        match &self.text {
            Some(t) => t.codes[i] == MISSING,
            None => self.values[i].is_nan(),
        }
    }

    /// Does the column hold text (a cell that is not a number)?
    pub fn is_text(&self) -> bool {
        self.text.is_some()
    }

    /// Level code of every row (`u32::MAX` = missing) and the level texts,
    /// for a text column.
    pub fn codes(&self) -> Option<(&[u32], &[String])> {
        self.text
            .as_ref()
            .map(|t| (t.codes.as_slice(), t.levels.as_slice()))
    }

    /// The values for a numeric role, or an input error naming the first
    /// text or infinite cell.
    pub fn numeric(&self, source: &str, name: &str, role: &str) -> Result<&[f64]> {
        if let Some(c) = &self.first_text {
            return Err(Error::input(format!(
                "{source}:{}:{}: column '{name}' holds text '{}' but is used as {role}; \
                 numbers are needed here",
                c.line, c.column, c.text
            )));
        }
        self.check_finite(source, name)?;
        Ok(&self.values)
    }

    /// An input error naming the first infinite cell, if there is one.
    pub fn check_finite(&self, source: &str, name: &str) -> Result<()> {
        match &self.first_infinite {
            Some(c) => Err(Error::input(format!(
                "{source}:{}:{}: column '{name}' holds the infinite value '{}'; infinite values \
                 are not used: mark the cell missing (empty, NA, NaN or .) or recode it",
                c.line, c.column, c.text
            ))),
            None => Ok(()),
        }
    }

    pub(crate) fn shrink(&mut self) {
        self.values.shrink_to_fit();
        if let Some(t) = &mut self.text {
            t.codes.shrink_to_fit();
            t.index = HashMap::new();
        }
    }
}

fn cell(raw: &[u8], line: u64, column: usize) -> Cell {
    Cell {
        line,
        column,
        text: String::from_utf8_lossy(raw).into_owned(),
    }
}
