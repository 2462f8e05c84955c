//! The SVG figures of the report (plotters, SVG backend).

use crate::cost::Point;
use crate::numbers::{crb_rows, resolution_rows};
use crate::report::Results;
use crate::studies::{HEAT_METHODS, PATTERNS};
use finespike::eval::campaign::Campaign;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::path::Path;

type Fallible = Result<(), Box<dyn std::error::Error>>;

const INK: RGBColor = RGBColor(35, 35, 35);
const GRID: RGBColor = RGBColor(225, 225, 225);

/// One colour per method, in registry order (our own choice: distinguishable in print).
pub fn colour(method: &str) -> RGBColor {
    match method {
        "sdp" => RGBColor(31, 90, 170),
        "ast" => RGBColor(110, 170, 230),
        "sfw" => RGBColor(0, 150, 150),
        "greedy" => RGBColor(120, 80, 160),
        "grid" => RGBColor(150, 150, 40),
        "music" => RGBColor(210, 90, 30),
        "esprit" => RGBColor(200, 30, 60),
        "pencil" => RGBColor(90, 90, 90),
        _ => RGBColor(0, 0, 0),
    }
}

/// White (0) to deep blue (1).
fn ramp(v: f64) -> RGBColor {
    let v = v.clamp(0.0, 1.0);
    let mix = |a: f64, b: f64| (a + (b - a) * v).round() as u8;
    RGBColor(mix(250.0, 20.0), mix(250.0, 60.0), mix(250.0, 140.0))
}

fn save(svg: String, path: &Path) -> Fallible {
    std::fs::write(path, svg)?;
    Ok(())
}

/// Success-rate maps: one row per method, one column per amplitude pattern.
fn heat_maps(r: &Results, path: &Path) -> Fallible {
    let summaries = r.heat.summaries();
    let seps = &r.heat.plan.grid.separations;
    let counts = &r.heat.plan.grid.spikes;
    let (w, h) = (1020u32, 1400u32);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        root.fill(&WHITE)?;
        let (title, rest) = root.split_vertically(70);
        title.draw(&Text::new(
            "Exact recovery rate, N = 33 (Fourier band -16..16): separation (1/N) x spike count",
            (20, 14),
            ("sans-serif", 20).into_font().color(&INK),
        ))?;
        title.draw(&Text::new(
            "success = every spike within 1e-3/N, nothing spurious; white 0 %, deep blue 100 %; \
             spikes in a cluster, each the separation from its neighbour",
            (20, 42),
            ("sans-serif", 14).into_font().color(&INK),
        ))?;
        let panels = rest.split_evenly((HEAT_METHODS.len(), PATTERNS.len()));
        for (i, area) in panels.iter().enumerate() {
            let method = HEAT_METHODS[i / PATTERNS.len()];
            let pattern = PATTERNS[i % PATTERNS.len()];
            let (nx, ny) = (seps.len() as i32, counts.len() as i32);
            let mut chart = ChartBuilder::on(area)
                .caption(
                    format!("{method}, {}", pattern.name().replace('_', " ")),
                    ("sans-serif", 16).into_font().color(&INK),
                )
                .margin(6)
                .x_label_area_size(38)
                .y_label_area_size(44)
                .build_cartesian_2d((0..nx).into_segmented(), (0..ny).into_segmented())?;
            chart
                .configure_mesh()
                .disable_mesh()
                .x_labels(seps.len() + 1)
                .y_labels(counts.len() + 1)
                .x_label_formatter(&|v| match v {
                    SegmentValue::CenterOf(i) if *i >= 0 && *i < nx => {
                        format!("{}", seps[*i as usize])
                    }
                    _ => String::new(),
                })
                .y_label_formatter(&|v| match v {
                    SegmentValue::CenterOf(i) if *i >= 0 && *i < ny => {
                        format!("{}", counts[*i as usize])
                    }
                    _ => String::new(),
                })
                .x_desc("separation (1/N)")
                .y_desc("spike count")
                .label_style(("sans-serif", 12))
                .axis_desc_style(("sans-serif", 12))
                .draw()?;
            for (xi, &sep) in seps.iter().enumerate() {
                for (yi, &count) in counts.iter().enumerate() {
                    let cell = summaries.iter().find(|s| {
                        s.method == method
                            && s.condition.amplitudes == pattern
                            && s.condition.spikes == count
                            && (s.condition.separation_res - sep).abs() < 1e-9
                    });
                    let (x, y) = (xi as i32, yi as i32);
                    let corners = [
                        (SegmentValue::Exact(x), SegmentValue::Exact(y)),
                        (SegmentValue::Exact(x + 1), SegmentValue::Exact(y + 1)),
                    ];
                    match cell {
                        Some(s) => {
                            chart.draw_series(std::iter::once(Rectangle::new(
                                corners,
                                ramp(s.success_rate).filled(),
                            )))?;
                            let ink = if s.success_rate > 0.55 { WHITE } else { INK };
                            chart.draw_series(std::iter::once(Text::new(
                                format!("{:.0}", 100.0 * s.success_rate),
                                (SegmentValue::CenterOf(x), SegmentValue::CenterOf(y)),
                                ("sans-serif", 11)
                                    .into_font()
                                    .color(&ink)
                                    .pos(Pos::new(HPos::Center, VPos::Center)),
                            )))?;
                        }
                        None => {
                            // Too many spikes for the record at this spacing.
                            chart.draw_series(std::iter::once(Rectangle::new(
                                corners,
                                RGBColor(200, 200, 200).filled(),
                            )))?;
                        }
                    }
                }
            }
        }
        root.present()?;
    }
    save(svg, path)
}

