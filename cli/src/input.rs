//! Reading input files with errors that name the file, the line, what was found and what was expected.

use crate::{shown, DomainArg, Failure};
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
    /// Sample file (CSV, header `k,re,im` or `n,re,im`); `recover` takes several (`-i a.csv -i b.csv`
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

    /// Read the one file into measurements.
    pub fn load(&self) -> Result<Measurements, Failure> {
        load_samples(self.path()?, self.fc, self.domain)
    }

    /// Read the file `path` with these flags.
    pub fn load_path(&self, path: &Path) -> Result<Measurements, Failure> {
        load_samples(path, self.fc, self.domain)
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
             (header 'n,re,im'), whose band is fixed by the number of samples: leave out --fc",
            shown(path)
        )));
    }
    rows.into_measurements(fc).map_err(Failure::Input)
}

/// Read a spike JSON file (truth or result).
pub fn load_spikes(path: &Path) -> Result<SpikeFile, Error> {
    let text = read_text(path)?;
    io::parse_spikes_json(&text, &shown(path))
}
