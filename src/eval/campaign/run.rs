//! Running a plan: one trial per (condition, draw, method), in parallel, and the per-trial records.

use super::plan::{draw_scene, trial_seed, AmplitudePattern, Condition, Plan};
use crate::bounds::crb_for;
use crate::error::Result;
use crate::eval::sweep;
use crate::registry::configure;
use rayon::prelude::*;
use serde::Serialize;
use std::sync::atomic::{AtomicUsize, Ordering};

/// One true line of one trial.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LineRecord {
    /// Index of the true line (position order).
    pub line: usize,
    /// Its true position (cycles per sample for time records).
    pub true_position: f64,
    /// Whether a recovered line was matched to it (optimal matching, gate `0.5/fc`).
    pub found: bool,
    /// Signed position error `τ̂ − τ` in record resolution units (`·N`), when found.
    pub error_res: Option<f64>,
    /// `√CRB` of its position in record resolution units, when the data are noisy and the bound
    /// exists.
    pub crb_std_res: Option<f64>,
    /// `error_res / crb_std_res`.
    pub error_over_crb: Option<f64>,
}

impl LineRecord {
    /// A true line not (yet) matched.
    pub(super) fn missed(line: usize, true_position: f64) -> Self {
        LineRecord {
            line,
            true_position,
            found: false,
            error_res: None,
            crb_std_res: None,
            error_over_crb: None,
        }
    }
}

/// One method on one scene.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrialRecord {
    /// Index of the trial (condition-major, then draw, then method).
    pub trial: usize,
    /// The condition.
    pub condition: Condition,
    /// The draw (0-based) within the condition.
    pub draw: usize,
    /// The scene's seed ([`trial_seed`]).
    pub seed: u64,
    /// The method's label.
    pub method: String,
    /// The noise level of the scene (0: exact data).
    pub sigma: f64,
    /// `solved`, `reduced accuracy`, … (the estimate's status), or `refused` when the method
    /// returned an error.
    pub status: String,
    /// The error message of a refusal.
    pub error: Option<String>,
    /// Wall-clock seconds of the estimate. Trials run side by side on all cores, so these are
    /// comparative, not a benchmark of one method alone.
    pub seconds: f64,
    /// True lines found.
    pub found: usize,
    /// True lines missed.
    pub missed: usize,
    /// Recovered lines without a true partner.
    pub spurious: usize,
    /// `‖y − Fμ̂‖/‖y‖` of the returned spikes (empty for a refusal): on exact data, the precision
    /// the method actually reached.
    pub relative_residual: Option<f64>,
    /// Nothing missed, nothing spurious, and a usable status.
    pub complete: bool,
    /// `complete`, and on exact data every line within [`Plan::exact_tolerance`] of the truth.
    pub success: bool,
    /// `complete` with every error below half the spacing: the lines are told apart.
    pub resolved: bool,
    /// One entry per true line.
    pub lines: Vec<LineRecord>,
}

/// The result of a campaign: the conditions run, the combinations left out and the trials.
#[derive(Debug, Clone, PartialEq)]
pub struct Campaign {
    /// The plan run.
    pub plan: Plan,
    /// Its conditions.
    pub conditions: Vec<Condition>,
    /// Grid combinations left out (too many spikes for the record at that spacing).
    pub skipped: Vec<String>,
    /// Every trial, in trial order.
    pub trials: Vec<TrialRecord>,
}

/// Run `plan`: every method on `draws` scenes of every condition, in parallel on rayon's pool.
/// `progress(done, total)` is called after each trial (from the worker threads). The records do
/// not depend on the number of threads (except the wall times): each scene is drawn from its own
/// seed ([`trial_seed`]) and the records are returned in trial order.
///
/// # Errors
/// The errors of [`Plan::validated`].
pub fn run(plan: &Plan, progress: &(dyn Fn(usize, usize) + Sync)) -> Result<Campaign> {
    let plan = plan.clone().validated()?;
    let (conditions, skipped) = plan.conditions();
    let per_condition = plan.draws * plan.methods.len();
    let total = conditions.len() * per_condition;
    let done = AtomicUsize::new(0);
    let trials: Vec<TrialRecord> = (0..total)
        .into_par_iter()
        .map(|trial| {
            let condition = &conditions[trial / per_condition];
            let draw = (trial % per_condition) / plan.methods.len();
            let m = trial % plan.methods.len();
            let record = one_trial(&plan, condition, draw, m, trial);
            progress(done.fetch_add(1, Ordering::Relaxed) + 1, total);
            record
        })
        .collect();
    Ok(Campaign {
        plan,
        conditions,
        skipped,
        trials,
    })
}