/// A vertical error bar from `lo` to `hi` at `x`.
fn bar(x: f64, lo: f64, hi: f64, c: RGBColor) -> PathElement<(f64, f64)> {
    PathElement::new(vec![(x, lo), (x, hi)], c.stroke_width(1))
}

/// RMSE/√CRB of campaign `c` against SNR, log scale, chi-square 95 % bars.
fn accuracy(c: &Campaign, title: &str, path: &Path) -> Fallible {
    let rows = crb_rows(c);
    let ymax = rows
        .iter()
        .filter_map(|row| Some(row.ci?.1.max(row.ratio?)))
        .fold(3.0f64, f64::max)
        .min(1e3)
        * 1.2;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (1000, 640)).into_drawing_area();
        root.fill(&WHITE)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, ("sans-serif", 18).into_font().color(&INK))
            .margin(12)
            .x_label_area_size(44)
            .y_label_area_size(60)
            .build_cartesian_2d(-7f64..42f64, (0.5f64..ymax).log_scale())?;
        chart
            .configure_mesh()
            .light_line_style(GRID)
            .x_desc("SNR of the weaker line or source (dB)")
            .y_desc("RMSE / sqrt(CRB)  (1 = efficient; dashed: 1 and 1.5)")
            .label_style(("sans-serif", 14))
            .axis_desc_style(("sans-serif", 14))
            .draw()?;
        for level in [1.0, 1.5] {
            chart.draw_series(DashedLineSeries::new(
                vec![(-7.0, level), (42.0, level)],
                6,
                4,
                RGBColor(120, 120, 120).stroke_width(1),
            ))?;
        }
        let methods: Vec<String> = c.plan.methods.iter().map(|m| m.name.clone()).collect();
        for (k, m) in methods.iter().enumerate() {
            let c = colour(m);
            // Offset each method a little along x so the bars do not hide each other.
            let dx = (k as f64 - (methods.len() as f64 - 1.0) / 2.0) * 0.35;
            let pts: Vec<(f64, f64, f64, f64)> = rows
                .iter()
                .filter(|row| &row.method == m)
                .filter_map(|row| {
                    let (lo, hi) = row.ci?;
                    Some((row.snr + dx, row.ratio?, lo, hi.min(1e4)))
                })
                .collect();
            chart
                .draw_series(LineSeries::new(
                    pts.iter().map(|p| (p.0, p.1.clamp(0.5, ymax))),
                    c.stroke_width(2),
                ))?
                .label(m.as_str())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 18, y)], c.stroke_width(3))
                });
            chart.draw_series(
                pts.iter()
                    .map(|p| bar(p.0, p.2.clamp(0.5, ymax), p.3.clamp(0.5, ymax), c)),
            )?;
            chart.draw_series(
                pts.iter()
                    .map(|p| Circle::new((p.0, p.1.clamp(0.5, ymax)), 3, c.filled())),
            )?;
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.9))
            .border_style(RGBColor(180, 180, 180))
            .label_font(("sans-serif", 14))
            .draw()?;
        root.present()?;
    }
    save(svg, path)
}

