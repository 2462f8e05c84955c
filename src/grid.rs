//! ℓ1-regularised least squares on a fine grid, then a continuous refinement (method name `grid`).
//!
//! # The problem
//!
//! The torus is cut into `M = oversample · N` grid points `t_m = m/M` (`N` the band length, so
//! `oversample` points per `1/N`), and the LASSO / basis-pursuit denoising problem
//!
//! ```text
//!   min_{x ∈ C^M}  P(x) = ½‖y − Ax‖₂² + λ‖x‖₁,      (Ax)_k = Σ_m x_m exp(−i2πk m/M),  k ∈ K,
//! ```
//!
//! is solved over complex grid amplitudes (Tibshirani 1996, J. R. Stat. Soc. B 58(1); Chen, Donoho &
//! Saunders 1998, SIAM J. Sci. Comput. 20(1)). Its solution is a spike train on the grid; each true
//! off-grid spike shows up as a short cluster of neighbouring grid spikes (basis mismatch: Chi, Scharf,
//! Pezeshki & Calderbank 2011, IEEE TSP 59(5)), which the continuous step turns into one spike.
//!
//! # The operators
//!
//! `A` is never formed. Since `exp(−i2πkm/M)` depends only on `k mod M`, `(Ax)_k` is bin `k mod M` of
//! the length-`M` forward DFT `X_j = Σ_m x_m exp(−i2πjm/M)` (one FFT), and the adjoint
//! `(A*r)_m = Σ_{k∈K} r_k exp(+i2πkm/M)` is one unnormalised inverse FFT of `r` placed at the bins
//! `k mod M`. Because `M ≥ N`, the indices of a band of `N` consecutive integers fall in distinct bins.
//! Memory is `O(M)`: seven complex vectors of length `M` (iterate, previous iterate, extrapolated
//! point, their three correlations `A*r`, FFT scratch) and the FFT plans, about 3.7 MiB at `N = 4096`,
//! oversample 8; no `|K| × M` matrix.
//!
//! **Lipschitz constant.** For `k, l ∈ K`,
//! `(AA*)_{kl} = Σ_{m=0}^{M−1} exp(−i2π(k − l)m/M) = M·[k ≡ l mod M] = M·δ_{kl}`
//! (a geometric sum over the `M`-th roots of unity; the bins are distinct), so `AA* = M·I_{|K|}` for the
//! full band and for any measured subset of it. Hence `‖A‖² = ‖AA*‖ = M`, and the gradient
//! `∇_x ½‖y − Ax‖² = −A*(y − Ax)` is Lipschitz with constant exactly `L = M`; the step is `1/M`.
//!
//! # The solver
//!
//! FISTA (Beck & Teboulle 2009, SIAM J. Imaging Sci. 2(1), §4): a proximal gradient step from the
//! extrapolated point `z`,
//! `x⁺ = S_{λ/L}(z + A*(y − Az)/L)` with the complex soft threshold `S_τ(v) = v·max(0, 1 − τ/|v|)`
//! (the proximal map of `τ|·|` on `C`), then `t⁺ = (1 + √(1 + 4t²))/2`, `z⁺ = x⁺ + ((t − 1)/t⁺)(x⁺ − x)`;
//! with the adaptive gradient restart of O'Donoghue & Candès (2015, Found. Comput. Math. 15(3)): when
//! `Re⟨z − x⁺, x⁺ − x⟩ > 0` the momentum is reset (`t = 1`, `z = x⁺`). By linearity
//! `A*(y − Az⁺) = c⁺ + β(c⁺ − c)` with `c = A*(y − Ax)`, so each iteration costs exactly two FFTs of
//! length `M` (one forward for `Ax⁺`, one adjoint for `c⁺`) and yields the duality gap at `x⁺` for free.
//!
//! **Duality-gap stop.** The dual of the problem is `max_θ D(θ) = Re⟨y, θ⟩ − ½‖θ‖²` subject to
//! `‖A*θ‖_∞ ≤ λ`, and `P(x) ≥ D(θ)` for every feasible `θ` (Fenchel duality for `½‖·‖² + λ‖·‖₁`). At each
//! iterate the residual is scaled into the dual feasible set, `θ = r·min(1, λ/‖A*r‖_∞)`, `r = y − Ax`
//! (the dual scaling of Kim, Koh, Lustig, Boyd & Gorinevsky 2007, IEEE J. Sel. Top. Signal Process. 1(4),
//! §III); at the optimum `θ = r`. The solve is [`Status::Solved`] only when
//! `P(x) − D(θ) ≤ tolerance · P(x)`; otherwise it reports [`Status::IterationLimit`] with the last iterate.
//!
//! # The weight λ
//!
//! For noise `n` with `E|n_k|² = σ²` (complex white Gaussian), every `(A*n)_m` is complex Gaussian with
//! `E|(A*n)_m|² = |K|σ²`, so `|(A*n)_m|²/(|K|σ²)` is exponential with mean 1 and, by the union bound over
//! the `M` grid points,
//!
//! ```text
//!   P( ‖A*n‖_∞ > η σ √(|K| ln M) ) ≤ M · exp(−η² ln M) = M^{1 − η²}.
//! ```
//!
//! The noise term `λ_n = η σ √(|K| ln M)` with `η = 1.5` (the multiplier of [`crate::Ast`]; common
//! practice, same scaling as the atomic-norm bound of Bhaskar, Tang & Recht 2013, IEEE TSP 61(23)) keeps
//! pure noise at `x = 0` with probability at least `1 − M^{−1.25}`: with `λ ≥ ‖A*n‖_∞`, zero is the LASSO
//! solution for `y = n`. A spike is then visible when `|a_j| |K| ≳ λ`, i.e. `|a_j| ≳ ησ √(ln M / |K|)`.
//! `σ` is given ([`NoiseLevel::Known`]) or estimated ([`crate::noise::estimate_sigma`]).
//!
//! **Grid mismatch.** An off-grid spike is not a combination of grid atoms: in the centred frame
//! (`k' = k − k_c`, `|k'| ≤ N/2`, a common phase per atom that complex weights absorb) the linear
//! interpolation of `exp(−i2πk'τ)` between its grid neighbours `h = 1/M` apart errs by at most
//! `(2πk'h)²/8 ≤ (π/oversample)²/8` per coefficient (the remainder of linear interpolation,
//! `|f''| h²/8`). The residual such a spike leaves therefore correlates with any atom by up to
//! `ρ₀ = (π/oversample)²/8` times its own peak `|a_j||K|` (1.9 % at oversample 8). A weight below that
//! makes the LASSO fit the mismatch with extra grid spikes around every strong line (seen on the
//! reference cases with `λ = 10⁻³‖A*y‖_∞`: spurious spikes in 14 of 23 exact cases); so
//!
//! ```text
//!   λ = max( η σ √(|K| ln M),  ρ ‖A*y‖_∞ ),      ρ = 1.5 ρ₀ by default (`mismatch_fraction`),
//! ```
//!
//! and for exact data (`σ = 0`, or an estimate at rounding level) only the second term remains: a small
//! weight relative to the largest correlation, far below `‖A*y‖_∞` (where the solution would be zero).
//! The price: in the first round a spike weaker than about `ρ` times the strongest (−31 dB at
//! oversample 8, −43 dB at 16) can be missed; the residual rounds below recover it.
//!
//! # The continuous step
//!
//! Nonzero grid points are grouped into clusters of neighbours (runs of the grid, circularly, bridging
//! gaps of at most `cluster_gap` empty grid points); each cluster becomes one candidate at the
//! amplitude-weighted circular mean of its points, `t = (m₀ + Σ w_m (m − m₀)/Σ w_m)/M`, `w_m = |x_m|`.
//! The candidates go through the shared post-processing ([`PostProcess`]: merge, least-squares
//! amplitudes, noise floor, Levenberg–Marquardt polish on the exact model, [`crate::refine`]), which
//! removes the grid bias: positions of exact data come out at rounding level.
//!
//! **Residual rounds.** The mismatch part of `λ` hides spikes weaker than about `ρ` times the
//! strongest. Once the strong spikes are placed off the grid and polished, their mismatch is gone from
//! the residual `y − Fμ̂`; a further LASSO round on the residual, with `λ` recomputed from it, then sees
//! the weak ones, and its clusters at least `0.5/fc` from every spike already placed (closer in, the
//! residual holds the strong spikes' leftover misfit) join the candidates for a new post-processing of
//! the data. A round's result is kept only if it adds a spike and lowers the residual. Rounds stop at
//! `rounds` (default 3), when the residual is at rounding level (`10⁻¹⁰‖y‖`, exact data), when a round
//! finds no new cluster (for noisy data: the residual's correlation is below the noise weight), or when
//! a round's result is not kept. A weak spike within `0.5/fc` of a much stronger one stays hidden.
//! The reported objective is that of the first round; iterations are summed over the rounds, and any
//! round stopped by the iteration limit makes the estimate's status [`Status::IterationLimit`].
//!
//! ## References
//! - A. Beck, M. Teboulle, "A fast iterative shrinkage-thresholding algorithm for linear inverse
//!   problems", SIAM J. Imaging Sci. 2(1), 183–202, 2009. doi:10.1137/080716542
//! - B. O'Donoghue, E. Candès, "Adaptive restart for accelerated gradient schemes", Found. Comput. Math.
//!   15(3), 715–732, 2015. doi:10.1007/s10208-013-9150-3
//! - Y. Chi, L. L. Scharf, A. Pezeshki, A. R. Calderbank, "Sensitivity to basis mismatch in compressed
//!   sensing", IEEE Trans. Signal Process. 59(5), 2182–2195, 2011. doi:10.1109/TSP.2011.2112650
//! - S.-J. Kim, K. Koh, M. Lustig, S. Boyd, D. Gorinevsky, "An interior-point method for large-scale
//!   ℓ1-regularized least squares", IEEE J. Sel. Top. Signal Process. 1(4), 606–617, 2007.
//! - B. N. Bhaskar, G. Tang, B. Recht, "Atomic norm denoising with applications to line spectral
//!   estimation", IEEE Trans. Signal Process. 61(23), 5987–5999, 2013.
//!
//! (DOIs and section numbers recalled from memory.)
//!
//! # Examples
//! ```
//! use finespike::grid::GridL1;
//! use finespike::{Estimator, Scenario, Status};
//! // An invented scene: 4 spikes at fc = 32, 2/fc apart, 30 dB.
//! let sample = Scenario::new(32, 4).with_separation(2.0).with_snr_db(30.0).with_seed(3).generate()?;
//! let est = GridL1::with_sigma(sample.sigma).estimate(&sample.data)?;
//! assert_eq!(est.status, Status::Solved);
//! assert_eq!(est.spikes.len(), 4);
//! # Ok::<(), finespike::Error>(())
//! ```

