//! Subspace baselines: MUSIC and root-MUSIC, ESPRIT, matrix pencil, model-order selection.
//!
//! All three estimate the positions from the signal subspace of the Hankel data matrix of a contiguous
//! band of `N` coefficients `h_m = y_{k0+m} = Σ_j b_j z_j^m`, `z_j = exp(−i2πτ_j)` (time samples are
//! the same data with `k = −n`, see [`crate::model`]):
//!
//! ```text
//!   H_{p,q} = h_{p+q},  p = 0..L,  q = 0..N−L+1,   H = A_L diag(b) A_{N−L+1}^T,   (A_L)_{p,j} = z_j^p,
//! ```
//!
//! optionally forward–backward averaged (`[H, J H̄ J]`). The `r` dominant left singular vectors `U_s`
//! span the columns of `A_L`; rotational invariance of `A_L` gives the `z_j` as eigenvalues
//! ([`Esprit`], [`MatrixPencil`]), orthogonality to the noise subspace gives them as roots
//! ([`Music`]). Positions are `τ_j = −arg(z_j)/(2π)` wrapped to `[0, 1)`; amplitudes are least squares
//! on the exact model (column-pivoted QR); an optional local least-squares polish
//! (the shared Levenberg–Marquardt polish) is off by default so that the methods stay the classical baselines.
//!
//! Exact data with at least `2s` coefficients determine `s` spikes at any separation: with
//! `L ≥ s + 1` rows and `N − L + 1 ≥ s` columns the Hankel matrix has rank `s` and the subspace methods
//! recover the support exactly (Liao & Fannjiang 2016, ACHA 40(1)). The default window
//! `L = ⌊N/2⌋ + 1` allows up to `⌊N/2⌋` spikes.
//!
//! A measured set with gaps is not supported (there is no Hankel structure to exploit): use `sdp`.
//!
//! Multi-snapshot records ([`crate::Snapshots`], [`crate::Estimator::estimate_snapshots`]) are
//! handled in `snapshots.rs`: the same three methods on the forward–backward averaged, spatially
//! smoothed sample covariance (`smoothing.rs`, setting [`SubspaceSettings::smoothing`]).
//!
//! ## One Hankel analysis per estimate, long records, limits
//!
//! The singular values that choose the order (a forward Hankel matrix of at most
//! [`SubspaceSettings::order_window`] rows) are computed once and handed to the noise-level estimate
//! ([`crate::estimate_sigma`]), which uses the same 256-row matrix from `N = 766` samples on; the exact-data
//! test on them is the one rule of the kernel layer ([`DEFAULT_RANK_TOLERANCE`]). No step forms a
//! matrix whose size grows like `N²`: above [`DENSE_SVD_ENTRIES`] entries the singular values come
//! from a QR of `Hᴴ` accumulated block by block (`O(L²)` memory for `L` rows), the signal subspace
//! from the randomized range finder with FFT products (`O(N·r)` memory), and root-MUSIC from
//! Newton's method instead of a companion matrix (see [`Music`]). Measured on the 2-core reference
//! machine with the default settings (`examples/long_record_memory.rs`, an invented record of 5 lines
//! at 30 dB): `esprit`, `pencil` and `music` at `N = 100 000` in 4.7–6.2 s (depending on the
//! machine's load) and 188 MB peak (the noise-level estimate alone: 3.3–3.6 s, 28 MB), against
//! 10.7 s and 1.24 GB (`music`: a failed 160 GB allocation) before; time grows about linearly with
//! `N` (`benches/subspace.rs`, group `long_records`).
//!
//! Before it allocates, each step compares what it will need — working memory counted from the
//! matrices' dimensions, and arithmetic in complex multiply–adds, both functions of `N`, the window,
//! the order and the settings — with [`MEMORY_LIMIT_BYTES`] (1 GiB) and [`WORK_LIMIT`] (2^38, about a
//! minute), and past either returns [`Error::TooLarge`] at once, naming what to change or the methods
//! (`greedy`, `grid`) that handle the record. With the default settings the randomized subspace of
//! the default window reaches the memory limit at about 700 000 samples (about 1.5 kB per sample), so
//! the subspace methods refuse longer records at once; the noise-level estimate alone, as the other
//! methods use it, reaches the work limit at about 1.8 million samples.
//!
//! ## References
//! - R. O. Schmidt (1986), Multiple emitter location and signal parameter estimation, IEEE TAP 34(3).
//!   doi:10.1109/TAP.1986.1143830
//! - A. J. Barabell (1983), Improving the resolution performance of eigenstructure-based
//!   direction-finding algorithms, Proc. IEEE ICASSP 1983.
//! - R. Roy & T. Kailath (1989), ESPRIT — estimation of signal parameters via rotational invariance
//!   techniques, IEEE TASSP 37(7). doi:10.1109/29.32276
//! - Y. Hua & T. K. Sarkar (1990), Matrix pencil method for estimating parameters of exponentially
//!   damped/undamped sinusoids in noise, IEEE TASSP 38(5). doi:10.1109/29.56027
//! - M. Wax & T. Kailath (1985), Detection of signals by information theoretic criteria, IEEE TASSP
//!   33(2). doi:10.1109/TASSP.1985.1164557
//! - W. Liao & A. Fannjiang (2016), MUSIC for single-snapshot spectral estimation: stability and
//!   super-resolution, ACHA 40(1). doi:10.1016/j.acha.2014.12.003
//! - N. Halko, P. G. Martinsson & J. A. Tropp (2011), Finding structure with randomness, SIAM Review
//!   53(2). doi:10.1137/090771806
//!
//! (DOIs, and the section and algorithm numbers cited in this module, are recalled from memory.)

