//! The commands: load, compute through the jobs, write through the writers, all staged and
//! committed together. The command-line front end calls these.

pub mod aggregate;
pub mod assign;
pub mod demo;
pub mod draw;
pub mod links;
pub mod map;
pub mod merge;
pub mod tiles;

/// Removes the temporaries of every run in this process (for a SIGINT/SIGTERM handler: the
/// binary calls it before exiting; the next run into a folder also removes what a killed run
/// left there).
pub fn remove_temporaries() {
    crate::io::staging::remove_pending();
}
