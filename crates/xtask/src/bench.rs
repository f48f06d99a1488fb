//! `cargo xtask bench`: runs the criterion benchmarks of the physics core
//! (`crates/physics/benches/model.rs`) and prints a table of their medians with
//! the ratio between the 4x grid (400 x 160) and the default grid (200 x 80).
//!
//! The medians are read from criterion's own record,
//! `target/criterion/<group>/<grid>/new/estimates.json` (the median's point
//! estimate, in nanoseconds), rather than from its console text, which is
//! meant for people and changes between versions. A record older than this
//! run is refused, so a failed benchmark cannot show last week's numbers.
//!
//! Hook for the page: when `tests/browser/bench.mjs` exists, the page is built
//! (when `crates/web` exists) and that script runs with Node; its output is
//! shown as it is.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, SystemTime};

use crate::{cargo, relative, repo_root, run, web_crate_exists};

/// Benchmark groups in `benches/model.rs`, with what they time.
const GROUPS: [(&str, &str); 2] = [
    ("structure", "DiskStructure::compute"),
    ("model", "Model::run + midplane_profile + snowlines"),
];

/// The default grid and the one with four times as many samples, as labelled in `benches/model.rs`.
const DEFAULT_GRID: &str = "200x80";
const LARGE_GRID: &str = "400x160";

pub fn bench() -> Result<(), String> {
    let root = repo_root();
    // Some file systems keep modification times to the second only; the slack
    // keeps a record written in this run from looking older than the run.
    let started = SystemTime::now() - Duration::from_secs(2);
    run(cargo()
        .current_dir(&root)
        .args(["bench", "-p", "nivalis-physics", "--bench", "model"]))?;

    let criterion = root.join("target/criterion");
    println!("\nmedians (default disk; criterion median point estimates):");
    println!(
        "  {:<10} {:>12} {:>12} {:>12}   timed",
        "benchmark", DEFAULT_GRID, LARGE_GRID, "4x / 1x"
    );
    for (group, what) in GROUPS {
        let small = median_ns(&criterion.join(group).join(DEFAULT_GRID), started)?;
        let large = median_ns(&criterion.join(group).join(LARGE_GRID), started)?;
        println!(
            "  {:<10} {:>12} {:>12} {:>12}   {what}",
            group,
            format_duration(small),
            format_duration(large),
            format!("{:.2}", large / small)
        );
    }
    println!("  (the 4x grid has 4x the samples, so a ratio near 4 means linear scaling)");

    browser_bench()
}

/// The median point estimate [ns] of one benchmark, from its `new/estimates.json`.
fn median_ns(benchmark_dir: &Path, not_before: SystemTime) -> Result<f64, String> {
    let file = benchmark_dir.join("new/estimates.json");
    let shown = relative(&file);
    let modified = std::fs::metadata(&file)
        .and_then(|m| m.modified())
        .map_err(|e| format!("cannot read {shown}: {e}"))?;
    if modified < not_before {
        return Err(format!(
            "{shown} was not rewritten by this run; did the benchmark run?"
        ));
    }
    let text = std::fs::read_to_string(&file).map_err(|e| format!("cannot read {shown}: {e}"))?;
    median_point_estimate(&text).ok_or_else(|| format!("{shown}: no median point estimate found"))
}

/// Extracts `median.point_estimate` from criterion's estimates JSON. A full
/// JSON parser would be the task runner's first dependency; the file's shape
/// (an object of estimate objects, each with a numeric `point_estimate`) is
/// simple and stable enough to scan.
fn median_point_estimate(json: &str) -> Option<f64> {
    let after_median = key_value(json, "median")?;
    let after_point = key_value(after_median, "point_estimate")?;
    let number: String = after_point
        .chars()
        .take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'))
        .collect();
    number
        .parse::<f64>()
        .ok()
        .filter(|value| value.is_finite() && *value > 0.0)
}

