//! The certified continuous solver (`sfw`, `finespike::tv::sliding`) against the independent clarabel
//! path (`sdp` / `ast`) on every case both can run: the reference cases of `tests/refdata` and seeded
//! Scenario scenes (invented) with fc ≤ 24.
//!
//! Tolerances (why they are what they are):
//! - objective to 1e-6 relative: clarabel stops at a relative gap of 1e-8 and reports the mean of its
//!   primal and dual values; the SFW solution is certified to 1e-8 in `max|η|`, and the objective error
//!   is of the order of the duality gap, so 1e-6 leaves two orders of margin for both;
//! - positions to 1e-6/fc after the shared post-processing: both paths hand their support to the same
//!   least-squares polish on the exact model, whose minimiser is determined by the support alone, so the
//!   positions agree to the polish's rounding level (~1e-12/fc) once the supports match;
//! - certificate: `max|q| ≤ 1 + 1e-6` (the SDP path's own warning level), checked independently by
//!   direct sums on a 2^14-point grid (`DualPolynomial::eval`, the crate's brute-force reference).
mod common;

use common::{case_names, load_case, score};
use finespike::tv::{sliding, Problem};
use finespike::{
    wrap_distance, AmplitudeKind, Ast, Backend, Estimate, Estimator, Measurements, PostProcess,
    Scenario, Status, Tv, TvSettings,
};
use finespike::{Sfw, SlidingSettings};

const OBJ_TOL: f64 = 1e-6;

/// The clarabel path, whatever the size (the default switches to Sliding Frank–Wolfe at fc = 25).
fn interior() -> TvSettings {
    TvSettings::default().with_backend(Backend::InteriorPoint)
}
const POS_TOL_FC: f64 = 1e-6;

/// `max |q|` by direct sums on a fine grid (independent of the FFT grid and Newton polish).
fn fine_grid_max(q: &finespike::DualPolynomial) -> f64 {
    let m = 1 << 14;
    (0..m)
        .map(|j| q.eval(j as f64 / m as f64).norm())
        .fold(0.0, f64::max)
}

/// Same number of spikes, every position within `POS_TOL_FC / fc`.
fn assert_same_positions(name: &str, a: &finespike::Spikes, b: &finespike::Spikes, fc: f64) {
    assert_eq!(a.len(), b.len(), "{name}: {a:?} vs {b:?}");
    for (x, y) in a.iter().zip(b.iter()) {
        let d = wrap_distance(x.position, y.position) * fc;
        assert!(d <= POS_TOL_FC, "{name}: positions differ by {d:e}/fc");
    }
}

fn assert_objectives_agree(name: &str, ours: f64, theirs: f64) {
    let rel = (ours - theirs).abs() / theirs.abs().max(f64::MIN_POSITIVE);
    assert!(
        rel <= OBJ_TOL,
        "{name}: objective {ours} vs clarabel {theirs} (rel {rel:e})"
    );
}

fn assert_certified(name: &str, est: &Estimate) {
    assert_eq!(
        est.status,
        Status::Solved,
        "{name}: {:?}",
        est.diagnostics.warnings
    );
    let cert = est.diagnostics.certificate.unwrap();
    assert!(cert.max_modulus <= 1.0 + 1e-6, "{name}: {cert:?}");
    let fine = fine_grid_max(est.dual.as_ref().unwrap());
    assert!(
        fine <= 1.0 + 1e-6,
        "{name}: max |q| on the fine grid {fine}"
    );
}

/// Exact TV: `Sfw::exact()` against `Tv::exact()` (clarabel).
fn compare_exact(name: &str, data: &Measurements) {
    let ours = Sfw::exact().estimate(data).unwrap();
    let theirs = Tv::exact()
        .with_settings(interior())
        .estimate(data)
        .unwrap();
    assert!(
        theirs.status.is_usable(),
        "{name}: clarabel {}",
        theirs.status
    );
    assert_certified(name, &ours);
    assert_objectives_agree(
        name,
        ours.diagnostics.objective.unwrap(),
        theirs.diagnostics.objective.unwrap(),
    );
    assert_same_positions(name, &ours.spikes, &theirs.spikes, data.fc());
    // Same certificate checks as the SDP path: both certificates bounded by 1, both attain 1 on the
    // support (the SDP's after its polish moved the support by its own position error).
    let c_ours = ours.diagnostics.certificate.unwrap();
    assert!(
        (c_ours.min_on_support - 1.0).abs() < 1e-9,
        "{name}: {c_ours:?}"
    );
}