/// Probability of resolving two lines against separation, one panel per SNR.
fn resolution(r: &Results, path: &Path) -> Fallible {
    let rows = resolution_rows(&r.res);
    let snrs = &r.res.plan.grid.snr_db;
    let seps = &r.res.plan.grid.separations;
    let xmax = seps.iter().cloned().fold(0.0, f64::max) + 0.1;
    let mut svg = String::new();
    {
        let width = 380 * snrs.len() as u32 + 40;
        let root = SVGBackend::with_string(&mut svg, (width, 520)).into_drawing_area();
        root.fill(&WHITE)?;
        let (title, rest) = root.split_vertically(40);
        title.draw(&Text::new(
            "Probability of resolving two random-phase lines, N = 33 (Wilson 95 % bars)",
            (20, 12),
            ("sans-serif", 18).into_font().color(&INK),
        ))?;
        let panels = rest.split_evenly((1, snrs.len()));
        for (p, (area, snr)) in panels.iter().zip(snrs).enumerate() {
            let snr = snr.unwrap_or(f64::INFINITY);
            let mut chart = ChartBuilder::on(area)
                .caption(
                    format!("SNR {snr} dB"),
                    ("sans-serif", 16).into_font().color(&INK),
                )
                .margin(8)
                .x_label_area_size(40)
                .y_label_area_size(44)
                .build_cartesian_2d(0f64..xmax, -0.02f64..1.02f64)?;
            chart
                .configure_mesh()
                .light_line_style(GRID)
                .x_desc("separation (1/N)")
                .y_desc("P(resolved)")
                .label_style(("sans-serif", 13))
                .axis_desc_style(("sans-serif", 13))
                .draw()?;
            for m in r.res.plan.methods.iter().map(|m| m.name.as_str()) {
                let c = colour(m);
                let pts: Vec<_> = rows
                    .iter()
                    .filter(|row| row.method == m && row.snr == snr)
                    .map(|row| (row.separation, row.rate, row.ci.0, row.ci.1))
                    .collect();
                let s = chart.draw_series(LineSeries::new(
                    pts.iter().map(|p| (p.0, p.1)),
                    c.stroke_width(2),
                ))?;
                if p == 0 {
                    s.label(m).legend(move |(x, y)| {
                        PathElement::new(vec![(x, y), (x + 18, y)], c.stroke_width(3))
                    });
                }
                chart.draw_series(pts.iter().map(|p| bar(p.0, p.2, p.3, c)))?;
            }
            if p == 0 {
                chart
                    .configure_series_labels()
                    .position(SeriesLabelPosition::LowerRight)
                    .background_style(WHITE.mix(0.9))
                    .border_style(RGBColor(180, 180, 180))
                    .label_font(("sans-serif", 13))
                    .draw()?;
            }
        }
        root.present()?;
    }
    save(svg, path)
}

