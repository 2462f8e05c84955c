//! `simulate`: write an invented, seeded scene; the scene flags are shared with `compare`.

use crate::{write_output, AmpArg, DomainArg, Failure};
use clap::Args;
use finespike::eval::scenario::RealScene;
use finespike::{Complex64, Error, Scenario, Spike, Spikes};
use serde::Serialize;
use std::path::PathBuf;

/// The flags that describe an invented scene (shared by `simulate` and the sweeps of `compare`).
#[derive(Args, Debug, Clone)]
pub struct SceneArgs {
    /// Number of spikes (of sources, for `simulate --sensors`).
    #[arg(long, default_value_t = 3)]
    pub count: usize,
    /// Separation of the closest pair in Rayleigh units (Δ·fc), for `simulate --sensors` in
    /// resolution cells (Δ·M); the other gaps are random and larger.
    #[arg(long, default_value_t = 2.0)]
    pub separation: f64,
    /// Signal-to-noise ratio of the weakest spike in dB, 10·log10(min |a|² / σ²), for `simulate
    /// --sensors` of every source, 10·log10(P/σ²) (omitted: exact data).
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
/// Every scene this command writes is invented, made up from the flags and the seed; none is
/// measured data.
///
/// Complex scenes (the default): the truth JSON records fc and σ (and, for time records, the domain
/// and N) beside the spikes. The positions are drawn so that the closest pair is exactly
/// --separation/fc apart; the noise is complex white Gaussian with E|n_k|² = σ², σ set by --snr from
/// the weakest spike.
///
/// Real-valued records (--real, with --samples N and one --line per cosine): the sample file is
/// `n,value` with indices from --first-index; the record holds the cosines A cos(2πfn/R + φ), an
/// offset and a linear trend (--offset, --slope), AR(1) red noise e_n = ρ e_(n-1) + w_n (--red ρ,
/// --noise-std for the std of w) and samples removed in runs of up to --max-run (--missing). The
/// truth JSON records the lines in the record's unit and, for the tools that read spike files, the
/// complex model's ±f pairs with σ the noise's stationary std.
///
/// Array scenes (--sensors M --snapshots L): L snapshots x_t[n] = Σ_j s_j(t) exp(i2π f_j n) + noise
/// of a uniform line array, sources at spatial frequencies f_j in cycles per sensor (drawn with
/// --count and --separation in resolution cells 1/M, or given by --frequencies or --angles), complex
/// Gaussian amplitudes of power 10^(snr/10) each against σ = 1, uncorrelated, correlated or coherent
/// (--correlation), some sensors left out (--missing-sensors). The sample file is `n,snapshot,re,im`;
/// the truth JSON (`"kind": "array"`) records the array, σ, the correlation and each source with its
/// drawn amplitude in every snapshot.
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
    /// An invented real-valued record (`n,value`) of --samples N samples with the cosines of --line.
    #[arg(long, requires_all = ["samples", "line"],
          conflicts_with_all = ["count", "separation", "snr", "amplitudes", "subset"])]
    real: bool,
    /// With --real: one cosine FREQ:AMP[:PHASE_DEG] (frequency in Hz with --rate, else cycles per
    /// sample; phase at n = 0); repeat for several.
    #[arg(long, value_name = "FREQ:AMP[:PHASE]", requires = "real", value_parser = parse_line)]
    line: Vec<(f64, f64, f64)>,
    /// With --real: sample rate R in samples per second (frequencies of --line in Hz).
    #[arg(long, value_name = "R", requires = "real")]
    rate: Option<f64>,
    /// With --real: index n of the first sample.
    #[arg(
        long,
        value_name = "N0",
        default_value_t = 0,
        requires = "real",
        allow_hyphen_values = true
    )]
    first_index: i64,
    /// With --real: constant offset of the record.
    #[arg(
        long,
        default_value_t = 0.0,
        requires = "real",
        allow_hyphen_values = true
    )]
    offset: f64,
    /// With --real: linear trend, added per sample from the first one.
    #[arg(
        long,
        default_value_t = 0.0,
        requires = "real",
        allow_hyphen_values = true
    )]
    slope: f64,
    /// With --real: standard deviation of the noise's innovations w_n (0: exact data).
    #[arg(long, default_value_t = 0.0, requires = "real")]
    noise_std: f64,
    /// With --real: AR(1) coefficient ρ of the noise (0: white; 0.9: strongly red).
    #[arg(
        long,
        value_name = "RHO",
        default_value_t = 0.0,
        requires = "real",
        allow_hyphen_values = true
    )]
    red: f64,
    /// With --real: fraction of the samples removed, in runs (0 to 0.5).
    #[arg(long, default_value_t = 0.0, requires = "real")]
    missing: f64,
    /// With --real: longest run of missing samples.
    #[arg(long, default_value_t = 5, requires = "real")]
    max_run: usize,
    #[command(flatten)]
    array: crate::array_simulate::ArraySceneArgs,
    /// Where to write the samples (CSV; `-` for stdout).
    #[arg(long)]
    out: PathBuf,
    /// Where to write the truth (JSON: fc, sigma, spikes; for an array scene the array truth).
    #[arg(long)]
    truth: PathBuf,
}

