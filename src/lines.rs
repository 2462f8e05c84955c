//! The lines of an estimate as the user reads them: each line once, in the record's own unit, with
//! its Cramér–Rao bound and the cautions that concern single lines or pairs of lines.
//!
//! # Real-valued records
//!
//! A real record `x_n = Σ_j A_j cos(2πf_j n + φ_j)` is, in the complex model, the conjugate-symmetric
//! pairs `(A_j/2)e^{±iφ_j}` at `±f_j`. A line is reported once, at `f ∈ [0, 1/2]`, with the phasor
//! amplitude `A e^{iφ} = a_{+f} + conj(a_{−f})` (so `|amplitude|` is the cosine amplitude and the
//! phase refers to the index origin `n = 0` as the user numbered the samples). A single atom at `f = 0`
//! or `1/2` is reported with its own (real) amplitude.
//!
//! # Cramér–Rao bound of a line
//!
//! The Fisher information of the lines' parameters `(f_j, Re P_j, Im P_j)` in white Gaussian noise:
//! for a complex record `F = (2/σ²) Re(JᴴJ)` (circular noise, `E|n|² = σ²`; Stoica & Nehorai 1989,
//! IEEE TASSP 37(5)), for a real record with real noise of variance `σ²` the model is
//! `x_n = Re(P e^{i2πfn})` and `F = (1/σ²) JᵀJ` (Kay 1993, *Fundamentals of Statistical Signal
//! Processing: Estimation Theory*, §3.7 and Example 3.14 — section recalled from memory). Its single-line
//! large-`N` form is `var f̂ ≥ 12/((2π)² η N(N² − 1))`, `η = A²/(2σ²)`. With a trend, the polynomial's
//! coefficients are nuisance parameters; eliminating them replaces every column of `J` by its
//! projection `P⊥J` (the Schur complement of the nuisance block), which is what is computed here.
//!
//! # Cancelling pairs
//!
//! Two lines much closer than the record's resolution `1/N`, with nearly opposite phases and
//! amplitudes far larger than their sum, model a slow feature (an offset or trend left in the record,
//! or a bump of red noise) with two near-cancelling exponentials: the least-squares problem on such
//! a pair is ill-conditioned and the amplitudes are not physical. Rule used here (common practice
//! for flagging ill-conditioned pairs, not taken from a paper): separation below one resolution cell,
//! phase difference above 120°, and `|a₁ + a₂| < ½ min(|a₁|, |a₂|)`.

use crate::error::Result;
use crate::estimator::{Line, Warning};
use crate::model::{atom, wrap_distance, Domain, Measurements, Spikes};
use faer::Mat;
use num_complex::Complex64;
use std::f64::consts::PI;

/// Largest `|K|·p²` (samples times squared parameter count) for which the line bounds are computed;
/// beyond it (e.g. 100 lines on 100 000 samples) the diagnostics leave them out.
const MAX_CRB_WORK: f64 = 2e9;

/// Each line once, in the record's unit, with its bound when `sigma` is known.
pub(crate) fn report(data: &Measurements, spikes: &Spikes, sigma: Option<f64>) -> Vec<Line> {
    let folded = fold(data, spikes);
    let stds = sigma
        .filter(|s| *s > 0.0)
        .and_then(|s| position_std(data, &folded, s).ok());
    folded
        .iter()
        .enumerate()
        .map(|(i, &(position, amplitude))| Line {
            position,
            frequency: (data.domain() == Domain::Time).then(|| data.physical(position)),
            location: match (data.domain(), data.scale()) {
                (Domain::Fourier, Some(s)) => Some(position * s.factor()),
                _ => None,
            },
            amplitude,
            crb_std_position: stds.as_ref().and_then(|v| v[i]),
        })
        .collect()
}

/// The lines of `spikes` as `(position, amplitude)`: for a real record the mirror pairs folded onto
/// `[0, 1/2]` (module docs), otherwise the spikes themselves.
fn fold(data: &Measurements, spikes: &Spikes) -> Vec<(f64, Complex64)> {
    if !data.is_real() {
        return spikes.iter().map(|s| (s.position, s.amplitude)).collect();
    }
    // Pair each spike at τ ≤ 1/2 with the spike nearest to 1 − τ within the merge distance.
    let merge = crate::kernels::lstsq::MIRROR_MERGE_FC / data.fc();
    let mut used = vec![false; spikes.len()];
    let s = spikes.as_slice();
    let mut lines = Vec::new();
    for i in 0..s.len() {
        if used[i] {
            continue;
        }
        used[i] = true;
        let p = s[i].position;
        let f = p.min(1.0 - p);
        let partner = (0..s.len())
            .filter(|&j| !used[j])
            .map(|j| (j, wrap_distance(s[j].position, 1.0 - p)))
            .filter(|&(_, d)| d <= merge)
            .min_by(|a, b| a.1.total_cmp(&b.1))
            .map(|(j, _)| j);
        // The phasor: a at +f plus the conjugate of the amplitude at −f.
        let (plus, minus) = if p <= 0.5 {
            (s[i].amplitude, partner.map(|j| s[j].amplitude))
        } else {
            (
                partner.map_or(Complex64::new(0.0, 0.0), |j| s[j].amplitude),
                Some(s[i].amplitude),
            )
        };
        let phasor = if f <= 1e-12 || f >= 0.5 - 1e-12 {
            plus + minus.unwrap_or_default()
        } else {
            plus + minus.unwrap_or_default().conj()
        };
        if let Some(j) = partner {
            used[j] = true;
        }
        lines.push((f, phasor));
    }
    lines.sort_by(|a, b| a.0.total_cmp(&b.0));
    lines
}

