//! The real-symmetric SDP of a real-valued record (`tv::interior`, module `real`) against the complex
//! compact SDP of the same record: the same convex problem, so the same optimum.
//!
//! The check values are the complex form's own results on the same data (that form is checked
//! against cvxpy/SCS on the reference cases in `tests/exact_recovery.rs` and `tests/continuous.rs`):
//! objective to 1e-6 relative, positions to 1e-6/fc, and mirror-symmetric lines. The records are
//! invented (seeded) scenes, and windows of the bundled records of `tests/refdata/records` (two
//! invented there by `make.py`, see its README), cut short so that the complex form stays fast.
use finespike::tv::interior::{INTERIOR_POINT, INTERIOR_POINT_REAL};
use finespike::tv::{Backend, TvSettings};
use finespike::{
    wrap_distance, Ast, Estimate, Estimator, Measurements, NoiseLevel, Status, Trend, Tv,
};
use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use std::f64::consts::PI;
use std::path::PathBuf;

/// Invented cosines `(f, A, φ)`.
const LINES: [(f64, f64, f64); 3] = [(0.0912, 1.0, 0.4), (0.2231, 0.7, -1.3), (0.4087, 0.35, 2.2)];

/// `offset + slope·n + Σ A cos(2πfn + φ) + w_n` at `indices`, `w` white with std `sigma`.
fn record(indices: &[i64], offset: f64, slope: f64, sigma: f64, seed: u64) -> Vec<f64> {
    let mut rng = StdRng::seed_from_u64(seed);
    let noise = Normal::new(0.0, sigma.max(f64::MIN_POSITIVE)).unwrap();
    indices
        .iter()
        .map(|&n| {
            let t = n as f64;
            let x: f64 = LINES
                .iter()
                .map(|&(f, a, p)| a * (2.0 * PI * f * t + p).cos())
                .sum();
            let w = if sigma > 0.0 {
                noise.sample(&mut rng)
            } else {
                0.0
            };
            offset + slope * t + x + w
        })
        .collect()
}

/// The first `len` rows of a bundled record (`n,value`).
fn bundled(name: &str, len: usize) -> (Vec<i64>, Vec<f64>) {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/refdata/records")
        .join(format!("{name}.csv"));
    let text = std::fs::read_to_string(path).unwrap();
    text.lines()
        .skip(1)
        .take(len)
        .map(|l| {
            let (a, b) = l.split_once(',').unwrap();
            (
                a.trim().parse::<i64>().unwrap(),
                b.trim().parse::<f64>().unwrap(),
            )
        })
        .unzip()
}

/// Which convex problem.
#[derive(Debug, Clone, Copy)]
enum Kind {
    /// `sdp`, exact data.
    Exact,
    /// `sdp` with a known σ: the noise ball.
    Constrained(f64),
    /// `ast` with a known σ: the penalised problem.
    Penalised(f64),
}

fn run(kind: Kind, data: &Measurements, real_symmetric: bool) -> Estimate {
    let mut settings = TvSettings::default().with_backend(Backend::InteriorPoint);
    settings.interior = settings.interior.with_real_symmetric(real_symmetric);
    let est: Box<dyn Estimator> = match kind {
        Kind::Exact => Box::new(Tv::exact().with_settings(settings)),
        Kind::Constrained(s) => Box::new(Tv::with_sigma(s).with_settings(settings)),
        Kind::Penalised(s) => Box::new(Ast::with_sigma(s).with_settings(settings)),
    };
    est.estimate(data).unwrap()
}