use crate::continuous::kernel::MAX_GRID;
use crate::continuous::resolve_sigma;
use crate::error::{check, Error, Result};
use crate::estimator::{Diagnostics, Estimate, Estimator, NoiseLevel, Status, Warning};
use crate::model::{wrap, wrap_distance, Measurements, Spikes};
use crate::postprocess::PostProcess;
use num_complex::Complex64;
use rustfft::{Fft, FftPlanner};
use std::fmt;
use std::sync::Arc;
use std::time::Instant;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// Residual norm, relative to `‖y‖`, at which a fit to exact data is complete (rounding level; as
/// [`crate::greedy`]).
const EXACT_STOP: f64 = 1e-10;

/// Residual rounds ignore clusters closer than this many Rayleigh lengths to a spike already placed
/// (half the main lobe width `2/N ≈ 1/fc` of the Dirichlet kernel).
const ROUND_EXCLUSION_FC: f64 = 0.5;

/// Largest relative residual `‖y − Fμ̂‖/‖y‖` of an exact-data estimate reported as solved: well
/// above the polish's rounding level (~1e-12 on the test scenes), far below any misfit of a
/// missing or misplaced spike.
const EXACT_FIT: f64 = 1e-6;

/// Settings of the grid ℓ1 estimator; the defaults work for the demo and test problems.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridSettings {
    /// Grid points per band coefficient, i.e. per `1/N` (default 8): `M = oversample · N`.
    pub oversample: usize,
    /// FISTA iteration limit (default 20 000).
    pub max_iter: usize,
    /// Relative duality gap `(P − D)/P` at which the solve is complete (default 1e-6).
    pub tolerance: f64,
    /// Multiplier `η` of the noise-based weight `λ = ησ√(|K| ln M)` (default 1.5; module docs).
    pub eta: f64,
    /// Grid-mismatch part of the weight, `λ ≥ ρ‖A*y‖_∞` (default `None`: `ρ = 1.5 (π/oversample)²/8`;
    /// module docs).
    pub mismatch_fraction: Option<f64>,
    /// Empty grid points bridged inside one cluster (default 2; at most `oversample / 2` is used).
    pub cluster_gap: usize,
    /// LASSO rounds: the first on the data, each further one on the residual of the spikes found so
    /// far, with the weight recomputed from it (default 3; module docs).
    pub rounds: usize,
    /// Merging, amplitude floor and least-squares polish of the cluster positions.
    pub postprocess: PostProcess,
}

