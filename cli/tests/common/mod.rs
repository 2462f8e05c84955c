//! Shared helpers of the command-line tests: running the `finespike` binary, temporary folders, and
//! the reference cases of the library's `tests/refdata` (invented, seeded scenes; see its README).
#![allow(dead_code)]

use finespike::eval::io::{parse_samples, parse_spikes_json, SpikeFile};
use finespike::{Domain, Measurements};
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::atomic::{AtomicUsize, Ordering};

/// The binary under test.
pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_finespike"))
}

/// Run the binary with `args` and collect its output.
pub fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("run finespike")
}

/// stderr as text.
pub fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// stdout as text, after checking that the run succeeded.
pub fn ok(out: &Output) -> String {
    assert!(
        out.status.success(),
        "exit {:?}: {}",
        out.status,
        stderr(out)
    );
    String::from_utf8(out.stdout.clone()).expect("utf-8 stdout")
}

/// Assert the exit code of a run, showing stderr when it differs.
pub fn assert_exit(out: &Output, code: i32, what: &str) {
    assert_eq!(out.status.code(), Some(code), "{what}: {}", stderr(out));
}

/// Folder of the library's reference data (`tests/refdata` of the workspace root).
pub fn refdata() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../tests/refdata")
}

/// The sample file of reference case `name`.
pub fn case(name: &str) -> PathBuf {
    refdata().join("cases").join(format!("{name}.csv"))
}

/// A reference case: its measurements (band as recorded in its truth file) and its truth.
pub struct Case {
    pub data: Measurements,
    pub truth: SpikeFile,
}

/// Load reference case `name` (Fourier cases only: band `−fc..=fc` of the truth file).
pub fn load_case(name: &str) -> Case {
    let dir = refdata().join("cases");
    let csv = std::fs::read_to_string(dir.join(format!("{name}.csv"))).expect("case csv");
    let rows = parse_samples(&csv, name).expect("parse case csv");
    let json = std::fs::read_to_string(dir.join(format!("{name}.truth.json"))).expect("truth json");
    let truth = parse_spikes_json(&json, name).expect("parse truth");
    let fc = truth.fc.expect("truth has fc") as i64;
    let data = Measurements::in_band(-fc, fc, &rows.indices, &rows.values, Domain::Fourier)
        .expect("case measurements");
    Case { data, truth }
}

/// A fresh folder for one test (unique per process and call), removed when the test ends.
pub struct TempDir(PathBuf);

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

/// A new temporary folder whose name carries `tag`.
pub fn tmpdir(tag: &str) -> TempDir {
    static N: AtomicUsize = AtomicUsize::new(0);
    let dir = std::env::temp_dir().join(format!(
        "finespike-cli-{}-{tag}-{}",
        std::process::id(),
        N.fetch_add(1, Ordering::SeqCst)
    ));
    std::fs::create_dir_all(&dir).unwrap();
    TempDir(dir)
}

/// Write `text` to `dir/name`.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// A path as a command-line argument.
pub fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// `simulate` into `dir`: returns (samples, truth).
pub fn simulate(dir: &Path, name: &str, args: &[&str]) -> (PathBuf, PathBuf) {
    let csv = dir.join(format!("{name}.csv"));
    let truth = dir.join(format!("{name}.truth.json"));
    let mut all = vec!["simulate", "--out", s(&csv), "--truth", s(&truth)];
    all.extend_from_slice(args);
    ok(&run(&all));
    (csv, truth)
}

/// The positions of the `spikes` array of a result or truth JSON.
pub fn positions(v: &Value) -> Vec<f64> {
    v["spikes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["position"].as_f64().unwrap())
        .collect()
}

/// Every number in `text` written with an exponent: (token, value).
pub fn exponent_numbers(text: &str) -> Vec<(String, f64)> {
    text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-' || c == '+'))
        .filter(|t| t.contains('e') && t.starts_with(|c: char| c.is_ascii_digit() || c == '-'))
        .filter_map(|t| t.parse::<f64>().ok().map(|x| (t.to_string(), x)))
        .collect()
}

/// No number of ordinary magnitude (0.0001 up to a million) in `text` is written with an exponent
/// (`9.2173e0`, `2.38e0`): such numbers are written as people write them.
pub fn assert_plain_numbers(text: &str) {
    for (token, x) in exponent_numbers(text) {
        assert!(
            !(1e-4..1e6).contains(&x.abs()),
            "'{token}' in an exponent form: {text}"
        );
    }
}
