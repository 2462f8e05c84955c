//! Property tests: invariances of the measurement model that every estimate must respect, round trips
//! of the file formats, bounded certificates, and "typed error, never a panic" for any input.
//!
//! The model (crate docs, `design.md`): `y_k = Σ_j a_j exp(−i2πkτ_j)` for `k ∈ K`; time samples
//! `x_n = Σ_j a_j exp(i2πf_j n)` are the same model with `k = −n`, `τ_j = f_j`. Every scene is an
//! invented, seeded one (`Scenario`). Exact answers are only asked where exact recovery is proven:
//! spikes at least `2/fc` apart (Candès & Fernandez-Granda 2014, CPAM 67(6), Thm. 1.2); the
//! equivariance checks compare an estimate of transformed data with the transformed estimate of the
//! original data, with the fast methods (`sfw`, `esprit`).
//!
//! Case counts are chosen so that the file runs in well under a minute in `--release` on 2 cores.

use finespike::eval::io::{
    estimate_to_json, parse_samples, parse_spikes_json, samples_to_csv, SpikeFile,
};
use finespike::{
    estimator_by_name, wrap_distance, Ast, Complex64, Domain, Esprit, Estimate, Estimator,
    GreedySettings, GridSettings, InteriorPointSettings, Measurements, Scenario, Sfw,
    SlidingSettings, Spike, Spikes, Status, SubspaceSettings, Tv, TvSettings, Warning,
};
use proptest::prelude::*;
use std::f64::consts::PI;

/// `exp(iθ)`.
fn cis(theta: f64) -> Complex64 {
    Complex64::from_polar(1.0, theta)
}

/// Exact data of an invented scene: `count` spikes at cutoff `fc`, closest pair `separation/fc` apart.
fn scene(fc: usize, count: usize, separation: f64, seed: u64) -> (Spikes, Measurements) {
    let s = Scenario::new(fc, count)
        .with_separation(separation)
        .with_seed(seed)
        .generate()
        .expect("scene");
    (s.truth, s.data)
}

/// Exact time record of an invented scene: `n` samples, `count` lines, closest pair `separation/fc`
/// apart with `fc = (n − 1)/2`.
fn record(n: usize, count: usize, separation: f64, seed: u64) -> (Spikes, Measurements) {
    let s = Scenario::time_record(n, count)
        .with_separation(separation)
        .with_seed(seed)
        .generate()
        .expect("record");
    (s.truth, s.data)
}

/// The two fast estimators of the equivariance checks, for exact data.
fn fast_estimators() -> Vec<Box<dyn Estimator>> {
    vec![Box::new(Sfw::exact()), Box::new(Esprit::default())]
}

/// `a` and `b` hold the same spikes: same count, every spike of `a` within `pos_tol/fc` of one of
/// `b` (wrap-around) with an amplitude within `amp_tol` relative.
fn same_spikes(a: &Spikes, b: &Spikes, fc: f64, pos_tol: f64, amp_tol: f64) -> Result<(), String> {
    if a.len() != b.len() {
        return Err(format!(
            "{} spikes against {}: {a:?} vs {b:?}",
            a.len(),
            b.len()
        ));
    }
    for s in a {
        let t = b
            .iter()
            .min_by(|x, y| {
                wrap_distance(x.position, s.position)
                    .total_cmp(&wrap_distance(y.position, s.position))
            })
            .expect("non-empty");
        let d = wrap_distance(s.position, t.position) * fc;
        let e = (s.amplitude - t.amplitude).norm() / t.amplitude.norm().max(1e-300);
        if d > pos_tol || e > amp_tol {
            return Err(format!(
                "{s:?} against {t:?}: position error {d:e}/fc, amplitude error {e:e}"
            ));
        }
    }
    Ok(())
}

/// Apply `f` to every spike.
fn map_spikes(s: &Spikes, f: impl Fn(&Spike) -> Spike) -> Spikes {
    Spikes::new(s.iter().map(f).collect()).expect("finite spikes")
}

