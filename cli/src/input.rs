//! Reading input files with errors that name the file, the line, what was found and what was expected.

use crate::{shown, DomainArg, Failure};
use finespike::eval::io::{self, SpikeFile};
use finespike::{Domain, Error, Measurements, Scale, Trend};
use std::path::{Path, PathBuf};

fn parse_error(path: &Path, line: usize, message: String) -> Error {
    Error::Parse {
        source_name: shown(path),
        line,
        message,
    }
}

fn read_text(path: &Path) -> Result<String, Error> {
    io::read_file_text(path)
}

/// The sample file of `recover` and `plot`, with the flags that fix its band.
#[derive(clap::Args, Debug, Clone)]
pub struct SampleArgs {
    /// Sample file (CSV, header `k,re,im`, `n,re,im` or `n,value`, any case), or a snapshot file of
    /// array data (`n,snapshot,re,im` sensor data or `k,snapshot,re,im`, one row per sample per
    /// snapshot), told apart by the header; `recover` takes several sample files (`-i a.csv -i b.csv`
    /// or `-i a.csv b.csv`) and then writes one JSON line per file.
    #[arg(long, short, required = true, num_args = 1..)]
    pub input: Vec<PathBuf>,
    /// Cutoff fc of the band -fc..fc, for Fourier files only (default: the largest |k| in the file);
    /// a time-sample file's band is fixed by its N samples, and --fc is refused with one.
    #[arg(long)]
    pub fc: Option<usize>,
    /// Expected kind of file; the header must agree (default: taken from the header).
    #[arg(long, value_enum)]
    pub domain: Option<DomainArg>,
    #[command(flatten)]
    pub record: RecordArgs,
    /// Element spacing D of a uniform line array in wavelengths, for snapshot files: every source
    /// then carries its direction of arrival θ = asin(f/D) from broadside (f its spatial frequency in
    /// cycles per sensor); above 1/2 the angles are ambiguous (grating lobes) and a warning says so.
    /// Refused with single-record sample files.
    #[arg(long, value_name = "D", allow_hyphen_values = true)]
    pub spacing: Option<f64>,
}

/// The units and the nuisance of a record: sample rate or domain length, and the trend fitted with
/// the lines.
#[derive(clap::Args, Debug, Clone, Default)]
pub struct RecordArgs {
    /// Sample rate R of a time record, in samples per second: frequencies are then reported in Hz
    /// (in [0, R/2] for a real-valued record, signed in (-R/2, R/2] for a complex one) and the
    /// resolution 1/N becomes R/N Hz. Refused with Fourier coefficients (they take --length).
    #[arg(long, value_name = "R", allow_hyphen_values = true)]
    pub rate: Option<f64>,
    /// Length L of the periodic domain of Fourier coefficients: positions are then also reported
    /// in the domain's unit (τ·L). Refused with time samples (they take --rate).
    #[arg(long, value_name = "L", allow_hyphen_values = true)]
    pub length: Option<f64>,
    /// Offset or trend fitted jointly with the lines: none, mean, linear or poly:D (D = 0..8).
    /// Default: mean for a real-valued record (`n,value`), none otherwise — an offset is almost
    /// always present in measured real data (common practice to remove it), while complex
    /// (baseband or Fourier) data are usually centred already.
    #[arg(long, value_name = "TREND", value_parser = parse_trend)]
    pub detrend: Option<Trend>,
}

/// `--detrend` through the library's parser (`none|mean|linear|poly:D`, any case).
fn parse_trend(text: &str) -> Result<Trend, String> {
    text.parse::<Trend>().map_err(|e| match e {
        Error::InvalidSetting { rule, .. } => rule.to_string(),
        other => other.to_string(),
    })
}

impl RecordArgs {
    /// The trend fitted when `--detrend` is not given: `mean` for a real-valued record, `none`
    /// otherwise (see `--detrend`).
    pub fn trend_for(&self, data: &Measurements) -> Trend {
        self.detrend.unwrap_or(if data.is_real() {
            Trend::Mean
        } else {
            Trend::None
        })
    }

    /// `data` with the requested scale and trend. A rate with Fourier data, a length with a time
    /// record, a non-positive scale or a polynomial too large for the record are command-line
    /// errors (exit 2), named by their flag and the file.
    pub fn apply(&self, data: Measurements, path: &Path) -> Result<Measurements, Failure> {
        let mut data = data;
        match (self.rate, self.length, data.domain()) {
            (Some(r), _, Domain::Fourier) => {
                return Err(Failure::Usage(format!(
                    "--rate {r} applies to time samples, but {} holds Fourier coefficients (header \
                     'k,re,im'): give the length of their domain with --length L instead",
                    shown(path)
                )))
            }
            (_, Some(l), Domain::Time) => {
                return Err(Failure::Usage(format!(
                    "--length {l} applies to Fourier coefficients, but {} holds time samples: give \
                     their sample rate with --rate R instead",
                    shown(path)
                )))
            }
            _ => {}
        }
        let scale = match (self.rate, self.length) {
            (Some(r), _) => Some(("--rate", Scale::SampleRate(r))),
            (None, Some(l)) => Some(("--length", Scale::DomainLength(l))),
            (None, None) => None,
        };
        if let Some((flag, scale)) = scale {
            data = data.with_scale(scale).map_err(|e| match e {
                Error::InvalidSetting { value, rule, .. } => {
                    Failure::Usage(format!("{flag} {value}: {rule}"))
                }
                other => Failure::Usage(format!("{flag}: {other}")),
            })?;
        }
        let trend = self.trend_for(&data);
        if trend != Trend::None {
            data = data.with_trend(trend).map_err(|e| {
                Failure::Usage(format!("--detrend {trend} on {}: {e}", shown(path)))
            })?;
        }
        Ok(data)
    }
}

