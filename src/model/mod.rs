//! The measurement model: spikes on the torus, validated Fourier measurements, the forward operator.
//!
//! Conventions (used throughout the crate):
//! - a spike train `μ = Σ_j a_j δ(t − τ_j)` with positions `τ_j ∈ [0, 1)` and complex amplitudes `a_j`;
//! - Fourier data `y_k = Σ_j a_j exp(−i2πkτ_j) + n_k` for `k` in a measured set `K` inside a contiguous
//!   band `kmin..=kmax` (the symmetric band `−fc..=fc` when built with [`Measurements::fourier`]);
//! - time samples `x_n = Σ_j a_j exp(i2πf_j n)`, `n = 0..N−1`, are the same model with `k = −n` and
//!   `τ_j = f_j` ([`Measurements::from_time_samples`]).
//!
//! The Rayleigh length of a band of `N = kmax − kmin + 1` coefficients is `1/fc` with
//! `fc = (N − 1)/2`; separations are reported in these units ("Rayleigh units").

use crate::error::{Error, Result};
use num_complex::Complex64;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

mod record;
mod snapshots;
pub use record::{Scale, Trend, TrendBasis, TrendFit, MAX_TREND_DEGREE};
pub use snapshots::{Snapshots, SENSOR_WORDS};

/// Proven separation threshold for exact recovery by TV minimisation, in Rayleigh units:
/// `Δ ≥ 1.26/fc` (Fernandez-Granda 2016, Information and Inference 5(3), Thm. 2.2).
pub const PROVEN_SEPARATION_FC: f64 = 1.26;

/// The original exact-recovery threshold `Δ ≥ 2/fc` (Candès & Fernandez-Granda 2014, CPAM 67(6), Thm. 1.2).
pub const CLASSICAL_SEPARATION_FC: f64 = 2.0;

/// Wrap a real number onto the torus `[0, 1)`.
pub fn wrap(t: f64) -> f64 {
    let w = t - t.floor();
    // `t - floor(t)` can round up to exactly 1.0 for tiny negative t.
    if w >= 1.0 {
        0.0
    } else {
        w
    }
}

/// Wrap-around distance on the torus: `d(t, s) = min(|t − s|, 1 − |t − s|)` for wrapped arguments.
pub fn wrap_distance(t: f64, s: f64) -> f64 {
    let d = wrap(t - s);
    d.min(1.0 - d)
}

/// Signed wrap-around difference `t − s`, in `[−1/2, 1/2)`.
pub fn wrap_difference(t: f64, s: f64) -> f64 {
    wrap(t - s + 0.5) - 0.5
}

/// Minimum wrap-around distance between any two of `positions` (`+∞` for fewer than two).
pub fn min_separation(positions: &[f64]) -> f64 {
    let mut sorted: Vec<f64> = positions.iter().map(|&t| wrap(t)).collect();
    sorted.sort_by(f64::total_cmp);
    if sorted.len() < 2 {
        return f64::INFINITY;
    }
    let mut best = 1.0 - sorted[sorted.len() - 1] + sorted[0];
    for w in sorted.windows(2) {
        best = best.min(w[1] - w[0]);
    }
    best
}

/// One point source or spectral line: a position on the torus and a complex amplitude.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Spike {
    /// Position `τ ∈ [0, 1)` (for time-domain data: frequency in cycles per sample).
    pub position: f64,
    /// Complex amplitude `a`.
    #[serde(with = "complex_pair")]
    pub amplitude: Complex64,
}

impl Spike {
    /// A spike at `position` (wrapped onto `[0, 1)`) with amplitude `amplitude`.
    pub fn new(position: f64, amplitude: Complex64) -> Self {
        Spike {
            position: wrap(position),
            amplitude,
        }
    }
}

/// A validated, position-sorted set of spikes. Serialised as a plain list of spikes.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(into = "Vec<Spike>", try_from = "Vec<Spike>")]
pub struct Spikes {
    spikes: Vec<Spike>,
}

