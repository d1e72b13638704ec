//! The complete-case sample: rows with no missing value in the columns an
//! analysis uses (common practice, no source; the report says how many rows
//! each column cost).

use super::Dataset;
use crate::Result;
use serde::Serialize;
use std::collections::BTreeMap;

/// The rows an analysis uses, and what was dropped (the JSON `sample` block).
#[derive(Debug, Clone, Serialize)]
pub struct Sample {
    /// Data rows in the file.
    pub rows: usize,
    /// Complete rows used.
    pub used: usize,
    /// Rows dropped for a missing value.
    pub dropped: usize,
    /// For each used column with missing values, the rows missing it (a row
    /// missing two columns counts once under each).
    pub dropped_by_column: BTreeMap<String, usize>,
    /// Row indices kept, in file order.
    #[serde(skip)]
    pub keep: Vec<usize>,
}

impl Dataset {
    /// The rows complete for every column in `names` (each must be kept).
    pub fn complete_cases(&self, names: &[&str]) -> Result<Sample> {
        let cols = names
            .iter()
            .map(|n| self.require(n))
            .collect::<Result<Vec<_>>>()?;
        let mut complete = vec![true; self.nrows];
        let mut by_column = BTreeMap::new();
        for (name, c) in names.iter().zip(&cols) {
            let mut k = 0usize;
            for (i, ok) in complete.iter_mut().enumerate() {
                if c.is_missing(i) {
                    *ok = false;
                    k += 1;
                }
            }
            if k > 0 {
                by_column.insert(name.to_string(), k);
            }
        }
        let keep: Vec<usize> = (0..self.nrows).filter(|&i| complete[i]).collect();
        Ok(Sample {
            rows: self.nrows,
            used: keep.len(),
            dropped: self.nrows - keep.len(),
            dropped_by_column: by_column,
            keep,
        })
    }
}
