//! Reading input files with errors that name the file, the line, what was found and what was expected.

use crate::{shown, DomainArg};
use finespike::io::{self, SpikeFile};
use finespike::{Domain, Error, Measurements};
use std::collections::HashMap;
use std::path::Path;

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

/// The one-based line of each data row: the non-blank lines after the header. `None` when that
/// count does not match the parsed rows (e.g. quoted fields spanning lines), then errors carry no line.
fn data_lines(text: &str, rows: usize) -> Option<Vec<usize>> {
    let lines: Vec<usize> = text
        .lines()
        .enumerate()
        .skip(1)
        .filter(|(_, l)| !l.trim().is_empty())
        .map(|(i, _)| i + 1)
        .collect();
    (lines.len() == rows).then_some(lines)
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
    if text.trim().is_empty() {
        return Err(parse_error(
            path,
            1,
            "found an empty file, expected the header 'k,re,im' (Fourier coefficients) or 'n,re,im' \
             (time samples) and one row per sample"
                .into(),
        ));
    }
    let rows = io::parse_samples(&text, &shown(path)).map_err(|e| match e {
        Error::Empty { .. } => parse_error(
            path,
            2,
            "found no data rows after the header, expected at least one row of three numbers"
                .into(),
        ),
        other => other,
    })?;
    let (col, header) = match rows.domain {
        Domain::Fourier => ("k", "k,re,im"),
        Domain::Time => ("n", "n,re,im"),
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
    let lines = data_lines(&text, rows.indices.len());
    let line_of = |row: usize| lines.as_ref().map_or(0, |l| l[row]);
    let mut first: HashMap<i64, usize> = HashMap::new();
    for (row, &k) in rows.indices.iter().enumerate() {
        if let Some(&prev) = first.get(&k) {
            let earlier = match line_of(prev) {
                0 => String::new(),
                l => format!(" (first on line {l})"),
            };
            return Err(parse_error(
                path,
                line_of(row),
                format!("found {col} = {k} again{earlier}, expected each {col} at most once"),
            ));
        }
        first.insert(k, row);
        match rows.domain {
            Domain::Fourier => {
                if let Some(f) = fc {
                    if k.unsigned_abs() > f as u64 {
                        return Err(parse_error(
                            path,
                            line_of(row),
                            format!(
                                "found k = {k}, expected |k| <= fc = {f} (the band -{f}..{f} set by --fc)"
                            ),
                        ));
                    }
                }
            }
            Domain::Time => {
                if k < 0 {
                    return Err(parse_error(
                        path,
                        line_of(row),
                        format!("found n = {k}, expected a sample time n >= 0"),
                    ));
                }
            }
        }
    }
    rows.into_measurements(fc)
}

/// Read a spike JSON file (truth or result).
pub fn load_spikes(path: &Path) -> Result<SpikeFile, Error> {
    let text = read_text(path)?;
    io::parse_spikes_json(&text, &shown(path))
}
