//! `compare` on a snapshot file: several methods on one array record, scored against an array truth
//! when one is given (found / missed / spurious, position errors in Cramér–Rao units).

use crate::array_input::{self, describe, load_array_truth, warnings};
use crate::show::{exact, num, sig};
use crate::{requested_noise, shown, Failure, ReportFormat, SolverArg};
use finespike::eval::io_snapshots::{array_estimate_json, ArrayTruth};
use finespike::eval::metrics;
use finespike::{ArrayEstimate, Complex64, Error, Snapshots, Spike, Spikes};
use serde_json::json;
use std::path::Path;
use std::time::Instant;

/// A recovered source with less than this share of the weakest true source's power is not counted
/// as a significant spurious source (the acceptance rule: 1 %).
pub const SPURIOUS_POWER_SHARE: f64 = 0.01;

/// What `compare` asks of the array runs.
pub struct Request<'a> {
    /// The methods to run.
    pub methods: Vec<&'static str>,
    /// The snapshot file.
    pub path: &'a Path,
    /// The array truth, when given.
    pub truth: Option<&'a Path>,
    /// `--sigma`.
    pub sigma: Option<f64>,
    /// `--order`.
    pub order: Option<usize>,
    /// `--solver`.
    pub solver: SolverArg,
    /// `--fc` (Fourier snapshot files).
    pub fc: Option<usize>,
    /// `--domain`.
    pub domain: Option<crate::DomainArg>,
    /// `--spacing`.
    pub spacing: Option<f64>,
    /// `--format`.
    pub format: ReportFormat,
}

/// The score of one method against the truth.
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct ArrayScore {
    /// True sources with a recovered one within half a resolution cell (optimal matching).
    pub found: usize,
    /// True sources without one.
    pub missed: usize,
    /// Recovered sources matched to no true one.
    pub spurious: usize,
    /// Of those, the ones with at least 1 % of the weakest true source's power.
    pub spurious_significant: usize,
    /// Largest position error of the found sources in Cramér–Rao standard deviations.
    pub max_error_crb: Option<f64>,
    /// RMS of those errors in standard deviations.
    pub rms_error_crb: Option<f64>,
    /// Largest position error in resolution cells 1/M.
    pub max_error_cells: Option<f64>,
}

/// Score `estimate` against `truth` (sorted by position) with per-source standard deviations `std`.
pub fn score(
    estimate: &ArrayEstimate,
    truth: &ArrayTruth,
    std: Option<&[f64]>,
    m: usize,
) -> Result<ArrayScore, Error> {
    let spikes = |items: Vec<(f64, f64)>| -> Result<Spikes, Error> {
        Spikes::new(
            items
                .into_iter()
                .map(|(p, power)| Spike::new(p, Complex64::new(power.sqrt(), 0.0)))
                .collect(),
        )
    };
    let est = spikes(
        estimate
            .sources
            .iter()
            .map(|s| (s.position, s.power))
            .collect(),
    )?;
    let tru = spikes(
        truth
            .sources
            .iter()
            .map(|s| (s.position, s.power))
            .collect(),
    )?;
    // Gate 0.5/fc with fc = M: half a resolution cell 1/M.
    let sc = metrics::score(&est, &tru, m as f64)?;
    let weakest = truth
        .sources
        .iter()
        .map(|s| s.sample_power)
        .fold(f64::INFINITY, f64::min);
    let est_spikes: Vec<&Spike> = est.iter().collect();
    let spurious_significant = sc
        .spurious_estimates
        .iter()
        .filter(|&&i| {
            est_spikes
                .get(i)
                .is_some_and(|s| s.amplitude.norm_sqr() >= SPURIOUS_POWER_SHARE * weakest)
        })
        .count();
    let errs: Vec<f64> = sc.pairs.iter().map(|p| p.position_error.abs()).collect();
    let in_crb: Option<Vec<f64>> = std.map(|s| {
        sc.pairs
            .iter()
            .map(|p| p.position_error.abs() / s[p.truth_index])
            .collect()
    });
    let max = |v: &[f64]| {
        v.iter()
            .copied()
            .fold(None, |a: Option<f64>, x| Some(a.map_or(x, |a| a.max(x))))
    };
    Ok(ArrayScore {
        found: sc.found,
        missed: sc.missed,
        spurious: sc.spurious,
        spurious_significant,
        max_error_crb: in_crb.as_deref().and_then(max),
        rms_error_crb: in_crb
            .as_deref()
            .filter(|v| !v.is_empty())
            .map(|v| (v.iter().map(|x| x * x).sum::<f64>() / v.len() as f64).sqrt()),
        max_error_cells: max(&errs).map(|e| e * m as f64),
    })
}

