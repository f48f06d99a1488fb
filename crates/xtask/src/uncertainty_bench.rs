//! The uncertainty section of `cargo xtask bench` (issue 12 item 6, docs/model.md section 13):
//!
//! 1. the criterion benchmark `crates/physics/benches/uncertainty.rs` (one thread), which prints
//!    the medians of one deterministic run, 1000 ice-only samples and 100 structural samples,
//!    and the ratios "1000 samples / one deterministic run";
//! 2. the native speed-up with cores: the release CLI's `nivalis uncertainty` on the same
//!    1000-sample disk with rayon's pool at 1 and at 2 threads (`RAYON_NUM_THREADS`), repeats
//!    alternated so both see the same machine, medians and their ratio. The CLI gathers samples
//!    in index order, so both runs must write the same bytes (checked);
//! 3. the page's 1000 samples are timed by `tests/browser/bench.mjs` (its uncertainty part).
//!
//! Timing lives here only; the tests never time anything.

use std::path::Path;
use std::process::Command;
use std::time::Instant;

use crate::{cargo, relative, repo_root, run};

/// The uncertain inputs timed: those that leave the structure alone (the star's C offset, the
/// sticking coefficient, the carbon carriers by a Dirichlet), as `tests/browser/bench.mjs` and
/// `tests/browser/uncertainty.test.mjs` use, on the default disk and grid (200 x 80).
pub const ICE_ONLY_DISK: &str = r#"{"uncertainty":{"star.abundances.offset_dex.C":{"distribution":"normal","sigma":0.05},"ices.sticking":{"distribution":"uniform","low":0.8,"high":1},"composition.carbon":{"distribution":"dirichlet","concentration":30}}}"#;
/// The same with a log-normal luminosity (0.1 dex): every sample computes its own structure.
pub const STRUCTURAL_DISK: &str =
    r#"{"uncertainty":{"star.luminosity_lsun":{"distribution":"lognormal","sigma_dex":0.1}}}"#;
const SAMPLES: &str = "1000";
const REPEATS: usize = 5;

/// Runs the three measurements' native parts and prints them; problems are returned as text.
pub fn uncertainty_section() -> Result<(), String> {
    let root = repo_root();
    println!("\nuncertainty Monte Carlo (criterion, one thread, default disk 200 x 80):");
    run(cargo().current_dir(&root).args([
        "bench",
        "-p",
        "nivalis-physics",
        "--bench",
        "uncertainty",
    ]))?;
    run(cargo()
        .current_dir(&root)
        .args(["build", "--release", "--quiet", "-p", "nivalis-cli"]))?;
    let cli = crate::bench::target_dir()
        .join("release")
        .join(if cfg!(windows) {
            "nivalis.exe"
        } else {
            "nivalis"
        });
    let out_dir = crate::bench::target_dir().join("bench");
    std::fs::create_dir_all(&out_dir)
        .map_err(|e| format!("cannot create {}: {e}", relative(&out_dir)))?;
    println!(
        "\nnative speed-up with cores: release `nivalis uncertainty DISK --samples {SAMPLES} --seed 1 --format json`,\n\
         rayon pool at 1 and 2 threads (RAYON_NUM_THREADS), {REPEATS} alternated repeats each, wall-clock medians:"
    );
    for (label, disk) in [("ice-only", ICE_ONLY_DISK), ("structural", STRUCTURAL_DISK)] {
        let disk_path = out_dir.join(format!("uncertainty_{label}.json"));
        std::fs::write(&disk_path, disk)
            .map_err(|e| format!("cannot write {}: {e}", relative(&disk_path)))?;
        let mut times = [Vec::new(), Vec::new()];
        let mut outputs: [Option<Vec<u8>>; 2] = [None, None];
        for _ in 0..REPEATS {
            for (k, threads) in ["1", "2"].into_iter().enumerate() {
                let (seconds, bytes) = time_cli(&cli, &disk_path, threads)?;
                times[k].push(seconds);
                outputs[k] = Some(bytes);
            }
        }
        let one = median(&mut times[0]);
        let two = median(&mut times[1]);
        let same = outputs[0] == outputs[1];
        println!(
            "  {label:<10} 1 thread {:>8.3} s   2 threads {:>8.3} s   speed-up {:.2} (ideal 2 on 2 cores){}",
            one,
            two,
            one / two,
            if same {
                ""
            } else {
                "   OUTPUTS DIFFER between thread counts"
            }
        );
        if !same {
            return Err(format!(
                "nivalis uncertainty {}: 1 and 2 threads wrote different results",
                relative(&disk_path)
            ));
        }
    }
    Ok(())
}

/// One timed run of the CLI at `threads` rayon threads: seconds and its stdout.
fn time_cli(cli: &Path, disk: &Path, threads: &str) -> Result<(f64, Vec<u8>), String> {
    let started = Instant::now();
    let out = Command::new(cli)
        .env("RAYON_NUM_THREADS", threads)
        .arg("uncertainty")
        .arg(disk)
        .args(["--samples", SAMPLES, "--seed", "1", "--format", "json"])
        .output()
        .map_err(|e| format!("could not start {}: {e}", relative(cli)))?;
    let seconds = started.elapsed().as_secs_f64();
    if !out.status.success() {
        return Err(format!(
            "nivalis uncertainty failed ({}): {}",
            out.status,
            String::from_utf8_lossy(&out.stderr)
        ));
    }
    Ok((seconds, out.stdout))
}

/// The median of a non-empty set (sorted in place; Hyndman & Fan definition 7 at q = 0.5).
fn median(values: &mut [f64]) -> f64 {
    values.sort_by(f64::total_cmp);
    let n = values.len();
    if n % 2 == 1 {
        values[n / 2]
    } else {
        0.5 * (values[n / 2 - 1] + values[n / 2])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_of_odd_and_even_counts() {
        assert_eq!(median(&mut [3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&mut [4.0, 1.0, 3.0, 2.0]), 2.5);
    }
}
