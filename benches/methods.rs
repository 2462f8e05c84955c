//! Every method of the registry by record length: N ∈ {4096, 16 384, 100 000} time samples of 5 lines
//! 2/fc apart with complex white Gaussian noise at 30 dB for the weakest line (light noise), with σ
//! given and with σ estimated (for `music`, `esprit` and `pencil` σ only enters the diagnostics, so the
//! two differ by the cost of estimating it). Scenes are invented (seeded draws); setup is outside the
//! timed closure. A method that refuses a record (a typed error naming one that can) is timed too:
//! the refusal must come at once.
//!
//! Sample size 10 and a short measurement time, so that the whole bench runs in minutes; peak memory
//! per process comes from `examples/large_scale.rs` (`-- method NAME N [given|estimated]`), whose
//! figures are recorded in `benches/RESULTS.md`. One size or method alone:
//! `cargo bench --bench methods -- 'methods/esprit'`.
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::registry::{configure, MethodOptions};
use finespike::{Estimator, NoiseLevel, Scenario, METHODS};
use std::time::Duration;

const LENGTHS: [usize; 3] = [4096, 16_384, 100_000];

fn methods(c: &mut Criterion) {
    let mut group = c.benchmark_group("methods");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(3));
    group.warm_up_time(Duration::from_millis(500));
    for n in LENGTHS {
        let scene = Scenario::time_record(n, 5)
            .with_separation(2.0)
            .with_snr_db(30.0)
            .with_seed(5)
            .generate()
            .expect("scene");
        for m in METHODS {
            for (label, noise) in [
                ("given", NoiseLevel::Known(scene.sigma)),
                ("estimated", NoiseLevel::Estimate),
            ] {
                let options = MethodOptions {
                    noise,
                    ..MethodOptions::default()
                };
                let estimator = configure(m.name, &options).expect("method").estimator;
                let id = BenchmarkId::new(format!("{}/{label}", m.name), n);
                group.bench_with_input(id, &scene.data, |b, data| {
                    // Answer or refusal: both are results (see the module docs).
                    b.iter(|| estimator.estimate(data).is_ok())
                });
            }
        }
    }
    group.finish();
}

/// The certified solver with spikes ∝ N: exact `sdp` on dense invented scenes, fc/4 spikes 2/fc apart.
fn dense(c: &mut Criterion) {
    let mut group = c.benchmark_group("sdp_dense");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(5));
    group.warm_up_time(Duration::from_millis(500));
    for fc in [256usize, 512, 1024, 2048] {
        let sample = finespike::Scenario::new(fc, fc / 4)
            .with_separation(2.0)
            .with_seed(11)
            .generate()
            .expect("scene");
        let estimator = finespike::Tv::exact();
        group.bench_with_input(BenchmarkId::from_parameter(fc), &sample.data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

criterion_group!(benches, methods, dense);
criterion_main!(benches);
