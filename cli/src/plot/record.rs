//! The figure of one record: the periodogram with the stems of the true and recovered lines, the
//! dual polynomial's panel, and the caption.

use super::axis::{stems, Axis};
use super::caption::caption;
use super::curve::{column_envelope, periodogram, tick_decimals};
use super::{draw_err, plot_columns, Levels, PlotArgs, DB_FROM_LEN};
use crate::show;
use crate::{file_name, Failure};
use finespike::eval::io::SpikeFile;
use finespike::{Domain, Estimate, Measurements};
use plotters::chart::SeriesAnno;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

// Our palette: slate for the data, green for the truth, rust for the estimate, plum for the dual.
const DATA: RGBColor = RGBColor(84, 104, 132);
const TRUE: RGBColor = RGBColor(46, 139, 87);
const FOUND: RGBColor = RGBColor(196, 78, 24);
const DUAL: RGBColor = RGBColor(128, 64, 150);
const LEVEL: RGBColor = RGBColor(150, 150, 150);
const INK: RGBColor = RGBColor(35, 35, 35);
const ALERT: RGBColor = RGBColor(200, 30, 30);

pub(super) fn render(
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
    let columns = plot_columns(width);
    let db = match a.levels {
        Levels::Db => true,
        Levels::Linear => false,
        Levels::Auto => data.band_len() >= DB_FROM_LEN,
    };
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
    let top_value = pg_curve
        .iter()
        .map(|(_, p)| *p)
        .chain(shown_truth.iter().map(|s| s.1))
        .chain(shown_est.iter().map(|s| s.1))
        .fold(0.0f64, f64::max)
        .max(1e-12);
    // The vertical coordinate: the modulus, or 20·log10 of it down to the periodogram's floor in
    // view (at most 120 dB below the top); headroom for the legend box above the tallest peak.
    let (ymin, ymax) = if db {
        let top = 20.0 * top_value.log10();
        let floor = pg_curve
            .iter()
            .map(|(_, p)| *p)
            .filter(|p| *p > 0.0)
            .fold(f64::INFINITY, f64::min);
        let bottom = if floor.is_finite() {
            (20.0 * floor.log10() - 6.0).max(top - 120.0)
        } else {
            top - 60.0
        };
        (bottom, top + 0.4 * (top - bottom).max(20.0))
    } else {
        (0.0, top_value * 1.4)
    };
    let level = |v: f64| -> f64 {
        if db {
            (20.0 * v.max(1e-300).log10()).max(ymin)
        } else {
            v
        }
    };
    let decimals = tick_decimals(x1 - x0);
    let x_tick = move |x: &f64| format!("{x:.decimals$}");
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
            .margin_right(60)
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
            .build_cartesian_2d(x0..x1, ymin..ymax)
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc(x_desc.as_str())
            .y_desc(if db {
                "modulus (dB: 20·log10)"
            } else {
                "modulus"
            })
            .axis_desc_style(("sans-serif", 16))
            .label_style(("sans-serif", 14))
            .x_label_formatter(&x_tick)
            // A light grid: the major lines only (minor ones read as grey shading on long records).
            .light_line_style(WHITE.mix(0.0))
            .bold_line_style(RGBColor(228, 228, 228))
            .draw()
            .map_err(draw_err)?;
        draw_curve(&mut chart, &pg_curve, (x0, x1), columns, DATA, &level)?
            .label(pg_label)
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], DATA.stroke_width(2)));
        if !shown_truth.is_empty() {
            chart
                .draw_series(shown_truth.iter().map(|&(x, h)| {
                    PathElement::new(
                        vec![(x, ymin), (x, level(h))],
                        TRUE.mix(0.55).stroke_width(6),
                    )
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
                        .map(|&(x, h)| Circle::new((x, level(h)), 7, TRUE.stroke_width(2))),
                )
                .map_err(draw_err)?;
        }
        chart
            .draw_series(shown_est.iter().map(|&(x, h)| {
                PathElement::new(vec![(x, ymin), (x, level(h))], FOUND.stroke_width(2))
            }))
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
                    .map(|&(x, h)| Circle::new((x, level(h)), 4, FOUND.filled())),
            )
            .map_err(draw_err)?;
        // Scale bar: the record's resolution 1/N in the axis unit.
        let resolution = data.resolution();
        let bar_y = ymin + 0.93 * (ymax - ymin);
        let bar_x = x0 + 0.02 * view;
        // At least two pixels wide, so that it shows; the label says when it is drawn wider.
        let pixel = view / columns as f64;
        let len = resolution.min(0.5 * view).max(2.0 * pixel);
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
        } else if resolution < 2.0 * pixel {
            format!(
                "resolution {} (bar drawn 2 pixels wide; 1 pixel = {} resolution cells)",
                show::resolution(data),
                show::num(pixel / resolution)
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
                .margin_right(60)
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
                .x_label_formatter(&x_tick)
                .y_labels(6)
                .light_line_style(WHITE.mix(0.0))
                .bold_line_style(RGBColor(228, 228, 228))
                .draw()
                .map_err(draw_err)?;
            qc.draw_series(DashedLineSeries::new(
                vec![(x0, 1.0), (x1, 1.0)],
                10,
                6,
                LEVEL.stroke_width(2),
            ))
            .map_err(draw_err)?;
            draw_curve(
                &mut qc,
                &axis.curve(&grid, q, (x0, x1)),
                (x0, x1),
                columns,
                DUAL,
                &|v| v,
            )?;
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

type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Draw a curve (points in increasing x, values mapped by `level`): with more than two points per
/// pixel column, as its decimated envelope — the band between each column's lowest and highest
/// value, filled, with its upper edge drawn (every peak and the noise floor stay visible, and the
/// drawing holds a few thousand points whatever the record's length); otherwise as a line.
fn draw_curve<'c, 'a, 'b>(
    chart: &'c mut Chart<'a, 'b>,
    points: &[(f64, f64)],
    view: (f64, f64),
    columns: usize,
    colour: RGBColor,
    level: &dyn Fn(f64) -> f64,
) -> Result<&'c mut SeriesAnno<'a, SVGBackend<'b>>, Failure> {
    if points.len() <= 2 * columns {
        let line: Vec<(f64, f64)> = points.iter().map(|&(x, y)| (x, level(y))).collect();
        return chart
            .draw_series(LineSeries::new(line, colour.stroke_width(2)))
            .map_err(draw_err);
    }
    let env = column_envelope(points, view, columns);
    let mut band: Vec<(f64, f64)> = env.iter().map(|&(x, _, hi)| (x, level(hi))).collect();
    band.extend(env.iter().rev().map(|&(x, lo, _)| (x, level(lo))));
    chart
        .draw_series(std::iter::once(Polygon::new(
            band,
            colour.mix(0.35).filled(),
        )))
        .map_err(draw_err)?;
    let upper: Vec<(f64, f64)> = env.iter().map(|&(x, _, hi)| (x, level(hi))).collect();
    chart
        .draw_series(LineSeries::new(upper, colour.stroke_width(1)))
        .map_err(draw_err)
}
