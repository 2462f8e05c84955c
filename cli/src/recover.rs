//! `recover`: one estimator on one sample file; the result on stdout, a readable summary on stderr.

use crate::show::{num, sig};
use crate::{configure, input, requested_noise, Failure, Format, MethodArgs};
use clap::Args;
use finespike::eval::io;
use finespike::{Estimate, NoiseLevel, Warning, PROVEN_SEPARATION_FC};

/// Recover spikes from a sample file with one method.
///
/// The result goes to stdout as JSON (or CSV); a short summary of the diagnostics and every warning
/// go to stderr. The summary gives the solver status and iterations, the noise level used and whether it was
/// estimated, the separation of the recovered spikes in Rayleigh units against the proven threshold,
/// the residual against the noise, the certificate margin (convex methods), the model order (subspace
/// methods) and the Cramér–Rao standard deviation of each position.
#[derive(Args, Debug)]
#[command(after_help = crate::EXIT_CODES)]
pub struct RecoverArgs {
    #[command(flatten)]
    samples: input::SampleArgs,
    #[command(flatten)]
    method: MethodArgs,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t = Format::Json)]
    format: Format,
    /// Print only the warnings on stderr, not the summary.
    #[arg(long, short)]
    quiet: bool,
}

pub fn run(a: RecoverArgs) -> Result<(), Failure> {
    let noise = requested_noise(a.method.sigma)?;
    if a.samples.input.len() > 1 {
        return run_batch(&a, noise);
    }
    let data = a.samples.load()?;
    let estimator = configure(&a.method, noise)?;
    let estimate = estimator.estimate(&data).map_err(Failure::Estimate)?;
    if !a.quiet {
        eprint!(
            "{}",
            summary(
                &estimate,
                finespike::registry::method(&a.method.method).is_ok(),
                noise
            )
        );
    }
    report_warnings(&estimate);
    let text = match a.format {
        Format::Json => io::estimate_to_json(&estimate),
        Format::Csv => crate::show::spikes_csv(&estimate.spikes),
    };
    println!("{}", text.trim_end());
    Ok(())
}

/// Several input files: every file read (a file that cannot be read is reported on its own line),
/// the estimates made in parallel on all cores ([`finespike::estimate_batch`]: input order, the same
/// results as one file at a time), then one JSON object per input on stdout, in input order, each
/// with an `"input"` field holding the path and either the estimate or an `"error"`. The exit code
/// is that of the first failure (3 unreadable file, 4 estimate refused), after every line is written.
fn run_batch(a: &RecoverArgs, noise: NoiseLevel) -> Result<(), Failure> {
    if a.format != Format::Json {
        return Err(Failure::Usage(
            "several --input files are written as JSON Lines; --format csv takes one file".into(),
        ));
    }
    let estimator = configure(&a.method, noise)?;
    let loaded: Vec<Result<finespike::Measurements, Failure>> = a
        .samples
        .input
        .iter()
        .map(|p| a.samples.load_path(p))
        .collect();
    let records: Vec<finespike::Measurements> = loaded
        .iter()
        .filter_map(|r| r.as_ref().ok().cloned())
        .collect();
    let mut estimates = finespike::estimate_batch(estimator.as_ref(), &records).into_iter();
    let mut first_failure: Option<Failure> = None;
    for (path, load) in a.samples.input.iter().zip(loaded) {
        let shown = crate::shown(path);
        let line = match load {
            Err(f) => {
                let text = failure_text(&f);
                first_failure.get_or_insert(f);
                serde_json::json!({ "input": shown, "error": text })
            }
            Ok(_) => match estimates.next() {
                Some(Ok(estimate)) => {
                    for w in warnings(&estimate) {
                        eprintln!("warning: {shown}: {w}");
                    }
                    let mut v = serde_json::to_value(&estimate).unwrap_or_default();
                    if let Some(obj) = v.as_object_mut() {
                        obj.insert("input".into(), serde_json::Value::String(shown));
                    }
                    v
                }
                Some(Err(e)) => {
                    let text = e.to_string();
                    first_failure.get_or_insert(Failure::Estimate(e));
                    serde_json::json!({ "input": shown, "error": text })
                }
                // Invariant: `records` holds exactly the loaded files, in order, and
                // `estimate_batch` returns one result per record, so each `Ok` load has its estimate.
                None => unreachable!("one estimate per loaded record"),
            },
        };
        println!("{line}");
    }
    match first_failure {
        Some(f) => Err(f),
        None => Ok(()),
    }
}

