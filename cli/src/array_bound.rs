//! `bound` on an array truth: the Cramér–Rao bound of each source's position (spatial frequency) and,
//! with a spacing, of its angle.

use crate::array_input::{describe, load_array_truth, with_spacing};
use crate::show::{self, exact, num, sig};
use crate::{shown, Failure, ReportFormat};
use finespike::eval::io_snapshots::ArrayTruth;
use finespike::{Snapshots, PROVEN_SEPARATION_FC};
use serde_json::json;
use std::path::Path;

/// One source's bound.
struct Row {
    frequency: f64,
    angle_deg: Option<f64>,
    power: f64,
    sample_power: f64,
    /// Standard deviation of the spatial frequency, cycles per sensor.
    std_f: f64,
    /// The same in degrees, with a spacing and inside the visible region.
    std_angle: Option<f64>,
    /// The stochastic bound of the spatial frequency, cycles per sensor.
    std_sto: Option<f64>,
    /// The same in degrees.
    std_angle_sto: Option<f64>,
}

/// `std θ = std f / (d cos θ)` in degrees (from `f = d sin θ`), for `|θ| < 90°`.
fn angle_std(std_f: f64, spacing: Option<f64>, angle_deg: Option<f64>) -> Option<f64> {
    let (d, theta) = (spacing?, angle_deg?);
    let c = theta.to_radians().cos();
    (c > 0.0).then(|| (std_f / (d * c)).to_degrees())
}

/// The bound of the array truth at `path` (σ from the truth unless `sigma` is given, spacing from the
/// truth unless `spacing` is given).
pub fn run(
    path: &Path,
    sigma: Option<f64>,
    spacing: Option<f64>,
    format: ReportFormat,
) -> Result<(), Failure> {
    let truth: ArrayTruth = load_array_truth(path)?;
    let sigma = match (sigma, truth.sigma) {
        (Some(s), _) if s > 0.0 => s,
        (Some(s), _) => {
            return Err(Failure::Usage(format!(
                "--sigma {s}: the bound needs a positive noise level (for σ = 0 every bound is 0)"
            )))
        }
        (None, s) if s > 0.0 => s,
        (None, _) => {
            return Err(Failure::Usage(
                "the truth file records sigma = 0 (exact data: every bound is 0): give --sigma"
                    .into(),
            ))
        }
    };
    let data: Snapshots = truth.noiseless().map_err(Failure::Input)?;
    let data = with_spacing(data, spacing.or(truth.spacing))?;
    let d = data.spacing();
    let var =
        finespike::conditional_crb(&data, &truth.positions(), &truth.amplitude_matrix(), sigma)
            .map_err(Failure::Input)?;
    // The stochastic bound for the scene's source covariance (None where it does not exist).
    let sto: Vec<Option<f64>> = match truth.stochastic_crb(sigma) {
        Ok(v) => v.iter().map(|x| Some(x.sqrt())).collect(),
        Err(_) => vec![None; var.len()],
    };
    let rows: Vec<Row> = truth
        .sources
        .iter()
        .zip(&var)
        .zip(&sto)
        .map(|((s, v), st)| {
            let angle_deg = d
                .filter(|d| s.frequency.abs() <= *d)
                .map(|d| (s.frequency / d).asin().to_degrees());
            Row {
                frequency: s.frequency,
                angle_deg,
                power: s.power,
                sample_power: s.sample_power,
                std_f: v.sqrt(),
                std_angle: angle_std(v.sqrt(), d, angle_deg),
                std_sto: *st,
                std_angle_sto: st.and_then(|x| angle_std(x, d, angle_deg)),
            }
        })
        .collect();
    let m = data.band_len() as f64;
    let text = match format {
        ReportFormat::Json => {
            let sources: Vec<_> = rows
                .iter()
                .map(|r| {
                    json!({
                        "frequency": r.frequency,
                        "angle_deg": r.angle_deg,
                        "power": r.power,
                        "sample_power": r.sample_power,
                        "crb_std": r.std_f,
                        "crb_std_cells": r.std_f * m,
                        "crb_std_angle_deg": r.std_angle,
                        "crb_std_stochastic": r.std_sto,
                        "crb_std_stochastic_angle_deg": r.std_angle_sto,
                    })
                })
                .collect();
            serde_json::to_string_pretty(&json!({
                "truth": shown(path),
                "bound": "conditional (Stoica & Nehorai 1989) and stochastic (1990)",
                "sigma": sigma,
                "sensors": truth.sensors,
                "measured": data.len(),
                "snapshots": data.snapshot_count(),
                "spacing": d,
                "sources": sources,
            }))
            .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
                + "\n"
        }
        ReportFormat::Csv => {
            let mut out = String::from(
                "frequency,angle_deg,power,sample_power,crb_std,crb_std_cells,crb_std_angle_deg,\
                 crb_std_stochastic,crb_std_stochastic_angle_deg\n",
            );
            let opt = |x: Option<f64>| x.map_or_else(String::new, exact);
            for r in &rows {
                out.push_str(&format!(
                    "{},{},{},{},{},{},{},{},{}\n",
                    exact(r.frequency),
                    opt(r.angle_deg),
                    exact(r.power),
                    exact(r.sample_power),
                    exact(r.std_f),
                    exact(r.std_f * m),
                    opt(r.std_angle),
                    opt(r.std_sto),
                    opt(r.std_angle_sto)
                ));
            }
            out
        }
        ReportFormat::Text => text(path, &truth, &data, sigma, &rows),
    };
    crate::emit(&text)?;
    Ok(())
}

