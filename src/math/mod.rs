//! Numerical methods: Laplace inversion, quadrature, histograms.

pub mod laplace;
pub mod quadrature;
pub mod stats;
