//! Jobs: what each command computes.

/// The installer sheet.
pub mod install;
/// Planned links.
pub mod links;

/// The breakdown at one point.
pub mod probe;
