//! Diagnosis of one cell of the evaluation's phase-transition map: four real-positive spikes
//! 0.3/N apart in the band −16..16 (N = 33), exact data, the draws of the report's campaign.
//! Prints each method's position errors (in 1/N), its relative residual ‖y − Fμ̂‖/‖y‖ and
//! the Cramér–Rao deviation at σ equal to that residual per sample. Every scene is invented.
//!
//! ```text
//! cargo run --release --example exact_cluster            # 4 spikes 0.3/N
//! cargo run --release --example exact_cluster -- 8 0.9  # another cell: spikes, separation (1/N)
//! ```
use finespike::eval::array_scene::SourceCorrelation;
use finespike::eval::campaign::{
    draw_scene, trial_seed, AmplitudePattern, Band, Grid, MethodSpec, Plan, SeparationUnit,
};
use finespike::registry;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let plan = Plan {
        grid: Grid {
            bands: vec![Band::Fc(16)],
            separations: vec![0.3, 0.6, 0.9, 1.2, 1.5, 1.8, 2.1, 2.5],
            separation_unit: SeparationUnit::Record,
            spikes: vec![2, 4, 6, 8],
            snr_db: vec![None],
            amplitudes: vec![
                AmplitudePattern::RandomPhase,
                AmplitudePattern::RealPositive,
                AmplitudePattern::AlternatingSign,
            ],
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Uncorrelated],
            spacing: None,
        },
        methods: vec![MethodSpec::new("sdp")],
        draws: 4,
        seed: 1501,
        exact_tolerance: 1e-3,
    };
    let args: Vec<String> = std::env::args().collect();
    let spikes: usize = args.get(1).map_or(Ok(4), |a| a.parse())?;
    let separation: f64 = args.get(2).map_or(Ok(0.3), |a| a.parse())?;
    let (conds, _) = plan.conditions();
    let c = conds
        .iter()
        .find(|c| {
            c.amplitudes == AmplitudePattern::RealPositive
                && c.spikes == spikes
                && (c.separation_res - separation).abs() < 1e-9
        })
        .ok_or("cell not in the grid")?;
    let n = c.band.len() as f64;
    for d in 0..plan.draws {
        let scene = draw_scene(c, trial_seed(plan.seed, c.index, d))?;
        println!("draw {d}: truth {:?}", scene.truth.positions());
        for name in ["sdp", "esprit"] {
            let opts = MethodSpec::new(name).options(c.spikes, 0.0)?;
            let est = registry::configure(name, &opts)?
                .estimator
                .estimate(&scene.data)?;
            let mut pos = est.spikes.positions();
            pos.sort_by(f64::total_cmp);
            let mut tru = scene.truth.positions();
            tru.sort_by(f64::total_cmp);
            let errs: Vec<String> = pos
                .iter()
                .zip(&tru)
                .map(|(p, t)| format!("{:.2e}", (p - t) * n))
                .collect();
            let rel = scene.data.residual_norm(&est.spikes) / scene.data.norm();
            let eps = rel * scene.data.norm() / (scene.data.len() as f64).sqrt();
            let crb = finespike::crb_for(&scene.data, &scene.truth, eps)
                .map(|b| {
                    b.per_spike
                        .iter()
                        .map(|p| p.std_position * n)
                        .fold(0.0, f64::max)
                })
                .unwrap_or(f64::INFINITY);
            println!(
                "  {name:6} {:?} found {} errors/N [{}] rel.residual {rel:.2e} CRB-std at that level {crb:.2e}/N",
                est.status,
                pos.len(),
                errs.join(", ")
            );
        }
    }
    Ok(())
}
