//! The subspace baselines (`music`, `esprit`, `pencil`) against the exact forward model, the reference
//! cases of `tests/refdata`, and the Cramér–Rao bound.
//!
//! Tolerances (in Rayleigh units `1/fc`) come from the conditioning of each method on exact data:
//! - ESPRIT and matrix pencil: eigenvalues of the shift operator of a signal subspace that is exact to
//!   about `ε · s_1/s_r` (`s` the Hankel singular values). For the scenes here `s_1/s_r ≤ 1e3` (four
//!   spikes 0.3/fc apart; measured), which puts the errors near `1e-13`; the bound is the required
//!   `1e-10` (observed: ≤ 2e-14).
//! - Root-MUSIC: spikes are double roots of its polynomial, and a perturbation `δ` of the coefficients
//!   can move a double root by `O(√δ)`, about `1.5e-8` for rounding errors; the bound is the required
//!   `1e-6` (observed on these scenes: ≤ 4e-12, well inside the worst case).

mod common;

use common::{case_names, load_case, refdata, score};
use finespike::eval::io::parse_spikes_json;
use finespike::model::forward;
use finespike::subspace::{
    pseudospectrum, Decomposition, Esprit, MatrixPencil, Music, OrderMethod, OrderSelection,
    SubspaceSettings,
};
use finespike::{
    wrap_distance, AmplitudeKind, Domain, Error, Estimator, Measurements, RefineSettings, Scenario,
    Spikes,
};
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use std::f64::consts::PI;

/// ESPRIT and matrix pencil on exact data, in units of 1/fc (see the file docs).
const EXACT_TOL_FC: f64 = 1e-10;
/// Root-MUSIC on exact data, in units of 1/fc (see the file docs).
const MUSIC_TOL_FC: f64 = 1e-6;

fn given(r: usize) -> SubspaceSettings {
    SubspaceSettings::default()
        .with_order(OrderSelection::Given(r))
        .unwrap()
}

fn estimators(s: SubspaceSettings) -> Vec<(Box<dyn Estimator>, f64)> {
    vec![
        (Box::new(Esprit::new(s)), EXACT_TOL_FC),
        (Box::new(MatrixPencil::new(s)), EXACT_TOL_FC),
        (Box::new(Music::new(s)), MUSIC_TOL_FC),
    ]
}

/// Largest position error (Rayleigh units) after matching estimate and truth in sorted order; the
/// estimate must have exactly as many spikes.
fn max_error_fc(est: &Spikes, truth: &Spikes, fc: f64) -> f64 {
    assert_eq!(est.len(), truth.len(), "wrong number of spikes");
    let s = score(est, truth, fc);
    assert_eq!(s.found, truth.len(), "not every spike matched: {s:?}");
    s.max_pos_err_fc
}

fn noiseless_case_names() -> Vec<String> {
    let mut names = case_names("nl_");
    names.extend(case_names("td_").into_iter().filter(|n| !n.contains("snr")));
    names
}

#[test]
fn reference_cases_noiseless_all_three_methods() {
    // Exact data (Liao & Fannjiang 2016, ACHA 40(1): ≥ 2s samples suffice at any separation); the
    // nl_* families go down to 0.8/fc, the td_* ones are time-domain records.
    let names = noiseless_case_names();
    assert!(names.len() >= 27, "reference cases missing: {names:?}");
    for name in &names {
        let case = load_case(name);
        let fc = case.data.fc();
        let r = case.truth.spikes.len();
        for (m, tol) in estimators(given(r)) {
            let est = m.estimate(&case.data).unwrap();
            let err = max_error_fc(&est.spikes, &case.truth.spikes, fc);
            assert!(err <= tol, "{} on {name}: error {err:.3e}/fc", m.name());
            let order = est.diagnostics.model_order.unwrap();
            assert_eq!((order.order, order.method), (r, OrderMethod::Given));
            assert_eq!(est.method, m.name());
        }
    }
}

#[test]
fn reference_cases_numerical_rank_finds_the_order() {
    let s = SubspaceSettings::default()
        .with_order(OrderSelection::numerical_rank())
        .unwrap();
    for name in noiseless_case_names() {
        let case = load_case(&name);
        let est = Esprit::new(s).estimate(&case.data).unwrap();
        let order = est.diagnostics.model_order.unwrap();
        assert_eq!(order.method, OrderMethod::NumericalRank);
        assert_eq!(order.order, case.truth.spikes.len(), "{name}");
        let err = max_error_fc(&est.spikes, &case.truth.spikes, case.data.fc());
        assert!(err <= EXACT_TOL_FC, "{name}: {err:.3e}");
    }
}

