//! The "which method when" table, derived from the numbers of a run.

use crate::numbers::{
    crb_rows, half_separation, resolution_rows, threshold_snr, BREAK_FOUND, BREAK_RATIO,
};
use crate::report::Results;
use crate::studies::HEAT_METHODS;
use finespike::eval::campaign::{AmplitudePattern, ConditionSummary};

/// Mean success rate of `method` over the heat-map cells that `keep` selects.
fn mean_success(
    heat: &[ConditionSummary],
    method: &str,
    keep: impl Fn(&ConditionSummary) -> bool,
) -> f64 {
    let cells: Vec<&ConditionSummary> = heat
        .iter()
        .filter(|s| s.method == method && keep(s))
        .collect();
    if cells.is_empty() {
        return 0.0;
    }
    cells.iter().map(|s| s.success_rate).sum::<f64>() / cells.len() as f64
}

fn best_of(scores: &[(String, f64)], higher_is_better: bool) -> (Vec<String>, f64) {
    let best = scores.iter().map(|s| s.1).fold(
        if higher_is_better { f64::MIN } else { f64::MAX },
        |a, b| {
            if higher_is_better {
                a.max(b)
            } else {
                a.min(b)
            }
        },
    );
    let names = scores
        .iter()
        .filter(|s| (s.1 - best).abs() <= 1e-9 + 0.02 * best.abs())
        .map(|s| s.0.clone())
        .collect();
    (names, best)
}

