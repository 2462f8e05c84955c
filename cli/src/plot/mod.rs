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
    /// Width of the figure in pixels.
    #[arg(long, default_value_t = 1100)]
    width: u32,
    /// Where to write the SVG (the name must end in `.svg`).
    #[arg(long, short)]
    out: PathBuf,
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
    let noise = requested_noise(a.method.sigma)?;
    let data = a.samples.load()?;
    let truth: Option<SpikeFile> = match &a.truth {
        Some(t) => Some(input::load_spikes(t).map_err(Failure::Input)?),
        None => None,
    };
    let axis = Axis::of(&data);
    let (lo, hi) = axis.full();
    let (x0, x1) = match a.range.as_deref() {
        None => (lo, hi),
        Some([from, to]) if lo <= *from && from < to && *to <= hi => (*from, *to),
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
    let svg = record::render(&a, &data, truth.as_ref(), &estimate, (x0, x1))?;
    write_output(&a.out, &svg)?;
    eprintln!("wrote {}", shown(&a.out));
    Ok(())
}
