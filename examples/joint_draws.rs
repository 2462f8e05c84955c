//! Per-draw errors of the joint convex method against the conditional CRB, for diagnosing the
//! Monte Carlo of `array_montecarlo` (same invented scenes: 10 sensors, 10 snapshots, two sources
//! 2/M apart, σ known, seeds 1000…). Prints the draws whose error exceeds 3 CRB standard deviations.
//!
//! Run: `cargo run --release --example joint_draws [SNR_DB] [DRAWS]` (defaults 20, 200).

use finespike::eval::array_scene::ArrayScene;
use finespike::model::wrap_difference;
use finespike::{conditional_crb, Estimator, Tv};

fn main() -> finespike::Result<()> {
    let mut args = std::env::args().skip(1);
    let snr: f64 = args.next().and_then(|s| s.parse().ok()).unwrap_or(20.0);
    let draws: u64 = args.next().and_then(|s| s.parse().ok()).unwrap_or(200);
    let (m, l) = (10usize, 10usize);
    let positions = [0.1, 0.1 + 2.0 / m as f64];
    let (mut sum_sq, mut sum_crb) = (0.0, 0.0);
    for seed in 0..draws {
        let draw = ArrayScene::new(m, l, &positions)?
            .with_snr_db(snr)?
            .with_seed(1000 + seed)
            .draw()?;
        let mut order: Vec<usize> = (0..draw.positions.len()).collect();
        order.sort_by(|&a, &b| draw.positions[a].total_cmp(&draw.positions[b]));
        let truth: Vec<f64> = order.iter().map(|&i| draw.positions[i]).collect();
        let amps =
            nalgebra::DMatrix::from_fn(order.len(), l, |i, t| draw.amplitudes[(order[i], t)]);
        let crb = conditional_crb(&draw.data, &truth, &amps, draw.sigma)?;
        let est = Tv::with_sigma(draw.sigma).estimate_snapshots(&draw.data)?;
        let found = est.positions();
        let ratios: Vec<f64> = truth
            .iter()
            .zip(&crb)
            .map(|(&t, &c)| {
                let e = found
                    .iter()
                    .map(|&f| wrap_difference(f, t))
                    .min_by(|a, b| a.abs().total_cmp(&b.abs()))
                    .unwrap_or(f64::NAN);
                sum_sq += e * e;
                sum_crb += c;
                e / c.sqrt()
            })
            .collect();
        if ratios.iter().any(|r| r.abs() > 3.0) {
            println!(
                "seed {}: error/sqrt(CRB) {ratios:?}, {} estimates {found:?}, status {:?}",
                1000 + seed,
                found.len(),
                est.status
            );
        }
    }
    println!("RMSE/sqrt(mean CRB) = {:.3}", (sum_sq / sum_crb).sqrt());
    Ok(())
}
