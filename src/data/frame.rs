//! The analysis frame: the columns an analysis uses, restricted to the
//! complete-case rows and coded by kind.
//!
//! Kinds (common practice, no source): a column with exactly two distinct
//! values is binary and coded 0/1, the larger value as 1; a column holding
//! text, or named categorical, is categorical with one code per level and
//! the lowest level as reference (numeric order when every level is a
//! number, else by character codes); anything else is numeric.
//!
//! The exposure ([`Frame::push_exposure`]) may also be text with two
//! levels. Its exposed level (coded 1) is the one the analyst names, else
//! the larger of two numbers, else the level that sorts last (the same
//! order as categorical levels: `quit` before `continued`? no: `continued`
//! sorts first, so `quit` is exposed). The [`ExposureCoding`] says which
//! level was taken and why, for every report to repeat.

use super::{Dataset, Sample, value_text};
use crate::{Advice, Error, Remedy, Result, Setting};

/// The most levels a categorical column may have. Each level but the
/// reference is a model term (a dummy); past this many, the models (and the
/// multinomial ones, whose size grows with the square of the levels) no
/// longer fit in reasonable time and memory, and few rows stand behind each
/// level. A column with more is refused before any design is built, as is
/// an identifier-like one ([`ID_LIKE_FROM`]).
pub const MAX_LEVELS: usize = 100;

/// The most levels a categorical exposure may have: each level is a target
/// with its own contrast against the reference, and the exposure's
/// multinomial model has as many coefficients as its levels less one times
/// the covariate terms (with 100 levels and the nine NHEFS covariates, a
/// run of `estimate` took 40 s; with 30, under a second).
pub const MAX_EXPOSURE_LEVELS: usize = 20;

/// A categorical column of at least this many levels with more than half as
/// many levels as rows (fewer than two rows per level on average: mostly
/// single rows, like an identifier) is refused: a dummy fitted to a single
/// row only reproduces that row. Below this many levels, a small sample is
/// left to the later checks (separation, aliased terms).
pub const ID_LIKE_FROM: usize = 10;

/// The refusal of categorical column `name` with `k` levels over `n`
/// rows, if it has too many ([`MAX_LEVELS`], [`MAX_EXPOSURE_LEVELS`],
/// [`ID_LIKE_FROM`]). `number`:
/// a column of numbers taken as categorical because it was named so;
/// `exposure`: the exposure (which cannot be made unobserved).
fn check_levels(src: &str, name: &str, k: usize, n: usize, number: bool, exposure: bool) -> Result<()> {
    let id_like = k >= ID_LIKE_FROM && 2 * k > n;
    let most = if exposure { MAX_EXPOSURE_LEVELS } else { MAX_LEVELS };
    if k <= most && !id_like {
        return Ok(());
    }
    let why = if id_like {
        "more than half as many levels as rows, like an identifier".to_string()
    } else {
        format!(
            "more than the {most} a categorical {} may have",
            if exposure { "exposure" } else { "column" }
        )
    };
    let role = if exposure { "exposure" } else { "column" };
    let e = Error::input(format!(
        "{src}: column '{name}' has {k} levels over {n} complete rows ({why}); a categorical {role} \
         enters the models as one term per level, which these rows cannot support: group its levels \
         into fewer{}",
        if exposure {
            ""
        } else {
            " or drop it from the graph"
        }
    ));
    let mut remedies = Vec::new();
    if number {
        remedies.push(Remedy::Omit(Setting::Categorical, vec![name.to_string()]));
    }
    if !exposure {
        remedies.push(Remedy::Choose(Setting::Latent, vec![name.to_string()]));
    }
    Err(if remedies.is_empty() {
        e
    } else {
        e.advised(Advice {
            remedies,
            purpose: "instead",
        })
    })
}

/// What a column is, over the analysis sample.
#[derive(Debug, Clone, PartialEq)]
pub enum Kind {
    /// Exactly two values, stored as 0 (`low`) and 1 (`high`); the labels
    /// are the values as written (a number in its shortest form).
    Binary {
        /// The value coded 0.
        low: String,
        /// The value coded 1 ("exposed" for an exposure).
        high: String,
    },
    /// A number used as is.
    Numeric,
    /// Levels stored as codes 0, 1, ...; level 0 is the reference.
    Categorical {
        /// Level names in code order.
        levels: Vec<String>,
    },
}

/// How a two-valued exposure was coded: which value is "exposed" (1).
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct ExposureCoding {
    /// The value coded 1.
    pub exposed: String,
    /// The value coded 0.
    pub unexposed: String,
    /// Why that value: `given` (named by the analyst), `larger value`, or
    /// `sorts last` (of two text levels).
    pub rule: &'static str,
}