#[test]
fn esprit_agrees_with_the_numpy_reference() {
    // Reference ESPRIT results (numpy, order from the truth) are accurate to ≤ 1e-14/fc on these
    // noiseless files (tests/refdata/README.md); ours must agree to the ESPRIT bound 1e-10/fc.
    // Amplitudes are least squares on the exact model: a position error δ/fc changes them by about
    // 2πδ·cond(Φ) relative, with cond(Φ) ≤ 1.3 on these scenes (measured), so ≤ 1e-9; bound 1e-8.
    let mut compared = 0;
    for name in noiseless_case_names() {
        let path = refdata().join(format!("reference/{name}.esprit.json"));
        let Ok(text) = std::fs::read_to_string(&path) else {
            continue;
        };
        let reference = parse_spikes_json(&text, &name).unwrap().spikes;
        let case = load_case(&name);
        let est = Esprit::new(given(reference.len()))
            .estimate(&case.data)
            .unwrap();
        let s = score(&est.spikes, &reference, case.data.fc());
        assert_eq!(s.found, reference.len(), "{name}");
        assert!(s.max_pos_err_fc <= EXACT_TOL_FC, "{name}: {s:?}");
        assert!(s.max_rel_amp_err <= 1e-8, "{name}: {s:?}");
        compared += 1;
    }
    assert!(compared >= 27, "only {compared} reference files found");
}

/// `x_n = Σ a_j exp(i2πf_j n)`, `n = 0..N`.
fn time_samples(freqs: &[f64], amps: &[Complex64], n: usize) -> Vec<Complex64> {
    (0..n)
        .map(|t| {
            freqs
                .iter()
                .zip(amps)
                .map(|(&f, &a)| a * Complex64::from_polar(1.0, 2.0 * PI * f * t as f64))
                .sum()
        })
        .collect()
}

#[test]
fn minimum_samples_any_separation_both_domains() {
    // s spikes from exactly N = 2s coefficients (the identifiability limit, Liao & Fannjiang 2016),
    // and from a little more, at separations far below the Rayleigh length 1/fc.
    let mut rng = StdRng::seed_from_u64(11);
    for s in [1usize, 2, 3, 4] {
        for n in [2 * s, 2 * s + 1, 4 * s + 1] {
            for sep_fc in [0.3, 0.7, 2.0] {
                let fc = (n as f64 - 1.0) / 2.0;
                if sep_fc / fc * s as f64 > 1.0 {
                    continue;
                }
                let start: f64 = rng.gen();
                let pos: Vec<f64> = (0..s)
                    .map(|j| (start + j as f64 * sep_fc / fc).rem_euclid(1.0))
                    .collect();
                let amps: Vec<Complex64> = (0..s)
                    .map(|_| {
                        Complex64::from_polar(rng.gen_range(0.5..1.5), rng.gen_range(0.0..2.0 * PI))
                    })
                    .collect();
                let truth = Spikes::from_parts(&pos, &amps).unwrap();
                let x = time_samples(&pos, &amps, n);
                let time = Measurements::from_time_samples(&x).unwrap();
                // Fourier band of N indices starting at an arbitrary k0 (a sub-band, not centred).
                let k0 = -(n as i64) / 2 + 3;
                let idx: Vec<i64> = (k0..k0 + n as i64).collect();
                let fourier = Measurements::in_band(
                    k0 - 2,
                    k0 + n as i64 + 1,
                    &idx,
                    &forward(&truth, &idx),
                    Domain::Fourier,
                )
                .unwrap();
                for data in [&time, &fourier] {
                    // Rayleigh units of the measured band: fc = (N − 1)/2.
                    for (m, tol) in estimators(given(s)) {
                        let est = m.estimate(data).unwrap();
                        let err = max_error_fc(&est.spikes, &truth, fc);
                        // The cluster at 0.3/fc with s = 4 has s_1/s_4 ≈ 1e2 – 1e3 (N = 8 – 17,
                        // measured): the worst conditioned scenes here, still far inside the bounds.
                        assert!(
                            err <= tol,
                            "{} s={s} N={n} sep={sep_fc}/fc {:?}: {err:.3e}",
                            m.name(),
                            data.domain()
                        );
                    }
                }
            }
        }
    }
}

