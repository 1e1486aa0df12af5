//! The commands: load, compute through the jobs, write through the writers, all staged and
//! committed together. The command-line front end calls these.

/// The `aggregate` command's outputs.
pub mod aggregate;
/// The bundled demo.
pub mod demo;
/// The `links` command.
pub mod links;
/// The `map` command.
pub mod map;