impl Default for GridSettings {
    fn default() -> Self {
        GridSettings {
            oversample: 8,
            max_iter: 20_000,
            tolerance: 1e-6,
            eta: 1.5,
            mismatch_fraction: None,
            cluster_gap: 2,
            rounds: 3,
            postprocess: PostProcess::default(),
        }
    }
}

impl GridSettings {
    /// Set the grid oversampling (points per `1/N`), in `2..=64`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_oversample(mut self, oversample: usize) -> Result<Self> {
        self.oversample = check::that(
            "oversample",
            oversample,
            (2..=64).contains(&oversample),
            "must lie in 2..=64",
        )?;
        Ok(self)
    }

    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: usize) -> Result<Self> {
        check::iterations("max_iter", max_iter)?;
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the relative duality-gap tolerance, in `[1e-14, 0.1]`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        check::that(
            "tolerance",
            tolerance,
            (1e-14..=0.1).contains(&tolerance),
            "must lie in [1e-14, 0.1]",
        )?;
        self.tolerance = tolerance;
        Ok(self)
    }

    /// Set the weight multiplier `η` (positive, finite).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] otherwise.
    pub fn with_eta(mut self, eta: f64) -> Result<Self> {
        check::that(
            "eta",
            eta,
            eta.is_finite() && eta > 0.0,
            "must be positive and finite",
        )?;
        self.eta = eta;
        Ok(self)
    }

    /// Set the grid-mismatch fraction `ρ` of the weight, in `(0, 1)`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_mismatch_fraction(mut self, fraction: f64) -> Result<Self> {
        check::that(
            "mismatch_fraction",
            fraction,
            fraction > 0.0 && fraction < 1.0,
            "must lie in (0, 1)",
        )?;
        self.mismatch_fraction = Some(fraction);
        Ok(self)
    }

    /// The fraction `ρ` in use: the one set, or `1.5 (π/oversample)²/8` (module docs).
    pub fn effective_mismatch_fraction(&self) -> f64 {
        self.mismatch_fraction.unwrap_or_else(|| {
            let r = std::f64::consts::PI / self.oversample as f64;
            1.5 * r * r / 8.0
        })
    }

    /// Set the number of empty grid points bridged inside a cluster, at most `oversample / 2` (a
    /// cluster must stay narrower than the main lobe `1/N` of one spike).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] above that.
    pub fn with_cluster_gap(mut self, gap: usize) -> Result<Self> {
        self.cluster_gap = check::that(
            "cluster_gap",
            gap,
            gap <= self.oversample / 2,
            "must be at most oversample / 2 grid points",
        )?;
        Ok(self)
    }

    /// Set the number of LASSO rounds, in `1..=10`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_rounds(mut self, rounds: usize) -> Result<Self> {
        self.rounds = check::that(
            "rounds",
            rounds,
            (1..=10).contains(&rounds),
            "must lie in 1..=10",
        )?;
        Ok(self)
    }

    /// Check settings written directly into the public fields against the rules of the setters
    /// (`cluster_gap` is used up to `oversample / 2`, so any value passes).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for the first field that breaks its rule.
    pub fn validated(&self) -> Result<Self> {
        let s = GridSettings::default()
            .with_oversample(self.oversample)?
            .with_max_iter(self.max_iter)?
            .with_tolerance(self.tolerance)?
            .with_eta(self.eta)?
            .with_rounds(self.rounds)?;
        if let Some(f) = self.mismatch_fraction {
            s.with_mismatch_fraction(f)?;
        }
        Ok(*self)
    }

    /// Set the post-processing.
    pub fn with_postprocess(mut self, postprocess: PostProcess) -> Self {
        self.postprocess = postprocess;
        self
    }
}

