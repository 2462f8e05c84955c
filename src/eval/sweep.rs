//! Running several estimators on the same data and tallying how they did against a known truth: the
//! logic behind the command line's `compare`, usable from Rust for Monte Carlo studies.
//!
//! - [`crate::registry::configure`] builds an estimator by name with a noise level and a model order
//!   where the method takes them, and says which requested options it does not use.
//! - [`run`] times one estimator on one data set and scores it against the truth
//!   ([`super::metrics::score`], optimal gated matching), pairing each found spike with the Cramér–Rao
//!   bound of its true position ([`crate::bounds::crb_for`]).
//! - [`Tally`] adds up the outcomes of one method over many trials into a [`Summary`]: found / missed /
//!   spurious, RMS position error in Rayleigh units and against the bound, median time.
//!
//! ```
//! use finespike::eval::sweep::{run, Tally};
//! use finespike::registry::{configure, MethodOptions};
//! use finespike::{NoiseLevel, Scenario};
//! // Invented scenes: 2 spikes at fc = 8, 2/fc apart, 30 dB, two seeds.
//! let options = MethodOptions { noise: NoiseLevel::Estimate, ..MethodOptions::default() };
//! let method = configure("esprit", &options)?;
//! let mut tally = Tally::new("esprit");
//! for seed in 0..2 {
//!     let sample = Scenario::new(8, 2).with_separation(2.0).with_snr_db(30.0).with_seed(seed).generate()?;
//!     let bound = finespike::crb_for(&sample.data, &sample.truth, sample.sigma).ok();
//!     tally.add(&run(method.estimator.as_ref(), &sample.data, &sample.truth, bound.as_ref()));
//! }
//! let summary = tally.summary();
//! assert_eq!(summary.trials, 2);
//! assert_eq!(summary.found + summary.missed, 4);
//! # Ok::<(), finespike::Error>(())
//! ```

use super::metrics::{score, Score};
use crate::bounds::Crb;
use crate::estimator::{Estimator, Status};
use crate::model::{Measurements, Spikes};
use serde::Serialize;
use std::time::Instant;

/// One method's result on one data set, scored against the truth.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// The method's name.
    pub method: &'static str,
    /// The solver status (`None` when the method returned an error).
    pub status: Option<Status>,
    /// The error message when the method could not run on these data.
    pub error: Option<String>,
    /// Wall-clock time of the estimate, in seconds.
    pub seconds: f64,
    /// The recovered spikes (empty after an error).
    pub spikes: Spikes,
    /// The match against the truth (after an error: every true spike missed).
    pub score: Option<Score>,
    /// For each found pair of [`Outcome::score`], in the same order, the Cramér–Rao variance of the
    /// true spike's position in Rayleigh units² (empty when no bound was given).
    pub crb_var_fc: Vec<f64>,
    /// The estimate's warnings, in plain words.
    pub warnings: Vec<String>,
}

/// Run `estimator` on `data`, time it, and score it against `truth` (optimal gated matching with the
/// default gate `0.5/fc`). `bound` is the Cramér–Rao bound of `truth` on `data`'s index set, when the
/// noise level is known and positive.
pub fn run(
    estimator: &dyn Estimator,
    data: &Measurements,
    truth: &Spikes,
    bound: Option<&Crb>,
) -> Outcome {
    let start = Instant::now();
    let result = estimator.estimate(data);
    let seconds = start.elapsed().as_secs_f64();
    match result {
        Err(e) => Outcome {
            method: estimator.name(),
            status: None,
            error: Some(e.to_string()),
            seconds,
            spikes: Spikes::empty(),
            // Nothing recovered: every true spike is missed.
            score: score(&Spikes::empty(), truth, data.fc()).ok(),
            crb_var_fc: Vec::new(),
            warnings: Vec::new(),
        },
        Ok(est) => {
            let (score, error) = match score(&est.spikes, truth, data.fc()) {
                Ok(s) => (Some(s), None),
                Err(e) => (None, Some(e.to_string())),
            };
            let crb_var_fc = match (&score, bound) {
                (Some(s), Some(b)) if b.per_spike.len() == truth.len() => s
                    .pairs
                    .iter()
                    .map(|m| b.per_spike[m.truth_index].std_position_fc.powi(2))
                    .collect(),
                _ => Vec::new(),
            };
            Outcome {
                method: estimator.name(),
                status: Some(est.status),
                error,
                seconds,
                spikes: est.spikes,
                score,
                crb_var_fc,
                warnings: est
                    .diagnostics
                    .warnings
                    .iter()
                    .map(|w| w.to_string())
                    .collect(),
            }
        }
    }
}

