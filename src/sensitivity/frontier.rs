//! Tipping-point frontiers: the confounder strengths at which an observed
//! association would be explained away, sampled as points for plotting.
//!
//! - Risk-ratio scale (VanderWeele and Ding, Ann Intern Med 2017;167:268-274):
//!   a confounder with risk ratios RR_EU (exposure-confounder) and RR_UY
//!   (confounder-outcome) can shift an observed risk ratio by at most the
//!   bounding factor RR_EU · RR_UY / (RR_EU + RR_UY - 1) (Ding and
//!   VanderWeele, Epidemiology 2016;27:368-377). The frontier is the curve
//!   where that factor equals the observed risk ratio (or the confidence
//!   limit nearest the null): RR_UY = RR (RR_EU - 1) / (RR_EU - RR). It
//!   crosses the diagonal at the E-value.
//! - Partial-R² scale (Cinelli and Hazlett, JRSS-B 2020;82:39-67): the curve
//!   of (R2_dz, R2_yz) at which the bias-adjusted estimate reaches
//!   (1 - q) times the estimate (zero for q = 1), and the curve at which the
//!   bias-adjusted interval reaches it. With f_q = q|t|/sqrt(df) and
//!   f* = |t*_{α/2,df-1}|/sqrt(df-1), the interval reaches the reduced value
//!   when sqrt(x y) + f* sqrt(1 - y) = f_q sqrt(1 - x) (x = R2_dz, y = R2_yz);
//!   writing y = sin²θ turns this into R sin(θ + φ) = f_q sqrt(1 - x) with
//!   R = sqrt(x + f*²), φ = atan2(f*, sqrt(x)), solved in closed form. For
//!   f* = 0 this is the estimate frontier y = f_q² (1 - x) / x. For a given x
//!   there can be two solutions: a lower branch (the interval starts to
//!   include the value) and, near y = 1, an upper one (the adjusted standard
//!   error shrinks again); both are returned as separate polylines.

use super::evalue::{EValue, evalue_of};
use super::robustness::{Coefficient, f_star};
use crate::{Error, Result};

/// A sampled curve: (x, y) points in order of increasing x.
pub type Polyline = Vec<(f64, f64)>;

/// The risk ratio RR_UY that, with RR_EU = `rr_eu`, gives a bounding factor
/// equal to `rr` (≥ 1); infinite when `rr_eu` ≤ `rr`.
pub fn rr_partner(rr: f64, rr_eu: f64) -> f64 {
    if rr_eu <= rr {
        f64::INFINITY
    } else {
        rr * (rr_eu - 1.0) / (rr_eu - rr)
    }
}

/// The bounding factor RR_EU · RR_UY / (RR_EU + RR_UY - 1).
pub fn bounding_factor(rr_eu: f64, rr_uy: f64) -> f64 {
    rr_eu * rr_uy / (rr_eu + rr_uy - 1.0)
}

/// Points (RR_EU, RR_UY) on the frontier for an observed risk ratio `rr`
/// (inverted when below 1), inside the square [1, `max`]², spaced evenly
/// on the log scale of RR_EU. Empty when `rr` is 1 or the frontier lies
/// outside the square (the E-value is above `max`).
pub fn rr_frontier(rr: f64, max: f64, points: usize) -> Result<Polyline> {
    if !(rr > 0.0 && rr.is_finite()) {
        return Err(Error::input(format!(
            "a frontier needs a positive risk ratio (got {rr})"
        )));
    }
    let rr = if rr < 1.0 { 1.0 / rr } else { rr };
    if rr == 1.0 || max.is_nan() || max <= 1.0 || evalue_of(rr)? > max || points < 2 {
        return Ok(Vec::new());
    }
    // Where RR_UY = max: RR_EU = RR (max - 1) / (max - RR), by symmetry.
    let lo = rr * (max - 1.0) / (max - rr);
    let (llo, lhi) = (lo.ln(), max.ln());
    Ok((0..points)
        .map(|i| {
            let x = (llo + (lhi - llo) * i as f64 / (points - 1) as f64).exp();
            let x = x.clamp(lo, max);
            (x, rr_partner(rr, x).min(max))
        })
        .collect())
}

/// The smallest m · 10^k at or above `v` for m in `mults`, computed so that
/// decimal values such as 0.3 come out as the nearest double.
fn round_at_or_above(v: f64, mults: &[f64]) -> f64 {
    let k = v.log10().floor() as i32;
    let scale = |m: f64| {
        if k >= 0 {
            m * 10f64.powi(k)
        } else {
            m / 10f64.powi(-k)
        }
    };
    for &m in mults {
        if scale(m) >= v * (1.0 - 1e-12) {
            return scale(m);
        }
    }
    scale(10.0)
}