/// Time and peak-memory increase against N, log–log.
fn cost(points: &[Point], path: &Path) -> Fallible {
    let methods: Vec<&str> = crate::studies::all_methods();
    let nmax = points.iter().map(|p| p.n).max().unwrap_or(64) as f64 * 1.3;
    let tmax = points.iter().filter_map(|p| p.seconds).fold(1e-3, f64::max) * 2.0;
    let mmax = points
        .iter()
        .filter_map(|p| Some(p.peak_mb? - p.base_mb?))
        .fold(1.0, f64::max)
        * 2.0;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (1100, 540)).into_drawing_area();
        root.fill(&WHITE)?;
        let (title, rest) = root.split_vertically(40);
        title.draw(&Text::new(
            "Cost against N: N time samples, 3 lines 3/N apart, 30 dB; one process per point",
            (20, 12),
            ("sans-serif", 18).into_font().color(&INK),
        ))?;
        let (left, right) = rest.split_horizontally(550);
        // Ticks at the measured sizes (a log axis left to itself labels only 100, 200, 300).
        let mut sizes: Vec<f64> = points.iter().map(|p| p.n as f64).collect();
        sizes.sort_by(f64::total_cmp);
        sizes.dedup();
        let mut tc = ChartBuilder::on(&left)
            .caption(
                "wall time of one estimate",
                ("sans-serif", 16).into_font().color(&INK),
            )
            .margin(10)
            .x_label_area_size(40)
            .y_label_area_size(60)
            .build_cartesian_2d(
                (24f64..nmax).log_scale().with_key_points(sizes.clone()),
                (1e-5f64..tmax).log_scale(),
            )?;
        tc.configure_mesh()
            .light_line_style(GRID)
            .x_desc("N")
            .x_label_formatter(&|x| format!("{x:.0}"))
            .y_desc("seconds")
            .label_style(("sans-serif", 13))
            .axis_desc_style(("sans-serif", 13))
            .draw()?;
        let mut mc = ChartBuilder::on(&right)
            .caption(
                "peak resident memory above the process's baseline",
                ("sans-serif", 16).into_font().color(&INK),
            )
            .margin(10)
            .x_label_area_size(40)
            .y_label_area_size(60)
            .build_cartesian_2d(
                (24f64..nmax).log_scale().with_key_points(sizes.clone()),
                (0.01f64..mmax).log_scale(),
            )?;
        mc.configure_mesh()
            .light_line_style(GRID)
            .x_desc("N")
            .x_label_formatter(&|x| format!("{x:.0}"))
            .y_desc("MB (VmHWM - VmRSS before the estimate)")
            .label_style(("sans-serif", 13))
            .axis_desc_style(("sans-serif", 13))
            .draw()?;
        for m in methods {
            let c = colour(m);
            let t: Vec<(f64, f64)> = points
                .iter()
                .filter(|p| p.method == m)
                .filter_map(|p| Some((p.n as f64, p.seconds?.max(1e-5))))
                .collect();
            tc.draw_series(LineSeries::new(t.clone(), c.stroke_width(2)))?
                .label(m)
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 18, y)], c.stroke_width(3))
                });
            tc.draw_series(t.iter().map(|&p| Circle::new(p, 3, c.filled())))?;
            let mem: Vec<(f64, f64)> = points
                .iter()
                .filter(|p| p.method == m)
                .filter_map(|p| Some((p.n as f64, (p.peak_mb? - p.base_mb?).max(0.01))))
                .collect();
            mc.draw_series(LineSeries::new(mem.clone(), c.stroke_width(2)))?;
            mc.draw_series(mem.iter().map(|&p| Circle::new(p, 3, c.filled())))?;
        }
        tc.configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .background_style(WHITE.mix(0.9))
            .border_style(RGBColor(180, 180, 180))
            .label_font(("sans-serif", 13))
            .draw()?;
        root.present()?;
    }
    save(svg, path)
}

/// Write every figure into `docs`.
pub fn all(r: &Results, docs: &Path) -> Fallible {
    heat_maps(r, &docs.join("evaluation-phase-transitions.svg"))?;
    accuracy(
        &r.crb,
        "Position RMSE / sqrt(CRB), two lines 3/N apart, N = 33, sigma and order given",
        &docs.join("evaluation-accuracy.svg"),
    )?;
    accuracy(
        &r.arrays,
        &format!(
            "Array: RMSE / sqrt(conditional CRB), coherent pair {}/M apart, M = {}, L = {}",
            crate::studies::ARRAY_SEPARATION,
            crate::studies::ARRAY_SENSORS,
            crate::studies::ARRAY_SNAPSHOTS
        ),
        &docs.join("evaluation-arrays.svg"),
    )?;
    resolution(r, &docs.join("evaluation-resolution.svg"))?;
    cost(&r.cost, &docs.join("evaluation-cost.svg"))?;
    Ok(())
}