/// The text right after `"key":` (whitespace allowed around the colon), for the
/// first occurrence of exactly that key; `"median_abs_dev"` does not match `median`.
fn key_value<'a>(json: &'a str, key: &str) -> Option<&'a str> {
    let quoted = format!("\"{key}\"");
    let mut from = 0;
    while let Some(offset) = json[from..].find(&quoted) {
        let rest = json[from + offset + quoted.len()..].trim_start();
        if let Some(value) = rest.strip_prefix(':') {
            return Some(value.trim_start());
        }
        from += offset + quoted.len();
    }
    None
}

/// A duration in nanoseconds with three significant digits and a fitting unit.
fn format_duration(nanoseconds: f64) -> String {
    let (value, unit) = if nanoseconds < 1e3 {
        (nanoseconds, "ns")
    } else if nanoseconds < 1e6 {
        (nanoseconds / 1e3, "us")
    } else if nanoseconds < 1e9 {
        (nanoseconds / 1e6, "ms")
    } else {
        (nanoseconds / 1e9, "s")
    };
    let decimals = if value < 10.0 {
        2
    } else if value < 100.0 {
        1
    } else {
        0
    };
    format!("{value:.decimals$} {unit}")
}

/// The in-browser benchmark, once the page engineer adds `tests/browser/bench.mjs`.
fn browser_bench() -> Result<(), String> {
    let root = repo_root();
    let script = root.join("tests/browser/bench.mjs");
    if !script.is_file() {
        println!("\nin-browser benchmark: tests/browser/bench.mjs does not exist yet; skipped");
        return Ok(());
    }
    println!("\nin-browser benchmark:");
    if web_crate_exists() {
        crate::test::ensure_wasm_target()?;
        let page = crate::dist::dist(true)?;
        println!("built {}", relative(&page));
    }
    crate::test::ensure_browser_packages()?;
    run(Command::new("node")
        .current_dir(&root)
        .arg("tests/browser/bench.mjs"))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Shape of a real `estimates.json` written by criterion 0.5 (numbers shortened).
    const ESTIMATES: &str = r#"{"mean":{"confidence_interval":{"confidence_level":0.95,"lower_bound":1.1e7,"upper_bound":1.3e7},"point_estimate":12495526.2,"standard_error":342939.7},"median":{"confidence_interval":{"confidence_level":0.95,"lower_bound":11694617.2,"upper_bound":12019960.1},"point_estimate":11838108.5,"standard_error":107551.9},"median_abs_dev":{"confidence_interval":{"confidence_level":0.95,"lower_bound":124719.5,"upper_bound":647697.4},"point_estimate":267023.2,"standard_error":164238.2},"slope":null,"std_dev":{"point_estimate":1.0}}"#;

    #[test]
    fn median_is_read_from_the_median_object_not_the_mean_or_mad() {
        assert_eq!(median_point_estimate(ESTIMATES), Some(11838108.5));
    }

    #[test]
    fn median_tolerates_pretty_printed_json() {
        let pretty = "{\n  \"median_abs_dev\": {\"point_estimate\": 3.0},\n  \"median\" : {\n    \"point_estimate\" : 2.5e6\n  }\n}";
        assert_eq!(median_point_estimate(pretty), Some(2.5e6));
    }

    #[test]
    fn missing_or_bad_median_is_none() {
        assert_eq!(
            median_point_estimate("{\"mean\":{\"point_estimate\":1.0}}"),
            None
        );
        assert_eq!(
            median_point_estimate("{\"median\":{\"point_estimate\":\"x\"}}"),
            None
        );
    }

    #[test]
    fn durations_get_three_significant_digits() {
        assert_eq!(format_duration(512.0), "512 ns");
        assert_eq!(format_duration(5_728_100.0), "5.73 ms");
        assert_eq!(format_duration(27_008_000.0), "27.0 ms");
        assert_eq!(format_duration(2.5e9), "2.50 s");
    }
}
