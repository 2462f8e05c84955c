//! Plain file formats: sample CSV in, spike JSON or CSV out.
//!
//! - Samples: CSV with header `k,re,im` (Fourier coefficients), `n,re,im` (complex time samples) or
//!   `n,value` (a real-valued time record), one row per measured value. Headers are read without
//!   regard to case (`N,Value`, `K,RE,IM`); an index may be written as an integer-valued float
//!   (`12.0`, `1e3`, as spreadsheets export it) but not as a fraction (`12.5`). Time indices may
//!   start anywhere (`1000`, or negative): the record spans the first to the last index.
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
    /// `Fourier` for a `k,re,im` file, `Time` for `n,re,im` and `n,value`.
    pub domain: Domain,
    /// True for a real-valued time record (`n,value`; the imaginary parts of `values` are 0).
    pub real: bool,
    /// The first column (k or n), in file order.
    pub indices: Vec<i64>,
    /// The values, in file order.
    pub values: Vec<Complex64>,
    /// The one-based line of each row in the file.
    pub lines: Vec<usize>,
    /// The file's name, for error messages.
    pub source_name: String,
}

impl SampleRows {
    /// Turn the rows into validated measurements.
    ///
    /// Fourier files use the band `−fc..=fc`, with `fc` given or else the largest `|k|`; time files
    /// span their first to their last sample index `n` (any origin, gaps allowed:
    /// [`Measurements::from_time_subset`]), and `n,value` files are real-valued records
    /// ([`Measurements::from_real_subset`]).
    ///
    /// # Errors
    /// [`Error::Parse`] with the line for an index given twice (naming the line of its first
    /// occurrence) or a Fourier index outside the band `−fc..=fc` of a given `fc`; any other
    /// validation error of [`Measurements`].
    pub fn into_measurements(self, fc: Option<usize>) -> Result<Measurements> {
        let col = match self.domain {
            Domain::Fourier => "k",
            Domain::Time => "n",
        };
        let parse_err = |row: usize, message: String| Error::Parse {
            source_name: self.source_name.clone(),
            line: self.lines.get(row).copied().unwrap_or(0),
            message,
        };
        let mut first: std::collections::HashMap<i64, usize> = std::collections::HashMap::new();
        for (row, &k) in self.indices.iter().enumerate() {
            if let Some(&prev) = first.get(&k) {
                let earlier = match self.lines.get(prev) {
                    Some(l) => format!(" (first on line {l})"),
                    None => String::new(),
                };
                return Err(parse_err(
                    row,
                    format!("found {col} = {k} again{earlier}, expected each {col} at most once"),
                ));
            }
            first.insert(k, row);
            match (self.domain, fc) {
                (Domain::Fourier, Some(f)) if k.unsigned_abs() > f as u64 => {
                    return Err(parse_err(
                        row,
                        format!("found k = {k}, expected |k| <= fc = {f} (the band -{f}..{f})"),
                    ));
                }
                _ => {}
            }
        }
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
            Domain::Time if self.real => {
                let x: Vec<f64> = self.values.iter().map(|v| v.re).collect();
                Measurements::from_real_subset(&self.indices, &x)
            }
            Domain::Time => Measurements::from_time_subset(&self.indices, &self.values),
        }
    }
}

