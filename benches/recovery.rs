//! Timing of exact recovery through the TV-norm SDP (`sdp`), end to end (solve, support, amplitudes,
//! polish, certificate), by cutoff fc. Scenes are invented: fc/4 spikes at separation 2/fc, seeded.
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::{Estimator, Scenario, Tv};
use std::time::Duration;

fn exact_sdp(c: &mut Criterion) {
    let mut group = c.benchmark_group("sdp_exact");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    for fc in [4usize, 8, 16, 32] {
        let sample = Scenario::new(fc, (fc / 4).max(1))
            .with_separation(2.0)
            .with_seed(11)
            .generate()
            .expect("scene");
        let estimator = Tv::exact();
        group.bench_with_input(BenchmarkId::from_parameter(fc), &sample.data, |b, data| {
            b.iter(|| estimator.estimate(data).expect("estimate"))
        });
    }
    group.finish();
}

criterion_group!(benches, exact_sdp);
criterion_main!(benches);
