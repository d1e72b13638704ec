//! Inference: uncertainty around an estimate. [`bootstrap`] is the generic
//! nonparametric bootstrap (Efron 1979; BCa intervals after Efron 1987),
//! written once for every estimator. The normal and Student t quantiles the
//! intervals use are in [`crate::dist`], a shared low-level module, so that
//! every stage takes them from one place.

pub mod bootstrap;
pub mod pool;
