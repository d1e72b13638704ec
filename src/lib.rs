//! causeway: estimate the causal effect of an exposure on an outcome from
//! observational data, under a causal graph that the analyst declares.
//!
//! The library is a one-way pipeline; each stage is a module that only uses
//! the stages before it:
//!
//! graph file -> [`graph`] -> [`identify`] -> analysis plan -> [`data`] ->
//! [`model`] -> [`problem`] -> [`learn`] (nuisance models) -> [`estimate`]
//! (estimators: targets with influence functions, contrasts) -> [`infer`]
//! (variance: sandwich and bootstrap) -> [`sensitivity`] -> [`report`].
//!
//! An estimate is only as valid as the declared graph and the usual
//! assumptions (no unmeasured confounding beyond the graph, positivity,
//! consistency, correctly specified models).
#![warn(missing_docs)]

pub mod analysis;
pub mod check;
pub mod data;
pub mod dist;
pub mod error;
pub mod estimate;
pub mod graph;
pub mod identify;
pub mod impute;
pub mod infer;
pub mod learn;
pub mod maths;
pub mod model;
pub mod plan;
pub mod problem;
pub mod progress;
pub mod random;
pub mod report;
pub mod resources;
pub mod sensitivity;
pub mod simulate;
pub mod survival;

pub use error::{Advice, Error, Phrasing, Remedy, Result, Setting, Words};