/// A scene setting the scenario rejects is a command-line error.
pub fn scene_error(e: Error) -> Failure {
    Failure::Usage(e.to_string())
}

/// `FREQ:AMP[:PHASE_DEG]` of `--line`.
fn parse_line(text: &str) -> Result<(f64, f64, f64), String> {
    let parts: Vec<&str> = text.split(':').collect();
    let num = |t: &str| -> Result<f64, String> {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|x| x.is_finite())
            .ok_or_else(|| format!("'{t}' is not a finite number"))
    };
    match parts.as_slice() {
        [f, a] => Ok((num(f)?, num(a)?, 0.0)),
        [f, a, p] => Ok((num(f)?, num(a)?, num(p)?)),
        _ => Err("expected FREQ:AMP or FREQ:AMP:PHASE_DEG, e.g. 123.4:1.0:30".into()),
    }
}

pub fn run(a: SimulateArgs) -> Result<(), Failure> {
    if a.real {
        return run_real(&a);
    }
    if a.array.sensors.is_some() {
        return crate::array_simulate::run(&a.array, &a.scene, &a.out, &a.truth);
    }
    let sample = a
        .scene
        .scenario(a.fc, a.domain, a.samples, a.scene.seed)
        .generate()
        .map_err(scene_error)?;
    let time = sample.data.domain() == finespike::Domain::Time;
    let file = TruthFile {
        fc: Cutoff(sample.data.fc()),
        sigma: sample.sigma,
        domain: if time { "time" } else { "fourier" },
        samples: time.then(|| sample.data.band_len()),
        first_index: time.then_some(0),
        rate: None,
        real: false,
        lines: None,
        spikes: &sample.truth,
    };
    let json = serde_json::to_string_pretty(&file).map_err(|e| Failure::Output(e.to_string()))?;
    write_output(&a.out, &crate::show::samples_csv(&sample.data))?;
    write_output(&a.truth, &(json + "\n"))?;
    Ok(())
}

/// `simulate --real`: the invented real record and its truth.
fn run_real(a: &SimulateArgs) -> Result<(), Failure> {
    let n = a.samples.unwrap_or(0);
    let rate = a.rate.unwrap_or(1.0);
    let mut scene = RealScene::new(n, rate)
        .with_first_index(a.first_index)
        .with_trend(a.offset, a.slope)
        .with_red_noise(a.red, a.noise_std)
        .with_missing(a.missing, a.max_run)
        .with_seed(a.scene.seed);
    for &(f, amp, phase) in &a.line {
        scene = scene.with_cosine(f, amp, phase.to_radians());
    }
    let record = scene.generate().map_err(scene_error)?;
    let data = record.measurements().map_err(scene_error)?;
    // The complex model's pairs (A/2)e^{±iφ} at ±f/R (a line at 0 or R/2 is one real atom).
    let mut spikes = Vec::new();
    let mut lines = Vec::new();
    for c in &record.cosines {
        let p = c.frequency / rate;
        let phasor = Complex64::from_polar(c.amplitude, c.phase);
        lines.push(TruthLine {
            frequency: c.frequency,
            position: p,
            amplitude: [phasor.re, phasor.im],
        });
        if p == 0.0 || p == 0.5 {
            spikes.push(Spike::new(p, Complex64::new(phasor.re, 0.0)));
        } else {
            spikes.push(Spike::new(p, phasor / 2.0));
            spikes.push(Spike::new(1.0 - p, phasor.conj() / 2.0));
        }
    }
    let spikes = Spikes::new(spikes).map_err(scene_error)?;
    let file = TruthFile {
        fc: Cutoff(data.fc()),
        sigma: record.noise_std,
        domain: "time",
        samples: Some(data.band_len()),
        first_index: Some(a.first_index),
        rate: a.rate,
        real: true,
        lines: Some(lines),
        spikes: &spikes,
    };
    let json = serde_json::to_string_pretty(&file).map_err(|e| Failure::Output(e.to_string()))?;
    write_output(&a.out, &crate::show::samples_csv(&data))?;
    write_output(&a.truth, &(json + "\n"))?;
    Ok(())
}

/// The truth file `simulate` writes: the spike-file format (`finespike::eval::io::SpikeFile`) with fc
/// written as people write it, and what `bound`, `compare` and `plot` need to rebuild the record:
/// its domain, for a time record its length N and first index, and for a real record its sample
/// rate and lines.
#[derive(Serialize)]
struct TruthFile<'a> {
    fc: Cutoff,
    /// Noise level: E|n|² = σ² (for a real record the noise's stationary standard deviation).
    sigma: f64,
    domain: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    samples: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    first_index: Option<i64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    rate: Option<f64>,
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    real: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    lines: Option<Vec<TruthLine>>,
    spikes: &'a Spikes,
}

/// A line of a real truth: frequency in the record's unit, position in cycles per sample, phasor
/// amplitude A e^{iφ} as [re, im].
#[derive(Serialize)]
struct TruthLine {
    frequency: f64,
    position: f64,
    amplitude: [f64; 2],
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
