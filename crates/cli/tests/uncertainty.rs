//! End-to-end tests of `nivalis uncertainty` and `nivalis fit --uncertainty` (issue 12): the JSON
//! layout, the seed in every export, the same bytes for the same seed whatever the number of
//! threads, and clear errors for a missing or bad section.

use std::path::PathBuf;
use std::process::{Command, Output};

fn nivalis(args: &[&str], threads: &str) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args(args)
        .env("RAYON_NUM_THREADS", threads)
        .output()
        .expect("nivalis runs")
}

fn disk(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("nivalis-unc-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

const DISK: &str = r#"{"grid": {"radial_cells": 40, "vertical_cells": 10}, "uncertainty": {
    "star.luminosity_lsun": {"distribution": "lognormal", "sigma_dex": 0.1},
    "star.abundances.offset_dex.C": {"distribution": "normal", "sigma": 0.05},
    "ices.binding_energies": {"distribution": "choice", "options": ["transition_state", "on_water_ice"]},
    "composition.carbon": {"distribution": "dirichlet", "concentration": 30}}}"#;

#[test]
fn json_layout_seed_and_thread_independence() {
    let d = disk("d.json", DISK);
    let p = d.to_str().unwrap();
    let args = [
        "uncertainty",
        p,
        "--samples",
        "24",
        "--seed",
        "99",
        "--format",
        "json",
    ];
    let one = nivalis(&args, "1");
    assert!(
        one.status.success(),
        "{}",
        String::from_utf8_lossy(&one.stderr)
    );
    let two = nivalis(&args, "2");
    assert_eq!(one.stdout, two.stdout, "threads changed the numbers");
    let j: serde_json::Value = serde_json::from_slice(&one.stdout).unwrap();
    assert_eq!(j["seed"], 99);
    assert_eq!(j["samples"], 24);
    assert_eq!(j["radius_au"].as_array().unwrap().len(), 40);
    for q in [
        "c_to_o_gas",
        "c_to_o_ice",
        "c_to_o_solid",
        "c_to_h_gas",
        "o_to_h_gas",
    ] {
        for k in ["p2_5", "p16", "p50", "p84", "p97_5"] {
            assert_eq!(j["bands"][q][k].as_array().unwrap().len(), 40);
        }
    }
    for k in ["p2_5", "p16", "p50", "p84", "p97_5", "fraction"] {
        assert!(j["snowlines"]["H2O"][k].is_number(), "{k}");
    }
    // The bands are ordered at every radius.
    for q in ["c_to_o_gas", "c_to_o_solid"] {
        let b = &j["bands"][q];
        for i in 0..40 {
            let v: Vec<f64> = ["p2_5", "p16", "p50", "p84", "p97_5"]
                .iter()
                .filter_map(|k| b[k][i].as_f64())
                .collect();
            assert!(v.windows(2).all(|w| w[0] <= w[1]), "{q} at {i}: {v:?}");
        }
    }
    // A different seed gives different numbers.
    let other = nivalis(
        &[
            "uncertainty",
            p,
            "--samples",
            "24",
            "--seed",
            "100",
            "--format",
            "json",
        ],
        "2",
    );
    assert_ne!(one.stdout, other.stdout);
    // CSV carries the seed.
    let csv = nivalis(
        &[
            "uncertainty",
            p,
            "--samples",
            "4",
            "--seed",
            "5",
            "--table",
            "sensitivity",
        ],
        "2",
    );
    let text = String::from_utf8(csv.stdout).unwrap();
    assert!(text.contains("# monte carlo: seed 5, 4 samples"), "{text}");
    assert!(text.contains("\nstar.luminosity_lsun,"), "{text}");
}

#[test]
fn fit_marginalised_over_the_inputs() {
    let d = disk("f.json", DISK);
    let out = nivalis(
        &[
            "fit",
            d.to_str().unwrap(),
            "--c-to-o",
            "0.6",
            "--c-to-o-sigma",
            "0.05",
            "--uncertainty",
            "--samples",
            "12",
            "--seed",
            "3",
            "--format",
            "json",
        ],
        "2",
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(j["seed"], 3);
    let p: f64 = j["radius_probability"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .sum();
    assert!((p - 1.0).abs() < 1e-9, "{p}");
    let i = j["radius_interval_95_au"].as_array().unwrap();
    assert!(i[0].as_f64().unwrap() < i[1].as_f64().unwrap());
    // The one-at-a-time swing of the posterior median, one entry per input.
    let s = j["sensitivity_median_radius_au"].as_array().unwrap();
    assert_eq!(s.len(), 4);
    assert_eq!(s[0]["input"], "star.luminosity_lsun");
}

#[test]
fn missing_or_bad_sections_are_input_errors() {
    let none = disk("none.json", "{}");
    let out = nivalis(&["uncertainty", none.to_str().unwrap()], "1");
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("has no uncertainty section"));
    let bad = disk(
        "bad.json",
        r#"{"uncertainty": {"disk.gas_mass_msn": {"distribution": "lognormal", "sigma_dex": 0.3}}}"#,
    );
    let out = nivalis(&["uncertainty", bad.to_str().unwrap()], "1");
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("uncertainty.disk.gas_mass_msn: unknown disk-file path")
            && err.contains("did you mean gas_mass_msun?"),
        "{err}"
    );
    let out = nivalis(
        &["uncertainty", none.to_str().unwrap(), "--samples", "0"],
        "1",
    );
    assert!(
        String::from_utf8_lossy(&out.stderr).contains("--samples: must be in [1, 100000], got 0")
    );
}