/// The grid operator `A: C^M → C^K`, `(Ax)_k = Σ_m x_m exp(−i2πkm/M)`, and its adjoint, by FFTs of
/// length `M` (module docs).
#[derive(Clone)]
pub struct GridOperator {
    grid_len: usize,
    bins: Vec<usize>,
    forward: Arc<dyn Fft<f64>>,
    inverse: Arc<dyn Fft<f64>>,
    scratch_len: usize,
}

impl fmt::Debug for GridOperator {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("GridOperator")
            .field("grid_len", &self.grid_len)
            .field("measured", &self.bins.len())
            .finish()
    }
}

impl GridOperator {
    /// The operator for the measured indices of `data` on a grid of `grid_len` points.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] when `grid_len` is below the band length `N` (the indices would alias)
    /// or above 2^26 points (1 GiB per vector).
    pub fn new(data: &Measurements, grid_len: usize) -> Result<Self> {
        if grid_len < data.band_len() || grid_len > MAX_GRID {
            return Err(Error::invalid(
                "grid_len",
                grid_len,
                "the grid needs at least as many points as the band has coefficients, and at most 2^26",
            ));
        }
        let m = grid_len as i64;
        let bins = data
            .indices()
            .iter()
            .map(|&k| k.rem_euclid(m) as usize)
            .collect();
        let mut planner = FftPlanner::new();
        let forward = planner.plan_fft_forward(grid_len);
        let inverse = planner.plan_fft_inverse(grid_len);
        let scratch_len = forward
            .get_inplace_scratch_len()
            .max(inverse.get_inplace_scratch_len());
        Ok(GridOperator {
            grid_len,
            bins,
            forward,
            inverse,
            scratch_len,
        })
    }

    /// Number of grid points `M`.
    pub fn grid_len(&self) -> usize {
        self.grid_len
    }

    /// Number of measured coefficients `|K|`.
    pub fn measured(&self) -> usize {
        self.bins.len()
    }

    /// `‖A‖² = M`, the Lipschitz constant of the gradient of `½‖y − Ax‖²` (module docs: `AA* = M·I`).
    pub fn lipschitz(&self) -> f64 {
        self.grid_len as f64
    }

    /// Position `m/M` of grid point `m`.
    pub fn position(&self, m: usize) -> f64 {
        m as f64 / self.grid_len as f64
    }

    fn check(&self, what: &'static str, len: usize, expected: usize) -> Result<()> {
        if len == expected {
            Ok(())
        } else {
            Err(Error::LengthMismatch {
                what,
                left: len,
                right: expected,
            })
        }
    }

    /// `Ax`: the values at the measured indices, in the order of [`Measurements::indices`].
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] unless `x` has `M` entries.
    pub fn apply(&self, x: &[Complex64]) -> Result<Vec<Complex64>> {
        self.check("grid amplitudes against the grid", x.len(), self.grid_len)?;
        let mut buf = x.to_vec();
        let mut scratch = vec![ZERO; self.scratch_len];
        let mut out = vec![ZERO; self.bins.len()];
        self.apply_into(&mut buf, &mut scratch, &mut out);
        Ok(out)
    }

    /// `A*r = (Σ_k r_k exp(i2πkm/M))_m`, for `r` in the order of [`Measurements::indices`].
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] unless `r` has `|K|` entries.
    pub fn adjoint(&self, r: &[Complex64]) -> Result<Vec<Complex64>> {
        self.check("values against the measured set", r.len(), self.bins.len())?;
        let mut buf = vec![ZERO; self.grid_len];
        let mut scratch = vec![ZERO; self.scratch_len];
        self.adjoint_into(r, &mut buf, &mut scratch);
        Ok(buf)
    }

    /// `out = Ax`; `buf` holds `x` on entry and is overwritten.
    fn apply_into(&self, buf: &mut [Complex64], scratch: &mut [Complex64], out: &mut [Complex64]) {
        // rustfft's forward transform is X_j = Σ_m x_m exp(−i2πjm/M).
        self.forward.process_with_scratch(buf, scratch);
        for (o, &b) in out.iter_mut().zip(&self.bins) {
            *o = buf[b];
        }
    }

    /// `buf = A*r`.
    fn adjoint_into(&self, r: &[Complex64], buf: &mut [Complex64], scratch: &mut [Complex64]) {
        buf.fill(ZERO);
        for (&v, &b) in r.iter().zip(&self.bins) {
            buf[b] = v;
        }
        // rustfft's inverse transform is the unnormalised Σ_j X_j exp(+i2πjm/M).
        self.inverse.process_with_scratch(buf, scratch);
    }
}

