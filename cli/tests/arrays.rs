//! Arrays and snapshots on the command line: `simulate --sensors` files read back, bad snapshot files
//! named by line, options refused where they do not apply, exit codes, and the round trip simulate →
//! recover → compare → bound → plot.
//!
//! Scenes are invented (seeded `simulate --sensors` runs); sizes are small so that the file runs in
//! seconds.
mod common;

use common::*;
use finespike::eval::io_snapshots::{parse_array_truth, read_snapshots_text};
use serde_json::Value;

/// `simulate --sensors …` into `dir`: (snapshot file, truth).
fn array_scene(
    dir: &std::path::Path,
    name: &str,
    args: &[&str],
) -> (std::path::PathBuf, std::path::PathBuf) {
    simulate(dir, name, args)
}

#[test]
fn simulated_array_files_read_back_and_agree_with_their_truth() {
    let dir = tmpdir("arrsim");
    let (csv, truth) = array_scene(
        &dir,
        "a",
        &[
            "--sensors",
            "10",
            "--snapshots",
            "6",
            "--count",
            "2",
            "--separation",
            "1.5",
            "--snr",
            "10",
            "--missing-sensors",
            "3",
            "--spacing",
            "0.5",
            "--seed",
            "4",
        ],
    );
    let text = std::fs::read_to_string(&csv).unwrap();
    assert!(text.starts_with("n,snapshot,re,im\n"), "{text}");
    // 9 sensors (sensor 3 left out) × 6 snapshots, one row each.
    assert_eq!(text.lines().count(), 1 + 9 * 6);
    let data = read_snapshots_text(&text, "a.csv", None).unwrap();
    assert_eq!(
        (data.len(), data.band_len(), data.snapshot_count()),
        (9, 10, 6)
    );
    let t = parse_array_truth(&std::fs::read_to_string(&truth).unwrap(), "a.json").unwrap();
    assert_eq!(
        (t.sensors, t.snapshots, t.missing_sensors.clone()),
        (10, 6, vec![3])
    );
    assert_eq!((t.sigma, t.spacing, t.sources.len()), (1.0, Some(0.5), 2));
    // The closest pair is exactly 1.5 cells of 1/M apart.
    let p = t.positions();
    let gap = finespike::wrap_distance(p[0], p[1]);
    assert!((gap * 10.0 - 1.5).abs() < 1e-9, "{p:?}");
    // The data are the truth's noiseless record plus noise of level σ = 1: the residual's mean
    // square per entry is σ² within its sampling spread (54 complex entries: relative std 1/√54 ≈
    // 0.14; 0.5 and 1.6 are more than 3.5 standard deviations out).
    let clean = t.noiseless().unwrap();
    let r = (data.values() - clean.values()).norm_squared() / 54.0;
    assert!((0.5..1.6).contains(&r), "{r}");
    // The same seed draws the same scene; given frequencies and angles are recorded as given.
    let (csv2, _) = array_scene(
        &dir,
        "b",
        &[
            "--sensors",
            "10",
            "--snapshots",
            "6",
            "--count",
            "2",
            "--separation",
            "1.5",
            "--snr",
            "10",
            "--missing-sensors",
            "3",
            "--spacing",
            "0.5",
            "--seed",
            "4",
        ],
    );
    assert_eq!(std::fs::read_to_string(&csv2).unwrap(), text);
    let (_, tr) = array_scene(
        &dir,
        "c",
        &[
            "--sensors",
            "8",
            "--angles",
            "-30,10",
            "--spacing",
            "0.5",
            "--correlation",
            "coherent",
        ],
    );
    let t = parse_array_truth(&std::fs::read_to_string(&tr).unwrap(), "c.json").unwrap();
    let f: Vec<f64> = t.sources.iter().map(|s| s.frequency).collect();
    // Sorted by position on [0, 1): 10° (f = 0.0868) before −30° (f = −0.25, position 0.75).
    assert!(
        (f[0] - 0.5 * 10f64.to_radians().sin()).abs() < 1e-12,
        "{f:?}"
    );
    assert!((f[1] + 0.25).abs() < 1e-12, "{f:?}");
    assert_eq!(t.sigma, 0.0);
    assert_eq!(t.snapshots, 50);
}

