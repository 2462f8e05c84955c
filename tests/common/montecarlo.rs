//! Monte Carlo of an estimator against the Cramér–Rao bound, shared by `tests/montecarlo.rs` and
//! `examples/noise_montecarlo.rs` (which includes this file by path).
//!
//! A scene is held fixed while complex white Gaussian noise, `E|n_k|² = σ²`, is drawn anew for each
//! trial; per true spike the position RMSE over the trials is divided by the CRB standard deviation
//! (Stoica & Nehorai 1989, IEEE TASSP 37(5)); missed spikes and trials with a spurious spike are
//! counted (optimal matching, `finespike::eval::metrics`).
#![allow(dead_code)]

use finespike::eval::metrics::score;
use finespike::{crb_for, Estimator, Measurements, Spikes};
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;

/// Figures of one method at one noise level.
pub struct Row {
    /// Position RMSE / √CRB per true spike (over the trials where it was found).
    pub ratio: Vec<f64>,
    /// Total missed spikes over all trials.
    pub missed: usize,
    /// Fraction of trials with at least one spurious spike.
    pub spurious_rate: f64,
    /// Trials whose status was not usable (iteration limit, numerical failure…).
    pub unusable: usize,
    /// Mean wall-clock seconds per estimate.
    pub seconds: f64,
}

/// Run `trials` noise draws (seeded by `seed`) of level `sigma` on the exact data `clean` of `truth`.
pub fn run(
    method: &dyn Estimator,
    clean: &Measurements,
    truth: &Spikes,
    sigma: f64,
    trials: usize,
    seed: u64,
) -> Row {
    let mut rng = StdRng::seed_from_u64(seed);
    let mut sq = vec![(0.0, 0usize); truth.len()];
    let mut missed = 0;
    let mut spurious_trials = 0;
    let mut unusable = 0;
    let mut seconds = 0.0;
    for _ in 0..trials {
        let noisy: Vec<Complex64> = clean
            .values()
            .iter()
            .map(|v| {
                let re: f64 = rng.sample(StandardNormal);
                let im: f64 = rng.sample(StandardNormal);
                v + Complex64::new(re, im) * (sigma / std::f64::consts::SQRT_2)
            })
            .collect();
        let data = clean.with_values(&noisy).expect("finite samples");
        let start = std::time::Instant::now();
        let est = method.estimate(&data).expect("estimate");
        seconds += start.elapsed().as_secs_f64();
        if !est.status.is_usable() {
            unusable += 1;
        }
        let s = score(&est.spikes, truth, clean.fc()).expect("score");
        missed += s.missed;
        if s.spurious > 0 {
            spurious_trials += 1;
        }
        for m in &s.pairs {
            sq[m.truth_index].0 += m.position_error * m.position_error;
            sq[m.truth_index].1 += 1;
        }
    }
    let bound = crb_for(clean, truth, sigma).expect("crb");
    let ratio = sq
        .iter()
        .zip(&bound.per_spike)
        .map(|(&(s, n), b)| (s / n.max(1) as f64).sqrt() / b.std_position)
        .collect();
    Row {
        ratio,
        missed,
        spurious_rate: spurious_trials as f64 / trials as f64,
        unusable,
        seconds: seconds / trials.max(1) as f64,
    }
}
