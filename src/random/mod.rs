//! Random fields: point processes, the aggregate-interference field, Monte Carlo, characterisation.

/// Cumulants, gamma fit, exact law and planning.
pub mod characterise;
/// The random-field model.
pub mod field;
/// One random layout for a scenario.
pub mod layout;
/// Monte Carlo of the field.
pub mod montecarlo;
/// Highest density and smallest guard for an outage target.
pub mod planning;
/// Poisson points and thinning.
pub mod points;
