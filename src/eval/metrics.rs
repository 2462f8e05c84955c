//! Matching recovered spikes to the truth, and the error figures of an estimate.
//!
//! # The matching
//!
//! Recovered spikes `τ̂_i` are paired one-to-one with true spikes `τ_j` by the assignment that minimises
//!
//! ```text
//! Σ_{matched (i,j)} d(τ̂_i, τ_j)  +  (g/2)·(#missed + #spurious),      d = wrap-around distance,
//! ```
//!
//! where `g` is the gate (default `0.5/fc`): a pair farther apart than `g` is never counted as found;
//! its two spikes count as one missed and one spurious. This is the generalised optimal sub-pattern
//! assignment (GOSPA) cost with `p = 1`, `α = 2`, cut-off `g` (Rahmathullah, García-Fernández &
//! Svensson, "Generalized optimal sub-pattern assignment metric", Proc. 20th Int. Conf. on Information
//! Fusion, 2017 — venue recalled from memory). Leaving a pair unmatched costs
//! `g/2 + g/2 = g`, the same as matching it at the capped distance `min(d, g)`; so the minimiser is a
//! rectangular linear assignment with costs `min(d_ij, g)` (all of the smaller side assigned), after
//! which pairs with `d > g` are split into missed + spurious. The assignment is solved exactly by the
//! Kuhn–Munkres (Hungarian) algorithm (Kuhn 1955, Naval Res. Logist. Q. 2; Munkres 1957, J. SIAM 5(1)),
//! from the `pathfinding` crate, on integer costs `round(2⁴⁰·min(d, g)/g)`: assignments whose true
//! costs differ by less than `n·g·2⁻⁴⁰` may be ranked either way.
//!
//! Unlike matching each true spike to its nearest free estimate, the optimal assignment does not let
//! one early pair take an estimate that a later spike needed.

use crate::error::{check, Error, Result};
use crate::model::{wrap_difference, wrap_distance, Spikes};
use pathfinding::prelude::{kuhn_munkres_min, Matrix};
use serde::Serialize;

/// Default gate in Rayleigh units: a recovered spike more than `0.5/fc` from its partner is not a find.
pub const DEFAULT_GATE_FC: f64 = 0.5;

/// Integer scale of the capped costs handed to the assignment solver (`2⁴⁰`): costs lie in
/// `0..=2⁴⁰`, so sums stay far from `i64` overflow for any realistic number of spikes.
const COST_SCALE: f64 = 1_099_511_627_776.0;

/// One true spike paired with one recovered spike.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Match {
    /// Index of the true spike (in the position-sorted truth).
    pub truth_index: usize,
    /// Index of the recovered spike (in the position-sorted estimate).
    pub estimate_index: usize,
    /// Signed wrap-around position error `τ̂ − τ`, in `[−1/2, 1/2)`.
    pub position_error: f64,
    /// The position error in Rayleigh units, `(τ̂ − τ)·fc`.
    pub position_error_fc: f64,
    /// Relative amplitude error `|â − a| / |a|` (`+∞` for a true amplitude of zero, unless `â = a`;
    /// serialised as `null` then).
    pub relative_amplitude_error: f64,
}

/// How an estimate compares with the truth.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Score {
    /// True spikes with a recovered partner within the gate.
    pub found: usize,
    /// True spikes without one.
    pub missed: usize,
    /// Recovered spikes without a true partner within the gate.
    pub spurious: usize,
    /// Largest `|τ̂ − τ|·fc` over the found pairs (`None` when nothing was found).
    pub max_position_error_fc: Option<f64>,
    /// Root mean square of `(τ̂ − τ)·fc` over the found pairs (`None` when nothing was found).
    pub rms_position_error_fc: Option<f64>,
    /// Largest `|â − a|/|a|` over the found pairs (`None` when nothing was found).
    pub max_relative_amplitude_error: Option<f64>,
    /// The gate used, in Rayleigh units.
    pub gate_fc: f64,
    /// The found pairs, in truth order.
    pub pairs: Vec<Match>,
    /// Indices of the missed true spikes.
    pub missed_truth: Vec<usize>,
    /// Indices of the spurious recovered spikes.
    pub spurious_estimates: Vec<usize>,
}

impl Score {
    /// True when every true spike was found and nothing spurious was recovered.
    pub fn is_complete(&self) -> bool {
        self.missed == 0 && self.spurious == 0
    }
}

