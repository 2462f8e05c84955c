//! Exact recovery through TV-norm minimisation (`sdp`), end to end (solve, support, amplitudes, polish,
//! certificate), by cutoff fc, with each of its two backends on the same scenes: clarabel's interior
//! point on the compact SDP (`interior_point`, up to fc = 32) and the certified Sliding Frank–Wolfe
//! solver (`sliding`, up to fc = 512; the default `Backend::Auto` uses it from fc = 25). Scenes are
//! invented: fc/4 spikes (at least 1) at separation 2/fc, exact data, seeded.
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use finespike::{Backend, Estimator, Scenario, Tv, TvSettings};
use std::time::Duration;

fn exact_sdp(c: &mut Criterion) {
    let mut group = c.benchmark_group("sdp_exact");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    for (label, backend, fcs) in [
        (
            "interior_point",
            Backend::InteriorPoint,
            &[4usize, 8, 16, 24, 32][..],
        ),
        (
            "sliding",
            Backend::SlidingFrankWolfe,
            &[4usize, 8, 16, 24, 32, 128, 512][..],
        ),
    ] {
        let estimator = Tv::exact().with_settings(TvSettings::default().with_backend(backend));
        for &fc in fcs {
            let sample = Scenario::new(fc, (fc / 4).max(1))
                .with_separation(2.0)
                .with_seed(11)
                .generate()
                .expect("scene");
            group.bench_with_input(BenchmarkId::new(label, fc), &sample.data, |b, data| {
                b.iter(|| estimator.estimate(data).expect("estimate"))
            });
        }
    }
    group.finish();
}

criterion_group!(benches, exact_sdp);
criterion_main!(benches);
