//! Noise-level estimation from the data, for when `σ` (`E|n_k|² = σ²`) is not known.
//!
//! # Subspace estimate ([`estimate_sigma`])
//!
//! On a contiguous run `y_{k0}, …, y_{k0+R−1}` the `L × P` Hankel matrix `H_{ab} = y_{k0+a+b}`
//! (`P = R − L + 1`) is `H = S + N`: `S` has rank `s` (one Vandermonde column per spike) and `N_{ab} =
//! n_{k0+a+b}` is Hankel in the noise. The squared singular values `σ_i²(H)` are `P` times the eigenvalues
//! of the sample covariance `HHᴴ/P` of the `P` sliding snapshots, whose `L − s` smallest eigenvalues
//! estimate `σ²` (Stoica & Moses 2005, *Spectral Analysis of Signals*, ch. 4: the noise-subspace
//! eigenvalues of the covariance of sinusoids in white noise).
//!
//! **Degrees of freedom.** The plain mean of those eigenvalues is biased low (by 3–7 % in σ at `R = 33`,
//! measured), because the signal subspaces, fitted from the same data, absorb part of the noise; the
//! count `(L − s)(P − s)` for a matrix of independent entries over-corrects (+5 to +11 % at `R = 33`,
//! measured), because the Hankel noise is not independent. To first order in `N` the residual of the
//! best rank-`s` approximation is `P⊥_U N P⊥_V` (`U`, `V` the left and right signal subspaces,
//! `P_V = V Vᴴ` acting on the rows), and
//!
//! ```text
//! E Σ_{i>s} σ_i²(H) ≈ E‖P⊥_U N P⊥_V‖²_F = σ² (LP − s(L + P) + Σ_m u_m v_m),
//! u_m = Σ_a (P_U)_{a+m, a},   v_m = Σ_b (P_V)_{b+m, b},   |m| < L,
//! ```
//!
//! since each column and each row of `N` is white (`E‖P_U N‖² = Psσ²`, `E‖N P_V‖² = Lsσ²`) and
//! `E[N_{ab} N̄_{cd}] = σ² δ_{a+b, c+d}` couples the diagonals of the two projectors. For independent
//! entries the last term would be `s²`, giving `(L − s)(P − s)`; the Hankel structure makes it larger.
//! The estimate is therefore
//!
//! ```text
//! σ̂² = Σ_{i>ŝ} σ_i²(H) / (LP − ŝ(L + P) + Re Σ_m u_m v_m),      L = min(⌈R/2⌉, 256),
//! ```
//!
//! with `U`, `V` the leading `ŝ` singular vectors. (This count is derived here, not taken from a paper.)
//!
//! **Order.** The number of signal components `ŝ` is the number of singular values above the
//! median-based hard threshold of Gavish & Donoho (2014, IEEE TIT 60(8), unknown-noise rule
//! `ω(β)·σ_med`, `ω(β) ≈ 0.56β³ − 0.95β² + 1.82β + 1.43`, `β = L/P`; coefficients recalled from the
//! paper), capped at `L − 2`. MDL (Wax & Kailath 1985, IEEE TASSP 33(2)) was tried first and rejected:
//! its likelihood assumes independent snapshots, and on the overlapping snapshots of one Hankel record it
//! overestimates the order in 12 % (`R = 33`) to 25 % (`R = 17`) of draws, pulling `σ̂` down to
//! 0.1–0.3 σ in the worst ones; the median threshold picked the right order in ≥ 97 % of the same draws.
//! The median must fall among noise singular values, so the method needs fewer than about `L/2` spikes;
//! with more, `ŝ` collapses and `σ̂` comes out far too high.
//!
//! **Too many lines.** With more lines than about half the window the median rule fails silently, so
//! the estimate refuses ([`Error::TooManyLinesForNoise`], give σ instead) when either sign of it shows:
//! the spectrum (below) finds more lines above its floor than it can set aside while the subspace set
//! aside fewer; or the singular values left as noise reach far below `σ̂(√P − √L)`, the lower edge of
//! white noise's singular values (Marchenko & Pastur 1967, Math. USSR-Sb. 1(4)), where `P ≥ 2L` makes
//! that edge meaningful, and the spectrum does not put the spread down to coloured noise. Dense
//! invented scenes (256 to 1024 spikes 2/fc apart) gave σ̂ 30 to 180 times too high before.
//!
//! **Window.** `L ≈ R/2` gives the most noise degrees of freedom and the best resolution of close
//! spikes into the signal subspace; `L` is capped at [`MAX_WINDOW`] to keep the SVD cheap for long records
//! (the estimate is then already tight). For a long record the `L × P` matrix is never formed: its
//! singular values come from a QR of `Hᴴ` accumulated block by block, and the right singular vectors'
//! diagonal sums `v_m` from FFT products (memory `O(L² + N)`; 28 MB peak and 3.3 s at
//! `R = 100 000` on the 2-core reference machine). Past the work limit of the kernel layer (about
//! 1.8 million samples) the estimate is refused with [`Error::TooLarge`]: give σ instead. A subspace
//! estimate hands its Hankel analysis to this estimate, so that the singular values are computed once. The spread of `σ̂/σ` from one draw to the next is about 11 % at
//! `R = 33`, 5.5 % at `R = 129` and 2.2 % at `R = 513` (Monte Carlo, 200 draws): a Hankel matrix weights
//! the middle samples most, so fewer than `R` samples' worth of information enters.
//!
//! Singular values of `H` are used, not eigenvalues of `HHᴴ`, so that for exact data the noise singular
//! values stay at rounding level `ε‖H‖` (eigenvalues of `HHᴴ` floor at `ε‖H‖²`, i.e. `σ̂ ≈ √ε‖y‖`).
//!
//! **Gaps.** With gaps in `K` the Hankel matrix keeps only what is measured: its rows are a set of
//! lags `α_0 = 0 < α_1 < … < α_{L−1}` and its columns the starts `β_c` of the fully measured windows,
//! `H_{ac} = y_{kmin + β_c + α_a}` with every `β_c + α_a` in `K`. Any such matrix of a sum of `s`
//! exponentials has rank `s` (each column is `Σ_j a_j z_j^{β_c} (z_j^{α_a})_a`, the same `s`
//! vectors), so exact gapped data are detected as exact by the same rank rule, and the noise
//! singular values estimate `σ²` as above. The lags are chosen greedily: for each largest step
//! `g = 1, …, 4`, from `α = {0}`, each step adds the lag among the next `g` that keeps the most fully
//! measured windows; of all the lag sets met on these paths the one kept has the largest
//! `min(L, P)` (then the largest `LP`), `L ≤ P`, `L ≤` [`MAX_WINDOW`].
//! For a contiguous record this is the ordinary Hankel matrix; with a few per cent of samples missing
//! in short runs the lags stay consecutive and only the windows across a gap are left out; with half
//! of the band missing at random the lags spread out and the matrix is small (`min(L, P)` about
//! `log₂|K|`), enough to detect exact data with fewer spikes than that, but with few noise degrees of
//! freedom. The degrees of freedom follow the derivation above, with the Hankel coupling
//! `E[N_{ac} N̄_{a'c'}] = σ² [α_a + β_c = α_{a'} + β_{c'}]`:
//!
//! ```text
//! dof = LP − ŝ(L + P) + Re Σ_{c,c'} (P_V)_{cc'} u(β_c − β_{c'}),   u(δ) = Σ_{α_{a'} − α_a = δ} (P_U)_{a'a},
//! ```
//!
//! which is the count above for consecutive lags and windows (derived here, checked against it in the
//! tests). At most `2^20/L` windows (the first ones) enter the dense SVD, and only the first 16 384
//! measured samples are searched for windows. A measured set whose best matrix is smaller than `3 × 3`
//! is refused with [`Error::RunTooShort`]. Bands wider than 2^22 indices with gaps fall back to the
//! longest contiguous run.
//!
//! # Coloured noise ([`SigmaEstimate::colour`])
//!
//! The Hankel estimate measures the noise where it is white: the small singular values are those of
//! the sample-to-sample fluctuation. Noise whose spectrum is not flat (red noise: slow wander) puts
//! most of its power at low frequencies, inside the signal subspace, and is then under-estimated (an
//! AR(1) record with `ρ = 0.9` reads at about half its standard deviation). So after the Hankel
//! estimate, unless the data are exact, the noise spectrum of the record is measured
//! ([`crate::kernels::spectrum`]: tapered periodogram on the measured indices, lines standing above a
//! running-median floor set aside, whole-band level `‖r‖²/(|K| − 3s/2)`, loud-to-quiet ratio of 8 parts
//! of the band). When the floor is **not flat** by that module's rule, `σ̂` is the whole-band level
//! ([`SigmaMethod::NoiseFloor`], which keeps the Hankel figure for comparison): the variance of the
//! noise, whatever its colour. When it is flat, the Hankel estimate stands. Either way the figure is
//! reported in [`SigmaEstimate::colour`].
//!
//! # Residual estimate ([`residual_sigma`])
//!
//! For a least-squares fit `μ̂` of `s` spikes to `|K|` complex samples the residual is, to first order,
//! the projection of the noise onto the orthogonal complement of the model's tangent space: `2|K|` real
//! observations of variance `σ²/2` each, `3s` real parameters (position, Re a, Im a) fitted. Hence
//! `E‖y − Fμ̂‖² ≈ (σ²/2)(2|K| − 3s)` and
//!
//! ```text
//! σ̂² = ‖y − Fμ̂‖² / (|K| − 3s/2)
//! ```
//!
//! — the usual `S(θ̂)/(n − p)` of nonlinear least squares with `n = 2|K|` real data and `p = 3s`
//! parameters, in the complex normalisation (Seber & Wild 1989, *Nonlinear Regression*, ch. 2; chapter
//! recalled from memory). Dividing by `|K| − 3s` would count each real parameter as a complex one and
//! overestimate `σ²` by `(|K| − 1.5s)/(|K| − 3s)` (19 % for `|K| = 33`, `s = 3`). The formula needs `μ̂`
//! to be the least-squares fit on its support (e.g. after refinement): a biased fit, such as
//! TV-shrunk amplitudes, inflates `σ̂`.
//!
//! ## References
//! - P. Stoica, R. Moses, *Spectral Analysis of Signals*, Prentice Hall, 2005, ch. 4.
//! - M. Gavish, D. L. Donoho, "The optimal hard threshold for singular values is 4/√3", IEEE Trans.
//!   Inf. Theory 60(8), 5040–5053, 2014. doi:10.1109/TIT.2014.2323359
//! - M. Wax, T. Kailath, "Detection of signals by information theoretic criteria", IEEE Trans. ASSP
//!   33(2), 387–392, 1985.
//! - G. A. F. Seber, C. J. Wild, *Nonlinear Regression*, Wiley, 1989.
//!
//! (Page numbers and DOIs recalled from memory.)

