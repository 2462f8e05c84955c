//! The subspace methods on multi-snapshot records: the acceptance cases (invented, seeded
//! scenes from `ArrayScene`), coherent sources and spatial smoothing, missing sensors, one snapshot.

use finespike::eval::array_scene::{ArrayDraw, ArrayScene, SourceCorrelation};
use finespike::subspace::{OrderSelection, Smoothing, SubspaceSettings};
use finespike::{
    conditional_crb, wrap_distance, ArrayEstimate, Error, Esprit, Estimator, MatrixPencil, Music,
    NoiseLevel, OrderMethod, SigmaMethod, Warning,
};

/// One acceptance case of the issue (invented scenes).
struct Case {
    name: &'static str,
    sensors: usize,
    snapshots: usize,
    positions: Vec<f64>,
    snr_db: f64,
    correlation: SourceCorrelation,
}

fn cases() -> Vec<Case> {
    vec![
        Case {
            name: "16 sensors, 50 snapshots, 3 uncorrelated at 10 dB",
            sensors: 16,
            snapshots: 50,
            positions: vec![-0.3, 0.05, 0.27],
            snr_db: 10.0,
            correlation: SourceCorrelation::Uncorrelated,
        },
        Case {
            name: "12 sensors, 40 snapshots, two 0.7/M apart at 20 dB",
            sensors: 12,
            snapshots: 40,
            positions: vec![0.1, 0.1 + 0.7 / 12.0],
            snr_db: 20.0,
            correlation: SourceCorrelation::Uncorrelated,
        },
        Case {
            name: "16 sensors, 60 snapshots, coherent pair 1.5/M apart at 20 dB",
            sensors: 16,
            snapshots: 60,
            positions: vec![-0.1, -0.1 + 1.5 / 16.0],
            snr_db: 20.0,
            correlation: SourceCorrelation::Coherent,
        },
        Case {
            name: "20 sensors, 200 snapshots, 4 sources at 0 dB",
            sensors: 20,
            snapshots: 200,
            positions: vec![-0.35, -0.1, 0.12, 0.33],
            snr_db: 0.0,
            correlation: SourceCorrelation::Uncorrelated,
        },
    ]
}

fn draw(case: &Case, seed: u64) -> ArrayDraw {
    ArrayScene::new(case.sensors, case.snapshots, &case.positions)
        .unwrap()
        .with_snr_db(case.snr_db)
        .unwrap()
        .with_correlation(case.correlation)
        .unwrap()
        .with_seed(seed)
        .draw()
        .unwrap()
}

/// Per true source, |error| / conditional-CRB std (truth's positions, amplitudes and σ), matched to
/// the nearest estimated source; and the spurious estimated sources (unmatched, power ≥ 1 % of the
/// weakest true source).
fn judge(draw: &ArrayDraw, est: &ArrayEstimate) -> (Vec<f64>, usize) {
    let crb = conditional_crb(&draw.data, &draw.positions, &draw.amplitudes, draw.sigma).unwrap();
    let l = draw.data.snapshot_count() as f64;
    let weakest = (0..draw.positions.len())
        .map(|j| draw.amplitudes.row(j).norm_squared() / l)
        .fold(f64::INFINITY, f64::min);
    let mut used = vec![false; est.sources.len()];
    let mut ratios = Vec::new();
    for (j, &p) in draw.positions.iter().enumerate() {
        let best = est
            .sources
            .iter()
            .enumerate()
            .filter(|(i, _)| !used[*i])
            .min_by(|a, b| {
                wrap_distance(a.1.position, p).total_cmp(&wrap_distance(b.1.position, p))
            });
        match best {
            Some((i, s)) => {
                used[i] = true;
                ratios.push(wrap_distance(s.position, p) / crb[j].sqrt());
            }
            None => ratios.push(f64::INFINITY),
        }
    }
    let spurious = est
        .sources
        .iter()
        .zip(&used)
        .filter(|(s, &u)| !u && s.power >= 0.01 * weakest)
        .count();
    (ratios, spurious)
}