impl Spikes {
    /// Build from a list of spikes: positions are wrapped onto `[0, 1)` and sorted.
    ///
    /// # Errors
    /// [`Error::NonFinite`] if a position or amplitude is NaN or infinite.
    pub fn new(spikes: Vec<Spike>) -> Result<Self> {
        for (i, s) in spikes.iter().enumerate() {
            if !s.position.is_finite() {
                return Err(Error::NonFinite {
                    what: "spike position",
                    index: i,
                    value: s.position.to_string(),
                });
            }
            if !(s.amplitude.re.is_finite() && s.amplitude.im.is_finite()) {
                return Err(Error::NonFinite {
                    what: "spike amplitude",
                    index: i,
                    value: s.amplitude.to_string(),
                });
            }
        }
        let mut spikes: Vec<Spike> = spikes
            .into_iter()
            .map(|s| Spike::new(s.position, s.amplitude))
            .collect();
        spikes.sort_by(|a, b| a.position.total_cmp(&b.position));
        Ok(Spikes { spikes })
    }

    /// Build from parallel slices of positions and amplitudes.
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] for slices of different lengths, [`Error::NonFinite`] as in [`Spikes::new`].
    pub fn from_parts(positions: &[f64], amplitudes: &[Complex64]) -> Result<Self> {
        if positions.len() != amplitudes.len() {
            return Err(Error::LengthMismatch {
                what: "positions against amplitudes",
                left: positions.len(),
                right: amplitudes.len(),
            });
        }
        Spikes::new(
            positions
                .iter()
                .zip(amplitudes)
                .map(|(&p, &a)| Spike {
                    position: p,
                    amplitude: a,
                })
                .collect(),
        )
    }

    /// No spikes.
    pub fn empty() -> Self {
        Spikes::default()
    }

    /// Number of spikes.
    pub fn len(&self) -> usize {
        self.spikes.len()
    }

    /// True when there are no spikes.
    pub fn is_empty(&self) -> bool {
        self.spikes.is_empty()
    }

    /// The spikes, sorted by position.
    pub fn as_slice(&self) -> &[Spike] {
        &self.spikes
    }

    /// Iterate over the spikes.
    pub fn iter(&self) -> std::slice::Iter<'_, Spike> {
        self.spikes.iter()
    }

    /// Positions, sorted.
    pub fn positions(&self) -> Vec<f64> {
        self.spikes.iter().map(|s| s.position).collect()
    }

    /// Amplitudes, in position order.
    pub fn amplitudes(&self) -> Vec<Complex64> {
        self.spikes.iter().map(|s| s.amplitude).collect()
    }

    /// Total-variation norm `‖μ‖_TV = Σ_j |a_j|`.
    pub fn tv_norm(&self) -> f64 {
        self.spikes.iter().map(|s| s.amplitude.norm()).sum()
    }

    /// Minimum wrap-around separation (`+∞` for fewer than two spikes).
    pub fn min_separation(&self) -> f64 {
        min_separation(&self.positions())
    }
}

impl From<Spikes> for Vec<Spike> {
    fn from(s: Spikes) -> Self {
        s.spikes
    }
}

impl TryFrom<Vec<Spike>> for Spikes {
    type Error = Error;
    fn try_from(v: Vec<Spike>) -> Result<Self> {
        Spikes::new(v)
    }
}

impl<'a> IntoIterator for &'a Spikes {
    type Item = &'a Spike;
    type IntoIter = std::slice::Iter<'a, Spike>;
    fn into_iter(self) -> Self::IntoIter {
        self.spikes.iter()
    }
}

/// Which physical view the data came from; the mathematics is the same (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Domain {
    /// Fourier coefficients `y_k` of a spike train on the torus.
    Fourier,
    /// Uniform time samples `x_n` of a sum of complex exponentials (spectral lines).
    Time,
}

