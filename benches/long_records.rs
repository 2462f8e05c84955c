//! Timing of the long-record methods by record length: `grid` (grid ℓ1, FISTA with FFT operators) and
//! `greedy` (conditional gradient with sliding positions), end to end (noise level given; solve,
//! continuous step, post-processing, diagnostics), on N ∈ {256, 1024, 4096, 16384} time samples of 20
//! lines at least 2/fc apart with complex white Gaussian noise at 30 dB for the weakest line. Scenes are
//! invented (seeded draws). Setup is outside the timed closure.
//!
//! The record is built here (the idea of `line_record` in `benches/continuous.rs`): positions and
//! amplitudes from [`Scenario`] with the separation rescaled to the record's own `fc = (N − 1)/2`, the
//! samples synthesised for all `N` times, then noise.
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::grid::GridL1;
use finespike::{Estimator, Greedy, Measurements, Scenario};
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use std::time::Duration;

const LENGTHS: [usize; 4] = [256, 1024, 4096, 16384];
const LINES: usize = 20;
const SNR_DB: f64 = 30.0;
const SEED: u64 = 5;

/// `n` time samples of `count` lines at least 2/fc apart (fc = (n − 1)/2), complex white Gaussian noise
/// of level σ = |a|_min · 10^(−snr/20); returns the data and σ.
fn line_record(n: usize, count: usize, snr_db: f64, seed: u64) -> (Measurements, f64) {
    let fc = (n - 1) as f64 / 2.0;
    let scene = Scenario::new(n / 2, count)
        .with_separation(2.0 * (n / 2) as f64 / fc)
        .with_seed(seed)
        .generate()
        .expect("scene");
    let amin = scene
        .truth
        .iter()
        .map(|s| s.amplitude.norm())
        .fold(f64::INFINITY, f64::min);
    let sigma = amin * 10f64.powf(-snr_db / 20.0);
    let mut rng = StdRng::seed_from_u64(seed ^ 0x5eed);
    let s = sigma / std::f64::consts::SQRT_2;
    let x: Vec<Complex64> = (0..n)
        .map(|t| {
            let clean: Complex64 = scene
                .truth
                .iter()
                .map(|l| {
                    l.amplitude
                        * Complex64::from_polar(
                            1.0,
                            2.0 * std::f64::consts::PI * (l.position * t as f64).fract(),
                        )
                })
                .sum();
            let (re, im): (f64, f64) = (rng.sample(StandardNormal), rng.sample(StandardNormal));
            clean + Complex64::new(s * re, s * im)
        })
        .collect();
    (Measurements::from_time_samples(&x).expect("samples"), sigma)
}

fn by_length(c: &mut Criterion, group_name: &str, make: fn(f64) -> Box<dyn Estimator>) {
    let mut group = c.benchmark_group(group_name);
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(8));
    for n in LENGTHS {
        let (data, sigma) = line_record(n, LINES, SNR_DB, SEED);
        let estimator = make(sigma);
        group.bench_with_input(BenchmarkId::from_parameter(n), &data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

fn grid(c: &mut Criterion) {
    by_length(c, "long_grid", |sigma| Box::new(GridL1::with_sigma(sigma)));
}

fn greedy(c: &mut Criterion) {
    by_length(c, "long_greedy", |sigma| {
        Box::new(Greedy::with_sigma(sigma))
    });
}

criterion_group!(benches, grid, greedy);
criterion_main!(benches);
