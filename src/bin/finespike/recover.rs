//! `recover`: one estimator on one sample file; the result on stdout, a readable summary on stderr.

use crate::{configure, input, noise_level, Failure, Format, MethodArgs};
use clap::Args;
use finespike::eval::io;

use finespike::{Estimate, NoiseLevel};

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
    let data = a.samples.load().map_err(Failure::Input)?;
    let estimator = configure(&a.method)?;
    let estimate = estimator.estimate(&data).map_err(Failure::Estimate)?;
    if !a.quiet {
        eprint!(
            "{}",
            summary(
                &estimate,
                finespike::registry::method(&a.method.method).is_ok(),
                noise_level(a.method.sigma)
            )
        );
    }
    report_warnings(&estimate);
    let text = match a.format {
        Format::Json => io::estimate_to_json(&estimate),
        Format::Csv => io::spikes_to_csv(&estimate.spikes),
    };
    println!("{}", text.trim_end());
    Ok(())
}

/// Every warning of an estimate on stderr, one per line.
pub fn report_warnings(estimate: &Estimate) {
    if !estimate.status.is_usable() {
        eprintln!(
            "warning: solver status '{}': the result is not a converged solution",
            estimate.status
        );
    }
    for w in &estimate.diagnostics.warnings {
        eprintln!("warning: {w}");
    }
}

fn list(values: &[f64], digits: usize) -> String {
    values
        .iter()
        .map(|v| format!("{v:.digits$}"))
        .collect::<Vec<_>>()
        .join(", ")
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
        steps = format!("{steps}, relative duality gap {gap:.1e}");
    }
    if let Some(solver) = d.solver {
        steps = format!("{solver}, {steps}");
    }
    let mut out = format!(
        "{}: {} ({steps}) in {:.3} s\n",
        estimate.method, estimate.status, d.solve_seconds
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
            "σ = {s:.4e} ({})",
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
             threshold 1.26/fc{})",
            if s < 1.0 {
                ", Rayleigh limit 1/fc: UNDER-RESOLVED"
            } else if s < 1.26 {
                ": below it"
            } else {
                ""
            }
        ),
        None => format!("{n} recovered"),
    };
    row(&mut out, "spikes", spikes);
    let mut residual = format!(
        "‖y − Fμ̂‖ = {:.4e} against ‖y‖ = {:.4e}",
        d.residual_norm, d.data_norm
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
                list(stds, 4)
            ),
        );
    }
    out
}
