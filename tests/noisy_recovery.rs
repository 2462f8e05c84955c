//! Noise-aware convex recovery (`sdp` with a noise level, `ast`) on the noisy reference cases.
mod common;

use common::{case_names, load_case};
use finespike::{Ast, Estimator, Tv};

/// Every position within 4 CRB standard deviations, nothing missed or spurious, at SNR ≥ 20 dB.
/// (A single draw: 4σ of a Gaussian is exceeded with probability 6e-5 per spike.)
fn check_case(est: &dyn Estimator, name: &str) {
    let c = load_case(name);
    let sigma = c.truth.sigma.unwrap();
    let e = est.estimate(&c.data).unwrap();
    assert!(e.status.is_usable(), "{name}: {}", e.status);
    common::assert_within_four_crb(name, &e.spikes, &c.truth.spikes, c.data.fc());
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
