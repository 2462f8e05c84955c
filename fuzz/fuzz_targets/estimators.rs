//! Measurements built from arbitrary bytes, then one estimator picked by the input among every
//! estimator by name and the exact-data forms of `sfw`, `greedy`, `grid` and `sdp`: `Ok` or a typed
//! error, never a panic. Bands are capped at 32 coefficients, and the interior point (`sdp`, `ast`
//! below fc = 25) at 9, so that one execution stays fast.
//!
//! Layout: byte 0 picks the estimator, byte 1 the constructor, byte 2 the size, then, for index sets,
//! bytes as indices and 8-byte little-endian `f64`s (real and imaginary parts, any bit pattern: NaN,
//! ±∞, subnormals).
#![no_main]

use finespike::{
    estimator_by_name, Complex64, Domain, Estimator, Greedy, GridL1, Measurements, Sfw, Tv,
};
use libfuzzer_sys::fuzz_target;

fn floats(bytes: &[u8]) -> Vec<f64> {
    bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().expect("8 bytes")))
        .collect()
}

fn build(bytes: &[u8]) -> Option<finespike::Result<Measurements>> {
    let (&kind, rest) = bytes.split_first()?;
    let (&size, rest) = rest.split_first()?;
    let n = usize::from(size % 65);
    let (idx_bytes, value_bytes) = rest.split_at(rest.len().min(n));
    let f = floats(value_bytes);
    let values: Vec<Complex64> = f
        .chunks_exact(2)
        .take(64)
        .map(|p| Complex64::new(p[0], p[1]))
        .collect();
    let indices: Vec<i64> = idx_bytes.iter().map(|&b| i64::from(b as i8) % 33).collect();
    let fc = usize::from(size % 33);
    Some(match kind % 5 {
        0 => Measurements::full_band(fc, &values),
        1 => Measurements::from_time_samples(&values),
        2 => Measurements::fourier(fc, &indices, &values),
        3 => Measurements::from_time_subset(
            &indices.iter().map(|k| k.rem_euclid(64)).collect::<Vec<_>>(),
            &values,
        ),
        _ => Measurements::in_band(
            -i64::from(size % 40),
            i64::from(kind / 5 % 24),
            &indices,
            &values,
            if kind & 0x80 != 0 {
                Domain::Time
            } else {
                Domain::Fourier
            },
        ),
    })
}

/// clarabel 0.11 panics (`expect`) when a factorisation inside its PSD cone fails; the library
/// catches that panic and returns `Error::Numerical` (src/sdp/clarabel_adapter.rs). libFuzzer's panic
/// hook would abort before the catch, so panics raised inside clarabel are let through to it; every
/// other panic still aborts and is reported as a crash.
fn let_clarabel_panics_unwind() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let abort_hook = std::panic::take_hook();
        std::panic::set_hook(Box::new(move |info| {
            let in_clarabel = info
                .location()
                .is_some_and(|l| l.file().contains("/clarabel-"));
            if !in_clarabel {
                abort_hook(info);
            }
        }));
    });
}

fuzz_target!(|bytes: &[u8]| {
    let_clarabel_panics_unwind();
    let Some((&pick, bytes)) = bytes.split_first() else {
        return;
    };
    let Some(Ok(data)) = build(bytes) else {
        return;
    };
    if data.band_len() > 32 {
        return;
    }
    let mut estimators: Vec<Box<dyn Estimator>> = finespike::registry::method_names()
        .map(|name| estimator_by_name(name).expect("listed method"))
        .collect();
    estimators.push(Box::new(Sfw::exact()));
    estimators.push(Box::new(Greedy::exact()));
    estimators.push(Box::new(GridL1::exact()));
    estimators.push(Box::new(Tv::exact()));
    let est = &estimators[usize::from(pick) % estimators.len()];
    {
        if matches!(est.name(), "sdp" | "ast") && data.band_len() > 9 {
            return;
        }
        if let Ok(e) = est.estimate(&data) {
            for s in &e.spikes {
                assert!((0.0..1.0).contains(&s.position), "{}: {s:?}", est.name());
                assert!(s.amplitude.re.is_finite() && s.amplitude.im.is_finite());
            }
        }
    }
});
