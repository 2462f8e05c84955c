//! Unit tests of the parent module (compiled only under `cfg(test)`: `unwrap` here is the assertion).
use super::*;
use crate::eval::scenario::{AmplitudeKind, Scenario};
use crate::kernels::hankel_svd::lag_sums;
use crate::kernels::refine::{refine, RefineSettings};
use crate::model::Domain;
use num_complex::Complex64;

fn mean_sd(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    let v = x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / (n - 1.0);
    (m, v.sqrt())
}

/// Exact data with more spikes than half the Hankel window (6 spikes 1/fc apart in 17
/// coefficients, an invented scene): the numerical rank, not the median rule, separates signal
/// from rounding, so σ̂ is at rounding level and a recovery treats the data as exact.
#[test]
fn exact_data_with_many_spikes_are_exact() {
    let sample = Scenario::new(8, 6)
        .with_separation(1.0)
        .with_seed(1)
        .generate()
        .unwrap();
    let est = estimate_sigma(&sample.data).unwrap();
    assert!(est.sigma < 1e-12 * sample.data.norm(), "{est:?}");
    let (sigma, method) =
        resolve_noise(&sample.data, crate::estimator::NoiseLevel::Estimate).unwrap();
    assert_eq!(sigma, None);
    assert!(method.is_some(), "estimated, and detected as exact");
}

#[test]
fn monte_carlo_within_tolerance_at_fc16() {
    // fc = 16 (R = 33, L = P = 17), three spikes 1.5/fc apart, complex amplitudes, 60 seeded draws per
    // SNR (different seeds per SNR, so the noise shapes differ). Per draw σ̂/σ spreads by ≈ 11 %
    // (module docs), so the mean of 60 has a standard error ≈ 1.4 %. Two checks: the brief's 15 %
    // on the mean, and the tighter, spread-derived one: |mean − 1| ≤ 4 standard errors (a correct,
    // first-order unbiased estimator fails that with probability < 1e-4).
    for (i, snr) in [10.0, 20.0, 30.0].into_iter().enumerate() {
        let ratios: Vec<f64> = (0..60u64)
            .map(|seed| {
                let s = Scenario::new(16, 3)
                    .with_separation(1.5)
                    .with_snr_db(snr)
                    .with_seed(1000 * i as u64 + seed)
                    .generate()
                    .unwrap();
                estimate_sigma(&s.data).unwrap().sigma / s.sigma
            })
            .collect();
        let (m, sd) = mean_sd(&ratios);
        let se = sd / (ratios.len() as f64).sqrt();
        println!("{snr} dB: mean σ̂/σ = {m:.4}, spread {sd:.4}, standard error {se:.4}");
        assert!((m - 1.0).abs() < 0.15, "{snr} dB: mean σ̂/σ = {m}");
        assert!(
            (m - 1.0).abs() < 4.0 * se,
            "{snr} dB: mean {m}, standard error {se}"
        );
        assert!(sd < 0.2, "{snr} dB: spread {sd}");
    }
}

#[test]
fn noiseless_data_give_sigma_at_rounding_level() {
    for seed in 0..5 {
        let s = Scenario::new(16, 4).with_seed(seed).generate().unwrap();
        let e = estimate_sigma(&s.data).unwrap();
        // Noise singular values of exact data are O(ε‖H‖); σ̂ ≤ 1e-13‖y‖ leaves a factor ~500 over ε.
        println!("noiseless: σ̂/‖y‖ = {:.2e}", e.sigma / s.data.norm());
        assert!(
            e.sigma < 1e-13 * s.data.norm(),
            "{:e}",
            e.sigma / s.data.norm()
        );
    }
    let zero = Measurements::fourier(
        4,
        &[-4, -3, -2, -1, 0, 1, 2, 3, 4],
        &[Complex64::new(0.0, 0.0); 9],
    )
    .unwrap();
    assert_eq!(estimate_sigma(&zero).unwrap().sigma, 0.0);
}

