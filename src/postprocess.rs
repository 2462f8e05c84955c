//! Post-processing shared by every estimator: merge near-duplicate positions, least-squares (debiased)
//! amplitudes, drop spikes below a noise-based amplitude floor, an optional local nonlinear
//! least-squares polish of positions and amplitudes together (the shared Levenberg–Marquardt polish), and, with noise, a
//! significance test of spikes that sit close to another one.
//!
//! # Significance of close spikes
//!
//! The floor `|a| ≥ κσ/√|K|` (κ = [`PostProcess::floor_sigmas`]) is a test on the fit: removing an
//! isolated spike of least-squares amplitude `a` raises `‖y − Fμ̂‖²` by `|K||a|²`, so the floor keeps
//! a spike exactly when its removal would raise the squared residual by at least `κ²σ²`. Next to
//! another spike that equivalence fails: a small spike a fraction of `1/fc` from a strong one can carry
//! an amplitude above the floor while the strong one, slid and refitted, absorbs almost all of it.
//! Noise-aware convex solutions show such pairs at moderate SNR (the dual polynomial touches 1 twice
//! around a line). For every spike with another one closer than [`PostProcess::neighbour_fc`]`/fc`,
//! the test is therefore applied directly: drop the spike, refit (and polish) the others, and keep it
//! only if the squared residual rises by at least `κ²σ²`; the least significant spike goes first, one
//! at a time. Under pure noise, `2Δ/σ²` for one added spike of free position is about a χ² with 3
//! degrees of freedom (a generalised likelihood-ratio test, e.g. Kay 1998, Fundamentals of Statistical
//! Signal Processing II, §6.5); κ = 4 puts the level at `2Δ/σ² ≥ 32` (common practice: a
//! 4-sigma detection level).

use crate::error::{check, Result};
use crate::kernels::lstsq;
use crate::kernels::refine::{refine, RefineSettings};
use crate::model::{wrap, wrap_difference, Measurements, Spikes};

/// The amplitude a spike shows in the data: `|a|`, or with a trend `|a|·‖P⊥φ(τ)‖/‖φ(τ)‖` — the part
/// of its atom that the polynomial cannot fit (a line within a resolution cell of zero frequency is
/// mostly trend, and its least-squares amplitude says nothing about its significance).
fn strength(data: &Measurements, spike: &crate::model::Spike) -> f64 {
    spike.amplitude.norm() * lstsq::trend_visibility(data, spike.position)
}

/// `positions` without the `j`-th; for a real record also without its mirror image (the line is the
/// pair, and the least squares would put a lone member's mirror back).
fn remove_line(data: &Measurements, positions: &[f64], j: usize) -> Vec<f64> {
    let mirror = 1.0 - positions[j];
    let merge = crate::kernels::lstsq::MIRROR_MERGE_FC / data.fc();
    positions
        .iter()
        .enumerate()
        .filter(|&(i, &p)| {
            i != j && !(data.is_real() && crate::model::wrap_distance(p, mirror) <= merge)
        })
        .map(|(_, &p)| p)
        .collect()
}

/// Rounds of polish and merge before giving up on a support that keeps collapsing.
const MAX_POLISH_PASSES: usize = 4;

/// On exact data the polish may run this many times its iteration limit. The exact fit is then the
/// answer, and the polish stops by itself once it is reached (no step lowers the residual); but a
/// cluster of spikes a fraction of `1/N` apart puts it in a narrow curved valley where each damped step
/// gains a few per cent: four real-positive spikes 0.3/N apart in N = 33 (the evaluation's
/// phase-transition map, `examples/exact_cluster.rs`) stopped at the default 50 iterations at
/// 10⁻⁸–2.5·10⁻⁷‖y‖ with positions up to 2·10⁻²/N off, and reach 10⁻¹⁵‖y‖ and 10⁻¹¹/N after 370–800.
/// Noisy data keep the limit as set: their optimum is a noise level away from the truth.
const EXACT_POLISH_FACTOR: usize = 40;