#[test]
fn time_domain_sign_convention_matches_the_forward_model() {
    // x_n = a exp(+i2πfn) is stored with k = −n; a line at f = 0.1 must come out at τ = 0.1, not 0.9.
    let x = time_samples(
        &[0.1, 0.35],
        &[Complex64::new(2.0, 0.0), Complex64::new(0.0, 1.0)],
        12,
    );
    let data = Measurements::from_time_samples(&x).unwrap();
    for (m, _) in estimators(given(2)) {
        let est = m.estimate(&data).unwrap();
        let p = est.spikes.positions();
        assert!(
            (p[0] - 0.1).abs() < 1e-9 && (p[1] - 0.35).abs() < 1e-9,
            "{}",
            m.name()
        );
        // Amplitudes too, and the residual against the exact forward model.
        assert!((est.spikes.amplitudes()[0] - Complex64::new(2.0, 0.0)).norm() < 1e-7);
        assert!(est.diagnostics.residual_norm < 1e-7 * est.diagnostics.data_norm);
    }
}

#[test]
fn mdl_picks_the_true_order_on_noisy_reference_cases() {
    // Wax & Kailath (1985) MDL is consistent; on the nz_* cases at ≥ 20 dB it must find the truth.
    // Explicitly, and through the default (Auto), which must recognise noisy data and use MDL.
    let mdl = SubspaceSettings::default()
        .with_order(OrderSelection::Mdl)
        .unwrap();
    let mut checked = 0;
    for name in case_names("nz_") {
        if name.ends_with("snr10") {
            continue;
        }
        let case = load_case(&name);
        for settings in [mdl, SubspaceSettings::default()] {
            let est = Esprit::new(settings).estimate(&case.data).unwrap();
            let order = est.diagnostics.model_order.unwrap();
            assert_eq!(order.method, OrderMethod::Mdl);
            assert_eq!(order.order, case.truth.spikes.len(), "{name}");
            // With the right order, every line is found within a fraction of the Rayleigh length.
            let s = score(&est.spikes, &case.truth.spikes, case.data.fc());
            assert_eq!(s.found, case.truth.spikes.len(), "{name}: {s:?}");
        }
        checked += 1;
    }
    assert_eq!(checked, 9);
    // The time-domain noisy case, too.
    let case = load_case("td_n33_s2p00_snr20");
    let est = MatrixPencil::new(mdl).estimate(&case.data).unwrap();
    assert_eq!(
        est.diagnostics.model_order.unwrap().order,
        case.truth.spikes.len()
    );
}

#[test]
fn default_order_uses_the_numerical_rank_on_exact_data() {
    // MDL on exact data weighs rounding errors against each other (it picks wrong orders on several
    // nl_* cases); the default must detect exact data and count singular values above 1e-10·s_1.
    for name in noiseless_case_names() {
        let case = load_case(&name);
        let est = Esprit::default().estimate(&case.data).unwrap();
        let order = est.diagnostics.model_order.unwrap();
        assert_eq!(order.method, OrderMethod::NumericalRank, "{name}");
        assert_eq!(order.order, case.truth.spikes.len(), "{name}");
        assert_eq!(
            order.to_string(),
            format!("{} (numerical rank)", order.order)
        );
    }
}

#[test]
fn gaps_in_the_measured_set_are_unsupported() {
    for name in case_names("ss_") {
        let case = load_case(&name);
        assert!(!case.data.is_contiguous());
        for (m, _) in estimators(SubspaceSettings::default()) {
            let err = m.estimate(&case.data).unwrap_err();
            match &err {
                Error::NeedsContiguous { method, advice, .. } => {
                    assert_eq!(*method, m.name());
                    assert!(advice.contains("'sdp'"), "{advice}");
                }
                other => panic!("expected NeedsContiguous, got {other:?}"),
            }
            assert!(err.to_string().contains("accepts gaps"));
        }
        let p = pseudospectrum(&case.data, &SubspaceSettings::default(), 512);
        assert!(matches!(p, Err(Error::NeedsContiguous { .. })));
    }
}

