//! One stored CSV column: numbers (NaN = missing) and, for a column that
//! holds text, a level code for every row. The column also keeps what a
//! message needs: the first cells that are not numbers and how many there
//! are (to tell a column of numbers with a few stray cells from a text
//! column), and how many cells each missing-value token made missing.

use crate::{Advice, Error, Remedy, Result, Setting};
use std::collections::HashMap;

/// Cells that are not numbers kept to name them in a message.
pub(crate) const STRAYS_SHOWN: usize = 5;

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
    /// The first cell holding a number that is zero or negative (a
    /// sampling-weight column refuses it).
    pub first_nonpositive: Option<Cell>,
    /// The line and column of the first missing cell.
    pub first_missing: Option<(u64, usize)>,
    /// Cells holding a number.
    pub numbers: usize,
    /// Cells holding something else than a number or a missing token.
    pub others: usize,
    /// The first few of those cells (at most [`STRAYS_SHOWN`]).
    pub strays: Vec<Cell>,
    /// The missing-value tokens met, as written, and how many cells each
    /// made missing, in order of first appearance (see
    /// [`super::read::missing_token`]).
    pub missing_tokens: Vec<(String, usize)>,
}

impl Column {
    /// Appends a cell holding the missing-value token `raw`, counted.
    pub(crate) fn push_token(&mut self, raw: &[u8]) {
        let shown = if raw.is_empty() {
            "empty".to_string()
        } else {
            escaped(raw)
        };
        match self.missing_tokens.iter_mut().find(|(t, _)| *t == shown) {
            Some((_, k)) => *k += 1,
            None => self.missing_tokens.push((shown, 1)),
        }
        self.push_missing();
    }

    /// Cells read as missing (every token counted).
    pub fn missing_cells(&self) -> usize {
        self.missing_tokens.iter().map(|t| t.1).sum()
    }

    /// Notes where a missing cell lies, when it is the first.
    pub(crate) fn note_missing(&mut self, line: u64, column: usize) {
        if self.first_missing.is_none() {
            self.first_missing = Some((line, column));
        }
    }

    /// Appends a missing cell.
    fn push_missing(&mut self) {
        self.values.push(f64::NAN);
        if let Some(t) = &mut self.text {
            t.codes.push(MISSING);
        }
    }

