//! Time of the joint convex method on snapshots for one array size (invented scene: a seeded
//! [`ArrayScene`] draw, three uncorrelated sources at spatial frequencies −0.31, 0.02, 0.29, 10 dB,
//! σ estimated, automatic backend).
//!
//! Run: `cargo run --release --example joint_timing M L` (defaults 64 1000).

use finespike::eval::array_scene::ArrayScene;
use finespike::{Estimator, Tv};
use std::time::Instant;

fn main() -> finespike::Result<()> {
    let mut args = std::env::args().skip(1);
    let m: usize = args.next().and_then(|s| s.parse().ok()).unwrap_or(64);
    let l: usize = args.next().and_then(|s| s.parse().ok()).unwrap_or(1000);
    let positions = [-0.31, 0.02, 0.29];
    let draw = ArrayScene::new(m, l, &positions)?
        .with_snr_db(10.0)?
        .with_seed(5)
        .draw()?;
    let start = Instant::now();
    let est = Tv::default().estimate_snapshots(&draw.data)?;
    let secs = start.elapsed().as_secs_f64();
    println!(
        "M = {m}, L = {l}: {secs:.3} s, solver {}, status {:?}, positions {:?}",
        est.diagnostics.solver.unwrap_or("-"),
        est.status,
        est.positions()
    );
    Ok(())
}
