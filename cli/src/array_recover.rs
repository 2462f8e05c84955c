//! `recover` on a snapshot file: one estimator on a multi-snapshot (array) record; the sources on
//! stdout, a readable summary on stderr.

use crate::array_input::{self, describe, place, warnings};
use crate::show::{self, exact, num, sig};
use crate::{configure, input, requested_noise, shown, Failure, Format, MethodArgs};
use finespike::eval::io_snapshots::array_estimate_json;
use finespike::{ArrayEstimate, NoiseLevel, Snapshots, Warning, PROVEN_SEPARATION_FC};

/// Read the snapshot file `path` with the flags of `samples`; the flags of single records (units,
/// trend) are refused.
pub fn load(samples: &input::SampleArgs, path: &std::path::Path) -> Result<Snapshots, Failure> {
    let r = &samples.record;
    if r.rate.is_some() || r.length.is_some() || r.detrend.is_some() {
        return Err(Failure::Usage(format!(
            "--rate, --length and --detrend apply to single records, but {} is a snapshot file \
             (array data: positions are spatial frequencies in cycles per sensor; give the element \
             spacing with --spacing D for angles)",
            shown(path)
        )));
    }
    array_input::load_snapshots(path, samples.fc, samples.domain, samples.spacing)
}

/// `recover` on the snapshot file `samples.input[0]`.
pub fn run(
    samples: &input::SampleArgs,
    method: &MethodArgs,
    format: Format,
    quiet: bool,
) -> Result<(), Failure> {
    let noise = requested_noise(method.sigma)?;
    let path = samples.path()?;
    let data = load(samples, path)?;
    let estimator = configure(method, noise)?;
    let estimate = estimator
        .estimate_snapshots(&data)
        .map_err(Failure::Estimate)?;
    if !quiet {
        eprint!("{}", summary(&estimate, &data, noise));
    }
    for w in warnings(&estimate) {
        eprintln!("warning: {w}");
    }
    let text = match format {
        Format::Json => serde_json::to_string_pretty(&array_estimate_json(&estimate, &data))
            .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}")),
        Format::Csv => sources_csv(&estimate),
    };
    crate::emit(&format!("{}\n", text.trim_end()))?;
    Ok(())
}

/// `recover` on several snapshot files: every file read (a file that cannot be read is reported on
/// its own line), the estimates made in parallel on all cores
/// ([`finespike::estimate_snapshots_batch`]: input order, the same results as one file at a time),
/// then one JSON object per input on stdout, in input order, each with an `"input"` field holding
/// the path and either the array result or an `"error"`. The exit code is that of the first failure
/// (3 unreadable file, 4 estimate refused), after every line is written.
pub fn run_batch(
    samples: &input::SampleArgs,
    method: &MethodArgs,
    format: Format,
) -> Result<(), Failure> {
    if format != Format::Json {
        return Err(Failure::Usage(
            "several --input files are written as JSON Lines; --format csv takes one file".into(),
        ));
    }
    let noise = requested_noise(method.sigma)?;
    let estimator = configure(method, noise)?;
    let loaded: Vec<Result<Snapshots, Failure>> =
        samples.input.iter().map(|p| load(samples, p)).collect();
    if let Some(Err(f @ Failure::Usage(_))) = loaded.iter().find(|r| r.is_err()) {
        // A flag that does not apply is the command line's fault, not one file's.
        return Err(Failure::Usage(crate::recover::failure_text(f)));
    }
    crate::recover::json_lines(
        &samples.input,
        loaded,
        |records| finespike::estimate_snapshots_batch(estimator.as_ref(), records),
        |estimate, data, name| {
            for w in warnings(estimate) {
                eprintln!("warning: {name}: {w}");
            }
            array_estimate_json(estimate, data)
        },
    )
}

