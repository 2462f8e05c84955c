//! The grid ℓ1 estimator (`grid`) on the reference cases of `tests/refdata` and seeded Scenario scenes
//! (invented).
mod common;

use common::{load_case, score};
use finespike::grid::{solve, GridL1, GridOperator, GridSettings};
use finespike::{Domain, Estimator, Measurements, Scenario, Status};
use num_complex::Complex64;

/// Noiseless reference cases at separation ≥ 1.26/fc, subsampled-band (`ss_`) and noiseless
/// time-domain (`td_`) cases: positions to 1e-8/fc after the continuous step (amplitudes to 1e-8 on
/// the full-band `nl_` cases). The final fit is the least-squares minimiser on the exact model, whose
/// error is rounding (~1e-16) times the conditioning of the fit (below 1e6 at these separations), so
/// 1e-8 has margin and still fails on any wrong or unpolished support (reference: ESPRIT ≤ 1e-14/fc on
/// these files, tests/refdata/README).
#[test]
fn noiseless_reference_cases_to_rounding_level() {
    for name in common::exact_case_names() {
        let c = load_case(&name);
        if name.starts_with("ss_") {
            assert!(!c.data.is_full_band(), "{name}");
        } else if name.starts_with("td_") {
            assert_eq!(c.data.domain(), Domain::Time, "{name}");
        }
        let est = GridL1::exact().estimate(&c.data).unwrap();
        assert_eq!(est.status, Status::Solved, "{name}");
        let amp_tol = if name.starts_with("nl_") {
            1e-8
        } else {
            f64::INFINITY
        };
        common::assert_exact_recovery(
            &name,
            &est.spikes,
            &c.truth.spikes,
            c.data.fc(),
            1e-8,
            amp_tol,
        );
    }
}

/// Noisy reference cases at SNR ≥ 20 dB (including the noisy time-domain case): nothing missed or
/// spurious, every position within 4 CRB standard deviations (reference CRB files, numpy, Stoica &
/// Nehorai 1989; a single draw exceeds 4σ with probability 6e-5 per spike).
#[test]
fn noisy_reference_cases_within_four_crb_deviations() {
    for name in common::noisy_case_names() {
        let c = load_case(&name);
        let sigma = c.truth.sigma.unwrap();
        let est = GridL1::with_sigma(sigma).estimate(&c.data).unwrap();
        assert_eq!(est.status, Status::Solved, "{name}");
        assert_eq!(est.diagnostics.sigma, Some(sigma));
        common::assert_within_four_crb(&name, &est.spikes, &c.truth.spikes, c.data.fc());
    }
}

/// With the noise level estimated from the data (`crate::noise`): all lines of a noisy case found.
#[test]
fn estimated_noise_level() {
    let c = load_case("nz_fc16_snr30");
    let est = GridL1::default().estimate(&c.data).unwrap();
    assert!(est.diagnostics.sigma_estimated);
    assert!(est.diagnostics.residual_ratio.is_some());
    assert_eq!(est.status, Status::Solved);
    let s = score(&est.spikes, &c.truth.spikes, c.data.fc());
    assert_eq!((s.found, s.spurious), (c.truth.spikes.len(), 0), "{s:?}");
}

/// A long record: 20 lines in 1024 time samples at 30 dB, all found, none spurious (the regime where
/// the grid-mismatch part of λ is the larger one: |K| = 1024, module docs).
#[test]
fn twenty_lines_in_a_long_record() {
    let sample = Scenario::new(512, 20)
        .with_separation(2.0)
        .with_snr_db(30.0)
        .with_domain(Domain::Time)
        .with_seed(4)
        .generate()
        .unwrap();
    let grid = GridL1::with_sigma(sample.sigma);
    let lambda = grid.lambda(&sample.data, Some(sample.sigma)).unwrap();
    let est = grid.estimate(&sample.data).unwrap();
    assert_eq!(est.status, Status::Solved);
    assert!(est.diagnostics.objective.is_some() && est.diagnostics.iterations > 0);
    let s = score(&est.spikes, &sample.truth, sample.data.fc());
    assert_eq!((s.found, s.spurious), (20, 0), "{s:?}");
    assert!(lambda > 0.0);
}

