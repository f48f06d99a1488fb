//! The output folder of a sweep (docs/sweep.md):
//!
//! ```text
//! DIR/manifest.json                       the sweep, the shards done, their checksums, failed points
//! DIR/shards/shard-00002-of-00004.parquet one shard's rows
//! DIR/shards/shard-00002-of-00004.json    its record: points, rows, SHA-256, failed points
//! DIR/sweep.parquet                       `nivalis sweep merge DIR`: every shard joined, in point order
//! ```
//!
//! Each shard writes only its own two files (atomically: a temporary file
//! renamed into place), so the tasks of a job array never write the same
//! file; `manifest.json` is rebuilt from the shard records after each shard
//! and by `merge`.

use crate::definition::Sweep;
use crate::parquet_io;
use crate::run::{Column, FailedPoint};
use crate::shard::ShardSpec;
use serde_json::{json, Value};
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};

/// Format identifier of `manifest.json`.
pub const MANIFEST_SCHEMA: &str = "nivalis-sweep-manifest/1";
/// Format identifier of a shard record.
pub const SHARD_SCHEMA: &str = "nivalis-sweep-shard/1";
/// What one shard run did.
#[derive(Debug, Clone, PartialEq)]
pub struct ShardReport {
    /// Which shard.
    pub shard: ShardSpec,
    /// Its Parquet file.
    pub file: PathBuf,
    /// Rows written.
    pub rows: usize,
    /// Points that failed, with their problems.
    pub failed: Vec<Value>,
    /// Whether it was complete already and not run again.
    pub skipped: bool,
}

/// What a merge did.
#[derive(Debug, Clone, PartialEq)]
pub struct MergeReport {
    /// The joined file.
    pub file: PathBuf,
    /// Its rows.
    pub rows: usize,
    /// Shards joined.
    pub shards: usize,
    /// Points that failed, with their problems.
    pub failed: Vec<Value>,
}

/// SHA-256 of a file's bytes, as hex.
pub fn sha256_file(path: &Path) -> Result<String, String> {
    let bytes = std::fs::read(path).map_err(|e| format!("{}: cannot read: {e}", path.display()))?;
    Ok(Sha256::digest(&bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect())
}

/// Write `bytes` to `path` through a temporary file renamed into place.
fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), String> {
    // Unique per writer: the tasks of a job array on different nodes may share a process id.
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_nanos());
    let temp = path.with_extension(format!("{}.{nanos}.tmp", std::process::id()));
    std::fs::write(&temp, bytes)
        .and_then(|_| std::fs::rename(&temp, path))
        .map_err(|e| {
            let _ = std::fs::remove_file(&temp);
            format!("{}: cannot write: {e}", path.display())
        })
}

fn read_json(path: &Path) -> Option<Value> {
    serde_json::from_str(&std::fs::read_to_string(path).ok()?).ok()
}

fn pretty(v: &Value) -> String {
    let mut s = serde_json::to_string_pretty(v).unwrap_or_default();
    s.push('\n');
    s
}

/// The shard records in `dir/shards` of the sweep with this hash.
fn shard_records(dir: &Path, hash: &str) -> Vec<Value> {
    let mut out: Vec<Value> = std::fs::read_dir(dir.join("shards"))
        .into_iter()
        .flatten()
        .flatten()
        .map(|e| e.path())
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
        .filter_map(|p| read_json(&p))
        .filter(|r| r["sweep_hash"] == hash)
        .collect();
    out.sort_by_key(|r| (r["count"].as_u64(), r["index"].as_u64()));
    out
}

/// The smallest shard count whose every shard is recorded, with those records in order.
fn complete_set(records: &[Value]) -> Option<Vec<&Value>> {
    let mut counts: Vec<u64> = records.iter().filter_map(|r| r["count"].as_u64()).collect();
    counts.dedup();
    counts.into_iter().find_map(|n| {
        let set: Vec<&Value> = (1..=n)
            .filter_map(|i| {
                records
                    .iter()
                    .find(|r| r["count"].as_u64() == Some(n) && r["index"].as_u64() == Some(i))
            })
            .collect();
        (set.len() as u64 == n).then_some(set)
    })
}

