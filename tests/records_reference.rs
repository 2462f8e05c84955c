//! Real and realistic records (`tests/refdata/records`) against outside least-squares fits.
//!
//! The records: four invented ones (seeded, made by `make.py` there) and two public series bundled
//! with statsmodels — yearly sunspot numbers (NOAA NGDC, public domain) and weekly Mauna Loa CO₂
//! (Keeling & Whorf 2004, public domain; missing weeks left out). The reference for each is a
//! nonlinear least-squares fit of a polynomial plus cosines by `scipy.optimize.least_squares`
//! (`NAME.ref.json`, started from periodogram peaks, not from any truth); see the folder's README.
//! The reference's standard errors assume white noise, so the tolerances here are in resolution
//! cells (`1/N`, one periodogram bin) instead.
use finespike::registry::{configure, MethodOptions};
use finespike::{Estimate, Measurements, NoiseLevel, Scale, Trend};
use serde_json::Value;
use std::path::PathBuf;

fn folder() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/refdata/records")
}

/// The record as a real-valued measurement with the reference's polynomial degree and rate.
fn load(name: &str) -> (Measurements, Value) {
    let text = std::fs::read_to_string(folder().join(format!("{name}.csv"))).unwrap();
    let (mut n, mut x) = (Vec::new(), Vec::new());
    for line in text.lines().skip(1) {
        let (a, b) = line.split_once(',').unwrap();
        n.push(a.trim().parse::<i64>().unwrap());
        x.push(b.trim().parse::<f64>().unwrap());
    }
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(folder().join(format!("{name}.ref.json"))).unwrap(),
    )
    .unwrap();
    let degree = reference["poly_degree"].as_u64().unwrap() as usize;
    let mut data = Measurements::from_real_subset(&n, &x)
        .unwrap()
        .with_trend(Trend::of_degree(degree).unwrap())
        .unwrap();
    if let Some(rate) = reference["rate"].as_f64() {
        data = data.with_scale(Scale::SampleRate(rate)).unwrap();
    }
    (data, reference)
}

/// Reference lines `(f in cycles/sample, A)`.
fn reference_lines(reference: &Value) -> Vec<(f64, f64)> {
    reference["lines"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| {
            (
                l["frequency_cps"].as_f64().unwrap(),
                l["amplitude"].as_f64().unwrap(),
            )
        })
        .collect()
}

/// Every reference line that the noise-constrained problem can see matched within `cells`
/// resolution cells and `amp_tol` relative amplitude; returns the number of extra lines of at least
/// half the weakest reference amplitude more than two cells from zero frequency.
///
/// "Can see": the constrained problem fits the data to within `δ² = σ²(|K| + 2√|K|)` (design.md,
/// common practice for a χ² bound), so a line whose energy `|K|A²/2` lies inside the slack
/// `2√|K|σ²` of that ball may be left out by any solver of it; such a line is checked only if found.
fn compare(name: &str, e: &Estimate, reference: &Value, cells: f64, amp_tol: f64) -> usize {
    let span = reference["span"].as_f64().unwrap();
    let sigma = reference["residual_std"].as_f64().unwrap();
    let m = reference["samples_present"].as_f64().unwrap();
    let lines = &e.diagnostics.lines;
    let refs = reference_lines(reference);
    for &(f, a) in &refs {
        let visible = m * a * a / 2.0 > 2.0 * m.sqrt() * sigma * sigma;
        let found = lines.iter().any(|l| (l.position - f).abs() * span < cells);
        if !visible && !found {
            eprintln!(
                "{name}: line {f} (A {a}) lies inside the noise ball's slack and was not found"
            );
            continue;
        }
        let best = lines
            .iter()
            .min_by(|x, y| (x.position - f).abs().total_cmp(&(y.position - f).abs()))
            .unwrap_or_else(|| panic!("{name}: no line at all"));
        assert!(
            (best.position - f).abs() * span < cells,
            "{name}: reference line {f} nearest {} ({} cells)",
            best.position,
            (best.position - f).abs() * span
        );
        assert!(
            (best.amplitude.norm() / a - 1.0).abs() < amp_tol,
            "{name}: |A| {} against {a}",
            best.amplitude.norm()
        );
    }
    let weakest = refs.iter().map(|r| r.1).fold(f64::INFINITY, f64::min);
    lines
        .iter()
        .filter(|l| l.position * span > 2.0)
        .filter(|l| refs.iter().all(|r| (l.position - r.0).abs() * span > 0.5))
        .filter(|l| l.amplitude.norm() >= 0.5 * weakest)
        .count()
}

