//! Drives the `finespike` binary on files: every subcommand, the JSON shape of `recover`, malformed
//! input with its exit code, help texts. Scenes are invented (seeded `simulate` runs or the reference
//! cases of tests/refdata); sizes are small so that the whole file runs in seconds.
mod common;

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::atomic::{AtomicUsize, Ordering};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_finespike"))
}

fn case(name: &str) -> PathBuf {
    common::refdata().join("cases").join(format!("{name}.csv"))
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("run finespike")
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

fn ok(out: &Output) -> String {
    assert!(
        out.status.success(),
        "exit {:?}: {}",
        out.status,
        stderr(out)
    );
    String::from_utf8(out.stdout.clone()).expect("utf-8 stdout")
}

/// A fresh folder for one test (unique per process and call), removed when the test ends.
struct TempDir(PathBuf);

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

impl std::ops::Deref for TempDir {
    type Target = Path;
    fn deref(&self) -> &Path {
        &self.0
    }
}

fn tmpdir(tag: &str) -> TempDir {
    static N: AtomicUsize = AtomicUsize::new(0);
    let dir = std::env::temp_dir().join(format!(
        "finespike-cli-{}-{tag}-{}",
        std::process::id(),
        N.fetch_add(1, Ordering::SeqCst)
    ));
    std::fs::create_dir_all(&dir).unwrap();
    TempDir(dir)
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// `simulate` into `dir`: returns (samples, truth).
fn simulate(dir: &Path, name: &str, args: &[&str]) -> (PathBuf, PathBuf) {
    let csv = dir.join(format!("{name}.csv"));
    let truth = dir.join(format!("{name}.truth.json"));
    let mut all = vec!["simulate", "--out", s(&csv), "--truth", s(&truth)];
    all.extend_from_slice(args);
    ok(&run(&all));
    (csv, truth)
}

fn positions(v: &Value) -> Vec<f64> {
    v["spikes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["position"].as_f64().unwrap())
        .collect()
}

#[test]
fn recover_prints_result_json() {
    let path = case("nl_fc08_s2p00_cx");
    let out = run(&["recover", "-i", s(&path), "--method", "sdp", "--sigma", "0"]);
    let v: Value = serde_json::from_str(&ok(&out)).expect("stdout is JSON");
    assert_eq!(v["method"], "sdp");
    assert_eq!(v["status"], "solved");
    // Truth from the reference case (invented, seeded scene; see tests/refdata/README.md).
    let truth = common::load_case("nl_fc08_s2p00_cx").truth.spikes;
    let found = positions(&v);
    assert_eq!(found.len(), truth.len());
    for (p, t) in found.iter().zip(truth.iter()) {
        assert!((p - t.position).abs() < 1e-9, "{found:?}");
    }
    // The summary goes to stderr, stdout stays JSON.
    let err = stderr(&out);
    for needle in [
        "sdp: solved (",
        "σ = 0, exact data (as given)",
        "closest pair",
        "certificate",
    ] {
        assert!(err.contains(needle), "{needle}: {err}");
    }
}

#[test]
fn recover_json_has_a_fixed_shape() {
    // Keys and JSON types of the result, for a noisy case (σ estimated) with a subspace method and a
    // convex one: consumers of the output rely on this shape.
    let path = case("nz_fc08_snr30");
    for method in ["sdp", "esprit"] {
        let v: Value =
            serde_json::from_str(&ok(&run(&["recover", "-i", s(&path), "-m", method]))).unwrap();
        let mut top: Vec<&str> = v.as_object().unwrap().keys().map(|k| k.as_str()).collect();
        top.sort_unstable();
        assert_eq!(
            top,
            ["diagnostics", "method", "spikes", "status"],
            "{method}"
        );
        assert!(v["method"].is_string() && v["status"].is_string());
        for sp in v["spikes"].as_array().unwrap() {
            let mut keys: Vec<&str> = sp.as_object().unwrap().keys().map(|k| k.as_str()).collect();
            keys.sort_unstable();
            assert_eq!(keys, ["amplitude", "position"]);
            assert!(sp["position"].is_f64());
            let a = sp["amplitude"].as_array().unwrap();
            assert!(a.len() == 2 && a[0].is_f64() && a[1].is_f64());
        }
        let d = v["diagnostics"].as_object().unwrap();
        // key → allowed JSON kinds ("null" where the figure may be absent).
        let want: &[(&str, &[&str])] = &[
            ("solver", &["string", "null"]),
            ("iterations", &["number"]),
            ("solve_seconds", &["number"]),
            ("objective", &["number", "null"]),
            ("duality_gap", &["number", "null"]),
            ("separation_fc", &["number", "null"]),
            ("residual_norm", &["number"]),
            ("data_norm", &["number"]),
            ("sigma", &["number", "null"]),
            ("sigma_estimated", &["bool"]),
            ("certificate", &["object", "null"]),
            ("warnings", &["array"]),
            ("model_order", &["object", "null"]),
            ("residual_ratio", &["number", "null"]),
            ("crb_std_position_fc", &["array", "null"]),
        ];
        let mut keys: Vec<&str> = d.keys().map(|k| k.as_str()).collect();
        keys.sort_unstable();
        let mut names: Vec<&str> = want.iter().map(|w| w.0).collect();
        names.sort_unstable();
        assert_eq!(keys, names, "{method}: diagnostics keys");
        for (key, kinds) in want {
            let x = &d[*key];
            let kind = match x {
                Value::Null => "null",
                Value::Bool(_) => "bool",
                Value::Number(_) => "number",
                Value::String(_) => "string",
                Value::Array(_) => "array",
                Value::Object(_) => "object",
            };
            assert!(kinds.contains(&kind), "{method}: {key} is {kind}");
        }
        if method == "sdp" {
            assert!(d["solver"].is_string());
            let c = d["certificate"].as_object().unwrap();
            for k in ["max_modulus", "max_off_support", "min_on_support"] {
                assert!(c[k].is_f64(), "certificate.{k}");
            }
            assert!(d["sigma_estimated"].as_bool().unwrap());
        } else {
            let m = d["model_order"].as_object().unwrap();
            assert!(m["order"].is_u64() && m["method"].is_string());
        }
    }
}

#[test]
fn recover_csv_output_and_time_domain_header() {
    let dir = tmpdir("td");
    // x_n = exp(i2π n/5): one line at f = 0.2 cycles/sample (values computed with Python's cmath).
    let text = "n,re,im\n0,1,0\n1,0.30901699437494745,0.9510565162951535\n2,-0.8090169943749473,0.5877852522924732\n3,-0.8090169943749476,-0.587785252292473\n4,0.30901699437494723,-0.9510565162951536\n";
    let p = write(&dir, "line.csv", text);
    let out = run(&[
        "recover",
        "-i",
        s(&p),
        "--sigma",
        "0",
        "--format",
        "csv",
        "--domain",
        "time",
    ]);
    let text = ok(&out);
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("position,re,im"));
    let row: Vec<f64> = lines
        .next()
        .unwrap()
        .split(',')
        .map(|x| x.parse().unwrap())
        .collect();
    assert!(
        (row[0] - 0.2).abs() < 1e-9 && (row[1] - 1.0).abs() < 1e-9 && row[2].abs() < 1e-9,
        "{row:?}"
    );
}

#[test]
fn order_is_passed_on_or_refused_with_the_methods_that_take_one() {
    let path = case("nz_fc08_snr30");
    let truth = common::load_case("nz_fc08_snr30").truth.spikes.len();
    // A given order is the number of spikes returned by a subspace method.
    for n in [1, truth] {
        let n_text = n.to_string();
        let out = run(&[
            "recover",
            "-i",
            s(&path),
            "-m",
            "esprit",
            "--order",
            &n_text,
        ]);
        let v: Value = serde_json::from_str(&ok(&out)).unwrap();
        assert_eq!(positions(&v).len(), n);
        assert_eq!(v["diagnostics"]["model_order"]["method"], "given");
    }
    // Methods without an order: exit 2, and the message names the methods that take one.
    let with_order = finespike::registry::methods_with_order();
    for m in finespike::registry::method_names() {
        if with_order.contains(&m) {
            continue;
        }
        let out = run(&["recover", "-i", s(&path), "-m", m, "--order", "2"]);
        assert_eq!(out.status.code(), Some(2), "{m}");
        let err = stderr(&out);
        assert!(
            err.contains(&format!("--order is not available for method '{m}'")),
            "{err}"
        );
        for w in &with_order {
            assert!(err.contains(w), "{m}: {err}");
        }
    }
    let out = run(&["recover", "-i", s(&path), "-m", "music", "--order", "0"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("at least 1"));
}

#[test]
fn malformed_sample_files_name_file_line_found_and_expected() {
    let dir = tmpdir("bad");
    // (file name, text, extra args, message fragment); all exit 3.
    let cases: &[(&str, &str, &[&str], &str)] = &[
        (
            "bad_header.csv",
            "freq,re,im\n0,1,0\n",
            &[],
            "line 1: found header 'freq,re,im', expected 'k,re,im'",
        ),
        (
            "missing_column_header.csv",
            "k,re\n0,1\n",
            &[],
            "line 1: found header 'k,re', expected 'k,re,im'",
        ),
        (
            "missing_column_row.csv",
            "k,re,im\n0,1,0\n1,2\n",
            &[],
            "line 3: found 2 fields, expected 3 (k,re,im)",
        ),
        (
            "bad_number.csv",
            "k,re,im\n0,1,0\n1,x,0\n",
            &[],
            "line 3: found 'x' in column re, expected a number",
        ),
        (
            "bad_index.csv",
            "k,re,im\n0,1,0\n0.5,1,0\n",
            &[],
            "line 3: found '0.5' in column k, expected an integer",
        ),
        (
            "nan.csv",
            "k,re,im\n0,nan,0\n",
            &[],
            "line 2: found 'nan' in column re, expected a finite number",
        ),
        (
            "dup.csv",
            "k,re,im\n0,1,0\n1,1,0\n\n1,1,0\n",
            &["--fc", "4"],
            "line 5: found k = 1 again (first on line 3), expected each k at most once",
        ),
        (
            "dup_time.csv",
            "n,re,im\n0,1,0\n1,1,0\n0,1,0\n",
            &[],
            "line 4: found n = 0 again (first on line 2), expected each n at most once",
        ),
        (
            "out_of_band.csv",
            "k,re,im\n0,1,0\n-1,1,0\n5,1,0\n",
            &["--fc", "4"],
            "line 4: found k = 5, expected |k| <= fc = 4",
        ),
        (
            "negative_time.csv",
            "n,re,im\n0,1,0\n-1,1,0\n",
            &[],
            "line 3: found n = -1, expected a sample time n >= 0",
        ),
        (
            "header_only.csv",
            "k,re,im\n",
            &[],
            "line 2: found no data rows after the header, expected at least one row",
        ),
        (
            "empty.csv",
            "",
            &[],
            "line 1: found an empty file, expected the header 'k,re,im'",
        ),
    ];
    for (name, text, extra, needle) in cases {
        let p = write(&dir, name, text);
        let mut args = vec!["recover", "-i", s(&p)];
        args.extend_from_slice(extra);
        let out = run(&args);
        assert_eq!(out.status.code(), Some(3), "{name}: {}", stderr(&out));
        let err = stderr(&out);
        assert!(err.contains(needle), "{name}: {err}");
        assert!(
            err.contains(s(&p)),
            "{name}: the message names the file: {err}"
        );
        // The same reader serves every subcommand that takes samples.
        let mut args = vec!["compare", "-i", s(&p), "--methods", "esprit"];
        args.extend_from_slice(extra);
        let out = run(&args);
        assert_eq!(out.status.code(), Some(3), "compare {name}");
    }
    let out = run(&["recover", "-i", "/nonexistent/file.csv"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(stderr(&out).contains("/nonexistent/file.csv, line 0: cannot read the file"));
    let p = write(&dir, "k.csv", "k,re,im\n0,1,0\n");
    let out = run(&["recover", "-i", s(&p), "--fc", "0"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(stderr(&out).contains("fc is 0"));
    let out = run(&[
        "recover",
        "-i",
        s(&case("nl_fc08_s2p00_cx")),
        "--domain",
        "time",
    ]);
    assert_eq!(out.status.code(), Some(3));
    assert!(
        stderr(&out).contains("line 1: --domain time expects header 'n,re,im', found 'k,re,im'")
    );
}

#[test]
fn malformed_truth_files_name_file_and_line() {
    let dir = tmpdir("badtruth");
    let data = case("nl_fc08_s2p00_cx");
    let cases: &[(&str, &str, &str)] = &[
        (
            "syntax.json",
            "{\"spikes\": [\n  {\"position\": 0.2, \"amplitude\": [1, 0]},\n  {\"position\": ,}\n]}",
            "line 3: not a spike file",
        ),
        ("not_a_list.json", "{\"spikes\": 3}", "line 1: not a spike file"),
        (
            "no_spikes_key.json",
            "{\n\"fc\": 8\n}",
            "missing field `spikes`",
        ),
        (
            "amplitude_shape.json",
            "{\"spikes\": [{\"position\": 0.2, \"amplitude\": 1.0}]}",
            "not a spike file",
        ),
        ("empty.json", "", "not a spike file"),
    ];
    for (name, text, needle) in cases {
        let p = write(&dir, name, text);
        for args in [
            vec![
                "compare",
                "-i",
                s(&data),
                "--truth",
                s(&p),
                "--methods",
                "esprit",
            ],
            vec!["bound", "--truth", s(&p), "--sigma", "0.1", "--fc", "8"],
            vec!["plot", "-i", s(&data), "--truth", s(&p), "-o", "unused.svg"],
        ] {
            let out = run(&args);
            assert_eq!(
                out.status.code(),
                Some(3),
                "{name} {}: {}",
                args[0],
                stderr(&out)
            );
            let err = stderr(&out);
            assert!(err.contains(needle) && err.contains(s(&p)), "{name}: {err}");
        }
    }
}

#[test]
fn simulate_recover_compare_round_trip() {
    let dir = tmpdir("round");
    let (csv, truth) = simulate(
        &dir,
        "scene",
        &[
            "--fc",
            "8",
            "--count",
            "2",
            "--separation",
            "2",
            "--seed",
            "5",
            "--snr",
            "40",
        ],
    );
    let t: Value = serde_json::from_str(&std::fs::read_to_string(&truth).unwrap()).unwrap();
    assert_eq!(t["fc"], 8.0);
    assert!(t["sigma"].as_f64().unwrap() > 0.0);
    let want = positions(&t);
    let v: Value = serde_json::from_str(&ok(&run(&["recover", "-i", s(&csv)]))).unwrap();
    let found = positions(&v);
    assert_eq!(found.len(), want.len());
    // 40 dB at fc = 8: the CRB of each position is about 1e-3/fc; 0.02/fc is many standard deviations.
    for (a, b) in found.iter().zip(&want) {
        assert!((a - b).abs() * 8.0 < 0.02, "{found:?} vs {want:?}");
    }
    // compare on the file, scored against the truth, as JSON.
    let out = run(&[
        "compare",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--methods",
        "sdp,esprit",
        "--format",
        "json",
    ]);
    let c: Value = serde_json::from_str(&ok(&out)).unwrap();
    let methods = c["methods"].as_array().unwrap();
    assert_eq!(methods.len(), 2);
    for m in methods {
        let sm = &m["summary"];
        assert_eq!(
            (sm["found"].as_u64(), sm["missed"].as_u64()),
            (Some(2), Some(0)),
            "{sm}"
        );
        assert_eq!(sm["spurious"], 0);
        let ratio = sm["rmse_over_crb"].as_f64().unwrap();
        assert!(ratio.is_finite() && ratio > 0.0);
        assert!(sm["rmse_fc"].as_f64().unwrap() < 0.02);
    }
    // The text table has one row per method, in order.
    let text = ok(&run(&[
        "compare",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--methods",
        "esprit,sdp",
    ]));
    let rows: Vec<&str> = text
        .lines()
        .filter(|l| l.starts_with("esprit ") || l.starts_with("sdp "))
        .collect();
    assert_eq!(rows.len(), 2, "{text}");
    assert!(
        rows[0].starts_with("esprit") && rows[0].contains("2/2"),
        "{text}"
    );
    // Without a truth: each method's own figures.
    let text = ok(&run(&["compare", "-i", s(&csv), "--methods", "esprit"]));
    assert!(
        text.contains("no truth given") && text.contains("esprit: positions"),
        "{text}"
    );
}

#[test]
fn compare_sweep_tallies_every_trial() {
    // 3 invented scenes per method at fc = 8, 3 spikes 2.5/fc apart, 35 dB: well separated, so the
    // convex and subspace methods find every spike (CRB ≈ 1e-3/fc, gate 0.5/fc).
    let out = run(&[
        "compare",
        "--trials",
        "3",
        "--fc",
        "8",
        "--count",
        "3",
        "--separation",
        "2.5",
        "--snr",
        "35",
        "--seed",
        "11",
        "--methods",
        "sdp,esprit",
        "--format",
        "json",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert_eq!(v["scene"]["trials"], 3);
    assert_eq!(v["scene"]["first_seed"], 11);
    for m in v["methods"].as_array().unwrap() {
        assert_eq!(m["trials"], 3);
        assert_eq!(m["true_spikes"], 9);
        assert_eq!(m["found"], 9, "{m}");
        assert!(m["median_seconds"].as_f64().unwrap() >= 0.0);
        assert!(m["rmse_over_crb"].as_f64().is_some());
    }
    // Same sweep as CSV: a header and one row per method; and the trials are the seeded scenes of
    // `simulate` (trial i uses seed 11 + i), so the first one can be redrawn.
    let csv = ok(&run(&[
        "compare",
        "--trials",
        "2",
        "--fc",
        "8",
        "--seed",
        "11",
        "--methods",
        "esprit",
        "--format",
        "csv",
    ]));
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines.len(), 2);
    assert!(lines[0].starts_with("method,trials,true_spikes,found"));
    assert!(lines[1].starts_with("esprit,2,6,"));
    // Exact data: the bound is 0, the ratio column is empty and the text says why.
    let text = ok(&run(&[
        "compare",
        "--trials",
        "1",
        "--fc",
        "8",
        "--methods",
        "esprit",
    ]));
    assert!(text.contains("exact data, the bound is 0"), "{text}");
    // Under-resolved scenes are flagged in plain words.
    let text = ok(&run(&[
        "compare",
        "--trials",
        "1",
        "--fc",
        "8",
        "--count",
        "2",
        "--separation",
        "0.7",
        "--methods",
        "esprit",
    ]));
    assert!(text.contains("UNDER-RESOLVED"), "{text}");
    // Unknown method names and --trials 0 are command-line errors.
    let out = run(&["compare", "--trials", "1", "--methods", "sdp,nosuch"]);
    assert_eq!(out.status.code(), Some(2));
    let out = run(&["compare", "--trials", "0"]);
    assert_eq!(out.status.code(), Some(2));
    // --input and scene flags do not mix; one of --input / --trials is needed.
    let out = run(&["compare", "-i", s(&case("nz_fc08_snr30")), "--count", "3"]);
    assert_eq!(out.status.code(), Some(2));
    let out = run(&["compare"]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn bound_matches_the_library_on_the_same_file() {
    let dir = tmpdir("bound");
    let (csv, truth) = simulate(
        &dir,
        "b",
        &[
            "--fc",
            "8",
            "--count",
            "3",
            "--separation",
            "1.5",
            "--snr",
            "25",
            "--seed",
            "3",
        ],
    );
    let file = finespike::eval::io::read_spikes_json(&truth).unwrap();
    let sigma = file.sigma.unwrap();
    let k: Vec<i64> = (-8..=8).collect();
    let want = finespike::crb(&k, -8..=8, &file.spikes, sigma).unwrap();
    let check = |v: &Value, want: &finespike::Crb| {
        let per = v["bound"]["per_spike"].as_array().unwrap();
        assert_eq!(per.len(), want.per_spike.len());
        for (got, w) in per.iter().zip(&want.per_spike) {
            // Same computation on the same numbers; JSON keeps f64 round trips exact.
            for (key, x) in [
                ("std_position", w.std_position),
                ("std_position_fc", w.std_position_fc),
                ("std_abs_amplitude", w.std_abs_amplitude),
                ("std_phase", w.std_phase),
            ] {
                assert_eq!(got[key].as_f64().unwrap(), x, "{key}");
            }
        }
    };
    // fc and σ from the truth file.
    let v: Value =
        serde_json::from_str(&ok(&run(&["bound", "-t", s(&truth), "--format", "json"]))).unwrap();
    assert_eq!(v["sigma"].as_f64().unwrap(), sigma);
    check(&v, &want);
    // The index set of the sample file gives the same band here.
    let v: Value = serde_json::from_str(&ok(&run(&[
        "bound",
        "-t",
        s(&truth),
        "--data",
        s(&csv),
        "--format",
        "json",
    ])))
    .unwrap();
    check(&v, &want);
    // Time samples: N = 40 (even), σ from the flag.
    let kt: Vec<i64> = (-39..=0).collect();
    let want_t = finespike::crb(&kt, -39..=0, &file.spikes, 0.05).unwrap();
    let v: Value = serde_json::from_str(&ok(&run(&[
        "bound",
        "-t",
        s(&truth),
        "--domain",
        "time",
        "--samples",
        "40",
        "--sigma",
        "0.05",
        "--format",
        "json",
    ])))
    .unwrap();
    check(&v, &want_t);
    // --samples alone implies time samples.
    let v: Value = serde_json::from_str(&ok(&run(&[
        "bound",
        "-t",
        s(&truth),
        "--samples",
        "40",
        "--sigma",
        "0.05",
        "--format",
        "json",
    ])))
    .unwrap();
    check(&v, &want_t);
    // The text report lists every spike with its position bound in 1/fc units.
    let text = ok(&run(&["bound", "-t", s(&truth)]));
    for b in &want.per_spike {
        assert!(
            text.contains(&format!("{:.3e}", b.std_position_fc)),
            "{text}"
        );
    }
    // Without σ anywhere, or σ = 0: a command-line error that says to give --sigma.
    let exact = write(
        &dir,
        "exact.json",
        "{\"fc\": 8, \"sigma\": 0.0, \"spikes\": [{\"position\": 0.1, \"amplitude\": [1, 0]}]}",
    );
    let out = run(&["bound", "-t", s(&exact)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("give --sigma"));
    let nofc = write(
        &dir,
        "nofc.json",
        "{\"spikes\": [{\"position\": 0.1, \"amplitude\": [1, 0]}]}",
    );
    let out = run(&["bound", "-t", s(&nofc), "--sigma", "0.1"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("give --fc"));
}

/// Crude well-formedness of an SVG: one root, balanced text and group elements, no NaN coordinates.
fn check_svg(svg: &str) {
    assert!(svg.starts_with("<svg"), "starts with the root");
    assert!(svg.trim_end().ends_with("</svg>"));
    assert_eq!(svg.matches("<svg").count(), 1);
    assert_eq!(svg.matches("<text").count(), svg.matches("</text>").count());
    assert_eq!(svg.matches("<g").count(), svg.matches("</g>").count());
    assert!(!svg.contains("NaN") && !svg.contains("inf\""));
}

#[test]
fn plot_writes_an_svg_with_data_dual_spikes_and_caption() {
    let dir = tmpdir("plot");
    // Invented under-resolved scene: 2 lines 0.8/fc apart at fc = 10, exact data.
    let (csv, truth) = simulate(
        &dir,
        "p",
        &[
            "--fc",
            "10",
            "--count",
            "2",
            "--separation",
            "0.8",
            "--seed",
            "4",
        ],
    );
    let svg_path = dir.join("p.svg");
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--sigma",
        "0",
        "-o",
        s(&svg_path),
    ]);
    ok(&out);
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    check_svg(&svg);
    for needle in [
        "periodogram",
        "true spikes",
        "recovered spikes",
        "dual polynomial |q(t)|",
        "|q| = 1",
        "1/fc = 0.1000",
        "closest pair 0.800/fc",
        "UNDER-RESOLVED",
        "Dual certificate",
    ] {
        assert!(svg.contains(needle), "missing '{needle}'");
    }
    // Curves: the periodogram and |q| (plus axes); stems as circles: 2 true + 2 recovered in the top
    // panel, 2 on |q| below, and the legend markers.
    assert!(svg.matches("<polyline").count() > 10);
    assert!(svg.matches("<circle").count() >= 6);
    // A method without a dual polynomial: no |q| panel, and the caption says so.
    let svg_path = dir.join("music.svg");
    ok(&run(&[
        "plot",
        "-i",
        s(&csv),
        "-m",
        "music",
        "-o",
        s(&svg_path),
        "--range",
        "0,0.5",
    ]));
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    check_svg(&svg);
    assert!(svg.contains("produces no dual polynomial") && !svg.contains("dual polynomial |q(t)|"));
    // Bad range: command-line error; unwritable output: exit 5.
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "-o",
        s(&svg_path),
        "--range",
        "0.5,0.2",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let out = run(&["plot", "-i", s(&csv), "-o", "/nonexistent/dir/x.svg"]);
    assert_eq!(out.status.code(), Some(5));
}

#[test]
fn estimator_and_output_failures_have_their_exit_codes() {
    let dir = tmpdir("codes");
    // A measured set with gaps: the subspace methods cannot run (exit 4); sdp can.
    let (csv, _) = simulate(
        &dir,
        "gaps",
        &[
            "--fc", "8", "--count", "2", "--subset", "0.7", "--seed", "2",
        ],
    );
    let out = run(&["recover", "-i", s(&csv), "-m", "esprit"]);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    ok(&run(&["recover", "-i", s(&csv), "--sigma", "0", "-q"]));
    // compare: exit 4 only when no method could run; the table still names every error.
    let out = run(&["compare", "-i", s(&csv), "--methods", "esprit,music"]);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    assert!(String::from_utf8_lossy(&out.stdout).contains("esprit: error"));
    ok(&run(&["compare", "-i", s(&csv), "--methods", "esprit,sdp"]));
    // Unwritable output (exit 5).
    let out = run(&[
        "simulate",
        "--out",
        "/nonexistent/dir/x.csv",
        "--truth",
        "/nonexistent/dir/x.json",
    ]);
    assert_eq!(out.status.code(), Some(5));
    // Bad settings are command-line errors (exit 2).
    for args in [
        vec![
            "simulate", "--out", "a.csv", "--truth", "a.json", "--subset", "1.5",
        ],
        vec![
            "simulate",
            "--out",
            "a.csv",
            "--truth",
            "a.json",
            "--count",
            "9",
            "--separation",
            "2",
            "--fc",
            "8",
        ],
        vec!["recover", "-i", s(&csv), "--sigma", "-1"],
        vec!["recover", "-i", s(&csv), "-m", "nosuch"],
    ] {
        let out = run(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {}", stderr(&out));
    }
    // A subspace method takes a given σ into its diagnostics (it does not estimate it).
    let out = run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "-m",
        "music",
        "--sigma",
        "0.1",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert_eq!(v["diagnostics"]["sigma"].as_f64(), Some(0.1));
    assert_eq!(v["diagnostics"]["sigma_estimated"].as_bool(), Some(false));
    // --solver picks the solver of sdp/ast, and is noted as ignored elsewhere.
    let out = run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "--solver",
        "sliding",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert!(v["diagnostics"]["solver"]
        .as_str()
        .unwrap()
        .contains("Frank-Wolfe"));
    let out = run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "-m",
        "esprit",
        "--solver",
        "interior-point",
    ]);
    ok(&out);
    assert!(
        stderr(&out).contains("--solver is ignored"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn help_is_complete() {
    let top = ok(&run(&["--help"]));
    for sub in ["recover", "simulate", "compare", "bound", "plot"] {
        assert!(top.contains(sub), "{sub} in --help");
    }
    assert!(top.contains("Exit codes:") && top.contains("  4  the estimator could not run"));
    for sub in ["recover", "simulate", "compare", "bound", "plot"] {
        let help = ok(&run(&[sub, "--help"]));
        assert!(help.contains("Exit codes:"), "{sub}");
        // Every option carries a description: in long help, the line after an option's name is
        // its text (clap prints a blank line only between options).
        let lines: Vec<&str> = help.lines().collect();
        for (i, l) in lines.iter().enumerate() {
            let t = l.trim_start();
            if t.starts_with("--") || (t.starts_with('-') && t.contains(", --")) {
                let next = lines.get(i + 1).map_or("", |n| n.trim());
                assert!(!next.is_empty(), "{sub}: option without a description: {t}");
            }
        }
        // Every method name is offered where a method is chosen.
        if sub == "recover" || sub == "plot" {
            for m in finespike::registry::method_names() {
                assert!(help.contains(m), "{sub} help lists {m}");
            }
        }
    }
}

#[test]
fn even_time_records_round_trip() {
    // A record of 32 samples (fc = 15.5): simulate writes n = 0..31, the truth records fc = 15.5,
    // recover finds the lines and bound rebuilds the same band from the truth file alone.
    let dir = tmpdir("even");
    let (csv, truth) = simulate(
        &dir,
        "rec",
        &[
            "--samples",
            "32",
            "--count",
            "2",
            "--separation",
            "2",
            "--seed",
            "6",
            "--snr",
            "40",
        ],
    );
    let text = std::fs::read_to_string(&csv).unwrap();
    let rows: Vec<&str> = text.lines().collect();
    assert_eq!(rows[0], "n,re,im");
    assert_eq!(rows.len(), 33);
    assert!(rows[32].starts_with("31,"));
    let file = finespike::eval::io::read_spikes_json(&truth).unwrap();
    assert_eq!(file.fc, Some(15.5));
    let v: Value =
        serde_json::from_str(&ok(&run(&["recover", "-i", s(&csv), "-m", "esprit"]))).unwrap();
    let found = positions(&v);
    let want = file.spikes.positions();
    assert_eq!(found.len(), 2);
    for (a, b) in found.iter().zip(&want) {
        assert!((a - b).abs() * 15.5 < 0.02, "{found:?} vs {want:?}");
    }
    let k: Vec<i64> = (-31..=0).collect();
    let bound = finespike::crb(&k, -31..=0, &file.spikes, file.sigma.unwrap()).unwrap();
    let v: Value = serde_json::from_str(&ok(&run(&[
        "bound",
        "-t",
        s(&truth),
        "--domain",
        "time",
        "--format",
        "json",
    ])))
    .unwrap();
    assert_eq!(v["kmin"], -31);
    let got = v["bound"]["per_spike"][0]["std_position"].as_f64().unwrap();
    assert_eq!(got, bound.per_spike[0].std_position);
    // A non-integer fc cannot make a Fourier band: the message says what to give instead.
    let out = run(&["bound", "-t", s(&truth)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("fc = 15.5 is not a positive integer"));
    // --samples and --fc do not mix.
    let out = run(&[
        "simulate",
        "--samples",
        "32",
        "--fc",
        "8",
        "--out",
        "x",
        "--truth",
        "y",
    ]);
    assert_eq!(out.status.code(), Some(2));
}
