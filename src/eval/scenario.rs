//! Seeded synthetic scenes: spikes at a requested minimum separation, amplitudes of a requested kind,
//! complex white Gaussian noise at a requested per-spike SNR. Every scene is invented.

use crate::error::{Error, Result};
use crate::model::{forward, wrap, Domain, Measurements, Spike, Spikes};
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// How amplitudes are drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AmplitudeKind {
    /// Modulus uniform in `[0.5, 1.5]`, phase uniform.
    Complex,
    /// Real, uniform in `[0.5, 1.5]` (positive measures: no separation needed for exact recovery,
    /// Schiebinger, Robeva & Recht 2018, Inf. Inference 7(1)).
    RealPositive,
    /// Modulus 1, phase uniform.
    UnitModulus,
}

/// A scene description; [`Scenario::generate`] draws one realisation.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    fc: usize,
    count: usize,
    separation_fc: f64,
    amplitudes: AmplitudeKind,
    snr_db: Option<f64>,
    seed: u64,
    subset_fraction: f64,
    domain: Domain,
    /// Time record of this many samples (any length), instead of `2fc + 1`.
    record_len: Option<usize>,
}

/// One realisation: the truth, the measurements, and the noise level used.
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    /// The spikes that generated the data.
    pub truth: Spikes,
    /// The (possibly noisy, possibly subsampled) measurements.
    pub data: Measurements,
    /// Noise standard deviation `σ` (`E|n_k|² = σ²`); 0 for exact data.
    pub sigma: f64,
}

impl Default for Scenario {
    fn default() -> Self {
        Scenario {
            fc: 16,
            count: 3,
            separation_fc: 2.0,
            amplitudes: AmplitudeKind::Complex,
            snr_db: None,
            seed: 0,
            subset_fraction: 1.0,
            domain: Domain::Fourier,
            record_len: None,
        }
    }
}

impl Scenario {
    /// A scene with cutoff `fc` (band `−fc..=fc`, or `2fc + 1` time samples) and `count` spikes.
    pub fn new(fc: usize, count: usize) -> Self {
        Scenario {
            fc,
            count,
            ..Scenario::default()
        }
    }

    /// A time record of `n` uniform samples (any `n ≥ 2`, even included) of `count` complex
    /// exponentials; positions are frequencies in cycles per sample and the Rayleigh unit is that of
    /// the stored band `−(n−1)..=0`, `fc = (n − 1)/2` ([`Measurements::from_time_samples`]).
    pub fn time_record(n: usize, count: usize) -> Self {
        Scenario {
            fc: n / 2,
            count,
            domain: Domain::Time,
            record_len: Some(n),
            ..Scenario::default()
        }
    }

    /// Minimum separation in Rayleigh units (`Δ·fc`); the closest pair is exactly this far apart.
    pub fn with_separation(mut self, separation_fc: f64) -> Self {
        self.separation_fc = separation_fc;
        self
    }

    /// Amplitude kind.
    pub fn with_amplitudes(mut self, kind: AmplitudeKind) -> Self {
        self.amplitudes = kind;
        self
    }

    /// Add complex white Gaussian noise so that the weakest spike has this SNR,
    /// `10 log10(min_j |a_j|² / σ²)`.
    pub fn with_snr_db(mut self, snr_db: f64) -> Self {
        self.snr_db = Some(snr_db);
        self
    }

    /// Random seed.
    pub fn with_seed(mut self, seed: u64) -> Self {
        self.seed = seed;
        self
    }

    /// Keep a random fraction of the band's coefficients (default 1: the full band).
    pub fn with_subset_fraction(mut self, fraction: f64) -> Self {
        self.subset_fraction = fraction;
        self
    }

    /// Fourier coefficients or time samples (`2fc + 1` of them; see also [`Scenario::time_record`]).
    pub fn with_domain(mut self, domain: Domain) -> Self {
        self.domain = domain;
        if domain == Domain::Fourier {
            self.record_len = None;
        }
        self
    }

