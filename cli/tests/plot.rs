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
    // Invented under-resolved scene: 2 lines 0.8/fc apart at fc = 10, exact data.
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
        "1/fc = 0.1000",
        "closest pair 0.800/fc",
        "UNDER-RESOLVED",
        "Dual certificate",
    ] {
        assert!(svg.contains(needle), "missing '{needle}'");
    }
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
}
