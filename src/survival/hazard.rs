//! Pooled logistic hazard models over discrete periods and the survival
//! curves they imply (Hernán & Robins, *Causal Inference: What If*, 2020,
//! ch. 17; the discrete-time hazard as a logistic model over person-periods,
//! D'Agostino et al., Stat Med 1990;9:1501-1515, from memory).
//!
//! The hazard in period k (0, 1, ...) of a person at exposure level a is
//! `logit h = c'x + d_a + b1 t + b2 t^2 + e_a1 t + e_a2 t^2`, with `t` the
//! period index (scaled by a power of two, exactly), `x` the covariate terms
//! (none but the intercept for the IP-weighted model; the adjustment terms
//! for the standardised one), `d_a` and `e_a` per non-reference level. The
//! person-periods are never copied: [`PeriodRows`] writes each block of
//! rows from the people's covariate rows on demand, and the IP-weighted
//! model, which has no covariates, is fitted to weighted counts of people
//! at risk and events per (level, period).
//!
//! Survival after c periods is `prod_{k<c} (1 - h_k)`: for the IP-weighted
//! model at each level; for the standardised one (the parametric g-formula)
//! predicted for everyone at each level and averaged. The influence of each
//! row on a target (a linear functional of the curve) is its own term (the
//! average's) plus the model's: the target's gradient in the coefficients
//! times the inverse information times the row's score, summed over its
//! periods.

use super::{Survival, completed};
use crate::data::Rows;
use crate::estimate::Target;
use crate::maths::expit_std as expit;
use crate::model::{Logit, LogitOptions};
use crate::{Error, Result};
use nalgebra::DVector;

/// Power of two the period index is divided by: the largest at or below
/// `periods` (so that `t` lies within [0, 2)).
fn time_scale(periods: usize) -> f64 {
    let mut s = 1.0;
    while s * 2.0 <= periods as f64 {
        s *= 2.0;
    }
    1.0 / s
}

/// The layout of a hazard model's columns: `q` covariate columns, then the
/// level indicators, `t`, `t^2`, and the level-by-time products.
#[derive(Debug, Clone, Copy)]
pub struct Layout {
    /// Covariate columns (the first is the intercept).
    pub q: usize,
    /// Exposure levels (2 for a binary exposure).
    pub levels: usize,
    /// Factor applied to the period index.
    pub scale: f64,
}

impl Layout {
    /// Number of columns.
    pub fn ncols(&self) -> usize {
        self.q + 3 * self.levels - 1
    }

    /// The part of the linear predictor that is not the covariates', at
    /// level `a` in period `k`.
    fn time_part(&self, beta: &[f64], a: usize, k: usize) -> f64 {
        let t = k as f64 * self.scale;
        let base = self.q + self.levels - 1;
        let mut eta = beta[base] * t + beta[base + 1] * t * t;
        if a > 0 {
            let j = a - 1;
            eta += beta[self.q + j] + beta[base + 2 + 2 * j] * t + beta[base + 3 + 2 * j] * t * t;
        }
        eta
    }

    /// Writes the columns after the covariates for level `a`, period `k`,
    /// each through `put(column, value)`.
    fn put_rest(&self, a: usize, k: usize, mut put: impl FnMut(usize, f64)) {
        let t = k as f64 * self.scale;
        let base = self.q + self.levels - 1;
        for j in 0..self.levels - 1 {
            let on = if a == j + 1 { 1.0 } else { 0.0 };
            put(self.q + j, on);
            put(base + 2 + 2 * j, on * t);
            put(base + 3 + 2 * j, on * t * t);
        }
        put(base, t);
        put(base + 1, t * t);
    }
}

/// Person-period rows: unit `u` (a person, or a cell of counts) at level
/// `level[u]` is at risk in periods `0..offsets[u+1] - offsets[u]`; its
/// covariate row is row `u` of `cov` (or row 0 for every unit when `cov`
/// holds one row).
pub struct PeriodRows<'a> {
    /// Covariates, column-major with `cov_rows` rows.
    pub cov: &'a [f64],
    /// Rows of `cov`.
    pub cov_rows: usize,
    /// Each unit's exposure level.
    pub level: &'a [usize],
    /// Each unit's first row; one more entry at the end.
    pub offsets: &'a [usize],
    /// The columns.
    pub layout: Layout,
}

