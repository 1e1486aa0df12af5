//! Typed errors. Bad input is reported as a list of [`Problem`]s, all at once.

use std::fmt;
use std::path::PathBuf;

/// One thing wrong with the input: where it is and what would be accepted.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// The file the problem is in.
    pub file: String,
    /// The feature (index and id) or table the problem is in, when there is one.
    pub feature: Option<String>,
    /// The field (key) that is wrong.
    pub field: String,
    /// What is wrong: the value and the allowed range.
    pub message: String,
}

impl Problem {
    /// A problem in `file`, optionally in a feature, at `field`.
    pub fn new(
        file: impl Into<String>,
        feature: Option<String>,
        field: impl Into<String>,
        message: impl Into<String>,
    ) -> Self {
        Problem { file: file.into(), feature, field: field.into(), message: message.into() }
    }

    /// A problem with a command-line flag (`--name`) or argument.
    pub fn flag(flag: impl Into<String>, message: impl Into<String>) -> Self {
        Problem::new("(command line)", None, flag, message)
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let Some(feat) = &self.feature {
            write!(f, ": {feat}")?;
        }
        write!(f, ": field `{}`: {}", self.field, self.message)
    }
}

/// A model parameter that cannot be used: which parameter (its name in the model, such as
/// `exponent` or `k_db`) and what is allowed. The configuration layer adds the file and
/// table, the command line the flag.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelError {
    /// The parameter's name in the model.
    pub key: &'static str,
    /// What is wrong: the value and the allowed range.
    pub message: String,
}

impl ModelError {
    /// A parameter `key` whose `value` lies outside `range` (printed like `[1, 8]`).
    pub fn out_of_range(key: &'static str, value: f64, range: impl fmt::Display) -> Self {
        ModelError { key, message: format!("value {value} is outside the allowed range {range}") }
    }
}

/// Everything the library can fail with.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The input (scenario, node file, command-line values) is invalid.
    #[error("{} problem(s) in the input:\n{}", .0.len(), list(.0))]
    Input(Vec<Problem>),
    /// An output could not be written.
    #[error("cannot write output {}: {source} (choose a writable folder with --out)", path.display())]
    Output {
        /// The path that could not be written.
        path: PathBuf,
        /// The underlying I/O error.
        source: std::io::Error,
    },
    /// An input file could not be read.
    #[error("cannot read {}: {source}", path.display())]
    Read {
        /// The path that could not be read.
        path: PathBuf,
        /// The underlying I/O error.
        source: std::io::Error,
    },
}

fn list(problems: &[Problem]) -> String {
    problems.iter().map(|p| format!("  - {p}")).collect::<Vec<_>>().join("\n")
}

impl Error {
    /// A single input problem as an error.
    pub fn input(p: Problem) -> Self {
        Error::Input(vec![p])
    }
}

/// Collects problems so that all of them are reported together.
#[derive(Debug, Default)]
pub struct Problems(pub Vec<Problem>);

impl Problems {
    /// Records a problem.
    pub fn push(&mut self, p: Problem) {
        self.0.push(p);
    }
    /// `Ok(())` when nothing was recorded, otherwise [`Error::Input`] with every problem.
    pub fn into_result(self) -> Result<(), Error> {
        if self.0.is_empty() { Ok(()) } else { Err(Error::Input(self.0)) }
    }
    /// Whether nothing has been recorded.
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }
}
