//! `cargo xtask fuzz [SECONDS]`: runs every cargo-fuzz target in `fuzz/`
//! (one per file in `fuzz/fuzz_targets/`) for SECONDS each, with
//! `cargo +nightly fuzz run <target> -- -max_total_time=SECONDS`.
//!
//! cargo-fuzz needs a nightly toolchain and the `cargo-fuzz` binary; when
//! either is missing this prints how to install it instead of failing, because
//! fuzzing is an optional, local activity (CI does not run it).

use std::path::PathBuf;
use std::process::Command;

use crate::{relative, repo_root, run, succeeds};

pub fn fuzz(seconds: u64) -> Result<(), String> {
    let dir = repo_root().join("fuzz");
    if !dir.join("Cargo.toml").is_file() {
        println!("no fuzz/ directory with a Cargo.toml yet; nothing to fuzz");
        return Ok(());
    }
    // `+nightly` is understood by rustup's `cargo` proxy only, so this calls
    // `cargo` from PATH rather than the toolchain binary in $CARGO.
    if !succeeds(
        Command::new("cargo")
            .current_dir(&dir)
            .args(["+nightly", "fuzz", "--version"]),
    ) {
        println!("cargo-fuzz or a nightly toolchain is missing. Install them with");
        println!("    rustup toolchain install nightly");
        println!("    cargo install cargo-fuzz");
        println!("then run `cargo xtask fuzz {seconds}` again.");
        return Ok(());
    }
    let targets = fuzz_targets(&dir.join("fuzz_targets"))?;
    if targets.is_empty() {
        return Err(format!(
            "no fuzz targets in {}",
            relative(&dir.join("fuzz_targets"))
        ));
    }
    for target in &targets {
        println!("\n==> fuzzing {target} for {seconds} s");
        let mut command = Command::new("cargo");
        command
            .current_dir(&dir)
            .args(["+nightly", "fuzz", "run", target]);
        // The disk-file target starts from the demo disks; its own corpus folder keeps what it finds.
        if target.starts_with("disk_file") {
            command.arg(format!("corpus/{target}")).arg("corpus_seed");
            std::fs::create_dir_all(dir.join("corpus").join(target))
                .map_err(|e| format!("cannot create the corpus folder: {e}"))?;
        }
        command.arg("--").arg(format!("-max_total_time={seconds}"));
        if let Some(dict) = dictionary_for(&dir, target) {
            println!("    with the dictionary {dict}");
            command.arg(format!("-dict={dict}"));
        }
        run(&mut command)?;
    }
    println!(
        "\n{} fuzz targets ran {seconds} s each without a crash",
        targets.len()
    );
    Ok(())
}

/// The libFuzzer dictionary of a target: `fuzz/<name>.dict` for the longest
/// `<name>` that begins the target's name (`disk_file.dict` serves
/// `disk_file_reader`), as a path relative to `fuzz/`.
fn dictionary_for(dir: &std::path::Path, target: &str) -> Option<String> {
    let entries = std::fs::read_dir(dir).ok()?;
    entries
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "dict"))
        .filter_map(|p| p.file_stem().map(|s| s.to_string_lossy().into_owned()))
        .filter(|stem| target.starts_with(stem.as_str()))
        .max_by_key(|stem| stem.len())
        .map(|stem| format!("{stem}.dict"))
}

/// Target names: the stems of the `.rs` files in `fuzz/fuzz_targets`, sorted.
fn fuzz_targets(dir: &std::path::Path) -> Result<Vec<String>, String> {
    let entries =
        std::fs::read_dir(dir).map_err(|e| format!("cannot list {}: {e}", relative(dir)))?;
    let mut names: Vec<String> = entries
        .filter_map(|entry| entry.ok().map(|e| e.path()))
        .filter(|path: &PathBuf| path.extension().is_some_and(|ext| ext == "rs"))
        .filter_map(|path| {
            path.file_stem()
                .map(|stem| stem.to_string_lossy().into_owned())
        })
        .collect();
    names.sort();
    Ok(names)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_disk_file_dictionary_serves_the_disk_file_target_only() {
        let dir = crate::repo_root().join("fuzz");
        assert_eq!(
            dictionary_for(&dir, "disk_file_reader").as_deref(),
            Some("disk_file.dict")
        );
        assert_eq!(dictionary_for(&dir, "fragment_decoder"), None);
        let targets = fuzz_targets(&dir.join("fuzz_targets")).unwrap();
        assert_eq!(
            targets,
            vec![
                "disk_file_reader".to_string(),
                "fragment_decoder".to_string()
            ]
        );
    }
}