/// The LASSO solution on the grid, before the continuous step.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct GridSolution {
    /// Number of grid points `M`.
    pub grid_len: usize,
    /// Nonzero grid amplitudes `(m, x_m)`, ascending in `m` (position `m/M`).
    pub support: Vec<(usize, Complex64)>,
    /// The weight `λ` used, in data units.
    pub lambda: f64,
    /// Primal objective `P(x) = ½‖y − Ax‖² + λ‖x‖₁` at the returned point.
    pub objective: f64,
    /// Dual objective `D(θ)` at the scaled residual: a lower bound on the optimal value.
    pub dual_objective: f64,
    /// Relative duality gap `(P − D)/P` at the returned point (0 for zero data).
    pub relative_gap: f64,
    /// FISTA iterations.
    pub iterations: usize,
    /// [`Status::Solved`] when the relative gap reached the tolerance, else [`Status::IterationLimit`].
    pub status: Status,
}

impl GridSolution {
    /// Group the nonzero grid points into clusters (neighbours closer than `gap + 1` grid steps,
    /// circularly) and return, per cluster, the amplitude-weighted circular mean position and the
    /// summed amplitude (module docs).
    pub fn clusters(&self, gap: usize) -> Vec<(f64, Complex64)> {
        let m = self.grid_len;
        let n = self.support.len();
        if n == 0 {
            return Vec::new();
        }
        let step = |a: usize, b: usize| (b + m - a) % m;
        // Start after the widest circular gap, so that no cluster is cut at the end of the grid.
        let mut start = 0;
        if n > 1 {
            let mut widest = 0;
            for i in 0..n {
                let d = step(self.support[i].0, self.support[(i + 1) % n].0);
                if d > widest {
                    widest = d;
                    start = (i + 1) % n;
                }
            }
        }
        let mut out = Vec::new();
        let mut i = 0;
        while i < n {
            let (m0, first) = self.support[(start + i) % n];
            let (mut wsum, mut wofs, mut amp) = (first.norm(), 0.0, first);
            let mut last = m0;
            i += 1;
            while i < n {
                let (mi, xi) = self.support[(start + i) % n];
                if step(last, mi) > gap + 1 {
                    break;
                }
                let w = xi.norm();
                wsum += w;
                wofs += w * step(m0, mi) as f64;
                amp += xi;
                last = mi;
                i += 1;
            }
            let offset = if wsum > 0.0 { wofs / wsum } else { 0.0 };
            out.push((wrap((m0 as f64 + offset) / m as f64), amp));
        }
        out
    }
}

/// Solve the LASSO `min ½‖y − Ax‖² + λ‖x‖₁` on the grid of `settings.oversample · N` points by
/// restarted FISTA with the duality-gap stop (module docs).
///
/// # Errors
/// [`Error::InvalidSetting`] for a `λ` that is not positive and finite, or invalid settings
/// ([`GridSettings::validated`]); [`Error::TooLarge`] for a grid above 2^26 points.
pub fn solve(data: &Measurements, lambda: f64, settings: &GridSettings) -> Result<GridSolution> {
    if !(lambda.is_finite() && lambda > 0.0) {
        return Err(Error::invalid(
            "lambda",
            lambda,
            "must be positive and finite",
        ));
    }
    let settings = settings.validated()?;
    let op = operator(data, settings.oversample)?;
    Ok(fista(&op, data.values(), lambda, &settings))
}

/// The operator on the grid of `oversample · N` points.
fn operator(data: &Measurements, oversample: usize) -> Result<GridOperator> {
    let grid_len = data
        .band_len()
        .checked_mul(oversample)
        .filter(|&g| g <= MAX_GRID)
        .ok_or_else(|| Error::TooLarge {
            method: "grid",
            what: format!(
                "a band of {} coefficients at {oversample} grid points per coefficient",
                data.band_len()
            ),
            needed: "a grid above 2^26 points".into(),
            limit: "2^26 points".into(),
            advice:
                "lower the oversampling, split the record, or use 'esprit', which needs no grid"
                    .into(),
        })?;
    GridOperator::new(data, grid_len)
}

/// Complex soft threshold `S_τ(v) = v·max(0, 1 − τ/|v|)`, and `|S_τ(v)|`. Compares squared moduli
/// (one square root per surviving entry, none per zero).
#[inline]
fn soft(v: Complex64, tau: f64) -> (Complex64, f64) {
    let a2 = v.norm_sqr();
    if a2 <= tau * tau {
        (ZERO, 0.0)
    } else {
        let a = a2.sqrt();
        (v * (1.0 - tau / a), a - tau)
    }
}

