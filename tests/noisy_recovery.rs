//! Noise-aware convex recovery (`sdp` with a noise level, `ast`) on the noisy reference cases.
mod common;

use common::{case_names, load_case, score};
use finespike::{Ast, Estimator, Tv};

/// Per-spike position standard deviations from the reference CRB files (numpy, Fisher information of
/// the exact model: Stoica & Nehorai 1989, IEEE TASSP 37(5)), in truth order.
fn crb_std(name: &str) -> Vec<(f64, f64)> {
    let path = common::refdata()
        .join("crb")
        .join(format!("{name}.crb.json"));
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

/// Every position within 4 CRB standard deviations, nothing missed or spurious, at SNR ≥ 20 dB.
/// (A single draw: 4σ of a Gaussian is exceeded with probability 6e-5 per spike.)
fn check_case(est: &dyn Estimator, name: &str) {
    let c = load_case(name);
    let sigma = c.truth.sigma.unwrap();
    let e = est.estimate(&c.data).unwrap();
    assert!(e.status.is_usable(), "{name}: {}", e.status);
    let s = score(&e.spikes, &c.truth.spikes, c.data.fc());
    assert_eq!(
        s.found,
        c.truth.spikes.len(),
        "{} {name}: {s:?} {:?}",
        est.name(),
        e.spikes
    );
    assert_eq!(s.spurious, 0, "{} {name}: {s:?}", est.name());
    for (pos, std) in crb_std(name) {
        let nearest = e
            .spikes
            .iter()
            .map(|x| finespike::wrap_distance(x.position, pos))
            .fold(f64::INFINITY, f64::min);
        assert!(
            nearest <= 4.0 * std,
            "{} {name}: error {nearest:e} vs CRB std {std:e}",
            est.name()
        );
    }
    assert_eq!(e.diagnostics.sigma, Some(sigma));
}

#[test]
fn constrained_tv_on_noisy_cases() {
    for name in case_names("nz_")
        .into_iter()
        .filter(|n| !n.contains("snr10"))
    {
        let sigma = load_case(&name).truth.sigma.unwrap();
        check_case(&Tv::with_sigma(sigma), &name);
    }
}

#[test]
fn ast_on_noisy_cases() {
    for name in case_names("nz_")
        .into_iter()
        .filter(|n| !n.contains("snr10"))
    {
        let sigma = load_case(&name).truth.sigma.unwrap();
        check_case(&Ast::with_sigma(sigma), &name);
    }
}
