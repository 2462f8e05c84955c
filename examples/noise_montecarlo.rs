//! Monte Carlo of the noise-aware convex methods against the Cramér–Rao bound.
//!
//! An invented scene (fc = 16, four unit-modulus lines, closest pair 2/fc apart) is held fixed while
//! complex white Gaussian noise is drawn anew for each trial at 20, 30 and 40 dB. For each method and
//! SNR the table gives, per line, the position RMSE over the trials divided by the CRB standard
//! deviation (Stoica & Nehorai 1989, IEEE TASSP 37(5)), the number of missed lines, and the fraction
//! of trials with a spurious line. Run with
//! `cargo run --release --example noise_montecarlo -- [trials]` (default 200).

use finespike::metrics::score;
use finespike::{crb_for, AmplitudeKind, Ast, Estimator, Measurements, Scenario, Tv};
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;

/// Figures of one method at one SNR.
struct Row {
    /// Position RMSE / √CRB per true line.
    ratio: Vec<f64>,
    /// Total missed lines over all trials.
    missed: usize,
    /// Fraction of trials with at least one spurious line.
    spurious_rate: f64,
}

fn run(
    method: &dyn Estimator,
    clean: &Measurements,
    truth: &finespike::Spikes,
    sigma: f64,
    trials: usize,
    seed: u64,
) -> Row {
    let truth_fc = clean.fc();
    let mut rng = StdRng::seed_from_u64(seed);
    let exact: Vec<Complex64> = clean.values().to_vec();
    let mut sq = Vec::new();
    let mut missed = 0;
    let mut spurious_trials = 0;
    for _ in 0..trials {
        let noisy: Vec<Complex64> = exact
            .iter()
            .map(|v| {
                let re: f64 = rng.sample(StandardNormal);
                let im: f64 = rng.sample(StandardNormal);
                v + Complex64::new(re, im) * (sigma / std::f64::consts::SQRT_2)
            })
            .collect();
        let data = clean.with_values(&noisy).expect("finite samples");
        let est = method.estimate(&data).expect("estimate");
        let s = score(&est.spikes, truth, truth_fc).expect("score");
        missed += s.missed;
        if s.spurious > 0 {
            spurious_trials += 1;
        }
        if sq.is_empty() {
            sq = vec![(0.0, 0usize); truth.len()];
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
    }
}

fn main() {
    let trials: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(200);
    let scene = Scenario::new(16, 4)
        .with_separation(2.0)
        .with_amplitudes(AmplitudeKind::UnitModulus)
        .with_seed(4)
        .generate()
        .expect("scene");
    let (clean, truth) = (scene.data, scene.truth);
    println!("invented scene: fc = 16, 4 unit-modulus lines, closest pair 2/fc; {trials} noise draws per row");
    println!(
        "{:<6} {:>5}  {:<40} {:>7} {:>10}",
        "method", "SNR", "RMSE / sqrt(CRB) per line", "missed", "spurious"
    );
    for snr in [20.0, 30.0, 40.0] {
        let sigma = 10f64.powf(-snr / 20.0);
        let methods: Vec<Box<dyn Estimator>> = vec![
            Box::new(Tv::with_sigma(sigma)),
            Box::new(Ast::with_sigma(sigma)),
        ];
        for m in &methods {
            let row = run(m.as_ref(), &clean, &truth, sigma, trials, 1000 + snr as u64);
            let ratios: Vec<String> = row.ratio.iter().map(|r| format!("{r:.3}")).collect();
            println!(
                "{:<6} {:>5.0}  {:<40} {:>7} {:>9.1}%",
                m.name(),
                snr,
                ratios.join(" "),
                row.missed,
                100.0 * row.spurious_rate
            );
        }
    }
}
