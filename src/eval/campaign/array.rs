//! Array conditions of a campaign: the invented scene of one draw (a cluster of sources seen by a
//! uniform line array over many snapshots) and one method's trial on it, through
//! [`crate::Estimator::estimate_snapshots`], scored against the deterministic (conditional)
//! Cramér–Rao bound of the drawn amplitudes (Stoica & Nehorai 1989, IEEE Trans. ASSP 37(5)).

use super::plan::{Band, Condition, Plan};
use super::run::{LineRecord, TrialRecord};
use crate::bounds::conditional_crb;
use crate::error::{Error, Result};
use crate::eval::array_scene::{ArrayDraw, ArrayScene, SourceCorrelation};
use crate::eval::metrics::score;
use crate::model::{wrap, Spike, Spikes};
use crate::registry::configure;
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::seq::SliceRandom;
use rand::{Rng, SeedableRng};
use std::time::Instant;

/// The name of a source relation in the records: `uncorrelated`, `coherent`, `correlated 0.9`.
pub fn correlation_name(c: SourceCorrelation) -> String {
    match c {
        SourceCorrelation::Uncorrelated => "uncorrelated".into(),
        SourceCorrelation::Coherent => "coherent".into(),
        SourceCorrelation::Correlated(r) => format!("correlated {r}"),
    }
}

/// Draw the array scene of `condition` with `seed`: `spikes` sources evenly spaced `Δ` apart (in
/// cycles per sensor) from a uniform offset, complex Gaussian amplitudes per snapshot with the
/// condition's source relation, each source at the condition's SNR (exact data for none), and the gap
/// fraction of the sensors missing (the first and last kept). Every scene is invented.
///
/// # Errors
/// [`Error::InvalidSetting`] for a condition that is not an array; those of [`ArrayScene`].
pub fn draw_array_scene(condition: &Condition, seed: u64) -> Result<ArrayDraw> {
    let Band::Array { sensors, snapshots } = condition.band else {
        return Err(Error::InvalidSetting {
            name: "bands",
            value: format!("{:?}", condition.band),
            rule: "not an array condition: draw it with draw_scene",
        });
    };
    let mut rng = StdRng::seed_from_u64(seed);
    let d = condition.spacing();
    let offset: f64 = rng.gen();
    let positions: Vec<f64> = (0..condition.spikes)
        .map(|j| wrap(offset + j as f64 * d))
        .collect();
    let mut scene =
        ArrayScene::new(sensors, snapshots, &positions)?.with_correlation(condition.correlation)?;
    if let Some(snr) = condition.snr_db {
        scene = scene.with_snr_db(snr)?;
    }
    if condition.gaps > 0.0 {
        let keep = (((1.0 - condition.gaps) * sensors as f64).round() as usize).clamp(2, sensors);
        let mut inner: Vec<usize> = (1..sensors - 1).collect();
        inner.shuffle(&mut rng);
        inner.truncate(sensors - keep);
        inner.sort_unstable();
        scene = scene.with_missing_sensors(&inner)?;
    }
    if let Some(spacing) = condition.spacing {
        scene = scene.with_spacing(spacing)?;
    }
    scene.with_seed(rng.gen()).draw()
}

/// Unit-amplitude spikes at `positions` (the matching looks at positions only).
fn at(positions: &[f64]) -> Result<Spikes> {
    Spikes::new(
        positions
            .iter()
            .map(|&p| Spike::new(wrap(p), Complex64::new(1.0, 0.0)))
            .collect(),
    )
}

/// One method on one array scene (the array counterpart of the single-record trial; `base` holds
/// the trial's identity).
pub(super) fn trial(
    plan: &Plan,
    condition: &Condition,
    base: TrialRecord,
    m: usize,
) -> TrialRecord {
    let spec = &plan.methods[m];
    let draw = match draw_array_scene(condition, base.seed) {
        Ok(d) => d,
        Err(e) => return super::run::refused(base, format!("scene: {e}"), &[], "scene error"),
    };
    let base = TrialRecord {
        sigma: draw.sigma,
        ..base
    };
    let Ok(truth) = at(&draw.positions) else {
        return super::run::refused(base, "scene: coincident sources".into(), &[], "scene error");
    };
    let lines_truth: Vec<(usize, f64)> = truth.positions().into_iter().enumerate().collect();
    let built = spec
        .options(condition.spikes, draw.sigma)
        .and_then(|o| configure(&spec.name, &o));
    let built = match built {
        Ok(b) => b,
        Err(e) => return super::run::refused(base, e.to_string(), &lines_truth, "refused"),
    };
    // The bound in the scene's order, then looked up by true position.
    let bound: Option<Vec<f64>> = (draw.sigma > 0.0)
        .then(|| conditional_crb(&draw.data, &draw.positions, &draw.amplitudes, draw.sigma).ok())
        .flatten();
    let start = Instant::now();
    let result = built.estimator.estimate_snapshots(&draw.data);
    let seconds = start.elapsed().as_secs_f64();
    let base = TrialRecord { seconds, ..base };
    let est = match result {
        Ok(e) => e,
        Err(e) => return super::run::refused(base, e.to_string(), &lines_truth, "refused"),
    };
    let fc = condition.band.fc();
    let s = match at(&est.positions()).and_then(|found| score(&found, &truth, fc)) {
        Ok(s) => s,
        Err(e) => return super::run::refused(base, e.to_string(), &lines_truth, "scoring error"),
    };
    let n = condition.band.len() as f64;
    let mut lines: Vec<LineRecord> = lines_truth
        .iter()
        .map(|&(line, p)| LineRecord::missed(line, p))
        .collect();
    for pair in &s.pairs {
        let l = &mut lines[pair.truth_index];
        let err = pair.position_error * n;
        l.found = true;
        l.error_res = Some(err);
        let var = bound.as_ref().and_then(|b| {
            draw.positions
                .iter()
                .position(|&p| wrap(p) == l.true_position)
                .and_then(|i| b.get(i).copied())
        });
        if let Some(var) = var {
            let std = var.sqrt() * n;
            l.crb_std_res = Some(std);
            l.error_over_crb = (std > 0.0).then(|| err / std);
        }
    }
    let d = &est.diagnostics;
    let relative_residual = (d.data_norm > 0.0).then(|| d.residual_norm / d.data_norm);
    super::run::finish(
        plan,
        condition,
        base,
        est.status,
        &s,
        lines,
        relative_residual,
    )
}
