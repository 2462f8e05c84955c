//! Reading input files with errors that name the file, the line, what was found and what was expected.

use crate::{shown, DomainArg};
use finespike::eval::io::{self, SpikeFile};
use finespike::{Domain, Error, Measurements};
use std::path::{Path, PathBuf};

fn parse_error(path: &Path, line: usize, message: String) -> Error {
    Error::Parse {
        source_name: shown(path),
        line,
        message,
    }
}

fn read_text(path: &Path) -> Result<String, Error> {
    std::fs::read_to_string(path)
        .map_err(|e| parse_error(path, 0, format!("cannot read the file: {e}")))
}

/// The sample file of `recover` and `plot`, with the flags that fix its band.
#[derive(clap::Args, Debug, Clone)]
pub struct SampleArgs {
    /// Sample file (CSV, header `k,re,im` or `n,re,im`).
    #[arg(long, short)]
    pub input: PathBuf,
    /// Cutoff fc of the band -fc..fc (Fourier files; default: the largest |k| in the file).
    #[arg(long)]
    pub fc: Option<usize>,
    /// Expected kind of file; the header must agree (default: taken from the header).
    #[arg(long, value_enum)]
    pub domain: Option<DomainArg>,
}

impl SampleArgs {
    /// Read the file into measurements.
    pub fn load(&self) -> Result<Measurements, Error> {
        load_samples(&self.input, self.fc, self.domain)
    }
}

/// Read a sample file into measurements.
///
/// `fc` fixes the band of a Fourier file (default: the largest `|k|`); `domain`, when given, must agree
/// with the header. Duplicate indices and indices outside the band are reported with their line.
pub fn load_samples(
    path: &Path,
    fc: Option<usize>,
    domain: Option<DomainArg>,
) -> Result<Measurements, Error> {
    let text = read_text(path)?;
    let rows = io::parse_samples(&text, &shown(path))?;
    let header = match rows.domain {
        Domain::Fourier => "k,re,im",
        Domain::Time => "n,re,im",
    };
    if let Some(d) = domain {
        if d.domain() != rows.domain {
            let (name, want) = match d {
                DomainArg::Fourier => ("fourier", "k,re,im"),
                DomainArg::Time => ("time", "n,re,im"),
            };
            return Err(parse_error(
                path,
                1,
                format!("--domain {name} expects header '{want}', found '{header}'"),
            ));
        }
    }
    rows.into_measurements(fc)
}

/// Read a spike JSON file (truth or result).
pub fn load_spikes(path: &Path) -> Result<SpikeFile, Error> {
    let text = read_text(path)?;
    io::parse_spikes_json(&text, &shown(path))
}
