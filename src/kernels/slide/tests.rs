//! Tests of the sliding step: derivatives against finite differences, exact recovery by the dense
//! and the iterative Newton solves, stationarity of the penalised slide.

use super::*;
use crate::model::{forward, Domain, Measurements, Spikes};

fn model(noise: f64) -> Model {
    let truth = Spikes::from_parts(
        &[0.2, 0.31, 0.7],
        &[
            Complex64::new(1.0, 0.3),
            Complex64::new(-0.5, 0.8),
            Complex64::new(0.1, -1.1),
        ],
    )
    .unwrap();
    let idx: Vec<i64> = (-10..=10).collect();
    let mut y = forward(&truth, &idx);
    for (i, v) in y.iter_mut().enumerate() {
        *v += Complex64::new((i as f64 * 1.7).sin(), (i as f64 * 2.3).cos()) * noise;
    }
    let d = Measurements::in_band(-10, 10, &idx, &y, Domain::Fourier).unwrap();
    Model::new(&d, 8).unwrap()
}

fn point() -> Point {
    Point {
        tau: vec![0.203, 0.305, 0.69],
        amp: vec![
            Complex64::new(0.2, 0.05),
            Complex64::new(-0.1, 0.15),
            Complex64::new(0.03, -0.2),
        ],
    }
}

fn perturb(p: &Point, v: usize, h: f64) -> Point {
    let s = p.len();
    let mut q = p.clone();
    match v / s {
        0 => q.tau[v % s] += h,
        1 => q.amp[v % s].re += h,
        _ => q.amp[v % s].im += h,
    }
    q
}

/// Gradient and Hessian against central differences (step 1e-6: truncation ~h², rounding ~ε/h).
#[test]
fn derivatives_match_finite_differences() {
    let m = model(0.05);
    let p = point();
    let lambda = 0.02;
    let loc = local(&m, &p, lambda, true);
    let h = 1e-6;
    for v in 0..9 {
        let fp = objective(&m, &perturb(&p, v, h), lambda);
        let fm = objective(&m, &perturb(&p, v, -h), lambda);
        let fd = (fp - fm) / (2.0 * h);
        assert!(
            (fd - loc.grad[v]).abs() <= 1e-6 * (1.0 + loc.grad[v].abs()),
            "grad {v}: {fd} vs {}",
            loc.grad[v]
        );
        let gp = local(&m, &perturb(&p, v, h), lambda, true).grad;
        let gm = local(&m, &perturb(&p, v, -h), lambda, true).grad;
        for u in 0..9 {
            let fd = (gp[u] - gm[u]) / (2.0 * h);
            let an = loc.hess[(u, v)];
            assert!(
                (fd - an).abs() <= 1e-5 * (1.0 + an.abs()),
                "hess ({u},{v}): {fd} vs {an}"
            );
        }
    }
}

/// The iterative Newton solve (conjugate gradients from ITERATIVE_FROM unknowns on): with λ = 0
/// and exact data a slide of 110 spikes from a perturbed start recovers the generating spikes to
/// rounding level.
#[test]
fn iterative_slide_recovers_exact_spikes() {
    let s = 110;
    let (d, truth) = crate::kernels::spread_scene(s, 250);
    let pos = truth.positions();
    let amp = truth.amplitudes();
    let m = Model::new(&d, 8).unwrap();
    assert!(3 * s >= ITERATIVE_FROM);
    let mut p = Point {
        tau: pos
            .iter()
            .enumerate()
            .map(|(j, t)| t + 2e-5 * (j as f64).cos())
            .collect(),
        amp: pos
            .iter()
            .zip(&amp)
            .map(|(&t, &a)| m.to_centred(t, a) * Complex64::new(1.01, -0.005))
            .collect(),
    };
    let out = slide(&m, &mut p, 0.0, false, 200);
    assert!(out.converged);
    assert!(objective(&m, &p, 0.0) < 1e-26);
    for (t, want) in p.tau.iter().zip(&pos) {
        assert!((t - want).abs() < 1e-12);
    }
}

/// With λ = 0 and exact data, the slide recovers the generating spikes to rounding level.
#[test]
fn least_squares_slide_recovers_exact_spikes() {
    let m = model(0.0);
    let mut p = point();
    let out = slide(&m, &mut p, 0.0, false, 200);
    assert!(out.converged);
    let f = objective(&m, &p, 0.0);
    assert!(f < 1e-28, "f = {f}");
    for (t, want) in p.tau.iter().zip([0.2, 0.31, 0.7]) {
        assert!((t - want).abs() < 1e-13);
    }
}

/// At a converged slide with λ > 0 the stationarity conditions hold: η(τ_j) = a_j/|a_j| with
/// η = F*(y − Φa)/λ (Duval & Peyré 2015, FoCM 15(5), Prop. 3, restricted to the support).
#[test]
fn penalised_slide_reaches_stationarity() {
    let m = model(0.02);
    let mut p = point();
    let lambda = 0.01;
    let out = slide(&m, &mut p, lambda, false, 200);
    assert!(out.converged);
    let e = m.atoms(&p.tau);
    let r = m.residual(&e, &p.amp);
    let [p0, _, _] = m.correlate(&e, &r);
    for (v, a) in p0.iter().zip(&p.amp) {
        assert!((v / lambda - a / a.norm()).norm() < 1e-9);
    }
}

/// The pair sums from per-spike phasors against the closed form of `dirichlet_sums` (and, through
/// its own tests, the direct sums): centred and one-sided bands, positions outside `[0, 1)` (a slide
/// does not wrap them), neighbours 2/fc apart and far apart.
#[test]
fn pair_sums_match_dirichlet_sums() {
    for (a, b) in [(-4096i64, 4096i64), (0, 4095), (-7, 12)] {
        let n = (b - a + 1) as f64;
        let tau = [0.1, 0.1 + 2.0 / n, 0.37, 0.9999, 1.2, -0.35, 0.5];
        let pairs = PairSums::new(a, b, &tau);
        for j in 0..tau.len() {
            for l in 0..tau.len() {
                let got = pairs.at(&tau, j, l);
                let want = dirichlet_sums(a, b, tau[j] - tau[l]);
                for p in 0..3 {
                    // Entries scale like n^(p+1); rounding of the phase nτ is about n·ε.
                    let scale = n.powi(p as i32 + 1);
                    assert!(
                        (got[p] - want[p]).norm() <= 1e-12 * scale,
                        "band {a}..={b}, pair ({j}, {l}), order {p}: {} vs {}",
                        got[p],
                        want[p]
                    );
                }
            }
        }
    }
}