impl Rows for PeriodRows<'_> {
    fn nrows(&self) -> usize {
        *self.offsets.last().unwrap_or(&0)
    }

    fn ncols(&self) -> usize {
        self.layout.ncols()
    }

    fn fill(&self, start: usize, len: usize, out: &mut [f64]) {
        if len == 0 {
            return;
        }
        let q = self.layout.q;
        let mut u = self.offsets.partition_point(|&o| o <= start) - 1;
        for r in 0..len {
            let row = start + r;
            while self.offsets[u + 1] <= row {
                u += 1;
            }
            let k = row - self.offsets[u];
            let c = if self.cov_rows == 1 { 0 } else { u };
            for j in 0..q {
                out[j * len + r] = self.cov[j * self.cov_rows + c];
            }
            self.layout
                .put_rest(self.level[u], k, |j, v| out[j * len + r] = v);
        }
    }
}

/// A fitted pooled logistic hazard model.
#[derive(Debug, Clone)]
pub struct Hazard {
    /// Coefficients, in the order of [`Layout`].
    pub coef: DVector<f64>,
    /// The columns.
    pub layout: Layout,
    /// The full-sample fit with its information (for influence functions).
    fit: Option<Logit>,
}

impl Hazard {
    /// Fits `y` on `rows` with weights `w` per row, from `warm` when given
    /// (a bootstrap resample: then the information is not kept).
    pub fn fit(rows: &PeriodRows, y: &[f64], w: &[f64], warm: Option<&Hazard>, what: &str) -> Result<Hazard> {
        let opts = LogitOptions::default();
        let (coef, separation, fit) = match warm.and_then(|h| h.fit.as_ref()) {
            Some(full) => {
                let r = full.refit(rows, y, w, opts)?;
                (r.coef, r.separation, None)
            }
            None => {
                let mut start = DVector::zeros(rows.ncols());
                let (s, t) = y
                    .iter()
                    .zip(w)
                    .fold((0.0, 0.0), |(s, t), (y, w)| (s + y * w, t + w));
                let m = (s / t).clamp(1e-6, 1.0 - 1e-6);
                start[0] = (m / (1.0 - m)).ln();
                let f = Logit::fit(rows, y, Some(w), Some(&start), opts)?;
                (f.coef.clone(), f.separation.clone(), Some(f))
            }
        };
        if let Some(s) = separation {
            return Err(Error::Numerical(format!(
                "the {what} hazard model: {s}; some exposure level or period has no events or no one left \
                 at risk: choose wider periods or earlier horizons"
            )));
        }
        Ok(Hazard {
            coef,
            layout: rows.layout,
            fit,
        })
    }

    /// The hazard of a unit with covariate row `cov` at level `a` in
    /// period `k`.
    pub fn hazard_at(&self, cov: &[f64], a: usize, k: usize) -> f64 {
        let eta: f64 = cov.iter().zip(self.coef.iter()).map(|(x, b)| x * b).sum();
        self.hazard(eta, a, k)
    }

    /// The hazard of a unit whose covariate part of the linear predictor
    /// is `eta_cov`, at level `a` in period `k`.
    fn hazard(&self, eta_cov: f64, a: usize, k: usize) -> f64 {
        expit(eta_cov + self.layout.time_part(self.coef.as_slice(), a, k))
    }
}

/// The survival targets of a hazard model.
pub struct CurveInput<'a> {
    /// The model.
    pub model: &'a Hazard,
    /// Covariate rows to predict for, column-major (one row: the
    /// IP-weighted model, whose curve is its own prediction).
    pub cov: &'a [f64],
    /// Rows of `cov`.
    pub cov_rows: usize,
    /// Weights of the rows of `cov` in the average.
    pub avg: &'a [f64],
    /// The follow-up set-up.
    pub surv: &'a Survival,
}

/// What the influence functions need of the rows the model was fitted to.
pub struct People<'a> {
    /// Each row's weight in the fit (per period when censoring weights
    /// are used: row-major, `periods` values per row).
    pub weight: &'a dyn Fn(usize, usize) -> f64,
    /// Each row's exposure level.
    pub level: &'a [usize],
    /// Periods each row is at risk.
    pub at_risk: &'a [usize],
    /// Whether each row's event falls in its last period at risk.
    pub event: &'a [bool],
}

/// A target as a linear functional of the curve: level, constant and
/// coefficients on survival after c periods.
type Functional = (usize, f64, Vec<(usize, f64)>);

/// The functional of target `t`.
fn functional(t: Target, surv: &Survival) -> Option<Functional> {
    let w = surv.period;
    let c = |x: f64| completed(x, w).min(surv.periods);
    Some(match t {
        Target::Survival(a, x) => (a, 0.0, vec![(c(x), 1.0)]),
        Target::Risk(a, x) => (a, 1.0, vec![(c(x), -1.0)]),
        Target::Rmst(a, tau) => {
            let k = c(tau);
            let mut terms: Vec<(usize, f64)> = (0..k).map(|j| (j, w)).collect();
            terms.push((k, tau - k as f64 * w));
            (a, 0.0, terms)
        }
        _ => return None,
    })
}

