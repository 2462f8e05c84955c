//! The interior-point backend of the joint problems: the group atomic-norm SDP in a compact real form,
//! solved by clarabel through the adapter of [`crate::tv::interior`].
//!
//! # The program
//!
//! The group atomic norm of `X ∈ ℂ^{N×r}` (Li & Chi 2016, IEEE TSP 64(5), eq. (11); Yang & Xie 2016,
//! IEEE TSP 64(4), eq. (14) up to their `√N` normalisation) is
//!
//! ```text
//!   ‖X‖_A = min_{u, W} (1/(2N)) tr T(u) + ½ tr W   s.t.  [[T(u), X], [Xᴴ, W]] ⪰ 0,
//! ```
//!
//! and the three problems add `X_K = Ỹ` (exact), an SOC `‖X_K − Ỹ‖_F ≤ δ` (constrained) or the
//! quadratic `½‖X_K − Ỹ‖²_F` with weight `τ` on the norm (penalised). The compact form of
//! [`crate::tv::interior`] generalises column by column: with the centro-Hermitian unitary `U`
//! (`Uᴴ T(u) U = R(u)` real symmetric) and `UᴴX = A + iB`, the complex block `[[R, A + iB], [·, W]]`
//! is replaced by the *real* block
//!
//! ```text
//!   M = [[R(u), A, B], [Aᵀ, G₁₁, G₁₂], [Bᵀ, G₂₁, G₂₂]] ⪰ 0,     tr W = tr G₁₁ + tr G₂₂,
//! ```
//!
//! of size `N + 2r` instead of `2N + 2r`: both forms bound `W` (resp. `G`) below by the same Schur
//! complement, `W ⪰ (A+iB)ᴴR⁺(A+iB)` ⟺ `G ⪰ [A B]ᵀR⁺[A B]` up to the congruence
//! `W = [I, −iI] G [I; iI]`, which preserves the trace, so the minimal traces agree.
//!
//! # The dual
//!
//! clarabel's dual variable of the PSD block, `Z = [[Z₀, Z_A, Z_B], …]`, gives the dual matrix
//! `V = −U (Z_A + iZ_B)/γ` (the column-by-column form of `c = −U(w_a + iw_b)/γ` of the single-record
//! program). It satisfies the dual constraints of Li & Chi 2016, eq. (13): `‖a(f)ᴴV‖₂ ≤ 1` on the
//! torus, `V = 0` off the measured set for the exact problem. The bound is not taken on trust: the
//! caller scans `‖Q(f)‖₂` and reports it.

use super::Reduced;
use crate::error::{Error, Result};
use crate::tv::interior::clarabel_adapter::{self, ConicSolution, IpmSettings};
use crate::tv::interior::compact::{svec_index, CentroUnitary, Cone, ConicProgram, DualMap};
use crate::tv::settings::TvSettings;
use crate::tv::Problem;
use num_complex::Complex64;

/// Largest PSD block (`N + 2r`) the interior point accepts: 131, the block of the single-record
/// program at its own limit (a band of 129 coefficients; about 2.6 GB, see
/// [`crate::tv::interior::MAX_BAND_LEN`]).
pub const MAX_BLOCK: usize = 131;

/// Memory the interior point is expected to need for a PSD block of size `s`, in MB: the power law of
/// the single-record program (271 MB at a block of 67, growing like `s^3.3`), whose Schur complement
/// has the same size for the same block.
pub(crate) fn expected_memory_mb(block: usize) -> f64 {
    271.0 * (block as f64 / 67.0).powf(3.3)
}

/// What the interior point hands back.
#[derive(Debug, Clone)]
pub(crate) struct SdpSolution {
    /// The dual matrix `V`, by column, on the band `0..N` (shifted by `kmin`).
    pub v: Vec<Vec<Complex64>>,
    /// clarabel's outcome.
    pub conic: ConicSolution,
}

