//! The plan of a campaign: a grid of conditions, the methods with their settings, draws and seed; and
//! the invented scene of one condition and draw.

use crate::error::{Error, Result};
use crate::estimator::NoiseLevel;
use crate::eval::array_scene::SourceCorrelation;
use crate::model::{forward, wrap, Domain, Measurements, Spike, Spikes};
use crate::registry::{self, MethodOptions};
use crate::tv::Backend;
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// The record of a condition: a Fourier band `−fc..=fc` (`N = 2fc + 1`), `N` time samples, or the
/// snapshots of a uniform line array.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Band {
    /// Fourier coefficients `−fc..=fc`, written `{"fc": 16}`.
    Fc(usize),
    /// A time record of this many uniform samples (any `N ≥ 2`), written `{"samples": 64}`.
    Samples(usize),
    /// `snapshots` snapshots of a uniform line array of `sensors` sensors, written
    /// `{"array": {"sensors": 16, "snapshots": 20}}`; positions are spatial frequencies (cycles per
    /// sensor), the resolution is `1/M`, and the methods run through
    /// [`crate::Estimator::estimate_snapshots`] (the others are refused).
    Array {
        /// `M`, the sensors.
        sensors: usize,
        /// `L`, the snapshots.
        snapshots: usize,
    },
}

impl Band {
    /// `N`, the number of indices spanned (the record's resolution is `1/N`).
    pub fn len(self) -> usize {
        match self {
            Band::Fc(fc) => 2 * fc + 1,
            Band::Samples(n) => n,
            Band::Array { sensors, .. } => sensors,
        }
    }

    /// The snapshots of an array band (`None` for a single record).
    pub fn snapshots(self) -> Option<usize> {
        match self {
            Band::Array { snapshots, .. } => Some(snapshots),
            _ => None,
        }
    }

    /// Always false: a band spans at least one index (kept for the `len` convention).
    pub fn is_empty(self) -> bool {
        self.len() == 0
    }

    /// The TV theory's cutoff `fc = (N − 1)/2` (as [`Measurements::fc`]).
    pub fn fc(self) -> f64 {
        (self.len() as f64 - 1.0) / 2.0
    }

    /// `(kmin, kmax, domain)` of the stored band, as [`crate::Scenario`] lays them out.
    fn layout(self) -> Option<(i64, i64, Domain)> {
        match self {
            Band::Fc(fc) => Some((-(fc as i64), fc as i64, Domain::Fourier)),
            Band::Samples(n) => Some((-(n as i64 - 1), 0, Domain::Time)),
            Band::Array { .. } => None,
        }
    }
}

/// The unit the plan's separations are written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SeparationUnit {
    /// The record's resolution `1/N` (one periodogram bin; the default).
    #[default]
    Record,
    /// The TV theory's unit `1/fc`, `fc = (N − 1)/2`.
    Fc,
}

/// The sign and phase pattern of the amplitudes. Moduli are drawn uniformly in `[0.5, 1.5]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AmplitudePattern {
    /// Phases uniform on `[0, 2π)`, independent.
    RandomPhase,
    /// Real and positive (no separation needed for exact TV recovery: Schiebinger, Robeva & Recht
    /// 2018, Inf. Inference 7(1)).
    RealPositive,
    /// Real with signs alternating along the positions (`+, −, +, …`), the hard case for TV recovery
    /// of close spikes.
    AlternatingSign,
}

impl AmplitudePattern {
    /// The name used in files (`random_phase`, `real_positive`, `alternating_sign`).
    pub fn name(self) -> &'static str {
        match self {
            AmplitudePattern::RandomPhase => "random_phase",
            AmplitudePattern::RealPositive => "real_positive",
            AmplitudePattern::AlternatingSign => "alternating_sign",
        }
    }
}

/// Which noise level a method is given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum NoiseGiven {
    /// The true σ of the scene (exact data: [`NoiseLevel::Exact`]); the default.
    #[default]
    Known,
    /// The method estimates σ from the data.
    Estimated,
}