fn methods(settings: SubspaceSettings) -> Vec<Box<dyn Estimator>> {
    vec![
        Box::new(Esprit::new(settings)),
        Box::new(Music::new(settings)),
        Box::new(MatrixPencil::new(settings)),
    ]
}

/// Monte Carlo over seeds: pass rate (every source within 4 CRB std, nothing spurious) and the mean
/// error / CRB std per source, for each method and smoothing. Run with
/// `cargo test --release --test arrays_subspace -- --ignored --nocapture`.
#[test]
#[ignore]
fn sweep_acceptance_cases() {
    let draws = 200;
    for case in cases() {
        println!("{}", case.name);
        for smoothing in [Smoothing::Auto, Smoothing::None] {
            let settings = SubspaceSettings::default()
                .with_smoothing(smoothing)
                .unwrap();
            for m in methods(settings) {
                let mut pass = 0;
                let mut sum = vec![0.0; case.positions.len()];
                let mut sq = vec![0.0; case.positions.len()];
                let mut order_hist = std::collections::BTreeMap::new();
                for seed in 0..draws {
                    let d = draw(&case, seed);
                    let est = m.estimate_snapshots(&d.data).unwrap();
                    *order_hist.entry(est.sources.len()).or_insert(0) += 1;
                    let (ratios, spurious) = judge(&d, &est);
                    if spurious == 0 && ratios.iter().all(|r| *r <= 4.0) {
                        pass += 1;
                    }
                    for (j, r) in ratios.iter().enumerate() {
                        sum[j] += r.min(100.0);
                        sq[j] += r.min(100.0).powi(2);
                    }
                }
                let rms: Vec<String> = sq
                    .iter()
                    .map(|s| format!("{:.2}", (s / draws as f64).sqrt()))
                    .collect();
                println!(
                    "  {:?} {:7} pass {pass}/{draws}  rms err/crb {:?}  sources {:?}",
                    smoothing,
                    m.name(),
                    rms,
                    order_hist
                );
            }
        }
    }
}

/// Whether every true source is within 4 conditional-CRB standard deviations and nothing spurious
/// is reported (the acceptance rule).
fn passes(draw: &ArrayDraw, est: &ArrayEstimate) -> bool {
    let (ratios, spurious) = judge(draw, est);
    spurious == 0 && ratios.iter().all(|r| *r <= 4.0)
}

/// Draws per acceptance case in the tests below (seeds 0..DRAWS). The `#[ignore]`d sweep above runs
/// 200 (figures in its output and the commit message).
const DRAWS: u64 = 25;

#[test]
fn esprit_meets_the_acceptance_cases_with_order_unknown_and_sigma_estimated() {
    // Default settings: order by MDL, σ from the sample covariance, forward–backward averaging and
    // smoothing over ⌈0.6 M⌉ sensors. In the 200-draw sweep esprit passed 200/200 in every case.
    for case in cases() {
        for seed in 0..DRAWS {
            let d = draw(&case, seed);
            let est = Esprit::default().estimate_snapshots(&d.data).unwrap();
            assert!(
                passes(&d, &est),
                "{} seed {seed}: {:?}",
                case.name,
                judge(&d, &est)
            );
            let diag = &est.diagnostics;
            assert_eq!(diag.model_order.unwrap().method, OrderMethod::Mdl);
            assert!(diag.sigma_estimated, "{}", case.name);
            assert!(matches!(
                diag.sigma_method,
                Some(SigmaMethod::SampleCovariance { .. })
            ));
            // σ = 1 in every scene; the estimate from ≥ 2M snapshots is within a few percent.
            assert!((diag.sigma.unwrap() - 1.0).abs() < 0.1, "{:?}", diag.sigma);
            for s in &est.sources {
                let (det, sto) = (s.crb_std_position.unwrap(), s.crb_std_stochastic.unwrap());
                assert!(sto >= det * (1.0 - 1e-12), "{sto} < {det}");
            }
        }
    }
}

