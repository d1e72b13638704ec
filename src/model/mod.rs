//! The model stage: weighted least squares and logistic regression over a
//! design given as [`Rows`](crate::data::Rows), on nalgebra.
//!
//! Both fits accumulate the cross-product `X'WX` block by block
//! ([`accumulate`]), so no `n x n` matrix is made, and the `n x p` design
//! is held in memory only when it fits the budget of
//! [`Store`](crate::data::Store). Aliased (collinear or constant) columns are found by a Cholesky
//! factorization that skips columns whose residual sum of squares, given the
//! columns before them, is a negligible share of their own ([`Chol`]); their
//! coefficients are 0.
//!
//! - [`Ols`]: least squares with frequency weights, classic and HC0
//!   (White 1980, Econometrica 48:817-838) standard errors.
//! - [`Logit`]: logistic regression by Newton-Raphson (iteratively
//!   reweighted least squares; McCullagh & Nelder, *Generalized Linear
//!   Models*, 2nd ed., 1989, sec. 4.4) with step-halving, warm starts, and
//!   detection of complete or quasi-complete separation (Albert & Anderson,
//!   Biometrika 1984;71:1-10) as a typed [`Separation`]; [`Logit::refit`]
//!   refits a bootstrap resample from a converged fit by quasi-Newton steps
//!   (BFGS updates of its inverse information).
//! - [`Multinomial`]: baseline-category logistic regression for a response
//!   with more than two levels, by the same Newton scheme.

mod chol;
mod cross;
mod logistic;
mod multinomial;
mod ols;
mod predict;

pub use chol::Chol;
pub use cross::{Cross, accumulate, score};
pub use logistic::{Logit, LogitOptions, Refit, Separation};
pub use multinomial::Multinomial;
pub use ols::Ols;
pub use predict::{linear_predictor, weighted_sum};

/// Relative residual sum of squares below which a column counts as aliased.
pub const ALIAS_TOL: f64 = 1e-10;
