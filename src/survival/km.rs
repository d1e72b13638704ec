//! The Kaplan-Meier estimator with known weights (Kaplan & Meier, JASA
//! 1958;53:457-481; with inverse probability weights, Xie & Liu, Stat Med
//! 2005;24:3089-3110, from memory), over the exact follow-up times, and
//! its influence function.
//!
//! With weighted numbers at risk `R_j` and events `d_j` at the distinct
//! event times `t_j`, `S(t) = prod_{t_j <= t} (1 - d_j / R_j)`. Row i's
//! influence on `S(t)` (weights taken as known) is
//! `-S(t) w_i [delta_i 1(T_i <= t) / (R(T_i) - d(T_i)) - B(min(t, T_i))]`
//! with `B(u) = sum_{t_j <= u} d_j / (R_j (R_j - d_j))`; its sum of squares
//! is Greenwood's variance when every weight is 1. The restricted mean
//! `int_0^tau S(t) dt` and its influence are the integrals of the same
//! step functions.

/// A fitted weighted Kaplan-Meier curve.
#[derive(Debug, Clone)]
pub struct Km {
    /// Breakpoints: 0 and the event times.
    t: Vec<f64>,
    /// Survival on [t_k, t_k+1).
    s: Vec<f64>,
    /// B on [t_k, t_k+1).
    b: Vec<f64>,
    /// 1 / (R - d) at each event time (0 where everyone left had the event).
    a: Vec<f64>,
    /// int_0^{t_k} S.
    q: Vec<f64>,
    /// int_0^{t_k} S B.
    sb: Vec<f64>,
}

impl Km {
    /// The curve of the rows with positive weight `w` (times `time`,
    /// events 0/1 `event`).
    pub fn new(time: &[f64], event: &[f64], w: &[f64]) -> Km {
        let mut rows: Vec<usize> = (0..time.len()).filter(|&i| w[i] > 0.0).collect();
        rows.sort_by(|&i, &j| time[i].total_cmp(&time[j]));
        let mut r: f64 = rows.iter().map(|&i| w[i]).sum();
        let mut km = Km {
            t: vec![0.0],
            s: vec![1.0],
            b: vec![0.0],
            a: vec![0.0],
            q: vec![0.0],
            sb: vec![0.0],
        };
        let mut k = 0;
        while k < rows.len() {
            let t = time[rows[k]];
            let (mut d, mut out) = (0.0, 0.0);
            while k < rows.len() && time[rows[k]] == t {
                let i = rows[k];
                d += w[i] * event[i];
                out += w[i];
                k += 1;
            }
            if d > 0.0 {
                let last = km.t.len() - 1;
                let (s0, b0) = (km.s[last], km.b[last]);
                let dt = t - km.t[last];
                let left = r - d;
                let (s, b, a) = if left > 0.0 {
                    (s0 * (1.0 - d / r), b0 + d / (r * left), 1.0 / left)
                } else {
                    (0.0, b0, 0.0)
                };
                km.q.push(km.q[last] + s0 * dt);
                km.sb.push(km.sb[last] + s0 * b0 * dt);
                km.t.push(t);
                km.s.push(s);
                km.b.push(b);
                km.a.push(a);
            }
            r -= out;
        }
        km
    }

    /// The last breakpoint at or before `u`.
    fn at(&self, u: f64) -> usize {
        self.t.partition_point(|&t| t <= u).saturating_sub(1)
    }

    /// Survival at `u`.
    pub fn survival(&self, u: f64) -> f64 {
        self.s[self.at(u)]
    }

    /// `int_0^u S` and `int_0^u S B`.
    fn integrals(&self, u: f64) -> (f64, f64) {
        let k = self.at(u);
        let dt = u - self.t[k];
        (
            self.q[k] + self.s[k] * dt,
            self.sb[k] + self.s[k] * self.b[k] * dt,
        )
    }

    /// The restricted mean survival time to `tau`.
    pub fn restricted_mean(&self, tau: f64) -> f64 {
        self.integrals(tau).0
    }

    /// Row i's influence on `S(t)`: follow-up `ti`, event `ei`, weight `wi`.
    pub fn influence(&self, t: f64, ti: f64, ei: f64, wi: f64) -> f64 {
        if wi == 0.0 {
            return 0.0;
        }
        let own = if ei > 0.0 && ti <= t {
            self.a[self.at(ti)]
        } else {
            0.0
        };
        -self.survival(t) * wi * (own - self.b[self.at(t.min(ti))])
    }

    /// Row i's influence on the restricted mean to `tau`.
    pub fn influence_restricted(&self, tau: f64, ti: f64, ei: f64, wi: f64) -> f64 {
        if wi == 0.0 {
            return 0.0;
        }
        let (q_tau, _) = self.integrals(tau);
        let u = ti.min(tau);
        let (q_u, sb_u) = self.integrals(u);
        let tail = q_tau - q_u;
        let own = if ei > 0.0 && ti <= tau {
            self.a[self.at(ti)] * tail
        } else {
            0.0
        };
        let mixed = sb_u + if ti < tau { self.b[self.at(ti)] * tail } else { 0.0 };
        -wi * (own - mixed)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small invented sample worked by hand: times 1, 2+, 3, 3, 4+ (+
    /// censored). S(1) = 4/5, S(3) = 4/5 * (1 - 2/3) = 4/15; Greenwood's
    /// variance at 3: S^2 (1/(5*4) + 2/(3*1)).
    #[test]
    fn hand_worked_curve_and_greenwood() {
        let t = [1.0, 2.0, 3.0, 3.0, 4.0];
        let e = [1.0, 0.0, 1.0, 1.0, 0.0];
        let w = [1.0; 5];
        let km = Km::new(&t, &e, &w);
        assert!((km.survival(0.5) - 1.0).abs() < 1e-15);
        assert!((km.survival(2.5) - 0.8).abs() < 1e-15);
        assert!((km.survival(3.0) - 4.0 / 15.0).abs() < 1e-15);
        let var: f64 = (0..5).map(|i| km.influence(3.0, t[i], e[i], w[i]).powi(2)).sum();
        let s: f64 = 4.0 / 15.0;
        let greenwood = s * s * (1.0 / 20.0 + 2.0 / 3.0);
        assert!((var - greenwood).abs() < 1e-14, "{var} {greenwood}");
        // RMST to 4: 1 + 0.8 * 2 + 4/15 * 1.
        assert!((km.restricted_mean(4.0) - (1.0 + 1.6 + 4.0 / 15.0)).abs() < 1e-14);
    }

    /// The influence of the restricted mean is the integral of the
    /// curve's influence (checked by a fine Riemann sum).
    #[test]
    fn restricted_mean_influence_integrates_the_curve_influence() {
        let t = [0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 3.5];
        let e = [1.0, 0.0, 1.0, 1.0, 0.0, 1.0, 0.0];
        let w = [1.0, 2.0, 0.5, 1.5, 1.0, 1.0, 3.0];
        let km = Km::new(&t, &e, &w);
        let tau = 3.2;
        for i in 0..t.len() {
            let steps = 64_000;
            let h = tau / steps as f64;
            let riemann: f64 = (0..steps)
                .map(|k| km.influence((k as f64 + 0.5) * h, t[i], e[i], w[i]) * h)
                .sum();
            let exact = km.influence_restricted(tau, t[i], e[i], w[i]);
            assert!((riemann - exact).abs() < 1e-4, "{i}: {riemann} {exact}");
        }
    }
}
