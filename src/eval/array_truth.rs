//! Array truths: the JSON that the command line's `simulate` writes for an invented array scene
//! ([`ArrayTruth`]), read back by `bound` and `compare`. Re-exported by
//! [`crate::eval::io_snapshots`].

use crate::error::{Error, Result};
use crate::eval::array_scene::{ArrayDraw, SourceCorrelation};
use crate::model::Snapshots;
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde::{Deserialize, Serialize};
use serde_json::Value;

/// One source of an invented array scene.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TruthSource {
    /// Position on `[0, 1)` (spatial frequency wrapped).
    pub position: f64,
    /// Signed spatial frequency in `(−1/2, 1/2]` cycles per sensor.
    pub frequency: f64,
    /// Direction of arrival in degrees from broadside (`asin(f/d)`), when the spacing is known and
    /// `|f| ≤ d`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub angle_deg: Option<f64>,
    /// The scene's power `P` of the source (`E|s(t)|²`; `σ = 1` for a noisy scene).
    pub power: f64,
    /// The power of the drawn amplitudes, `Σ_t |s(t)|² / L`.
    pub sample_power: f64,
    /// The drawn amplitude in each snapshot, `[re, im]`.
    pub amplitudes: Vec<[f64; 2]>,
}

/// The truth of an invented array scene: the array, the noise, how the sources relate and each
/// source with its drawn amplitudes. Written as JSON with `"kind": "array"`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ArrayTruth {
    /// Always `"array"`: tells an array truth from a spike file.
    pub kind: String,
    /// Number `M` of sensor positions `0..M−1` of the array (missing ones included).
    pub sensors: usize,
    /// The sensors left out (a thinned array).
    #[serde(default)]
    pub missing_sensors: Vec<usize>,
    /// Number `L` of snapshots.
    pub snapshots: usize,
    /// Element spacing in wavelengths, when the scene has one.
    #[serde(default)]
    pub spacing: Option<f64>,
    /// Noise level, `E|n|² = σ²` per sensor and snapshot (0: exact data).
    pub sigma: f64,
    /// Per-source SNR in dB, `10 log10(P/σ²)`, when the scene is noisy.
    #[serde(default)]
    pub snr_db: Option<f64>,
    /// How the sources' amplitudes relate.
    pub correlation: SourceCorrelation,
    /// The seed of the draw.
    #[serde(default)]
    pub seed: Option<u64>,
    /// The sources, in the scene's order: the first is the one the others are correlated with, or
    /// copies of, for correlated and coherent scenes.
    pub sources: Vec<TruthSource>,
}

/// The marker of an array truth file.
pub const ARRAY_TRUTH_KIND: &str = "array";

impl ArrayTruth {
    /// The truth of `draw`, a realisation of a scene of `sensors` sensor positions with per-source
    /// SNR `snr_db`, source relation `correlation` and seed `seed`.
    pub fn from_draw(
        draw: &ArrayDraw,
        sensors: usize,
        snr_db: Option<f64>,
        correlation: SourceCorrelation,
        seed: u64,
    ) -> Self {
        let data = &draw.data;
        let spacing = data.spacing();
        let present: Vec<i64> = data.indices().iter().map(|&k| -k).collect();
        let missing_sensors = (0..sensors)
            .filter(|m| !present.contains(&(*m as i64)))
            .collect();
        let l = data.snapshot_count();
        let power = snr_db.map_or(1.0, |db| 10f64.powf(db / 10.0));
        let sources: Vec<TruthSource> = draw
            .positions
            .iter()
            .enumerate()
            .map(|(j, &p)| {
                let frequency = if p > 0.5 { p - 1.0 } else { p };
                let row: Vec<Complex64> = draw.amplitudes.row(j).iter().copied().collect();
                TruthSource {
                    position: p,
                    frequency,
                    angle_deg: spacing
                        .filter(|&d| frequency.abs() <= d)
                        .map(|d| (frequency / d).asin().to_degrees()),
                    power,
                    sample_power: row.iter().map(|v| v.norm_sqr()).sum::<f64>() / l as f64,
                    amplitudes: row.iter().map(|v| [v.re, v.im]).collect(),
                }
            })
            .collect();
        ArrayTruth {
            kind: ARRAY_TRUTH_KIND.to_string(),
            sensors,
            missing_sensors,
            snapshots: l,
            spacing,
            sigma: draw.sigma,
            snr_db,
            correlation,
            seed: Some(seed),
            sources,
        }
    }

