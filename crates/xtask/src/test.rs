//! `cargo xtask test`: the whole test suite, stage by stage, fail-fast.
//!
//! Stages, in order (a stage whose part of the tree does not exist yet is
//! skipped and not counted, with the reason printed):
//! 1. Quality gates: `cargo fmt --check`, `cargo clippy -D warnings`, the
//!    core's docs with rustdoc warnings denied ([`crate::gates`]).
//! 2. Rust: `cargo test --workspace` (unit, integration and doc tests).
//! 3. The core in WebAssembly: the core's and the integration tests compiled
//!    to wasm32-wasip1 and run under Node's WASI, and a bit-exact comparison of
//!    native and WebAssembly numbers ([`crate::gates`]); Node.js is installed
//!    with apt-get when missing ([`crate::setup::ensure_node`]).
//! 4. Python checks: every `tests/python/*.py` script, run from the repository
//!    root with a Python that imports the reference libraries they use
//!    (astropy, scipy, bibtexparser): the system's, else a venv under target/
//!    that this stage creates ([`crate::setup::python_with_modules`]).
//! 5. The Python module: build and install `crates/python` (maturin)
//!    into a venv under target/ and run its pytest suite
//!    ([`crate::python_module`]).
//! 6. Page build: when `crates/web/Cargo.toml` exists, make sure the
//!    wasm32-unknown-unknown target is installed and build the page with
//!    [`crate::dist::dist`], because the browser tests load the built file.
//! 7. Browser tests: when `tests/browser/package.json` exists, install
//!    Chromium, Node.js and npm with apt-get when missing
//!    ([`crate::setup::ensure_browser_tools`]), its npm packages if
//!    `node_modules` is missing, then `node --test tests/browser/`.
//!
//! The first failing stage stops the run. The last line printed is always
//! `N passed, M failed`, counting stages; CI reads that line.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::{cargo, relative, repo_root, run, web_crate_exists};

/// The target the page is compiled to.
const WASM_TARGET: &str = "wasm32-unknown-unknown";

/// What happened to one stage.
enum Outcome {
    Passed,
    Failed(String),
    /// The stage does not apply yet; the text says why.
    Skipped(String),
    /// An earlier stage failed, so this one was not attempted.
    NotRun,
}

/// One stage: a name for the summary and the work, which returns
/// `Ok(None)` when it ran, `Ok(Some(reason))` when it does not apply.
struct Stage {
    name: &'static str,
    work: fn() -> Result<Option<String>, String>,
}

/// Runs every stage and prints the summary. An `Err` with an empty message
/// tells `main` that the failure has already been reported.
pub fn test() -> Result<(), String> {
    let stages = [
        Stage {
            name: "quality gates (fmt, clippy -D warnings, core docs)",
            work: crate::gates::quality_gates,
        },
        Stage {
            name: "rust tests (cargo test --workspace)",
            work: rust_tests,
        },
        Stage {
            name: "core in WebAssembly (wasm32-wasip1 under Node's WASI)",
            work: crate::gates::wasm_core,
        },
        Stage {
            name: "python checks (tests/python/*.py)",
            work: python_checks,
        },
        Stage {
            name: "python module (pip install ./crates/python, pytest crates/python/tests)",
            work: crate::python_module::python_module,
        },
        Stage {
            name: "page build (cargo xtask dist)",
            work: page_build,
        },
        Stage {
            name: "browser tests (node --test tests/browser/)",
            work: browser_tests,
        },
    ];
    let mut outcomes = Vec::new();
    let mut failed = false;
    for (number, stage) in stages.iter().enumerate() {
        if failed {
            outcomes.push(Outcome::NotRun);
            continue;
        }
        println!(
            "\n==> stage {}/{}: {}",
            number + 1,
            stages.len(),
            stage.name
        );
        let outcome = match (stage.work)() {
            Ok(None) => Outcome::Passed,
            Ok(Some(reason)) => {
                println!("skipped: {reason}");
                Outcome::Skipped(reason)
            }
            Err(message) => {
                eprintln!("stage failed: {message}");
                failed = true;
                Outcome::Failed(message)
            }
        };
        outcomes.push(outcome);
    }

    println!("\nsummary:");
    for (stage, outcome) in stages.iter().zip(&outcomes) {
        match outcome {
            Outcome::Passed => println!("  ok       {}", stage.name),
            Outcome::Failed(message) => println!("  FAILED   {}: {message}", stage.name),
            Outcome::Skipped(reason) => println!("  skipped  {}: {reason}", stage.name),
            Outcome::NotRun => println!("  not run  {} (an earlier stage failed)", stage.name),
        }
    }
    let passed = outcomes
        .iter()
        .filter(|o| matches!(o, Outcome::Passed))
        .count();
    let failures = outcomes
        .iter()
        .filter(|o| matches!(o, Outcome::Failed(_)))
        .count();
    println!("{passed} passed, {failures} failed");
    if failures == 0 {
        Ok(())
    } else {
        Err(String::new())
    }
}

