//! Many records at once: one estimator, many [`Measurements`], estimated in parallel with rayon.
//!
//! Each record is estimated on its own, exactly as [`Estimator::estimate`] would do it one by one,
//! so a batch result equals the one-by-one results (every field except the wall-clock
//! [`crate::Diagnostics::solve_seconds`]) whatever the number of threads: the estimators share no
//! state between calls, draw no unseeded random numbers and run single-threaded inside one estimate.
//! Results come back in input order; a record that fails gives its own `Err` and does not stop the
//! others.
//!
//! The work runs on rayon's current thread pool: the global one (all cores by default), or a pool of
//! your own through [`rayon::ThreadPool::install`].
//!
//! ```
//! use finespike::batch::estimate_batch;
//! use finespike::{Scenario, Sfw};
//! // Invented scenes: 2 spikes at fc = 12, 2.5/fc apart, exact data, seeds 1..=6.
//! let records: Vec<_> = (1..=6)
//!     .map(|seed| Scenario::new(12, 2).with_separation(2.5).with_seed(seed).generate())
//!     .collect::<Result<Vec<_>, _>>()?
//!     .into_iter()
//!     .map(|sample| sample.data)
//!     .collect();
//! let results = estimate_batch(&Sfw::exact(), &records);
//! assert_eq!(results.len(), 6);
//! for result in &results {
//!     assert_eq!(result.as_ref().map(|e| e.spikes.len()).ok(), Some(2));
//! }
//! # Ok::<(), finespike::Error>(())
//! ```

use crate::error::Result;
use crate::estimator::{ArrayEstimate, Estimate, Estimator};
use crate::model::{Measurements, Snapshots};
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Estimate every record with `estimator`, in parallel; results in input order.
///
/// See the module docs for what makes the result independent of the number of threads.
pub fn estimate_batch(
    estimator: &dyn Estimator,
    records: &[Measurements],
) -> Vec<Result<Estimate>> {
    estimate_batch_with_progress(estimator, records, |_, _| {})
}

/// [`estimate_batch`] with a progress report: `progress(done, total)` is called once after each
/// record finishes, from the worker thread that finished it, with `done` counting up to `total`
/// (each value once, though calls from different threads may arrive out of order).
///
/// ```
/// use finespike::batch::estimate_batch_with_progress;
/// use finespike::{Esprit, Scenario};
/// use std::sync::atomic::{AtomicUsize, Ordering};
/// // Invented scenes: 3 lines at fc = 10, 2/fc apart, exact data.
/// let records = (0..4)
///     .map(|seed| Ok(Scenario::new(10, 3).with_seed(seed).generate()?.data))
///     .collect::<finespike::Result<Vec<_>>>()?;
/// let calls = AtomicUsize::new(0);
/// let results = estimate_batch_with_progress(&Esprit::default(), &records, |done, total| {
///     assert!(done >= 1 && done <= total);
///     calls.fetch_add(1, Ordering::Relaxed);
/// });
/// assert_eq!(results.len(), 4);
/// assert_eq!(calls.load(Ordering::Relaxed), 4);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn estimate_batch_with_progress<F>(
    estimator: &dyn Estimator,
    records: &[Measurements],
    progress: F,
) -> Vec<Result<Estimate>>
where
    F: Fn(usize, usize) + Sync,
{
    let total = records.len();
    let done = AtomicUsize::new(0);
    records
        .par_iter()
        .map(|data| {
            let result = estimator.estimate(data);
            let finished = done.fetch_add(1, Ordering::Relaxed) + 1;
            progress(finished, total);
            result
        })
        .collect()
}

/// Estimate every multi-snapshot record (array data) with `estimator`, in parallel; results in input
/// order. The array counterpart of [`estimate_batch`], with the same guarantees: each result equals
/// [`Estimator::estimate_snapshots`] on that record alone (every field except the wall-clock
/// seconds), whatever the number of threads; a method that takes no snapshots gives each record
/// its `Err`.
pub fn estimate_snapshots_batch(
    estimator: &dyn Estimator,
    records: &[Snapshots],
) -> Vec<Result<ArrayEstimate>> {
    records
        .par_iter()
        .map(|data| estimator.estimate_snapshots(data))
        .collect()
}