impl ExposureCoding {
    /// The coding in one sentence, for reports.
    pub fn sentence(&self, exposure: &str) -> String {
        let why = match self.rule {
            "given" => "as the analyst named it".to_string(),
            "larger value" => {
                "by default the larger of its two values; the exposed value can be named instead".to_string()
            }
            _ => "by default, of its two levels, the one that sorts last; the exposed level can be named instead"
                .to_string(),
        };
        format!(
            "exposure coding: {exposure} = {} is taken as exposed and {exposure} = {} as unexposed ({why})",
            self.exposed, self.unexposed
        )
    }
}

/// How the exposure column is to be coded (see [`Frame::push_exposure`]).
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct ExposureChoice {
    /// The value of a two-valued exposure taken as exposed.
    pub exposed: Option<String>,
    /// The reference level of a categorical exposure.
    pub reference: Option<String>,
    /// Take a numeric exposure as categorical (named in the categorical list).
    pub categorical: bool,
}

/// How a column is to be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Must be numbers (exposure, outcome): binary or numeric.
    Number,
    /// Anything: text or `categorical` gives a categorical column.
    Covariate {
        /// Named in the `categorical` option.
        categorical: bool,
    },
}

/// Analysis columns over the complete-case rows.
#[derive(Debug, Clone, Default)]
pub struct Frame {
    n: usize,
    names: Vec<String>,
    kinds: Vec<Kind>,
    cols: Vec<Vec<f64>>,
}

impl Frame {
    /// An empty frame of `n` rows.
    pub fn new(n: usize) -> Self {
        Frame {
            n,
            ..Default::default()
        }
    }

    /// Number of rows.
    pub fn nrows(&self) -> usize {
        self.n
    }

    /// Adds a column of `n` values; returns its index.
    pub fn push(&mut self, name: &str, kind: Kind, values: Vec<f64>) -> usize {
        assert_eq!(values.len(), self.n, "frame column length");
        self.names.push(name.to_string());
        self.kinds.push(kind);
        self.cols.push(values);
        self.cols.len() - 1
    }

    /// Adds column `name` of `data` over `sample`'s rows, coded for `role`.
    pub fn push_from(&mut self, data: &Dataset, sample: &Sample, name: &str, role: Role) -> Result<usize> {
        let col = data.require(name)?;
        let src = data.source();
        let declared = matches!(role, Role::Covariate { categorical: true });
        if matches!(role, Role::Covariate { .. }) && !declared && col.is_mostly_numbers() {
            return Err(col.stray_error(src, name, true));
        }
        let categorical = match role {
            Role::Number => false,
            Role::Covariate { .. } => declared || col.is_text(),
        };
        if !categorical {
            let v = col.numeric(src, name, "a number")?;
            let values: Vec<f64> = sample.keep.iter().map(|&i| v[i]).collect();
            let (values, kind) = code_numeric(values);
            return Ok(self.push(name, kind, values));
        }
        col.check_finite(src, name)?;
        let (values, levels) = match col.codes() {
            Some((codes, levels)) => code_levels(sample.keep.iter().map(|&i| codes[i]), levels),
            None => {
                let v: Vec<f64> = sample.keep.iter().map(|&i| col.values[i]).collect();
                code_numeric_levels(v)
            }
        };
        if levels.is_empty() {
            return Err(Error::input(format!(
                "{src}: column '{name}' has no values in the sample"
            )));
        }
        check_levels(src, name, levels.len(), self.n, !col.is_text(), false)?;
        Ok(self.push(name, Kind::Categorical { levels }, values))
    }

