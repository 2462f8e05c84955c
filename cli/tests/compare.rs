//! `compare`: sweeps over invented scenes, their JSON, CSV and text tables.
//!
//! Scenes are invented (seeded `simulate` runs or the reference cases of tests/refdata); sizes are
//! small so that the file runs in seconds.
mod common;

use common::*;
use serde_json::Value;

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
        "0.4",
        "--methods",
        "esprit",
    ]));
    // 0.4/fc at fc = 8 is 0.4·17/8 = 0.85 resolution cells 1/N (N = 17): below the resolution.
    assert!(
        text.contains("UNDER-RESOLVED: the closest pair is 0.85 resolution cells (1/N) = 0.4/fc"),
        "{text}"
    );
    // 0.7/fc is 1.49 cells: resolved, but below the proven threshold 1.26/fc (a separate caution).
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
    assert!(!text.contains("UNDER-RESOLVED"), "{text}");
    assert!(
        text.contains("1.49 resolution cells (1/N) = 0.7/fc apart: resolved, but below the proven"),
        "{text}"
    );
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
