//! Time of the joint convex method on snapshots (invented scene: a seeded [`ArrayScene`] draw,
//! three uncorrelated sources at spatial frequencies −0.31, 0.02, 0.29, σ estimated, automatic
//! backend).
//!
//! Run: `cargo run --release --example joint_timing M L [SEED [SNR_DB]]` (defaults 64 1000 5 10)
//! for one size, or `cargo run --release --example joint_timing table [SEED [SNR_DB]]` for the table
//! M = 16/32/64 × L = 100/1000, one run each, with the growth factors in M and L. The first call of
//! a layout includes the Monte Carlo detection level of the significance test (cached per process
//! afterwards), as a user's single call would. With `JOINT_SLIDING=1` in the environment the
//! sliding backend is forced (the automatic choice takes the interior point at M = 16).

use finespike::eval::array_scene::ArrayScene;
use finespike::{Backend, Estimator, Tv, TvSettings};
use std::time::Instant;

/// One timed estimate; prints a line and returns the seconds.
fn run(m: usize, l: usize, seed: u64, snr_db: f64) -> finespike::Result<f64> {
    let positions = [-0.31, 0.02, 0.29];
    let draw = ArrayScene::new(m, l, &positions)?
        .with_snr_db(snr_db)?
        .with_seed(seed)
        .draw()?;
    let start = Instant::now();
    let mut tv = Tv::default();
    if std::env::var("JOINT_SLIDING").is_ok_and(|v| v == "1") {
        tv = tv.with_settings(TvSettings::default().with_backend(Backend::SlidingFrankWolfe));
    }
    let est = tv.estimate_snapshots(&draw.data)?;
    let secs = start.elapsed().as_secs_f64();
    println!(
        "M = {m}, L = {l}: {secs:.3} s, solver {}, status {:?}, positions {:?}",
        est.diagnostics.solver.unwrap_or("-"),
        est.status,
        est.positions()
    );
    Ok(secs)
}

fn main() -> finespike::Result<()> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let num = |i: usize| args.get(i).and_then(|s| s.parse::<f64>().ok());
    if args.first().map(String::as_str) == Some("table") {
        let seed = num(1).map_or(5, |s| s as u64);
        let snr = num(2).unwrap_or(10.0);
        let (ms, ls) = ([16, 32, 64], [100, 1000]);
        let mut t = [[0.0; 2]; 3];
        for (i, &m) in ms.iter().enumerate() {
            for (j, &l) in ls.iter().enumerate() {
                t[i][j] = run(m, l, seed, snr)?;
            }
        }
        println!("\n  M   L = 100   L = 1000   ×(L: 100→1000)");
        for (i, &m) in ms.iter().enumerate() {
            println!(
                "{m:>3}   {:>6.3} s   {:>6.3} s   {:>5.2}",
                t[i][0],
                t[i][1],
                t[i][1] / t[i][0]
            );
        }
        for j in 0..2 {
            println!(
                "L = {}: ×(M: 16→32) {:.2}, ×(M: 32→64) {:.2}",
                ls[j],
                t[1][j] / t[0][j],
                t[2][j] / t[1][j]
            );
        }
        return Ok(());
    }
    let m = num(0).map_or(64, |v| v as usize);
    let l = num(1).map_or(1000, |v| v as usize);
    let seed = num(2).map_or(5, |s| s as u64);
    let snr = num(3).unwrap_or(10.0);
    run(m, l, seed, snr)?;
    Ok(())
}