fn check_folder(dir: &Path, sweep_hash: &str) -> Result<(), String> {
    if let Some(m) = read_json(&dir.join("manifest.json")) {
        if m["sweep_hash"] != sweep_hash {
            return Err(format!(
                "{}: holds the results of another sweep (hash {}, this one {sweep_hash}); use a new --out folder",
                dir.display(),
                m["sweep_hash"].as_str().unwrap_or("?")
            ));
        }
    }
    Ok(())
}

/// Rebuild `manifest.json` from the shard records (and the merged file, if any).
fn write_manifest(
    dir: &Path,
    sweep: &Value,
    hash: &str,
    points: usize,
    merged: Option<Value>,
) -> Result<(), String> {
    let records = shard_records(dir, hash);
    let complete = complete_set(&records);
    let failed: Vec<Value> = match &complete {
        Some(set) => set
            .iter()
            .flat_map(|r| r["failed"].as_array().cloned().unwrap_or_default())
            .collect(),
        None => records
            .iter()
            .flat_map(|r| r["failed"].as_array().cloned().unwrap_or_default())
            .collect(),
    };
    let shards: Vec<Value> = records
        .iter()
        .map(|r| {
            json!({
                "shard": r["shard"], "points": r["points"], "file": r["file"],
                "rows": r["rows"], "failed": r["failed"].as_array().map_or(0, Vec::len), "sha256": r["sha256"],
            })
        })
        .collect();
    let manifest = json!({
        "schema": MANIFEST_SCHEMA,
        "program": nivalis_exports::provenance::program_version(),
        "sweep_hash": hash,
        "points": points,
        "complete": complete.is_some(),
        "shards": shards,
        "failed_points": failed,
        "merged": merged,
        "sweep": sweep,
    });
    write_atomic(&dir.join("manifest.json"), pretty(&manifest).as_bytes())
}

/// Run one shard of `sweep` into `dir`. A shard whose record and Parquet file
/// (checksum verified) are already there is skipped.
pub fn run_shard(sweep: &Sweep, dir: &Path, shard: ShardSpec) -> Result<ShardReport, String> {
    std::fs::create_dir_all(dir.join("shards"))
        .map_err(|e| format!("{}: cannot create: {e}", dir.display()))?;
    check_folder(dir, &sweep.hash)?;
    let stem = shard.stem();
    let file_name = format!("shards/{stem}.parquet");
    let file = dir.join(&file_name);
    let record_path = dir.join(format!("shards/{stem}.json"));
    if let Some(r) = read_json(&record_path) {
        if r["sweep_hash"] == sweep.hash.as_str()
            && sha256_file(&file).ok().as_deref() == r["sha256"].as_str()
        {
            return Ok(ShardReport {
                shard,
                file,
                rows: r["rows"].as_u64().unwrap_or(0) as usize,
                failed: r["failed"].as_array().cloned().unwrap_or_default(),
                skipped: true,
            });
        }
    }
    let range = shard.range(sweep.points);
    let part = sweep.run_points(range.clone());
    let temp = dir.join(format!("shards/.{stem}.parquet.tmp{}", std::process::id()));
    parquet_io::write(
        &temp,
        &part.columns,
        &file_metadata(&sweep.hash, &shard.to_string()),
    )?;
    std::fs::rename(&temp, &file).map_err(|e| format!("{}: cannot write: {e}", file.display()))?;
    let failed: Vec<Value> = part.failed.iter().map(FailedPoint::to_json).collect();
    let record = json!({
        "schema": SHARD_SCHEMA,
        "sweep_hash": sweep.hash,
        "shard": shard.to_string(),
        "index": shard.index,
        "count": shard.count,
        "points": [range.start, range.end],
        "file": file_name,
        "rows": part.rows(),
        "sha256": sha256_file(&file)?,
        "failed": failed,
    });
    write_atomic(&record_path, pretty(&record).as_bytes())?;
    write_manifest(dir, &sweep.resolved, &sweep.hash, sweep.points, None)?;
    Ok(ShardReport {
        shard,
        file,
        rows: part.rows(),
        failed,
        skipped: false,
    })
}

