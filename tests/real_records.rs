//! Real-valued records through every method: each line reported once at `f ∈ [0, 1/2]` with its
//! phasor amplitude, any index origin, a trend fitted jointly with the lines.
//!
//! The records are invented (seeded) scenes; the check values are their truths, and the tolerances
//! come from the Cramér–Rao bound of a real tone (Kay 1993, *Fundamentals of Statistical Signal
//! Processing: Estimation Theory*, Example 3.14: `var f̂ ≥ 12/((2π)² η N(N² − 1))`, `η = A²/(2σ²)`;
//! example number recalled from memory).
use finespike::registry::{configure, method_names, MethodOptions};
use finespike::{Complex64, Estimate, Measurements, NoiseLevel, Scale, Trend, Warning};
use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use std::f64::consts::PI;

/// Three cosines `(f, A, φ)`, well inside `(0, 1/2)` and several resolution cells apart.
const LINES: [(f64, f64, f64); 3] = [(0.1234, 1.0, 0.3), (0.2, 0.6, -1.2), (0.37, 0.3, 2.5)];

/// `x_n = offset + slope·n + Σ A cos(2πf n + φ) + w_n` at the indices `n` given.
fn record(indices: &[i64], offset: f64, slope: f64, sigma: f64, seed: u64) -> Vec<f64> {
    let mut rng = StdRng::seed_from_u64(seed);
    let noise = Normal::new(0.0, sigma.max(f64::MIN_POSITIVE)).unwrap();
    indices
        .iter()
        .map(|&n| {
            let t = n as f64;
            let lines: f64 = LINES
                .iter()
                .map(|&(f, a, p)| a * (2.0 * PI * f * t + p).cos())
                .sum();
            let w = if sigma > 0.0 {
                noise.sample(&mut rng)
            } else {
                0.0
            };
            offset + slope * t + lines + w
        })
        .collect()
}

/// Kay's large-N bound on the frequency standard deviation of a real tone.
fn kay_std(n: usize, amp: f64, sigma: f64) -> f64 {
    let n = n as f64;
    let eta = amp * amp / (2.0 * sigma * sigma);
    (12.0 / ((2.0 * PI).powi(2) * eta * n * (n * n - 1.0))).sqrt()
}

/// Five standard deviations of the phase at `n = 0` for a record of `n` samples centred on index
/// `centre`: the phase at the centre (Kay's `var φ̂ ≈ 2/(ηN)` there, large-N form) plus the
/// frequency error carried over the distance to `n = 0`.
fn phase_tol(n: usize, centre: f64, amp: f64, sigma: f64) -> f64 {
    let eta = amp * amp / (2.0 * sigma * sigma);
    5.0 * ((2.0 / (eta * n as f64)).sqrt() + 2.0 * PI * centre.abs() * kay_std(n, amp, sigma))
}

/// Every true line found once within `tol(line)` in frequency (cycles per sample) and 10 % in
/// cosine amplitude; nothing else above `spurious`.
fn check_lines(
    what: &str,
    e: &Estimate,
    rate: f64,
    tol: impl Fn(f64) -> f64,
    spurious: f64,
    phase_tol: impl Fn(f64) -> f64,
) {
    let lines = &e.diagnostics.lines;
    for &(f, a, p) in &LINES {
        let near: Vec<_> = lines
            .iter()
            .filter(|l| (l.position - f).abs() < 0.01)
            .collect();
        assert_eq!(
            near.len(),
            1,
            "{what}: line {f} reported {} times: {lines:?}",
            near.len()
        );
        let l = near[0];
        assert!(
            (l.position - f).abs() < tol(a),
            "{what}: line {f} at {} (tolerance {})",
            l.position,
            tol(a)
        );
        let freq = l.frequency.expect("time records carry a frequency");
        assert!(
            (freq - l.position * rate).abs() < 1e-9 * rate.max(1.0),
            "{what}"
        );
        assert!(
            (l.amplitude.norm() / a - 1.0).abs() < 0.1,
            "{what}: |A| {} for {a}",
            l.amplitude.norm()
        );
        // The phase refers to the index origin n = 0 of the user's numbering.
        let d = (l.amplitude * Complex64::from_polar(1.0, -p)).arg();
        assert!(
            d.abs() < phase_tol(a),
            "{what}: phase off by {d} rad at {f}"
        );
    }
    let others: Vec<_> = lines
        .iter()
        .filter(|l| {
            LINES
                .iter()
                .all(|&(f, _, _)| (l.position - f).abs() >= 0.01)
        })
        .filter(|l| l.amplitude.norm() >= spurious)
        .collect();
    assert!(others.is_empty(), "{what}: spurious lines {others:?}");
    assert!(
        lines.iter().all(|l| (0.0..=0.5).contains(&l.position)),
        "{what}: a real record's lines lie in [0, 1/2]: {lines:?}"
    );
}

