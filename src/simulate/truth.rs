//! The true average causal effect of an exposure on an outcome under the
//! simulated model.
//!
//! When every node on a directed path from the exposure to the outcome has a
//! linear Gaussian equation without rounding or clipping, the effect of a
//! one-unit change in the exposure is the sum over directed paths of the
//! products of the path's coefficients (the path rule of Wright 1934, "The
//! method of path coefficients", Ann Math Stat 5:161-215). It is computed by
//! accumulating total effects in topological order, which sums the same
//! products; the paths themselves are listed (up to [`MAX_PATHS`]).
//!
//! Otherwise the effect is estimated by Monte Carlo: each draw evaluates the
//! model twice from the same random numbers (common random numbers), once
//! under each intervention, and the effect is the mean of the differences,
//! with its standard error (sd / sqrt(draws)). For a binary exposure the
//! contrast is do(X = 1) minus do(X = 0); for a continuous one it is a
//! one-unit increase of each unit's own value, do(X = X + 1) minus no
//! intervention (for a linear model both equal the path-rule value).
//! Draws are split into chunks of [`CHUNK`], chunk `c` using stream `c + 1`
//! of the seed's generator, and chunk results are combined in order, so the
//! result does not depend on the number of threads.

use super::rng::Stream;
use super::{Action, Kind, Model, Term};
use crate::graph::{Graph, Node};
use crate::progress::Reporter;
use crate::{Error, Result, Setting};
use rayon::prelude::*;
use serde::Serialize;

/// At most this many paths are listed in a [`Truth`].
pub const MAX_PATHS: usize = 1000;

/// Monte Carlo draws per chunk (one random stream each).
pub const CHUNK: usize = 20_000;

/// Chunks held at a time.
const BATCH: usize = 256;

/// How the true effect was computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Method {
    /// Sum over directed paths of the products of coefficients.
    #[serde(rename = "path rule")]
    PathRule,
    /// Simulation under both interventions with common random numbers.
    #[serde(rename = "monte carlo")]
    MonteCarlo,
}

/// Which two interventions the effect contrasts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Contrast {
    /// do(X = 1) minus do(X = 0), for a binary exposure.
    #[serde(rename = "X=1 vs X=0")]
    OneVsZero,
    /// A one-unit increase of the exposure, for a continuous exposure.
    #[serde(rename = "one-unit increase")]
    UnitIncrease,
}

/// One directed path from the exposure to the outcome.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PathTerm {
    /// Node names from exposure to outcome.
    pub path: Vec<String>,
    /// The coefficient of each edge along the path.
    pub coefficients: Vec<f64>,
    /// Product of the coefficients along the path.
    pub product: f64,
}

/// The true effect of the exposure on the outcome under the model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Truth {
    /// The exposure's name.
    pub exposure: String,
    /// The outcome's name.
    pub outcome: String,
    /// The average causal effect.
    pub effect: f64,
    /// How it was computed.
    pub method: Method,
    /// The interventions contrasted.
    pub contrast: Contrast,
    /// Monte Carlo standard error (`None` for the path rule).
    pub mc_se: Option<f64>,
    /// Monte Carlo draws (`None` for the path rule).
    pub mc_draws: Option<usize>,
    /// Why the path rule did not apply (`None` for the path rule).
    pub mc_reason: Option<String>,
    /// Directed paths with their products (path rule only; at most
    /// [`MAX_PATHS`]).
    pub paths: Vec<PathTerm>,
    /// Number of directed paths from exposure to outcome.
    pub paths_total: u64,
}

/// Settings for the Monte Carlo truth.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TruthOptions {
    /// Number of Monte Carlo draws (each evaluates both interventions).
    pub mc_draws: usize,
    /// Seed of the Monte Carlo generator.
    pub seed: u64,
}

impl Default for TruthOptions {
    fn default() -> Self {
        TruthOptions {
            mc_draws: 1_000_000,
            seed: 1,
        }
    }
}

/// The true effect of `x` on `y` in the model built from `g` with default
/// [`super::Options`] (every edge needs its coefficient).
pub fn true_effect(g: &Graph, x: Node, y: Node, opts: &TruthOptions) -> Result<Truth> {
    Model::new(g, &super::Options::default())?.true_effect(x, y, opts)
}

