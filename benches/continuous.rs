//! Timing of the certified continuous solver (`sfw`, end to end: solve, certificate, post-processing)
//! by cutoff fc, and of the greedy fit by record length N. Scenes are invented (seeded draws):
//! `sfw` — 10 spikes at separation 2/fc, exact data (`sfw_exact`) and 30 dB with constrained TV
//! (`sfw_constrained`); `greedy` — N time samples of 20 lines at least 2/fc apart, 30 dB.
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::continuous::Sfw;
use finespike::greedy::Greedy;
use finespike::{Estimator, Measurements, Scenario};
use std::time::Duration;

const FCS: [usize; 5] = [32, 128, 512, 2048, 4096];

fn sfw_exact(c: &mut Criterion) {
    let mut group = c.benchmark_group("sfw_exact");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(10));
    for fc in FCS {
        let sample = Scenario::new(fc, 10)
            .with_separation(2.0)
            .with_seed(11)
            .generate()
            .expect("scene");
        let estimator = Sfw::exact();
        group.bench_with_input(BenchmarkId::from_parameter(fc), &sample.data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

fn sfw_constrained(c: &mut Criterion) {
    let mut group = c.benchmark_group("sfw_constrained");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    for fc in FCS {
        let sample = Scenario::new(fc, 10)
            .with_separation(2.0)
            .with_snr_db(30.0)
            .with_seed(11)
            .generate()
            .expect("scene");
        let estimator = Sfw::with_sigma(sample.sigma);
        group.bench_with_input(BenchmarkId::from_parameter(fc), &sample.data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

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

fn greedy(c: &mut Criterion) {
    let mut group = c.benchmark_group("greedy");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(15));
    for n in [256usize, 1024, 4096, 16384] {
        let (data, sigma) = line_record(n, 20, 30.0, 5);
        let estimator = Greedy::with_sigma(sigma);
        group.bench_with_input(BenchmarkId::from_parameter(n), &data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

criterion_group!(benches, sfw_exact, sfw_constrained, greedy);
criterion_main!(benches);