#[test]
fn orders_and_windows_beyond_identifiability_are_typed_errors() {
    let case = load_case("nl_fc08_s1p00_cx"); // N = 17: at most 8 spikes
    assert!(Esprit::new(given(8)).estimate(&case.data).is_ok());
    for (m, _) in estimators(given(9)) {
        match m.estimate(&case.data) {
            Err(Error::InvalidSetting { name, value, .. }) => {
                assert_eq!(name, "order");
                assert!(value.starts_with("9 (window L = 9, N = 17"), "{value}");
            }
            other => panic!("expected InvalidSetting, got {other:?}"),
        }
    }
    let too_wide = SubspaceSettings::default().with_window(18).unwrap();
    assert!(matches!(
        Esprit::new(too_wide).estimate(&case.data),
        Err(Error::InvalidSetting { name: "window", .. })
    ));
    // A narrower window lowers the identifiable order: L = 4 allows 3.
    let narrow = given(4).with_window(4).unwrap();
    assert!(matches!(
        Music::new(narrow).estimate(&case.data),
        Err(Error::InvalidSetting { name: "order", .. })
    ));
    let one = Measurements::fourier(3, &[1], &[Complex64::new(1.0, 0.0)]).unwrap();
    assert!(matches!(
        Esprit::default().estimate(&one),
        Err(Error::RunTooShort { .. })
    ));
}

#[test]
fn window_and_forward_backward_settings_all_recover_exact_data() {
    let case = load_case("nl_fc16_s1p00_cx");
    let r = case.truth.spikes.len();
    let fc = case.data.fc();
    for window in [r + 1, 12, 17, 20, 33 - r + 1] {
        for fb in [false, true] {
            let s = given(r)
                .with_window(window)
                .unwrap()
                .with_forward_backward(fb);
            for (m, tol) in estimators(s) {
                let est = m.estimate(&case.data).unwrap();
                let err = max_error_fc(&est.spikes, &case.truth.spikes, fc);
                assert!(err <= tol, "{} L={window} fb={fb}: {err:.3e}", m.name());
            }
        }
    }
}

#[test]
fn randomized_and_dense_subspaces_agree() {
    // An invented noisy scene with N = 601, 6 lines at 10 dB. The randomized range finder's subspace
    // error after q power iterations is about (s_{r+p+1}/s_r)^{2q+1} (Halko, Martinsson & Tropp 2011,
    // Cor. 10.10, numbering recalled from memory): here s_r ≈ √(LM) ≈ 300 and the noise singular values ≈ σ(√L + √(2M)) ≈ 13, a ratio
    // ≈ 0.043, so ≈ 1.5e-7 for q = 2 (the default) and ≈ 5e-13 for q = 4. The position differences
    // follow (in units of 1/fc, bounds 1e-6 and 1e-10); both are far below the noise-induced error
    // (≈ 4e-3/fc here), which is what matters.
    let sample = Scenario::new(300, 6)
        .with_separation(3.0)
        .with_amplitudes(AmplitudeKind::UnitModulus)
        .with_snr_db(10.0)
        .with_seed(5)
        .generate()
        .unwrap();
    let base = given(6);
    let dense = Esprit::new(base.with_decomposition(Decomposition::Dense))
        .estimate(&sample.data)
        .unwrap();
    assert_eq!(dense.diagnostics.iterations, 0);
    let fc = sample.data.fc();
    for (q, bound) in [(2, 1e-6), (4, 1e-10)] {
        let s = base
            .with_decomposition(Decomposition::Randomized)
            .with_power_iterations(q)
            .unwrap();
        let fast = Esprit::new(s).estimate(&sample.data).unwrap();
        assert_eq!(fast.diagnostics.iterations, q);
        for (a, b) in dense.spikes.iter().zip(fast.spikes.iter()) {
            let d = wrap_distance(a.position, b.position) * fc;
            assert!(d < bound, "q = {q}: {d:.3e}/fc");
        }
        let sc = score(&fast.spikes, &sample.truth, fc);
        assert_eq!(sc.found, 6);
        assert!(sc.max_pos_err_fc < 0.02, "{sc:?}");
    }
}

