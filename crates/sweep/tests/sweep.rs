//! Sweeps: grid and zip points, shards whose union equals the unsharded run,
//! re-runs that skip complete shards, failed points listed with their
//! problems, checksums verified on merge, and clear messages for bad input.

use nivalis_sweep::parquet_io;
use nivalis_sweep::{merge, run_shard, ColumnData, ShardSpec, Sweep};
use serde_json::{json, Value};
use std::path::{Path, PathBuf};

fn temp_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("nivalis-sweep-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// A small, quick grid (16 radial x 8 vertical cells) with three luminosities
/// (one invalid), two disk masses and a planet.
fn sweep_value() -> Value {
    json!({
        "schema": "nivalis-sweep/1",
        "base": {"grid": {"radial_cells": 16, "vertical_cells": 8}},
        "axes": [
            {"path": "star.luminosity_lsun", "values": [0.5, -1, 2]},
            {"path": "disk.gas_mass_msun", "log": {"from": 0.001, "to": 0.1, "count": 3}}
        ],
        "planets": [{"name": "p5", "radius_au": 5, "solid_to_gas": 0.01}]
    })
}

fn sweep() -> Sweep {
    Sweep::from_value(&sweep_value(), Path::new(".")).unwrap()
}

fn messages(v: Value) -> String {
    Sweep::from_value(&v, Path::new("."))
        .unwrap_err()
        .to_string()
}

#[test]
fn grid_points_take_every_combination_first_axis_slowest() {
    let s = sweep();
    assert_eq!(s.points, 9);
    let at = |i| s.values_at(i).into_iter().cloned().collect::<Vec<_>>();
    assert_eq!(at(0), vec![json!(0.5), json!(0.001)]);
    assert_eq!(at(1)[0], json!(0.5));
    assert_eq!(at(8), vec![json!(2), json!(0.1)]);
    // Log range: both ends exact, the middle the geometric mean (to rounding).
    let mid = s.axes[1].values[1].as_f64().unwrap();
    assert!((mid - 0.01).abs() < 1e-15, "{mid}");
}

#[test]
fn zip_pairs_values_and_needs_equal_lengths() {
    let mut v = sweep_value();
    v["combine"] = json!("zip");
    v["axes"][1] =
        json!({"path": "disk.gas_mass_msun", "linear": {"from": 0.01, "to": 0.03, "count": 3}});
    let s = Sweep::from_value(&v, Path::new(".")).unwrap();
    assert_eq!(s.points, 3);
    assert_eq!(s.values_at(2), vec![&json!(2), &json!(0.03)]);
    v["axes"][1]["linear"]["count"] = json!(2);
    assert!(messages(v).contains("zip needs axes of equal length"));
}

#[test]
fn shards_union_equals_the_unsharded_run_and_reruns_skip() {
    let s = sweep();
    let whole = temp_dir("whole");
    let split = temp_dir("split");
    let w = run_shard(&s, &whole, ShardSpec::WHOLE).unwrap();
    assert_eq!(w.rows, 6);
    // The invalid luminosity fails at 3 points, listed with the reader's problem.
    assert_eq!(w.failed.len(), 3);
    assert_eq!(w.failed[0]["point"], 3);
    assert_eq!(w.failed[0]["problems"][0]["path"], "star.luminosity_lsun");
    assert_eq!(w.failed[0]["problems"][0]["value"], "-1");
    for i in [3, 1, 2] {
        let r = run_shard(&s, &split, ShardSpec { index: i, count: 3 }).unwrap();
        assert!(!r.skipped);
    }
    // A second run of a complete shard is skipped.
    assert!(
        run_shard(&s, &split, ShardSpec { index: 2, count: 3 })
            .unwrap()
            .skipped
    );
    let a = merge(&whole).unwrap();
    let b = merge(&split).unwrap();
    assert_eq!((a.rows, b.rows, b.shards), (6, 6, 3));
    let ca = parquet_io::read(&a.file).unwrap();
    let cb = parquet_io::read(&b.file).unwrap();
    assert_eq!(ca, cb);
    // Every row carries its point, values and disk hash; units are in the field metadata.
    let names: Vec<&str> = ca.iter().map(|c| c.info.name.as_str()).collect();
    assert_eq!(
        &names[..5],
        [
            "point",
            "star.luminosity_lsun",
            "disk.gas_mass_msun",
            "disk_hash",
            "star_c_to_o"
        ]
    );
    assert_eq!(ca[1].info.unit, "solLum");
    assert_eq!(ca[2].info.unit, "solMass");
    let snow = ca
        .iter()
        .find(|c| c.info.name == "snowline_au_H2O")
        .unwrap();
    assert_eq!(snow.info.unit, "AU");
    assert_eq!(ca[0].data, ColumnData::Index(vec![0, 1, 2, 6, 7, 8]));
    let ColumnData::Text(hashes) = &ca[3].data else {
        panic!()
    };
    assert!(hashes.iter().all(|h| h.len() == 12));
    assert_ne!(hashes[0], hashes[1]);
    let manifest: Value =
        serde_json::from_str(&std::fs::read_to_string(split.join("manifest.json")).unwrap())
            .unwrap();
    assert_eq!(manifest["complete"], true);
    assert_eq!(manifest["failed_points"].as_array().unwrap().len(), 3);
    assert_eq!(manifest["shards"].as_array().unwrap().len(), 3);
    assert_eq!(manifest["merged"]["rows"], 6);
}

#[test]
fn the_disk_hash_is_the_exports_provenance_hash() {
    // Point 0 equals the disk {grid, star.luminosity_lsun 0.5, disk.gas_mass_msun 0.001}.
    let s = sweep();
    let part = s.run_points(0..1);
    let file = nivalis_disk_files::parse_disk_json(
        r#"{"grid": {"radial_cells": 16, "vertical_cells": 8}, "star": {"luminosity_lsun": 0.5}, "disk": {"gas_mass_msun": 0.001}}"#,
    )
    .unwrap();
    let hash = nivalis_exports::Provenance::of(&file).disk_hash;
    assert_eq!(part.columns[3].data, ColumnData::Text(vec![hash]));
    // And the snowline is the model's own.
    let model = nivalis_physics::Model::run(&file.parameters).unwrap();
    let h2o =
        model.snowlines(nivalis_physics::Species::H2O)[0].radius_cm / nivalis_physics::units::AU_CM;
    let col = part
        .columns
        .iter()
        .find(|c| c.info.name == "snowline_au_H2O")
        .unwrap();
    assert_eq!(col.data, ColumnData::Float(vec![Some(h2o)]));
}

#[test]
fn merge_refuses_missing_shards_and_bad_checksums() {
    let s = sweep();
    let dir = temp_dir("missing");
    run_shard(&s, &dir, ShardSpec { index: 1, count: 2 }).unwrap();
    let e = merge(&dir).unwrap_err();
    assert!(e.contains("missing: 2/2"), "{e}");
    let r = run_shard(&s, &dir, ShardSpec { index: 2, count: 2 }).unwrap();
    let mut bytes = std::fs::read(&r.file).unwrap();
    let n = bytes.len();
    bytes[n / 2] ^= 1;
    std::fs::write(&r.file, bytes).unwrap();
    let e = merge(&dir).unwrap_err();
    assert!(e.contains("checksum mismatch"), "{e}");
    // Running the shard again repairs it (the record no longer matches, so it is not skipped).
    assert!(
        !run_shard(&s, &dir, ShardSpec { index: 2, count: 2 })
            .unwrap()
            .skipped
    );
    assert_eq!(merge(&dir).unwrap().rows, 6);
    // Another sweep in the same folder is refused.
    let mut other = sweep_value();
    other["axes"][0]["values"] = json!([1]);
    let o = Sweep::from_value(&other, Path::new(".")).unwrap();
    assert!(run_shard(&o, &dir, ShardSpec::WHOLE)
        .unwrap_err()
        .contains("another sweep"));
}

#[test]
fn bad_sweeps_get_clear_messages() {
    let mut v = sweep_value();
    v["axes"][0]["path"] = json!("star.luminosity_lsn");
    assert_eq!(
        messages(v),
        "axes[0].path: star.luminosity_lsn: unknown field; did you mean luminosity_lsun?"
    );
    let mut v = sweep_value();
    v["axes"][0]["path"] = json!("stars.luminosity_lsun");
    assert!(messages(v).starts_with("axes[0].path: stars: unknown field; did you mean star?"));
    let mut v = sweep_value();
    v["axes"][0]["values"] = json!([]);
    assert_eq!(
        messages(v),
        "axes[0].values: axis star.luminosity_lsun is empty: give at least one value"
    );
    let mut v = sweep_value();
    v["axes"] = json!([]);
    assert_eq!(messages(v), "axes: is empty: give at least one axis");
    let mut v = sweep_value();
    v["axes"][1]["log"]["from"] = json!(0);
    assert_eq!(
        messages(v),
        "axes[1].log.from: must be a number > 0 (log range), got 0"
    );
    let mut v = sweep_value();
    v["planets"][0]["weighting"] = json!("mass");
    assert!(messages(v).contains("planets[0].weighting: must be one of accreted_mass"));
    let mut v = sweep_value();
    v["fits"] = json!([{"c_to_o": 0.8}]);
    assert!(
        messages(v).contains("fits[0].c_to_o_sigma"),
        "{}",
        messages(sweep_value_with_fit())
    );
}

fn sweep_value_with_fit() -> Value {
    let mut v = sweep_value();
    v["fits"] = json!([{"c_to_o": 0.8}]);
    v
}

#[test]
fn shard_specs() {
    assert_eq!(
        ShardSpec::parse("2/3").unwrap(),
        ShardSpec { index: 2, count: 3 }
    );
    assert_eq!(
        ShardSpec::parse("3/2").unwrap_err(),
        "--shard 3/2: the shard index must be in [1, 2] (shards are numbered from 1), got 3"
    );
    assert!(ShardSpec::parse("0/2")
        .unwrap_err()
        .contains("numbered from 1"));
    assert!(ShardSpec::parse("1/0")
        .unwrap_err()
        .contains("shard count must be in [1,"));
    assert!(ShardSpec::parse("a")
        .unwrap_err()
        .starts_with("--shard: expected I/N"));
    // Contiguous blocks that cover every point once.
    let n = 7;
    let mut all = Vec::new();
    for i in 1..=3 {
        all.extend(ShardSpec { index: i, count: 3 }.range(n));
    }
    assert_eq!(all, (0..n).collect::<Vec<_>>());
    // More shards than points: some are empty, none overlaps.
    let lens: Vec<usize> = (1..=10)
        .map(|i| {
            ShardSpec {
                index: i,
                count: 10,
            }
            .range(3)
            .len()
        })
        .collect();
    assert_eq!(lens.iter().sum::<usize>(), 3);
    assert!(lens.iter().all(|&l| l <= 1));
}
