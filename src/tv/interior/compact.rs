//! The compact real form of the atomic-norm / TV semidefinite programs.
//!
//! The primal atomic-norm problem (Tang, Bhaskar, Shah & Recht 2013, IEEE TIT 59(11), eq. (II.6)) over a
//! band of `N` coefficients reads
//!
//! ```text
//!   minimise  γ (u₀ + t) + data term
//!   subject to [[T(u), x], [xᴴ, t]] ⪰ 0,   T(u) Hermitian Toeplitz,  x_k = y_k on K (exact data),
//! ```
//!
//! with `γ = 1/2` giving `‖x‖_A = ‖μ‖_TV`. A Hermitian Toeplitz matrix is centro-Hermitian
//! (`J T J = T̄`, `J` the exchange matrix), so the fixed unitary
//! `U = (1/√2)[[I, iI], [J, −iJ]]` (even `N`) or `(1/√2)[[I, 0, iI], [0, √2, 0], [J, 0, −iJ]]` (odd `N`)
//! makes `R = Uᴴ T U` real symmetric (A. Lee 1980, "Centrohermitian and skew-centrohermitian matrices",
//! Linear Algebra Appl. 29 — reference recalled from memory; the property is checked numerically in the
//! tests below). With `z = Uᴴ x = a + ib`, the complex block `[[R, z], [zᴴ, t]] ⪰ 0` holds iff
//! `t ≥ aᵀR⁺a + bᵀR⁺b` (with `a, b ∈ range R`), iff the *real* block
//!
//! ```text
//!   M = [[R, a, b], [aᵀ, t₁, s], [bᵀ, s, t₂]] ⪰ 0     with t = t₁ + t₂
//! ```
//!
//! is feasible (Schur complement). So the `(N+1)`-size Hermitian constraint becomes one real PSD block of
//! size `N + 2` instead of the `2N + 2` of the naive real embedding.
//!
//! **Dual certificate.** With `Z = [[W, w_a, w_b], …]` the optimal dual matrix of the real problem,
//! stationarity gives `Z_{N,N} = Z_{N+1,N+1} = γ`, `Z_{N,N+1} = 0` and `Σ_i (U W Uᴴ)_{i,i+j} = γ δ_{j0}`.
//! For the band's Vandermonde vector `v(t)`, `Uᴴ v(t)` is real up to a unit phase (because `J v̄ = e^{iθ} v`
//! and `J Ū = U`), so the real Schur complement gives `|v(t)ᴴ U (w_a + i w_b)|² ≤ γ · v(t)ᴴ U W Uᴴ v(t) = γ²`.
//! Hence `c = −U (w_a + i w_b) / γ` is a dual vector with `|q(t)| ≤ 1` on the whole torus
//! (the bounded-real-lemma certificate; Dumitrescu 2007, *Positive Trigonometric Polynomials and Signal
//! Processing Applications*, ch. 4), and `Re⟨y, c⟩` equals the dual objective.

use num_complex::Complex64;
use std::f64::consts::FRAC_1_SQRT_2;

/// A dense real symmetric matrix stored in full, column-major.
#[derive(Debug, Clone)]
pub(crate) struct SymMat {
    pub n: usize,
    pub data: Vec<f64>,
}

impl SymMat {
    fn get(&self, r: usize, c: usize) -> f64 {
        self.data[c * self.n + r]
    }
}

/// The centro-Hermitian unitary `U` of size `n` (column-major, complex).
#[derive(Debug, Clone)]
pub(crate) struct CentroUnitary {
    pub n: usize,
    pub u: Vec<Complex64>,
}

impl CentroUnitary {
    /// Build `U` for size `n ≥ 1` (see the module docs).
    pub fn new(n: usize) -> Self {
        let m = n / 2;
        let odd = n % 2 == 1;
        let mut u = vec![Complex64::new(0.0, 0.0); n * n];
        let s = FRAC_1_SQRT_2;
        let set = |u: &mut Vec<Complex64>, r: usize, c: usize, v: Complex64| u[c * n + r] = v;
        for i in 0..m {
            // first block column: [I; 0; J] / √2
            set(&mut u, i, i, Complex64::new(s, 0.0));
            set(&mut u, n - 1 - i, i, Complex64::new(s, 0.0));
            // last block column: [iI; 0; −iJ] / √2, column index n − m + i
            let col = n - m + i;
            set(&mut u, i, col, Complex64::new(0.0, s));
            set(&mut u, n - 1 - i, col, Complex64::new(0.0, -s));
        }
        if odd {
            set(&mut u, m, m, Complex64::new(1.0, 0.0));
        }
        CentroUnitary { n, u }
    }

