//! The commands: load, compute through the jobs, write through the writers, all staged and
//! committed together. The command-line front end calls these.

pub mod aggregate;
pub mod demo;
pub mod draw;
pub mod links;
pub mod map;
