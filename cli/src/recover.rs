//! `recover`: one estimator on one sample file; the result on stdout, a readable summary on stderr.

use crate::show::{self, num, sig};
use crate::{configure, input, requested_noise, Failure, Format, MethodArgs};
use clap::Args;
use finespike::{Domain, Estimate, Measurements, NoiseLevel, Warning, PROVEN_SEPARATION_FC};
use serde_json::{json, Value};

/// Recover spikes (lines) from a sample file, or sources from a snapshot file, with one method.
///
/// The result goes to stdout as JSON (or CSV); a short summary of the diagnostics and every warning
/// go to stderr. The summary gives the record (N samples, their index range, the resolution 1/N in
/// the record's unit), the solver status and iterations, the noise level used and whether it was
/// estimated, the separation of the closest lines in resolution cells 1/N and in the TV theory's
/// unit 1/fc, the residual against the noise, the certificate margin (convex methods), the model
/// order (subspace methods) and each line with its Cramér–Rao standard deviation.
///
/// Each line is reported once: for a real-valued record (`n,value`) one line per cosine
/// A cos(2πfn + φ), at f in [0, 1/2] cycles per sample ([0, R/2] Hz with --rate) with the phasor
/// amplitude A e^{iφ} (phase at n = 0 as the file numbers the samples). JSON: `lines` (position,
/// frequency or location, amplitude [re, im], abs_amplitude, phase_deg, crb_std in the record's
/// unit), `resolution`, `separation_cells` (in 1/N), `separation_fc` (in 1/fc), `trend` (the fitted
/// offset or trend), `record`, and the complex-model `spikes`, `status` and `diagnostics`.
///
/// A snapshot file (`n,snapshot,re,im`: L snapshots of an array of sensors) is recognised by its
/// header (several snapshot files give JSON Lines, as several records do) and goes to the methods
/// that take snapshots (sdp, ast, sfw, music, esprit, pencil; the
/// others refuse with exit 4). JSON: `sources` (position, signed spatial frequency in cycles per
/// sensor, power, amplitudes [re, im] per snapshot, crb_std; with --spacing angle_deg and
/// crb_std_angle_deg), `resolution` (1/M), `array`, `method`, `status`, `diagnostics`; the summary
/// gives each source's angle, power and Cramér–Rao bound and the closest pair in cells 1/M.
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
    let arrays = a
        .samples
        .input
        .iter()
        .filter(|p| crate::array_input::is_snapshot_file(p))
        .count();
    match (arrays, a.samples.input.len()) {
        (0, _) => {}
        (1, 1) => return crate::array_recover::run(&a.samples, &a.method, a.format, a.quiet),
        (k, n) if k == n => {
            return crate::array_recover::run_batch(&a.samples, &a.method, a.format)
        }
        (k, n) => {
            return Err(Failure::Usage(format!(
            "{k} of the {n} --input files are snapshot files (array data) and the others single \
                 records: give one kind per run"
        )))
        }
    }
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
                &data,
                finespike::registry::method(&a.method.method).is_ok(),
                noise
            )
        );
    }
    report_warnings(&estimate);
    let text = match a.format {
        Format::Json => pretty(&result_json(&estimate, &data)),
        Format::Csv => show::lines_csv(&estimate.diagnostics.lines, &data),
    };
    crate::emit(&format!("{}\n", text.trim_end()))?;
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
    json_lines(
        &a.samples.input,
        loaded,
        |records| finespike::estimate_batch(estimator.as_ref(), records),
        |estimate, data, shown| {
            for w in warnings(estimate) {
                eprintln!("warning: {shown}: {w}");
            }
            result_json(estimate, data)
        },
    )
}

/// The JSON Lines of a batch (`recover` on several files, records or snapshot files alike): the
/// files that loaded are estimated together by `estimate_all` (one result per record, in order),
/// then one line per input in input order, `{"input": path, …}` with `describe`'s result or with
/// `"error"`. The exit code is that of the first failure, after every line is written.
pub(crate) fn json_lines<R: Clone, E>(
    inputs: &[std::path::PathBuf],
    loaded: Vec<Result<R, Failure>>,
    estimate_all: impl FnOnce(&[R]) -> Vec<finespike::Result<E>>,
    describe: impl Fn(&E, &R, &str) -> Value,
) -> Result<(), Failure> {
    let records: Vec<R> = loaded
        .iter()
        .filter_map(|r| r.as_ref().ok().cloned())
        .collect();
    let mut estimates = estimate_all(&records).into_iter().zip(records.iter());
    let mut first_failure: Option<Failure> = None;
    for (path, load) in inputs.iter().zip(loaded) {
        let shown = crate::shown(path);
        let line = match load {
            Err(f) => {
                let text = failure_text(&f);
                first_failure.get_or_insert(f);
                json!({ "input": shown, "error": text })
            }
            Ok(_) => match estimates.next() {
                Some((Ok(estimate), data)) => {
                    let mut v = describe(&estimate, data, &shown);
                    if let Some(obj) = v.as_object_mut() {
                        obj.insert("input".into(), Value::String(shown));
                    }
                    v
                }
                Some((Err(e), _)) => {
                    let text = e.to_string();
                    first_failure.get_or_insert(Failure::Estimate(e));
                    json!({ "input": shown, "error": text })
                }
                // Invariant: `records` holds exactly the loaded files, in order, and
                // `estimate_all` returns one result per record, so each `Ok` load has its estimate.
                None => unreachable!("one estimate per loaded record"),
            },
        };
        crate::emit(&format!("{line}\n"))?;
    }
    match first_failure {
        Some(f) => Err(f),
        None => Ok(()),
    }
}

