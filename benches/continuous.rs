//! Timing of the certified continuous solver (`sfw`, end to end: solve, certificate, post-processing)
//! by cutoff fc. Scenes are invented (seeded draws): 10 spikes at separation 2/fc, exact data
//! (`sfw_exact`) and 30 dB with constrained TV (`sfw_constrained`); dense exact scenes with fc/4 spikes
//! 2/fc apart (`sfw_dense`, spikes ∝ N); `ast` on N time samples of 5 lines 3/N apart at 30 dB, σ
//! given (`ast_long`). The greedy fit and `grid` are timed by record length in
//! `benches/long_records.rs`.
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::{Ast, Sfw};
use finespike::{Estimator, Scenario};
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

fn sfw_dense(c: &mut Criterion) {
    let mut group = c.benchmark_group("sfw_dense");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    for fc in [256usize, 512, 1024] {
        let sample = Scenario::new(fc, fc / 4)
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

fn ast_long(c: &mut Criterion) {
    let mut group = c.benchmark_group("ast_long");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(30));
    for n in [4096usize, 16_384, 100_000] {
        let sample = Scenario::time_record(n, 5)
            .with_separation(3.0)
            .with_snr_db(30.0)
            .with_seed(5)
            .generate()
            .expect("scene");
        let estimator = Ast::with_sigma(sample.sigma);
        group.bench_with_input(BenchmarkId::from_parameter(n), &sample.data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

criterion_group!(benches, sfw_exact, sfw_constrained, sfw_dense, ast_long);
criterion_main!(benches);