    /// Adds the exposure column `name` of `data` over `sample`'s rows.
    ///
    /// Two values, numbers or text, are coded 0/1 (binary), `how.exposed`
    /// (when given) as 1, else the larger number or the text level that
    /// sorts last. Text with three or more levels, or numbers named
    /// categorical with three or more values, are categorical: level codes
    /// with `how.reference` (default the lowest level) as code 0 and the
    /// other levels after it in their usual order. Other numbers stay
    /// numeric (a continuous exposure, a dose).
    pub fn push_exposure(
        &mut self,
        data: &Dataset,
        sample: &Sample,
        name: &str,
        how: &ExposureChoice,
    ) -> Result<(usize, Option<ExposureCoding>)> {
        let col = data.require(name)?;
        let src = data.source();
        // The distinct values present in the sample, in sorted order, and
        // each row's index into them.
        let (codes, levels): (Vec<f64>, Vec<String>) = if col.is_text() {
            if col.is_mostly_numbers() && !how.categorical {
                return Err(col.stray_error(src, name, true));
            }
            col.check_finite(src, name)?;
            let (codes, levels) = col.codes().expect("a text column has codes");
            code_levels(sample.keep.iter().map(|&i| codes[i]), levels)
        } else {
            let v = col.numeric(src, name, "the exposure")?;
            let values: Vec<f64> = sample.keep.iter().map(|&i| v[i]).collect();
            if how.categorical {
                code_numeric_levels(values)
            } else {
                let (values, kind) = code_numeric(values);
                match kind {
                    Kind::Binary { low, high } => (values, vec![low, high]),
                    kind => {
                        if let Some(e) = &how.exposed {
                            return Err(Error::option(
                                Setting::Exposed,
                                format!(
                                    "'{e}': the exposure '{name}' takes {} in the complete rows, not two; \
                                     an exposed value applies to a two-valued exposure",
                                    count_values(&values)
                                ),
                            ));
                        }
                        if let Some(r) = &how.reference {
                            return Err(Error::option(
                                Setting::Reference,
                                format!(
                                    "'{r}': the exposure '{name}' is a number taken as continuous; a reference \
                                     level applies to a categorical exposure (name it categorical)"
                                ),
                            ));
                        }
                        return Ok((self.push(name, kind, values), None));
                    }
                }
            }
        };
        let same = |l: &String, e: &str| {
            let e = e.trim();
            l == e || matches!((l.parse::<f64>(), e.parse::<f64>()), (Ok(a), Ok(b)) if a == b)
        };
        match levels.len() {
            2 => {}
            1 => return Ok((self.push(name, Kind::Numeric, codes), None)),
            k => {
                if let Some(e) = &how.exposed {
                    return Err(Error::option(
                        Setting::Exposed,
                        format!(
                            "'{e}': the exposure '{name}' has {k} levels, not two; name a reference level \
                             for a categorical exposure instead"
                        ),
                    ));
                }
                let at = match &how.reference {
                    None => 0,
                    Some(r) => levels.iter().position(|l| same(l, r)).ok_or_else(|| {
                        let shown: Vec<String> = levels.iter().map(|l| format!("'{l}'")).collect();
                        Error::option(
                            Setting::Reference,
                            format!(
                                "'{r}' is not a level of the exposure '{name}' in the complete rows; its \
                                 levels are {}",
                                shown.join(", ")
                            ),
                        )
                    })?,
                };
                check_levels(src, name, k, self.n, !col.is_text(), true)?;
                // The reference becomes code 0; the others keep their order.
                let order: Vec<usize> = std::iter::once(at).chain((0..k).filter(|&j| j != at)).collect();
                let mut recode = vec![0.0; k];
                for (new, &old) in order.iter().enumerate() {
                    recode[old] = new as f64;
                }
                let values = codes.iter().map(|&c| recode[c as usize]).collect();
                let levels = order.iter().map(|&j| levels[j].clone()).collect();
                return Ok((self.push(name, Kind::Categorical { levels }, values), None));
            }
        }
        if let Some(r) = &how.reference {
            return Err(Error::option(
                Setting::Reference,
                format!(
                    "'{r}': the exposure '{name}' takes two values; a reference level applies to an \
                     exposure of three or more levels (name the exposed value instead)"
                ),
            ));
        }
        let (exposed_at, rule) = match &how.exposed {
            None if col.is_text() => (1, "sorts last"),
            None => (1, "larger value"),
            Some(e) => match levels.iter().position(|l| same(l, e)) {
                Some(k) => (k, "given"),
                None => {
                    return Err(Error::option(
                        Setting::Exposed,
                        format!(
                            "'{}' is not a value of the exposure '{name}' in the complete rows; its values \
                             are '{}' and '{}'",
                            e.trim(),
                            levels[0],
                            levels[1]
                        ),
                    ));
                }
            },
        };
        let hit = exposed_at as f64;
        let values = codes.iter().map(|&c| f64::from(u8::from(c == hit))).collect();
        let coding = ExposureCoding {
            exposed: levels[exposed_at].clone(),
            unexposed: levels[1 - exposed_at].clone(),
            rule,
        };
        let kind = Kind::Binary {
            low: coding.unexposed.clone(),
            high: coding.exposed.clone(),
        };
        Ok((self.push(name, kind, values), Some(coding)))
    }

    /// Index of column `name`.
    pub fn index(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name)
    }

    /// Name of column `j`.
    pub fn name(&self, j: usize) -> &str {
        &self.names[j]
    }

    /// Kind of column `j`.
    pub fn kind(&self, j: usize) -> &Kind {
        &self.kinds[j]
    }

    /// Values of column `j` (codes for binary and categorical columns).
    pub fn col(&self, j: usize) -> &[f64] {
        &self.cols[j]
    }

    /// Replaces the missing cells (NaN) of column `j` by `value`: a
    /// placeholder that a zero weight keeps out of every sum.
    pub fn fill_missing(&mut self, j: usize, value: f64) {
        self.cols[j]
            .iter_mut()
            .filter(|x| x.is_nan())
            .for_each(|x| *x = value);
    }

    /// Number of columns.
    pub fn ncols(&self) -> usize {
        self.cols.len()
    }
}