/// With the noise level of the outside fit given, `sdp` finds every reference line within a tenth of
/// a resolution cell (white-noise records) or a quarter (red-noise records), with amplitudes within
/// 10 % (20 % for the quasi-periodic sunspot cycle), and reports no extra line of half the weakest
/// reference amplitude — except on the sunspot record, whose cycle is quasi-periodic (a broad
/// spectral peak), where the reference's three lines are a choice of model order, not a truth.
#[test]
fn sdp_agrees_with_the_outside_fits_given_their_noise_level() {
    for (name, cells, amp_tol, extra_allowed) in [
        ("visible", 0.1, 0.1, false),
        ("quad4096", 0.1, 0.1, false),
        ("close_pair", 0.1, 0.1, false),
        ("sunspots", 0.25, 0.2, true),
        ("co2", 0.1, 0.1, false),
    ] {
        let (data, reference) = load(name);
        let sigma = reference["residual_std"].as_f64().unwrap();
        let method = configure(
            "sdp",
            &MethodOptions {
                noise: NoiseLevel::Known(sigma),
                ..MethodOptions::default()
            },
        )
        .unwrap();
        let e = method.estimator.estimate(&data).unwrap();
        assert!(e.status.is_usable(), "{name}: {}", e.status);
        if std::env::var("SHOW").is_ok() {
            eprintln!(
                "{name}: {:?} {:?}",
                e.diagnostics.lines, e.diagnostics.warnings
            );
        }
        let extra = compare(name, &e, &reference, cells, amp_tol);
        eprintln!(
            "{name}: {} lines, {extra} extra, {:.2} s, {}",
            e.diagnostics.lines.len(),
            e.diagnostics.solve_seconds,
            e.status
        );
        assert!(
            extra_allowed || extra == 0,
            "{name}: {:?}",
            e.diagnostics.lines
        );
    }
}

/// With the noise level estimated (the default), the red-noise records are flagged as not white,
/// every reference line is still found, and the noise level covers the red noise: `sdp` runs in
/// about the time it takes with the level given (seconds, not minutes) — the figures are printed;
/// the test checks the lines and the flag.
#[test]
fn sdp_with_the_default_noise_level_flags_red_noise() {
    for (name, cells, amp_tol, red) in [
        ("visible", 0.1, 0.15, true),
        ("co2", 0.1, 0.1, true),
        ("sunspots", 0.25, 0.2, true),
        ("quad4096", 0.1, 0.1, false),
        ("close_pair", 0.1, 0.1, false),
    ] {
        let (data, reference) = load(name);
        let method = configure("sdp", &MethodOptions::default()).unwrap();
        let e = method.estimator.estimate(&data).unwrap();
        let extra = compare(name, &e, &reference, cells, amp_tol);
        let flagged = e
            .diagnostics
            .warnings
            .iter()
            .any(|w| matches!(w, finespike::Warning::NoiseNotWhite { .. }));
        eprintln!(
            "{name}: σ̂ {:?} (outside fit {}), {} lines, {extra} extra, {:.2} s, {}, not white: {flagged}",
            e.diagnostics.sigma,
            reference["residual_std"],
            e.diagnostics.lines.len(),
            e.diagnostics.solve_seconds,
            e.status
        );
        if std::env::var("SHOW").is_ok() {
            eprintln!("  {:?}", e.diagnostics.warnings);
        }
        assert_eq!(flagged, red, "{name}: {:?}", e.diagnostics.warnings);
        // How σ was made is reported: the whole-band level exactly when the floor is not flat.
        assert_eq!(
            matches!(
                e.diagnostics.sigma_method,
                Some(finespike::SigmaMethod::NoiseFloor { .. })
            ),
            red,
            "{name}: {:?}",
            e.diagnostics.sigma_method
        );
    }
}
