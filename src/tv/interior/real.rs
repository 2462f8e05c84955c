//! The real-symmetric form of the semidefinite programs for a real-valued record.
//!
//! A real record's data are real on the band (`y_k = x_{−k}`), so the dual vector `c` may be taken
//! real and the dual polynomial satisfies `q(−t) = conj(q(t))`. On the primal side, if
//! `(T(u), x, t)` is feasible for one of the problems of [`super::compact`], so is its complex
//! conjugate (the data and the objective are real), and so is their average, with the same
//! objective value (and a data misfit no larger, by convexity of the norm). Hence the optimum is
//! attained with `x ∈ ℝ^N` and `T(u)` a real symmetric Toeplitz matrix, `u ∈ ℝ^N`: the
//! real-coefficient form of the bounded-real-lemma SDP (Dumitrescu 2007, *Positive Trigonometric
//! Polynomials and Signal Processing Applications*, Springer, ch. 2 and 4: Gram matrices of
//! real-coefficient trigonometric polynomials are real symmetric — recalled).
//!
//! The block `[[T(u), x], [xᵀ, t]] ⪰ 0` is then real of size `N + 1`. It splits further: a real
//! symmetric Toeplitz matrix is centrosymmetric (`J T J = T`), so the orthogonal matrix
//! `P = [P_e, P_o]` whose columns are the mirror-even vectors `(e_i + e_{N−1−i})/√2` (and the middle
//! `e_m` for odd `N`) and the mirror-odd vectors `(e_i − e_{N−1−i})/√2` makes `Pᵀ T P = diag(A, B)`
//! with `A` of size `⌈N/2⌉` and `B` of size `⌊N/2⌋` (Cantoni & Butler 1976, "Eigenvalues and
//! eigenvectors of symmetric centrosymmetric matrices", Linear Algebra Appl. 13 — recalled; checked
//! numerically in the tests below). With `x_e = P_eᵀx`, `x_o = P_oᵀx`, the Schur complement gives
//!
//! ```text
//!   [[T, x], [xᵀ, t]] ⪰ 0   ⇔   [[A, x_e], [x_eᵀ, t₁]] ⪰ 0,  [[B, x_o], [x_oᵀ, t₂]] ⪰ 0,  t = t₁ + t₂,
//! ```
//!
//! two real PSD blocks of sizes `⌈N/2⌉ + 1` and `⌊N/2⌋ + 1` instead of the one block of size
//! `N + 2` of the complex compact form. The interior point's dense cone blocks (`(s(s+1)/2)²` entries
//! for a block of size `s`) shrink about eightfold.
//!
//! **Dual certificate.** With `Z_e = [[W_e, w_e], [w_eᵀ, γ_e]]` and `Z_o` the optimal dual blocks,
//! stationarity gives `γ_e = γ_o = γ` (columns of `t₁`, `t₂`) and, for `W = P_e W_e P_eᵀ + P_o W_o P_oᵀ`,
//! `tr W = γ` and `Σ_{c−r=j} W_{rc} = 0` for `j ≥ 1` (columns of `u_j`), so `v(t)ᴴ W v(t) = γ` for the
//! band's Vandermonde vector `v(t)`. Since `J v̄ = e^{iθ} v`, `e^{−iθ/2} P_eᵀ v` is real and
//! `e^{−iθ/2} P_oᵀ v` imaginary; with `w = P_e w_e + P_o w_o` the two Schur complements give
//! `|wᵀv|² = (w_eᵀr_e)² + (w_oᵀr_o)² ≤ γ (r_eᵀW_e r_e + r_oᵀW_o r_o) = γ²`. Hence the real vector
//! `c = −w/γ` has `|q(t)| ≤ 1` on the whole torus, and `⟨y, c⟩` equals the dual objective.

use super::compact::{svec_index, Cone, ConicProgram, DualMap, Formulation};
use num_complex::Complex64;
use std::f64::consts::{FRAC_1_SQRT_2, SQRT_2};

/// One entry `(index in the even or odd part, value)` of a basis vector.
pub(crate) type Entry = (usize, f64);

/// The mirror split of `ℝ^N` into even and odd vectors (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct MirrorSplit {
    /// Length `N`.
    pub n: usize,
}