use crate::error::{Error, Result};
use crate::kernels::hankel_svd::{HankelAnalysis, LagSums, DENSE_SVD_ENTRIES};
use crate::kernels::rank::{looks_exact, numerical_rank, DEFAULT_RANK_TOLERANCE};
use crate::kernels::spectrum::noise_spectrum;
use crate::model::{Measurements, Spikes};
use faer::c64;
use serde::Serialize;

/// Shortest contiguous record accepted by [`estimate_sigma`]: with `R = 6`, `L = 3`, `P = 4` and one
/// spike there are about `(L − 1)(P − 1) = 6` complex noise degrees of freedom. A record with gaps needs
/// a Hankel matrix of at least `3 × 3` fully measured entries instead (module docs, "Gaps").
pub const MIN_RUN: usize = 6;

/// Largest Hankel window `L` used by [`estimate_sigma`] (records longer than `2·MAX_WINDOW` use a
/// window of this many rows; up to about `MAX_WINDOW/2` spikes can then be told from the noise).
pub const MAX_WINDOW: usize = 256;

/// How the noise floor varies across the band: the whiteness figure of [`SigmaEstimate`] (module docs,
/// "Coloured noise"; the rule is in `kernels/spectrum.rs`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct NoiseColour {
    /// Level of the loudest eighth of the band over that of the quietest (1 for a perfectly flat
    /// floor).
    pub ratio: f64,
    /// Ratio above which the floor is called not flat at this record length (the white-noise spread
    /// of the figure, at least 2).
    pub threshold: f64,
    /// Centre position (cycles per sample for time records, on `[0, 1)`) of the loudest eighth.
    pub loudest_position: f64,
    /// Centre position of the quietest eighth.
    pub quietest_position: f64,
    /// `ratio ≤ threshold`: the floor is flat and the noise can be taken as white.
    pub white: bool,
}