/// Constrained TV: `Sfw::with_sigma` against `Tv::with_sigma` (clarabel).
fn compare_constrained(name: &str, data: &Measurements, sigma: f64) {
    let ours = Sfw::with_sigma(sigma).estimate(data).unwrap();
    let theirs = Tv::with_sigma(sigma)
        .with_settings(interior())
        .estimate(data)
        .unwrap();
    assert!(
        theirs.status.is_usable(),
        "{name}: clarabel {}",
        theirs.status
    );
    assert_certified(name, &ours);
    assert_objectives_agree(
        name,
        ours.diagnostics.objective.unwrap(),
        theirs.diagnostics.objective.unwrap(),
    );
    assert_same_positions(name, &ours.spikes, &theirs.spikes, data.fc());
}

/// AST: `sliding::solve(Penalised { λ = τ })` against `Ast::with_sigma` (clarabel), whose reported
/// objective is `½‖y − x̂‖² + τ‖x̂‖_A` (offset included). Positions after the same post-processing.
fn compare_ast(name: &str, data: &Measurements, sigma: f64) {
    let ast = Ast::with_sigma(sigma).with_settings(interior());
    let tau = ast.tau(sigma, data.len());
    let theirs = ast.estimate(data).unwrap();
    assert!(
        theirs.status.is_usable(),
        "{name}: clarabel {}",
        theirs.status
    );
    let sol = sliding::solve(data, Problem::Penalised { tau }, &TvSettings::default()).unwrap();
    assert_eq!(sol.status, Status::Solved, "{name}");
    assert!(
        sol.certificate.max_modulus <= 1.0 + 1e-6,
        "{name}: {:?}",
        sol.certificate
    );
    assert!(fine_grid_max(&sol.dual) <= 1.0 + 1e-6, "{name}");
    // Optimality on the support: |η(τ_j)| = 1 (Duval & Peyré 2015, Prop. 3).
    assert!(
        (sol.certificate.min_on_support - 1.0).abs() < 1e-8,
        "{name}"
    );
    assert!(
        sol.objective - sol.lower_bound <= 1e-8 * sol.objective,
        "{name}: duality gap"
    );
    assert_objectives_agree(name, sol.objective, theirs.diagnostics.objective.unwrap());
    let ours = PostProcess::default()
        .apply(data, &sol.spikes.positions(), Some(sigma))
        .unwrap();
    assert_same_positions(name, &ours, &theirs.spikes, data.fc());
}

/// Noiseless reference cases at or above 1.26/fc, subsampled and time-domain cases.
#[test]
fn exact_reference_cases_agree_with_clarabel() {
    for name in common::exact_case_names() {
        let c = load_case(&name);
        compare_exact(&name, &c.data);
        // The truth is recovered (exact recovery theorem regime; reference: cvxpy + SCS ≤ 2e-7/fc).
        let est = Sfw::exact().estimate(&c.data).unwrap();
        common::assert_exact_recovery(
            &name,
            &est.spikes,
            &c.truth.spikes,
            c.data.fc(),
            1e-9,
            f64::INFINITY,
        );
    }
}

/// Noisy reference cases with fc ≤ 16 (SNR ≥ 20 dB, where the SDP path is tested too): constrained TV
/// and AST. (fc = 32 costs clarabel 4 s per solve; those cases are checked against the CRB below.)
#[test]
fn noisy_reference_cases_agree_with_clarabel() {
    for name in case_names("nz_")
        .into_iter()
        .filter(|n| !n.contains("snr10") && !n.contains("fc32"))
        .chain(case_names("td_").into_iter().filter(|n| n.contains("snr")))
    {
        let c = load_case(&name);
        let sigma = c.truth.sigma.unwrap();
        compare_constrained(&name, &c.data, sigma);
        compare_ast(&name, &c.data, sigma);
    }
}

/// Every noisy reference case at SNR ≥ 20 dB: nothing missed or spurious, every position within 4 CRB
/// standard deviations (one draw: 4σ is exceeded with probability 6e-5 per spike), certified.
#[test]
fn noisy_reference_cases_within_four_crb_deviations() {
    for name in case_names("nz_")
        .into_iter()
        .filter(|n| !n.contains("snr10"))
    {
        let c = load_case(&name);
        let sigma = c.truth.sigma.unwrap();
        let est = Sfw::with_sigma(sigma).estimate(&c.data).unwrap();
        assert_certified(&name, &est);
        common::assert_within_four_crb(&name, &est.spikes, &c.truth.spikes, c.data.fc());
    }
}

