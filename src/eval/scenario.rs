//! Seeded synthetic scenes: spikes at a requested minimum separation, amplitudes of a requested kind,
//! complex white Gaussian noise at a requested per-spike SNR; and real-valued records in physical
//! units ([`RealScene`]) with an offset, a linear trend, AR(1) red noise and missing samples in runs.
//! Every scene is invented.

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

/// One cosine `A cos(2πf n / R + φ)` of an invented real record.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Cosine {
    /// Frequency `f` in the scene's unit (Hz with a sample rate `R`), in `[0, R/2]`.
    pub frequency: f64,
    /// Cosine amplitude `A ≥ 0`.
    pub amplitude: f64,
    /// Phase `φ` in radians, at the index origin `n = 0`.
    pub phase: f64,
}

/// An invented real-valued time record: cosines, an offset and a linear trend, AR(1) red noise and
/// missing samples in runs, seeded. Built with [`RealScene::new`] and the `with_*` setters;
/// [`RealScene::generate`] draws it.
///
/// The noise is the stationary AR(1) process `e_n = ρ e_{n−1} + w_n`, `w_n` white Gaussian of standard
/// deviation `innovation_std` (the first value drawn from the stationary law, of variance
/// `innovation_std² / (1 − ρ²)`); ρ = 0 gives white noise.
#[derive(Debug, Clone, PartialEq)]
pub struct RealScene {
    samples: usize,
    rate: f64,
    first: i64,
    cosines: Vec<Cosine>,
    offset: f64,
    slope: f64,
    rho: f64,
    innovation_std: f64,
    missing: f64,
    max_run: usize,
    seed: u64,
}

/// One draw of a [`RealScene`].
#[derive(Debug, Clone, PartialEq)]
pub struct RealRecord {
    /// The sample indices kept, increasing (first and last always kept).
    pub times: Vec<i64>,
    /// The values at `times`.
    pub values: Vec<f64>,
    /// The cosines, as given.
    pub cosines: Vec<Cosine>,
    /// The stationary standard deviation of the noise, `innovation_std / √(1 − ρ²)`.
    pub noise_std: f64,
}

impl RealRecord {
    /// The record as measurements (real-valued, any origin, gaps where samples are missing).
    ///
    /// # Errors
    /// As [`Measurements::from_real_subset`].
    pub fn measurements(&self) -> Result<Measurements> {
        Measurements::from_real_subset(&self.times, &self.values)
    }
}

impl RealScene {
    /// `samples` samples at `rate` samples per unit of time, indices from 0, no lines, no offset,
    /// no trend, no noise, nothing missing, seed 0.
    pub fn new(samples: usize, rate: f64) -> Self {
        RealScene {
            samples,
            rate,
            first: 0,
            cosines: Vec::new(),
            offset: 0.0,
            slope: 0.0,
            rho: 0.0,
            innovation_std: 0.0,
            missing: 0.0,
            max_run: 1,
            seed: 0,
        }
    }

    /// Index of the first sample (the record is `first..first + samples`).
    pub fn with_first_index(mut self, first: i64) -> Self {
        self.first = first;
        self
    }

    /// Add a cosine (frequency in the scene's unit, amplitude, phase in radians at `n = 0`).
    pub fn with_cosine(mut self, frequency: f64, amplitude: f64, phase: f64) -> Self {
        self.cosines.push(Cosine {
            frequency,
            amplitude,
            phase,
        });
        self
    }

    /// An offset and a linear trend `offset + slope·(n − first)`.
    pub fn with_trend(mut self, offset: f64, slope: f64) -> Self {
        self.offset = offset;
        self.slope = slope;
        self
    }

    /// AR(1) noise with coefficient `rho` and innovation standard deviation `innovation_std`.
    pub fn with_red_noise(mut self, rho: f64, innovation_std: f64) -> Self {
        self.rho = rho;
        self.innovation_std = innovation_std;
        self
    }

    /// Remove about this fraction of the samples, in runs of 1 to `max_run` consecutive samples
    /// (the first and last sample are kept, so the record keeps its span).
    pub fn with_missing(mut self, fraction: f64, max_run: usize) -> Self {
        self.missing = fraction;
        self.max_run = max_run;
        self
    }

    /// Random seed (noise and missing samples follow from it).
    pub fn with_seed(mut self, seed: u64) -> Self {
        self.seed = seed;
        self
    }