#[test]
fn bad_snapshot_files_name_their_line() {
    let dir = tmpdir("arrbad");
    // (file, text, message fragment); every one is exit 3.
    let cases: &[(&str, &str, &str)] = &[
        (
            "missing_row.csv",
            "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n2,0,1,0\n0,1,1,0\n2,1,1,0\n",
            "line 6: found no row for sensor n = 1 in snapshot 1",
        ),
        (
            "duplicate.csv",
            "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n1,0,1,0\n",
            "line 4: found sensor n = 1 in snapshot 0 again (first on line 3)",
        ),
        (
            "text.csv",
            "n,snapshot,re,im\n0,0,1,0\n1,0,one,0\n",
            "line 3: found 'one' in column re, expected a number",
        ),
        (
            "nan.csv",
            "n,snapshot,re,im\n0,0,1,0\n1,0,1,nan\n",
            "line 3: found 'nan' in column im, expected a finite number",
        ),
        (
            "gap.csv",
            "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n0,2,1,0\n1,2,1,0\n",
            "found no row for snapshot 1",
        ),
        (
            "fraction.csv",
            "n,snapshot,re,im\n0,0.5,1,0\n",
            "line 2: found '0.5' in column snapshot",
        ),
    ];
    for (name, text, want) in cases {
        let path = write(&dir, name, text);
        let out = run(&["recover", "-i", s(&path), "--method", "esprit"]);
        assert_exit(&out, 3, name);
        let err = stderr(&out);
        assert!(
            err.contains(&format!("{name}, {want}")) || err.contains(want),
            "{name}: {err}"
        );
    }
}

#[test]
fn options_are_refused_where_they_do_not_apply() {
    let dir = tmpdir("arropts");
    let (csv, truth) = array_scene(
        &dir,
        "a",
        &["--sensors", "6", "--snapshots", "4", "--snr", "20"],
    );
    let (single, single_truth) = simulate(&dir, "one", &["--fc", "4", "--count", "1"]);
    // (arguments, exit code, message fragment).
    let cases: Vec<(Vec<&str>, i32, &str)> = vec![
        (
            vec!["recover", "-i", s(&csv), "--rate", "100"],
            2,
            "apply to single records",
        ),
        (
            vec!["recover", "-i", s(&csv), "--fc", "3"],
            2,
            "--fc 3 applies to Fourier coefficients",
        ),
        (
            vec!["recover", "-i", s(&csv), "--spacing", "-1"],
            2,
            "--spacing -1",
        ),
        (
            vec!["recover", "-i", s(&single), "--spacing", "0.5"],
            2,
            "single-record sample file",
        ),
        (
            vec!["recover", "-i", s(&csv), s(&single)],
            2,
            "recovered one per run",
        ),
        (
            vec!["recover", "-i", s(&csv), "--domain", "fourier"],
            3,
            "expects header 'k,snapshot,re,im'",
        ),
        (
            vec!["bound", "--truth", s(&truth), "--fc", "4"],
            2,
            "--fc applies to single records",
        ),
        (
            vec!["bound", "--truth", s(&single_truth), "--spacing", "0.5"],
            2,
            "applies to array truths",
        ),
        (
            vec!["compare", "-i", s(&csv), "--truth", s(&single_truth)],
            2,
            "must be an array truth",
        ),
        (
            vec![
                "plot",
                "-i",
                s(&csv),
                "--truth",
                s(&single_truth),
                "-o",
                "x.svg",
            ],
            2,
            "must be an array truth",
        ),
        (
            vec![
                "simulate",
                "--sensors",
                "4",
                "--count",
                "3",
                "--separation",
                "2",
                "--out",
                "x.csv",
                "--truth",
                "x.json",
            ],
            2,
            "count × separation must not exceed M = 4",
        ),
        (
            vec![
                "simulate",
                "--sensors",
                "1",
                "--frequencies",
                "0.1",
                "--out",
                "x.csv",
                "--truth",
                "x.json",
            ],
            2,
            "--sensors: 1: an array needs at least 2 sensors",
        ),
        (
            vec![
                "simulate",
                "--sensors",
                "4",
                "--correlation",
                "1",
                "--out",
                "x.csv",
                "--truth",
                "x.json",
            ],
            2,
            "use `coherent`",
        ),
        (
            vec![
                "simulate",
                "--sensors",
                "4",
                "--missing-sensors",
                "0,1,2",
                "--frequencies",
                "0.1",
                "--out",
                "x.csv",
                "--truth",
                "x.json",
            ],
            2,
            "at least two sensors must remain",
        ),
    ];
    for (args, code, want) in cases {
        let out = run(&args);
        assert_exit(&out, code, &args.join(" "));
        assert!(
            stderr(&out).contains(want),
            "{}: {}",
            args.join(" "),
            stderr(&out)
        );
    }
}

