//! Unit tests of the parent module (compiled only under `cfg(test)`: `unwrap` here is the assertion).
use super::*;
use crate::model::{forward, Domain, Measurements, Spikes};
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;

fn model(noise: f64) -> Model {
    let truth = Spikes::from_parts(
        &[0.1, 0.3, 0.62],
        &[
            Complex64::new(1.0, 0.3),
            Complex64::new(-0.5, 0.8),
            Complex64::new(0.6, -0.9),
        ],
    )
    .unwrap();
    let idx: Vec<i64> = (-12..=12).collect();
    let mut y = forward(&truth, &idx);
    // Seeded complex white Gaussian noise of level `noise`.
    let mut rng = StdRng::seed_from_u64(5);
    for v in y.iter_mut() {
        let (re, im): (f64, f64) = (rng.sample(StandardNormal), rng.sample(StandardNormal));
        *v += Complex64::new(re, im) * (noise / std::f64::consts::SQRT_2);
    }
    let d = Measurements::in_band(-12, 12, &idx, &y, Domain::Fourier).unwrap();
    Model::new(&d, 16).unwrap()
}

/// At the BLASSO optimum the primal value equals the dual value (strong duality; Duval & Peyré
/// 2015, FoCM 15(5), Prop. 3): the gap closes to the certificate tolerance.
#[test]
fn penalised_solution_closes_the_duality_gap() {
    let m = model(0.05);
    let mut budget = Budget::new(1000, f64::INFINITY);
    // The AST weight τ = 1.5 σ √(N ln N) of the SDP path (Bhaskar, Tang & Recht 2013), normalised.
    let n = m.len() as f64;
    let lambda = 1.5 * 0.05 * (n * n.ln()).sqrt() / m.scale;
    let out = solve_penalised(&m, lambda, 1e-10, &mut budget);
    assert_eq!(out.status, Status::Solved);
    assert_eq!(out.point.len(), 3);
    assert!(out.objective - out.lower_bound <= 1e-9 * out.objective);
    assert!(out.lower_bound <= out.objective + 1e-15);
}

/// Exact data: the continuation ends on the generating spikes, certified by the pre-certificate.
#[test]
fn exact_data_are_recovered_and_certified() {
    let m = model(0.0);
    let mut budget = Budget::new(1000, f64::INFINITY);
    let out = solve_exact(&m, 1e-8, &mut budget);
    assert_eq!(out.status, Status::Solved);
    let mut tau: Vec<f64> = out.point.tau.clone();
    tau.sort_by(f64::total_cmp);
    for (t, want) in tau.iter().zip([0.1, 0.3, 0.62]) {
        assert!((t - want).abs() < 1e-12);
    }
    assert!((out.objective - out.lower_bound).abs() <= 1e-12 * out.objective);
}

/// Constrained: the residual matches δ, and the primal and dual values agree.
#[test]
fn constrained_solution_matches_the_radius() {
    let m = model(0.05);
    let mut budget = Budget::new(1000, f64::INFINITY);
    let delta = 0.03;
    let out = solve_constrained(&m, delta, 1e-10, &mut budget);
    assert_eq!(out.status, Status::Solved);
    let (_, rn) = dual_of(&m, &out.point, 1.0);
    assert!((rn - delta).abs() <= 1e-9 * delta);
    assert!(out.objective - out.lower_bound <= 1e-8 * out.objective);
}
