//! `recover`: the result JSON and its shape, CSV output, time-sample files, `--order`.
//!
//! Scenes are invented (seeded `simulate` runs or the reference cases of tests/refdata); sizes are
//! small so that the file runs in seconds.
mod common;

use common::*;
use serde_json::Value;

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
            ("separation_cells", &["number", "null"]),
            ("lines", &["array"]),
            ("trend", &["object", "null"]),
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
fn the_summary_writes_numbers_as_people_do() {
    // Noisy reference case at fc = 8: σ, residual and data norm are ordinary magnitudes (about 0.03,
    // 0.1 and 10). They used to print as `9.2173e0`; now an exponent appears only for magnitudes below
    // 0.0001 or from a million up.
    let out = run(&["recover", "-i", s(&case("nz_fc08_snr30"))]);
    ok(&out);
    let err = stderr(&out);
    assert_plain_numbers(&err);
    assert!(!err.contains("e0 ") && !err.contains("e0;"), "{err}");
    // The CSV result too (in full: the shortest text that reads back to the same number).
    let csv = ok(&run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "--format",
        "csv",
        "-q",
    ]));
    assert_plain_numbers(&csv);
    let sigma = err
        .lines()
        .find(|l| l.trim_start().starts_with("noise"))
        .unwrap();
    assert!(sigma.contains("σ = 0.0"), "{sigma}");
}

/// Several `--input` files: one JSON line per file in input order, each with its `"input"` path and
/// the same estimate as that file alone; an unreadable file gets its own line with the error, the
/// others are still estimated, and the exit code is that of the failure (3). CSV output is refused.
/// (Invented scenes: seeded `simulate` runs.)
#[test]
fn several_inputs_give_json_lines_in_input_order() {
    let dir = tmpdir("batch");
    let (a, _) = simulate(
        &dir,
        "a",
        &["--fc", "16", "--count", "3", "--snr", "30", "--seed", "1"],
    );
    let (b, _) = simulate(
        &dir,
        "b",
        &["--fc", "16", "--count", "2", "--snr", "30", "--seed", "2"],
    );
    let bad = write(&dir, "bad.csv", "k,re,im\nx,1,2\n");
    let alone = |p: &std::path::Path| -> Value {
        serde_json::from_str(&ok(&run(&[
            "recover",
            "-i",
            s(p),
            "-m",
            "esprit",
            "--sigma",
            "0.03",
        ])))
        .unwrap()
    };
    let out = run(&[
        "recover",
        "-i",
        s(&a),
        s(&bad),
        "-i",
        s(&b),
        "-m",
        "esprit",
        "--sigma",
        "0.03",
    ]);
    assert_exit(&out, 3, "one unreadable file among three");
    let text = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 3);
    assert_eq!(lines[0]["input"], s(&a));
    assert_eq!(lines[1]["input"], s(&bad));
    assert!(lines[1]["error"].as_str().unwrap().contains("line 2"));
    assert_eq!(lines[2]["input"], s(&b));
    for (line, path) in [(&lines[0], &a), (&lines[2], &b)] {
        let single = alone(path);
        assert_eq!(line["spikes"], single["spikes"]);
        assert_eq!(line["status"], single["status"]);
    }
    let csv = run(&["recover", "-i", s(&a), s(&b), "--format", "csv"]);
    assert_exit(&csv, 2, "csv with several inputs");
}