    /// Draw the record.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for fewer than 2 samples, a rate that is not positive and finite, a
    /// frequency outside `[0, R/2]`, a negative or non-finite amplitude, a non-finite phase, offset or
    /// slope, `|ρ| ≥ 1`, a negative or non-finite innovation, a missing fraction outside `[0, 1/2]`, a
    /// run length of 0, or indices beyond `±2^62`.
    pub fn generate(&self) -> Result<RealRecord> {
        let n = self.samples;
        if n < 2 {
            return Err(bad("samples", n, "at least 2 samples are needed"));
        }
        if !(self.rate.is_finite() && self.rate > 0.0) {
            return Err(bad("rate", self.rate, "must be positive and finite"));
        }
        for c in &self.cosines {
            if !(0.0..=self.rate / 2.0).contains(&c.frequency) {
                return Err(bad(
                    "frequency",
                    c.frequency,
                    "must lie in [0, R/2] (R the sample rate)",
                ));
            }
            if !(c.amplitude.is_finite() && c.amplitude >= 0.0 && c.phase.is_finite()) {
                return Err(bad(
                    "amplitude",
                    c.amplitude,
                    "amplitudes must be finite and non-negative, phases finite",
                ));
            }
        }
        if !(self.offset.is_finite() && self.slope.is_finite()) {
            return Err(bad("trend", self.slope, "offset and slope must be finite"));
        }
        if self.rho.is_nan() || self.rho.abs() >= 1.0 {
            return Err(bad(
                "rho",
                self.rho,
                "the AR(1) coefficient must satisfy |ρ| < 1",
            ));
        }
        if !(self.innovation_std.is_finite() && self.innovation_std >= 0.0) {
            return Err(bad(
                "innovation_std",
                self.innovation_std,
                "must be finite and non-negative",
            ));
        }
        if !(0.0..=0.5).contains(&self.missing) || self.max_run == 0 {
            return Err(bad(
                "missing",
                self.missing,
                "the missing fraction must lie in [0, 1/2] and runs must be at least 1 sample long",
            ));
        }
        const LIMIT: i64 = 1 << 62;
        let last = i64::try_from(n - 1)
            .ok()
            .and_then(|l| self.first.checked_add(l))
            .filter(|l| (-LIMIT..=LIMIT).contains(l) && self.first >= -LIMIT)
            .ok_or_else(|| bad("first", self.first, "the indices must stay within ±2^62"))?;
        let mut rng = StdRng::seed_from_u64(self.seed);
        let noise_std = self.innovation_std / (1.0 - self.rho * self.rho).sqrt();
        let mut e = noise_std * rng.sample::<f64, _>(StandardNormal);
        let mut values = Vec::with_capacity(n);
        for (i, t) in (self.first..=last).enumerate() {
            if i > 0 {
                e = self.rho * e + self.innovation_std * rng.sample::<f64, _>(StandardNormal);
            }
            let mut x = self.offset + self.slope * i as f64 + e;
            for c in &self.cosines {
                x += c.amplitude * (2.0 * PI * c.frequency / self.rate * t as f64 + c.phase).cos();
            }
            values.push(x);
        }
        let mut keep = vec![true; n];
        let target = (self.missing * n as f64).round() as usize;
        let mut missing = 0;
        // Runs start inside 1..n−1 so that the first and last sample stay.
        while missing < target && n > 2 {
            let start = rng.gen_range(1..n - 1);
            let len = rng.gen_range(1..=self.max_run);
            for k in keep.iter_mut().take((start + len).min(n - 1)).skip(start) {
                if *k && missing < target {
                    *k = false;
                    missing += 1;
                }
            }
        }
        let (times, values) = (self.first..=last)
            .zip(values)
            .zip(keep)
            .filter_map(|(tv, k)| k.then_some(tv))
            .unzip();
        Ok(RealRecord {
            times,
            values,
            cosines: self.cosines.clone(),
            noise_std,
        })
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
    fn real_records_hold_their_cosines_trend_and_gaps() {
        // Exact record: every kept value is the formula's, evaluated independently here.
        let scene = RealScene::new(200, 1000.0)
            .with_first_index(1000)
            .with_cosine(123.4, 1.0, 0.3)
            .with_trend(2.0, 0.001)
            .with_missing(0.03, 5)
            .with_seed(4);
        let r = scene.generate().unwrap();
        assert_eq!(r.times.len(), 194);
        assert_eq!((r.times[0], *r.times.last().unwrap()), (1000, 1199));
        for (&t, &x) in r.times.iter().zip(&r.values) {
            let want = 2.0 + 0.001 * (t - 1000) as f64 + (2.0 * PI * 0.1234 * t as f64 + 0.3).cos();
            assert!((x - want).abs() < 1e-9, "{t}: {x} vs {want}");
        }
        let m = r.measurements().unwrap();
        assert!(m.is_real() && !m.is_contiguous());
        assert_eq!(m.band_len(), 200);
        assert_eq!(scene.generate().unwrap(), r);
        // Red noise: lag-one correlation near ρ = 0.9 over 20 000 samples (std of the estimate
        // about √((1 − ρ²)/M) ≈ 0.003), stationary std 0.05/√0.19.
        let noisy = RealScene::new(20_000, 1.0)
            .with_red_noise(0.9, 0.05)
            .with_seed(1)
            .generate()
            .unwrap();
        let x = &noisy.values;
        let m0 = x.iter().sum::<f64>() / x.len() as f64;
        let c0: f64 = x.iter().map(|v| (v - m0).powi(2)).sum();
        let c1: f64 = x.windows(2).map(|w| (w[0] - m0) * (w[1] - m0)).sum();
        assert!(
            (c1 / c0 - 0.9).abs() < 0.02,
            "lag-one correlation {}",
            c1 / c0
        );
        assert!((noisy.noise_std - 0.05 / 0.19f64.sqrt()).abs() < 1e-12);
        let s = (c0 / x.len() as f64).sqrt();
        assert!((s / noisy.noise_std - 1.0).abs() < 0.1, "std {s}");
    }

    #[test]
    fn bad_settings_are_errors() {
        assert!(RealScene::new(1, 1.0).generate().is_err());
        assert!(RealScene::new(8, 0.0).generate().is_err());
        assert!(RealScene::new(8, 10.0)
            .with_cosine(6.0, 1.0, 0.0)
            .generate()
            .is_err());
        assert!(RealScene::new(8, 1.0)
            .with_red_noise(1.0, 0.1)
            .generate()
            .is_err());
        assert!(RealScene::new(8, 1.0)
            .with_missing(0.6, 2)
            .generate()
            .is_err());
        assert!(Scenario::new(0, 1).generate().is_err());
        assert!(Scenario::new(4, 5).with_separation(1.0).generate().is_err());
        assert!(Scenario::new(4, 1)
            .with_subset_fraction(0.0)
            .generate()
            .is_err());
    }
}
