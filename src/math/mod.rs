//! Numerical methods: Laplace inversion, quadrature, histograms.

/// Euler inversion of Laplace transforms.
pub mod laplace;
/// Gauss rules.
pub mod quadrature;
/// Histograms and percentiles.
pub mod stats;
