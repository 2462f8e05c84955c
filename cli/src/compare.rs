//! `compare`: several estimators on one file, or on a sweep of invented scenes, in one table.

use crate::recover::warnings;
use crate::show::{self, exact, num};
use crate::simulate::{scene_error, SceneArgs};
use crate::{
    input, noise_level, requested_noise, shown, DomainArg, Failure, ReportFormat, SolverArg,
};
use clap::{ArgGroup, Args, ValueEnum};
use finespike::eval::sweep::{self, Outcome, Summary, Tally};
use finespike::registry::{configure, method_names, MethodOptions};
use finespike::{crb_for, Error, Estimate, Estimator, NoiseLevel, PROVEN_SEPARATION_FC};

/// Whether the named method takes a model order (the registry says).
fn takes_order(name: &str) -> bool {
    finespike::registry::method(name).is_ok_and(|m| m.takes_order)
}
use indicatif::{ProgressBar, ProgressStyle};
use serde_json::json;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::time::Instant;

/// Run several methods on one file or on a sweep of invented scenes, and tabulate.
///
/// With --input, every method runs on that sample file (scored against --truth when given); with
/// --trials, on that many invented scenes drawn from the scene flags of `simulate`. Scoring matches recovered to true spikes optimally, a pair counting as found within 0.5/fc.
/// Columns: found (true spikes found / true spikes), missed, spurious, complete (trials with nothing
/// missed or spurious), RMSE·fc and max·fc (position error of the found spikes in Rayleigh units),
/// RMSE/√CRB (the RMS error against the Cramér–Rao bound of the true spikes: about 1 for an efficient
/// estimator; needs σ > 0), median time per estimate, errors (runs the method refused), unconv (runs
/// that did not converge), warned (runs whose estimate carried a warning).
///
/// Sweep trial i uses seed --seed + i, so any trial can be redrawn with `simulate --seed`. A progress
/// bar is shown on stderr when it is a terminal. The exit code is 4 when no method produced an
/// estimate at all (the table is printed first and names the errors).
///
/// A snapshot file (`n,snapshot,re,im`, array data) runs the methods that take snapshots (`all`: sdp,
/// ast, sfw, music, esprit, pencil); against an array truth (`simulate --sensors`) the table gives
/// found / missed / spurious (matched within half a resolution cell 0.5/M; spurious sources with at
/// least 1 % of the weakest true power counted apart) and the position errors in conditional
/// Cramér–Rao standard deviations.
#[derive(Args, Debug)]
#[command(
    group(ArgGroup::new("source").required(true).args(["input", "trials", "plan"])),
    after_help = crate::EXIT_CODES
)]
pub struct CompareArgs {
    /// Methods to run, comma-separated (e.g. `sdp,ast,esprit`), or `all`.
    #[arg(long, value_delimiter = ',', default_value = "all",
          value_parser = clap::builder::PossibleValuesParser::new(method_names().chain(["all"])))]
    methods: Vec<String>,
    /// Sample file to run every method on (CSV, header `k,re,im` or `n,re,im`).
    #[arg(long, short, conflicts_with = "SceneArgs")]
    input: Option<PathBuf>,
    /// Truth file for --input (JSON spikes): adds found / missed / spurious and position errors.
    #[arg(long, requires = "input")]
    truth: Option<PathBuf>,
    /// With --input: noise standard deviation σ given to the methods that use one (0 = exact data;
    /// omitted: estimated). Also sets σ for the Cramér–Rao column (otherwise the truth file's sigma).
    #[arg(long, requires = "input", allow_hyphen_values = true)]
    sigma: Option<f64>,
    /// Model order for the methods that take one (the subspace methods and greedy); the others
    /// choose their own and a note says so.
    #[arg(long)]
    order: Option<usize>,
    /// Solver of the convex problem for sdp and ast (see `recover --help`).
    #[arg(long, value_enum, default_value_t = SolverArg::Auto)]
    solver: SolverArg,
    /// Cutoff fc: of the band of a Fourier --input file (default: the largest |k|; refused with a
    /// time-sample file), or of the invented scenes (default 16).
    #[arg(long)]
    fc: Option<usize>,
    /// Fourier coefficients or time samples: checked against the header of --input; the kind of
    /// invented scene (default fourier).
    #[arg(long, value_enum)]
    domain: Option<DomainArg>,
    /// In a sweep: time records of exactly N samples (any N >= 2, even included) instead of --fc and
    /// --domain.
    #[arg(long, value_name = "N", requires = "trials", conflicts_with_all = ["fc", "domain"])]
    samples: Option<usize>,
    /// Number of invented scenes to run every method on.
    #[arg(long)]
    trials: Option<usize>,
    #[command(flatten)]
    scene: SceneArgs,
    /// In a sweep, let the methods estimate σ from each trial's data instead of giving them the true σ.
    #[arg(long, requires = "trials")]
    estimate_sigma: bool,
    /// With --input: the record's units and trend (--rate, --length, --detrend; see `recover
    /// --help`); positions are then also printed in the record's unit.
    #[command(flatten)]
    record: input::RecordArgs,
    /// With a snapshot --input: element spacing D of the array in wavelengths (angles in the report).
    #[arg(long, value_name = "D", requires = "input", allow_hyphen_values = true)]
    spacing: Option<f64>,
    /// A benchmark campaign described by a JSON plan (grid of conditions, methods with settings,
    /// draws, seed; layout in the library's `eval::campaign` docs), run in parallel on all cores.
    /// Needs --out; prints one summary row per condition and method.
    #[arg(long, requires = "out",
          conflicts_with_all = ["methods", "solver", "order", "fc", "domain", "samples", "estimate_sigma", "SceneArgs"])]
    plan: Option<PathBuf>,
    /// With --plan: file for the per-trial records, one row per trial × true line (CSV, or JSON
    /// Lines when the name ends in `.jsonl`).
    #[arg(long, requires = "plan")]
    out: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = ReportFormat::Text)]
    format: ReportFormat,
}

