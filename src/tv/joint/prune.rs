//! The significance test of the sources of a noisy joint solution.
//!
//! With noise, the support of the convex solution (where `‖Q(f)‖₂ = 1`) holds the sources and, as
//! for single records, small atoms that fit the noise. Each source is therefore tested the way the
//! single-record post-processing tests close spikes ([`crate::PostProcess`]): drop it, refit the
//! others by least squares, and keep it only if the squared residual `‖Y − AŜ‖²_F` rises by at least
//! `σ²T`; the least significant source goes first, one at a time (backward elimination).
//!
//! The level `T`: for an atom at a fixed position `f` on pure noise, the rise is
//! `‖(P⊥a)ᴴW‖²/‖P⊥a‖²`, `σ²` times a `Γ(L, 1)` variable (`½χ²` with `2L` degrees of freedom; the
//! generalised likelihood-ratio statistic, e.g. Kay 1998, *Fundamentals of Statistical Signal
//! Processing II*, §6.5). The position is chosen by the fit, so the statistic is the supremum over `f`,
//! approximately `sup_f ‖a(f)ᴴW‖₂²/|K|`, whose 99 % quantile is taken from the seeded Monte Carlo of
//! [`super::tau`] (500 draws, computed once per array layout and snapshot count): a false alarm rate
//! of about 1 % per estimate (common practice for a detection level).
//!
//! The rise is computed on the reduced data `Ỹ` (the dimension reduction of [`super`]): `‖P⊥Y‖_F = ‖P⊥Ỹ‖_F`.

use super::{tau, Reduced};
use crate::error::{Error, Result};
use crate::model::atom;
use nalgebra::DMatrix;

/// Monte Carlo draws of the detection level.
pub const DRAWS: usize = 500;

/// Quantile of the supremum statistic used as the detection level.
pub const LEVEL: f64 = 0.99;

/// `‖P⊥Ỹ‖²_F` for the atoms at `pos`.
fn rss(red: &Reduced, pos: &[f64]) -> Result<f64> {
    if pos.is_empty() {
        return Ok(red.y.norm_squared());
    }
    let a = DMatrix::from_fn(red.indices.len(), pos.len(), |i, j| {
        atom(red.indices[i], pos[j])
    });
    let s = a
        .clone()
        .svd(true, true)
        .solve(&red.y, f64::EPSILON * red.indices.len() as f64)
        .map_err(|e| Error::Numerical {
            step: "least squares of the significance test",
            detail: e.to_string(),
        })?;
    Ok((&red.y - a * s).norm_squared())
}

/// `‖P⊥Ỹ‖²_F` without the atom `j`, the others refitted. A neighbour closer than one resolution cell
/// `1/M` may also move along the segment to `pos[j]` (five points, the best kept): a source the convex
/// support split into two close atoms is then judged as one source against two, not as a source
/// against a misplaced half of it (the single-record post-processing likewise re-polishes the others
/// when it tests a close spike).
fn rss_without(red: &Reduced, pos: &[f64], j: usize) -> Result<f64> {
    let mut rest = pos.to_vec();
    let pj = rest.remove(j);
    let mut best = rss(red, &rest)?;
    let cell = 1.0 / red.band_len as f64;
    let nearest = rest
        .iter()
        .enumerate()
        .map(|(i, &p)| (i, crate::model::wrap_difference(pj, p)))
        .filter(|(_, d)| d.abs() < cell)
        .min_by(|a, b| a.1.abs().total_cmp(&b.1.abs()));
    if let Some((i, d)) = nearest {
        let p0 = rest[i];
        for step in 1..=5 {
            rest[i] = crate::model::wrap(p0 + d * step as f64 / 6.0);
            best = best.min(rss(red, &rest)?);
        }
    }
    Ok(best)
}

/// The detection level `T` (module docs) for `snapshots` snapshots of the layout of `red`.
pub(crate) fn level(red: &Reduced, snapshots: usize) -> f64 {
    let sups = tau::noise_sup_draws(&red.indices, red.band_len, snapshots, DRAWS);
    tau::quantile(&sups, LEVEL).powi(2) / red.indices.len() as f64
}

/// The sources of `pos` that pass the test at noise level `sigma` (module docs), sorted.
///
/// # Errors
/// [`Error::Numerical`] if a least-squares fit fails.
pub(crate) fn significant(
    red: &Reduced,
    snapshots: usize,
    mut pos: Vec<f64>,
    sigma: f64,
) -> Result<Vec<f64>> {
    pos.sort_by(f64::total_cmp);
    if pos.is_empty() {
        return Ok(pos);
    }
    let threshold = sigma * sigma * level(red, snapshots);
    loop {
        let all = rss(red, &pos)?;
        let mut weakest: Option<(usize, f64)> = None;
        for j in 0..pos.len() {
            let rise = rss_without(red, &pos, j)? - all;
            if weakest.is_none_or(|(_, r)| rise < r) {
                weakest = Some((j, rise));
            }
        }
        match weakest {
            Some((j, rise)) if rise < threshold => {
                pos.remove(j);
                if pos.is_empty() {
                    return Ok(pos);
                }
            }
            _ => return Ok(pos),
        }
    }
}
