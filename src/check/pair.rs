//! One conditional independence test on the data: the complete cases of the
//! test's columns, each column's kind over them, and the test that fits the
//! pair's kinds.
//!
//! Choice of test (common practice, no source), by the kinds of the two
//! variables over the test's complete rows (a categorical column with two
//! levels counts as binary):
//!
//! | kinds | test | response |
//! | --- | --- | --- |
//! | continuous, continuous | [`fisher_z`](super::fisher_z) | none (symmetric) |
//! | binary, anything | [`logistic_lr`](super::logistic_lr) | the binary one (`b` when both are) |
//! | categorical, continuous | [`nested_f`](super::nested_f) | the continuous one |
//! | categorical, categorical | [`multinomial_lr`](super::multinomial_lr) | `b` |
//!
//! `b` is the later node of the pair in the graph's topological order; when
//! the graph has no latent node the conditioning set is `b`'s parents, so
//! the model of `b` given the set is the graph's own structural model of
//! `b`, and the test asks whether `a` adds to it (the local Markov property).

use super::{fisher_z, logistic_lr, multinomial_lr, nested_f};
use crate::data::{Dataset, Design, Frame, Kind, Role, Shape, Term, covariate_terms};
use crate::model::Separation;
use crate::{Error, Result};
use std::collections::BTreeMap;

/// A test's result.
#[derive(Debug, Clone, PartialEq)]
pub struct CiTest {
    /// The test's name, e.g. `partial correlation (Fisher z)`.
    pub test: &'static str,
    /// z for Fisher's z, the chi-square statistic for a likelihood ratio,
    /// F for the F test.
    pub statistic: f64,
    /// The unadjusted p-value.
    pub p_value: f64,
    /// Chi-square degrees of freedom, or the F test's numerator degrees of
    /// freedom; `None` for Fisher's z (standard normal reference).
    pub df: Option<usize>,
    /// The F test's denominator degrees of freedom.
    pub df_denominator: Option<usize>,
    /// The variable modelled as the response, for the regression tests.
    pub response: Option<String>,
    /// The partial correlation, for Fisher's z.
    pub partial_correlation: Option<f64>,
    /// A caveat about this test (separation in a logistic fit).
    pub note: Option<String>,
}

/// What became of one implication on the data.
#[derive(Debug, Clone, PartialEq)]
pub enum Outcome {
    /// Tested.
    Tested(CiTest),
    /// The data cannot test it; the reason.
    NotTested(String),
}

/// One implication tested over its complete rows.
#[derive(Debug, Clone, PartialEq)]
pub struct PairResult {
    /// Complete rows used.
    pub n: usize,
    /// Rows missing each of the test's columns (over the whole file).
    pub missing_by_column: BTreeMap<String, usize>,
    /// The result.
    pub outcome: Outcome,
}

/// The intercept and the conditioning columns' terms (continuous columns
/// linear, binary 0/1, categorical as dummies).
pub(crate) fn conditioning_terms(frame: &Frame, given: &[usize]) -> Vec<Term> {
    let mut terms = vec![Term::intercept()];
    for &c in given {
        terms.extend(covariate_terms(frame, c, Shape::Linear));
    }
    terms
}

/// The design of the conditioning set.
pub(crate) fn conditioning_design(frame: &Frame, given: &[usize]) -> Design {
    Design::from_terms(frame, conditioning_terms(frame, given), None)
}

/// The conditioning design followed by the terms of `other`.
pub(crate) fn extended_design(frame: &Frame, given: &[usize], other: usize) -> Design {
    let mut terms = conditioning_terms(frame, given);
    terms.extend(covariate_terms(frame, other, Shape::Linear));
    Design::from_terms(frame, terms, None)
}

/// A caveat when either of two nested fits shows separation.
pub(crate) fn separation_note(response: &str, fits: [&Option<Separation>; 2]) -> Option<String> {
    let worst = fits
        .iter()
        .filter_map(|s| s.as_ref())
        .max_by_key(|s| s.extreme_rows)?;
    Some(format!(
        "'{response}': {worst}; the likelihood-ratio statistic is the limit the fits approach, \
         and its p-value is approximate"
    ))
}

/// The kind of a column for choosing a test.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Class {
    Constant,
    Continuous,
    Binary,
    Categorical,
}

fn class(frame: &Frame, j: usize) -> Class {
    match frame.kind(j) {
        Kind::Binary { .. } => Class::Binary,
        Kind::Numeric => {
            let v = frame.col(j);
            if v.iter().all(|&x| x == v[0]) {
                Class::Constant
            } else {
                Class::Continuous
            }
        }
        Kind::Categorical { levels } => match levels.len() {
            0 | 1 => Class::Constant,
            2 => Class::Binary,
            _ => Class::Categorical,
        },
    }
}

