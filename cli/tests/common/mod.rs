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

/// An invented real-valued record, drawn here independently of the library's scene generator (so
/// that the tests' truth does not come from the code under test):
/// `x_n = offset + slope·(n − first) + Σ A cos(2π f n / R + φ) + e_n`, with `e_n` stationary AR(1)
/// red noise of coefficient `rho` and innovation std `innovation`, and about `missing` of the
/// samples removed in runs of 1 to `max_run` (first and last kept). Seeded (SplitMix64 with
/// Box–Muller normals).
pub struct RealRecord {
    pub first: i64,
    pub samples: usize,
    pub rate: f64,
    /// (frequency in Hz, amplitude, phase in radians at n = 0).
    pub cosines: Vec<(f64, f64, f64)>,
    pub offset: f64,
    pub slope: f64,
    pub rho: f64,
    pub innovation: f64,
    pub missing: f64,
    pub max_run: usize,
    pub seed: u64,
}

/// SplitMix64 (Steele, Lea & Flood 2014): a small, well-mixed seeded generator.
struct SplitMix(u64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform on (0, 1).
    fn uniform(&mut self) -> f64 {
        ((self.next() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    /// Standard normal (Box–Muller).
    fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

impl RealRecord {
    /// The record's rows `(n, x_n)` of the kept samples, in increasing n.
    pub fn rows(&self) -> Vec<(i64, f64)> {
        let mut rng = SplitMix(self.seed);
        let n = self.samples;
        let mut e = self.innovation / (1.0 - self.rho * self.rho).sqrt() * rng.normal();
        let mut rows = Vec::with_capacity(n);
        for i in 0..n {
            if i > 0 {
                e = self.rho * e + self.innovation * rng.normal();
            }
            let t = self.first + i as i64;
            let mut x = self.offset + self.slope * i as f64 + e;
            for &(f, a, p) in &self.cosines {
                x += a * (2.0 * std::f64::consts::PI * f / self.rate * t as f64 + p).cos();
            }
            rows.push((t, x));
        }
        let mut keep = vec![true; n];
        let target = (self.missing * n as f64).round() as usize;
        let mut gone = 0;
        while gone < target {
            let start = 1 + (rng.next() % (n as u64 - 2)) as usize;
            let len = 1 + (rng.next() % self.max_run as u64) as usize;
            for k in keep.iter_mut().take((start + len).min(n - 1)).skip(start) {
                if *k && gone < target {
                    *k = false;
                    gone += 1;
                }
            }
        }
        rows.into_iter()
            .zip(keep)
            .filter_map(|(r, k)| k.then_some(r))
            .collect()
    }

    /// The record as an `n,value` file.
    pub fn csv(&self) -> String {
        let mut out = String::from("n,value\n");
        for (n, x) in self.rows() {
            out.push_str(&format!("{n},{x:?}\n"));
        }
        out
    }

    /// The acceptance scene of issue 12 (invented): 512 samples at 1000 Hz from n = 1000, offset 2
    /// and a linear trend, AR(1) noise ρ = 0.9 with innovation std 0.05, about 3 % missing in runs of
    /// up to 5, lines 123.4 Hz / 1.0, 150.0 Hz / 0.6, 371.1 Hz / 0.3.
    pub fn acceptance(seed: u64) -> Self {
        RealRecord {
            first: 1000,
            samples: 512,
            rate: 1000.0,
            cosines: vec![(123.4, 1.0, 0.4), (150.0, 0.6, -1.2), (371.1, 0.3, 2.5)],
            offset: 2.0,
            slope: 1e-3,
            rho: 0.9,
            innovation: 0.05,
            missing: 0.03,
            max_run: 5,
            seed,
        }
    }
}
