//! Benchmark campaigns (`finespike::eval::campaign`): plan checks, determinism whatever the thread
//! count, the tidy shape of the per-trial files (read back here and by a `python3` stdlib script,
//! the way pandas would load them), and the interval formulas against published values. Every scene
//! is invented.

use finespike::eval::campaign::{
    chi_square_quantile, run, summary::Z95, wilson_interval, Campaign, Plan,
};
use std::path::PathBuf;
use std::process::Command;

fn small_plan() -> Plan {
    Plan::from_json(
        r#"{
          "seed": 42, "draws": 3,
          "grid": {"bands": [{"fc": 8}, {"samples": 20}], "separations": [0.8, 2.5],
                   "spikes": [2, 3], "snr_db": [null, 25.0],
                   "amplitudes": ["random_phase", "alternating_sign"], "gaps": [0.0, 0.2]},
          "methods": [{"name": "esprit"}, {"name": "greedy"},
                      {"name": "music", "order": "chosen", "noise": "estimated", "label": "music-mdl"}]
        }"#,
        "plan.json",
    )
    .unwrap()
}

fn run_with_threads(plan: &Plan, threads: usize) -> Campaign {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap()
        .install(|| run(plan, &|_, _| {}).unwrap())
}

#[test]
fn records_do_not_depend_on_the_thread_count() {
    let plan = small_plan();
    let mut one = run_with_threads(&plan, 1);
    let mut three = run_with_threads(&plan, 3);
    for t in one.trials.iter_mut().chain(three.trials.iter_mut()) {
        t.seconds = 0.0;
    }
    assert_eq!(one.trials, three.trials);
    // 2 bands × 2 patterns × 2 counts × 2 separations × 2 SNR × 2 gap fractions × 3 draws × 3 methods.
    assert_eq!(one.trials.len(), 2 * 2 * 2 * 2 * 2 * 2 * 3 * 3);
    // Methods see the same scene: the seed depends on (condition, draw) only.
    for w in one.trials.chunks(3) {
        assert!(w.iter().all(|t| t.seed == w[0].seed && t.draw == w[0].draw));
    }
    // The subspace methods refuse records with gaps; greedy does not.
    let gapped: Vec<_> = one
        .trials
        .iter()
        .filter(|t| t.condition.gaps > 0.0)
        .collect();
    assert!(gapped
        .iter()
        .filter(|t| t.method != "greedy")
        .all(|t| t.status == "refused" && t.error.is_some() && !t.success));
    assert!(gapped
        .iter()
        .filter(|t| t.method == "greedy")
        .all(|t| t.status != "refused"));
    // A different seed draws different scenes.
    let mut other = plan.clone();
    other.seed = 43;
    let o = run_with_threads(&other, 2);
    assert_ne!(o.trials[0].seed, one.trials[0].seed);
}

#[test]
fn exact_esprit_succeeds_and_summaries_count_it() {
    let plan = small_plan();
    let c = run(&plan, &|_, _| {}).unwrap();
    let s = c.summaries();
    assert_eq!(s.len(), c.conditions.len() * 3);
    // ESPRIT with the order given on exact, gap-free data: every trial exact (Liao & Fannjiang 2016,
    // ACHA 40(1): exact at any separation with at least 2s samples).
    for x in s
        .iter()
        .filter(|x| x.method == "esprit" && x.condition.snr_db.is_none() && x.condition.gaps == 0.0)
    {
        assert_eq!(x.successes, x.trials, "{:?}", x.condition);
        assert_eq!(x.success_ci.1, 1.0);
        assert!(x.rmse_res.unwrap() < 1e-6);
        assert_eq!(x.rmse_over_crb, None, "no bound on exact data");
    }
    // Noisy cells carry RMSE/√CRB with an interval around it.
    for x in s
        .iter()
        .filter(|x| x.condition.snr_db.is_some() && x.crb_lines > 0)
    {
        let (lo, hi) = x.rmse_over_crb_ci.unwrap();
        let r = x.rmse_over_crb.unwrap();
        assert!(lo < r && r < hi, "{lo} {r} {hi}");
    }
}

