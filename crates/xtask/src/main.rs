//! `cargo xtask`: the project's developer tasks, written in Rust so they run the
//! same way on every machine that can build the project.
//!
//! The cargo alias in `.cargo/config.toml` maps `cargo xtask ARGS` to
//! `cargo run --package xtask -- ARGS`. This file parses the arguments by hand
//! (the dependencies are `wasm-bindgen-cli-support`, which `dist` calls as a
//! library so no separate CLI install is needed, and `miniz_oxide`, which
//! compresses the page's wasm module) and dispatches to one module per command
//! (plus [`setup`], what a fresh machine lacks for `test`):
//!
//! - [`test`]: the whole test suite (Rust, Python checks, browser tests), fail-fast.
//! - [`bench`]: the criterion benchmarks of the physics core and a table of medians.
//! - [`open`]: build the page and open it, or show the CLI's output while the page
//!   does not exist yet.
//! - [`dist`]: build the single-file page into `target/site/` (owned by the page
//!   engineer; a placeholder until the web crate exists).
//! - [`fuzz`]: run the cargo-fuzz targets for a while, when cargo-fuzz is installed.
//!
//! The helpers below are shared by the commands: where the repository is, how a
//! child process is run and echoed, and which optional parts of the tree exist.

mod bench;
mod dist;
mod fuzz;
mod gates;
mod open;
mod python_module;
mod setup;
mod sweep_bench;
mod test;
mod uncertainty_bench;

use std::path::{Path, PathBuf};
use std::process::{Command, ExitCode};

const USAGE: &str = "\
usage: cargo xtask <command> [options]

commands:
  test            run every test stage (Rust, Python checks, browser tests), fail-fast;
                  ends with the line `N passed, M failed`
  bench [uncertainty|native]
                  run the physics benchmarks and print a table of medians
                  (uncertainty: only the uncertainty Monte Carlo's timings;
                  native: only the core's benchmarks and the numpy baseline)
  open [--dev]    build the page and open target/site/nivalis.html
                  (shows the CLI's output instead while the page does not exist)
  dist [--dev]    build the single-file page into target/site/ (--dev: unoptimised, faster)
  fuzz [SECONDS]  run each cargo-fuzz target for SECONDS (default 60), needs cargo-fuzz
  help            print this message";

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let (command, rest) = match args.split_first() {
        Some((command, rest)) => (command.as_str(), rest),
        None => {
            eprintln!("{USAGE}");
            return ExitCode::from(2);
        }
    };
    let outcome = match command {
        "test" => no_options(command, rest).and_then(|()| test::test()),
        "bench" => match rest {
            [] => bench::bench(bench::Sections::All),
            [only] if only == "uncertainty" => bench::bench(bench::Sections::Uncertainty),
            [only] if only == "native" => bench::bench(bench::Sections::Native),
            _ => Err(format!(
                "bench: the options are `uncertainty` or `native` (that section alone), got `{}`",
                rest.join(" ")
            )),
        },
        "open" => dev_flag(command, rest).and_then(|dev| open::open(!dev)),
        "dist" => dev_flag(command, rest)
            .and_then(|dev| dist::dist(!dev).map(|path| println!("built {}", path.display()))),
        "fuzz" => fuzz_seconds(rest).and_then(fuzz::fuzz),
        "help" | "--help" | "-h" => {
            println!("{USAGE}");
            Ok(())
        }
        other => {
            eprintln!("xtask: unknown command `{other}`\n\n{USAGE}");
            return ExitCode::from(2);
        }
    };
    match outcome {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            // An empty message means the command has already reported the
            // failure itself (`test` ends with its summary line, which CI reads).
            if !message.is_empty() {
                eprintln!("xtask {command}: {message}");
            }
            ExitCode::FAILURE
        }
    }
}

/// Rejects arguments for commands that take none, so a typo is not silently ignored.
fn no_options(command: &str, rest: &[String]) -> Result<(), String> {
    match rest.first() {
        None => Ok(()),
        Some(extra) => Err(format!(
            "unexpected argument `{extra}`; `{command}` takes no arguments"
        )),
    }
}

/// Reads the only option of `open` and `dist`: `--dev` for an unoptimised build.
fn dev_flag(command: &str, rest: &[String]) -> Result<bool, String> {
    match rest {
        [] => Ok(false),
        [flag] if flag == "--dev" => Ok(true),
        [extra, ..] => Err(format!(
            "unexpected argument `{extra}`; `{command}` accepts only --dev"
        )),
    }
}

