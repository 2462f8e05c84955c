//! `plot`: an SVG of the data, the dual polynomial and the spikes.
//!
//! One file per concern: `axis.rs` maps positions to the record's unit and picks the stems,
//! `curve.rs` samples and thins the curves (periodogram, |q|), `caption.rs` writes the caption,
//! `record.rs` draws the figure of one record. [`run`] checks the options shared by every figure and
//! hands the record to the figure that draws it.

mod axis;
mod caption;
mod curve;
mod record;

use crate::recover::report_warnings;
use crate::show::{self, num};
use crate::{configure, input, requested_noise, shown, write_output, Failure, MethodArgs};
use axis::Axis;
use clap::Args;
use finespike::eval::io::SpikeFile;
use std::path::PathBuf;

/// Draw an SVG of the data, the spikes and the dual polynomial.
///
/// The figure shows the data's zero-padded periodogram with the true (optional truth file) and
/// recovered lines as stems, the dual polynomial |q(t)| with the line |q| = 1 for the methods that
/// produce one, and a caption with the separation in resolution cells 1/N and in the TV theory's unit
/// 1/fc and the estimate's warnings in plain words.
///
/// The axis is in the record's unit: for time records the frequency in cycles per sample, or in Hz
/// with --rate (signed, -R/2..R/2, for complex records; 0..R/2 for real-valued ones); for Fourier
/// data the position on [0, 1), or on [0, L) with --length.
///
/// The periodogram is |Σ_k y_k exp(i2πkt)| / |K| on a fine grid (twice that for a real record): an
/// isolated line of amplitude a shows as a peak of height about |a|, so it shares the axis with the
/// stems. A bar of the record's resolution 1/N (one periodogram bin), labelled in the axis unit,
/// gives the scale.
#[derive(Args, Debug)]
#[command(after_help = crate::EXIT_CODES)]
pub struct PlotArgs {
    #[command(flatten)]
    samples: input::SampleArgs,
    /// Truth file (JSON spikes), drawn as stems of their own colour and scored in the caption.
    #[arg(long)]
    truth: Option<PathBuf>,
    #[command(flatten)]
    method: MethodArgs,
    /// Show only FROM..TO of the axis, in its unit (e.g. `--range 0.2,0.45`, or `--range 100,200`
    /// in Hz with --rate).
    #[arg(
        long,
        value_delimiter = ',',
        value_name = "FROM,TO",
        allow_hyphen_values = true
    )]
    range: Option<Vec<f64>>,
    /// What part of the axis to show when --range is not given: `whole` (the whole axis), `closest`
    /// (the closest pair of recovered lines with about ten resolution cells around it), or `auto`
    /// (`closest` when that pair would fall within three pixels of each other at the whole view,
    /// else `whole`). The caption says how many lines the view leaves out.
    #[arg(long, value_enum, default_value_t = View::Auto)]
    view: View,
    /// Vertical scale of the top panel: `linear`, `db` (20·log10 of the modulus, so the periodogram's
    /// noise floor shows beside lines far above it), or `auto` (`db` for records of 4096 samples or
    /// coefficients and more, and always for the spatial spectrum of a snapshot file, whose powers
    /// are drawn as 10·log10 or, with `linear`, as they are).
    #[arg(long, value_enum, default_value_t = Levels::Auto)]
    levels: Levels,
    /// Width of the figure in pixels.
    #[arg(long, default_value_t = 1100)]
    width: u32,
    /// Where to write the SVG (the name must end in `.svg`).
    #[arg(long, short)]
    out: PathBuf,
}

/// Which part of the axis a plot shows (`--view`).
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum View {
    /// `closest` when the closest pair of lines would merge on screen at the whole view.
    Auto,
    /// The whole axis.
    Whole,
    /// The closest pair of recovered lines, about ten resolution cells around it.
    Closest,
}

/// The vertical scale of the top panel (`--levels`).
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Levels {
    /// `db` from [`DB_FROM_LEN`] samples or coefficients on, else `linear`.
    Auto,
    /// The modulus.
    Linear,
    /// `20·log10` of the modulus.
    Db,
}

/// Band length from which `--levels auto` draws decibels: the periodogram's noise floor of a long
/// record lies about `10·log10(N)` dB below its lines and is a flat line at zero on a linear scale.
pub const DB_FROM_LEN: usize = 4096;

/// Pixel columns of the plotting area of a figure `width` pixels wide (the label area and margins
/// of `record.rs` taken off).
pub(super) fn plot_columns(width: u32) -> usize {
    (width as usize).saturating_sub(64 + 12 + 60).max(100)
}