/// The duality gap at the returned point, recomputed here from the returned grid amplitudes with the
/// public operators (checked against the dense matrix in the unit tests), is at most the tolerance, and
/// the reported figures are the recomputed ones.
#[test]
fn duality_gap_at_the_returned_point_is_within_tolerance() {
    let c = load_case("nz_fc16_snr30");
    let sigma = c.truth.sigma.unwrap();
    for tol in [1e-4, 1e-8] {
        let settings = GridSettings::default().with_tolerance(tol).unwrap();
        let lambda = GridL1::with_sigma(sigma)
            .with_settings(settings)
            .lambda(&c.data, Some(sigma))
            .unwrap();
        let sol = solve(&c.data, lambda, &settings).unwrap();
        assert_eq!(sol.status, Status::Solved);
        let op = GridOperator::new(&c.data, sol.grid_len).unwrap();
        assert_eq!(sol.grid_len, 8 * c.data.band_len());
        let mut x = vec![Complex64::new(0.0, 0.0); sol.grid_len];
        for &(m, v) in &sol.support {
            x[m] = v;
        }
        let ax = op.apply(&x).unwrap();
        let y = c.data.values();
        let r: Vec<Complex64> = y.iter().zip(&ax).map(|(a, b)| a - b).collect();
        let atr = op.adjoint(&r).unwrap();
        let rr: f64 = r.iter().map(|v| v.norm_sqr()).sum();
        let l1: f64 = x.iter().map(|v| v.norm()).sum();
        let primal = 0.5 * rr + lambda * l1;
        // Dual feasible point θ = s·r with ‖A*θ‖_∞ ≤ λ; D(θ) = Re⟨y, θ⟩ − ½‖θ‖².
        let amax = atr.iter().map(|v| v.norm()).fold(0.0, f64::max);
        let scale = (lambda / amax).min(1.0);
        let yr: f64 = y.iter().zip(&r).map(|(a, b)| (a.conj() * b).re).sum();
        let dual = scale * yr - 0.5 * scale * scale * rr;
        let gap = (primal - dual) / primal;
        assert!(gap <= tol, "tol {tol}: gap {gap}");
        assert!(
            (gap - sol.relative_gap).abs() <= 1e-12,
            "{gap} vs {}",
            sol.relative_gap
        );
        assert!((primal - sol.objective).abs() <= 1e-12 * primal);
        assert!(sol.dual_objective <= sol.objective);
    }
}

/// The noise part of λ bounds ‖A*n‖_∞ (module docs: the union bound gives a failure probability of at
/// most M^{−1.25} per draw, 3e-4 here), and on pure noise the estimate is empty.
#[test]
fn noise_weight_bounds_the_correlation_of_pure_noise() {
    let clean = Scenario::new(64, 1).generate().unwrap().data;
    let zero = vec![Complex64::new(0.0, 0.0); clean.len()];
    for seed in 0..20 {
        let noise = Scenario::new(64, 1)
            .with_snr_db(0.0)
            .with_seed(seed)
            .generate()
            .unwrap();
        // Pure noise: the noisy data minus the clean data of the same draw.
        let clean_draw = Measurements::synthesize(
            &noise.truth,
            noise.data.kmin(),
            noise.data.kmax(),
            noise.data.indices(),
            Domain::Fourier,
        )
        .unwrap();
        let n: Vec<Complex64> = noise
            .data
            .values()
            .iter()
            .zip(clean_draw.values())
            .map(|(a, b)| a - b)
            .collect();
        let data = clean.with_values(&n).unwrap();
        let grid = GridL1::with_sigma(noise.sigma);
        let noise_only = grid.settings.eta
            * noise.sigma
            * ((data.len() as f64) * ((8 * data.band_len()) as f64).ln()).sqrt();
        let op = GridOperator::new(&data, 8 * data.band_len()).unwrap();
        let atn = op.adjoint(data.values()).unwrap();
        let amax = atn.iter().map(|v| v.norm()).fold(0.0, f64::max);
        assert!(amax < noise_only, "seed {seed}: {amax} vs {noise_only}");
        let est = grid.estimate(&data).unwrap();
        assert!(est.spikes.is_empty(), "seed {seed}");
        assert_eq!(est.status, Status::Solved);
    }
    // Zero data: no spike, solved, with or without a noise level.
    let data = clean.with_values(&zero).unwrap();
    for grid in [GridL1::exact(), GridL1::with_sigma(0.1)] {
        let est = grid.estimate(&data).unwrap();
        assert!(est.spikes.is_empty());
        assert_eq!(est.status, Status::Solved);
    }
}

/// An early stop is reported as such, never as solved.
#[test]
fn iteration_limit_is_reported() {
    let c = load_case("nl_fc16_s2p00_cx");
    let settings = GridSettings::default().with_max_iter(3).unwrap();
    let est = GridL1::exact()
        .with_settings(settings)
        .estimate(&c.data)
        .unwrap();
    assert_eq!(est.status, Status::IterationLimit);
    // Iterations are summed over the residual rounds, each stopped at the limit.
    assert!(est.diagnostics.iterations >= 3 && est.diagnostics.iterations % 3 == 0);
    let one_round = settings.with_rounds(1).unwrap();
    let est = GridL1::exact()
        .with_settings(one_round)
        .estimate(&c.data)
        .unwrap();
    assert_eq!(est.status, Status::IterationLimit);
    assert_eq!(est.diagnostics.iterations, 3);
    assert!(est
        .diagnostics
        .warnings
        .iter()
        .any(|w| matches!(w, finespike::Warning::NotConverged { .. })));
    let lambda = GridL1::exact().lambda(&c.data, None).unwrap();
    let sol = solve(&c.data, lambda, &settings).unwrap();
    assert_eq!(sol.status, Status::IterationLimit);
    assert!(sol.relative_gap > settings.tolerance);
}