pub(super) fn refused(
    base: TrialRecord,
    message: String,
    truth: &[(usize, f64)],
    status: &str,
) -> TrialRecord {
    TrialRecord {
        status: status.to_string(),
        error: Some(message),
        missed: truth.len(),
        lines: truth
            .iter()
            .map(|&(line, p)| LineRecord::missed(line, p))
            .collect(),
        ..base
    }
}

fn one_trial(
    plan: &Plan,
    condition: &Condition,
    draw: usize,
    m: usize,
    trial: usize,
) -> TrialRecord {
    let spec = &plan.methods[m];
    let seed = trial_seed(plan.seed, condition.index, draw);
    let base = TrialRecord {
        trial,
        condition: *condition,
        draw,
        seed,
        method: spec.label().to_string(),
        sigma: 0.0,
        status: String::new(),
        error: None,
        seconds: 0.0,
        found: 0,
        missed: 0,
        spurious: 0,
        relative_residual: None,
        complete: false,
        success: false,
        resolved: false,
        lines: Vec::new(),
    };
    if condition.band.snapshots().is_some() {
        return super::array::trial(plan, condition, base, m);
    }
    let scene = match draw_scene(condition, seed) {
        Ok(s) => s,
        Err(e) => return refused(base, format!("scene: {e}"), &[], "scene error"),
    };
    let truth: Vec<(usize, f64)> = scene.truth.positions().into_iter().enumerate().collect();
    let base = TrialRecord {
        sigma: scene.sigma,
        ..base
    };
    let built = spec
        .options(condition.spikes, scene.sigma)
        .and_then(|o| configure(&spec.name, &o));
    let built = match built {
        Ok(b) => b,
        Err(e) => return refused(base, e.to_string(), &truth, "refused"),
    };
    let bound = (scene.sigma > 0.0)
        .then(|| crb_for(&scene.data, &scene.truth, scene.sigma).ok())
        .flatten();
    let outcome = sweep::run(
        built.estimator.as_ref(),
        &scene.data,
        &scene.truth,
        bound.as_ref(),
    );
    let base = TrialRecord {
        seconds: outcome.seconds,
        ..base
    };
    let (Some(status), Some(score)) = (outcome.status, outcome.score.as_ref()) else {
        let msg = outcome.error.clone().unwrap_or_default();
        return refused(base, msg, &truth, "refused");
    };
    let n = condition.band.len() as f64;
    let fc = scene.data.fc();
    let mut lines: Vec<LineRecord> = truth
        .iter()
        .map(|&(line, p)| LineRecord::missed(line, p))
        .collect();
    for (k, pair) in score.pairs.iter().enumerate() {
        let l = &mut lines[pair.truth_index];
        let err = pair.position_error * n;
        l.found = true;
        l.error_res = Some(err);
        // The sweep's bound is in Rayleigh units² (`·fc`): rescale to `·N`.
        if let Some(var_fc) = outcome.crb_var_fc.get(k) {
            let std = var_fc.sqrt() / fc * n;
            l.crb_std_res = Some(std);
            l.error_over_crb = (std > 0.0).then(|| err / std);
        }
    }
    let relative_residual = Some(scene.data.residual_norm(&outcome.spikes) / scene.data.norm());
    finish(
        plan,
        condition,
        base,
        status,
        score,
        lines,
        relative_residual,
    )
}

/// The trial's verdicts from its status, score and lines.
pub(super) fn finish(
    plan: &Plan,
    condition: &Condition,
    base: TrialRecord,
    status: crate::estimator::Status,
    score: &crate::eval::metrics::Score,
    lines: Vec<LineRecord>,
    relative_residual: Option<f64>,
) -> TrialRecord {
    let complete = status.is_usable() && score.is_complete();
    let max_err = lines
        .iter()
        .filter_map(|l| l.error_res)
        .fold(0.0f64, |a, e| a.max(e.abs()));
    let success = complete && (base.sigma > 0.0 || max_err <= plan.exact_tolerance);
    let resolved = complete && max_err < condition.separation_res / 2.0;
    TrialRecord {
        status: status.to_string(),
        found: score.found,
        missed: score.missed,
        spurious: score.spurious,
        relative_residual,
        complete,
        success,
        resolved,
        lines,
        ..base
    }
}