/// Assemble and solve the compact group SDP of `problem` on the reduced data.
///
/// # Errors
/// [`Error::TooLarge`] past [`MAX_BLOCK`] (before anything is allocated); the adapter's errors.
pub(crate) fn solve(red: &Reduced, problem: Problem, settings: &TvSettings) -> Result<SdpSolution> {
    let n = red.band_len;
    let r = red.y.ncols();
    let block = n + 2 * r;
    if block > MAX_BLOCK {
        return Err(Error::TooLarge {
            method: "interior point",
            what: format!(
                "the joint semidefinite program of a span of {n} sensors with {r} independent \
                 snapshot directions (a block of {block})"
            ),
            needed: format!("about {:.0} MB", expected_memory_mb(block)),
            limit: format!("a block of {MAX_BLOCK} (about 2.6 GB)"),
            advice:
                "use the certified sliding solver (method 'sfw', or Backend::SlidingFrankWolfe), \
                     which solves the same problem in memory proportional to the data"
                    .into(),
        });
    }
    let prog = assemble(red, problem);
    let conic = clarabel_adapter::solve(
        &prog,
        IpmSettings {
            max_iter: settings.interior.max_iter,
            tolerance: settings.interior.tolerance,
            time_limit: settings.time_limit,
        },
    )?;
    let v = dual_matrix(&prog, r, &conic.z)?;
    Ok(SdpSolution { v, conic })
}