/// Seeded Scenario scenes at fc ∈ {8, 16, 24}: exact, noisy (constrained and AST) and subsampled.
#[test]
fn scenario_scenes_agree_with_clarabel() {
    for (i, fc) in [8usize, 16, 24].into_iter().enumerate() {
        let count = fc / 4;
        let seed = 100 + i as u64;
        let exact = Scenario::new(fc, count)
            .with_separation(1.5)
            .with_seed(seed)
            .generate()
            .unwrap();
        compare_exact(&format!("exact fc {fc}"), &exact.data);
        let positive = Scenario::new(fc, count)
            .with_separation(1.26)
            .with_amplitudes(AmplitudeKind::RealPositive)
            .with_seed(seed)
            .generate()
            .unwrap();
        compare_exact(&format!("positive fc {fc}"), &positive.data);
        let sub = Scenario::new(fc, count.max(2) - 1)
            .with_separation(2.5)
            .with_subset_fraction(0.7)
            .with_seed(seed)
            .generate()
            .unwrap();
        compare_exact(&format!("subsampled fc {fc}"), &sub.data);
        let noisy = Scenario::new(fc, count)
            .with_separation(2.0)
            .with_snr_db(25.0)
            .with_seed(seed)
            .generate()
            .unwrap();
        compare_constrained(&format!("noisy fc {fc}"), &noisy.data, noisy.sigma);
        compare_ast(&format!("noisy fc {fc}"), &noisy.data, noisy.sigma);
    }
}

/// Past the interior point's reach: fc = 200 (N = 401), exact and noisy, certified.
#[test]
fn larger_problems_are_certified() {
    let sample = Scenario::new(200, 12)
        .with_separation(1.5)
        .with_seed(9)
        .generate()
        .unwrap();
    let est = Sfw::exact().estimate(&sample.data).unwrap();
    assert_certified("fc 200 exact", &est);
    let s = score(&est.spikes, &sample.truth, 200.0);
    assert_eq!((s.found, s.spurious), (12, 0));
    assert!(s.max_pos_err_fc < 1e-9, "{s:?}");
    let noisy = Scenario::new(200, 12)
        .with_separation(2.0)
        .with_snr_db(20.0)
        .with_seed(9)
        .generate()
        .unwrap();
    let est = Sfw::with_sigma(noisy.sigma).estimate(&noisy.data).unwrap();
    assert_certified("fc 200 noisy", &est);
    let s = score(&est.spikes, &noisy.truth, 200.0);
    assert_eq!((s.found, s.spurious), (12, 0));
}

/// An even-length time record (N = 256, band −255..=0, one-sided): lines are recovered and certified.
#[test]
fn even_length_time_record_is_certified() {
    let truth = finespike::Spikes::from_parts(
        &[0.05, 0.21, 0.2165, 0.6, 0.93],
        &[
            num_complex::Complex64::new(1.0, 0.5),
            num_complex::Complex64::new(-0.7, 0.2),
            num_complex::Complex64::new(0.3, -0.9),
            num_complex::Complex64::new(0.0, 1.2),
            num_complex::Complex64::new(-0.5, -0.5),
        ],
    )
    .unwrap();
    let x: Vec<num_complex::Complex64> = (0..256)
        .map(|n| {
            truth
                .iter()
                .map(|s| {
                    s.amplitude
                        * num_complex::Complex64::from_polar(
                            1.0,
                            2.0 * std::f64::consts::PI * s.position * n as f64,
                        )
                })
                .sum()
        })
        .collect();
    let data = Measurements::from_time_samples(&x).unwrap();
    let est = Sfw::exact().estimate(&data).unwrap();
    assert_certified("time record", &est);
    let s = score(&est.spikes, &truth, data.fc());
    assert_eq!((s.found, s.spurious), (5, 0));
    assert!(s.max_pos_err_fc < 1e-9, "{s:?}");
    assert!(s.max_rel_amp_err < 1e-9, "{s:?}");
}

