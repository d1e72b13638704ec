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
    /// How missing values were handled and their pattern (the JSON
    /// `sample.missing` block).
    pub missing: MissingData,
    /// Row indices kept, in file order.
    #[serde(skip)]
    pub keep: Vec<usize>,
    /// For each kept row, whether the column kept despite missing cells
    /// (see [`Dataset::cases_keeping`]) has a value there; empty when every
    /// kept row is complete.
    #[serde(skip)]
    pub present: Vec<bool>,
}

/// What an analysis by multiple imputation adds to `sample.missing`.
#[derive(Debug, Clone, Serialize)]
pub struct Imputed {
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

/// How missing values were handled, and which columns rows miss together.
#[derive(Debug, Clone, Serialize)]
pub struct MissingData {
    /// `complete` (complete cases), `weight` or `impute`; set by the
    /// problem, `complete` here.
    pub handling: &'static str,
    /// Number of imputed datasets (`None` without imputation).
    pub imputations: Option<usize>,
    /// Each combination of used columns that rows miss together, with the
    /// number of rows, most frequent first (rows with no missing cell are
    /// not listed).
    pub patterns: Vec<Pattern>,
    /// Rows kept with their outcome missing (weighting for a missing
    /// outcome only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub outcome_missing: Option<usize>,
    /// The stabilised observation weights of the rows with an observed
    /// outcome (weighting for a missing outcome only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub observation_weights: Option<WeightRange>,
    /// The imputation's rounds, stability and imputed columns (multiple
    /// imputation only).
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    pub imputed: Option<Imputed>,
}

/// Mean, smallest and largest of a set of weights.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct WeightRange {
    /// Mean (weighted by the sampling weights, when given).
    pub mean: f64,
    /// Smallest.
    pub min: f64,
    /// Largest.
    pub max: f64,
}

/// Missing-data patterns shown in a report before the list is cut (the
/// JSON and CSV keep every one).
pub const PATTERNS_SHOWN: usize = 8;

/// One missing-data pattern: the columns missing together in some rows.
#[derive(Debug, Clone, Serialize, PartialEq, Eq)]
pub struct Pattern {
    /// The used columns missing, in the order they were named.
    pub columns: Vec<String>,
    /// Rows with exactly these columns missing.
    pub rows: usize,
}

/// Share of dropped rows above which the dropped-rows warning adds that
/// complete cases may be biased (a choice, no source).
pub const DROPPED_SHARE_NOTE: f64 = 0.05;

impl Dataset {
    /// The rows complete for every column in `names` (each must be kept).
    pub fn complete_cases(&self, names: &[&str]) -> Result<Sample> {
        self.cases_keeping(names, None)
    }

    /// The rows complete for every column in `names` except `kept`, whose
    /// missing cells do not drop a row ([`Sample::present`] says where it
    /// has a value); with `None`, the complete cases.
    pub fn cases_keeping(&self, names: &[&str], kept: Option<&str>) -> Result<Sample> {
        let cols = names
            .iter()
            .map(|n| self.require(n))
            .collect::<Result<Vec<_>>>()?;
        let mut complete = vec![true; self.nrows];
        let mut present = Vec::new();
        let mut by_column = BTreeMap::new();
        let mut tokens = BTreeMap::new();
        // Each row's missing columns, as indices into `names`.
        let mut misses: Vec<Vec<u32>> = vec![Vec::new(); self.nrows];
        for (j, (name, c)) in names.iter().zip(&cols).enumerate() {
            if !c.missing_tokens.is_empty() {
                tokens.insert(name.to_string(), c.missing_tokens.clone());
            }
            let spared = kept == Some(*name);
            let mut k = 0usize;
            for (i, ok) in complete.iter_mut().enumerate() {
                if c.is_missing(i) {
                    misses[i].push(j as u32);
                    if !spared {
                        *ok = false;
                        k += 1;
                    }
                }
            }
            if k > 0 {
                by_column.insert(name.to_string(), k);
            }
            if spared {
                present = (0..self.nrows).map(|i| !c.is_missing(i)).collect();
            }
        }
        let keep: Vec<usize> = (0..self.nrows).filter(|&i| complete[i]).collect();
        if !present.is_empty() {
            present = keep.iter().map(|&i| present[i]).collect();
            if present.iter().all(|&p| p) {
                present.clear();
            }
        }
        let mut count: BTreeMap<Vec<u32>, usize> = BTreeMap::new();
        for m in misses.into_iter().filter(|m| !m.is_empty()) {
            *count.entry(m).or_insert(0) += 1;
        }
        let mut patterns: Vec<(Vec<u32>, usize)> = count.into_iter().collect();
        // Most frequent first; ties in the order of the columns named.
        patterns.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        let patterns = patterns
            .into_iter()
            .map(|(m, rows)| Pattern {
                columns: m.iter().map(|&j| names[j as usize].to_string()).collect(),
                rows,
            })
            .collect();
        Ok(Sample {
            rows: self.nrows,
            used: keep.len(),
            dropped: self.nrows - keep.len(),
            dropped_by_column: by_column,
            tokens_by_column: tokens,
            missing: MissingData {
                handling: "complete",
                imputations: None,
                patterns,
                outcome_missing: None,
                observation_weights: None,
                imputed: None,
            },
            keep,
            present,
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
        let share = self.dropped as f64 / self.rows as f64;
        let bias = if share > DROPPED_SHARE_NOTE {
            format!(
                "; that is {:.1}% of the rows: complete-case estimates describe the complete rows and can be \
                 biased for the whole sample when whether a value is missing depends on the covariates or the \
                 outcome; weighting for a missing outcome or multiple imputation may be preferable",
                100.0 * share
            )
        } else {
            String::new()
        };
        Some(format!(
            "{} of {} rows dropped for missing values (by column: {}){tokens}{bias}",
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