    #[inline]
    pub fn at(&self, r: usize, c: usize) -> Complex64 {
        self.u[c * self.n + r]
    }

    /// `Uᴴ x`.
    pub fn adjoint_apply(&self, x: &[Complex64]) -> Vec<Complex64> {
        (0..self.n)
            .map(|c| (0..self.n).map(|r| self.at(r, c).conj() * x[r]).sum())
            .collect()
    }

    /// `U z`.
    pub fn apply(&self, z: &[Complex64]) -> Vec<Complex64> {
        (0..self.n)
            .map(|r| (0..self.n).map(|c| self.at(r, c) * z[c]).sum())
            .collect()
    }

    /// The real symmetric matrices `R = Uᴴ B U` for the real Toeplitz basis: index 0 is `B = I`; for
    /// `j ≥ 1`, index `2j − 1` is `B = E_j + E_jᵀ` (real part of `u_j`) and index `2j` is
    /// `B = i(E_j − E_jᵀ)` (imaginary part), where `E_j` has ones on the `j`-th subdiagonal.
    pub fn toeplitz_basis(&self) -> Vec<SymMat> {
        let n = self.n;
        let mut out = Vec::with_capacity(2 * n - 1);
        let mut ident = vec![0.0; n * n];
        for i in 0..n {
            ident[i * n + i] = 1.0;
        }
        out.push(SymMat { n, data: ident });
        for j in 1..n {
            // entries (r, c) with r − c = j carry value 1 (E_j) and (c, r) the transpose.
            for imag in [false, true] {
                let mut data = vec![0.0; n * n];
                for a in 0..n {
                    for b in a..n {
                        // (Uᴴ B U)_{ab} = Σ_{r−c=j} ū_{ra} B_{rc} u_{cb} + ū_{ca} B_{cr} u_{rb}
                        let mut acc = Complex64::new(0.0, 0.0);
                        for c in 0..n - j {
                            let r = c + j;
                            let (brc, bcr) = if imag {
                                (Complex64::new(0.0, 1.0), Complex64::new(0.0, -1.0))
                            } else {
                                (Complex64::new(1.0, 0.0), Complex64::new(1.0, 0.0))
                            };
                            acc += self.at(r, a).conj() * brc * self.at(c, b)
                                + self.at(c, a).conj() * bcr * self.at(r, b);
                        }
                        // The imaginary part vanishes by construction (centro-Hermitian structure).
                        data[b * n + a] = acc.re;
                        data[a * n + b] = acc.re;
                    }
                }
                out.push(SymMat { n, data });
            }
        }
        out
    }
}

/// Which convex problem to assemble.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Formulation {
    /// `min ‖x‖_A` subject to `x_K = y` (exact data).
    Exact,
    /// `min ‖x‖_A` subject to `‖x_K − y‖₂ ≤ δ` (noise of known level).
    Constrained {
        /// Radius `δ` of the data-fit ball.
        delta: f64,
    },
    /// `min ½‖x_K − y‖₂² + τ‖x‖_A` (atomic-norm soft thresholding).
    Penalised {
        /// Regularisation weight `τ`.
        tau: f64,
    },
}

/// A cone of clarabel's, in the order its rows appear in `A` and `b`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Cone {
    /// The PSD triangle cone of a real symmetric matrix of this size.
    Psd(usize),
    /// A second-order cone of this dimension.
    Soc(usize),
}

/// A conic program in clarabel's standard form `min ½vᵀPv + qᵀv  s.t.  Av + s = b, s ∈ K`,
/// plus what is needed to read the certificate back.
#[derive(Debug, Clone)]
pub(crate) struct ConicProgram {
    /// Band length `N`.
    pub n: usize,
    /// Number of variables.
    pub nvars: usize,
    /// Diagonal of `P` (the only quadratic terms are `½|x_k|²`).
    pub p_diag: Vec<f64>,
    /// Linear objective.
    pub q: Vec<f64>,
    /// Constant added to the objective (`½‖y‖²` for the penalised form).
    pub offset: f64,
    /// Constraint matrix in CSC form: column pointers, row indices, values.
    pub a_colptr: Vec<usize>,
    pub a_rowval: Vec<usize>,
    pub a_nzval: Vec<f64>,
    /// Right-hand side.
    pub b: Vec<f64>,
    /// The cones, in row order.
    pub cones: Vec<Cone>,
    /// Objective weight `γ` on `u₀ + t₁ + t₂`.
    pub gamma: f64,
    /// How the dual vector is read from the solver's dual variable.
    pub dual_map: DualMap,
}

