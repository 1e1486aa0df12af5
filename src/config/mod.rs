//! Configuration: the scenario file and the node file, parsed and validated.

/// The `[antenna]` table.
pub mod antenna;
/// The `[draw]` table.
pub mod draw;
/// The random field's raw parameters.
pub mod field;
/// The node file.
pub mod nodes;
/// Allowed numeric ranges.
pub mod range;
/// Raw serde tables.
pub mod raw;
/// The scenario file.
pub mod scenario;
