//! Running the `lobemap` binary from the tests.

use std::process::{Command, Output};

/// The `lobemap` binary, run from the repository folder (so `sites/…` paths resolve).
/// `LOBEMAP_TEST_BIN` runs another build instead (to count an older build's failures).
pub fn bin() -> Command {
    let path = std::env::var("LOBEMAP_TEST_BIN").unwrap_or_else(|_| env!("CARGO_BIN_EXE_lobemap").to_string());
    let mut c = Command::new(path);
    c.current_dir(env!("CARGO_MANIFEST_DIR"));
    c
}

/// Runs `lobemap` with `args` and waits for it.
pub fn run(args: &[&str]) -> Output {
    bin().args(args).output().unwrap()
}

/// The standard error of a run, as text.
pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}
