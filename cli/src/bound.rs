//! `bound`: the Cramér–Rao bound of the spikes in a truth file.

use crate::show::{self, exact, num};
use crate::{input, requested_noise, shown, DomainArg, Failure, ReportFormat};
use clap::Args;
use finespike::{crb, Crb, Measurements, PROVEN_SEPARATION_FC};
use serde_json::json;
use std::path::PathBuf;

/// The Cramér–Rao bound for the spikes of a truth file, or for the sources of an array truth.
///
/// The bound is the smallest standard deviation any unbiased estimator can reach for each position (in 1/fc units and absolute), modulus and phase, in complex
/// white Gaussian noise of level σ (Fisher information of the exact model, Stoica & Nehorai 1989).
///
/// The measured set is the full band -fc..fc (Fourier), N time samples (time; n = 0..N-1, or from
/// the first index a truth file of `simulate` records), or the indices of a sample file (--data,
/// which may have gaps). fc, σ, the domain, N and the sample rate come from the truth file unless
/// given (a truth file of an even-length record, fc = (N-1)/2 fractional, is a time record);
/// amplitudes are referred to k = 0 (for time samples: to n = 0). For a real-valued truth the bound
/// is that of its complex model (the ±f pairs in complex white noise).
///
/// An array truth (`simulate --sensors`, `"kind": "array"`) gives the conditional (deterministic)
/// bound of Stoica & Nehorai (1989) of each source's spatial frequency for the amplitudes drawn in
/// the scene, in cycles per sensor and in resolution cells 1/M, and beside it the stochastic bound
/// (Stoica & Nehorai 1990) for the scene's source covariance; with a spacing, both for the angle in
/// degrees.
#[derive(Args, Debug)]
#[command(after_help = crate::EXIT_CODES)]
pub struct BoundArgs {
    /// Truth file (JSON spikes, with optional fc and sigma).
    #[arg(long, short)]
    truth: PathBuf,
    /// Take the measured index set from this sample file (CSV) instead of a full band.
    #[arg(long)]
    data: Option<PathBuf>,
    /// Noise standard deviation σ, E|n_k|² = σ² (default: the truth file's sigma; must be > 0).
    #[arg(long, allow_hyphen_values = true)]
    sigma: Option<f64>,
    /// Cutoff fc of the band -fc..fc (default: the truth file's fc).
    #[arg(long)]
    fc: Option<usize>,
    /// Fourier band -fc..fc, or time samples (default: time with --samples, from the header with
    /// --data, fourier otherwise).
    #[arg(long, value_enum)]
    domain: Option<DomainArg>,
    /// Number N of time samples n = 0..N-1 (any N >= 2; default: the truth file's N, else 2fc+1
    /// from --fc or the truth file's fc).
    #[arg(long, value_name = "N")]
    samples: Option<usize>,
    /// Sample rate R of a time record (samples per second): positions and their bounds are also
    /// given in Hz (default: the truth file's rate).
    #[arg(long, value_name = "R")]
    rate: Option<f64>,
    /// For an array truth: element spacing D in wavelengths, for the bounds of the angles (default:
    /// the truth file's spacing).
    #[arg(long, value_name = "D", allow_hyphen_values = true)]
    spacing: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = ReportFormat::Text)]
    format: ReportFormat,
}

/// The measured set: indices and band, and a description for the report.
struct Band {
    /// A time record (else a Fourier band).
    time: bool,
    indices: Vec<i64>,
    kmin: i64,
    kmax: i64,
    describe: String,
}

fn integer_fc(fc: Option<usize>, file_fc: Option<f64>) -> Result<usize, Failure> {
    if let Some(f) = fc {
        return Ok(f);
    }
    match file_fc {
        Some(f) if f >= 1.0 && f.fract() == 0.0 && f <= u32::MAX as f64 => Ok(f as usize),
        Some(f) => Err(Failure::Usage(format!(
            "the truth file's fc = {f} is not a positive integer: give --fc (or --samples for time data)"
        ))),
        None => Err(Failure::Usage(
            "the truth file records no fc: give --fc, --samples or --data".into(),
        )),
    }
}