/// A noise level estimated from the data.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SigmaEstimate {
    /// Estimated `σ` (`E|n_k|² = σ²`).
    pub sigma: f64,
    /// How it was obtained.
    pub method: SigmaMethod,
    /// The whiteness of the noise floor, when it was measured (not for exact data, nor for records too
    /// short to compare parts of the band: fewer than 64 samples or 128 band indices, or bands wider than
    /// 2^22 indices). When `white` is false, `sigma` is the whole-band level
    /// ([`SigmaMethod::NoiseFloor`]) and lines near `loudest_position` sit on more noise than the
    /// average: they are less certain than `sigma` suggests.
    pub colour: Option<NoiseColour>,
}

impl SigmaEstimate {
    /// The whiteness figure when the noise is not white (the case to warn about), else `None`.
    pub fn not_white(&self) -> Option<&NoiseColour> {
        self.colour.as_ref().filter(|c| !c.white)
    }
}

/// Widest band (in indices) for which a record with gaps gets the gapped Hankel matrix and the noise
/// spectrum (both index the band directly: 4 bytes per index).
const MAX_GAPPED_BAND: usize = 1 << 22;

/// Largest step between consecutive lags tried by the gapped layout (module docs, "Gaps").
const MAX_LAG_STEP: usize = 4;

