//! Malformed input files, bad settings and failing outputs: messages and exit codes; help texts.
//!
//! Scenes are invented (seeded `simulate` runs or the reference cases of tests/refdata); sizes are
//! small so that the file runs in seconds.
mod common;

use common::*;
use serde_json::Value;

#[test]
fn malformed_sample_files_name_file_line_found_and_expected() {
    let dir = tmpdir("bad");
    // (file name, text, extra args, message fragment); all exit 3.
    let cases: &[(&str, &str, &[&str], &str)] = &[
        (
            "bad_header.csv",
            "freq,re,im\n0,1,0\n",
            &[],
            "line 1: found header 'freq,re,im', expected 'k,re,im'",
        ),
        (
            "missing_column_header.csv",
            "k,re\n0,1\n",
            &[],
            "line 1: found header 'k,re', expected 'k,re,im'",
        ),
        (
            "missing_column_row.csv",
            "k,re,im\n0,1,0\n1,2\n",
            &[],
            "line 3: found 2 fields, expected 3 (k,re,im)",
        ),
        (
            "bad_number.csv",
            "k,re,im\n0,1,0\n1,x,0\n",
            &[],
            "line 3: found 'x' in column re, expected a number",
        ),
        (
            "bad_index.csv",
            "k,re,im\n0,1,0\n0.5,1,0\n",
            &[],
            "line 3: found '0.5' in column k, expected an integer",
        ),
        (
            "nan.csv",
            "k,re,im\n0,nan,0\n",
            &[],
            "line 2: found 'nan' in column re, expected a finite number",
        ),
        (
            "dup.csv",
            "k,re,im\n0,1,0\n1,1,0\n\n1,1,0\n",
            &["--fc", "4"],
            "line 5: found k = 1 again (first on line 3), expected each k at most once",
        ),
        (
            "dup_time.csv",
            "n,re,im\n0,1,0\n1,1,0\n0,1,0\n",
            &[],
            "line 4: found n = 0 again (first on line 2), expected each n at most once",
        ),
        (
            "out_of_band.csv",
            "k,re,im\n0,1,0\n-1,1,0\n5,1,0\n",
            &["--fc", "4"],
            "line 4: found k = 5, expected |k| <= fc = 4",
        ),
        (
            "fractional_time.csv",
            "n,value\n1000,1\n1001.0,2\n1002.5,1\n",
            &[],
            "line 4: found '1002.5' in column n, expected an integer sample index",
        ),
        (
            "real_extra_field.csv",
            "n,value\n0,1\n1,2,3\n",
            &[],
            "line 3: found 3 fields, expected 2 (n,value)",
        ),
        (
            "real_bad_value.csv",
            "N,Value\n0,1\n1,inf\n",
            &[],
            "line 3: found 'inf' in column Value, expected a finite number",
        ),
        (
            "real_dup.csv",
            "n,value\n5,1\n5.0,2\n",
            &[],
            "line 3: found n = 5 again (first on line 2), expected each n at most once",
        ),
        (
            "real_header_only.csv",
            "n,value\n",
            &[],
            "line 2: found no data rows after the header, expected at least one row of two numbers",
        ),
        (
            "header_only.csv",
            "k,re,im\n",
            &[],
            "line 2: found no data rows after the header, expected at least one row",
        ),
        (
            "empty.csv",
            "",
            &[],
            "line 1: found an empty file, expected the header 'k,re,im'",
        ),
    ];
    for (name, text, extra, needle) in cases {
        let p = write(&dir, name, text);
        let mut args = vec!["recover", "-i", s(&p)];
        args.extend_from_slice(extra);
        let out = run(&args);
        assert_eq!(out.status.code(), Some(3), "{name}: {}", stderr(&out));
        let err = stderr(&out);
        assert!(err.contains(needle), "{name}: {err}");
        assert!(
            err.contains(s(&p)),
            "{name}: the message names the file: {err}"
        );
        // The same reader serves every subcommand that takes samples.
        let mut args = vec!["compare", "-i", s(&p), "--methods", "esprit"];
        args.extend_from_slice(extra);
        let out = run(&args);
        assert_eq!(out.status.code(), Some(3), "compare {name}");
    }
    let out = run(&["recover", "-i", "/nonexistent/file.csv"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(stderr(&out).contains("/nonexistent/file.csv: cannot read the file"));
    // A binary file (not UTF-8 text) is named as such, without a line number.
    let binary = dir.join("binary.csv");
    std::fs::write(&binary, [0x6e, 0x2c, 0xff, 0xfe, 0x00, 0x81, 0x0a]).unwrap();
    for sub in ["recover", "plot"] {
        let mut args = vec![sub, "-i", s(&binary)];
        if sub == "plot" {
            args.extend(["-o", "x.svg"]);
        }
        let out = run(&args);
        assert_eq!(out.status.code(), Some(3), "{sub}");
        assert!(
            stderr(&out).contains("binary.csv: cannot read the file: it is not text (not UTF-8)"),
            "{sub}: {}",
            stderr(&out)
        );
    }
    let p = write(&dir, "k.csv", "k,re,im\n0,1,0\n");
    let out = run(&["recover", "-i", s(&p), "--fc", "0"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(stderr(&out).contains("fc is 0"));
    let out = run(&[
        "recover",
        "-i",
        s(&case("nl_fc08_s2p00_cx")),
        "--domain",
        "time",
    ]);
    assert_eq!(out.status.code(), Some(3));
    assert!(stderr(&out)
        .contains("line 1: --domain time expects header 'n,re,im' or 'n,value', found 'k,re,im'"));
}

#[test]
fn malformed_truth_files_name_file_and_line() {
    let dir = tmpdir("badtruth");
    let data = case("nl_fc08_s2p00_cx");
    let cases: &[(&str, &str, &str)] = &[
        (
            "syntax.json",
            "{\"spikes\": [\n  {\"position\": 0.2, \"amplitude\": [1, 0]},\n  {\"position\": ,}\n]}",
            "line 3: not a spike file",
        ),
        ("not_a_list.json", "{\"spikes\": 3}", "line 1: not a spike file"),
        (
            "no_spikes_key.json",
            "{\n\"fc\": 8\n}",
            "missing field `spikes`",
        ),
        (
            "amplitude_shape.json",
            "{\"spikes\": [{\"position\": 0.2, \"amplitude\": 1.0}]}",
            "not a spike file",
        ),
        ("empty.json", "", "not a spike file"),
    ];
    for (name, text, needle) in cases {
        let p = write(&dir, name, text);
        for args in [
            vec![
                "compare",
                "-i",
                s(&data),
                "--truth",
                s(&p),
                "--methods",
                "esprit",
            ],
            vec!["bound", "--truth", s(&p), "--sigma", "0.1", "--fc", "8"],
            vec!["plot", "-i", s(&data), "--truth", s(&p), "-o", "unused.svg"],
        ] {
            let out = run(&args);
            assert_eq!(
                out.status.code(),
                Some(3),
                "{name} {}: {}",
                args[0],
                stderr(&out)
            );
            let err = stderr(&out);
            assert!(err.contains(needle) && err.contains(s(&p)), "{name}: {err}");
        }
    }
}

#[test]
fn estimator_and_output_failures_have_their_exit_codes() {
    let dir = tmpdir("codes");
    // A measured set with gaps: the subspace methods cannot run (exit 4); sdp can.
    let (csv, _) = simulate(
        &dir,
        "gaps",
        &[
            "--fc", "8", "--count", "2", "--subset", "0.7", "--seed", "2",
        ],
    );
    let out = run(&["recover", "-i", s(&csv), "-m", "esprit"]);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    ok(&run(&["recover", "-i", s(&csv), "--sigma", "0", "-q"]));
    // compare: exit 4 only when no method could run; the table still names every error.
    let out = run(&["compare", "-i", s(&csv), "--methods", "esprit,music"]);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    assert!(String::from_utf8_lossy(&out.stdout).contains("esprit: error"));
    ok(&run(&["compare", "-i", s(&csv), "--methods", "esprit,sdp"]));
    // Unwritable output (exit 5).
    let out = run(&[
        "simulate",
        "--out",
        "/nonexistent/dir/x.csv",
        "--truth",
        "/nonexistent/dir/x.json",
    ]);
    assert_eq!(out.status.code(), Some(5));
    // Bad settings are command-line errors (exit 2).
    for args in [
        vec![
            "simulate", "--out", "a.csv", "--truth", "a.json", "--subset", "1.5",
        ],
        vec![
            "simulate",
            "--out",
            "a.csv",
            "--truth",
            "a.json",
            "--count",
            "9",
            "--separation",
            "2",
            "--fc",
            "8",
        ],
        vec!["recover", "-i", s(&csv), "--sigma", "-1"],
        vec!["recover", "-i", s(&csv), "-m", "nosuch"],
    ] {
        let out = run(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {}", stderr(&out));
    }
    // A subspace method takes a given σ into its diagnostics (it does not estimate it).
    let out = run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "-m",
        "music",
        "--sigma",
        "0.1",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert_eq!(v["diagnostics"]["sigma"].as_f64(), Some(0.1));
    assert_eq!(v["diagnostics"]["sigma_estimated"].as_bool(), Some(false));
    // --solver picks the solver of sdp/ast, and is noted as ignored elsewhere.
    let out = run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "--solver",
        "sliding",
    ]);
    let v: Value = serde_json::from_str(&ok(&out)).unwrap();
    assert!(v["diagnostics"]["solver"]
        .as_str()
        .unwrap()
        .contains("Frank-Wolfe"));
    let out = run(&[
        "recover",
        "-i",
        s(&case("nz_fc08_snr30")),
        "-m",
        "esprit",
        "--solver",
        "interior-point",
    ]);
    ok(&out);
    assert!(
        stderr(&out).contains("--solver is ignored"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn help_is_complete() {
    let top = ok(&run(&["--help"]));
    for sub in ["recover", "simulate", "compare", "bound", "plot"] {
        assert!(top.contains(sub), "{sub} in --help");
    }
    assert!(top.contains("Exit codes:") && top.contains("  4  the estimator could not run"));
    for sub in ["recover", "simulate", "compare", "bound", "plot"] {
        let help = ok(&run(&[sub, "--help"]));
        assert!(help.contains("Exit codes:"), "{sub}");
        // Every option carries a description: in long help, the line after an option's name is
        // its text (clap prints a blank line only between options).
        let lines: Vec<&str> = help.lines().collect();
        for (i, l) in lines.iter().enumerate() {
            let t = l.trim_start();
            if t.starts_with("--") || (t.starts_with('-') && t.contains(", --")) {
                let next = lines.get(i + 1).map_or("", |n| n.trim());
                assert!(!next.is_empty(), "{sub}: option without a description: {t}");
            }
        }
        // Every method name is offered where a method is chosen.
        if sub == "recover" || sub == "plot" {
            for m in finespike::registry::method_names() {
                assert!(help.contains(m), "{sub} help lists {m}");
            }
        }
    }
}

#[test]
fn negative_sigma_is_a_value_refused_by_the_noise_level_rule() {
    // `--sigma -1` reaches the noise-level rule (NoiseLevel::validated) instead of being taken for an
    // unknown flag, in every subcommand that takes a σ; exit 2 either way.
    let dir = tmpdir("negsigma");
    let data = case("nz_fc08_snr30");
    let truth = write(
        &dir,
        "t.json",
        "{\"fc\": 8, \"sigma\": 0.1, \"spikes\": [{\"position\": 0.1, \"amplitude\": [1, 0]}]}",
    );
    let svg = dir.join("x.svg");
    for value in ["-1", "-0.5", "-1e-3"] {
        for args in [
            vec!["recover", "-i", s(&data), "--sigma", value],
            vec!["plot", "-i", s(&data), "-o", s(&svg), "--sigma", value],
            vec![
                "compare",
                "-i",
                s(&data),
                "--methods",
                "esprit",
                "--sigma",
                value,
            ],
            vec!["bound", "-t", s(&truth), "--sigma", value],
        ] {
            let out = run(&args);
            assert_exit(&out, 2, &format!("{args:?}"));
            let err = stderr(&out);
            assert!(
                err.contains(&format!(
                    "--sigma {value}: the noise level must be finite and non-negative"
                )) || err.contains(&format!(
                    "--sigma {}: the noise level must be finite and non-negative",
                    value.parse::<f64>().unwrap()
                )),
                "{args:?}: {err}"
            );
            assert!(!err.contains("unexpected argument"), "{args:?}: {err}");
        }
    }
    assert!(!svg.exists(), "nothing is drawn on a refused σ");
    // The same rule, through the equals form.
    let out = run(&["recover", "-i", s(&data), "--sigma=-2"]);
    assert_exit(&out, 2, "--sigma=-2");
    assert!(stderr(&out).contains("must be finite and non-negative"));
}

#[test]
fn fc_with_a_time_sample_file_is_refused() {
    // --fc sets the band of Fourier files; a time record's band is fixed by its length. Given with a
    // time file it used to be ignored without a word: now every reader of sample files refuses it.
    let dir = tmpdir("fctime");
    let (csv, truth) = simulate(
        &dir,
        "rec",
        &["--samples", "24", "--count", "2", "--seed", "1"],
    );
    let svg = dir.join("x.svg");
    for args in [
        vec!["recover", "-i", s(&csv), "--fc", "8"],
        vec!["plot", "-i", s(&csv), "--fc", "8", "-o", s(&svg)],
        vec!["compare", "-i", s(&csv), "--fc", "8", "--methods", "esprit"],
        vec![
            "bound",
            "-t",
            s(&truth),
            "--data",
            s(&csv),
            "--fc",
            "8",
            "--sigma",
            "0.1",
        ],
    ] {
        let out = run(&args);
        assert_exit(&out, 2, &format!("{args:?}"));
        let err = stderr(&out);
        assert!(
            err.contains("--fc 8 applies to Fourier coefficients")
                && err.contains("holds time samples")
                && err.contains("leave out --fc")
                && err.contains(s(&csv)),
            "{args:?}: {err}"
        );
    }
    // Without --fc the same file is read.
    ok(&run(&["recover", "-i", s(&csv), "-m", "esprit", "-q"]));
}

#[test]
fn units_and_trends_are_checked_against_the_record() {
    let dir = tmpdir("units");
    let fourier = case("nl_fc08_s2p00_cx");
    let real = write(&dir, "r.csv", "n,value\n10,1\n11,0.5\n12,-0.2\n13,0.1\n");
    // A sample rate belongs to time samples, a domain length to Fourier data: exit 2, naming both.
    let out = run(&["recover", "-i", s(&fourier), "--rate", "1000"]);
    assert_exit(&out, 2, "rate with Fourier data");
    assert!(
        stderr(&out).contains("--rate 1000 applies to time samples")
            && stderr(&out).contains("--length L"),
        "{}",
        stderr(&out)
    );
    let out = run(&["plot", "-i", s(&fourier), "--rate", "10", "-o", "x.svg"]);
    assert_exit(&out, 2, "plot: rate with Fourier data");
    let out = run(&[
        "compare",
        "-i",
        s(&fourier),
        "--rate",
        "10",
        "--methods",
        "sdp",
    ]);
    assert_exit(&out, 2, "compare: rate with Fourier data");
    let out = run(&["recover", "-i", s(&real), "--length", "2"]);
    assert_exit(&out, 2, "length with time samples");
    assert!(stderr(&out).contains("give their sample rate with --rate R"));
    for bad in ["0", "-5", "inf", "nan"] {
        let out = run(&["recover", "-i", s(&real), "--rate", bad]);
        assert_exit(&out, 2, bad);
        assert!(
            stderr(&out).contains("must be positive and finite"),
            "{bad}"
        );
    }
    // Trends: the library's parser, any case; a degree above 8 or a polynomial taking more than
    // half of the samples is refused.
    let out = run(&["recover", "-i", s(&real), "--detrend", "cubic"]);
    assert_exit(&out, 2, "unknown trend");
    assert!(stderr(&out).contains("none, mean, linear or poly:D"));
    let out = run(&["recover", "-i", s(&real), "--detrend", "poly:9"]);
    assert_exit(&out, 2, "degree 9");
    let out = run(&["recover", "-i", s(&real), "--detrend", "Poly:3"]);
    assert_exit(&out, 2, "4 coefficients on 4 samples");
    assert!(
        stderr(&out).contains("--detrend poly:3 on"),
        "{}",
        stderr(&out)
    );
    // The Fourier length is accepted and reported.
    let v: Value = serde_json::from_str(&ok(&run(&[
        "recover",
        "-i",
        s(&fourier),
        "--sigma",
        "0",
        "--length",
        "4",
    ])))
    .unwrap();
    assert!((v["resolution"].as_f64().unwrap() - 4.0 / 17.0).abs() < 1e-15);
    for l in v["lines"].as_array().unwrap() {
        let (p, x) = (
            l["position"].as_f64().unwrap(),
            l["location"].as_f64().unwrap(),
        );
        assert!((x - 4.0 * p).abs() < 1e-12);
    }
    // Help texts state the default trend and why.
    let help = ok(&run(&["recover", "--help"]));
    assert!(
        help.contains("Default: mean for a real-valued record")
            && help.contains("an offset is almost always present in measured real data"),
        "{help}"
    );
}

/// A record of one sample spans no time: refused in the user's numbering (exit 3), not as a
/// "cutoff fc = 0".
#[test]
fn a_single_sample_record_is_refused_in_the_users_terms() {
    let dir = tmpdir("single");
    let p = write(&dir, "one.csv", "N,Value\n5,1.0\n");
    let out = run(&["recover", "-i", s(&p)]);
    assert_eq!(out.status.code(), Some(3));
    assert!(
        stderr(&out).contains("the record holds samples at the single index n = 5"),
        "{}",
        stderr(&out)
    );
}

/// A reader that closes the pipe early (`finespike recover … | head -1`) ends the command quietly:
/// exit 0 and no panic message, for the estimate and for the comparison table.
#[test]
fn a_closed_standard_output_ends_the_command_quietly() {
    let input = case("nl_fc08_s1p26_cx");
    for args in [
        vec!["recover", "-i", s(&input), "--format", "json", "-q"],
        vec!["compare", "-i", s(&input)],
    ] {
        let mut child = bin()
            .args(&args)
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .expect("start finespike");
        // Close the read end before the command has written anything.
        drop(child.stdout.take());
        let out = child.wait_with_output().expect("wait for finespike");
        let err = stderr(&out);
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert_eq!(out.status.code(), Some(0), "{args:?}: {err}");
    }
}