#[test]
fn bad_plans_are_refused_with_the_field_named() {
    let bad = [
        (
            r#"{"seed": 1, "draws": 0, "grid": {"bands": [{"fc": 8}], "separations": [1], "spikes": [2]}, "methods": [{"name": "sdp"}]}"#,
            "draws",
        ),
        (
            r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 8}], "separations": [-1], "spikes": [2]}, "methods": [{"name": "sdp"}]}"#,
            "separations",
        ),
        (
            r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 8}], "separations": [1], "spikes": [2]}, "methods": [{"name": "nosuch"}]}"#,
            "nosuch",
        ),
        (
            r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 8}], "separations": [1], "spikes": [2]}, "methods": [{"name": "esprit", "solver": "sliding"}]}"#,
            "solver",
        ),
        (
            r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 8}], "separations": [1], "spikes": [2], "gaps": [1.0]}, "methods": [{"name": "sdp"}]}"#,
            "gaps",
        ),
        (
            r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 8}], "separations": [1], "spikes": [2]}, "methods": [{"name": "sdp"}, {"name": "sdp"}]}"#,
            "label",
        ),
        (
            r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 8}], "separations": [1], "spikes": [2], "colour": 3}, "methods": [{"name": "sdp"}]}"#,
            "colour",
        ),
    ];
    for (text, word) in bad {
        let e = Plan::from_json(text, "p.json").unwrap_err().to_string();
        assert!(e.contains(word), "{word}: {e}");
    }
    // A cluster that does not fit is left out with a note, not an error.
    let p = Plan::from_json(
        r#"{"seed": 1, "draws": 1, "grid": {"bands": [{"fc": 4}], "separations": [1, 3], "spikes": [4]}, "methods": [{"name": "esprit"}]}"#,
        "p.json",
    )
    .unwrap();
    let (conditions, skipped) = p.conditions();
    assert_eq!((conditions.len(), skipped.len()), (1, 1));
}

#[test]
fn wilson_interval_matches_published_examples() {
    // Newcombe 1998, Statist. Med. 17, 857–872, Table I (values recalled): 81/263 → 0.2553–0.3662,
    // 15/148 → 0.0624–0.1605.
    let (lo, hi) = wilson_interval(81, 263, Z95);
    assert!(
        (lo - 0.2553).abs() < 6e-5 && (hi - 0.3662).abs() < 6e-5,
        "{lo} {hi}"
    );
    let (lo, hi) = wilson_interval(15, 148, Z95);
    assert!(
        (lo - 0.0624).abs() < 6e-5 && (hi - 0.1605).abs() < 6e-5,
        "{lo} {hi}"
    );
    // Closed form at k = 0: upper bound z²/(n + z²) (Wilson 1927), lower bound 0.
    let (lo, hi) = wilson_interval(0, 10, Z95);
    assert_eq!(lo, 0.0);
    assert!((hi - Z95 * Z95 / (10.0 + Z95 * Z95)).abs() < 1e-15);
}

#[test]
fn chi_square_quantiles_match_the_tables() {
    // Standard table values (recalled): χ²₀.₉₇₅(10) = 20.483, χ²₀.₀₂₅(10) = 3.247,
    // χ²₀.₉₇₅(30) = 46.979, χ²₀.₀₂₅(30) = 16.791. Wilson–Hilferty is within 1 % from ν = 3 on.
    for (nu, z, want) in [
        (10, Z95, 20.483),
        (10, -Z95, 3.247),
        (30, Z95, 46.979),
        (30, -Z95, 16.791),
    ] {
        let got = chi_square_quantile(nu, z);
        assert!((got / want - 1.0).abs() < 0.01, "ν {nu}: {got} vs {want}");
    }
}

fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("finespike-campaign-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn tidy_files_read_back_in_rust_and_python() {
    let c = run(&small_plan(), &|_, _| {}).unwrap();
    check_tidy(&c, "tidy");
    let c = run(&array_plan(), &|_, _| {}).unwrap();
    check_tidy(&c, "tidy-array");
}

/// A snapshot plan: a uniform line array, uncorrelated and coherent pairs, exact and noisy data;
/// `greedy` takes no snapshots and is refused.
fn array_plan() -> Plan {
    Plan::from_json(
        r#"{
          "seed": 9, "draws": 3,
          "grid": {"bands": [{"array": {"sensors": 10, "snapshots": 20}}], "separations": [3.0],
                   "spikes": [2], "snr_db": [null, 20.0],
                   "correlations": ["uncorrelated", "coherent"], "spacing": 0.5},
          "methods": [{"name": "esprit"}, {"name": "music"}, {"name": "greedy"}]
        }"#,
        "plan.json",
    )
    .unwrap()
}

