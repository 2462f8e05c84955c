//! Seeded invented array scenes ([`ArrayScene`]): a uniform line array of `M` sensors, `L` snapshots,
//! sources at given spatial frequencies with uncorrelated, correlated or fully coherent complex
//! Gaussian amplitudes, complex white Gaussian noise at a given per-source SNR, and optionally missing
//! sensors. Every scene is invented.

use crate::error::{Error, Result};
use crate::model::Snapshots;
use nalgebra::DMatrix;
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// How the sources' amplitudes relate across sources.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SourceCorrelation {
    /// Independent circular Gaussian amplitudes.
    Uncorrelated,
    /// Every source after the first correlated with the first with this coefficient
    /// (`s_j = ρ s_1 + √(1 − ρ²) w_j`, `|ρ| < 1`).
    Correlated(f64),
    /// Every source a fixed-phase copy of the first (multipath): the source covariance has rank one.
    Coherent,
}

/// An invented array scene; [`ArrayScene::draw`] makes one realisation.
///
/// ```
/// use finespike::eval::array_scene::{ArrayScene, SourceCorrelation};
/// let scene = ArrayScene::new(16, 50, &[0.1, -0.2])?
///     .with_snr_db(10.0)?
///     .with_correlation(SourceCorrelation::Coherent)?
///     .with_seed(3);
/// let draw = scene.draw()?;
/// assert_eq!((draw.data.len(), draw.data.snapshot_count()), (16, 50));
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct ArrayScene {
    sensors: usize,
    snapshots: usize,
    positions: Vec<f64>,
    snr_db: Option<f64>,
    correlation: SourceCorrelation,
    missing: Vec<usize>,
    spacing: Option<f64>,
    seed: u64,
}

/// One realisation of an [`ArrayScene`].
#[derive(Debug, Clone, PartialEq)]
pub struct ArrayDraw {
    /// The snapshots (sensors `0..M` but the missing ones).
    pub data: Snapshots,
    /// The true positions (spatial frequencies wrapped to `[0, 1)`), in the scene's order.
    pub positions: Vec<f64>,
    /// The true amplitudes, `s × L`.
    pub amplitudes: DMatrix<Complex64>,
    /// The noise level `σ` (`E|n|² = σ²` per sensor and snapshot); 0 for exact data.
    pub sigma: f64,
}

impl ArrayScene {
    /// `sensors` sensors, `snapshots` snapshots, sources at the spatial frequencies `positions`
    /// (cycles per sensor, any real value: wrapped), exact data, uncorrelated sources, seed 0.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for fewer than 2 sensors, no snapshot, no source or a non-finite
    /// position.
    pub fn new(sensors: usize, snapshots: usize, positions: &[f64]) -> Result<Self> {
        let bad = |name, value: String, rule| Err(Error::InvalidSetting { name, value, rule });
        if sensors < 2 {
            return bad(
                "sensors",
                sensors.to_string(),
                "an array needs at least 2 sensors",
            );
        }
        if snapshots == 0 {
            return bad("snapshots", "0".into(), "at least one snapshot is needed");
        }
        if positions.is_empty() {
            return bad("positions", "[]".into(), "at least one source is needed");
        }
        if let Some(p) = positions.iter().find(|p| !p.is_finite()) {
            return bad("positions", p.to_string(), "positions must be finite");
        }
        Ok(ArrayScene {
            sensors,
            snapshots,
            positions: positions.iter().map(|&p| crate::model::wrap(p)).collect(),
            snr_db: None,
            correlation: SourceCorrelation::Uncorrelated,
            missing: Vec::new(),
            spacing: None,
            seed: 0,
        })
    }

    /// Per-source SNR in dB: every source has power `P = 10^{snr/10}` against noise of level `σ = 1`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for a non-finite value.
    pub fn with_snr_db(mut self, snr_db: f64) -> Result<Self> {
        crate::error::check::that("snr_db", snr_db, snr_db.is_finite(), "must be finite")?;
        self.snr_db = Some(snr_db);
        Ok(self)
    }

    /// How the sources' amplitudes relate.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for a correlation coefficient outside `(−1, 1)`.
    pub fn with_correlation(mut self, correlation: SourceCorrelation) -> Result<Self> {
        if let SourceCorrelation::Correlated(r) = correlation {
            if !(r.is_finite() && r.abs() < 1.0) {
                return Err(Error::InvalidSetting {
                    name: "correlation",
                    value: r.to_string(),
                    rule: "a correlation coefficient lies in (−1, 1); use coherent sources for 1",
                });
            }
        }
        self.correlation = correlation;
        Ok(self)
    }

    /// Leave out the sensors `missing` (numbered `0..M`), keeping at least two.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for a sensor outside `0..M` or fewer than two sensors left.
    pub fn with_missing_sensors(mut self, missing: &[usize]) -> Result<Self> {
        let mut m: Vec<usize> = missing.to_vec();
        m.sort_unstable();
        m.dedup();
        if let Some(&s) = m.iter().find(|&&s| s >= self.sensors) {
            return Err(Error::InvalidSetting {
                name: "missing sensors",
                value: s.to_string(),
                rule: "sensors are numbered 0..M",
            });
        }
        if self.sensors - m.len() < 2 {
            return Err(Error::InvalidSetting {
                name: "missing sensors",
                value: m.len().to_string(),
                rule: "at least two sensors must remain",
            });
        }
        self.missing = m;
        Ok(self)
    }

    /// The element spacing in wavelengths given to the drawn snapshots.
    ///
    /// # Errors
    /// As [`Snapshots::with_spacing`].
    pub fn with_spacing(mut self, d: f64) -> Result<Self> {
        if !(d.is_finite() && d > 0.0) {
            return Err(Error::InvalidSetting {
                name: "spacing",
                value: d.to_string(),
                rule: "the element spacing in wavelengths must be finite and positive",
            });
        }
        self.spacing = Some(d);
        Ok(self)
    }

