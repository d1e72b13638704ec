//! The front-door formula (Pearl, Biometrika 1995;82:669-688; *Causality*,
//! 2nd ed., 2009, Thm. 3.3.4), by plug-in:
//! E[Y | do(x)] = sum_m P(m | x) sum_x' E[Y | x', m] P(x').
//!
//! - Discrete mediators (binary or categorical; several form joint cells)
//!   and a binary exposure: empirical proportions and cell means, so a
//!   table reproduces the formula exactly. Standard error by the delta
//!   method on the influence functions of the proportions and cell means.
//! - Continuous mediators and a continuous outcome: linear models
//!   M_k ~ X and Y ~ X + M_1..M_K; the effect of a one-unit change in X is
//!   sum_k alpha_k beta_k, the product of path coefficients (Wright, Ann Math
//!   Stat 1934;5:161-215). Standard error by the delta method with the
//!   coefficients' joint (robust) influence functions.
//!
//!   The targets then hold the effect per unit of the exposure (a
//!   one-unit shift, or a dose times the effect, against 0), not means;
//!   their means are not reported.
//!
//! No adjustment covariates are used: the front-door strategy needs none.

use super::{About, Estimator, ExposureKind, Points, Serves, Target, Targets, TimeToEvent};
use crate::data::{Design, Kind, Setting, Shape};
use crate::error::Setting as Opt;
use crate::identify::Strategy;
use crate::learn::{Fits, Needs};
use crate::model::{Ols, linear_predictor};
use crate::problem::{Estimand, Problem, Scale};
use crate::{Error, Result};
use nalgebra::DVector;

/// The front-door plug-in estimator.
pub struct FrontDoor;

static ABOUT: About = About {
    name: "frontdoor",
    label: "front-door formula",
    strategies: &[Strategy::Frontdoor],
    serves: &[Serves::Binary, Serves::Dose],
    weighted: &[],
    estimands: &[Estimand::Ate],
    needs: Needs {
        outcome: false,
        exposure: false,
    },
    default: true,
    time_to_event: TimeToEvent::No,
};

enum Path {
    Discrete,
    Linear,
}

fn path(p: &Problem) -> Result<Path> {
    if p.mediators.is_empty() {
        return Err(Error::option(
            Opt::Method,
            "frontdoor needs a front-door mediator set",
        ));
    }
    let discrete = |j: usize| !matches!(p.frame.kind(j), Kind::Numeric);
    if p.mediators.iter().all(|&m| discrete(m)) {
        if !p.binary_exposure() {
            return Err(Error::option(
                Opt::Method,
                "frontdoor with discrete mediators needs a binary exposure",
            ));
        }
        Ok(Path::Discrete)
    } else if p.mediators.iter().all(|&m| !discrete(m)) {
        if p.binary_outcome() || p.spec.scale != Scale::Difference {
            return Err(Error::option(
                Opt::Method,
                "'frontdoor' with continuous mediators uses linear models and needs a \
                 continuous outcome on the difference scale; name the mediators categorical \
                 if they take few values",
            ));
        }
        Ok(Path::Linear)
    } else {
        Err(Error::option(
            Opt::Method,
            "'frontdoor': the mediators are a mix of discrete and continuous columns; \
             name them all categorical or use continuous ones only",
        ))
    }
}

/// Joint cell index of the mediators for every row, and the cell count.
fn cells(p: &Problem) -> (Vec<usize>, usize) {
    let mut key = vec![0usize; p.n()];
    let mut size = 1usize;
    for &m in &p.mediators {
        let k = match p.frame.kind(m) {
            Kind::Categorical { levels } => levels.len(),
            _ => 2,
        };
        for (c, &v) in key.iter_mut().zip(p.frame.col(m)) {
            *c = *c * k + v as usize;
        }
        size *= k;
    }
    (key, size)
}