/// One method's figures over a set of trials.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// The method's name.
    pub method: String,
    /// Trials run.
    pub trials: usize,
    /// Trials where the method returned an error (nothing recovered; its true spikes count as missed).
    pub errors: usize,
    /// Trials whose solver status was not usable (iteration limit, numerical failure, …).
    pub not_converged: usize,
    /// Trials with at least one warning on the estimate.
    pub warned: usize,
    /// True spikes over all trials.
    pub true_spikes: usize,
    /// True spikes found (a recovered spike within the gate `0.5/fc`).
    pub found: usize,
    /// True spikes missed.
    pub missed: usize,
    /// Recovered spikes without a true partner.
    pub spurious: usize,
    /// Trials where every true spike was found and nothing spurious was recovered.
    pub complete: usize,
    /// RMS position error of the found spikes, in Rayleigh units (`None` if nothing was found).
    pub rmse_fc: Option<f64>,
    /// Largest position error of a found spike, in Rayleigh units.
    pub max_error_fc: Option<f64>,
    /// `√(Σ e² / Σ CRB)` over the found spikes: the RMS error against the RMS Cramér–Rao standard
    /// deviation (about 1 for an efficient estimator; `None` without a bound, e.g. for exact data).
    pub rmse_over_crb: Option<f64>,
    /// Median wall-clock time per estimate, in seconds.
    pub median_seconds: f64,
}

/// Accumulates the [`Outcome`]s of one method into a [`Summary`].
#[derive(Debug, Clone, Default)]
pub struct Tally {
    method: String,
    trials: usize,
    errors: usize,
    not_converged: usize,
    warned: usize,
    true_spikes: usize,
    found: usize,
    missed: usize,
    spurious: usize,
    complete: usize,
    sum_sq_fc: f64,
    max_error_fc: f64,
    sum_crb_fc: f64,
    crb_pairs: usize,
    times: Vec<f64>,
}

impl Tally {
    /// An empty tally for `method`.
    pub fn new(method: &str) -> Self {
        Tally {
            method: method.to_string(),
            ..Tally::default()
        }
    }

    /// Add one trial.
    pub fn add(&mut self, outcome: &Outcome) {
        self.trials += 1;
        self.times.push(outcome.seconds);
        if !outcome.warnings.is_empty() {
            self.warned += 1;
        }
        match outcome.status {
            None => self.errors += 1,
            Some(s) if !s.is_usable() => self.not_converged += 1,
            Some(_) => {}
        }
        let Some(score) = &outcome.score else {
            return;
        };
        self.true_spikes += score.found + score.missed;
        self.found += score.found;
        self.missed += score.missed;
        self.spurious += score.spurious;
        if score.is_complete() {
            self.complete += 1;
        }
        for m in &score.pairs {
            self.sum_sq_fc += m.position_error_fc.powi(2);
            self.max_error_fc = self.max_error_fc.max(m.position_error_fc.abs());
        }
        if outcome.crb_var_fc.len() == score.pairs.len() {
            self.sum_crb_fc += outcome.crb_var_fc.iter().sum::<f64>();
            self.crb_pairs += outcome.crb_var_fc.len();
        }
    }

    /// The figures so far.
    pub fn summary(&self) -> Summary {
        let rmse_fc = (self.found > 0).then(|| (self.sum_sq_fc / self.found as f64).sqrt());
        // The ratio needs a bound for every found pair.
        let rmse_over_crb =
            (self.found > 0 && self.crb_pairs == self.found && self.sum_crb_fc > 0.0)
                .then(|| (self.sum_sq_fc / self.sum_crb_fc).sqrt());
        Summary {
            method: self.method.clone(),
            trials: self.trials,
            errors: self.errors,
            not_converged: self.not_converged,
            warned: self.warned,
            true_spikes: self.true_spikes,
            found: self.found,
            missed: self.missed,
            spurious: self.spurious,
            complete: self.complete,
            rmse_fc,
            max_error_fc: (self.found > 0).then_some(self.max_error_fc),
            rmse_over_crb,
            median_seconds: median(&self.times),
        }
    }
}