#[test]
fn randomized_path_is_exact_on_exact_data() {
    // N = 201 > DENSE_MAX: the default settings take the randomized range finder, whose range is
    // exact for a rank-r matrix; invented scene, 5 spikes with the closest pair 0.5/fc apart.
    let sample = Scenario::new(100, 5)
        .with_separation(0.5)
        .with_seed(3)
        .generate()
        .unwrap();
    let fc = sample.data.fc();
    for (m, tol) in estimators(SubspaceSettings::default()) {
        let est = m.estimate(&sample.data).unwrap();
        assert_eq!(
            est.diagnostics.iterations,
            2,
            "{}: randomized path",
            m.name()
        );
        let order = est.diagnostics.model_order.unwrap();
        assert_eq!((order.order, order.method), (5, OrderMethod::NumericalRank));
        let err = max_error_fc(&est.spikes, &sample.truth, fc);
        assert!(err <= tol, "{}: {err:.3e}", m.name());
    }
}

#[test]
fn arbitrary_data_and_settings_never_panic() {
    // Pure noise, zeros and extreme scales, every window and order: an estimate or a typed error.
    let mut rng = StdRng::seed_from_u64(99);
    for trial in 0..300 {
        let n = rng.gen_range(2..40);
        let scale = [0.0, 1e-300, 1.0, 1e150][trial % 4];
        let x: Vec<Complex64> = (0..n)
            .map(|_| Complex64::new(rng.gen_range(-1.0..1.0), rng.gen_range(-1.0..1.0)) * scale)
            .collect();
        let data = Measurements::from_time_samples(&x).unwrap();
        let mut s = SubspaceSettings::default()
            .with_window(rng.gen_range(2..=n + 1))
            .unwrap()
            .with_forward_backward(rng.gen());
        s.order = match rng.gen_range(0..5) {
            0 => OrderSelection::Given(rng.gen_range(1..n + 2)),
            1 => OrderSelection::Mdl,
            2 => OrderSelection::Aic,
            3 => OrderSelection::numerical_rank(),
            _ => OrderSelection::Auto,
        };
        for (m, _) in estimators(s) {
            match m.estimate(&data) {
                Ok(est) => {
                    // A statistically chosen order may be pruned by the noise floor; any other is kept.
                    let order = est.diagnostics.model_order.unwrap();
                    if matches!(order.method, OrderMethod::Mdl | OrderMethod::Aic) {
                        assert!(est.spikes.len() <= order.order);
                    } else {
                        assert_eq!(est.spikes.len(), order.order);
                    }
                }
                Err(
                    Error::InvalidSetting { .. }
                    | Error::Numerical { .. }
                    | Error::RunTooShort { .. }
                    | Error::Underdetermined { .. },
                ) => {}
                Err(other) => panic!("unexpected error {other:?}"),
            }
        }
    }
}

#[test]
fn pseudospectrum_peaks_at_the_spikes() {
    let case = load_case("nl_fc16_s2p00_cx");
    let r = case.truth.spikes.len();
    let g = 4096;
    let p = pseudospectrum(&case.data, &given(r), g).unwrap();
    assert_eq!(p.positions.len(), g);
    assert_eq!(p.window, 17);
    assert!(p.values.iter().all(|&v| v >= 1.0 - 1e-12));
    // Each true spike has a grid point within half a grid step whose value dwarfs the median.
    let mut sorted = p.values.clone();
    sorted.sort_by(f64::total_cmp);
    let median = sorted[g / 2];
    for t in &case.truth.spikes {
        let m = (t.position * g as f64).round() as usize % g;
        let local = (m + g - 2..=m + g + 2)
            .map(|i| p.values[i % g])
            .fold(0.0, f64::max);
        assert!(local > 1e3 * median, "peak at {} only {local}", t.position);
    }
    assert!(matches!(
        pseudospectrum(&case.data, &given(r), 8),
        Err(Error::InvalidSetting {
            name: "grid_len",
            ..
        })
    ));
}

#[test]
fn refinement_is_available_and_never_worsens_the_fit() {
    let case = load_case("nz_fc16_snr20");
    let r = case.truth.spikes.len();
    let plain = Esprit::new(given(r)).estimate(&case.data).unwrap();
    let polished = Esprit::new(given(r).with_refine(Some(RefineSettings::default())))
        .estimate(&case.data)
        .unwrap();
    assert!(polished.diagnostics.residual_norm <= plain.diagnostics.residual_norm);
    assert!(polished.diagnostics.iterations >= 1);
    assert_eq!(plain.diagnostics.iterations, 0);
}