/// `max_i |v_i|`.
fn max_modulus(v: &[Complex64]) -> f64 {
    v.iter().map(|z| z.norm_sqr()).fold(0.0, f64::max).sqrt()
}

/// Primal and dual objective at `x` from `r = y − Ax`, `c = A*r` and `‖x‖₁`.
fn objectives(
    y: &[Complex64],
    r: &[Complex64],
    c: &[Complex64],
    l1: f64,
    lambda: f64,
) -> (f64, f64) {
    let rr: f64 = r.iter().map(|v| v.norm_sqr()).sum();
    let primal = 0.5 * rr + lambda * l1;
    let cmax = max_modulus(c);
    let s = if cmax > lambda { lambda / cmax } else { 1.0 };
    // D(θ) = Re⟨y, θ⟩ − ½‖θ‖² at θ = s·r.
    let yr: f64 = y.iter().zip(r).map(|(a, b)| (a.conj() * b).re).sum();
    let dual = s * yr - 0.5 * s * s * rr;
    (primal, dual)
}

fn fista(op: &GridOperator, y: &[Complex64], lambda: f64, settings: &GridSettings) -> GridSolution {
    let m = op.grid_len();
    let step = 1.0 / op.lipschitz();
    let thresh = lambda * step;
    let mut scratch = vec![ZERO; op.scratch_len];
    let mut x = vec![ZERO; m];
    let mut x_new = vec![ZERO; m];
    let mut z = vec![ZERO; m];
    // c = A*(y − Ax) at x; cz at z.
    let mut c = vec![ZERO; m];
    op.adjoint_into(y, &mut c, &mut scratch);
    let mut cz = c.clone();
    let mut c_new = vec![ZERO; m];
    let mut r = y.to_vec();
    let mut t: f64 = 1.0;
    let (mut primal, mut dual) = objectives(y, &r, &c, 0.0, lambda);
    let gap = |p: f64, d: f64| if p > 0.0 { ((p - d) / p).max(0.0) } else { 0.0 };
    let mut iterations = 0;
    while gap(primal, dual) > settings.tolerance && iterations < settings.max_iter {
        iterations += 1;
        // Proximal gradient step from z; x_new doubles as the FFT buffer afterwards.
        let mut l1 = 0.0;
        let mut restart = 0.0;
        for i in 0..m {
            let (v, a) = soft(z[i] + cz[i] * step, thresh);
            l1 += a;
            restart += ((z[i] - v).conj() * (v - x[i])).re;
            x_new[i] = v;
        }
        // r = y − A x_new, c_new = A* r (two FFTs).
        c_new.copy_from_slice(&x_new);
        op.apply_into(&mut c_new, &mut scratch, &mut r);
        for (ri, yi) in r.iter_mut().zip(y) {
            *ri = yi - *ri;
        }
        op.adjoint_into(&r, &mut c_new, &mut scratch);
        (primal, dual) = objectives(y, &r, &c_new, l1, lambda);
        let t_new = (1.0 + (1.0 + 4.0 * t * t).sqrt()) / 2.0;
        let beta = if restart > 0.0 {
            t = 1.0;
            0.0
        } else {
            let b = (t - 1.0) / t_new;
            t = t_new;
            b
        };
        for i in 0..m {
            z[i] = x_new[i] + (x_new[i] - x[i]) * beta;
            cz[i] = c_new[i] + (c_new[i] - c[i]) * beta;
        }
        std::mem::swap(&mut x, &mut x_new);
        std::mem::swap(&mut c, &mut c_new);
    }
    let relative_gap = gap(primal, dual);
    let support = x
        .iter()
        .enumerate()
        .filter(|(_, v)| **v != ZERO)
        .map(|(i, v)| (i, *v))
        .collect();
    GridSolution {
        grid_len: m,
        support,
        lambda,
        objective: primal,
        dual_objective: dual,
        relative_gap,
        iterations,
        status: if relative_gap <= settings.tolerance {
            Status::Solved
        } else {
            Status::IterationLimit
        },
    }
}

/// The grid ℓ1 estimator (method name `grid`; module docs): LASSO on a fine grid by FISTA with a
/// duality-gap stop, clusters of grid spikes turned into off-grid spikes, shared post-processing.
///
/// The estimate's status is [`Status::Solved`] only when every LASSO round reached the relative gap
/// [`GridSettings::tolerance`]; [`Diagnostics::iterations`] sums the FISTA iterations of all rounds and
/// [`Diagnostics::objective`] is the first round's `P(x)` in data units (`Diagnostics` has no field for
/// the gap: [`solve`] returns it, with the grid solution). There is no dual certificate
/// (`Estimate::dual` is `None`): the LASSO's dual is bounded on the grid only.
#[derive(Debug, Clone, Default)]
pub struct GridL1 {
    /// Settings.
    pub settings: GridSettings,
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
}

impl GridL1 {
    /// Exact data: `λ = ρ‖A*y‖_∞` (module docs).
    pub fn exact() -> Self {
        GridL1 {
            settings: GridSettings::default(),
            noise: NoiseLevel::Exact,
        }
    }

