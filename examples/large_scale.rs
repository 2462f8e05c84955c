//! Timing and memory of the certified continuous solver (`sfw`) and of the greedy fit at sizes an
//! interior point cannot reach. Scenes are invented (seeded draws).
//!
//! ```text
//! cargo run --release --example large_scale -- sfw 512         # exact data, fc = 512, 10 spikes
//! cargo run --release --example large_scale -- sfw-noisy 4096   # 30 dB, constrained TV
//! cargo run --release --example large_scale -- greedy 4096      # N = 4096 time samples, 20 lines, 30 dB
//! cargo run --release --example large_scale -- ast 16384        # N time samples, 5 lines 3/N apart, 30 dB
//! cargo run --release --example large_scale -- interior-point 32 # sdp through clarabel: time, peak memory
//! cargo run --release --example large_scale -- sliding 512       # sdp through Sliding Frank–Wolfe
//! cargo run --release --example large_scale -- sliding 4096 1024 # a dense scene: 1024 spikes 2/fc apart
//! cargo run --release --example large_scale -- method esprit 100000 estimated # any method, 5 lines
//! ```
//!
//! Run under `/usr/bin/time -v` for the peak memory (maximum resident set size).
use finespike::registry::{configure, MethodOptions};
use finespike::Ast;
use finespike::Greedy;
use finespike::Sfw;
use finespike::{Backend, Estimator, NoiseLevel, Scenario, Tv, TvSettings};
use std::time::Instant;

