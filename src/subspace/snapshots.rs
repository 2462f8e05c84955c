//! The subspace methods on multi-snapshot records ([`Snapshots`]): MUSIC, ESPRIT and matrix pencil
//! on the forward–backward averaged, spatially smoothed sample covariance of a full uniform array.
//!
//! 1. Refuse missing sensors ([`Error::NeedsContiguous`], naming `sdp`); a single snapshot takes the
//!    single-record path of [`super`] (Hankel matrix of the record), its positions assembled as
//!    sources.
//! 2. `R_s`: sample covariance, forward–backward averaging and spatial smoothing over subarrays of
//!    `M_s` sensors ([`super::smoothing`]); its Hermitian eigen-decomposition `R_s = U Λ Uᴴ`.
//! 3. Model order: given, or read off the eigenvalues `λ_1 ≥ … ≥ λ_{M_s}`: the numerical rank when
//!    they reach rounding level (exact data), MDL otherwise ([`OrderSelection::Auto`]), or MDL/AIC
//!    as asked (Wax & Kailath 1985, IEEE TASSP 33(2)). The eigenvalues are squared singular values
//!    whose rounding errors are of order `ε λ_1` (`√ε` in singular-value terms), so the exact-data
//!    test and the numerical rank compare eigenvalue ratios with [`DEFAULT_RANK_TOLERANCE`]
//!    (`λ_i > 1e-10 λ_1`, four orders above that floor; a given `NumericalRank { rel_tol }`, a
//!    singular-value ratio, is squared). The criteria count `n = L` snapshots, the
//!    number of independent snapshots: the `K` subarrays of one snapshot (and its forward–backward
//!    image) share its noise, so they do not multiply the information the criteria weigh. With
//!    fewer independent vectors than `M_s` (`L·K·2 < M_s` with forward–backward averaging) only the
//!    leading `L·K·2` eigenvalues are used (the others are zero whatever the data).
//! 4. Signal subspace `U_s`: the `r` leading eigenvectors (`M_s × r`, `r ≤ M_s − 1`). It spans the
//!    same space as the leading left singular vectors of the block Hankel matrix `[H_1, …, H_L]`
//!    (with its forward–backward image) of the snapshots' `M_s`-row Hankel matrices, so each method
//!    is the single-record method run on all snapshots at once:
//!    - `music`: root-MUSIC on the noise subspace `I − U_s U_sᴴ` (Schmidt 1986, IEEE TAP 34(3);
//!      Barabell 1983, Proc. IEEE ICASSP);
//!    - `esprit`: total-least-squares ESPRIT on `U_s` (Roy & Kailath 1989, IEEE TASSP 37(7));
//!    - `pencil`: the matrix pencil of Hua & Sarkar (1990, IEEE TASSP 38(5)) reduced to the
//!      dominant singular subspace of the data matrix, here `[H_1, …, H_L]`, i.e. the least-squares
//!      shift operator `U_↑⁺ U_↓` of `U_s` (the `L = 1` form of [`super`], with every snapshot's
//!      Hankel matrix as extra columns).
//! 5. Noise level: given, or [`crate::estimate_snapshot_sigma`] (sample-covariance noise eigenvalues
//!    with `L ≥ 2M` snapshots, pooled single-snapshot estimates otherwise).
//! 6. Pruning (setting `prune`, default on, with an order from MDL/AIC and a noise level): drop, one
//!    at a time, the source whose removal raises the residual `‖X − A Ŝ‖²_F` least while that rise
//!    is below `σ²(√L + 3)²`. With the positions held fixed, the rise of a source that is not there
//!    is `σ²` times a Gamma(L, 1) variable (the noise projected on one direction per snapshot):
//!    mean `L σ²`, standard deviation `√L σ²`; the threshold `(√L + 3)² = L + 6√L + 9` is at least
//!    six standard deviations above the mean for large `L` and, for `L = 1`, the `(4σ)²` of the
//!    single-record amplitude floor (`|a|√N ≥ 4σ`). The rise of source `j` is
//!    `Σ_t |ŝ_j(t)|² / [(AᴴA)⁻¹]_{jj}` (no refit needed). The number dropped is reported with
//!    [`Warning::OrderPruned`].
//! 7. Finish through [`ArrayEstimate::assemble`] (amplitudes, powers, angles, residual, bounds).
//!
//! The single-record settings `window`, `order_window`, `decomposition`, `oversampling`,
//! `power_iterations`, `seed` and `refine` apply to the `L = 1` path only; with many snapshots the
//! covariance (at most `M × M`) is decomposed densely and positions are not polished.

use super::smoothing::{rank_bound, smoothed_covariance};
use super::{esprit, music, pencil, position, Baseline, SubspaceSettings};
use crate::error::{Error, Result};
use crate::estimator::{ArrayEstimate, ModelOrder, NoiseLevel, OrderMethod, Status, Warning};
use crate::kernels::budget::Cost;
use crate::kernels::criteria::{aic, mdl};
use crate::kernels::hankel::numerical;
use crate::kernels::rank::{looks_exact, numerical_rank, DEFAULT_RANK_TOLERANCE};
use crate::model::Snapshots;
use crate::noise::{estimate_snapshot_sigma, SigmaMethod};
use crate::subspace::OrderSelection;
use faer::{c64, Mat, Side};
use nalgebra::{Cholesky, DMatrix};
use num_complex::Complex64;
use std::time::Instant;

