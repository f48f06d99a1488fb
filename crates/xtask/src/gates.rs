//! Two stages of `cargo xtask test` beyond the tests themselves:
//!
//! - **quality gates**: `cargo fmt --all -- --check`, `cargo clippy --workspace
//!   --all-targets -- -D warnings`, and `cargo doc -p nivalis-physics --no-deps`
//!   with rustdoc warnings denied (the core also denies `missing_docs` in its
//!   crate root, so an undocumented public item fails its build);
//! - **the core in WebAssembly**: the core's unit tests and the integration
//!   tests (`nivalis-tests`) compiled to `wasm32-wasip1` and run under Node's
//!   WASI (`tests/wasm/run_wasi.mjs`), and the `model_digest` example run
//!   natively and as WebAssembly, whose outputs (hashes over the exact bits of
//!   every sample, shortest round-trip numbers) must be byte-identical; the core's
//!   unit tests and the digest once more compiled with WebAssembly SIMD (simd128),
//!   which builds the core's explicit simd128 loops. The
//!   page is compiled to `wasm32-unknown-unknown` from the same Rust with the
//!   same libm, so this shows native and WebAssembly numbers are equal.

use std::path::Path;
use std::process::Command;

use crate::{cargo, relative, repo_root, run};

/// The WASI target the core's tests are compiled to.
const WASI_TARGET: &str = "wasm32-wasip1";

/// Crates whose tests also run as WebAssembly.
const WASM_TEST_PACKAGES: [&str; 2] = ["nivalis-physics", "nivalis-tests"];

pub fn quality_gates() -> Result<Option<String>, String> {
    let root = repo_root();
    run(cargo()
        .current_dir(&root)
        .args(["fmt", "--all", "--", "--check"]))?;
    run(cargo().current_dir(&root).args([
        "clippy",
        "--workspace",
        "--all-targets",
        "--",
        "-D",
        "warnings",
    ]))?;
    run(cargo()
        .current_dir(&root)
        .env("RUSTDOCFLAGS", "-D warnings")
        .args(["doc", "-p", "nivalis-physics", "--no-deps"]))?;
    Ok(None)
}

pub fn wasm_core() -> Result<Option<String>, String> {
    crate::setup::ensure_node()?;
    crate::test::ensure_target(WASI_TARGET)?;
    let root = repo_root();
    let runner = root.join("tests/wasm/run_wasi.mjs");
    let mut programs = Vec::new();
    for package in WASM_TEST_PACKAGES {
        programs.extend(wasi_test_programs(
            &root,
            &["-p", package],
            &format!("the {package} tests for {WASI_TARGET}"),
        )?);
    }
    run_wasi(&root, &runner, &programs, &format!("for {WASI_TARGET}"))?;
    println!("{} test programs passed as WebAssembly", programs.len());

    // The same numbers, bit for bit.
    let native = capture(cargo().current_dir(&root).args([
        "run",
        "-q",
        "-p",
        "nivalis-physics",
        "--example",
        "model_digest",
    ]))?;
    run(cargo().current_dir(&root).args([
        "build",
        "-q",
        "-p",
        "nivalis-physics",
        "--example",
        "model_digest",
        "--target",
        WASI_TARGET,
    ]))?;
    let wasm_program = root
        .join("target")
        .join(WASI_TARGET)
        .join("debug/examples/model_digest.wasm");
    let wasm = capture(
        Command::new("node")
            .current_dir(&root)
            .arg(&runner)
            .arg(&wasm_program),
    )?;
    if native.trim().is_empty() {
        return Err("the model_digest example printed nothing".to_string());
    }
    if native != wasm {
        return Err(format!(
            "native and WebAssembly numbers differ:\n--- native\n{native}--- {}\n{wasm}",
            relative(&wasm_program)
        ));
    }
    println!(
        "native and WebAssembly model digests are identical ({} configurations)",
        native.lines().count()
    );

    // Again with WebAssembly SIMD (simd128): the core's explicit simd128 loops
    // (crates/physics: math::simd128, the ice balance's lane pairs) are compiled only then.
    // Own target directory, so the two sets of flags do not rebuild each other's artifacts.
    let simd_dir = root.join("target").join("wasm-simd128");
    let simd_flags = format!("target.{WASI_TARGET}.rustflags=[\"-C\",\"target-feature=+simd128\"]");
    let simd_dir_arg = simd_dir.to_string_lossy();
    let simd_programs = wasi_test_programs(
        &root,
        &[
            "-p",
            "nivalis-physics",
            "--lib",
            "--config",
            &simd_flags,
            "--target-dir",
            &simd_dir_arg,
        ],
        &format!("the core's tests for {WASI_TARGET} with simd128"),
    )?;
    run_wasi(
        &root,
        &runner,
        &simd_programs,
        &format!("for {WASI_TARGET} with simd128"),
    )?;
    run(cargo()
        .current_dir(&root)
        .args([
            "build",
            "-q",
            "-p",
            "nivalis-physics",
            "--example",
            "model_digest",
        ])
        .args(["--target", WASI_TARGET, "--config", &simd_flags])
        .arg("--target-dir")
        .arg(&simd_dir))?;
    let simd_program = simd_dir
        .join(WASI_TARGET)
        .join("debug/examples/model_digest.wasm");
    let simd = capture(
        Command::new("node")
            .current_dir(&root)
            .arg(&runner)
            .arg(&simd_program),
    )?;
    if native != simd {
        return Err(format!(
            "native and WebAssembly (simd128) numbers differ:\n--- native\n{native}--- {}\n{simd}",
            relative(&simd_program)
        ));
    }
    println!("the core's tests pass and the model digest is identical with simd128 too");
    Ok(None)
}