/// Cramér–Rao standard deviation of each line's position (module docs), in cycles per sample (or
/// fractions of the domain); `None` for a line at 0 or 1/2 of a real record (no frequency to bound).
fn position_std(
    data: &Measurements,
    lines: &[(f64, Complex64)],
    sigma: f64,
) -> Result<Vec<Option<f64>>> {
    let m = data.len();
    let real = data.is_real();
    // Parameters: (f, Re P, Im P) per line; a real line at 0 or 1/2 has only Re P.
    let mut cols: Vec<Vec<Complex64>> = Vec::new();
    let mut freq_col: Vec<Option<usize>> = Vec::new();
    let amax = lines.iter().map(|l| l.1.norm()).fold(0.0, f64::max);
    if amax.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) || lines.is_empty() {
        return Ok(vec![None; lines.len()]);
    }
    let p_est = 3.0 * lines.len() as f64;
    if m as f64 * p_est * p_est > MAX_CRB_WORK {
        return Ok(vec![None; lines.len()]);
    }
    let k = data.indices();
    for &(f, a) in lines {
        let a = a / amax;
        let edge = real && (f <= 1e-12 || f >= 0.5 - 1e-12);
        let e: Vec<Complex64> = k.iter().map(|&k| atom(k, f)).collect();
        // d/df of e^{−i2πkf} is −i2πk e^{−i2πkf}.
        let de: Vec<Complex64> = k
            .iter()
            .zip(&e)
            .map(|(&k, &e)| Complex64::new(0.0, -2.0 * PI * k as f64) * e)
            .collect();
        if real {
            // x = Re(P e): ∂/∂f = Re(P de), ∂/∂Re P = Re e, ∂/∂Im P = −Im e.
            if edge {
                freq_col.push(None);
                cols.push(e.iter().map(|z| Complex64::new(z.re, 0.0)).collect());
            } else {
                freq_col.push(Some(cols.len()));
                cols.push(de.iter().map(|z| Complex64::new((a * z).re, 0.0)).collect());
                cols.push(e.iter().map(|z| Complex64::new(z.re, 0.0)).collect());
                cols.push(e.iter().map(|z| Complex64::new(-z.im, 0.0)).collect());
            }
        } else {
            freq_col.push(Some(cols.len()));
            cols.push(de.iter().map(|z| a * z).collect());
            cols.push(e.clone());
            cols.push(e.iter().map(|z| Complex64::new(0.0, 1.0) * z).collect());
        }
    }
    if let Some(b) = data.trend_basis() {
        cols.iter_mut().for_each(|c| b.project(c));
    }
    let p = cols.len();
    // Fisher matrix at σ = 1 and unit peak amplitude: 2 Re(JᴴJ) (complex) or JᵀJ (real).
    let weight = if real { 1.0 } else { 2.0 };
    let fisher = Mat::<f64>::from_fn(p, p, |i, j| {
        weight
            * cols[i]
                .iter()
                .zip(&cols[j])
                .map(|(u, v)| u.re * v.re + u.im * v.im)
                .sum::<f64>()
    });
    let Ok(inverse) = crate::bounds::ScaledInverse::new(&fisher) else {
        return Ok(vec![None; lines.len()]);
    };
    // σ scales the position bound linearly; amplitudes were divided by `amax`, so σ is too.
    let s = sigma / amax;
    Ok(freq_col
        .iter()
        .map(|c| {
            c.and_then(|c| {
                let v = inverse.cov(c, c);
                (v.is_finite() && v >= 0.0).then(|| s * v.sqrt())
            })
        })
        .collect())
}