impl MirrorSplit {
    /// Number of even vectors, `⌈N/2⌉`.
    pub fn even_len(self) -> usize {
        self.n.div_ceil(2)
    }

    /// Number of odd vectors, `⌊N/2⌋`.
    pub fn odd_len(self) -> usize {
        self.n / 2
    }

    /// Entries `(index, value)` of the even (`odd = false`) or odd vector `a`.
    fn vector(self, a: usize, odd: bool) -> Vec<(usize, f64)> {
        let mirror = self.n - 1 - a;
        match (odd, mirror == a) {
            (false, true) => vec![(a, 1.0)],
            (false, false) => vec![(a, FRAC_1_SQRT_2), (mirror, FRAC_1_SQRT_2)],
            (true, _) => vec![(a, FRAC_1_SQRT_2), (mirror, -FRAC_1_SQRT_2)],
        }
    }

    /// `(a, value)` of the even and of the odd vector that hold sample index `i` (the odd one is
    /// absent for the middle index of an odd `N`).
    pub fn components(self, i: usize) -> (Option<Entry>, Option<Entry>) {
        let a = i.min(self.n - 1 - i);
        if 2 * i + 1 == self.n {
            return (Some((a, 1.0)), None);
        }
        let sign = if i == a { 1.0 } else { -1.0 };
        (Some((a, FRAC_1_SQRT_2)), Some((a, sign * FRAC_1_SQRT_2)))
    }

    /// The upper triangle `(row, col, value)` (row ≤ col) of `P_sᵀ S_j P_s` for the even (`odd =
    /// false`) or odd part, where `S_0 = I` and `S_j = E_j + E_jᵀ` (ones on the `j`-th sub- and
    /// super-diagonal): the real symmetric Toeplitz basis in the split.
    pub fn toeplitz_block(self, j: usize, odd: bool) -> Vec<(usize, usize, f64)> {
        let len = if odd { self.odd_len() } else { self.even_len() };
        let vecs: Vec<Vec<(usize, f64)>> = (0..len).map(|a| self.vector(a, odd)).collect();
        let s = |r: usize, c: usize| -> f64 {
            let d = r.abs_diff(c);
            if d == j {
                1.0
            } else {
                0.0
            }
        };
        let mut out = Vec::new();
        for col in 0..len {
            for row in 0..=col {
                let mut acc = 0.0;
                for &(r, vr) in &vecs[row] {
                    for &(c, vc) in &vecs[col] {
                        acc += vr * s(r, c) * vc;
                    }
                }
                if acc.abs() > 1e-14 {
                    out.push((row, col, acc));
                }
            }
        }
        out
    }
}

