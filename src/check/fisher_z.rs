//! The partial correlation test for two continuous variables (Fisher 1924,
//! "The distribution of the partial correlation coefficient", Metron
//! 3:329-332): `r` is the correlation of the residuals of the least-squares
//! regressions of each variable on the conditioning set's design terms
//! (categorical conditioning variables enter as dummies), and
//! `z = atanh(r) sqrt(n - k - 3)`, with `k` the number of conditioning design
//! columns besides the intercept (their rank, when some are aliased), is
//! compared with the standard normal distribution, two-sided.

use super::pair::{CiTest, Outcome, conditioning_terms};
use crate::Result;
use crate::data::{Design, Factor, Frame, Setting, Term, Transform};
use crate::dist::normal_cdf;
use crate::model::{ALIAS_TOL, Chol, accumulate};
use nalgebra::DVector;

/// The test's name in output.
pub const NAME: &str = "partial correlation (Fisher z)";

fn linear(frame: &Frame, col: usize) -> Term {
    Term {
        name: frame.name(col).to_string(),
        factors: vec![Factor {
            col,
            transform: Transform::Linear,
        }],
    }
}

/// Tests frame columns `a` and `b` (both continuous) for zero partial
/// correlation given the columns `given`.
///
/// One pass over the rows gives the cross-products `S` of the centred
/// design `[Z, a, b]`; the residual cross-products of the regressions of
/// `a` and `b` on `Z` are then `S_uv - S_uZ S_ZZ^-1 S_Zv` (the normal
/// equations of both least-squares fits, solved once by Cholesky).
pub fn fisher_z(frame: &Frame, a: usize, b: usize, given: &[usize]) -> Result<Outcome> {
    let n = frame.nrows();
    let mut terms = conditioning_terms(frame, given);
    let q = terms.len();
    terms.push(linear(frame, a));
    terms.push(linear(frame, b));
    let design = Design::from_terms(frame, terms, None);
    let s = accumulate(&design.rows(frame, Setting::Observed), None, |_, _| {
        (1.0, 0.0, 0.0, 0.0)
    })
    .xtx;
    let chol = Chol::new(&s.view((0, 0), (q, q)).into_owned(), ALIAS_TOL);
    let k = chol.rank().saturating_sub(1);
    let cross = |u: usize| DVector::from_fn(q, |i, _| s[(i, u)]);
    let (za, zb) = (cross(q), cross(q + 1));
    let (ba, bb) = (chol.solve(&za), chol.solve(&zb));
    let saa = s[(q, q)] - za.dot(&ba);
    let sbb = s[(q + 1, q + 1)] - zb.dot(&bb);
    let sab = s[(q, q + 1)] - za.dot(&bb);
    // Centred columns: the diagonal of S holds each one's total sum of squares.
    for (ss, total, j) in [(saa, s[(q, q)], a), (sbb, s[(q + 1, q + 1)], b)] {
        if ss.is_nan() || ss <= 1e-12 * total {
            return Ok(Outcome::NotTested(format!(
                "'{}' is a linear function of the conditioning set over the {n} complete rows",
                frame.name(j)
            )));
        }
    }
    let dof = n as f64 - k as f64 - 3.0;
    if dof < 1.0 {
        return Ok(Outcome::NotTested(format!(
            "too few complete rows ({n}) for {k} conditioning terms: Fisher's z needs n - k - 3 >= 1"
        )));
    }
    let r = (sab / (saa * sbb).sqrt()).clamp(-1.0, 1.0);
    let z = r.atanh() * dof.sqrt();
    let p = (2.0 * normal_cdf(-z.abs())).min(1.0);
    Ok(Outcome::Tested(CiTest {
        test: NAME,
        statistic: z,
        p_value: p,
        df: None,
        df_denominator: None,
        response: None,
        partial_correlation: Some(r),
        note: None,
    }))
}