/// A round number at or above `v` > 0: 1, 2, 2.5 or 5 times a power of 10.
pub fn nice_ceiling(v: f64) -> f64 {
    if !(v > 0.0 && v.is_finite()) {
        return 1.0;
    }
    round_at_or_above(v, &[1.0, 2.0, 2.5, 5.0, 10.0])
}

/// A round axis limit at or above `v` > 0: 1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6
/// or 8 times a power of 10.
pub fn axis_ceiling(v: f64) -> f64 {
    if !(v > 0.0 && v.is_finite()) {
        return 1.0;
    }
    round_at_or_above(v, &[1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0])
}

/// Both risk-ratio frontiers of an E-value, ready to plot.
#[derive(Debug, Clone, PartialEq)]
pub struct RrFrontiers {
    /// The observed risk ratio, inverted when below 1.
    pub rr: f64,
    /// The confidence limit nearest the null on the same side (inverted
    /// with `rr`); `None` without an interval or when it includes 1.
    pub limit: Option<f64>,
    /// The E-value of the estimate.
    pub evalue: f64,
    /// The E-value of the limit.
    pub evalue_limit: Option<f64>,
    /// Frontier of the estimate.
    pub estimate: Polyline,
    /// Frontier of the confidence limit (empty when `limit` is `None`).
    pub interval: Polyline,
    /// The side of the square plotted, [1, max]².
    pub max: f64,
}

/// The risk-ratio frontiers for an E-value on a square wide enough for the
/// E-value and for any reference points `(RR_EU, RR_UY)` to be shown.
pub fn rr_frontiers(e: &EValue, references: &[(f64, f64)], points: usize) -> Result<RrFrontiers> {
    let invert = e.rr < 1.0;
    let rr = if invert { 1.0 / e.rr } else { e.rr };
    let limit = match (e.rr_ci, e.ci_limit) {
        (Some((lo, hi)), Some(l)) if l > 1.0 => Some(if invert { 1.0 / hi } else { lo }),
        _ => None,
    };
    let mut reach = 1.5 * e.point;
    for &(a, b) in references {
        reach = reach.max(1.1 * a).max(1.1 * b);
    }
    let max = axis_ceiling(reach.max(2.0));
    Ok(RrFrontiers {
        rr,
        limit,
        evalue: e.point,
        evalue_limit: limit.and(e.ci_limit),
        estimate: rr_frontier(rr, max, points)?,
        interval: match limit {
            Some(l) => rr_frontier(l, max, points)?,
            None => Vec::new(),
        },
        max,
    })
}

/// The side of the partial-R² square to plot: room for twice the
/// robustness value and for every reference point `(R2_dz, R2_yz)`, at most 1.
pub fn r2_axis_max(rv: f64, references: &[(f64, f64)]) -> f64 {
    let mut reach = (2.0 * rv).max(0.02);
    for &(a, b) in references {
        reach = reach.max(1.15 * a).max(1.15 * b);
    }
    axis_ceiling(reach).min(1.0)
}

/// The two partial-R² frontiers of a coefficient.
#[derive(Debug, Clone, PartialEq)]
pub struct R2Frontiers {
    /// Where the adjusted estimate reaches (1 - q) times the estimate.
    pub estimate: Vec<Polyline>,
    /// Where the adjusted 1-α interval reaches it; empty when the interval
    /// includes it already.
    pub interval: Vec<Polyline>,
    /// The side of the square plotted, [0, max]².
    pub max: f64,
}

/// The values of y in [0, 1] with sqrt(x y) + fs sqrt(1 - y) = fq sqrt(1 - x),
/// lower root first (either may be missing).
fn roots(x: f64, fq: f64, fs: f64) -> (Option<f64>, Option<f64>) {
    let c = fq * (1.0 - x).sqrt();
    let r = (x + fs * fs).sqrt();
    if r == 0.0 || c > r {
        return (None, None);
    }
    let phi = fs.atan2(x.sqrt());
    let a = (c / r).asin();
    let half = std::f64::consts::FRAC_PI_2;
    let t1 = a - phi;
    let t2 = std::f64::consts::PI - a - phi;
    let ok = |t: f64| (-1e-12..=half + 1e-12).contains(&t);
    let y = |t: f64| t.clamp(0.0, half).sin().powi(2);
    let lower = ok(t1).then(|| y(t1));
    let upper = (ok(t2) && (t2 - t1).abs() > 1e-12).then(|| y(t2));
    (lower, upper)
}

