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
    // In the scene's order (the first is the reference of the correlation): −30° (f = −0.25),
    // then 10° (f = 0.5 sin 10° = 0.0868).
    assert!((f[0] + 0.25).abs() < 1e-12, "{f:?}");
    assert!(
        (f[1] - 0.5 * 10f64.to_radians().sin()).abs() < 1e-12,
        "{f:?}"
    );
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
            "give one kind per run",
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

/// `compare --format json` of `methods` on a snapshot file against its truth: (method, score) rows.
fn scores(csv: &std::path::Path, truth: &std::path::Path, methods: &str) -> Vec<(String, Value)> {
    let out = run(&[
        "compare",
        "-i",
        s(csv),
        "--truth",
        s(truth),
        "--methods",
        methods,
        "--format",
        "json",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    v["methods"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| {
            (
                m["method"].as_str().unwrap().to_string(),
                m["score"].clone(),
            )
        })
        .collect()
}

/// Every true source found within 4 conditional-CRB standard deviations, nothing significant
/// spurious (the acceptance rule).
fn assert_accepted(rows: &[(String, Value)], sources: u64) {
    for (m, sc) in rows {
        assert_eq!(sc["found"].as_u64(), Some(sources), "{m}: {sc}");
        assert_eq!(sc["missed"].as_u64(), Some(0), "{m}: {sc}");
        assert_eq!(sc["spurious_significant"].as_u64(), Some(0), "{m}: {sc}");
        let e = sc["max_error_crb"].as_f64().unwrap();
        assert!(e < 4.0, "{m}: largest error {e} CRB standard deviations");
        // Errors are distances: the RMS lies between 0 and the largest.
        let rms = sc["rms_error_crb"].as_f64().unwrap();
        assert!((0.0..=e).contains(&rms), "{m}: {sc}");
    }
}

#[test]
fn simulate_recover_compare_plot_round_trip() {
    let dir = tmpdir("arre2e");
    // The first acceptance case (invented, seeded): 16 sensors half a wavelength apart, 50
    // snapshots, 3 uncorrelated sources at 10 dB; the order unknown and σ estimated.
    let (csv, truth) = array_scene(
        &dir,
        "a",
        &[
            "--sensors",
            "16",
            "--snapshots",
            "50",
            "--count",
            "3",
            "--separation",
            "2",
            "--snr",
            "10",
            "--spacing",
            "0.5",
            "--seed",
            "1",
        ],
    );
    let out = run(&[
        "recover",
        "-i",
        s(&csv),
        "--method",
        "esprit",
        "--spacing",
        "0.5",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert_eq!(v["method"], "esprit");
    let sources = v["sources"].as_array().unwrap();
    assert_eq!(sources.len(), 3, "{v}");
    for src in sources {
        assert_eq!(src["amplitudes"].as_array().unwrap().len(), 50);
        for key in [
            "angle_deg",
            "crb_std",
            "crb_std_angle_deg",
            "crb_std_stochastic",
            "power",
        ] {
            assert!(
                src[key].as_f64().is_some_and(|x| x.is_finite()),
                "{key}: {src}"
            );
        }
    }
    let summary = stderr(&out);
    for want in [
        "16 sensors (n = 0..15), 50 snapshots, spacing 0.5 wavelengths",
        "resolution 1/M = 0.0625 cycles/sensor",
        "3 sources recovered; closest pair",
        "#1: angle ",
        "CRB std ",
        "(estimated from the data",
    ] {
        assert!(summary.contains(want), "{want}: {summary}");
    }
    assert_accepted(&scores(&csv, &truth, "sdp,esprit,music,pencil"), 3);
    // The CSV forms: one row per source, one per method.
    let rows = ok(&run(&[
        "recover",
        "-i",
        s(&csv),
        "-m",
        "esprit",
        "--format",
        "csv",
        "-q",
    ]));
    assert_eq!(rows.lines().count(), 4, "{rows}");
    assert!(rows.starts_with("position,frequency,angle_deg,power,crb_std,"));
    let table = ok(&run(&[
        "compare",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--methods",
        "esprit,grid",
        "--format",
        "csv",
    ]));
    let lines: Vec<&str> = table.lines().collect();
    assert_eq!(lines.len(), 3, "{table}");
    assert!(lines[1].starts_with("esprit,solved,3,3,0,0,0,"), "{table}");
    assert!(lines[2].starts_with("grid,,") && lines[2].contains("takes one record at a time"));
    // The spatial spectrum, in angle, scored against the truth in its caption.
    let svg = dir.join("a.svg");
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--spacing",
        "0.5",
        "-m",
        "esprit",
        "-o",
        s(&svg),
    ]);
    ok(&out);
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.contains("angle θ from broadside (degrees)"));
    assert!(
        text.contains("found 3, missed 0, spurious 0"),
        "caption scores the truth"
    );
    assert!(text.contains("power (dB)"));
    // --levels linear draws the powers as they are; --view closest frames the closest pair (at
    // 16 sensors ten cells 1/M on either side are most of the axis, so it may hold every source:
    // the caption names the ones left out when there are any).
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "--spacing",
        "0.5",
        "-m",
        "esprit",
        "--levels",
        "linear",
        "--view",
        "closest",
        "-o",
        s(&svg),
    ]);
    ok(&out);
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.contains("power (linear)") && !text.contains("power (dB)"));
}