/// With the noise level estimated from the data (`crate::noise`), noisy data are solved as the
/// constrained problem and exact data are detected as exact.
#[test]
fn estimated_noise_level() {
    let c = load_case("nz_fc16_snr30");
    let est = Sfw::default().estimate(&c.data).unwrap();
    assert!(est.diagnostics.sigma_estimated);
    assert!(est.diagnostics.sigma.is_some());
    assert_certified("nz_fc16_snr30", &est);
    let s = score(&est.spikes, &c.truth.spikes, c.data.fc());
    assert_eq!((s.found, s.spurious), (c.truth.spikes.len(), 0), "{s:?}");
    let c = load_case("nl_fc16_s2p00_cx");
    let est = Sfw::default().estimate(&c.data).unwrap();
    assert_eq!(est.diagnostics.sigma, None);
    assert_certified("nl_fc16_s2p00_cx", &est);
}

/// An early stop is never reported as solved. A strong and a weak spike (invented): the weak one's peak
/// of |η| is far below half the strong one's, so it can only enter at a later iteration, which a
/// budget of one iteration does not allow.
#[test]
fn iteration_limit_is_reported_honestly() {
    let truth = finespike::Spikes::from_parts(
        &[0.2, 0.6],
        &[
            num_complex::Complex64::new(5.0, 0.0),
            num_complex::Complex64::new(0.0, 0.2),
        ],
    )
    .unwrap();
    let idx: Vec<i64> = (-16..=16).collect();
    let data = Measurements::synthesize(&truth, -16, 16, &idx, finespike::Domain::Fourier).unwrap();
    let settings =
        TvSettings::default().with_sliding(SlidingSettings::default().with_max_iter(1).unwrap());
    let est = Sfw::exact()
        .with_settings(settings)
        .estimate(&data)
        .unwrap();
    assert_eq!(est.status, Status::IterationLimit);
    assert!(!est.status.is_usable());
    assert!(est
        .diagnostics
        .warnings
        .iter()
        .any(|w| matches!(w, finespike::Warning::NotConverged { .. })));
    let sol = sliding::solve(&data, Problem::Penalised { tau: 0.01 }, &settings).unwrap();
    assert_eq!(sol.status, Status::IterationLimit);
    // With the default budget both are certified.
    let est = Sfw::exact().estimate(&data).unwrap();
    assert_certified("strong and weak", &est);
}

/// Zero data: μ = 0 is optimal and certified for every problem.
#[test]
fn zero_data_give_the_zero_measure() {
    let data = Measurements::full_band(6, &[num_complex::Complex64::new(0.0, 0.0); 13]).unwrap();
    for problem in [
        Problem::Exact,
        Problem::Constrained { delta: 0.1 },
        Problem::Penalised { tau: 0.1 },
    ] {
        let sol = sliding::solve(&data, problem, &TvSettings::default()).unwrap();
        assert_eq!(sol.status, Status::Solved);
        assert!(sol.spikes.is_empty());
        assert_eq!(sol.objective, 0.0);
    }
}

/// Bad input is a typed error.
#[test]
fn invalid_settings_and_problems_are_errors() {
    let s = TvSettings::default();
    let sl = SlidingSettings::default();
    assert!(sl.with_max_iter(0).is_err());
    assert!(sl.with_tolerance(0.0).is_err());
    assert!(sl.with_tolerance(f64::NAN).is_err());
    // A setting written directly into a field is checked when the solver runs.
    let mut direct = s;
    direct.sliding.max_iter = 0;
    let data = Scenario::new(4, 1).generate().unwrap().data;
    assert!(matches!(
        sliding::solve(&data, Problem::Exact, &direct),
        Err(finespike::Error::InvalidSetting {
            name: "max_iter",
            ..
        })
    ));
    assert!(Sfw::exact().with_settings(direct).estimate(&data).is_err());
    assert!(s.with_grid_oversample(4).is_err());
    assert!(s.with_time_limit(-1.0).is_err());
    assert!(s.with_weak_margin(0.7).is_err());
    let data = Scenario::new(4, 1).generate().unwrap().data;
    for bad in [
        Problem::Constrained { delta: -1.0 },
        Problem::Constrained { delta: f64::NAN },
        Problem::Penalised { tau: 0.0 },
        Problem::Penalised { tau: f64::INFINITY },
    ] {
        assert!(matches!(
            sliding::solve(&data, bad, &s),
            Err(finespike::Error::InvalidSetting { .. })
        ));
    }
    assert!(Sfw::with_sigma(-1.0).estimate(&data).is_err());
    // A few samples spread over an enormous band: the FFT grid would not fit, a typed error.
    let wide = Measurements::in_band(
        -(1i64 << 40),
        0,
        &[0, -7, -(1i64 << 39)],
        &[num_complex::Complex64::new(1.0, 0.0); 3],
        finespike::Domain::Time,
    )
    .unwrap();
    assert!(matches!(
        Sfw::exact().estimate(&wide),
        Err(finespike::Error::TooLarge { .. })
    ));
    assert_eq!(Sfw::exact().name(), "sfw");
}