/// The root of one branch at `x` if it lies in the square.
fn branch_at(x: f64, fq: f64, fs: f64, max: f64, upper: bool) -> Option<f64> {
    let (l, u) = roots(x, fq, fs);
    let y = if upper { u } else { l };
    y.filter(|&y| y <= max)
}

/// The x between `a` (branch absent) and `b` (present), or the reverse,
/// where the branch enters or leaves the square, by bisection.
fn edge(a: f64, b: f64, fq: f64, fs: f64, max: f64, upper: bool) -> Option<(f64, f64)> {
    let (mut out, mut inside) = (a, b);
    for _ in 0..60 {
        let mid = 0.5 * (out + inside);
        if branch_at(mid, fq, fs, max, upper).is_some() {
            inside = mid;
        } else {
            out = mid;
        }
    }
    branch_at(inside, fq, fs, max, upper).map(|y| (inside, y))
}

/// Samples one frontier over x in (0, max], splitting it into polylines
/// where a branch leaves the square or has no solution; the points where a
/// branch enters or leaves are located by bisection, so the curves reach
/// the edges of the square.
fn trace(fq: f64, fs: f64, max: f64, points: usize) -> Vec<Polyline> {
    let mut out = Vec::new();
    for upper in [false, true] {
        let mut current: Polyline = Vec::new();
        let mut prev: Option<(f64, bool)> = None;
        // Dense near x = 0, where the frontiers rise steeply:
        // x = max · s², s evenly spaced.
        for i in 1..=points {
            let s = i as f64 / points as f64;
            let x = max * s * s;
            let here = branch_at(x, fq, fs, max, upper);
            if let Some((px, was_in)) = prev
                && was_in != here.is_some()
            {
                let (outside, inside) = if was_in { (x, px) } else { (px, x) };
                if let Some(p) = edge(outside, inside, fq, fs, max, upper) {
                    current.push(p);
                }
            }
            match here {
                Some(y) => current.push((x, y)),
                None => {
                    if current.len() >= 2 {
                        current.sort_by(|a, b| a.0.total_cmp(&b.0));
                        out.push(std::mem::take(&mut current));
                    }
                    current.clear();
                }
            }
            prev = Some((x, here.is_some()));
        }
        if current.len() >= 2 {
            current.sort_by(|a, b| a.0.total_cmp(&b.0));
            out.push(current);
        }
    }
    out
}

