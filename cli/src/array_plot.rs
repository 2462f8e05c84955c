//! `plot` of a snapshot file: the spatial spectrum (periodogram averaged over the snapshots) with the
//! recovered and the true sources, in angle with a spacing or in spatial frequency without one.

use crate::array_input::{self, describe, warnings};
use crate::plot::{choose_view, plot_columns, Levels, View};
use crate::show::{num, sig};
use crate::{
    configure, file_name, input, requested_noise, shown, write_output, Failure, MethodArgs,
};
use finespike::eval::io_snapshots::ArrayTruth;
use finespike::{ArrayEstimate, Complex64, DualPolynomial, Snapshots};
use plotters::prelude::*;
use std::path::Path;

// Our palette, shared in spirit with the single-record plot: slate data, green truth, rust estimate.
const DATA: RGBColor = RGBColor(84, 104, 132);
const TRUE: RGBColor = RGBColor(46, 139, 87);
const FOUND: RGBColor = RGBColor(196, 78, 24);
const INK: RGBColor = RGBColor(35, 35, 35);
const ALERT: RGBColor = RGBColor(200, 30, 30);

/// The horizontal axis: the signed spatial frequency in cycles per sensor, or with a spacing `d` the
/// angle θ in degrees from broadside (`f = d sin θ`).
#[derive(Clone, Copy)]
struct Axis {
    spacing: Option<f64>,
}

impl Axis {
    /// The whole axis.
    fn full(self) -> (f64, f64) {
        match self.spacing {
            Some(_) => (-90.0, 90.0),
            None => (-0.5, 0.5),
        }
    }

    /// The spatial frequency at axis value `x`.
    fn frequency(self, x: f64) -> f64 {
        match self.spacing {
            Some(d) => d * x.to_radians().sin(),
            None => x,
        }
    }

    /// The axis value of a source at signed frequency `f` with angle `angle_deg` (`None`: not on the
    /// axis, outside the visible region).
    fn x(self, f: f64, angle_deg: Option<f64>) -> Option<f64> {
        match self.spacing {
            Some(_) => angle_deg,
            None => Some(f),
        }
    }

    /// The part of the axis `--view` asks for: the closest pair of sources is framed in the
    /// spatial frequency `f`, with the array's resolution `1/M` (`m` sensors spanned), by the rule
    /// of the single-record plot, and mapped to angles through `θ = asin(f/d)`.
    fn view(self, view: View, est: &ArrayEstimate, m: usize, width: u32) -> (f64, f64) {
        let edge = self.spacing.map_or(0.5, |d| d.min(0.5));
        let fs: Vec<f64> = est
            .sources
            .iter()
            .map(|s| s.frequency)
            .filter(|f| f.abs() <= edge)
            .collect();
        let (f0, f1) = choose_view(
            view,
            &fs,
            (-edge, edge),
            1.0 / m as f64,
            plot_columns(width),
        );
        match self.spacing {
            _ if (f0, f1) == (-edge, edge) => self.full(),
            Some(d) => (
                (f0 / d).clamp(-1.0, 1.0).asin().to_degrees(),
                (f1 / d).clamp(-1.0, 1.0).asin().to_degrees(),
            ),
            None => (f0, f1),
        }
    }

    fn label(self) -> &'static str {
        match self.spacing {
            Some(_) => "angle θ from broadside (degrees)",
            None => "spatial frequency f (cycles per sensor)",
        }
    }
}

/// The average periodogram `P(f) = (1/L) Σ_t |(1/|K|) Σ_n x_t[n] exp(−i2πfn)|²` on the grid
/// `f = j/m`, `j = 0..m`: a source of power `P` alone shows as a peak of height about `P` over the
/// noise floor `σ²/|K|` (the conventional beamformer's output power).
fn spatial_spectrum(data: &Snapshots, m: usize) -> Vec<f64> {
    let idx = data.indices();
    let kmin = idx[0];
    let span = (idx[idx.len() - 1] - kmin + 1) as usize;
    let scale = (data.len() as f64).powi(2) * data.snapshot_count() as f64;
    let mut acc = vec![0.0; m];
    for t in 0..data.snapshot_count() {
        let mut coeffs = vec![Complex64::new(0.0, 0.0); span];
        for (i, &k) in idx.iter().enumerate() {
            coeffs[(k - kmin) as usize] = data.values()[(i, t)];
        }
        for (a, v) in acc
            .iter_mut()
            .zip(DualPolynomial::new(kmin, coeffs).grid_values(m))
        {
            *a += v.norm_sqr() / scale;
        }
    }
    acc
}

