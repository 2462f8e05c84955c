//! Joint convex recovery from many snapshots (`sdp`, `sfw`, `ast` on [`Snapshots`]): both backends
//! against cvxpy's primal group atomic-norm SDP, the acceptance cases, and a coherent pair.
//!
//! Reference files `tests/refdata/arrays/mmv_*.json` come from `make_mmv.py` beside them: invented
//! scenes, the primal SDP of Li & Chi (2016, IEEE TSP 64(5), eq. (11)) in cvxpy's complex form on the
//! full data (no dimension reduction, no compact real form), solved by CLARABEL (objective
//! cross-checked with SCS), positions from the Vandermonde decomposition of the Toeplitz block.

use finespike::eval::array_scene::{ArrayScene, SourceCorrelation};
use finespike::{
    wrap_distance, ArrayEstimate, Backend, Estimator, NoiseLevel, PostProcess, Sfw, Snapshots,
    Status, Tv, TvSettings,
};
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde_json::Value;

struct Reference {
    name: &'static str,
    data: Snapshots,
    sigma: f64,
    objective: f64,
    /// cvxpy's atoms with power at least 1 % of the largest.
    positions: Vec<f64>,
}

fn load(name: &'static str) -> Reference {
    let path = format!(
        "{}/tests/refdata/arrays/{name}.json",
        env!("CARGO_MANIFEST_DIR")
    );
    let v: Value = serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    let sensors: Vec<i64> = v["sensors"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_i64().unwrap())
        .collect();
    let re = v["re"].as_array().unwrap();
    let im = v["im"].as_array().unwrap();
    let l = v["snapshots"].as_u64().unwrap() as usize;
    let x = DMatrix::from_fn(sensors.len(), l, |i, t| {
        Complex64::new(re[i][t].as_f64().unwrap(), im[i][t].as_f64().unwrap())
    });
    let pos: Vec<f64> = v["positions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    let pow: Vec<f64> = v["powers"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    let top = pow.iter().copied().fold(0.0, f64::max);
    Reference {
        name,
        data: Snapshots::from_sensor_subset(&sensors, &x).unwrap(),
        sigma: v["sigma"].as_f64().unwrap(),
        objective: v["objective"].as_f64().unwrap(),
        positions: pos
            .iter()
            .zip(&pow)
            .filter(|(_, &p)| p >= 0.01 * top)
            .map(|(&f, _)| f)
            .collect(),
    }
}

const REFERENCES: [&str; 4] = [
    "mmv_exact_full",
    "mmv_exact_missing",
    "mmv_constrained_full",
    "mmv_constrained_missing",
];

/// `sdp` with a fixed backend at the reference's noise level; with noise, without the least-squares
/// polish (the reported positions are then the convex solution's support, after the significance
/// test).
fn solve(r: &Reference, backend: Backend) -> ArrayEstimate {
    let mut settings = TvSettings::default().with_backend(backend);
    if r.sigma > 0.0 {
        settings = settings.with_postprocess(PostProcess::default().with_refine(None));
    }
    let noise = if r.sigma == 0.0 {
        NoiseLevel::Exact
    } else {
        NoiseLevel::Known(r.sigma)
    };
    Tv::default()
        .with_noise(noise)
        .with_settings(settings)
        .estimate_snapshots(&r.data)
        .unwrap()
}

fn check_against_reference(backend: Backend) {
    for name in REFERENCES {
        let r = load(name);
        let est = solve(&r, backend);
        assert_eq!(
            est.status,
            Status::Solved,
            "{name} {backend:?}: {:?}",
            est.diagnostics
        );
        let obj = est.diagnostics.objective.unwrap();
        assert!(
            (obj - r.objective).abs() <= 1e-6 * r.objective,
            "{}: objective {obj} against cvxpy's {}",
            r.name,
            r.objective
        );
        let found = est.positions();
        assert_eq!(
            found.len(),
            r.positions.len(),
            "{name}: {found:?} against {:?}",
            r.positions
        );
        for (f, g) in found.iter().zip(&r.positions) {
            assert!(
                wrap_distance(*f, *g) < 1e-4,
                "{name}: position {f} against cvxpy's {g}"
            );
        }
    }
}

#[test]
fn interior_point_matches_cvxpy() {
    check_against_reference(Backend::InteriorPoint);
}

#[test]
fn sliding_matches_cvxpy() {
    check_against_reference(Backend::SlidingFrankWolfe);
}

/// Every true position matched by a found source within 4 of its conditional-CRB standard
/// deviations, and no unmatched source with power at least 1 % of the weakest true one.
fn check_acceptance(est: &ArrayEstimate, truth: &[f64], weakest_power: f64, label: &str) {
    let mut used = vec![false; est.sources.len()];
    for &t in truth {
        let (j, d) = est
            .sources
            .iter()
            .enumerate()
            .filter(|(j, _)| !used[*j])
            .map(|(j, s)| (j, wrap_distance(s.position, t)))
            .min_by(|a, b| a.1.total_cmp(&b.1))
            .unwrap_or_else(|| panic!("{label}: no source left for {t}"));
        let sd = est.sources[j]
            .crb_std_position
            .expect("a noise level was estimated");
        assert!(
            d <= 4.0 * sd,
            "{label}: {t} found at {} ({:.2} CRB sd)",
            est.sources[j].position,
            d / sd
        );
        used[j] = true;
    }
    for (s, u) in est.sources.iter().zip(&used) {
        assert!(
            *u || s.power < 0.01 * weakest_power,
            "{label}: spurious source at {} with power {}",
            s.position,
            s.power
        );
    }
}

/// The four acceptance cases (invented scenes, seeded): order unknown, σ estimated, `sdp` with
/// the automatic backend.
#[test]
fn acceptance_cases_sdp() {
    let cases: Vec<(usize, usize, Vec<f64>, f64, SourceCorrelation)> = vec![
        (
            16,
            50,
            vec![-0.3, 0.05, 0.27],
            10.0,
            SourceCorrelation::Uncorrelated,
        ),
        (
            12,
            40,
            vec![0.1, 0.1 + 0.7 / 12.0],
            20.0,
            SourceCorrelation::Uncorrelated,
        ),
        (
            16,
            60,
            vec![-0.1, -0.1 + 1.5 / 16.0],
            20.0,
            SourceCorrelation::Coherent,
        ),
        (
            20,
            200,
            vec![-0.35, -0.1, 0.12, 0.33],
            0.0,
            SourceCorrelation::Uncorrelated,
        ),
    ];
    for (m, l, pos, snr, corr) in cases {
        let draw = ArrayScene::new(m, l, &pos)
            .unwrap()
            .with_snr_db(snr)
            .unwrap()
            .with_correlation(corr)
            .unwrap()
            .with_seed(7)
            .draw()
            .unwrap();
        let est = Tv::default().estimate_snapshots(&draw.data).unwrap();
        let label = format!("M = {m}, L = {l}, {snr} dB, {corr:?}");
        assert_eq!(est.status, Status::Solved, "{label}: {:?}", est.diagnostics);
        assert!(est.diagnostics.sigma_estimated);
        let weakest = (0..draw.amplitudes.nrows())
            .map(|j| draw.amplitudes.row(j).norm_squared() / l as f64)
            .fold(f64::INFINITY, f64::min);
        check_acceptance(&est, &draw.positions, weakest, &label);
    }
}

/// A fully coherent pair (one source seen twice, the snapshot matrix of rank one) from exact data:
/// both backends recover it without smoothing, to rounding.
#[test]
fn coherent_pair_needs_no_smoothing() {
    let pos = [0.21, 0.21 + 1.5 / 16.0];
    let draw = ArrayScene::new(16, 30, &pos)
        .unwrap()
        .with_correlation(SourceCorrelation::Coherent)
        .unwrap()
        .with_seed(4)
        .draw()
        .unwrap();
    let mut truth = draw.positions.clone();
    truth.sort_by(f64::total_cmp);
    for est in [
        Tv::exact().estimate_snapshots(&draw.data).unwrap(),
        Sfw::exact().estimate_snapshots(&draw.data).unwrap(),
    ] {
        assert_eq!(est.status, Status::Solved, "{:?}", est.diagnostics);
        let found = est.positions();
        assert_eq!(found.len(), 2, "{found:?}");
        for (f, t) in found.iter().zip(&truth) {
            assert!(wrap_distance(*f, *t) < 1e-9, "{f} against {t}");
        }
    }
}

/// `ast` on snapshots: the penalised problem with the Monte Carlo weight finds both sources of an
/// invented scene and nothing spurious.
#[test]
fn ast_on_snapshots_finds_the_sources() {
    let draw = ArrayScene::new(12, 20, &[0.15, 0.45])
        .unwrap()
        .with_snr_db(10.0)
        .unwrap()
        .with_seed(9)
        .draw()
        .unwrap();
    let est = finespike::Ast::with_sigma(draw.sigma)
        .estimate_snapshots(&draw.data)
        .unwrap();
    assert_eq!(est.status, Status::Solved, "{:?}", est.diagnostics);
    let weakest = (0..2)
        .map(|j| draw.amplitudes.row(j).norm_squared() / 20.0)
        .fold(f64::INFINITY, f64::min);
    check_acceptance(&est, &draw.positions, weakest, "ast");
}

/// Past the interior point's size limit the joint problem is refused with a typed error that names
/// the sliding solver, before the program is built.
#[test]
fn interior_point_refuses_large_joint_problems() {
    let draw = ArrayScene::new(64, 100, &[0.1])
        .unwrap()
        .with_snr_db(10.0)
        .unwrap()
        .draw()
        .unwrap();
    let settings = TvSettings::default().with_backend(Backend::InteriorPoint);
    let err = Tv::with_sigma(1.0)
        .with_settings(settings)
        .estimate_snapshots(&draw.data)
        .unwrap_err();
    match err {
        finespike::Error::TooLarge { advice, .. } => assert!(advice.contains("sfw"), "{advice}"),
        other => panic!("expected TooLarge, got {other:?}"),
    }
}