#[test]
fn array_conditions_run_through_the_snapshot_estimators() {
    let plan = array_plan();
    let one = run_with_threads(&plan, 1);
    let mut two = run_with_threads(&plan, 2);
    let mut one_t = one.trials.clone();
    for t in one_t.iter_mut().chain(two.trials.iter_mut()) {
        t.seconds = 0.0;
    }
    assert_eq!(one_t, two.trials);
    // 2 relations × 2 SNR × 3 draws × 3 methods.
    assert_eq!(one.trials.len(), 2 * 2 * 3 * 3);
    for t in &one.trials {
        assert_eq!(t.condition.band.snapshots(), Some(20));
        if t.method == "greedy" {
            assert_eq!(t.status, "refused");
            assert!(
                t.error.as_deref().unwrap().contains("snapshot"),
                "{:?}",
                t.error
            );
            continue;
        }
        // Two sources 3/M apart, 20 dB per source, 20 snapshots: both subspace methods find them
        // (spatial smoothing handles the coherent pair).
        assert!(t.complete, "{t:?}");
        if t.sigma == 0.0 {
            // Exact data: exact at any separation with enough sensors (Liao & Fannjiang 2016,
            // ACHA 40(1)), here to the plan's 1e-3/M.
            assert!(t.success, "{t:?}");
        } else {
            for l in &t.lines {
                // The conditional bound is there and the error within six of its deviations (a
                // bound too small by an order of magnitude would fail this).
                let r = l.error_over_crb.unwrap();
                assert!(r.abs() < 6.0, "{t:?}");
            }
        }
    }
    let rows: Vec<_> = one.trials.iter().flat_map(|t| t.rows()).collect();
    assert!(rows
        .iter()
        .all(|r| r.domain == "array" && r.snapshots == Some(20)));
    assert!(rows.iter().any(|r| r.correlation == "coherent"));
    assert!(rows.iter().all(|r| r.spacing == Some(0.5)));
    let s = one.summaries();
    assert_eq!(s.len(), one.conditions.len() * 3);
}

fn check_tidy(c: &Campaign, name: &str) {
    let dir = temp_dir(name);
    let csv_path = dir.join("trials.csv");
    let jsonl_path = dir.join("trials.jsonl");
    c.write_csv(std::fs::File::create(&csv_path).unwrap())
        .unwrap();
    c.write_jsonl(std::fs::File::create(&jsonl_path).unwrap())
        .unwrap();
    let rows: usize = c.trials.iter().map(|t| t.lines.len().max(1)).sum();

    // Rust: one header, every row the header's width, numeric columns parse, booleans are words.
    let text = std::fs::read_to_string(&csv_path).unwrap();
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    for col in [
        "trial",
        "method",
        "separation_res",
        "snr_db",
        "line",
        "error_res",
        "error_over_crb",
        "success",
    ] {
        assert!(header.iter().any(|h| h == col), "missing column {col}");
    }
    let mut n = 0;
    for rec in reader.records() {
        let rec = rec.unwrap();
        assert_eq!(rec.len(), header.len());
        for (h, v) in header.iter().zip(rec.iter()) {
            match h.as_str() {
                "method" | "domain" | "amplitudes" | "status" | "error" | "correlation" => {}
                "complete" | "success" | "resolved" | "line_found" => {
                    assert!(v == "true" || v == "false", "{h} = {v}")
                }
                _ => assert!(v.is_empty() || v.parse::<f64>().is_ok(), "{h} = {v}"),
            }
        }
        n += 1;
    }
    assert_eq!(n, rows);
    let jsonl = std::fs::read_to_string(&jsonl_path).unwrap();
    assert_eq!(jsonl.lines().count(), rows);
    for line in jsonl.lines() {
        let v: serde_json::Value = serde_json::from_str(line).unwrap();
        assert_eq!(v.as_object().unwrap().len(), header.len());
    }

    // Python (stdlib csv/json only, as on any machine): the same rows, columns and types.
    let script = r#"
import csv, json, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="")))
objs = [json.loads(l) for l in open(sys.argv[2])]
assert len(rows) == len(objs), (len(rows), len(objs))
text = {"method", "domain", "amplitudes", "status", "error", "correlation"}
flags = {"complete", "success", "resolved", "line_found"}
for r, o in zip(rows, objs):
    assert set(r) == set(o), set(r) ^ set(o)
    for k, v in r.items():
        if k in text:
            assert (v == "" and o[k] is None) or v == o[k], (k, v, o[k])
        elif k in flags:
            assert v in ("true", "false") and (v == "true") == o[k], (k, v, o[k])
        elif v == "":
            assert o[k] is None, (k, o[k])
        else:
            assert abs(float(v) - float(o[k])) <= 1e-12 * max(1.0, abs(float(v))), (k, v, o[k])