/// Cautions about single lines and pairs: a line within one resolution cell of zero frequency in a
/// time record (a trend or offset), and cancelling pairs (module docs).
pub(crate) fn cautions(data: &Measurements, lines: &[Line]) -> Vec<Warning> {
    let n = data.band_len() as f64;
    let mut out = Vec::new();
    if data.domain() == Domain::Time {
        for l in lines {
            let f = l.position.min(1.0 - l.position);
            if f * n < 1.0 {
                out.push(Warning::NearZeroFrequency {
                    frequency: l.frequency.unwrap_or(f),
                    cells: f * n,
                    amplitude: l.amplitude.norm(),
                    trend_fitted: data.trend_basis().is_some(),
                });
            }
        }
    }
    for (i, a) in lines.iter().enumerate() {
        for b in &lines[i + 1..] {
            let cells = wrap_distance(a.position, b.position) * n;
            if cells >= 1.0 {
                continue;
            }
            let (x, y) = (a.amplitude, b.amplitude);
            let phase = (x * y.conj()).arg().abs().to_degrees();
            if phase > 120.0 && (x + y).norm() < 0.5 * x.norm().min(y.norm()) {
                out.push(Warning::CancellingPair {
                    positions: (
                        a.frequency.unwrap_or(a.position),
                        b.frequency.unwrap_or(b.position),
                    ),
                    cells,
                    amplitudes: (x.norm(), y.norm()),
                    sum: (x + y).norm(),
                    phase_deg: phase,
                });
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Trend;

    fn cosine_record(n: usize, f: f64, amp: f64, phase: f64) -> Measurements {
        let x: Vec<f64> = (0..n)
            .map(|t| amp * (2.0 * PI * f * t as f64 + phase).cos())
            .collect();
        Measurements::from_real_samples(&x).unwrap()
    }

    #[test]
    fn a_cosine_is_one_line_with_its_phasor() {
        let data = cosine_record(32, 0.1234, 1.5, 0.3);
        let spikes = crate::kernels::lstsq::fit(&data, &[0.1234]).unwrap();
        assert_eq!(spikes.len(), 2, "a real line is a mirror pair");
        let lines = report(&data, &spikes, None);
        assert_eq!(lines.len(), 1);
        assert!((lines[0].position - 0.1234).abs() < 1e-12);
        assert!((lines[0].amplitude - Complex64::from_polar(1.5, 0.3)).norm() < 1e-10);
        assert_eq!(lines[0].frequency, Some(0.1234));
    }

    #[test]
    fn real_tone_bound_matches_the_textbook_values() {
        // Kay 1993, Example 3.14 (large-N form): var f ≥ 12/((2π)² η N(N² − 1)), η = A²/(2σ²).
        // Check values of the exact bound from the project's research notes (computed there from
        // the same Fisher information, independently of this code): N = 32, A = 1, σ² = 0.5,
        // f = 0.1234, φ = 0.3 gives var f = 9.0637e−6; the large-N form gives 9.2853e−6.
        let data = cosine_record(32, 0.1234, 1.0, 0.3);
        let sigma = 0.5f64.sqrt();
        let std = position_std(&data, &[(0.1234, Complex64::from_polar(1.0, 0.3))], sigma).unwrap()
            [0]
        .unwrap();
        assert!(
            (std * std / 9.0637e-6 - 1.0).abs() < 2e-3,
            "var {}",
            std * std
        );
        // N = 256, f = 0.1: within 2 % of the large-N form (the notes give the ratio 1.012).
        let data = cosine_record(256, 0.1, 1.0, 0.3);
        let std = position_std(&data, &[(0.1, Complex64::from_polar(1.0, 0.3))], sigma).unwrap()[0]
            .unwrap();
        let n = 256.0f64;
        let kay = 12.0 / ((2.0 * PI).powi(2) * 1.0 * n * (n * n - 1.0));
        assert!(
            (std * std / kay - 1.012).abs() < 0.005,
            "{}",
            std * std / kay
        );
    }

    #[test]
    fn a_trend_raises_the_bound_of_a_slow_line_only() {
        let data = cosine_record(64, 0.02, 1.0, 0.3);
        let line = [(0.02, Complex64::from_polar(1.0, 0.3))];
        let plain = position_std(&data, &line, 0.1).unwrap()[0].unwrap();
        let detrended =
            position_std(&data.with_trend(Trend::Linear).unwrap(), &line, 0.1).unwrap()[0].unwrap();
        assert!(detrended > 1.05 * plain, "{detrended} vs {plain}");
        let data = cosine_record(64, 0.3, 1.0, 0.3);
        let line = [(0.3, Complex64::from_polar(1.0, 0.3))];
        let plain = position_std(&data, &line, 0.1).unwrap()[0].unwrap();
        let detrended =
            position_std(&data.with_trend(Trend::Linear).unwrap(), &line, 0.1).unwrap()[0].unwrap();
        assert!((detrended / plain - 1.0).abs() < 0.01);
    }

    #[test]
    fn cancelling_pair_and_near_zero_line_are_flagged() {
        let data = Measurements::from_time_samples(&[Complex64::new(1.0, 0.0); 100]).unwrap();
        let line = |p: f64, a: Complex64| Line {
            position: p,
            frequency: Some(p),
            location: None,
            amplitude: a,
            crb_std_position: None,
        };
        let pair = [
            line(0.2, Complex64::from_polar(7.5, 0.0)),
            line(0.2 + 0.3 / 100.0, Complex64::from_polar(7.4, 3.0)),
        ];
        let w = cautions(&data, &pair);
        assert!(w
            .iter()
            .any(|w| matches!(w, Warning::CancellingPair { .. })));
        let fine = [
            line(0.2, Complex64::from_polar(1.0, 0.0)),
            line(0.2 + 0.3 / 100.0, Complex64::from_polar(1.0, 0.5)),
        ];
        assert!(cautions(&data, &fine).is_empty());
        let slow = [line(0.004, Complex64::new(1.0, 0.0))];
        assert!(matches!(
            cautions(&data, &slow)[..],
            [Warning::NearZeroFrequency { .. }]
        ));
    }
}
