//! What a measured record carries beside its samples: a polynomial nuisance (offset, trend) fitted
//! jointly with the lines, and the physical scale (sample rate or domain length) of its positions.
//!
//! # Polynomial nuisance
//!
//! With a trend of degree `D` the model is `x_n = p(n) + Σ_j a_j exp(i2πf_j n) + noise`, `p` a
//! polynomial of degree `D` in the user's index `n`. Its coefficients enter linearly and are not
//! penalised, so for any line positions and amplitudes the best polynomial is the least-squares one
//! and the fit that is left is the projection `P⊥(x − Fμ)` onto the orthogonal complement of the
//! polynomials on the measured indices (variable projection: Golub & Pereyra 1973, SIAM J. Numer.
//! Anal. 10(2)). [`TrendBasis`] holds an orthonormal basis `Q` of that polynomial space (modified
//! Gram–Schmidt, applied twice, on the monomials of the centred and scaled index
//! `t = (n − centre)/half`), and `P⊥v = v − Q(Qᵀv)`.

use super::{forward, Domain, Measurements, Spikes};
use crate::error::{Error, Result};
use num_complex::Complex64;
use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

/// Highest polynomial degree a trend may have: beyond it, a polynomial fits slow lines as well
/// as the trend (and the monomial basis loses accuracy).
pub const MAX_TREND_DEGREE: usize = 8;

/// A polynomial nuisance fitted jointly with the lines (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Trend {
    /// No nuisance: the lines alone model the record.
    #[default]
    None,
    /// A constant offset (degree 0).
    Mean,
    /// An offset and a linear drift (degree 1).
    Linear,
    /// A polynomial of the given degree (at most [`MAX_TREND_DEGREE`]).
    Poly(u8),
}

impl Trend {
    /// The polynomial degree, `None` without a nuisance.
    pub fn degree(self) -> Option<usize> {
        match self {
            Trend::None => None,
            Trend::Mean => Some(0),
            Trend::Linear => Some(1),
            Trend::Poly(d) => Some(d as usize),
        }
    }

    /// The nuisance of degree `degree` (`Mean` for 0, `Linear` for 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] above [`MAX_TREND_DEGREE`].
    pub fn of_degree(degree: usize) -> Result<Self> {
        match degree {
            0 => Ok(Trend::Mean),
            1 => Ok(Trend::Linear),
            d if d <= MAX_TREND_DEGREE => Ok(Trend::Poly(d as u8)),
            d => Err(Error::InvalidSetting {
                name: "trend degree",
                value: d.to_string(),
                rule: "must be at most 8: a higher polynomial also fits slow lines",
            }),
        }
    }
}

impl fmt::Display for Trend {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Trend::None => f.write_str("none"),
            Trend::Mean => f.write_str("mean"),
            Trend::Linear => f.write_str("linear"),
            Trend::Poly(d) => write!(f, "poly:{d}"),
        }
    }
}

impl FromStr for Trend {
    type Err = Error;

    /// `none`, `mean`, `linear` or `poly:D` (case-insensitive).
    fn from_str(s: &str) -> Result<Self> {
        let bad = || Error::InvalidSetting {
            name: "trend",
            value: s.to_string(),
            rule: "must be none, mean, linear or poly:D with D from 0 to 8",
        };
        let lower = s.trim().to_ascii_lowercase();
        match lower.as_str() {
            "none" => Ok(Trend::None),
            "mean" => Ok(Trend::Mean),
            "linear" => Ok(Trend::Linear),
            _ => {
                let d = lower
                    .strip_prefix("poly:")
                    .and_then(|d| d.parse::<usize>().ok())
                    .ok_or_else(bad)?;
                Trend::of_degree(d).map_err(|_| bad())
            }
        }
    }
}

/// An orthonormal basis of the polynomials of degree ≤ D on the measured indices (module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct TrendBasis {
    /// Centre of the index range, `(first + last)/2`, in the user's index.
    centre: f64,
    /// Half the index range (at least 1): `t = (n − centre)/half`.
    half: f64,
    /// Orthonormal columns `q_0, …, q_D` over the measured samples, in storage order.
    q: Vec<Vec<f64>>,
    /// Upper-triangular `R` of the monomials `t^d = Σ_{e ≤ d} R_{e,d} q_e`, row-major `(D+1)²`.
    r: Vec<f64>,
}