/// The method names asked for, checked against the registry.
fn method_list(asked: &[String]) -> Result<Vec<&'static str>, Failure> {
    if asked.iter().any(|m| m == "all") {
        return Ok(method_names().collect());
    }
    let mut out = Vec::new();
    for name in asked {
        match method_names().find(|m| *m == name.as_str()) {
            Some(m) if !out.contains(&m) => out.push(m),
            Some(_) => {}
            None => {
                return Err(Failure::Usage(format!(
                    "unknown method '{name}' in --methods: known methods are {}, or all",
                    method_names().collect::<Vec<_>>().join(", ")
                )))
            }
        }
    }
    Ok(out)
}

/// Exit 4 when no method produced an estimate on any data set (the table, printed first, says why).
fn every_run_failed(all_failed: bool) -> Result<(), Failure> {
    if all_failed {
        return Err(Failure::NoEstimate(
            "no method produced an estimate on these data (the errors are in the table)".into(),
        ));
    }
    Ok(())
}

/// The estimator `name` with the noise level, order (where taken) and solver (sdp, ast) asked for.
pub(crate) fn build(
    name: &str,
    noise: NoiseLevel,
    order: Option<usize>,
    solver: SolverArg,
) -> Result<Box<dyn Estimator>, Failure> {
    let backend = solver.backend();
    let options = MethodOptions {
        noise,
        order: order.filter(|_| takes_order(name)),
        backend: if matches!(name, "sdp" | "ast") {
            backend
        } else {
            finespike::Backend::Auto
        },
    };
    configure(name, &options)
        .map(|c| c.estimator)
        .map_err(|e| Failure::Usage(e.to_string()))
}

pub fn run(a: CompareArgs) -> Result<(), Failure> {
    if let (Some(plan), Some(out)) = (&a.plan, &a.out) {
        return crate::campaign::run_plan(plan, out, a.format);
    }
    let methods = method_list(&a.methods)?;
    if let Some(n) = a.order {
        if n == 0 {
            return Err(Failure::Usage(
                "--order 0: a model order must be at least 1".into(),
            ));
        }
        let without: Vec<&str> = methods
            .iter()
            .copied()
            .filter(|m| !takes_order(m))
            .collect();
        if !without.is_empty() {
            eprintln!(
                "note: --order {n} applies to {}; {} choose their own number of spikes",
                methods
                    .iter()
                    .copied()
                    .filter(|m| takes_order(m))
                    .collect::<Vec<_>>()
                    .join(", "),
                without.join(", ")
            );
        }
    }
    match (&a.input, a.trials) {
        (Some(path), _) => file_mode(&a, path.clone(), &methods),
        (None, Some(trials)) => sweep_mode(&a, trials, &methods),
        (None, None) => Err(Failure::Usage(
            "give --input FILE or --trials N".to_string(),
        )),
    }
}