/// Which model order a method that takes one is given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum OrderGiven {
    /// The true number of spikes (the default).
    #[default]
    Known,
    /// The method chooses (e.g. MDL for the subspace methods).
    Chosen,
}

/// The convex solver, for the methods that have a choice (`sdp`, `ast`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Solver {
    /// The method's own switch by size (the default).
    #[default]
    Auto,
    /// The interior point (clarabel).
    InteriorPoint,
    /// Sliding Frank–Wolfe.
    Sliding,
}

/// One method of a plan: a registry name and its settings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MethodSpec {
    /// The registry name (`sdp`, `esprit`, …).
    pub name: String,
    /// The name in the records (default: `name`); lets one method appear with two settings.
    #[serde(default)]
    pub label: Option<String>,
    /// Noise level given (default `known`).
    #[serde(default)]
    pub noise: NoiseGiven,
    /// Model order given to the methods that take one (default `known`; ignored by the others).
    #[serde(default)]
    pub order: OrderGiven,
    /// Convex solver for `sdp`/`ast` (default `auto`; ignored by the others).
    #[serde(default)]
    pub solver: Solver,
}

impl MethodSpec {
    /// A method by registry name with the default settings.
    pub fn new(name: &str) -> Self {
        MethodSpec {
            name: name.to_string(),
            label: None,
            noise: NoiseGiven::Known,
            order: OrderGiven::Known,
            solver: Solver::Auto,
        }
    }

    /// The name in the records.
    pub fn label(&self) -> &str {
        self.label.as_deref().unwrap_or(&self.name)
    }

    /// The registry options for a scene of `count` spikes and noise level `sigma` (0: exact).
    ///
    /// # Errors
    /// [`Error::UnknownMethod`] for a name not in the registry.
    pub fn options(&self, count: usize, sigma: f64) -> Result<MethodOptions> {
        let row = registry::method(&self.name)?;
        let noise = match self.noise {
            NoiseGiven::Estimated => NoiseLevel::Estimate,
            NoiseGiven::Known if sigma > 0.0 => NoiseLevel::Known(sigma),
            NoiseGiven::Known => NoiseLevel::Exact,
        };
        let order = (row.takes_order && self.order == OrderGiven::Known).then_some(count);
        let backend = match (row.takes_backend, self.solver) {
            (false, _) | (_, Solver::Auto) => Backend::Auto,
            (true, Solver::InteriorPoint) => Backend::InteriorPoint,
            (true, Solver::Sliding) => Backend::SlidingFrankWolfe,
        };
        Ok(MethodOptions {
            noise,
            order,
            backend,
        })
    }
}

fn exact_only() -> Vec<Option<f64>> {
    vec![None]
}
fn random_phase_only() -> Vec<AmplitudePattern> {
    vec![AmplitudePattern::RandomPhase]
}
fn no_gaps() -> Vec<f64> {
    vec![0.0]
}
fn uncorrelated_only() -> Vec<SourceCorrelation> {
    vec![SourceCorrelation::Uncorrelated]
}
fn default_tolerance() -> f64 {
    1e-3
}

/// The grid of conditions: every combination of the lists is one condition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Grid {
    /// Records: `[{"fc": 16}, {"samples": 64}]`.
    pub bands: Vec<Band>,
    /// Spacing of neighbouring spikes, in [`Grid::separation_unit`].
    pub separations: Vec<f64>,
    /// Unit of the separations (default `record`, i.e. `1/N`).
    #[serde(default)]
    pub separation_unit: SeparationUnit,
    /// Numbers of spikes.
    pub spikes: Vec<usize>,
    /// SNR of the weakest spike in dB, `10 log10(min|a|²/σ²)`; `null` for exact data (the default
    /// is exact data only).
    #[serde(default = "exact_only")]
    pub snr_db: Vec<Option<f64>>,
    /// Amplitude patterns (default `random_phase` only).
    #[serde(default = "random_phase_only")]
    pub amplitudes: Vec<AmplitudePattern>,
    /// Fractions of the band's indices left out at random, in `[0, 1)` (default 0: the full band;
    /// the first and last index are always kept, so `N` is the same).
    #[serde(default = "no_gaps")]
    pub gaps: Vec<f64>,
    /// For array bands: how the sources' amplitudes relate, e.g. `["uncorrelated", "coherent",
    /// {"correlated": 0.9}]` (default uncorrelated only; single records ignore it).
    #[serde(default = "uncorrelated_only")]
    pub correlations: Vec<SourceCorrelation>,
    /// For array bands: the element spacing in wavelengths, so that estimates carry angles (default
    /// none; single records ignore it).
    #[serde(default)]
    pub spacing: Option<f64>,
}

