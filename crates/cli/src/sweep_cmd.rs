//! `nivalis sweep SWEEP.json --out DIR [--shard I/N]` and `nivalis sweep merge DIR`.

use crate::cli::{Failure, SweepAction};
use nivalis_sweep::{ShardSpec, Sweep};
use serde_json::Value;
use std::path::{Path, PathBuf};

/// Global `--set` assignments change the sweep's base disk (inlined first when it is a path).
fn apply_sets(value: &mut Value, base_dir: &Path, sets: &[String]) -> Result<(), Failure> {
    if sets.is_empty() {
        return Ok(());
    }
    let Some(top) = value.as_object_mut() else {
        return Ok(()); // the sweep reader reports a non-object
    };
    let mut base = match top.get("base") {
        None => Value::Object(Default::default()),
        Some(Value::String(file)) => {
            let path = base_dir.join(file);
            let text = std::fs::read_to_string(&path).map_err(|e| {
                Failure::input(vec![format!("base: cannot read {}: {e}", path.display())])
            })?;
            nivalis_disk_files::parse_json_text(&text).map_err(|ps| {
                Failure::input(
                    ps.0.iter()
                        .map(|p| format!("{}: {p}", path.display()))
                        .collect(),
                )
            })?
        }
        Some(other) => other.clone(),
    };
    nivalis_disk_files::apply_assignments(&mut base, sets).map_err(|ps| {
        Failure::input(
            ps.0.iter()
                .map(|p| format!("{}: {}", p.path, p.message))
                .collect(),
        )
    })?;
    top.insert("base".into(), base);
    Ok(())
}

fn failed_line(f: &Value) -> String {
    let values: Vec<String> = f["values"]
        .as_object()
        .map(|m| m.iter().map(|(k, v)| format!("{k}={v}")).collect())
        .unwrap_or_default();
    let problems: Vec<String> = f["problems"]
        .as_array()
        .map(|ps| {
            ps.iter()
                .map(|p| {
                    format!(
                        "{}: {}",
                        p["path"].as_str().unwrap_or(""),
                        p["message"].as_str().unwrap_or("")
                    )
                })
                .collect()
        })
        .unwrap_or_default();
    format!(
        "point {} ({}): {}",
        f["point"],
        values.join(", "),
        problems.join("; ")
    )
}

pub(crate) fn execute(
    action: Option<SweepAction>,
    sweep: Option<PathBuf>,
    out: Option<PathBuf>,
    shard: Option<ShardSpec>,
    sets: &[String],
) -> Result<(), Failure> {
    if let Some(SweepAction::Merge { dir }) = action {
        let report = nivalis_sweep::merge(&dir).map_err(|e| Failure::input(vec![e]))?;
        for f in &report.failed {
            eprintln!("warning: not run: {}", failed_line(f));
        }
        println!(
            "{}: {} rows from {} shard(s); {} grid point(s) failed validation (listed in {})",
            report.file.display(),
            report.rows,
            report.shards,
            report.failed.len(),
            dir.join("manifest.json").display()
        );
        return Ok(());
    }
    let (Some(path), Some(dir)) = (sweep, out) else {
        return Err(Failure::input(vec![
            "sweep: usage: nivalis sweep SWEEP.json --out DIR [--shard I/N], or nivalis sweep merge DIR"
                .into(),
        ]));
    };
    let label = path.display().to_string();
    let text = std::fs::read_to_string(&path)
        .map_err(|e| Failure::input(vec![format!("{label}: cannot read the sweep file: {e}")]))?;
    let base_dir = path.parent().unwrap_or(Path::new(".")).to_path_buf();
    let mut value: Value = serde_json::from_str(&text)
        .map_err(|e| Failure::input(vec![format!("{label}: (sweep file): not valid JSON: {e}")]))?;
    apply_sets(&mut value, &base_dir, sets)?;
    let sweep = Sweep::from_value(&value, &base_dir)
        .map_err(|e| Failure::input(e.0.iter().map(|p| format!("{label}: {p}")).collect()))?;
    let shard = shard.unwrap_or(ShardSpec::WHOLE);
    let report = nivalis_sweep::run_shard(&sweep, &dir, shard).map_err(|e| Failure {
        code: 1,
        lines: vec![e],
    })?;
    for f in &report.failed {
        eprintln!("warning: not run: {}", failed_line(f));
    }
    let range = shard.range(sweep.points);
    println!(
        "shard {shard}: grid points {}..{} of {}: {} rows in {}{}; {} failed validation (listed in {})",
        range.start,
        range.end,
        sweep.points,
        report.rows,
        report.file.display(),
        if report.skipped { " (already complete, not run again)" } else { "" },
        report.failed.len(),
        dir.join("manifest.json").display()
    );
    // Failed points are listed (above and in the manifest), not fatal: the rest ran.
    Ok(())
}
