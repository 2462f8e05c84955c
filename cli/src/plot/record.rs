//! The figure of one record: the periodogram with the stems of the true and recovered lines, the
//! dual polynomial's panel, and the caption.

use super::axis::{stems, Axis};
use super::caption::caption;
use super::curve::{envelope, periodogram};
use super::{draw_err, PlotArgs};
use crate::show;
use crate::{file_name, Failure};
use finespike::eval::io::SpikeFile;
use finespike::{Domain, Estimate, Measurements};
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