impl TrendBasis {
    /// The basis for the user indices `n` (one per measured sample, in storage order).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] when the polynomial would take more than half of the measured
    /// samples (`2(D + 1) > |K|`): the lines would be left too few degrees of freedom.
    pub(crate) fn new(user_indices: &[i64], degree: usize) -> Result<Self> {
        let m = user_indices.len();
        let cols = degree + 1;
        if 2 * cols > m {
            return Err(Error::InvalidSetting {
                name: "trend degree",
                value: degree.to_string(),
                rule:
                    "the polynomial may take at most half of the measured samples (2(D + 1) ≤ |K|)",
            });
        }
        let (lo, hi) = user_indices
            .iter()
            .fold((i64::MAX, i64::MIN), |(a, b), &n| (a.min(n), b.max(n)));
        let centre = (lo as f64 + hi as f64) / 2.0;
        let half = ((hi as f64 - lo as f64) / 2.0).max(1.0);
        let t: Vec<f64> = user_indices
            .iter()
            .map(|&n| (n as f64 - centre) / half)
            .collect();
        let mut q: Vec<Vec<f64>> = Vec::with_capacity(cols);
        let mut r = vec![0.0; cols * cols];
        for d in 0..cols {
            let mut v: Vec<f64> = t.iter().map(|x| x.powi(d as i32)).collect();
            // Modified Gram–Schmidt, twice ("twice is enough": Giraud et al. 2005, Numer. Math. 101).
            for _ in 0..2 {
                for (e, qe) in q.iter().enumerate() {
                    let c: f64 = qe.iter().zip(&v).map(|(a, b)| a * b).sum();
                    r[e * cols + d] += c;
                    v.iter_mut().zip(qe).for_each(|(x, y)| *x -= c * y);
                }
            }
            let norm = v.iter().map(|x| x * x).sum::<f64>().sqrt();
            if norm.partial_cmp(&(1e-10 * (m as f64).sqrt())) != Some(std::cmp::Ordering::Greater) {
                return Err(Error::InvalidSetting {
                    name: "trend degree",
                    value: degree.to_string(),
                    rule: "the measured indices do not determine a polynomial of this degree",
                });
            }
            r[d * cols + d] = norm;
            v.iter_mut().for_each(|x| *x /= norm);
            q.push(v);
        }
        Ok(TrendBasis { centre, half, q, r })
    }

    /// The polynomial degree `D`.
    pub fn degree(&self) -> usize {
        self.q.len() - 1
    }

    /// Project `v` onto the orthogonal complement of the polynomials: `v ← v − Q(Qᵀv)`.
    pub fn project(&self, v: &mut [Complex64]) {
        for qe in &self.q {
            let c: Complex64 = qe.iter().zip(v.iter()).map(|(a, b)| b * a).sum();
            v.iter_mut().zip(qe).for_each(|(x, y)| *x -= c * y);
        }
    }

    /// Least-squares polynomial of `v` (one value per measured sample), as coefficients of
    /// `(n − centre)^d`, `d = 0..=D`.
    pub fn coefficients(&self, v: &[Complex64]) -> Vec<Complex64> {
        let cols = self.q.len();
        let qt: Vec<Complex64> = self
            .q
            .iter()
            .map(|qe| qe.iter().zip(v).map(|(a, b)| b * a).sum())
            .collect();
        // Back substitution R c = Qᵀv gives the coefficients of t^d.
        let mut c = vec![Complex64::new(0.0, 0.0); cols];
        for d in (0..cols).rev() {
            let mut s = qt[d];
            for (e, ce) in c.iter().enumerate().skip(d + 1) {
                s -= ce * self.r[d * cols + e];
            }
            c[d] = s / self.r[d * cols + d];
        }
        // t^d = (n − centre)^d / half^d.
        c.iter()
            .enumerate()
            .map(|(d, x)| x / self.half.powi(d as i32))
            .collect()
    }

    /// The centre of the index range that the coefficients refer to.
    pub fn centre(&self) -> f64 {
        self.centre
    }
}

/// The fitted polynomial nuisance of an estimate, in the user's index.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendFit {
    /// The nuisance that was fitted.
    pub trend: Trend,
    /// The index the powers refer to: `p(n) = Σ_d c_d (n − centre)^d`.
    pub centre: f64,
    /// Coefficients `c_0, …, c_D` (complex; real-valued records give zero imaginary parts).
    #[serde(serialize_with = "crate::model::complex_vec::serialize")]
    pub coefficients: Vec<Complex64>,
}

