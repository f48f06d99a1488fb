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