impl Model {
    /// The true effect of `x` on `y` (see the module overview).
    pub fn true_effect(&self, x: Node, y: Node, opts: &TruthOptions) -> Result<Truth> {
        self.true_effect_reported(x, y, opts, &Reporter::none())
    }

    /// [`Model::true_effect`], reporting the Monte Carlo draws to `progress`.
    pub fn true_effect_reported(
        &self,
        x: Node,
        y: Node,
        opts: &TruthOptions,
        progress: &Reporter,
    ) -> Result<Truth> {
        let g = &self.graph;
        if x == y {
            return Err(Error::input(format!(
                "the exposure and the outcome are the same node '{}'",
                g.name(x)
            )));
        }
        let contrast = match self.eqs[x].kind {
            Kind::Binary => Contrast::OneVsZero,
            Kind::Continuous { .. } => Contrast::UnitIncrease,
            Kind::Categorical { .. } => {
                return Err(Error::input(format!(
                    "exposure '{}' is categorical: the true effect is defined for a binary or continuous exposure",
                    g.name(x)
                )));
            }
        };
        // Nodes strictly after x on some directed path from x to y.
        let from_x = g.descendants(&[x]);
        let to_y = g.ancestors(&[y]);
        let on_path: Vec<bool> = (0..g.len()).map(|v| v != x && from_x[v] && to_y[v]).collect();
        let paths_total = self.count_paths(x, &on_path, y);
        let reason = (0..g.len()).filter(|&v| on_path[v]).find_map(|v| {
            let eq = &self.eqs[v];
            let what = match eq.kind {
                Kind::Binary => "binary",
                _ if eq.round.is_some() => "rounded",
                _ if eq.post_processed() => "clipped (min=/max=)",
                _ => return None,
            };
            Some(if v == y {
                format!("the outcome '{}' is {what}", g.name(v))
            } else {
                format!(
                    "'{}' lies on a directed path from '{}' to '{}' and is {what}",
                    g.name(v),
                    g.name(x),
                    g.name(y)
                )
            })
        });
        let base = Truth {
            exposure: g.name(x).to_string(),
            outcome: g.name(y).to_string(),
            effect: 0.0,
            method: Method::PathRule,
            contrast,
            mc_se: None,
            mc_draws: None,
            mc_reason: None,
            paths: Vec::new(),
            paths_total,
        };
        match reason {
            None => Ok(Truth {
                effect: self.path_rule(x, &on_path, y),
                paths: self.list_paths(x, &on_path, y),
                ..base
            }),
            Some(why) => {
                let (effect, se) = self.monte_carlo(x, y, contrast, opts, progress)?;
                Ok(Truth {
                    effect,
                    method: Method::MonteCarlo,
                    mc_se: Some(se),
                    mc_draws: Some(opts.mc_draws),
                    mc_reason: Some(format!("{why}, so the effect is not a sum of path products")),
                    ..base
                })
            }
        }
    }

    /// The coefficient of the linear term `p -> v`, if there is one.
    fn linear_coef(&self, p: Node, v: Node) -> Option<f64> {
        self.eqs[v].terms.iter().find_map(|t| match t {
            Term::Linear(q, c) if *q == p => Some(*c),
            _ => None,
        })
    }

    /// Total effects t(v) = sum over parents p on the path set of coef(p, v) * t(p),
    /// with t(x) = 1, in topological order.
    fn path_rule(&self, x: Node, on_path: &[bool], y: Node) -> f64 {
        let mut t = vec![0.0; self.graph.len()];
        t[x] = 1.0;
        for &v in &self.order {
            if !on_path[v] {
                continue;
            }
            t[v] = self
                .graph
                .parents(v)
                .iter()
                .filter(|&&p| p == x || on_path[p])
                .map(|&p| self.linear_coef(p, v).unwrap_or(0.0) * t[p])
                .sum();
        }
        if on_path[y] { t[y] } else { 0.0 }
    }