/// The targets' values, and with `people` their influence functions
/// (`own`: the targets average over the people themselves, whose own
/// deviation from the average then counts too).
pub fn curve_targets(
    input: &CurveInput,
    targets: &[Target],
    people: Option<(&People, bool)>,
) -> Result<(Vec<f64>, Vec<Vec<f64>>)> {
    let m = input.model;
    let lay = m.layout;
    let (q, kmax) = (lay.q, input.surv.periods);
    let beta = m.coef.as_slice();
    let forms: Vec<Functional> = targets
        .iter()
        .map(|&t| functional(t, input.surv).ok_or_else(|| Error::Internal("not a survival target".into())))
        .collect::<Result<_>>()?;
    let n_pred = input.cov_rows;
    let total: f64 = input.avg.iter().sum();
    if total <= 0.0 {
        return Err(Error::Numerical(
            "no weight to average the survival curves over".into(),
        ));
    }
    let eta_cov: Vec<f64> = (0..n_pred)
        .map(|u| (0..q).map(|j| input.cov[j * n_pred + u] * beta[j]).sum())
        .collect();
    let own = people.as_ref().is_some_and(|(_, own)| *own);
    let mut values = vec![0.0; targets.len()];
    // Per target: each prediction row's own value (for the influence).
    let mut per_row: Vec<Vec<f64>> = if own {
        vec![vec![0.0; n_pred]; targets.len()]
    } else {
        Vec::new()
    };
    let ncols = lay.ncols();
    // Per level, per c: the gradient of the average survival after c
    // periods in the coefficients (times -total).
    let mut grads: Vec<Vec<DVector<f64>>> = Vec::new();
    let levels_used: Vec<usize> = {
        let mut l: Vec<usize> = forms.iter().map(|f| f.0).collect();
        l.sort_unstable();
        l.dedup();
        l
    };
    let mut curve = vec![0.0; kmax + 1];
    let mut h = [vec![0.0; kmax + 1], vec![0.0; kmax + 1], vec![0.0; kmax + 1]];
    let mut avg_curves: Vec<Vec<f64>> = vec![Vec::new(); lay.levels];
    for &a in &levels_used {
        let mut avg = vec![0.0; kmax + 1];
        let mut grad_cov = vec![vec![0.0; q]; kmax + 1];
        let mut grad_t = vec![[0.0; 3]; kmax + 1];
        for u in 0..n_pred {
            let wu = input.avg[u];
            if wu == 0.0 {
                continue;
            }
            curve[0] = 1.0;
            let (mut h0, mut h1, mut h2) = (0.0, 0.0, 0.0);
            for k in 0..kmax {
                let hk = m.hazard(eta_cov[u], a, k);
                let t = k as f64 * lay.scale;
                curve[k + 1] = curve[k] * (1.0 - hk);
                h0 += hk;
                h1 += hk * t;
                h2 += hk * t * t;
                h[0][k + 1] = h0;
                h[1][k + 1] = h1;
                h[2][k + 1] = h2;
            }
            for c in 0..=kmax {
                avg[c] += wu * curve[c];
            }
            if people.is_some() {
                for c in 1..=kmax {
                    let s = wu * curve[c];
                    let g = &mut grad_t[c];
                    g[0] += s * h[0][c];
                    g[1] += s * h[1][c];
                    g[2] += s * h[2][c];
                    let sh = s * h[0][c];
                    for (j, gc) in grad_cov[c].iter_mut().enumerate() {
                        *gc += sh * input.cov[j * n_pred + u];
                    }
                }
            }
            if own {
                for (k, f) in forms.iter().enumerate() {
                    if f.0 == a {
                        per_row[k][u] = f.1 + f.2.iter().map(|&(c, w)| w * curve[c]).sum::<f64>();
                    }
                }
            }
        }
        avg.iter_mut().for_each(|v| *v /= total);
        avg_curves[a] = avg;
        if people.is_some() {
            let per_c: Vec<DVector<f64>> = (0..=kmax)
                .map(|c| {
                    let mut g = DVector::zeros(ncols);
                    for j in 0..q {
                        g[j] = grad_cov[c][j];
                    }
                    let base = q + lay.levels - 1;
                    let [g0, g1, g2] = grad_t[c];
                    if a > 0 {
                        g[q + a - 1] = g0;
                        g[base + 2 + 2 * (a - 1)] = g1;
                        g[base + 3 + 2 * (a - 1)] = g2;
                    }
                    g[base] = g1;
                    g[base + 1] = g2;
                    -g / total
                })
                .collect();
            if grads.len() <= a {
                grads.resize(a + 1, Vec::new());
            }
            grads[a] = per_c;
        }
    }
    for (k, f) in forms.iter().enumerate() {
        values[k] = f.1 + f.2.iter().map(|&(c, w)| w * avg_curves[f.0][c]).sum::<f64>();
    }
    let Some((pp, own)) = people else {
        return Ok((values, Vec::new()));
    };
    let fit = m
        .fit
        .as_ref()
        .ok_or_else(|| Error::Internal("influence asked of a resample's hazard model".into()))?;
    // Each person's score sums over its periods at the observed level:
    // (r0 cov, r0 e_a, r1, r2, r1 e_a, r2 e_a) with r_j = sum_k w (y - h) t^j.
    let n = pp.level.len();
    let shared = n_pred == 1;
    let mut r = vec![[0.0; 3]; n];
    for (i, ri) in r.iter_mut().enumerate() {
        let a = pp.level[i];
        let cov_row = if shared { 0 } else { i };
        let m_i = pp.at_risk[i];
        let mut acc = [0.0; 3];
        for k in 0..m_i {
            let y = if pp.event[i] && k + 1 == m_i { 1.0 } else { 0.0 };
            let res = (pp.weight)(i, k) * (y - m.hazard(eta_cov[cov_row], a, k));
            let t = k as f64 * lay.scale;
            acc[0] += res;
            acc[1] += res * t;
            acc[2] += res * t * t;
        }
        *ri = acc;
    }
    let mut influence = Vec::with_capacity(targets.len());
    for (k, f) in forms.iter().enumerate() {
        let mut g = DVector::zeros(ncols);
        for &(c, w) in &f.2 {
            g += &grads[f.0][c] * w;
        }
        let v = fit.bread_solve(&g);
        let base = q + lay.levels - 1;
        let coef_t = |a: usize, j: usize| -> f64 {
            // Coefficient of t^j (j = 0: the level indicator) at level a.
            let mut c = match j {
                0 => 0.0,
                1 => v[base],
                _ => v[base + 1],
            };
            if a > 0 {
                c += match j {
                    0 => v[q + a - 1],
                    1 => v[base + 2 + 2 * (a - 1)],
                    _ => v[base + 3 + 2 * (a - 1)],
                };
            }
            c
        };
        let phi: Vec<f64> = (0..n)
            .map(|i| {
                let a = pp.level[i];
                let cov_row = if shared { 0 } else { i };
                let xv: f64 = (0..q).map(|j| input.cov[j * n_pred + cov_row] * v[j]).sum();
                let model = r[i][0] * (xv + coef_t(a, 0)) + r[i][1] * coef_t(a, 1) + r[i][2] * coef_t(a, 2);
                let mine = if own {
                    input.avg[i] / total * (per_row[k][i] - values[k])
                } else {
                    0.0
                };
                mine + model
            })
            .collect();
        influence.push(phi);
    }
    Ok((values, influence))
}