fn band(a: &BoundArgs, file_fc: Option<f64>, rec: &input::TruthRecord) -> Result<Band, Failure> {
    if let Some(path) = &a.data {
        let data: Measurements = input::load_samples(path, a.fc, a.domain)?;
        return Ok(Band {
            time: data.domain() == finespike::Domain::Time,
            indices: data.indices().to_vec(),
            kmin: data.kmin(),
            kmax: data.kmax(),
            describe: format!("{} ({})", shown(path), show::band(&data)),
        });
    }
    // A fractional fc = (N − 1)/2 only arises from a time record of even length N.
    let half_integer = file_fc.is_some_and(|f| f.fract() == 0.5);
    let implied = if a.samples.is_some() || rec.is_time() || (a.fc.is_none() && half_integer) {
        DomainArg::Time
    } else {
        DomainArg::Fourier
    };
    match a.domain.unwrap_or(implied) {
        DomainArg::Fourier => {
            if a.samples.is_some() {
                return Err(Failure::Usage(
                    "--samples is for time data: use --fc for a Fourier band, or --domain time"
                        .into(),
                ));
            }
            let fc = integer_fc(a.fc, file_fc)?;
            if fc == 0 {
                return Err(Failure::Usage(
                    "--fc 0: the cutoff must be at least 1".into(),
                ));
            }
            let f = fc as i64;
            Ok(Band {
                time: false,
                indices: (-f..=f).collect(),
                kmin: -f,
                kmax: f,
                describe: format!(
                    "Fourier band k = -{fc}..{fc} ({} coefficients; fc = {fc})",
                    2 * fc + 1
                ),
            })
        }
        DomainArg::Time => {
            let n = match a.samples.or(rec.samples.filter(|_| a.fc.is_none())) {
                Some(n) => n,
                None => match (a.fc, file_fc) {
                    (Some(f), _) => 2 * f + 1,
                    // A time record of N samples has fc = (N − 1)/2.
                    (None, Some(f)) if f > 0.0 && (2.0 * f).fract() == 0.0 => (2.0 * f) as usize + 1,
                    _ => {
                        return Err(Failure::Usage(
                            "give --samples N (or --fc) for a time record: the truth file has no usable fc"
                                .into(),
                        ))
                    }
                },
            };
            if n < 2 {
                return Err(Failure::Usage(format!(
                    "--samples {n}: at least 2 time samples are needed"
                )));
            }
            let first = rec.first_index.unwrap_or(0);
            let last = i64::try_from(n - 1)
                .ok()
                .and_then(|l| first.checked_add(l))
                .ok_or_else(|| Failure::Usage(format!("--samples {n}: too many samples")))?;
            Ok(Band {
                time: true,
                indices: (-last..=-first).collect(),
                kmin: -last,
                kmax: -first,
                describe: format!(
                    "N = {n} time samples n = {first}..{last} (resolution 1/N; Rayleigh units 1/fc \
                     with fc = (N-1)/2)"
                ),
            })
        }
    }
}

pub fn run(a: BoundArgs) -> Result<(), Failure> {
    if crate::array_input::is_array_truth_file(&a.truth) {
        let single = [
            (a.data.is_some(), "--data"),
            (a.fc.is_some(), "--fc"),
            (a.domain.is_some(), "--domain"),
            (a.samples.is_some(), "--samples"),
            (a.rate.is_some(), "--rate"),
        ];
        if let Some((_, flag)) = single.iter().find(|(given, _)| *given) {
            return Err(Failure::Usage(format!(
                "{flag} applies to single records, but {} is an array truth (its array and \
                 snapshots are in the file)",
                shown(&a.truth)
            )));
        }
        requested_noise(a.sigma)?;
        return crate::array_bound::run(&a.truth, a.sigma, a.spacing, a.format);
    }
    if let Some(d) = a.spacing {
        return Err(Failure::Usage(format!(
            "--spacing {d} applies to array truths (\"kind\": \"array\"), not to a spike file"
        )));
    }
    let (file, rec) = input::load_truth(&a.truth).map_err(Failure::Input)?;
    let rate = match a.rate.or(rec.rate) {
        Some(r) if r.is_finite() && r > 0.0 => Some(r),
        Some(r) => {
            return Err(Failure::Usage(format!(
                "--rate {r}: the sample rate must be positive and finite"
            )))
        }
        None => None,
    };
    // A given σ obeys the library's noise-level rule first; then the bound needs noise (σ > 0).
    requested_noise(a.sigma)?;
    let sigma = match (a.sigma, file.sigma) {
        (Some(s), _) if s > 0.0 => s,
        (Some(s), _) => {
            return Err(Failure::Usage(format!(
                "--sigma {s}: the bound needs a positive noise level (for σ = 0 every bound is 0)"
            )))
        }
        (None, Some(s)) if s.is_finite() && s > 0.0 => s,
        (None, Some(s)) => {
            return Err(Failure::Usage(format!(
                "the truth file records sigma = {s} (exact data: every bound is 0): give --sigma"
            )))
        }
        (None, None) => {
            return Err(Failure::Usage(
                "the truth file records no sigma: give --sigma".into(),
            ))
        }
    };
    let band = band(&a, file.fc, &rec)?;
    if rate.is_some() && !band.time {
        return Err(Failure::Usage(
            "--rate applies to time records: this bound is for a Fourier band".into(),
        ));
    }
    let bound =
        crb(&band.indices, band.kmin..=band.kmax, &file.spikes, sigma).map_err(Failure::Input)?;
    let text = match a.format {
        ReportFormat::Json => {
            serde_json::to_string_pretty(&json!({
                "truth": shown(&a.truth),
                "sigma": sigma,
                "kmin": band.kmin,
                "kmax": band.kmax,
                "measured": band.indices.len(),
                "bound": bound,
            }))
            .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
                + "\n"
        }
        ReportFormat::Csv => csv(&bound),
        ReportFormat::Text => text(&a, &band, sigma, &bound, &file.spikes, rate),
    };
    crate::emit(&text)?;
    Ok(())
}