/// Median of `values` (0 for none); NaNs sort last.
fn median(values: &[f64]) -> f64 {
    if values.is_empty() {
        return 0.0;
    }
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

fn opt(v: Option<f64>, digits: usize) -> String {
    v.map_or_else(|| "-".to_string(), |x| format!("{x:.digits$}"))
}

/// A plain aligned text table of summaries, one row per method, with a legend of the columns.
pub fn table(summaries: &[Summary]) -> String {
    let head = [
        "method",
        "trials",
        "found",
        "missed",
        "spurious",
        "complete",
        "RMSE·fc",
        "max·fc",
        "RMSE/√CRB",
        "median s",
        "errors",
        "unconv",
        "warned",
    ];
    let rows: Vec<[String; 13]> = summaries
        .iter()
        .map(|s| {
            [
                s.method.clone(),
                s.trials.to_string(),
                format!("{}/{}", s.found, s.true_spikes),
                s.missed.to_string(),
                s.spurious.to_string(),
                format!("{}/{}", s.complete, s.trials),
                opt(s.rmse_fc, 5),
                opt(s.max_error_fc, 5),
                opt(s.rmse_over_crb, 2),
                format!("{:.4}", s.median_seconds),
                s.errors.to_string(),
                s.not_converged.to_string(),
                s.warned.to_string(),
            ]
        })
        .collect();
    let mut widths: Vec<usize> = head.iter().map(|h| h.chars().count()).collect();
    for r in &rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let line = |cells: &[String]| -> String {
        let mut out = String::new();
        for (i, (c, w)) in cells.iter().zip(&widths).enumerate() {
            let pad = w - c.chars().count();
            if i == 0 {
                out.push_str(c);
                out.push_str(&" ".repeat(pad));
            } else {
                out.push_str("  ");
                out.push_str(&" ".repeat(pad));
                out.push_str(c);
            }
        }
        out.trim_end().to_string()
    };
    let mut out = line(&head.map(String::from));
    out.push('\n');
    let total: usize = widths.iter().sum::<usize>() + 2 * (widths.len() - 1);
    out.push_str(&"-".repeat(total));
    out.push('\n');
    for r in &rows {
        out.push_str(&line(r));
        out.push('\n');
    }
    out
}

/// Summaries as CSV, one row per method (empty cells for figures that do not exist).
pub fn to_csv(summaries: &[Summary]) -> String {
    let mut out = String::from(
        "method,trials,true_spikes,found,missed,spurious,complete,rmse_fc,max_error_fc,rmse_over_crb,\
         median_seconds,errors,not_converged,warned\n",
    );
    let cell = |v: Option<f64>| v.map_or_else(String::new, super::io::exact);
    for s in summaries {
        out.push_str(&format!(
            "{},{},{},{},{},{},{},{},{},{},{},{},{},{}\n",
            s.method,
            s.trials,
            s.true_spikes,
            s.found,
            s.missed,
            s.spurious,
            s.complete,
            cell(s.rmse_fc),
            cell(s.max_error_fc),
            cell(s.rmse_over_crb),
            super::io::exact(s.median_seconds),
            s.errors,
            s.not_converged,
            s.warned
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eval::metrics::Match;
    use crate::registry::{configure, MethodOptions};
    use crate::{Backend, NoiseLevel};
    use num_complex::Complex64;

    fn outcome(errors_fc: &[f64], missed: usize, spurious: usize, crb_std_fc: f64) -> Outcome {
        let pairs: Vec<Match> = errors_fc
            .iter()
            .enumerate()
            .map(|(i, &e)| Match {
                truth_index: i,
                estimate_index: i,
                position_error: e / 10.0,
                position_error_fc: e,
                relative_amplitude_error: 0.0,
            })
            .collect();
        let found = pairs.len();
        Outcome {
            method: "esprit",
            status: Some(Status::Solved),
            error: None,
            seconds: 0.5,
            spikes: Spikes::empty(),
            score: Some(Score {
                found,
                missed,
                spurious,
                max_position_error_fc: None,
                rms_position_error_fc: None,
                max_relative_amplitude_error: None,
                gate_fc: 0.5,
                pairs,
                missed_truth: (0..missed).collect(),
                spurious_estimates: (0..spurious).collect(),
            }),
            crb_var_fc: vec![crb_std_fc * crb_std_fc; found],
            warnings: Vec::new(),
        }
    }

    #[test]
    fn tally_adds_counts_and_errors() {
        let mut t = Tally::new("esprit");
        t.add(&outcome(&[0.03, -0.04], 0, 0, 0.05));
        let mut second = outcome(&[0.0], 1, 2, 0.05);
        second.seconds = 2.0;
        second.warnings = vec!["w".into()];
        t.add(&second);
        let mut third = outcome(&[], 0, 0, 0.05);
        third.seconds = 1.0;
        t.add(&third);
        let s = t.summary();
        assert_eq!((s.trials, s.found, s.missed, s.spurious), (3, 3, 1, 2));
        assert_eq!((s.complete, s.warned, s.true_spikes), (2, 1, 4));
        // RMSE over the 3 found: √((0.03² + 0.04² + 0)/3).
        let want = ((0.0009 + 0.0016) / 3.0f64).sqrt();
        assert!((s.rmse_fc.unwrap() - want).abs() < 1e-15);
        assert!((s.max_error_fc.unwrap() - 0.04).abs() < 1e-15);
        // Every pair has CRB std 0.05: ratio = RMSE / 0.05.
        assert!((s.rmse_over_crb.unwrap() - want / 0.05).abs() < 1e-12);
        assert_eq!(s.median_seconds, 1.0);
    }

    #[test]
    fn errors_count_their_spikes_as_missed() {
        // A measured set with gaps: the subspace methods return an error.
        let one = Complex64::new(1.0, 0.0);
        let truth = Spikes::from_parts(&[0.1, 0.4, 0.7], &[one, one, one]).unwrap();
        let k: Vec<i64> = vec![-8, -5, -2, 0, 1, 3, 6, 8];
        let data = Measurements::fourier(8, &k, &crate::model::forward(&truth, &k)).unwrap();
        let music = configure("music", &MethodOptions::default()).unwrap();
        let failed = run(music.estimator.as_ref(), &data, &truth, None);
        assert!(failed.error.is_some() && failed.status.is_none());
        let mut t = Tally::new("music");
        t.add(&failed);
        let s = t.summary();
        assert_eq!((s.errors, s.missed, s.true_spikes, s.found), (1, 3, 3, 0));
        assert_eq!((s.rmse_fc, s.rmse_over_crb), (None, None));
        assert_eq!(s.median_seconds, failed.seconds);
        assert!(table(std::slice::from_ref(&s))
            .lines()
            .nth(2)
            .unwrap()
            .starts_with("music"));
        assert_eq!(to_csv(&[s]).lines().count(), 2);
    }

    #[test]
    fn given_order_reaches_the_estimator() {
        // Exact data of 2 spikes 2/fc apart at fc = 8, asked for 1: the estimate has 1 spike (where it
        // lands is the method's business; an under-fitted ESPRIT puts it between the two).
        let one = Complex64::new(1.0, 0.0);
        let truth = Spikes::from_parts(&[0.2, 0.45], &[one, one]).unwrap();
        let k: Vec<i64> = (-8..=8).collect();
        let data = Measurements::fourier(8, &k, &crate::model::forward(&truth, &k)).unwrap();
        for name in ["esprit", "greedy"] {
            let opts = MethodOptions {
                noise: NoiseLevel::Exact,
                order: Some(1),
                backend: Backend::Auto,
            };
            let c = configure(name, &opts).unwrap();
            let o = run(c.estimator.as_ref(), &data, &truth, None);
            assert_eq!(o.spikes.len(), 1, "{name}");
            let s = o.score.unwrap();
            assert_eq!(s.found + s.missed, 2, "{name}");
            assert_eq!(s.found + s.spurious, 1, "{name}");
        }
    }
}