/// Measured samples searched for fully measured windows in a record with gaps.
const MAX_GAPPED_SAMPLES: usize = 16_384;

/// Estimate the noise level `σ` of `data` without a model (module docs): the noise-subspace singular
/// values of a Hankel matrix of the record (of its fully measured windows when it has gaps),
/// `σ̂² = Σ_{i>ŝ} σ_i²(H) / dof`, order `ŝ` by the Gavish–Donoho median threshold (2014); then, unless
/// the data are exact, the noise spectrum: when its floor is not flat, `σ̂` is its whole-band level, so
/// that coloured noise is not under-estimated.
///
/// # Errors
/// [`Error::RunTooShort`] when no Hankel matrix of at least `3 × 3` fully measured entries can be formed
/// (for a contiguous record: fewer than `MIN_RUN` samples); [`Error::TooLarge`] past the work limit;
/// [`Error::Numerical`] if the singular value decomposition fails.
///
/// # Examples
/// ```
/// use finespike::estimate_sigma;
/// use finespike::{AmplitudeKind, Scenario};
/// // An invented scene: 3 spikes, fc = 64, 20 dB.
/// let sample = Scenario::new(64, 3).with_amplitudes(AmplitudeKind::UnitModulus)
///     .with_snr_db(20.0).with_seed(5).generate()?;
/// let est = estimate_sigma(&sample.data)?;
/// // One draw: the spread of σ̂/σ at R = 129 is about 5.5 %.
/// assert!((est.sigma / sample.sigma - 1.0).abs() < 0.25);
/// // White noise: the floor is flat.
/// assert!(est.not_white().is_none());
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn estimate_sigma(data: &Measurements) -> Result<SigmaEstimate> {
    estimate_with(
        data,
        None,
        "fit a model and use noise::residual_sigma instead",
    )
    .map(|e| e.0)
}

/// [`estimate_sigma`], reusing `shared` when it is the Hankel analysis of the whole (contiguous)
/// record; also says whether the data are exact (the rank rule).
fn estimate_with(
    data: &Measurements,
    shared: Option<&mut HankelAnalysis>,
    advice: &'static str,
) -> Result<(SigmaEstimate, bool)> {
    let gapped_ok = data.band_len() <= MAX_GAPPED_BAND;
    let (est, exact, spread) = if data.is_contiguous() || !gapped_ok {
        let (start, run) = checked_run(data, advice)?;
        let mut own;
        // The run is a sub-slice of the data: of the same length as the caller's record, it is
        // that record.
        let analysis = match shared {
            Some(a) if a.len() == run && run == data.len() => a,
            _ => {
                own = HankelAnalysis::new(&data.values()[start..start + run]);
                &mut own
            }
        };
        estimate_on_run(data, start, run, analysis)?
    } else {
        let (est, exact) = gapped_estimate(data, advice)?;
        (est, exact, false)
    };
    // The subspace's order and window, for the refusal below.
    let (components, window) = match est.method {
        SigmaMethod::HankelSubspace { order, window, .. } => (order, window),
        SigmaMethod::GappedHankel { order, rows, .. } => (order, rows),
        _ => (0, 0),
    };
    let too_many = || Err(Error::TooManyLinesForNoise { components, window });
    if exact || !gapped_ok {
        return if spread { too_many() } else { Ok((est, exact)) };
    }
    let Some(spec) = noise_spectrum(data.kmin(), data.band_len(), data.indices(), data.values())
    else {
        return if spread { too_many() } else { Ok((est, false)) };
    };
    // The noise singular values spread far below white noise's edge: lines in the noise subspace,
    // unless the noise is coloured (whose spectrum spreads them too) and the spectrum set aside
    // fewer lines than its cap. Or more lines than the spectrum can set aside, with the Hankel
    // subspace short of as many: both levels are leakage of the lines (a dense exact scene of 1024
    // spikes in 8193 coefficients came out at σ̂ = 32 on unit amplitudes, and sdp then kept 85).
    if (spread && (!spec.coloured() || spec.at_cap))
        || (spec.saturated && components < spec.lines_removed)
    {
        return too_many();
    }
    let colour = NoiseColour {
        ratio: spec.ratio,
        threshold: spec.threshold,
        loudest_position: spec.loudest_position,
        quietest_position: spec.quietest_position,
        white: !spec.coloured(),
    };
    let est = if colour.white {
        SigmaEstimate {
            colour: Some(colour),
            ..est
        }
    } else {
        SigmaEstimate {
            sigma: spec.level,
            method: SigmaMethod::NoiseFloor {
                lines_removed: spec.lines_removed,
                noise_dof: spec.dof,
                white_sigma: est.sigma,
            },
            colour: Some(colour),
        }
    };
    Ok((est, false))
}