/// The estimate and interval frontiers of `c` on the square [0, `max`]² of
/// partial R² with the exposure (x) and with the outcome (y), for a
/// reduction by 100·q% and level 1-α, with `points` samples along x.
pub fn r2_frontiers(c: &Coefficient, q: f64, alpha: f64, max: f64, points: usize) -> Result<R2Frontiers> {
    if !(max > 0.0 && max <= 1.0) {
        return Err(Error::input(format!(
            "the plotted range of partial R2 must be in (0, 1] (got {max})"
        )));
    }
    let fs = f_star(alpha, c.df)?;
    let fq = q * c.t().abs() / c.df.sqrt();
    let estimate = trace(fq, 0.0, max, points);
    let interval = if fq <= fs {
        Vec::new()
    } else {
        trace(fq, fs, max, points)
    };
    Ok(R2Frontiers {
        estimate,
        interval,
        max,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sensitivity::robustness::{adjust, robustness_value};

    #[test]
    fn rr_frontier_has_the_bounding_factor_and_meets_the_evalue() {
        let rr = 3.9;
        let pts = rr_frontier(rr, 20.0, 200).unwrap();
        assert_eq!(pts.len(), 200);
        for &(a, b) in &pts {
            if b < 20.0 {
                assert!((bounding_factor(a, b) - rr).abs() < 1e-9 * rr);
            }
        }
        // The curve is symmetric and crosses the diagonal at the E-value.
        let e = evalue_of(rr).unwrap();
        assert!((rr_partner(rr, e) - e).abs() < 1e-9);
        assert!((pts[0].1 - 20.0).abs() < 1e-9 && (pts[199].0 - 20.0).abs() < 1e-9);
        // A protective ratio gives the frontier of its inverse.
        assert_eq!(
            rr_frontier(0.5, 10.0, 50).unwrap(),
            rr_frontier(2.0, 10.0, 50).unwrap()
        );
        assert!(rr_frontier(1.0, 10.0, 50).unwrap().is_empty());
        assert!(rr_frontier(30.0, 10.0, 50).unwrap().is_empty());
    }

    /// Every point of the estimate frontier sets the adjusted estimate to
    /// zero, and every point of the interval frontier puts a limit at zero
    /// (closed forms; 1e-8 relative allows for the trigonometric solution).
    #[test]
    fn r2_frontiers_are_where_estimate_and_interval_reach_zero() {
        let c = Coefficient::new(0.097, 0.0232, 783.0).unwrap();
        let f = r2_frontiers(&c, 1.0, 0.05, 0.5, 300).unwrap();
        assert!(!f.estimate.is_empty() && !f.interval.is_empty());
        // The estimate frontier y = f² (1 - x) / x enters the square at its
        // top edge and leaves at the right edge.
        let fq2 = c.t().powi(2) / 783.0;
        let first = f.estimate[0][0];
        assert!((first.1 - 0.5).abs() < 1e-9 && (first.0 - fq2 / (0.5 + fq2)).abs() < 1e-9);
        assert!((f.estimate[0].last().unwrap().0 - 0.5).abs() < 1e-12);
        for line in &f.estimate {
            for &(x, y) in line {
                let a = adjust(&c, x, y, 0.05).unwrap();
                assert!(a.estimate.abs() < 1e-8 * 0.097, "{x} {y} {a:?}");
            }
        }
        for line in &f.interval {
            for &(x, y) in line {
                let a = adjust(&c, x, y, 0.05).unwrap();
                assert!(a.ci[0].abs() < 1e-8 * 0.097, "{x} {y} {a:?}");
            }
        }
        // Both frontiers cross the diagonal at the robustness values.
        let r = robustness_value(&c, 1.0, 0.05).unwrap();
        let cross = |line: &Polyline| {
            line.windows(2)
                .find(|w| (w[0].1 - w[0].0) * (w[1].1 - w[1].0) <= 0.0)
                .map(|w| w[0].0)
        };
        let e = f.estimate.iter().find_map(cross).unwrap();
        assert!((e - r.rv).abs() < 0.01, "{e} vs {}", r.rv);
        let i = f.interval.iter().find_map(cross).unwrap();
        assert!((i - r.rv_alpha).abs() < 0.01, "{i} vs {}", r.rv_alpha);
    }

    #[test]
    fn axis_ranges_are_round_and_hold_the_points() {
        assert_eq!(nice_ceiling(7.26), 10.0);
        assert_eq!(nice_ceiling(0.278), 0.5);
        assert_eq!(nice_ceiling(0.2), 0.2);
        assert_eq!(nice_ceiling(2.1), 2.5);
        assert_eq!(axis_ceiling(10.9), 12.0);
        assert_eq!(r2_axis_max(0.139, &[]), 0.3);
        assert_eq!(r2_axis_max(0.139, &[(0.9, 0.1)]), 1.0);
        let e = crate::sensitivity::evalue::risk_ratio(0.4, Some((0.2, 0.8))).unwrap();
        let f = rr_frontiers(&e, &[(12.0, 1.5)], 100).unwrap();
        assert_eq!(f.max, 15.0);
        assert!((f.rr - 2.5).abs() < 1e-12 && (f.limit.unwrap() - 1.25).abs() < 1e-12);
        assert!(!f.interval.is_empty());
        let e = crate::sensitivity::evalue::risk_ratio(1.4, Some((0.9, 2.0))).unwrap();
        let f = rr_frontiers(&e, &[], 100).unwrap();
        assert!(f.limit.is_none() && f.interval.is_empty());
    }

    #[test]
    fn no_interval_frontier_when_not_significant() {
        let c = Coefficient::new(1.0, 1.0, 50.0).unwrap();
        let f = r2_frontiers(&c, 1.0, 0.05, 1.0, 100).unwrap();
        assert!(f.interval.is_empty());
        assert!(!f.estimate.is_empty());
    }

    #[test]
    fn upper_branch_appears_for_a_strong_exposure_confounder() {
        // Few df: the adjusted se shrinks as R2_yz -> 1, so significance
        // comes back near the top of the square.
        let c = Coefficient::new(3.0, 1.0, 20.0).unwrap();
        let f = r2_frontiers(&c, 1.0, 0.05, 1.0, 400).unwrap();
        assert!(f.interval.len() >= 2, "{}", f.interval.len());
        for line in &f.interval {
            for &(x, y) in line {
                let a = adjust(&c, x, y.min(1.0 - 1e-15), 0.05).unwrap();
                assert!(a.ci[0].abs() < 1e-7, "{x} {y} {a:?}");
            }
        }
    }
}