/// A campaign plan (JSON, see the module docs for an example).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Plan {
    /// The grid of conditions.
    pub grid: Grid,
    /// The methods, run on the same scenes.
    pub methods: Vec<MethodSpec>,
    /// Draws (invented scenes) per condition.
    pub draws: usize,
    /// Master seed: trial seeds derive from `(seed, condition, draw)`.
    pub seed: u64,
    /// Exact recovery on exact data means every line within this many record resolution units
    /// (`1/N`) of the truth (default `1e-3`).
    #[serde(default = "default_tolerance")]
    pub exact_tolerance: f64,
}

/// One condition: a point of the grid.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Condition {
    /// Index in [`Plan::conditions`].
    pub index: usize,
    /// The record.
    pub band: Band,
    /// Spacing of neighbouring spikes in record resolution units (`Δ·N`).
    pub separation_res: f64,
    /// The same spacing in the TV theory's unit (`Δ·fc`).
    pub separation_fc: f64,
    /// Number of spikes.
    pub spikes: usize,
    /// SNR of the weakest spike in dB (`None`: exact data).
    pub snr_db: Option<f64>,
    /// Amplitude pattern.
    pub amplitudes: AmplitudePattern,
    /// Fraction of indices left out (for an array: of its sensors).
    pub gaps: f64,
    /// How the sources relate (arrays; `uncorrelated` for single records).
    pub correlation: SourceCorrelation,
    /// Element spacing in wavelengths (arrays, when given).
    pub spacing: Option<f64>,
}

impl Condition {
    /// The spacing `Δ` in position units (cycles per sample for time records).
    pub fn spacing(&self) -> f64 {
        self.separation_res / self.band.len() as f64
    }
}

fn bad(name: &'static str, value: impl ToString, rule: &'static str) -> Error {
    Error::InvalidSetting {
        name,
        value: value.to_string(),
        rule,
    }
}

impl Plan {
    /// Read a plan from JSON text.
    ///
    /// # Errors
    /// [`Error::Parse`] for malformed JSON or unknown fields (with the line); the errors of
    /// [`Plan::validated`].
    pub fn from_json(text: &str, source_name: &str) -> Result<Plan> {
        let plan: Plan = serde_json::from_str(text).map_err(|e| Error::Parse {
            source_name: source_name.to_string(),
            line: e.line(),
            message: format!("not a campaign plan: {e}"),
        })?;
        plan.validated()
    }