fn csv(b: &Crb) -> String {
    let mut out = String::from(
        "position,re,im,std_position,std_position_fc,std_abs_amplitude,std_phase,std_complex_amplitude\n",
    );
    for s in &b.per_spike {
        out.push_str(&format!(
            "{},{},{},{},{},{},{},{}\n",
            exact(s.position),
            exact(s.amplitude.re),
            exact(s.amplitude.im),
            exact(s.std_position),
            exact(s.std_position_fc),
            exact(s.std_abs_amplitude),
            exact(s.std_phase),
            exact(s.std_complex_amplitude)
        ));
    }
    out
}

fn text(
    a: &BoundArgs,
    band: &Band,
    sigma: f64,
    b: &Crb,
    spikes: &finespike::Spikes,
    rate: Option<f64>,
) -> String {
    let mut out = format!(
        "Cramér–Rao bound for the {} spikes of {}\nmeasured: {}\nnoise: σ = {} (E|n_k|² = σ²)\n",
        b.per_spike.len(),
        shown(&a.truth),
        band.describe,
        num(sigma),
    );
    let sep = spikes.min_separation();
    if sep.is_finite() {
        // The record's resolution 1/N (one periodogram bin) and the TV theory's unit 1/fc.
        let n = (band.kmax - band.kmin + 1) as f64;
        let cells = sep * n;
        let fc = sep * b.fc;
        out.push_str(&format!(
            "closest pair: {} resolution cells (1/N) = {}/fc apart (1/fc: the TV theory's unit){}\n",
            show::sig(cells, 3),
            show::sig(fc, 3),
            if cells < 1.0 {
                " — UNDER-RESOLVED: closer than the record's resolution 1/N, the position bounds grow \
                 fast as lines close in"
            } else if fc < PROVEN_SEPARATION_FC {
                " — resolved, but below the proven exact-recovery threshold of TV"
            } else {
                ""
            }
        ));
    }
    out.push_str(&format!(
        "Fisher matrix condition number: {}\n\n",
        num(b.fisher_condition)
    ));
    let mut head = vec![
        "#",
        "position",
        "|a|",
        "std τ·fc",
        "std τ",
        "std |a|",
        "std arg a",
    ];
    if rate.is_some() {
        head.extend(["frequency", "std f"]);
    }
    let rows: Vec<Vec<String>> = b
        .per_spike
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let mut row = vec![
                (i + 1).to_string(),
                format!("{:.6}", s.position),
                format!("{:.4}", s.amplitude.norm()),
                num(s.std_position_fc),
                num(s.std_position),
                num(s.std_abs_amplitude),
                format!("{} rad", num(s.std_phase)),
            ];
            if let Some(r) = rate {
                // Signed frequency in (−R/2, R/2].
                let p = if s.position > 0.5 {
                    s.position - 1.0
                } else {
                    s.position
                };
                row.push(format!("{} Hz", show::sig(p * r, 7)));
                row.push(format!("{} Hz", num(s.std_position * r)));
            }
            row
        })
        .collect();
    out.push_str(&show::table(&head, &rows));
    out.push_str(
        "\nstd τ·fc: one standard deviation of the position in Rayleigh units (1/fc); std τ: the same \
         in position units\n(cycles per sample for time data); |a| and arg a: modulus and phase of the \
         amplitude.\n",
    );
    if let Some(r) = rate {
        out.push_str(&format!(
            "frequency, std f: the position as a signed frequency and its bound in Hz (rate {} \
             samples per second).\n",
            num(r)
        ));
    }
    out
}
