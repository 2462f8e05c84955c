//! Reading snapshot files and array truths for the subcommands, with errors in the user's terms; the
//! shared wording of array reports (arrays, angles, warnings).

use crate::show::{num, sig};
use crate::{shown, DomainArg, Failure};
use finespike::eval::io_snapshots::{self, ArrayTruth};
use finespike::{ArrayEstimate, Domain, Error, Snapshots, Warning};
use std::io::BufRead;
use std::path::Path;

/// True when the file at `path` starts with a snapshot header (`n,snapshot,re,im` or
/// `k,snapshot,re,im`). An unreadable file is not one: reading it as a sample file reports why.
pub fn is_snapshot_file(path: &Path) -> bool {
    let Ok(file) = std::fs::File::open(path) else {
        return false;
    };
    let first = std::io::BufReader::new(file)
        .lines()
        .map_while(Result::ok)
        .find(|l| !l.trim().is_empty())
        .unwrap_or_default();
    io_snapshots::is_snapshot_text(&first)
}

/// True when the file at `path` is an array truth (`"kind": "array"`).
pub fn is_array_truth_file(path: &Path) -> bool {
    std::fs::read_to_string(path).is_ok_and(|t| io_snapshots::is_array_truth_text(&t))
}

/// The element spacing of `--spacing`, checked by the library's rule (exit 2 when invalid).
pub fn with_spacing(data: Snapshots, spacing: Option<f64>) -> Result<Snapshots, Failure> {
    match spacing {
        None => Ok(data),
        Some(d) => data.with_spacing(d).map_err(|e| match e {
            Error::InvalidSetting { value, rule, .. } => {
                Failure::Usage(format!("--spacing {value}: {rule}"))
            }
            other => Failure::Usage(format!("--spacing: {other}")),
        }),
    }
}

/// Read a snapshot file. `fc` fixes the band of a Fourier snapshot file (refused with sensor data,
/// whose span the sensors fix); `domain`, when given, must agree with the header; `spacing` is the
/// element spacing in wavelengths.
pub fn load_snapshots(
    path: &Path,
    fc: Option<usize>,
    domain: Option<DomainArg>,
    spacing: Option<f64>,
) -> Result<Snapshots, Failure> {
    let text = finespike::eval::io::read_file_text(path).map_err(Failure::Input)?;
    let rows = io_snapshots::parse_snapshots(&text, &shown(path)).map_err(Failure::Input)?;
    let header = match rows.domain {
        Domain::Time => "n,snapshot,re,im",
        Domain::Fourier => "k,snapshot,re,im",
    };
    if let Some(d) = domain {
        if d.domain() != rows.domain {
            let (name, want) = match d {
                DomainArg::Fourier => ("fourier", "k,snapshot,re,im"),
                DomainArg::Time => ("time", "n,snapshot,re,im"),
            };
            return Err(Failure::Input(Error::Parse {
                source_name: shown(path),
                line: 1,
                message: format!("--domain {name} expects header '{want}', found '{header}'"),
            }));
        }
    }
    if let (Some(f), Domain::Time) = (fc, rows.domain) {
        return Err(Failure::Usage(format!(
            "--fc {f} applies to Fourier coefficients, but {} holds sensor data (header '{header}'), \
             whose span the sensors fix: leave out --fc",
            shown(path)
        )));
    }
    let data = rows.into_snapshots(fc).map_err(Failure::Input)?;
    with_spacing(data, spacing)
}

/// Read an array truth (exit 3 when malformed).
pub fn load_array_truth(path: &Path) -> Result<ArrayTruth, Failure> {
    let text = finespike::eval::io::read_file_text(path).map_err(Failure::Input)?;
    io_snapshots::parse_array_truth(&text, &shown(path)).map_err(Failure::Input)
}