    /// Noise of known standard deviation `sigma`: `λ = max(ησ√(|K| ln M), ρ‖A*y‖_∞)`.
    pub fn with_sigma(sigma: f64) -> Self {
        GridL1 {
            settings: GridSettings::default(),
            noise: NoiseLevel::Known(sigma),
        }
    }

    /// Replace the settings.
    pub fn with_settings(mut self, settings: GridSettings) -> Self {
        self.settings = settings;
        self
    }

    /// The weight `λ` for `data` at noise level `sigma` (`None`: exact data), as the estimator uses
    /// it (module docs); 0 for zero data without noise.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for invalid settings ([`GridSettings::validated`]);
    /// [`Error::TooLarge`] for a grid above 2^26 points.
    pub fn lambda(&self, data: &Measurements, sigma: Option<f64>) -> Result<f64> {
        self.settings.validated()?;
        let op = operator(data, self.settings.oversample)?;
        Ok(self.lambda_with(&op, data.values(), sigma))
    }

    /// The weight for values `y` on the measured set of `op`.
    fn lambda_with(&self, op: &GridOperator, y: &[Complex64], sigma: Option<f64>) -> f64 {
        let mut buf = vec![ZERO; op.grid_len()];
        let mut scratch = vec![ZERO; op.scratch_len];
        op.adjoint_into(y, &mut buf, &mut scratch);
        let cmax = max_modulus(&buf);
        let mismatch = self.settings.effective_mismatch_fraction() * cmax;
        let noise = sigma.map_or(0.0, |s| {
            let k = op.measured() as f64;
            let m = op.grid_len() as f64;
            self.settings.eta * s * (k * m.ln()).sqrt()
        });
        noise.max(mismatch)
    }
}

