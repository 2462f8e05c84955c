//! `plot`: an SVG of the data, the dual polynomial and the spikes.

use crate::recover::{report_warnings, warnings};
use crate::show::{self, num, sig};
use crate::{
    configure, file_name, input, requested_noise, shown, write_output, Failure, MethodArgs,
};
use clap::Args;
use finespike::eval::io::SpikeFile;
use finespike::eval::metrics;
use finespike::{Domain, DualPolynomial, Estimate, Measurements, Spikes};
use num_complex::Complex64;
use plotters::prelude::*;
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

// Our palette: slate for the data, green for the truth, rust for the estimate, plum for the dual.
const DATA: RGBColor = RGBColor(84, 104, 132);
const TRUE: RGBColor = RGBColor(46, 139, 87);
const FOUND: RGBColor = RGBColor(196, 78, 24);
const DUAL: RGBColor = RGBColor(128, 64, 150);
const LEVEL: RGBColor = RGBColor(150, 150, 150);
const INK: RGBColor = RGBColor(35, 35, 35);
const ALERT: RGBColor = RGBColor(200, 30, 30);

/// One caption line, and whether it is a caution.
struct Line {
    text: String,
    alert: bool,
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

/// `|Σ_k y_k exp(i2πkt)| / |K|` at `t = j/m`.
fn periodogram(data: &Measurements, m: usize) -> Vec<f64> {
    let kmin = data.kmin();
    let mut coeffs = vec![Complex64::new(0.0, 0.0); data.band_len()];
    for (k, v) in data.indices().iter().zip(data.values()) {
        coeffs[(k - kmin) as usize] = *v;
    }
    let scale = data.len().max(1) as f64;
    DualPolynomial::new(kmin, coeffs)
        .grid_values(m)
        .iter()
        .map(|v| v.norm() / scale)
        .collect()
}

/// Thin a curve to at most about `budget` points: each run of consecutive points keeps its lowest and
/// highest point, in order, so that narrow peaks survive (an SVG needs no more than a few points per
/// pixel).
fn envelope(points: Vec<(f64, f64)>, budget: usize) -> Vec<(f64, f64)> {
    let run = points.len().div_ceil(budget.max(2) / 2).max(1);
    if run <= 2 {
        return points;
    }
    let mut out = Vec::with_capacity(2 * points.len() / run + 2);
    for chunk in points.chunks(run) {
        let lo = chunk
            .iter()
            .enumerate()
            .min_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
        let hi = chunk
            .iter()
            .enumerate()
            .max_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
        if let (Some((i, &p)), Some((j, &q))) = (lo, hi) {
            if i < j {
                out.extend([p, q]);
            } else if i > j {
                out.extend([q, p]);
            } else {
                out.push(p);
            }
        }
    }
    out
}

/// The horizontal axis: positions (cycles per sample, or fractions of the domain) mapped to the
/// record's unit.
#[derive(Clone, Copy)]
struct Axis {
    /// Cycles per sample (or fraction of the domain) to the axis unit.
    factor: f64,
    /// Signed frequencies (−1/2, 1/2] of a complex time record.
    signed: bool,
    /// A real record: only [0, 1/2].
    real: bool,
}

impl Axis {
    fn of(data: &Measurements) -> Self {
        Axis {
            factor: show::factor(data),
            signed: data.domain() == Domain::Time && !data.is_real(),
            real: data.is_real(),
        }
    }

    /// The whole axis in its unit.
    fn full(self) -> (f64, f64) {
        match (self.signed, self.real) {
            (_, true) => (0.0, 0.5 * self.factor),
            (true, _) => (-0.5 * self.factor, 0.5 * self.factor),
            _ => (0.0, self.factor),
        }
    }

    /// A position on the torus on the axis, `None` where the axis does not show it (the mirror half
    /// of a real record).
    fn x(self, p: f64) -> Option<f64> {
        let q = if (self.signed || self.real) && p > 0.5 {
            p - 1.0
        } else {
            p
        };
        if self.real && q < 0.0 {
            return None;
        }
        Some(q * self.factor)
    }

