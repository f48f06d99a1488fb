//! `cargo xtask bench`: the speed of the model, measured in one run so that
//! every ratio compares numbers taken on the same machine at the same time.
//!
//! 1. The criterion benchmarks of the physics core
//!    (`crates/physics/benches/model.rs`): the floor (one `exp` and one `sqrt`
//!    per cell-species), the structure, the full model and the ice-only edit.
//! 2. The numpy baseline (`crates/physics/benches/numpy_baseline.py`) at
//!    400 x 160, first checked against the native CLI's output for the same
//!    disk, then timed with `timeit.repeat`.
//! 3. A table of medians, p10 and p90 per benchmark and the ratios
//!    `model / floor` (target <= 2) and `numpy / native` at 400 x 160, fresh and edit (target >= 10).
//!    Then the Rust side of the page's draw natively ([`record_section`],
//!    `crates/web/benches/record.rs`): each of the five views' data built
//!    from the default disk's model and its display list recorded, medians per
//!    view and their sums. Then the sweep throughput natively and through Dask, and the per-model
//!    overhead of a sweep point over a bare `Model::run` ([`crate::sweep_bench`]).
//! 4. The uncertainty Monte Carlo ([`crate::uncertainty_bench`]): 1000 samples against one
//!    deterministic run, and the CLI at 1 and 2 rayon threads.
//! 5. The in-browser benchmark (`tests/browser/bench.mjs`), which prints its
//!    own table, including the in-page floor and `edit redraw / floor`.
//!
//! The native numbers come from criterion's record of the raw samples,
//! `target/criterion/<group>/<grid>/new/sample.json` (per sample: `iters`
//! iterations took `times` nanoseconds), not from its console text, which is
//! meant for people and changes between versions. Each sample gives one
//! per-iteration time `times[i] / iters[i]`; the percentiles of those are
//! taken by [`percentile`]. A record older than this run is refused, so a
//! failed benchmark cannot show last week's numbers.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, SystemTime};

use crate::{cargo, relative, repo_root, run, web_crate_exists};

/// One criterion benchmark: group, grid label (as in `benches/model.rs`) and what it times.
struct Case {
    group: &'static str,
    grid: &'static str,
    what: &'static str,
}

const CASES: [Case; 9] = [
    Case {
        group: "floor",
        grid: DEFAULT_GRID,
        what: "1 exp + 1 sqrt per cell-species (200 x 81 x 9, libm)",
    },
    Case {
        group: "structure",
        grid: DEFAULT_GRID,
        what: "DiskStructure::compute",
    },
    Case {
        group: "structure",
        grid: LARGE_GRID,
        what: "DiskStructure::compute",
    },
    Case {
        group: "model",
        grid: DEFAULT_GRID,
        what: "disk edit: Model::run_into existing buffers + midplane profile + snowlines",
    },
    Case {
        group: "model",
        grid: LARGE_GRID,
        what: "disk edit: Model::run_into existing buffers + midplane profile + snowlines",
    },
    Case {
        group: "model_fresh",
        grid: DEFAULT_GRID,
        what: "Model::run (fresh buffers) + midplane profile + snowlines",
    },
    Case {
        group: "model_fresh",
        grid: LARGE_GRID,
        what: "Model::run (fresh buffers) + midplane profile + snowlines",
    },
    Case {
        group: "ice_edit",
        grid: DEFAULT_GRID,
        what: "sticking edit: Model::set_ices (ice balance only, structure reused)",
    },
    Case {
        group: "evolution",
        grid: DEFAULT_GRID,
        what: "evolution::evolve, default disk, 0.01 to 5 Myr (benches/evolution.rs)",
    },
];

/// The default grid and the one with four times as many samples, as labelled in `benches/model.rs`.
const DEFAULT_GRID: &str = "200x80";
const LARGE_GRID: &str = "400x160";
/// The same grid as a disk file for the CLI.
const LARGE_GRID_DISK: &str = r#"{"grid":{"radial_cells":400,"vertical_cells":160}}"#;

