//! `simulate`: write an invented, seeded scene; the scene flags are shared with `compare`.

use crate::{write_output, AmpArg, DomainArg, Failure};
use clap::Args;
use finespike::{Error, Scenario, Spikes};
use serde::Serialize;
use std::path::PathBuf;

/// The flags that describe an invented scene (shared by `simulate` and the sweeps of `compare`).
#[derive(Args, Debug, Clone)]
pub struct SceneArgs {
    /// Number of spikes.
    #[arg(long, default_value_t = 3)]
    pub count: usize,
    /// Separation of the closest pair in Rayleigh units (Δ·fc); the other gaps are random and larger.
    #[arg(long, default_value_t = 2.0)]
    pub separation: f64,
    /// Signal-to-noise ratio of the weakest spike in dB, 10·log10(min |a|² / σ²) (omitted: exact data).
    #[arg(long)]
    pub snr: Option<f64>,
    /// How the amplitudes are drawn.
    #[arg(long, value_enum, default_value_t = AmpArg::Complex)]
    pub amplitudes: AmpArg,
    /// Random seed (positions, amplitudes, noise and subset all follow from it).
    #[arg(long, default_value_t = 0)]
    pub seed: u64,
    /// Fraction of the band's coefficients kept, chosen at random (1 = the full band).
    #[arg(long, default_value_t = 1.0)]
    pub subset: f64,
}

impl SceneArgs {
    /// The scenario with cutoff `fc` in `domain` (or a time record of `samples` samples), drawn with
    /// `seed`.
    pub fn scenario(
        &self,
        fc: usize,
        domain: DomainArg,
        samples: Option<usize>,
        seed: u64,
    ) -> Scenario {
        let base = match samples {
            Some(n) => Scenario::time_record(n, self.count),
            None => Scenario::new(fc, self.count).with_domain(domain.domain()),
        };
        let sc = base
            .with_separation(self.separation)
            .with_amplitudes(self.amplitudes.kind())
            .with_seed(seed)
            .with_subset_fraction(self.subset);
        match self.snr {
            Some(s) => sc.with_snr_db(s),
            None => sc,
        }
    }
}

/// Write an invented scene: a sample CSV and its truth JSON.
///
/// The truth JSON records fc and σ beside the spikes. The positions are drawn so that the closest pair is exactly --separation/fc apart; the noise is
/// complex white Gaussian with E|n_k|² = σ², σ set by --snr from the weakest spike. Every scene this
/// command writes is made up from the flags and the seed.
#[derive(Args, Debug)]
#[command(after_help = crate::EXIT_CODES)]
pub struct SimulateArgs {
    /// Cutoff fc: the band -fc..fc (Fourier) or 2fc+1 time samples n = 0..2fc.
    #[arg(long, default_value_t = 16)]
    fc: usize,
    /// Fourier coefficients (`k,re,im`) or time samples (`n,re,im`).
    #[arg(long, value_enum, default_value_t = DomainArg::Fourier)]
    domain: DomainArg,
    /// A time record of exactly N samples n = 0..N-1 (any N >= 2, even included; fc = (N-1)/2),
    /// instead of --fc and --domain.
    #[arg(long, value_name = "N", conflicts_with_all = ["fc", "domain"])]
    samples: Option<usize>,
    #[command(flatten)]
    scene: SceneArgs,
    /// Where to write the samples (CSV; `-` for stdout).
    #[arg(long)]
    out: PathBuf,
    /// Where to write the truth (JSON: fc, sigma, spikes).
    #[arg(long)]
    truth: PathBuf,
}

/// A scene setting the scenario rejects is a command-line error.
pub fn scene_error(e: Error) -> Failure {
    Failure::Usage(e.to_string())
}

pub fn run(a: SimulateArgs) -> Result<(), Failure> {
    let sample = a
        .scene
        .scenario(a.fc, a.domain, a.samples, a.scene.seed)
        .generate()
        .map_err(scene_error)?;
    let file = TruthFile {
        fc: Cutoff(sample.data.fc()),
        sigma: sample.sigma,
        spikes: &sample.truth,
    };
    let json = serde_json::to_string_pretty(&file).map_err(|e| Failure::Output(e.to_string()))?;
    write_output(&a.out, &crate::show::samples_csv(&sample.data))?;
    write_output(&a.truth, &(json + "\n"))?;
    Ok(())
}

/// The truth file `simulate` writes: the spike-file format (`finespike::eval::io::SpikeFile`) with fc
/// written as people write it.
#[derive(Serialize)]
struct TruthFile<'a> {
    fc: Cutoff,
    sigma: f64,
    spikes: &'a Spikes,
}

/// A cutoff: an integer (`16`, not `16.0`) when it is one; a time record of even length N keeps its
/// fractional fc = (N − 1)/2 (e.g. `31.5`), from which `bound` rebuilds the record.
struct Cutoff(f64);

impl Serialize for Cutoff {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        if self.0.fract() == 0.0 && self.0 >= 0.0 && self.0 <= u32::MAX as f64 {
            s.serialize_u64(self.0 as u64)
        } else {
            s.serialize_f64(self.0)
        }
    }
}
