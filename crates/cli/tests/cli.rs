//! End-to-end tests of the `nivalis` binary: exit codes, one line per problem,
//! no NaN in any output, help texts with units, and reproducibility from an
//! exported disk file (issue "paper-ready output": re-running the exported disk
//! reproduces the exported data byte for byte).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn nivalis(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args(args)
        .current_dir(repo_root())
        .output()
        .expect("nivalis runs")
}

fn repo_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn temp_file(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("nivalis-cli-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn stdout(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).unwrap()
}

/// A CSV export without its `#` provenance lines (header line and rows).
fn csv_body(text: &str) -> String {
    text.lines()
        .skip_while(|l| l.starts_with('#'))
        .map(|l| format!("{l}\n"))
        .collect()
}

fn stderr(o: &Output) -> String {
    String::from_utf8(o.stderr.clone()).unwrap()
}

#[test]
fn bad_disk_file_lists_every_problem_and_exits_2() {
    let path = temp_file(
        "bad.json",
        r#"{"star": {"mass_msun": 0, "luminosity_lsun": -1}, "disk": {"gamma": 1, "surface_density_index": 2.5, "flaring_angle": 0},
            "grid": {"radial_cells": 5000}, "composition": {"sulfur": {"H2S": 0.5}}}"#,
    );
    let p = path.to_str().unwrap();
    let out = nivalis(&["structure", p]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let lines: Vec<String> = stderr(&out).lines().map(String::from).collect();
    let expected_fields = [
        "star.mass_msun: must be in [0.01, 150], got 0",
        "star.luminosity_lsun: must be in [1e-5, 10000000], got -1",
        "disk.gamma: unknown field",
        "disk.surface_density_index: must be in [-2, 2), got 2.5",
        "disk.flaring_angle: must be in (0, 1], got 0",
        "composition.sulfur: fractions must sum to 1 (within 1e-6), got H2S 0.5 + refractory 0 = 0.5",
        "grid.radial_cells: must be a whole number in [8, 4096], got 5000",
    ];
    assert_eq!(lines.len(), expected_fields.len(), "{lines:#?}");
    for (line, field) in lines.iter().zip(expected_fields) {
        assert!(
            line.starts_with("error: ") && line.contains(field),
            "{line} !~ {field}"
        );
    }
    // `check` reports the same problems.
    assert_eq!(stderr(&nivalis(&["check", p])), stderr(&out));
}

/// The tokens a non-finite number prints as (Rust `NaN`/`inf`, JavaScript
/// `Infinity`, C `nan`), found as whole words in raw output.
fn non_numbers(text: &str) -> Vec<String> {
    text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
        .filter(|t| {
            matches!(
                *t,
                "NaN" | "nan" | "inf" | "Inf" | "INF" | "infinity" | "Infinity"
            )
        })
        .map(String::from)
        .collect()
}

/// Empty CSV cells outside the columns documented as possibly undefined.
fn undocumented_empty_cells(csv: &str, may_be_empty: &[&str]) -> Vec<String> {
    // The provenance lines (# ...) come before the header.
    let mut lines = csv.lines().filter(|l| !l.starts_with('#'));
    let header: Vec<&str> = lines.next().unwrap_or_default().split(',').collect();
    let mut bad = Vec::new();
    for (n, line) in lines.enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(
            cells.len(),
            header.len(),
            "row {n} has {} cells: {line}",
            cells.len()
        );
        for (h, c) in header.iter().zip(&cells) {
            if c.is_empty() && !may_be_empty.contains(h) {
                bad.push(format!("row {n} column {h}"));
            }
        }
    }
    bad
}