#[test]
fn first_order_dof_removes_the_fit_bias() {
    // 400 draws at fc = 16 (L = P = 17), 3 spikes, 40 dB, with the true order, so that the count
    // itself is tested (not the order rule). Per draw σ̂²/σ² spreads by ≈ 22 %, so the mean of 400
    // has a standard error ≈ 1.1 %: the Hankel count must be within 4 standard errors of 1, while
    // the count for independent entries, (L − s)(P − s) = 196, would inflate the mean by ≈ 1.13.
    let mut ours = Vec::new();
    let mut iid = Vec::new();
    for seed in 0..400u64 {
        let s = Scenario::new(16, 3)
            .with_snr_db(40.0)
            .with_seed(seed)
            .generate()
            .unwrap();
        let y = s.data.values();
        let h = faer::Mat::<c64>::from_fn(17, 17, |a, b| c64::new(y[a + b].re, y[a + b].im));
        let svd = h.thin_svd().unwrap();
        let tail: f64 = svd
            .S()
            .column_vector()
            .iter()
            .skip(3)
            .map(|z| z.re * z.re)
            .sum();
        let s2 = s.sigma * s.sigma;
        let (u, v) = (lag_sums(svd.U(), 3, 17), lag_sums(svd.V(), 3, 17));
        ours.push(tail / noise_dof(17, 17, 3, &u, &v) / s2);
        iid.push(tail / 196.0 / s2);
    }
    let (m, sd) = mean_sd(&ours);
    let se = sd / 20.0;
    println!(
        "Hankel count: mean σ̂²/σ² = {m:.4} (se {se:.4}); independent-entry count: {:.4}",
        mean_sd(&iid).0
    );
    assert!(
        (m - 1.0).abs() < 4.0 * se,
        "mean σ̂²/σ² = {m} (standard error {se})"
    );
    let (mi, _) = mean_sd(&iid);
    assert!(mi > 1.08, "independent-entry count: mean {mi}");
}

/// Keep the band positions of `data` for which `keep` holds (a gapped copy of the record).
fn gapped(data: &Measurements, keep: impl Fn(usize) -> bool) -> Measurements {
    let sel: Vec<usize> = (0..data.len()).filter(|&i| keep(i)).collect();
    let idx: Vec<i64> = sel.iter().map(|&i| data.indices()[i]).collect();
    let val: Vec<Complex64> = sel.iter().map(|&i| data.values()[i]).collect();
    Measurements::in_band(data.kmin(), data.kmax(), &idx, &val, data.domain()).unwrap()
}

/// About 3 % of the samples missing in runs of 1 to 5 (seeded): run starts drawn with probability
/// 1/100 per index, run lengths uniform on 1..=5 (mean 3).
fn sparse_gaps(n: usize, seed: u64) -> Vec<bool> {
    use rand::{Rng, SeedableRng};
    let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
    let mut keep = vec![true; n];
    let mut i = 1;
    while i + 1 < n {
        if rng.gen_bool(0.01) {
            let len = rng.gen_range(1..=5);
            for k in keep.iter_mut().skip(i).take(len.min(n - 1 - i)) {
                *k = false;
            }
            i += len;
        }
        i += 1;
    }
    if keep.iter().all(|&k| k) {
        for k in keep.iter_mut().skip(n / 2).take(3) {
            *k = false;
        }
    }
    keep
}

/// A random half of the band (seeded), its two ends kept.
fn random_half(n: usize, seed: u64) -> Vec<bool> {
    use rand::{Rng, SeedableRng};
    let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
    (0..n)
        .map(|i| i == 0 || i == n - 1 || rng.gen_bool(0.5))
        .collect()
}

#[test]
fn gaps_use_the_fully_measured_windows() {
    let s = Scenario::new(16, 2)
        .with_snr_db(20.0)
        .with_seed(3)
        .generate()
        .unwrap();
    let g = gapped(&s.data, |i| i <= 21 || i % 3 == 0);
    let e = estimate_sigma(&g).unwrap();
    let SigmaMethod::GappedHankel { rows, windows, .. } = e.method else {
        panic!("{e:?}")
    };
    // The longest run alone (22 samples) would give an 11 × 12 matrix; the windows across the
    // gapped part add none of length 11, so the matrix is at least that large.
    assert!(rows.min(windows) >= 11, "{e:?}");
    let sparse = Measurements::in_band(
        -16,
        16,
        &[-16, -14, -12, -9, -8],
        &s.data.values()[..5],
        Domain::Fourier,
    )
    .unwrap();
    assert!(matches!(
        estimate_sigma(&sparse),
        Err(Error::RunTooShort { .. })
    ));
}

