//! Tests of the snapshot file formats: good files read back exactly, every bad file is refused with
//! its line. Values are invented.

use super::*;
use crate::eval::array_scene::{ArrayScene, SourceCorrelation};

fn err(text: &str) -> String {
    read_snapshots_text(text, "x.csv", None)
        .unwrap_err()
        .to_string()
}

#[test]
fn reads_sensor_files_in_any_row_order_and_case() {
    // 3 sensors × 2 snapshots, rows shuffled, float-written indices, mixed-case header.
    let text = "N,Snapshot,RE,IM\n2,1,6,0\n0,0,1,0.5\n1.0,0,2,0\n2,0,3,0\n\n0,1e0,4,0\n1,1,5,-1\n";
    let data = read_snapshots_text(text, "a.csv", None).unwrap();
    assert_eq!((data.len(), data.snapshot_count()), (3, 2));
    assert_eq!(data.domain(), Domain::Time);
    // Row i of the values belongs to internal index k = −n, sorted: n = 2, 1, 0.
    assert_eq!(data.indices(), &[-2, -1, 0]);
    let x = data.values();
    assert_eq!(x[(2, 0)], Complex64::new(1.0, 0.5));
    assert_eq!(x[(1, 1)], Complex64::new(5.0, -1.0));
    assert_eq!(x[(0, 1)], Complex64::new(6.0, 0.0));
    assert!(is_snapshot_text(text));
    assert!(!is_snapshot_text("n,re,im\n0,1,0\n"));
    assert!(is_snapshot_text("\u{feff}k, snapshot, re, im\n"));
}

#[test]
fn written_files_read_back_exactly() {
    let draw = ArrayScene::new(6, 4, &[0.1, -0.27])
        .unwrap()
        .with_snr_db(3.0)
        .unwrap()
        .with_missing_sensors(&[2])
        .unwrap()
        .with_seed(11)
        .draw()
        .unwrap();
    let text = snapshots_to_csv(&draw.data);
    assert!(text.starts_with("n,snapshot,re,im\n0,0,"), "{text}");
    // 5 sensors × 4 snapshots + the header.
    assert_eq!(text.lines().count(), 21);
    assert!(!text.contains("\n2,"), "sensor 2 is missing: {text}");
    let back = read_snapshots_text(&text, "w.csv", None).unwrap();
    assert_eq!(back.indices(), draw.data.indices());
    assert_eq!(back.values(), draw.data.values());
    assert_eq!(back.band_len(), 6);
    // Fourier snapshots keep their k.
    let f = read_snapshots_text("k,snapshot,re,im\n-1,0,1,0\n1,0,2,0\n", "f.csv", Some(3)).unwrap();
    assert_eq!((f.domain(), f.band_len()), (Domain::Fourier, 7));
    let text = snapshots_to_csv(&f);
    assert_eq!(text, "k,snapshot,re,im\n-1,0,1,0\n1,0,2,0\n");
}

#[test]
fn a_missing_row_names_its_line_sensor_and_snapshot() {
    // Sensor 1 is present in snapshot 0 but not in snapshot 1: its row belongs before line 6.
    let text = "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n2,0,1,0\n0,1,1,0\n2,1,1,0\n";
    assert_eq!(
        err(text),
        "x.csv, line 6: found no row for sensor n = 1 in snapshot 1 (its rows are on lines 5..6), \
         expected every sensor n of the file in every snapshot; a sensor absent from every \
         snapshot counts as missing, one absent from some snapshots only is an error"
    );
    // The last sensor missing from the first snapshot: expected after that snapshot's last row.
    let text = "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n0,1,1,0\n1,1,1,0\n2,1,1,0\n";
    assert!(
        err(text).starts_with("x.csv, line 3: found no row for sensor n = 2 in snapshot 0"),
        "{}",
        err(text)
    );
    // A sensor absent from every snapshot is a missing sensor, not an error.
    let ok = read_snapshots_text(
        "n,snapshot,re,im\n0,0,1,0\n3,0,1,0\n0,1,1,0\n3,1,1,0\n",
        "x.csv",
        None,
    )
    .unwrap();
    assert_eq!((ok.len(), ok.band_len()), (2, 4));
    // A snapshot number skipped altogether.
    let text = "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n0,2,1,0\n1,2,1,0\n";
    assert_eq!(
        err(text),
        "x.csv, line 5: found no row for snapshot 1 (the file goes on to snapshot 2), expected \
         snapshots numbered 0..L-1 without gaps"
    );
}