    fn count_paths(&self, x: Node, on_path: &[bool], y: Node) -> u64 {
        let mut c = vec![0u64; self.graph.len()];
        c[x] = 1;
        for &v in &self.order {
            if on_path[v] {
                c[v] = self
                    .graph
                    .parents(v)
                    .iter()
                    .filter(|&&p| p == x || on_path[p])
                    .fold(0u64, |acc, &p| acc.saturating_add(c[p]));
            }
        }
        if on_path[y] { c[y] } else { 0 }
    }

    /// Directed paths from x to y (depth first, children in edge order).
    fn list_paths(&self, x: Node, on_path: &[bool], y: Node) -> Vec<PathTerm> {
        let g = &self.graph;
        let mut out = Vec::new();
        let mut stack: Vec<(Node, usize)> = vec![(x, 0)];
        while let Some(&mut (v, ref mut k)) = stack.last_mut() {
            if out.len() >= MAX_PATHS {
                break;
            }
            if v == y {
                let nodes: Vec<Node> = stack.iter().map(|&(u, _)| u).collect();
                let coefficients: Vec<f64> = nodes
                    .windows(2)
                    .map(|w| self.linear_coef(w[0], w[1]).unwrap_or(0.0))
                    .collect();
                out.push(PathTerm {
                    path: g.names_of(&nodes),
                    product: coefficients.iter().product(),
                    coefficients,
                });
                stack.pop();
                continue;
            }
            match g.children(v).get(*k) {
                Some(&w) => {
                    *k += 1;
                    if on_path[w] {
                        stack.push((w, 0));
                    }
                }
                None => {
                    stack.pop();
                }
            }
        }
        out
    }

    fn monte_carlo(
        &self,
        x: Node,
        y: Node,
        contrast: Contrast,
        opts: &TruthOptions,
        progress: &Reporter,
    ) -> Result<(f64, f64)> {
        if opts.mc_draws < 2 {
            return Err(Error::option(
                Setting::Draws,
                format!("{}: must be at least 2", opts.mc_draws),
            ));
        }
        let (a, b) = match contrast {
            Contrast::OneVsZero => (Some((x, Action::Set(1.0))), Some((x, Action::Set(0.0)))),
            Contrast::UnitIncrease => (Some((x, Action::Shift(1.0))), None),
        };
        let chunks = opts.mc_draws.div_ceil(CHUNK);
        let n = self.graph.len();
        // (count, mean, sum of squared deviations) of chunk c, by Welford's update.
        let chunk = |c: usize| {
            let draws = CHUNK.min(opts.mc_draws - c * CHUNK);
            let mut s = Stream::new(opts.seed, c as u64 + 1);
            let (mut noise, mut va, mut vb) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
            let (mut mean, mut m2) = (0.0, 0.0);
            for i in 0..draws {
                self.draw_noise(&mut s, &mut noise);
                self.evaluate(&noise, a, &mut va);
                self.evaluate(&noise, b, &mut vb);
                let d = va[y] - vb[y];
                let delta = d - mean;
                mean += delta / (i + 1) as f64;
                m2 += delta * (d - mean);
            }
            progress.advance(draws as u64);
            (draws as f64, mean, m2)
        };
        // Chunks run in parallel a batch at a time, so memory stays bounded
        // however many draws are asked for; the combination below is the
        // same, in chunk order.
        progress.start("Monte Carlo draws", opts.mc_draws as u64);
        let (mut cnt, mut mean, mut m2) = (0.0, 0.0, 0.0);
        for first in (0..chunks).step_by(BATCH) {
            let parts: Vec<(f64, f64, f64)> = (first..chunks.min(first + BATCH))
                .into_par_iter()
                .map(chunk)
                .collect();
            // Pairwise combination of Chan, Golub & LeVeque (1979), in chunk order.
            for (nb, mb, m2b) in parts {
                let tot = cnt + nb;
                let delta = mb - mean;
                mean += delta * nb / tot;
                m2 += m2b + delta * delta * cnt * nb / tot;
                cnt = tot;
            }
        }
        progress.finish();
        if !mean.is_finite() || !m2.is_finite() {
            return Err(Error::Numerical(format!(
                "the Monte Carlo truth for '{}' overflowed (coefficients too large?)",
                self.graph.name(y)
            )));
        }
        let sd = (m2 / (cnt - 1.0)).sqrt();
        Ok((mean, sd / cnt.sqrt()))
    }
}