/// The array in words: "16 sensors (n = 0..15), 50 snapshots, spacing 0.5 wavelengths" ("14 of
/// M = 16 sensors" with missing ones), then the resolution 1/M.
pub fn describe(data: &Snapshots) -> String {
    let domain = data.domain();
    let mut idx: Vec<i64> = data
        .indices()
        .iter()
        .map(|&k| domain.user_index(k))
        .collect();
    idx.sort_unstable();
    let (first, last) = (idx[0], idx[idx.len() - 1]);
    let l = data.snapshot_count();
    let snaps = format!("{l} snapshot{}", if l == 1 { "" } else { "s" });
    let what = match (domain, data.is_contiguous()) {
        (Domain::Time, true) => format!("{} sensors (n = {first}..{last})", data.len()),
        (Domain::Time, false) => format!(
            "{} of M = {} sensors (n = {first}..{last}; missing: {})",
            data.len(),
            data.band_len(),
            missing(&idx).join(", ")
        ),
        (Domain::Fourier, _) => format!(
            "{} Fourier coefficients of the band k = {first}..{last}",
            data.len()
        ),
    };
    let spacing = data
        .spacing()
        .map_or_else(String::new, |d| format!(", spacing {} wavelengths", num(d)));
    format!(
        "{what}, {snaps}{spacing}; resolution {}",
        resolution(data.band_len(), data.spacing())
    )
}

/// The indices of the span `idx[0]..=idx[last]` absent from the sorted `idx`.
fn missing(idx: &[i64]) -> Vec<String> {
    let mut out = Vec::new();
    for w in idx.windows(2) {
        out.extend(((w[0] + 1)..w[1]).map(|m| m.to_string()));
    }
    out
}

/// "1/M = 0.0625 cycles/sensor (7.17° at broadside)": the array's resolution, and with a spacing `d`
/// the angle one cell spans at broadside, `asin(1/(M·d))` (for `1/(M·d) ≤ 1`).
pub fn resolution(m: usize, spacing: Option<f64>) -> String {
    let cell = 1.0 / m as f64;
    let angle = spacing
        .map(|d| cell / d)
        .filter(|x| *x <= 1.0)
        .map_or_else(String::new, |x| {
            format!(" ({}° at broadside)", sig(x.asin().to_degrees(), 3))
        });
    format!("1/M = {} cycles/sensor{angle}", num(cell))
}

/// A source's place: "angle −12.31°, spatial frequency −0.1066 cycles/sensor", or the frequency alone
/// without a spacing (or outside the visible region).
pub fn place(frequency: f64, angle_deg: Option<f64>) -> String {
    match angle_deg {
        Some(a) => format!(
            "angle {}°, spatial frequency {} cycles/sensor",
            sig(a, 4),
            sig(frequency, 6)
        ),
        None => format!("spatial frequency {} cycles/sensor", sig(frequency, 6)),
    }
}

/// The warnings of an array estimate in plain words: the library's, and a non-converged status when
/// no warning already says so.
pub fn warnings(estimate: &ArrayEstimate) -> Vec<String> {
    let said = estimate
        .diagnostics
        .warnings
        .iter()
        .any(|w| matches!(w, Warning::NotConverged { .. }));
    let mut out = Vec::new();
    if !estimate.status.is_usable() && !said {
        out.push(format!(
            "the solver stopped with status '{}': the result is not a converged solution",
            estimate.status
        ));
    }
    out.extend(estimate.diagnostics.warnings.iter().map(|w| w.to_string()));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn arrays_are_described_with_their_resolution() {
        // 1/16 of a cycle per sensor at d = 1/2: asin(1/8) = 7.18° (the research notes' figure).
        assert_eq!(
            resolution(16, Some(0.5)),
            "1/M = 0.0625 cycles/sensor (7.18° at broadside)"
        );
        assert_eq!(resolution(4, None), "1/M = 0.25 cycles/sensor");
        assert_eq!(missing(&[0, 1, 4, 6]), vec!["2", "3", "5"]);
    }
}
