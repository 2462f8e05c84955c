//! `bound`: the Cramér–Rao bound of a truth file against the library on the same numbers.
//!
//! Scenes are invented (seeded `simulate` runs or the reference cases of tests/refdata); sizes are
//! small so that the file runs in seconds.
mod common;

use common::*;
use serde_json::Value;

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
    // The text report lists every spike with its position bound in 1/fc units (column "std τ·fc"),
    // written with 4 significant digits.
    let text = ok(&run(&["bound", "-t", s(&truth)]));
    for (i, b) in want.per_spike.iter().enumerate() {
        let row: Vec<&str> = text
            .lines()
            .find(|l| l.split_whitespace().next() == Some(&(i + 1).to_string()))
            .unwrap_or_else(|| panic!("row {}: {text}", i + 1))
            .split_whitespace()
            .collect();
        let shown: f64 = row[3].parse().unwrap();
        assert!(
            (shown - b.std_position_fc).abs() <= 5e-4 * b.std_position_fc,
            "{shown} vs {}: {text}",
            b.std_position_fc
        );
        assert!(!row[3].ends_with("e0"), "{text}");
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
