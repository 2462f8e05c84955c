//! Unit tests of the parent module (compiled only under `cfg(test)`: `unwrap` here is the assertion).
use super::*;
use crate::estimator::Estimator;
use crate::model::{forward, wrap_distance, Domain, Spikes};
use num_complex::Complex64;

fn exact(positions: &[f64], amps: &[Complex64], kmin: i64, kmax: i64) -> Measurements {
    let truth = Spikes::from_parts(positions, amps).unwrap();
    let idx: Vec<i64> = (kmin..=kmax).collect();
    Measurements::in_band(kmin, kmax, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap()
}

#[test]
fn sign_convention_z_is_exp_minus_i2pi_tau() {
    // One spike: the single eigenvalue must be z = exp(−i2πτ), so τ = −arg(z)/(2π).
    let tau = 0.8125;
    let data = exact(&[tau], &[Complex64::new(1.0, 0.0)], -4, 4);
    let s = SubspaceSettings::default()
        .with_order(OrderSelection::Given(1))
        .unwrap();
    let prepared = prepare(Baseline::Esprit, &s, &data).unwrap();
    let u = prepared.subspace.unwrap().basis;
    let z = esprit::tls_esprit(u.as_ref()).unwrap()[0];
    let expected = Complex64::from_polar(1.0, -2.0 * PI * tau);
    assert!((z - expected).norm() < 1e-14, "z = {z}");
    assert!((position(z) - tau).abs() < 1e-15);
}

#[test]
fn all_three_recover_a_sub_rayleigh_pair_in_both_domains() {
    let amps = [Complex64::new(1.0, 0.2), Complex64::new(-0.5, 0.7)];
    let pos = [0.3, 0.3 + 0.4 / 10.0];
    let fourier = exact(&pos, &amps, -10, 10);
    // Time samples x_n = Σ a exp(i2πf n), n = 0..20.
    let x: Vec<Complex64> = (0..21)
        .map(|n| {
            pos.iter()
                .zip(&amps)
                .map(|(&f, &a)| a * Complex64::from_polar(1.0, 2.0 * PI * f * n as f64))
                .sum()
        })
        .collect();
    let time = Measurements::from_time_samples(&x).unwrap();
    let s = SubspaceSettings::default()
        .with_order(OrderSelection::Given(2))
        .unwrap();
    let methods: [Box<dyn Estimator>; 3] = [
        Box::new(Esprit::new(s)),
        Box::new(MatrixPencil::new(s)),
        Box::new(Music::new(s)),
    ];
    for data in [&fourier, &time] {
        for m in &methods {
            let est = m.estimate(data).unwrap();
            // Root-MUSIC's double roots limit it to about √ε (module docs of music).
            let tol = if m.name() == "music" { 1e-6 } else { 1e-10 } / 10.0;
            for (e, t) in est.spikes.iter().zip(&pos) {
                assert!(
                    wrap_distance(e.position, *t) < tol,
                    "{} {:?}",
                    m.name(),
                    data.domain()
                );
            }
        }
    }
}

#[test]
fn settings_are_checked() {
    let s = SubspaceSettings::default();
    assert!(s.with_window(1).is_err());
    assert!(s.with_max_order(0).is_err());
    assert!(s.with_order_window(1).is_err());
    assert!(s.with_oversampling(0).is_err());
    assert!(s.with_power_iterations(21).is_err());
    assert!(s.with_order(OrderSelection::Given(0)).is_err());
    assert_eq!(s.with_window(5).unwrap().window, Some(5));
}

#[test]
fn snapshot_pruning_drops_what_the_noise_cannot_support() {
    use crate::eval::array_scene::ArrayScene;
    // Two sources at 10 dB on 16 sensors, 30 snapshots, σ = 1, and a third candidate position
    // where there is nothing: its residual rise is σ² times a Gamma(30, 1) draw, far below the
    // threshold σ²(√30 + 3)² ≈ 72σ²; the true sources' rises are about M·L·P = 4800σ².
    let draw = ArrayScene::new(16, 30, &[0.1, 0.35])
        .unwrap()
        .with_snr_db(10.0)
        .unwrap()
        .with_seed(9)
        .draw()
        .unwrap();
    let kept = snapshots::prune(&draw.data, vec![0.1, 0.35, 0.72], 1.0).unwrap();
    assert_eq!(kept, vec![0.1, 0.35]);
    // Coincident candidates: one of the pair goes.
    let kept = snapshots::prune(&draw.data, vec![0.1, 0.1, 0.35], 1.0).unwrap();
    assert_eq!(kept.len(), 2);
    // With a noise level far above the data, nothing stands.
    let kept = snapshots::prune(&draw.data, vec![0.1, 0.35], 100.0).unwrap();
    assert!(kept.is_empty());
}
