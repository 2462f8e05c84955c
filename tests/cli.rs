//! Drives the `finespike` binary on files: recover on reference cases, JSON shape, malformed input.
mod common;

use std::path::PathBuf;
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_finespike"))
}

fn case(name: &str) -> PathBuf {
    common::refdata().join("cases").join(format!("{name}.csv"))
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("run finespike")
}

fn tmp(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("finespike-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn recover_prints_result_json() {
    let path = case("nl_fc08_s2p00_cx");
    let out = run(&[
        "recover",
        "--input",
        path.to_str().unwrap(),
        "--method",
        "sdp",
        "--sigma",
        "0",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("stdout is JSON");
    assert_eq!(v["method"], "sdp");
    assert_eq!(v["status"], "solved");
    let spikes = v["spikes"].as_array().unwrap();
    assert_eq!(spikes.len(), 2);
    assert!(spikes[0]["position"].is_f64());
    assert_eq!(spikes[0]["amplitude"].as_array().unwrap().len(), 2);
    let d = &v["diagnostics"];
    for key in [
        "separation_fc",
        "residual_norm",
        "certificate",
        "warnings",
        "iterations",
    ] {
        assert!(!d[key].is_null(), "diagnostics.{key} missing: {d}");
    }
    // Truth from the reference case (invented, seeded scene; see tests/refdata/README.md).
    let truth = common::load_case("nl_fc08_s2p00_cx").truth.spikes;
    for (s, t) in spikes.iter().zip(truth.iter()) {
        assert!((s["position"].as_f64().unwrap() - t.position).abs() < 1e-9);
    }
}

#[test]
fn recover_csv_output_and_time_domain_header() {
    let text = "n,re,im\n0,1,0\n1,0.30901699437494745,0.9510565162951535\n2,-0.8090169943749473,0.5877852522924732\n3,-0.8090169943749476,-0.587785252292473\n4,0.30901699437494723,-0.9510565162951536\n";
    // x_n = exp(i2π n/5): one line at f = 0.2 cycles/sample (values computed with Python's cmath).
    let p = tmp("line.csv", text);
    let out = run(&[
        "recover",
        "--input",
        p.to_str().unwrap(),
        "--sigma",
        "0",
        "--format",
        "csv",
        "--domain",
        "time",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let s = String::from_utf8(out.stdout).unwrap();
    let mut lines = s.lines();
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
fn malformed_inputs_fail_with_a_clear_message() {
    let cases: &[(&str, &str, &str)] = &[
        (
            "bad_header.csv",
            "freq,re,im\n0,1,0\n",
            "expected 'k,re,im'",
        ),
        (
            "bad_number.csv",
            "k,re,im\n0,1,0\n1,x,0\n",
            "line 3: found 'x' in column re",
        ),
        (
            "dup.csv",
            "k,re,im\n0,1,0\n1,1,0\n1,1,0\n",
            "k = 1 appears more than once",
        ),
        ("nan.csv", "k,re,im\n0,nan,0\n", "expected a finite number"),
        ("empty.csv", "k,re,im\n", "empty"),
    ];
    for (name, text, needle) in cases {
        let p = tmp(name, text);
        let out = run(&["recover", "--input", p.to_str().unwrap()]);
        assert_eq!(out.status.code(), Some(3), "{name}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(needle), "{name}: {err}");
    }
    let out = run(&["recover", "--input", "/nonexistent/file.csv"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("cannot read the file"));
    let out = run(&[
        "recover",
        "--input",
        case("nl_fc08_s2p00_cx").to_str().unwrap(),
        "--method",
        "nosuch",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let p = tmp("k.csv", "k,re,im\n0,1,0\n");
    let out = run(&["recover", "--input", p.to_str().unwrap(), "--fc", "0"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("fc is 0"));
    let out = run(&[
        "recover",
        "--input",
        case("nl_fc08_s2p00_cx").to_str().unwrap(),
        "--domain",
        "time",
    ]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--domain time expects header 'n,re,im'"));
}

#[test]
fn simulate_then_recover_round_trip() {
    let dir = std::env::temp_dir().join(format!("finespike-sim-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let csv = dir.join("scene.csv");
    let truth = dir.join("scene.truth.json");
    let out = run(&[
        "simulate",
        "--fc",
        "8",
        "--count",
        "2",
        "--separation",
        "2",
        "--seed",
        "5",
        "--out",
        csv.to_str().unwrap(),
        "--truth",
        truth.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = run(&["recover", "--input", csv.to_str().unwrap(), "--sigma", "0"]);
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let t: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&truth).unwrap()).unwrap();
    let found: Vec<f64> = v["spikes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["position"].as_f64().unwrap())
        .collect();
    let want: Vec<f64> = t["spikes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["position"].as_f64().unwrap())
        .collect();
    assert_eq!(found.len(), want.len());
    for (a, b) in found.iter().zip(&want) {
        assert!((a - b).abs() < 1e-9, "{found:?} vs {want:?}");
    }
}