/// Median, 10th and 90th percentile of a set of times [ns].
#[derive(Debug, Clone, Copy, PartialEq)]
struct Spread {
    median: f64,
    p10: f64,
    p90: f64,
}

impl Spread {
    /// The spread of `values` (at least one, all finite).
    fn of(values: &[f64]) -> Option<Spread> {
        let mut sorted = values.to_vec();
        if sorted.is_empty() || sorted.iter().any(|v| !v.is_finite()) {
            return None;
        }
        sorted.sort_by(f64::total_cmp);
        Some(Spread {
            median: percentile(&sorted, 0.5),
            p10: percentile(&sorted, 0.1),
            p90: percentile(&sorted, 0.9),
        })
    }
}

/// The q-quantile (0 <= q <= 1) of sorted values by linear interpolation
/// between order statistics: position (n - 1) q, counted from 0 (Hyndman &
/// Fan 1996 definition 7, numpy's default; the rule `numpy_baseline.py` and
/// `tests/browser/bench.mjs` use too).
fn percentile(sorted: &[f64], q: f64) -> f64 {
    let position = (sorted.len() - 1) as f64 * q;
    let lo = position.floor() as usize;
    let hi = position.ceil() as usize;
    sorted[lo] + (sorted[hi] - sorted[lo]) * (position - lo as f64)
}

/// What the numpy baseline reported (seconds and differences from the native CLI).
struct Baseline {
    spread_ns: Spread,
    repeats: f64,
    temperature: f64,
    c_to_o: f64,
    ice_fraction: f64,
    agrees: bool,
}

/// Which parts of the bench run.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Sections {
    /// Everything (`cargo xtask bench`).
    All,
    /// The uncertainty section ([`crate::uncertainty_bench`]) and the page's uncertainty
    /// timing (`cargo xtask bench uncertainty`).
    Uncertainty,
    /// The core's criterion benchmarks, the numpy baseline, the table and the ratios; no
    /// sweep, uncertainty or browser part (`cargo xtask bench native`).
    Native,
}