/// Parse sample CSV text. `source_name` is used in error messages.
///
/// # Errors
/// [`Error::Parse`] with the line number for an empty file (line 1), a wrong header, a file without
/// data rows (line 2), a wrong number of fields, a value that is not a finite number, or an index that
/// is not an integer (integer-valued floats such as `12.0` or `1e3` are integers; `12.5` is not).
pub fn parse_samples(text: &str, source_name: &str) -> Result<SampleRows> {
    let parse_err = |line: usize, message: String| Error::Parse {
        source_name: source_name.to_string(),
        line,
        message,
    };
    if text.trim().is_empty() {
        return Err(parse_err(
            1,
            format!("found an empty file, expected the header {HEADERS} and one row per sample"),
        ));
    }
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .flexible(true)
        .from_reader(text.as_bytes());
    let header = reader
        .headers()
        .map_err(|e| parse_err(1, format!("cannot read the header: {e}")))?
        .clone();
    let names: Vec<String> = header.iter().map(str::to_string).collect();
    let lower: Vec<String> = names.iter().map(|n| n.to_ascii_lowercase()).collect();
    let lower: Vec<&str> = lower.iter().map(String::as_str).collect();
    let (domain, real) = match lower.as_slice() {
        ["k", "re", "im"] => (Domain::Fourier, false),
        ["n", "re", "im"] => (Domain::Time, false),
        ["n", "value"] => (Domain::Time, true),
        _ => {
            return Err(parse_err(
                1,
                format!("found header '{}', expected {HEADERS}", names.join(",")),
            ))
        }
    };
    let width = names.len();
    let mut indices = Vec::new();
    let mut values = Vec::new();
    let mut lines = Vec::new();
    let mut lines_seen = LineCounter::default();
    for record in reader.records() {
        let record = record.map_err(|e| {
            let line = e.position().map_or(0, |p| p.line() as usize);
            parse_err(line, format!("unreadable row: {e}"))
        })?;
        // The reader's record position is where it started reading, blank lines before the record
        // included; the record's own line is that of its first non-blank character.
        let line = record
            .position()
            .map_or(0, |p| lines_seen.line_of(text, p.byte() as usize));
        if record.len() == 1 && record.get(0) == Some("") {
            continue; // blank line
        }
        if record.len() != width {
            return Err(parse_err(
                line,
                format!(
                    "found {} fields, expected {width} ({})",
                    record.len(),
                    names.join(",")
                ),
            ));
        }
        let idx_text = &record[0];
        let k = parse_index(idx_text).ok_or_else(|| {
            parse_err(
                line,
                format!(
                    "found '{idx_text}' in column {}, expected an integer {}",
                    names[0],
                    if real || domain == Domain::Time {
                        "sample index"
                    } else {
                        "frequency index"
                    }
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
        let im = if real { 0.0 } else { num(2)? };
        indices.push(k);
        values.push(Complex64::new(re, im));
        lines.push(line);
    }
    if indices.is_empty() {
        return Err(parse_err(
            2,
            format!(
                "found no data rows after the header, expected at least one row of {} numbers",
                if real { "two" } else { "three" }
            ),
        ));
    }
    Ok(SampleRows {
        domain,
        real,
        indices,
        values,
        lines,
        source_name: source_name.to_string(),
    })
}

/// The headers a sample file may have, for error messages.
const HEADERS: &str = "'k,re,im' (Fourier coefficients), 'n,re,im' (complex time samples) or \
                       'n,value' (a real-valued time record)";

/// An index column's text as an integer: `12`, or an integer-valued float (`12.0`, `1e3`, `-4.0`)
/// within `±2^53` (where every integer is a float); `None` for anything else (`12.5`, `abc`, `NaN`).
fn parse_index(text: &str) -> Option<i64> {
    if let Ok(k) = text.parse::<i64>() {
        return Some(k);
    }
    const EXACT: f64 = 9_007_199_254_740_992.0; // 2^53
    let x: f64 = text.parse().ok()?;
    (x.is_finite() && x.fract() == 0.0 && x.abs() <= EXACT).then_some(x as i64)
}

/// One-based line numbers of byte offsets visited in increasing order, counted incrementally.
#[derive(Default)]
struct LineCounter {
    byte: usize,
    newlines: usize,
}

impl LineCounter {
    /// The line of the first character at or after `byte` that is not white space.
    fn line_of(&mut self, text: &str, byte: usize) -> usize {
        let bytes = text.as_bytes();
        let mut at = byte.min(bytes.len());
        while at < bytes.len() && bytes[at].is_ascii_whitespace() {
            at += 1;
        }
        if at >= self.byte {
            self.newlines += bytes[self.byte..at].iter().filter(|&&b| b == b'\n').count();
            self.byte = at;
        }
        self.newlines + 1
    }
}

/// Read and parse a sample CSV file.
///
/// # Errors
/// [`Error::Parse`] when the file cannot be read (line 0) or is malformed.
pub fn read_samples(path: &Path) -> Result<SampleRows> {
    let (text, name) = read_text(path)?;
    parse_samples(&text, &name)
}

/// The text of the file at `path` and its name as shown in errors; an unreadable file is
/// [`Error::Parse`] at line 0.
fn read_text(path: &Path) -> Result<(String, String)> {
    Ok((read_file_text(path)?, path.display().to_string()))
}

/// The text of the file at `path`, for every reader of input files (samples, spikes, snapshots,
/// truths, plans). A file that cannot be read, or is not text, is [`Error::Parse`] without a line
/// number, naming the file.
///
/// # Errors
/// [`Error::Parse`] (line 0) when the file is missing, unreadable or not UTF-8 text.
pub fn read_file_text(path: &Path) -> Result<String> {
    std::fs::read_to_string(path).map_err(|e| Error::Parse {
        source_name: path.display().to_string(),
        line: 0,
        message: if e.kind() == std::io::ErrorKind::InvalidData {
            "cannot read the file: it is not text (not UTF-8); expected a CSV or JSON text file"
                .into()
        } else {
            format!("cannot read the file: {e}")
        },
    })
}

/// `x` in full (the shortest text that reads back to the same `f64`), in fixed notation from 0.0001
/// up to 10¹⁵ and with an exponent outside (`2.38`, `16`, `2.5e-7`): how every file writer of this
/// module prints numbers.
///
/// ```
/// use finespike::eval::io::exact;
/// assert_eq!(exact(2.38), "2.38");
/// assert_eq!(exact(16.0), "16");
/// assert_eq!(exact(2.5e-7), "2.5e-7");
/// assert_eq!(exact(0.1 + 0.2).parse::<f64>().unwrap(), 0.1 + 0.2);
/// ```
pub fn exact(x: f64) -> String {
    let a = x.abs();
    if x == 0.0 || !x.is_finite() || (1e-4..1e15).contains(&a) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// Write measurements as sample CSV (`k,re,im`, or `n,re,im` for time-domain data and `n,value` for
/// a real-valued record, by `n` as the user numbered it), every value in full ([`exact`]); the values
/// as given (before any trend was projected out).
pub fn samples_to_csv(data: &Measurements) -> String {
    let mut out = String::new();
    let values = data.raw_values();
    if data.is_real() {
        out.push_str("n,value\n");
        let mut rows: Vec<(i64, f64)> = data
            .indices()
            .iter()
            .map(|k| -k)
            .zip(values.iter().map(|v| v.re))
            .collect();
        rows.sort_by_key(|r| r.0);
        for (n, v) in rows {
            out.push_str(&format!("{n},{}\n", exact(v)));
        }
        return out;
    }
    match data.domain() {
        Domain::Fourier => {
            out.push_str("k,re,im\n");
            for (k, v) in data.indices().iter().zip(values) {
                out.push_str(&format!("{k},{},{}\n", exact(v.re), exact(v.im)));
            }
        }
        Domain::Time => {
            out.push_str("n,re,im\n");
            let mut rows: Vec<(i64, Complex64)> = data
                .indices()
                .iter()
                .map(|k| -k)
                .zip(values.iter().copied())
                .collect();
            rows.sort_by_key(|r| r.0);
            for (n, v) in rows {
                out.push_str(&format!("{n},{},{}\n", exact(v.re), exact(v.im)));
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
    let (text, name) = read_text(path)?;
    parse_spikes_json(&text, &name)
}

/// An estimate as pretty JSON (`spikes`, `method`, `status`, `diagnostics`).
pub fn estimate_to_json(estimate: &Estimate) -> String {
    // Serialising plain data with string keys cannot fail.
    serde_json::to_string_pretty(estimate).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
}

/// Spikes as CSV `position,re,im`, every value in full ([`exact`]).
pub fn spikes_to_csv(spikes: &Spikes) -> String {
    let mut out = String::from("position,re,im\n");
    for Spike {
        position,
        amplitude,
    } in spikes
    {
        out.push_str(&format!(
            "{},{},{}\n",
            exact(*position),
            exact(amplitude.re),
            exact(amplitude.im)
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
        let e = parse_samples("k,re,im\n", "x.csv").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("x.csv, line 2: found no data rows"),
            "{e}"
        );
        let e = parse_samples("\n", "x.csv").unwrap_err();
        assert!(
            e.to_string()
                .starts_with("x.csv, line 1: found an empty file"),
            "{e}"
        );
    }

    #[test]
    fn duplicate_and_out_of_band_rows_name_their_lines() {
        let rows = parse_samples("k,re,im\n0,1,0\n\n1,0,0\n0,2,0\n", "x.csv").unwrap();
        assert_eq!(rows.lines, vec![2, 4, 5]);
        let e = rows.into_measurements(None).unwrap_err();
        assert_eq!(
            e.to_string(),
            "x.csv, line 5: found k = 0 again (first on line 2), expected each k at most once"
        );
        let rows = parse_samples("k,re,im\n0,1,0\n3,0,0\n", "x.csv").unwrap();
        let e = rows.into_measurements(Some(2)).unwrap_err();
        assert!(
            e.to_string().starts_with("x.csv, line 3: found k = 3"),
            "{e}"
        );
        let rows = parse_samples("n,re,im\n0,1,0\n-1,0,0\n", "x.csv").unwrap();
        let m = rows.into_measurements(None).unwrap();
        assert_eq!(m.user_span(), (-1, 0));
    }

    #[test]
    fn real_records_mixed_case_headers_and_float_indices() {
        let rows = parse_samples("N,Value\n1000,2.5\n1001.0,-1\n1e3,7\n", "r.csv").unwrap();
        assert!(rows.real);
        assert_eq!(rows.indices, vec![1000, 1001, 1000]);
        let e = rows.into_measurements(None).unwrap_err();
        assert!(
            e.to_string().contains("line 4: found n = 1000 again"),
            "{e}"
        );
        let rows = parse_samples("n,value\n1000,2.5\n1002,-1\n", "r.csv").unwrap();
        let m = rows.into_measurements(None).unwrap();
        assert!(m.is_real());
        assert_eq!((m.user_span(), m.band_len(), m.len()), ((1000, 1002), 3, 2));
        assert_eq!(samples_to_csv(&m), "n,value\n1000,2.5\n1002,-1\n");
        let k = parse_samples("K,RE,IM\n-1,1,0\n1,1,0\n", "k.csv").unwrap();
        assert_eq!((k.domain, k.real), (Domain::Fourier, false));
        let e = parse_samples("n,value\n0,1\n12.5,2\n", "r.csv").unwrap_err();
        assert_eq!(
            e.to_string(),
            "r.csv, line 3: found '12.5' in column n, expected an integer sample index"
        );
        let e = parse_samples("n,value\n0,1,2\n", "r.csv").unwrap_err();
        assert!(
            e.to_string().contains("line 2: found 3 fields, expected 2"),
            "{e}"
        );
        let e = parse_samples("n,value\n", "r.csv").unwrap_err();
        assert!(e.to_string().contains("row of two numbers"), "{e}");
        let e = parse_samples("n,val\n0,1\n", "r.csv").unwrap_err();
        assert!(e.to_string().contains("'n,value'"), "{e}");
        assert_eq!(parse_index("-4.0"), Some(-4));
        assert_eq!(parse_index("1e300"), None);
        assert_eq!(parse_index("NaN"), None);
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