#[test]
fn a_coherent_pair_is_found_and_a_wide_spacing_is_called_ambiguous() {
    let dir = tmpdir("arrcoh");
    // The coherent case (invented, seeded): 16 sensors, 60 snapshots, a fully coherent pair
    // 1.5/M apart at 20 dB.
    let (csv, truth) = array_scene(
        &dir,
        "c",
        &[
            "--sensors",
            "16",
            "--snapshots",
            "60",
            "--count",
            "2",
            "--separation",
            "1.5",
            "--snr",
            "20",
            "--correlation",
            "coherent",
            "--seed",
            "3",
        ],
    );
    assert_accepted(&scores(&csv, &truth, "sdp,esprit"), 2);
    // A spacing above half a wavelength: every source's angle is ambiguous, and recover says so.
    let out = run(&[
        "recover",
        "-i",
        s(&csv),
        "-m",
        "esprit",
        "--spacing",
        "0.8",
        "-q",
    ]);
    ok(&out);
    assert!(
        stderr(&out).contains("AMBIGUOUS ANGLES"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn several_snapshot_files_give_one_json_line_each_in_input_order() {
    let dir = tmpdir("arrbatch");
    // Invented, seeded scenes: 12 and 16 sensors, two sources each, and a broken file between them.
    let [a, b] = [("a", "12", "1"), ("b", "16", "2")].map(|(name, sensors, seed)| {
        let args = [
            "--sensors",
            sensors,
            "--snapshots",
            "30",
            "--count",
            "2",
            "--snr",
            "15",
            "--seed",
            seed,
        ];
        array_scene(&dir, name, &args).0
    });
    let bad = write(&dir, "bad.csv", "n,snapshot,re,im\n0,0,1,0\n1,0,x,0\n");
    let out = run(&["recover", "-i", s(&a), s(&bad), s(&b), "-m", "esprit", "-q"]);
    assert_exit(&out, 3, "a broken file among the inputs");
    let text = String::from_utf8(out.stdout.clone()).unwrap();
    let lines: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).expect("one JSON object per line"))
        .collect();
    assert_eq!(lines.len(), 3, "{text}");
    assert_eq!(lines[0]["input"], s(&a));
    assert_eq!(lines[0]["array"]["span"], 12);
    assert_eq!(lines[0]["sources"].as_array().map(Vec::len), Some(2));
    assert!(lines[1]["error"].as_str().unwrap().contains("line 3"));
    assert_eq!(lines[2]["array"]["span"], 16);
    // Each line equals the result of that file alone (the batch runs in parallel).
    let alone: Value =
        serde_json::from_str(&ok(&run(&["recover", "-i", s(&b), "-m", "esprit", "-q"]))).unwrap();
    assert_eq!(lines[2]["sources"], alone["sources"]);
    // One kind per run.
    let (single, _) = simulate(&dir, "single", &["--fc", "8", "--count", "2"]);
    let out = run(&["recover", "-i", s(&a), s(&single)]);
    assert_exit(&out, 2, "a snapshot file mixed with a single record");
    assert!(stderr(&out).contains("give one kind per run"));
}
