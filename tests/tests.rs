//! The integration tests, one target: each module checks one part of the job against an
//! outside reference named beside the check; `util` holds the shared fixtures, the
//! binary runner and the named tolerances.

mod util;

mod aggregate;
mod assign;
mod cli;
mod coverage;
mod farfield;
mod faults;
mod handoff;
mod physics;
mod random;
mod report;
mod spectrum;
mod surface;
mod tiles;
mod weather;
