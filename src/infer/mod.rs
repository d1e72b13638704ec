//! Inference: uncertainty around an estimate. [`bootstrap`] is the generic
//! nonparametric bootstrap (Efron 1979; BCa intervals after Efron 1987),
//! written once for every estimator; [`dist`] holds the normal and Student t
//! quantiles the intervals use.

pub mod bootstrap;
pub mod dist;
