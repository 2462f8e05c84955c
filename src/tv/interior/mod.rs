//! The interior-point backend of [`crate::tv`]: the dual of each problem as a semidefinite program in
//! a compact real form (`compact`: one PSD block of size `N + 2`), solved by clarabel's interior
//! point; the support is read from the maxima of the dual polynomial that reach modulus one.

mod clarabel_adapter;
pub(crate) mod compact;

use super::settings::TvSettings;
use super::{relative_gap, Certifier, ConvexSolution, Problem};
use crate::dual::DualPolynomial;
use crate::error::Result;
use crate::model::Measurements;
use clarabel_adapter::IpmSettings;
use compact::{ConicProgram, Formulation};
use num_complex::Complex64;

/// [`crate::Diagnostics::solver`] of an estimate made by the interior point.
pub const INTERIOR_POINT: &str = "interior point (clarabel, compact SDP)";

/// Assemble and solve the dual SDP of `problem`; the support candidates are the maxima of `|q|` at
/// `|q| ≥ 1 − support_tolerance`, found once on the FFT grid together with every other local maximum
/// (the certificate needs them all).
pub(crate) fn solve_convex(
    data: &Measurements,
    problem: Problem,
    settings: &TvSettings,
) -> Result<ConvexSolution> {
    let n = data.band_len();
    let mut shifted: Vec<Option<Complex64>> = vec![None; n];
    for (&k, &v) in data.indices().iter().zip(data.values()) {
        shifted[(k - data.kmin()) as usize] = Some(v);
    }
    let formulation = match problem {
        Problem::Exact => Formulation::Exact,
        Problem::Constrained { delta } => Formulation::Constrained { delta },
        Problem::Penalised { tau } => Formulation::Penalised { tau },
    };
    let prog = ConicProgram::assemble(n, &shifted, formulation);
    let sol = clarabel_adapter::solve(
        &prog,
        IpmSettings {
            max_iter: settings.interior.max_iter,
            tolerance: settings.interior.tolerance,
            time_limit: settings.time_limit,
        },
    )?;
    let q = DualPolynomial::new(data.kmin(), prog.dual_coefficients(&sol.z));
    let peaks = q.peaks(q.search_grid_len(settings.grid_oversample), 0.0);
    let support: Vec<f64> = peaks
        .iter()
        .filter(|p| p.modulus >= 1.0 - settings.interior.support_tolerance)
        .map(|p| p.position)
        .collect();
    Ok(ConvexSolution {
        support,
        dual: q,
        status: sol.status,
        iterations: sol.iterations,
        objective: 0.5 * (sol.primal_objective + sol.dual_objective),
        gap: relative_gap(sol.primal_objective, sol.dual_objective).abs(),
        solver: INTERIOR_POINT,
        precertificate_failed: false,
        certifier: Certifier::Peaks(peaks),
    })
}