/// Settings of the shared post-processing.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct PostProcess {
    /// Candidate positions closer than this many Rayleigh lengths are merged into one (default 0.05).
    pub merge_distance_fc: f64,
    /// With noise of level `σ`, drop spikes with `|a| < floor_sigmas · σ / √|K|` (default 4). The
    /// least-squares amplitude of an isolated spike has standard deviation `σ/√|K|`, so a spike below
    /// four of those is indistinguishable from noise (common practice: a 4-sigma detection level).
    pub floor_sigmas: f64,
    /// Without noise, drop spikes with `|a|` below this fraction of the largest (default 1e-6): such
    /// points carry no mass in an exact fit.
    pub relative_floor: f64,
    /// Local least-squares polish (default on, never moving a spike more than 0.25/fc; on exact data
    /// with 40 times its iteration limit, see the source of `EXACT_POLISH_FACTOR`).
    pub refine: Option<RefineSettings>,
    /// With noise, spikes with another spike closer than this many Rayleigh lengths must pass the
    /// significance test of the module docs (default 1.0; 0 turns the test off).
    pub neighbour_fc: f64,
}

impl Default for PostProcess {
    fn default() -> Self {
        PostProcess {
            merge_distance_fc: 0.05,
            floor_sigmas: 4.0,
            relative_floor: 1e-6,
            refine: Some(RefineSettings::default()),
            neighbour_fc: 1.0,
        }
    }
}

impl PostProcess {
    /// Set the merge distance in Rayleigh units, in `[0, 0.5]`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_merge_distance_fc(mut self, d: f64) -> Result<Self> {
        self.merge_distance_fc = check::that(
            "merge_distance_fc",
            d,
            (0.0..=0.5).contains(&d),
            "must lie in [0, 0.5]",
        )?;
        Ok(self)
    }

    /// Set the noise floor in units of `σ/√|K|` (non-negative).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for a negative or NaN value.
    pub fn with_floor_sigmas(mut self, k: f64) -> Result<Self> {
        self.floor_sigmas = check::that(
            "floor_sigmas",
            k,
            !(k.is_nan() || k < 0.0),
            "must be non-negative",
        )?;
        Ok(self)
    }

    /// Set the neighbourhood of the significance test in Rayleigh units, in `[0, 4]` (0: no test).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_neighbour_fc(mut self, d: f64) -> Result<Self> {
        self.neighbour_fc = check::that(
            "neighbour_fc",
            d,
            (0.0..=4.0).contains(&d),
            "must lie in [0, 4]",
        )?;
        Ok(self)
    }

    /// Set the relative amplitude floor for exact data, in `[0, 1)`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_relative_floor(mut self, f: f64) -> Result<Self> {
        self.relative_floor = check::that(
            "relative_floor",
            f,
            (0.0..1.0).contains(&f),
            "must lie in [0, 1)",
        )?;
        Ok(self)
    }

    /// Turn the least-squares polish on (with these settings) or off.
    pub fn with_refine(mut self, refine: Option<RefineSettings>) -> Self {
        self.refine = refine;
        self
    }

    /// Every setting checked (fields can be written directly).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] naming the first setting out of range.
    pub fn validated(self) -> Result<Self> {
        let refine = match self.refine {
            Some(r) => Some(r.validated()?),
            None => None,
        };
        Ok(Self::default()
            .with_merge_distance_fc(self.merge_distance_fc)?
            .with_floor_sigmas(self.floor_sigmas)?
            .with_relative_floor(self.relative_floor)?
            .with_neighbour_fc(self.neighbour_fc)?
            .with_refine(refine))
    }

    /// The amplitude floor for data `data` with noise level `sigma` (`None` or 0: exact data).
    fn floor(&self, data: &Measurements, sigma: Option<f64>, amax: f64) -> f64 {
        match sigma {
            Some(s) if s > 0.0 => self.floor_sigmas * s / (data.len() as f64).sqrt(),
            _ => self.relative_floor * amax,
        }
    }

    /// Turn candidate positions into spikes: merge, fit, drop, polish, drop again.
    ///
    /// # Errors
    /// From the least-squares fits (the shared least squares).
    pub fn apply(
        &self,
        data: &Measurements,
        candidates: &[f64],
        sigma: Option<f64>,
    ) -> Result<Spikes> {
        let positions = merge_positions(candidates, self.merge_distance_fc / data.fc());
        let mut spikes = self.fit_above_floor(data, &positions, sigma)?;
        if let Some(mut rs) = self.refine {
            if sigma.is_none() {
                rs.max_iter = rs.max_iter.saturating_mul(EXACT_POLISH_FACTOR);
            }
            // Polish; spikes the polish brings together are merged and the result polished again
            // (a merged position is a mean, not a least-squares fit).
            for _ in 0..MAX_POLISH_PASSES {
                spikes = refine(data, &spikes, rs)?.spikes;
                let positions =
                    merge_positions(&spikes.positions(), self.merge_distance_fc / data.fc());
                if positions.len() == spikes.len() {
                    break;
                }
                spikes = self.fit_above_floor(data, &positions, sigma)?;
            }
            let amax = max_abs(&spikes);
            let floor = self.floor(data, sigma, amax);
            if spikes.iter().any(|s| strength(data, s) < floor) {
                let kept: Vec<f64> = spikes
                    .iter()
                    .filter(|s| strength(data, s) >= floor)
                    .map(|s| s.position)
                    .collect();
                spikes = lstsq::fit(data, &kept)?;
            }
        }
        if let Some(s) = sigma.filter(|s| *s > 0.0) {
            spikes = self.prune_insignificant(data, spikes, s)?;
        }
        Ok(spikes)
    }

    /// Least-squares amplitudes at `positions`, then the polish if it is on.
    fn refit(&self, data: &Measurements, positions: &[f64]) -> Result<Spikes> {
        let spikes = lstsq::fit(data, positions)?;
        match self.refine {
            Some(rs) if !spikes.is_empty() => Ok(refine(data, &spikes, rs)?.spikes),
            _ => Ok(spikes),
        }
    }

    /// The significance test of close spikes (module docs): drop, one at a time, the spike whose
    /// removal raises `‖y − Fμ̂‖²` least, while that rise is below `(κσ)²`.
    fn prune_insignificant(
        &self,
        data: &Measurements,
        mut spikes: Spikes,
        sigma: f64,
    ) -> Result<Spikes> {
        let level = (self.floor_sigmas * sigma).powi(2);
        let radius = self.neighbour_fc / data.fc();
        if level == 0.0 || radius == 0.0 {
            return Ok(spikes);
        }
        loop {
            let positions = spikes.positions();
            let base = data.residual_norm(&spikes).powi(2);
            let mut weakest: Option<(f64, Spikes)> = None;
            for (j, &t) in positions.iter().enumerate() {
                let crowded = positions
                    .iter()
                    .enumerate()
                    .any(|(i, &u)| i != j && crate::model::wrap_distance(t, u) < radius);
                if !crowded {
                    continue;
                }
                let others = remove_line(data, &positions, j);
                let without = self.refit(data, &others)?;
                let rise = data.residual_norm(&without).powi(2) - base;
                if weakest.as_ref().is_none_or(|(r, _)| rise < *r) {
                    weakest = Some((rise, without));
                }
            }
            match weakest {
                Some((rise, without)) if rise < level => spikes = without,
                _ => return Ok(spikes),
            }
        }
    }

    fn fit_above_floor(
        &self,
        data: &Measurements,
        positions: &[f64],
        sigma: Option<f64>,
    ) -> Result<Spikes> {
        let mut positions = positions.to_vec();
        // Drop the weakest spike below the floor one at a time: removing one changes the others' fit.
        loop {
            let spikes = lstsq::fit(data, &positions)?;
            let amax = max_abs(&spikes);
            let floor = self.floor(data, sigma, amax);
            let weakest = spikes
                .iter()
                .enumerate()
                .min_by(|a, b| strength(data, a.1).total_cmp(&strength(data, b.1)));
            match weakest {
                Some((i, s)) if strength(data, s) < floor => {
                    positions = remove_line(data, &spikes.positions(), i);
                }
                _ => return Ok(spikes),
            }
        }
    }
}

