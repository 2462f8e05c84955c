//! The greedy continuous fit (`greedy`) on the reference cases of `tests/refdata` and seeded Scenario
//! scenes (invented).
mod common;

use common::{load_case, score};
use finespike::{Domain, Estimator, Scenario, Status};
use finespike::{Greedy, GreedySettings};

/// Noiseless reference cases at separation ≥ 1.26/fc, subsampled and time-domain cases: positions to
/// 1e-8/fc. The final fit is the least-squares minimiser on the exact model, whose error is rounding
/// (~1e-16) times the conditioning of the fit (below 1e6 at these separations), so 1e-8 has margin
/// and still fails on any wrong or unpolished support (reference: ESPRIT ≤ 1e-14/fc on these files).
#[test]
fn noiseless_reference_cases_to_rounding_level() {
    for name in common::exact_case_names() {
        let c = load_case(&name);
        let est = Greedy::exact().estimate(&c.data).unwrap();
        assert_eq!(est.status, Status::Solved, "{name}");
        common::assert_exact_recovery(&name, &est.spikes, &c.truth.spikes, c.data.fc(), 1e-8, 1e-8);
    }
}

/// Noisy reference cases at SNR ≥ 20 dB: nothing missed or spurious, every position within 4 CRB
/// standard deviations (a single draw: 4σ is exceeded with probability 6e-5 per spike).
#[test]
fn noisy_reference_cases_within_four_crb_deviations() {
    for name in common::noisy_case_names() {
        let c = load_case(&name);
        let sigma = c.truth.sigma.unwrap();
        let est = Greedy::with_sigma(sigma).estimate(&c.data).unwrap();
        assert_eq!(est.status, Status::Solved, "{name}");
        assert_eq!(est.diagnostics.sigma, Some(sigma));
        common::assert_within_four_crb(&name, &est.spikes, &c.truth.spikes, c.data.fc());
        // The stopping rule: ‖r‖² ≤ σ²(|K| + 2√|K|).
        let m = c.data.len() as f64;
        let r = est.diagnostics.residual_norm;
        assert!(
            r * r <= sigma * sigma * (m + 2.0 * m.sqrt()) * (1.0 + 1e-12),
            "{name}"
        );
    }
}

/// A long record: 20 lines in 1024 time samples at 30 dB, all found, none spurious.
#[test]
fn twenty_lines_in_a_long_record() {
    let sample = Scenario::new(512, 20)
        .with_separation(2.0)
        .with_snr_db(30.0)
        .with_domain(Domain::Time)
        .with_seed(4)
        .generate()
        .unwrap();
    let est = Greedy::with_sigma(sample.sigma)
        .estimate(&sample.data)
        .unwrap();
    assert_eq!(est.status, Status::Solved);
    let s = score(&est.spikes, &sample.truth, sample.data.fc());
    assert_eq!((s.found, s.spurious), (20, 0), "{s:?}");
}

/// With the noise level estimated from the data (`crate::noise`): all lines of a noisy case found.
#[test]
fn estimated_noise_level() {
    let c = load_case("nz_fc16_snr30");
    let est = Greedy::default().estimate(&c.data).unwrap();
    assert!(est.diagnostics.sigma_estimated);
    assert_eq!(est.status, Status::Solved);
    let s = score(&est.spikes, &c.truth.spikes, c.data.fc());
    assert_eq!((s.found, s.spurious), (c.truth.spikes.len(), 0), "{s:?}");
}

/// A requested count stops the fit there, with or without a noise level.
#[test]
fn count_stops_the_fit() {
    let sample = Scenario::new(32, 4)
        .with_separation(2.0)
        .with_seed(8)
        .generate()
        .unwrap();
    let est = Greedy::default()
        .with_count(2)
        .unwrap()
        .estimate(&sample.data)
        .unwrap();
    assert_eq!(est.status, Status::Solved);
    assert_eq!(est.spikes.len(), 2);
    let est = Greedy::exact()
        .with_count(4)
        .unwrap()
        .estimate(&sample.data)
        .unwrap();
    assert_eq!(est.spikes.len(), 4);
    let s = score(&est.spikes, &sample.truth, 32.0);
    assert!(s.max_pos_err_fc < 1e-8, "{s:?}");
}

/// An iteration limit is reported, not hidden.
#[test]
fn iteration_limit_is_reported() {
    let sample = Scenario::new(32, 4)
        .with_separation(2.0)
        .with_seed(8)
        .generate()
        .unwrap();
    let settings = GreedySettings::default().with_max_iter(1).unwrap();
    let est = Greedy::exact()
        .with_settings(settings)
        .estimate(&sample.data)
        .unwrap();
    assert_eq!(est.status, Status::IterationLimit);
    assert!(!est.diagnostics.warnings.is_empty());
}

/// Bad input is a typed error.
#[test]
fn invalid_settings_are_errors() {
    assert!(Greedy::default().with_count(0).is_err());
    let s = GreedySettings::default();
    assert!(s.with_max_iter(0).is_err());
    assert!(s.with_grid_oversample(2).is_err());
    assert!(s.with_floor_sigmas(-1.0).is_err());
    assert!(s.with_merge_distance_fc(0.9).is_err());
    let data = Scenario::new(4, 1).generate().unwrap().data;
    assert!(Greedy::with_sigma(f64::NAN).estimate(&data).is_err());
    let wide = finespike::Measurements::in_band(
        -(1i64 << 40),
        0,
        &[0, -7, -(1i64 << 39)],
        &[num_complex::Complex64::new(1.0, 0.0); 3],
        Domain::Time,
    )
    .unwrap();
    assert!(matches!(
        Greedy::exact().estimate(&wide),
        Err(finespike::Error::TooLarge { .. })
    ));
    assert_eq!(Greedy::exact().name(), "greedy");
}