fn text(path: &Path, truth: &ArrayTruth, data: &Snapshots, sigma: f64, rows: &[Row]) -> String {
    let m = data.band_len() as f64;
    let mut out = format!(
        "Cramér–Rao bounds for the {} sources of {}: conditional for the drawn amplitudes (std; \
         Stoica & Nehorai 1989) and stochastic for the scene's\nsource covariance (sto; Stoica & \
         Nehorai 1990)\narray: {}\nnoise: σ = {} (E|n|² = σ² per sensor and snapshot)\n",
        rows.len(),
        shown(path),
        describe(data),
        num(sigma),
    );
    let mut f = truth.positions();
    f.sort_by(f64::total_cmp);
    let sep = f
        .iter()
        .zip(f.iter().cycle().skip(1))
        .map(|(a, b)| finespike::wrap_distance(*a, *b))
        .fold(f64::INFINITY, f64::min);
    if f.len() > 1 {
        let cells = sep * m;
        let fc = sep * (m - 1.0) / 2.0;
        out.push_str(&format!(
            "closest pair: {} resolution cells (1/M) = {}/fc apart{}\n",
            sig(cells, 3),
            sig(fc, 3),
            if cells < 1.0 {
                " — UNDER-RESOLVED: closer than the array's resolution 1/M; the bounds grow fast as \
                 sources close in"
            } else if fc < PROVEN_SEPARATION_FC {
                " — resolved, but below the proven exact-recovery threshold of TV"
            } else {
                ""
            }
        ));
    }
    out.push('\n');
    let with_angles = data.spacing().is_some();
    let mut head = vec![
        "#",
        "frequency",
        "power",
        "drawn",
        "std f",
        "std f·M",
        "sto f",
    ];
    if with_angles {
        head.splice(2..2, ["angle"]);
        head.extend(["std θ", "sto θ"]);
    }
    let table: Vec<Vec<String>> = rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let mut row = vec![
                (i + 1).to_string(),
                sig(r.frequency, 6),
                num(r.power),
                num(r.sample_power),
                num(r.std_f),
                num(r.std_f * m),
                r.std_sto.map_or_else(|| "-".into(), num),
            ];
            if with_angles {
                row.insert(
                    2,
                    r.angle_deg
                        .map_or_else(|| "-".into(), |a| format!("{}°", sig(a, 4))),
                );
                for a in [r.std_angle, r.std_angle_sto] {
                    row.push(a.map_or_else(|| "-".into(), |a| format!("{}°", num(a))));
                }
            }
            row
        })
        .collect();
    out.push_str(&show::table(&head, &table));
    out.push_str(
        "\nfrequency: spatial frequency in cycles per sensor; power: the scene's source power; drawn: the \
         power of the\namplitudes drawn in this scene, which the bound uses; std f: one standard \
         deviation of the spatial frequency\n(cycles per sensor); std f·M: the same in resolution \
         cells 1/M",
    );
    out.push_str(
        ";\nsto f: the stochastic bound, for amplitudes random with the scene's source covariance \
         (std f is for the amplitudes drawn, so the draw\nmoves the two apart too); a \
         maximum-likelihood estimator attains it as L grows",
    );
    if with_angles {
        out.push_str("; std θ, sto θ: of the angle, std f / (D cos θ), growing towards endfire");
    }
    out.push_str(".\n");
    if data.spacing().is_some_and(|d| d > 0.5) {
        out.push_str(
            "AMBIGUOUS ANGLES: the spacing is above 1/2 wavelength, so each spatial frequency has \
             more than one direction of arrival (grating lobes); the angles are the ones nearest \
             broadside.\n",
        );
    }
    out
}