/// The gapped count reduces to the contiguous one for consecutive lags and windows: the same
/// matrix, two formulas (module docs).
#[test]
fn gapped_count_reduces_to_the_contiguous_count() {
    let s = Scenario::new(16, 3)
        .with_snr_db(20.0)
        .with_seed(4)
        .generate()
        .unwrap();
    let y = s.data.values();
    let h = faer::Mat::<c64>::from_fn(17, 17, |a, b| c64::new(y[a + b].re, y[a + b].im));
    let svd = h.thin_svd().unwrap();
    let (u, v) = (lag_sums(svd.U(), 3, 17), lag_sums(svd.V(), 3, 17));
    let lags: Vec<usize> = (0..17).collect();
    let a = noise_dof(17, 17, 3, &u, &v);
    let b = general_noise_dof(svd.U(), svd.V(), 3, &lags, &lags);
    assert!((a - b).abs() < 1e-9 * a, "{a} vs {b}");
}

/// Exact data with gaps (invented scenes, 3 spikes): a few per cent missing in short runs, and a
/// random half of the band, are both detected as exact, and the noise level resolves to exact data.
#[test]
fn exact_gapped_data_are_exact() {
    for seed in 0..4 {
        let s = Scenario::new(64, 3).with_seed(seed).generate().unwrap();
        let n = s.data.len();
        for keep in [sparse_gaps(n, seed), random_half(n, seed)] {
            let g = gapped(&s.data, |i| keep[i]);
            assert!(!g.is_contiguous());
            let e = estimate_sigma(&g).unwrap();
            assert!(e.sigma < 1e-12 * g.norm(), "seed {seed}: {e:?}");
            let (sigma, method) =
                resolve_noise(&g, crate::estimator::NoiseLevel::Estimate).unwrap();
            assert_eq!(sigma, None, "seed {seed}: {e:?}");
            assert!(
                matches!(method, Some(SigmaMethod::GappedHankel { .. })),
                "seed {seed}: {method:?}"
            );
        }
    }
}

/// Noisy data with about 3 % of the samples missing in runs of up to 5: σ̂/σ over 60 seeded draws
/// at fc = 64 (N = 129), 3 spikes, 20 dB. The contiguous spread at R = 129 is ≈ 5.5 % per draw
/// (module docs), so the mean of 60 has a standard error ≈ 0.7 %; the check is 4 of the measured
/// standard errors, plus the spread itself below 10 %.
#[test]
fn noisy_sparse_gaps_within_the_usual_spread() {
    let ratios: Vec<f64> = (0..60u64)
        .map(|seed| {
            let s = Scenario::new(64, 3)
                .with_snr_db(20.0)
                .with_seed(7000 + seed)
                .generate()
                .unwrap();
            let keep = sparse_gaps(s.data.len(), seed);
            let g = gapped(&s.data, |i| keep[i]);
            estimate_sigma(&g).unwrap().sigma / s.sigma
        })
        .collect();
    let (m, sd) = mean_sd(&ratios);
    let se = sd / (ratios.len() as f64).sqrt();
    println!("3 % gaps: mean σ̂/σ = {m:.4}, spread {sd:.4}");
    assert!((m - 1.0).abs() < 4.0 * se, "mean {m}, standard error {se}");
    assert!(sd < 0.1, "spread {sd}");
}

