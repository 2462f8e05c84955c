//! The horizontal axis of a plot and the stems drawn on it.

use crate::show;
use finespike::{Domain, Estimate, Measurements, Spikes};

/// The horizontal axis: positions (cycles per sample, or fractions of the domain) mapped to the
/// record's unit.
#[derive(Clone, Copy)]
pub(super) struct Axis {
    /// Cycles per sample (or fraction of the domain) to the axis unit.
    factor: f64,
    /// Signed frequencies (−1/2, 1/2] of a complex time record.
    signed: bool,
    /// A real record: only [0, 1/2].
    real: bool,
}

impl Axis {
    pub(super) fn of(data: &Measurements) -> Self {
        Axis {
            factor: show::factor(data),
            signed: data.domain() == Domain::Time && !data.is_real(),
            real: data.is_real(),
        }
    }

    /// The whole axis in its unit.
    pub(super) fn full(self) -> (f64, f64) {
        match (self.signed, self.real) {
            (_, true) => (0.0, 0.5 * self.factor),
            (true, _) => (-0.5 * self.factor, 0.5 * self.factor),
            _ => (0.0, self.factor),
        }
    }

    /// A position on the torus on the axis, `None` where the axis does not show it (the mirror half
    /// of a real record).
    pub(super) fn x(self, p: f64) -> Option<f64> {
        let q = if (self.signed || self.real) && p > 0.5 {
            p - 1.0
        } else {
            p
        };
        if self.real && q < 0.0 {
            return None;
        }
        Some(q * self.factor)
    }

    /// A curve sampled on the torus grid, on the axis and in `view`, in increasing x.
    pub(super) fn curve(
        self,
        grid: &[f64],
        values: &[f64],
        (x0, x1): (f64, f64),
    ) -> Vec<(f64, f64)> {
        let mut pts: Vec<(f64, f64)> = grid
            .iter()
            .zip(values)
            .filter_map(|(&p, &v)| self.x(p).map(|x| (x, v)))
            .filter(|(x, _)| *x >= x0 && *x <= x1)
            .collect();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        pts
    }
}

/// The stems to draw: `(position, height)` of the lines — for a real record each cosine once with its
/// amplitude `|A|` (the estimate's lines; a truth's ±f pairs folded), else the spikes.
pub(super) fn stems(spikes: &Spikes, real: bool) -> Vec<(f64, f64)> {
    if !real {
        return spikes
            .iter()
            .map(|s| (s.position, s.amplitude.norm()))
            .collect();
    }
    // A real truth holds each cosine as a pair (A/2)e^{±iφ}: the one at f ≤ 1/2 stands for both.
    spikes
        .iter()
        .filter(|s| s.position <= 0.5)
        .map(|s| {
            let edge = s.position == 0.0 || s.position == 0.5;
            (
                s.position,
                if edge { 1.0 } else { 2.0 } * s.amplitude.norm(),
            )
        })
        .collect()
}

/// The estimate's stems `(position, height)`: for a real record each line once with `|A|`, else
/// the spikes.
pub(super) fn shown_lines(data: &Measurements, est: &Estimate) -> Vec<(f64, f64)> {
    if data.is_real() {
        est.diagnostics
            .lines
            .iter()
            .map(|l| (l.position, l.amplitude.norm()))
            .collect()
    } else {
        stems(&est.spikes, false)
    }
}