mod esprit;
mod music;
pub(crate) mod order;
mod pencil;
mod smoothing;
mod snapshots;

pub use crate::kernels::budget::{MEMORY_LIMIT_BYTES, WORK_LIMIT};
pub use crate::kernels::hankel::{Decomposition, DENSE_MAX};
pub use crate::kernels::hankel_svd::DENSE_SVD_ENTRIES;
pub use crate::kernels::rank::{numerical_rank, DEFAULT_RANK_TOLERANCE};
pub use esprit::Esprit;
pub use music::{pseudospectrum, Music, Pseudospectrum, COMPANION_MAX_DEGREE};
pub use order::{aic, mdl, ModelOrder, OrderMethod, OrderSelection};
pub use pencil::MatrixPencil;
pub use smoothing::Smoothing;

use crate::error::{check, Error, Result};
use crate::estimator::{Diagnostics, Estimate, NoiseLevel, Status, Warning};
use crate::kernels::budget::Cost;
use crate::kernels::hankel::{self, HankelOperator, RandomizedParams, Subspace};
use crate::kernels::hankel_svd::HankelAnalysis;
use crate::kernels::lstsq;
use crate::kernels::rank::looks_exact;
use crate::kernels::refine::{refine, RefineSettings};
use crate::model::{wrap, Measurements};
use crate::postprocess::PostProcess;
use faer::c64;
use std::f64::consts::PI;
use std::time::Instant;

