//! Per-condition summaries with 95 % confidence intervals, and the tidy files.

use super::plan::Condition;
use super::run::{Campaign, TrialRecord};
use serde::Serialize;
use std::io::{self, Write};

/// `z` of the two-sided 95 % normal interval (`Φ⁻¹(0.975)`).
pub const Z95: f64 = 1.959_963_984_540_054;

/// Wilson's score interval for a binomial proportion `k/n` at normal quantile `z` (Wilson 1927,
/// J. Amer. Statist. Assoc. 22(158), 209–212):
///
/// ```text
/// (p̂ + z²/2n ± z √(p̂(1−p̂)/n + z²/4n²)) / (1 + z²/n),   p̂ = k/n
/// ```
///
/// Unlike the normal ("Wald") interval it stays inside `[0, 1]` and is not empty at `k = 0` or
/// `k = n`. Returns `(0, 1)` for `n = 0`.
pub fn wilson_interval(k: usize, n: usize, z: f64) -> (f64, f64) {
    if n == 0 {
        return (0.0, 1.0);
    }
    let (k, n) = (k as f64, n as f64);
    let p = k / n;
    let z2 = z * z;
    let centre = (p + z2 / (2.0 * n)) / (1.0 + z2 / n);
    let half = z / (1.0 + z2 / n) * (p * (1.0 - p) / n + z2 / (4.0 * n * n)).sqrt();
    ((centre - half).max(0.0), (centre + half).min(1.0))
}

/// Quantile of the chi-square distribution with `dof` degrees of freedom at the normal quantile `z`
/// (`z = ±1.96` for the 2.5 % / 97.5 % points), by the Wilson–Hilferty cube-root approximation
/// (Wilson & Hilferty 1931, Proc. Natl. Acad. Sci. USA 17(12), 684–688):
/// `χ² ≈ ν (1 − 2/(9ν) + z √(2/(9ν)))³`. Relative error below 1 % from `ν = 3` on, a few per cent
/// at `ν = 1, 2` (common practice to accept).
pub fn chi_square_quantile(dof: usize, z: f64) -> f64 {
    let nu = dof.max(1) as f64;
    let a = 2.0 / (9.0 * nu);
    (nu * (1.0 - a + z * a.sqrt()).powi(3)).max(0.0)
}

/// One method under one condition.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ConditionSummary {
    /// The condition.
    pub condition: Condition,
    /// Method label.
    pub method: String,
    /// Trials.
    pub trials: usize,
    /// Trials refused by the method (counted as failures).
    pub refused: usize,
    /// Trials with [`TrialRecord::success`].
    pub successes: usize,
    /// Success rate.
    pub success_rate: f64,
    /// Its Wilson 95 % interval.
    pub success_ci: (f64, f64),
    /// Trials with [`TrialRecord::resolved`].
    pub resolved: usize,
    /// Resolution rate.
    pub resolved_rate: f64,
    /// Its Wilson 95 % interval.
    pub resolved_ci: (f64, f64),
    /// True lines over all trials.
    pub lines: usize,
    /// True lines found.
    pub lines_found: usize,
    /// RMS position error of the found lines, in `1/N`.
    pub rmse_res: Option<f64>,
    /// `√(mean (e/√CRB)²)` over the found lines with a bound (about 1 for an efficient estimator).
    pub rmse_over_crb: Option<f64>,
    /// Its 95 % interval, from `Σ (e/√CRB)² ~ r²·χ²_n` (normal, unbiased, independent errors;
    /// the chi-square interval for a normal variance, e.g. Casella & Berger 2002, *Statistical
    /// Inference* 2nd ed., §9.2 (recalled)), with [`chi_square_quantile`]. Outliers past the
    /// threshold are not normal: there the interval is too narrow.
    pub rmse_over_crb_ci: Option<(f64, f64)>,
    /// Lines entering `rmse_over_crb`.
    pub crb_lines: usize,
    /// Median wall seconds per estimate.
    pub median_seconds: f64,
}

fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return 0.0;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