fn run(est: &dyn Estimator, data: &Measurements) -> Estimate {
    est.estimate(data)
        .unwrap_or_else(|e| panic!("{} failed: {e}", est.name()))
}

const POS_TOL: f64 = 1e-7;
const AMP_TOL: f64 = 1e-6;

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// Shifting every position by `s` shifts the estimate by `s` (mod 1) and rotates the amplitudes.
    ///
    /// Derivation: modulate the data about a reference index `k0`, `y'_k = exp(−i2π(k − k0)s) y_k`.
    /// Then `y'_k = Σ_j [a_j exp(i2πk0 s)] exp(−i2πk(τ_j + s))`: positions `τ_j + s` and amplitudes
    /// `a_j exp(i2πk0 s)` (with `k0 = 0` the amplitudes are unchanged).
    #[test]
    fn shift_moves_positions_and_rotates_phases(
        fc in 8usize..=24, count in 1usize..=4, extra in 0.0..1.0f64, seed in any::<u64>(),
        s in -2.0..2.0f64, k0 in -24i64..=24,
    ) {
        let count = count.min(fc / 4);
        let (_, data) = scene(fc, count, 2.0 + extra, seed);
        let y: Vec<Complex64> = data.indices().iter().zip(data.values())
            .map(|(&k, &v)| v * cis(-2.0 * PI * (k - k0) as f64 * s))
            .collect();
        let shifted = data.with_values(&y).unwrap();
        let factor = cis(2.0 * PI * k0 as f64 * s);
        for est in fast_estimators() {
            let before = run(est.as_ref(), &data).spikes;
            let after = run(est.as_ref(), &shifted).spikes;
            let expected = map_spikes(&before, |p| Spike::new(p.position + s, p.amplitude * factor));
            prop_assert_eq!(before.len(), count, "{} did not recover the scene", est.name());
            same_spikes(&after, &expected, data.fc(), POS_TOL, AMP_TOL)
                .map_err(|e| TestCaseError::fail(format!("{}: {e}", est.name())))?;
        }
    }

    /// A global phase `exp(iφ)` on the data rotates every amplitude by `exp(iφ)` and moves no position.
    #[test]
    fn global_phase_rotates_amplitudes(
        fc in 8usize..=24, count in 1usize..=4, seed in any::<u64>(), phi in -PI..PI,
    ) {
        let count = count.min(fc / 4);
        let (_, data) = scene(fc, count, 2.0, seed);
        let y: Vec<Complex64> = data.values().iter().map(|v| v * cis(phi)).collect();
        let rotated = data.with_values(&y).unwrap();
        for est in fast_estimators() {
            let before = run(est.as_ref(), &data).spikes;
            let after = run(est.as_ref(), &rotated).spikes;
            let expected = map_spikes(&before, |p| Spike::new(p.position, p.amplitude * cis(phi)));
            same_spikes(&after, &expected, data.fc(), POS_TOL, AMP_TOL)
                .map_err(|e| TestCaseError::fail(format!("{}: {e}", est.name())))?;
        }
    }

    /// Scaling the data by `c > 0` scales the amplitudes by `c` (the model is linear in `a`), also for
    /// estimators that estimate the noise level from the data (the estimate scales with the data).
    #[test]
    fn scaling_scales_amplitudes(
        fc in 8usize..=24, count in 1usize..=4, seed in any::<u64>(), log10c in -6.0..6.0f64,
    ) {
        let count = count.min(fc / 4);
        let c = 10f64.powf(log10c);
        let (_, data) = scene(fc, count, 2.0, seed);
        let y: Vec<Complex64> = data.values().iter().map(|v| v * c).collect();
        let scaled = data.with_values(&y).unwrap();
        let mut estimators = fast_estimators();
        estimators.push(Box::new(Sfw::default()));
        for est in estimators {
            let before = run(est.as_ref(), &data).spikes;
            let after = run(est.as_ref(), &scaled).spikes;
            let expected = map_spikes(&before, |p| Spike::new(p.position, p.amplitude * c));
            same_spikes(&after, &expected, data.fc(), POS_TOL, AMP_TOL)
                .map_err(|e| TestCaseError::fail(format!("{} (c = {c:e}): {e}", est.name())))?;
        }
    }

    /// Conjugating the data, or reversing the band, mirrors the positions; doing both moves none.
    ///
    /// Derivation: `conj(y_k) = Σ_j conj(a_j) exp(−i2πk(−τ_j))` (positions `−τ_j mod 1`, amplitudes
    /// conjugated); `y_{−k} = Σ_j a_j exp(−i2πk(−τ_j))` (positions `−τ_j`, amplitudes unchanged);
    /// so `conj(y_{−k}) = Σ_j conj(a_j) exp(−i2πkτ_j)` keeps the positions and conjugates the
    /// amplitudes.
    #[test]
    fn conjugation_and_reversal_mirror_positions(
        fc in 8usize..=24, count in 1usize..=4, seed in any::<u64>(),
    ) {
        let count = count.min(fc / 4);
        let (_, data) = scene(fc, count, 2.0, seed);
        // The band −fc..=fc is symmetric: index i holds k = i − fc, so k → −k reverses the values.
        let conj: Vec<Complex64> = data.values().iter().map(|v| v.conj()).collect();
        let rev: Vec<Complex64> = data.values().iter().rev().copied().collect();
        let both: Vec<Complex64> = data.values().iter().rev().map(|v| v.conj()).collect();
        for est in fast_estimators() {
            let before = run(est.as_ref(), &data).spikes;
            let cases: [(&str, &[Complex64], Spikes); 3] = [
                ("conjugated", &conj, map_spikes(&before, |p| Spike::new(-p.position, p.amplitude.conj()))),
                ("reversed", &rev, map_spikes(&before, |p| Spike::new(-p.position, p.amplitude))),
                ("conjugated and reversed", &both, map_spikes(&before, |p| Spike::new(p.position, p.amplitude.conj()))),
            ];
            for (what, values, expected) in cases {
                let after = run(est.as_ref(), &data.with_values(values).unwrap()).spikes;
                same_spikes(&after, &expected, data.fc(), POS_TOL, AMP_TOL)
                    .map_err(|e| TestCaseError::fail(format!("{} on {what} data: {e}", est.name())))?;
            }
        }
    }

    /// A time record that starts `n0` samples later, `x'_n = x_{n+n0} = Σ_j [a_j exp(i2πf_j n0)]
    /// exp(i2πf_j n)`, has the same frequencies and amplitudes rotated by `exp(i2πf_j n0)`.
    #[test]
    fn time_offset_changes_only_phases(
        n in 16usize..=48, count in 1usize..=4, seed in any::<u64>(), n0 in 1i64..=1000,
    ) {
        let fc = (n as f64 - 1.0) / 2.0;
        let count = count.min(n / 8);
        let (truth, data) = record(n, count, 2.0, seed);
        let later: Vec<Complex64> = (0..n as i64)
            .map(|m| truth.iter().map(|s| s.amplitude * cis(2.0 * PI * s.position * (m + n0) as f64)).sum())
            .collect();
        let later = Measurements::from_time_samples(&later).unwrap();
        for est in fast_estimators() {
            let before = run(est.as_ref(), &data).spikes;
            let after = run(est.as_ref(), &later).spikes;
            let expected = map_spikes(&before, |p| {
                Spike::new(p.position, p.amplitude * cis(2.0 * PI * p.position * n0 as f64))
            });
            same_spikes(&after, &expected, fc, POS_TOL, AMP_TOL)
                .map_err(|e| TestCaseError::fail(format!("{}: {e}", est.name())))?;
        }
    }

    /// Permuting the data rows of a sample CSV file changes nothing: the same measurements, and the
    /// same estimate bit for bit.
    #[test]
    fn csv_row_order_does_not_matter(
        fc in 4usize..=16, count in 1usize..=3, seed in any::<u64>(), time in any::<bool>(),
        perm_seed in any::<u64>(),
    ) {
        let count = count.min(fc / 2);
        let (_, data) = if time { record(2 * fc + 1, count, 2.0, seed) } else { scene(fc, count, 2.0, seed) };
        let csv = samples_to_csv(&data);
        let mut lines: Vec<&str> = csv.lines().collect();
        let header = lines.remove(0);
        // A seeded Fisher–Yates shuffle of the data rows.
        let mut state = perm_seed | 1;
        for i in (1..lines.len()).rev() {
            state ^= state << 13; state ^= state >> 7; state ^= state << 17;
            lines.swap(i, (state % (i as u64 + 1)) as usize);
        }
        let permuted = format!("{header}\n{}\n", lines.join("\n"));
        let fc_arg = (!time).then_some(fc);
        let a = parse_samples(&csv, "a.csv").unwrap().into_measurements(fc_arg).unwrap();
        let b = parse_samples(&permuted, "b.csv").unwrap().into_measurements(fc_arg).unwrap();
        prop_assert_eq!(&a, &b);
        let ea = run(&Esprit::default(), &a);
        let eb = run(&Esprit::default(), &b);
        prop_assert_eq!(ea.spikes, eb.spikes);
        prop_assert_eq!(ea.status, eb.status);
    }

    /// CSV round trip of measurements (`samples_to_csv` → `parse_samples`): the same indices and the
    /// same values bit for bit (Rust prints the shortest representation that reads back exactly).
    #[test]
    fn csv_round_trip(
        fc in 1usize..=20,
        keep in proptest::collection::vec(any::<bool>(), 41),
        raw in proptest::collection::vec((-1e300..1e300f64, -1e-300..1e-300f64), 41),
        time in any::<bool>(),
    ) {
        let n = 2 * fc + 1;
        // Keep a random subset, always with the band's edges so the band can be read back from the file.
        let chosen: Vec<usize> = (0..n).filter(|&i| keep[i] || i == 0 || i == n - 1).collect();
        let values: Vec<Complex64> = chosen.iter().map(|&i| Complex64::new(raw[i].0, raw[i].1)).collect();
        let (data, fc_arg) = if time {
            let times: Vec<i64> = chosen.iter().map(|&i| i as i64).collect();
            (Measurements::from_time_subset(&times, &values).unwrap(), None)
        } else {
            let idx: Vec<i64> = chosen.iter().map(|&i| i as i64 - fc as i64).collect();
            (Measurements::fourier(fc, &idx, &values).unwrap(), Some(fc))
        };
        let back = parse_samples(&samples_to_csv(&data), "r.csv").unwrap().into_measurements(fc_arg).unwrap();
        prop_assert_eq!(back.domain(), if time { Domain::Time } else { Domain::Fourier });
        prop_assert_eq!(back.indices(), data.indices());
        for (u, v) in back.values().iter().zip(data.values()) {
            prop_assert_eq!((u.re.to_bits(), u.im.to_bits()), (v.re.to_bits(), v.im.to_bits()));
        }
        prop_assert_eq!(back, data);
    }

    /// JSON round trip of spike files, and of an estimate's spikes through `estimate_to_json`.
    #[test]
    fn json_round_trip(
        parts in proptest::collection::vec((-10.0..10.0f64, -1e6..1e6f64, -1e6..1e6f64), 0..8),
        fc in proptest::option::of(1.0..1e4f64), sigma in proptest::option::of(0.0..10.0f64),
    ) {
        let spikes = Spikes::new(parts.iter().map(|&(p, re, im)| Spike::new(p, Complex64::new(re, im))).collect()).unwrap();
        let file = SpikeFile { fc, sigma, spikes: spikes.clone() };
        let text = serde_json::to_string(&file).unwrap();
        prop_assert_eq!(&parse_spikes_json(&text, "s.json").unwrap(), &file);
        if !spikes.is_empty() {
            let idx: Vec<i64> = (-8..=8).collect();
            let data = Measurements::synthesize(&spikes, -8, 8, &idx, Domain::Fourier).unwrap();
            let est = run(&Esprit::default(), &data);
            let back = parse_spikes_json(&estimate_to_json(&est), "e.json").unwrap();
            prop_assert_eq!(back.spikes, est.spikes);
        }
    }
}