#[test]
fn aic_and_order_cap() {
    let case = load_case("nz_fc32_snr40");
    let r = case.truth.spikes.len();
    let aic = SubspaceSettings::default()
        .with_order(OrderSelection::Aic)
        .unwrap();
    let est = Esprit::new(aic).estimate(&case.data).unwrap();
    let order = est.diagnostics.model_order.unwrap();
    assert_eq!(order.method, OrderMethod::Aic);
    // AIC is not consistent (Wax & Kailath 1985): it may overestimate, never underestimate here.
    assert!(order.order >= r);
    let capped = SubspaceSettings::default().with_max_order(r - 1).unwrap();
    let est = Esprit::new(capped).estimate(&case.data).unwrap();
    assert_eq!(est.diagnostics.model_order.unwrap().order, r - 1);
}

// ---- Monte Carlo against the Cramér–Rao bound -------------------------------------------------

/// RMSE of ESPRIT positions over `draws` scenes, divided by the root of the mean CRB.
fn esprit_rmse_over_crb(fc: usize, snr_db: f64, draws: u64) -> (f64, f64, f64) {
    let mut se = 0.0;
    let mut crb = 0.0;
    let mut count = 0.0;
    for seed in 0..draws {
        let sample = Scenario::new(fc, 3)
            .with_separation(4.0)
            .with_amplitudes(AmplitudeKind::UnitModulus)
            .with_snr_db(snr_db)
            .with_seed(1000 + seed)
            .generate()
            .unwrap();
        let est = Esprit::new(given(3)).estimate(&sample.data).unwrap();
        let bound = finespike::crb_for(&sample.data, &sample.truth, sample.sigma).unwrap();
        for ((e, t), b) in est
            .spikes
            .iter()
            .zip(sample.truth.iter())
            .zip(&bound.per_spike)
        {
            se += wrap_distance(e.position, t.position).powi(2);
            crb += b.std_position.powi(2);
            count += 1.0;
        }
    }
    let rmse = (se / count).sqrt();
    let root_crb = (crb / count).sqrt();
    (rmse, root_crb, rmse / root_crb)
}

#[test]
#[ignore = "Monte Carlo, 3 × 200 draws: run with --ignored (also examples/subspace_montecarlo.rs)"]
fn esprit_monte_carlo_is_near_the_cramer_rao_bound() {
    // ESPRIT is close to efficient for well-separated lines at moderate to high SNR (Stoica &
    // Söderström 1991, IEEE TSP 39(8), recalled from memory); the brief's bound: RMSE ≤ 1.3 √CRB.
    for snr in [20.0, 30.0, 40.0] {
        let (rmse, root_crb, ratio) = esprit_rmse_over_crb(16, snr, 200);
        println!("SNR {snr} dB: RMSE {rmse:.3e}, √CRB {root_crb:.3e}, ratio {ratio:.3}");
        assert!(ratio <= 1.3, "SNR {snr}: ratio {ratio}");
    }
}

/// The subspace baselines carry the noise diagnostics of every estimate: σ estimated from the data
/// (or given), the residual check and the plug-in CRB; exact data report no noise level. Invented
/// scene: fc = 32, 3 lines 2/fc apart, 30 dB.
#[test]
fn noise_diagnostics_are_reported() {
    let noisy = Scenario::new(32, 3)
        .with_separation(2.0)
        .with_snr_db(30.0)
        .with_seed(9)
        .generate()
        .unwrap();
    let est = Esprit::default().estimate(&noisy.data).unwrap();
    let d = &est.diagnostics;
    assert!(d.sigma_estimated);
    let sigma = d.sigma.unwrap();
    // One draw of the Hankel-subspace estimate at 65 samples: within 30 %. Its spread is about 8 %
    // (measured 5.5 % at 129 samples, src/noise.rs docs, scaled by √(129/65); a rule of thumb).
    assert!(
        (sigma / noisy.sigma - 1.0).abs() < 0.3,
        "{sigma} vs {}",
        noisy.sigma
    );
    assert_eq!(d.crb_std_position_fc.as_ref().map(Vec::len), Some(3));
    assert!(d.residual_ratio.is_some());

    let given = Music::new(
        SubspaceSettings::default()
            .with_noise(finespike::NoiseLevel::Known(noisy.sigma))
            .unwrap(),
    )
    .estimate(&noisy.data)
    .unwrap();
    assert_eq!(given.diagnostics.sigma, Some(noisy.sigma));
    assert!(!given.diagnostics.sigma_estimated);

    let exact = Scenario::new(32, 3)
        .with_separation(2.0)
        .with_seed(9)
        .generate()
        .unwrap();
    let est = MatrixPencil::default().estimate(&exact.data).unwrap();
    assert_eq!(est.diagnostics.sigma, None);
    assert!(est.diagnostics.crb_std_position_fc.is_none());
    assert!(SubspaceSettings::default()
        .with_noise(finespike::NoiseLevel::Known(-1.0))
        .is_err());
}

