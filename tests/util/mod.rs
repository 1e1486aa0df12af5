//! Helpers shared by the integration tests (and, for the fixtures, by the benchmarks).
#![allow(dead_code)]

pub mod fixtures;
pub mod run;
pub mod tol;

pub use run::{run, stderr};