/// Below the Rayleigh limit (0.3/fc and 0.6/fc, 3 spikes at fc = 8; 12 invented scenes each) the exact problem
/// can be degenerate: the TV minimiser need not be the truth, and the pre-certificate can fail. The
/// solver must then be honest: `Solved` only with a certificate bounded by 1 and an objective equal to
/// clarabel's; otherwise a status that is not `Solved` and a warning. In every case the reported lower
/// bound is a true lower bound (weak duality): it never exceeds clarabel's optimal value.
#[test]
fn degenerate_scenes_are_reported_honestly() {
    let mut solved = 0;
    for seed in 0..12u64 {
        for sep in [0.3, 0.6] {
            let name = format!("seed {seed} sep {sep}");
            let s = Scenario::new(8, 3)
                .with_separation(sep)
                .with_seed(seed)
                .generate()
                .unwrap();
            let theirs = Tv::exact()
                .with_settings(interior())
                .estimate(&s.data)
                .unwrap();
            let optimum = theirs.diagnostics.objective.unwrap();
            let sol = sliding::solve(&s.data, Problem::Exact, &TvSettings::default()).unwrap();
            assert!(
                sol.lower_bound <= optimum * (1.0 + OBJ_TOL),
                "{name}: {} > {optimum}",
                sol.lower_bound
            );
            let ours = Sfw::exact().estimate(&s.data).unwrap();
            if ours.status == Status::Solved {
                solved += 1;
                assert_certified(&name, &ours);
                assert_objectives_agree(&name, ours.diagnostics.objective.unwrap(), optimum);
            } else {
                assert!(!ours.diagnostics.warnings.is_empty(), "{name}");
            }
        }
    }
    // Most of these are certified (non-degenerate despite the small separation).
    assert!(solved >= 16, "only {solved} of 24 certified");
}

/// A wider sweep against clarabel (ignored: about a minute): 60 seeded scenes at fc ∈ {8, 12, 16},
/// separations 1.0–2.5/fc, complex and positive amplitudes, exact and 20–40 dB. Every certified `sfw`
/// answer must match clarabel's objective; every lower bound must lie below clarabel's optimum.
#[test]
#[ignore]
fn sweep_against_clarabel() {
    let mut certified = 0;
    let mut total = 0;
    for seed in 0..20u64 {
        for (j, fc) in [8usize, 12, 16].into_iter().enumerate() {
            let sep = 1.0 + 0.5 * ((seed as usize + j) % 4) as f64;
            let kind = if seed % 2 == 0 {
                AmplitudeKind::Complex
            } else {
                AmplitudeKind::RealPositive
            };
            let scene = Scenario::new(fc, fc / 4 + 1)
                .with_separation(sep)
                .with_amplitudes(kind)
                .with_seed(seed);
            let exact = scene.clone().generate().unwrap();
            let noisy = scene
                .with_snr_db(20.0 + (seed % 3) as f64 * 10.0)
                .generate()
                .unwrap();
            let name = format!("seed {seed} fc {fc} sep {sep}");
            for (label, data, problem, sdp) in [
                (
                    "exact",
                    &exact.data,
                    Problem::Exact,
                    Tv::exact()
                        .with_settings(interior())
                        .estimate(&exact.data)
                        .unwrap(),
                ),
                (
                    "constrained",
                    &noisy.data,
                    Problem::Constrained {
                        delta: Tv::delta(noisy.sigma, noisy.data.len()),
                    },
                    Tv::with_sigma(noisy.sigma)
                        .with_settings(interior())
                        .estimate(&noisy.data)
                        .unwrap(),
                ),
                (
                    "ast",
                    &noisy.data,
                    Problem::Penalised {
                        tau: Ast::with_sigma(noisy.sigma).tau(noisy.sigma, noisy.data.len()),
                    },
                    Ast::with_sigma(noisy.sigma)
                        .with_settings(interior())
                        .estimate(&noisy.data)
                        .unwrap(),
                ),
            ] {
                let optimum = sdp.diagnostics.objective.unwrap();
                let sol = sliding::solve(data, problem, &TvSettings::default()).unwrap();
                total += 1;
                assert!(
                    sol.lower_bound <= optimum * (1.0 + OBJ_TOL),
                    "{name} {label}: lower bound {} above clarabel {optimum}",
                    sol.lower_bound
                );
                if sol.status == Status::Solved {
                    certified += 1;
                    assert_objectives_agree(&format!("{name} {label}"), sol.objective, optimum);
                    assert!(fine_grid_max(&sol.dual) <= 1.0 + 1e-6, "{name} {label}");
                } else {
                    eprintln!("{name} {label}: {} (clarabel {})", sol.status, sdp.status);
                }
            }
        }
    }
    eprintln!("{certified} of {total} certified");
    assert!(certified * 10 >= total * 9);
}