/// How [`ConicProgram::dual_coefficients`] reads the dual vector back.
#[derive(Debug, Clone)]
pub(crate) enum DualMap {
    /// The complex compact form with its centro-Hermitian unitary (this module).
    Hermitian(CentroUnitary),
    /// The real-symmetric form of a real record ([`super::real`]).
    Symmetric(super::real::MirrorSplit),
}

/// Index of `(row, col)` (row ≤ col) in clarabel's svec: upper triangle, column by column.
#[inline]
pub(crate) fn svec_index(row: usize, col: usize) -> usize {
    col * (col + 1) / 2 + row
}

impl ConicProgram {
    /// Assemble the compact real problem for data `y` on the shifted band `0..n` (entries `None` are
    /// unmeasured and always free variables; measured entries are fixed for [`Formulation::Exact`] and
    /// variables otherwise).
    pub fn assemble(n: usize, data: &[Option<Complex64>], formulation: Formulation) -> Self {
        let gamma = match formulation {
            Formulation::Penalised { tau } => 0.5 * tau,
            _ => 0.5,
        };
        let unitary = CentroUnitary::new(n);
        let basis = unitary.toeplitz_basis();
        let size = n + 2;
        let psd_rows = size * (size + 1) / 2;
        let exact = matches!(formulation, Formulation::Exact);
        let data_vars: Vec<usize> = (0..n).filter(|&i| data[i].is_none() || !exact).collect();
        let first_data_var = (2 * n - 1) + 3;
        let nvars = first_data_var + 2 * data_vars.len();
        let mut q = vec![0.0; nvars];
        let mut p_diag = vec![0.0; nvars];
        let mut offset = 0.0;
        let t1 = 2 * n - 1;
        let t2 = t1 + 1;
        q[0] = gamma;
        q[t1] = gamma;
        q[t2] = gamma;
        // Measured entries that are variables, with their position in the SOC block.
        let measured: Vec<(usize, Complex64)> = data_vars
            .iter()
            .enumerate()
            .filter_map(|(v, &i)| data[i].map(|y| (v, y)))
            .collect();
        if let Formulation::Penalised { .. } = formulation {
            // ½|ξ − y|² = ½|ξ|² − Re(ȳ ξ) + ½|y|²
            for &(v, y) in &measured {
                let (re, im) = (first_data_var + 2 * v, first_data_var + 2 * v + 1);
                p_diag[re] = 1.0;
                p_diag[im] = 1.0;
                q[re] = -y.re;
                q[im] = -y.im;
                offset += 0.5 * y.norm_sqr();
            }
        }
        let soc_rows = match formulation {
            Formulation::Constrained { .. } => 1 + 2 * measured.len(),
            _ => 0,
        };
        let soc_slot: Vec<Option<usize>> = {
            let mut slot = vec![None; data_vars.len()];
            for (j, &(v, _)) in measured.iter().enumerate() {
                slot[v] = Some(j);
            }
            slot
        };

        let mut colptr = Vec::with_capacity(nvars + 1);
        let mut rowval = Vec::new();
        let mut nzval = Vec::new();
        colptr.push(0);
        let sqrt2 = std::f64::consts::SQRT_2;
        // Columns for the Toeplitz parameters: A[:, i] = −svec(R_i) in the top-left block.
        for r in &basis {
            for col in 0..n {
                for row in 0..=col {
                    let v = r.get(row, col);
                    if v.abs() > 1e-14 {
                        rowval.push(svec_index(row, col));
                        nzval.push(-if row == col { v } else { sqrt2 * v });
                    }
                }
            }
            colptr.push(rowval.len());
        }
        // t1, t2 (diagonal entries) and s (off-diagonal entry of the 2×2 corner).
        for (r, c, scale) in [(n, n, 1.0), (n + 1, n + 1, 1.0), (n, n + 1, sqrt2)] {
            rowval.push(svec_index(r, c));
            nzval.push(-scale);
            colptr.push(rowval.len());
        }
        // Data variables ξ_i = α + iβ: z += Uᴴ e_i ξ_i, i.e. a += Re(ū_i·) α − Im(ū_i·) β and
        // b += Im(ū_i·) α + Re(ū_i·) β, in columns n (a) and n + 1 (b) of M; measured ones also enter
        // the second-order cone as ξ − y.
        for (v, &i) in data_vars.iter().enumerate() {
            for part in 0..2 {
                for row in 0..n {
                    let w = unitary.at(i, row).conj();
                    let (da, db) = if part == 0 {
                        (w.re, w.im)
                    } else {
                        (-w.im, w.re)
                    };
                    for (col, val) in [(n, da), (n + 1, db)] {
                        if val.abs() > 1e-14 {
                            rowval.push(svec_index(row, col));
                            nzval.push(-sqrt2 * val);
                        }
                    }
                }
                if soc_rows > 0 {
                    if let Some(j) = soc_slot[v] {
                        rowval.push(psd_rows + 1 + 2 * j + part);
                        nzval.push(-1.0);
                    }
                }
                colptr.push(rowval.len());
            }
        }
        // Right-hand side: fixed data enter M as a constant; the cone row δ and −y for the SOC.
        let x0: Vec<Complex64> = (0..n)
            .map(|i| match (exact, data[i]) {
                (true, Some(y)) => y,
                _ => Complex64::new(0.0, 0.0),
            })
            .collect();
        let z0 = unitary.adjoint_apply(&x0);
        let mut b = vec![0.0; psd_rows + soc_rows];
        for row in 0..n {
            b[svec_index(row, n)] = sqrt2 * z0[row].re;
            b[svec_index(row, n + 1)] = sqrt2 * z0[row].im;
        }
        let mut cones = vec![Cone::Psd(size)];
        if let Formulation::Constrained { delta } = formulation {
            b[psd_rows] = delta;
            for (j, &(_, y)) in measured.iter().enumerate() {
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

    /// The dual vector `c` (on the shifted band `0..n`) from clarabel's dual variable `z` (svec of `Z`
    /// first): `c = −U (w_a + i w_b) / γ` with `w_a = Z[0..n, n]`, `w_b = Z[0..n, n+1]`.
    /// For the real-symmetric form, [`super::real::dual_coefficients`].
    pub fn dual_coefficients(&self, z: &[f64]) -> Vec<Complex64> {
        let unitary = match &self.dual_map {
            DualMap::Hermitian(u) => u,
            DualMap::Symmetric(split) => {
                return super::real::dual_coefficients(*split, self.gamma, z)
            }
        };
        let n = self.n;
        let inv = std::f64::consts::FRAC_1_SQRT_2;
        let w: Vec<Complex64> = (0..n)
            .map(|row| Complex64::new(z[svec_index(row, n)] * inv, z[svec_index(row, n + 1)] * inv))
            .collect();
        unitary
            .apply(&w)
            .into_iter()
            .map(|v| -v / self.gamma)
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `Uᴴ T U` must be real for every Hermitian Toeplitz `T`, and `U` unitary.
    #[test]
    fn centro_unitary_makes_hermitian_toeplitz_real() {
        for n in [1usize, 2, 5, 8, 9] {
            let u = CentroUnitary::new(n);
            // unitarity
            for a in 0..n {
                for b in 0..n {
                    let g: Complex64 = (0..n).map(|r| u.at(r, a).conj() * u.at(r, b)).sum();
                    let e = if a == b { 1.0 } else { 0.0 };
                    assert!((g - e).norm() < 1e-15, "n = {n}");
                }
            }
            // a Hermitian Toeplitz matrix with generic entries
            let col: Vec<Complex64> = (0..n)
                .map(|j| Complex64::new(1.0 / (1.0 + j as f64), (j as f64 * 0.37).sin()))
                .collect();
            let t = |r: usize, c: usize| {
                if r >= c {
                    col[r - c]
                } else {
                    col[c - r].conj()
                }
            };
            for a in 0..n {
                for b in 0..n {
                    let mut acc = Complex64::new(0.0, 0.0);
                    for r in 0..n {
                        for c in 0..n {
                            acc += u.at(r, a).conj() * t(r, c) * u.at(c, b);
                        }
                    }
                    let tr = if n > 0 { col[0].re } else { 0.0 };
                    assert!(
                        acc.im.abs() < 1e-14 * (1.0 + tr),
                        "n = {n}: imag {}",
                        acc.im
                    );
                }
            }
        }
    }

    #[test]
    fn svec_index_is_column_major_upper() {
        assert_eq!(svec_index(0, 0), 0);
        assert_eq!(svec_index(0, 1), 1);
        assert_eq!(svec_index(1, 1), 2);
        assert_eq!(svec_index(0, 2), 3);
        assert_eq!(svec_index(2, 2), 5);
    }
}