impl Domain {
    /// What an index counts, in the user's terms, ready to be followed by its value:
    /// `"frequency index k ="` or `"sample index n ="`.
    pub fn index_words(self) -> &'static str {
        match self {
            Domain::Fourier => "frequency index k =",
            Domain::Time => "sample index n =",
        }
    }

    /// An internal index `k` as the user numbered it: `k` itself for Fourier data, the sample index
    /// `n = −k` for time samples (stored with `k = −n`).
    pub fn user_index(self, k: i64) -> i64 {
        match self {
            Domain::Fourier => k,
            // Saturating: `i64::MIN` has no negation (only reachable through `in_band` with an
            // absurd index, for an error message).
            Domain::Time => k.saturating_neg(),
        }
    }
}

/// Validated band-limited measurements: values `y_k` at distinct indices `k` inside a contiguous band.
///
/// Validation happens once, here; every estimator may rely on it.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurements {
    indices: Vec<i64>,
    /// The values the estimators fit: the data as given, or with a trend their projection `P⊥x`.
    values: Vec<Complex64>,
    kmin: i64,
    kmax: i64,
    domain: Domain,
    /// A real-valued time record (conjugate-symmetric model).
    real: bool,
    scale: Option<Scale>,
    trend: Trend,
    /// The polynomial basis of the trend (`None` without one).
    basis: Option<TrendBasis>,
    /// The values as given, kept only with a trend (then `values` holds their projection).
    raw: Vec<Complex64>,
}

impl Measurements {
    /// Fourier coefficients `y_k` measured at `indices ⊆ {−fc, …, fc}` (any order; stored sorted).
    ///
    /// # Errors
    /// [`Error::ZeroCutoff`] for `fc = 0`; [`Error::Empty`] for no samples; [`Error::LengthMismatch`];
    /// [`Error::NonFinite`] for NaN or infinite values; [`Error::DuplicateIndex`];
    /// [`Error::IndexOutOfBand`] for `|k| > fc`.
    pub fn fourier(fc: usize, indices: &[i64], values: &[Complex64]) -> Result<Self> {
        if fc == 0 {
            return Err(Error::ZeroCutoff);
        }
        let fc = i64::try_from(fc).map_err(|_| Error::InvalidSetting {
            name: "fc",
            value: fc.to_string(),
            rule: "the cutoff must fit in a 64-bit signed integer",
        })?;
        Self::in_band(-fc, fc, indices, values, Domain::Fourier)
    }

    /// All `2fc + 1` Fourier coefficients `y_{−fc}, …, y_{fc}`, in that order.
    ///
    /// # Errors
    /// As [`Measurements::fourier`]; [`Error::LengthMismatch`] if `values.len() != 2fc + 1`.
    pub fn full_band(fc: usize, values: &[Complex64]) -> Result<Self> {
        if fc == 0 {
            return Err(Error::ZeroCutoff);
        }
        let Some(n) = fc.checked_mul(2).and_then(|n| n.checked_add(1)) else {
            return Err(Error::InvalidSetting {
                name: "fc",
                value: fc.to_string(),
                rule: "the band −fc..=fc must fit in 64-bit signed indices",
            });
        };
        if values.len() != n {
            return Err(Error::LengthMismatch {
                what: "values against the band −fc..=fc",
                left: values.len(),
                right: n,
            });
        }
        let f = fc as i64;
        let idx: Vec<i64> = (-f..=f).collect();
        Self::fourier(fc, &idx, values)
    }