#[test]
fn every_method_reports_each_cosine_once() {
    let sigma = 0.05;
    let n = 256;
    let idx: Vec<i64> = (0..n as i64).collect();
    let data = Measurements::from_real_subset(&idx, &record(&idx, 2.0, 0.0, sigma, 7))
        .unwrap()
        .with_trend(Trend::Mean)
        .unwrap();
    for name in method_names() {
        // The number of lines where the method takes it (a real record's lines count once).
        let takes_order = finespike::registry::method(name).unwrap().takes_order;
        let options = MethodOptions {
            noise: NoiseLevel::Known(sigma),
            order: takes_order.then_some(LINES.len()),
            ..MethodOptions::default()
        };
        let configured = configure(name, &options).unwrap();
        let e = configured.estimator.estimate(&data).unwrap();
        assert!(e.status.is_usable(), "{name}: {}", e.status);
        // Five bound standard deviations (a single draw; 5σ is exceeded with probability 6e-7).
        check_lines(
            name,
            &e,
            1.0,
            |a| 5.0 * kay_std(n, a, sigma),
            0.1,
            |a| phase_tol(n, 127.5, a, sigma),
        );
        // The offset is the trend's constant, fitted jointly with the lines.
        let trend = e.diagnostics.trend.as_ref().expect("a record with a trend");
        assert!(
            (trend.coefficients[0].re - 2.0).abs() < 0.02,
            "{name}: {trend:?}"
        );
    }
}

#[test]
fn exact_real_record_is_recovered_exactly_by_sdp() {
    let idx: Vec<i64> = (0..64).collect();
    let data = Measurements::from_real_subset(&idx, &record(&idx, 0.0, 0.0, 0.0, 1)).unwrap();
    let configured = configure(
        "sdp",
        &MethodOptions {
            noise: NoiseLevel::Exact,
            ..MethodOptions::default()
        },
    )
    .unwrap();
    let e = configured.estimator.estimate(&data).unwrap();
    assert!(e.status.is_usable(), "{}", e.status);
    check_lines("sdp exact", &e, 1.0, |_| 1e-8, 1e-6, |_| 1e-6);
    // The complex-model measure is the mirror-symmetric pairs.
    assert_eq!(e.spikes.len(), 2 * LINES.len());
}

#[test]
fn index_origin_rate_gaps_and_a_linear_trend() {
    // Samples numbered from 1000 at 1000 Hz, a few short gaps, offset 2 and slope 1e-3 per sample.
    let rate = 1000.0;
    let idx: Vec<i64> = (1000..1512)
        .filter(|n| !matches!(n % 97, 3..=6) && n % 61 != 0)
        .collect();
    let sigma = 0.05;
    let data = Measurements::from_real_subset(&idx, &record(&idx, 2.0, 1e-3, sigma, 3))
        .unwrap()
        .with_trend(Trend::Linear)
        .unwrap()
        .with_scale(Scale::SampleRate(rate))
        .unwrap();
    assert_eq!(data.band_len(), 512, "the span first..=last sets N");
    assert_eq!(data.user_span(), (1000, 1511));
    assert!((data.resolution() - rate / 512.0).abs() < 1e-12);
    for name in ["sdp", "grid", "greedy"] {
        let configured = configure(
            name,
            &MethodOptions {
                noise: NoiseLevel::Known(sigma),
                ..MethodOptions::default()
            },
        )
        .unwrap();
        let e = configured.estimator.estimate(&data).unwrap();
        assert!(e.status.is_usable(), "{name}: {}", e.status);
        check_lines(
            name,
            &e,
            rate,
            |a| 5.0 * kay_std(idx.len(), a, sigma),
            0.1,
            |a| phase_tol(idx.len(), 1255.5, a, sigma),
        );
        let trend = e.diagnostics.trend.as_ref().unwrap();
        // p(n) = 2 + 1e-3 n = (2 + 1e-3·centre) + 1e-3 (n − centre).
        let c0 = 2.0 + 1e-3 * trend.centre;
        assert!(
            (trend.coefficients[0].re - c0).abs() < 0.02,
            "{name}: {trend:?}"
        );
        assert!(
            (trend.coefficients[1].re - 1e-3).abs() < 1e-4,
            "{name}: {trend:?}"
        );
        assert!(
            !e.diagnostics.warnings.iter().any(|w| matches!(
                w,
                Warning::NearZeroFrequency { .. } | Warning::CancellingPair { .. }
            )),
            "{name}: {:?}",
            e.diagnostics.warnings
        );
    }
}

#[test]
fn an_offset_left_in_is_named_as_such() {
    // No trend fitted: the offset comes back as a line at zero frequency, with a warning that says
    // what it most likely is.
    let idx: Vec<i64> = (0..128).collect();
    let data = Measurements::from_real_subset(&idx, &record(&idx, 2.0, 1e-2, 0.05, 5)).unwrap();
    let configured = configure(
        "sdp",
        &MethodOptions {
            noise: NoiseLevel::Known(0.05),
            ..MethodOptions::default()
        },
    )
    .unwrap();
    let e = configured.estimator.estimate(&data).unwrap();
    assert!(
        e.diagnostics
            .warnings
            .iter()
            .any(|w| matches!(w, Warning::NearZeroFrequency { .. })),
        "{:?}",
        e.diagnostics.warnings
    );
}