print(len(rows))
"#;
    let out = Command::new("python3")
        .arg("-c")
        .arg(script)
        .arg(&csv_path)
        .arg(&jsonl_path)
        .output()
        .expect("python3 runs");
    assert!(
        out.status.success(),
        "python3: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        String::from_utf8_lossy(&out.stdout).trim(),
        rows.to_string()
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// Draw `draw` of the real-positive cell (`spikes`, `separation` in 1/N) of the evaluation's quick
/// phase-transition map (seed 1501, `N = 33`; invented scenes) and `sdp`'s estimate of it.
fn sdp_on_positive_cluster(
    spikes: usize,
    separation: f64,
    draw: usize,
) -> (finespike::eval::campaign::Scene, finespike::Estimate) {
    use finespike::eval::campaign::{draw_scene, trial_seed, AmplitudePattern};
    let plan = Plan::from_json(
        r#"{"seed": 1501, "draws": 4,
            "grid": {"bands": [{"fc": 16}], "separations": [0.3, 0.6, 0.9, 1.2, 1.5, 1.8, 2.1, 2.5],
                     "spikes": [2, 4, 6, 8],
                     "amplitudes": ["random_phase", "real_positive", "alternating_sign"]},
            "methods": [{"name": "sdp"}]}"#,
        "plan.json",
    )
    .unwrap();
    let (conditions, _) = plan.conditions();
    let c = conditions
        .iter()
        .find(|c| {
            c.amplitudes == AmplitudePattern::RealPositive
                && c.spikes == spikes
                && c.separation_res == separation
        })
        .unwrap();
    let scene = draw_scene(c, trial_seed(plan.seed, c.index, draw)).unwrap();
    let est = finespike::registry::estimator_by_name("sdp")
        .unwrap()
        .estimate(&scene.data)
        .unwrap();
    (scene, est)
}

/// The polish on exact data runs until the exact fit: four real-positive spikes `0.3/N` apart in
/// `N = 33` (a cell of the evaluation's quick phase-transition map, its invented draws) came back
/// `solved` with positions up to `2·10⁻²/N` off when the polish stopped at its ordinary iteration
/// limit (`examples/exact_cluster.rs`). The check value is the scene's own truth; ESPRIT reaches it
/// to `10⁻¹¹/N` on the same draws, so the spikes are identifiable to that level.
#[test]
fn sdp_polishes_a_close_positive_cluster_to_the_exact_fit() {
    // Draws 0, 2 and 3 (draw 1 the convex solver merges to three spikes and reports reduced
    // accuracy: a separate matter, see the evaluation report).
    for draw in [0usize, 2, 3] {
        let (scene, est) = sdp_on_positive_cluster(4, 0.3, draw);
        assert_eq!(est.spikes.len(), 4, "draw {draw}");
        let mut got = est.spikes.positions();
        got.sort_by(f64::total_cmp);
        let mut truth = scene.truth.positions();
        truth.sort_by(f64::total_cmp);
        for (g, t) in got.iter().zip(&truth) {
            // 1e-9/N: a hundred times the error ESPRIT leaves on these draws, ten million times
            // below what the stalled polish left.
            assert!((g - t).abs() * 33.0 < 1e-9, "draw {draw}: {g} vs {t}");
        }
    }
}

/// Nothing short of the exact fit is called `solved` on exact data: six real-positive spikes 0.3/N
/// apart and eight 0.6/N apart (cells of the evaluation's quick map, its invented draws) come back
/// from the interior point one spike short, fitted to 1e-9–3e-8‖y‖, and were reported `solved`
/// under the former 1e-6‖y‖ exact-fit rule. The check value is the scene's own truth.
#[test]
fn sdp_does_not_call_a_short_support_solved() {
    use finespike::Status;
    let mut short = 0;
    for (spikes, sep) in [(6usize, 0.3), (8, 0.6)] {
        for draw in 0..2 {
            let (_, est) = sdp_on_positive_cluster(spikes, sep, draw);
            if est.spikes.len() != spikes {
                short += 1;
                assert_ne!(
                    est.status,
                    Status::Solved,
                    "{spikes} spikes {sep}/N draw {draw}"
                );
            }
        }
    }
    // The draws above are the short ones (measured): the test would pass vacuously otherwise.
    assert_eq!(short, 4);
}
