//! Monte Carlo of the subspace baselines against the Cramér–Rao bound.
//!
//! Invented scenes (seeded): 3 lines of unit modulus, closest pair 4/fc apart, fc = 16 (N = 33),
//! complex white Gaussian noise at 20, 30 and 40 dB per line; 200 draws per SNR (override with the
//! first argument). For each method the table gives the position RMSE, the root of the mean
//! Cramér–Rao bound (inverse Fisher matrix of the exact model, Stoica & Nehorai 1989, IEEE TASSP
//! 37(5)), their ratio, and the single-tone closed form √(6σ²/((2π)²|a|²N(N²−1))) (Rife & Boorstyn
//! 1974, IEEE TIT 20(5)) for comparison.
//!
//! Run: `cargo run --release --example subspace_montecarlo [draws]`

use finespike::subspace::{Esprit, MatrixPencil, Music, OrderSelection, SubspaceSettings};
use finespike::{crb_for, wrap_distance, AmplitudeKind, Estimator, Scenario};
use std::f64::consts::PI;
use std::time::Instant;

fn main() -> Result<(), finespike::Error> {
    let draws: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(200);
    let fc = 16usize;
    let n = (2 * fc + 1) as f64;
    let settings = SubspaceSettings::default().with_order(OrderSelection::Given(3))?;
    let methods: Vec<Box<dyn Estimator>> = vec![
        Box::new(Esprit::new(settings)),
        Box::new(MatrixPencil::new(settings)),
        Box::new(Music::new(settings)),
        Box::new(Esprit::new(settings.with_forward_backward(false))),
    ];
    let labels = ["esprit", "pencil", "music", "esprit (no FB)"];
    println!(
        "fc = {fc} (N = 33), 3 unit-modulus lines 4/fc apart, {draws} draws per SNR, order given"
    );
    println!(
        "{:<15} {:>6} {:>12} {:>12} {:>9} {:>14}",
        "method", "SNR", "RMSE [1/fc]", "√CRB [1/fc]", "ratio", "1-tone [1/fc]"
    );
    let start = Instant::now();
    for (m, label) in methods.iter().zip(labels) {
        for snr in [20.0, 30.0, 40.0] {
            let (mut se, mut crb, mut count) = (0.0, 0.0, 0.0);
            let mut sigma = 0.0;
            for seed in 0..draws {
                let sample = Scenario::new(fc, 3)
                    .with_separation(4.0)
                    .with_amplitudes(AmplitudeKind::UnitModulus)
                    .with_snr_db(snr)
                    .with_seed(1000 + seed)
                    .generate()?;
                sigma = sample.sigma;
                let est = m.estimate(&sample.data)?;
                let bound = crb_for(&sample.data, &sample.truth, sample.sigma)?;
                for ((e, t), b) in est
                    .spikes
                    .iter()
                    .zip(sample.truth.iter())
                    .zip(&bound.per_spike)
                {
                    se += wrap_distance(e.position, t.position).powi(2);
                    crb += b.std_position.powi(2);
                    count += 1.0;
                }
            }
            let rmse = (se / count).sqrt();
            let root_crb = (crb / count).sqrt();
            let single = (6.0 * sigma * sigma / ((2.0 * PI).powi(2) * n * (n * n - 1.0))).sqrt();
            let f = fc as f64;
            println!(
                "{:<15} {:>4} dB {:>12.4e} {:>12.4e} {:>9.3} {:>14.4e}",
                label,
                snr,
                rmse * f,
                root_crb * f,
                rmse / root_crb,
                single * f
            );
        }
    }
    // Model order by MDL and AIC (Wax & Kailath 1985) on the same scenes, plus 10 dB.
    println!();
    println!("model order (truth 3) over {draws} draws: correct / under / over");
    println!("{:<6} {:>8} {:>20} {:>20}", "order", "SNR", "MDL", "AIC");
    for snr in [10.0, 20.0, 30.0, 40.0] {
        let mut tally = [[0u64; 3]; 2];
        for seed in 0..draws {
            let sample = Scenario::new(fc, 3)
                .with_separation(4.0)
                .with_amplitudes(AmplitudeKind::UnitModulus)
                .with_snr_db(snr)
                .with_seed(1000 + seed)
                .generate()?;
            for (t, sel) in tally
                .iter_mut()
                .zip([OrderSelection::Mdl, OrderSelection::Aic])
            {
                let est = Esprit::new(SubspaceSettings::default().with_order(sel)?)
                    .estimate(&sample.data)?;
                let order = est.diagnostics.model_order.map_or(0, |o| o.order);
                t[usize::from(order != 3) + usize::from(order > 3)] += 1;
            }
        }
        let cell = |t: [u64; 3]| format!("{} / {} / {}", t[0], t[1], t[2]);
        println!(
            "{:<6} {:>5} dB {:>20} {:>20}",
            "",
            snr,
            cell(tally[0]),
            cell(tally[1])
        );
    }
    println!("({:.1} s)", start.elapsed().as_secs_f64());
    Ok(())
}