/// Settings of the matching: the gate. `Default` gives the gate [`DEFAULT_GATE_FC`] = `0.5/fc`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MatchSettings {
    gate_fc: f64,
}

impl Default for MatchSettings {
    fn default() -> Self {
        MatchSettings {
            gate_fc: DEFAULT_GATE_FC,
        }
    }
}

impl MatchSettings {
    /// Set the gate in Rayleigh units (a pair farther apart than `gate_fc/fc` is missed + spurious).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] unless `gate_fc` is finite and positive.
    pub fn with_gate_fc(mut self, gate_fc: f64) -> Result<Self> {
        self.gate_fc = check::that(
            "gate_fc",
            gate_fc,
            gate_fc.is_finite() && gate_fc > 0.0,
            "the matching gate must be finite and positive (Rayleigh units)",
        )?;
        Ok(self)
    }

    /// The gate in Rayleigh units.
    pub fn gate_fc(&self) -> f64 {
        self.gate_fc
    }

    /// Score `estimate` against `truth` for a band of cutoff `fc` (Rayleigh length `1/fc`) by the
    /// optimal gated assignment described in the module docs.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] unless `fc` is finite and positive.
    pub fn score(&self, estimate: &Spikes, truth: &Spikes, fc: f64) -> Result<Score> {
        if !(fc.is_finite() && fc > 0.0) {
            return Err(Error::InvalidSetting {
                name: "fc",
                value: fc.to_string(),
                rule: "the cutoff must be finite and positive",
            });
        }
        let gate = self.gate_fc / fc;
        let t = truth.as_slice();
        let e = estimate.as_slice();
        // Assignment on the smaller side (rows ≤ columns, as the solver requires).
        let truth_rows = t.len() <= e.len();
        let (nr, nc) = if truth_rows {
            (t.len(), e.len())
        } else {
            (e.len(), t.len())
        };
        let mut assigned: Vec<(usize, usize)> = Vec::with_capacity(nr);
        if nr > 0 {
            let dist = |r: usize, c: usize| {
                let (ti, ei) = if truth_rows { (r, c) } else { (c, r) };
                wrap_distance(t[ti].position, e[ei].position)
            };
            let costs = Matrix::from_fn(nr, nc, |(r, c)| {
                // Distances lie in [0, 1/2] and the gate is positive: the value is in 0..=2^40.
                (dist(r, c).min(gate) / gate * COST_SCALE).round() as i64
            });
            let (_, cols) = kuhn_munkres_min(&costs);
            for (r, c) in cols.into_iter().enumerate() {
                assigned.push(if truth_rows { (r, c) } else { (c, r) });
            }
        }
        let mut truth_hit = vec![false; t.len()];
        let mut est_hit = vec![false; e.len()];
        let mut pairs = Vec::new();
        for (ti, ei) in assigned {
            let (ts, es) = (&t[ti], &e[ei]);
            if wrap_distance(ts.position, es.position) > gate {
                continue;
            }
            truth_hit[ti] = true;
            est_hit[ei] = true;
            let err = wrap_difference(es.position, ts.position);
            let diff = (es.amplitude - ts.amplitude).norm();
            let rel = if diff == 0.0 {
                0.0
            } else {
                diff / ts.amplitude.norm()
            };
            pairs.push(Match {
                truth_index: ti,
                estimate_index: ei,
                position_error: err,
                position_error_fc: err * fc,
                relative_amplitude_error: rel,
            });
        }
        pairs.sort_by_key(|m| m.truth_index);
        let found = pairs.len();
        let missed_truth: Vec<usize> = (0..t.len()).filter(|&i| !truth_hit[i]).collect();
        let spurious_estimates: Vec<usize> = (0..e.len()).filter(|&i| !est_hit[i]).collect();
        let (max_pos, rms_pos, max_amp) = if found == 0 {
            (None, None, None)
        } else {
            let max_pos = pairs
                .iter()
                .map(|m| m.position_error_fc.abs())
                .fold(0.0, f64::max);
            let ms = pairs
                .iter()
                .map(|m| m.position_error_fc.powi(2))
                .sum::<f64>()
                / found as f64;
            let max_amp = pairs
                .iter()
                .map(|m| m.relative_amplitude_error)
                .fold(0.0, f64::max);
            (Some(max_pos), Some(ms.sqrt()), Some(max_amp))
        };
        Ok(Score {
            found,
            missed: missed_truth.len(),
            spurious: spurious_estimates.len(),
            max_position_error_fc: max_pos,
            rms_position_error_fc: rms_pos,
            max_relative_amplitude_error: max_amp,
            gate_fc: self.gate_fc,
            pairs,
            missed_truth,
            spurious_estimates,
        })
    }
}