/// An over-estimated order (AIC on these invented 20 dB scenes, fc = 32, 3 lines 2/fc apart) leaves
/// extra components at the noise level; the default pruning (4σ floor and significance test, σ
/// estimated) removes them without losing a line, and without it they stay.
#[test]
fn pruning_removes_components_of_an_overestimated_order() {
    let (mut kept_spurious, mut pruned_spurious, mut pruned_missed) = (0, 0, 0);
    for seed in 0..20u64 {
        let sample = Scenario::new(32, 3)
            .with_separation(2.0)
            .with_snr_db(20.0)
            .with_seed(seed)
            .generate()
            .unwrap();
        let aic = SubspaceSettings::default()
            .with_order(OrderSelection::Aic)
            .unwrap();
        let pruned = Esprit::new(aic).estimate(&sample.data).unwrap();
        let kept = Esprit::new(aic.with_prune(false))
            .estimate(&sample.data)
            .unwrap();
        let s = score(&kept.spikes, &sample.truth, 32.0);
        kept_spurious += s.spurious;
        let s = score(&pruned.spikes, &sample.truth, 32.0);
        pruned_spurious += s.spurious;
        // A pruned order is said in the warnings.
        let order = pruned.diagnostics.model_order.unwrap().order;
        assert_eq!(
            pruned.spikes.len() < order,
            pruned
                .diagnostics
                .warnings
                .iter()
                .any(|w| matches!(w, finespike::Warning::OrderPruned { .. }))
        );
        pruned_missed += sample.truth.len() - s.found;
    }
    eprintln!("spurious without pruning {kept_spurious}, with {pruned_spurious}");
    assert!(
        kept_spurious >= 5,
        "AIC over-estimated only {kept_spurious} times"
    );
    assert_eq!((pruned_spurious, pruned_missed), (0, 0));
}

// ---- Long records: the Newton path of root-MUSIC and the limits before allocation -------------

/// An invented long record: `n` samples of three lines at 0.1, 0.35 and 0.8 cycles/sample.
fn long_exact_record(n: usize) -> Measurements {
    let x = time_samples(
        &[0.1, 0.35, 0.8],
        &[
            Complex64::new(1.0, 0.0),
            Complex64::new(0.0, 0.7),
            Complex64::new(-0.5, 0.5),
        ],
        n,
    );
    Measurements::from_time_samples(&x).unwrap()
}

/// Window L = 10 001 puts root-MUSIC's polynomial at degree 20 000, past the companion matrix
/// (degree ≤ 1024): the roots come from the pseudospectrum's peaks polished by Newton's method.
/// Invented scene: N = 20 000 samples, 5 lines at least 4 Rayleigh units apart, exact and 30 dB.
#[test]
fn music_finds_the_lines_of_a_long_record_without_a_companion_matrix() {
    for snr in [None, Some(30.0)] {
        let mut scene = Scenario::time_record(20_000, 5)
            .with_separation(4.0)
            .with_amplitudes(AmplitudeKind::UnitModulus)
            .with_seed(21);
        if let Some(db) = snr {
            scene = scene.with_snr_db(db);
        }
        let sample = scene.generate().unwrap();
        let music = Music::default().estimate(&sample.data).unwrap();
        let esprit = Esprit::default().estimate(&sample.data).unwrap();
        assert_eq!(music.spikes.len(), 5);
        // The seeding grid has 8·16384 points, a spacing of 7.6e-6 cycles/sample: the bounds below
        // need the Newton polish. Exact data: rounding level (bound 1e-10). At 30 dB the position
        // error is a few times the Cramér–Rao deviation √(6σ²/((2π)²|a|²N³)) ≈ 1.4e-9 (Rife &
        // Boorstyn 1974, IEEE TIT 20(5), single-tone form, recalled from memory): bound 1e-7, and
        // MUSIC and ESPRIT agree to the same bound.
        let bound = if snr.is_some() { 1e-7 } else { 1e-10 };
        for t in sample.truth.iter() {
            let nearest = |e: &finespike::Estimate| {
                e.spikes
                    .iter()
                    .map(|s| wrap_distance(s.position, t.position))
                    .fold(f64::INFINITY, f64::min)
            };
            assert!(nearest(&music) < bound, "{snr:?}: {:e}", nearest(&music));
            assert!(nearest(&esprit) < bound, "{snr:?}: {:e}", nearest(&esprit));
        }
    }
}