/// Peak resident set size of this process, in MB (`VmHWM` of `/proc/self/status`; Linux only).
fn peak_memory_mb() -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let what = args.get(1).map(String::as_str).unwrap_or("sfw");
    // `method` takes a name in the second place; every other mode a size.
    let size: usize = match what {
        "method" => 0,
        _ => args.get(2).map(|s| s.parse()).transpose()?.unwrap_or(128),
    };
    match what {
        "sfw" | "sfw-noisy" => {
            let count: usize = args.get(3).map(|s| s.parse()).transpose()?.unwrap_or(10);
            let mut scene = Scenario::new(size, count)
                .with_separation(2.0)
                .with_seed(11);
            if what == "sfw-noisy" {
                scene = scene.with_snr_db(30.0);
            }
            let sample = scene.generate()?;
            let est = if sample.sigma > 0.0 {
                Sfw::with_sigma(sample.sigma)
            } else {
                Sfw::exact()
            };
            let t = Instant::now();
            let e = est.estimate(&sample.data)?;
            println!(
                "{what} fc {size} (N = {}), {count} spikes: {:.3} s, status {}, {} spikes, {} iterations, {:?}",
                2 * size + 1,
                t.elapsed().as_secs_f64(),
                e.status,
                e.spikes.len(),
                e.diagnostics.iterations,
                e.diagnostics.certificate
            );
        }
        "greedy" => {
            let count: usize = args.get(3).map(|s| s.parse()).transpose()?.unwrap_or(20);
            // An invented record: `size` time samples, lines at least 2/fc apart, 30 dB.
            let scene = Scenario::time_record(size, count)
                .with_separation(2.0)
                .with_snr_db(30.0)
                .with_seed(5)
                .generate()?;
            let (data, sigma) = (scene.data, scene.sigma);
            let t = Instant::now();
            let e = Greedy::with_sigma(sigma).estimate(&data)?;
            println!(
                "greedy N = {size}, {count} lines, 30 dB: {:.3} s, status {}, {} spikes",
                t.elapsed().as_secs_f64(),
                e.status,
                e.spikes.len()
            );
        }
        "ast" => {
            let count: usize = args.get(3).map(|s| s.parse()).transpose()?.unwrap_or(5);
            // An invented record: `size` time samples, `count` lines 3/N apart, 30 dB, σ given.
            let scene = Scenario::time_record(size, count)
                .with_separation(3.0)
                .with_snr_db(30.0)
                .with_seed(5)
                .generate()?;
            let t = Instant::now();
            let e = Ast::with_sigma(scene.sigma).estimate(&scene.data)?;
            println!(
                "ast N = {size}, {count} lines, 30 dB: {:.3} s, peak {} MB, status {}, {} spikes, {} iterations, {:?}",
                t.elapsed().as_secs_f64(),
                peak_memory_mb().map_or("n/a".to_string(), |m| format!("{m:.0}")),
                e.status,
                e.spikes.len(),
                e.diagnostics.iterations,
                e.diagnostics.certificate
            );
        }
        "interior-point" | "sliding" => {
            // One backend of `sdp` on the scene of benches/recovery.rs (fc/4 spikes, at least one and
            // at most 128, 2/fc apart, exact data): wall-clock and the peak resident memory of this
            // process (one solve per process, so the figures do not mix).
            let backend = if what == "sliding" {
                Backend::SlidingFrankWolfe
            } else {
                Backend::InteriorPoint
            };
            // A third argument overrides the spike count (dense scenes: fc/4 spikes at any fc).
            let count: usize = match args.get(3) {
                Some(c) => c.parse()?,
                None => (size / 4).clamp(1, 128),
            };
            let sample = Scenario::new(size, count)
                .with_separation(2.0)
                .with_seed(11)
                .generate()?;
            let estimator = Tv::exact().with_settings(TvSettings::default().with_backend(backend));
            let t = Instant::now();
            let e = estimator.estimate(&sample.data)?;
            let seconds = t.elapsed().as_secs_f64();
            // Largest distance from a true spike to the nearest recovered one, in units of 1/fc.
            let worst = sample
                .truth
                .iter()
                .map(|s| {
                    e.spikes
                        .iter()
                        .map(|f| finespike::wrap_distance(f.position, s.position))
                        .fold(f64::INFINITY, f64::min)
                })
                .fold(0.0, f64::max)
                * size as f64;
            println!(
                "{what} fc {size} (N = {}), {count} spikes: {seconds:.4} s, peak {} MB, status {}, {} spikes, \
                 worst position error {worst:.1e}/fc",
                2 * size + 1,
                peak_memory_mb().map_or("n/a".to_string(), |m| format!("{m:.0}")),
                e.status,
                e.spikes.len(),
            );
        }
        "method" => {
            // `method NAME N [given|estimated]`: one method of the registry on an invented record of
            // N time samples, 5 lines 2/fc apart, 30 dB for the weakest line (light noise), σ given
            // or estimated. A refusal (an error that names a method that can) is a result too.
            let name = args.get(2).ok_or("method NAME N [given|estimated]")?;
            let n: usize = args.get(3).ok_or("method NAME N")?.parse()?;
            let given = args.get(4).map(String::as_str) != Some("estimated");
            let scene = Scenario::time_record(n, 5)
                .with_separation(2.0)
                .with_snr_db(30.0)
                .with_seed(5)
                .generate()?;
            let options = MethodOptions {
                noise: if given {
                    NoiseLevel::Known(scene.sigma)
                } else {
                    NoiseLevel::Estimate
                },
                ..MethodOptions::default()
            };
            let estimator = configure(name, &options)?.estimator;
            let t = Instant::now();
            let result = estimator.estimate(&scene.data);
            let seconds = t.elapsed().as_secs_f64();
            let peak = peak_memory_mb().map_or("n/a".to_string(), |m| format!("{m:.0}"));
            let sigma = if given { "given" } else { "estimated" };
            match result {
                Ok(e) => {
                    // Largest distance from a true line to the nearest recovered one, cycles/sample.
                    let worst = scene
                        .truth
                        .iter()
                        .map(|s| {
                            e.spikes
                                .iter()
                                .map(|f| finespike::wrap_distance(f.position, s.position))
                                .fold(f64::INFINITY, f64::min)
                        })
                        .fold(0.0, f64::max);
                    println!(
                        "{name} N = {n} σ {sigma}: {seconds:.3} s, peak {peak} MB, status {}, {} \
                         lines, worst line error {worst:.1e} cycles/sample",
                        e.status,
                        e.spikes.len()
                    );
                }
                Err(err) => println!(
                    "{name} N = {n} σ {sigma}: refused after {seconds:.3} s, peak {peak} MB: {err}"
                ),
            }
        }
        other => {
            return Err(format!(
                "unknown mode {other}: use sfw, sfw-noisy, greedy, ast, interior-point, sliding or \
                 method"
            )
            .into())
        }
    }
    Ok(())
}