/// Reads the optional run time of `fuzz`, in seconds (default 60).
fn fuzz_seconds(rest: &[String]) -> Result<u64, String> {
    match rest {
        [] => Ok(60),
        [seconds] => match seconds.parse::<u64>() {
            Ok(value) if value > 0 => Ok(value),
            _ => Err(format!("SECONDS must be a whole number > 0, got {seconds}")),
        },
        [_, extra, ..] => Err(format!(
            "unexpected argument `{extra}`; usage: cargo xtask fuzz [SECONDS]"
        )),
    }
}

/// The workspace root: this crate lives in `crates/xtask`, two levels below it.
/// Using the manifest directory (rather than the current directory) lets the
/// tasks run from any subdirectory, as cargo itself does.
pub fn repo_root() -> PathBuf {
    let manifest = Path::new(env!("CARGO_MANIFEST_DIR"));
    // The two ancestors exist because the manifest directory is `<root>/crates/xtask`.
    manifest
        .ancestors()
        .nth(2)
        .expect("crates/xtask sits two levels below the workspace root")
        .to_path_buf()
}

/// Whether the page crate exists yet (its engineer adds `crates/web`).
pub fn web_crate_exists() -> bool {
    repo_root().join("crates/web/Cargo.toml").is_file()
}

/// The cargo that runs this task (cargo sets `CARGO` for the programs it runs),
/// so nested builds use the same toolchain; plain `cargo` otherwise.
pub fn cargo() -> Command {
    Command::new(std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into()))
}

/// Runs a command with inherited input and output, after echoing it, and turns
/// a failure to start or a non-zero exit into an error naming the command.
pub fn run(command: &mut Command) -> Result<(), String> {
    let shown = show(command);
    println!("$ {shown}");
    let status = command
        .status()
        .map_err(|error| format!("could not start `{shown}`: {error}"))?;
    if status.success() {
        Ok(())
    } else {
        Err(format!("`{shown}` failed ({status})"))
    }
}

/// Runs a command quietly and reports whether it exited with status 0; used
/// for probes such as "is this Python module importable".
pub fn succeeds(command: &mut Command) -> bool {
    command
        .stdin(std::process::Stdio::null())
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .status()
        .map(|status| status.success())
        .unwrap_or(false)
}

/// Whether a program can be found on `PATH` (for optional tools like openers).
pub fn on_path(program: &str) -> bool {
    let Some(path) = std::env::var_os("PATH") else {
        return false;
    };
    std::env::split_paths(&path).any(|dir| {
        let candidate = dir.join(program);
        candidate.is_file() || (cfg!(windows) && candidate.with_extension("exe").is_file())
    })
}

/// A command line as text, program name shortened to its file name, for echoing.
fn show(command: &Command) -> String {
    let program = Path::new(command.get_program());
    let name = program
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut text = name;
    for arg in command.get_args() {
        text.push(' ');
        text.push_str(&arg.to_string_lossy());
    }
    match command.get_current_dir() {
        Some(dir) if dir != repo_root() => format!("(cd {} && {text})", relative(dir)),
        _ => text,
    }
}

/// A path shown relative to the repository root when it lies inside it.
pub fn relative(path: &Path) -> String {
    let root = repo_root();
    match path.strip_prefix(&root) {
        Ok(inside) if inside.as_os_str().is_empty() => ".".to_string(),
        Ok(inside) => inside.display().to_string(),
        Err(_) => path.display().to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn strings(args: &[&str]) -> Vec<String> {
        args.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn repo_root_holds_the_workspace_manifest() {
        let manifest = std::fs::read_to_string(repo_root().join("Cargo.toml")).unwrap();
        assert!(manifest.contains("[workspace]"), "{manifest}");
    }

    #[test]
    fn fuzz_seconds_accepts_positive_integers_only() {
        assert_eq!(fuzz_seconds(&[]), Ok(60));
        assert_eq!(fuzz_seconds(&strings(&["5"])), Ok(5));
        assert_eq!(
            fuzz_seconds(&strings(&["0"])),
            Err("SECONDS must be a whole number > 0, got 0".to_string())
        );
        assert!(fuzz_seconds(&strings(&["ten"])).is_err());
        assert!(fuzz_seconds(&strings(&["5", "6"])).is_err());
    }

    #[test]
    fn dev_flag_is_the_only_option_of_open_and_dist() {
        assert_eq!(dev_flag("open", &[]), Ok(false));
        assert_eq!(dev_flag("open", &strings(&["--dev"])), Ok(true));
        assert!(dev_flag("dist", &strings(&["--release"])).is_err());
    }
}