    /// A curve sampled on the torus grid, on the axis and in `view`, in increasing x.
    fn curve(self, grid: &[f64], values: &[f64], (x0, x1): (f64, f64)) -> Vec<(f64, f64)> {
        let mut pts: Vec<(f64, f64)> = grid
            .iter()
            .zip(values)
            .filter_map(|(&p, &v)| self.x(p).map(|x| (x, v)))
            .filter(|(x, _)| *x >= x0 && *x <= x1)
            .collect();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        pts
    }
}

/// The stems to draw: `(position, height)` of the lines — for a real record each cosine once with its
/// amplitude `|A|` (the estimate's lines; a truth's ±f pairs folded), else the spikes.
fn stems(spikes: &Spikes, real: bool) -> Vec<(f64, f64)> {
    if !real {
        return spikes
            .iter()
            .map(|s| (s.position, s.amplitude.norm()))
            .collect();
    }
    // A real truth holds each cosine as a pair (A/2)e^{±iφ}: the one at f ≤ 1/2 stands for both.
    spikes
        .iter()
        .filter(|s| s.position <= 0.5)
        .map(|s| {
            let edge = s.position == 0.0 || s.position == 0.5;
            (
                s.position,
                if edge { 1.0 } else { 2.0 } * s.amplitude.norm(),
            )
        })
        .collect()
}

/// "1 spike", "3 spikes".
fn spikes(n: usize) -> String {
    format!("{n} spike{}", if n == 1 { "" } else { "s" })
}

/// "1 line", "3 lines".
fn lines_word(n: usize) -> String {
    format!("{n} line{}", if n == 1 { "" } else { "s" })
}

fn draw_err<E: std::fmt::Display>(e: E) -> Failure {
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
        return crate::array_plot::run(&a.samples, &a.method, truth, range, a.width, &a.out);
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
    let svg = render(&a, &data, truth.as_ref(), &estimate, (x0, x1))?;
    write_output(&a.out, &svg)?;
    eprintln!("wrote {}", shown(&a.out));
    Ok(())
}

fn caption(
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
        let mut line = format!(
            "View {}..{} of {}..{}{}: {} of {} recovered lines shown",
            num(x0),
            num(x1),
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

fn render(
    a: &PlotArgs,
    data: &Measurements,
    truth: Option<&SpikeFile>,
    est: &Estimate,
    (x0, x1): (f64, f64),
) -> Result<String, Failure> {
    let width = a.width;
    let axis = Axis::of(data);
    let real = data.is_real();
    // Grid: at least 16 points per coefficient over the whole torus, and at least 1500 in view.
    let (lo, hi) = axis.full();
    let view = x1 - x0;
    let m = ((16 * data.band_len()).max((1500.0 * (hi - lo) / view) as usize))
        .next_power_of_two()
        .min(1 << 20);
    let budget = 4 * width as usize;
    let grid: Vec<f64> = (0..m).map(|j| j as f64 / m as f64).collect();
    // A real record's cosine of amplitude A is a pair of peaks of height A/2: doubled, it shares
    // the axis with the stems |A|.
    let gain = if real { 2.0 } else { 1.0 };
    let pg: Vec<f64> = periodogram(data, m).iter().map(|v| gain * v).collect();
    let pg_curve = axis.curve(&grid, &pg, (x0, x1));
    let dual: Option<Vec<f64>> = est
        .dual
        .as_ref()
        .map(|q| q.grid_values(m).iter().map(|v| v.norm()).collect());
    let lines = caption(a, data, truth, est, (x0, x1), (width as usize - 48) / 7);
    let top_h = 420u32;
    let mid_h = if dual.is_some() { 240u32 } else { 0 };
    let cap_h = 24 * lines.len() as u32 + 24;
    let height = top_h + mid_h + cap_h;

    let on_axis = |st: Vec<(f64, f64)>| -> Vec<(f64, f64)> {
        st.into_iter()
            .filter_map(|(p, h)| axis.x(p).map(|x| (x, h)))
            .filter(|(x, _)| *x >= x0 && *x <= x1)
            .collect()
    };
    let shown_truth = on_axis(truth.map(|t| stems(&t.spikes, real)).unwrap_or_default());
    let shown_est = on_axis(if real {
        est.diagnostics
            .lines
            .iter()
            .map(|l| (l.position, l.amplitude.norm()))
            .collect()
    } else {
        stems(&est.spikes, false)
    });
    let ymax = pg_curve
        .iter()
        .map(|(_, p)| *p)
        .chain(shown_truth.iter().map(|s| s.1))
        .chain(shown_est.iter().map(|s| s.1))
        .fold(0.0f64, f64::max)
        .max(1e-12)
        * 1.4; // headroom for the legend box above the tallest peak
    let x_desc = match (data.domain(), show::unit(data)) {
        (Domain::Fourier, _) if data.scale().is_some() => "position on [0, L)".to_string(),
        (Domain::Fourier, _) => "position τ on [0, 1)".to_string(),
        (Domain::Time, "Hz") => "frequency f (Hz)".to_string(),
        (Domain::Time, _) => "frequency f (cycles per sample)".to_string(),
    };
    let pg_label = if real {
        "2 × periodogram |Σ y_n exp(−i2πfn)| / |K|"
    } else {
        "periodogram |Σ y_k exp(i2πkt)| / |K|"
    };

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let (top, rest) = root.split_vertically(top_h);
        let (mid, cap) = rest.split_vertically(mid_h);

        let mut chart = ChartBuilder::on(&top)
            .margin(12)
            // Room for the last tick label, centred on the right edge of the plot.
            .margin_right(40)
            .caption(
                format!(
                    "{} — {} estimate",
                    file_name(&a.samples.input[0]),
                    est.method
                ),
                ("sans-serif", 22).into_font().color(&INK),
            )
            .x_label_area_size(50)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, 0.0..ymax)
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc(x_desc.as_str())
            .y_desc("modulus")
            .axis_desc_style(("sans-serif", 16))
            .label_style(("sans-serif", 14))
            .light_line_style(RGBColor(238, 238, 238))
            .bold_line_style(RGBColor(215, 215, 215))
            .draw()
            .map_err(draw_err)?;
        chart
            .draw_series(LineSeries::new(
                envelope(pg_curve, budget),
                DATA.stroke_width(2),
            ))
            .map_err(draw_err)?
            .label(pg_label)
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], DATA.stroke_width(2)));
        if !shown_truth.is_empty() {
            chart
                .draw_series(shown_truth.iter().map(|&(x, h)| {
                    PathElement::new(vec![(x, 0.0), (x, h)], TRUE.mix(0.55).stroke_width(6))
                }))
                .map_err(draw_err)?
                .label(if real {
                    "true lines |A|"
                } else {
                    "true spikes |a|"
                })
                .legend(|(x, y)| {
                    EmptyElement::at((x + 11, y)) + Circle::new((0, 0), 7, TRUE.stroke_width(2))
                });
            chart
                .draw_series(
                    shown_truth
                        .iter()
                        .map(|&(x, h)| Circle::new((x, h), 7, TRUE.stroke_width(2))),
                )
                .map_err(draw_err)?;
        }
        chart
            .draw_series(
                shown_est
                    .iter()
                    .map(|&(x, h)| PathElement::new(vec![(x, 0.0), (x, h)], FOUND.stroke_width(2))),
            )
            .map_err(draw_err)?
            .label(if real {
                format!("recovered lines |Â| ({})", est.method)
            } else {
                format!("recovered spikes |â| ({})", est.method)
            })
            .legend(|(x, y)| {
                EmptyElement::at((x + 11, y)) + Circle::new((0, 0), 4, FOUND.filled())
            });
        chart
            .draw_series(
                shown_est
                    .iter()
                    .map(|&(x, h)| Circle::new((x, h), 4, FOUND.filled())),
            )
            .map_err(draw_err)?;
        // Scale bar: the record's resolution 1/N in the axis unit.
        let resolution = data.resolution();
        let bar_y = ymax * 0.93;
        let bar_x = x0 + 0.02 * view;
        let len = resolution.min(0.5 * view);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(bar_x, bar_y), (bar_x + len, bar_y)],
                INK.stroke_width(3),
            )))
            .map_err(draw_err)?;
        let bar_label = if len < resolution {
            format!(
                "resolution {} (wider than half the view)",
                show::resolution(data)
            )
        } else {
            format!("resolution {}", show::resolution(data))
        };
        chart
            .draw_series(std::iter::once(Text::new(
                bar_label,
                (bar_x + len + 0.01 * view, bar_y),
                ("sans-serif", 14).into_font().color(&INK),
            )))
            .map_err(draw_err)?;
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(RGBColor(180, 180, 180))
            .label_font(("sans-serif", 14))
            .draw()
            .map_err(draw_err)?;

        if let (Some(q), Some(poly)) = (&dual, &est.dual) {
            let qmax = q.iter().copied().fold(1.0f64, f64::max) * 1.08;
            let mut qc = ChartBuilder::on(&mid)
                .margin(12)
                .margin_right(40)
                .caption(
                    "dual polynomial |q(t)|: the support is where it touches the dashed line |q| = 1",
                    ("sans-serif", 16).into_font().color(&INK),
                )
                .x_label_area_size(50)
                .y_label_area_size(64)
                .build_cartesian_2d(x0..x1, 0.0..qmax)
                .map_err(draw_err)?;
            qc.configure_mesh()
                .x_desc(x_desc.as_str())
                .y_desc("|q(t)|")
                .axis_desc_style(("sans-serif", 16))
                .label_style(("sans-serif", 14))
                .light_line_style(RGBColor(238, 238, 238))
                .bold_line_style(RGBColor(215, 215, 215))
                .draw()
                .map_err(draw_err)?;
            qc.draw_series(DashedLineSeries::new(
                vec![(x0, 1.0), (x1, 1.0)],
                10,
                6,
                LEVEL.stroke_width(2),
            ))
            .map_err(draw_err)?;
            qc.draw_series(LineSeries::new(
                envelope(axis.curve(&grid, q, (x0, x1)), budget),
                DUAL.stroke_width(2),
            ))
            .map_err(draw_err)?;
            qc.draw_series(
                est.spikes
                    .iter()
                    .filter_map(|s| axis.x(s.position).map(|x| (x, s.position)))
                    .filter(|(x, _)| *x >= x0 && *x <= x1)
                    .map(|(x, p)| Circle::new((x, poly.eval(p).norm()), 4, FOUND.filled())),
            )
            .map_err(draw_err)?;
        }

        for (i, line) in lines.iter().enumerate() {
            let colour = if line.alert { ALERT } else { INK };
            cap.draw_text(
                &line.text,
                &("sans-serif", 16).into_font().color(&colour),
                (24, 12 + 24 * i as i32),
            )
            .map_err(draw_err)?;
        }
        root.present().map_err(draw_err)?;
    }
    // `opacity="1"` is the SVG default; dropping it changes nothing for conforming renderers and keeps
    // ImageMagick's internal renderer (which then fills open polylines black) from spoiling the curves.
    Ok(svg.replace(" opacity=\"1\"", ""))
}
