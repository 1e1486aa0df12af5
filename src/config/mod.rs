//! Configuration: the scenario file and the node file, parsed and validated.

/// The node file.
pub mod nodes;
/// The scenario file.
pub mod scenario;
