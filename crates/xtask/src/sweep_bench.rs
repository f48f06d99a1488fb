//! The sweep section of `cargo xtask bench` (issue 14 item 5): models per
//! second per core natively (`crates/sweep/benches/throughput.rs`, release)
//! and through Dask (`crates/python/benches/sweep_dask.py` with the module
//! installed by the `python module` test stage), and the per-model overhead
//! of a sweep point over a bare `Model::run` (target < 20 %).

use std::process::Command;

use crate::{cargo, repo_root};

/// The number after `"key":` in a one-line JSON object.
pub fn json_number(json: &str, key: &str) -> Option<f64> {
    let at = json.find(&format!("\"{key}\""))? + key.len() + 2;
    let rest = json[at..].trim_start().strip_prefix(':')?.trim_start();
    let end = rest
        .find(|c: char| !(c.is_ascii_digit() || "+-.eE".contains(c)))
        .unwrap_or(rest.len());
    rest[..end].parse().ok()
}

/// Overhead of a sweep point over a bare run, in percent.
pub fn overhead_percent(sweep_ns: f64, bare_ns: f64) -> f64 {
    100.0 * (sweep_ns / bare_ns - 1.0)
}

fn last_json_line(out: &[u8]) -> Option<String> {
    String::from_utf8_lossy(out)
        .lines()
        .rev()
        .find(|l| l.trim_start().starts_with('{'))
        .map(str::to_string)
}

/// Run both measurements and print the section; problems are returned as text.
pub fn sweep_section() -> Result<(), String> {
    let root = repo_root();
    println!("\nsweep throughput (default disk, 200 x 80; medians):");
    let out = cargo()
        .current_dir(&root)
        .args([
            "bench",
            "-p",
            "nivalis-sweep",
            "--no-default-features",
            "--bench",
            "throughput",
        ])
        .output()
        .map_err(|e| format!("could not start the sweep benchmark: {e}"))?;
    let line = last_json_line(&out.stdout).ok_or_else(|| {
        format!(
            "the sweep benchmark printed no result: {}",
            String::from_utf8_lossy(&out.stderr)
        )
    })?;
    let bare = json_number(&line, "bare_ns").ok_or("no bare_ns")?;
    let sweep = json_number(&line, "sweep_ns").ok_or("no sweep_ns")?;
    println!(
        "  native: bare Model::run {:.2} ms, sweep point {:.2} ms -> {:.1} models/s per core",
        bare / 1e6,
        sweep / 1e6,
        1e9 / sweep
    );
    println!(
        "  per-model overhead of a sweep point over a bare Model::run: {:+.1} %   target < 20 % \
         (set the value, read and validate the disk, snowlines, provenance hash)",
        overhead_percent(sweep, bare)
    );
    match crate::python_module::release_python() {
        Err(message) => println!("  dask: not measured ({message})"),
        Ok(python) => {
            let out = Command::new(&python)
                .current_dir(&root)
                .arg("crates/python/benches/sweep_dask.py")
                .output()
                .map_err(|e| format!("could not start the Dask benchmark: {e}"))?;
            let line = last_json_line(&out.stdout).ok_or_else(|| {
                format!(
                    "the Dask benchmark printed no result: {}",
                    String::from_utf8_lossy(&out.stderr)
                )
            })?;
            let local = json_number(&line, "local_ns").ok_or("no local_ns")?;
            let wall = json_number(&line, "dask_wall_ns").ok_or("no dask_wall_ns")?;
            let points = json_number(&line, "points").ok_or("no points")?;
            let workers = json_number(&line, "workers").ok_or("no workers")?;
            println!(
                "  python, in process: {:.2} ms per model -> {:.1} models/s per core ({:+.1} % over the native sweep point)",
                local / 1e6,
                1e9 / local,
                overhead_percent(local, sweep)
            );
            println!(
                "  dask LocalCluster, {workers} worker processes: {points} models in {:.2} s -> {:.1} models/s per core \
                 (on this machine's cores, shared with the scheduler)",
                wall / 1e9,
                points / (wall / 1e9) / workers
            );
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_read_from_the_result_line() {
        let line = r#"{"bare_ns": 12500000.5, "sweep_ns": 1.3e7, "points": 16}"#;
        assert_eq!(json_number(line, "bare_ns"), Some(12500000.5));
        assert_eq!(json_number(line, "sweep_ns"), Some(1.3e7));
        assert_eq!(json_number(line, "points"), Some(16.0));
        assert_eq!(json_number(line, "missing"), None);
    }

    #[test]
    fn overhead_is_the_excess_in_percent() {
        assert!((overhead_percent(12.0, 10.0) - 20.0).abs() < 1e-12);
    }
}
