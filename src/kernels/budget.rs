//! Memory and work budgets of the kernels: what a step will need, checked against documented limits
//! before anything large is allocated, so that a record too long for a method is refused at once
//! with [`Error::TooLarge`] instead of exhausting memory or running for hours.

use crate::error::{Error, Result};

/// Largest working memory one step of a subspace method or of the noise-level estimate may take:
/// 1 GiB (the matrices the step allocates, counted from their dimensions; the record itself is not
/// counted).
pub const MEMORY_LIMIT_BYTES: f64 = (1u64 << 30) as f64;

/// Largest arithmetic work of one step, in complex multiply–adds: 2^38 ≈ 2.7e11. The streamed Hankel
/// QR ran at about 4.5e9 complex multiply–adds per second on the 2-core reference machine (faer;
/// the noise-level estimate at `N = 100 000`, 1.5e10 multiply–adds in 3.3 s, measured with
/// `examples/long_record_memory.rs`), so a step at the limit takes about a minute. With the default
/// 256-row window the noise-level estimate and the order choice reach it at about 1.8 million
/// samples.
pub const WORK_LIMIT: f64 = (1u64 << 38) as f64;

/// Bytes of one complex double.
pub(crate) const COMPLEX_BYTES: f64 = 16.0;

/// What a step needs: working memory in bytes and arithmetic in complex multiply–adds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Cost {
    pub bytes: f64,
    pub work: f64,
}

impl Cost {
    /// A cost of `entries` complex numbers and `work` multiply–adds.
    pub(crate) fn new(entries: f64, work: f64) -> Self {
        Cost {
            bytes: entries * COMPLEX_BYTES,
            work,
        }
    }

    /// The larger memory and the sum of the work of two steps run one after the other.
    pub(crate) fn then(self, other: Cost) -> Cost {
        Cost {
            bytes: self.bytes.max(other.bytes),
            work: self.work + other.work,
        }
    }

    /// `Ok` within [`MEMORY_LIMIT_BYTES`] and [`WORK_LIMIT`]; otherwise [`Error::TooLarge`] for
    /// `method`, saying `what` would be too large and `advice` (which names the methods or settings
    /// that can handle the record).
    pub(crate) fn check(
        self,
        method: &'static str,
        what: impl FnOnce() -> String,
        advice: &str,
    ) -> Result<()> {
        let too_large = |needed: String, limit: String| Error::TooLarge {
            method,
            what: what(),
            needed,
            limit,
            advice: advice.to_string(),
        };
        if self.bytes.is_nan() || self.bytes > MEMORY_LIMIT_BYTES {
            return Err(too_large(
                format!("{} of working memory", bytes_in_words(self.bytes)),
                format!("{} per step", bytes_in_words(MEMORY_LIMIT_BYTES)),
            ));
        }
        if self.work.is_nan() || self.work > WORK_LIMIT {
            return Err(too_large(
                format!("about {:.1e} complex multiply-adds", self.work),
                format!("{WORK_LIMIT:.1e} per step (about a minute)"),
            ));
        }
        Ok(())
    }
}

/// A byte count as people write it: `"512 MB"`, `"3.2 GB"`.
pub(crate) fn bytes_in_words(bytes: f64) -> String {
    const MB: f64 = 1024.0 * 1024.0;
    const GB: f64 = 1024.0 * MB;
    if bytes >= GB {
        format!("{:.1} GB", bytes / GB)
    } else {
        format!("{:.0} MB", (bytes / MB).max(1.0))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn costs_are_checked_against_both_limits() {
        assert!(Cost::new(1e6, 1e9).check("x", String::new, "").is_ok());
        let memory = Cost::new(1e8, 1.0).check("esprit", || "the matrix".into(), "use y");
        match memory {
            Err(Error::TooLarge {
                method,
                what,
                needed,
                advice,
                ..
            }) => {
                assert_eq!(
                    (method, what.as_str(), advice.as_str()),
                    ("esprit", "the matrix", "use y")
                );
                assert_eq!(needed, "1.5 GB of working memory");
            }
            other => panic!("{other:?}"),
        }
        assert!(matches!(
            Cost::new(1.0, 1e12).check("x", String::new, ""),
            Err(Error::TooLarge { .. })
        ));
        assert!(Cost::new(f64::NAN, 1.0)
            .check("x", String::new, "")
            .is_err());
        let both = Cost::new(10.0, 5.0).then(Cost::new(20.0, 7.0));
        assert_eq!((both.bytes, both.work), (320.0, 12.0));
        assert_eq!(bytes_in_words(3.0 * 1024.0 * 1024.0), "3 MB");
    }
}
