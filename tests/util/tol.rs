//! Named tolerances of the integration tests, each with the reason for its size. A test
//! states which one it uses; a new tolerance is added here with its justification.

/// Monte Carlo: a seeded estimate must lie within this many standard errors of the value it
/// estimates (for a normal estimate, P(|Z| > 4) = 6.3e-5 per check).
pub const SIGMAS: f64 = 4.0;

/// Sample variances: their relative standard error is itself estimated from the sample
/// (fourth cumulant), so one more standard error is allowed.
pub const VARIANCE_SIGMAS: f64 = 5.0;

/// Hand calculations in dB written to four decimals: half a unit in the third place.
pub const HAND_DB: f64 = 0.005;

/// Hand calculations to three decimals (noise levels): one unit in the third place.
pub const HAND_MILLI_DB: f64 = 0.001;

/// Float32 engine against the float64 reference at the same cell: tens of float32 products
/// and sums in mW and the approximated log2/exp2 (1e-6 relative each) stay below 0.02 dB.
pub const ENGINE_F32_DB: f64 = 0.02;

/// Float32 coverage layer against the float64 coverage at the same cell, absolute.
pub const ENGINE_F32_PROBABILITY: f64 = 0.003;

/// Values pasted from scipy or statrs with ten or more significant digits.
pub const LIBRARY_VALUE: f64 = 1e-10;

/// Identities that hold up to floating-point rounding of a few operations.
pub const ROUNDING: f64 = 1e-9;

/// Identities that hold to the last bits (a copy or one rounding).
pub const EXACT: f64 = 1e-12;

/// Values printed with two decimals and compared after one subtraction.
pub const TWO_DECIMALS: f64 = 0.02;

/// Bearings of the tangent plane against geodesic azimuths within a few km, degrees (the
/// meridian convergence is second order there).
pub const BEARING_DEG: f64 = 0.01;

/// Plane distances against geodesic distances at 1 km, metres (a few ppm).
pub const PLANE_DISTANCE_M: f64 = 0.1;

/// The gamma quantile solver stops at 1e-9 in probability; in x that is within 1e-6 relative
/// for the shapes tested.
pub const QUANTILE_RELATIVE: f64 = 1e-6;

/// A disc of radius R against the infinite plane: the truncated tail λ·2π·s·E[G]·R^(2−α)/(α−2)
/// is about 1e-6 in the tests, so 1e-5 covers it.
pub const DISC_TRUNCATION: f64 = 1e-5;

/// The planning searches bisect to 1e-6 relative density; with the inversion error (1e-9)
/// the exceedance at the answer is the target within 2e-3.
pub const PLANNING_EXCEEDANCE: f64 = 2e-3;
