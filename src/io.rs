//! Plain file formats: sample CSV in, spike JSON or CSV out.
//!
//! - Samples: CSV with header `k,re,im` (Fourier coefficients) or `n,re,im` (time samples), one row per
//!   measured value.
//! - Spikes: JSON `{"spikes": [{"position": 0.25, "amplitude": [re, im]}], …}`; an estimate adds
//!   `method`, `status` and `diagnostics`. A CSV form `position,re,im` for spreadsheets.

use crate::error::{Error, Result};
use crate::estimator::Estimate;
use crate::model::{Domain, Measurements, Spike, Spikes};
use num_complex::Complex64;
use serde::{Deserialize, Serialize};
use std::path::Path;

/// The rows of a sample file, before a band is chosen.
#[derive(Debug, Clone, PartialEq)]
pub struct SampleRows {
    /// `Fourier` for a `k,re,im` file, `Time` for `n,re,im`.
    pub domain: Domain,
    /// The first column (k or n), in file order.
    pub indices: Vec<i64>,
    /// The values, in file order.
    pub values: Vec<Complex64>,
}

impl SampleRows {
    /// Turn the rows into validated measurements.
    ///
    /// Fourier files use the band `−fc..=fc`, with `fc` given or else the largest `|k|`; time files use
    /// `n = 0..N−1` with `N` the largest `n` plus one (gaps allowed).
    ///
    /// # Errors
    /// Any validation error of [`Measurements`].
    pub fn into_measurements(self, fc: Option<usize>) -> Result<Measurements> {
        match self.domain {
            Domain::Fourier => {
                let fc = match fc {
                    Some(f) => f,
                    None => self
                        .indices
                        .iter()
                        .map(|k| k.unsigned_abs() as usize)
                        .max()
                        .unwrap_or(0),
                };
                Measurements::fourier(fc, &self.indices, &self.values)
            }
            Domain::Time => Measurements::from_time_subset(&self.indices, &self.values),
        }
    }
}

/// Parse sample CSV text. `source_name` is used in error messages.
///
/// # Errors
/// [`Error::Parse`] with the line number for a wrong header, a wrong number of fields, a value that is
/// not a number, or an index that is not an integer; [`Error::Empty`] for a file without rows.
pub fn parse_samples(text: &str, source_name: &str) -> Result<SampleRows> {
    let parse_err = |line: usize, message: String| Error::Parse {
        source_name: source_name.to_string(),
        line,
        message,
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .flexible(true)
        .from_reader(text.as_bytes());
    let header = reader
        .headers()
        .map_err(|e| parse_err(1, format!("cannot read the header: {e}")))?
        .clone();
    let names: Vec<&str> = header.iter().collect();
    let domain = match names.as_slice() {
        ["k", "re", "im"] => Domain::Fourier,
        ["n", "re", "im"] => Domain::Time,
        _ => {
            return Err(parse_err(
                1,
                format!(
                    "found header '{}', expected 'k,re,im' (Fourier coefficients) or 'n,re,im' (time samples)",
                    names.join(",")
                ),
            ))
        }
    };
    let mut indices = Vec::new();
    let mut values = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| {
            let line = e.position().map_or(0, |p| p.line() as usize);
            parse_err(line, format!("unreadable row: {e}"))
        })?;
        let line = record.position().map_or(0, |p| p.line() as usize);
        if record.len() == 1 && record.get(0) == Some("") {
            continue; // blank line
        }
        if record.len() != 3 {
            return Err(parse_err(
                line,
                format!(
                    "found {} fields, expected 3 ({})",
                    record.len(),
                    names.join(",")
                ),
            ));
        }
        let idx_text = &record[0];
        let k: i64 = idx_text.parse().map_err(|_| {
            parse_err(
                line,
                format!(
                    "found '{idx_text}' in column {}, expected an integer",
                    names[0]
                ),
            )
        })?;
        let num = |col: usize| -> Result<f64> {
            let t = &record[col];
            let v: f64 = t.parse().map_err(|_| {
                parse_err(
                    line,
                    format!("found '{t}' in column {}, expected a number", names[col]),
                )
            })?;
            if !v.is_finite() {
                return Err(parse_err(
                    line,
                    format!(
                        "found '{t}' in column {}, expected a finite number",
                        names[col]
                    ),
                ));
            }
            Ok(v)
        };
        let re = num(1)?;
        let im = num(2)?;
        indices.push(k);
        values.push(Complex64::new(re, im));
    }
    if indices.is_empty() {
        return Err(Error::Empty {
            what: "sample file (no data rows)",
        });
    }
    Ok(SampleRows {
        domain,
        indices,
        values,
    })
}

/// Read and parse a sample CSV file.
///
/// # Errors
/// [`Error::Parse`] when the file cannot be read (line 0) or is malformed.
pub fn read_samples(path: &Path) -> Result<SampleRows> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| Error::Parse {
        source_name: name.clone(),
        line: 0,
        message: format!("cannot read the file: {e}"),
    })?;
    parse_samples(&text, &name)
}