/// The compact program (module docs). Variables, in order: the `2N − 1` Toeplitz parameters, the
/// upper triangle of `G` (column by column), then `Re, Im` of every free entry of `X`.
fn assemble(red: &Reduced, problem: Problem) -> ConicProgram {
    let n = red.band_len;
    let r = red.y.ncols();
    let gamma = match problem {
        Problem::Penalised { tau } => 0.5 * tau,
        _ => 0.5,
    };
    let exact = matches!(problem, Problem::Exact);
    let unitary = CentroUnitary::new(n);
    let basis = unitary.toeplitz_basis();
    let size = n + 2 * r;
    let psd_rows = size * (size + 1) / 2;
    // Band position of each measured row.
    let mut row_of: Vec<Option<usize>> = vec![None; n];
    for (i, &k) in red.indices.iter().enumerate() {
        row_of[(k - red.kmin) as usize] = Some(i);
    }
    // Free data entries (band position, column, measured row if any).
    let data_vars: Vec<(usize, usize, Option<usize>)> = (0..r)
        .flat_map(|l| (0..n).map(move |i| (i, l)))
        .filter(|&(i, _)| row_of[i].is_none() || !exact)
        .map(|(i, l)| (i, l, row_of[i]))
        .collect();
    let g_count = 2 * r * (2 * r + 1) / 2;
    let first_g = 2 * n - 1;
    let first_data = first_g + g_count;
    let nvars = first_data + 2 * data_vars.len();
    let mut q = vec![0.0; nvars];
    let mut p_diag = vec![0.0; nvars];
    let mut offset = 0.0;
    q[0] = gamma;
    let measured: Vec<usize> = (0..data_vars.len())
        .filter(|&v| data_vars[v].2.is_some())
        .collect();
    let soc_rows = match problem {
        Problem::Constrained { .. } => 1 + 2 * measured.len(),
        _ => 0,
    };
    let mut soc_slot = vec![None; data_vars.len()];
    for (j, &v) in measured.iter().enumerate() {
        soc_slot[v] = Some(j);
    }
    if let Problem::Penalised { .. } = problem {
        for &v in &measured {
            let (_, l, row) = data_vars[v];
            let y = row.map_or(Complex64::new(0.0, 0.0), |row| red.y[(row, l)]);
            let (re, im) = (first_data + 2 * v, first_data + 2 * v + 1);
            p_diag[re] = 1.0;
            p_diag[im] = 1.0;
            q[re] = -y.re;
            q[im] = -y.im;
            offset += 0.5 * y.norm_sqr();
        }
    }
    let sqrt2 = std::f64::consts::SQRT_2;
    let mut colptr = Vec::with_capacity(nvars + 1);
    let mut rowval = Vec::new();
    let mut nzval = Vec::new();
    colptr.push(0);
    for b in &basis {
        for col in 0..n {
            for row in 0..=col {
                let v = b.data[col * n + row];
                if v.abs() > 1e-14 {
                    rowval.push(svec_index(row, col));
                    nzval.push(-if row == col { v } else { sqrt2 * v });
                }
            }
        }
        colptr.push(rowval.len());
    }
    for col in 0..2 * r {
        for row in 0..=col {
            let var = first_g + svec_index(row, col);
            if row == col {
                q[var] = gamma;
            }
            rowval.push(svec_index(n + row, n + col));
            nzval.push(if row == col { -1.0 } else { -sqrt2 });
            colptr.push(rowval.len());
        }
    }
    for (v, &(i, l, _)) in data_vars.iter().enumerate() {
        for part in 0..2 {
            for row in 0..n {
                let w = unitary.at(i, row).conj();
                let (da, db) = if part == 0 {
                    (w.re, w.im)
                } else {
                    (-w.im, w.re)
                };
                for (col, val) in [(n + l, da), (n + r + l, db)] {
                    if val.abs() > 1e-14 {
                        rowval.push(svec_index(row, col));
                        nzval.push(-sqrt2 * val);
                    }
                }
            }
            if let (true, Some(j)) = (soc_rows > 0, soc_slot[v]) {
                rowval.push(psd_rows + 1 + 2 * j + part);
                nzval.push(-1.0);
            }
            colptr.push(rowval.len());
        }
    }
    let mut b = vec![0.0; psd_rows + soc_rows];
    if exact {
        for l in 0..r {
            let x0: Vec<Complex64> = (0..n)
                .map(|i| row_of[i].map_or(Complex64::new(0.0, 0.0), |row| red.y[(row, l)]))
                .collect();
            let z0 = unitary.adjoint_apply(&x0);
            for (row, z) in z0.iter().enumerate() {
                b[svec_index(row, n + l)] = sqrt2 * z.re;
                b[svec_index(row, n + r + l)] = sqrt2 * z.im;
            }
        }
    }
    let mut cones = vec![Cone::Psd(size)];
    if let Problem::Constrained { delta } = problem {
        b[psd_rows] = delta;
        for (j, &v) in measured.iter().enumerate() {
            let (_, l, row) = data_vars[v];
            let y = row.map_or(Complex64::new(0.0, 0.0), |row| red.y[(row, l)]);
            b[psd_rows + 1 + 2 * j] = -y.re;
            b[psd_rows + 2 + 2 * j] = -y.im;
        }
        cones.push(Cone::Soc(soc_rows));
    }
    ConicProgram {
        n,
        nvars,
        p_diag,
        q,
        offset,
        a_colptr: colptr,
        a_rowval: rowval,
        a_nzval: nzval,
        b,
        cones,
        gamma,
        dual_map: DualMap::Hermitian(unitary),
    }
}

/// `V = −U (Z_A + iZ_B)/γ` by column (module docs).
fn dual_matrix(prog: &ConicProgram, r: usize, z: &[f64]) -> Result<Vec<Vec<Complex64>>> {
    let n = prog.n;
    // This module builds the complex (Hermitian) form only.
    let DualMap::Hermitian(unitary) = &prog.dual_map else {
        return Err(Error::Numerical {
            step: "joint interior point",
            detail: "the program was not built in the Hermitian form".into(),
        });
    };
    let inv = std::f64::consts::FRAC_1_SQRT_2;
    Ok((0..r)
        .map(|l| {
            let w: Vec<Complex64> = (0..n)
                .map(|row| {
                    Complex64::new(
                        z[svec_index(row, n + l)] * inv,
                        z[svec_index(row, n + r + l)] * inv,
                    )
                })
                .collect();
            unitary
                .apply(&w)
                .into_iter()
                .map(|v| -v / prog.gamma)
                .collect()
        })
        .collect())
}