fn file_metadata(hash: &str, shard: &str) -> Vec<(&'static str, String)> {
    vec![
        (
            "nivalis.program",
            nivalis_exports::provenance::program_version(),
        ),
        ("nivalis.sweep_hash", hash.to_string()),
        ("nivalis.shard", shard.to_string()),
    ]
}

/// Verify the manifest and every shard's checksum, and join the shards of
/// one complete set into `dir/sweep.parquet` (rows in point order).
pub fn merge(dir: &Path) -> Result<MergeReport, String> {
    let manifest_path = dir.join("manifest.json");
    let manifest = read_json(&manifest_path).ok_or_else(|| {
        format!(
            "{}: no readable manifest; run `nivalis sweep SWEEP.json --out {}` first",
            manifest_path.display(),
            dir.display()
        )
    })?;
    if manifest["schema"] != MANIFEST_SCHEMA {
        return Err(format!(
            "{}: not a sweep manifest ({MANIFEST_SCHEMA})",
            manifest_path.display()
        ));
    }
    let hash = manifest["sweep_hash"]
        .as_str()
        .unwrap_or_default()
        .to_string();
    let points = manifest["points"].as_u64().unwrap_or(0) as usize;
    let records = shard_records(dir, &hash);
    let Some(set) = complete_set(&records) else {
        let counts: Vec<String> = records
            .iter()
            .map(|r| r["shard"].as_str().unwrap_or("?").to_string())
            .collect();
        let missing = records.first().and_then(|r| r["count"].as_u64()).map(|n| {
            (1..=n)
                .filter(|i| {
                    !records
                        .iter()
                        .any(|r| r["count"].as_u64() == Some(n) && r["index"].as_u64() == Some(*i))
                })
                .map(|i| format!("{i}/{n}"))
                .collect::<Vec<_>>()
                .join(", ")
        });
        return Err(format!(
            "{}: the shards are not complete (done: {}{}); run the missing shards, then merge again",
            dir.display(),
            if counts.is_empty() { "none".into() } else { counts.join(", ") },
            missing.map(|m| format!("; missing: {m}")).unwrap_or_default()
        ));
    };
    let mut joined: Option<Vec<Column>> = None;
    let mut failed = Vec::new();
    let mut covered = 0usize;
    for r in &set {
        let file = dir.join(r["file"].as_str().unwrap_or_default());
        let sum = sha256_file(&file)?;
        if r["sha256"].as_str() != Some(sum.as_str()) {
            return Err(format!(
                "{}: checksum mismatch (recorded {}, found {sum}); run shard {} again",
                file.display(),
                r["sha256"].as_str().unwrap_or("?"),
                r["shard"].as_str().unwrap_or("?")
            ));
        }
        let columns = parquet_io::read(&file)?;
        let fails = r["failed"].as_array().cloned().unwrap_or_default();
        covered += columns.first().map_or(0, |c| c.data.len()) + fails.len();
        failed.extend(fails);
        match &mut joined {
            None => joined = Some(columns),
            Some(all) => {
                if all
                    .iter()
                    .map(|c| &c.info)
                    .ne(columns.iter().map(|c| &c.info))
                {
                    return Err(format!(
                        "{}: its columns differ from the other shards'",
                        file.display()
                    ));
                }
                for (a, c) in all.iter_mut().zip(&columns) {
                    a.data.extend(&c.data);
                }
            }
        }
    }
    if covered != points {
        return Err(format!(
            "{}: the shards hold {covered} points (rows and failed points), the sweep has {points}",
            dir.display()
        ));
    }
    let columns = joined.unwrap_or_default();
    let out = dir.join("sweep.parquet");
    let temp = dir.join(format!(".sweep.parquet.tmp{}", std::process::id()));
    parquet_io::write(&temp, &columns, &file_metadata(&hash, "merged"))?;
    std::fs::rename(&temp, &out).map_err(|e| format!("{}: cannot write: {e}", out.display()))?;
    let rows = columns.first().map_or(0, |c| c.data.len());
    let merged = json!({"file": "sweep.parquet", "rows": rows, "sha256": sha256_file(&out)?, "shard_count": set.len()});
    write_manifest(dir, &manifest["sweep"], &hash, points, Some(merged))?;
    Ok(MergeReport {
        file: out,
        rows,
        shards: set.len(),
        failed,
    })
}