/// Weighted proportions and cell means.
struct Table {
    px: [f64; 2],
    pm_x: [Vec<f64>; 2],
    mu: [Vec<f64>; 2],
}

fn table(p: &Problem, cell: &[usize], k: usize, freq: Option<&[f64]>) -> Result<Table> {
    let mut nx = [0.0; 2];
    let mut nxm = [vec![0.0; k], vec![0.0; k]];
    let mut sxm = [vec![0.0; k], vec![0.0; k]];
    for i in 0..p.n() {
        let w = freq.map_or(1.0, |f| f[i]);
        let x = p.a()[i] as usize;
        nx[x] += w;
        nxm[x][cell[i]] += w;
        sxm[x][cell[i]] += w * p.y()[i];
    }
    let total = nx[0] + nx[1];
    if nx[0] <= 0.0 || nx[1] <= 0.0 {
        return Err(Error::Numerical("front-door: an exposure arm is empty".into()));
    }
    let mut mu = [vec![0.0; k], vec![0.0; k]];
    for m in 0..k {
        if nxm[0][m] + nxm[1][m] == 0.0 {
            continue;
        }
        for x in 0..2 {
            if nxm[x][m] <= 0.0 {
                return Err(Error::Numerical(format!(
                    "front-door: no rows with the exposure at {x} in mediator cell {m}, so \
                     E[Y | x, m] is not estimable (a positivity violation)"
                )));
            }
            mu[x][m] = sxm[x][m] / nxm[x][m];
        }
    }
    Ok(Table {
        px: [nx[0] / total, nx[1] / total],
        pm_x: [0, 1].map(|x| nxm[x].iter().map(|v| v / nx[x]).collect()),
        mu,
    })
}

impl Table {
    /// E[Y | do(x)].
    fn psi(&self, x: usize) -> f64 {
        (0..self.mu[0].len())
            .map(|m| self.pm_x[x][m] * (self.mu[0][m] * self.px[0] + self.mu[1][m] * self.px[1]))
            .sum()
    }

    /// Influence of each row on E[Y | do(x)], divided by n.
    fn influence(&self, p: &Problem, cell: &[usize], x: usize) -> Vec<f64> {
        let psi = self.psi(x);
        let n = p.n() as f64;
        let nu = |m: usize| self.mu[0][m] * self.px[0] + self.mu[1][m] * self.px[1];
        (0..p.n())
            .map(|i| {
                let (xi, m) = (p.a()[i] as usize, cell[i]);
                let first = if xi == x { (nu(m) - psi) / self.px[x] } else { 0.0 };
                let second = self.pm_x[x][m] * (p.y()[i] - self.mu[xi][m]) / self.pm_x[xi][m];
                let third: f64 = (0..self.mu[0].len())
                    .map(|k| self.pm_x[x][k] * self.mu[xi][k])
                    .sum::<f64>()
                    - psi;
                (first + second + third) / n
            })
            .collect()
    }
}

/// The linear path: coefficients and their influence functions.
struct LinearFit {
    effect: f64,
    phi: Option<Vec<f64>>,
}

