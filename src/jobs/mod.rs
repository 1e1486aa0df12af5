//! Jobs: what each command computes.

pub mod assign;
pub mod install;
pub mod links;

pub mod probe;
pub mod spacing;
pub mod weather;
pub(crate) mod zones;