/// The largest `|q|` on a grid of `16·N` points: a lower bound for `max |q|` over the torus.
fn dense_max(q: &finespike::DualPolynomial) -> f64 {
    q.grid_values(16 * q.coeffs().len().next_power_of_two())
        .iter()
        .map(|v| v.norm())
        .fold(0.0, f64::max)
}

/// The certificate invariants of one estimate with a dual polynomial: a solved estimate has
/// `|q| ≤ 1 + 1e-6` everywhere (in the polynomial returned and in the reported certificate); the
/// reported maximum is the true one (not below a dense grid's); a polynomial above 1 + 1e-6 comes
/// with [`Warning::CertificateViolated`].
fn check_certificate(est: &Estimate) -> Result<(), TestCaseError> {
    let Some(q) = &est.dual else {
        return Err(TestCaseError::fail(format!(
            "{} returned no dual polynomial",
            est.method
        )));
    };
    let cert = est
        .diagnostics
        .certificate
        .expect("a certificate with the dual");
    let grid = dense_max(q);
    prop_assert!(
        cert.max_modulus >= grid - 1e-9,
        "{}: reported max |q| {} below a grid value {}",
        est.method,
        cert.max_modulus,
        grid
    );
    if est.status == Status::Solved {
        prop_assert!(
            grid <= 1.0 + 1e-6 && cert.max_modulus <= 1.0 + 1e-6,
            "{} solved with max |q| = {} (grid {})",
            est.method,
            cert.max_modulus,
            grid
        );
    }
    if grid > 1.0 + 1e-6 {
        prop_assert!(
            est.diagnostics
                .warnings
                .iter()
                .any(|w| matches!(w, Warning::CertificateViolated { .. })),
            "{}: |q| = {grid} without a warning",
            est.method
        );
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// Every certificate returned by the Sliding Frank–Wolfe solver, exact or noisy, is bounded.
    #[test]
    fn sfw_certificates_are_bounded(
        fc in 4usize..=40, count in 1usize..=5, separation in 0.5..3.0f64, seed in any::<u64>(),
        snr in proptest::option::of(5.0..40.0f64),
    ) {
        let count = count.min(fc / 3).max(1);
        let mut sc = Scenario::new(fc, count).with_separation(separation).with_seed(seed);
        if let Some(snr) = snr { sc = sc.with_snr_db(snr); }
        let Ok(sample) = sc.generate() else { return Ok(()) };
        let est = if snr.is_some() { Sfw::with_sigma(sample.sigma) } else { Sfw::exact() };
        check_certificate(&run(&est, &sample.data))?;
    }
}

proptest! {
    // The interior point is the slow one: few cases, small bands.
    #![proptest_config(ProptestConfig::with_cases(6))]

    /// Every certificate returned by the interior-point path of `sdp` and `ast` is bounded; and with
    /// spikes at least 2/fc apart exact `sdp` recovers the scene (Candès & Fernandez-Granda 2014,
    /// CPAM 67(6), Thm. 1.2).
    #[test]
    fn sdp_certificates_are_bounded_and_exact_recovery_holds(
        fc in 4usize..=10, count in 1usize..=3, seed in any::<u64>(), snr in 10.0..40.0f64,
    ) {
        let count = count.min(fc / 4).max(1);
        let (truth, data) = scene(fc, count, 2.0, seed);
        let est = run(&Tv::exact(), &data);
        check_certificate(&est)?;
        // The interior point may stop at its relaxed tolerances on these degenerate problems.
        prop_assert!(est.status.is_usable(), "status {}", est.status);
        same_spikes(&est.spikes, &truth, data.fc(), 1e-5, 1e-4).map_err(TestCaseError::fail)?;
        let noisy = Scenario::new(fc, count).with_seed(seed).with_snr_db(snr).generate().unwrap();
        check_certificate(&run(&Tv::with_sigma(noisy.sigma), &noisy.data))?;
        check_certificate(&run(&Ast::with_sigma(noisy.sigma), &noisy.data))?;
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(40))]

    /// Exact recovery by Sliding Frank–Wolfe at separations of at least 2/fc.
    #[test]
    fn sfw_recovers_separated_spikes_exactly(
        fc in 8usize..=64, count in 1usize..=8, extra in 0.0..2.0f64, seed in any::<u64>(),
    ) {
        let count = count.min(fc / 4);
        let (truth, data) = scene(fc, count, 2.0 + extra, seed);
        let est = run(&Sfw::exact(), &data);
        prop_assert_eq!(est.status, Status::Solved);
        same_spikes(&est.spikes, &truth, data.fc(), 1e-7, 1e-6).map_err(TestCaseError::fail)?;
    }
}

