//! Checking a graph against data: the conditional independencies the graph
//! implies among observed variables ([`implications`]), each tested on the
//! data.

pub mod implications;

pub use implications::{Implication, implications};
