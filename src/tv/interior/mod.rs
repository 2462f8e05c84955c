//! The interior-point backend of [`crate::tv`]: the dual of each problem as a semidefinite program in
//! a compact real form (`compact`: one PSD block of size `N + 2`; for a real-valued record `real`:
//! two real symmetric blocks of sizes `⌈N/2⌉ + 1` and `⌊N/2⌋ + 1`), solved by clarabel's interior
//! point; the support is read from the maxima of the dual polynomial that reach modulus one.

pub(crate) mod clarabel_adapter;
pub(crate) mod compact;
pub(crate) mod real;

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

/// [`crate::Diagnostics::solver`] of an estimate of a real-valued record made by the interior point
/// in the real-symmetric form (module `real`).
pub const INTERIOR_POINT_REAL: &str = "interior point (clarabel, real-symmetric SDP)";

/// Longest band (`N = kmax − kmin + 1` coefficients) the interior point accepts for a complex
/// record: `fc = 64`. Its memory grows like `N^3.8` and its time like `N^5` (measured on the shared
/// 2-core machine, one process per run of `recover --solver interior-point`, peak resident memory
/// and CPU time: 280 MB and 3.5 s at `N = 65`, 3.8 GB and 140 s at `N = 129`, a real-valued record
/// solved in the complex form), so `N = 257` would need about 50 GB. Longer bands are refused
/// before anything is allocated.
pub const MAX_BAND_LEN: usize = 129;

/// Longest band the interior point accepts for a real-valued record, solved in the real-symmetric
/// form (module `real`: two PSD blocks of about half the size): `fc = 96`. Measured the same way:
/// 55 MB and 0.5 s at `N = 65`, 633 MB and 20 s at `N = 129` (memory like `N^3.6`), 3.0 GB and
/// 167 s at `N = 193` — within the memory and time the complex form takes at [`MAX_BAND_LEN`].
pub const MAX_REAL_BAND_LEN: usize = 193;

/// Memory the interior point is expected to need for a band of `n` coefficients, in MB (the power
/// laws of [`MAX_BAND_LEN`] and [`MAX_REAL_BAND_LEN`], fitted to the measurements at `N = 65` and
/// `129`).
fn expected_memory_mb(n: usize, real: bool) -> f64 {
    if real {
        633.0 * (n as f64 / 129.0).powf(3.56)
    } else {
        280.0 * (n as f64 / 65.0).powf(3.8)
    }
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
    // A real record whose stored data are real (a trend projection keeps them real) is solved in
    // the real-symmetric form, with the same optimum (module docs of `real`).
    let real_data = settings.interior.real_symmetric
        && data.is_real()
        && data.values().iter().all(|v| v.im == 0.0);
    let limit = if real_data {
        MAX_REAL_BAND_LEN
    } else {
        MAX_BAND_LEN
    };
    if n > limit {
        return Err(Error::TooLarge {
            method: "interior point",
            what: format!(
                "the semidefinite program of a {}band of {n} coefficients",
                if real_data {
                    "real-valued record's "
                } else {
                    ""
                }
            ),
            needed: format!("about {:.0} MB", expected_memory_mb(n, real_data)),
            limit: format!(
                "a band of {limit} coefficients (about {:.1} GB)",
                expected_memory_mb(limit, real_data) / 1000.0
            ),
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
    let (prog, solver) = if real_data {
        let re: Vec<Option<f64>> = shifted.iter().map(|v| v.map(|v| v.re)).collect();
        (real::assemble(n, &re, formulation), INTERIOR_POINT_REAL)
    } else {
        (
            ConicProgram::assemble(n, &shifted, formulation),
            INTERIOR_POINT,
        )
    };
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
        solver,
        precertificate_failed: false,
        certifier: Certifier::Peaks(peaks),
    })
}
