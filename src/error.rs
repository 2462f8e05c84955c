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
    /// A value of a multi-snapshot record was NaN or infinite.
    #[error(
        "{what} {index}, snapshot {snapshot}, is not finite ({value}): remove or repair the value"
    )]
    NonFiniteSnapshot {
        /// What the index counts, in the user's terms (`"sample index n ="` for sensors).
        what: &'static str,
        /// The sensor (or coefficient) index, as the user numbered it.
        index: i64,
        /// The snapshot, numbered from 0.
        snapshot: usize,
        /// The offending value, printed.
        value: String,
    },
    /// The same index was given twice.
    #[error("{what} {index} appears more than once: each must be given once")]
    DuplicateIndex {
        /// What the index counts, in the user's terms: `"frequency index k ="` or `"sample index n ="`.
        what: &'static str,
        /// The repeated index, as the user numbered it.
        index: i64,
    },
    /// An index lies outside the declared band or record.
    #[error("{what} {index} lies outside {range}: {advice}")]
    IndexOutOfBand {
        /// What the index counts, in the user's terms: `"frequency index k ="` or `"sample index n ="`.
        what: &'static str,
        /// The offending index, as the user numbered it.
        index: i64,
        /// The admissible range, in words (e.g. `"the band -8..=8"`).
        range: String,
        /// What to do about it.
        advice: &'static str,
    },
    /// A time record whose samples all share one index: it spans no time, so it holds no frequency
    /// information.
    #[error(
        "the record holds samples at the single index n = {index}: at least two samples at \
         different indices are needed"
    )]
    SingleSample {
        /// The one sample index, as the user numbered it.
        index: i64,
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
    /// The method needs a contiguous run of samples and the measured set has gaps.
    #[error(
        "{method} needs a contiguous run of samples, but the measured set has gaps ({measured} of \
         the {span} indices {first}..={last} are measured); {advice}"
    )]
    NeedsContiguous {
        /// The method or step.
        method: &'static str,
        /// How many indices are measured.
        measured: usize,
        /// How many indices the span from the first to the last holds.
        span: usize,
        /// First measured index, as the user numbered it.
        first: i64,
        /// Last measured index, as the user numbered it.
        last: i64,
        /// What to use instead.
        advice: &'static str,
    },
    /// The longest contiguous run of samples is shorter than the method needs.
    #[error(
        "{method} needs at least {needed} contiguous samples, but the longest run has {found}; \
         {advice}"
    )]
    RunTooShort {
        /// The method or step.
        method: &'static str,
        /// Samples in the longest contiguous run.
        found: usize,
        /// Samples needed.
        needed: usize,
        /// What to do instead.
        advice: &'static str,
    },
    /// More unknowns than the data can determine.
    #[error("{what}: {unknowns} real unknowns but only {equations} real data values; {advice}")]
    Underdetermined {
        /// The quantity being fitted.
        what: &'static str,
        /// Real unknowns.
        unknowns: usize,
        /// Real data values.
        equations: usize,
        /// What to do about it.
        advice: &'static str,
    },
    /// The problem is past what the method can handle within its documented limits; refused before
    /// any large allocation.
    #[error("{method}: {what} needs {needed}, above the limit of {limit}; {advice}")]
    TooLarge {
        /// The method or step.
        method: &'static str,
        /// What would be too large (e.g. `"the FFT grid"`).
        what: String,
        /// What it would need, in words with units.
        needed: String,
        /// The limit, in words with units.
        limit: String,
        /// What to use instead (names the methods that can handle the record).
        advice: String,
    },
    /// An option was asked of a method that does not take it.
    #[error("method '{method}' takes no {option}; the methods that take one are {takers}")]
    OptionNotTaken {
        /// The method's name.
        method: String,
        /// The option, in words (e.g. `"model order"`).
        option: &'static str,
        /// The methods that take it, comma-separated.
        takers: String,
    },
    /// A multi-snapshot record was given to a method that takes one record at a time.
    #[error(
        "method '{method}' takes one record at a time, not a multi-snapshot record; the methods \
         that take snapshots are {takers}"
    )]
    SnapshotsNotTaken {
        /// The method's name.
        method: String,
        /// The methods that take snapshots, comma-separated.
        takers: &'static str,
    },
    /// The noise-level estimate cannot tell noise from lines: the record holds more lines than the
    /// Hankel subspace can set aside (it needs fewer than half its window) — more stand above the
    /// spectrum's noise floor than it can set aside, or the singular values left as noise spread far
    /// below the edge white noise would give (`crate::noise`, module docs).
    #[error(
        "the noise-level estimate cannot tell the noise from the lines: the record seems to hold more \
         lines than it can set aside (the Hankel subspace of {window} rows set aside {components}; \
         it needs fewer lines than half its window), so its level would be the lines' leakage; give \
         the noise level explicitly (sigma; 0 for exact data)"
    )]
    TooManyLinesForNoise {
        /// Components the Hankel subspace set aside.
        components: usize,
        /// Rows of its Hankel window.
        window: usize,
    },
    /// The method needs a positive noise level and none was given or could be found.
    #[error("method '{method}' needs a positive noise level: {advice}")]
    NeedsNoiseLevel {
        /// The method's name.
        method: &'static str,
        /// What to do instead.
        advice: &'static str,
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
    #[error(
        "{source_name}{}: {message}",
        if *line == 0 { String::new() } else { format!(", line {line}") }
    )]
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
