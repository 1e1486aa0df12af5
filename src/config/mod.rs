//! Configuration: the scenario file and the node file, parsed and validated.

pub(crate) mod antenna;
pub(crate) mod draw;
pub mod field;
pub(crate) mod keys;
pub(crate) mod nodes;
pub(crate) mod range;
pub(crate) mod raw;
pub(crate) mod scenario;
