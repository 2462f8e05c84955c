//! Monte Carlo of the noise-aware convex methods against the Cramér–Rao bound.
//!
//! An invented scene (fc = 16, four unit-modulus lines, closest pair 2/fc apart) is held fixed while
//! complex white Gaussian noise is drawn anew for each trial at 20, 30 and 40 dB. For each method and
//! SNR the table gives, per line, the position RMSE over the trials divided by the CRB standard
//! deviation (Stoica & Nehorai 1989, IEEE TASSP 37(5)), the number of missed lines, and the fraction
//! of trials with a spurious line. Run with
//! `cargo run --release --example noise_montecarlo -- [trials]` (default 200).

#[path = "../tests/common/montecarlo.rs"]
mod montecarlo;

use finespike::{AmplitudeKind, Ast, Estimator, Scenario, Tv};
use montecarlo::run;

fn main() {
    let trials: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(200);
    let scene = Scenario::new(16, 4)
        .with_separation(2.0)
        .with_amplitudes(AmplitudeKind::UnitModulus)
        .with_seed(4)
        .generate()
        .expect("scene");
    let (clean, truth) = (scene.data, scene.truth);
    println!("invented scene: fc = 16, 4 unit-modulus lines, closest pair 2/fc; {trials} noise draws per row");
    println!(
        "{:<6} {:>5}  {:<40} {:>7} {:>10}",
        "method", "SNR", "RMSE / sqrt(CRB) per line", "missed", "spurious"
    );
    for snr in [20.0, 30.0, 40.0] {
        let sigma = 10f64.powf(-snr / 20.0);
        let methods: Vec<Box<dyn Estimator>> = vec![
            Box::new(Tv::with_sigma(sigma)),
            Box::new(Ast::with_sigma(sigma)),
        ];
        for m in &methods {
            let row = run(m.as_ref(), &clean, &truth, sigma, trials, 1000 + snr as u64);
            let ratios: Vec<String> = row.ratio.iter().map(|r| format!("{r:.3}")).collect();
            println!(
                "{:<6} {:>5.0}  {:<40} {:>7} {:>9.1}%",
                m.name(),
                snr,
                ratios.join(" "),
                row.missed,
                100.0 * row.spurious_rate
            );
        }
    }
}
