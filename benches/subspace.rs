//! Criterion benches of the subspace baselines by record length N (10 lines, 30 dB, order given).
//!
//! The record is an invented time-domain scene: 10 unit-modulus lines at frequencies spread over
//! [0, 1) at least 4/N apart, complex white Gaussian noise at 30 dB per line (seeded). Data are built
//! outside the timed closures.
//!
//! Groups: `esprit` (Auto, and the dense and randomized decompositions side by side to place the
//! crossover), `pencil`, `music` (root-MUSIC through its companion matrix, O(L³): N ≤ 1024),
//! `esprit_order` (order estimated with the default settings — MDL on these noisy records — instead
//! of given), and `long_records`: `esprit`, `pencil`, `music` and the noise-level estimate alone
//! (`sigma`) with the default settings (order and σ estimated) at N = 4096, 16 384 and 100 000, where
//! the Hankel singular values are streamed and root-MUSIC takes its Newton path (10 samples each:
//! about four minutes in all). Run one group with `cargo bench --bench subspace -- long_records`.
//!
//! Group `snapshots`: `esprit`, `pencil`, `music` on a multi-snapshot array record with the default
//! settings (order by MDL, σ from the sample covariance, forward–backward averaging, smoothing over
//! ⌈0.6 M⌉ sensors): an invented scene of M = 64 sensors, L = 1000 snapshots, 3 uncorrelated
//! sources at 10 dB (`ArrayScene`, seed 1); and the two steps every method shares, the noise level
//! alone (`sigma`) and the finishing `ArrayEstimate::assemble` at the true positions (`assemble`).

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::subspace::{
    Decomposition, Esprit, MatrixPencil, Music, OrderSelection, SubspaceSettings,
};
use finespike::{estimate_sigma, Estimator, Measurements};
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use std::f64::consts::PI;
use std::hint::black_box;

const LINES: usize = 10;
const SIZES: [usize; 4] = [64, 256, 1024, 4096];
/// ESPRIT also at the sizes around the dense/randomized crossover.
const ESPRIT_SIZES: [usize; 7] = [64, 96, 128, 192, 256, 1024, 4096];

fn record(n: usize) -> Measurements {
    let mut rng = StdRng::seed_from_u64(n as u64);
    let freqs: Vec<f64> = (0..LINES)
        .map(|j| (j as f64 + 0.3 * rng.gen::<f64>()) / LINES as f64)
        .collect();
    let phases: Vec<f64> = (0..LINES).map(|_| 2.0 * PI * rng.gen::<f64>()).collect();
    let sigma = 10f64.powf(-30.0 / 20.0);
    let x: Vec<Complex64> = (0..n)
        .map(|t| {
            let clean: Complex64 = freqs
                .iter()
                .zip(&phases)
                .map(|(&f, &ph)| Complex64::from_polar(1.0, 2.0 * PI * f * t as f64 + ph))
                .sum();
            let re: f64 = rng.sample(StandardNormal);
            let im: f64 = rng.sample(StandardNormal);
            clean + Complex64::new(re, im) * (sigma / std::f64::consts::SQRT_2)
        })
        .collect();
    // Valid by construction: finite samples, n ≥ 2.
    Measurements::from_time_samples(&x).expect("bench record")
}

fn given() -> SubspaceSettings {
    SubspaceSettings::default()
        .with_order(OrderSelection::Given(LINES))
        .expect("order 10 is a valid setting")
}

fn bench_esprit(c: &mut Criterion) {
    let mut group = c.benchmark_group("esprit");
    group.sample_size(10);
    for n in ESPRIT_SIZES {
        let data = record(n);
        let variants = [
            ("auto", Decomposition::Auto),
            ("dense", Decomposition::Dense),
            ("randomized", Decomposition::Randomized),
        ];
        for (label, d) in variants {
            if label == "dense" && n > 1024 {
                continue; // tens of seconds per run: see the report's figures at N = 1024
            }
            let est = Esprit::new(given().with_decomposition(d));
            group.bench_with_input(BenchmarkId::new(label, n), &data, |b, data| {
                b.iter(|| black_box(est.estimate(data).expect("esprit")))
            });
        }
    }
    group.finish();
}