/// One method's run.
struct Run {
    method: &'static str,
    seconds: f64,
    result: Result<ArrayEstimate, Error>,
    score: Option<ArrayScore>,
}

/// `compare --input SNAPSHOTS [--truth ARRAY_TRUTH]`.
pub fn run(r: &Request) -> Result<(), Failure> {
    let noise = requested_noise(r.sigma)?;
    let data = array_input::load_snapshots(r.path, r.fc, r.domain, r.spacing)?;
    let mut truth = match r.truth {
        Some(t) if !array_input::is_array_truth_file(t) => {
            return Err(Failure::Usage(format!(
                "{} is a snapshot file: its truth must be an array truth (\"kind\": \"array\", \
                 written by simulate --sensors), but {} is not one",
                shown(r.path),
                shown(t)
            )))
        }
        Some(t) => Some(load_array_truth(t)?),
        None => None,
    };
    if let Some(t) = &mut truth {
        t.sources.sort_by(|a, b| a.position.total_cmp(&b.position));
        if t.snapshots != data.snapshot_count() {
            return Err(Failure::Usage(format!(
                "the truth describes {} snapshots, but {} holds {}: they are not the same scene",
                t.snapshots,
                shown(r.path),
                data.snapshot_count()
            )));
        }
    }
    let crb_sigma = r
        .sigma
        .filter(|s| *s > 0.0)
        .or(truth.as_ref().map(|t| t.sigma).filter(|s| *s > 0.0));
    let std: Option<Vec<f64>> = match (&truth, crb_sigma) {
        (Some(t), Some(s)) => {
            finespike::conditional_crb(&data, &t.positions(), &t.amplitude_matrix(), s)
                .ok()
                .map(|v| v.iter().map(|x| x.sqrt()).collect())
        }
        _ => None,
    };
    let m = data.band_len();
    let mut runs = Vec::new();
    for name in &r.methods {
        let est = crate::compare::build(name, noise, r.order, r.solver)?;
        let start = Instant::now();
        let result = est.estimate_snapshots(&data);
        let seconds = start.elapsed().as_secs_f64();
        let score = match (&result, &truth) {
            (Ok(e), Some(t)) => Some(score(e, t, std.as_deref(), m).map_err(Failure::Input)?),
            _ => None,
        };
        runs.push(Run {
            method: name,
            seconds,
            result,
            score,
        });
    }
    let text = match r.format {
        ReportFormat::Json => json_report(r, &data, &runs, crb_sigma),
        ReportFormat::Csv => csv_report(&runs),
        ReportFormat::Text => text_report(r, &data, truth.as_ref(), &runs, crb_sigma),
    };
    crate::emit(&text)?;
    if runs.iter().all(|x| x.result.is_err()) {
        return Err(Failure::NoEstimate(
            "no method produced an estimate on these data (the errors are in the table)".into(),
        ));
    }
    Ok(())
}

fn json_report(r: &Request, data: &Snapshots, runs: &[Run], crb_sigma: Option<f64>) -> String {
    let methods: Vec<_> = runs
        .iter()
        .map(|x| match &x.result {
            Ok(e) => json!({
                "method": x.method,
                "seconds": x.seconds,
                "score": x.score,
                "estimate": array_estimate_json(e, data),
            }),
            Err(e) => json!({"method": x.method, "seconds": x.seconds, "error": e.to_string()}),
        })
        .collect();
    serde_json::to_string_pretty(&json!({
        "mode": "snapshots",
        "input": shown(r.path),
        "truth": r.truth.map(shown),
        "crb_sigma": crb_sigma,
        "methods": methods,
    }))
    .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
        + "\n"
}

