//! Configuration: the scenario file and the node file, parsed and validated.

pub(crate) mod antenna;
pub mod context;
pub(crate) mod draw;
pub mod field;
pub(crate) mod keys;
pub(crate) mod nodes;
pub(crate) mod range;
pub(crate) mod raw;
pub(crate) mod scenario;
pub(crate) mod surface;

/// Reads an input file as text, refusing anything but a regular file (a FIFO would block for
/// ever, a device or a folder is never an input).
pub(crate) fn read_input(path: &std::path::Path) -> std::io::Result<String> {
    let m = std::fs::metadata(path)?;
    if !m.is_file() {
        return Err(std::io::Error::other("not a regular file (a folder, FIFO or device is not an input)"));
    }
    let bytes = std::fs::read(path)?;
    String::from_utf8(bytes).map_err(|e| {
        let ok = e.utf8_error().valid_up_to();
        let before = &e.as_bytes()[..ok];
        let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
        let col = String::from_utf8_lossy(before.rsplit(|&b| b == b'\n').next().unwrap_or(&[])).chars().count() + 1;
        std::io::Error::other(format!(
            "not valid UTF-8 at line {line}, column {col} (byte {ok}); save the file as UTF-8"
        ))
    })
}