/// The physical scale of positions: a sample rate for time records, a domain length for Fourier data.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Scale {
    /// Samples per second (or per any unit of time): `frequency = position · rate`.
    SampleRate(f64),
    /// Length of the periodic domain: `physical position = position · length`.
    DomainLength(f64),
}

impl Scale {
    /// The factor that turns a position (cycles per sample, or a fraction of the domain) into the
    /// user's unit.
    pub fn factor(self) -> f64 {
        match self {
            Scale::SampleRate(r) | Scale::DomainLength(r) => r,
        }
    }

    /// Checked: positive and finite.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] otherwise.
    pub fn validated(self) -> Result<Self> {
        let (name, v) = match self {
            Scale::SampleRate(r) => ("sample rate", r),
            Scale::DomainLength(l) => ("domain length", l),
        };
        if v.is_finite() && v > 0.0 {
            Ok(self)
        } else {
            Err(Error::InvalidSetting {
                name,
                value: v.to_string(),
                rule: "must be positive and finite",
            })
        }
    }
}

/// Real-valued records, trends and scales of [`Measurements`] (the record's kind beside its samples).
impl Measurements {
    /// `N` real-valued samples `x_0, …, x_{N−1}` of `Σ_j A_j cos(2πf_j n + φ_j)`.
    ///
    /// In the complex model each line is the conjugate-symmetric pair `(A/2)e^{±iφ}` at `±f`; the
    /// estimators fit such pairs and report each line once, at `f ∈ [0, 1/2]` with the phasor
    /// amplitude `A e^{iφ}` (see [`crate::Line`]).
    ///
    /// # Errors
    /// As [`Measurements::from_time_samples`].
    pub fn from_real_samples(samples: &[f64]) -> Result<Self> {
        let z: Vec<Complex64> = samples.iter().map(|&x| Complex64::new(x, 0.0)).collect();
        let mut m = Self::from_time_samples(&z)?;
        m.real = true;
        Ok(m)
    }

    /// Real-valued samples at integer sample indices `times` (any origin, gaps allowed).
    ///
    /// # Errors
    /// As [`Measurements::from_time_subset`].
    pub fn from_real_subset(times: &[i64], samples: &[f64]) -> Result<Self> {
        let z: Vec<Complex64> = samples.iter().map(|&x| Complex64::new(x, 0.0)).collect();
        let mut m = Self::from_time_subset(times, &z)?;
        m.real = true;
        Ok(m)
    }

    /// The same record with a polynomial nuisance fitted jointly with the lines (see
    /// [`Trend`]): the estimators see the data with the best polynomial projected out, and every
    /// residual is taken after refitting it.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] when the polynomial would take more than half of the measured
    /// samples.
    pub fn with_trend(&self, trend: Trend) -> Result<Self> {
        let raw = self.raw_values().to_vec();
        let mut m = Measurements {
            values: raw.clone(),
            trend,
            basis: None,
            raw: Vec::new(),
            ..self.clone()
        };
        if let Some(d) = trend.degree() {
            let user: Vec<i64> = self
                .indices
                .iter()
                .map(|&k| self.domain.user_index(k))
                .collect();
            let basis = TrendBasis::new(&user, d)?;
            basis.project(&mut m.values);
            m.basis = Some(basis);
            m.raw = raw;
        }
        Ok(m)
    }

    /// The same record with a physical scale: a sample rate for a time record, a domain length for
    /// Fourier data.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for a non-positive or non-finite value;
    /// also for a sample rate on Fourier data or a length on a time record.
    pub fn with_scale(&self, scale: Scale) -> Result<Self> {
        let scale = scale.validated()?;
        let fits = matches!(
            (scale, self.domain),
            (Scale::SampleRate(_), Domain::Time) | (Scale::DomainLength(_), Domain::Fourier)
        );
        if !fits {
            return Err(Error::InvalidSetting {
                name: match scale {
                    Scale::SampleRate(_) => "sample rate",
                    Scale::DomainLength(_) => "domain length",
                },
                value: scale.factor().to_string(),
                rule: "a sample rate applies to time records, a domain length to Fourier data",
            });
        }
        Ok(Measurements {
            scale: Some(scale),
            ..self.clone()
        })
    }

