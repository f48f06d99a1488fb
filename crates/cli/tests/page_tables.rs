//! The page's snowline table and summary (`nivalis_exports::page_tables`)
//! against the CLI: for every demo disk, the table's snowline radii,
//! directions and equilibrium flags equal what `nivalis snowlines` writes, its
//! midplane temperatures lie between those `nivalis model` gives at the two
//! grid radii around each snowline, and the summary's grid and radii are those
//! of `nivalis model`. The CLI is the oracle here (the same binary users run).

use std::path::{Path, PathBuf};
use std::process::Command;

use nivalis_exports::page_tables::{snowline_table, summary};
use nivalis_physics::{Model, Species};
use serde_json::Value;

fn repo_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn nivalis_json(args: &[&str]) -> Value {
    let out = Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args(args)
        .current_dir(repo_root())
        .output()
        .expect("nivalis runs");
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON output")
}

fn demo_disks() -> Vec<String> {
    let mut disks: Vec<String> = std::fs::read_dir(repo_root().join("demo_disks"))
        .unwrap()
        .map(|e| format!("demo_disks/{}", e.unwrap().file_name().to_string_lossy()))
        .filter(|p| p.ends_with(".json"))
        .collect();
    disks.sort();
    disks
}

#[test]
fn the_snowline_table_and_summary_equal_the_cli_for_every_demo_disk() {
    let disks = demo_disks();
    assert!(disks.len() >= 5, "{disks:?}");
    let mut snowlines_seen = 0;
    for disk in &disks {
        let text = std::fs::read_to_string(repo_root().join(disk)).unwrap();
        let file = nivalis_disk_files::parse_disk_json(&text).unwrap();
        let model = Model::run(&file.parameters).unwrap();
        let table = snowline_table(&model);
        let cli = nivalis_json(&["snowlines", disk]);
        let profile = nivalis_json(&["model", disk, "--format", "json"]);
        let radius = profile["data"]["radius_au"].as_array().unwrap();
        let temperature = profile["data"]["midplane_temperature_k"]
            .as_array()
            .unwrap();
        let rows = table.as_array().unwrap();
        assert_eq!(rows.len(), Species::ALL.len());
        for (row, s) in rows.iter().zip(Species::ALL) {
            let key = s.key();
            assert_eq!(row["species"], key, "{disk}");
            let lines = row["snowlines"].as_array().unwrap();
            let radii: Vec<&Value> = lines.iter().map(|l| &l["radius_au"]).collect();
            let directions: Vec<&Value> = lines.iter().map(|l| &l["direction"]).collect();
            let flags: Vec<&Value> = lines.iter().map(|l| &l["out_of_equilibrium"]).collect();
            let cli_radii: Vec<&Value> = cli["snowlines"][key].as_array().unwrap().iter().collect();
            assert_eq!(radii, cli_radii, "{disk} {key} radii");
            let cli_directions: Vec<&Value> = cli["snowline_directions"][key]
                .as_array()
                .unwrap()
                .iter()
                .collect();
            assert_eq!(directions, cli_directions, "{disk} {key} directions");
            let cli_flags: Vec<&Value> = cli["snowline_out_of_equilibrium"][key]
                .as_array()
                .unwrap()
                .iter()
                .collect();
            assert_eq!(flags, cli_flags, "{disk} {key} equilibrium flags");
            for line in lines {
                snowlines_seen += 1;
                // Interpolated in ln r between the CLI's two grid radii around the snowline.
                let r = line["radius_au"].as_f64().unwrap();
                let t = line["midplane_temperature_k"].as_f64().unwrap();
                let j = radius
                    .partition_point(|x| x.as_f64().unwrap() < r)
                    .clamp(1, radius.len() - 1);
                let (a, b) = (
                    temperature[j - 1].as_f64().unwrap(),
                    temperature[j].as_f64().unwrap(),
                );
                assert!(
                    t >= a.min(b) && t <= a.max(b),
                    "{disk} {key}: {t} K not in [{a}, {b}]"
                );
            }
            if lines.is_empty() {
                assert!(
                    ["absent", "ice_at_inner_edge", "gas_at_inner_edge"]
                        .contains(&row["inner_edge"].as_str().unwrap()),
                    "{disk} {key}"
                );
            }
        }
        let s = summary(&file, &model);
        assert_eq!(
            s["radial_cells"].as_u64().unwrap() as usize,
            radius.len(),
            "{disk}"
        );
        assert_eq!(s["inner_radius_au"], radius[0], "{disk}");
        assert_eq!(s["outer_radius_au"], radius[radius.len() - 1], "{disk}");
        assert_eq!(s["name"], Value::from(file.name.clone()), "{disk}");
    }
    // Every demo disk has at least its water snowline.
    assert!(snowlines_seen >= disks.len(), "{snowlines_seen} snowlines");
}
