//! Exact recovery by TV-norm minimisation (`sdp`): synthetic scenes at the proven separations and the
//! reference cases of `tests/refdata`.
mod common;

use common::{case_names, load_case, score};
use finespike::{AmplitudeKind, Estimator, Scenario, Tv, Warning};

/// Positions to 1e-9 Rayleigh units and amplitudes to 1e-9 relative (the acceptance level is
/// 1e-5): the interior point stops at a 1e-8 gap and locates the points where |q| = 1 to about 1e-5/fc;
/// the least-squares polish on the exact model then reaches rounding level times the conditioning of
/// the fit (below 1e6 for these separations), so 1e-9 leaves a wide margin and still fails on any
/// unpolished or wrong support.
const POS_TOL_FC: f64 = 1e-9;
const AMP_TOL: f64 = 1e-9;

fn check_exact(name: &str, sample: &finespike::Sample, fc: f64) {
    let est = Tv::exact().estimate(&sample.data).unwrap();
    assert!(est.status.is_usable(), "{name}: status {}", est.status);
    let s = score(&est.spikes, &sample.truth, fc);
    assert_eq!(s.found, sample.truth.len(), "{name}: {s:?}");
    assert_eq!(s.spurious, 0, "{name}: {s:?}");
    assert!(s.max_pos_err_fc <= POS_TOL_FC, "{name}: {s:?}");
    assert!(s.max_rel_amp_err <= AMP_TOL, "{name}: {s:?}");
    let cert = est.diagnostics.certificate.unwrap();
    assert!(cert.max_modulus <= 1.0 + 1e-6, "{name}: {cert:?}");
    // Independent check of the certificate: |q| by direct sums on a fine grid (2^14 points).
    let q = est.dual.as_ref().unwrap();
    let m = 1 << 14;
    let fine_max = (0..m)
        .map(|j| q.eval(j as f64 / m as f64).norm())
        .fold(0.0, f64::max);
    assert!(
        fine_max <= 1.0 + 1e-6,
        "{name}: max |q| on the fine grid {fine_max}"
    );
}

/// Separations 2/fc (Candès & Fernandez-Granda 2014, CPAM 67(6), Thm. 1.2) and 1.26/fc
/// (Fernandez-Granda 2016, Inf. Inference 5(3), Thm. 2.2) guarantee exact recovery.
#[test]
fn synthetic_scenes_at_proven_separations() {
    for fc in [8usize, 16] {
        for kind in [AmplitudeKind::Complex, AmplitudeKind::RealPositive] {
            for sep in [2.0, 1.26] {
                for seed in 0..2u64 {
                    let count = if fc == 8 { 3 } else { 5 };
                    let sample = Scenario::new(fc, count)
                        .with_separation(sep)
                        .with_amplitudes(kind)
                        .with_seed(seed)
                        .generate()
                        .unwrap();
                    let name = format!("fc {fc}, {kind:?}, sep {sep}, seed {seed}");
                    check_exact(&name, &sample, fc as f64);
                }
            }
        }
    }
}

fn case_sample(name: &str) -> (finespike::Sample, f64) {
    let c = load_case(name);
    let fc = c.data.fc();
    (
        finespike::Sample {
            truth: c.truth.spikes,
            data: c.data,
            sigma: 0.0,
        },
        fc,
    )
}

/// Noiseless reference cases at or above 1.26/fc (reference: cvxpy + SCS, `reference/*.tv_exact_scs.json`,
/// which recovers these with max position error ≤ 2e-7/fc).
#[test]
fn reference_cases_above_threshold() {
    let mut n = 0;
    for name in case_names("nl_") {
        if name.contains("s0p80") || name.contains("s1p00") {
            continue;
        }
        let (sample, fc) = case_sample(&name);
        check_exact(&name, &sample, fc);
        n += 1;
    }
    assert_eq!(n, 16);
}

/// Subsampled (random K, `c_k = 0` off K: Tang, Bhaskar, Shah & Recht 2013) and time-domain cases.
#[test]
fn reference_subsampled_and_time_domain_cases() {
    for name in case_names("ss_")
        .into_iter()
        .chain(case_names("td_").into_iter().filter(|n| !n.contains("snr")))
    {
        let (sample, fc) = case_sample(&name);
        check_exact(&name, &sample, fc);
    }
}

/// Below the record's resolution `1/N` the estimate must say plainly that the lines are
/// under-resolved; between `1/N` and the proven threshold `1.26/fc` it must give the separate
/// caution (design.md, "Resolution, two units").
#[test]
fn under_resolved_cases_carry_warnings() {
    for name in case_names("nl_")
        .into_iter()
        .filter(|n| n.contains("s0p80"))
    {
        let (sample, fc) = case_sample(&name);
        let est = Tv::exact().estimate(&sample.data).unwrap();
        let warned = |pick: fn(&Warning) -> bool| est.diagnostics.warnings.iter().any(pick);
        if let (Some(sep), Some(cells)) = (
            est.diagnostics.separation_fc,
            est.diagnostics.separation_cells,
        ) {
            assert!((cells - sep * (2.0 * fc + 1.0) / fc).abs() < 1e-9);
            if cells < 1.0 {
                assert!(
                    warned(|w| matches!(w, Warning::UnderResolved { .. })),
                    "{name}"
                );
            } else if sep < finespike::PROVEN_SEPARATION_FC {
                assert!(
                    warned(|w| matches!(w, Warning::BelowProvenSeparation { .. })),
                    "{name}"
                );
            }
        }
        let s = score(&est.spikes, &sample.truth, fc);
        eprintln!("{name}: {s:?} warnings {:?}", est.diagnostics.warnings);
    }
}