#[test]
fn music_and_pencil_meet_the_acceptance_cases() {
    // In the 200-draw sweep pencil passed 200/200 in every case and music 200, 198, 199 and 200
    // of 200 (seeds 0..200; the first 25 pass).
    for case in cases() {
        for seed in 0..DRAWS {
            let d = draw(&case, seed);
            for m in methods(SubspaceSettings::default()).into_iter().skip(1) {
                let est = m.estimate_snapshots(&d.data).unwrap();
                assert!(
                    passes(&d, &est),
                    "{} {} seed {seed}: {:?}",
                    m.name(),
                    case.name,
                    judge(&d, &est)
                );
            }
        }
    }
}

/// The coherent pair of the acceptance cases, with the settings given.
fn coherent_pair(
    seed: u64,
    smoothing: Smoothing,
    forward_backward: bool,
) -> (ArrayDraw, ArrayEstimate) {
    let case = &cases()[2];
    let d = draw(case, seed);
    let settings = SubspaceSettings::default()
        .with_smoothing(smoothing)
        .unwrap()
        .with_forward_backward(forward_backward);
    let est = Esprit::new(settings).estimate_snapshots(&d.data).unwrap();
    (d, est)
}

#[test]
fn coherent_pair_is_resolved_only_with_smoothing() {
    for seed in 0..DRAWS {
        // Without smoothing or forward–backward averaging the two coherent sources span one signal
        // dimension: MDL finds one source (or the pair is badly placed) and the estimate fails.
        let (d, est) = coherent_pair(seed, Smoothing::None, false);
        assert!(!passes(&d, &est), "seed {seed}: {:?}", judge(&d, &est));
        // Spatial smoothing alone restores the rank.
        let (d, est) = coherent_pair(seed, Smoothing::Auto, false);
        assert!(passes(&d, &est), "seed {seed}: {:?}", judge(&d, &est));
        assert_eq!(est.sources.len(), 2);
    }
    // Forward–backward averaging alone decorrelates the pair in most draws but not all (the sweep:
    // 140 of 200 pass); smoothing is what makes it reliable.
    let fb_only = (0..DRAWS)
        .filter(|&seed| {
            let (d, est) = coherent_pair(seed, Smoothing::None, true);
            passes(&d, &est)
        })
        .count();
    assert!(
        fb_only < DRAWS as usize,
        "forward–backward alone passed every draw"
    );
}

#[test]
fn missing_sensors_are_refused_with_advice() {
    let d = ArrayScene::new(12, 30, &[0.1, 0.3])
        .unwrap()
        .with_snr_db(10.0)
        .unwrap()
        .with_missing_sensors(&[4, 7])
        .unwrap()
        .draw()
        .unwrap();
    for m in methods(SubspaceSettings::default()) {
        let err = m.estimate_snapshots(&d.data).unwrap_err();
        assert!(
            matches!(
                err,
                Error::NeedsContiguous {
                    measured: 10,
                    span: 12,
                    ..
                }
            ),
            "{err}"
        );
        assert!(err.to_string().contains("'sdp'"), "{err}");
    }
}

#[test]
fn one_snapshot_takes_the_single_record_path() {
    let d = ArrayScene::new(24, 1, &[0.12, 0.31, -0.2])
        .unwrap()
        .with_snr_db(25.0)
        .unwrap()
        .with_seed(4)
        .draw()
        .unwrap();
    for m in methods(SubspaceSettings::default()) {
        let est = m.estimate_snapshots(&d.data).unwrap();
        let single = m.estimate(&d.data.snapshot(0).unwrap()).unwrap();
        assert_eq!(est.positions(), single.spikes.positions(), "{}", m.name());
        assert_eq!(est.diagnostics.model_order, single.diagnostics.model_order);
        assert_eq!(est.diagnostics.sigma, single.diagnostics.sigma);
        assert_eq!(est.sources.len(), 3);
        assert!(est.sources.iter().all(|s| s.amplitudes.len() == 1));
        assert!(passes(&d, &est), "{}: {:?}", m.name(), judge(&d, &est));
    }
}