    /// Check the plan: non-empty lists, known methods with settings they take, sizes and values in
    /// range.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] naming the field; [`Error::UnknownMethod`].
    pub fn validated(self) -> Result<Plan> {
        let g = &self.grid;
        if g.bands.is_empty()
            || g.separations.is_empty()
            || g.spikes.is_empty()
            || g.snr_db.is_empty()
            || g.amplitudes.is_empty()
            || g.gaps.is_empty()
        {
            return Err(bad(
                "grid",
                "an empty list",
                "every list of the grid needs at least one value",
            ));
        }
        if self.methods.is_empty() {
            return Err(bad("methods", "[]", "at least one method is needed"));
        }
        if self.draws == 0 {
            return Err(bad("draws", 0, "at least one draw per condition is needed"));
        }
        for b in &g.bands {
            if b.snapshots() == Some(0) {
                return Err(bad(
                    "bands",
                    format!("{b:?}"),
                    "an array needs at least one snapshot",
                ));
            }
            if b.len() < 3 {
                return Err(bad(
                    "bands",
                    format!("{b:?}"),
                    "a record needs fc >= 1 or at least 3 samples",
                ));
            }
        }
        for &s in &g.separations {
            if !(s.is_finite() && s > 0.0) {
                return Err(bad("separations", s, "must be finite and positive"));
            }
        }
        if g.spikes.contains(&0) {
            return Err(bad("spikes", 0, "at least one spike per scene"));
        }
        for snr in g.snr_db.iter().flatten() {
            if !snr.is_finite() {
                return Err(bad("snr_db", snr, "must be finite (null for exact data)"));
            }
        }
        for &f in &g.gaps {
            if !(0.0..1.0).contains(&f) {
                return Err(bad("gaps", f, "a fraction in [0, 1)"));
            }
        }
        if g.correlations.is_empty() {
            return Err(bad(
                "correlations",
                "[]",
                "give at least one source relation (or leave the field out)",
            ));
        }
        for c in &g.correlations {
            if let SourceCorrelation::Correlated(r) = c {
                if !(r.is_finite() && r.abs() < 1.0) {
                    return Err(bad(
                        "correlations",
                        r,
                        "a correlation coefficient lies in (-1, 1); use \"coherent\" for 1",
                    ));
                }
            }
        }
        if let Some(d) = g.spacing {
            if !(d.is_finite() && d > 0.0) {
                return Err(bad(
                    "spacing",
                    d,
                    "the element spacing in wavelengths must be finite and positive",
                ));
            }
        }
        if !(self.exact_tolerance.is_finite() && self.exact_tolerance > 0.0) {
            return Err(bad(
                "exact_tolerance",
                self.exact_tolerance,
                "must be finite and positive (record resolution units)",
            ));
        }
        let mut labels: Vec<&str> = Vec::new();
        for m in &self.methods {
            let row = registry::method(&m.name)?;
            if m.solver != Solver::Auto && !row.takes_backend {
                return Err(bad(
                    "solver",
                    &m.name,
                    "only sdp and ast take a solver choice",
                ));
            }
            if labels.contains(&m.label()) {
                return Err(bad(
                    "methods",
                    m.label(),
                    "two methods with the same label: give one a \"label\"",
                ));
            }
            labels.push(m.label());
        }
        Ok(self)
    }

    /// Every condition of the grid that fits on the torus (`spikes × Δ ≤ 1`), in the order bands,
    /// amplitudes, spikes, separations, source relations (arrays only), SNR, gaps; and a note for
    /// each combination left out (including amplitude patterns other than random phase on arrays).
    pub fn conditions(&self) -> (Vec<Condition>, Vec<String>) {
        let g = &self.grid;
        let mut out = Vec::new();
        let mut skipped = Vec::new();
        for &band in &g.bands {
            let n = band.len() as f64;
            let is_array = band.snapshots().is_some();
            let correlations: &[SourceCorrelation] = if is_array {
                &g.correlations
            } else {
                &[SourceCorrelation::Uncorrelated]
            };
            for &amplitudes in &g.amplitudes {
                if is_array && amplitudes != AmplitudePattern::RandomPhase {
                    skipped.push(format!(
                        "{} amplitudes do not apply to array snapshots (their amplitudes are \
                         complex Gaussian per snapshot)",
                        amplitudes.name()
                    ));
                    continue;
                }
                for &spikes in &g.spikes {
                    for &sep in &g.separations {
                        let separation_res = match g.separation_unit {
                            SeparationUnit::Record => sep,
                            SeparationUnit::Fc => sep * n / band.fc(),
                        };
                        if spikes as f64 * separation_res > n * (1.0 + 1e-12) {
                            skipped.push(format!(
                                "{spikes} spikes {separation_res}/N apart do not fit in N = {}",
                                band.len()
                            ));
                            continue;
                        }
                        for &correlation in correlations {
                            for &snr_db in &g.snr_db {
                                for &gaps in &g.gaps {
                                    out.push(Condition {
                                        index: out.len(),
                                        band,
                                        separation_res,
                                        separation_fc: separation_res * band.fc() / n,
                                        spikes,
                                        snr_db,
                                        amplitudes,
                                        gaps,
                                        correlation,
                                        spacing: if is_array { g.spacing } else { None },
                                    });
                                }
                            }
                        }
                    }
                }
            }
        }
        (out, skipped)
    }
}