/// `sdp` and `ast` switch to Sliding Frank–Wolfe from fc = 25 (band of 51 coefficients) and give the
/// interior point's answer there: exact, constrained (25 dB) and AST, invented scenes at fc = 25.
#[test]
fn automatic_backend_matches_the_interior_point_above_the_switch() {
    use finespike::tv::{interior::INTERIOR_POINT, AUTO_SWITCH_BAND_LEN};
    let scene = Scenario::new(25, 6).with_separation(1.5).with_seed(4);
    let exact = scene.clone().generate().unwrap();
    let noisy = scene.with_snr_db(25.0).generate().unwrap();
    assert_eq!(exact.data.band_len(), AUTO_SWITCH_BAND_LEN + 1);
    type Pair<'a> = (
        &'a str,
        Box<dyn Estimator>,
        Box<dyn Estimator>,
        &'a Measurements,
    );
    let pairs: [Pair; 3] = [
        (
            "exact",
            Box::new(Tv::exact()),
            Box::new(Tv::exact().with_settings(interior())),
            &exact.data,
        ),
        (
            "constrained",
            Box::new(Tv::with_sigma(noisy.sigma)),
            Box::new(Tv::with_sigma(noisy.sigma).with_settings(interior())),
            &noisy.data,
        ),
        (
            "ast",
            Box::new(Ast::with_sigma(noisy.sigma)),
            Box::new(Ast::with_sigma(noisy.sigma).with_settings(interior())),
            &noisy.data,
        ),
    ];
    for (name, auto, ipm, data) in pairs {
        let ours = auto.estimate(data).unwrap();
        let theirs = ipm.estimate(data).unwrap();
        assert_eq!(ours.method, theirs.method);
        assert_eq!(
            ours.diagnostics.solver,
            Some(finespike::tv::sliding::SLIDING_FRANK_WOLFE),
            "{name}"
        );
        assert_eq!(theirs.diagnostics.solver, Some(INTERIOR_POINT), "{name}");
        assert_eq!(ours.status, Status::Solved, "{name}");
        assert_certified(name, &ours);
        assert_objectives_agree(
            name,
            ours.diagnostics.objective.unwrap(),
            theirs.diagnostics.objective.unwrap(),
        );
        assert_same_positions(name, &ours.spikes, &theirs.spikes, data.fc());
        // Same diagnostics: noise level, residual check and plug-in CRB where there is noise.
        assert_eq!(ours.diagnostics.sigma, theirs.diagnostics.sigma, "{name}");
        assert_eq!(
            ours.diagnostics.crb_std_position_fc.is_some(),
            theirs.diagnostics.crb_std_position_fc.is_some(),
            "{name}"
        );
    }
    // Below the switch the interior point runs.
    let small = Scenario::new(24, 4)
        .with_separation(2.0)
        .with_seed(4)
        .generate()
        .unwrap();
    let est = Tv::exact().estimate(&small.data).unwrap();
    assert_eq!(est.diagnostics.solver, Some(INTERIOR_POINT));
}