    /// The true positions, in the order of [`ArrayTruth::sources`] (the scene's).
    pub fn positions(&self) -> Vec<f64> {
        self.sources.iter().map(|s| s.position).collect()
    }

    /// The true amplitudes, `s × L`.
    pub fn amplitude_matrix(&self) -> DMatrix<Complex64> {
        DMatrix::from_fn(self.sources.len(), self.snapshots, |j, t| {
            let [re, im] = self.sources[j].amplitudes[t];
            Complex64::new(re, im)
        })
    }

    /// The noiseless record of the scene, `A·S` on the measured sensors (with the spacing): the
    /// array on which its bounds are computed.
    ///
    /// # Errors
    /// Those of [`Snapshots::from_sensor_subset`] (not expected for a checked truth).
    pub fn noiseless(&self) -> Result<Snapshots> {
        let sensors: Vec<i64> = (0..self.sensors)
            .filter(|m| !self.missing_sensors.contains(m))
            .map(|m| m as i64)
            .collect();
        let s = self.amplitude_matrix();
        let positions = self.positions();
        let x = DMatrix::from_fn(sensors.len(), self.snapshots, |i, t| {
            (0..positions.len())
                .map(|j| s[(j, t)] * crate::model::atom(-sensors[i], positions[j]))
                .sum()
        });
        let data = Snapshots::from_sensor_subset(&sensors, &x)?;
        match self.spacing {
            Some(d) => data.with_spacing(d),
            None => Ok(data),
        }
    }

    /// The deterministic (conditional) Cramér–Rao variances of the true positions at noise level
    /// `sigma`, for the drawn amplitudes on the scene's array ([`crate::conditional_crb`]).
    ///
    /// # Errors
    /// Those of [`ArrayTruth::noiseless`] and [`crate::conditional_crb`].
    pub fn conditional_crb(&self, sigma: f64) -> Result<Vec<f64>> {
        let data = self.noiseless()?;
        crate::bounds::conditional_crb(&data, &self.positions(), &self.amplitude_matrix(), sigma)
    }

    /// The scene's source covariance `P = E[s(t) s(t)ᴴ]` (`s × s`), from the sources' powers `P_j`
    /// and their relation: diagonal for uncorrelated sources; for sources correlated with the first
    /// (`s_j = ρ s_1 + √(1 − ρ²) w_j`) `P_1j = ρ√(P_1 P_j)` and `P_ij = ρ²√(P_i P_j)` between two
    /// others; for coherent sources (`s_j = u_j s_1`, `|u_j| = 1`) the rank-one `√(P_i P_j) u_i ū_j`,
    /// the phases `u_j` read off the drawn amplitudes.
    pub fn source_covariance(&self) -> DMatrix<Complex64> {
        let s = self.sources.len();
        let p: Vec<f64> = self.sources.iter().map(|x| x.power).collect();
        let z = |j: usize, t: usize| {
            let [re, im] = self.sources[j].amplitudes[t];
            Complex64::new(re, im)
        };
        // Phases of the coherent copies relative to the first source, from a snapshot where the
        // first source is not zero.
        let t0 = (0..self.snapshots)
            .max_by(|&a, &b| z(0, a).norm().total_cmp(&z(0, b).norm()))
            .unwrap_or(0);
        let u: Vec<Complex64> = (0..s)
            .map(|j| {
                let r = z(j, t0) / z(0, t0);
                if r.norm() > 0.0 && r.is_finite() {
                    r / r.norm()
                } else {
                    Complex64::new(1.0, 0.0)
                }
            })
            .collect();
        DMatrix::from_fn(s, s, |i, j| {
            let scale = (p[i] * p[j]).sqrt();
            match self.correlation {
                _ if i == j => Complex64::new(p[i], 0.0),
                SourceCorrelation::Uncorrelated => Complex64::new(0.0, 0.0),
                SourceCorrelation::Correlated(r) if i == 0 || j == 0 => {
                    Complex64::new(r * scale, 0.0)
                }
                SourceCorrelation::Correlated(r) => Complex64::new(r * r * scale, 0.0),
                SourceCorrelation::Coherent => u[i] * u[j].conj() * scale,
            }
        })
    }