fn bench_pencil(c: &mut Criterion) {
    let mut group = c.benchmark_group("pencil");
    group.sample_size(10);
    for n in SIZES {
        let data = record(n);
        let est = MatrixPencil::new(given());
        group.bench_with_input(BenchmarkId::from_parameter(n), &data, |b, data| {
            b.iter(|| black_box(est.estimate(data).expect("pencil")))
        });
    }
    group.finish();
}

fn bench_music(c: &mut Criterion) {
    let mut group = c.benchmark_group("music");
    group.sample_size(10);
    for n in [64, 256, 1024] {
        let data = record(n);
        let est = Music::new(given());
        group.bench_with_input(BenchmarkId::from_parameter(n), &data, |b, data| {
            b.iter(|| black_box(est.estimate(data).expect("music")))
        });
    }
    group.finish();
}

fn bench_esprit_order(c: &mut Criterion) {
    let mut group = c.benchmark_group("esprit_order");
    group.sample_size(10);
    for n in SIZES {
        let data = record(n);
        let est = Esprit::default();
        group.bench_with_input(BenchmarkId::from_parameter(n), &data, |b, data| {
            b.iter(|| black_box(est.estimate(data).expect("esprit with an estimated order")))
        });
    }
    group.finish();
}

fn bench_long_records(c: &mut Criterion) {
    let mut group = c.benchmark_group("long_records");
    group.sample_size(10);
    group.warm_up_time(std::time::Duration::from_millis(500));
    for n in [4096, 16_384, 100_000] {
        let data = record(n);
        let methods: [(&str, Box<dyn Estimator>); 3] = [
            ("esprit", Box::new(Esprit::default())),
            ("pencil", Box::new(MatrixPencil::default())),
            ("music", Box::new(Music::default())),
        ];
        for (label, est) in &methods {
            group.bench_with_input(BenchmarkId::new(*label, n), &data, |b, data| {
                b.iter(|| black_box(est.estimate(data).expect("long record")))
            });
        }
        group.bench_with_input(BenchmarkId::new("sigma", n), &data, |b, data| {
            b.iter(|| black_box(estimate_sigma(data).expect("noise level")))
        });
    }
    group.finish();
}

fn bench_snapshots(c: &mut Criterion) {
    use finespike::eval::array_scene::ArrayScene;
    use finespike::{estimate_snapshot_sigma, ArrayEstimate, Status};
    let mut group = c.benchmark_group("snapshots");
    group.sample_size(20);
    let positions = [-0.3, 0.05, 0.27];
    let draw = ArrayScene::new(64, 1000, &positions)
        .and_then(|s| s.with_snr_db(10.0))
        .map(|s| s.with_seed(1))
        .and_then(|s| s.draw())
        .expect("array scene");
    let data = draw.data;
    let methods: [(&str, Box<dyn Estimator>); 3] = [
        ("esprit", Box::new(Esprit::default())),
        ("pencil", Box::new(MatrixPencil::default())),
        ("music", Box::new(Music::default())),
    ];
    for (label, est) in &methods {
        group.bench_with_input(BenchmarkId::new(*label, "M64_L1000"), &data, |b, data| {
            b.iter(|| black_box(est.estimate_snapshots(data).expect("snapshots")))
        });
    }
    group.bench_with_input(BenchmarkId::new("sigma", "M64_L1000"), &data, |b, data| {
        b.iter(|| black_box(estimate_snapshot_sigma(data).expect("noise level")))
    });
    group.bench_with_input(
        BenchmarkId::new("assemble", "M64_L1000"),
        &data,
        |b, data| {
            b.iter(|| {
                black_box(
                    ArrayEstimate::assemble("bench", data, &positions, Status::Solved)
                        .expect("assemble")
                        .noise(Some(1.0), false, None),
                )
            })
        },
    );
    group.finish();
}

criterion_group!(
    benches,
    bench_snapshots,
    bench_esprit,
    bench_pencil,
    bench_music,
    bench_esprit_order,
    bench_long_records
);
criterion_main!(benches);