    /// True for a real-valued time record.
    pub fn is_real(&self) -> bool {
        self.real
    }

    /// The physical scale, if one was given.
    pub fn scale(&self) -> Option<Scale> {
        self.scale
    }

    /// The polynomial nuisance fitted with the lines.
    pub fn trend(&self) -> Trend {
        self.trend
    }

    /// The basis of the polynomial nuisance (`None` without one).
    pub fn trend_basis(&self) -> Option<&TrendBasis> {
        self.basis.as_ref()
    }

    /// The values as given (before a trend was projected out).
    pub fn raw_values(&self) -> &[Complex64] {
        if self.basis.is_some() {
            &self.raw
        } else {
            &self.values
        }
    }

    /// The fitted nuisance for a spike train: the least-squares polynomial of `x − Fμ`.
    pub fn trend_fit(&self, spikes: &Spikes) -> Option<TrendFit> {
        let basis = self.basis.as_ref()?;
        let model = forward(spikes, &self.indices);
        let r: Vec<Complex64> = self.raw.iter().zip(model).map(|(y, m)| y - m).collect();
        Some(TrendFit {
            trend: self.trend,
            centre: basis.centre(),
            coefficients: basis.coefficients(&r),
        })
    }

    /// A position (cycles per sample, or a fraction of the domain) in the user's unit: for a time
    /// record, a signed frequency in `(−1/2, 1/2]` (for a real one, `[0, 1/2]`) times the sample
    /// rate; for Fourier data, the position times the domain length.
    pub fn physical(&self, position: f64) -> f64 {
        let p = match self.domain {
            Domain::Time if position > 0.5 => position - 1.0,
            _ => position,
        };
        let p = if self.real { p.abs() } else { p };
        p * self.scale.map_or(1.0, Scale::factor)
    }

    /// The record's resolution `1/N` (one periodogram bin) in the user's unit: `R/N` Hz with a
    /// sample rate, `L/N` with a domain length.
    pub fn resolution(&self) -> f64 {
        self.scale.map_or(1.0, Scale::factor) / self.band_len() as f64
    }

    /// The first and last index of the record as the user numbered them (sample indices `n` for
    /// a time record, `k` for Fourier data).
    pub fn user_span(&self) -> (i64, i64) {
        let (a, b) = (
            self.domain.user_index(self.kmin),
            self.domain.user_index(self.kmax),
        );
        (a.min(b), a.max(b))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trend_parses_and_prints() {
        for s in ["none", "mean", "linear", "poly:3", "POLY:0", " Linear "] {
            let t: Trend = s.parse().unwrap();
            assert_eq!(t.to_string().parse::<Trend>().unwrap(), t);
        }
        assert_eq!("poly:0".parse::<Trend>().unwrap(), Trend::Mean);
        assert!("poly:9".parse::<Trend>().is_err());
        assert!("cubic".parse::<Trend>().is_err());
        assert!("poly:".parse::<Trend>().is_err());
    }

    #[test]
    fn basis_reproduces_a_polynomial_and_projects_it_away() {
        // p(n) = 2 − 0.5(n − 1015) + 0.01(n − 1015)², on indices 1000..=1030 with two gaps.
        let idx: Vec<i64> = (1000..=1030).filter(|n| *n != 1004 && *n != 1017).collect();
        let p = |n: i64| {
            let x = n as f64 - 1015.0;
            Complex64::new(2.0 - 0.5 * x + 0.01 * x * x, 0.0)
        };
        let v: Vec<Complex64> = idx.iter().map(|&n| p(n)).collect();
        let b = TrendBasis::new(&idx, 2).unwrap();
        assert_eq!(b.centre(), 1015.0);
        let c = b.coefficients(&v);
        for (x, y) in c.iter().zip([2.0, -0.5, 0.01]) {
            assert!((x.re - y).abs() < 1e-10, "{c:?}");
        }
        let mut w = v.clone();
        b.project(&mut w);
        assert!(w.iter().all(|x| x.norm() < 1e-10));
    }

    #[test]
    fn too_high_a_degree_is_refused() {
        let idx: Vec<i64> = (0..6).collect();
        assert!(TrendBasis::new(&idx, 2).is_ok());
        assert!(matches!(
            TrendBasis::new(&idx, 3),
            Err(Error::InvalidSetting { .. })
        ));
    }
}