fn rust_tests() -> Result<Option<String>, String> {
    run(cargo()
        .current_dir(repo_root())
        .args(["test", "--workspace"]))?;
    Ok(None)
}

fn python_checks() -> Result<Option<String>, String> {
    let scripts = python_scripts(&repo_root().join("tests/python"))?;
    if scripts.is_empty() {
        return Ok(Some("no scripts in tests/python yet".to_string()));
    }
    let python = crate::setup::python_with_modules()?;
    let mut failures = Vec::new();
    // Every script runs even after one fails: they are quick and independent,
    // and seeing all failing checks at once saves round trips.
    for script in &scripts {
        let outcome = run(Command::new(&python)
            .current_dir(repo_root())
            .env("PYTHONDONTWRITEBYTECODE", "1")
            .arg(relative(script)));
        if outcome.is_err() {
            failures.push(relative(script));
        }
    }
    if failures.is_empty() {
        println!("{} python scripts passed", scripts.len());
        Ok(None)
    } else {
        Err(format!(
            "{} of {} python scripts failed: {}",
            failures.len(),
            scripts.len(),
            failures.join(", ")
        ))
    }
}

/// The `*.py` files directly inside `dir`, sorted so the order is the same
/// everywhere; none when the directory does not exist.
fn python_scripts(dir: &Path) -> Result<Vec<PathBuf>, String> {
    if !dir.is_dir() {
        return Ok(Vec::new());
    }
    let entries =
        std::fs::read_dir(dir).map_err(|e| format!("cannot list {}: {e}", relative(dir)))?;
    let mut scripts: Vec<PathBuf> = entries
        .filter_map(|entry| entry.ok().map(|e| e.path()))
        .filter(|path| path.is_file() && path.extension().is_some_and(|ext| ext == "py"))
        .collect();
    scripts.sort();
    Ok(scripts)
}

fn page_build() -> Result<Option<String>, String> {
    if !web_crate_exists() {
        return Ok(Some("crates/web does not exist yet".to_string()));
    }
    ensure_wasm_target()?;
    let page = crate::dist::dist(true)?;
    println!("built {}", relative(&page));
    Ok(None)
}

/// Installs the wasm target when the active toolchain lacks it. These machines
/// set `RUSTUP_AUTO_INSTALL=0`, so nothing installs it implicitly. rustup is
/// asked from a directory outside the repository; the toolchain is still the
/// one running this task, because the rustup proxy passes it on in
/// `RUSTUP_TOOLCHAIN`.
pub fn ensure_wasm_target() -> Result<(), String> {
    ensure_target(WASM_TARGET)
}

/// Installs a compilation target when the active toolchain lacks it (see
/// [`ensure_wasm_target`] for why rustup is asked from outside the repository).
pub fn ensure_target(target: &str) -> Result<(), String> {
    let outside = std::env::temp_dir();
    let listed = Command::new("rustup")
        .current_dir(&outside)
        .args(["target", "list", "--installed"])
        .output();
    match listed {
        Err(_) => {
            // Without rustup the toolchain was installed some other way; the
            // build itself will say clearly if the target is missing.
            println!("rustup not found; assuming the {target} target is installed");
            Ok(())
        }
        Ok(output)
            if String::from_utf8_lossy(&output.stdout)
                .lines()
                .any(|line| line.trim() == target) =>
        {
            println!("{target} target installed");
            Ok(())
        }
        Ok(_) => run(Command::new("rustup")
            .current_dir(&outside)
            .args(["target", "add", target])),
    }
}

fn browser_tests() -> Result<Option<String>, String> {
    let dir = repo_root().join("tests/browser");
    if !dir.join("package.json").is_file() {
        return Ok(Some(
            "tests/browser/package.json does not exist yet".to_string(),
        ));
    }
    crate::setup::ensure_browser_tools()?;
    ensure_browser_packages()?;
    // Node's runner quietly passes when it finds no test file, which would make
    // this stage unable to fail; count them first.
    let count = node_test_files(&dir).len();
    if count == 0 {
        return Err(
            "no test files in tests/browser (node --test runs files named *.test.mjs)".to_string(),
        );
    }
    println!("{count} browser test files");
    run(Command::new("node")
        .current_dir(repo_root())
        .args(["--test", "tests/browser/"]))?;
    Ok(None)
}

/// Installs the browser tests' npm packages when `node_modules` lacks one of
/// package.json's dev dependencies (a checkout made before one was added
/// included): `npm ci` when a lock file pins them, `npm install` otherwise.
pub fn ensure_browser_packages() -> Result<(), String> {
    crate::setup::ensure_node()?;
    let dir = repo_root().join("tests/browser");
    let manifest = std::fs::read_to_string(dir.join("package.json"))
        .map_err(|e| format!("cannot read tests/browser/package.json: {e}"))?;
    let wanted = dev_dependencies(&manifest);
    if wanted.is_empty() {
        return Err("tests/browser/package.json names no devDependencies".to_string());
    }
    if wanted.iter().all(|name| {
        dir.join("node_modules")
            .join(name)
            .join("package.json")
            .is_file()
    }) {
        return Ok(());
    }
    let verb = if dir.join("package-lock.json").is_file() {
        "ci"
    } else {
        "install"
    };
    run(Command::new("npm")
        .current_dir(&dir)
        .args([verb, "--no-audit", "--no-fund"]))
}

