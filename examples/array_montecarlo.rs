//! Monte Carlo of joint convex recovery from many snapshots, and its running time.
//!
//! Invented scenes (seeded [`ArrayScene`] draws): a uniform line array of 10 sensors, 10 snapshots,
//! two uncorrelated sources at spatial frequencies 0.1 and 0.1 + 2/M, each at the same SNR.
//!
//! 1. For SNR = 0, 5, 10, 15, 20 dB and `DRAWS` draws (default 200): RMSE of the positions over
//!    `√CRB_det` (the deterministic, conditional Cramér–Rao bound, Stoica & Nehorai 1989, at the true
//!    positions and amplitudes) for
//!    - the joint convex method (`sdp` on all snapshots, σ known: the group atomic-norm constrained
//!      problem), and
//!    - one snapshot at a time (each snapshot's single-record `sdp`, σ known; positions matched to the
//!      truth and averaged over the snapshots that found both sources), for contrast.
//!
//!    Draws where a method misses a source (no estimate within 1/(2M) of it) are counted, not
//!    averaged.
//! 2. Time of `sdp` on snapshots (automatic backend, σ estimated) against M and L, three sources at
//!    10 dB (set `ONLY_M` to time one array size).
//!
//! Run: `cargo run --release --example array_montecarlo [DRAWS]`.

use finespike::eval::array_scene::ArrayScene;
use finespike::model::wrap_difference;
use finespike::{conditional_crb, Estimator, Tv};
use std::time::Instant;

/// Signed errors of `found` against `truth` (both sorted), when every true position has an estimate
/// within `reach` (the nearest one each).
fn errors(found: &[f64], truth: &[f64], reach: f64) -> Option<Vec<f64>> {
    truth
        .iter()
        .map(|&t| {
            found
                .iter()
                .map(|&f| wrap_difference(f, t))
                .min_by(|a, b| a.abs().total_cmp(&b.abs()))
                .filter(|e| e.abs() <= reach)
        })
        .collect()
}

fn main() -> finespike::Result<()> {
    let draws: usize = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(200);
    let (m, l) = (10usize, 10usize);
    let positions = [0.1, 0.1 + 2.0 / m as f64];
    println!("# Invented scenes: M = {m} sensors, L = {l} snapshots, sources at {positions:?}, {draws} draws");
    println!(
        "# RMSE/sqrt(CRB_det), mean over the two sources; misses = draws with a source not found"
    );
    println!("snr_db  joint_ratio  joint_misses  single_ratio  single_misses  joint_s/draw  single_s/draw");
    for snr in [0.0, 5.0, 10.0, 15.0, 20.0] {
        let (mut sq_joint, mut sq_single) = (0.0, 0.0);
        let (mut n_joint, mut n_single, mut miss_joint, mut miss_single) = (0, 0, 0, 0);
        let (mut t_joint, mut t_single) = (0.0, 0.0);
        let mut crb_joint_sum = 0.0;
        let mut crb_single_sum = 0.0;
        for seed in 0..draws as u64 {
            let draw = ArrayScene::new(m, l, &positions)?
                .with_snr_db(snr)?
                .with_seed(1000 + seed)
                .draw()?;
            let mut truth = draw.positions.clone();
            let mut order: Vec<usize> = (0..truth.len()).collect();
            order.sort_by(|&a, &b| truth[a].total_cmp(&truth[b]));
            truth.sort_by(f64::total_cmp);
            let amps =
                nalgebra::DMatrix::from_fn(order.len(), l, |i, t| draw.amplitudes[(order[i], t)]);
            let crb = conditional_crb(&draw.data, &truth, &amps, draw.sigma)?;
            let crb_mean = crb.iter().sum::<f64>() / crb.len() as f64;
            let reach = 0.5 / m as f64;
            let start = Instant::now();
            let est = Tv::with_sigma(draw.sigma).estimate_snapshots(&draw.data)?;
            t_joint += start.elapsed().as_secs_f64();
            match errors(&est.positions(), &truth, reach) {
                Some(e) => {
                    sq_joint += e.iter().map(|x| x * x).sum::<f64>() / e.len() as f64;
                    crb_joint_sum += crb_mean;
                    n_joint += 1;
                }
                None => miss_joint += 1,
            }
            let start = Instant::now();
            let mut sums = vec![0.0; truth.len()];
            let mut used = 0usize;
            for t in 0..l {
                let one = draw.data.snapshot(t)?;
                let est = Tv::with_sigma(draw.sigma).estimate(&one)?;
                if let Some(e) = errors(&est.spikes.positions(), &truth, reach) {
                    for (s, x) in sums.iter_mut().zip(e) {
                        *s += x;
                    }
                    used += 1;
                }
            }
            t_single += start.elapsed().as_secs_f64();
            if used > 0 {
                sq_single +=
                    sums.iter().map(|s| (s / used as f64).powi(2)).sum::<f64>() / sums.len() as f64;
                crb_single_sum += crb_mean;
                n_single += 1;
            } else {
                miss_single += 1;
            }
        }
        let ratio = |sq: f64, crb: f64, n: usize| {
            if n == 0 {
                f64::NAN
            } else {
                (sq / n as f64).sqrt() / (crb / n as f64).sqrt()
            }
        };
        println!(
            "{snr:6.1}  {:11.3}  {:12}  {:12.3}  {:13}  {:12.4}  {:13.4}",
            ratio(sq_joint, crb_joint_sum, n_joint),
            miss_joint,
            ratio(sq_single, crb_single_sum, n_single),
            miss_single,
            t_joint / draws as f64,
            t_single / draws as f64,
        );
    }

    println!(
        "\n# Time of sdp on snapshots (automatic backend, sigma estimated), 3 sources at 10 dB"
    );
    println!("M     L      seconds  solver  status  sources");
    for (m, l) in [
        (16, 100),
        (16, 1000),
        (16, 10_000),
        (32, 100),
        (32, 1000),
        (64, 100),
        (64, 1000),
    ]
    .into_iter()
    .filter(|&(m, _)| std::env::var("ONLY_M").map_or(true, |v| v == m.to_string()))
    {
        let positions = [-0.31, 0.02, 0.29];
        let draw = ArrayScene::new(m, l, &positions)?
            .with_snr_db(10.0)?
            .with_seed(5)
            .draw()?;
        let start = Instant::now();
        let est = Tv::default().estimate_snapshots(&draw.data)?;
        let secs = start.elapsed().as_secs_f64();
        println!(
            "{m:<5} {l:<6} {secs:8.3}  {}  {:?}  {}",
            est.diagnostics.solver.unwrap_or("-"),
            est.status,
            est.sources.len()
        );
    }
    Ok(())
}