/// Start and length of the longest contiguous run, at least [`MIN_RUN`] long.
fn checked_run(data: &Measurements, advice: &'static str) -> Result<(usize, usize)> {
    let (start, run) = longest_run(data.indices());
    if run < MIN_RUN {
        return Err(Error::RunTooShort {
            method: "the noise-level estimate",
            found: run,
            needed: MIN_RUN,
            advice,
        });
    }
    Ok((start, run))
}

/// The Hankel estimate on the run `start..start + run` of `data`, whose Hankel analysis is `analysis`
/// (decompositions it already holds are reused, new ones are kept for the caller), whether the
/// data are exact, and whether the singular values left as noise spread far below the edge of
/// white noise (lines among them; judged by the caller against the spectrum).
fn estimate_on_run(
    data: &Measurements,
    start: usize,
    run: usize,
    analysis: &mut HankelAnalysis,
) -> Result<(SigmaEstimate, bool, bool)> {
    let l = run.div_ceil(2).min(MAX_WINDOW);
    let p = run - l + 1;
    let method = |order: usize, noise_dof: f64| SigmaMethod::HankelSubspace {
        first_index: data.indices()[start],
        run_length: run,
        window: l,
        order,
        noise_dof,
    };
    let done = |sigma: f64, method: SigmaMethod, exact: bool| {
        Ok((
            SigmaEstimate {
                sigma,
                method,
                colour: None,
            },
            exact,
            false,
        ))
    };
    // The analysis divides by the peak modulus, so that squared singular values can neither overflow
    // nor underflow; σ̂ is multiplied back.
    let scale = analysis.scale();
    if scale == 0.0 {
        return done(0.0, method(0, (l * p) as f64), true);
    }
    HankelAnalysis::svd_cost(run, l).check(
        "the noise-level estimate",
        || format!("the {l}-row Hankel matrix of a run of {run} samples"),
        "give the noise level explicitly (sigma; 0 for exact data)",
    )?;
    let sv = analysis.svd(l)?.singular_values().to_vec();
    if looks_exact(&sv) {
        // Exact data: the Hankel matrix has numerical rank below its size, and the singular values
        // beyond it are rounding errors. The median rule would count signal as noise when the rank
        // is more than half the window (many spikes in a short record), so the rank decides.
        let rank = numerical_rank(&sv, DEFAULT_RANK_TOLERANCE, usize::MAX);
        let tail: f64 = sv.iter().skip(rank).map(|s| s * s).sum();
        let dof = (l * p) as f64;
        return done(scale * (tail / dof).sqrt(), method(rank, dof), true);
    }
    let order = gavish_donoho_order(&sv, l, p).min(l - 2);
    let tail: f64 = sv.iter().skip(order).map(|s| s * s).sum();
    let mut spread = false;
    if p >= 2 * l {
        // Noise singular values of an L × P matrix of level σ lie above about σ(√P − √L) (the lower
        // edge of the Marchenko–Pastur law; Marchenko & Pastur 1967, Math. USSR-Sb. 1(4)). Far below
        // it, the values left as noise hold signal: more lines than half the window pulled the
        // median rule's threshold up (ŝ collapses). Measured on invented scenes with a 256-row
        // window: 0.85–0.95 of the edge for 5 to 80 lines from 0 to 30 dB, 0.005 for 256 lines at
        // 20 dB; the cut at a quarter is ours.
        let level = (tail / ((l - order) * (p - order)) as f64).sqrt();
        let edge = level * ((p as f64).sqrt() - (l as f64).sqrt());
        spread = sv.last().is_some_and(|&smallest| smallest < 0.25 * edge);
    }
    let (u, v) = analysis.projector_lag_sums(l, order)?;
    let dof = noise_dof(l, p, order, &u, &v);
    check_dof(dof, order)?;
    let (est, exact, _) = done(scale * (tail / dof).sqrt(), method(order, dof), false)?;
    Ok((est, exact, spread))
}