fn linear(p: &Problem, freq: Option<&[f64]>, with_se: bool) -> Result<LinearFit> {
    let dm = Design::build(&p.frame, Some(p.exposure), &[], Shape::Linear, &[]);
    let dy = Design::build(&p.frame, Some(p.exposure), &p.mediators, Shape::Linear, &[]);
    let (rm, ry) = (
        dm.rows(&p.frame, Setting::Observed),
        dy.rows(&p.frame, Setting::Observed),
    );
    let ax = dm.exposure_term().unwrap_or(1);
    let (by, cy) = Ols::coefficients(&ry, p.y(), freq)?;
    let resid = |d: &Design, c: &DVector<f64>, v: &[f64]| -> Vec<f64> {
        let eta = linear_predictor(&d.rows(&p.frame, Setting::Observed), c);
        v.iter().zip(eta).map(|(v, e)| v - e).collect()
    };
    let ry_res = if with_se {
        resid(&dy, &by, p.y())
    } else {
        Vec::new()
    };
    let mut effect = 0.0;
    let mut phi = with_se.then(|| vec![0.0; p.n()]);
    for &m in &p.mediators {
        let mv = p.frame.col(m);
        let (bm, cm) = Ols::coefficients(&rm, mv, freq)?;
        let name = p.frame.name(m);
        let jm = dy
            .position(name)
            .ok_or_else(|| Error::Internal(format!("mediator term {name} lost")))?;
        // Coefficients on the raw values (the designs work in scaled units).
        let (ga, gm) = (dm.term_scale(ax), dy.term_scale(jm));
        let (alpha, beta) = (bm[ax] * ga, by[jm] * gm);
        effect += alpha * beta;
        if let Some(phi) = phi.as_mut() {
            let unit =
                |len: usize, j: usize, g: f64| DVector::from_fn(len, |i, _| if i == j { g } else { 0.0 });
            let ia = linear_predictor(&rm, &cm.solve(&unit(dm.ncols(), ax, ga)));
            let ib = linear_predictor(&ry, &cy.solve(&unit(dy.ncols(), jm, gm)));
            let rm_res = resid(&dm, &bm, mv);
            for i in 0..p.n() {
                phi[i] += beta * ia[i] * rm_res[i] + alpha * ib[i] * ry_res[i];
            }
        }
    }
    Ok(LinearFit { effect, phi })
}

/// The value of target `t` under a linear path of effect `e` per unit.
fn per_unit(t: Target) -> f64 {
    match t {
        // Time-to-event targets never reach the front-door formula (refused).
        Target::Level(k) | Target::Survival(k, _) | Target::Risk(k, _) | Target::Rmst(k, _) => k as f64,
        Target::Dose(x) => x,
        Target::Shifted => 1.0,
        Target::Observed => 0.0,
    }
}

impl Estimator for FrontDoor {
    fn about(&self) -> &'static About {
        &ABOUT
    }

    fn methods_sentence(&self, _kind: &ExposureKind) -> String {
        "The front-door formula was applied by plug-in (Pearl 1995).".into()
    }

    fn point(&self, p: &Problem, _fits: &Fits, freq: Option<&[f64]>) -> Result<Points> {
        let targets = p.targets();
        let values = match path(p)? {
            Path::Discrete => {
                let (cell, k) = cells(p);
                let t = table(p, &cell, k, freq)?;
                targets
                    .iter()
                    .map(|&x| match x {
                        Target::Level(l) => t.psi(l),
                        _ => f64::NAN,
                    })
                    .collect()
            }
            Path::Linear => {
                let e = linear(p, freq, false)?.effect;
                targets.iter().map(|&x| per_unit(x) * e).collect()
            }
        };
        Ok(Points { targets, values })
    }

    fn targets(&self, p: &Problem, _fits: &Fits) -> Result<Targets> {
        let mut out = Targets::default();
        let note = match path(p)? {
            Path::Discrete => {
                let (cell, k) = cells(p);
                let t = table(p, &cell, k, None)?;
                for x in [1, 0] {
                    out.push(Target::Level(x), t.psi(x), t.influence(p, &cell, x));
                }
                "empirical proportions and cell means of the mediator cells"
            }
            Path::Linear => {
                let f = linear(p, None, true)?;
                let phi = f.phi.unwrap_or_default();
                for x in p.targets() {
                    let u = per_unit(x);
                    out.push(x, u * f.effect, phi.iter().map(|v| u * v).collect());
                }
                out.means_hidden = true;
                "product of the exposure-mediator and mediator-outcome least-squares coefficients"
            }
        };
        out.notes.push(format!("front-door formula by plug-in: {note}"));
        if p.kind != ExposureKind::Binary {
            out.notes
                .push("effect of a one-unit increase in the exposure".into());
        }
        Ok(out)
    }
}
