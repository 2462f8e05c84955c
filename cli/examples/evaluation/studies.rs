//! The campaigns of the report, as plans of `finespike::eval::campaign`.

use crate::Mode;
use finespike::eval::array_scene::SourceCorrelation;
use finespike::eval::campaign::{
    run, AmplitudePattern, Band, Campaign, Grid, MethodSpec, Plan, SeparationUnit,
};

/// The baselines of the phase-transition maps, after `sdp`.
pub const HEAT_METHODS: [&str; 6] = ["sdp", "esprit", "music", "pencil", "greedy", "grid"];

/// Every method of the registry.
pub fn all_methods() -> Vec<&'static str> {
    finespike::registry::method_names().collect()
}

/// The three amplitude patterns.
pub const PATTERNS: [AmplitudePattern; 3] = [
    AmplitudePattern::RandomPhase,
    AmplitudePattern::RealPositive,
    AmplitudePattern::AlternatingSign,
];

/// The Fourier band of the recovery studies: `−16..=16`, `N = 33`.
pub const FC: usize = 16;

fn plan(grid: Grid, methods: &[&str], draws: usize, seed: u64) -> Plan {
    Plan {
        grid,
        methods: methods.iter().map(|m| MethodSpec::new(m)).collect(),
        draws,
        seed,
        exact_tolerance: 1e-3,
    }
}

/// Run a study's plan.
pub fn go(plan: &Plan) -> Result<Campaign, finespike::Error> {
    run(plan, &|_, _| {})
}

/// Trials of a plan (conditions × methods × draws).
pub fn trials(plan: &Plan) -> usize {
    plan.conditions().0.len() * plan.methods.len() * plan.draws
}

/// Noiseless recovery: separation × spike count × amplitude pattern, `sdp` and the baselines.
pub fn phase_transitions(mode: &Mode) -> Plan {
    plan(
        Grid {
            bands: vec![Band::Fc(FC)],
            separations: mode.heat_separations.clone(),
            separation_unit: SeparationUnit::Record,
            spikes: mode.heat_counts.clone(),
            snr_db: vec![None],
            amplitudes: PATTERNS.to_vec(),
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Uncorrelated],
            spacing: None,
        },
        &HEAT_METHODS,
        mode.heat_draws,
        1501,
    )
}

/// Two random-phase lines `3/N` apart against SNR, every method, given σ and the order.
pub fn accuracy(mode: &Mode) -> Plan {
    plan(
        Grid {
            bands: vec![Band::Fc(FC)],
            separations: vec![3.0],
            separation_unit: SeparationUnit::Record,
            spikes: vec![2],
            snr_db: mode.crb_snrs.iter().map(|&s| Some(s)).collect(),
            amplitudes: vec![AmplitudePattern::RandomPhase],
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Uncorrelated],
            spacing: None,
        },
        &all_methods(),
        mode.crb_draws,
        1502,
    )
}

/// Two random-phase lines against separation at several SNRs, every method.
pub fn resolution(mode: &Mode) -> Plan {
    plan(
        Grid {
            bands: vec![Band::Fc(FC)],
            separations: mode.res_separations.clone(),
            separation_unit: SeparationUnit::Record,
            spikes: vec![2],
            snr_db: mode.res_snrs.iter().map(|&s| Some(s)).collect(),
            amplitudes: vec![AmplitudePattern::RandomPhase],
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Uncorrelated],
            spacing: None,
        },
        &all_methods(),
        mode.res_draws,
        1503,
    )
}

/// Exact `sdp` recovery at separations above `1.26/fc`, every amplitude pattern.
pub fn separation_check(mode: &Mode) -> Plan {
    plan(
        Grid {
            bands: vec![Band::Fc(FC)],
            separations: vec![1.3, 1.6, 2.0, 2.5],
            separation_unit: SeparationUnit::Fc,
            spikes: vec![2, 4, 6],
            snr_db: vec![None],
            amplitudes: PATTERNS.to_vec(),
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Uncorrelated],
            spacing: None,
        },
        &["sdp"],
        mode.fg_draws,
        1504,
    )
}

/// One tone in `N = 64` time samples at 40 dB, every method.
pub fn single_tone(mode: &Mode) -> Plan {
    plan(
        Grid {
            bands: vec![Band::Samples(TONE_N)],
            separations: vec![1.0],
            separation_unit: SeparationUnit::Record,
            spikes: vec![1],
            snr_db: vec![Some(TONE_SNR_DB)],
            amplitudes: vec![AmplitudePattern::RandomPhase],
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Uncorrelated],
            spacing: None,
        },
        &all_methods(),
        mode.tone_draws,
        1505,
    )
}

/// Record length of the single-tone check.
pub const TONE_N: usize = 64;
/// SNR of the single-tone check, dB.
pub const TONE_SNR_DB: f64 = 40.0;

/// Sensors of the array study.
pub const ARRAY_SENSORS: usize = 12;
/// Snapshots of the array study.
pub const ARRAY_SNAPSHOTS: usize = 20;
/// Spacing of the array study's pair, in `1/M`.
pub const ARRAY_SEPARATION: f64 = 2.0;
/// The methods of the array study.
pub const ARRAY_METHODS: [&str; 3] = ["sdp", "esprit", "music"];

/// A coherent pair (multipath) on a half-wavelength array against SNR: the joint convex method and
/// the subspace methods on snapshots, σ and the number of sources given.
pub fn arrays(mode: &Mode) -> Plan {
    plan(
        Grid {
            bands: vec![Band::Array {
                sensors: ARRAY_SENSORS,
                snapshots: ARRAY_SNAPSHOTS,
            }],
            separations: vec![ARRAY_SEPARATION],
            separation_unit: SeparationUnit::Record,
            spikes: vec![2],
            snr_db: mode.array_snrs.iter().map(|&s| Some(s)).collect(),
            amplitudes: vec![AmplitudePattern::RandomPhase],
            gaps: vec![0.0],
            correlations: vec![SourceCorrelation::Coherent],
            spacing: Some(0.5),
        },
        &ARRAY_METHODS,
        mode.array_draws,
        1506,
    )
}
