//! Acceptance Monte Carlo of the noise-aware convex methods (ignored: about ten minutes on two cores;
//! run with `cargo test --release --test montecarlo -- --ignored --nocapture`).
//!
//! Invented scenes at fc = 16: three and five lines, closest pair 2/fc apart, unit-modulus amplitudes
//! (the four-line scene is in `examples/noise_montecarlo.rs`); 200 noise draws at 20, 30 and 40 dB.
//! Criteria (the project's acceptance figures for the noise issue): position RMSE ≤ 1.3·√CRB for every
//! line, no missed line, a spurious line in at most 2 % of the draws. For reference, AST reaches
//! 1.01–1.16·√CRB and ESPRIT 1.08–1.30·√CRB on such scenes (measured with numpy/cvxpy by the project);
//! the bound is the Cramér–Rao bound of the exact model (Stoica & Nehorai 1989, IEEE TASSP 37(5)).
mod common;

use common::montecarlo::run;
use finespike::{AmplitudeKind, Ast, Estimator, Scenario, Tv};

#[test]
#[ignore]
fn convex_methods_reach_the_crb_without_missed_or_spurious_lines() {
    let trials = 200;
    let mut failures = Vec::new();
    for (count, seed) in [(3usize, 21u64), (5, 22)] {
        let scene = Scenario::new(16, count)
            .with_separation(2.0)
            .with_amplitudes(AmplitudeKind::UnitModulus)
            .with_seed(seed)
            .generate()
            .unwrap();
        for snr in [20.0, 30.0, 40.0] {
            let sigma = 10f64.powf(-snr / 20.0);
            let methods: [Box<dyn Estimator>; 2] = [
                Box::new(Tv::with_sigma(sigma)),
                Box::new(Ast::with_sigma(sigma)),
            ];
            for m in &methods {
                let row = run(
                    m.as_ref(),
                    &scene.data,
                    &scene.truth,
                    sigma,
                    trials,
                    7000 + snr as u64,
                );
                let label = format!("{} lines, {} at {snr} dB", count, m.name());
                eprintln!(
                    "{label}: RMSE/√CRB {:?}, missed {}, spurious in {:.1}% of draws",
                    row.ratio
                        .iter()
                        .map(|r| (r * 1000.0).round() / 1000.0)
                        .collect::<Vec<_>>(),
                    row.missed,
                    100.0 * row.spurious_rate
                );
                if row.ratio.iter().any(|&r| r > 1.3) || row.missed > 0 || row.spurious_rate > 0.02
                {
                    failures.push(label);
                }
            }
        }
    }
    assert!(failures.is_empty(), "{failures:?}");
}
