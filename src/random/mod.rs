//! Random fields: point processes, the aggregate-interference field, Monte Carlo, characterisation.

pub mod blockage;
pub mod characterise;
pub mod field;
pub mod layout;
pub mod montecarlo;
pub mod planning;
pub mod points;