/// What to use for a thinned array.
const GAPS_ADVICE: &str = "music, esprit and pencil need every sensor of a uniform line array (a \
    Vandermonde steering matrix); use 'sdp' (or 'ast', 'sfw'), which take snapshots with missing \
    sensors";

/// The estimate of `method` on the snapshots `data` (module docs).
pub(crate) fn run(
    method: Baseline,
    settings: &SubspaceSettings,
    data: &Snapshots,
) -> Result<ArrayEstimate> {
    let start = Instant::now();
    if !data.is_contiguous() {
        return Err(data.layout().gaps_error(method.name(), GAPS_ADVICE));
    }
    if data.snapshot_count() == 1 {
        return single(method, settings, data, start);
    }
    let m = data.len();
    let l = data.snapshot_count();
    let fb = settings.forward_backward;
    let ms = settings.smoothing.subarray(m)?;
    let (mf, msf, lf) = (m as f64, ms as f64, l as f64);
    // The covariance and its smoothed copy, the eigenvectors and the method's own step.
    Cost::new(
        2.0 * mf * mf + 4.0 * msf * msf,
        mf * mf * lf + 10.0 * msf.powi(3),
    )
    .check(
        method.name(),
        || format!("the sample covariance of {m} sensors over {l} snapshots"),
        "smooth over smaller subarrays (smoothing), or use fewer snapshots or sensors",
    )?;
    let r_s = smoothed_covariance(data.values(), fb, ms);
    let eig = Mat::<c64>::from_fn(ms, ms, |i, j| r_s[(i, j)])
        .self_adjoint_eigen(Side::Lower)
        .map_err(|e| numerical("eigen-decomposition of the smoothed covariance", e))?;
    // faer returns the eigenvalues in ascending order: reverse.
    let values = eig.S().column_vector();
    let lambda: Vec<f64> = (0..ms).rev().map(|i| values[i].re.max(0.0)).collect();
    let bound = rank_bound(l, fb, m, ms);
    let order = choose_order(settings.order, settings.max_order, &lambda[..bound], ms, l)?;
    let r = order.order;
    let positions = if r == 0 {
        Vec::new()
    } else {
        let u = eig.U();
        let basis = Mat::<c64>::from_fn(ms, r, |i, j| u[(i, ms - 1 - j)]);
        let z = match method {
            Baseline::Esprit => esprit::tls_esprit(basis.as_ref())?,
            Baseline::Pencil => pencil::pencil_eigenvalues(basis.as_ref())?,
            Baseline::Music => music::root_music(basis.as_ref())?,
        };
        if z.iter().any(|v| !(v.re.is_finite() && v.im.is_finite())) {
            return Err(Error::Numerical {
                step: "subspace eigenvalues",
                detail: format!(
                    "{} produced a non-finite eigenvalue: the signal subspace is degenerate (is \
                     the model order too high for these data?)",
                    method.name()
                ),
            });
        }
        z.into_iter().map(position).collect()
    };
    let (sigma, estimated, sigma_method) = noise_level(settings.noise, data)?;
    let statistical = matches!(order.method, OrderMethod::Mdl | OrderMethod::Aic);
    let positions = match sigma {
        Some(s) if settings.prune && statistical => prune(data, positions, s)?,
        _ => positions,
    };
    let pruned = (positions.len() < r && statistical).then_some(Warning::OrderPruned {
        estimated: r,
        kept: positions.len(),
    });
    Ok(
        ArrayEstimate::assemble(method.name(), data, &positions, Status::Solved)?
            .model_order(order)
            .warnings(pruned)
            .seconds(start.elapsed().as_secs_f64())
            .noise(sigma, estimated, sigma_method),
    )
}

/// One snapshot: the single-record estimate, its positions assembled as sources.
fn single(
    method: Baseline,
    settings: &SubspaceSettings,
    data: &Snapshots,
    start: Instant,
) -> Result<ArrayEstimate> {
    let est = super::run(method, settings, &data.snapshot(0)?)?;
    let d = est.diagnostics;
    let pruned = d
        .warnings
        .iter()
        .filter(|w| matches!(w, Warning::OrderPruned { .. }))
        .cloned();
    let mut assembly =
        ArrayEstimate::assemble(method.name(), data, &est.spikes.positions(), est.status)?
            .iterations(d.iterations)
            .warnings(pruned)
            .seconds(start.elapsed().as_secs_f64());
    if let Some(order) = d.model_order {
        assembly = assembly.model_order(order);
    }
    Ok(assembly.noise(d.sigma, d.sigma_estimated, d.sigma_method))
}