    /// Draw one realisation.
    ///
    /// # Errors
    /// [`Error::ZeroCutoff`]; [`Error::InvalidSetting`] for no spikes, a separation that does not fit
    /// `count` spikes on the torus, a non-finite SNR or a subset fraction outside `(0, 1]`.
    pub fn generate(&self) -> Result<Sample> {
        if self.fc == 0 {
            return Err(Error::ZeroCutoff);
        }
        if self.count == 0 {
            return Err(bad("count", self.count, "at least one spike is needed"));
        }
        let (kmin, kmax) = match (self.domain, self.record_len) {
            (Domain::Time, Some(n)) => (-(n as i64 - 1), 0),
            (Domain::Fourier, _) => (-(self.fc as i64), self.fc as i64),
            (Domain::Time, None) => (-2 * self.fc as i64, 0),
        };
        let fc = (kmax - kmin) as f64 / 2.0;
        let d = self.separation_fc / fc;
        if d.is_nan() || d <= 0.0 || d * self.count as f64 > 1.0 {
            return Err(bad(
                "separation",
                self.separation_fc,
                "must be positive and count × separation / fc must not exceed 1",
            ));
        }
        if !(self.subset_fraction > 0.0 && self.subset_fraction <= 1.0) {
            return Err(bad(
                "subset_fraction",
                self.subset_fraction,
                "must lie in (0, 1]",
            ));
        }
        if let Some(snr) = self.snr_db {
            if !snr.is_finite() {
                return Err(bad("snr_db", snr, "must be finite"));
            }
        }
        let mut rng = StdRng::seed_from_u64(self.seed);
        let positions = separated_positions(&mut rng, self.count, d);
        let amps: Vec<Complex64> = (0..self.count)
            .map(|_| draw_amplitude(&mut rng, self.amplitudes))
            .collect();
        let truth = Spikes::new(
            positions
                .iter()
                .zip(&amps)
                .map(|(&p, &a)| Spike::new(p, a))
                .collect(),
        )?;
        let mut idx: Vec<i64> = (kmin..=kmax).collect();
        if self.subset_fraction < 1.0 {
            idx.shuffle(&mut rng);
            let keep = ((self.subset_fraction * idx.len() as f64).round() as usize).max(1);
            idx.truncate(keep);
            idx.sort_unstable();
        }
        let mut values = forward(&truth, &idx);
        let amin = amps.iter().map(|a| a.norm()).fold(f64::INFINITY, f64::min);
        let sigma = self
            .snr_db
            .map_or(0.0, |snr| amin * 10f64.powf(-snr / 20.0));
        if sigma > 0.0 {
            // E|n|² = σ²: real and imaginary parts each have variance σ²/2.
            let s = sigma / std::f64::consts::SQRT_2;
            for v in &mut values {
                let re: f64 = rng.sample(StandardNormal);
                let im: f64 = rng.sample(StandardNormal);
                *v += Complex64::new(s * re, s * im);
            }
        }
        let data = Measurements::in_band(kmin, kmax, &idx, &values, self.domain)?;
        Ok(Sample { truth, data, sigma })
    }
}

fn bad(name: &'static str, value: impl ToString, rule: &'static str) -> Error {
    Error::InvalidSetting {
        name,
        value: value.to_string(),
        rule,
    }
}

/// `count` positions on the torus whose closest pair is exactly `d` apart: gaps `d + s_i` with the
/// slack `1 − count·d` split at random (one gap gets none), and a random offset.
fn separated_positions(rng: &mut StdRng, count: usize, d: f64) -> Vec<f64> {
    let slack = 1.0 - count as f64 * d;
    let mut weights: Vec<f64> = (0..count).map(|_| rng.gen::<f64>()).collect();
    if count > 1 {
        weights[0] = 0.0;
    }
    let total: f64 = weights.iter().sum();
    let offset: f64 = rng.gen();
    let mut t = offset;
    let mut out = Vec::with_capacity(count);
    for w in weights {
        out.push(wrap(t));
        let share = if total > 0.0 { slack * w / total } else { 0.0 };
        t += d + share;
    }
    out
}

fn draw_amplitude(rng: &mut StdRng, kind: AmplitudeKind) -> Complex64 {
    let phase = 2.0 * PI * rng.gen::<f64>();
    let modulus = 0.5 + rng.gen::<f64>();
    match kind {
        AmplitudeKind::Complex => Complex64::from_polar(modulus, phase),
        AmplitudeKind::RealPositive => Complex64::new(modulus, 0.0),
        AmplitudeKind::UnitModulus => Complex64::from_polar(1.0, phase),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separation_is_exact_and_seeded() {
        let s = Scenario::new(16, 5).with_separation(1.26).with_seed(3);
        let a = s.generate().unwrap();
        let b = s.generate().unwrap();
        assert_eq!(a, b);
        assert!((a.truth.min_separation() * 16.0 - 1.26).abs() < 1e-12);
        assert_eq!(a.data.len(), 33);
        assert_eq!(a.sigma, 0.0);
    }

    #[test]
    fn noise_has_the_requested_power() {
        // Sample variance of 20000 complex draws against σ²: relative std of the estimate is 1/√M ≈ 0.7%.
        let s = Scenario::new(10_000, 1)
            .with_amplitudes(AmplitudeKind::UnitModulus)
            .with_snr_db(20.0);
        let sample = s.generate().unwrap();
        assert!((sample.sigma - 0.1).abs() < 1e-15);
        let r = sample.data.residual(&sample.truth);
        let p = r.iter().map(|z| z.norm_sqr()).sum::<f64>() / r.len() as f64;
        assert!((p / 0.01 - 1.0).abs() < 0.04, "power ratio {}", p / 0.01);
    }

    #[test]
    fn time_records_of_any_length() {
        let s = Scenario::time_record(256, 4)
            .with_separation(2.0)
            .with_seed(1);
        let a = s.generate().unwrap();
        assert_eq!(a.data.len(), 256);
        assert_eq!(a.data.domain(), Domain::Time);
        assert_eq!(a.data.fc(), 127.5);
        assert!((a.truth.min_separation() * 127.5 - 2.0).abs() < 1e-12);
        assert!(Scenario::time_record(1, 1).generate().is_err());
    }

    #[test]
    fn bad_settings_are_errors() {
        assert!(Scenario::new(0, 1).generate().is_err());
        assert!(Scenario::new(4, 5).with_separation(1.0).generate().is_err());
        assert!(Scenario::new(4, 1)
            .with_subset_fraction(0.0)
            .generate()
            .is_err());
    }
}