/// `cargo xtask bench`, or the sections chosen.
pub fn bench(sections: Sections) -> Result<(), String> {
    if sections == Sections::Uncertainty {
        let mut problems = Vec::new();
        if let Err(message) = crate::uncertainty_bench::uncertainty_section() {
            problems.push(message);
        }
        if let Err(message) = browser_bench(&["--only", "uncertainty"]) {
            problems.push(message);
        }
        return if problems.is_empty() {
            Ok(())
        } else {
            Err(problems.join("; "))
        };
    }
    let root = repo_root();
    // Some file systems keep modification times to the second only; the slack
    // keeps a record written in this run from looking older than the run.
    let started = SystemTime::now() - Duration::from_secs(2);
    run(cargo()
        .current_dir(&root)
        .args(["bench", "-p", "nivalis-physics", "--bench", "model"]))?;
    run(cargo().current_dir(&root).args([
        "bench",
        "-p",
        "nivalis-physics",
        "--bench",
        "evolution",
    ]))?;
    let criterion = target_dir().join("criterion");
    let mut native = Vec::new();
    for case in &CASES {
        let dir = criterion.join(case.group).join(case.grid);
        native.push(per_iteration_spread(&dir, started)?);
    }
    let find = |group: &str, grid: &str| {
        CASES
            .iter()
            .position(|c| c.group == group && c.grid == grid)
            .map(|i| native[i])
    };

    let mut problems = Vec::new();
    let baseline = match numpy_baseline() {
        Ok(b) => Some(b),
        Err(message) => {
            problems.push(message);
            None
        }
    };

    println!("\nnative benchmarks (default disk; per-iteration times of criterion's 20 samples):");
    println!(
        "  {:<20} {:>10} {:>10} {:>10}   timed",
        "benchmark", "median", "p10", "p90"
    );
    for (case, s) in CASES.iter().zip(&native) {
        println!(
            "  {:<20} {:>10} {:>10} {:>10}   {}",
            format!("{}/{}", case.group, case.grid),
            format_duration(s.median),
            format_duration(s.p10),
            format_duration(s.p90),
            case.what
        );
    }
    if let Some(b) = &baseline {
        println!(
            "  {:<20} {:>10} {:>10} {:>10}   numpy baseline, {} timeit runs",
            format!("numpy/{LARGE_GRID}"),
            format_duration(b.spread_ns.median),
            format_duration(b.spread_ns.p10),
            format_duration(b.spread_ns.p90),
            b.repeats
        );
        println!(
            "  numpy baseline against the native CLI at {LARGE_GRID}: max relative difference \
             midplane T {:.1e}, gas C/O {:.1e}; max difference of midplane ice fractions {:.1e} ({})",
            b.temperature,
            b.c_to_o,
            b.ice_fraction,
            if b.agrees { "agree" } else { "DISAGREE" }
        );
    }

    println!("\nratios of medians from this run:");
    let ratio = |name: &str, numerator: Option<Spread>, denominator: Option<Spread>, note: &str| {
        if let (Some(n), Some(d)) = (numerator, denominator) {
            println!("  {name:<34} {:>7.2}   {note}", n.median / d.median);
        }
    };
    let floor = find("floor", DEFAULT_GRID);
    ratio(
        &format!("model / floor at {DEFAULT_GRID}"),
        find("model", DEFAULT_GRID),
        floor,
        "target <= 2 (issue 9)",
    );
    ratio(
        &format!("model fresh / floor at {DEFAULT_GRID}"),
        find("model_fresh", DEFAULT_GRID),
        floor,
        "Model::run, every result array freshly allocated",
    );
    ratio(
        &format!("ice edit / floor at {DEFAULT_GRID}"),
        find("ice_edit", DEFAULT_GRID),
        floor,
        "the ice balance only (Model::set_ices, structure reused)",
    );
    let numpy = baseline.as_ref().map(|b| b.spread_ns);
    let fresh_large = find("model_fresh", LARGE_GRID);
    ratio(
        &format!("numpy / native fresh at {LARGE_GRID}"),
        numpy,
        fresh_large,
        &numpy_ratio_note(numpy, fresh_large),
    );
    let edit_large = find("model", LARGE_GRID);
    ratio(
        &format!("numpy / native edit at {LARGE_GRID}"),
        numpy,
        edit_large,
        &numpy_ratio_note(numpy, edit_large),
    );
    ratio(
        "model 400x160 / 200x80",
        find("model", LARGE_GRID),
        find("model", DEFAULT_GRID),
        "4x the samples: near 4 means linear scaling",
    );
    ratio(
        "structure 400x160 / 200x80",
        find("structure", LARGE_GRID),
        find("structure", DEFAULT_GRID),
        "4x the samples",
    );

    if let Err(message) = record_section() {
        problems.push(message);
    }

    if sections == Sections::Native {
        return if problems.is_empty() {
            Ok(())
        } else {
            Err(problems.join("; "))
        };
    }
    if let Err(message) = crate::sweep_bench::sweep_section() {
        problems.push(message);
    }
    if let Err(message) = crate::uncertainty_bench::uncertainty_section() {
        problems.push(message);
    }
    if let Err(message) = browser_bench(&[]) {
        problems.push(message);
    }
    if problems.is_empty() {
        Ok(())
    } else {
        Err(problems.join("; "))
    }
}

/// The note beside the numpy ratio: the target and the two medians it divides,
/// so the native model time at the large grid is printed next to the ratio.
fn numpy_ratio_note(numpy: Option<Spread>, native: Option<Spread>) -> String {
    match (numpy, native) {
        (Some(n), Some(d)) => format!(
            "target >= 10 (issue 9); numpy {} / native model {}",
            format_duration(n.median),
            format_duration(d.median)
        ),
        _ => "target >= 10 (issue 9)".to_string(),
    }
}