impl Estimator for GridL1 {
    fn name(&self) -> &'static str {
        "grid"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        let start = Instant::now();
        // One complex value against three real unknowns per spike: any position fits it exactly.
        if data.len() < 2 {
            return Err(Error::RunTooShort {
                method: "grid",
                found: data.len(),
                needed: 2,
                advice: "a single sample holds no position information",
            });
        }
        let (sigma, estimated) = resolve_sigma(data, self.noise)?;
        self.settings.validated()?;
        let op = operator(data, self.settings.oversample)?;
        let gap = self.settings.cluster_gap.min(self.settings.oversample / 2);
        let post = &self.settings.postprocess;
        let data_norm = data.norm();
        let mut spikes = Spikes::empty();
        let mut iterations = 0;
        let mut objective = None;
        let mut worst_gap: Option<f64> = None;
        let mut status = Status::Solved;
        // Round 0 analyses the data, later rounds the residual of the spikes found so far.
        for round in 0..self.settings.rounds {
            let r = if round == 0 {
                data.values().to_vec()
            } else {
                data.residual(&spikes)
            };
            let rnorm = r.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
            if rnorm <= EXACT_STOP * data_norm {
                break;
            }
            let lambda = self.lambda_with(&op, &r, sigma);
            if lambda == 0.0 {
                break;
            }
            let sol = fista(&op, &r, lambda, &self.settings);
            iterations += sol.iterations;
            worst_gap = Some(worst_gap.map_or(sol.relative_gap, |g| g.max(sol.relative_gap)));
            if round == 0 {
                objective = Some(sol.objective);
            }
            if !sol.status.is_usable() {
                status = sol.status;
            }
            let found: Vec<f64> = sol.clusters(gap).into_iter().map(|(t, _)| t).collect();
            // Later rounds keep only clusters away from the main lobes of the spikes already placed,
            // where the residual holds their leftover misfit.
            let mut candidates = spikes.positions();
            let new: Vec<f64> = found
                .into_iter()
                .filter(|&t| {
                    candidates
                        .iter()
                        .all(|&p| wrap_distance(p, t) * data.fc() >= ROUND_EXCLUSION_FC)
                })
                .collect();
            if new.is_empty() {
                break;
            }
            candidates.extend(new);
            let next = post.apply(data, &candidates, sigma)?;
            if round > 0 && (next.len() <= spikes.len() || data.residual_norm(&next) >= rnorm) {
                break;
            }
            spikes = next;
        }
        let mut diagnostics = Diagnostics::describe(data, &spikes);
        // Exact data are fitted exactly or the fit is not verified: a residual above
        // `EXACT_FIT · ‖y‖` means the grid's clusters, after merging and polish, do not explain
        // the data (e.g. two lines far below the Rayleigh limit), whatever the LASSO's gap says.
        if sigma.is_none()
            && status == Status::Solved
            && diagnostics.residual_norm > EXACT_FIT * data_norm
        {
            status = Status::ReducedAccuracy;
            diagnostics.warnings.push(Warning::NotConverged { status });
        }
        if !status.is_usable() {
            diagnostics.warnings.push(Warning::NotConverged { status });
        }
        diagnostics.iterations = iterations;
        diagnostics.objective = objective.or(Some(0.0));
        diagnostics.duality_gap = worst_gap;
        diagnostics.assess_noise(data, &spikes, sigma, estimated);
        diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        Ok(Estimate {
            method: self.name(),
            spikes,
            status,
            diagnostics,
            dual: None,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward_matrix, Domain};

    fn pseudo(i: usize, a: f64, b: f64) -> Complex64 {
        Complex64::new((i as f64 * a).sin(), (i as f64 * b).cos())
    }

    /// The FFT operators against the dense oracle `crate::model::forward_matrix` on the grid positions,
    /// for a subsampled one-sided band (time-domain layout) and a grid length that is not a power of 2.
    #[test]
    fn fft_operators_match_the_dense_oracle_and_are_adjoint() {
        let idx: Vec<i64> = (-40..=0).filter(|k| k % 7 != 2).collect();
        let y: Vec<Complex64> = (0..idx.len()).map(|i| pseudo(i, 0.37, 1.1)).collect();
        let data = Measurements::in_band(-40, 0, &idx, &y, Domain::Time).unwrap();
        for grid_len in [41, 41 * 8, 500] {
            let op = GridOperator::new(&data, grid_len).unwrap();
            let positions: Vec<f64> = (0..grid_len).map(|m| op.position(m)).collect();
            let phi = forward_matrix(data.indices(), &positions);
            let x: Vec<Complex64> = (0..grid_len).map(|i| pseudo(i, 0.71, 0.23)).collect();
            let ax = op.apply(&x).unwrap();
            let aty = op.adjoint(&y).unwrap();
            // Dense sums of up to M = 500 unit-modulus terms: rounding ~ M·ε·|x| ≈ 1e-13 at most; the
            // scale of each entry is up to M, so compare relative to it.
            let scale = grid_len as f64;
            for (r, row) in phi.iter().enumerate() {
                let dense: Complex64 = row.iter().zip(&x).map(|(p, v)| p * v).sum();
                assert!((dense - ax[r]).norm() <= 1e-12 * scale, "A, row {r}");
            }
            for (mcol, got) in aty.iter().enumerate() {
                let dense: Complex64 = phi
                    .iter()
                    .zip(&y)
                    .map(|(row, v)| row[mcol].conj() * v)
                    .sum();
                assert!((dense - got).norm() <= 1e-12 * scale, "A*, column {mcol}");
            }
            // ⟨Ax, y⟩ = ⟨x, A*y⟩ with ⟨u, v⟩ = Σ conj(v) u.
            let lhs: Complex64 = ax.iter().zip(&y).map(|(a, b)| b.conj() * a).sum();
            let rhs: Complex64 = x.iter().zip(&aty).map(|(a, b)| b.conj() * a).sum();
            assert!((lhs - rhs).norm() <= 1e-12 * lhs.norm(), "adjointness");
            // AA* = M·I on K: the Lipschitz constant of the module docs.
            let aaty = op.apply(&aty).unwrap();
            for (a, b) in aaty.iter().zip(&y) {
                assert!((a - b * scale).norm() <= 1e-12 * scale);
            }
        }
    }

    #[test]
    fn operator_rejects_bad_sizes() {
        let idx: Vec<i64> = (-4..=4).collect();
        let data =
            Measurements::in_band(-4, 4, &idx, &[Complex64::new(1.0, 0.0); 9], Domain::Fourier)
                .unwrap();
        assert!(GridOperator::new(&data, 8).is_err());
        let op = GridOperator::new(&data, 9).unwrap();
        assert!(op.apply(&[ZERO; 8]).is_err());
        assert!(op.adjoint(&[ZERO; 8]).is_err());
    }

    /// Soft thresholding is the proximal map of τ|·|: S_τ(v) minimises ½|u − v|² + τ|u|.
    #[test]
    fn soft_threshold_is_the_proximal_map() {
        let v = Complex64::new(3.0, -4.0);
        assert_eq!(soft(v, 6.0), (ZERO, 0.0));
        let (s, a) = soft(v, 1.0);
        assert!((s - v * 0.8).norm() < 1e-15 && (a - 4.0).abs() < 1e-15);
        let f = |u: Complex64| 0.5 * (u - v).norm_sqr() + u.norm();
        for d in [1e-4, -1e-4] {
            assert!(f(s) <= f(s + Complex64::new(d, 0.0)));
            assert!(f(s) <= f(s + Complex64::new(0.0, d)));
        }
    }

    #[test]
    fn clusters_join_neighbours_across_the_end_of_the_grid() {
        let one = Complex64::new(1.0, 0.0);
        let sol = GridSolution {
            grid_len: 100,
            support: vec![
                (0, one),
                (1, one * 3.0),
                (50, one),
                (53, one),
                (99, one * 2.0),
            ],
            lambda: 1.0,
            objective: 0.0,
            dual_objective: 0.0,
            relative_gap: 0.0,
            iterations: 0,
            status: Status::Solved,
        };
        let c = sol.clusters(2);
        assert_eq!(c.len(), 2);
        // Cluster {99, 0, 1} with weights 2, 1, 3: offset from 99 = (0·2 + 1·1 + 2·3)/6 = 7/6.
        let wrapped = c
            .iter()
            .find(|(_, a)| (a - one * 6.0).norm() < 1e-12)
            .unwrap();
        assert!((wrapped.0 - wrap((99.0 + 7.0 / 6.0) / 100.0)).abs() < 1e-15);
        let middle = c
            .iter()
            .find(|(_, a)| (a - one * 2.0).norm() < 1e-12)
            .unwrap();
        assert!((middle.0 - 0.515).abs() < 1e-15);
        assert_eq!(sol.clusters(1).len(), 3);
    }
}