#[test]
fn anchor_sigma_is_written_into_the_section() {
    let d = disk("a.json", DISK);
    let out = nivalis(
        &[
            "anchor",
            d.to_str().unwrap(),
            "--species",
            "CO",
            "--radius-au",
            "30",
            "--sigma-au",
            "5",
        ],
        "1",
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let u = &j["uncertainty"];
    // The file's own entries are kept and the anchored parameter's range added.
    assert_eq!(u["star.luminosity_lsun"]["sigma_dex"], 0.1);
    assert_eq!(u["disk.flaring_angle"]["distribution"], "lognormal");
    assert!(u["disk.flaring_angle"]["sigma_dex"].as_f64().unwrap() > 0.0);
    // The written file reads back, section included.
    let again = disk("a2.json", &String::from_utf8(out.stdout).unwrap());
    let check = nivalis(
        &["uncertainty", again.to_str().unwrap(), "--samples", "3"],
        "1",
    );
    assert!(
        check.status.success(),
        "{}",
        String::from_utf8_lossy(&check.stderr)
    );
}

/// Decodes a PNG with the `png` crate: (width, height, pixels per metre from pHYs, text chunks
/// as `keyword=text`).
fn decode_png(bytes: &[u8]) -> (u32, u32, Option<(u32, u32)>, Vec<String>) {
    let mut decoder = png::Decoder::new(bytes);
    decoder.set_ignore_text_chunk(false);
    let mut reader = decoder.read_info().expect("a PNG");
    let mut buf = vec![0; reader.output_buffer_size()];
    reader.next_frame(&mut buf).expect("image data decodes");
    reader.finish().expect("chunks after the image decode");
    let info = reader.info();
    let phys = info.pixel_dims.map(|d| {
        assert_eq!(d.unit, png::Unit::Meter);
        (d.xppu, d.yppu)
    });
    let texts = info
        .utf8_text
        .iter()
        .map(|t| format!("{}={}", t.keyword, t.get_text().unwrap()))
        .collect();
    (info.width, info.height, phys, texts)
}

#[test]
fn figure_png_size_resolution_and_provenance() {
    let d = disk("fig.json", DISK);
    let p = d.to_str().unwrap();
    let run = |extra: &[&str], threads: &str| {
        let mut args = vec![
            "uncertainty",
            p,
            "--samples",
            "12",
            "--seed",
            "42",
            "--figure",
            "bands:c_to_o_gas",
        ];
        args.extend_from_slice(extra);
        let out = nivalis(&args, threads);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        out.stdout
    };
    let png150 = run(
        &["--format", "png", "--dpi", "150", "--width", "double"],
        "1",
    );
    // Two columns = 511 pt = 7.097 in; at 150 dpi 1064.6 -> 1065 px wide, the height 0.75 x
    // 511 pt = 383.25 pt = 798.4 -> 798 px (1 in = 72 pt, FigureSize::pixels_at_dpi rounds).
    let (w, h, phys, texts) = decode_png(&png150);
    assert_eq!((w, h), (1065, 798));
    // pHYs in pixels per metre: 150 / 0.0254 = 5905.5 -> 5906 (1 in = 0.0254 m exactly).
    assert_eq!(phys, Some((5906, 5906)));
    for want in [
        "nivalis:view=bands:c_to_o_gas",
        "nivalis:seed=42",
        "nivalis:samples=12",
    ] {
        assert!(texts.iter().any(|t| t == want), "{want} not in {texts:?}");
    }
    assert!(texts.iter().any(|t| t.starts_with("nivalis:disk_hash=")));
    // The same bytes with any number of threads; another resolution, another file.
    assert_eq!(
        png150,
        run(
            &["--format", "png", "--dpi", "150", "--width", "double"],
            "2"
        )
    );
    let (w300, h300, phys300, _) = decode_png(&run(&["--format", "png"], "2"));
    // One column, 300 dpi (the defaults): 3.5 in x 300 = 1050 px, 189 pt = 787.5 -> 788 px.
    assert_eq!((w300, h300), (1050, 788));
    assert_eq!(phys300, Some((11811, 11811)));
}

#[test]
fn figure_svg_of_every_view_carries_seed_and_samples() {
    let d = disk("figsvg.json", DISK);
    let p = d.to_str().unwrap();
    for view in [
        "bands:o_to_h_solid",
        "snowlines:CO",
        "sensitivity",
        "sensitivity:H2O",
    ] {
        let out = nivalis(
            &[
                "uncertainty",
                p,
                "--samples",
                "10",
                "--seed",
                "3",
                "--figure",
                view,
            ],
            "2",
        );
        assert!(
            out.status.success(),
            "{view}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let svg = String::from_utf8(out.stdout).unwrap();
        assert!(
            svg.contains("<svg width=\"252pt\" height=\"189pt\""),
            "{view}"
        );
        assert!(
            svg.contains(&format!("view=\"{view}\""))
                && svg.contains(" seed=\"3\" samples=\"10\">"),
            "{view}: {}",
            &svg[..svg.len().min(600)]
        );
    }
}

#[test]
fn figure_options_are_checked_like_nivalis_figure() {
    let d = disk("figbad.json", DISK);
    let p = d.to_str().unwrap();
    let err = |args: &[&str]| {
        let mut all = vec!["uncertainty", p, "--samples", "2"];
        all.extend_from_slice(args);
        let out = nivalis(&all, "1");
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        String::from_utf8_lossy(&out.stderr).to_string()
    };
    let e = err(&["--figure", "bandz"]);
    assert!(
        e.contains("--figure: unknown view \"bandz\"; expected one of bands:<QUANTITY>, snowlines:<SPECIES>, sensitivity, sensitivity:<SPECIES>, posterior"),
        "{e}"
    );
    let e = err(&["--figure", "bands:c_to_o"]);
    assert!(
        e.contains("unknown quantity \"c_to_o\"; expected one of c_to_o_gas"),
        "{e}"
    );
    assert!(err(&["--figure", "snowlines:XY"]).contains("unknown species \"XY\""));
    assert!(err(&["--figure", "posterior"])
        .contains("nivalis fit DISK ... --uncertainty --figure FILE"));
    assert!(err(&["--figure", "sensitivity", "--format", "csv"])
        .contains("--format: must be svg or png with --figure, got \"csv\""));
    assert!(err(&["--format", "png"]).contains("--format: must be csv, ecsv or json"));
    assert!(err(&["--dpi", "150"]).contains("only with --figure"));
    // The message `nivalis figure --dpi 20` gives (nivalis_charts::options).
    let e = err(&["--figure", "sensitivity", "--format", "png", "--dpi", "20"]);
    assert!(
        e.contains("--dpi: must be a number between 36 and 1200, got 20"),
        "{e}"
    );
    let figure = nivalis(&["figure", p, "--view", "c_to_o", "--dpi", "20"], "1");
    assert!(String::from_utf8_lossy(&figure.stderr)
        .contains("--dpi: must be a number between 36 and 1200, got 20"));
}

#[test]
fn fit_uncertainty_writes_the_posterior_figure() {
    let d = disk("figpost.json", DISK);
    let p = d.to_str().unwrap();
    let dir = d.parent().unwrap();
    let png_path = dir.join("posterior.png");
    let svg_path = dir.join("posterior.svg");
    for path in [&png_path, &svg_path] {
        let out = nivalis(
            &[
                "fit",
                p,
                "--c-to-o",
                "0.6",
                "--c-to-o-sigma",
                "0.05",
                "--c-to-h-dex",
                "0.1",
                "--c-to-h-sigma",
                "0.2",
                "--relative-to",
                "sun",
                "--uncertainty",
                "--samples",
                "4",
                "--seed",
                "8",
                "--format",
                "json",
                "--figure",
                path.to_str().unwrap(),
            ],
            "2",
        );
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    let (w, h, phys, texts) = decode_png(&std::fs::read(&png_path).unwrap());
    // `fit --figure`: one column at 300 dpi (1050 x 788 px, as above).
    assert_eq!((w, h, phys), (1050, 788, Some((11811, 11811))));
    for want in [
        "nivalis:view=posterior",
        "nivalis:seed=8",
        "nivalis:samples=4",
    ] {
        assert!(texts.iter().any(|t| t == want), "{want} not in {texts:?}");
    }
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    assert!(svg.contains("view=\"posterior\"") && svg.contains(" seed=\"8\" samples=\"4\">"));
    assert!(svg.contains("Formation radius (au)"));
}