/// `values` (on the grid `j/m` of the torus) at frequency `f`, linearly interpolated.
fn at(values: &[f64], f: f64) -> f64 {
    let m = values.len();
    let u = f.rem_euclid(1.0) * m as f64;
    let j = u.floor() as usize % m;
    let w = u - u.floor();
    values[j] * (1.0 - w) + values[(j + 1) % m] * w
}

fn db(p: f64) -> f64 {
    10.0 * p.max(1e-300).log10()
}

/// The vertical scale of the figure: powers as they are (`Scale(true)`, `--levels linear`) or in
/// decibels `10·log10 P`.
#[derive(Clone, Copy)]
struct Scale(bool);

impl Scale {
    /// A power on this scale.
    fn y(self, p: f64) -> f64 {
        if self.0 {
            p
        } else {
            db(p)
        }
    }

    /// The unit in labels: `dB`, or `linear`.
    fn unit(self) -> &'static str {
        if self.0 {
            "linear"
        } else {
            "dB"
        }
    }

    /// The vertical range from the lowest and highest values drawn: 60 dB under the top at most,
    /// or from zero on the linear scale.
    fn range(self, floor: f64, top: f64) -> (f64, f64) {
        if self.0 {
            (0.0, 1.12 * top.max(f64::MIN_POSITIVE))
        } else {
            ((floor - 3.0).max(top - 60.0), top + 8.0)
        }
    }
}

fn draw_err<E: std::fmt::Display>(e: E) -> Failure {
    Failure::Output(format!("cannot draw the plot: {e}"))
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
    if !current.is_empty() {
        lines.push(current);
    }
    lines
}

/// How the figure of a snapshot file is framed: the options of `plot` it honours.
pub struct Look<'a> {
    /// `--range FROM,TO` on the figure's axis (degrees with a spacing, else cycles per sensor).
    pub range: Option<&'a [f64]>,
    /// `--view` when no range is given: the closest pair of sources is framed in about ten
    /// resolution cells `1/M`.
    pub view: View,
    /// `--levels`: `linear` draws the powers as they are, `db` and `auto` in decibels.
    pub levels: Levels,
    /// `--width` in pixels.
    pub width: u32,
}

/// `plot` on a snapshot file: estimate, then draw the SVG to `out`.
pub fn run(
    samples: &input::SampleArgs,
    method: &MethodArgs,
    truth: Option<&Path>,
    look: Look<'_>,
    out: &Path,
) -> Result<(), Failure> {
    let Look {
        range,
        view,
        levels,
        width,
    } = look;
    let noise = requested_noise(method.sigma)?;
    let path = samples.path()?;
    let data = crate::array_recover::load(samples, path)?;
    let truth: Option<ArrayTruth> = match truth {
        Some(t) if array_input::is_array_truth_file(t) => Some(array_input::load_array_truth(t)?),
        Some(t) => {
            return Err(Failure::Usage(format!(
                "{} is a snapshot file: its truth must be an array truth (\"kind\": \"array\"), \
                 but {} is not one",
                shown(path),
                shown(t)
            )))
        }
        None => None,
    };
    let axis = Axis {
        spacing: data.spacing(),
    };
    let (lo, hi) = axis.full();
    let range = match range {
        None => None,
        Some([from, to]) if lo <= *from && from < to && *to <= hi => Some((*from, *to)),
        Some(r) => {
            return Err(Failure::Usage(format!(
                "--range {r:?}: expected FROM,TO with {} <= FROM < TO <= {} ({})",
                num(lo),
                num(hi),
                axis.label()
            )))
        }
    };
    if !(400..=6000).contains(&width) {
        return Err(Failure::Usage(format!(
            "--width {width}: expected 400..=6000 pixels"
        )));
    }
    let estimator = configure(method, noise)?;
    let estimate = estimator
        .estimate_snapshots(&data)
        .map_err(Failure::Estimate)?;
    for w in warnings(&estimate) {
        eprintln!("warning: {w}");
    }
    let frame = range.unwrap_or_else(|| axis.view(view, &estimate, data.band_len(), width));
    let scale = Scale(levels == Levels::Linear);
    let svg = render(
        path,
        &data,
        truth.as_ref(),
        &estimate,
        (axis, scale),
        frame,
        width,
    )?;
    write_output(out, &svg)?;
    eprintln!("wrote {}", shown(out));
    Ok(())
}