impl SampleArgs {
    /// The one sample file, for the subcommands that take one (exit 2 when several are given).
    pub fn path(&self) -> Result<&Path, Failure> {
        match self.input.as_slice() {
            [one] => Ok(one),
            _ => Err(Failure::Usage(format!(
                "this subcommand takes one --input file, not {}",
                self.input.len()
            ))),
        }
    }

    /// Read the one file into measurements, with the requested units and trend.
    pub fn load(&self) -> Result<Measurements, Failure> {
        self.load_path(self.path()?)
    }

    /// Read the file `path` with these flags (units and trend included).
    pub fn load_path(&self, path: &Path) -> Result<Measurements, Failure> {
        if let Some(d) = self.spacing {
            return Err(Failure::Usage(format!(
                "--spacing {d} applies to snapshot files of array data (header \
                 'n,snapshot,re,im'), but {} is a single-record sample file",
                shown(path)
            )));
        }
        let data = load_samples(path, self.fc, self.domain)?;
        self.record.apply(data, path)
    }
}

/// Read a sample file into measurements.
///
/// `fc` fixes the band of a Fourier file (default: the largest `|k|`); given with a time-sample file,
/// whose band the record length fixes, it is a command-line error (exit 2) rather than ignored.
/// `domain`, when given, must agree with the header. Duplicate indices and indices outside the band
/// are reported with their line (exit 3).
pub fn load_samples(
    path: &Path,
    fc: Option<usize>,
    domain: Option<DomainArg>,
) -> Result<Measurements, Failure> {
    let text = read_text(path).map_err(Failure::Input)?;
    let rows = io::parse_samples(&text, &shown(path)).map_err(Failure::Input)?;
    let header = match (rows.domain, rows.real) {
        (Domain::Fourier, _) => "k,re,im",
        (Domain::Time, false) => "n,re,im",
        (Domain::Time, true) => "n,value",
    };
    if let Some(d) = domain {
        if d.domain() != rows.domain {
            let (name, want) = match d {
                DomainArg::Fourier => ("fourier", "k,re,im"),
                DomainArg::Time => ("time", "n,re,im' or 'n,value"),
            };
            return Err(Failure::Input(parse_error(
                path,
                1,
                format!("--domain {name} expects header '{want}', found '{header}'"),
            )));
        }
    }
    if let (Some(f), Domain::Time) = (fc, rows.domain) {
        return Err(Failure::Usage(format!(
            "--fc {f} applies to Fourier coefficients (header 'k,re,im'), but {} holds time samples \
             (header '{header}'), whose band is fixed by the number of samples: leave out --fc",
            shown(path)
        )));
    }
    rows.into_measurements(fc).map_err(Failure::Input)
}

/// Read a spike JSON file (truth or result).
pub fn load_spikes(path: &Path) -> Result<SpikeFile, Error> {
    Ok(load_truth(path)?.0)
}

/// What a truth file written by `simulate` says about its record beside the spikes (all optional:
/// spike files from elsewhere need not carry them).
#[derive(serde::Deserialize, Debug, Clone, Default, PartialEq)]
pub struct TruthRecord {
    /// `"time"` or `"fourier"`.
    #[serde(default)]
    pub domain: Option<String>,
    /// Number N of time samples.
    #[serde(default)]
    pub samples: Option<usize>,
    /// Index of the first time sample.
    #[serde(default)]
    pub first_index: Option<i64>,
    /// Sample rate of the record.
    #[serde(default)]
    pub rate: Option<f64>,
    /// A real-valued record.
    #[serde(default)]
    pub real: bool,
}

impl TruthRecord {
    /// True when the file says it describes a time record.
    pub fn is_time(&self) -> bool {
        self.domain.as_deref() == Some("time")
    }
}

/// Read a spike JSON file with what it says about its record.
pub fn load_truth(path: &Path) -> Result<(SpikeFile, TruthRecord), Error> {
    let text = read_text(path)?;
    let spikes = io::parse_spikes_json(&text, &shown(path))?;
    let record: TruthRecord = serde_json::from_str(&text).map_err(|e| {
        parse_error(
            path,
            e.line(),
            format!("unreadable record fields (domain, samples, first_index, rate, real): {e}"),
        )
    })?;
    Ok((spikes, record))
}