/// Settings shared by the subspace estimators ([`Music`], [`Esprit`], [`MatrixPencil`]).
///
/// Every default is chosen for the classical methods on data with or without noise; the order is
/// estimated unless given: by the numerical rank for exact data, by MDL otherwise
/// ([`OrderSelection::Auto`]).
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct SubspaceSettings {
    /// Rows `L` of the Hankel data matrix (window length; Hua & Sarkar's pencil parameter is `L − 1`).
    /// `None` (the default): `L = ⌊N/2⌋ + 1`, the square (or nearly square) matrix that allows the most
    /// spikes, `⌊N/2⌋`.
    pub window: Option<usize>,
    /// Forward–backward averaging: use `[H, J H̄ J]` instead of `H` (default true); with many
    /// snapshots, `(R̂ + J R̂̄ J)/2` instead of the sample covariance `R̂` (Pillai & Kwon 1989, IEEE
    /// TASSP 37(1)). Valid because the exponentials are undamped, `|z_j| = 1`.
    pub forward_backward: bool,
    /// Spatial smoothing of the sample covariance of a multi-snapshot record (default
    /// [`Smoothing::Auto`]: subarrays of `⌈0.6 M⌉` sensors, so that coherent sources are resolved;
    /// see the `smoothing` module docs). Not used for a single record.
    pub smoothing: Smoothing,
    /// How the model order is chosen (default [`OrderSelection::Auto`]: numerical rank for exact data,
    /// MDL otherwise).
    pub order: OrderSelection,
    /// Upper bound on an estimated order (default: none beyond identifiability, `min(L − 1, N − L + 1)`).
    pub max_order: Option<usize>,
    /// Cap on the rows `p` of the forward Hankel matrix whose singular values feed the order estimate
    /// (default 256). MDL and AIC use `p = min(⌈N/3⌉, order_window)` rows: the criteria treat the
    /// `N − p + 1` columns as snapshots of a `p`-sensor covariance and need clearly more snapshots than
    /// sensors (with a square matrix the spread of the noise eigenvalues makes them overestimate).
    /// The numerical rank uses `p = min(L, order_window)`. The cap keeps that SVD affordable for long
    /// records (its cost is about `2·N·p²` multiply–adds and `22·p²` complex numbers of memory, see
    /// the module docs on limits); an estimated order is at most `p − 1`.
    pub order_window: usize,
    /// Dense SVD or randomized range finder (default [`Decomposition::Auto`]).
    pub decomposition: Decomposition,
    /// Extra columns of the randomized range finder beyond the order (default 10; Halko, Martinsson &
    /// Tropp 2011, §4.2, suggest 5–10).
    pub oversampling: usize,
    /// Power iterations of the randomized range finder (default 2). Each one shrinks the subspace error
    /// by about the factor `(s_{r+p+1}/s_r)²` (Halko et al. 2011, §4.5, section number recalled from
    /// memory); with two, the difference from the dense SVD is negligible against the noise-induced
    /// error (test suite: 9e-9/fc against 4e-3/fc at 10 dB, N = 601).
    pub power_iterations: usize,
    /// Seed of the randomized range finder's test matrix (default 0; results are reproducible).
    pub seed: u64,
    /// Local least-squares polish of positions and amplitudes (default `None`: the classical method).
    pub refine: Option<RefineSettings>,
    /// Noise level for the diagnostics (residual check and plug-in Cramér–Rao bound) and for
    /// [`SubspaceSettings::prune`]. Default: estimated from the data
    /// ([`crate::noise::estimate_sigma`]); records too short to estimate it are reported without.
    pub noise: NoiseLevel,
    /// With a noise level and an order chosen by MDL or AIC, drop the components the noise cannot
    /// support — the 4σ amplitude floor and the significance test of [`PostProcess`] — which removes
    /// the extra components of an over-estimated order (MDL on a Hankel matrix over-estimates in a
    /// few percent of noisy draws). A given order is kept. Default true; false gives the textbook
    /// method's output.
    pub prune: bool,
}

impl Default for SubspaceSettings {
    fn default() -> Self {
        SubspaceSettings {
            window: None,
            forward_backward: true,
            smoothing: Smoothing::Auto,
            order: OrderSelection::Auto,
            max_order: None,
            order_window: 256,
            decomposition: Decomposition::Auto,
            oversampling: 10,
            power_iterations: 2,
            seed: 0,
            refine: None,
            noise: NoiseLevel::Estimate,
            prune: true,
        }
    }
}

