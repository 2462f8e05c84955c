//! Plain file formats for multi-snapshot (array) records: snapshot CSV in and out, array results and
//! array truths as JSON.
//!
//! - Snapshots: long-format CSV, one row per sample per snapshot, with header `n,snapshot,re,im`
//!   (sensor data: sensor `n` of a uniform line array, `x_t[n]`) or `k,snapshot,re,im` (Fourier
//!   coefficients `y_t[k]`). Headers are read without regard to case; an index or a snapshot number
//!   may be written as an integer-valued float (`12.0`, `1e3`) but not as a fraction. Rows may come in
//!   any order. Snapshots are numbered `0..L−1` without gaps; sensors may start anywhere (`1`, or
//!   negative). Every sensor of the file must be present in every snapshot: a sensor missing from
//!   one snapshot only is an error that names the line where its row is expected, while a sensor
//!   absent from every snapshot is a missing sensor (a thinned array) and is allowed.
//! - Array results: JSON with `method`, `status`, `diagnostics` and per source `position`,
//!   `frequency`, `power`, `amplitudes` (one `[re, im]` per snapshot), `angle_deg` (when the element
//!   spacing is known) and `crb_std` ([`array_estimate_json`]).
//! - Array truths: JSON written by the command line's `simulate` for an invented array scene
//!   ([`ArrayTruth`], in `array_truth.rs`, re-exported here).

use crate::error::{Error, Result};
use crate::estimator::ArrayEstimate;
use crate::eval::io::exact;
use crate::model::{Domain, Snapshots};
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde_json::{json, Value};
use std::collections::HashMap;

pub use super::array_truth::{
    array_truth_json, is_array_truth_text, parse_array_truth, ArrayTruth, TruthSource,
    ARRAY_TRUTH_KIND,
};

/// The headers a snapshot file may have, for error messages.
pub const SNAPSHOT_HEADERS: &str = "'n,snapshot,re,im' (sensor data) or 'k,snapshot,re,im' \
                                    (Fourier coefficients)";

/// One data row of a snapshot file.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SnapshotRow {
    /// The first column: sensor `n` or coefficient `k`, as the user numbered it.
    pub index: i64,
    /// The snapshot number.
    pub snapshot: usize,
    /// The value.
    pub value: Complex64,
    /// The one-based line of the row in the file.
    pub line: usize,
}

/// The rows of a snapshot file, before they are checked for completeness.
#[derive(Debug, Clone, PartialEq)]
pub struct SnapshotRows {
    /// `Time` for sensor data (`n,snapshot,re,im`), `Fourier` for `k,snapshot,re,im`.
    pub domain: Domain,
    /// The rows, in file order.
    pub rows: Vec<SnapshotRow>,
    /// The file's name, for error messages.
    pub source_name: String,
}

/// True when the first non-blank line of `text` is a snapshot header (`n,snapshot,re,im` or
/// `k,snapshot,re,im`, any case, spaces around the commas allowed): how the command line tells a
/// snapshot file from a single-record sample file.
pub fn is_snapshot_text(text: &str) -> bool {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    text.lines()
        .map(str::trim)
        .find(|l| !l.is_empty())
        .is_some_and(|l| header_domain(l).is_some())
}

/// The domain a header line announces, when it is a snapshot header.
fn header_domain(line: &str) -> Option<Domain> {
    let names: Vec<String> = line
        .split(',')
        .map(|s| s.trim().to_ascii_lowercase())
        .collect();
    let names: Vec<&str> = names.iter().map(String::as_str).collect();
    match names.as_slice() {
        ["n", "snapshot", "re", "im"] => Some(Domain::Time),
        ["k", "snapshot", "re", "im"] => Some(Domain::Fourier),
        _ => None,
    }
}

