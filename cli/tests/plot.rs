//! `plot`: the SVG figure, its caption and its failures.
//!
//! Scenes are invented (seeded `simulate` runs or the reference cases of tests/refdata); sizes are
//! small so that the file runs in seconds.
mod common;

use common::*;

/// Crude well-formedness of an SVG: one root, balanced text and group elements, no NaN coordinates.
fn check_svg(svg: &str) {
    assert!(svg.starts_with("<svg"), "starts with the root");
    assert!(svg.trim_end().ends_with("</svg>"));
    assert_eq!(svg.matches("<svg").count(), 1);
    assert_eq!(svg.matches("<text").count(), svg.matches("</text>").count());
    assert_eq!(svg.matches("<g").count(), svg.matches("</g>").count());
    assert!(!svg.contains("NaN") && !svg.contains("inf\""));
}

#[test]
fn plot_writes_an_svg_with_data_dual_spikes_and_caption() {
    let dir = tmpdir("plot");
    // Invented scene: 2 lines 0.8/fc apart at fc = 10, exact data: 0.8·21/10 = 1.68 resolution cells
    // 1/N (N = 21), resolved by the record but below the proven threshold 1.26/fc.
    let (csv, truth) = simulate(
        &dir,
        "p",
        &[
            "--fc",
            "10",
            "--count",
            "2",
            "--separation",
            "0.8",
            "--seed",
            "4",
        ],
    );
    let svg_path = dir.join("p.svg");
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--sigma",
        "0",
        "-o",
        s(&svg_path),
    ]);
    ok(&out);
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    check_svg(&svg);
    for needle in [
        "periodogram",
        "true spikes",
        "recovered spikes",
        "dual polynomial |q(t)|",
        "|q| = 1",
        "resolution 1/N = 0.04762",
        "position τ on [0, 1)",
        "closest pair 1.68 resolution cells (1/N) = 0.8/fc apart",
        "Dual certificate",
    ] {
        assert!(svg.contains(needle), "missing '{needle}'");
    }
    assert!(!svg.contains("UNDER-RESOLVED"));
    // Curves: the periodogram and |q| (plus axes); stems as circles: 2 true + 2 recovered in the top
    // panel, 2 on |q| below, and the legend markers.
    assert!(svg.matches("<polyline").count() > 10);
    assert!(svg.matches("<circle").count() >= 6);
    // A method without a dual polynomial: no |q| panel, and the caption says so.
    let svg_path = dir.join("music.svg");
    ok(&run(&[
        "plot",
        "-i",
        s(&csv),
        "-m",
        "music",
        "-o",
        s(&svg_path),
        "--range",
        "0,0.5",
    ]));
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    check_svg(&svg);
    assert!(svg.contains("produces no dual polynomial") && !svg.contains("dual polynomial |q(t)|"));
    // Bad range: command-line error; unwritable output: exit 5.
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "-o",
        s(&svg_path),
        "--range",
        "0.5,0.2",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let out = run(&["plot", "-i", s(&csv), "-o", "/nonexistent/dir/x.svg"]);
    assert_eq!(out.status.code(), Some(5));
    // The drawing is SVG: another extension is refused before anything is computed or written.
    let png = dir.join("x.png");
    let out = run(&["plot", "-i", s(&csv), "-o", s(&png)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains(".svg") && !png.exists());
}

#[test]
fn plot_axis_is_in_the_records_unit() {
    let dir = tmpdir("plotunit");
    let rec = RealRecord {
        first: 1000,
        samples: 128,
        rate: 1000.0,
        cosines: vec![(123.4, 1.0, 0.0), (300.0, 0.5, 1.0)],
        offset: 2.0,
        slope: 0.0,
        rho: 0.0,
        innovation: 0.01,
        missing: 0.0,
        max_run: 1,
        seed: 3,
    };
    let csv = write(&dir, "r.csv", &rec.csv());
    let svg_path = dir.join("r.svg");
    ok(&run(&[
        "plot",
        "-i",
        s(&csv),
        "--rate",
        "1000",
        "-o",
        s(&svg_path),
    ]));
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    check_svg(&svg);
    for needle in [
        "frequency f (Hz)",
        "resolution 1/N = 7.812 Hz",
        "recovered lines",
        "N = 128 time samples (n = 1000..1127)",
    ] {
        assert!(svg.contains(needle), "missing '{needle}'");
    }
    // A real record's axis is [0, R/2]: --range in Hz inside it, refused outside.
    ok(&run(&[
        "plot",
        "-i",
        s(&csv),
        "--rate",
        "1000",
        "-o",
        s(&svg_path),
        "--range",
        "100,150",
    ]));
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    assert!(svg.contains("View 100..150 of 0..500 Hz"), "view caption");
    let out = run(&[
        "plot",
        "-i",
        s(&csv),
        "--rate",
        "1000",
        "-o",
        s(&svg_path),
        "--range",
        "100,600",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("0 <= FROM < TO <= 500 (Hz)"));
}

/// A long record (invented: 3 lines, the closest pair 2/fc = 4 resolution cells apart, N = 8192,
/// exact data): by default the view zooms on the closest pair, which would fall within three pixels
/// at the whole view, the top panel is in decibels, the tick labels and the caption carry the
/// digits that tell the view's edges apart, and the drawing stays small (one envelope point pair
/// per pixel column, not one per grid point).
#[test]
fn plot_of_a_long_record_zooms_on_the_closest_pair_in_decibels() {
    let dir = tmpdir("plot-long");
    let (csv, truth) = simulate(
        &dir,
        "long",
        &[
            "--samples",
            "8192",
            "--count",
            "3",
            "--separation",
            "2",
            "--seed",
            "2",
        ],
    );
    let zoomed = dir.join("zoomed.svg");
    ok(&run(&[
        "plot",
        "-i",
        s(&csv),
        "--truth",
        s(&truth),
        "--sigma",
        "0",
        "-o",
        s(&zoomed),
    ]));
    let svg = std::fs::read_to_string(&zoomed).unwrap();
    check_svg(&svg);
    assert!(
        svg.contains("modulus (dB: 20·log10)"),
        "decibels from 4096 samples on"
    );
    assert!(
        svg.contains("2 of 3 recovered lines shown"),
        "the closest pair only"
    );
    // View edges with six decimals (the view is about 40 cells = 0.005 cycles/sample wide).
    let caption = svg
        .split("View ")
        .nth(1)
        .expect("the caption names the view");
    let edge = caption.split("..").next().unwrap();
    assert!(
        edge.split('.').nth(1).is_some_and(|d| d.len() >= 4),
        "{edge}"
    );
    // The whole view on request, on a linear scale: the bar is drawn two pixels wide and says so.
    let whole = dir.join("whole.svg");
    ok(&run(&[
        "plot",
        "-i",
        s(&csv),
        "--sigma",
        "0",
        "--view",
        "whole",
        "--levels",
        "linear",
        "-o",
        s(&whole),
    ]));
    let svg = std::fs::read_to_string(&whole).unwrap();
    check_svg(&svg);
    assert!(!svg.contains("View ") && !svg.contains("dB"));
    assert!(svg.contains("bar drawn 2 pixels wide"));
    // About 2 envelope points per pixel column and panel, not the 2^17 grid points.
    assert!(svg.len() < 150_000, "{} bytes", svg.len());
}
