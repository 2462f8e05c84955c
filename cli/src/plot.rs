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
/// recovered spikes as stems, the dual polynomial |q(t)| with the line |q| = 1 for the methods that produce one,
/// and a caption with the separation in Rayleigh units and the estimate's warnings in plain words.
///
/// The periodogram is |Σ_k y_k exp(i2πkt)| / |K| on a fine grid: an isolated spike of amplitude a shows
/// as a peak of height about |a|, so it shares the axis with the stems. A bar of length 1/fc (the
/// Rayleigh length) gives the scale.
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
    /// Show only the positions FROM..TO of [0, 1) (e.g. `--range 0.2,0.45`).
    #[arg(long, value_delimiter = ',', value_name = "FROM,TO")]
    range: Option<Vec<f64>>,
    /// Width of the figure in pixels.
    #[arg(long, default_value_t = 1100)]
    width: u32,
    /// Where to write the SVG.
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

/// "1 spike", "3 spikes".
fn spikes(n: usize) -> String {
    format!("{n} spike{}", if n == 1 { "" } else { "s" })
}

fn draw_err<E: std::fmt::Display>(e: E) -> Failure {
    Failure::Output(format!("cannot draw the plot: {e}"))
}

pub fn run(a: PlotArgs) -> Result<(), Failure> {
    let noise = requested_noise(a.method.sigma)?;
    let data = a.samples.load()?;
    let truth: Option<SpikeFile> = match &a.truth {
        Some(t) => Some(input::load_spikes(t).map_err(Failure::Input)?),
        None => None,
    };
    let (x0, x1) = match a.range.as_deref() {
        None => (0.0, 1.0),
        Some([lo, hi]) if 0.0 <= *lo && lo < hi && *hi <= 1.0 => (*lo, *hi),
        Some(r) => {
            return Err(Failure::Usage(format!(
                "--range {r:?}: expected FROM,TO with 0 <= FROM < TO <= 1"
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
    let sep = |s: Option<f64>, count: usize| match (s, count) {
        (Some(x), _) => format!("closest pair {x:.3}/fc apart (Rayleigh units)"),
        (None, 0) => "so no separation to report".to_string(),
        (None, _) => "no pair to measure a separation on".to_string(),
    };
    raw.push((
        format!(
            "{}: {kind}. Method {}: {}, {} recovered, {}.",
            file_name(&a.samples.input[0]),
            est.method,
            est.status,
            spikes(est.spikes.len()),
            sep(est.diagnostics.separation_fc, est.spikes.len())
        ),
        false,
    ));
    if (x0, x1) != (0.0, 1.0) {
        let inside = |sp: &Spikes| {
            sp.iter()
                .filter(|s| s.position >= x0 && s.position <= x1)
                .count()
        };
        let mut line = format!(
            "View {}..{} of [0, 1): {} of {} recovered spikes shown",
            num(x0),
            num(x1),
            inside(&est.spikes),
            est.spikes.len()
        );
        if let Some(t) = truth {
            line.push_str(&format!(
                ", {} of {} true spikes",
                inside(&t.spikes),
                t.spikes.len()
            ));
        }
        line.push('.');
        raw.push((line, false));
    }
    if let Some(t) = truth {
        let s = t.spikes.min_separation() * fc;
        let mut line = format!(
            "Truth ({}): {}, {}",
            a.truth.as_deref().map_or_else(String::new, file_name),
            spikes(t.spikes.len()),
            sep(s.is_finite().then_some(s), t.spikes.len())
        );
        if let Ok(score) = metrics::score(&est.spikes, &t.spikes, fc) {
            line.push_str(&format!(
                "; found {}, missed {}, spurious {}",
                score.found, score.missed, score.spurious
            ));
            if let Some(e) = score.max_position_error_fc {
                line.push_str(&format!(", largest position error {}/fc", sig(e, 3)));
            }
        }
        line.push('.');
        raw.push((line, false));
        if s < 1.0 {
            raw.push((
                format!(
                    "UNDER-RESOLVED truth: two true lines are {s:.3}/fc apart, closer than the Rayleigh \
                     limit 1/fc; no method is guaranteed to separate them."
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
    let fc = data.fc();
    // Grid: at least 16 points per coefficient over the whole torus, and at least 1500 in view.
    let view = x1 - x0;
    let m = ((16 * data.band_len()).max((1500.0 / view) as usize))
        .next_power_of_two()
        .min(1 << 20);
    let budget = 4 * width as usize;
    let in_view = |t: f64| t >= x0 && t <= x1;
    let grid: Vec<f64> = (0..m).map(|j| j as f64 / m as f64).collect();
    let pg = periodogram(data, m);
    let dual: Option<Vec<f64>> = est
        .dual
        .as_ref()
        .map(|q| q.grid_values(m).iter().map(|v| v.norm()).collect());
    let lines = caption(a, data, truth, est, (x0, x1), (width as usize - 48) / 7);
    let top_h = 420u32;
    let mid_h = if dual.is_some() { 240u32 } else { 0 };
    let cap_h = 24 * lines.len() as u32 + 24;
    let height = top_h + mid_h + cap_h;

    let truth_spikes: Spikes = truth.map(|t| t.spikes.clone()).unwrap_or_default();
    let ymax = grid
        .iter()
        .zip(&pg)
        .filter(|(t, _)| in_view(**t))
        .map(|(_, p)| *p)
        .chain(truth_spikes.iter().map(|s| s.amplitude.norm()))
        .chain(est.spikes.iter().map(|s| s.amplitude.norm()))
        .fold(0.0f64, f64::max)
        .max(1e-12)
        * 1.4; // headroom for the legend box above the tallest peak
    let x_desc = match data.domain() {
        Domain::Fourier => "position τ on [0, 1)".to_string(),
        Domain::Time => "frequency f (cycles per sample)".to_string(),
    };

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let (top, rest) = root.split_vertically(top_h);
        let (mid, cap) = rest.split_vertically(mid_h);

        let mut chart = ChartBuilder::on(&top)
            .margin(12)
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
                envelope(
                    grid.iter()
                        .zip(&pg)
                        .filter(|(t, _)| in_view(**t))
                        .map(|(t, p)| (*t, *p))
                        .collect(),
                    budget,
                ),
                DATA.stroke_width(2),
            ))
            .map_err(draw_err)?
            .label("periodogram |Σ y_k exp(i2πkt)| / |K|")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], DATA.stroke_width(2)));
        if !truth_spikes.is_empty() {
            let shown_truth: Vec<(f64, f64)> = truth_spikes
                .iter()
                .filter(|s| in_view(s.position))
                .map(|s| (s.position, s.amplitude.norm()))
                .collect();
            chart
                .draw_series(shown_truth.iter().map(|&(x, h)| {
                    PathElement::new(vec![(x, 0.0), (x, h)], TRUE.mix(0.55).stroke_width(6))
                }))
                .map_err(draw_err)?
                .label("true spikes |a|")
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
        let shown_est: Vec<(f64, f64)> = est
            .spikes
            .iter()
            .filter(|s| in_view(s.position))
            .map(|s| (s.position, s.amplitude.norm()))
            .collect();
        chart
            .draw_series(
                shown_est
                    .iter()
                    .map(|&(x, h)| PathElement::new(vec![(x, 0.0), (x, h)], FOUND.stroke_width(2))),
            )
            .map_err(draw_err)?
            .label(format!("recovered spikes |â| ({})", est.method))
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
        // Scale bar: one Rayleigh length.
        let bar_y = ymax * 0.93;
        let bar_x = x0 + 0.02 * view;
        let len = (1.0 / fc).min(0.5 * view);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(bar_x, bar_y), (bar_x + len, bar_y)],
                INK.stroke_width(3),
            )))
            .map_err(draw_err)?;
        let bar_label = if len < 1.0 / fc {
            "1/fc (wider than half the view)".to_string()
        } else {
            format!("1/fc = {:.4}", 1.0 / fc)
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
                envelope(
                    grid.iter()
                        .zip(q)
                        .filter(|(t, _)| in_view(**t))
                        .map(|(t, v)| (*t, *v))
                        .collect(),
                    budget,
                ),
                DUAL.stroke_width(2),
            ))
            .map_err(draw_err)?;
            qc.draw_series(est.spikes.iter().filter(|s| in_view(s.position)).map(|s| {
                Circle::new(
                    (s.position, poly.eval(s.position).norm()),
                    4,
                    FOUND.filled(),
                )
            }))
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