fn progress(total: usize) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) = ProgressStyle::with_template(
        "{prefix:>8} {wide_bar} {pos}/{len} runs, {elapsed} (left {eta})",
    ) {
        bar.set_style(style);
    }
    bar
}

fn sweep_mode(a: &CompareArgs, trials: usize, methods: &[&'static str]) -> Result<(), Failure> {
    if trials == 0 {
        return Err(Failure::Usage(
            "--trials 0: at least one trial is needed".into(),
        ));
    }
    let r = &a.record;
    if r.rate.is_some() || r.length.is_some() || r.detrend.is_some() {
        return Err(Failure::Usage(
            "--rate, --length and --detrend apply to an --input file, not to a sweep of invented \
             scenes"
                .into(),
        ));
    }
    let fc = a.fc.unwrap_or(16);
    let domain = a.domain.unwrap_or(DomainArg::Fourier);
    // Settings errors surface before the first trial, not in the middle of the progress bar.
    for m in methods {
        build(m, NoiseLevel::Estimate, a.order, a.solver)?;
    }
    let mut tallies: Vec<Tally> = methods.iter().map(|m| Tally::new(m)).collect();
    let bar = progress(trials * methods.len());
    let started = Instant::now();
    for t in 0..trials {
        let seed = a.scene.seed.wrapping_add(t as u64);
        let sample = a
            .scene
            .scenario(fc, domain, a.samples, seed)
            .generate()
            .map_err(scene_error)?;
        let noise = if a.estimate_sigma {
            NoiseLevel::Estimate
        } else {
            noise_level(Some(sample.sigma))
        };
        let bound = (sample.sigma > 0.0)
            .then(|| crb_for(&sample.data, &sample.truth, sample.sigma).ok())
            .flatten();
        for (m, tally) in methods.iter().zip(tallies.iter_mut()) {
            bar.set_prefix(*m);
            let est = build(m, noise, a.order, a.solver)?;
            let outcome = sweep::run(est.as_ref(), &sample.data, &sample.truth, bound.as_ref());
            tally.add(&outcome);
            bar.inc(1);
        }
    }
    bar.finish_and_clear();
    let summaries: Vec<Summary> = tallies.iter().map(Tally::summary).collect();
    let s = &a.scene;
    let band = match (a.samples, domain) {
        (Some(n), _) => format!("{n} time samples"),
        (None, DomainArg::Fourier) => format!("Fourier band -{fc}..{fc}"),
        (None, DomainArg::Time) => format!("{} time samples", 2 * fc + 1),
    };
    let text = match a.format {
        ReportFormat::Json => {
            let v = json!({
                "mode": "sweep",
                "scene": {
                    "fc": match a.samples {
                        // fc = (N − 1)/2: an integer for odd N, a half-integer for even N.
                        Some(n) if n % 2 == 0 => json!((n as f64 - 1.0) / 2.0),
                        Some(n) => json!((n - 1) / 2),
                        None => json!(fc),
                    },
                    "samples": a.samples,
                    "domain": match (a.samples, domain) {
                        (None, DomainArg::Fourier) => "fourier",
                        _ => "time",
                    },
                    "count": s.count,
                    "separation_fc": s.separation,
                    "snr_db": s.snr,
                    "amplitudes": s.amplitudes.to_possible_value().map(|v| v.get_name().to_string()),
                    "subset": s.subset,
                    "first_seed": s.seed,
                    "trials": trials,
                },
                "sigma_given_to_methods": !a.estimate_sigma,
                "methods": summaries,
            });
            pretty(&v)
        }
        ReportFormat::Csv => sweep::to_csv(&summaries),
        ReportFormat::Text => {
            let mut out = format!(
                "{trials} invented scenes (seeds {}..={}): {} spikes, closest pair {}/fc, {band}, {}, \
                 {} amplitudes{}\n",
                s.seed,
                s.seed.wrapping_add(trials as u64 - 1),
                s.count,
                num(s.separation),
                match s.snr {
                    Some(snr) => format!("SNR {} dB (weakest spike)", num(snr)),
                    None => "exact data".to_string(),
                },
                s.amplitudes
                    .to_possible_value()
                    .map_or_else(String::new, |v| v.get_name().to_string()),
                if s.subset < 1.0 {
                    format!(", {:.0}% of the band kept", 100.0 * s.subset)
                } else {
                    String::new()
                }
            );
            out.push_str(&format!(
                "σ {}; total time {:.1} s\n\n",
                if a.estimate_sigma {
                    "estimated by each method from the data"
                } else {
                    "given to the methods that use one"
                },
                started.elapsed().as_secs_f64()
            ));
            out.push_str(&sweep::table(&summaries));
            out.push_str(&legend(s.snr.is_some()));
            // The scenes' own separation (the truth, before any estimate) against the record's
            // resolution 1/N and the library's proven threshold.
            let (n, fc_scene) = match a.samples {
                Some(n) => (n as f64, (n as f64 - 1.0) / 2.0),
                None => ((2 * fc + 1) as f64, fc as f64),
            };
            let cells = s.separation / fc_scene * n;
            if cells < 1.0 {
                out.push_str(&format!(
                    "\nUNDER-RESOLVED: the closest pair is {} resolution cells (1/N) = {}/fc apart, \
                     closer than the record's resolution 1/N; no recovery guarantee covers these scenes \
                     and failures are expected.\n",
                    show::sig(cells, 3),
                    num(s.separation)
                ));
            } else if s.separation < PROVEN_SEPARATION_FC {
                out.push_str(&format!(
                    "\nNote: the closest pair is {} resolution cells (1/N) = {}/fc apart: resolved, but \
                     below the proven exact-recovery threshold {}/fc for TV minimisation.\n",
                    show::sig(cells, 3),
                    num(s.separation),
                    num(PROVEN_SEPARATION_FC)
                ));
            }
            out
        }
    };
    crate::emit(&text)?;
    every_run_failed(summaries.iter().all(|s| s.errors == s.trials))
}

fn legend(noisy: bool) -> String {
    let mut out = String::from(
        "\nfound      true spikes with a recovered spike within 0.5/fc (optimal matching) / true spikes\n\
         complete   trials with nothing missed and nothing spurious\n\
         RMSE·fc    RMS position error of the found spikes in Rayleigh units (1/fc); max·fc the largest\n",
    );
    if noisy {
        out.push_str(
            "RMSE/√CRB  that error against the Cramér–Rao bound of the true spikes (about 1: as good as\n\
             \x20          an unbiased estimator can be; over few trials chance moves it either way)\n",
        );
    } else {
        out.push_str("RMSE/√CRB  - : exact data, the bound is 0\n");
    }
    out.push_str(
        "median s   median time per estimate\n\
         errors     runs the method refused\n\
         unconv     runs that did not converge\n\
         warned     runs whose estimate carried a warning\n",
    );
    out
}

fn pretty(v: &serde_json::Value) -> String {
    serde_json::to_string_pretty(v).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}")) + "\n"
}

