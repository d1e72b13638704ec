//! Multiplicity adjustment of a family of p-values.
//!
//! - Holm's step-down method (Holm 1979, "A simple sequentially rejective
//!   multiple test procedure", Scand J Statist 6:65-70) controls the
//!   family-wise error rate: with the p-values sorted,
//!   `p~(i) = max_{j <= i} min(1, (m - j + 1) p(j))`.
//! - The Benjamini-Hochberg step-up method (Benjamini & Hochberg 1995,
//!   J R Statist Soc B 57:289-300) controls the false discovery rate:
//!   `p~(i) = min_{j >= i} min(1, m p(j) / j)`.
//!
//! Both adjusted sequences are monotone in the raw p-values, capped at 1, and
//! give tied p-values the same adjusted value; a hypothesis is rejected at
//! level alpha when its adjusted p-value is at most alpha.

use serde::Serialize;

/// The multiplicity adjustment.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Correction {
    /// Holm's step-down method (family-wise error rate).
    #[default]
    Holm,
    /// Benjamini-Hochberg (false discovery rate).
    Bh,
}

impl Correction {
    /// The method's name in prose.
    pub fn label(self) -> &'static str {
        match self {
            Correction::Holm => "Holm",
            Correction::Bh => "Benjamini-Hochberg",
        }
    }
}

/// The adjusted p-values of `p`, in the same order.
pub fn adjust(p: &[f64], correction: Correction) -> Vec<f64> {
    let m = p.len();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&i, &j| p[i].total_cmp(&p[j]));
    let mut out = vec![0.0; m];
    match correction {
        Correction::Holm => {
            let mut run = 0.0f64;
            for (rank, &i) in order.iter().enumerate() {
                let v = ((m - rank) as f64 * p[i]).min(1.0);
                run = run.max(v);
                out[i] = run;
            }
        }
        Correction::Bh => {
            let mut run = 1.0f64;
            for (rank, &i) in order.iter().enumerate().rev() {
                let v = (m as f64 * p[i] / (rank + 1) as f64).min(1.0);
                run = run.min(v);
                out[i] = run;
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    // Worked by hand from the definitions above (m = 4; exact in binary
    // floating point up to one rounding, hence 1e-15).
    #[test]
    fn small_family_by_hand() {
        let p = [0.04, 0.01, 0.03, 0.5];
        let h = adjust(&p, Correction::Holm);
        // sorted 0.01, 0.03, 0.04, 0.5 -> 0.04, 0.09, 0.09 (max of 0.08, 0.09), 0.5
        let want = [0.09, 0.04, 0.09, 0.5];
        for (a, b) in h.iter().zip(want) {
            assert!((a - b).abs() < 1e-15, "{h:?}");
        }
        let bh = adjust(&p, Correction::Bh);
        // 4p/j: 0.04, 0.06, 0.0533.., 0.5 -> running minimum from the top
        let want = [0.04 * 4.0 / 3.0, 0.04, 0.04 * 4.0 / 3.0, 0.5];
        for (a, b) in bh.iter().zip(want) {
            assert!((a - b).abs() < 1e-15, "{bh:?}");
        }
        assert!(adjust(&[], Correction::Holm).is_empty());
        assert_eq!(adjust(&[0.7, 0.7], Correction::Holm), vec![1.0, 1.0]);
    }
}