/// The names in the `"devDependencies"` object of a package.json text (flat
/// `"name": "version"` pairs, as npm writes them).
fn dev_dependencies(manifest: &str) -> Vec<String> {
    let Some(start) = manifest.find("\"devDependencies\"") else {
        return Vec::new();
    };
    let rest = &manifest[start..];
    let (Some(open), Some(close)) = (rest.find('{'), rest.find('}')) else {
        return Vec::new();
    };
    if close < open {
        return Vec::new();
    }
    rest[open + 1..close]
        .split(',')
        .filter_map(|pair| {
            let name = pair.split(':').next()?.trim().trim_matches('"');
            (!name.is_empty()).then(|| name.to_string())
        })
        .collect()
}

/// Files under `dir` (outside `node_modules`) that `node --test DIR` runs:
/// Node 20's default patterns `*.test.*`, `*-test.*`, `*_test.*`, `test-*.*`,
/// `test.*` for js/mjs/cjs files, and any such file inside a `test` directory.
fn node_test_files(dir: &Path) -> Vec<PathBuf> {
    let mut found = Vec::new();
    let mut pending = vec![(dir.to_path_buf(), false)];
    while let Some((current, inside_test_dir)) = pending.pop() {
        let Ok(entries) = std::fs::read_dir(&current) else {
            continue;
        };
        for entry in entries.flatten() {
            let path = entry.path();
            let name = entry.file_name().to_string_lossy().into_owned();
            if path.is_dir() {
                if name != "node_modules" {
                    pending.push((path, inside_test_dir || name == "test"));
                }
            } else if is_node_test_file(&name, inside_test_dir) {
                found.push(path);
            }
        }
    }
    found.sort();
    found
}

fn is_node_test_file(name: &str, inside_test_dir: bool) -> bool {
    let Some((stem, extension)) = name.rsplit_once('.') else {
        return false;
    };
    if !matches!(extension, "js" | "mjs" | "cjs") {
        return false;
    }
    inside_test_dir
        || stem == "test"
        || stem.ends_with(".test")
        || stem.ends_with("-test")
        || stem.ends_with("_test")
        || stem.starts_with("test-")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dev_dependencies_are_read_from_the_repositorys_package_json() {
        let manifest = std::fs::read_to_string(repo_root().join("tests/browser/package.json"))
            .expect("tests/browser/package.json");
        let names = dev_dependencies(&manifest);
        for name in ["binaryen", "esbuild", "playwright-core"] {
            assert!(names.iter().any(|n| n == name), "{name} not in {names:?}");
        }
        assert_eq!(
            dev_dependencies("{\"scripts\": {\"a\": \"b\"}, \"devDependencies\": {\"x\": \"1\", \"@s/y\": \"2\"}}"),
            ["x", "@s/y"]
        );
        assert!(dev_dependencies("{\"name\": \"p\"}").is_empty());
    }

    #[test]
    fn node_test_file_names_follow_node_20_defaults() {
        for name in [
            "page.test.mjs",
            "page-test.js",
            "page_test.cjs",
            "test-page.mjs",
            "test.js",
        ] {
            assert!(is_node_test_file(name, false), "{name}");
        }
        for name in [
            "bench.mjs",
            "helpers.mjs",
            "page.test.ts",
            "README.md",
            "testing.mjs",
        ] {
            assert!(!is_node_test_file(name, false), "{name}");
        }
        assert!(is_node_test_file("helpers.mjs", true));
    }

    #[test]
    fn node_test_files_skip_node_modules_and_non_tests() {
        let dir = std::env::temp_dir().join(format!("xtask-node-files-{}", std::process::id()));
        std::fs::create_dir_all(dir.join("node_modules/pkg")).unwrap();
        std::fs::write(dir.join("page.test.mjs"), "").unwrap();
        std::fs::write(dir.join("bench.mjs"), "").unwrap();
        std::fs::write(dir.join("node_modules/pkg/x.test.mjs"), "").unwrap();
        let found = node_test_files(&dir);
        std::fs::remove_dir_all(&dir).unwrap();
        assert_eq!(found, vec![dir.join("page.test.mjs")]);
    }

    #[test]
    fn python_scripts_are_sorted_py_files_only() {
        let dir = std::env::temp_dir().join(format!("xtask-python-files-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        for name in ["b_check.py", "a_check.py", "notes.txt"] {
            std::fs::write(dir.join(name), "").unwrap();
        }
        let found = python_scripts(&dir).unwrap();
        std::fs::remove_dir_all(&dir).unwrap();
        assert_eq!(found, vec![dir.join("a_check.py"), dir.join("b_check.py")]);
        assert_eq!(python_scripts(&dir).unwrap(), Vec::<PathBuf>::new());
    }
}