fn file_mode(a: &CompareArgs, path: PathBuf, methods: &[&'static str]) -> Result<(), Failure> {
    if crate::array_input::is_snapshot_file(&path) {
        return array_file_mode(a, &path, methods);
    }
    if let Some(d) = a.spacing {
        return Err(Failure::Usage(format!(
            "--spacing {d} applies to snapshot files of array data, but {} is a single-record \
             sample file",
            shown(&path)
        )));
    }
    let noise = requested_noise(a.sigma)?;
    let data = input::load_samples(&path, a.fc, a.domain)?;
    let data = a.record.apply(data, &path)?;
    let truth = match &a.truth {
        Some(t) => Some(input::load_spikes(t).map_err(Failure::Input)?),
        None => None,
    };
    let Some(truth) = truth else {
        return file_without_truth(a, &path, &data, methods, noise);
    };
    let crb_sigma = a
        .sigma
        .filter(|s| *s > 0.0)
        .or(truth.sigma.filter(|s| *s > 0.0));
    let bound = crb_sigma.and_then(|s| crb_for(&data, &truth.spikes, s).ok());
    let mut rows: Vec<(Summary, Outcome)> = Vec::new();
    for m in methods {
        let est = build(m, noise, a.order, a.solver)?;
        let outcome = sweep::run(est.as_ref(), &data, &truth.spikes, bound.as_ref());
        let mut tally = Tally::new(m);
        tally.add(&outcome);
        rows.push((tally.summary(), outcome));
    }
    let summaries: Vec<Summary> = rows.iter().map(|r| r.0.clone()).collect();
    let text = match a.format {
        ReportFormat::Json => pretty(&json!({
            "mode": "file",
            "input": shown(&path),
            "truth": a.truth.as_deref().map(shown),
            "crb_sigma": crb_sigma,
            "methods": rows.iter().map(|(s, o)| json!({"summary": s, "outcome": o})).collect::<Vec<_>>(),
        })),
        ReportFormat::Csv => sweep::to_csv(&summaries),
        ReportFormat::Text => {
            let gap = truth.spikes.min_separation();
            let sep = gap * data.fc();
            let cells = gap * data.band_len() as f64;
            let mut out = format!(
                "{} ({}) against {} ({} spikes{}); σ for the bound: {}\n\n",
                shown(&path),
                show::band(&data),
                a.truth.as_deref().map_or_else(String::new, shown),
                truth.spikes.len(),
                if sep.is_finite() {
                    format!(
                        ", closest pair {} resolution cells (1/N) = {}/fc apart",
                        show::sig(cells, 3),
                        show::sig(sep, 3)
                    )
                } else {
                    String::new()
                },
                crb_sigma.map_or_else(|| "none (exact data or unknown)".to_string(), num)
            );
            out.push_str(&sweep::table(&summaries));
            out.push('\n');
            for (_, o) in &rows {
                let status = match (&o.status, &o.error) {
                    (_, Some(e)) => format!("error: {e}"),
                    (Some(s), None) => s.to_string(),
                    (None, None) => "no result".to_string(),
                };
                out.push_str(&format!("{}: {status}\n", o.method));
                for w in &o.warnings {
                    out.push_str(&format!("  warning: {w}\n"));
                }
            }
            out.push_str(&legend(bound.is_some()));
            if cells < 1.0 {
                out.push_str(&format!(
                    "\nUNDER-RESOLVED: the true spikes' closest pair is {} resolution cells (1/N) \
                     apart, closer than the record's resolution 1/N; failures are expected behaviour \
                     here.\n",
                    show::sig(cells, 3)
                ));
            }
            out
        }
    };
    crate::emit(&text)?;
    every_run_failed(summaries.iter().all(|s| s.errors == s.trials))
}

/// A snapshot file: the methods that take snapshots (all of them for `all`), scored against an array
/// truth when one is given.
fn array_file_mode(
    a: &CompareArgs,
    path: &std::path::Path,
    methods: &[&'static str],
) -> Result<(), Failure> {
    let r = &a.record;
    if r.rate.is_some() || r.length.is_some() || r.detrend.is_some() {
        return Err(Failure::Usage(format!(
            "--rate, --length and --detrend apply to single records, but {} is a snapshot file",
            shown(path)
        )));
    }
    let methods: Vec<&'static str> = if a.methods.iter().any(|m| m == "all") {
        methods
            .iter()
            .copied()
            .filter(|m| finespike::registry::method(m).is_ok_and(|r| r.takes_snapshots))
            .collect()
    } else {
        methods.to_vec()
    };
    crate::array_compare::run(&crate::array_compare::Request {
        methods,
        path,
        truth: a.truth.as_deref(),
        sigma: a.sigma,
        order: a.order,
        solver: a.solver,
        fc: a.fc,
        domain: a.domain,
        spacing: a.spacing,
        format: a.format,
    })
}

/// Without a truth: each method's own figures side by side, and its spikes.
fn file_without_truth(
    a: &CompareArgs,
    path: &std::path::Path,
    data: &finespike::Measurements,
    methods: &[&'static str],
    noise: NoiseLevel,
) -> Result<(), Failure> {
    let mut results: Vec<(&str, Result<Estimate, Error>, f64)> = Vec::new();
    for m in methods {
        let est = build(m, noise, a.order, a.solver)?;
        let start = Instant::now();
        let r = est.estimate(data);
        results.push((m, r, start.elapsed().as_secs_f64()));
    }
    let text = match a.format {
        ReportFormat::Json => pretty(&json!({
            "mode": "file",
            "input": shown(path),
            "methods": results.iter().map(|(m, r, s)| match r {
                Ok(e) => json!({"method": m, "seconds": s, "estimate": crate::recover::result_json(e, data)}),
                Err(e) => json!({"method": m, "seconds": s, "error": e.to_string()}),
            }).collect::<Vec<_>>(),
        })),
        ReportFormat::Csv => {
            let mut out = String::from(
                "method,status,lines,separation_cells,separation_fc,residual_norm,seconds,error\n",
            );
            for (m, r, s) in &results {
                match r {
                    Ok(e) => out.push_str(&format!(
                        "{m},{},{},{},{},{},{},\n",
                        e.status,
                        e.diagnostics.lines.len(),
                        e.diagnostics
                            .separation_cells
                            .map_or_else(String::new, exact),
                        e.diagnostics.separation_fc.map_or_else(String::new, exact),
                        exact(e.diagnostics.residual_norm),
                        exact(*s)
                    )),
                    Err(e) => out.push_str(&format!(
                        "{m},,,,,,{},\"{}\"\n",
                        exact(*s),
                        e.to_string().replace('"', "'")
                    )),
                }
            }
            out
        }
        ReportFormat::Text => {
            let mut out = format!(
                "{} ({}); no truth given: each method's own figures\n\n",
                shown(path),
                show::band(data)
            );
            out.push_str(&format!(
                "{:<8} {:>18} {:>6} {:>11} {:>10} {:>11} {:>9}\n",
                "method", "status", "lines", "closest·N", "closest·fc", "residual", "seconds"
            ));
            out.push_str(&format!("{}\n", "-".repeat(79)));
            let fmt = |x: Option<f64>| x.map_or_else(|| "-".to_string(), |x| format!("{x:.3}"));
            for (m, r, s) in &results {
                match r {
                    Ok(e) => out.push_str(&format!(
                        "{m:<8} {:>18} {:>6} {:>11} {:>10} {:>11} {s:>9.4}\n",
                        e.status.to_string(),
                        e.diagnostics.lines.len(),
                        fmt(e.diagnostics.separation_cells),
                        fmt(e.diagnostics.separation_fc),
                        num(e.diagnostics.residual_norm)
                    )),
                    Err(_) => out.push_str(&format!(
                        "{m:<8} {:>18} {:>6} {:>11} {:>10} {:>11} {s:>9.4}\n",
                        "error", "-", "-", "-", "-"
                    )),
                }
            }
            out.push_str(
                "\nclosest·N: the closest pair in resolution cells 1/N (one periodogram bin); \
                 closest·fc: in the TV theory's unit 1/fc\n\n",
            );
            let (what, unit) = match (data.domain(), show::unit(data)) {
                (finespike::Domain::Time, u) => ("frequencies", format!(" ({u})")),
                (finespike::Domain::Fourier, _) if data.scale().is_some() => {
                    ("locations", String::new())
                }
                _ => ("positions", String::new()),
            };
            for (m, r, _) in &results {
                match r {
                    Ok(e) => {
                        let pos: Vec<String> = e
                            .diagnostics
                            .lines
                            .iter()
                            .map(|l| show::sig(show::line_value(l), 7))
                            .collect();
                        out.push_str(&format!("{m}: {what}{unit} {}\n", pos.join(" ")));
                        for w in warnings(e) {
                            out.push_str(&format!("  warning: {w}\n"));
                        }
                    }
                    Err(e) => out.push_str(&format!("{m}: error: {e}\n")),
                }
            }
            out
        }
    };
    crate::emit(&text)?;
    every_run_failed(results.iter().all(|r| r.1.is_err()))
}
