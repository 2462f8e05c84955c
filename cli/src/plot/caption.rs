//! The caption under a plot: the record, the method and its verdict, the truth's score, the
//! certificate and the warnings in plain words.

use super::axis::{stems, Axis};
use super::PlotArgs;
use crate::file_name;
use crate::recover::warnings;
use crate::show::{self, num, sig};
use finespike::eval::io::SpikeFile;
use finespike::eval::metrics;
use finespike::{Estimate, Measurements};

/// One caption line, and whether it is a caution.
pub(super) struct Line {
    pub(super) text: String,
    pub(super) alert: bool,
}

fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut current = String::new();
    for word in text.split_whitespace() {
        if !current.is_empty() && current.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut current));
        } else if !current.is_empty() {
            current.push(' ');
        }
        current.push_str(word);
    }
    if !current.trim().is_empty() {
        lines.push(current);
    }
    lines
}

/// "1 spike", "3 spikes".
fn spikes(n: usize) -> String {
    format!("{n} spike{}", if n == 1 { "" } else { "s" })
}

/// "1 line", "3 lines".
fn lines_word(n: usize) -> String {
    format!("{n} line{}", if n == 1 { "" } else { "s" })
}

pub(super) fn caption(
    a: &PlotArgs,
    data: &Measurements,
    truth: Option<&SpikeFile>,
    est: &Estimate,
    (x0, x1): (f64, f64),
    width_chars: usize,
) -> Vec<Line> {
    let fc = data.fc();
    let mut raw: Vec<(String, bool)> = Vec::new();
    let kind = show::band(data);
    let n = data.band_len() as f64;
    // A separation in positions, in both units, each named.
    let sep = |s: Option<f64>, count: usize| match (s, count) {
        (Some(x), _) => format!(
            "closest pair {} resolution cells (1/N) = {}/fc apart",
            sig(x * n, 3),
            sig(x * fc, 3)
        ),
        (None, 0) => "so no separation to report".to_string(),
        (None, _) => "no pair to measure a separation on".to_string(),
    };
    let est_sep = est.diagnostics.separation_cells.map(|c| c / n);
    raw.push((
        format!(
            "{}: {kind}. Method {}: {}, {} recovered, {}.",
            file_name(&a.samples.input[0]),
            est.method,
            est.status,
            lines_word(est.diagnostics.lines.len()),
            sep(est_sep, est.diagnostics.lines.len())
        ),
        false,
    ));
    let axis = Axis::of(data);
    let (lo, hi) = axis.full();
    if (x0, x1) != (lo, hi) {
        let inside = |st: &[(f64, f64)]| {
            st.iter()
                .filter_map(|(p, _)| axis.x(*p))
                .filter(|x| *x >= x0 && *x <= x1)
                .count()
        };
        let est_stems = stems(&est.spikes, false);
        let est_lines: Vec<(f64, f64)> = est
            .diagnostics
            .lines
            .iter()
            .map(|l| (l.position, l.amplitude.norm()))
            .collect();
        let shown_est = if data.is_real() {
            &est_lines
        } else {
            &est_stems
        };
        // As many decimals as tell the view's edges apart (a narrow view of a long record needs more
        // than the four significant digits of the report).
        let decimals = super::curve::tick_decimals(x1 - x0);
        let view_edge = |x: f64| {
            let text = format!("{x:.decimals$}");
            if text.contains('.') {
                text.trim_end_matches('0').trim_end_matches('.').to_string()
            } else {
                text
            }
        };
        let mut line = format!(
            "View {}..{} of {}..{}{}: {} of {} recovered lines shown",
            view_edge(x0),
            view_edge(x1),
            num(lo),
            num(hi),
            match show::unit(data) {
                "" => String::new(),
                u => format!(" {u}"),
            },
            inside(shown_est),
            shown_est.len()
        );
        if let Some(t) = truth {
            let ts = stems(&t.spikes, data.is_real());
            line.push_str(&format!(", {} of {} true lines", inside(&ts), ts.len()));
        }
        line.push('.');
        raw.push((line, false));
    }
    if let Some(t) = truth {
        let s = t.spikes.min_separation() * fc;
        let what = if data.is_real() {
            lines_word(stems(&t.spikes, true).len())
        } else {
            spikes(t.spikes.len())
        };
        let mut line = format!(
            "Truth ({}): {what}, {}",
            a.truth.as_deref().map_or_else(String::new, file_name),
            sep(s.is_finite().then_some(s / fc), t.spikes.len())
        );
        if let Ok(score) = metrics::score(&est.spikes, &t.spikes, fc) {
            line.push_str(&format!(
                "; found {}, missed {}, spurious {}{}",
                score.found,
                score.missed,
                score.spurious,
                if data.is_real() {
                    " (counted on the complex model's ±f atoms)"
                } else {
                    ""
                }
            ));
            if let Some(e) = score.max_position_error_fc {
                line.push_str(&format!(", largest position error {}/fc", sig(e, 3)));
            }
        }
        line.push('.');
        raw.push((line, false));
        if s * n < fc {
            raw.push((
                format!(
                    "UNDER-RESOLVED truth: two true lines are {} resolution cells (1/N) apart, closer \
                     than the record's resolution 1/N; no method is guaranteed to separate them.",
                    sig(s * n / fc, 3)
                ),
                true,
            ));
        }
    }
    match &est.diagnostics.certificate {
        Some(c) => raw.push((
            format!(
                "Dual certificate: max |q| = {:.5}; largest peak of |q| away from the spikes {:.4} \
                 (margin {:.4}).",
                c.max_modulus,
                c.max_off_support,
                1.0 - c.max_off_support
            ),
            false,
        )),
        None if est.dual.is_none() => raw.push((
            format!(
                "Method {} produces no dual polynomial: no optimality certificate is drawn.",
                est.method
            ),
            false,
        )),
        None => {}
    }
    let cautions = warnings(est);
    if cautions.is_empty() {
        raw.push(("No warnings.".to_string(), false));
    }
    for w in cautions {
        raw.push((format!("WARNING: {w}."), true));
    }
    raw.into_iter()
        .flat_map(|(t, alert)| {
            wrap(&t, width_chars)
                .into_iter()
                .map(move |text| Line { text, alert })
        })
        .collect()
}