/// The time scale of a problem's periods.
pub fn layout(q: usize, levels: usize, periods: usize) -> Layout {
    Layout {
        q,
        levels,
        scale: time_scale(periods),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_scale_is_a_power_of_two_at_or_below_the_periods() {
        assert_eq!(time_scale(120), 1.0 / 64.0);
        assert_eq!(time_scale(128), 1.0 / 128.0);
        assert_eq!(time_scale(1), 1.0);
    }

    #[test]
    fn rows_follow_the_layout() {
        let lay = layout(2, 3, 4);
        // Two units: levels 2 and 0, at risk 2 and 1 periods.
        let cov = [1.0, 1.0, 5.0, 7.0];
        let rows = PeriodRows {
            cov: &cov,
            cov_rows: 2,
            level: &[2, 0],
            offsets: &[0, 2, 3],
            layout: lay,
        };
        assert_eq!(rows.ncols(), 10);
        let mut out = vec![0.0; 30];
        rows.fill(0, 3, &mut out);
        let row = |r: usize| -> Vec<f64> { (0..10).map(|j| out[j * 3 + r]).collect() };
        let t = 0.25;
        // cov, d1, d2, t, t^2, d1 t, d1 t^2, d2 t, d2 t^2
        assert_eq!(row(1), vec![1.0, 5.0, 0.0, 1.0, t, t * t, 0.0, 0.0, t, t * t]);
        assert_eq!(row(2), vec![1.0, 7.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0]);
    }
}
