//! Restricted cubic splines (natural splines, linear beyond the outer
//! knots) in the truncated-power form of Harrell, *Regression Modeling
//! Strategies*, 2nd ed. (2015), sec. 2.4.5, eq. 2.25, with Harrell's
//! normalization by `(t_k - t_1)^2`; 4 knots at the 5th, 35th, 65th and 95th
//! percentiles (Harrell's Table 2.3 for k = 4).

/// Knot positions for 4 knots: the 5th, 35th, 65th and 95th percentiles of
/// `x` (linear interpolation between order statistics), duplicates removed.
pub fn rcs_knots(x: &[f64]) -> Vec<f64> {
    let mut s: Vec<f64> = x.iter().copied().filter(|v| v.is_finite()).collect();
    s.sort_by(f64::total_cmp);
    if s.is_empty() {
        return Vec::new();
    }
    let mut k: Vec<f64> = [0.05, 0.35, 0.65, 0.95]
        .iter()
        .map(|&q| quantile(&s, q))
        .collect();
    k.dedup();
    k
}

/// Quantile of sorted values by linear interpolation, h = (n-1) q.
fn quantile(sorted: &[f64], q: f64) -> f64 {
    let h = (sorted.len() - 1) as f64 * q;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

/// The nonlinear basis term `j` (0-based, `j < knots.len() - 2`) at `x`.
pub fn rcs_basis(x: f64, knots: &[f64], j: usize) -> f64 {
    let k = knots.len();
    let (t1, tk1, tk) = (knots[0], knots[k - 2], knots[k - 1]);
    let tj = knots[j];
    let cube = |u: f64| if u > 0.0 { u * u * u } else { 0.0 };
    let v = cube(x - tj) - cube(x - tk1) * (tk - tj) / (tk - tk1) + cube(x - tk) * (tk1 - tj) / (tk - tk1);
    v / ((tk - t1) * (tk - t1))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantiles_interpolate_order_statistics() {
        // 0..=100: the q-quantile is 100 q exactly (closed form).
        let x: Vec<f64> = (0..=100).map(f64::from).collect();
        let k = rcs_knots(&x);
        for (a, b) in k.iter().zip([5.0, 35.0, 65.0, 95.0]) {
            assert!((a - b).abs() < 1e-12);
        }
    }

    #[test]
    fn basis_is_linear_beyond_the_last_knot_and_zero_before_the_first() {
        // A restricted cubic spline is linear beyond t_k (Harrell 2015, sec.
        // 2.4.5): second differences vanish there (closed form, 1e-9 for
        // rounding of cubes of numbers near 100).
        let knots = [5.0, 35.0, 65.0, 95.0];
        for j in 0..2 {
            assert_eq!(rcs_basis(4.0, &knots, j), 0.0);
            let f = |x: f64| rcs_basis(x, &knots, j);
            let d2 = f(110.0) - 2.0 * f(120.0) + f(130.0);
            assert!(d2.abs() < 1e-9, "second difference {d2}");
            let d2_inside = f(40.0) - 2.0 * f(50.0) + f(60.0);
            assert!(d2_inside.abs() > 1e-3);
        }
        // Value at t_{k-1} for j = 0: (t_{k-1} - t_1)^3 / (t_k - t_1)^2.
        let v = rcs_basis(65.0, &knots, 0);
        assert!((v - 60f64.powi(3) / 90f64.powi(2)).abs() < 1e-12);
    }
}