/// The caption lines (text, whether it is a caution).
fn caption(
    path: &Path,
    data: &Snapshots,
    truth: Option<&ArrayTruth>,
    est: &ArrayEstimate,
    outside: usize,
    chars: usize,
) -> Vec<(String, bool)> {
    let mut raw: Vec<(String, bool)> =
        vec![(format!("{}: {}.", file_name(path), describe(data)), false)];
    let n = est.sources.len();
    let sep = est
        .diagnostics
        .separation_cells
        .map_or_else(String::new, |c| {
            format!(", closest pair {} resolution cells (1/M) apart", sig(c, 3))
        });
    raw.push((
        format!(
            "Method {}: {}, {n} source{} recovered{sep}. The curve is the periodogram averaged over \
             the snapshots (conventional beamformer): sources closer than about 1/M merge into one \
             peak there; the stems are the method's estimates.",
            est.method,
            est.status,
            if n == 1 { "" } else { "s" }
        ),
        false,
    ));
    if outside > 0 {
        raw.push((
            format!(
                "The view leaves {outside} of the {n} recovered sources out (--view whole or \
                 --range shows them)."
            ),
            false,
        ));
    }
    if let Some(t) = truth {
        let tr: Vec<f64> = t.positions();
        let m = data.band_len();
        let line =
            match (crate::array_compare::score(est, t, None, m), tr.len()) {
                (Ok(s), k) => format!(
                "Truth: {k} source{}; found {}, missed {}, spurious {} (matched within 0.5/M){}.",
                if k == 1 { "" } else { "s" },
                s.found,
                s.missed,
                s.spurious,
                s.max_error_cells
                    .map_or_else(String::new, |e| format!(", largest error {} cells", sig(e, 2)))
            ),
                (Err(e), _) => format!("Truth: not scored ({e})."),
            };
        raw.push((line, false));
    }
    let cautions = warnings(est);
    if cautions.is_empty() {
        raw.push(("No warnings.".into(), false));
    }
    raw.extend(
        cautions
            .into_iter()
            .map(|w| (format!("WARNING: {w}."), true)),
    );
    raw.into_iter()
        .flat_map(|(t, alert)| wrap(&t, chars).into_iter().map(move |l| (l, alert)))
        .collect()
}

