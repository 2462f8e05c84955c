//! Shared helpers for the integration tests: the reference cases in `tests/refdata` (a copy of the
//! project's reference data; see its README: truth files are invented, seeded scenes, and the reference
//! results were computed with cvxpy + SCS and numpy).
#![allow(dead_code)]

pub mod montecarlo;

use finespike::eval::io::{parse_samples, parse_spikes_json, SpikeFile};
use finespike::{wrap_distance, Domain, Measurements, Spikes};
use std::path::PathBuf;

/// Folder of the reference data.
pub fn refdata() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/refdata")
}

/// A reference case: its measurements (band as recorded in the manifest) and its truth.
pub struct Case {
    pub name: String,
    pub data: Measurements,
    pub truth: SpikeFile,
}

/// Load case `name`. Time-domain cases (`td_*`) hold `x_n` written with `k = −n`, band `−(N−1)..=0`;
/// the others use the band `−fc..=fc` of the truth file.
pub fn load_case(name: &str) -> Case {
    let dir = refdata().join("cases");
    let csv = std::fs::read_to_string(dir.join(format!("{name}.csv"))).expect("case csv");
    let rows = parse_samples(&csv, name).expect("parse case csv");
    let json = std::fs::read_to_string(dir.join(format!("{name}.truth.json"))).expect("truth json");
    let truth = parse_spikes_json(&json, name).expect("parse truth");
    let fc = truth.fc.expect("truth has fc") as i64;
    let data = if name.starts_with("td_") {
        let kmin = *rows.indices.iter().min().unwrap();
        Measurements::in_band(kmin, 0, &rows.indices, &rows.values, Domain::Time).unwrap()
    } else {
        Measurements::in_band(-fc, fc, &rows.indices, &rows.values, Domain::Fourier).unwrap()
    };
    Case {
        name: name.to_string(),
        data,
        truth,
    }
}

/// Names of all cases whose name starts with `prefix`, sorted.
pub fn case_names(prefix: &str) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(refdata().join("cases"))
        .expect("cases folder")
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().to_string())
        .filter(|n| n.ends_with(".csv") && n.starts_with(prefix))
        .map(|n| n.trim_end_matches(".csv").to_string())
        .collect();
    names.sort();
    names
}

/// Score of an estimate against the truth: every true spike matched to its nearest estimate
/// (one-to-one required), errors in Rayleigh units and relative amplitude error.
#[derive(Debug)]
pub struct Score {
    pub found: usize,
    pub spurious: usize,
    pub max_pos_err_fc: f64,
    pub max_rel_amp_err: f64,
}

/// Greedy nearest-neighbour matching of `estimate` to `truth` within 0.5/fc, with the worst position
/// and relative amplitude errors. Kept deliberately independent of the library's
/// `eval::metrics::score` (an optimal Kuhn–Munkres assignment): the reference-case tests must not
/// judge an estimator with the crate's own scoring code, and on the well-separated reference cases
/// both matchings agree, so a disagreement points at a bug in one of them (`tests/metrics.rs` checks
/// the library's against worked examples).
pub fn score(estimate: &Spikes, truth: &Spikes, fc: f64) -> Score {
    let mut used = vec![false; estimate.len()];
    let mut found = 0;
    let mut max_pos: f64 = 0.0;
    let mut max_amp: f64 = 0.0;
    for t in truth {
        let best = estimate
            .iter()
            .enumerate()
            .filter(|(i, _)| !used[*i])
            .min_by(|a, b| {
                wrap_distance(a.1.position, t.position)
                    .total_cmp(&wrap_distance(b.1.position, t.position))
            });
        if let Some((i, e)) = best {
            let d = wrap_distance(e.position, t.position) * fc;
            if d < 0.5 {
                used[i] = true;
                found += 1;
                max_pos = max_pos.max(d);
                max_amp = max_amp.max((e.amplitude - t.amplitude).norm() / t.amplitude.norm());
            }
        }
    }
    Score {
        found,
        spurious: estimate.len() - found,
        max_pos_err_fc: if found > 0 { max_pos } else { f64::INFINITY },
        max_rel_amp_err: if found > 0 { max_amp } else { f64::INFINITY },
    }
}

/// Per-spike position standard deviations `(position, std)` from the reference CRB file of `name`
/// (numpy, Fisher information of the exact model: Stoica & Nehorai 1989, IEEE TASSP 37(5)), in truth
/// order.
pub fn crb_std(name: &str) -> Vec<(f64, f64)> {
    let path = refdata().join("crb").join(format!("{name}.crb.json"));
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    v["spikes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            (
                s["position"].as_f64().unwrap(),
                s["std_position"].as_f64().unwrap(),
            )
        })
        .collect()
}

/// The noisy reference cases at SNR ≥ 20 dB: `nz_*` without `snr10`, and the noisy time-domain cases.
pub fn noisy_case_names() -> Vec<String> {
    case_names("nz_")
        .into_iter()
        .filter(|n| !n.contains("snr10"))
        .chain(case_names("td_").into_iter().filter(|n| n.contains("snr")))
        .collect()
}

/// The acceptance check on a noisy reference case: nothing missed or spurious, and every true position
/// within 4 CRB standard deviations of a recovered one (the reference CRB files, computed with numpy
/// from the Fisher matrix of Stoica & Nehorai 1989, IEEE TASSP 37(5); a single Gaussian draw exceeds
/// 4σ with probability 6e-5 per spike).
pub fn assert_within_four_crb(name: &str, spikes: &Spikes, truth: &Spikes, fc: f64) {
    let s = score(spikes, truth, fc);
    assert_eq!(
        (s.found, s.spurious),
        (truth.len(), 0),
        "{name}: {s:?} {spikes:?}"
    );
    for (pos, std) in crb_std(name) {
        let nearest = spikes
            .iter()
            .map(|x| wrap_distance(x.position, pos))
            .fold(f64::INFINITY, f64::min);
        assert!(
            nearest <= 4.0 * std,
            "{name}: error {nearest:e} vs CRB std {std:e}"
        );
    }
}

/// The exact (noiseless) reference cases in the regime of the exact-recovery theorem: `nl_*` at
/// separation ≥ 1.26/fc (Fernandez-Granda 2016), the subsampled `ss_*` cases and the noiseless
/// time-domain `td_*` cases (23 in all).
pub fn exact_case_names() -> Vec<String> {
    let names: Vec<String> = case_names("nl_")
        .into_iter()
        .filter(|n| !(n.contains("s0p80") || n.contains("s1p00")))
        .chain(case_names("ss_"))
        .chain(case_names("td_").into_iter().filter(|n| !n.contains("snr")))
        .collect();
    assert_eq!(
        names.len(),
        23,
        "reference cases missing from tests/refdata"
    );
    names
}

/// Exact recovery of a reference case: every true spike found, none spurious, positions within
/// `pos_tol_fc` Rayleigh units and amplitudes within `amp_tol` relative.
pub fn assert_exact_recovery(
    name: &str,
    spikes: &Spikes,
    truth: &Spikes,
    fc: f64,
    pos_tol_fc: f64,
    amp_tol: f64,
) {
    let s = score(spikes, truth, fc);
    assert_eq!((s.found, s.spurious), (truth.len(), 0), "{name}: {s:?}");
    assert!(s.max_pos_err_fc <= pos_tol_fc, "{name}: {s:?}");
    assert!(s.max_rel_amp_err <= amp_tol, "{name}: {s:?}");
}