/// The sources as CSV: `position,frequency,angle_deg,power,crb_std,crb_std_angle_deg,
/// crb_std_stochastic` (angles empty without a spacing, bounds empty without a noise level), every
/// value in full.
pub fn sources_csv(estimate: &ArrayEstimate) -> String {
    let mut out = String::from(
        "position,frequency,angle_deg,power,crb_std,crb_std_angle_deg,crb_std_stochastic\n",
    );
    let opt = |x: Option<f64>| x.map_or_else(String::new, exact);
    for s in &estimate.sources {
        out.push_str(&format!(
            "{},{},{},{},{},{},{}\n",
            exact(s.position),
            exact(s.frequency),
            opt(s.angle_deg),
            exact(s.power),
            opt(s.crb_std_position),
            opt(s.crb_std_angle_deg),
            opt(s.crb_std_stochastic)
        ));
    }
    out
}

/// The separation verdict the estimate carries (the library's warnings, not a threshold of ours).
fn separation_verdict(estimate: &ArrayEstimate) -> &'static str {
    let warned = |pick: fn(&Warning) -> bool| estimate.diagnostics.warnings.iter().any(pick);
    if warned(|w| matches!(w, Warning::SourcesUnderResolved { .. })) {
        "; UNDER-RESOLVED: closer than the array's resolution 1/M"
    } else if warned(|w| matches!(w, Warning::SourcesBelowProvenSeparation { .. })) {
        "; resolved, but below the proven exact-recovery threshold of TV"
    } else {
        ""
    }
}

/// The readable summary of an array estimate (several lines, each ending in a newline).
pub fn summary(estimate: &ArrayEstimate, data: &Snapshots, requested: NoiseLevel) -> String {
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
    row(&mut out, "array", describe(data));
    let noise = match d.sigma {
        None if requested == NoiseLevel::Exact => "σ = 0, exact data (as given)".to_string(),
        None => "none recorded by this method".to_string(),
        Some(s) => format!(
            "σ = {} per sensor and snapshot ({})",
            num(s),
            match (&d.sigma_method, d.sigma_estimated) {
                (Some(m), true) => format!("estimated from the data: {m}"),
                (None, true) => "estimated from the data".to_string(),
                _ => "as given".to_string(),
            }
        ),
    };
    row(&mut out, "noise", noise);
    let n = estimate.sources.len();
    let noun = if n == 1 { "source" } else { "sources" };
    let sources = match (d.separation_cells, d.separation_fc) {
        (Some(cells), Some(fc)) => format!(
            "{n} {noun} recovered; closest pair {} resolution cells (1/M) = {}/fc apart (1/fc: the \
             TV theory's unit, fc = (M-1)/2; proven exact-recovery threshold {}/fc{})",
            sig(cells, 3),
            sig(fc, 3),
            num(PROVEN_SEPARATION_FC),
            separation_verdict(estimate)
        ),
        _ => format!("{n} {noun} recovered"),
    };
    row(&mut out, "sources", sources);
    let sigma = d.sigma.filter(|s| *s > 0.0);
    for (i, s) in estimate.sources.iter().enumerate() {
        let snr = sigma.map_or_else(String::new, |sg| {
            format!(
                " ({} dB over σ²)",
                sig(10.0 * (s.power / (sg * sg)).log10(), 3)
            )
        });
        let crb = match (s.crb_std_position, s.crb_std_angle_deg) {
            (Some(f), Some(a)) => format!(", CRB std {} cycles/sensor = {}°", num(f), num(a)),
            (Some(f), None) => format!(", CRB std {} cycles/sensor", num(f)),
            _ => String::new(),
        };
        row(
            &mut out,
            "",
            format!(
                "#{}: {}, power {}{snr}{crb}",
                i + 1,
                place(s.frequency, s.angle_deg),
                num(s.power)
            ),
        );
    }
    let mut residual = format!(
        "‖X − AŜ‖_F = {} against ‖X‖_F = {}",
        num(d.residual_norm),
        num(d.data_norm)
    );
    if let Some(r) = d.residual_ratio {
        residual.push_str(&format!("; {r:.2}× what the noise explains (≈ 1 expected)"));
    }
    row(&mut out, "residual", residual);
    if let Some(c) = d.certificate_max {
        row(
            &mut out,
            "certificate",
            format!(
                "largest ‖Q(f)‖ of the dual vector polynomial off the support {c:.4} (margin {:.4})",
                1.0 - c
            ),
        );
    }
    if let Some(m) = &d.model_order {
        row(&mut out, "model order", m.to_string());
    }
    out
}
