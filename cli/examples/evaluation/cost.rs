//! Time and peak memory against N: one child process per (method, N), each reporting its own wall
//! time and VmHWM (peak resident set, `/proc/self/status`, Linux only).

use crate::studies::all_methods;
use crate::Mode;
use finespike::eval::array_scene::SourceCorrelation;
use finespike::eval::campaign::{draw_scene, AmplitudePattern, Band, Condition, MethodSpec};
use finespike::registry::configure;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// One point of the cost study.
#[derive(Debug, Clone)]
pub struct Point {
    /// Method.
    pub method: String,
    /// Record length.
    pub n: usize,
    /// Median wall seconds of up to 3 runs of the estimate (`None`: refused or failed).
    pub seconds: Option<f64>,
    /// Peak resident set of the process, MB.
    pub peak_mb: Option<f64>,
    /// Resident set before the estimate, MB (the process's baseline).
    pub base_mb: Option<f64>,
    /// Status or refusal.
    pub status: String,
}

fn vm(key: &str) -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with(key))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

/// The scene of a cost point: `n` time samples, 3 random-phase lines `3/N` apart, 30 dB, σ and the
/// order given.
fn condition(n: usize) -> Condition {
    Condition {
        index: 0,
        band: Band::Samples(n),
        separation_res: 3.0,
        separation_fc: 3.0 * (n as f64 - 1.0) / 2.0 / n as f64,
        spikes: 3,
        snr_db: Some(30.0),
        amplitudes: AmplitudePattern::RandomPhase,
        gaps: 0.0,
        correlation: SourceCorrelation::Uncorrelated,
        spacing: None,
    }
}

/// The child: run METHOD once at N and print `seconds peak_mb base_mb status`.
pub fn child(args: &[String]) -> Result<(), Box<dyn std::error::Error>> {
    let (Some(method), Some(n)) = (args.first(), args.get(1)) else {
        return Err("cost-point METHOD N".into());
    };
    let n: usize = n.parse()?;
    let c = condition(n);
    let scene = draw_scene(&c, 77 + n as u64)?;
    let options = MethodSpec::new(method).options(c.spikes, scene.sigma)?;
    let est = configure(method, &options)?.estimator;
    let base = vm("VmRSS:").unwrap_or(f64::NAN);
    // Up to 3 runs while they take under 2 s in all: the median time (the peak covers them all; the
    // runs are the same, so it is one run's peak).
    let mut times = Vec::new();
    let started = Instant::now();
    let mut result = None;
    while times.len() < 3 && (times.is_empty() || started.elapsed().as_secs_f64() < 2.0) {
        let t = Instant::now();
        let r = est.estimate(&scene.data);
        times.push(t.elapsed().as_secs_f64());
        let failed = r.is_err();
        result = Some(r);
        if failed {
            break;
        }
    }
    times.sort_by(f64::total_cmp);
    let seconds = times[times.len() / 2];
    let peak = vm("VmHWM:").unwrap_or(f64::NAN);
    let Some(result) = result else {
        return Err("no run".into());
    };
    match result {
        Ok(e) => println!(
            "{seconds} {peak} {base} {}",
            e.status.to_string().replace(' ', "_")
        ),
        Err(e) => println!(
            "nan {peak} {base} refused:{}",
            e.to_string().replace(' ', "_")
        ),
    }
    Ok(())
}

fn run_point(method: &str, n: usize, limit: Duration) -> Point {
    let mut point = Point {
        method: method.to_string(),
        n,
        seconds: None,
        peak_mb: None,
        base_mb: None,
        status: "not run".into(),
    };
    let Ok(exe) = std::env::current_exe() else {
        point.status = "cannot find the example's own binary".into();
        return point;
    };
    let child = Command::new(exe)
        .args(["cost-point", method, &n.to_string()])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn();
    let Ok(mut child) = child else {
        point.status = "could not start a child process".into();
        return point;
    };
    let started = Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(_)) => break,
            Ok(None) if started.elapsed() > limit => {
                // Our own child, by its handle.
                let _ = child.kill();
                let _ = child.wait();
                point.status = format!("stopped after {} s", limit.as_secs());
                return point;
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(20)),
            Err(_) => break,
        }
    }
    let Ok(out) = child.wait_with_output() else {
        return point;
    };
    let text = String::from_utf8_lossy(&out.stdout);
    let f: Vec<&str> = text.split_whitespace().collect();
    if f.len() >= 4 {
        point.seconds = f[0].parse().ok().filter(|s: &f64| s.is_finite());
        point.peak_mb = f[1].parse().ok().filter(|s: &f64| s.is_finite());
        point.base_mb = f[2].parse().ok().filter(|s: &f64| s.is_finite());
        point.status = f[3].replace('_', " ");
    } else {
        point.status = "the child printed nothing (crashed?)".into();
    }
    point
}

/// Every method at every N of the mode, one process per point; a method that takes longer than the
/// mode's limit (or refuses) is not run at larger N.
pub fn study(mode: &Mode) -> Result<Vec<Point>, Box<dyn std::error::Error>> {
    let mut out = Vec::new();
    let limit = Duration::from_secs_f64(mode.cost_limit_s * 4.0);
    for m in all_methods() {
        for &n in &mode.cost_sizes {
            let p = run_point(m, n, limit);
            let stop = p.seconds.is_none_or(|s| s > mode.cost_limit_s);
            eprintln!(
                "  cost {m} N = {n}: {} s, peak {} MB ({})",
                p.seconds.map_or("-".into(), |s| format!("{s:.3}")),
                p.peak_mb.map_or("-".into(), |s| format!("{s:.1}")),
                p.status
            );
            out.push(p);
            if stop {
                break;
            }
        }
    }
    Ok(out)
}

/// Least-squares slope of `ln y` against `ln N` over the points with `N ≥ 64` (fewer than two:
/// `None`): the growth exponent `p` of `y ∝ N^p`.
pub fn exponent(points: &[(usize, f64)]) -> Option<f64> {
    let pts: Vec<(f64, f64)> = points
        .iter()
        .filter(|(n, y)| *n >= 64 && *y > 0.0)
        .map(|&(n, y)| ((n as f64).ln(), y.ln()))
        .collect();
    if pts.len() < 2 {
        return None;
    }
    let k = pts.len() as f64;
    let mx = pts.iter().map(|p| p.0).sum::<f64>() / k;
    let my = pts.iter().map(|p| p.1).sum::<f64>() / k;
    let sxy: f64 = pts.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    let sxx: f64 = pts.iter().map(|p| (p.0 - mx).powi(2)).sum();
    (sxx > 0.0).then(|| sxy / sxx)
}