    /// Appends a cell that is not a missing token.
    pub(crate) fn push(&mut self, raw: &[u8], line: u64, column: usize) {
        let parsed = std::str::from_utf8(raw).ok().and_then(|s| s.parse::<f64>().ok());
        match parsed {
            Some(v) if v.is_nan() => {
                self.note_missing(line, column);
                return self.push_token(raw);
            }
            Some(v) => self.note_number(v, raw, line, column),
            None => {
                self.others += 1;
                if self.strays.len() < STRAYS_SHOWN {
                    self.strays.push(cell(raw, line, column));
                }
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

    /// Counts the number `v`, written `raw`, and appends it (no level code).
    fn note_number(&mut self, v: f64, raw: &[u8], line: u64, column: usize) {
        if v.is_infinite() && self.first_infinite.is_none() {
            self.first_infinite = Some(cell(raw, line, column));
        }
        if v <= 0.0 && self.first_nonpositive.is_none() {
            self.first_nonpositive = Some(cell(raw, line, column));
        }
        self.numbers += 1;
        self.values.push(v);
    }

    /// Appends a cell holding the number `v` (not NaN) of a typed format,
    /// as [`Column::push`] appends a cell of text that reads as `v`.
    pub(crate) fn push_number(&mut self, v: f64, line: u64, column: usize) {
        let raw = value_text(v);
        self.note_number(v, raw.as_bytes(), line, column);
        if let Some(t) = &mut self.text {
            let c = t.code(format!("{v}").as_bytes());
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

    /// Fills the missing row `i` with the number `v` (an imputed value);
    /// a text column gets the level coded by its text.
    pub(crate) fn fill_number(&mut self, i: usize, v: f64) {
        self.values[i] = v;
        self.numbers += 1;
        if let Some(t) = &mut self.text {
            t.codes[i] = t.code(format!("{v}").as_bytes());
        }
    }

    /// Fills the missing row `i` of a text column with the level `code`.
    pub(crate) fn fill_code(&mut self, i: usize, code: u32) {
        if let Some(t) = &mut self.text {
            t.codes[i] = code;
            match t.levels[code as usize].parse::<f64>() {
                Ok(v) => {
                    self.values[i] = v;
                    self.numbers += 1;
                }
                Err(_) => self.others += 1,
            }
        }
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

    /// Does the column hold numbers but for a few cells: fewer cells that
    /// are not numbers (nor missing tokens) than cells that are? Such a
    /// column is refused where a number or a covariate is read, unless it
    /// is named categorical ([`Column::stray_error`]).
    pub fn is_mostly_numbers(&self) -> bool {
        self.others > 0 && self.others < self.numbers
    }

    /// The refusal of a column of numbers with a few stray cells: the
    /// first of them with their lines and values, how many in all, and,
    /// when `categorical` may help, the advice to name it categorical.
    pub fn stray_error(&self, source: &str, name: &str, categorical: bool) -> Error {
        let first = &self.strays[0];
        let shown: Vec<String> = self
            .strays
            .iter()
            .map(|c| format!("line {} '{}'", c.line, c.text))
            .collect();
        let count = if self.others > self.strays.len() {
            format!("{} cells (the first {} shown)", self.others, self.strays.len())
        } else if self.others == 1 {
            "1 cell".to_string()
        } else {
            format!("{} cells", self.others)
        };
        let e = Error::input(format!(
            "{source}:{}:{}: column '{name}' holds numbers ({} cells) except in {count}, \
             neither a number nor a known missing-value token: {}; correct those cells or mark \
             them missing (empty, NA, N/A, NaN, NULL, #N/A, ., -, ?, .a to .z)",
            first.line,
            first.column,
            self.numbers,
            shown.join(", ")
        ));
        if categorical {
            e.advised(Advice::one(
                Remedy::Choose(Setting::Categorical, vec![name.to_string()]),
                "to take its values as levels",
            ))
        } else {
            e
        }
    }

    /// The values for a numeric role, or an input error naming the first
    /// text or infinite cell (every stray cell of a column of numbers).
    pub fn numeric(&self, source: &str, name: &str, role: &str) -> Result<&[f64]> {
        if self.is_mostly_numbers() {
            return Err(self.stray_error(source, name, false));
        }
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
        text: escaped(raw),
    }
}

/// A number as messages and reports write a data value: whole numbers
/// without decimals, others as the shortest decimal that reads back the
/// same, and exponent form below 1e-6 and from 1e15 up (never hundreds of
/// digits).
pub fn value_text(v: f64) -> String {
    let v = v + 0.0; // a negative zero reads as 0
    let m = v.abs();
    if !v.is_finite() {
        format!("{v}")
    } else if m != 0.0 && !(1e-6..1e15).contains(&m) {
        format!("{v:e}")
    } else if v.fract() == 0.0 {
        format!("{v:.0}")
    } else {
        format!("{v}")
    }
}

/// `raw` as text fit for a message: UTF-8 text as it is, but control
/// characters written as `\n`, `\t`, `\r` or `\xNN` (C1 controls as
/// `\u{NN}`), and bytes that are not UTF-8 as `\xNN`.
pub fn escaped(raw: &[u8]) -> String {
    let mut out = String::with_capacity(raw.len());
    for chunk in raw.utf8_chunks() {
        for ch in chunk.valid().chars() {
            match ch {
                '\n' => out.push_str("\\n"),
                '\t' => out.push_str("\\t"),
                '\r' => out.push_str("\\r"),
                c if (c as u32) < 0x20 || c as u32 == 0x7f => out.push_str(&format!("\\x{:02X}", c as u32)),
                c if c.is_control() => out.push_str(&format!("\\u{{{:X}}}", c as u32)),
                c => out.push(c),
            }
        }
        for b in chunk.invalid() {
            out.push_str(&format!("\\x{b:02X}"));
        }
    }
    out
}

/// What makes `raw` unfit as a cell, if anything: bytes that are not
/// UTF-8, or a control character other than a tab or a line end (which a
/// quoted cell may hold).
pub(crate) fn unfit(raw: &[u8]) -> Option<&'static str> {
    if raw.iter().all(|&b| (0x20..0x7f).contains(&b)) {
        return None;
    }
    match std::str::from_utf8(raw) {
        Err(_) => Some("bytes that are not UTF-8 text (save the file as UTF-8)"),
        Ok(s)
            if s.chars()
                .any(|c| c.is_control() && !matches!(c, '\t' | '\n' | '\r')) =>
        {
            Some("a control character")
        }
        Ok(_) => None,
    }
}

#[cfg(test)]
mod tests {
    use super::value_text;

    #[test]
    fn values_read_back_and_never_run_to_hundreds_of_digits() {
        assert_eq!(value_text(3.0), "3");
        assert_eq!(value_text(-0.0), "0");
        assert_eq!(value_text(0.25), "0.25");
        assert_eq!(value_text(1.5e-120), "1.5e-120");
        assert_eq!(value_text(-2e20), "-2e20");
        assert_eq!(value_text(123456789012345.0), "123456789012345");
        for v in [1e-300, 7.25e-7, 0.1 + 0.2, 9.75e14, 1e15, 3.3e299] {
            assert_eq!(value_text(v).parse::<f64>().unwrap(), v);
            assert!(value_text(v).len() < 30, "{}", value_text(v));
        }
    }
}
