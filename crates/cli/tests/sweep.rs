//! `nivalis sweep` and `nivalis sweep merge` (issue 14 item 3 and 6): shards of
//! a job array merge into the unsharded result; bad input gets clear messages.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn nivalis(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args(args)
        .current_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("../.."))
        .output()
        .expect("nivalis runs")
}

fn temp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("nivalis-cli-sweep-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn text(b: &[u8]) -> String {
    String::from_utf8(b.to_vec()).unwrap()
}

const SWEEP: &str = r#"{
  "base": {"grid": {"radial_cells": 16, "vertical_cells": 8}},
  "axes": [
    {"path": "star.luminosity_lsun", "values": [0.5, 1e9, 2]},
    {"path": "disk.gas_mass_msun", "linear": {"from": 0.005, "to": 0.02, "count": 2}}
  ]
}"#;

#[test]
fn shards_of_a_job_array_merge_into_the_unsharded_dataset() {
    let dir = temp("job");
    let file = dir.join("sweep.json");
    std::fs::write(&file, SWEEP).unwrap();
    let f = file.to_str().unwrap();
    let whole = dir.join("whole");
    let split = dir.join("split");
    let o = nivalis(&["sweep", f, "--out", whole.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert!(
        text(&o.stdout).starts_with("shard 1/1: grid points 0..6 of 6: 4 rows"),
        "{}",
        text(&o.stdout)
    );
    // The invalid luminosity is listed with the reader's problem, per failed point.
    let err = text(&o.stderr);
    assert_eq!(err.lines().count(), 2, "{err}");
    assert!(err.contains("point 2 (star.luminosity_lsun=1000000000.0, disk.gas_mass_msun=0.005): star.luminosity_lsun: must be in [1e-5, 10000000], got 1000000000.0"), "{err}");
    for i in 1..=4 {
        let o = nivalis(&[
            "sweep",
            f,
            "--out",
            split.to_str().unwrap(),
            "--shard",
            &format!("{i}/4"),
        ]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    }
    let again = nivalis(&[
        "sweep",
        f,
        "--out",
        split.to_str().unwrap(),
        "--shard",
        "2/4",
    ]);
    assert!(text(&again.stdout).contains("already complete, not run again"));
    for d in [&whole, &split] {
        let o = nivalis(&["sweep", "merge", d.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        assert!(
            text(&o.stdout).contains(": 4 rows from"),
            "{}",
            text(&o.stdout)
        );
    }
    // The merged datasets hold the same rows (Parquet bytes may differ only in row grouping: one here).
    let a = std::fs::read(whole.join("sweep.parquet")).unwrap();
    let b = std::fs::read(split.join("sweep.parquet")).unwrap();
    assert_eq!(a, b);
}

#[test]
fn set_changes_the_base_disk_of_a_sweep() {
    let dir = temp("set");
    let file = dir.join("sweep.json");
    std::fs::write(&file, SWEEP).unwrap();
    let o = nivalis(&[
        "sweep",
        file.to_str().unwrap(),
        "--out",
        dir.join("out").to_str().unwrap(),
        "--set",
        "star.luminosity_lsun=3",
    ]);
    // The axis sets the luminosity after the base, so only the base changes hash-wise.
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let o = nivalis(&[
        "sweep",
        file.to_str().unwrap(),
        "--out",
        dir.join("out2").to_str().unwrap(),
        "--set",
        "grid.radial_cels=3",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("unknown field; did you mean radial_cells?"),
        "{}",
        text(&o.stderr)
    );
}

#[test]
fn bad_input_gets_clear_messages() {
    let dir = temp("bad");
    let file = dir.join("sweep.json");
    std::fs::write(&file, SWEEP).unwrap();
    let f = file.to_str().unwrap();
    let out = dir.join("out");
    let o = nivalis(&["sweep", f, "--out", out.to_str().unwrap(), "--shard", "3/2"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains(
            "--shard 3/2: the shard index must be in [1, 2] (shards are numbered from 1), got 3"
        ),
        "{}",
        text(&o.stderr)
    );
    std::fs::write(
        &file,
        SWEEP.replace("star.luminosity_lsun", "star.luminosity"),
    )
    .unwrap();
    let o = nivalis(&["sweep", f, "--out", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(
        text(&o.stderr),
        format!("error: {f}: axes[0].path: star.luminosity: unknown field; did you mean luminosity_lsun?\n")
    );
    std::fs::write(&file, SWEEP.replace("[0.5, 1e9, 2]", "[]")).unwrap();
    let o = nivalis(&["sweep", f, "--out", out.to_str().unwrap()]);
    assert_eq!(
        text(&o.stderr),
        format!("error: {f}: axes[0].values: axis star.luminosity_lsun is empty: give at least one value\n")
    );
    let o = nivalis(&["sweep", "merge", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("no readable manifest"),
        "{}",
        text(&o.stderr)
    );
}