/// The "which method when" rows: situation, choice, the numbers behind it.
pub fn which_method_when(r: &Results) -> Vec<[String; 3]> {
    let mut rows = Vec::new();
    let heat = r.heat.summaries();
    let close = |s: &ConditionSummary| s.condition.separation_res < 1.0;
    for (label, pattern) in [
        ("random-phase", AmplitudePattern::RandomPhase),
        ("real positive", AmplitudePattern::RealPositive),
        ("alternating-sign", AmplitudePattern::AlternatingSign),
    ] {
        let scores: Vec<(String, f64)> = HEAT_METHODS
            .iter()
            .map(|m| {
                (
                    m.to_string(),
                    mean_success(&heat, m, |s| close(s) && s.condition.amplitudes == pattern),
                )
            })
            .collect();
        let (names, best) = best_of(&scores, true);
        let sdp = scores.iter().find(|s| s.0 == "sdp").map_or(0.0, |s| s.1);
        rows.push([
            format!("Exact data, {label} amplitudes, spikes closer than 1/N"),
            names.join(", "),
            format!(
                "mean exact-recovery rate over the map's cells below 1/N: {:.0} % (sdp: {:.0} %)",
                100.0 * best,
                100.0 * sdp
            ),
        ]);
    }
    let wide: Vec<(String, f64)> = HEAT_METHODS
        .iter()
        .map(|m| {
            (
                m.to_string(),
                mean_success(&heat, m, |s| s.condition.separation_res >= 2.0),
            )
        })
        .collect();
    let all_wide: Vec<String> = wide
        .iter()
        .filter(|s| s.1 >= 0.999)
        .map(|s| s.0.clone())
        .collect();
    rows.push([
        "Exact data, spikes at least 2/N (about 1/fc) apart".into(),
        if all_wide.is_empty() {
            "none without failures".into()
        } else {
            all_wide.join(", ")
        },
        "every trial of the map's cells at 2/N and above recovered exactly".into(),
    ]);
    let crb = crb_rows(&r.crb);
    let top = crb.iter().map(|c| c.snr).fold(f64::MIN, f64::max);
    let mut at_top: Vec<(String, f64)> = crb
        .iter()
        .filter(|c| c.snr == top && c.found >= BREAK_FOUND)
        .filter_map(|c| Some((c.method.clone(), c.ratio?)))
        .collect();
    at_top.sort_by(|a, b| a.1.total_cmp(&b.1));
    let efficient: Vec<String> = at_top
        .iter()
        .filter(|s| s.1 <= 1.2)
        .map(|s| s.0.clone())
        .collect();
    rows.push([
        format!("Noisy data, high SNR ({top} dB), lines 3/N apart"),
        if efficient.is_empty() {
            "none within 20 % of the bound".into()
        } else {
            efficient.join(", ")
        },
        format!(
            "RMSE/√CRB ≤ 1.2 at {top} dB ({})",
            at_top
                .iter()
                .map(|s| format!("{} {:.2}", s.0, s.1))
                .collect::<Vec<_>>()
                .join(", ")
        ),
    ]);
    let thresholds: Vec<(String, f64)> = r
        .crb
        .plan
        .methods
        .iter()
        .filter_map(|m| Some((m.name.clone(), threshold_snr(&crb, &m.name)?)))
        .collect();
    if !thresholds.is_empty() {
        let (names, best) = best_of(&thresholds, false);
        rows.push([
            "Noisy data, low SNR, lines 3/N apart".into(),
            names.join(", "),
            format!(
                "lowest threshold SNR, {best} dB (RMSE/√CRB ≤ {BREAK_RATIO} and ≥ 90 % of lines found from \
                 the top SNR down to it)"
            ),
        ]);
    }
    let arr = crb_rows(&r.arrays);
    let arr_thresholds: Vec<(String, f64)> = r
        .arrays
        .plan
        .methods
        .iter()
        .filter_map(|m| Some((m.name.clone(), threshold_snr(&arr, &m.name)?)))
        .collect();
    if !arr_thresholds.is_empty() {
        let (names, best) = best_of(&arr_thresholds, false);
        rows.push([
            format!(
                "Array snapshots, coherent pair (M = {}, L = {})",
                crate::studies::ARRAY_SENSORS,
                crate::studies::ARRAY_SNAPSHOTS
            ),
            names.join(", "),
            format!(
                "lowest threshold SNR, {best} dB per source (RMSE/√conditional CRB ≤ {BREAK_RATIO}, \
                 ≥ 90 % found from the top SNR down); thresholds: {}",
                arr_thresholds
                    .iter()
                    .map(|s| format!("{} {} dB", s.0, s.1))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        ]);
    }
    let res = resolution_rows(&r.res);
    for snr in r.res.plan.grid.snr_db.iter().flatten() {
        let seps: Vec<(String, f64)> = r
            .res
            .plan
            .methods
            .iter()
            .filter_map(|m| Some((m.name.clone(), half_separation(&res, &m.name, *snr)?)))
            .collect();
        if seps.is_empty() {
            continue;
        }
        let (names, best) = best_of(&seps, false);
        rows.push([
            format!("Two close lines in noise, {snr} dB"),
            names.join(", "),
            format!("resolve at least half the pairs from {best}/N on"),
        ]);
    }
    let nmax = r
        .cost
        .iter()
        .filter(|p| p.seconds.is_some())
        .map(|p| p.n)
        .max()
        .unwrap_or(0);
    let mut fastest: Vec<(String, f64)> = r
        .cost
        .iter()
        .filter(|p| p.n == nmax)
        .filter_map(|p| Some((p.method.clone(), p.seconds?)))
        .collect();
    fastest.sort_by(|a, b| a.1.total_cmp(&b.1));
    if let Some(f) = fastest.first() {
        let not_reached: Vec<String> = crate::studies::all_methods()
            .into_iter()
            .filter(|m| !fastest.iter().any(|f| f.0 == *m))
            .map(String::from)
            .collect();
        rows.push([
            format!("Long records (N = {nmax} in this run)"),
            fastest
                .iter()
                .take(3)
                .map(|s| s.0.clone())
                .collect::<Vec<_>>()
                .join(", "),
            format!(
                "fastest at N = {nmax}: {} {:.3} s{}",
                f.0,
                f.1,
                if not_reached.is_empty() {
                    String::new()
                } else {
                    format!(
                        "; not run that far (refused or over the time limit): {}",
                        not_reached.join(", ")
                    )
                }
            ),
        ]);
    }
    rows
}