/// Issue 15 item 11: every command, `fit` included, on every demo disk; the
/// raw output (not a cleaned copy) must hold no NaN/inf token, and CSV tables
/// no empty cell outside the columns documented as undefined where no ice or
/// no solids exist (C/O of an absent phase, the fit's rows without solids).
#[test]
fn valid_files_check_and_run_without_nan() {
    let disks: Vec<String> = std::fs::read_dir(repo_root().join("demo_disks"))
        .unwrap()
        .map(|e| format!("demo_disks/{}", e.unwrap().file_name().to_string_lossy()))
        .filter(|n| n.ends_with(".json"))
        .collect();
    assert!(disks.len() >= 6, "{disks:?}");
    let fit_undefined = [
        "c_to_o",
        "c_to_h_dex_rel_star",
        "o_to_h_dex_rel_star",
        "m_to_h_dex_rel_star",
        "chi2",
        "delta_chi2",
    ];
    let dir = fresh_dir("every-command");
    for disk in &disks {
        let disk = disk.as_str();
        let check = nivalis(&["check", disk]);
        assert_eq!(check.status.code(), Some(0), "{disk}: {}", stderr(&check));
        let fig = dir.join("chi2.svg");
        let bib = dir.join("refs.bib");
        let (fig, bib) = (fig.to_str().unwrap(), bib.to_str().unwrap());
        let runs: Vec<(Vec<&str>, Option<&[&str]>)> = vec![
            (vec!["structure", disk], Some(&[])),
            (vec!["structure", disk, "--format", "json"], None),
            (vec!["structure", disk, "--format", "ecsv"], None),
            (
                vec!["model", disk],
                Some(&["c_to_o_gas", "c_to_o_ice", "c_to_o_solid"]),
            ),
            (vec!["model", disk, "--format", "ecsv"], None),
            (vec!["model", disk, "--format", "json"], None),
            (vec!["elements", disk], Some(&[])),
            (vec!["elements", disk, "--format", "json"], None),
            (
                vec!["map", disk, "--quantity", "c_to_o_gas"],
                Some(&["c_to_o_gas"]),
            ),
            (vec!["map", disk, "--quantity", "temperature_k"], Some(&[])),
            (
                vec!["map", disk, "--quantity", "ice_fraction:CO"],
                Some(&[]),
            ),
            (
                vec![
                    "map",
                    disk,
                    "--quantity",
                    "equilibration_time_yr:CO",
                    "--format",
                    "json",
                ],
                None,
            ),
            (vec!["snowlines", disk], None),
            (
                vec!["planet", disk, "--radius-au", "5", "--solid-to-gas", "0.1"],
                None,
            ),
            (
                vec![
                    "planet",
                    disk,
                    "--radius-au",
                    "5",
                    "--solid-to-gas",
                    "0.1",
                    "--format",
                    "csv",
                ],
                Some(&[]),
            ),
            (
                vec![
                    "planet",
                    disk,
                    "--radius-au",
                    "2",
                    "--to-radius-au",
                    "20",
                    "--solid-to-gas",
                    "0.05",
                    "--weighting",
                    "log_radius",
                ],
                None,
            ),
            (
                vec![
                    "fit",
                    disk,
                    "--c-to-o",
                    "0.6",
                    "--c-to-o-sigma",
                    "0.05",
                    "--figure",
                    fig,
                ],
                Some(&fit_undefined),
            ),
            (
                vec![
                    "fit",
                    disk,
                    "--c-to-o",
                    "0.6",
                    "--c-to-o-sigma",
                    "1e-6",
                    "--format",
                    "ecsv",
                ],
                None,
            ),
            (
                vec![
                    "fit",
                    disk,
                    "--c-to-o",
                    "0.6",
                    "--c-to-o-sigma",
                    "0.05",
                    "--o-to-h-dex",
                    "0.2",
                    "--o-to-h-sigma",
                    "0.1",
                    "--format",
                    "json",
                ],
                None,
            ),
            (vec!["figure", disk, "--view", "c_to_o"], None),
            (vec!["figure", disk, "--view", "temperature"], None),
            (vec!["figure", disk, "--view", "abundances"], None),
            (vec!["figure", disk, "--view", "c_to_o_map"], None),
            (vec!["figure", disk, "--view", "ice_map:H2O"], None),
            (vec!["methods", disk, "--bibtex", bib], None),
        ];
        for (args, csv_empty_ok) in runs {
            let out = nivalis(&args);
            assert_eq!(out.status.code(), Some(0), "{args:?}: {}", stderr(&out));
            let text = stdout(&out);
            assert!(!text.trim().is_empty(), "{args:?} printed nothing");
            assert_eq!(
                non_numbers(&text),
                Vec::<String>::new(),
                "{args:?} printed a non-number"
            );
            assert_eq!(
                non_numbers(&stderr(&out)),
                Vec::<String>::new(),
                "{args:?} noted a non-number"
            );
            if let Some(ok) = csv_empty_ok {
                assert_eq!(
                    undocumented_empty_cells(&text, ok),
                    Vec::<String>::new(),
                    "{args:?}"
                );
            }
        }
        for file in [fig, bib] {
            let text = std::fs::read_to_string(file).unwrap();
            assert!(
                !text.is_empty() && non_numbers(&text).is_empty(),
                "{disk}: {file} holds a non-number"
            );
            std::fs::remove_file(file).unwrap();
        }
    }
    // The anchored disk file, written to standard output.
    let out = nivalis(&[
        "anchor",
        "demo_disks/young_sun.json",
        "--species",
        "CO",
        "--radius-au",
        "30",
        "--sigma-au",
        "3",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(non_numbers(&stdout(&out)).is_empty() && non_numbers(&stderr(&out)).is_empty());
    // The check itself can fail: it sees the tokens a non-finite number prints as.
    assert_eq!(
        non_numbers("1.0,NaN,inf\n-inf x"),
        vec!["NaN", "inf", "inf"]
    );
    assert_eq!(
        undocumented_empty_cells("a,b\n1,\n", &[]),
        vec!["row 0 column b"]
    );
}

#[test]
fn csv_columns_are_the_documented_ones() {
    let structure = csv_body(&stdout(&nivalis(&[
        "structure",
        "demo_disks/young_sun.json",
    ])));
    assert_eq!(
        structure.lines().next().unwrap(),
        "radius_au,surface_density_g_cm2,midplane_temperature_k,irradiation_temperature_k,accretion_temperature_k,midplane_density_h_cm3,scale_height_au,aspect_ratio"
    );
    assert_eq!(structure.lines().count(), 201);
    let model = csv_body(&stdout(&nivalis(&["model", "demo_disks/young_sun.json"])));
    assert!(model.lines().next().unwrap().starts_with(
        "radius_au,midplane_temperature_k,midplane_density_h_cm3,c_to_o_gas,c_to_o_ice,c_to_o_solid,c_to_h_gas_rel_star,o_to_h_gas_rel_star,ice_fraction_H2O,ice_fraction_CO,"
    ));
    let map = csv_body(&stdout(&nivalis(&[
        "map",
        "demo_disks/cool_dwarf.json",
        "--quantity",
        "ice_fraction:CO",
    ])));
    assert_eq!(
        map.lines().next().unwrap(),
        "radius_au,height_au,z_over_r,ice_fraction_CO"
    );
    assert_eq!(map.lines().count(), 1 + 200 * 80);
}

#[test]
fn csv_files_open_with_their_provenance() {
    // Issue 11 item 6: every CSV names the program version, the disk hash (the same as the
    // JSON export's) and where the resolved disk file is, in `#` lines before the header.
    let json: serde_json::Value = serde_json::from_str(&stdout(&nivalis(&[
        "model",
        "demo_disks/young_sun.json",
        "--format",
        "json",
    ])))
    .unwrap();
    let hash = json["disk_hash"].as_str().unwrap().to_string();
    assert_eq!(hash.len(), 12);
    for args in [
        vec!["structure", "demo_disks/young_sun.json"],
        vec!["model", "demo_disks/young_sun.json"],
        vec!["elements", "demo_disks/young_sun.json"],
        vec![
            "map",
            "demo_disks/young_sun.json",
            "--quantity",
            "c_to_o_gas",
        ],
        vec![
            "planet",
            "demo_disks/young_sun.json",
            "--radius-au",
            "5",
            "--solid-to-gas",
            "0.02",
            "--format",
            "csv",
        ],
        vec![
            "fit",
            "demo_disks/young_sun.json",
            "--c-to-o",
            "0.8",
            "--c-to-o-sigma",
            "0.1",
            "--format",
            "csv",
        ],
    ] {
        let out = nivalis(&args);
        assert_eq!(out.status.code(), Some(0), "{args:?}: {}", stderr(&out));
        let text = stdout(&out);
        let comments: Vec<&str> = text.lines().take_while(|l| l.starts_with('#')).collect();
        assert_eq!(comments.len(), 3, "{args:?}: {comments:?}");
        assert_eq!(
            comments[0],
            format!("# nivalis {}", env!("CARGO_PKG_VERSION")),
            "{args:?}"
        );
        assert!(
            comments[1].starts_with(&format!("# disk hash {hash}: ")),
            "{args:?}: {}",
            comments[1]
        );
        assert!(
            comments[2].contains("nivalis model DISK --format json"),
            "{args:?}: {}",
            comments[2]
        );
        assert!(
            !text.lines().skip(3).any(|l| l.starts_with('#')),
            "{args:?}: comment lines after the header"
        );
    }
}

#[test]
fn unknown_quantity_and_species_are_input_errors() {
    let out = nivalis(&[
        "map",
        "demo_disks/young_sun.json",
        "--quantity",
        "ice_fraction:CO3",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("unknown species \"CO3\""));
    let out = nivalis(&["figure", "demo_disks/young_sun.json", "--view", "pressure"]);
    assert_eq!(out.status.code(), Some(2));
    let out = nivalis(&[
        "planet",
        "demo_disks/young_sun.json",
        "--radius-au",
        "1000",
        "--solid-to-gas",
        "0.1",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("must lie in the disk"),
        "{}",
        stderr(&out)
    );
    let out = nivalis(&[
        "planet",
        "demo_disks/young_sun.json",
        "--radius-au",
        "10",
        "--solid-to-gas",
        "0.1",
        "--mix",
        "1.5",
    ]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn help_names_units() {
    let help = stdout(&nivalis(&["map", "--help"]));
    for unit in ["[K]", "[H nuclei cm-3]", "[s-1]", "[mag]", "[yr]"] {
        assert!(help.contains(unit), "map --help lacks {unit}");
    }
    let help = stdout(&nivalis(&["planet", "--help"]));
    assert!(help.contains("Formation radius [au]") && help.contains("[0, 1]"));
}

#[test]
fn exported_disk_reproduces_the_export_byte_for_byte() {
    for (args, name) in [
        (vec!["model", "--format", "ecsv"], "model.ecsv"),
        (vec!["model", "--format", "json"], "model.json"),
        (vec!["snowlines"], "snowlines.json"),
        (vec!["figure", "--view", "c_to_o"], "c_to_o.svg"),
    ] {
        let mut first = args.clone();
        first.insert(1, "demo_disks/luminous_herbig.json");
        let exported = stdout(&nivalis(&first));
        // The resolved disk as `nivalis anchor`/the page would save it: take it from the JSON export.
        let json: serde_json::Value = serde_json::from_str(&stdout(&nivalis(&[
            "model",
            "demo_disks/luminous_herbig.json",
            "--format",
            "json",
        ])))
        .unwrap();
        let saved = temp_file(
            "resolved.json",
            &serde_json::to_string_pretty(&json["disk"]).unwrap(),
        );
        let mut again = args.clone();
        again.insert(1, saved.to_str().unwrap());
        assert_eq!(
            stdout(&nivalis(&again)),
            exported,
            "{name} differs when remade from the exported disk"
        );
    }
}

#[test]
fn png_figure_has_the_requested_size_and_provenance() {
    let path =
        std::env::temp_dir().join(format!("nivalis-cli-test-{}-fig.png", std::process::id()));
    let out = nivalis(&[
        "figure",
        "demo_disks/young_sun.json",
        "--view",
        "temperature",
        "--format",
        "png",
        "--width",
        "double",
        "--dpi",
        "200",
        "--out",
        path.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let png = std::fs::read(&path).unwrap();
    // IHDR width and height (PNG specification): 511 pt x 383.25 pt at 200 dpi = 1419 x 1065 px.
    let w = u32::from_be_bytes(png[16..20].try_into().unwrap());
    let h = u32::from_be_bytes(png[20..24].try_into().unwrap());
    assert_eq!((w, h), (1419, 1065));
    let text = String::from_utf8_lossy(&png);
    assert!(text.contains("nivalis:disk_hash") && text.contains("nivalis 0.1.0"));
}

#[test]
fn methods_and_bibtex_agree() {
    let bib = std::env::temp_dir().join(format!("nivalis-cli-test-{}.bib", std::process::id()));
    let out = nivalis(&[
        "methods",
        "demo_disks/young_sun.json",
        "--bibtex",
        bib.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0));
    let paragraph = stdout(&out);
    let bibtex = std::fs::read_to_string(&bib).unwrap();
    // The default binding-energy set names its frequency and laboratory sources (the HHL92 frequency,
    // cited before the laboratory-matched set became the default, belongs to the legacy set now).
    assert!(
        paragraph.contains("Ligterink & Minissale 2023")
            && bibtex.contains("@article{ligterink2023,"),
        "{paragraph}"
    );
    assert!(paragraph.contains("Murphy & Koop 2005") && bibtex.contains("@article{murphy2005,"));
    assert!(
        !bibtex.contains("bell1994"),
        "Bell & Lin 1994 is not used by the young Sun disk"
    );
}

#[test]
fn element_table_conserves_every_element() {
    // Gas + solid (ice + refractory) must equal the star's X/H at every radius (docs/model.md section 8);
    // the CSV carries 7 significant digits, so the check is to 2e-6 relative. The star's values are
    // Asplund et al. 2009 Table 1 (log eps C 8.43, O 8.69, N 7.83, S 7.12, Si 7.51, Mg 7.60, Fe 7.50).
    let text = csv_body(&stdout(&nivalis(&[
        "elements",
        "demo_disks/young_sun.json",
    ])));
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let star = [8.43, 8.69, 7.83, 7.12, 7.51, 7.60, 7.50].map(|l: f64| 10f64.powf(l - 12.0));
    let mut rows = 0;
    for line in lines {
        let v: Vec<f64> = line.split(',').map(|c| c.parse().unwrap()).collect();
        for (i, el) in ["C", "O", "N", "S", "Si", "Mg", "Fe"].iter().enumerate() {
            let gas = v[header
                .iter()
                .position(|h| *h == format!("gas_{el}_per_h"))
                .unwrap()];
            let solid = v[header
                .iter()
                .position(|h| *h == format!("solid_{el}_per_h"))
                .unwrap()];
            assert!(
                ((gas + solid) / star[i] - 1.0).abs() < 2e-6,
                "{el}: {gas} + {solid} vs {}",
                star[i]
            );
        }
        rows += 1;
    }
    assert_eq!(rows, 200);
}

#[test]
fn out_of_equilibrium_is_marked_in_maps_snowlines_and_planets() {
    // Issue 10 item 5: 100 um grains freeze CO out slowly (~9 Myr at 300 au), so at an age of 0.1 Myr some
    // cells keep their inherited ice; the map quantity, the snowline listing and the planet output say so.
    let disk = temp_file(
        "slow_grains.json",
        r#"{"schema": "nivalis-disk/1", "name": "slow grains", "disk": {"grain_radius_um": 100, "age_myr": 0.1}, "ices": {"initial_state": "inherited"}}"#,
    );
    let disk = disk.to_str().unwrap();
    let out = nivalis(&[
        "map",
        disk,
        "--quantity",
        "out_of_equilibrium:CO",
        "--format",
        "json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let map: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    let values: Vec<f64> = map["data"]["out_of_equilibrium_CO"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    assert_eq!(values.len(), 200 * 80);
    assert!(values.iter().all(|v| *v == 0.0 || *v == 1.0));
    assert!(
        values.contains(&1.0) && values.contains(&0.0),
        "some cells flagged, not all"
    );
    let snow: serde_json::Value =
        serde_json::from_str(&stdout(&nivalis(&["snowlines", disk]))).unwrap();
    let flags = snow["snowline_out_of_equilibrium"]["CO"]
        .as_array()
        .unwrap();
    assert_eq!(
        flags.len(),
        snow["snowlines"]["CO"].as_array().unwrap().len()
    );
    assert_eq!(snow["initial_state"], "inherited");
    let out = nivalis(&[
        "planet",
        disk,
        "--radius-au",
        "200",
        "--solid-to-gas",
        "0.01",
        "--format",
        "json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let planet: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert!(
        planet["local"]["ices_out_of_equilibrium"]
            .as_array()
            .unwrap()
            .iter()
            .any(|s| s == "CO"),
        "{planet}"
    );
}

#[test]
fn check_warns_when_the_edges_cut_off_most_of_the_profile() {
    // Issue 11 item 7: R_c = 4000 au with edges 0.1-500 au keeps 11.7 % of the profile; a warning, not an error.
    let path = temp_file(
        "wide.json",
        r#"{"disk": {"characteristic_radius_au": 4000, "gas_mass_msun": 0.03}}"#,
    );
    let out = nivalis(&["check", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(
        stdout(&out).contains("valid nivalis-disk/1 file"),
        "{}",
        stdout(&out)
    );
    let err = stderr(&out);
    assert!(err.contains("warning: disk.inner_radius_au: the edges 0.1-500 au cut off 88.3 % of the surface-density profile"), "{err}");
    assert!(err.contains("disk.gas_mass_profile_total_msun"), "{err}");
    // The default disk gives no warning.
    let out = nivalis(&["check", "demo_disks/young_sun.json"]);
    assert_eq!(stderr(&out), "");
}

/// Issue 15 item 3: the fuzz target's crash inputs and 17-digit numbers. An
/// exported disk must reproduce its export's hash (and the whole export) to
/// the byte; with a reader that is not correctly rounded these came back
/// 1 ulp off and the hash changed.
#[test]
fn seventeen_digit_numbers_reproduce_the_same_hash() {
    for (i, disk) in [
        r#"{"disk": {"age_myr": 1.3792569329517467e-11}}"#,
        r#"{"disk": {"age_myr": 8888.88888888888888888881}}"#,
        r#"{"disk": {"cosmic_ray_rate_s": 1.333e-17, "gas_mass_msun": 0.012345678901234567}}"#,
        r#"{"star": {"luminosity_lsun": 1.3330000000000001}, "disk": {"flaring_angle": 0.030000000000000002}}"#,
    ]
    .iter()
    .enumerate()
    {
        let path = temp_file(&format!("digits{i}.json"), disk);
        let first = nivalis(&["model", path.to_str().unwrap(), "--format", "json"]);
        assert_eq!(first.status.code(), Some(0), "{disk}: {}", stderr(&first));
        let json: serde_json::Value = serde_json::from_str(&stdout(&first)).unwrap();
        let saved = temp_file(&format!("digits{i}-resolved.json"), &serde_json::to_string_pretty(&json["disk"]).unwrap());
        let again = nivalis(&["model", saved.to_str().unwrap(), "--format", "json"]);
        let json_again: serde_json::Value = serde_json::from_str(&stdout(&again)).unwrap();
        assert_eq!(json_again["disk_hash"], json["disk_hash"], "{disk}: the extracted disk gives another hash");
        assert_eq!(stdout(&again), stdout(&first), "{disk}: the export differs when remade");
        let ecsv = nivalis(&["model", path.to_str().unwrap(), "--format", "ecsv"]);
        let ecsv_again = nivalis(&["model", saved.to_str().unwrap(), "--format", "ecsv"]);
        assert_eq!(stdout(&ecsv_again), stdout(&ecsv), "{disk}: ECSV differs when remade");
    }
}

fn fresh_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("nivalis-cli-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Issue 15 item 4: every output file is written atomically (temporary file
/// in the same folder, fsync, rename): a failed write leaves nothing behind,
/// and a successful one leaves only the named file.
#[test]
fn output_files_are_written_whole_or_not_at_all() {
    let dir = fresh_dir("atomic");
    let missing = dir.join("no-such-folder").join("out.csv");
    let m = missing.to_str().unwrap();
    for args in [
        vec!["model", "demo_disks/young_sun.json", "--out", m],
        vec!["methods", "demo_disks/young_sun.json", "--bibtex", m],
        vec![
            "fit",
            "demo_disks/young_sun.json",
            "--c-to-o",
            "0.5",
            "--c-to-o-sigma",
            "0.1",
            "--ratios",
            "40",
            "--figure",
            m,
        ],
        vec![
            "figure",
            "demo_disks/young_sun.json",
            "--view",
            "c_to_o",
            "--out",
            m,
        ],
        vec![
            "anchor",
            "demo_disks/young_sun.json",
            "--species",
            "CO",
            "--radius-au",
            "30",
            "--out",
            m,
        ],
    ] {
        let out = nivalis(&args);
        assert_eq!(out.status.code(), Some(1), "{args:?}: {}", stderr(&out));
        assert!(
            stderr(&out).contains("cannot write"),
            "{args:?}: {}",
            stderr(&out)
        );
        assert!(
            !dir.join("no-such-folder").exists(),
            "{args:?} created something"
        );
    }
    assert_eq!(
        std::fs::read_dir(&dir).unwrap().count(),
        0,
        "a failed write left a file"
    );

    // A write that fails half-way (the file-size limit stands in for a full disk) leaves the old file
    // whole and no temporary file (POSIX sh `ulimit -f`, with SIGXFSZ ignored so write() returns EFBIG).
    #[cfg(unix)]
    {
        let good = dir.join("good.csv");
        std::fs::write(&good, "keep\n").unwrap();
        let script = format!(
            "ulimit -f 8; trap '' XFSZ; exec '{}' model demo_disks/young_sun.json --out '{}'",
            env!("CARGO_BIN_EXE_nivalis"),
            good.display()
        );
        let out = Command::new("sh")
            .args(["-c", &script])
            .current_dir(repo_root())
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
        assert_eq!(
            std::fs::read_to_string(&good).unwrap(),
            "keep\n",
            "the old file was damaged"
        );
        std::fs::remove_file(&good).unwrap();
        assert_eq!(
            std::fs::read_dir(&dir).unwrap().count(),
            0,
            "a failed write left a temporary file"
        );
    }

    // A good write leaves exactly the named file; the anchored disk may replace its own input.
    let disk = dir.join("disk.json");
    std::fs::copy(repo_root().join("demo_disks/young_sun.json"), &disk).unwrap();
    let d = disk.to_str().unwrap();
    let out = nivalis(&[
        "anchor",
        d,
        "--species",
        "CO",
        "--radius-au",
        "30",
        "--out",
        d,
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert_eq!(nivalis(&["check", d]).status.code(), Some(0));
    let names: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["disk.json".to_string()]);
}

/// Issue 15 item 4: an error writing standard output is exit 1 with a message,
/// for a full device and for a pipe whose reader has gone.
#[cfg(target_os = "linux")]
#[test]
fn stdout_write_errors_exit_1() {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("/dev/full exists on Linux");
    let out = Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args(["model", "demo_disks/young_sun.json"])
        .current_dir(repo_root())
        .stdout(full)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("cannot write to standard output"),
        "{}",
        stderr(&out)
    );

    // A pipe closed before the write: the reader end is dropped at once.
    let mut child = Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args([
            "map",
            "demo_disks/young_sun.json",
            "--quantity",
            "temperature_k",
        ])
        .current_dir(repo_root())
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("cannot write to standard output"),
        "{}",
        stderr(&out)
    );
}

/// Issue 15 item 10: a negative number is a value (not clap's "use -- -1" tip),
/// and the range check names the flag and the allowed range.
#[test]
fn option_errors_name_flags_and_ranges() {
    let y = "demo_disks/young_sun.json";
    for (args, expected) in [
        (
            vec!["planet", y, "--radius-au", "-1", "--solid-to-gas", "0.1"],
            "error: --radius-au: must lie in the disk",
        ),
        (
            vec!["planet", y, "--radius-au", "10", "--solid-to-gas", "-0.5"],
            "error: --solid-to-gas: must be >= 0 and finite, got -0.5",
        ),
        (
            vec![
                "planet",
                y,
                "--radius-au",
                "10",
                "--solid-to-gas",
                "0.1",
                "--mix",
                "-1",
            ],
            "error: --mix: must be in [0, 1], got -1",
        ),
        (
            vec!["fit", y, "--c-to-o", "0.5", "--c-to-o-sigma", "-0.1"],
            "error: --c-to-o-sigma: must be >= 1e-6 and finite, got -0.1",
        ),
        (
            vec!["fit", y, "--c-to-o", "0.5", "--c-to-o-sigma", "1e-320"],
            "error: --c-to-o-sigma: must be >= 1e-6 and finite, got 1e-320",
        ),
        (
            vec!["fit", y, "--c-to-o", "-2", "--c-to-o-sigma", "0.1"],
            "error: --c-to-o: must be in [0, 100], got -2",
        ),
        (
            vec![
                "fit",
                y,
                "--c-to-o",
                "0.5",
                "--c-to-o-sigma",
                "0.1",
                "--ratios",
                "-5",
            ],
            "error: --ratio-count: must be in [40, 1000], got -5",
        ),
        (
            vec![
                "fit",
                y,
                "--c-to-o",
                "0.5",
                "--c-to-o-sigma",
                "0.1",
                "--ratios",
                "5",
            ],
            "error: --ratio-count: must be in [40, 1000], got 5",
        ),
        (
            vec![
                "fit",
                y,
                "--c-to-o",
                "0.5",
                "--c-to-o-sigma",
                "0.1",
                "--o-to-h-dex",
                "0.1",
                "--o-to-h-sigma",
                "-1",
            ],
            "error: --o-to-h-sigma: must be >= 1e-6 and finite, got -1",
        ),
        (
            vec!["anchor", y, "--species", "CO", "--radius-au", "-3"],
            "error: --radius-au:",
        ),
    ] {
        let out = nivalis(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {}", stderr(&out));
        let err = stderr(&out);
        assert!(err.starts_with(expected), "{args:?}: {err}");
        assert!(
            !err.contains("'--") && !err.contains("c_to_o_sigma") && !err.contains("ratio_count"),
            "{args:?}: {err}"
        );
        assert!(out.stdout.is_empty(), "{args:?} wrote output");
    }
}

/// Issue 15 items 6 and 7: duplicate keys, a byte order mark, oversized and
/// deeply nested input, and a flood of problems, each with a clear message.
#[test]
fn bad_text_gets_a_clear_bounded_message() {
    let dup = temp_file(
        "dup.json",
        "{\"disk\": {\"age_myr\": 1},\n \"disk\": {\"age_myr\": 2}}",
    );
    let out = nivalis(&["check", dup.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(
            "disk: duplicate key: disk is given at line 1 column 2 and again at line 2 column 2"
        ),
        "{}",
        stderr(&out)
    );

    // A UTF-8 byte order mark is accepted and removed (as a browser's text decoding does).
    let bom = temp_file("bom.json", "\u{feff}{\"star\": {\"mass_msun\": 1.1}}");
    let out = nivalis(&["check", bom.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));

    // Over 1 MiB: refused without reading it all or echoing it.
    let big = temp_file("big.json", &format!("{{\"{}\": 1}}", "k".repeat(3 << 20)));
    let out = nivalis(&["check", big.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("larger than 1048576 bytes") && stderr(&out).len() < 300,
        "{}",
        stderr(&out)
    );

    // A long unknown key is shortened in the message.
    let long = temp_file(
        "long.json",
        &format!("{{\"disk\": {{\"{}\": 1}}}}", "q".repeat(100_000)),
    );
    let out = nivalis(&["check", long.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("unknown field") && stderr(&out).len() < 1000,
        "{} bytes of stderr",
        stderr(&out).len()
    );

    // 5000 nested brackets.
    let deep = temp_file("deep.json", &("[".repeat(5000) + &"]".repeat(5000)));
    let out = nivalis(&["check", deep.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("deeper than 32 levels"),
        "{}",
        stderr(&out)
    );

    // 20,000 unknown keys: 50 listed and a count.
    let keys: Vec<String> = (0..20_000)
        .map(|i| format!("\"unknown_{i}\": {i}"))
        .collect();
    let many = temp_file("many.json", &format!("{{{}}}", keys.join(",")));
    let out = nivalis(&["check", many.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let lines: Vec<&str> = std::str::from_utf8(&out.stderr).unwrap().lines().collect();
    assert_eq!(lines.len(), 51);
    assert!(
        lines[50].ends_with("(file): and 19950 more problems"),
        "{}",
        lines[50]
    );
}

/// Issue 15 item 7: a map export of a grid the model fits but its per-cell text
/// would not is refused up front, naming the grid and the estimate.
#[test]
fn a_map_too_large_to_export_is_refused_with_the_estimate() {
    let path = temp_file(
        "big-map.json",
        r#"{"grid": {"radial_cells": 4096, "vertical_cells": 1024}}"#,
    );
    let out = nivalis(&[
        "map",
        path.to_str().unwrap(),
        "--quantity",
        "temperature_k",
        "--format",
        "json",
    ]);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains(
            "grid.radial_cells: a map of 4096 x 1024 cells (4198400 samples) needs about"
        ),
        "{}",
        stderr(&out)
    );
    assert!(out.stdout.is_empty());
}

/// Issue 9 item 4: the planet methods text is built once
/// (`nivalis_exports::planet_tools`); `nivalis planet --methods` and
/// `nivalis fit --methods` write what the page's planet methods download
/// gives for the same planet, or the same map, read from the page's typed fields.
#[test]
fn planet_and_fit_methods_equal_the_pages() {
    use nivalis_exports::planet_tools::{fit_planet, place_planet, planet_methods, PlanetState};
    let disk = "demo_disks/young_sun.json";
    let text = std::fs::read_to_string(repo_root().join(disk)).unwrap();
    let file = nivalis_disk_files::parse_disk_json(&text).unwrap();
    let model = nivalis_physics::Model::run(&file.parameters).unwrap();
    let dir = std::env::temp_dir().join(format!("nivalis-cli-methods-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let planet_file = dir.join("planet-methods.txt");
    let out = nivalis(&[
        "planet",
        disk,
        "--radius-au",
        "7.5",
        "--solid-to-gas",
        "0.03",
        "--mix",
        "0.5",
        "--methods",
        planet_file.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let page = PlanetState {
        placed: Some(
            place_planet(
                &model,
                &file,
                &serde_json::json!({"radius_au": "7.5", "solid_to_gas": "0.03", "mix": "0.5"}),
            )
            .unwrap(),
        ),
        fitted: None,
    };
    let written = std::fs::read_to_string(&planet_file).unwrap();
    assert_eq!(written, planet_methods(&page).unwrap());
    assert!(written.contains("f_mix = 0.5"), "{written}");
    let fit_file = dir.join("fit-methods.txt");
    let out = nivalis(&[
        "fit",
        disk,
        "--c-to-o",
        "0.6",
        "--c-to-o-sigma",
        "0.05",
        "--methods",
        fit_file.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let page = PlanetState {
        placed: None,
        fitted: Some(
            fit_planet(
                &model,
                &file,
                &serde_json::json!({"c_to_o": "0.6", "c_to_o_sigma": "0.05"}),
            )
            .unwrap(),
        ),
    };
    let written = std::fs::read_to_string(&fit_file).unwrap();
    assert_eq!(written, planet_methods(&page).unwrap());
    assert!(written.contains("C/O = 0.6 ± 0.05"), "{written}");
}

#[test]
fn evolve_writes_the_issue_json_layout_and_refuses_bad_ages() {
    // Issue 13 item 3: `nivalis evolve DISK --until-myr T --snapshots N --format json`.
    let path = temp_file(
        "evolve.json",
        r#"{"grid": {"radial_cells": 40, "vertical_cells": 8}, "evolution": {"alpha": 0.003}}"#,
    );
    let p = path.to_str().unwrap();
    let out = nivalis(&[
        "evolve",
        p,
        "--until-myr",
        "0.5",
        "--snapshots",
        "3",
        "--format",
        "json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(v["times_myr"].as_array().unwrap().len(), 3);
    assert_eq!(v["times_myr"][2].as_f64(), Some(0.5));
    assert_eq!(v["radius_au"].as_array().unwrap().len(), 40);
    for key in [
        "surface_density_g_cm2",
        "dust_surface_density_g_cm2",
        "c_to_o_gas",
        "c_to_o_solid",
        "c_to_h_gas_dex",
        "o_to_h_gas_dex",
    ] {
        assert_eq!(v[key].as_array().unwrap().len(), 3, "{key}");
        assert_eq!(v[key][1].as_array().unwrap().len(), 40, "{key}");
    }
    assert_eq!(v["snowlines"]["H2O"].as_array().unwrap().len(), 3);
    for e in ["C", "O", "N", "S", "Si", "Mg", "Fe"] {
        assert!(v["conservation"][e].as_f64().unwrap() < 1e-10, "{e}");
    }
    // The resolved disk records what ran: the file's alpha and the command line's end age.
    assert_eq!(v["disk"]["evolution"]["alpha"].as_f64(), Some(0.003));
    assert_eq!(v["disk"]["evolution"]["until_myr"].as_f64(), Some(0.5));
    assert!(!stdout(&out).contains("NaN"));
    // CSV of the snowline tracks: one row per snapshot.
    let out = nivalis(&[
        "evolve",
        p,
        "--until-myr",
        "0.5",
        "--snapshots",
        "3",
        "--table",
        "snowlines",
    ]);
    assert_eq!(out.status.code(), Some(0));
    assert_eq!(csv_body(&stdout(&out)).lines().count(), 4);
    // Bad ages and counts name the flag and exit 2.
    let out = nivalis(&["evolve", p, "--until-myr", "50"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("--until-myr: must be above"),
        "{}",
        stderr(&out)
    );
    let out = nivalis(&["evolve", p, "--until-myr", "1", "--snapshots", "1"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("--snapshots: must be a whole number in [2, 500]"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn planet_takes_an_age_or_a_formation_window() {
    // Issue 13 item 3: `nivalis planet ... --age-myr T [--to-age-myr T2]` accretes from the evolved disk.
    let path = temp_file(
        "window.json",
        r#"{"grid": {"radial_cells": 40, "vertical_cells": 8}}"#,
    );
    let p = path.to_str().unwrap();
    let out = nivalis(&[
        "planet",
        p,
        "--radius-au",
        "0.5",
        "--solid-to-gas",
        "0",
        "--age-myr",
        "0.1",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(v["formation_window_myr"], serde_json::json!([0.1, 0.1]));
    assert!(v["envelope"].is_object(), "{v}");
    let out = nivalis(&[
        "planet",
        p,
        "--radius-au",
        "0.5",
        "--to-radius-au",
        "2",
        "--solid-to-gas",
        "0.01",
        "--age-myr",
        "0.05",
        "--to-age-myr",
        "0.3",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(!stdout(&out).contains("NaN"));
    let out = nivalis(&[
        "planet",
        p,
        "--radius-au",
        "0.5",
        "--solid-to-gas",
        "0",
        "--age-myr",
        "30",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("--age-myr: must be above"),
        "{}",
        stderr(&out)
    );
    let out = nivalis(&[
        "planet",
        p,
        "--radius-au",
        "0.5",
        "--solid-to-gas",
        "0",
        "--to-age-myr",
        "1",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("--to-age-myr: needs --age-myr"),
        "{}",
        stderr(&out)
    );
}

/// The arguments of `nivalis fit DISK --c-to-o 0.5 --c-to-o-sigma 0.05 --over-age-myr WINDOW`
/// (the observed C/O of the over-age tests, invented for the test).
fn fit_over_age<'a>(disk: &'a str, window: &'a str) -> Vec<&'a str> {
    vec![
        "fit",
        disk,
        "--c-to-o",
        "0.5",
        "--c-to-o-sigma",
        "0.05",
        "--over-age-myr",
        window,
    ]
}

#[test]
fn fit_maps_formation_radius_by_age_on_the_evolving_disk() {
    // Issue 13 item 3: `nivalis fit ... --over-age-myr T1,T2[,N]` (docs/model.md section 12.9).
    let path = temp_file(
        "fit_over_age.json",
        r#"{"grid": {"radial_cells": 40, "vertical_cells": 8}}"#,
    );
    let p = path.to_str().unwrap();
    let args = fit_over_age(p, "0.05,0.5,3");
    let mut json_args = args.clone();
    json_args.extend(["--format", "json"]);
    let out = nivalis(&json_args);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    let ages = v["fit"]["ages_myr"]["snapshots"].as_array().unwrap();
    assert!(ages.len() >= 3, "{v}");
    assert!(ages.iter().all(|t| {
        let t = t.as_f64().unwrap();
        (0.05 * (1.0 - 1e-9)..=0.5 * (1.0 + 1e-9)).contains(&t)
    }));
    assert_eq!(
        v["data"]["time_myr"].as_array().unwrap().len(),
        ages.len() * 40
    );
    assert!(v["fit"]["goodness"]["p_value"].is_number(), "{v}");
    assert!(v["fit"]["best_fit"]["time_myr"].is_number(), "{v}");
    // CSV names the age column first; a window before the run's start is refused by flag.
    let mut csv = args;
    csv.extend(["--format", "csv"]);
    let out = nivalis(&csv);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(csv_body(&stdout(&out)).starts_with("time_myr,radius_au,solid_to_gas"));
    let out = nivalis(&fit_over_age(p, "0.001,0.5"));
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--over-age-myr"), "{}", stderr(&out));
}

#[test]
fn fit_over_age_figure_equals_the_shared_function() {
    // Issue 13: `nivalis fit ... --over-age-myr T1,T2,N --figure FILE [--width --dpi --theme]`
    // writes what the shared run (`nivalis_exports::evolution_fit::run_age_fit`, which the page
    // also calls) and the shared figure (`nivalis_charts::age_fit`) give, with the provenance of
    // the run's disk, byte for byte; the table is the shared function's text.
    use nivalis_exports::evolution_fit::{run_age_fit, AgeFitRequest};
    use nivalis_exports::figures::{embed_png_provenance, embed_svg_provenance};
    let text = r#"{"grid": {"radial_cells": 30, "vertical_cells": 8}}"#;
    let path = temp_file("fit_over_age_figure.json", text);
    let p = path.to_str().unwrap();
    let svg_path = temp_file("age_fit.svg", "");
    let png_path = temp_file("age_fit.png", "");
    let mut base = fit_over_age(p, "0.05,0.3,3");
    base.extend(["--format", "csv"]);
    let mut svg_args = base.clone();
    svg_args.extend(["--figure", svg_path.to_str().unwrap()]);
    let out = nivalis(&svg_args);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let mut png_args = base.clone();
    png_args.extend([
        "--figure",
        png_path.to_str().unwrap(),
        "--width",
        "double",
        "--dpi",
        "72",
        "--theme",
        "dark",
    ]);
    let out_png = nivalis(&png_args);
    assert_eq!(out_png.status.code(), Some(0), "{}", stderr(&out_png));
    // The same run through the shared functions.
    let file = nivalis_disk_files::from_value(&serde_json::from_str(text).unwrap()).unwrap();
    let (observed, settings) = nivalis_exports::planet_tools::fit_request(
        &serde_json::json!({"c_to_o": "0.5", "c_to_o_sigma": "0.05"}),
    )
    .unwrap();
    let request = AgeFitRequest {
        window: (0.05, 0.3, 3),
        observed,
        settings,
    };
    let fit = run_age_fit(&file, &request, &mut |_| true).unwrap();
    assert_eq!(stdout(&out), fit.text(nivalis_exports::Format::Csv));
    let figure = nivalis_charts::age_fit::age_fit_figure(&fit.map);
    let view = nivalis_charts::age_fit::CHI2_AGE_MAP_VIEW;
    let svg = nivalis_charts::render_svg(
        &figure,
        &nivalis_charts::Theme::light(),
        nivalis_charts::FigureSize::single_column(),
    )
    .unwrap();
    let want_svg = embed_svg_provenance(&svg, &fit.provenance(), view);
    let got_svg = std::fs::read_to_string(&svg_path).unwrap();
    assert!(got_svg.contains("formation age t [Myr]"));
    assert!(got_svg.contains(view), "the provenance names the view");
    assert_eq!(got_svg, want_svg);
    let png = nivalis_charts::render_png(
        &figure,
        &nivalis_charts::Theme::dark(),
        nivalis_charts::FigureSize::double_column(),
        72.0,
    )
    .unwrap();
    let got_png = std::fs::read(&png_path).unwrap();
    assert_eq!(got_png, embed_png_provenance(&png, &fit.provenance(), view));
    // A resolution out of range is refused by flag before anything runs.
    let mut bad = base;
    bad.extend(["--figure", png_path.to_str().unwrap(), "--dpi", "5"]);
    let out = nivalis(&bad);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--dpi: must be"), "{}", stderr(&out));
}

#[test]
fn figure_draws_the_evolution_views() {
    // Issue 13 item 4 exports: `nivalis figure DISK --view <evolution view>` through the same key
    // table as the static views (docs/model.md section 12), SVG and PNG.
    let path = temp_file(
        "evolution_figure.json",
        r#"{"grid": {"radial_cells": 30, "vertical_cells": 8}, "evolution": {"until_myr": 0.2, "snapshots": 3}}"#,
    );
    let p = path.to_str().unwrap();
    for view in ["snowline_tracks", "evolved_c_to_o", "c_to_o_time_map"] {
        let out = nivalis(&["figure", p, "--view", view]);
        assert_eq!(out.status.code(), Some(0), "{view}: {}", stderr(&out));
        let svg = stdout(&out);
        assert!(svg.starts_with("<svg") || svg.contains("<svg"), "{view}");
        assert!(svg.contains(view), "{view}: the provenance names the view");
    }
    let out = nivalis(&[
        "figure",
        p,
        "--view",
        "evolved_c_to_o",
        "--age-myr",
        "0.05",
        "--format",
        "png",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(out.stdout.starts_with(b"\x89PNG"));
    let out = nivalis(&["figure", p, "--view", "snowline_track"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("c_to_o_time_map"), "{}", stderr(&out));
}