#[test]
fn exact_snapshots_are_recovered_to_rounding() {
    // Noiseless: the numerical rank gives the order and the positions are exact to rounding.
    let truth = [0.05, 0.09, 0.6];
    let d = ArrayScene::new(10, 8, &truth)
        .unwrap()
        .with_seed(2)
        .draw()
        .unwrap();
    for m in methods(SubspaceSettings::default()) {
        let est = m.estimate_snapshots(&d.data).unwrap();
        assert_eq!(
            est.diagnostics.model_order.unwrap().method,
            OrderMethod::NumericalRank
        );
        assert_eq!(est.diagnostics.sigma, None);
        let got = est.positions();
        assert_eq!(got.len(), 3, "{}", m.name());
        // root-MUSIC's double roots lose half the digits (module docs of music).
        let tol = if m.name() == "music" { 1e-6 } else { 1e-10 };
        for (g, t) in got.iter().zip(truth) {
            assert!((g - t).abs() < tol, "{}: {g} vs {t}", m.name());
        }
    }
}

#[test]
fn given_noise_level_and_order_are_used() {
    let case = &cases()[0];
    let d = draw(case, 3);
    let settings = SubspaceSettings::default()
        .with_noise(NoiseLevel::Known(1.0))
        .unwrap()
        .with_order(OrderSelection::Given(3))
        .unwrap();
    let est = Esprit::new(settings).estimate_snapshots(&d.data).unwrap();
    assert_eq!(est.diagnostics.sigma, Some(1.0));
    assert!(!est.diagnostics.sigma_estimated);
    assert_eq!(
        est.diagnostics.model_order.unwrap().method,
        OrderMethod::Given
    );
    assert!(passes(&d, &est));
}

#[test]
fn aic_order_is_reported() {
    // AIC instead of MDL: the order is reported as AIC's. (Over-estimated orders are pruned, see
    // the unit test of the pruning in src/subspace/tests.rs; AIC over-estimated in 0 of 100 draws
    // of this case, so the pruning is not exercised here.)
    let case = &cases()[0];
    let settings = SubspaceSettings::default()
        .with_order(OrderSelection::Aic)
        .unwrap();
    for seed in 0..DRAWS {
        let d = draw(case, seed);
        let est = Esprit::new(settings).estimate_snapshots(&d.data).unwrap();
        assert!(passes(&d, &est), "seed {seed}: {:?}", judge(&d, &est));
        let order = est.diagnostics.model_order.unwrap();
        assert_eq!(order.method, OrderMethod::Aic);
        let warned = est
            .diagnostics
            .warnings
            .iter()
            .any(|w| matches!(w, Warning::OrderPruned { .. }));
        assert_eq!(warned, order.order > est.sources.len(), "seed {seed}");
    }
}

#[test]
fn settings_are_checked() {
    assert!(SubspaceSettings::default()
        .with_smoothing(Smoothing::Subarray(1))
        .is_err());
    let d = draw(&cases()[0], 0);
    let too_big = SubspaceSettings::default()
        .with_smoothing(Smoothing::Subarray(17))
        .unwrap();
    assert!(matches!(
        Esprit::new(too_big).estimate_snapshots(&d.data),
        Err(Error::InvalidSetting {
            name: "smoothing",
            ..
        })
    ));
    // A subarray of 4 sensors holds at most 3 sources.
    let small = SubspaceSettings::default()
        .with_smoothing(Smoothing::Subarray(4))
        .unwrap()
        .with_order(OrderSelection::Given(4))
        .unwrap();
    assert!(matches!(
        Esprit::new(small).estimate_snapshots(&d.data),
        Err(Error::InvalidSetting { name: "order", .. })
    ));
}