/// Write measurements as sample CSV (`k,re,im`, or `n,re,im` for time-domain data).
pub fn samples_to_csv(data: &Measurements) -> String {
    let mut out = String::new();
    match data.domain() {
        Domain::Fourier => {
            out.push_str("k,re,im\n");
            for (k, v) in data.indices().iter().zip(data.values()) {
                out.push_str(&format!("{k},{:e},{:e}\n", v.re, v.im));
            }
        }
        Domain::Time => {
            out.push_str("n,re,im\n");
            let mut rows: Vec<(i64, Complex64)> = data
                .indices()
                .iter()
                .map(|k| -k)
                .zip(data.values().iter().copied())
                .collect();
            rows.sort_by_key(|r| r.0);
            for (n, v) in rows {
                out.push_str(&format!("{n},{:e},{:e}\n", v.re, v.im));
            }
        }
    }
    out
}

/// A spike file: the spikes, with the optional cutoff and noise level of the scene they describe.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpikeFile {
    /// Cutoff of the scene, if recorded.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fc: Option<f64>,
    /// Noise level of the scene, if recorded.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sigma: Option<f64>,
    /// The spikes.
    pub spikes: Spikes,
}

/// Parse a spike JSON file (truth or result; extra fields are ignored).
///
/// # Errors
/// [`Error::Parse`] with the line of the JSON error.
pub fn parse_spikes_json(text: &str, source_name: &str) -> Result<SpikeFile> {
    serde_json::from_str(text).map_err(|e| Error::Parse {
        source_name: source_name.to_string(),
        line: e.line(),
        message: format!("not a spike file ({e}); expected {{\"spikes\": [{{\"position\": p, \"amplitude\": [re, im]}}]}}"),
    })
}

/// Read a spike JSON file.
///
/// # Errors
/// As [`parse_spikes_json`]; unreadable files give line 0.
pub fn read_spikes_json(path: &Path) -> Result<SpikeFile> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| Error::Parse {
        source_name: name.clone(),
        line: 0,
        message: format!("cannot read the file: {e}"),
    })?;
    parse_spikes_json(&text, &name)
}

/// An estimate as pretty JSON (`spikes`, `method`, `status`, `diagnostics`).
pub fn estimate_to_json(estimate: &Estimate) -> String {
    // Serialising plain data with string keys cannot fail.
    serde_json::to_string_pretty(estimate).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// Spikes as CSV `position,re,im`.
pub fn spikes_to_csv(spikes: &Spikes) -> String {
    let mut out = String::from("position,re,im\n");
    for Spike {
        position,
        amplitude,
    } in spikes
    {
        out.push_str(&format!(
            "{position:e},{:e},{:e}\n",
            amplitude.re, amplitude.im
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_fourier_and_time_files() {
        let f = parse_samples("k,re,im\n-1,1.0,0.5\n0,2,0\n1,1.0,-0.5\n", "a.csv").unwrap();
        assert_eq!(f.domain, Domain::Fourier);
        let m = f.into_measurements(None).unwrap();
        assert_eq!(m.kmin(), -1);
        let t = parse_samples("n,re,im\n0,1,0\n1,0,1\n2,-1,0\n", "b.csv").unwrap();
        let m = t.into_measurements(None).unwrap();
        assert_eq!((m.kmin(), m.kmax()), (-2, 0));
        assert_eq!(m.domain(), Domain::Time);
    }

    #[test]
    fn malformed_files_name_the_line() {
        let e = parse_samples("k,re\n0,1\n", "x.csv").unwrap_err();
        assert!(e.to_string().contains("x.csv, line 1"), "{e}");
        let e = parse_samples("k,re,im\n0,1,0\n1,abc,0\n", "x.csv").unwrap_err();
        assert_eq!(
            e.to_string(),
            "x.csv, line 3: found 'abc' in column re, expected a number"
        );
        let e = parse_samples("k,re,im\n0.5,1,0\n", "x.csv").unwrap_err();
        assert!(e.to_string().contains("expected an integer"), "{e}");
        let e = parse_samples("k,re,im\n0,1,0,4\n", "x.csv").unwrap_err();
        assert!(e.to_string().contains("found 4 fields"), "{e}");
        let e = parse_samples("k,re,im\n0,NaN,0\n", "x.csv").unwrap_err();
        assert!(e.to_string().contains("finite"), "{e}");
        assert!(matches!(
            parse_samples("k,re,im\n", "x.csv"),
            Err(Error::Empty { .. })
        ));
    }

    #[test]
    fn spike_json_round_trip() {
        let text = r#"{"fc": 8, "sigma": 0.0, "spikes": [{"position": 0.75, "amplitude": [1.0, -2.0]},
                      {"position": 0.25, "amplitude": [0.5, 0.0]}]}"#;
        let f = parse_spikes_json(text, "t.json").unwrap();
        assert_eq!(f.fc, Some(8.0));
        assert_eq!(f.spikes.positions(), vec![0.25, 0.75]);
        let back: SpikeFile = serde_json::from_str(&serde_json::to_string(&f).unwrap()).unwrap();
        assert_eq!(back, f);
        assert!(parse_spikes_json("{\"spikes\": 3}", "t.json").is_err());
    }
}