/// The estimator by name, and bad input as typed errors.
#[test]
fn invalid_settings_are_errors() {
    assert!(finespike::registry::method("grid").is_ok());
    assert_eq!(finespike::estimator_by_name("grid").unwrap().name(), "grid");
    let s = GridSettings::default();
    assert!(s.with_oversample(1).is_err());
    assert!(s.with_oversample(65).is_err());
    assert!(s.with_max_iter(0).is_err());
    assert!(s.with_tolerance(0.0).is_err());
    assert!(s.with_tolerance(0.5).is_err());
    assert!(s.with_tolerance(f64::NAN).is_err());
    assert!(s.with_eta(-1.0).is_err());
    assert!(s.with_eta(f64::INFINITY).is_err());
    assert!(s.with_mismatch_fraction(0.0).is_err());
    assert!(s.with_mismatch_fraction(1.0).is_err());
    assert!(s.with_cluster_gap(5).is_err());
    assert!(s.with_cluster_gap(4).is_ok());
    assert!(s.with_rounds(0).is_err());
    assert!(s.with_rounds(11).is_err());
    let data = Scenario::new(4, 1).generate().unwrap().data;
    assert!(matches!(
        solve(&data, 0.0, &s),
        Err(finespike::Error::InvalidSetting { name: "lambda", .. })
    ));
    assert!(solve(&data, f64::NAN, &s).is_err());
    assert!(GridL1::with_sigma(f64::NAN).estimate(&data).is_err());
    // Fields written directly are checked when used.
    let mut direct = GridSettings {
        eta: f64::NAN,
        ..GridSettings::default()
    };
    assert!(direct.validated().is_err());
    assert!(GridL1::exact()
        .with_settings(direct)
        .estimate(&data)
        .is_err());
    assert!(solve(&data, 1.0, &direct).is_err());
    direct.eta = 1.5;
    direct.oversample = 0;
    assert!(GridL1::exact()
        .with_settings(direct)
        .estimate(&data)
        .is_err());
    assert!(GridL1::with_sigma(-1.0).estimate(&data).is_err());
    assert!(GridOperator::new(&data, data.band_len() - 1).is_err());
    let op = GridOperator::new(&data, data.band_len()).unwrap();
    assert!(op.apply(&[Complex64::new(0.0, 0.0); 3]).is_err());
    assert!(op.adjoint(&[Complex64::new(0.0, 0.0); 3]).is_err());
    let wide = Measurements::in_band(
        -(1i64 << 40),
        0,
        &[0, -7, -(1i64 << 39)],
        &[Complex64::new(1.0, 0.0); 3],
        Domain::Time,
    )
    .unwrap();
    assert!(matches!(
        GridL1::exact().estimate(&wide),
        Err(finespike::Error::TooLarge { .. })
    ));
}

/// Exact data with a 60 dB amplitude range (invented scene): the first LASSO round cannot see the weak
/// spike below the grid-mismatch weight (module docs: about 3 % of the strongest at oversample 8), the
/// residual rounds find it, and the final fit is exact to 1e-8/fc.
#[test]
fn residual_rounds_recover_a_weak_spike() {
    let truth = finespike::Spikes::from_parts(
        &[0.2, 0.45, 0.71],
        &[
            Complex64::new(1.0, 0.0),
            Complex64::new(0.0, -0.8),
            Complex64::from_polar(1e-3, 0.7),
        ],
    )
    .unwrap();
    let idx: Vec<i64> = (-16..=16).collect();
    let data = Measurements::synthesize(&truth, -16, 16, &idx, Domain::Fourier).unwrap();
    let one_round = GridSettings::default().with_rounds(1).unwrap();
    let est = GridL1::exact()
        .with_settings(one_round)
        .estimate(&data)
        .unwrap();
    let s = score(&est.spikes, &truth, 16.0);
    assert_eq!((s.found, s.spurious), (2, 0), "{s:?}");
    let est = GridL1::exact().estimate(&data).unwrap();
    assert_eq!(est.status, Status::Solved);
    let s = score(&est.spikes, &truth, 16.0);
    assert_eq!((s.found, s.spurious), (3, 0), "{s:?}");
    assert!(s.max_pos_err_fc <= 1e-8, "{s:?}");
}
