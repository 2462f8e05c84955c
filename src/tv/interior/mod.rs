//! The interior-point backend of [`crate::tv`]: the dual of each problem as a semidefinite program in
//! a compact real form (`compact`: one PSD block of size `N + 2`), solved by clarabel's interior
//! point; the support is read from the maxima of the dual polynomial that reach modulus one.

pub(crate) mod clarabel_adapter;
pub(crate) mod compact;

use super::settings::TvSettings;
use super::{relative_gap, Certifier, ConvexSolution, Problem};
use crate::dual::DualPolynomial;
use crate::error::{Error, Result};
use crate::model::Measurements;
use clarabel_adapter::IpmSettings;
use compact::{ConicProgram, Formulation};
use num_complex::Complex64;

/// [`crate::Diagnostics::solver`] of an estimate made by the interior point.
pub const INTERIOR_POINT: &str = "interior point (clarabel, compact SDP)";

/// Longest band (`N = kmax − kmin + 1` coefficients) the interior point accepts: `fc = 64`. Its memory
/// grows like `N^3.3` and its time like `N^4`–`N^5` (measured on a 2-core machine,
/// `examples/large_scale.rs`: 271 MB and 4.6 s at `N = 65`), so `N = 129` needs about 2.6 GB and
/// minutes, and `N = 257` about 25 GB. Longer bands are refused before anything is allocated.
pub const MAX_BAND_LEN: usize = 129;

/// Memory the interior point is expected to need for a band of `n` coefficients, in MB (the power
/// law of [`MAX_BAND_LEN`], fitted to the measurements at `N = 17…65`).
fn expected_memory_mb(n: usize) -> f64 {
    271.0 * (n as f64 / 65.0).powf(3.3)
}

/// Assemble and solve the dual SDP of `problem`; the support candidates are the maxima of `|q|` at
/// `|q| ≥ 1 − support_tolerance`, found once on the FFT grid together with every other local maximum
/// (the certificate needs them all).
pub(crate) fn solve_convex(
    data: &Measurements,
    problem: Problem,
    settings: &TvSettings,
) -> Result<ConvexSolution> {
    let n = data.band_len();
    if n > MAX_BAND_LEN {
        return Err(Error::TooLarge {
            method: "interior point",
            what: format!("the semidefinite program of a band of {n} coefficients"),
            needed: format!("about {:.0} MB", expected_memory_mb(n)),
            limit: format!("a band of {MAX_BAND_LEN} coefficients (about 2.6 GB)"),
            advice: "use the certified sliding solver (Backend::SlidingFrankWolfe, `--solver \
                     sliding`, or method 'sfw'), which solves the same problem in memory \
                     proportional to the band"
                .into(),
        });
    }
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
        stop_reason: None,
        solver: INTERIOR_POINT,
        precertificate_failed: false,
        certifier: Certifier::Peaks(peaks),
    })
}