/// The workspace's target directory (CARGO_TARGET_DIR when set, as cargo does).
pub(crate) fn target_dir() -> PathBuf {
    std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo_root().join("target"))
}

/// The page's five views as in `crates/web/benches/record.rs` (criterion ids `data/<view>`,
/// `record/<view>` and `record_edit/<view>`).
const RECORD_VIEWS: [&str; 5] = [
    "c_to_o",
    "temperature",
    "ice_map",
    "c_to_o_map",
    "abundances",
];

/// The Rust side of the page's draw, natively: `cargo bench -p nivalis-web --bench record`
/// (each view's data built from the default disk's model, and its display list recorded),
/// with the medians, p10 and p90 of every view and their sums.
fn record_section() -> Result<(), String> {
    let started = SystemTime::now() - Duration::from_secs(2);
    run(cargo().current_dir(repo_root()).args([
        "bench",
        "-p",
        "nivalis-web",
        "--bench",
        "record",
    ]))?;
    let criterion = target_dir().join("criterion");
    println!(
        "\nrecording the page's views natively (default disk, crates/web/benches/record.rs; \
         per-iteration times of criterion's 20 samples):"
    );
    println!(
        "  {:<22} {:>10} {:>10} {:>10}",
        "benchmark", "median", "p10", "p90"
    );
    for group in ["data", "record", "record_edit"] {
        let mut sum = 0.0;
        for view in RECORD_VIEWS {
            let s = per_iteration_spread(&criterion.join(group).join(view), started)?;
            sum += s.median;
            println!(
                "  {:<22} {:>10} {:>10} {:>10}",
                format!("{group}/{view}"),
                format_duration(s.median),
                format_duration(s.p10),
                format_duration(s.p90)
            );
        }
        println!(
            "  {:<22} {:>10}   sum of the five medians",
            format!("{group}/all"),
            format_duration(sum)
        );
    }
    Ok(())
}

/// Median, p10 and p90 [ns] of the per-iteration times of one benchmark,
/// from its `new/sample.json`.
fn per_iteration_spread(benchmark_dir: &Path, not_before: SystemTime) -> Result<Spread, String> {
    let file = benchmark_dir.join("new/sample.json");
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
    let times = per_iteration_times(&text).map_err(|e| format!("{shown}: {e}"))?;
    Spread::of(&times).ok_or_else(|| format!("{shown}: no usable samples"))
}

/// Per-iteration times `times[i] / iters[i]` [ns] from criterion's sample JSON
/// (`{"sampling_mode": ..., "iters": [...], "times": [...]}`).
fn per_iteration_times(json: &str) -> Result<Vec<f64>, String> {
    let iters = number_array(json, "iters").ok_or("no `iters` array of numbers")?;
    let times = number_array(json, "times").ok_or("no `times` array of numbers")?;
    if iters.len() != times.len() || iters.is_empty() {
        return Err(format!(
            "{} iteration counts for {} times",
            iters.len(),
            times.len()
        ));
    }
    iters
        .iter()
        .zip(&times)
        .map(|(&n, &t)| {
            if n >= 1.0 && t.is_finite() && t > 0.0 {
                Ok(t / n)
            } else {
                Err(format!("a sample of {n} iterations took {t} ns"))
            }
        })
        .collect()
}

/// The array of numbers right after `"key":`. A full JSON parser would be the
/// task runner's first dependency; criterion's file is flat and simple to scan.
fn number_array(json: &str, key: &str) -> Option<Vec<f64>> {
    let rest = key_value(json, key)?.strip_prefix('[')?;
    let body = &rest[..rest.find(']')?];
    if body.trim().is_empty() {
        return Some(Vec::new());
    }
    body.split(',').map(|v| v.trim().parse().ok()).collect()
}

