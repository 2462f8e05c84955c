//! `compare --plan`: a benchmark campaign from a JSON plan, per-trial records to --out (CSV or JSON
//! Lines), a summary on stdout, and the refusals. Scenes are invented; sizes are small.
mod common;

use common::*;
use serde_json::Value;

const PLAN: &str = r#"{
  "seed": 5, "draws": 2,
  "grid": {"bands": [{"fc": 8}], "separations": [0.7, 3.0], "spikes": [2],
           "snr_db": [null, 30.0], "amplitudes": ["real_positive"]},
  "methods": [{"name": "esprit"}, {"name": "pencil"}]
}"#;

#[test]
fn plan_writes_tidy_records_and_a_summary() {
    let dir = tmpdir("campaign");
    let plan = write(&dir, "plan.json", PLAN);
    let csv = &dir.join("trials.csv");
    let out = run(&["compare", "--plan", s(&plan), "--out", s(csv)]);
    let text = ok(&out);
    // 4 conditions × 2 draws × 2 methods = 16 trials, 2 lines each.
    assert!(
        text.starts_with("16 trials (4 conditions × 2 draws × 2 methods)"),
        "{text}"
    );
    assert_eq!(text.lines().filter(|l| l.contains("success ")).count(), 8);
    // Exact data: ESPRIT and the pencil recover both lines in every trial.
    let exact: Vec<&str> = text
        .lines()
        .filter(|l| l.contains("success ") && l.contains(" exact "))
        .collect();
    assert_eq!(exact.len(), 4, "{text}");
    for l in exact {
        assert!(l.contains("success 2/2"), "{l}");
    }
    let records = std::fs::read_to_string(csv).unwrap();
    assert_eq!(records.lines().count(), 1 + 16 * 2);
    assert!(records.starts_with("trial,condition,draw,seed,method,"));

    // JSON Lines for a .jsonl name; the same rows.
    let jsonl = &dir.join("trials.jsonl");
    ok(&run(&["compare", "--plan", s(&plan), "--out", s(jsonl)]));
    let lines = std::fs::read_to_string(jsonl).unwrap();
    assert_eq!(lines.lines().count(), 16 * 2);
    let first: Value = serde_json::from_str(lines.lines().next().unwrap()).unwrap();
    assert_eq!(first["method"], "esprit");
    assert_eq!(first["amplitudes"], "real_positive");

    // JSON summary: one object per condition and method.
    let out = run(&[
        "compare",
        "--plan",
        s(&plan),
        "--out",
        s(csv),
        "--format",
        "json",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert_eq!(v.as_array().unwrap().len(), 8);
}

/// A snapshot plan (invented array scenes): a coherent pair seen by 12 sensors over 30 snapshots.
const ARRAY_PLAN: &str = r#"{
  "seed": 11, "draws": 2,
  "grid": {"bands": [{"array": {"sensors": 12, "snapshots": 30}}], "separations": [2.5],
           "spikes": [2], "snr_db": [null, 20.0], "correlations": ["coherent"], "spacing": 0.5},
  "methods": [{"name": "esprit"}, {"name": "greedy"}]
}"#;

#[test]
fn snapshot_plan_writes_array_rows_and_refuses_single_record_methods() {
    let dir = tmpdir("campaign-array");
    let plan = write(&dir, "plan.json", ARRAY_PLAN);
    let csv = &dir.join("trials.csv");
    let text = ok(&run(&["compare", "--plan", s(&plan), "--out", s(csv)]));
    // 2 conditions × 2 draws × 2 methods.
    assert!(
        text.starts_with("8 trials (2 conditions × 2 draws × 2 methods)"),
        "{text}"
    );
    let rows: Vec<&str> = text.lines().filter(|l| l.contains("success ")).collect();
    assert_eq!(rows.len(), 4, "{text}");
    for l in &rows {
        assert!(l.contains("M=12 L=30 coherent"), "{l}");
        assert!(l.contains("/M"), "{l}");
    }
    // ESPRIT on snapshots (spatial smoothing for the coherent pair): exact data exact.
    let esprit_exact = rows
        .iter()
        .find(|l| l.contains("esprit") && l.contains(" exact "))
        .unwrap();
    assert!(esprit_exact.contains("success 2/2"), "{esprit_exact}");
    // greedy takes single records only: every trial refused, counted in the summary.
    for l in rows.iter().filter(|l| l.contains("greedy")) {
        assert!(l.contains("refused 2"), "{l}");
    }
    let records = std::fs::read_to_string(csv).unwrap();
    let header = records.lines().next().unwrap();
    for col in ["snapshots", "correlation", "spacing", "relative_residual"] {
        assert!(header.split(',').any(|h| h == col), "{header}");
    }
    assert!(records.lines().skip(1).all(|l| l.contains(",array,")));
}

#[test]
fn plan_refusals_have_their_exit_codes() {
    let dir = tmpdir("campaign-bad");
    let plan = write(&dir, "plan.json", PLAN);
    let csv = &dir.join("t.csv");
    // --plan needs --out.
    assert_exit(&run(&["compare", "--plan", s(&plan)]), 2, "no --out");
    // Scene flags do not mix with a plan.
    assert_exit(
        &run(&["compare", "--plan", s(&plan), "--out", s(csv), "--fc", "8"]),
        2,
        "--fc with --plan",
    );
    // Malformed JSON: an input error with the file and line.
    let broken = write(&dir, "broken.json", "{\n \"seed\": 1,\n \"draws\": }");
    let out = run(&["compare", "--plan", s(&broken), "--out", s(csv)]);
    assert_exit(&out, 3, "malformed plan");
    assert!(
        stderr(&out).contains("broken.json, line 3"),
        "{}",
        stderr(&out)
    );
    // Well-formed JSON with an unknown method: an input error naming the file and the method.
    let unknown = write(&dir, "unknown.json", &PLAN.replace("pencil", "prony"));
    let out = run(&["compare", "--plan", s(&unknown), "--out", s(csv)]);
    assert_exit(&out, 3, "unknown method");
    assert!(stderr(&out).contains("unknown.json"), "{}", stderr(&out));
    assert!(stderr(&out).contains("prony"), "{}", stderr(&out));
    // An output that cannot be written.
    let out = run(&[
        "compare",
        "--plan",
        s(&plan),
        "--out",
        "/nonexistent/dir/t.csv",
    ]);
    assert_exit(&out, 5, "unwritable output");
}
