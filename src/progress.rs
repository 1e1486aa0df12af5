//! Progress bars on stderr for the steps that can take more than a second: the map's rows,
//! the realisations of a drawn ensemble, the random field's Monte Carlo, the link table and
//! its Monte Carlo checks, a probe's Monte Carlo and the channel-plan search.
//!
//! Bars are off unless [`show`] turns them on (the command line does, except under
//! `--quiet`), so a library caller never gets output it did not ask for. Even when on, a bar
//! draws only when stderr is a terminal (indicatif's own test), so logs and pipes stay clean
//! and nothing a bar does reaches stdout or any file.

use indicatif::{ProgressBar, ProgressStyle};
use std::sync::atomic::{AtomicBool, Ordering};

static SHOWN: AtomicBool = AtomicBool::new(false);

/// Turns the progress bars of this process on or off (off by default).
pub fn show(on: bool) {
    SHOWN.store(on, Ordering::Relaxed);
}

/// Whether [`show`] turned the bars on.
pub fn shown() -> bool {
    SHOWN.load(Ordering::Relaxed)
}

/// A bar of `len` steps counted in `unit`, labelled `what`; hidden when the bars are off.
/// Safe to advance from several threads (`inc` is atomic); the caller ends it with
/// `finish_and_clear` so the terminal keeps only the command's own lines.
pub(crate) fn bar(what: &str, len: u64, unit: &str) -> ProgressBar {
    if shown() { styled(what, len, unit) } else { ProgressBar::hidden() }
}

/// The bar of [`bar`], whether or not the bars are on (for a caller that asked for one
/// itself, as the engine's `Options::progress` does).
pub(crate) fn styled(what: &str, len: u64, unit: &str) -> ProgressBar {
    let b = ProgressBar::new(len);
    let template = format!("{{msg}} [{{bar:40}}] {{pos}}/{{len}} {unit}, {{eta}} left");
    b.set_style(ProgressStyle::with_template(&template).unwrap_or_else(|_| ProgressStyle::default_bar()));
    b.set_message(what.to_string());
    b
}