/// Parse snapshot CSV text (module docs). `source_name` is used in error messages.
///
/// # Errors
/// [`Error::Parse`] with the line number for an empty file (line 1), a wrong header, a file without
/// data rows (line 2), a wrong number of fields, an index or snapshot number that is not an integer
/// (or a negative snapshot number), or a value that is not a finite number.
pub fn parse_snapshots(text: &str, source_name: &str) -> Result<SnapshotRows> {
    let parse_err = |line: usize, message: String| Error::Parse {
        source_name: source_name.to_string(),
        line,
        message,
    };
    // A byte-order mark (spreadsheets write one) is not part of the header.
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut lines = text.lines().enumerate().map(|(i, l)| (i + 1, l.trim()));
    let Some((header_line, header)) = lines.by_ref().find(|(_, l)| !l.is_empty()) else {
        return Err(parse_err(
            1,
            format!(
                "found an empty file, expected the header {SNAPSHOT_HEADERS} and one row per \
                 sample per snapshot"
            ),
        ));
    };
    let domain = header_domain(header).ok_or_else(|| {
        parse_err(
            header_line,
            format!("found header '{header}', expected {SNAPSHOT_HEADERS}"),
        )
    })?;
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    let index_words = match domain {
        Domain::Time => "an integer sensor index",
        Domain::Fourier => "an integer frequency index",
    };
    let mut rows = Vec::new();
    for (line, text) in lines {
        if text.is_empty() {
            continue;
        }
        let fields: Vec<&str> = text.split(',').map(str::trim).collect();
        if fields.len() != 4 {
            return Err(parse_err(
                line,
                format!(
                    "found {} fields, expected 4 ({})",
                    fields.len(),
                    names.join(",")
                ),
            ));
        }
        let index = parse_integer(fields[0]).ok_or_else(|| {
            parse_err(
                line,
                format!(
                    "found '{}' in column {}, expected {index_words}",
                    fields[0], names[0]
                ),
            )
        })?;
        let snapshot = parse_integer(fields[1])
            .and_then(|t| usize::try_from(t).ok())
            .ok_or_else(|| {
                parse_err(
                    line,
                    format!(
                        "found '{}' in column {}, expected a snapshot number 0, 1, 2, …",
                        fields[1], names[1]
                    ),
                )
            })?;
        let num = |col: usize| -> Result<f64> {
            let t = fields[col];
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
        let value = Complex64::new(num(2)?, num(3)?);
        rows.push(SnapshotRow {
            index,
            snapshot,
            value,
            line,
        });
    }
    if rows.is_empty() {
        return Err(parse_err(
            header_line + 1,
            "found no data rows after the header, expected one row of four numbers per sample per \
             snapshot"
                .into(),
        ));
    }
    Ok(SnapshotRows {
        domain,
        rows,
        source_name: source_name.to_string(),
    })
}

/// An index column's text as an integer: `12`, or an integer-valued float (`12.0`, `1e3`) within
/// `±2^53`; `None` for anything else.
fn parse_integer(text: &str) -> Option<i64> {
    if let Ok(k) = text.parse::<i64>() {
        return Some(k);
    }
    const EXACT: f64 = 9_007_199_254_740_992.0; // 2^53
    let x: f64 = text.parse().ok()?;
    (x.is_finite() && x.fract() == 0.0 && x.abs() <= EXACT).then_some(x as i64)
}

impl SnapshotRows {
    /// Check that the rows form a complete record and turn them into [`Snapshots`].
    ///
    /// Sensor files give the sensors that appear (any origin; those absent from every snapshot are
    /// missing sensors, [`Snapshots::from_sensor_subset`]); Fourier files use the band `−fc..=fc`,
    /// `fc` given or else the largest `|k|` ([`Snapshots::fourier`]).
    ///
    /// # Errors
    /// [`Error::Parse`] with the line for a (sensor, snapshot) pair given twice (naming the line of
    /// the first), a snapshot number with no rows at all (snapshots are numbered `0..L−1`), a sensor
    /// missing from one snapshot but present in others (the line where its row is expected), or a
    /// Fourier index outside the band of a given `fc`; any other validation error of
    /// [`Snapshots`].
    pub fn into_snapshots(self, fc: Option<usize>) -> Result<Snapshots> {
        let name = self.source_name.clone();
        let err = |line: usize, message: String| Error::Parse {
            source_name: name.clone(),
            line,
            message,
        };
        let col = match self.domain {
            Domain::Time => "sensor n",
            Domain::Fourier => "k",
        };
        let mut seen: HashMap<(i64, usize), usize> = HashMap::with_capacity(self.rows.len());
        for r in &self.rows {
            if let Some(first) = seen.insert((r.index, r.snapshot), r.line) {
                return Err(err(
                    r.line,
                    format!(
                        "found {col} = {} in snapshot {} again (first on line {first}), expected \
                         each {col} once per snapshot",
                        r.index, r.snapshot
                    ),
                ));
            }
            if let (Domain::Fourier, Some(f)) = (self.domain, fc) {
                if r.index.unsigned_abs() > f as u64 {
                    return Err(err(
                        r.line,
                        format!(
                            "found k = {}, expected |k| <= fc = {f} (the band -{f}..{f})",
                            r.index
                        ),
                    ));
                }
            }
        }
        let mut indices: Vec<i64> = self.rows.iter().map(|r| r.index).collect();
        indices.sort_unstable();
        indices.dedup();
        // Rows per snapshot, in file order.
        let mut by_snapshot: std::collections::BTreeMap<usize, Vec<&SnapshotRow>> =
            std::collections::BTreeMap::new();
        for r in &self.rows {
            by_snapshot.entry(r.snapshot).or_default().push(r);
        }
        let last_line = self.rows.iter().map(|r| r.line).max().unwrap_or(0);
        for (expected, (&t, _)) in by_snapshot.iter().enumerate() {
            if t != expected {
                return Err(err(
                    last_line,
                    format!(
                        "found no row for snapshot {expected} (the file goes on to snapshot {t}), \
                         expected snapshots numbered 0..L-1 without gaps"
                    ),
                ));
            }
        }
        for (&t, rows) in &by_snapshot {
            if rows.len() == indices.len() {
                continue;
            }
            let mut have: Vec<i64> = rows.iter().map(|r| r.index).collect();
            have.sort_unstable();
            let missing = indices
                .iter()
                .zip(have.iter().chain(std::iter::repeat(&i64::MAX)))
                .find(|(want, got)| want != got)
                .map_or(indices[0], |(want, _)| *want);
            // Where the row belongs: before the first row of the snapshot with a larger index
            // (rows sorted by index), else after its last row.
            let mut sorted: Vec<&&SnapshotRow> = rows.iter().collect();
            sorted.sort_by_key(|r| r.index);
            let line = sorted
                .iter()
                .find(|r| r.index > missing)
                .or(sorted.last())
                .map_or(last_line, |r| r.line);
            let (lo, hi) = (
                rows.iter().map(|r| r.line).min().unwrap_or(0),
                rows.iter().map(|r| r.line).max().unwrap_or(0),
            );
            return Err(err(
                line,
                format!(
                    "found no row for {col} = {missing} in snapshot {t} (its rows are on lines \
                     {lo}..{hi}), expected every {col} of the file in every snapshot; a sensor \
                     absent from every snapshot counts as missing, one absent from some snapshots \
                     only is an error"
                ),
            ));
        }
        let l = by_snapshot.len();
        let position: HashMap<i64, usize> =
            indices.iter().enumerate().map(|(i, &k)| (k, i)).collect();
        let mut x = DMatrix::zeros(indices.len(), l);
        for r in &self.rows {
            x[(position[&r.index], r.snapshot)] = r.value;
        }
        match self.domain {
            Domain::Time => Snapshots::from_sensor_subset(&indices, &x),
            Domain::Fourier => {
                let fc = fc.unwrap_or_else(|| {
                    indices
                        .iter()
                        .map(|k| k.unsigned_abs() as usize)
                        .max()
                        .unwrap_or(0)
                });
                Snapshots::fourier(fc, &indices, &x)
            }
        }
    }
}

/// Parse and check snapshot CSV text in one step ([`parse_snapshots`], then
/// [`SnapshotRows::into_snapshots`]).
///
/// # Errors
/// As those two.
pub fn read_snapshots_text(text: &str, source_name: &str, fc: Option<usize>) -> Result<Snapshots> {
    parse_snapshots(text, source_name)?.into_snapshots(fc)
}

/// Snapshots as long-format CSV (`n,snapshot,re,im` for sensor data, `k,snapshot,re,im` for Fourier
/// coefficients), snapshot by snapshot, each by increasing index as the user numbers it, every value
/// in full ([`exact`]).
pub fn snapshots_to_csv(data: &Snapshots) -> String {
    let domain = data.domain();
    let mut out = String::from(match domain {
        Domain::Time => "n,snapshot,re,im\n",
        Domain::Fourier => "k,snapshot,re,im\n",
    });
    let mut order: Vec<(i64, usize)> = data
        .indices()
        .iter()
        .enumerate()
        .map(|(i, &k)| (domain.user_index(k), i))
        .collect();
    order.sort_unstable();
    let x = data.values();
    for t in 0..data.snapshot_count() {
        for &(n, i) in &order {
            let v = x[(i, t)];
            out.push_str(&format!("{n},{t},{},{}\n", exact(v.re), exact(v.im)));
        }
    }
    out
}

/// A number for JSON: `null` when it is not finite.
fn number(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

/// An array estimate as JSON: `method`, `status`, `sources` (each with `position` on `[0, 1)`,
/// signed spatial `frequency` in cycles per sensor, `power`, `amplitudes` as `[re, im]` per snapshot,
/// `crb_std` (conditional) and `crb_std_stochastic` of the position in cycles per sensor, and with a
/// spacing `angle_deg` and
/// `crb_std_angle_deg`), `array` (the record: domain, measured indices, span `M`, snapshots,
/// spacing), `resolution` (`1/M`) and `diagnostics`.
pub fn array_estimate_json(estimate: &ArrayEstimate, data: &Snapshots) -> Value {
    let spacing = data.spacing();
    let sources: Vec<Value> = estimate
        .sources
        .iter()
        .map(|s| {
            let mut o = serde_json::Map::new();
            o.insert("position".into(), number(s.position));
            o.insert("frequency".into(), number(s.frequency));
            if spacing.is_some() {
                o.insert("angle_deg".into(), s.angle_deg.map_or(Value::Null, number));
            }
            o.insert("power".into(), number(s.power));
            o.insert(
                "crb_std".into(),
                s.crb_std_position.map_or(Value::Null, number),
            );
            o.insert(
                "crb_std_stochastic".into(),
                s.crb_std_stochastic.map_or(Value::Null, number),
            );
            if spacing.is_some() {
                o.insert(
                    "crb_std_angle_deg".into(),
                    s.crb_std_angle_deg.map_or(Value::Null, number),
                );
            }
            o.insert(
                "amplitudes".into(),
                Value::Array(
                    s.amplitudes
                        .iter()
                        .map(|a| json!([number(a.re), number(a.im)]))
                        .collect(),
                ),
            );
            Value::Object(o)
        })
        .collect();
    let domain = data.domain();
    let mut measured: Vec<i64> = data
        .indices()
        .iter()
        .map(|&k| domain.user_index(k))
        .collect();
    measured.sort_unstable();
    json!({
        "method": estimate.method,
        "status": estimate.status,
        "sources": sources,
        "resolution": number(1.0 / data.band_len() as f64),
        "array": {
            "domain": match domain { Domain::Time => "sensors", Domain::Fourier => "fourier" },
            "span": data.band_len(),
            "measured": measured,
            "snapshots": data.snapshot_count(),
            "spacing": spacing.map_or(Value::Null, number),
        },
        "diagnostics": serde_json::to_value(&estimate.diagnostics).unwrap_or(Value::Null),
    })
}

#[cfg(test)]
#[path = "io_snapshots_tests.rs"]
mod tests;