/// Assemble the real-symmetric program for real data `y` on the shifted band `0..n` (entries `None`
/// are unmeasured and free; measured entries are fixed for [`Formulation::Exact`] and variables
/// otherwise). Variables: `u_0..u_{N−1}`, `t₁`, `t₂`, then one real `x_i` per data variable. Rows:
/// the even block, the odd block, then the second-order cone of the constrained problem.
pub(crate) fn assemble(n: usize, data: &[Option<f64>], formulation: Formulation) -> ConicProgram {
    let gamma = match formulation {
        Formulation::Penalised { tau } => 0.5 * tau,
        _ => 0.5,
    };
    let split = MirrorSplit { n };
    let (me, mo) = (split.even_len(), split.odd_len());
    let (se, so) = (me + 1, mo + 1);
    let even_rows = se * (se + 1) / 2;
    let odd_off = even_rows;
    let psd_rows = even_rows + so * (so + 1) / 2;
    let exact = matches!(formulation, Formulation::Exact);
    let data_vars: Vec<usize> = (0..n).filter(|&i| data[i].is_none() || !exact).collect();
    let (t1, t2) = (n, n + 1);
    let first_data_var = n + 2;
    let nvars = first_data_var + data_vars.len();
    let mut q = vec![0.0; nvars];
    let mut p_diag = vec![0.0; nvars];
    let mut offset = 0.0;
    q[0] = gamma;
    q[t1] = gamma;
    q[t2] = gamma;
    let measured: Vec<(usize, f64)> = data_vars
        .iter()
        .enumerate()
        .filter_map(|(v, &i)| data[i].map(|y| (v, y)))
        .collect();
    if let Formulation::Penalised { .. } = formulation {
        // ½(ξ − y)² = ½ξ² − yξ + ½y²
        for &(v, y) in &measured {
            p_diag[first_data_var + v] = 1.0;
            q[first_data_var + v] = -y;
            offset += 0.5 * y * y;
        }
    }
    let soc_rows = match formulation {
        Formulation::Constrained { .. } => 1 + measured.len(),
        _ => 0,
    };
    let mut soc_slot = vec![None; data_vars.len()];
    for (j, &(v, _)) in measured.iter().enumerate() {
        soc_slot[v] = Some(j);
    }

    let mut colptr = Vec::with_capacity(nvars + 1);
    let mut rowval = Vec::new();
    let mut nzval = Vec::new();
    colptr.push(0);
    // u_j: −svec(A_j) in the even block, −svec(B_j) in the odd block.
    for j in 0..n {
        for (odd, off) in [(false, 0), (true, odd_off)] {
            for (row, col, v) in split.toeplitz_block(j, odd) {
                rowval.push(off + svec_index(row, col));
                nzval.push(-if row == col { v } else { SQRT_2 * v });
            }
        }
        colptr.push(rowval.len());
    }
    // t₁, t₂: the corners of the two blocks.
    for row in [svec_index(me, me), odd_off + svec_index(mo, mo)] {
        rowval.push(row);
        nzval.push(-1.0);
        colptr.push(rowval.len());
    }
    // Data variables: x_e += P_eᵀ e_i ξ, x_o += P_oᵀ e_i ξ (last column of each block); measured
    // ones also enter the second-order cone as ξ − y.
    for (v, &i) in data_vars.iter().enumerate() {
        let (e, o) = split.components(i);
        if let Some((a, w)) = e {
            rowval.push(svec_index(a, me));
            nzval.push(-SQRT_2 * w);
        }
        if let Some((b, w)) = o {
            rowval.push(odd_off + svec_index(b, mo));
            nzval.push(-SQRT_2 * w);
        }
        if soc_rows > 0 {
            if let Some(j) = soc_slot[v] {
                rowval.push(psd_rows + 1 + j);
                nzval.push(-1.0);
            }
        }
        colptr.push(rowval.len());
    }
    // Right-hand side: fixed data enter the blocks as constants; δ and −y for the cone.
    let mut b = vec![0.0; psd_rows + soc_rows];
    if exact {
        for (i, y) in data.iter().enumerate() {
            let Some(y) = *y else { continue };
            let (e, o) = split.components(i);
            if let Some((a, w)) = e {
                b[svec_index(a, me)] += SQRT_2 * w * y;
            }
            if let Some((bb, w)) = o {
                b[odd_off + svec_index(bb, mo)] += SQRT_2 * w * y;
            }
        }
    }
    let mut cones = vec![Cone::Psd(se), Cone::Psd(so)];
    if let Formulation::Constrained { delta } = formulation {
        b[psd_rows] = delta;
        for (j, &(_, y)) in measured.iter().enumerate() {
            b[psd_rows + 1 + j] = -y;
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
        dual_map: DualMap::Symmetric(split),
    }
}

/// The real dual vector `c = −(P_e w_e + P_o w_o)/γ` (module docs) from clarabel's dual variable `z`
/// (svec of the even block, then of the odd block).
pub(crate) fn dual_coefficients(split: MirrorSplit, gamma: f64, z: &[f64]) -> Vec<Complex64> {
    let (me, mo) = (split.even_len(), split.odd_len());
    let odd_off = (me + 1) * (me + 2) / 2;
    (0..split.n)
        .map(|i| {
            let (e, o) = split.components(i);
            let mut w = 0.0;
            if let Some((a, p)) = e {
                w += p * z[svec_index(a, me)] * FRAC_1_SQRT_2;
            }
            if let Some((b, p)) = o {
                w += p * z[odd_off + svec_index(b, mo)] * FRAC_1_SQRT_2;
            }
            Complex64::new(-w / gamma, 0.0)
        })
        .collect()
}

#[cfg(test)]
#[path = "real_tests.rs"]
mod tests;