impl SubspaceSettings {
    /// Set the window `L` (rows of the Hankel matrix), at least 2; it must also be at most `N`
    /// (checked when estimating).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for `L < 2`.
    pub fn with_window(mut self, rows: usize) -> Result<Self> {
        if rows < 2 {
            return Err(Error::invalid(
                "window",
                rows,
                "the window L must be at least 2",
            ));
        }
        self.window = Some(rows);
        Ok(self)
    }

    /// Use the default window `L = ⌊N/2⌋ + 1`.
    pub fn with_default_window(mut self) -> Self {
        self.window = None;
        self
    }

    /// Turn forward–backward averaging on or off.
    pub fn with_forward_backward(mut self, on: bool) -> Self {
        self.forward_backward = on;
        self
    }

    /// Set the spatial smoothing of multi-snapshot records.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for a subarray of fewer than 2 sensors (a subarray larger than the
    /// array is refused when estimating).
    pub fn with_smoothing(mut self, smoothing: Smoothing) -> Result<Self> {
        self.smoothing = smoothing.validated()?;
        Ok(self)
    }

    /// Set how the model order is chosen.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for `Given(0)` or a rank tolerance outside `(0, 1)`.
    pub fn with_order(mut self, order: OrderSelection) -> Result<Self> {
        self.order = order.validated()?;
        Ok(self)
    }

    /// Set an upper bound on the estimated order (at least 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_max_order(mut self, max_order: usize) -> Result<Self> {
        if max_order == 0 {
            return Err(Error::invalid("max_order", max_order, "must be at least 1"));
        }
        self.max_order = Some(max_order);
        Ok(self)
    }

    /// Set the row cap of the order-estimation Hankel matrix (at least 2).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] below 2.
    pub fn with_order_window(mut self, rows: usize) -> Result<Self> {
        self.order_window = check::that("order_window", rows, rows >= 2, "must be at least 2")?;
        Ok(self)
    }

    /// Choose the decomposition.
    pub fn with_decomposition(mut self, decomposition: Decomposition) -> Self {
        self.decomposition = decomposition;
        self
    }

    /// Set the randomized range finder's oversampling, in `1..=100`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_oversampling(mut self, extra: usize) -> Result<Self> {
        self.oversampling = check::that(
            "oversampling",
            extra,
            (1..=100).contains(&extra),
            "must lie in 1..=100",
        )?;
        Ok(self)
    }

    /// Set the randomized range finder's power iterations, in `0..=20`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] above 20.
    pub fn with_power_iterations(mut self, q: usize) -> Result<Self> {
        self.power_iterations = check::that("power_iterations", q, q <= 20, "must lie in 0..=20")?;
        Ok(self)
    }

    /// Set the seed of the randomized range finder.
    pub fn with_seed(mut self, seed: u64) -> Self {
        self.seed = seed;
        self
    }

    /// Set the noise level used by the diagnostics.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for a negative or non-finite known level.
    pub fn with_noise(mut self, noise: NoiseLevel) -> Result<Self> {
        self.noise = noise.validated()?;
        Ok(self)
    }

    /// Turn the pruning of components the noise cannot support on or off.
    pub fn with_prune(mut self, prune: bool) -> Self {
        self.prune = prune;
        self
    }

    /// Turn the least-squares polish on (with these settings) or off (`None`, the default).
    pub fn with_refine(mut self, refine: Option<RefineSettings>) -> Self {
        self.refine = refine;
        self
    }
}

/// Which of the three baselines is running.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Baseline {
    Music,
    Esprit,
    Pencil,
}

impl Baseline {
    fn name(self) -> &'static str {
        match self {
            Baseline::Music => "music",
            Baseline::Esprit => "esprit",
            Baseline::Pencil => "pencil",
        }
    }
}

/// The data, window, order, signal subspace and Hankel analysis of one estimate.
pub(crate) struct Prepared {
    pub window: usize,
    pub order: ModelOrder,
    /// `None` for order 0.
    pub subspace: Option<Subspace>,
    /// The singular values computed for the order, kept for the noise-level estimate.
    pub analysis: HankelAnalysis,
    pub start: Instant,
}