/// Score `estimate` against `truth` with the default gate `0.5/fc` ([`MatchSettings::score`]).
///
/// # Errors
/// [`Error::InvalidSetting`] unless `fc` is finite and positive.
///
/// # Examples
/// ```
/// use finespike::eval::metrics::score;
/// use finespike::Spikes;
/// use num_complex::Complex64;
/// let one = Complex64::new(1.0, 0.0);
/// let truth = Spikes::from_parts(&[0.999, 0.5], &[one, one])?;
/// let found = Spikes::from_parts(&[0.001], &[one])?;
/// let s = score(&found, &truth, 16.0)?;
/// assert_eq!((s.found, s.missed, s.spurious), (1, 1, 0));
/// assert!((s.pairs[0].position_error - 0.002).abs() < 1e-15); // across the wrap-around
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn score(estimate: &Spikes, truth: &Spikes, fc: f64) -> Result<Score> {
    MatchSettings::default().score(estimate, truth, fc)
}

#[cfg(test)]
mod tests {
    use super::*;
    use num_complex::Complex64;

    fn spikes(p: &[f64]) -> Spikes {
        Spikes::from_parts(p, &vec![Complex64::new(1.0, 0.0); p.len()]).unwrap()
    }

    #[test]
    fn exhaustive_search_agrees_on_small_random_cases() {
        // Brute force over all injections of the smaller side, cost Σ min(d, g) (module docs).
        use rand::{Rng, SeedableRng};
        let mut rng = rand::rngs::StdRng::seed_from_u64(11);
        let fc = 4.0;
        let gate = DEFAULT_GATE_FC / fc;
        for _ in 0..200 {
            let nt = rng.gen_range(0..5);
            let ne = rng.gen_range(0..5);
            let t = spikes(&(0..nt).map(|_| rng.gen::<f64>()).collect::<Vec<_>>());
            let e = spikes(&(0..ne).map(|_| rng.gen::<f64>()).collect::<Vec<_>>());
            let s = score(&e, &t, fc).unwrap();
            let cost = |s: &Score| {
                s.pairs.iter().map(|m| m.position_error.abs()).sum::<f64>()
                    + gate / 2.0 * (s.missed + s.spurious) as f64
            };
            // All assignments of truths to distinct estimates or to nothing.
            fn best(i: usize, t: &[f64], e: &[f64], used: &mut Vec<bool>, gate: f64) -> f64 {
                if i == t.len() {
                    return used.iter().filter(|u| !**u).count() as f64 * gate / 2.0;
                }
                let mut b = gate / 2.0 + best(i + 1, t, e, used, gate);
                for j in 0..e.len() {
                    let d = wrap_distance(t[i], e[j]);
                    if !used[j] && d <= gate {
                        used[j] = true;
                        b = b.min(d + best(i + 1, t, e, used, gate));
                        used[j] = false;
                    }
                }
                b
            }
            let want = best(
                0,
                &t.positions(),
                &e.positions(),
                &mut vec![false; ne],
                gate,
            );
            assert!((cost(&s) - want).abs() < 1e-9, "{} vs {want}", cost(&s));
            assert_eq!(s.found + s.missed, nt);
            assert_eq!(s.found + s.spurious, ne);
        }
    }

    #[test]
    fn bad_settings_are_errors() {
        for g in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(MatchSettings::default().with_gate_fc(g).is_err());
        }
        for fc in [0.0, f64::NAN] {
            assert!(score(&spikes(&[0.1]), &spikes(&[0.1]), fc).is_err());
        }
    }

    #[test]
    fn empty_sides() {
        let s = score(&Spikes::empty(), &Spikes::empty(), 8.0).unwrap();
        assert!(s.is_complete());
        assert_eq!(s.max_position_error_fc, None);
        let s = score(&Spikes::empty(), &spikes(&[0.2, 0.4]), 8.0).unwrap();
        assert_eq!((s.found, s.missed, s.spurious), (0, 2, 0));
        let s = score(&spikes(&[0.2]), &Spikes::empty(), 8.0).unwrap();
        assert_eq!((s.found, s.missed, s.spurious), (0, 0, 1));
    }
}
