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
        "star.mass_msun: must be > 0 and finite, got 0",
        "star.luminosity_lsun: must be > 0 and finite, got -1",
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

#[test]
fn valid_files_check_and_run_without_nan() {
    for disk in [
        "demo_disks/young_sun.json",
        "demo_disks/luminous_herbig.json",
        "demo_disks/step_model_comparison.json",
    ] {
        assert_eq!(nivalis(&["check", disk]).status.code(), Some(0), "{disk}");
        for args in [
            vec!["structure", disk],
            vec!["structure", disk, "--format", "json"],
            vec!["model", disk],
            vec!["model", disk, "--format", "ecsv"],
            vec!["model", disk, "--format", "json"],
            vec!["map", disk, "--quantity", "c_to_o_gas"],
            vec![
                "map",
                disk,
                "--quantity",
                "equilibration_time_yr:CO",
                "--format",
                "json",
            ],
            vec!["snowlines", disk],
        ] {
            let out = nivalis(&args);
            assert_eq!(out.status.code(), Some(0), "{args:?}: {}", stderr(&out));
            let text = stdout(&out);
            assert!(
                !text.contains("NaN") && !text.contains("inf"),
                "{args:?} printed a non-number"
            );
        }
    }
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