/// The number right after `"key":`.
fn number_value(json: &str, key: &str) -> Option<f64> {
    let value = key_value(json, key)?;
    let number: String = value
        .chars()
        .take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'))
        .collect();
    number.parse::<f64>().ok().filter(|v| v.is_finite())
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

/// Runs the numpy baseline at 400 x 160 against the native CLI's output for
/// the same disk (written to `target/bench/`), and reads back its results.
fn numpy_baseline() -> Result<Baseline, String> {
    let root = repo_root();
    println!("\nnumpy baseline:");
    // numpy comes with scipy, one of the reference libraries of the Python checks: the same
    // Python the checks use (the system's, or the venv under target/ that setup makes).
    let python = crate::setup::python_with_modules()?;
    let out_dir = target_dir().join("bench");
    std::fs::create_dir_all(&out_dir)
        .map_err(|e| format!("cannot create {}: {e}", relative(&out_dir)))?;
    let reference = out_dir.join(format!("native_model_{LARGE_GRID}.json"));
    let results = out_dir.join(format!("numpy_baseline_{LARGE_GRID}.json"));
    // The reference is the CLI's own output (a debug build suffices: only its numbers matter).
    let mut cli = cargo();
    cli.current_dir(&root)
        .args(["run", "--quiet", "-p", "nivalis-cli", "--", "model", "-"])
        .args(["--format", "json", "--out"])
        .arg(&reference);
    println!("$ echo '{LARGE_GRID_DISK}' | cargo run --quiet -p nivalis-cli -- model - --format json --out {}", relative(&reference));
    let mut child = cli
        .stdin(Stdio::piped())
        .spawn()
        .map_err(|e| format!("could not start the CLI: {e}"))?;
    {
        use std::io::Write;
        let mut stdin = child.stdin.take().ok_or("no stdin for the CLI")?;
        stdin
            .write_all(LARGE_GRID_DISK.as_bytes())
            .map_err(|e| format!("could not write the disk to the CLI: {e}"))?;
    }
    let status = child
        .wait()
        .map_err(|e| format!("the CLI did not finish: {e}"))?;
    if !status.success() {
        return Err(format!("the CLI failed ({status})"));
    }
    let _ = std::fs::remove_file(&results);
    let outcome = run(Command::new(&python)
        .current_dir(&root)
        .arg("crates/physics/benches/numpy_baseline.py")
        .args(["--grid", LARGE_GRID, "--reference"])
        .arg(relative(&reference))
        .arg("--json")
        .arg(relative(&results)));
    let text = std::fs::read_to_string(&results).map_err(|e| match &outcome {
        Err(run_error) => run_error.clone(),
        Ok(()) => format!("cannot read {}: {e}", relative(&results)),
    })?;
    let baseline = parse_baseline(&text)
        .ok_or_else(|| format!("{}: unexpected contents", relative(&results)))?;
    if !baseline.agrees {
        return Err("the numpy baseline disagrees with the native model (see above)".to_string());
    }
    outcome.map(|()| baseline)
}

/// The baseline's JSON: times in seconds, differences, whether it agrees.
fn parse_baseline(json: &str) -> Option<Baseline> {
    let seconds = |key: &str| number_value(json, key).map(|s| s * 1e9);
    Some(Baseline {
        spread_ns: Spread {
            median: seconds("median_s")?,
            p10: seconds("p10_s")?,
            p90: seconds("p90_s")?,
        },
        repeats: number_value(json, "repeats")?,
        temperature: number_value(json, "max_rel_diff_temperature")?,
        c_to_o: number_value(json, "max_rel_diff_c_to_o_gas")?,
        ice_fraction: number_value(json, "max_abs_diff_ice_fraction")?,
        agrees: key_value(json, "agrees")?.starts_with("true"),
    })
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

/// The in-browser benchmark `tests/browser/bench.mjs`, run with Node after the page is built.
fn browser_bench(args: &[&str]) -> Result<(), String> {
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
        .arg("tests/browser/bench.mjs")
        .args(args))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Shape of a real `new/sample.json` written by criterion 0.5.1 (flat sampling, shortened).
    const SAMPLE: &str = r#"{"sampling_mode":"Flat","iters":[58.0,58.0,58.0,58.0],"times":[123209653.0,72671210.0,104561733.0,72146344.0]}"#;

    #[test]
    fn per_iteration_times_divide_each_sample_by_its_iterations() {
        let times = per_iteration_times(SAMPLE).unwrap();
        assert_eq!(times.len(), 4);
        assert_eq!(times[0], 123209653.0 / 58.0);
        assert_eq!(times[3], 72146344.0 / 58.0);
        // Linear sampling gives a different count per sample.
        let linear = r#"{"sampling_mode":"Linear", "iters" : [1.0, 2.0], "times": [10.0, 30.0]}"#;
        assert_eq!(per_iteration_times(linear).unwrap(), vec![10.0, 15.0]);
    }

    #[test]
    fn malformed_samples_are_errors() {
        assert!(per_iteration_times(r#"{"iters":[1.0],"times":[]}"#).is_err());
        assert!(per_iteration_times(r#"{"iters":[0.0],"times":[5.0]}"#).is_err());
        assert!(per_iteration_times(r#"{"iters":[1.0],"times":["x"]}"#).is_err());
        assert!(per_iteration_times(r#"{"times":[1.0]}"#).is_err());
        assert!(per_iteration_times(r#"{"iters":[],"times":[]}"#).is_err());
    }

    #[test]
    fn percentiles_interpolate_like_numpy() {
        // numpy.percentile([1, 2, 3, 4, 10], [10, 50, 90]) = [1.4, 3.0, 7.6] (numpy's
        // default "linear" method; values computed by hand from (n - 1) q = 0.4, 2, 3.6).
        let s = Spread::of(&[10.0, 3.0, 1.0, 4.0, 2.0]).unwrap();
        assert!((s.p10 - 1.4).abs() < 1e-12, "{s:?}");
        assert_eq!(s.median, 3.0);
        assert!((s.p90 - 7.6).abs() < 1e-12, "{s:?}");
        // An even count: the median is the mean of the middle two.
        assert_eq!(Spread::of(&[4.0, 1.0, 3.0, 2.0]).unwrap().median, 2.5);
        assert_eq!(
            Spread::of(&[7.0]),
            Some(Spread {
                median: 7.0,
                p10: 7.0,
                p90: 7.0
            })
        );
        assert_eq!(Spread::of(&[]), None);
        assert_eq!(Spread::of(&[1.0, f64::NAN]), None);
    }

    #[test]
    fn baseline_results_are_read_in_nanoseconds() {
        let json = r#"{"grid": "400x160", "repeats": 15, "median_s": 0.0701, "p10_s": 0.0677, "p90_s": 0.0863, "max_rel_diff_temperature": 4.44e-16, "max_rel_diff_c_to_o_gas": 7.29e-12, "max_abs_diff_ice_fraction": 7.2e-15, "tolerance": 1e-06, "agrees": true}"#;
        let b = parse_baseline(json).unwrap();
        assert!((b.spread_ns.median - 7.01e7).abs() < 1e-3);
        assert!((b.spread_ns.p90 - 8.63e7).abs() < 1e-3);
        assert_eq!(b.repeats, 15.0);
        assert_eq!(b.c_to_o, 7.29e-12);
        assert!(b.agrees);
        assert!(
            !parse_baseline(&json.replace("true", "false"))
                .unwrap()
                .agrees
        );
        assert!(parse_baseline(r#"{"median_s": 1.0}"#).is_none());
    }

    #[test]
    fn numpy_ratio_note_names_both_medians() {
        let spread = |median| Spread {
            median,
            p10: median,
            p90: median,
        };
        assert_eq!(
            numpy_ratio_note(Some(spread(3.2e8)), Some(spread(5_728_100.0))),
            "target >= 10 (issue 9); numpy 320 ms / native model 5.73 ms"
        );
        assert_eq!(
            numpy_ratio_note(None, Some(spread(1.0))),
            "target >= 10 (issue 9)"
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