/// Any `f64`: finite of any size, subnormal, ±0, ±∞ and NaN.
fn any_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        4 => -2.0..2.0f64,
        2 => proptest::num::f64::ANY,
        1 => Just(f64::NAN),
        1 => Just(f64::INFINITY),
        1 => Just(f64::NEG_INFINITY),
        1 => Just(0.0),
        1 => Just(f64::MAX),
        1 => Just(f64::MIN_POSITIVE / 4.0),
    ]
}

fn any_complex() -> impl Strategy<Value = Complex64> {
    (any_f64(), any_f64()).prop_map(|(re, im)| Complex64::new(re, im))
}

/// Run every estimator by name on `data` and on nothing else: each returns `Ok` or a typed `Err`, and
/// an `Ok` estimate holds only finite spikes (`Spikes` refuses others) with a finite residual figure
/// or a status short of solved.
fn every_estimator_answers(data: &Measurements) -> Result<(), TestCaseError> {
    for name in finespike::registry::method_names() {
        let est = estimator_by_name(name).unwrap();
        if let Ok(e) = est.estimate(data) {
            for s in &e.spikes {
                prop_assert!(
                    s.position.is_finite()
                        && s.amplitude.re.is_finite()
                        && s.amplitude.im.is_finite()
                );
                prop_assert!(
                    (0.0..1.0).contains(&s.position),
                    "{name}: position {} outside [0, 1)",
                    s.position
                );
            }
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Every public constructor takes any values, finite or not, and answers `Ok` or a typed error;
    /// every estimator then answers `Ok` or a typed error on what was built (small bands: cutoff ≤ 8).
    #[test]
    fn constructors_and_estimators_never_panic(
        fc in 0usize..=8,
        values in proptest::collection::vec(any_complex(), 0..=18),
        indices in proptest::collection::vec(-10i64..=10, 0..=18),
        kmin in -12i64..=4, span in -2i64..=16, time_domain in any::<bool>(),
        positions in proptest::collection::vec(any_f64(), 0..=4),
    ) {
        let domain = if time_domain { Domain::Time } else { Domain::Fourier };
        let mut built = Vec::new();
        built.push(Measurements::fourier(fc, &indices, &values));
        built.push(Measurements::full_band(fc, &values));
        built.push(Measurements::from_time_samples(&values));
        let times: Vec<i64> = indices.iter().map(|k| k.abs()).collect();
        built.push(Measurements::from_time_subset(&times, &values));
        built.push(Measurements::from_time_subset(&indices, &values));
        built.push(Measurements::in_band(kmin, kmin + span, &indices, &values, domain));
        let amps: Vec<Complex64> = values.iter().take(positions.len()).copied().collect();
        if let Ok(spikes) = Spikes::from_parts(&positions, &amps) {
            for s in &spikes {
                prop_assert!((0.0..1.0).contains(&s.position));
            }
            let idx: Vec<i64> = (-4..=4).collect();
            built.push(Measurements::synthesize(&spikes, -4, 4, &idx, Domain::Fourier));
        }
        for data in built.into_iter().flatten() {
            every_estimator_answers(&data)?;
        }
    }

    /// Constructors take any `i64` band edges and indices without panicking, and a band they accept
    /// has a length that fits in memory arithmetic (`band_len` is `kmax − kmin + 1`).
    #[test]
    fn constructors_take_any_band_edges(
        kmin in any::<i64>(), kmax in any::<i64>(),
        indices in proptest::collection::vec(any::<i64>(), 1..=4), fc in any::<usize>(),
    ) {
        let values = vec![Complex64::new(1.0, 0.0); indices.len()];
        if let Ok(m) = Measurements::in_band(kmin, kmax, &indices, &values, Domain::Fourier) {
            let len = i128::from(kmax) - i128::from(kmin) + 1;
            prop_assert_eq!(m.band_len() as i128, len);
            prop_assert!(m.fc() > 0.0 && m.fc().is_finite());
        }
        let _ = Measurements::fourier(fc, &indices, &values);
        let _ = Measurements::from_time_subset(&indices, &values);
    }

    /// Settings setters take any value and answer `Ok` or a typed error; an accepted setting never
    /// makes an estimator panic.
    #[test]
    fn settings_setters_never_panic(
        x in any_f64(), n in 0usize..=100_000, seed in any::<u64>(),
    ) {
        let (_, data) = scene(6, 1, 2.0, seed);
        let mut runs: Vec<Box<dyn Estimator>> = Vec::new();
        let ip = InteriorPointSettings::default();
        for s in [ip.with_tolerance(x), ip.with_support_tolerance(x),
                  ip.with_max_iter(n.min(200) as u32)].into_iter().flatten() {
            runs.push(Box::new(Tv::exact().with_settings(TvSettings::default().with_interior(s))));
        }
        let tv = TvSettings::default();
        for s in [tv.with_time_limit(x), tv.with_weak_margin(x), tv.with_grid_oversample(n)]
            .into_iter().flatten() {
            runs.push(Box::new(Tv::exact().with_settings(s)));
            runs.push(Box::new(Sfw::exact().with_settings(s)));
        }
        let sl = SlidingSettings::default();
        for s in [sl.with_tolerance(x), sl.with_max_iter(n)].into_iter().flatten() {
            runs.push(Box::new(Sfw::exact().with_settings(TvSettings::default().with_sliding(s))));
        }
        if let Ok(a) = Ast::with_sigma(0.01).with_eta(x) { runs.push(Box::new(a)); }
        runs.push(Box::new(Sfw::with_sigma(x)));
        runs.push(Box::new(Tv::with_sigma(x)));
        let g = GreedySettings::default();
        for s in [g.with_floor_sigmas(x), g.with_merge_distance_fc(x), g.with_max_iter(n),
                  g.with_grid_oversample(n)].into_iter().flatten() {
            runs.push(Box::new(finespike::Greedy::exact().with_settings(s)));
        }
        let gr = GridSettings::default();
        for s in [gr.with_tolerance(x), gr.with_eta(x), gr.with_mismatch_fraction(x),
                  gr.with_max_iter(n), gr.with_oversample(n.min(64)), gr.with_cluster_gap(n),
                  gr.with_rounds(n.min(8))].into_iter().flatten() {
            runs.push(Box::new(finespike::GridL1::exact().with_settings(s)));
        }
        let sub = SubspaceSettings::default();
        for s in [sub.with_window(n), sub.with_max_order(n), sub.with_order_window(n),
                  sub.with_oversampling(n), sub.with_power_iterations(n.min(10))].into_iter().flatten() {
            runs.push(Box::new(Esprit::new(s)));
            runs.push(Box::new(finespike::Music::new(s)));
            runs.push(Box::new(finespike::MatrixPencil::new(s)));
        }
        for est in &runs {
            let _ = est.estimate(&data);
        }
    }
}