#[test]
fn duplicates_and_bad_values_name_their_lines() {
    let text = "n,snapshot,re,im\n0,0,1,0\n1,0,1,0\n0,0,2,0\n";
    assert_eq!(
        err(text),
        "x.csv, line 4: found sensor n = 0 in snapshot 0 again (first on line 2), expected each \
         sensor n once per snapshot"
    );
    assert_eq!(
        err("n,snapshot,re,im\n0,0,1,0\n1,0,abc,0\n"),
        "x.csv, line 3: found 'abc' in column re, expected a number"
    );
    assert_eq!(
        err("n,snapshot,re,im\n0,0,1,0\n1,0,1,NaN\n"),
        "x.csv, line 3: found 'NaN' in column im, expected a finite number"
    );
    assert_eq!(
        err("n,snapshot,re,im\n0,0,1,0\n1,0.5,1,0\n"),
        "x.csv, line 3: found '0.5' in column snapshot, expected a snapshot number 0, 1, 2, …"
    );
    assert!(err("n,snapshot,re,im\n0,-1,1,0\n").contains("line 2: found '-1' in column snapshot"));
    assert_eq!(
        err("n,snapshot,re,im\n2.5,0,1,0\n"),
        "x.csv, line 2: found '2.5' in column n, expected an integer sensor index"
    );
    assert_eq!(
        err("n,snapshot,re,im\n0,0,1\n"),
        "x.csv, line 2: found 3 fields, expected 4 (n,snapshot,re,im)"
    );
    assert!(err("n,re,im\n0,1,0\n").starts_with("x.csv, line 1: found header 'n,re,im'"));
    assert!(err("").starts_with("x.csv, line 1: found an empty file"));
    assert!(err("n,snapshot,re,im\n\n").starts_with("x.csv, line 2: found no data rows"));
    let e = read_snapshots_text("k,snapshot,re,im\n0,0,1,0\n4,0,1,0\n", "f.csv", Some(3))
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("f.csv, line 3: found k = 4"), "{e}");
    // One sensor only: the record's own rule, in its own words.
    let e = err("n,snapshot,re,im\n5,0,1,0\n5,1,1,0\n");
    assert!(e.contains("single index"), "{e}");
}

#[test]
fn truths_round_trip_and_give_the_bound_of_their_draw() {
    let draw = ArrayScene::new(8, 5, &[0.12, 0.4])
        .unwrap()
        .with_snr_db(10.0)
        .unwrap()
        .with_spacing(0.5)
        .unwrap()
        .with_missing_sensors(&[3])
        .unwrap()
        .with_seed(2)
        .draw()
        .unwrap();
    let truth = ArrayTruth::from_draw(&draw, 8, Some(10.0), SourceCorrelation::Uncorrelated, 2);
    assert_eq!(truth.missing_sensors, vec![3]);
    assert_eq!(truth.sources[0].power, 10.0);
    let text = array_truth_json(&truth);
    assert!(is_array_truth_text(&text));
    assert!(!is_array_truth_text("{\"spikes\": []}"));
    let back = parse_array_truth(&text, "t.json").unwrap();
    assert_eq!(back, truth);
    // The noiseless record is the draw's data without noise: the same array and spacing.
    let clean = back.noiseless().unwrap();
    assert_eq!(clean.indices(), draw.data.indices());
    assert_eq!(clean.spacing(), Some(0.5));
    // Its bound is the library's conditional bound of the drawn amplitudes.
    let want =
        crate::bounds::conditional_crb(&draw.data, &draw.positions, &draw.amplitudes, draw.sigma)
            .unwrap();
    let got = back.conditional_crb(1.0).unwrap();
    for (a, b) in got.iter().zip(&want) {
        assert!((a / b - 1.0).abs() < 1e-12, "{got:?} vs {want:?}");
    }
    // Inconsistent truths are refused.
    let mut bad = truth.clone();
    bad.sources[1].amplitudes.pop();
    let e = parse_array_truth(&array_truth_json(&bad), "t.json").unwrap_err();
    assert!(e.to_string().contains("source 1 has 4 amplitudes"), "{e}");
    let e = parse_array_truth("{\"kind\": \"array\"}", "t.json").unwrap_err();
    assert!(e.to_string().contains("not an array truth"), "{e}");
}