/// What to do when a subspace step is past its limits.
const TOO_LARGE_ADVICE: &str = "give a smaller window or model order (window, order), or use \
    'greedy' or 'grid', which handle long records";

/// Check the data, fix the window and the order, compute the signal subspace.
pub(crate) fn prepare(
    method: Baseline,
    settings: &SubspaceSettings,
    data: &Measurements,
) -> Result<Prepared> {
    let start = Instant::now();
    if !data.is_contiguous() {
        return Err(data.gaps_error(
            method.name(),
            "the subspace methods music, esprit and pencil need one; use 'sdp', which accepts gaps \
             (as do 'sfw', 'grid' and 'greedy')",
        ));
    }
    let n = data.len();
    if n < 2 {
        return Err(Error::RunTooShort {
            method: method.name(),
            found: n,
            needed: 2,
            advice: "a single sample holds no position information",
        });
    }
    let order_selection = match settings.order.validated()? {
        // A real record's lines are mirror pairs: a given number of lines is twice as many
        // exponentials.
        OrderSelection::Given(r) if data.is_real() => OrderSelection::Given(2 * r),
        o => o,
    };
    // Contiguous and sorted: h_m = y_{k0+m}.
    let seq: Vec<c64> = data.values().to_vec();
    let l = settings.window.unwrap_or(n / 2 + 1);
    if l < 2 || l > n {
        return Err(Error::InvalidSetting {
            name: "window",
            value: format!("{l} (N = {n} coefficients)"),
            rule: "the window L must satisfy 2 ≤ L ≤ N",
        });
    }
    let identifiable = (l - 1).min(n - l + 1);
    // Refuse at once, before the order analysis, what the subspace step could not do: with the
    // given order, or with one component when the order is to be estimated.
    let least = match order_selection {
        OrderSelection::Given(r) => r.min(identifiable),
        _ => 1,
    };
    check_budget(method, settings, n, l, least)?;
    let mut analysis = HankelAnalysis::new(&seq);
    let model_order = choose_order(
        method,
        order_selection,
        settings,
        &mut analysis,
        l,
        identifiable,
    )?;
    let order = model_order.order;
    let subspace = if order == 0 {
        None
    } else {
        check_budget(method, settings, n, l, order)?;
        let op = HankelOperator::new(&seq, l, settings.forward_backward);
        Some(hankel::signal_subspace(
            &op,
            order,
            settings.decomposition,
            randomized_params(settings),
        )?)
    };
    Ok(Prepared {
        window: l,
        order: model_order,
        subspace,
        analysis,
        start,
    })
}

fn randomized_params(settings: &SubspaceSettings) -> RandomizedParams {
    RandomizedParams {
        oversampling: settings.oversampling,
        power_iterations: settings.power_iterations,
        seed: settings.seed,
    }
}

/// Working memory and work of everything after the order choice for `r` components: the signal
/// subspace, the method's own root finding, and the amplitude fit, polish and diagnostics on the
/// `n` samples (a few `n × r` and `n × 3r` matrices: `8·n·r` complex numbers, and `O(n r²)` work).
fn estimate_cost(
    method: Baseline,
    settings: &SubspaceSettings,
    n: usize,
    l: usize,
    r: usize,
) -> Cost {
    let subspace = hankel::subspace_cost(
        n,
        l,
        settings.forward_backward,
        r,
        settings.decomposition,
        randomized_params(settings),
    );
    let (nf, lf, rf) = (n as f64, l as f64, r as f64);
    let roots = match method {
        Baseline::Esprit => Cost::new(
            4.0 * lf * rf + 8.0 * rf * rf,
            8.0 * lf * rf * rf + 50.0 * rf.powi(3),
        ),
        Baseline::Pencil => Cost::new(
            3.0 * lf * rf + 2.0 * rf * rf,
            4.0 * lf * rf * rf + 25.0 * rf.powi(3),
        ),
        Baseline::Music => music::root_cost(l, r),
    };
    let fit = Cost::new(8.0 * nf * rf, 20.0 * nf * rf * rf);
    subspace.then(roots).then(fit)
}