fn render(
    path: &Path,
    data: &Snapshots,
    truth: Option<&ArrayTruth>,
    est: &ArrayEstimate,
    (axis, scale): (Axis, Scale),
    (x0, x1): (f64, f64),
    width: u32,
) -> Result<String, Failure> {
    // At least 32 grid points per resolution cell, and enough for the view.
    let m = (32 * data.band_len())
        .max(4096)
        .next_power_of_two()
        .min(1 << 18);
    let spectrum = spatial_spectrum(data, m);
    let points = (4 * width as usize).max(800);
    let curve: Vec<(f64, f64)> = (0..=points)
        .map(|i| {
            let x = x0 + (x1 - x0) * i as f64 / points as f64;
            (x, scale.y(at(&spectrum, axis.frequency(x))))
        })
        .collect();
    let on_view = |x: Option<f64>| x.filter(|x| (x0..=x1).contains(x));
    let found: Vec<(f64, f64)> = est
        .sources
        .iter()
        .filter_map(|s| on_view(axis.x(s.frequency, s.angle_deg)).map(|x| (x, scale.y(s.power))))
        .collect();
    let spacing = data.spacing();
    let true_pts: Vec<(f64, f64)> = truth
        .map(|t| {
            t.sources
                .iter()
                .filter_map(|s| {
                    let angle = spacing
                        .filter(|d| s.frequency.abs() <= *d)
                        .map(|d| (s.frequency / d).asin().to_degrees());
                    on_view(axis.x(s.frequency, angle)).map(|x| (x, scale.y(s.sample_power)))
                })
                .collect()
        })
        .unwrap_or_default();
    let top = curve
        .iter()
        .map(|p| p.1)
        .chain(found.iter().map(|p| p.1))
        .chain(true_pts.iter().map(|p| p.1))
        .fold(f64::NEG_INFINITY, f64::max);
    let floor = curve.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
    let (ylo, yhi) = scale.range(floor, top);
    let outside = est.sources.len() - found.len();
    let lines = caption(path, data, truth, est, outside, (width as usize - 48) / 7);
    let top_h = 440u32;
    let height = top_h + 24 * lines.len() as u32 + 24;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let (upper, cap) = root.split_vertically(top_h);
        let mut chart = ChartBuilder::on(&upper)
            .margin(12)
            .margin_right(40)
            .caption(
                format!(
                    "{} — spatial spectrum, {} estimate",
                    file_name(path),
                    est.method
                ),
                ("sans-serif", 22).into_font().color(&INK),
            )
            .x_label_area_size(50)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, ylo..yhi)
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc(axis.label())
            .y_desc(format!("power ({})", scale.unit()))
            .x_label_formatter(&|x| sig(*x, 4))
            .y_label_formatter(&|y| sig(*y, 4))
            .axis_desc_style(("sans-serif", 16))
            .label_style(("sans-serif", 14))
            .light_line_style(RGBColor(238, 238, 238))
            .bold_line_style(RGBColor(215, 215, 215))
            .draw()
            .map_err(draw_err)?;
        chart
            .draw_series(LineSeries::new(curve, DATA.stroke_width(2)))
            .map_err(draw_err)?
            .label(format!(
                "average periodogram over the snapshots ({})",
                scale.unit()
            ))
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], DATA.stroke_width(2)));
        if !true_pts.is_empty() {
            chart
                .draw_series(true_pts.iter().map(|&(x, h)| {
                    PathElement::new(vec![(x, ylo), (x, h)], TRUE.mix(0.55).stroke_width(6))
                }))
                .map_err(draw_err)?
                .label(format!("true sources (drawn power, {})", scale.unit()))
                .legend(|(x, y)| {
                    EmptyElement::at((x + 11, y)) + Circle::new((0, 0), 7, TRUE.stroke_width(2))
                });
            chart
                .draw_series(
                    true_pts
                        .iter()
                        .map(|&(x, h)| Circle::new((x, h), 7, TRUE.stroke_width(2))),
                )
                .map_err(draw_err)?;
        }
        chart
            .draw_series(
                found
                    .iter()
                    .map(|&(x, h)| PathElement::new(vec![(x, ylo), (x, h)], FOUND.stroke_width(2))),
            )
            .map_err(draw_err)?
            .label(format!(
                "recovered sources, power {} ({})",
                scale.unit(),
                est.method
            ))
            .legend(|(x, y)| {
                EmptyElement::at((x + 11, y)) + Circle::new((0, 0), 4, FOUND.filled())
            });
        chart
            .draw_series(
                found
                    .iter()
                    .map(|&(x, h)| Circle::new((x, h), 4, FOUND.filled())),
            )
            .map_err(draw_err)?;
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(RGBColor(180, 180, 180))
            .label_font(("sans-serif", 14))
            .draw()
            .map_err(draw_err)?;
        for (i, (text, alert)) in lines.iter().enumerate() {
            let colour = if *alert { ALERT } else { INK };
            cap.draw_text(
                text,
                &("sans-serif", 16).into_font().color(&colour),
                (24, 12 + 24 * i as i32),
            )
            .map_err(draw_err)?;
        }
        root.present().map_err(draw_err)?;
    }
    // As in the single-record plot: `opacity="1"` is the SVG default, and dropping it keeps some
    // renderers from filling open polylines.
    Ok(svg.replace(" opacity=\"1\"", ""))
}

#[cfg(test)]
mod tests {
    use super::*;
    use finespike::eval::array_scene::ArrayScene;

    #[test]
    fn the_spectrum_of_one_exact_source_peaks_at_its_power() {
        // One source at f = 0.25 (a grid point), no noise: the beamformer's gain is 1 at the source,
        // so P(0.25) is the source's mean power, and the first null of an 8-sensor array lies 1/8
        // away (the array factor sin(πMΔ)/(M sin(πΔ)) vanishes at Δ = 1/M).
        let draw = ArrayScene::new(8, 3, &[0.25]).unwrap().draw().unwrap();
        let spectrum = spatial_spectrum(&draw.data, 1 << 12);
        let power: f64 = draw.amplitudes.iter().map(|v| v.norm_sqr()).sum::<f64>() / 3.0;
        assert!((at(&spectrum, 0.25) / power - 1.0).abs() < 1e-12);
        assert!(at(&spectrum, 0.375) < 1e-24 * power);
        // Periodic in f, and the angle axis maps θ to f = d sin θ.
        assert!((at(&spectrum, -0.75) / power - 1.0).abs() < 1e-12);
        let axis = Axis { spacing: Some(0.5) };
        assert!((axis.frequency(30.0) - 0.25).abs() < 1e-15);
    }
}