fn max_abs(spikes: &Spikes) -> f64 {
    spikes
        .iter()
        .map(|s| s.amplitude.norm())
        .fold(0.0, f64::max)
}

/// Merge positions closer than `tol` (wrap-around) into their mean; result sorted.
pub fn merge_positions(positions: &[f64], tol: f64) -> Vec<f64> {
    let mut sorted: Vec<f64> = positions.iter().map(|&t| wrap(t)).collect();
    sorted.sort_by(f64::total_cmp);
    let mut groups: Vec<Vec<f64>> = Vec::new();
    for t in sorted {
        match groups.last_mut() {
            Some(g) if wrap_difference(t, g[g.len() - 1]).abs() < tol => g.push(t),
            _ => groups.push(vec![t]),
        }
    }
    // The last group may wrap around onto the first.
    if groups.len() > 1 {
        let first = groups[0][0];
        let last_group = &groups[groups.len() - 1];
        if wrap_difference(first, last_group[last_group.len() - 1]).abs() < tol {
            let last = groups.pop().unwrap_or_default();
            groups[0].extend(last);
        }
    }
    let mut merged: Vec<f64> = groups
        .iter()
        .map(|g| {
            let base = g[0];
            let mean_offset =
                g.iter().map(|&t| wrap_difference(t, base)).sum::<f64>() / g.len() as f64;
            wrap(base + mean_offset)
        })
        .collect();
    merged.sort_by(f64::total_cmp);
    merged
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Domain};
    use num_complex::Complex64;

    #[test]
    fn merges_close_positions_including_across_zero() {
        let m = merge_positions(&[0.1, 0.1001, 0.5, 0.9999, 0.0002], 0.001);
        assert_eq!(m.len(), 3);
        assert!(
            (m[0] - 0.00005).abs() < 1e-12 || (m[2] - 0.00005).abs() < 1e-12,
            "{m:?}"
        );
        assert!(m.iter().any(|&t| (t - 0.10005).abs() < 1e-12));
    }

    #[test]
    fn drops_spikes_below_the_noise_floor() {
        let truth = Spikes::from_parts(&[0.2], &[Complex64::new(1.0, 0.0)]).unwrap();
        let idx: Vec<i64> = (-8..=8).collect();
        let data =
            Measurements::in_band(-8, 8, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        // A candidate far from the line gets a zero amplitude and must go.
        let out = PostProcess::default()
            .apply(&data, &[0.2, 0.6], Some(0.01))
            .unwrap();
        assert_eq!(out.len(), 1);
        assert!((out.positions()[0] - 0.2).abs() < 1e-12);
    }

    /// Two candidates straddling one line (as the dual polynomial of a noisy solve can give): the
    /// polish pulls them together, they merge, and the merged spike is polished again — the result is
    /// the line itself, not the mean of two polished positions.
    #[test]
    fn merged_candidates_are_polished_again() {
        let fc = 16;
        let idx: Vec<i64> = (-fc..=fc).collect();
        let truth = Spikes::from_parts(&[0.4], &[Complex64::new(1.0, 0.0)]).unwrap();
        let data =
            Measurements::in_band(-fc, fc, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        for (a, b) in [(-0.06, 0.09), (-0.1, 0.04), (-0.12, 0.12)] {
            let candidates = [0.4 + a / fc as f64, 0.4 + b / fc as f64];
            let out = PostProcess::default()
                .apply(&data, &candidates, Some(1e-3))
                .unwrap();
            assert_eq!(out.len(), 1, "{a} {b}: {out:?}");
            assert!(
                (out.positions()[0] - 0.4).abs() * 16.0 < 1e-9,
                "{a} {b}: {out:?}"
            );
        }
    }

    /// One line plus a small, close companion that the noise cannot support: the companion 0.2/fc away
    /// with 1/20 of the amplitude sits above the 4σ/√|K| floor, yet the line alone, polished, fits the
    /// data to within the noise, so the significance test removes it. With a companion of half the
    /// amplitude (a real second line), both stay.
    #[test]
    fn close_insignificant_companion_is_dropped() {
        let fc = 16;
        let idx: Vec<i64> = (-fc..=fc).collect();
        let sigma = 0.03;
        let line = |companion: f64| {
            let truth = Spikes::from_parts(
                &[0.4, 0.4 + 0.2 / fc as f64],
                &[Complex64::new(1.0, 0.0), Complex64::new(companion, 0.0)],
            )
            .unwrap();
            Measurements::in_band(-fc, fc, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap()
        };
        let candidates = [0.4, 0.4 + 0.2 / fc as f64];
        // Exact data from one line of amplitude 1 and a companion of 0.05: its LS amplitude 0.05 is
        // above the floor 4·0.03/√33 = 0.021, but removing it and sliding the line raises ‖r‖² by far
        // less than (4σ)² = 0.0144.
        let weak = PostProcess::default()
            .apply(&line(0.05), &candidates, Some(sigma))
            .unwrap();
        assert_eq!(weak.len(), 1, "{weak:?}");
        let strong = PostProcess::default()
            .apply(&line(0.5), &candidates, Some(sigma))
            .unwrap();
        assert_eq!(strong.len(), 2, "{strong:?}");
        // Switched off, the companion stays.
        let kept = PostProcess::default()
            .with_neighbour_fc(0.0)
            .unwrap()
            .apply(&line(0.05), &candidates, Some(sigma))
            .unwrap();
        assert_eq!(kept.len(), 2);
    }
}
