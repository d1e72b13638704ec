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
    /// For each used column with missing cells, the missing-value tokens
    /// met (as written; `empty` for an empty cell) and how many cells each
    /// made missing, in order of first appearance.
    #[serde(skip)]
    pub tokens_by_column: BTreeMap<String, Vec<(String, usize)>>,
    /// Row indices kept, in file order.
    #[serde(skip)]
    pub keep: Vec<usize>,
    /// How missing values were handled, when not by dropping rows.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub missing: Option<Imputed>,
}

/// The JSON `sample.missing` block of an analysis by multiple imputation.
#[derive(Debug, Clone, Serialize)]
pub struct Imputed {
    /// `impute`.
    pub handling: &'static str,
    /// Imputed datasets, each analysed in full.
    pub imputations: usize,
    /// Rounds of the chained equations.
    pub iterations: usize,
    /// The largest change, between the last two rounds, of an imputed
    /// column's summary averaged over the imputations' chains: its imputed
    /// cells' mean in standard deviations of its observed values (a
    /// numeric column) or a level's share (a categorical one). Near 0 when
    /// the chains have settled.
    pub largest_change: f64,
    /// The imputed columns.
    pub columns: Vec<ImputedColumn>,
}

/// One imputed column.
#[derive(Debug, Clone, Serialize)]
pub struct ImputedColumn {
    /// The column.
    pub column: String,
    /// Its missing cells (imputed).
    pub missing: usize,
    /// The imputation model.
    pub model: String,
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
        let mut tokens = BTreeMap::new();
        for (name, c) in names.iter().zip(&cols) {
            if !c.missing_tokens.is_empty() {
                tokens.insert(name.to_string(), c.missing_tokens.clone());
            }
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
            tokens_by_column: tokens,
            keep,
            missing: None,
        })
    }
}

impl Sample {
    /// The warning that rows were dropped, with the rows each column cost
    /// and the tokens read as missing in each (`None` when none was).
    pub fn dropped_warning(&self) -> Option<String> {
        if self.dropped == 0 {
            return None;
        }
        let by: Vec<String> = self
            .dropped_by_column
            .iter()
            .map(|(k, v)| format!("{k} {v}"))
            .collect();
        let tokens = tokens_note(&self.tokens_by_column)
            .map(|t| format!("; {t}"))
            .unwrap_or_default();
        Some(format!(
            "{} of {} rows dropped for missing values (by column: {}){tokens}",
            self.dropped,
            self.rows,
            by.join(", "),
        ))
    }
}

/// "cells read as missing: a: empty 3, 'NA' 2; b: '?' 1", or `None`
/// when every missing cell is empty.
pub fn tokens_note(tokens: &BTreeMap<String, Vec<(String, usize)>>) -> Option<String> {
    let only_empty = tokens.values().all(|t| t.iter().all(|(s, _)| s == "empty"));
    if only_empty {
        return None;
    }
    let by: Vec<String> = tokens
        .iter()
        .map(|(name, t)| {
            let each: Vec<String> = t
                .iter()
                .map(|(s, k)| {
                    if s == "empty" {
                        format!("empty {k}")
                    } else {
                        format!("'{s}' {k}")
                    }
                })
                .collect();
            format!("{name}: {}", each.join(", "))
        })
        .collect();
    Some(format!("cells read as missing: {}", by.join("; ")))
}