/// Builds test programs for [`WASI_TARGET`] (`cargo test --no-run` with `args`) and returns
/// their paths; `what` names them in errors.
fn wasi_test_programs(root: &Path, args: &[&str], what: &str) -> Result<Vec<String>, String> {
    let output = cargo()
        .current_dir(root)
        .arg("test")
        .args(args)
        .args(["--target", WASI_TARGET, "--no-run", "--message-format=json"])
        .stderr(std::process::Stdio::inherit())
        .output()
        .map_err(|e| format!("could not start cargo: {e}"))?;
    if !output.status.success() {
        return Err(format!("building {what} failed"));
    }
    Ok(executables(&String::from_utf8_lossy(&output.stdout)))
}

/// Runs each WebAssembly test program with the WASI runner; an empty list is an error
/// (nothing was built `what`).
fn run_wasi(root: &Path, runner: &Path, programs: &[String], what: &str) -> Result<(), String> {
    if programs.is_empty() {
        return Err(format!("no test programs were built {what}"));
    }
    for program in programs {
        run(Command::new("node")
            .current_dir(root)
            .arg(runner)
            .arg(program))?;
    }
    Ok(())
}

/// The `"executable":"..."` paths of cargo's JSON messages (test programs).
fn executables(messages: &str) -> Vec<String> {
    const KEY: &str = "\"executable\":\"";
    messages
        .lines()
        .filter(|line| line.contains("\"reason\":\"compiler-artifact\""))
        .filter_map(|line| {
            let start = line.find(KEY)? + KEY.len();
            let end = start + line[start..].find('"')?;
            Some(line[start..end].replace("\\\\", "\\"))
        })
        .collect()
}

/// Runs a command, returning its standard output; a failure is an error.
fn capture(command: &mut Command) -> Result<String, String> {
    let output = command
        .stderr(std::process::Stdio::inherit())
        .output()
        .map_err(|e| format!("could not start: {e}"))?;
    if !output.status.success() {
        return Err(format!(
            "{:?} failed ({})",
            command.get_program(),
            output.status
        ));
    }
    String::from_utf8(output.stdout).map_err(|_| "output is not UTF-8".to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn executables_are_read_from_compiler_artifacts_only() {
        let messages = concat!(
            r#"{"reason":"compiler-artifact","executable":"/x/deps/a-1.wasm","fresh":true}"#,
            "\n",
            r#"{"reason":"compiler-artifact","executable":null}"#,
            "\n",
            r#"{"reason":"build-finished","success":true}"#,
        );
        assert_eq!(executables(messages), vec!["/x/deps/a-1.wasm".to_string()]);
    }
}
