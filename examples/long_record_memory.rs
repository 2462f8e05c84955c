//! Time and peak memory of one subspace method (or of the noise-level estimate alone) on one long
//! record, one run per process so that the peak resident memory belongs to that run only.
//!
//! The record is an invented scene (seeded): `N` uniform time samples of 5 unit-modulus complex
//! exponentials at least 4 Rayleigh units apart, complex white Gaussian noise at 30 dB per line.
//!
//! ```text
//! cargo run --release --example long_record_memory -- esprit 100000
//! cargo run --release --example long_record_memory -- pencil 100000
//! cargo run --release --example long_record_memory -- music 100000
//! cargo run --release --example long_record_memory -- sigma 100000   # noise-level estimate only
//! ```
//!
//! Prints the wall-clock time of the estimate, the largest position error against the invented truth
//! (cycles per sample), and the peak resident set size of the process (`VmHWM` of
//! `/proc/self/status`, Linux only) before and after the estimate.

use finespike::subspace::{Esprit, MatrixPencil, Music};
use finespike::{estimate_sigma, wrap_distance, AmplitudeKind, Estimator, Scenario};
use std::time::Instant;

/// Peak resident set size of this process so far, in MB (`VmHWM` of `/proc/self/status`).
fn peak_memory_mb() -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

fn mb(v: Option<f64>) -> String {
    v.map_or_else(|| "unknown".into(), |m| format!("{m:.0} MB"))
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let what = args.get(1).map(String::as_str).unwrap_or("esprit");
    let n: usize = args
        .get(2)
        .map(|s| s.parse())
        .transpose()?
        .unwrap_or(100_000);
    let count = 5;
    let sample = Scenario::time_record(n, count)
        .with_separation(4.0)
        .with_amplitudes(AmplitudeKind::UnitModulus)
        .with_snr_db(30.0)
        .with_seed(17)
        .generate()?;
    let before = peak_memory_mb();
    let t = Instant::now();
    let summary = if what == "sigma" {
        let est = estimate_sigma(&sample.data)?;
        format!(
            "σ̂ = {:.4e} against σ = {:.4e} (ratio {:.4})",
            est.sigma,
            sample.sigma,
            est.sigma / sample.sigma
        )
    } else {
        let estimator: Box<dyn Estimator> = match what {
            "esprit" => Box::new(Esprit::default()),
            "pencil" => Box::new(MatrixPencil::default()),
            "music" => Box::new(Music::default()),
            other => {
                return Err(
                    format!("unknown choice '{other}': esprit, pencil, music or sigma").into(),
                )
            }
        };
        match estimator.estimate(&sample.data) {
            Ok(est) => {
                let worst = sample
                    .truth
                    .iter()
                    .map(|t| {
                        est.spikes
                            .iter()
                            .map(|e| wrap_distance(e.position, t.position))
                            .fold(f64::INFINITY, f64::min)
                    })
                    .fold(0.0, f64::max);
                format!(
                    "{} of {count} lines, largest position error {worst:.2e} cycles/sample, order {}",
                    est.spikes.len(),
                    est.diagnostics
                        .model_order
                        .map_or_else(|| "none".into(), |o| o.to_string())
                )
            }
            Err(e) => format!("refused: {e}"),
        }
    };
    let seconds = t.elapsed().as_secs_f64();
    println!(
        "{what} N = {n}: {seconds:.2} s; {summary}; peak memory {} (record alone {})",
        mb(peak_memory_mb()),
        mb(before)
    );
    Ok(())
}
