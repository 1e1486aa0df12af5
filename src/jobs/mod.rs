//! Jobs: what each command computes.

pub mod install;
pub mod links;

pub mod probe;
pub(crate) mod zones;