/// Binary columns become 0/1; others stay as they are. Missing cells
/// (NaN, kept only in an outcome weighted for being observed) are not a
/// value and stay missing.
fn code_numeric(mut v: Vec<f64>) -> (Vec<f64>, Kind) {
    let mut distinct: Vec<f64> = Vec::with_capacity(3);
    for &x in &v {
        if !x.is_nan() && !distinct.contains(&x) {
            distinct.push(x);
            if distinct.len() > 2 {
                return (v, Kind::Numeric);
            }
        }
    }
    if distinct.len() < 2 {
        return (v, Kind::Numeric);
    }
    let (low, high) = (distinct[0].min(distinct[1]), distinct[0].max(distinct[1]));
    for x in v.iter_mut().filter(|x| !x.is_nan()) {
        *x = if *x == high { 1.0 } else { 0.0 };
    }
    (
        v,
        Kind::Binary {
            low: value_text(low),
            high: value_text(high),
        },
    )
}

/// "3 values (1, 2, 5)" or "12 values": the distinct values of a column.
fn count_values(v: &[f64]) -> String {
    let mut d: Vec<f64> = v.to_vec();
    d.sort_by(f64::total_cmp);
    d.dedup();
    if d.len() <= 5 {
        let shown: Vec<String> = d.iter().map(|&x| value_text(x)).collect();
        format!("{} values ({})", d.len(), shown.join(", "))
    } else {
        format!("{} values", d.len())
    }
}

/// Levels of a numeric column named categorical, in numeric order.
fn code_numeric_levels(mut v: Vec<f64>) -> (Vec<f64>, Vec<String>) {
    // Few levels: a sorted list grown in place; many: sort a copy.
    let mut distinct: Vec<f64> = Vec::new();
    for &x in &v {
        let k = distinct.partition_point(|d| *d < x);
        if distinct.get(k) != Some(&x) {
            if distinct.len() >= 1024 {
                distinct = v.clone();
                distinct.sort_by(f64::total_cmp);
                distinct.dedup_by(|a, b| a == b);
                break;
            }
            distinct.insert(k, x);
        }
    }
    for x in v.iter_mut() {
        *x = distinct.partition_point(|d| d < x) as f64;
    }
    (v, distinct.iter().map(|&d| value_text(d)).collect())
}

/// Levels of a text column (the codes present in the sample), sorted
/// numerically when all are numbers, else lexically.
fn code_levels(codes: impl Iterator<Item = u32>, levels: &[String]) -> (Vec<f64>, Vec<String>) {
    let codes: Vec<u32> = codes.collect();
    let mut present = vec![false; levels.len()];
    for &c in &codes {
        present[c as usize] = true;
    }
    let mut order: Vec<usize> = (0..levels.len()).filter(|&k| present[k]).collect();
    let nums: Option<Vec<f64>> = order.iter().map(|&k| levels[k].parse::<f64>().ok()).collect();
    match nums {
        Some(nums) if nums.iter().all(|x| x.is_finite()) => {
            let mut pairs: Vec<(f64, usize)> = nums.into_iter().zip(order.iter().copied()).collect();
            pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
            order = pairs.into_iter().map(|p| p.1).collect();
        }
        _ => order.sort_by(|&a, &b| levels[a].cmp(&levels[b])),
    }
    let mut recode = vec![0f64; levels.len()];
    for (new, &old) in order.iter().enumerate() {
        recode[old] = new as f64;
    }
    let values = codes.iter().map(|&c| recode[c as usize]).collect();
    (values, order.iter().map(|&k| levels[k].clone()).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binary_codes_the_larger_value_as_one() {
        let (v, k) = code_numeric(vec![2.0, 5.0, 5.0, 2.0]);
        assert_eq!(v, vec![0.0, 1.0, 1.0, 0.0]);
        assert_eq!(
            k,
            Kind::Binary {
                low: "2".into(),
                high: "5".into()
            }
        );
        let (_, k) = code_numeric(vec![1.0, 2.0, 3.0]);
        assert_eq!(k, Kind::Numeric);
    }

    #[test]
    fn levels_sort_numerically_when_numbers() {
        let levels: Vec<String> = ["10", "9", "b"].iter().map(|s| s.to_string()).collect();
        let (v, l) = code_levels([0u32, 1, 0].into_iter(), &levels);
        assert_eq!(l, vec!["9", "10"]);
        assert_eq!(v, vec![1.0, 0.0, 1.0]);
        let (_, l) = code_levels([2u32, 1].into_iter(), &levels);
        assert_eq!(l, vec!["9", "b"]);
        let (v, l) = code_numeric_levels(vec![3.0, 1.0, 2.0, 1.0]);
        assert_eq!(l, vec!["1", "2", "3"]);
        assert_eq!(v, vec![2.0, 0.0, 1.0, 0.0]);
    }
}