/// [`Error::TooLarge`] at once when the estimate with `r` components is past the limits of
/// [`crate::kernels::budget`] (1 GiB of working memory, 2^38 multiply–adds per step).
fn check_budget(
    method: Baseline,
    settings: &SubspaceSettings,
    n: usize,
    l: usize,
    r: usize,
) -> Result<()> {
    estimate_cost(method, settings, n, l, r).check(
        method.name(),
        || format!("the signal subspace of order {r} with a window of {l} rows (N = {n} samples)"),
        TOO_LARGE_ADVICE,
    )
}

/// The singular values of the `rows`-row forward Hankel matrix, from the analysis (computed at most
/// once per estimate), after the budget check.
fn singular_values(method: Baseline, analysis: &mut HankelAnalysis, rows: usize) -> Result<&[f64]> {
    let n = analysis.len();
    HankelAnalysis::svd_cost(n, rows).check(
        method.name(),
        || format!("the order estimate's Hankel matrix of {rows} rows (N = {n} samples)"),
        "lower order_window, or give the model order (order)",
    )?;
    Ok(analysis.svd(rows)?.singular_values())
}

/// The model order for the record of `analysis` with window `l` (see [`OrderSelection`] and the
/// `order` module docs).
fn choose_order(
    method: Baseline,
    selection: OrderSelection,
    settings: &SubspaceSettings,
    analysis: &mut HankelAnalysis,
    l: usize,
    identifiable: usize,
) -> Result<ModelOrder> {
    let n = analysis.len();
    if let OrderSelection::Given(r) = selection {
        if r > identifiable {
            return Err(Error::InvalidSetting {
                name: "order",
                value: format!("{r} (window L = {l}, N = {n} coefficients)"),
                rule:
                    "the model order r must satisfy r ≤ min(L − 1, N − L + 1): a signal subspace \
                       of dimension r needs r + 1 rows for its shift invariance and r columns; at \
                       most ⌊N/2⌋ spikes are identifiable from N coefficients (default window \
                       L = ⌊N/2⌋ + 1)",
            });
        }
        return Ok(ModelOrder {
            order: r,
            method: OrderMethod::Given,
        });
    }
    // Rank windows: the full window for the numerical rank, ⌈N/3⌉ rows for MDL/AIC (see
    // `SubspaceSettings::order_window`), both capped.
    let rank_rows = l.min(settings.order_window).max(2);
    let stat_rows = n.div_ceil(3).min(settings.order_window).max(2);
    let kmax = |rows: usize| {
        identifiable
            .min(rows - 1)
            .min(settings.max_order.unwrap_or(usize::MAX))
    };
    let rank = |sv: &[f64], rel_tol: f64| ModelOrder {
        order: numerical_rank(sv, rel_tol, kmax(rank_rows)),
        method: OrderMethod::NumericalRank,
    };
    let criterion = |sv: &[f64], method: OrderMethod| {
        let snapshots = n - stat_rows + 1;
        let lambda: Vec<f64> = sv.iter().map(|s| s * s / snapshots as f64).collect();
        let order = if method == OrderMethod::Aic {
            aic(&lambda, snapshots, kmax(stat_rows))
        } else {
            mdl(&lambda, snapshots, kmax(stat_rows))
        };
        ModelOrder { order, method }
    };
    Ok(match selection {
        OrderSelection::NumericalRank { rel_tol } => {
            rank(singular_values(method, analysis, rank_rows)?, rel_tol)
        }
        OrderSelection::Aic => criterion(
            singular_values(method, analysis, stat_rows)?,
            OrderMethod::Aic,
        ),
        OrderSelection::Mdl => criterion(
            singular_values(method, analysis, stat_rows)?,
            OrderMethod::Mdl,
        ),
        // `Given` has returned above.
        OrderSelection::Auto | OrderSelection::Given(_) => {
            let sv = singular_values(method, analysis, rank_rows)?;
            if looks_exact(sv) {
                rank(sv, DEFAULT_RANK_TOLERANCE)
            } else if stat_rows == rank_rows {
                criterion(sv, OrderMethod::Mdl)
            } else {
                criterion(
                    singular_values(method, analysis, stat_rows)?,
                    OrderMethod::Mdl,
                )
            }
        }
    })
}