/// Summarise the trials of one condition and method.
pub fn summarise(condition: &Condition, method: &str, trials: &[&TrialRecord]) -> ConditionSummary {
    let n = trials.len();
    let successes = trials.iter().filter(|t| t.success).count();
    let resolved = trials.iter().filter(|t| t.resolved).count();
    let lines: Vec<_> = trials.iter().flat_map(|t| t.lines.iter()).collect();
    let errs: Vec<f64> = lines.iter().filter_map(|l| l.error_res).collect();
    let ratios: Vec<f64> = lines.iter().filter_map(|l| l.error_over_crb).collect();
    let rmse = |v: &[f64]| (v.iter().map(|e| e * e).sum::<f64>() / v.len() as f64).sqrt();
    let rmse_over_crb = (!ratios.is_empty()).then(|| rmse(&ratios));
    let rmse_over_crb_ci = rmse_over_crb.map(|r| {
        let m = ratios.len();
        let hi_q = chi_square_quantile(m, Z95);
        let lo_q = chi_square_quantile(m, -Z95);
        let scale = |q: f64| {
            if q > 0.0 {
                r * (m as f64 / q).sqrt()
            } else {
                f64::INFINITY
            }
        };
        (scale(hi_q), scale(lo_q))
    });
    let rate = |k: usize| if n == 0 { 0.0 } else { k as f64 / n as f64 };
    ConditionSummary {
        condition: *condition,
        method: method.to_string(),
        trials: n,
        refused: trials.iter().filter(|t| t.status == "refused").count(),
        successes,
        success_rate: rate(successes),
        success_ci: wilson_interval(successes, n, Z95),
        resolved,
        resolved_rate: rate(resolved),
        resolved_ci: wilson_interval(resolved, n, Z95),
        lines: lines.len(),
        lines_found: lines.iter().filter(|l| l.found).count(),
        rmse_res: (!errs.is_empty()).then(|| rmse(&errs)),
        rmse_over_crb,
        rmse_over_crb_ci,
        crb_lines: ratios.len(),
        median_seconds: median(trials.iter().map(|t| t.seconds).collect()),
    }
}

impl Campaign {
    /// One summary per condition and method, condition-major in plan order.
    pub fn summaries(&self) -> Vec<ConditionSummary> {
        let mut out = Vec::new();
        for c in &self.conditions {
            for m in &self.plan.methods {
                let trials: Vec<&TrialRecord> = self
                    .trials
                    .iter()
                    .filter(|t| t.condition.index == c.index && t.method == m.label())
                    .collect();
                out.push(summarise(c, m.label(), &trials));
            }
        }
        out
    }

    /// The trials as CSV: a header, then one row per trial × true line ([`super::Row`]); empty cells
    /// for missing values. Loads with `pandas.read_csv` as is.
    ///
    /// # Errors
    /// The writer's I/O error.
    pub fn write_csv<W: Write>(&self, out: W) -> io::Result<()> {
        let mut w = csv::Writer::from_writer(out);
        for t in &self.trials {
            for r in t.rows() {
                w.serialize(r)?;
            }
        }
        w.flush()
    }

    /// The same rows as JSON Lines (one object per line, `null` for missing values). Loads with
    /// `pandas.read_json(path, lines=True)`.
    ///
    /// # Errors
    /// The writer's I/O error.
    pub fn write_jsonl<W: Write>(&self, mut out: W) -> io::Result<()> {
        for t in &self.trials {
            for r in t.rows() {
                let line = serde_json::to_string(&r)?;
                writeln!(out, "{line}")?;
            }
        }
        out.flush()
    }

    /// The summaries as CSV, one row per condition × method, with the interval bounds in their own
    /// columns (`*_lo`, `*_hi`).
    ///
    /// # Errors
    /// The writer's I/O error.
    pub fn write_summary_csv<W: Write>(&self, out: W) -> io::Result<()> {
        #[derive(Serialize)]
        struct S<'a> {
            condition: usize,
            method: &'a str,
            samples: usize,
            spikes: usize,
            separation_res: f64,
            separation_fc: f64,
            snr_db: Option<f64>,
            amplitudes: &'static str,
            gaps: f64,
            trials: usize,
            refused: usize,
            success_rate: f64,
            success_lo: f64,
            success_hi: f64,
            resolved_rate: f64,
            resolved_lo: f64,
            resolved_hi: f64,
            rmse_res: Option<f64>,
            rmse_over_crb: Option<f64>,
            rmse_over_crb_lo: Option<f64>,
            rmse_over_crb_hi: Option<f64>,
            median_seconds: f64,
        }
        let mut w = csv::Writer::from_writer(out);
        for s in self.summaries() {
            let c = &s.condition;
            w.serialize(S {
                condition: c.index,
                method: &s.method,
                samples: c.band.len(),
                spikes: c.spikes,
                separation_res: c.separation_res,
                separation_fc: c.separation_fc,
                snr_db: c.snr_db,
                amplitudes: c.amplitudes.name(),
                gaps: c.gaps,
                trials: s.trials,
                refused: s.refused,
                success_rate: s.success_rate,
                success_lo: s.success_ci.0,
                success_hi: s.success_ci.1,
                resolved_rate: s.resolved_rate,
                resolved_lo: s.resolved_ci.0,
                resolved_hi: s.resolved_ci.1,
                rmse_res: s.rmse_res,
                rmse_over_crb: s.rmse_over_crb,
                rmse_over_crb_lo: s.rmse_over_crb_ci.map(|c| c.0),
                rmse_over_crb_hi: s.rmse_over_crb_ci.map(|c| c.1),
                median_seconds: s.median_seconds,
            })?;
        }
        w.flush()
    }
}