/// Pretty JSON text of a value.
fn pretty(v: &Value) -> String {
    serde_json::to_string_pretty(v).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// A number for JSON: `null` when it is not finite.
fn number(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

/// The result of `recover` as JSON: the estimate as the library serialises it (`spikes`, `method`,
/// `status`, `diagnostics`; still a spike file) with, at the top, what users read: `lines` (each
/// line once, in the record's unit), `resolution`, `separation_cells`, `separation_fc`, `trend` and
/// `record`.
pub fn result_json(estimate: &Estimate, data: &Measurements) -> Value {
    let d = &estimate.diagnostics;
    let time = data.domain() == Domain::Time;
    let lines: Vec<Value> = d
        .lines
        .iter()
        .map(|l| {
            let mut o = serde_json::Map::new();
            o.insert("position".into(), number(l.position));
            if time {
                o.insert("frequency".into(), number(show::line_value(l)));
            } else if let Some(x) = l.location {
                o.insert("location".into(), number(x));
            }
            o.insert(
                "amplitude".into(),
                json!([number(l.amplitude.re), number(l.amplitude.im)]),
            );
            o.insert("abs_amplitude".into(), number(l.amplitude.norm()));
            o.insert("phase_deg".into(), number(show::phase_deg(l)));
            o.insert(
                "crb_std".into(),
                show::line_crb(l, data).map_or(Value::Null, number),
            );
            Value::Object(o)
        })
        .collect();
    let (first, last) = data.user_span();
    let scale = match data.scale() {
        Some(finespike::Scale::SampleRate(r)) => json!({ "rate": r }),
        Some(finespike::Scale::DomainLength(l)) => json!({ "length": l }),
        None => Value::Null,
    };
    let record = json!({
        "domain": if time { "time" } else { "fourier" },
        "real": data.is_real(),
        "first": first,
        "last": last,
        "samples": data.band_len(),
        "measured": data.len(),
        "scale": scale,
        "unit": match show::unit(data) { "" => Value::Null, u => Value::String(u.into()) },
        "detrend": data.trend().to_string(),
    });
    let trend = d.trend.as_ref().map_or(Value::Null, |t| {
        json!({
            "trend": t.trend.to_string(),
            "centre": number(t.centre),
            "coefficients": t.coefficients.iter().map(|c| json!([number(c.re), number(c.im)])).collect::<Vec<_>>(),
            "form": "sum over d of coefficients[d] * (n - centre)^d",
        })
    });
    let mut v = serde_json::to_value(estimate).unwrap_or_default();
    if let Some(obj) = v.as_object_mut() {
        obj.insert("lines".into(), Value::Array(lines));
        obj.insert("resolution".into(), number(data.resolution()));
        obj.insert(
            "separation_cells".into(),
            d.separation_cells.map_or(Value::Null, number),
        );
        obj.insert(
            "separation_fc".into(),
            d.separation_fc.map_or(Value::Null, number),
        );
        obj.insert("trend".into(), trend);
        obj.insert("record".into(), record);
    }
    v
}

/// The message of a failure, as the error line would print it.
pub(crate) fn failure_text(f: &Failure) -> String {
    match f {
        Failure::Usage(s) | Failure::NoEstimate(s) | Failure::Output(s) => s.clone(),
        Failure::Input(e) | Failure::Estimate(e) => e.to_string(),
        Failure::Closed => "standard output closed".to_string(),
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

/// The separation verdict the estimate carries: the library's separation warnings, not a re-derived
/// threshold.
fn separation_verdict(estimate: &Estimate) -> &'static str {
    let warned = |pick: fn(&Warning) -> bool| estimate.diagnostics.warnings.iter().any(pick);
    if warned(|w| matches!(w, Warning::UnderResolved { .. })) {
        "; UNDER-RESOLVED: closer than the record's resolution 1/N"
    } else if warned(|w| matches!(w, Warning::BelowProvenSeparation { .. })) {
        "; resolved, but below the proven exact-recovery threshold of TV"
    } else {
        ""
    }
}

/// The readable summary of an estimate's diagnostics (several lines, each ending in a newline).
pub fn summary(
    estimate: &Estimate,
    data: &Measurements,
    uses_noise: bool,
    requested: NoiseLevel,
) -> String {
    let d = &estimate.diagnostics;
    let mut out = show::headline(
        estimate.method,
        estimate.status,
        d.solver,
        d.iterations,
        d.duality_gap,
        d.solve_seconds,
    );
    let row = |out: &mut String, label: &str, text: String| {
        out.push_str(&format!("  {label:<12} {text}\n"));
    };
    let detrend = match data.trend() {
        finespike::Trend::None => "no offset or trend fitted".to_string(),
        finespike::Trend::Mean => "offset (mean) fitted with the lines".to_string(),
        finespike::Trend::Linear => "offset and linear trend fitted with the lines".to_string(),
        t => format!("polynomial trend ({t}) fitted with the lines"),
    };
    row(
        &mut out,
        "record",
        format!("{}; {detrend}", show::band(data)),
    );
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
            match (&d.sigma_method, d.sigma_estimated) {
                (Some(m), true) => format!("estimated from the data: {m}"),
                (None, true) => "estimated from the data".to_string(),
                _ => "as given".to_string(),
            }
        ),
    };
    row(&mut out, "noise", noise);
    let n = d.lines.len();
    let noun = if n == 1 { "line" } else { "lines" };
    let spikes = match (d.separation_cells, d.separation_fc) {
        (Some(cells), Some(fc)) => format!(
            "{n} {noun} recovered; closest pair {} resolution cells (1/N) = {}/fc apart (1/fc: the \
             TV theory's unit; proven exact-recovery threshold {}/fc{})",
            sig(cells, 3),
            sig(fc, 3),
            num(PROVEN_SEPARATION_FC),
            separation_verdict(estimate)
        ),
        _ => format!("{n} {noun} recovered"),
    };
    row(&mut out, "lines", spikes);
    for (i, l) in d.lines.iter().enumerate() {
        let crb = show::line_crb(l, data).map_or_else(String::new, |s| {
            format!(", CRB std {}", show::with_unit(&num(s), data))
        });
        let what = match (data.domain(), l.location) {
            (Domain::Time, _) => "frequency",
            (Domain::Fourier, Some(_)) => "location",
            (Domain::Fourier, None) => "position",
        };
        row(
            &mut out,
            "",
            format!(
                "#{}: {what} {}, |amplitude| {}, phase {}°{crb}",
                i + 1,
                show::with_unit(&sig(show::line_value(l), 7), data),
                num(l.amplitude.norm()),
                sig(show::phase_deg(l), 4)
            ),
        );
    }
    if let Some(t) = &d.trend {
        let coeffs: Vec<String> = t
            .coefficients
            .iter()
            .map(|c| {
                if data.is_real() {
                    num(c.re)
                } else {
                    format!("{}{:+}i", num(c.re), num(c.im))
                }
            })
            .collect();
        row(
            &mut out,
            "trend",
            format!(
                "{}: coefficients of (n − {})^d, d = 0..: {}",
                t.trend,
                sig(t.centre, 12),
                coeffs.join(", ")
            ),
        );
    }
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
        let data = band();
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

    /// The band −8..8 of the invented scene of [`estimate`].
    fn band() -> Measurements {
        let k: Vec<i64> = (-8..=8).collect();
        let y = vec![Complex64::new(1.0, 0.0); k.len()];
        Measurements::in_band(-8, 8, &k, &y, finespike::Domain::Fourier).unwrap()
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
            summary(
                &estimate(Status::Solved, w),
                &band(),
                true,
                NoiseLevel::Estimate,
            )
            .lines()
            .find(|l| l.contains("closest pair"))
            .unwrap()
            .to_string()
        };
        let below = line(vec![Warning::BelowProvenSeparation {
            separation_fc: 1.1,
            separation_cells: 2.2,
        }]);
        assert!(
            below.ends_with(
                "1.26/fc; resolved, but below the proven exact-recovery threshold of TV)"
            ),
            "{below}"
        );
        // Both units, each named: 1.1/fc at fc = 8 is 1.1·17/8 = 2.34 cells of 1/N (N = 17).
        assert!(
            below.contains("closest pair 2.34 resolution cells (1/N) = 1.1/fc apart"),
            "{below}"
        );
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