/// Position `τ = −arg(z)/(2π)` wrapped to `[0, 1)` of a signal root `z = exp(−i2πτ)`.
fn position(z: c64) -> f64 {
    wrap(-z.arg() / (2.0 * PI))
}

/// The whole estimate: subspace, positions by the method, amplitudes, optional polish, diagnostics.
pub(crate) fn run(
    method: Baseline,
    settings: &SubspaceSettings,
    data: &Measurements,
) -> Result<Estimate> {
    let mut prepared = prepare(method, settings, data)?;
    let (positions, power_iterations) = match &prepared.subspace {
        None => (Vec::new(), 0),
        Some(sub) => {
            let u = sub.basis.as_ref();
            let z = match method {
                Baseline::Esprit => esprit::tls_esprit(u)?,
                Baseline::Pencil => pencil::pencil_eigenvalues(u)?,
                Baseline::Music => music::root_music(u)?,
            };
            if z.iter().any(|v| !(v.re.is_finite() && v.im.is_finite())) {
                return Err(Error::Numerical {
                    step: "subspace eigenvalues",
                    detail: format!(
                        "{} produced a non-finite eigenvalue: the signal subspace is degenerate \
                         (is the model order too high for these data?)",
                        method.name()
                    ),
                });
            }
            (z.into_iter().map(position).collect(), sub.power_iterations)
        }
    };
    // The noise-level estimate reuses the singular values of the order choice when its window is
    // the same (records of 766 samples or more with the default settings).
    let shared = Some(&mut prepared.analysis);
    let (sigma, sigma_method) = match crate::noise::resolve_noise_with(data, settings.noise, shared)
    {
        Ok(level) => level,
        // Too short a record to estimate σ: no noise assessment and no pruning (both optional).
        Err(Error::RunTooShort { .. }) => (None, None),
        Err(e) => return Err(e),
    };
    let estimated = sigma_method.is_some();
    // An order chosen by a statistical criterion can be over-estimated; a given or numerical-rank
    // order is kept as it is.
    let statistical = matches!(prepared.order.method, OrderMethod::Mdl | OrderMethod::Aic);
    let mut refine_steps = 0;
    let spikes = match sigma {
        // With noise, components the noise cannot support (an over-estimated order) are dropped by
        // the shared post-processing: 4σ amplitude floor and significance test of close spikes.
        Some(_) if settings.prune && statistical => PostProcess::default()
            .with_refine(settings.refine)
            .apply(data, &positions, sigma)?,
        _ => {
            let mut spikes = lstsq::fit(data, &positions)?;
            if let Some(rs) = settings.refine {
                let refined = refine(data, &spikes, rs)?;
                spikes = refined.spikes;
                refine_steps = refined.iterations;
            }
            spikes
        }
    };
    let pruned =
        (spikes.len() < prepared.order.order && statistical).then_some(Warning::OrderPruned {
            estimated: prepared.order.order,
            kept: spikes.len(),
        });
    let mut diagnostics = Diagnostics::builder(data, &spikes)
        .warnings(pruned)
        .iterations(power_iterations + refine_steps)
        .model_order(prepared.order)
        .noise(sigma, estimated);
    diagnostics.sigma_method = sigma_method;
    diagnostics.solve_seconds = prepared.start.elapsed().as_secs_f64();
    Ok(Estimate {
        method: method.name(),
        spikes,
        status: Status::Solved,
        diagnostics,
        dual: None,
    })
}

#[cfg(test)]
mod tests;