/// The message of a failure, as the error line would print it.
fn failure_text(f: &Failure) -> String {
    match f {
        Failure::Usage(s) | Failure::NoEstimate(s) | Failure::Output(s) => s.clone(),
        Failure::Input(e) | Failure::Estimate(e) => e.to_string(),
    }
}

/// The warnings of an estimate, in plain words: the library's [`Warning`]s, and a non-converged
/// solver status when no warning already says so (non-convergence is reported once).
pub fn warnings(estimate: &Estimate) -> Vec<String> {
    let said = estimate
        .diagnostics
        .warnings
        .iter()
        .any(|w| matches!(w, Warning::NotConverged { .. }));
    let mut out = Vec::new();
    if !estimate.status.is_usable() && !said {
        out.push(format!(
            "the solver stopped with status '{}': the result is not a converged solution",
            estimate.status
        ));
    }
    out.extend(estimate.diagnostics.warnings.iter().map(|w| w.to_string()));
    out
}

/// Every warning of an estimate on stderr, one per line.
pub fn report_warnings(estimate: &Estimate) {
    for w in warnings(estimate) {
        eprintln!("warning: {w}");
    }
}

fn list(values: &[f64]) -> String {
    values
        .iter()
        .map(|v| num(*v))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The separation verdict the estimate carries: the library's separation warnings, not a re-derived
/// threshold.
fn separation_verdict(estimate: &Estimate) -> &'static str {
    let warned = |pick: fn(&Warning) -> bool| estimate.diagnostics.warnings.iter().any(pick);
    if warned(|w| matches!(w, Warning::UnderResolved { .. })) {
        ", Rayleigh limit 1/fc: UNDER-RESOLVED"
    } else if warned(|w| matches!(w, Warning::BelowProvenSeparation { .. })) {
        ": below it"
    } else {
        ""
    }
}

