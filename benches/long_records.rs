//! Timing of the long-record methods by record length: `grid` (grid ℓ1, FISTA with FFT operators) and
//! `greedy` (conditional gradient with sliding positions), end to end (noise level given; solve,
//! continuous step, post-processing, diagnostics), on N ∈ {256, 1024, 4096, 16384} time samples of 20
//! lines at least 2/fc apart with complex white Gaussian noise at 30 dB for the weakest line. Scenes are
//! invented (seeded draws). Setup is outside the timed closure.
//!
//! The records come from [`Scenario::time_record`] (as the greedy bench in `benches/continuous.rs`).
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::grid::GridL1;
use finespike::{Estimator, Greedy, Measurements, Scenario};
use std::time::Duration;

const LENGTHS: [usize; 4] = [256, 1024, 4096, 16384];
const LINES: usize = 20;
const SNR_DB: f64 = 30.0;
const SEED: u64 = 5;

/// `n` time samples of `count` lines at least 2/fc apart (fc = (n − 1)/2), complex white Gaussian noise
/// at `snr_db` for the weakest line (an invented, seeded scene); returns the data and σ.
fn line_record(n: usize, count: usize, snr_db: f64, seed: u64) -> (Measurements, f64) {
    let scene = Scenario::time_record(n, count)
        .with_separation(2.0)
        .with_snr_db(snr_db)
        .with_seed(seed)
        .generate()
        .expect("scene");
    (scene.data, scene.sigma)
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