    /// The stochastic Cramér–Rao variances of the true positions at noise level `sigma`, for the
    /// scene's source covariance ([`ArrayTruth::source_covariance`], [`crate::stochastic_crb`]).
    ///
    /// # Errors
    /// Those of [`ArrayTruth::noiseless`] and [`crate::stochastic_crb`].
    pub fn stochastic_crb(&self, sigma: f64) -> Result<Vec<f64>> {
        let data = self.noiseless()?;
        crate::bounds::stochastic_crb(&data, &self.positions(), &self.source_covariance(), sigma)
    }

    /// Check the fields for consistency (sensors, snapshots, amplitudes per snapshot, σ).
    fn check(&self, source_name: &str) -> Result<()> {
        let fail = |message: String| {
            Err(Error::Parse {
                source_name: source_name.to_string(),
                line: 0,
                message,
            })
        };
        if self.kind != ARRAY_TRUTH_KIND {
            return fail(format!(
                "found \"kind\": \"{}\", expected \"{ARRAY_TRUTH_KIND}\"",
                self.kind
            ));
        }
        if self.sensors < 2 {
            return fail(format!(
                "found sensors = {}, expected at least 2",
                self.sensors
            ));
        }
        if let Some(&m) = self.missing_sensors.iter().find(|&&m| m >= self.sensors) {
            return fail(format!(
                "found missing sensor {m}, expected sensors numbered 0..{}",
                self.sensors - 1
            ));
        }
        if self.snapshots == 0 || self.sources.is_empty() {
            return fail("found no snapshot or no source, expected at least one of each".into());
        }
        if !(self.sigma.is_finite() && self.sigma >= 0.0) {
            return fail(format!(
                "found sigma = {}, expected a finite level >= 0",
                self.sigma
            ));
        }
        for (j, s) in self.sources.iter().enumerate() {
            if s.amplitudes.len() != self.snapshots {
                return fail(format!(
                    "source {j} has {} amplitudes, expected one per snapshot ({})",
                    s.amplitudes.len(),
                    self.snapshots
                ));
            }
            if !s.position.is_finite() || s.amplitudes.iter().flatten().any(|v| !v.is_finite()) {
                return fail(format!(
                    "source {j} holds a value that is not finite, expected finite numbers"
                ));
            }
        }
        Ok(())
    }
}

/// True when `text` is a JSON object with `"kind": "array"` (an array truth, not a spike file).
pub fn is_array_truth_text(text: &str) -> bool {
    serde_json::from_str::<Value>(text)
        .ok()
        .and_then(|v| v.get("kind").and_then(Value::as_str).map(str::to_string))
        .is_some_and(|k| k == ARRAY_TRUTH_KIND)
}

/// Parse an array truth.
///
/// # Errors
/// [`Error::Parse`] with the line of a JSON error, or (line 0) a truth whose fields disagree
/// (amplitudes not one per snapshot, a missing sensor outside the array, no source, a negative σ).
pub fn parse_array_truth(text: &str, source_name: &str) -> Result<ArrayTruth> {
    let truth: ArrayTruth = serde_json::from_str(text).map_err(|e| Error::Parse {
        source_name: source_name.to_string(),
        line: e.line(),
        message: format!(
            "not an array truth ({e}); expected {{\"kind\": \"array\", \"sensors\": M, \
             \"snapshots\": L, \"sigma\": s, \"correlation\": ..., \"sources\": [...]}}"
        ),
    })?;
    truth.check(source_name)?;
    Ok(truth)
}

/// An array truth as pretty JSON.
pub fn array_truth_json(truth: &ArrayTruth) -> String {
    // Plain data with string keys: serialising cannot fail.
    serde_json::to_string_pretty(truth).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}