fn csv_report(runs: &[Run]) -> String {
    let mut out = String::from(
        "method,status,sources,found,missed,spurious,spurious_significant,max_error_crb,\
         rms_error_crb,max_error_cells,seconds,error\n",
    );
    let opt = |x: Option<f64>| x.map_or_else(String::new, exact);
    for x in runs {
        match &x.result {
            Ok(e) => {
                let s = x.score.clone().unwrap_or_default();
                let counts = if x.score.is_some() {
                    format!(
                        "{},{},{},{}",
                        s.found, s.missed, s.spurious, s.spurious_significant
                    )
                } else {
                    ",,,".to_string()
                };
                out.push_str(&format!(
                    "{},{},{},{counts},{},{},{},{},\n",
                    x.method,
                    e.status,
                    e.sources.len(),
                    opt(s.max_error_crb),
                    opt(s.rms_error_crb),
                    opt(s.max_error_cells),
                    exact(x.seconds)
                ));
            }
            Err(e) => out.push_str(&format!(
                "{},,,,,,,,,,{},\"{}\"\n",
                x.method,
                exact(x.seconds),
                e.to_string().replace('"', "'")
            )),
        }
    }
    out
}

fn text_report(
    r: &Request,
    data: &Snapshots,
    truth: Option<&ArrayTruth>,
    runs: &[Run],
    crb_sigma: Option<f64>,
) -> String {
    let mut out = format!("{}: {}\n", shown(r.path), describe(data));
    match (truth, r.truth) {
        (Some(t), Some(p)) => out.push_str(&format!(
            "against {} ({} sources); σ for the bound: {}\n\n",
            shown(p),
            t.sources.len(),
            crb_sigma.map_or_else(|| "none (exact data or unknown)".to_string(), num)
        )),
        _ => out.push_str("no truth given: each method's own sources\n\n"),
    }
    let dash = |x: Option<f64>| x.map_or_else(|| "-".to_string(), |v| sig(v, 3));
    out.push_str(&format!(
        "{:<8} {:>18} {:>7} {:>5} {:>6} {:>8} {:>6} {:>8} {:>8} {:>8} {:>9}\n",
        "method",
        "status",
        "sources",
        "found",
        "missed",
        "spurious",
        "≥1%",
        "max/CRB",
        "rms/CRB",
        "max·M",
        "seconds"
    ));
    out.push_str(&format!("{}\n", "-".repeat(104)));
    for x in runs {
        match &x.result {
            Ok(e) => {
                let s = x.score.clone();
                let c = |f: fn(&ArrayScore) -> usize| {
                    s.as_ref()
                        .map_or_else(|| "-".to_string(), |s| f(s).to_string())
                };
                out.push_str(&format!(
                    "{:<8} {:>18} {:>7} {:>5} {:>6} {:>8} {:>6} {:>8} {:>8} {:>8} {:>9.4}\n",
                    x.method,
                    e.status.to_string(),
                    e.sources.len(),
                    c(|s| s.found),
                    c(|s| s.missed),
                    c(|s| s.spurious),
                    c(|s| s.spurious_significant),
                    dash(s.as_ref().and_then(|s| s.max_error_crb)),
                    dash(s.as_ref().and_then(|s| s.rms_error_crb)),
                    dash(s.as_ref().and_then(|s| s.max_error_cells)),
                    x.seconds
                ));
            }
            Err(_) => out.push_str(&format!(
                "{:<8} {:>18} {:>7} {:>5} {:>6} {:>8} {:>6} {:>8} {:>8} {:>8} {:>9.4}\n",
                x.method, "error", "-", "-", "-", "-", "-", "-", "-", "-", x.seconds
            )),
        }
    }
    out.push('\n');
    for x in runs {
        match &x.result {
            Ok(e) => {
                let places: Vec<String> = e
                    .sources
                    .iter()
                    .map(|s| match s.angle_deg {
                        Some(a) => format!("{}°", sig(a, 4)),
                        None => sig(s.frequency, 5),
                    })
                    .collect();
                let what = if data.spacing().is_some() {
                    "angles"
                } else {
                    "spatial frequencies"
                };
                out.push_str(&format!("{}: {what} {}\n", x.method, places.join(" ")));
                for w in warnings(e) {
                    out.push_str(&format!("  warning: {w}\n"));
                }
            }
            Err(e) => out.push_str(&format!("{}: error: {e}\n", x.method)),
        }
    }
    if truth.is_some() {
        out.push_str(&format!(
            "\nfound     true sources with a recovered one within half a resolution cell 0.5/M \
             (optimal matching)\nspurious  recovered sources matched to none; ≥1%: those with at \
             least {}% of the weakest true source's power\nmax/CRB   largest position error of the \
             found sources in conditional Cramér–Rao standard deviations\n          (Stoica & \
             Nehorai 1989, for the true amplitudes); rms/CRB their RMS; max·M the largest error \
             in cells 1/M\n",
            num(100.0 * SPURIOUS_POWER_SHARE)
        ));
    }
    out
}
