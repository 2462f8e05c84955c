//! The crate's error type: every bad input is reported here, with the offending value and the rule it broke.

use thiserror::Error;

/// Errors returned by finespike: invalid input, unsupported requests, malformed files.
///
/// Solver trouble (iteration limits, numerical failure) is *not* an error: it is reported in
/// [`crate::Status`] so that a partial answer is still available.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum Error {
    /// An input that must hold at least one element was empty.
    #[error("{what} is empty: at least one value is needed")]
    Empty {
        /// What was empty.
        what: &'static str,
    },
    /// A value was NaN or infinite.
    #[error("{what} at position {index} is not finite ({value}): remove or repair the sample")]
    NonFinite {
        /// Which input held the value.
        what: &'static str,
        /// Zero-based position in the input.
        index: usize,
        /// The offending value, printed.
        value: String,
    },
    /// The same frequency index was given twice.
    #[error("frequency index k = {k} appears more than once: each measured coefficient must be given once")]
    DuplicateIndex {
        /// The repeated index.
        k: i64,
    },
    /// A frequency index lies outside the declared band.
    #[error("frequency index k = {k} lies outside the band {kmin}..={kmax}: raise the cutoff or drop the sample")]
    IndexOutOfBand {
        /// The offending index.
        k: i64,
        /// Lowest index of the band.
        kmin: i64,
        /// Highest index of the band.
        kmax: i64,
    },
    /// The cutoff frequency was zero (no resolution at all).
    #[error("the cutoff frequency fc is 0: at least fc = 1 (three coefficients) is needed")]
    ZeroCutoff,
    /// Two inputs that must have the same length do not.
    #[error("{what}: {left} values against {right}; the lengths must agree")]
    LengthMismatch {
        /// What was compared.
        what: &'static str,
        /// First length.
        left: usize,
        /// Second length.
        right: usize,
    },
    /// A method name that no estimator answers to.
    #[error("unknown method '{name}': known methods are {known}")]
    UnknownMethod {
        /// The name asked for.
        name: String,
        /// The names that exist, comma-separated.
        known: String,
    },
    /// A setting outside its valid range.
    #[error("setting {name} = {value} is invalid: {rule}")]
    InvalidSetting {
        /// The setting's name.
        name: &'static str,
        /// Its value, printed.
        value: String,
        /// The rule it broke.
        rule: &'static str,
    },
    /// The method cannot handle this kind of data.
    #[error("method '{method}' cannot handle this data: {reason}")]
    Unsupported {
        /// The method's name.
        method: String,
        /// Why, and what to use instead.
        reason: String,
    },
    /// A linear-algebra step failed (singular system, failed decomposition).
    #[error("numerical failure in {step}: {detail}")]
    Numerical {
        /// Which step.
        step: &'static str,
        /// What went wrong.
        detail: String,
    },
    /// A malformed input file or record.
    #[error("{source_name}, line {line}: {message}")]
    Parse {
        /// File name (or `<input>`).
        source_name: String,
        /// One-based line number (0 when not tied to a line).
        line: usize,
        /// What was found and what was expected.
        message: String,
    },
}

/// Shorthand for `Result<T, finespike::Error>`.
pub type Result<T> = std::result::Result<T, Error>;

impl Error {
    /// [`Error::InvalidSetting`] for setting `name` of value `value` that broke `rule`.
    pub(crate) fn invalid(name: &'static str, value: impl ToString, rule: &'static str) -> Self {
        Error::InvalidSetting {
            name,
            value: value.to_string(),
            rule,
        }
    }
}

/// Checks shared by the settings setters of every estimator.
pub(crate) mod check {
    use super::{Error, Result};

    /// An iteration limit: at least 1.
    pub(crate) fn iterations(name: &'static str, n: usize) -> Result<usize> {
        if n == 0 {
            return Err(Error::invalid(name, n, "must be at least 1"));
        }
        Ok(n)
    }

    /// A value that must satisfy `ok`; callers write `ok` so that NaN fails it (range tests such as
    /// `(lo..=hi).contains(&v)` and comparisons do).
    pub(crate) fn that<T: ToString>(
        name: &'static str,
        v: T,
        ok: bool,
        rule: &'static str,
    ) -> Result<T> {
        if !ok {
            return Err(Error::invalid(name, v, rule));
        }
        Ok(v)
    }

    /// A time limit in seconds: positive (`f64::INFINITY` for none).
    pub(crate) fn seconds(name: &'static str, s: f64) -> Result<f64> {
        if s.is_nan() || s <= 0.0 {
            return Err(Error::invalid(name, s, "must be positive"));
        }
        Ok(s)
    }
}
