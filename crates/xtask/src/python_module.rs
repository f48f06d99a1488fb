//! The `python module` test stage: build and install the `nivalis` Python
//! module (`crates/python`, PyO3 + rust-numpy, built by maturin) into a
//! virtual environment under the target directory, then run its pytest suite,
//! which compares the module with the CLI binary and runs a sweep on a Dask
//! `LocalCluster`.
//!
//! On a fresh machine: `python3 -m venv` (with `python3-venv` from apt-get
//! when the module is missing), pip installs maturin, pytest, Dask
//! distributed, pandas, pyarrow, astropy and numpy, then
//! `pip install ./crates/python` builds the Rust extension, unoptimised in the
//! main target directory so the core crates built by the Rust stage are
//! reused ([`Build::Test`]); `cargo xtask bench` installs an optimised build.

use std::path::PathBuf;
use std::process::Command;

use crate::{cargo, relative, repo_root, run, succeeds};

/// What the stage installs besides the module itself.
pub const PACKAGES: [&str; 7] = [
    "maturin>=1.16,<2",
    "pytest",
    "dask[distributed,dataframe]",
    "pandas",
    "pyarrow",
    "astropy",
    "numpy",
];

/// The import that shows the environment is complete.
const IMPORT: &str =
    "import maturin, pytest, dask.distributed, dask.dataframe, pandas, pyarrow, astropy, numpy";

fn target_dir() -> PathBuf {
    std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo_root().join("target"))
}

/// The virtual environment of this stage: `<target dir>/python-module-venv`.
pub fn venv_dir() -> PathBuf {
    target_dir().join("python-module-venv")
}

/// pytest's exit codes in words (0 passed; 5 collected no test, which would make this stage unable to fail).
pub fn pytest_outcome(code: Option<i32>) -> Result<(), String> {
    match code {
        Some(0) => Ok(()),
        Some(1) => Err("some Python module tests failed".into()),
        Some(5) => Err("pytest collected no tests in crates/python/tests".into()),
        Some(c) => Err(format!(
            "pytest stopped with exit code {c} (interrupted, internal or usage error)"
        )),
        None => Err("pytest was killed by a signal".into()),
    }
}

/// A venv with the packages, created when missing or incomplete.
pub fn ensure_venv() -> Result<PathBuf, String> {
    let venv = venv_dir();
    let python = venv.join("bin").join("python3");
    if succeeds(Command::new(&python).args(["-c", IMPORT])) {
        return Ok(python);
    }
    if !python.is_file() {
        let made = run(Command::new("python3").args(["-m", "venv"]).arg(&venv));
        if made.is_err() {
            println!("`python3 -m venv` failed; installing python3-venv with apt-get");
            let _ = run(Command::new("apt-get").args(["update"]));
            run(Command::new("apt-get").args(["install", "-y", "python3-venv", "python3-pip"]))?;
            let _ = std::fs::remove_dir_all(&venv);
            run(Command::new("python3").args(["-m", "venv"]).arg(&venv))?;
        }
    }
    run(Command::new(&python).args(["-m", "pip", "install", "--quiet", "--upgrade", "pip"]))?;
    run(Command::new(&python)
        .args(["-m", "pip", "install", "--quiet"])
        .args(PACKAGES))?;
    if succeeds(Command::new(&python).args(["-c", IMPORT])) {
        Ok(python)
    } else {
        Err(format!(
            "`{} -c \"{IMPORT}\"` fails after pip install",
            relative(&python)
        ))
    }
}

/// How the module is compiled.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub enum Build {
    /// Unoptimised, in the main target directory, so the core crates compiled
    /// by the Rust stage are reused (the tests compare texts and bits, which
    /// do not depend on optimisation: the debug CLI and a release module agree byte for byte).
    Test,
    /// Optimised, in `<target>/python-module-build`, for the benchmark.
    Release,
}

/// Build and install the module into the stage's venv (no build isolation:
/// maturin comes from the venv, so no second download). Returns the venv's python.
pub fn install_module(build: Build) -> Result<PathBuf, String> {
    let python = ensure_venv()?;
    let mut pip = Command::new(&python);
    // Without build isolation the maturin backend runs the venv's `maturin`
    // program, found on PATH: put the venv's bin folder first.
    let bin = venv_dir().join("bin");
    let path = std::env::var_os("PATH").unwrap_or_default();
    let path = std::env::join_paths(std::iter::once(bin).chain(std::env::split_paths(&path)))
        .map_err(|e| format!("cannot build PATH: {e}"))?;
    pip.current_dir(repo_root()).env("PATH", path);
    match build {
        Build::Test => pip
            .env("CARGO_TARGET_DIR", target_dir())
            .env("MATURIN_PEP517_ARGS", "--profile dev"),
        Build::Release => pip.env("CARGO_TARGET_DIR", target_dir().join("python-module-build")),
    };
    run(pip.args([
        "-m",
        "pip",
        "install",
        "--quiet",
        "--no-build-isolation",
        "--force-reinstall",
        "--no-deps",
        "./crates/python",
    ]))?;
    Ok(python)
}

/// The stage: install, build the CLI binary the tests compare with, run pytest.
pub fn python_module() -> Result<Option<String>, String> {
    let root = repo_root();
    if !root.join("crates/python/pyproject.toml").is_file() {
        return Ok(Some("crates/python does not exist".into()));
    }
    // The crate is its own workspace, so `cargo fmt --all` of the gates does not see it.
    run(cargo().current_dir(&root).args([
        "fmt",
        "--manifest-path",
        "crates/python/Cargo.toml",
        "--",
        "--check",
    ]))?;
    let python = install_module(Build::Test)?;
    run(cargo()
        .current_dir(&root)
        .args(["build", "-p", "nivalis-cli"]))?;
    let cli = target_dir().join("debug").join("nivalis");
    let status = Command::new(&python)
        .current_dir(&root)
        .env("NIVALIS_CLI", &cli)
        .env("PYTHONDONTWRITEBYTECODE", "1")
        .args([
            "-m",
            "pytest",
            "crates/python/tests",
            "-q",
            "-p",
            "no:cacheprovider",
        ])
        .status()
        .map_err(|e| format!("could not start pytest: {e}"))?;
    pytest_outcome(status.code())?;
    Ok(None)
}

/// The stage's venv with an optimised build of the module (for `cargo xtask bench`).
pub fn release_python() -> Result<PathBuf, String> {
    install_module(Build::Release)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pytest_exit_code_5_is_a_failure() {
        assert!(pytest_outcome(Some(0)).is_ok());
        assert!(pytest_outcome(Some(5)).unwrap_err().contains("no tests"));
        assert!(pytest_outcome(Some(1)).is_err());
        assert!(pytest_outcome(None).is_err());
    }

    #[test]
    fn the_venv_lives_under_the_target_directory() {
        assert!(venv_dir().ends_with("python-module-venv"));
    }
}