/// SplitMix64's output function (Steele, Lea & Flood 2014, OOPSLA): a bijective mix of 64 bits.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// The seed of draw `draw` of condition `condition`: a function of the three numbers only, so a
/// trial's scene does not depend on the thread count or on the other trials.
pub fn trial_seed(seed: u64, condition: usize, draw: usize) -> u64 {
    mix(mix(mix(seed) ^ condition as u64) ^ draw as u64)
}

/// One invented scene of a condition.
#[derive(Debug, Clone, PartialEq)]
pub struct Scene {
    /// The spikes.
    pub truth: Spikes,
    /// The measurements.
    pub data: Measurements,
    /// The noise level (0: exact data).
    pub sigma: f64,
}

/// Draw the scene of `condition` with `seed`: `spikes` spikes evenly spaced `Δ` apart (a cluster,
/// every neighbour at the minimum separation) from a uniform offset, amplitudes of the pattern with
/// moduli uniform in `[0.5, 1.5]`, complex white Gaussian noise at the weakest spike's SNR, and the
/// gap fraction of indices removed (the first and last kept). Every scene is invented.
///
/// # Errors
/// The errors of [`Measurements::in_band`] and [`Spikes::new`] (none for a validated plan).
pub fn draw_scene(condition: &Condition, seed: u64) -> Result<Scene> {
    let mut rng = StdRng::seed_from_u64(seed);
    let d = condition.spacing();
    let offset: f64 = rng.gen();
    let mut spikes = Vec::with_capacity(condition.spikes);
    for j in 0..condition.spikes {
        let modulus = 0.5 + rng.gen::<f64>();
        let phase = 2.0 * PI * rng.gen::<f64>();
        let a = match condition.amplitudes {
            AmplitudePattern::RandomPhase => Complex64::from_polar(modulus, phase),
            AmplitudePattern::RealPositive => Complex64::new(modulus, 0.0),
            AmplitudePattern::AlternatingSign => {
                Complex64::new(if j % 2 == 0 { modulus } else { -modulus }, 0.0)
            }
        };
        spikes.push(Spike::new(wrap(offset + j as f64 * d), a));
    }
    let truth = Spikes::new(spikes)?;
    let Some((kmin, kmax, domain)) = condition.band.layout() else {
        return Err(bad(
            "bands",
            format!("{:?}", condition.band),
            "an array condition: draw it with draw_array_scene",
        ));
    };
    let mut idx: Vec<i64> = (kmin..=kmax).collect();
    if condition.gaps > 0.0 {
        let n = idx.len();
        let keep = (((1.0 - condition.gaps) * n as f64).round() as usize).clamp(2, n);
        let mut inner: Vec<i64> = idx[1..n - 1].to_vec();
        inner.shuffle(&mut rng);
        inner.truncate(keep - 2);
        idx = [kmin, kmax].into_iter().chain(inner).collect();
        idx.sort_unstable();
    }
    let mut values = forward(&truth, &idx);
    let amin = truth
        .as_slice()
        .iter()
        .map(|s| s.amplitude.norm())
        .fold(f64::INFINITY, f64::min);
    let sigma = condition
        .snr_db
        .map_or(0.0, |snr| amin * 10f64.powf(-snr / 20.0));
    if sigma > 0.0 {
        // E|n|² = σ²: real and imaginary parts each of variance σ²/2.
        let s = sigma / std::f64::consts::SQRT_2;
        for v in &mut values {
            let re: f64 = rng.sample(StandardNormal);
            let im: f64 = rng.sample(StandardNormal);
            *v += Complex64::new(s * re, s * im);
        }
    }
    let data = Measurements::in_band(kmin, kmax, &idx, &values, domain)?;
    Ok(Scene { truth, data, sigma })
}