/// The real-symmetric and the complex SDP agree on `data` (a real record).
fn agree(what: &str, kind: Kind, data: &Measurements) {
    assert!(data.is_real());
    let real = run(kind, data, true);
    let complex = run(kind, data, false);
    assert_eq!(real.diagnostics.solver, Some(INTERIOR_POINT_REAL), "{what}");
    assert_eq!(complex.diagnostics.solver, Some(INTERIOR_POINT), "{what}");
    assert_eq!(
        real.status,
        Status::Solved,
        "{what}: {:?}",
        real.diagnostics.warnings
    );
    // The complex form reaches only clarabel's reduced accuracy on the gapped exact record (its
    // larger, more degenerate block); its answer must still agree.
    assert!(
        matches!(complex.status, Status::Solved | Status::ReducedAccuracy),
        "{what}: {:?}",
        complex.status
    );
    let (or, oc) = (
        real.diagnostics.objective.unwrap(),
        complex.diagnostics.objective.unwrap(),
    );
    assert!(
        (or - oc).abs() <= 1e-6 * oc.abs(),
        "{what}: objective {or} (real) vs {oc} (complex)"
    );
    // Positions: the same atoms, each within 1e-6/fc.
    let fc = data.fc();
    let mut pr = real.spikes.positions();
    let mut pc = complex.spikes.positions();
    pr.sort_by(f64::total_cmp);
    pc.sort_by(f64::total_cmp);
    assert_eq!(pr.len(), pc.len(), "{what}: {pr:?} vs {pc:?}");
    assert!(!pr.is_empty(), "{what}");
    for (a, b) in pr.iter().zip(&pc) {
        assert!(
            wrap_distance(*a, *b) * fc <= 1e-6,
            "{what}: {a} vs {b} ({:.2e}/fc)",
            wrap_distance(*a, *b) * fc
        );
    }
    // Mirror symmetry: every atom has its mirror 1 − f with the conjugate amplitude.
    for s in real.spikes.iter() {
        let mirror = real
            .spikes
            .iter()
            .find(|t| wrap_distance(t.position, 1.0 - s.position) < 1e-12)
            .unwrap_or_else(|| panic!("{what}: no mirror of {}", s.position));
        assert!(
            (mirror.amplitude - s.amplitude.conj()).norm() <= 1e-12 * s.amplitude.norm().max(1.0),
            "{what}"
        );
    }
}

#[test]
fn invented_records_exact() {
    // Odd and even N, any index origin, gaps.
    let idx: Vec<i64> = (0..33).collect();
    let data = Measurements::from_real_samples(&record(&idx, 0.0, 0.0, 0.0, 1)).unwrap();
    agree("N = 33 exact", Kind::Exact, &data);
    let idx: Vec<i64> = (100..140).filter(|n| n % 7 != 3).collect();
    let data = Measurements::from_real_subset(&idx, &record(&idx, 0.0, 0.0, 0.0, 2)).unwrap();
    agree("N = 40 from 100, gaps, exact", Kind::Exact, &data);
}

#[test]
fn invented_records_noisy() {
    let idx: Vec<i64> = (0..48).collect();
    let data = Measurements::from_real_samples(&record(&idx, 0.0, 0.0, 0.05, 3)).unwrap();
    agree("N = 48 constrained", Kind::Constrained(0.05), &data);
    agree("N = 48 penalised", Kind::Penalised(0.05), &data);
    // An offset and a trend, fitted jointly (the projected data stay real).
    let idx: Vec<i64> = (-20..25).collect();
    let data = Measurements::from_real_subset(&idx, &record(&idx, 1.5, 0.01, 0.05, 4))
        .unwrap()
        .with_trend(Trend::of_degree(1).unwrap())
        .unwrap();
    agree(
        "N = 45 linear trend constrained",
        Kind::Constrained(0.05),
        &data,
    );
}

#[test]
fn bundled_record_windows() {
    // Windows of the bundled records: a close pair (rate 250 Hz, first 41 samples) and the
    // near-zero-frequency record (indices from 500, an offset: fitted as a constant).
    let (n, x) = bundled("close_pair", 41);
    let data = Measurements::from_real_subset(&n, &x).unwrap();
    agree(
        "close_pair[0..41] constrained",
        Kind::Constrained(0.1),
        &data,
    );
    let (n, x) = bundled("near_zero", 41);
    let data = Measurements::from_real_subset(&n, &x)
        .unwrap()
        .with_trend(Trend::of_degree(0).unwrap())
        .unwrap();
    agree(
        "near_zero[500..541] penalised",
        Kind::Penalised(0.05),
        &data,
    );
    // The default noise level (estimated σ) goes through the same problem.
    let real = Tv::default()
        .with_settings(TvSettings::default().with_backend(Backend::InteriorPoint))
        .with_noise(NoiseLevel::Estimate)
        .estimate(&data)
        .unwrap();
    assert_eq!(real.diagnostics.solver, Some(INTERIOR_POINT_REAL));
}