    /// The seed of the draw.
    pub fn with_seed(mut self, seed: u64) -> Self {
        self.seed = seed;
        self
    }

    /// Draw one realisation.
    ///
    /// # Errors
    /// Only those of the [`Snapshots`] constructors (not expected for a valid scene).
    pub fn draw(&self) -> Result<ArrayDraw> {
        let mut rng = StdRng::seed_from_u64(self.seed);
        let mut unit = move || {
            let re: f64 = rng.sample(StandardNormal);
            let im: f64 = rng.sample(StandardNormal);
            Complex64::new(re, im) / 2f64.sqrt()
        };
        let s = self.positions.len();
        let l = self.snapshots;
        let (power, sigma) = match self.snr_db {
            Some(db) => (10f64.powf(db / 10.0), 1.0),
            None => (1.0, 0.0),
        };
        // Fixed phases of the coherent copies, drawn first so they do not depend on L.
        let phases: Vec<Complex64> = (0..s)
            .map(|_| {
                let z = unit();
                z / z.norm().max(f64::MIN_POSITIVE)
            })
            .collect();
        let mut amplitudes = DMatrix::zeros(s, l);
        for t in 0..l {
            let first = unit();
            for j in 0..s {
                let z = match (j, self.correlation) {
                    (0, _) => first,
                    (_, SourceCorrelation::Uncorrelated) => unit(),
                    (_, SourceCorrelation::Correlated(r)) => {
                        first * r + unit() * (1.0 - r * r).sqrt()
                    }
                    (_, SourceCorrelation::Coherent) => first * phases[j],
                };
                amplitudes[(j, t)] = z * power.sqrt();
            }
        }
        let sensors: Vec<i64> = (0..self.sensors)
            .filter(|m| self.missing.binary_search(m).is_err())
            .map(|m| m as i64)
            .collect();
        let x = DMatrix::from_fn(sensors.len(), l, |i, t| {
            let m = sensors[i] as f64;
            let signal: Complex64 = (0..s)
                .map(|j| {
                    amplitudes[(j, t)]
                        * Complex64::from_polar(1.0, 2.0 * PI * self.positions[j] * m)
                })
                .sum();
            signal
        });
        let mut x = x;
        if sigma > 0.0 {
            for v in x.iter_mut() {
                *v += unit() * sigma;
            }
        }
        let mut data = Snapshots::from_sensor_subset(&sensors, &x)?;
        if let Some(d) = self.spacing {
            data = data.with_spacing(d)?;
        }
        Ok(ArrayDraw {
            data,
            positions: self.positions.clone(),
            amplitudes,
            sigma,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn draws_are_seeded_and_have_the_asked_power() {
        let scene = ArrayScene::new(8, 4000, &[0.1, 0.3])
            .unwrap()
            .with_snr_db(10.0)
            .unwrap()
            .with_seed(5);
        let a = scene.draw().unwrap();
        assert_eq!(a, scene.draw().unwrap());
        // Mean power over 4000 snapshots: relative standard deviation 1/√4000 ≈ 1.6 %.
        for j in 0..2 {
            let p = a
                .amplitudes
                .row(j)
                .iter()
                .map(|v| v.norm_sqr())
                .sum::<f64>()
                / 4000.0;
            assert!((p / 10.0 - 1.0).abs() < 0.08, "{p}");
        }
    }

    #[test]
    fn coherent_sources_have_a_rank_one_covariance() {
        let draw = ArrayScene::new(6, 30, &[0.1, 0.25, 0.4])
            .unwrap()
            .with_correlation(SourceCorrelation::Coherent)
            .unwrap()
            .draw()
            .unwrap();
        let sv = draw.amplitudes.singular_values();
        assert!(sv[1] < 1e-12 * sv[0], "{sv:?}");
    }

    #[test]
    fn true_positions_give_back_the_amplitudes() {
        // The model's sign convention end to end: sensor data exp(+i2πfm) against the steering
        // matrix of the internal indices k = −m.
        let draw = ArrayScene::new(12, 5, &[0.1, -0.3])
            .unwrap()
            .with_missing_sensors(&[4])
            .unwrap()
            .with_spacing(0.5)
            .unwrap()
            .draw()
            .unwrap();
        let est = crate::ArrayEstimate::assemble(
            "test",
            &draw.data,
            &draw.positions,
            crate::Status::Solved,
        )
        .unwrap()
        .noise(None, false, None);
        assert!(est.diagnostics.residual_norm < 1e-12 * est.diagnostics.data_norm);
        // Sorted by position: −0.3 wraps to 0.7, after 0.1.
        for (src, j) in est.sources.iter().zip([0, 1]) {
            for (a, b) in src.amplitudes.iter().zip(draw.amplitudes.row(j).iter()) {
                assert!((a - b).norm() < 1e-12 * b.norm().max(1.0));
            }
        }
        assert!((est.sources[1].frequency + 0.3).abs() < 1e-15);
        let theta = est.sources[1].angle_deg.unwrap();
        assert!((theta - (-0.6f64).asin().to_degrees()).abs() < 1e-12);
    }

    #[test]
    fn missing_sensors_are_left_out() {
        let draw = ArrayScene::new(10, 3, &[0.2])
            .unwrap()
            .with_missing_sensors(&[3, 7])
            .unwrap()
            .draw()
            .unwrap();
        assert_eq!(draw.data.len(), 8);
        assert_eq!(draw.data.band_len(), 10);
        assert!(ArrayScene::new(3, 1, &[0.2])
            .unwrap()
            .with_missing_sensors(&[0, 1])
            .is_err());
    }
}