/// The model order from the leading eigenvalues `lambda` (non-increasing; at most `ms`) of the
/// smoothed covariance of `ms` rows and `l` snapshots (module docs).
fn choose_order(
    selection: OrderSelection,
    max_order: Option<usize>,
    lambda: &[f64],
    ms: usize,
    l: usize,
) -> Result<ModelOrder> {
    let identifiable = ms - 1;
    let selection = selection.validated()?;
    if let OrderSelection::Given(r) = selection {
        if r > identifiable {
            return Err(Error::InvalidSetting {
                name: "order",
                value: format!("{r} (smoothing subarray of {ms} sensors)"),
                rule: "with many snapshots the model order r must satisfy r ≤ M_s − 1, M_s the \
                       smoothing subarray (the whole array without smoothing): the signal \
                       subspace needs r + 1 rows for its shift invariance and a noise subspace",
            });
        }
        return Ok(ModelOrder {
            order: r,
            method: OrderMethod::Given,
        });
    }
    let kmax = identifiable
        .min(lambda.len().saturating_sub(1))
        .min(max_order.unwrap_or(usize::MAX));
    // The eigenvalues are squared singular values with rounding errors of order ε·λ_1, i.e. √ε in
    // singular-value terms: the rank rules compare eigenvalue ratios (module docs, step 3).
    let rank = |lambda_tol: f64| ModelOrder {
        order: numerical_rank(lambda, lambda_tol, kmax),
        method: OrderMethod::NumericalRank,
    };
    let criterion = |method: OrderMethod| ModelOrder {
        order: if method == OrderMethod::Aic {
            aic(lambda, l, kmax)
        } else {
            mdl(lambda, l, kmax)
        },
        method,
    };
    Ok(match selection {
        OrderSelection::NumericalRank { rel_tol } => rank(rel_tol * rel_tol),
        OrderSelection::Aic => criterion(OrderMethod::Aic),
        OrderSelection::Mdl => criterion(OrderMethod::Mdl),
        OrderSelection::Auto | OrderSelection::Given(_) => {
            if looks_exact(lambda) {
                rank(DEFAULT_RANK_TOLERANCE)
            } else {
                criterion(OrderMethod::Mdl)
            }
        }
    })
}

/// The noise level to use (`None` for exact or unknown), whether it was estimated, and how.
fn noise_level(
    noise: NoiseLevel,
    data: &Snapshots,
) -> Result<(Option<f64>, bool, Option<SigmaMethod>)> {
    match noise.validated()? {
        NoiseLevel::Exact => Ok((None, false, None)),
        NoiseLevel::Known(s) => Ok(((s > 0.0).then_some(s), false, None)),
        NoiseLevel::Estimate => match estimate_snapshot_sigma(data) {
            Ok(est) => {
                // Rounding-level noise is exact data: the single-record rule applied to the
                // covariance, σ² ≤ 1e-10 · (mean power per sensor and snapshot).
                let power = data.norm().powi(2) / (data.len() * data.snapshot_count()) as f64;
                let sigma = (est.sigma.is_finite()
                    && est.sigma.powi(2) > DEFAULT_RANK_TOLERANCE * power)
                    .then_some(est.sigma);
                Ok((sigma, true, Some(est.method)))
            }
            // Snapshots too short to estimate σ: no noise assessment and no pruning.
            Err(Error::RunTooShort { .. }) => Ok((None, false, None)),
            Err(e) => Err(e),
        },
    }
}

/// Drop, one at a time, the source whose removal raises the residual least while the rise is
/// below `σ²(√L + 3)²` (module docs).
pub(super) fn prune(data: &Snapshots, mut positions: Vec<f64>, sigma: f64) -> Result<Vec<f64>> {
    let l = data.snapshot_count() as f64;
    let level = sigma * sigma * (l.sqrt() + 3.0).powi(2);
    let x = data.values();
    while !positions.is_empty() {
        let a = data.steering(&positions);
        let Some(chol) = Cholesky::new(a.adjoint() * &a) else {
            // Coincident positions: the second of the closest pair adds nothing.
            positions.remove(closest_pair_second(&positions));
            continue;
        };
        let ginv = chol.inverse();
        let s: DMatrix<Complex64> = &ginv * (a.adjoint() * x);
        let rise = |j: usize| s.row(j).norm_squared() / ginv[(j, j)].re;
        let (j, least) = (0..positions.len())
            .map(|j| (j, rise(j)))
            .min_by(|p, q| p.1.total_cmp(&q.1))
            .unwrap_or((0, f64::INFINITY));
        if least >= level {
            break;
        }
        positions.remove(j);
    }
    Ok(positions)
}

/// The index of the second position of the closest pair (wrap-around distance).
fn closest_pair_second(positions: &[f64]) -> usize {
    let mut best = (f64::INFINITY, positions.len() - 1);
    for i in 0..positions.len() {
        for j in i + 1..positions.len() {
            let d = crate::model::wrap_distance(positions[i], positions[j]);
            if d < best.0 {
                best = (d, j);
            }
        }
    }
    best.1
}