fn check_dof(dof: f64, order: usize) -> Result<()> {
    if dof.is_nan() || dof <= 0.0 {
        return Err(Error::Numerical {
            step: "noise estimate (degrees of freedom)",
            detail: format!("non-positive noise degrees of freedom {dof} at order {order}"),
        });
    }
    Ok(())
}

/// Lags `α` (rows) and window starts `β` (columns, increasing band positions) of the gapped Hankel
/// matrix of module docs, "Gaps", chosen greedily over the band positions measured (`slot[n]` is the
/// sample at band position `n`, `u32::MAX` where nothing is measured).
fn gapped_layout(slot: &[u32], starts: &[usize]) -> (Vec<usize>, Vec<usize>) {
    let measured = |n: usize| n < slot.len() && slot[n] != u32::MAX;
    let score = |l: usize, p: usize| (l.min(p), l * p);
    let mut best = (vec![0usize], score(1, starts.len()));
    // One greedy path per largest lag step: 1 (consecutive lags, ordinary windows) to 4.
    for step in 1..=MAX_LAG_STEP {
        let mut alpha = vec![0usize];
        let mut cols: Vec<usize> = starts.to_vec();
        while alpha.len() < MAX_WINDOW {
            let last = *alpha.last().unwrap_or(&0);
            let (d, count) = (last + 1..=last + step)
                .map(|d| (d, cols.iter().filter(|&&b| measured(b + d)).count()))
                .fold((0, 0), |a, b| if b.1 > a.1 { b } else { a });
            if count < alpha.len() + 1 {
                break;
            }
            alpha.push(d);
            cols.retain(|&b| measured(b + d));
            let sc = score(alpha.len(), cols.len());
            if sc > best.1 {
                best = (alpha.clone(), sc);
            }
        }
    }
    let alpha = best.0;
    let mut cols: Vec<usize> = starts
        .iter()
        .copied()
        .filter(|&b| alpha.iter().all(|&a| measured(b + a)))
        .collect();
    cols.truncate((DENSE_SVD_ENTRIES / alpha.len()).max(alpha.len()));
    (alpha, cols)
}

/// The Hankel estimate of a record with gaps (module docs, "Gaps") and whether the data are exact.
fn gapped_estimate(data: &Measurements, advice: &'static str) -> Result<(SigmaEstimate, bool)> {
    let kmin = data.kmin();
    let mut slot = vec![u32::MAX; data.band_len()];
    for (i, &k) in data.indices().iter().enumerate() {
        slot[(k - kmin) as usize] = i as u32;
    }
    let starts: Vec<usize> = data
        .indices()
        .iter()
        .take(MAX_GAPPED_SAMPLES)
        .map(|&k| (k - kmin) as usize)
        .collect();
    let (alpha, beta) = gapped_layout(&slot, &starts);
    let (l, p) = (alpha.len(), beta.len());
    if l < 3 || p < 3 {
        return Err(Error::RunTooShort {
            method: "the noise-level estimate",
            found: longest_run(data.indices()).1,
            needed: MIN_RUN,
            advice,
        });
    }
    let y = data.values();
    let scale = y.iter().map(|v| v.norm()).fold(0.0, f64::max);
    let span = *alpha.last().unwrap_or(&0);
    let method = |order: usize, noise_dof: f64| SigmaMethod::GappedHankel {
        rows: l,
        windows: p,
        span,
        order,
        noise_dof,
    };
    let done = |sigma: f64, method: SigmaMethod, exact: bool| {
        Ok((
            SigmaEstimate {
                sigma,
                method,
                colour: None,
            },
            exact,
        ))
    };
    if scale == 0.0 {
        return done(0.0, method(0, (l * p) as f64), true);
    }
    let h = faer::Mat::<c64>::from_fn(l, p, |a, c| {
        let v = y[slot[beta[c] + alpha[a]] as usize] / scale;
        c64::new(v.re, v.im)
    });
    let svd = h.thin_svd().map_err(|e| Error::Numerical {
        step: "gapped Hankel singular value decomposition",
        detail: format!("{e:?}"),
    })?;
    let sv: Vec<f64> = svd.S().column_vector().iter().map(|z| z.re).collect();
    if looks_exact(&sv) {
        let rank = numerical_rank(&sv, DEFAULT_RANK_TOLERANCE, usize::MAX);
        let tail: f64 = sv.iter().skip(rank).map(|s| s * s).sum();
        let dof = (l * p) as f64;
        return done(scale * (tail / dof).sqrt(), method(rank, dof), true);
    }
    let order = gavish_donoho_order(&sv, l, p).min(l - 2);
    let tail: f64 = sv.iter().skip(order).map(|s| s * s).sum();
    let dof = general_noise_dof(svd.U(), svd.V(), order, &alpha, &beta);
    check_dof(dof, order)?;
    done(scale * (tail / dof).sqrt(), method(order, dof), false)
}