#[test]
fn a_method_that_takes_no_snapshots_is_refused_with_the_ones_that_do() {
    let dir = tmpdir("arrrefuse");
    let (csv, truth) = array_scene(
        &dir,
        "a",
        &["--sensors", "6", "--snapshots", "4", "--snr", "20"],
    );
    for m in ["grid", "greedy"] {
        let out = run(&["recover", "-i", s(&csv), "--method", m]);
        assert_exit(&out, 4, m);
        let err = stderr(&out);
        assert!(
            err.contains(&format!("method '{m}' takes one record at a time"))
                && err.contains(finespike::SNAPSHOT_METHODS),
            "{err}"
        );
        let out = run(&[
            "plot",
            "-i",
            s(&csv),
            "--method",
            m,
            "-o",
            s(&dir.join("p.svg")),
        ]);
        assert_exit(&out, 4, m);
    }
    // compare with only such methods: the table names the errors, exit 4.
    let out = run(&[
        "compare",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--methods",
        "grid,greedy",
    ]);
    assert_exit(&out, 4, "compare");
    let table = String::from_utf8_lossy(&out.stdout).into_owned();
    assert!(
        table.contains("grid: error: method 'grid' takes one record at a time"),
        "{table}"
    );
}

#[test]
fn bound_of_an_array_truth_is_the_conditional_bound() {
    let dir = tmpdir("arrbound");
    let (_, truth) = array_scene(
        &dir,
        "a",
        &[
            "--sensors",
            "16",
            "--snapshots",
            "20",
            "--frequencies",
            "0.1",
            "--snr",
            "0",
            "--spacing",
            "0.5",
        ],
    );
    let v: Value = serde_json::from_str(&ok(&run(&[
        "bound",
        "--truth",
        s(&truth),
        "--format",
        "json",
    ])))
    .unwrap();
    let src = &v["sources"][0];
    // One source: var f = 6σ²/((2π)² L P̂ M(M² − 1)) (Stoica & Nehorai 1989 reduced to one source;
    // the single-tone bound of Rife & Boorstyn 1974 with L snapshots), P̂ the drawn power.
    let p = src["sample_power"].as_f64().unwrap();
    let want = (6.0 / ((2.0 * std::f64::consts::PI).powi(2) * 20.0 * p * 16.0 * 255.0)).sqrt();
    let got = src["crb_std"].as_f64().unwrap();
    assert!((got / want - 1.0).abs() < 1e-9, "{got} vs {want}");
    // std θ = std f / (d cos θ), θ = asin(0.1/0.5).
    let theta = (0.2f64).asin();
    let a = src["crb_std_angle_deg"].as_f64().unwrap();
    assert!((a - (want / (0.5 * theta.cos())).to_degrees()).abs() < 1e-9 * a);
    let text = ok(&run(&["bound", "--truth", s(&truth)]));
    assert!(
        text.contains("resolution 1/M = 0.0625 cycles/sensor (7.18° at broadside)"),
        "{text}"
    );
    assert!(text.contains("11.54°"), "{text}");
    // Exact data: the bound needs a σ.
    let (_, exact) = array_scene(&dir, "e", &["--sensors", "6", "--frequencies", "0.1"]);
    let out = run(&["bound", "--truth", s(&exact)]);
    assert_exit(&out, 2, "exact truth");
    assert!(stderr(&out).contains("give --sigma"));
    assert!(ok(&run(&["bound", "--truth", s(&exact), "--sigma", "0.1"])).contains("std f"));
}
