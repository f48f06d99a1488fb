//! `--set PATH=VALUE` on every command (issue 14 item 2): the changed disk is
//! validated like the file itself, and equals a file written with the value.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn nivalis(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nivalis"))
        .args(args)
        .current_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("../.."))
        .output()
        .expect("nivalis runs")
}

fn temp_file(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("nivalis-set-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).unwrap()
}

#[test]
fn set_equals_the_same_value_in_the_file() {
    let base = temp_file("base.json", r#"{"star": {"mass_msun": 1}}"#);
    let edited = temp_file(
        "edited.json",
        r#"{"star": {"mass_msun": 1, "luminosity_lsun": 3}, "grid": {"radial_cells": 64}}"#,
    );
    let b = base.to_str().unwrap();
    let e = edited.to_str().unwrap();
    for command in [
        vec!["structure"],
        vec!["model"],
        vec!["snowlines"],
        vec!["methods"],
        vec!["planet", "--radius-au", "5", "--solid-to-gas", "0.01"],
    ] {
        let mut with_set = command.clone();
        with_set.extend([
            b,
            "--set",
            "star.luminosity_lsun=3",
            "--set",
            "grid.radial_cells=64",
        ]);
        let mut with_file = command.clone();
        with_file.push(e);
        let a = nivalis(&with_set);
        let f = nivalis(&with_file);
        assert_eq!(a.status.code(), Some(0), "{command:?}: {}", text(&a.stderr));
        assert_eq!(f.status.code(), Some(0));
        // Byte for byte, provenance (resolved disk and its hash) included.
        assert_eq!(text(&a.stdout), text(&f.stdout), "{command:?}");
    }
}

#[test]
fn later_set_wins_and_set_goes_before_or_after_the_command() {
    let a = nivalis(&[
        "--set",
        "star.luminosity_lsun=2",
        "structure",
        "demo_disks/young_sun.json",
        "--format",
        "json",
        "--set",
        "star.luminosity_lsun=3",
    ]);
    let b = nivalis(&[
        "structure",
        "demo_disks/young_sun.json",
        "--format",
        "json",
        "--set",
        "star.luminosity_lsun=3",
    ]);
    assert_eq!(a.status.code(), Some(0), "{}", text(&a.stderr));
    assert_eq!(text(&a.stdout), text(&b.stdout));
    assert!(
        text(&a.stdout).contains("\"luminosity_lsun\": 3.0,"),
        "{}",
        text(&a.stdout)
    );
}

#[test]
fn unknown_path_gets_the_readers_suggestion() {
    let o = nivalis(&[
        "check",
        "demo_disks/young_sun.json",
        "--set",
        "star.luminosity_lsn=3",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(o.stdout.is_empty());
    assert_eq!(
        text(&o.stderr),
        "error: demo_disks/young_sun.json: star.luminosity_lsn: unknown field; did you mean luminosity_lsun?\n"
    );
}

#[test]
fn out_of_range_and_wrong_type_are_the_readers_problems() {
    let o = nivalis(&[
        "check",
        "demo_disks/young_sun.json",
        "--set",
        "star.luminosity_lsun=-1",
        "--set",
        "disk.opacity=\"grey\"",
        "--set",
        "ices.binding_energies=true",
    ]);
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(
        err.contains("star.luminosity_lsun: must be in [1e-5, 10000000], got -1"),
        "{err}"
    );
    assert_eq!(err.lines().count(), 3, "{err}");
}

#[test]
fn malformed_assignments_are_named() {
    let o = nivalis(&[
        "check",
        "demo_disks/young_sun.json",
        "--set",
        "star.luminosity_lsun",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(
        text(&o.stderr),
        "error: --set: expected PATH=VALUE (e.g. star.luminosity_lsun=3), got \"star.luminosity_lsun\"\n"
    );
    let o = nivalis(&[
        "check",
        "demo_disks/young_sun.json",
        "--set",
        "star.mass_msun.x=1",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("star.mass_msun is "),
        "{}",
        text(&o.stderr)
    );
}

#[test]
fn text_values_are_strings() {
    // `CO` is not JSON, so it is the string "CO": the reader checks it like the file's.
    let o = nivalis(&[
        "check",
        "demo_disks/young_sun.json",
        "--set",
        "ices.binding_energies=nonsense_set",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("ices.binding_energies: must be one of"),
        "{}",
        text(&o.stderr)
    );
}
