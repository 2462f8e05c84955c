//! Batches: the parallel result equals the one-by-one result bit for bit (every field except the
//! wall-clock `solve_seconds`), in input order, with one thread and with several.

use finespike::batch::{estimate_batch, estimate_batch_with_progress};
use finespike::{
    Complex64, Domain, Esprit, Estimate, Estimator, Greedy, GridL1, Measurements, Result, Scenario,
    Sfw, Tv,
};
use std::sync::Mutex;

/// Invented scenes: fc from 12 to 20, 1 to 3 spikes at 1.5 to 2.5 Rayleigh lengths, some exact, some at
/// 25 dB, some time records; and one record that the subspace methods refuse (gaps).
fn records(n: usize) -> Vec<Measurements> {
    let mut out: Vec<Measurements> = (0..n as u64)
        .map(|i| {
            let fc = 12 + (i as usize * 5) % 9;
            let mut sc = Scenario::new(fc, 1 + (i as usize % 3))
                .with_separation(1.5 + (i % 3) as f64 * 0.5)
                .with_seed(100 + i);
            if i % 3 == 1 {
                sc = sc.with_snr_db(25.0);
            }
            if i % 5 == 2 {
                sc = sc.with_domain(Domain::Time);
            }
            sc.generate().expect("scene").data
        })
        .collect();
    let gappy = Measurements::fourier(6, &[-6, -3, 0, 1, 4, 6], &[Complex64::new(1.0, 0.5); 6])
        .expect("gappy record");
    out.insert(n / 2, gappy);
    out
}

/// `e` without its wall-clock time.
fn timeless(e: &Estimate) -> Estimate {
    let mut e = e.clone();
    e.diagnostics.solve_seconds = 0.0;
    e
}

/// The batch result equals the sequential one: same `Ok`/`Err`, same errors, and for estimates the
/// same status, positions and amplitudes bit for bit, and every other field equal.
fn assert_same(batch: &[Result<Estimate>], single: &[Result<Estimate>], what: &str) {
    assert_eq!(batch.len(), single.len(), "{what}");
    for (i, (b, s)) in batch.iter().zip(single).enumerate() {
        match (b, s) {
            (Ok(b), Ok(s)) => {
                assert_eq!(b.status, s.status, "{what}, record {i}");
                assert_eq!(b.spikes.len(), s.spikes.len(), "{what}, record {i}");
                for (x, y) in b.spikes.iter().zip(&s.spikes) {
                    assert_eq!(
                        x.position.to_bits(),
                        y.position.to_bits(),
                        "{what}, record {i}"
                    );
                    assert_eq!(
                        x.amplitude.re.to_bits(),
                        y.amplitude.re.to_bits(),
                        "{what}, record {i}"
                    );
                    assert_eq!(
                        x.amplitude.im.to_bits(),
                        y.amplitude.im.to_bits(),
                        "{what}, record {i}"
                    );
                }
                assert_eq!(timeless(b), timeless(s), "{what}, record {i}");
            }
            (Err(b), Err(s)) => assert_eq!(b, s, "{what}, record {i}"),
            _ => panic!("{what}, record {i}: {b:?} against {s:?}"),
        }
    }
}

fn pool(threads: usize) -> rayon::ThreadPool {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("thread pool")
}

#[test]
fn batch_equals_one_by_one_with_one_and_several_threads() {
    let data = records(24);
    let estimators: Vec<Box<dyn Estimator>> = vec![
        Box::new(Sfw::default()),
        Box::new(Esprit::default()),
        Box::new(Greedy::default()),
        Box::new(GridL1::default()),
    ];
    for est in &estimators {
        let single: Vec<Result<Estimate>> = data.iter().map(|d| est.estimate(d)).collect();
        assert!(
            single.iter().filter(|r| r.is_ok()).count() >= data.len() - 1,
            "{}",
            est.name()
        );
        for threads in [1, 2, 4] {
            let batch = pool(threads).install(|| estimate_batch(est.as_ref(), &data));
            assert_same(
                &batch,
                &single,
                &format!("{} with {threads} threads", est.name()),
            );
        }
    }
}