/// Tests whether columns `a` and `b` of `data` are independent given the
/// columns `given`, over the rows complete for all of them. Columns named in
/// `categorical`, and text columns, are categorical. Input errors (a column
/// missing or holding an infinite value) are errors; data that cannot test
/// the implication (no complete row, a variable constant over them, too few
/// rows, collinearity, a fit that fails) give [`Outcome::NotTested`].
pub fn ci_test(
    data: &Dataset,
    a: &str,
    b: &str,
    given: &[&str],
    categorical: &[String],
) -> Result<PairResult> {
    let mut names = vec![a, b];
    names.extend_from_slice(given);
    let sample = data.complete_cases(&names)?;
    let n = sample.used;
    let result = |outcome| PairResult {
        n,
        missing_by_column: sample.dropped_by_column.clone(),
        outcome,
    };
    if n == 0 {
        return Ok(result(Outcome::NotTested(
            "no row has a value for every variable of the test".to_string(),
        )));
    }
    let mut frame = Frame::new(n);
    for name in &names {
        let role = Role::Covariate {
            categorical: categorical.iter().any(|c| c == name),
        };
        frame.push_from(data, &sample, name, role)?;
    }
    let cond: Vec<usize> = (2..names.len()).collect();
    let (ca, cb) = (class(&frame, 0), class(&frame, 1));
    for (c, name) in [(ca, a), (cb, b)] {
        if c == Class::Constant {
            return Ok(result(Outcome::NotTested(format!(
                "'{name}' takes a single value over the {n} complete rows"
            ))));
        }
    }
    use Class::*;
    let run = match (ca, cb) {
        (Continuous, Continuous) => fisher_z::fisher_z(&frame, 0, 1, &cond),
        (_, Binary) => logistic_lr::logistic_lr(&frame, 1, 0, &cond),
        (Binary, _) => logistic_lr::logistic_lr(&frame, 0, 1, &cond),
        (Categorical, Continuous) => nested_f::nested_f(&frame, 1, 0, &cond),
        (Continuous, Categorical) => nested_f::nested_f(&frame, 0, 1, &cond),
        _ => multinomial_lr::multinomial_lr(&frame, 1, 0, &cond),
    };
    let outcome = match run {
        Ok(o) => o,
        Err(Error::Numerical(m)) => Outcome::NotTested(m),
        Err(e) => return Err(e),
    };
    Ok(result(outcome))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ds(cols: &[(&str, Vec<f64>)]) -> Dataset {
        Dataset::from_columns(
            "t.csv",
            cols.iter().map(|(n, v)| (n.to_string(), v.clone())).collect(),
        )
        .unwrap()
    }

    fn reason(r: PairResult) -> String {
        match r.outcome {
            Outcome::NotTested(m) => m,
            Outcome::Tested(t) => panic!("tested: {t:?}"),
        }
    }

    fn wave(n: usize, k: f64) -> Vec<f64> {
        (0..n).map(|i| (i as f64 * k).sin()).collect()
    }

    #[test]
    fn degenerate_data_are_not_tested_and_say_why() {
        let n = 40;
        let z = wave(n, 0.7);
        let d = ds(&[
            ("a", wave(n, 1.3)),
            ("c", vec![2.0; n]),
            ("z", z.clone()),
            ("z2", z.iter().map(|v| 2.0 * v + 1.0).collect()),
            ("m", vec![f64::NAN; n]),
            ("b", (0..n).map(|i| f64::from(u8::from(i % 3 == 0))).collect()),
        ]);
        let m = reason(ci_test(&d, "a", "c", &[], &[]).unwrap());
        assert!(
            m.contains("'c' takes a single value over the 40 complete rows"),
            "{m}"
        );
        let m = reason(ci_test(&d, "z2", "a", &["z"], &[]).unwrap());
        assert!(
            m.contains("'z2' is a linear function of the conditioning set"),
            "{m}"
        );
        let r = ci_test(&d, "a", "m", &[], &[]).unwrap();
        assert_eq!(r.n, 0);
        assert_eq!(r.missing_by_column.get("m"), Some(&40));
        assert!(reason(r).contains("no row has a value"));
        let m = reason(ci_test(&d, "z2", "b", &["z"], &[]).unwrap());
        assert!(m.contains("the terms of 'z2' are collinear"), "{m}");
        let small = ds(&[
            ("a", wave(5, 1.3)),
            ("b", wave(5, 0.4)),
            ("z", wave(5, 2.1)),
            ("w", wave(5, 0.9)),
        ]);
        let m = reason(ci_test(&small, "a", "b", &["z", "w"], &[]).unwrap());
        assert!(m.contains("too few complete rows (5)"), "{m}");
    }

    #[test]
    fn separation_is_tested_with_a_caveat() {
        let n = 30;
        let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
        let y: Vec<f64> = (0..n).map(|i| f64::from(u8::from(i >= 15))).collect();
        let d = ds(&[("x", x), ("y", y)]);
        let r = ci_test(&d, "x", "y", &[], &[]).unwrap();
        match r.outcome {
            Outcome::Tested(t) => {
                assert_eq!(t.test, logistic_lr::NAME);
                assert!(t.note.as_deref().unwrap().contains("separation"), "{:?}", t.note);
                // The deviance drops from 2 n log 2 to about 0.
                assert!(
                    (t.statistic - 2.0 * 30.0 * 2f64.ln()).abs() < 1e-3,
                    "{}",
                    t.statistic
                );
            }
            Outcome::NotTested(m) => panic!("{m}"),
        }
    }

    // A numeric column named categorical gets the categorical tests.
    #[test]
    fn categorical_flag_changes_the_test() {
        let n = 60;
        let g: Vec<f64> = (0..n).map(|i| (i % 3) as f64).collect();
        let d = ds(&[("g", g), ("x", wave(n, 0.9))]);
        let t = |cat: &[String]| match ci_test(&d, "g", "x", &[], cat).unwrap().outcome {
            Outcome::Tested(t) => t.test,
            Outcome::NotTested(m) => panic!("{m}"),
        };
        assert_eq!(t(&[]), fisher_z::NAME);
        assert_eq!(t(&["g".to_string()]), nested_f::NAME);
    }
}