#[test]
fn array_results_carry_sources_with_their_snapshots_angles_and_bounds() {
    let scene = ArrayScene::new(8, 3, &[0.1, -0.2])
        .unwrap()
        .with_snr_db(20.0)
        .unwrap()
        .with_seed(4);
    for spacing in [None, Some(0.5)] {
        let scene = match spacing {
            Some(d) => scene.clone().with_spacing(d).unwrap(),
            None => scene.clone(),
        };
        let draw = scene.draw().unwrap();
        let est =
            ArrayEstimate::assemble("test", &draw.data, &draw.positions, crate::Status::Solved)
                .unwrap()
                .noise(Some(1.0), false, None);
        let v = array_estimate_json(&est, &draw.data);
        assert_eq!(v["method"], "test");
        assert_eq!(v["status"], "solved");
        assert_eq!(v["resolution"], 0.125);
        assert_eq!(v["array"]["measured"], json!([0, 1, 2, 3, 4, 5, 6, 7]));
        let sources = v["sources"].as_array().unwrap();
        assert_eq!(sources.len(), 2);
        // Sorted by position: 0.1, then −0.2 (position 0.8).
        let f = sources[1]["frequency"].as_f64().unwrap();
        assert!((f + 0.2).abs() < 1e-12, "{f}");
        for s in sources {
            assert_eq!(s["amplitudes"].as_array().unwrap().len(), 3);
            assert!(s["crb_std"].as_f64().unwrap() > 0.0);
            assert!(s["power"].as_f64().unwrap() > 0.0);
            assert_eq!(s.get("angle_deg").is_some(), spacing.is_some(), "{s}");
        }
        if spacing.is_some() {
            // asin(−0.2/0.5) = −23.58°.
            let a = sources[1]["angle_deg"].as_f64().unwrap();
            assert!((a - (-0.4f64).asin().to_degrees()).abs() < 1e-9, "{a}");
            assert!(sources[1]["crb_std_angle_deg"].as_f64().unwrap() > 0.0);
        }
    }
}

#[test]
fn the_stochastic_bound_uses_the_scenes_source_covariance() {
    // Check values of the research notes (/work/shared/notes/snapshots-and-real-signals.md §A(3),
    // computed there and matched to a full Fisher-information evaluation): 8 sensors at half a
    // wavelength, 100 snapshots, two sources at 0 dB at θ = 0° and 8°: var_sto f = 1.76242e-5 per
    // source for P = I, 1.66067e-5 with correlation 0.9.
    let f2 = 0.5 * 8f64.to_radians().sin();
    let truth = |correlation| ArrayTruth {
        kind: ARRAY_TRUTH_KIND.into(),
        sensors: 8,
        missing_sensors: vec![],
        snapshots: 100,
        spacing: Some(0.5),
        sigma: 1.0,
        snr_db: Some(0.0),
        correlation,
        seed: None,
        sources: [0.0, f2]
            .iter()
            .map(|&f| TruthSource {
                position: crate::model::wrap(f),
                frequency: f,
                angle_deg: None,
                power: 1.0,
                sample_power: 1.0,
                amplitudes: vec![[1.0, 0.0]; 100],
            })
            .collect(),
    };
    for (c, want) in [
        (SourceCorrelation::Uncorrelated, 1.76242e-5),
        (SourceCorrelation::Correlated(0.9), 1.66067e-5),
    ] {
        let var = truth(c).stochastic_crb(1.0).unwrap();
        for v in &var {
            // The notes give 6 significant digits.
            assert!(
                (v / want - 1.0).abs() < 5e-6,
                "{c:?}: {var:?} against {want}"
            );
        }
    }
    // Coherent copies: rank one, with the drawn phase between the two.
    let mut t = truth(SourceCorrelation::Coherent);
    t.sources[1].amplitudes = vec![[0.0, 1.0]; 100];
    let p = t.source_covariance();
    assert!(
        (p[(0, 1)] - Complex64::new(0.0, -1.0)).norm() < 1e-15,
        "{p}"
    );
    assert!((p[(1, 0)] - Complex64::new(0.0, 1.0)).norm() < 1e-15, "{p}");
    // Three correlated sources: ρ with the first, ρ² between the others.
    let mut t = truth(SourceCorrelation::Correlated(0.5));
    let mut third = t.sources[1].clone();
    third.position = 0.3;
    third.power = 4.0;
    t.sources.push(third);
    let p = t.source_covariance();
    assert_eq!((p[(0, 2)].re, p[(1, 2)].re, p[(2, 2)].re), (1.0, 0.5, 4.0));
}