    /// `N` uniform time samples `x_0, …, x_{N−1}` of a sum of complex exponentials.
    ///
    /// Stored as Fourier data with `k = −n` (band `−(N−1)..=0`); positions are frequencies in cycles per
    /// sample.
    ///
    /// # Errors
    /// [`Error::Empty`] for no samples, [`Error::SingleSample`] for a single sample,
    /// [`Error::NonFinite`] for NaN or infinite values.
    pub fn from_time_samples(samples: &[Complex64]) -> Result<Self> {
        let n = samples.len();
        if n == 0 {
            return Err(Error::Empty {
                what: "time samples",
            });
        }
        if n == 1 {
            return Err(Error::SingleSample { index: 0 });
        }
        let idx: Vec<i64> = (0..n as i64).map(|i| -i).collect();
        Self::in_band(-(n as i64 - 1), 0, &idx, samples, Domain::Time)
    }

    /// Time samples at integer sample indices `times` (any origin, any order, gaps allowed).
    ///
    /// The record spans `first..=last` (`N = last − first + 1` samples, the resolution `1/N`); it is
    /// stored as Fourier data with `k = −n` in the band `−last..=−first`, so that amplitudes keep the
    /// phase they have at the index origin `n = 0` as numbered by the user.
    ///
    /// # Errors
    /// As [`Measurements::from_time_samples`], plus [`Error::DuplicateIndex`],
    /// [`Error::LengthMismatch`], [`Error::SingleSample`] when all samples share one index, and
    /// [`Error::IndexOutOfBand`] for indices beyond `±2^62`.
    pub fn from_time_subset(times: &[i64], samples: &[Complex64]) -> Result<Self> {
        if times.is_empty() {
            return Err(Error::Empty {
                what: "time samples",
            });
        }
        // Refused here, before the sign change `k = −n` (which overflows for `i64::MIN`).
        const LIMIT: i64 = 1 << 62;
        if let Some(&t) = times.iter().find(|&&t| !(-LIMIT..=LIMIT).contains(&t)) {
            return Err(Error::IndexOutOfBand {
                what: Domain::Time.index_words(),
                index: t,
                range: "±2^62".into(),
                advice: "renumber the samples from a nearer origin",
            });
        }
        let tmin = times.iter().copied().min().unwrap_or(0);
        let tmax = times.iter().copied().max().unwrap_or(0);
        if tmax <= tmin {
            return Err(Error::SingleSample { index: tmin });
        }
        let idx: Vec<i64> = times.iter().map(|&t| -t).collect();
        Self::in_band(-tmax, -tmin, &idx, samples, Domain::Time)
    }

    /// General constructor: values at distinct `indices` inside the contiguous band `kmin..=kmax`.
    ///
    /// # Errors
    /// As [`Measurements::fourier`]; [`Error::ZeroCutoff`] if `kmax <= kmin`; [`Error::InvalidSetting`]
    /// for a band of `2^63` or more indices.
    pub fn in_band(
        kmin: i64,
        kmax: i64,
        indices: &[i64],
        values: &[Complex64],
        domain: Domain,
    ) -> Result<Self> {
        if kmax <= kmin {
            return Err(Error::ZeroCutoff);
        }
        // N = kmax − kmin + 1 must be representable: `band_len`, `fc` and every estimator rely on it.
        if kmax
            .checked_sub(kmin)
            .and_then(|d| d.checked_add(1))
            .is_none()
        {
            return Err(Error::InvalidSetting {
                name: "band",
                value: format!("{kmin}..={kmax}"),
                rule: "the band must hold fewer than 2^63 indices",
            });
        }
        if indices.is_empty() {
            return Err(Error::Empty {
                what: "measurement indices",
            });
        }
        if indices.len() != values.len() {
            return Err(Error::LengthMismatch {
                what: "indices against values",
                left: indices.len(),
                right: values.len(),
            });
        }
        for (i, v) in values.iter().enumerate() {
            if !(v.re.is_finite() && v.im.is_finite()) {
                return Err(Error::NonFinite {
                    what: "sample",
                    index: i,
                    value: v.to_string(),
                });
            }
        }
        let mut pairs: Vec<(i64, Complex64)> = indices
            .iter()
            .copied()
            .zip(values.iter().copied())
            .collect();
        pairs.sort_by_key(|p| p.0);
        for w in pairs.windows(2) {
            if w[0].0 == w[1].0 {
                return Err(Error::DuplicateIndex {
                    what: domain.index_words(),
                    index: domain.user_index(w[0].0),
                });
            }
        }
        for &(k, _) in &pairs {
            if k < kmin || k > kmax {
                let (range, advice) = match domain {
                    Domain::Fourier => (
                        format!("the band {kmin}..={kmax}"),
                        "raise the cutoff or drop the sample",
                    ),
                    Domain::Time => (
                        format!("the record 0..={}", kmin.unsigned_abs()),
                        "sample indices must be non-negative",
                    ),
                };
                return Err(Error::IndexOutOfBand {
                    what: domain.index_words(),
                    index: domain.user_index(k),
                    range,
                    advice,
                });
            }
        }
        Ok(Measurements {
            indices: pairs.iter().map(|p| p.0).collect(),
            values: pairs.iter().map(|p| p.1).collect(),
            kmin,
            kmax,
            domain,
            real: false,
            scale: None,
            trend: Trend::None,
            basis: None,
            raw: Vec::new(),
        })
    }