#[test]
fn time_domain_records_work() {
    let s = Scenario::new(32, 3)
        .with_amplitudes(AmplitudeKind::UnitModulus)
        .with_domain(Domain::Time)
        .with_snr_db(20.0)
        .with_seed(8)
        .generate()
        .unwrap();
    let e = estimate_sigma(&s.data).unwrap();
    // One draw at R = 65: spread ≈ 8 %, so 30 % is a ~4-sigma margin.
    assert!(
        (e.sigma / s.sigma - 1.0).abs() < 0.3,
        "{}",
        e.sigma / s.sigma
    );
}

#[test]
fn residual_count_is_three_real_parameters_per_spike() {
    // 200 draws at fc = 16, 3 spikes, 20 dB: refine the truth to the local least-squares fit and
    // average σ̂²/σ². Per draw σ̂²/σ² ~ χ²_{57}/57 has relative spread √(2/57) ≈ 19 %, so the mean of
    // 200 has standard error ≈ 1.3 %; 4 standard errors = 5.3 %. Counting 3 complex parameters per
    // spike (|K| − 3s) would put the mean at 28.5/24 ≈ 1.19, |K| − s at 28.5/30 ≈ 0.95.
    let mut r = Vec::new();
    for seed in 0..200u64 {
        let s = Scenario::new(16, 3)
            .with_snr_db(20.0)
            .with_seed(seed)
            .generate()
            .unwrap();
        let fit = refine(&s.data, &s.truth, RefineSettings::default())
            .unwrap()
            .spikes;
        let sig = residual_sigma(&s.data, &fit).unwrap();
        r.push((sig / s.sigma).powi(2));
    }
    let (m, _) = mean_sd(&r);
    println!("residual: mean σ̂²/σ² = {m:.4}");
    assert!((m - 1.0).abs() < 0.053, "mean σ̂²/σ² = {m}");
}

#[test]
fn residual_without_degrees_of_freedom_is_none() {
    let data = Measurements::fourier(1, &[-1, 0, 1], &[Complex64::new(1.0, 0.0); 3]).unwrap();
    let two = Spikes::from_parts(&[0.1, 0.5], &[Complex64::new(1.0, 0.0); 2]).unwrap();
    assert_eq!(residual_sigma(&data, &two), None);
    let one = Spikes::from_parts(&[0.1], &[Complex64::new(1.0, 0.0)]).unwrap();
    assert!(residual_sigma(&data, &one).is_some());
}

/// Dense scenes (invented, spikes 2/fc apart: 256 in 1025 coefficients exact, 256 in 2049 at 20 dB)
/// hold more lines than half the 256-row Hankel window: the estimate refuses instead of returning the
/// lines' leakage as σ (before, σ̂ came out 30 to 180 times too high on such scenes and `sdp` kept a
/// fifth of the spikes). The first is caught by the spectrum (more lines above its floor than it
/// sets aside), the second by the spread of the noise singular values. A scene of 80 well-separated
/// lines at 30 dB in 2049 coefficients, within the Hankel subspace's reach, is still estimated
/// (the spectrum's cap of 64 lines alone does not refuse it).
#[test]
fn too_many_lines_for_the_estimate_are_refused_not_guessed() {
    // Exact data are recognised by the rank rule while the spikes are fewer than the window, so the
    // exact scene has as many spikes as the window has rows.
    for (fc, snr) in [(512, None), (1024, Some(20.0))] {
        let mut sc = Scenario::new(fc, 256).with_separation(2.0).with_seed(3);
        if let Some(db) = snr {
            sc = sc.with_snr_db(db);
        }
        let sample = sc.generate().unwrap();
        let err = estimate_sigma(&sample.data).unwrap_err();
        assert!(
            matches!(err, Error::TooManyLinesForNoise { window: 256, .. }),
            "{snr:?}: {err:?}"
        );
        assert!(err.to_string().contains("give the noise level explicitly"));
    }
    let sample = Scenario::new(1024, 80)
        .with_separation(8.0)
        .with_snr_db(30.0)
        .with_seed(4)
        .generate()
        .unwrap();
    let est = estimate_sigma(&sample.data).unwrap();
    assert!(
        (est.sigma / sample.sigma - 1.0).abs() < 0.15,
        "{} against {}: {est:?}",
        est.sigma,
        sample.sigma
    );
}