/// The view `--view` asks for, given the recovered lines (positions on the axis, in its unit), the
/// whole axis `(lo, hi)`, the record's resolution in the axis unit and the plot's width in columns.
pub(super) fn choose_view(
    view: View,
    lines: &[f64],
    (lo, hi): (f64, f64),
    resolution: f64,
    columns: usize,
) -> (f64, f64) {
    let mut xs: Vec<f64> = lines.to_vec();
    xs.sort_by(f64::total_cmp);
    let closest = xs
        .windows(2)
        .map(|w| (w[1] - w[0], 0.5 * (w[0] + w[1])))
        .min_by(|a, b| a.0.total_cmp(&b.0));
    let Some((sep, centre)) = closest else {
        return (lo, hi);
    };
    let merged = sep < 3.0 * (hi - lo) / columns as f64;
    if view == View::Whole || (view == View::Auto && !merged) {
        return (lo, hi);
    }
    let half = (10.0 * resolution).max(2.0 * sep);
    let (mut x0, mut x1) = (centre - half, centre + half);
    if x0 < lo {
        (x0, x1) = (lo, (lo + 2.0 * half).min(hi));
    }
    if x1 > hi {
        (x0, x1) = ((hi - 2.0 * half).max(lo), hi);
    }
    (x0, x1)
}

pub(super) fn draw_err<E: std::fmt::Display>(e: E) -> Failure {
    Failure::Output(format!("cannot draw the plot: {e}"))
}

pub fn run(a: PlotArgs) -> Result<(), Failure> {
    // The figure is SVG: a file named `.png` holding SVG would mislead every viewer that trusts the
    // extension.
    let svg_name = a
        .out
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("svg"));
    if !svg_name {
        return Err(Failure::Usage(format!(
            "--out {}: the plot is an SVG drawing; name the file with the extension .svg",
            shown(&a.out)
        )));
    }
    if crate::array_input::is_snapshot_file(a.samples.path()?) {
        let (truth, range) = (a.truth.as_deref(), a.range.as_deref());
        let look = crate::array_plot::Look {
            range,
            view: a.view,
            levels: a.levels,
            width: a.width,
        };
        return crate::array_plot::run(&a.samples, &a.method, truth, look, &a.out);
    }
    let noise = requested_noise(a.method.sigma)?;
    let data = a.samples.load()?;
    let truth: Option<SpikeFile> = match &a.truth {
        Some(t) => Some(input::load_spikes(t).map_err(Failure::Input)?),
        None => None,
    };
    let axis = Axis::of(&data);
    let (lo, hi) = axis.full();
    let range = match a.range.as_deref() {
        None => None,
        Some([from, to]) if lo <= *from && from < to && *to <= hi => Some((*from, *to)),
        Some(r) => {
            return Err(Failure::Usage(format!(
                "--range {r:?}: expected FROM,TO with {} <= FROM < TO <= {}{}",
                num(lo),
                num(hi),
                match show::unit(&data) {
                    "" => String::new(),
                    u => format!(" ({u})"),
                }
            )))
        }
    };
    if !(400..=6000).contains(&a.width) {
        return Err(Failure::Usage(format!(
            "--width {}: expected 400..=6000 pixels",
            a.width
        )));
    }
    let estimator = configure(&a.method, noise)?;
    let estimate = estimator.estimate(&data).map_err(Failure::Estimate)?;
    report_warnings(&estimate);
    // The figure of one record; a figure of another kind of input gets its own file and arm here.
    let lines: Vec<f64> = axis::shown_lines(&data, &estimate)
        .iter()
        .filter_map(|&(p, _)| axis.x(p))
        .collect();
    let (x0, x1) = range.unwrap_or_else(|| {
        choose_view(
            a.view,
            &lines,
            (lo, hi),
            data.resolution(),
            plot_columns(a.width),
        )
    });
    let svg = record::render(&a, &data, truth.as_ref(), &estimate, (x0, x1))?;
    write_output(&a.out, &svg)?;
    eprintln!("wrote {}", shown(&a.out));
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closest_view_frames_the_closest_pair_inside_the_axis() {
        let lines = [0.1, 0.36552, 0.36556, -0.4];
        let full = (-0.5, 0.5);
        // 4e-5 apart: within three of 1000 columns at the whole view, so `auto` zooms.
        let (x0, x1) = choose_view(View::Auto, &lines, full, 1e-5, 1000);
        assert!((x0 - (0.36554 - 1e-4)).abs() < 1e-12 && (x1 - (0.36554 + 1e-4)).abs() < 1e-12);
        assert_eq!(choose_view(View::Whole, &lines, full, 1e-5, 1000), full);
        // Lines well apart: `auto` keeps the whole axis, `closest` still zooms, clamped to it.
        assert_eq!(choose_view(View::Auto, &[0.1, 0.3], full, 1e-2, 1000), full);
        let (x0, x1) = choose_view(View::Closest, &[0.45, 0.49], full, 1e-2, 1000);
        assert!((x1 - 0.5).abs() < 1e-12 && (x0 - 0.3).abs() < 1e-12);
        assert_eq!(choose_view(View::Closest, &[0.2], full, 1e-2, 1000), full);
    }
}