/// One row of the tidy output: one trial × one true line (every trial field repeated on each of
/// its lines). Per-trial figures take the rows with `line == 0`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Row<'a> {
    /// [`TrialRecord::trial`].
    pub trial: usize,
    /// Condition index.
    pub condition: usize,
    /// Draw within the condition.
    pub draw: usize,
    /// The scene's seed.
    pub seed: u64,
    /// Method label.
    pub method: &'a str,
    /// `fourier`, `time` or `array`.
    pub domain: &'static str,
    /// `N`: indices spanned (record resolution `1/N`); for an array, its sensors `M`.
    pub samples: usize,
    /// Snapshots of an array (empty for a single record).
    pub snapshots: Option<usize>,
    /// Source relation of an array scene (`uncorrelated` for single records).
    pub correlation: String,
    /// Element spacing in wavelengths (arrays, when given).
    pub spacing: Option<f64>,
    /// `fc = (N − 1)/2`.
    pub fc: f64,
    /// Fraction of indices left out.
    pub gaps: f64,
    /// Spikes in the scene.
    pub spikes: usize,
    /// Spacing in `1/N`.
    pub separation_res: f64,
    /// Spacing in `1/fc`.
    pub separation_fc: f64,
    /// SNR of the weakest spike in dB (empty / null: exact data).
    pub snr_db: Option<f64>,
    /// Amplitude pattern.
    pub amplitudes: &'static str,
    /// Noise σ (0: exact data).
    pub sigma: f64,
    /// Status or `refused`.
    pub status: &'a str,
    /// Wall seconds.
    pub seconds: f64,
    /// Lines found.
    pub found: usize,
    /// Lines missed.
    pub missed: usize,
    /// Spurious lines.
    pub spurious: usize,
    /// See [`TrialRecord::relative_residual`].
    pub relative_residual: Option<f64>,
    /// See [`TrialRecord::complete`].
    pub complete: bool,
    /// See [`TrialRecord::success`].
    pub success: bool,
    /// See [`TrialRecord::resolved`].
    pub resolved: bool,
    /// True line index (position order).
    pub line: usize,
    /// True position (empty for a trial without lines).
    pub true_position: Option<f64>,
    /// This line found.
    pub line_found: bool,
    /// Signed error in `1/N` (empty when missed).
    pub error_res: Option<f64>,
    /// `√CRB` in `1/N` (empty on exact data).
    pub crb_std_res: Option<f64>,
    /// Error over `√CRB`.
    pub error_over_crb: Option<f64>,
    /// Refusal message (empty otherwise).
    pub error: Option<&'a str>,
}

impl TrialRecord {
    /// The tidy rows of this trial, one per true line (one row with `line = 0` and empty line
    /// fields for a trial without lines).
    pub fn rows(&self) -> Vec<Row<'_>> {
        let c = &self.condition;
        let domain = match c.band {
            super::plan::Band::Fc(_) => "fourier",
            super::plan::Band::Samples(_) => "time",
            super::plan::Band::Array { .. } => "array",
        };
        let amplitudes = AmplitudePattern::name(c.amplitudes);
        let row = |l: Option<&LineRecord>| Row {
            trial: self.trial,
            condition: c.index,
            draw: self.draw,
            seed: self.seed,
            method: &self.method,
            domain,
            samples: c.band.len(),
            snapshots: c.band.snapshots(),
            correlation: super::array::correlation_name(c.correlation),
            spacing: c.spacing,
            fc: c.band.fc(),
            gaps: c.gaps,
            spikes: c.spikes,
            separation_res: c.separation_res,
            separation_fc: c.separation_fc,
            snr_db: c.snr_db,
            amplitudes,
            sigma: self.sigma,
            status: &self.status,
            seconds: self.seconds,
            found: self.found,
            missed: self.missed,
            spurious: self.spurious,
            relative_residual: self.relative_residual,
            complete: self.complete,
            success: self.success,
            resolved: self.resolved,
            line: l.map_or(0, |l| l.line),
            true_position: l.map(|l| l.true_position),
            line_found: l.is_some_and(|l| l.found),
            error_res: l.and_then(|l| l.error_res),
            crb_std_res: l.and_then(|l| l.crb_std_res),
            error_over_crb: l.and_then(|l| l.error_over_crb),
            error: self.error.as_deref(),
        };
        if self.lines.is_empty() {
            vec![row(None)]
        } else {
            self.lines.iter().map(|l| row(Some(l))).collect()
        }
    }
}
