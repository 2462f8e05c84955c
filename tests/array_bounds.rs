//! The multi-snapshot Cramér–Rao bounds (`conditional_crb`, `stochastic_crb`) against outside values:
//! - `tests/refdata/arrays/crb.json`, written by `tests/refdata/arrays/make_crb.py` with numpy from
//!   the FULL Fisher information of each model (Slepian–Bangs: positions, every amplitude or every
//!   entry of the source covariance and σ² as unknowns), not from the concentrated matrix formulas
//!   the crate implements; invented scenes: one to three sources, uncorrelated, correlated,
//!   complex-correlated and nearly coherent sources, missing sensors;
//! - the check values of the research notes (shared/notes/snapshots-and-real-signals.md §A(3),
//!   computed there and checked against a full Fisher-information evaluation).

mod common;

use finespike::{conditional_crb, stochastic_crb, Snapshots};
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde_json::Value;
use std::f64::consts::PI;

struct Case {
    name: String,
    data: Snapshots,
    positions: Vec<f64>,
    p: DMatrix<Complex64>,
    sigma: f64,
    var_det: Vec<f64>,
    var_sto: Vec<f64>,
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn cases() -> Vec<Case> {
    let path = common::refdata().join("arrays/crb.json");
    let doc: Value = serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    doc["cases"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| {
            let sensors: Vec<i64> = floats(&c["sensors"]).iter().map(|&m| m as i64).collect();
            let l = c["snapshots"].as_u64().unwrap() as usize;
            let rows = c["source_covariance"].as_array().unwrap();
            let s = rows.len();
            let p = DMatrix::from_fn(s, s, |i, j| {
                let v = floats(&rows[i][j]);
                Complex64::new(v[0], v[1])
            });
            let x = DMatrix::from_element(sensors.len(), l, Complex64::new(0.0, 0.0));
            Case {
                name: c["name"].as_str().unwrap().to_string(),
                data: Snapshots::from_sensor_subset(&sensors, &x).unwrap(),
                positions: floats(&c["positions"]),
                p,
                sigma: c["sigma"].as_f64().unwrap(),
                var_det: floats(&c["var_det"]),
                var_sto: floats(&c["var_sto"]),
            }
        })
        .collect()
}

/// Amplitudes `S = C Q` with `C Cᴴ = P` (Cholesky) and `Q_jt = exp(i2πjt/L)`, so that `S Sᴴ/L = P`
/// exactly, as the reference script builds them.
fn amplitudes(p: &DMatrix<Complex64>, l: usize) -> DMatrix<Complex64> {
    let c = p.clone().cholesky().unwrap().l();
    let q = DMatrix::from_fn(p.nrows(), l, |j, t| {
        Complex64::from_polar(1.0, 2.0 * PI * (j * t) as f64 / l as f64)
    });
    c * q
}

/// Relative agreement with the full Fisher information: both sides are double-precision inverses of
/// matrices whose (Jacobi-scaled) condition numbers stay below about 1e4 on these scenes, so 1e-8
/// leaves a wide margin for rounding and none for a wrong formula (a missing factor 2 or a
/// transposed Hadamard factor moves the values by tens of percent).
const REL_TOL: f64 = 1e-8;

#[test]
fn deterministic_bound_matches_the_full_fisher_information() {
    for c in cases() {
        let s = amplitudes(&c.p, c.data.snapshot_count());
        let v = conditional_crb(&c.data, &c.positions, &s, c.sigma).unwrap();
        for (got, want) in v.iter().zip(&c.var_det) {
            assert!(
                (got / want - 1.0).abs() < REL_TOL,
                "{}: {got} vs {want}",
                c.name
            );
        }
    }
}

#[test]
fn stochastic_bound_matches_the_full_fisher_information() {
    for c in cases() {
        let v = stochastic_crb(&c.data, &c.positions, &c.p, c.sigma).unwrap();
        assert_eq!(v.len(), c.var_sto.len());
        for ((got, want), det) in v.iter().zip(&c.var_sto).zip(&c.var_det) {
            assert!(
                (got / want - 1.0).abs() < REL_TOL,
                "{}: {got} vs {want}",
                c.name
            );
            // Stoica & Nehorai 1990: CRB_sto ⪰ CRB_det at P̂ = P.
            assert!(got >= det, "{}: sto {got} below det {det}", c.name);
        }
    }
}

#[test]
fn stochastic_bound_reproduces_the_research_notes() {
    // Notes §A(3), 5 significant digits: N = 8, L = 100, 0 dB, θ = 20°: var_sto 3.3925e−6; θ = 0°
    // and 8°, P = I: 1.76242e−5 per source, correlation 0.9: 1.66067e−5; N = 16, L = 50, θ = ±10°:
    // std θ 0.1052° (P = I), 0.1040° (correlation 0.99).
    let all = cases();
    let get = |name: &str| all.iter().find(|c| c.name == name).unwrap();
    let sto = |c: &Case| stochastic_crb(&c.data, &c.positions, &c.p, c.sigma).unwrap();
    let close = |got: f64, want: f64, digits: f64| {
        assert!(
            (got - want).abs() <= 0.5 * digits,
            "{got} vs {want} (last digit {digits})"
        )
    };
    close(sto(get("notes_one_source"))[0], 3.3925e-6, 1e-10);
    for v in sto(get("notes_pair_uncorrelated")) {
        close(v, 1.76242e-5, 1e-10);
    }
    for v in sto(get("notes_pair_rho09")) {
        close(v, 1.66067e-5, 1e-10);
    }
    let theta_std = |v: f64| (v.sqrt() / (0.5 * 10f64.to_radians().cos())).to_degrees();
    for v in sto(get("notes_pm10_uncorrelated")) {
        close(theta_std(v), 0.1052, 1e-4);
    }
    for v in sto(get("notes_pm10_rho099")) {
        close(theta_std(v), 0.1040, 1e-4);
    }
}

#[test]
fn one_source_stochastic_bound_is_the_closed_form() {
    // Research notes §A(2) (computed there): one source, var_sto = var_det·(1 + 1/(N·SNR)), with the
    // single-tone var_det = 6σ²/((2π)² L·P·N(N² − 1)) (Rife & Boorstyn 1974, IEEE TIT 20(5)).
    let (n, l, power, sigma) = (11usize, 7usize, 0.3, 0.9);
    let x = DMatrix::from_element(n, l, Complex64::new(0.0, 0.0));
    let data = Snapshots::from_sensors(&x).unwrap();
    let p = DMatrix::from_element(1, 1, Complex64::new(power, 0.0));
    let v = stochastic_crb(&data, &[0.21], &p, sigma).unwrap()[0];
    let (nf, snr) = (n as f64, power / (sigma * sigma));
    let det = 6.0 / ((2.0 * PI).powi(2) * l as f64 * snr * nf * (nf * nf - 1.0));
    let want = det * (1.0 + 1.0 / (nf * snr));
    assert!((v / want - 1.0).abs() < 1e-12, "{v} vs {want}");
}

#[test]
fn fully_coherent_sources_have_a_finite_stochastic_bound() {
    // A rank-one source covariance (fully coherent pair): P Aᴴ R⁻¹ A P has rank one, but its
    // Hadamard product with the positive definite Dᴴ Π⊥ D is still positive definite.
    let x = DMatrix::from_element(10, 50, Complex64::new(0.0, 0.0));
    let data = Snapshots::from_sensors(&x).unwrap();
    let u = [Complex64::new(1.0, 0.0), Complex64::from_polar(1.0, 0.7)];
    let p = DMatrix::from_fn(2, 2, |i, j| u[i] * u[j].conj() * 100.0);
    let v = stochastic_crb(&data, &[0.1, 0.25], &p, 1.0).unwrap();
    assert!(v.iter().all(|x| x.is_finite() && *x > 0.0), "{v:?}");
}

#[test]
fn bad_inputs_are_refused() {
    let x = DMatrix::from_element(6, 3, Complex64::new(0.0, 0.0));
    let data = Snapshots::from_sensors(&x).unwrap();
    let p = DMatrix::from_element(1, 1, Complex64::new(1.0, 0.0));
    assert!(stochastic_crb(&data, &[0.1, 0.2], &p, 1.0).is_err());
    assert!(stochastic_crb(&data, &[0.1], &p, 0.0).is_err());
    assert!(stochastic_crb(&data, &[0.1], &p, f64::NAN).is_err());
    // Coincident positions: the Fisher matrix is singular.
    let p2 = DMatrix::identity(2, 2);
    assert!(stochastic_crb(&data, &[0.1, 0.1], &p2, 1.0).is_err());
}