#[test]
fn interior_point_batch_equals_one_by_one() {
    // The interior point at small bands only (fc ≤ 10), exact and estimated noise level.
    let data: Vec<Measurements> = (0..6u64)
        .map(|i| {
            let mut sc = Scenario::new(6 + i as usize % 5, 2)
                .with_separation(2.0)
                .with_seed(i);
            if i % 2 == 1 {
                sc = sc.with_snr_db(30.0);
            }
            sc.generate().expect("scene").data
        })
        .collect();
    for est in [Tv::exact(), Tv::default()] {
        let single: Vec<Result<Estimate>> = data.iter().map(|d| est.estimate(d)).collect();
        for threads in [1, 3] {
            let batch = pool(threads).install(|| estimate_batch(&est, &data));
            assert_same(&batch, &single, &format!("sdp with {threads} threads"));
        }
    }
}

#[test]
fn progress_counts_every_record_once() {
    let data = records(10);
    let seen = Mutex::new(Vec::new());
    let results = pool(3).install(|| {
        estimate_batch_with_progress(&Esprit::default(), &data, |done, total| {
            seen.lock().unwrap().push((done, total));
        })
    });
    assert_eq!(results.len(), data.len());
    let mut seen = seen.into_inner().unwrap();
    seen.sort_unstable();
    let expected: Vec<(usize, usize)> = (1..=data.len()).map(|d| (d, data.len())).collect();
    assert_eq!(seen, expected);
    // The record with gaps (inserted at index 10 / 2 = 5) keeps its place and its own error.
    assert!(matches!(
        results[5],
        Err(finespike::Error::NeedsContiguous { .. })
    ));
}

#[test]
fn empty_batch_gives_no_results_and_no_progress() {
    let results = estimate_batch_with_progress(&Sfw::exact(), &[], |_, _| {
        panic!("no record, no progress report")
    });
    assert!(results.is_empty());
}

#[test]
fn snapshot_batch_equals_one_by_one_and_keeps_refusals_in_place() {
    use finespike::eval::array_scene::ArrayScene;
    use finespike::{estimate_snapshots_batch, ArrayEstimate, Snapshots};
    // Invented array scenes: 10 to 14 sensors, 20 snapshots, two sources 2/M apart at 15 dB.
    let data: Vec<Snapshots> = (0..5u64)
        .map(|i| {
            let m = 10 + 2 * (i as usize % 3);
            let f0 = 0.1 + 0.05 * i as f64;
            ArrayScene::new(m, 20, &[f0, f0 + 2.0 / m as f64])
                .and_then(|s| s.with_snr_db(15.0))
                .map(|s| s.with_seed(40 + i))
                .and_then(|s| s.draw())
                .expect("array scene")
                .data
        })
        .collect();
    let timeless = |e: &ArrayEstimate| {
        let mut e = e.clone();
        e.diagnostics.solve_seconds = 0.0;
        e
    };
    for est in [
        Box::new(Esprit::default()) as Box<dyn Estimator>,
        Box::new(Tv::default()),
    ] {
        let single: Vec<_> = data.iter().map(|d| est.estimate_snapshots(d)).collect();
        for threads in [1, 3] {
            let batch = pool(threads).install(|| estimate_snapshots_batch(est.as_ref(), &data));
            assert_eq!(batch.len(), single.len());
            for (i, (b, s)) in batch.iter().zip(&single).enumerate() {
                let (b, s) = (b.as_ref().expect("batch"), s.as_ref().expect("single"));
                assert_eq!(b.sources.len(), 2, "{} record {i}", est.name());
                assert_eq!(timeless(b), timeless(s), "{} record {i}", est.name());
            }
        }
    }
    // A method that takes no snapshots refuses every record, each in its place.
    let refused = estimate_snapshots_batch(&GridL1::default(), &data);
    assert_eq!(refused.len(), data.len());
    assert!(refused
        .iter()
        .all(|r| matches!(r, Err(finespike::Error::SnapshotsNotTaken { .. }))));
}
