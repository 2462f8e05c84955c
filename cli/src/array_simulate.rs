//! `simulate --sensors M --snapshots L`: an invented array scene as a snapshot file and its truth.

use crate::simulate::SceneArgs;
use crate::{write_output, Failure};
use clap::Args;
use finespike::eval::array_scene::{ArrayScene, SourceCorrelation};
use finespike::eval::io_snapshots::{array_truth_json, snapshots_to_csv, ArrayTruth};
use finespike::{Error, Scenario};
use std::path::Path;

/// The flags of an invented array scene (with `--count`, `--separation`, `--snr` and `--seed` of
/// the scene flags).
#[derive(Args, Debug, Clone)]
pub struct ArraySceneArgs {
    /// An invented array scene: a uniform line array of M sensors n = 0..M-1 (at least 2), written
    /// as a snapshot file `n,snapshot,re,im`, instead of --fc, --domain and --samples. --count
    /// sources with the closest pair --separation resolution cells (1/M) apart; --snr is every
    /// source's SNR in dB (power 10^(snr/10) against σ = 1).
    #[arg(long, value_name = "M", conflicts_with_all = ["fc", "domain", "samples", "real", "subset", "amplitudes"])]
    pub sensors: Option<usize>,
    /// With --sensors: number L of snapshots (default 50).
    #[arg(long, value_name = "L", requires = "sensors")]
    pub snapshots: Option<usize>,
    /// With --sensors: the sources' spatial frequencies in cycles per sensor (e.g. `0.1,-0.05`)
    /// instead of --count and --separation.
    #[arg(long, value_name = "F1,F2,...", value_delimiter = ',', allow_hyphen_values = true,
          requires = "sensors", conflicts_with_all = ["count", "separation", "angles"])]
    pub frequencies: Option<Vec<f64>>,
    /// With --sensors and --spacing: the sources' directions of arrival in degrees from broadside
    /// (e.g. `-20,5`), f = D·sin θ, instead of --count and --separation.
    #[arg(long, value_name = "A1,A2,...", value_delimiter = ',', allow_hyphen_values = true,
          requires = "spacing", conflicts_with_all = ["count", "separation"])]
    pub angles: Option<Vec<f64>>,
    /// With --sensors: how the sources' amplitudes relate: `none` (independent), a correlation
    /// coefficient ρ in (-1, 1) of every source with the first, or `coherent` (fixed-phase copies
    /// of the first, as in multipath).
    #[arg(long, value_name = "none|RHO|coherent", default_value = "none", value_parser = parse_correlation, requires = "sensors")]
    pub correlation: SourceCorrelation,
    /// With --sensors: sensors left out of the array (a thinned array), e.g. `3,7`.
    #[arg(
        long,
        value_name = "N1,N2,...",
        value_delimiter = ',',
        requires = "sensors"
    )]
    pub missing_sensors: Vec<usize>,
    /// With --sensors: element spacing D in wavelengths, recorded in the truth (with it the truth
    /// gives each source's angle; `recover --spacing D` gives the estimates' angles).
    #[arg(
        long,
        value_name = "D",
        requires = "sensors",
        allow_hyphen_values = true
    )]
    pub spacing: Option<f64>,
}

/// `--correlation`: `none`, a coefficient, or `coherent`.
fn parse_correlation(text: &str) -> Result<SourceCorrelation, String> {
    match text.trim().to_ascii_lowercase().as_str() {
        "none" | "0" => Ok(SourceCorrelation::Uncorrelated),
        "coherent" => Ok(SourceCorrelation::Coherent),
        t => match t.parse::<f64>() {
            Ok(r) if r.is_finite() && r.abs() < 1.0 => Ok(SourceCorrelation::Correlated(r)),
            Ok(r) => Err(format!(
                "a correlation coefficient lies in (-1, 1), found {r}; use `coherent` for fully \
                 coherent sources"
            )),
            Err(_) => {
                Err("expected none, a coefficient in (-1, 1) such as 0.9, or coherent".into())
            }
        },
    }
}

/// A scene setting the library refuses, as a command-line error naming the flag.
fn setting(e: Error) -> Failure {
    match e {
        Error::InvalidSetting { name, value, rule } => {
            Failure::Usage(format!("{}: {value}: {rule}", flag(name)))
        }
        other => Failure::Usage(other.to_string()),
    }
}

/// The flag of a library setting's name.
fn flag(name: &str) -> &'static str {
    match name {
        "sensors" => "--sensors",
        "snapshots" => "--snapshots",
        "spacing" => "--spacing",
        "correlation" => "--correlation",
        "missing sensors" => "--missing-sensors",
        "snr_db" => "--snr",
        _ => "scene",
    }
}

/// The spatial frequencies of the sources: given, from angles, or drawn so that the closest pair is
/// exactly `separation/M` apart (the same seeded draw as the single-record scenes, on a record of M
/// samples).
fn positions(a: &ArraySceneArgs, scene: &SceneArgs, m: usize) -> Result<Vec<f64>, Failure> {
    if let Some(f) = &a.frequencies {
        if let Some(bad) = f.iter().find(|x| !x.is_finite()) {
            return Err(Failure::Usage(format!(
                "--frequencies: {bad} is not a finite number"
            )));
        }
        return Ok(f.clone());
    }
    if let (Some(angles), Some(d)) = (&a.angles, a.spacing) {
        if let Some(bad) = angles.iter().find(|x| !(-90.0..=90.0).contains(*x)) {
            return Err(Failure::Usage(format!(
                "--angles: {bad}° lies outside -90..90 degrees from broadside"
            )));
        }
        return Ok(angles.iter().map(|t| d * t.to_radians().sin()).collect());
    }
    let s = scene.separation;
    if !(s.is_finite() && s > 0.0) || s * scene.count as f64 > m as f64 {
        return Err(Failure::Usage(format!(
            "--separation {s} with --count {}: the separation in resolution cells 1/M must be \
             positive and count × separation must not exceed M = {m}",
            scene.count
        )));
    }
    // Scenario's separation is in its Rayleigh unit 1/fc, fc = (M − 1)/2: s/M = (s·fc/M)/fc.
    let fc = (m as f64 - 1.0) / 2.0;
    let sample = Scenario::time_record(m, scene.count)
        .with_separation(s * fc / m as f64)
        .with_seed(scene.seed)
        .generate()
        .map_err(setting)?;
    Ok(sample.truth.positions())
}

/// Write the invented array scene: the snapshot file to `out`, its truth to `truth`.
pub fn run(a: &ArraySceneArgs, scene: &SceneArgs, out: &Path, truth: &Path) -> Result<(), Failure> {
    let m = a.sensors.unwrap_or(0);
    let l = a.snapshots.unwrap_or(50);
    let positions = positions(a, scene, m)?;
    let mut sc = ArrayScene::new(m, l, &positions)
        .map_err(setting)?
        .with_correlation(a.correlation)
        .map_err(setting)?
        .with_missing_sensors(&a.missing_sensors)
        .map_err(setting)?
        .with_seed(scene.seed);
    if let Some(snr) = scene.snr {
        sc = sc.with_snr_db(snr).map_err(setting)?;
    }
    if let Some(d) = a.spacing {
        sc = sc.with_spacing(d).map_err(setting)?;
    }
    let draw = sc.draw().map_err(setting)?;
    let t = ArrayTruth::from_draw(&draw, m, scene.snr, a.correlation, scene.seed);
    write_output(out, &snapshots_to_csv(&draw.data))?;
    write_output(truth, &(array_truth_json(&t) + "\n"))?;
    Ok(())
}