    /// Noiseless measurements of `spikes` at `indices` in the band `kmin..=kmax` (exact forward model).
    ///
    /// # Errors
    /// As [`Measurements::in_band`].
    pub fn synthesize(
        spikes: &Spikes,
        kmin: i64,
        kmax: i64,
        indices: &[i64],
        domain: Domain,
    ) -> Result<Self> {
        let values = forward(spikes, indices);
        Self::in_band(kmin, kmax, indices, &values, domain)
    }

    /// The measured indices `K`, sorted ascending.
    pub fn indices(&self) -> &[i64] {
        &self.indices
    }

    /// The measured values, in index order.
    pub fn values(&self) -> &[Complex64] {
        &self.values
    }

    /// Lowest index of the band.
    pub fn kmin(&self) -> i64 {
        self.kmin
    }

    /// Highest index of the band.
    pub fn kmax(&self) -> i64 {
        self.kmax
    }

    /// Number of coefficients in the full band, `N = kmax − kmin + 1`.
    pub fn band_len(&self) -> usize {
        (self.kmax - self.kmin + 1) as usize
    }

    /// Number of measured coefficients `|K|`.
    pub fn len(&self) -> usize {
        self.indices.len()
    }

    /// Always false: validated measurements hold at least one value.
    pub fn is_empty(&self) -> bool {
        self.indices.is_empty()
    }

    /// The cutoff `fc = (N − 1)/2` that sets the Rayleigh length `1/fc` of the band.
    pub fn fc(&self) -> f64 {
        (self.kmax - self.kmin) as f64 / 2.0
    }

    /// The physical view the data came from.
    pub fn domain(&self) -> Domain {
        self.domain
    }

    /// True when every index of the band is measured.
    pub fn is_full_band(&self) -> bool {
        self.indices.len() == self.band_len()
    }

    /// True when the measured indices are contiguous (no gaps, possibly a sub-band).
    pub fn is_contiguous(&self) -> bool {
        let n = self.indices.len();
        self.indices[n - 1] - self.indices[0] + 1 == n as i64
    }

    /// [`Error::NeedsContiguous`] for `method` on these data, with the measured span in the user's
    /// numbering (sample indices for time records) and `advice` naming what to use instead.
    pub fn gaps_error(&self, method: &'static str, advice: &'static str) -> Error {
        let n = self.indices.len();
        let (a, b) = (
            self.domain.user_index(self.indices[0]),
            self.domain.user_index(self.indices[n - 1]),
        );
        Error::NeedsContiguous {
            method,
            measured: n,
            span: (self.indices[n - 1] - self.indices[0] + 1) as usize,
            first: a.min(b),
            last: a.max(b),
            advice,
        }
    }