/// The noise-level estimate uses a 256-row Hankel matrix whose streamed QR costs about 2·N·256²
/// multiply–adds: past the work limit (2^38) near 1.9 million samples. A subspace method's randomized
/// range finder needs about 1.5 kB per sample with the default window: past the memory limit (1 GiB)
/// near 700 000 samples. Both refusals come at once, before any matrix is formed, and say what to do.
#[test]
fn records_past_the_limits_are_refused_at_once() {
    let data = long_exact_record(2_500_000);
    match finespike::estimate_sigma(&data) {
        Err(Error::TooLarge { method, advice, .. }) => {
            assert_eq!(method, "the noise-level estimate");
            assert!(advice.contains("sigma"), "{advice}");
        }
        other => panic!("expected TooLarge, got {other:?}"),
    }
    // Order estimated or given, noise level estimated or given: the subspace's own limit refuses
    // first, and the advice names the methods that can handle the record.
    let known = given(3)
        .with_noise(finespike::NoiseLevel::Known(0.01))
        .unwrap();
    for s in [SubspaceSettings::default(), known] {
        for (m, _) in estimators(s) {
            match m.estimate(&data) {
                Err(Error::TooLarge { method, advice, .. }) => {
                    assert_eq!(method, m.name());
                    assert!(advice.contains("'greedy'"), "{advice}");
                }
                other => panic!("expected TooLarge, got {other:?}"),
            }
        }
    }
}

/// The order choice's Hankel matrix with a raised order window: 1024 rows on 300 000 samples cost
/// about 7e11 multiply–adds, past the work limit; refused at once with the setting to change.
#[test]
fn an_order_window_past_the_work_limit_is_refused_at_once() {
    let data = long_exact_record(300_000);
    let s = SubspaceSettings::default().with_order_window(1024).unwrap();
    match Esprit::new(s).estimate(&data) {
        Err(Error::TooLarge {
            method,
            needed,
            advice,
            ..
        }) => {
            assert_eq!(method, "esprit");
            assert!(needed.contains("multiply-adds"), "{needed}");
            assert!(advice.contains("order_window"), "{advice}");
        }
        other => panic!("expected TooLarge, got {other:?}"),
    }
}

/// Every subspace step past the memory limit (1 GiB) is refused before it allocates: an order window
/// of 4000 rows (a streamed 4000 × 4000 factor and its SVD, about 5.6 GB), the dense decomposition of
/// a 10 001-row window, and a given order of 5000 with the randomized range finder (about 9.6 GB).
#[test]
fn subspace_steps_past_the_memory_limit_are_refused_at_once() {
    let data = long_exact_record(20_000);
    let wide_order = SubspaceSettings::default().with_order_window(4000).unwrap();
    let dense = given(3).with_decomposition(Decomposition::Dense);
    let many = given(5000);
    for (label, s) in [
        ("order window", wide_order),
        ("dense", dense),
        ("order", many),
    ] {
        for (m, _) in estimators(s) {
            match m.estimate(&data) {
                Err(Error::TooLarge { method, needed, .. }) => {
                    assert_eq!(method, m.name());
                    assert!(
                        needed.ends_with("GB of working memory"),
                        "{label}: {needed}"
                    );
                }
                other => panic!("{label}, {}: expected TooLarge, got {other:?}", m.name()),
            }
        }
    }
    // The same record with the defaults is within the limits.
    assert_eq!(Esprit::default().estimate(&data).unwrap().spikes.len(), 3);
}

/// A pseudospectrum grid past the memory limit (2^26 points, 40 bytes each) is refused before the
/// subspace is computed.
#[test]
fn pseudospectrum_grid_past_the_memory_limit_is_refused() {
    let case = load_case("nl_fc16_s2p00_cx");
    assert!(matches!(
        pseudospectrum(&case.data, &given(2), 1 << 26),
        Err(Error::TooLarge { .. })
    ));
}