/// First-order noise degrees of freedom of the rank-`k` residual of a Hankel matrix with row lags
/// `alpha` and column starts `beta` (both increasing): `LP − k(L + P) + Re Σ_{c,c'} (P_V)_{cc'}
/// u(β_c − β_{c'})`, `u(δ) = Σ_{α_{a'} − α_a = δ} (P_U)_{a'a}` (module docs, "Gaps").
fn general_noise_dof(
    u: faer::MatRef<'_, c64>,
    v: faer::MatRef<'_, c64>,
    k: usize,
    alpha: &[usize],
    beta: &[usize],
) -> f64 {
    let (l, p) = (alpha.len(), beta.len());
    let span = *alpha.last().unwrap_or(&0);
    let proj = |x: faer::MatRef<'_, c64>, i: usize, j: usize| {
        let mut s = c64::new(0.0, 0.0);
        for m in 0..k {
            s += x[(i, m)] * x[(j, m)].conj();
        }
        s
    };
    // u(δ) for δ in −span..=span, stored at δ + span.
    let mut ud = vec![c64::new(0.0, 0.0); 2 * span + 1];
    for ap in 0..l {
        for a in 0..l {
            ud[alpha[ap] + span - alpha[a]] += proj(u, ap, a);
        }
    }
    let mut t = c64::new(0.0, 0.0);
    let mut lo = 0;
    for c in 0..p {
        while beta[lo] + span < beta[c] {
            lo += 1;
        }
        for cp in lo..p {
            if beta[cp] > beta[c] + span {
                break;
            }
            let delta = beta[c] + span - beta[cp];
            t += proj(v, c, cp) * ud[delta];
        }
    }
    (l * p) as f64 - (k * (l + p)) as f64 + t.re
}

/// Number of singular values above the Gavish–Donoho (2014) hard threshold for unknown noise,
/// `ω(β)·median(σ_i)`, `β = L/P ≤ 1`.
fn gavish_donoho_order(sv: &[f64], l: usize, p: usize) -> usize {
    let beta = l as f64 / p as f64;
    let omega = 0.56 * beta.powi(3) - 0.95 * beta * beta + 1.82 * beta + 1.43;
    let mut sorted = sv.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    let median = if n % 2 == 1 {
        sorted[n / 2]
    } else {
        0.5 * (sorted[n / 2 - 1] + sorted[n / 2])
    };
    sv.iter().filter(|&&s| s > omega * median).count()
}

/// First-order noise degrees of freedom of the rank-`k` residual of an `L × P` Hankel matrix:
/// `LP − k(L + P) + Re Σ_m u_m v_m`, `u_m`, `v_m` the diagonal sums of `P_U = U_k U_kᴴ` and
/// `P_V = V_k V_kᴴ` for `|m| < L` (module docs; `u`, `v` hold them for `m ≥ 0` below and above the
/// diagonal).
fn noise_dof(l: usize, p: usize, k: usize, u: &LagSums, v: &LagSums) -> f64 {
    let mut t = c64::new(0.0, 0.0);
    for m in 0..l {
        t += u.lower[m] * v.lower[m];
        if m > 0 {
            t += u.upper[m] * v.upper[m];
        }
    }
    (l * p) as f64 - (k * (l + p)) as f64 + t.re
}

