//! Unit tests of the parent module (compiled only under `cfg(test)`: `unwrap` here is the assertion).
use super::*;
use crate::model::Domain;
use num_complex::Complex64;

#[test]
fn separation_warnings_follow_the_thresholds() {
    let idx: Vec<i64> = (-10..=10).collect();
    let data = Measurements::in_band(
        -10,
        10,
        &idx,
        &vec![Complex64::new(0.0, 0.0); 21],
        Domain::Fourier,
    )
    .unwrap();
    let one = Complex64::new(1.0, 0.0);
    let at = |d: f64| Spikes::from_parts(&[0.2, 0.2 + d / 10.0], &[one, one]).unwrap();
    let w = Diagnostics::describe(&data, &at(1.5)).warnings;
    assert!(w.is_empty());
    let w = Diagnostics::describe(&data, &at(1.1)).warnings;
    assert!(matches!(w[..], [Warning::BelowProvenSeparation { .. }]));
    // 0.8/fc is 1.68 resolution cells of this 21-coefficient band: resolved by the record,
    // below the proven threshold; 0.4/fc is 0.84 cells: under-resolved.
    let w = Diagnostics::describe(&data, &at(0.8)).warnings;
    assert!(matches!(w[..], [Warning::BelowProvenSeparation { .. }]));
    let w = Diagnostics::describe(&data, &at(0.4)).warnings;
    assert!(matches!(w[..], [Warning::UnderResolved { .. }]));
    assert!(w[0].to_string().starts_with("UNDER-RESOLVED"));
}

#[test]
fn estimators_are_send_and_sync() {
    fn check<T: Send + Sync>() {}
    check::<Box<dyn Estimator>>();
    check::<Estimate>();
}