/// Where Sliding Frank–Wolfe cannot certify an exact solution (8 spikes 0.3/fc apart at fc = 25, an
/// invented degenerate scene), the automatic backend falls back to the interior point and says so in
/// the diagnostics; forcing Sliding Frank–Wolfe reports a status that is not `Solved`.
#[test]
fn automatic_backend_falls_back_when_not_certified() {
    use finespike::tv::interior::INTERIOR_POINT;
    let s = Scenario::new(25, 8)
        .with_separation(0.3)
        .with_seed(0)
        .generate()
        .unwrap();
    let forced = Tv::exact()
        .with_settings(TvSettings::default().with_backend(Backend::SlidingFrankWolfe))
        .estimate(&s.data)
        .unwrap();
    assert_ne!(forced.status, Status::Solved);
    assert!(!forced.diagnostics.warnings.is_empty());
    let auto = Tv::exact().estimate(&s.data).unwrap();
    assert_eq!(auto.diagnostics.solver, Some(INTERIOR_POINT));
}

/// The interior point refuses a band past its memory limit at once, naming the sliding solver; the
/// same data solve with the sliding backend. (Invented scene: 3 spikes at fc = 128.)
#[test]
fn interior_point_refuses_long_bands_before_allocating() {
    let sample = Scenario::new(128, 3)
        .with_separation(2.0)
        .with_seed(5)
        .generate()
        .unwrap();
    let forced = Tv::exact().with_settings(interior());
    match forced.estimate(&sample.data) {
        Err(finespike::Error::TooLarge { advice, .. }) => assert!(advice.contains("sliding")),
        other => panic!("expected TooLarge, got {other:?}"),
    }
    let est = Tv::exact().estimate(&sample.data).unwrap();
    assert_eq!(est.status, Status::Solved);
    assert_eq!(est.spikes.len(), 3);
}

/// A noise level given far too low on a record of noise alone: the constrained solve would fit the
/// noise with ever more spikes. It must stop with a status that is not `solved` (the support guard
/// of the sliding solver) instead of running on. Invented scene: seeded noise only.
#[test]
fn noise_fitting_is_not_called_solved() {
    use num_complex::Complex64;
    use rand::rngs::StdRng;
    use rand::{Rng, SeedableRng};
    use rand_distr::StandardNormal;
    let n = 48usize;
    let mut rng = StdRng::seed_from_u64(3);
    let y: Vec<Complex64> = (0..n)
        .map(|_| {
            let (re, im): (f64, f64) = (rng.sample(StandardNormal), rng.sample(StandardNormal));
            Complex64::new(re, im)
        })
        .collect();
    let data = Measurements::from_time_samples(&y).unwrap();
    // σ a thousand times below the truth: the noise ball is far smaller than the noise.
    let est = Sfw::with_sigma(1e-3).estimate(&data).unwrap();
    // The support guard of the sliding solver stops it once the support would pass 2N/3 = 32
    // spikes (3 real unknowns per spike against 2 per sample).
    assert_ne!(est.status, Status::Solved, "{} spikes", est.spikes.len());
    assert!(est.spikes.len() <= 2 * n / 3, "{} spikes", est.spikes.len());
}

/// A noise level so large that the noise ball holds the data (`δ ≥ ‖y‖`) or the weight exceeds
/// `max |F*y|`: zero is the optimum, reported at once as solved with no spike and a certificate
/// `|q| ≤ 1`, instead of a solver run that ended in numerical failure at σ = 1e16 (invented scene).
#[test]
fn huge_noise_levels_give_the_zero_optimum_at_once() {
    let sample = Scenario::new(8, 2)
        .with_separation(2.0)
        .with_seed(4)
        .generate()
        .unwrap();
    let estimates = [
        Tv::with_sigma(1e16).estimate(&sample.data).unwrap(),
        Ast::with_sigma(1e4).estimate(&sample.data).unwrap(),
        Sfw::with_sigma(1e16).estimate(&sample.data).unwrap(),
    ];
    for est in estimates {
        assert_eq!(est.status, Status::Solved, "{}", est.method);
        assert!(est.spikes.is_empty());
        assert_eq!(est.diagnostics.solver, Some(finespike::tv::ZERO_OPTIMUM));
        assert!(est.diagnostics.certificate.unwrap().max_modulus <= 1.0);
    }
    // A noise level that leaves signal outside the ball still runs a solver.
    let est = Tv::with_sigma(1e-3).estimate(&sample.data).unwrap();
    assert_ne!(est.diagnostics.solver, Some(finespike::tv::ZERO_OPTIMUM));
    assert_eq!(est.spikes.len(), 2);
}
