//! Numerical methods: Laplace inversion, quadrature, histograms, vectorisable log2/exp2 and
//! the run-time choice of instruction set for vectorised loops.

pub(crate) mod fastmath;
pub mod laplace;
pub mod quadrature;
pub(crate) mod simd;
pub mod special;
pub mod stats;
