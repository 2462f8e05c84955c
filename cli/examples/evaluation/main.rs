//! Writes `docs/evaluation.md` and its SVG figures: phase transitions of noiseless recovery, position
//! accuracy against the Cramér–Rao bound, resolution of two lines, time and peak memory against N,
//! the known behaviour from the literature (checked, failing loudly), and a "which method when"
//! table derived from the numbers. Every scene is invented (seeded draws of
//! `finespike::eval::campaign`).
//!
//! ```text
//! cargo run --release --example evaluation -- quick   # a few minutes on 2 cores
//! cargo run --release --example evaluation -- full    # enough draws for ±10 % error bars
//! ```
//!
//! Exit code 1 when a check of known behaviour fails (the report says FAILED on that line).
//! Internally the example re-runs itself as `evaluation cost-point METHOD N` for each point of the
//! cost study: one process per point, so that its peak memory (VmHWM) belongs to that point alone.

mod checks;
mod choice;
mod cost;
mod figures;
mod numbers;
mod report;
mod sections;
mod studies;

use std::path::PathBuf;
use std::time::Instant;

/// The sizes of a run.
#[derive(Debug, Clone)]
pub struct Mode {
    /// `quick` or `full`.
    pub name: &'static str,
    /// Phase-transition separations, in `1/N`.
    pub heat_separations: Vec<f64>,
    /// Phase-transition spike counts.
    pub heat_counts: Vec<usize>,
    /// Draws per phase-transition cell.
    pub heat_draws: usize,
    /// SNRs of the accuracy study, dB.
    pub crb_snrs: Vec<f64>,
    /// Draws per SNR.
    pub crb_draws: usize,
    /// Separations of the resolution study, in `1/N`.
    pub res_separations: Vec<f64>,
    /// SNRs of the resolution study.
    pub res_snrs: Vec<f64>,
    /// Draws per resolution point.
    pub res_draws: usize,
    /// Record lengths of the cost study.
    pub cost_sizes: Vec<usize>,
    /// Seconds above which a method is not run at larger N.
    pub cost_limit_s: f64,
    /// Draws per cell of the 1.26/fc check.
    pub fg_draws: usize,
    /// Draws of the single-tone check.
    pub tone_draws: usize,
    /// SNRs of the array study, dB.
    pub array_snrs: Vec<f64>,
    /// Draws per SNR of the array study.
    pub array_draws: usize,
}

impl Mode {
    fn quick() -> Mode {
        Mode {
            name: "quick",
            heat_separations: vec![0.3, 0.6, 0.9, 1.2, 1.5, 1.8, 2.1, 2.5],
            heat_counts: vec![2, 4, 6, 8],
            heat_draws: 4,
            crb_snrs: (0..10).map(|i| -5.0 + 5.0 * i as f64).collect(),
            crb_draws: 15,
            res_separations: vec![0.2, 0.4, 0.6, 0.8, 1.0, 1.3, 1.6, 2.0],
            res_snrs: vec![10.0, 20.0, 30.0],
            res_draws: 8,
            cost_sizes: vec![32, 64, 128, 256],
            cost_limit_s: 15.0,
            fg_draws: 3,
            tone_draws: 40,
            array_snrs: (0..8).map(|i| -5.0 + 5.0 * i as f64).collect(),
            array_draws: 15,
        }
    }

    /// Sized to finish in under an hour on 2 idle cores (the quick run's "What this run cost"
    /// projects it from measured CPU seconds per trial): every point of the accuracy and array
    /// figures has 200 draws (chi-square 95 % interval of RMSE/√CRB about ±10 %), every resolution
    /// rate 100 (Wilson half-width at most 0.1), the maps 20; the grids are cut to keep to the hour.
    fn full() -> Mode {
        Mode {
            name: "full",
            heat_separations: (0..12).map(|i| 0.3 + 0.2 * i as f64).collect(),
            heat_counts: vec![2, 3, 4, 6, 8],
            heat_draws: 20,
            crb_snrs: (0..10).map(|i| -5.0 + 5.0 * i as f64).collect(),
            crb_draws: 200,
            res_separations: (1..=12).map(|i| 0.2 * i as f64).collect(),
            res_snrs: vec![10.0, 20.0, 30.0],
            res_draws: 100,
            cost_sizes: vec![32, 64, 128, 256, 512, 1024, 2048],
            cost_limit_s: 60.0,
            fg_draws: 20,
            tone_draws: 200,
            array_snrs: (0..8).map(|i| -5.0 + 5.0 * i as f64).collect(),
            array_draws: 200,
        }
    }

    /// The cost study's time cap per point in the full mode, seconds.
    pub fn full_cost_limit() -> f64 {
        Mode::full().cost_limit_s
    }
}

/// `docs/` of the workspace.
fn docs_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../docs")
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("cost-point") {
        return cost::child(&args[2..]);
    }
    let mode = match args.get(1).map(String::as_str) {
        Some("quick") | None => Mode::quick(),
        Some("full") => Mode::full(),
        Some(other) => {
            return Err(format!("unknown mode '{other}': give quick or full").into());
        }
    };
    let started = Instant::now();
    let commit = report::commit();
    let docs = docs_dir();
    std::fs::create_dir_all(&docs)?;
    let say = |what: &str| eprintln!("[{:>6.1} s] {what}", started.elapsed().as_secs_f64());
    // Each study: its campaign, and what it cost (wall time, trials, summed trial seconds) with the
    // trial count the full mode would run, for the projection in the report.
    let mut spent = Vec::new();
    let full = Mode::full();
    let mut study = |label: &'static str,
                     make: fn(&Mode) -> finespike::eval::campaign::Plan|
     -> Result<finespike::eval::campaign::Campaign, finespike::Error> {
        say(label);
        let t0 = Instant::now();
        let cpu0 = report::cpu_seconds();
        let c = studies::go(&make(&mode))?;
        spent.push(report::Spent {
            study: label,
            wall_s: t0.elapsed().as_secs_f64(),
            cpu_s: cpu0.zip(report::cpu_seconds()).map(|(a, b)| b - a),
            trials: c.trials.len(),
            full_trials: studies::trials(&make(&full)),
        });
        Ok(c)
    };
    let heat = study("phase transitions", studies::phase_transitions)?;
    let crb = study("accuracy against the bound", studies::accuracy)?;
    let res = study("resolution of two lines", studies::resolution)?;
    let arrays = study("array snapshots", studies::arrays)?;
    let fg = study("check: 1.26/fc", studies::separation_check)?;
    let tone = study("check: single tone", studies::single_tone)?;
    say("cost against N (one process per point)");
    let cost = cost::study(&mode)?;
    say("figures and report");
    let heat_summaries = heat.summaries();
    let results = report::Results {
        heat_summaries,
        heat,
        crb,
        res,
        fg,
        tone,
        arrays,
        cost,
        spent,
    };
    figures::all(&results, &docs)?;
    let elapsed = started.elapsed().as_secs_f64();
    let failed = report::write(&results, &mode, &docs, elapsed, &commit)?;
    say(&format!("wrote {}", docs.join("evaluation.md").display()));
    if failed > 0 {
        eprintln!("FAILED: {failed} check(s) of known behaviour (see docs/evaluation.md)");
        std::process::exit(1);
    }
    Ok(())
}