/// Start (position in `indices`) and length of the longest run of consecutive indices.
fn longest_run(indices: &[i64]) -> (usize, usize) {
    let mut best = (0, 0);
    let mut start = 0;
    for i in 0..indices.len() {
        if i > 0 && indices[i] != indices[i - 1] + 1 {
            start = i;
        }
        if i + 1 - start > best.1 {
            best = (start, i + 1 - start);
        }
    }
    best
}

/// Noise level from the residual of a fitted model: `σ̂² = ‖y − Fμ̂‖² / (|K| − 3s/2)` (module docs:
/// `2|K|` real data, `3s` real parameters; Seber & Wild 1989). `μ̂` should be the least-squares fit.
///
/// Returns `None` when the fit leaves no degrees of freedom (`3s ≥ 2|K|`).
///
/// # Examples
/// ```
/// use finespike::residual_sigma;
/// use finespike::{Measurements, Spikes};
/// use num_complex::Complex64;
/// let data = Measurements::fourier(1, &[-1, 0, 1], &[Complex64::new(1.0, 0.0); 3])?;
/// // No model: σ̂² = ‖y‖²/|K| = 1.
/// assert_eq!(residual_sigma(&data, &Spikes::empty()), Some(1.0));
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn residual_sigma(data: &Measurements, spikes: &Spikes) -> Option<f64> {
    let real_dof = 2 * data.len();
    let params = 3 * spikes.len();
    if params >= real_dof {
        return None;
    }
    let r2: f64 = data.residual(spikes).iter().map(|r| r.norm_sqr()).sum();
    Some((2.0 * r2 / (real_dof - params) as f64).sqrt())
}

/// The noise level an estimator works with, `(σ, estimated?)`; `σ = None` means exact data.
///
/// [`NoiseLevel::Exact`](crate::estimator::NoiseLevel::Exact) and a known level of 0 give exact data;
/// [`NoiseLevel::Estimate`](crate::estimator::NoiseLevel::Estimate) runs [`estimate_sigma`] and treats
/// an estimate at rounding level relative to the data, `σ̂ ≤ 1e-10·‖y‖/√|K|` (the rank tolerance
/// [`DEFAULT_RANK_TOLERANCE`]), as exact data (a double-precision record of exact samples leaves a
/// noise subspace at that level).
///
/// # Errors
/// [`Error::InvalidSetting`] for an invalid known level; [`Error::RunTooShort`] when σ must be estimated
/// but the data are too few or too scattered for a `3 × 3` Hankel matrix of measured entries (the
/// message says to give σ); [`Error::TooLarge`]
/// when the run is too long for the estimate's limits.
pub(crate) fn resolve_noise(
    data: &Measurements,
    noise: crate::estimator::NoiseLevel,
) -> Result<(Option<f64>, Option<SigmaMethod>)> {
    resolve_noise_with(data, noise, None)
}

/// [`resolve_noise`], reusing the Hankel analysis of the caller when it is that of the longest
/// contiguous run of `data` (a subspace estimate passes the analysis of its contiguous record, so
/// that the singular values its model order used are not computed again).
pub(crate) fn resolve_noise_with(
    data: &Measurements,
    noise: crate::estimator::NoiseLevel,
    shared: Option<&mut HankelAnalysis>,
) -> Result<(Option<f64>, Option<SigmaMethod>)> {
    use crate::estimator::NoiseLevel;
    match noise.validated()? {
        NoiseLevel::Exact => Ok((None, None)),
        NoiseLevel::Known(s) => Ok(((s > 0.0).then_some(s), None)),
        NoiseLevel::Estimate => {
            let (est, _) = estimate_with(
                data,
                shared,
                "give the noise level explicitly (sigma; 0 for exact data)",
            )?;
            let scale = data.norm() / (data.len() as f64).sqrt();
            if est.sigma.is_nan() || est.sigma <= DEFAULT_RANK_TOLERANCE * scale {
                Ok((None, Some(est.method)))
            } else {
                Ok((Some(est.sigma), Some(est.method)))
            }
        }
    }
}

mod method;
mod snapshots;
pub use method::SigmaMethod;
pub use snapshots::{estimate_snapshot_sigma, MAX_COVARIANCE_SENSORS};

#[cfg(test)]
mod tests;