/// The readable summary of an estimate's diagnostics (several lines, each ending in a newline).
pub fn summary(estimate: &Estimate, uses_noise: bool, requested: NoiseLevel) -> String {
    let d = &estimate.diagnostics;
    let mut steps = match d.iterations {
        0 => "direct method, no iterations".to_string(),
        1 => "after 1 iteration".to_string(),
        n => format!("after {n} iterations"),
    };
    if let Some(gap) = d.duality_gap {
        steps = format!("{steps}, relative duality gap {}", sig(gap, 2));
    }
    if let Some(solver) = d.solver {
        steps = format!("{solver}, {steps}");
    }
    let mut out = format!(
        "{}: {} ({steps}) in {} s\n",
        estimate.method,
        estimate.status,
        sig(d.solve_seconds, 3)
    );
    let row = |out: &mut String, label: &str, text: String| {
        out.push_str(&format!("  {label:<12} {text}\n"));
    };
    let noise = match (d.sigma, uses_noise) {
        (_, false) => "not used by this method".to_string(),
        (None, true) if requested == NoiseLevel::Exact => {
            "σ = 0, exact data (as given)".to_string()
        }
        (None, true) => "none recorded by this method".to_string(),
        (Some(0.0), true) => format!(
            "σ = 0, exact data ({})",
            if d.sigma_estimated {
                "detected in the data"
            } else {
                "as given"
            }
        ),
        (Some(s), true) => format!(
            "σ = {} ({})",
            num(s),
            if d.sigma_estimated {
                "estimated from the data"
            } else {
                "as given"
            }
        ),
    };
    row(&mut out, "noise", noise);
    let n = estimate.spikes.len();
    let spikes = match d.separation_fc {
        Some(s) => format!(
            "{n} recovered; closest pair {s:.3}/fc apart (Rayleigh units; proven exact-recovery \
             threshold {}/fc{})",
            num(PROVEN_SEPARATION_FC),
            separation_verdict(estimate)
        ),
        None => format!("{n} recovered"),
    };
    row(&mut out, "spikes", spikes);
    let mut residual = format!(
        "‖y − Fμ̂‖ = {} against ‖y‖ = {}",
        num(d.residual_norm),
        num(d.data_norm)
    );
    if let Some(r) = d.residual_ratio {
        residual.push_str(&format!("; {r:.2}× what the noise explains (≈ 1 expected)"));
    }
    row(&mut out, "residual", residual);
    if let Some(c) = &d.certificate {
        row(
            &mut out,
            "certificate",
            format!(
                "max |q| = {:.6}, min |q| on the support = {:.6}, largest peak off the support \
                 {:.4} (margin {:.4})",
                c.max_modulus,
                c.min_on_support,
                c.max_off_support,
                1.0 - c.max_off_support
            ),
        );
    }
    if let Some(m) = &d.model_order {
        row(
            &mut out,
            "model order",
            format!("{} ({})", m.order, m.method),
        );
    }
    if let Some(stds) = &d.crb_std_position_fc {
        row(
            &mut out,
            "position CRB",
            format!(
                "one std per spike, in 1/fc: {} (plug-in bound, estimates taken as truth)",
                list(stds)
            ),
        );
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use finespike::{Diagnostics, Measurements, Spike, Spikes, Status};
    use num_complex::Complex64;

    /// An estimate of two spikes 1.1/fc apart at fc = 8 (an invented scene), with `status` and the
    /// warnings `warnings` (the library's verdicts) in place of the ones `describe` derives.
    fn estimate(status: Status, warnings: Vec<Warning>) -> Estimate {
        let k: Vec<i64> = (-8..=8).collect();
        let y = vec![Complex64::new(1.0, 0.0); k.len()];
        let data = Measurements::in_band(-8, 8, &k, &y, finespike::Domain::Fourier).unwrap();
        let spikes = Spikes::new(vec![
            Spike::new(0.2, Complex64::new(1.0, 0.0)),
            Spike::new(0.2 + 1.1 / 8.0, Complex64::new(1.0, 0.0)),
        ])
        .unwrap();
        let mut diagnostics = Diagnostics::builder(&data, &spikes).noise(None, false);
        diagnostics.warnings = warnings;
        Estimate {
            method: "sdp",
            spikes,
            status,
            diagnostics,
            dual: None,
        }
    }

    #[test]
    fn non_convergence_is_said_once() {
        let status = Status::IterationLimit;
        // The library already warns: the command line adds nothing.
        let e = estimate(status, vec![Warning::NotConverged { status }]);
        let said: Vec<String> = warnings(&e);
        assert_eq!(said.len(), 1, "{said:?}");
        assert_eq!(said[0], Warning::NotConverged { status }.to_string());
        // The library does not: the command line says it, once.
        let said = warnings(&estimate(status, vec![]));
        assert_eq!(said.len(), 1, "{said:?}");
        assert!(said[0].contains("not a converged solution"));
        // A converged estimate: nothing to say.
        assert!(warnings(&estimate(Status::Solved, vec![])).is_empty());
    }

    #[test]
    fn the_separation_verdict_is_the_librarys() {
        let line = |w: Vec<Warning>| {
            summary(&estimate(Status::Solved, w), true, NoiseLevel::Estimate)
                .lines()
                .find(|l| l.contains("closest pair"))
                .unwrap()
                .to_string()
        };
        let below = line(vec![Warning::BelowProvenSeparation {
            separation_fc: 1.1,
            separation_cells: 2.2,
        }]);
        assert!(below.ends_with("threshold 1.26/fc: below it)"), "{below}");
        let under = line(vec![Warning::UnderResolved {
            separation_fc: 0.4,
            separation_cells: 0.8,
        }]);
        assert!(under.contains("UNDER-RESOLVED"), "{under}");
        // Without a separation warning from the library the summary adds no verdict of its own.
        let none = line(vec![]);
        assert!(none.ends_with("threshold 1.26/fc)"), "{none}");
    }
}
