//! Benchmark campaigns: a grid of conditions × methods × draws run in parallel, tidy per-trial
//! records and per-condition summaries with confidence intervals. Built on [`super::sweep::run`]
//! (timing and scoring one estimate, with the Cramér–Rao bound of the true lines) and
//! [`crate::registry::configure`].
//!
//! # The plan (JSON, our own layout)
//!
//! ```json
//! {
//!   "seed": 7,
//!   "draws": 20,
//!   "grid": {
//!     "bands": [{"fc": 16}, {"samples": 64}],
//!     "separations": [0.5, 1.0, 2.0],
//!     "separation_unit": "record",
//!     "spikes": [2, 4],
//!     "snr_db": [null, 20.0],
//!     "amplitudes": ["random_phase", "real_positive", "alternating_sign"],
//!     "gaps": [0.0]
//!   },
//!   "methods": [
//!     {"name": "sdp"},
//!     {"name": "esprit", "order": "chosen", "noise": "estimated", "label": "esprit-mdl"}
//!   ],
//!   "exact_tolerance": 1e-3
//! }
//! ```
//!
//! Array snapshots are a band of their own, `{"array": {"sensors": 16, "snapshots": 20}}`, with
//! two more grid lists that only arrays use: `"correlations"` (`"uncorrelated"`, `"coherent"`,
//! `{"correlated": 0.9}`; default uncorrelated) and `"spacing"` (element spacing in wavelengths,
//! default none). Their separations are in `1/M`, their gaps are missing sensors, their amplitudes
//! are complex Gaussian per snapshot (only `random_phase` applies), and the methods run through
//! [`crate::Estimator::estimate_snapshots`] ([`draw_array_scene`]); errors over `√CRB` use the
//! conditional bound of the drawn amplitudes.
//!
//! Every combination of the grid's lists is a condition ([`Plan::conditions`]; a combination with
//! more spikes than fit at that spacing is left out with a note). Separations are the spacing of
//! neighbouring spikes in the record's resolution `1/N` (`"separation_unit": "record"`, the default)
//! or in `1/fc` (`"fc"`, `fc = (N − 1)/2`). `snr_db: null` is exact data. Methods get the true σ and
//! the true number of spikes unless told otherwise (`"noise": "estimated"`, `"order": "chosen"`).
//!
//! # The scenes
//!
//! Draw `d` of condition `c` is the invented scene [`draw_scene`] seeded by
//! [`trial_seed`]`(seed, c, d)`: a cluster of spikes each exactly the separation from its
//! neighbour (the hardest layout for that minimum separation), from a uniform offset. Every method
//! sees the same scenes, so comparisons are paired.
//!
//! # The records
//!
//! [`run`] returns one [`TrialRecord`] per (condition, draw, method), in that order whatever the
//! number of threads. The files ([`Campaign::write_csv`], [`Campaign::write_jsonl`]) hold one row
//! per trial × true line ([`Row`]): the trial's fields (condition, method, status, seconds, found /
//! missed / spurious, success, resolved) are repeated on each of its lines, and each row adds that
//! line's signed error in `1/N` and its error over `√CRB`. Per-trial figures take the rows with
//! `line == 0`. Peak memory is not a per-trial figure (the per-process peak, VmHWM, covers every
//! trial before it): measure it with one process per size, as the evaluation example does.
//!
//! A trial is a *success* when nothing is missed or spurious (matching gate `0.5/fc`), the status
//! is usable, and on exact data every line is within [`Plan::exact_tolerance`] `/N`; *resolved*
//! when nothing is missed or spurious and every error is below half the spacing.
//! [`Campaign::summaries`] give rates with Wilson intervals and `RMSE/√CRB` with a chi-square
//! interval ([`summary`]).
//!
//! ```
//! use finespike::eval::campaign::{run, Plan};
//! let plan = Plan::from_json(r#"{"seed": 1, "draws": 2,
//!     "grid": {"bands": [{"fc": 8}], "separations": [3.0], "spikes": [2], "snr_db": [null, 30.0]},
//!     "methods": [{"name": "esprit"}, {"name": "music"}]}"#, "plan.json")?;
//! let campaign = run(&plan, &|_, _| {})?;
//! assert_eq!(campaign.trials.len(), 2 * 2 * 2);
//! let s = campaign.summaries();
//! assert!(s.iter().all(|s| s.success_rate == 1.0));
//! let mut csv = Vec::new();
//! campaign.write_csv(&mut csv).unwrap();
//! assert_eq!(String::from_utf8(csv).unwrap().lines().count(), 1 + 8 * 2);
//! # Ok::<(), finespike::Error>(())
//! ```

mod array;
mod plan;
mod run;
pub mod summary;

pub use array::{correlation_name, draw_array_scene};
pub use plan::{
    draw_scene, trial_seed, AmplitudePattern, Band, Condition, Grid, MethodSpec, NoiseGiven,
    OrderGiven, Plan, Scene, SeparationUnit, Solver,
};
pub use run::{run, Campaign, LineRecord, Row, TrialRecord};
pub use summary::{chi_square_quantile, summarise, wilson_interval, ConditionSummary};