#[cfg(test)]
mod render_tests {
    use super::*;
    use finespike::eval::array_scene::ArrayScene;
    use finespike::eval::array_scene::SourceCorrelation;
    use finespike::eval::io_snapshots::ArrayTruth;

    /// An invented scene drawn with the true positions standing in for an estimate (the figure is
    /// under test here, not a method).
    fn figure(spacing: f64) -> String {
        let positions = [0.1, 0.1 + 3.0 / 12.0, -0.3];
        let draw = ArrayScene::new(12, 30, &positions)
            .unwrap()
            .with_snr_db(15.0)
            .unwrap()
            .with_spacing(spacing)
            .unwrap()
            .with_seed(9)
            .draw()
            .unwrap();
        let truth =
            ArrayTruth::from_draw(&draw, 12, Some(15.0), SourceCorrelation::Uncorrelated, 9);
        let est =
            ArrayEstimate::assemble("test", &draw.data, &positions, finespike::Status::Solved)
                .unwrap()
                .noise(Some(1.0), false, None);
        let axis = Axis {
            spacing: Some(spacing),
        };
        let svg = render(
            Path::new("scene.csv"),
            &draw.data,
            Some(&truth),
            &est,
            (axis, Scale(false)),
            axis.full(),
            1100,
        )
        .unwrap_or_else(|_| panic!("the figure could not be drawn"));
        if let Ok(dir) = std::env::var("FINESPIKE_PLOT_DUMP") {
            std::fs::write(format!("{dir}/array_{spacing}.svg"), &svg).unwrap();
        }
        svg
    }

    #[test]
    fn the_figure_is_in_angle_and_says_when_angles_are_ambiguous() {
        let svg = figure(0.5);
        assert!(svg.starts_with("<svg"), "{}", &svg[..80]);
        assert!(svg.contains("angle θ from broadside (degrees)"));
        assert!(svg.contains("found 3, missed 0, spurious 0"));
        assert!(svg.contains("No warnings."));
        let svg = figure(0.8);
        assert!(
            svg.contains("WARNING: AMBIGUOUS ANGLES"),
            "ambiguity is said in the caption"
        );
    }

    #[test]
    fn the_closest_view_frames_the_closest_pair_in_frequency_and_in_angle() {
        // Two sources 0.7/M apart near f = 0.2 and one far away at f = −0.3, 64 sensors: the
        // closest view holds the pair (with about ten cells 1/M around it) and leaves the third out.
        // (With a dozen sensors ten cells are most of the axis, and the view stays whole.)
        let positions = [0.2, 0.2 + 0.7 / 64.0, -0.3];
        let draw = ArrayScene::new(64, 20, &positions)
            .unwrap()
            .with_seed(3)
            .draw()
            .unwrap();
        let est =
            ArrayEstimate::assemble("test", &draw.data, &positions, finespike::Status::Solved)
                .unwrap()
                .noise(Some(1.0), false, None);
        let plain = Axis { spacing: None };
        let (x0, x1) = plain.view(View::Closest, &est, 64, 1100);
        assert!(x0 < 0.2 && 0.2 + 0.7 / 64.0 < x1, "{x0} {x1}");
        assert!(x0 > -0.3 && x1 - x0 < 0.5, "{x0} {x1}");
        assert_eq!(plain.view(View::Whole, &est, 64, 1100), plain.full());
        // With half-wavelength spacing the frame is in degrees, θ = asin(f/d).
        let angled = Axis { spacing: Some(0.5) };
        let (a0, a1) = angled.view(View::Closest, &est, 64, 1100);
        let (t0, t1) = (
            (0.2f64 / 0.5).asin().to_degrees(),
            ((0.2 + 0.7 / 64.0) / 0.5f64).asin().to_degrees(),
        );
        assert!(a0 < t0 && t1 < a1 && a0 > (-0.3f64 / 0.5).asin().to_degrees());
    }

    #[test]
    fn the_linear_scale_draws_powers_as_they_are() {
        assert_eq!(Scale(true).y(4.0), 4.0);
        assert!((Scale(false).y(100.0) - 20.0).abs() < 1e-12);
        assert_eq!(Scale(true).range(-1.0, 2.0).0, 0.0);
        assert_eq!(Scale(false).range(-100.0, 20.0), (-40.0, 28.0));
    }
}