    /// Euclidean norm of the data, `‖y‖₂`.
    pub fn norm(&self) -> f64 {
        self.values.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt()
    }

    /// Residual `y − Fμ` of a spike train against these measurements.
    ///
    /// With a trend, the residual after refitting it: `P⊥(x − Fμ)` (module docs of [`Trend`]).
    pub fn residual(&self, spikes: &Spikes) -> Vec<Complex64> {
        let model = forward(spikes, &self.indices);
        let mut r: Vec<Complex64> = self.values.iter().zip(model).map(|(y, m)| y - m).collect();
        if let Some(b) = &self.basis {
            b.project(&mut r);
        }
        r
    }

    /// Residual norm `‖y − Fμ‖₂`.
    pub fn residual_norm(&self, spikes: &Spikes) -> f64 {
        self.residual(spikes)
            .iter()
            .map(|r| r.norm_sqr())
            .sum::<f64>()
            .sqrt()
    }

    /// Replace the values (same indices), validating them.
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] or [`Error::NonFinite`].
    ///
    /// The record's kind (real-valued, scale) is kept, and a trend is projected out of the new values.
    pub fn with_values(&self, values: &[Complex64]) -> Result<Self> {
        let mut m = Self::in_band(self.kmin, self.kmax, &self.indices, values, self.domain)?;
        m.real = self.real && values.iter().all(|v| v.im == 0.0);
        m.scale = self.scale;
        m.with_trend(self.trend)
    }
}

/// The forward operator `F: μ ↦ (Σ_j a_j exp(−i2πkτ_j))_{k ∈ indices}`, by direct sums (each phase
/// reduced modulo 1 first, see [`atom`]).
pub fn forward(spikes: &Spikes, indices: &[i64]) -> Vec<Complex64> {
    let mut out = vec![Complex64::new(0.0, 0.0); indices.len()];
    for s in spikes {
        for (o, &k) in out.iter_mut().zip(indices) {
            *o += s.amplitude * atom(k, s.position);
        }
    }
    out
}

/// One entry of the forward operator: `exp(−i2πkτ)`.
///
/// The product `kτ` is reduced modulo 1 before the exponential to keep full accuracy for large `k`.
#[inline]
pub fn atom(k: i64, tau: f64) -> Complex64 {
    let phase = wrap(k as f64 * tau);
    Complex64::from_polar(1.0, -2.0 * PI * phase)
}

/// Dense forward matrix `Φ_{kj} = exp(−i2πkτ_j)` (rows: `indices`, columns: `positions`), row-major.
///
/// The brute-force oracle for every fast operator in the crate, and the design matrix for least squares.
pub fn forward_matrix(indices: &[i64], positions: &[f64]) -> Vec<Vec<Complex64>> {
    indices
        .iter()
        .map(|&k| positions.iter().map(|&t| atom(k, t)).collect())
        .collect()
}

/// Serialise a list of complex numbers as `[[re, im], …]`.
pub(crate) mod complex_vec {
    use num_complex::Complex64;
    use serde::{Serialize, Serializer};

    pub fn serialize<S: Serializer>(z: &[Complex64], s: S) -> Result<S::Ok, S::Error> {
        z.iter()
            .map(|z| [z.re, z.im])
            .collect::<Vec<_>>()
            .serialize(s)
    }
}

/// Serialise a complex number as `[re, im]`.
pub(crate) mod complex_pair {
    use num_complex::Complex64;
    use serde::{Deserialize, Deserializer, Serialize, Serializer};

    pub fn serialize<S: Serializer>(z: &Complex64, s: S) -> Result<S::Ok, S::Error> {
        [z.re, z.im].serialize(s)
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Complex64, D::Error> {
        let [re, im] = <[f64; 2]>::deserialize(d)?;
        Ok(Complex64::new(re, im))
    }
}

#[cfg(test)]
mod tests;
