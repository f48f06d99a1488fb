//! What a fresh machine lacks for `cargo xtask test`, installed by the task
//! itself so the README's test command passes with nothing installed by hand:
//!
//! - Chromium (the browser tests drive the system's headless Chromium at
//!   `/usr/bin/chromium`, or `CHROMIUM_PATH`), and Node.js with npm, from the
//!   system packages: `apt-get update` once, then `apt-get install -y PACKAGES`,
//!   run directly as root, through `sudo -n` otherwise. When neither works (no
//!   apt-get, not root and no password-less sudo) the task stops with the one
//!   command to run by hand.
//! - The Python reference libraries (astropy, scipy, bibtexparser): the system
//!   `python3` when it already imports them; else a virtual environment under
//!   `target/python-venv` (created with `python3 -m venv`, packages from pip);
//!   else `pip install --break-system-packages` into the system Python, which a
//!   Debian-managed Python needs when it has no venv module.
//!
//! The npm packages and the wasm32 target are installed in [`crate::test`]
//! (`ensure_browser_packages`, `ensure_wasm_target`).

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::{AtomicBool, Ordering};

use crate::{on_path, relative, repo_root, run, succeeds};

/// Python modules the checks in `tests/python` import (the reference libraries).
pub const PYTHON_MODULES: [&str; 3] = ["astropy", "scipy", "bibtexparser"];

/// Whether `apt-get update` already ran in this task (it runs at most once).
static APT_UPDATED: AtomicBool = AtomicBool::new(false);

/// The Chromium the browser tests launch: `CHROMIUM_PATH` when set (as
/// tests/browser/helpers.mjs reads it), else Debian's `/usr/bin/chromium`.
pub fn chromium_path() -> PathBuf {
    std::env::var_os("CHROMIUM_PATH")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("/usr/bin/chromium"))
}

/// Makes sure Chromium, Node.js and npm exist, installing the missing system
/// packages with apt-get.
pub fn ensure_browser_tools() -> Result<(), String> {
    let chromium = chromium_path();
    if chromium.is_file() {
        println!("chromium present: {}", chromium.display());
    } else if std::env::var_os("CHROMIUM_PATH").is_some() {
        return Err(format!(
            "CHROMIUM_PATH names {}, which does not exist",
            chromium.display()
        ));
    } else {
        apt_install(&["chromium"])?;
        if !chromium.is_file() {
            return Err(format!(
                "`apt-get install -y chromium` did not provide {}",
                chromium.display()
            ));
        }
    }
    ensure_node()
}

/// Makes sure `node` and `npm` are on PATH (Debian's `nodejs` and `npm` packages).
pub fn ensure_node() -> Result<(), String> {
    if on_path("node") && on_path("npm") {
        return Ok(());
    }
    apt_install(&["nodejs", "npm"])?;
    if on_path("node") && on_path("npm") {
        Ok(())
    } else {
        Err("`apt-get install -y nodejs npm` did not put node and npm on PATH".to_string())
    }
}

/// How a system command can be run as root here.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Root {
    /// This process is root (CI).
    Already,
    /// `sudo -n` works (no password prompt).
    Sudo,
    /// Neither: the user must run the command.
    Impossible,
}

fn root_access() -> Root {
    if is_root() {
        Root::Already
    } else if on_path("sudo") && succeeds(Command::new("sudo").args(["-n", "true"])) {
        Root::Sudo
    } else {
        Root::Impossible
    }
}

/// Whether this process runs as root: `id -u` prints 0 (std has no getuid).
fn is_root() -> bool {
    Command::new("id")
        .arg("-u")
        .output()
        .map(|out| out.status.success() && String::from_utf8_lossy(&out.stdout).trim() == "0")
        .unwrap_or(false)
}

/// The command a person runs to install `packages`, for the message when the
/// task cannot do it itself.
fn manual_command(packages: &[&str]) -> String {
    format!(
        "sudo apt-get update && sudo apt-get install -y {}",
        packages.join(" ")
    )
}

/// A root command: `program args` as root, or `sudo -n program args`.
fn as_root(root: Root, program: &str, args: &[&str]) -> Command {
    let mut command = if root == Root::Sudo {
        let mut c = Command::new("sudo");
        c.args(["-n", "env", "DEBIAN_FRONTEND=noninteractive", program]);
        c
    } else {
        let mut c = Command::new(program);
        c.env("DEBIAN_FRONTEND", "noninteractive");
        c
    };
    command.args(args);
    command
}

/// `apt-get update` (once per task) then `apt-get install -y PACKAGES`, as root.
fn apt_install(packages: &[&str]) -> Result<(), String> {
    println!("missing system packages: {}", packages.join(" "));
    if !on_path("apt-get") {
        return Err(format!(
            "apt-get is not available on this machine; install {} with the system's package manager, then run `cargo xtask test` again",
            packages.join(" ")
        ));
    }
    let root = root_access();
    if root == Root::Impossible {
        return Err(format!(
            "installing {} needs root (not root, and no password-less sudo); run this, then `cargo xtask test` again:\n    {}",
            packages.join(" "),
            manual_command(packages)
        ));
    }
    if !APT_UPDATED.swap(true, Ordering::SeqCst) {
        run(&mut as_root(root, "apt-get", &["update"]))?;
    }
    let mut args = vec!["install", "-y"];
    args.extend_from_slice(packages);
    run(&mut as_root(root, "apt-get", &args))
}

/// The Python interpreter the checks run with, after making sure it imports
/// the reference libraries. pip runs only when an import fails, so repeated
/// local runs stay fast.
pub fn python_with_modules() -> Result<PathBuf, String> {
    let import = format!("import {}", PYTHON_MODULES.join(", "));
    let system = PathBuf::from("python3");
    if imports(&system, &import) {
        return Ok(system);
    }
    let venv = venv_dir();
    let venv_python = venv.join("bin").join("python3");
    if imports(&venv_python, &import) {
        println!("python: {}", relative(&venv_python));
        return Ok(venv_python);
    }
    println!(
        "python modules missing; installing {}",
        PYTHON_MODULES.join(" ")
    );
    // First choice: a virtual environment under target/, which leaves the
    // system Python alone. `--system-site-packages` reuses whatever the
    // system already has (say numpy), so pip downloads only what is missing.
    let made = venv_python.is_file()
        || run(Command::new("python3")
            .args(["-m", "venv", "--system-site-packages"])
            .arg(&venv))
        .is_ok();
    if made {
        let installed = run(Command::new(&venv_python)
            .args(["-m", "pip", "install", "--quiet"])
            .args(PYTHON_MODULES));
        if installed.is_ok() && imports(&venv_python, &import) {
            return Ok(venv_python);
        }
        println!(
            "the virtual environment {} did not work; installing into the system Python",
            relative(&venv)
        );
    } else {
        println!("`python3 -m venv` is not available; installing into the system Python");
    }
    let install = |extra: &[&str]| {
        run(Command::new("python3")
            .args(["-m", "pip", "install", "--quiet"])
            .args(extra)
            .args(PYTHON_MODULES))
    };
    if let Err(first) = install(&[]) {
        // A Python whose packages the system manages (Debian's) refuses a
        // plain `pip install`.
        println!("plain pip install failed ({first}); retrying with --break-system-packages");
        install(&["--break-system-packages"])?;
    }
    if imports(&system, &import) {
        Ok(system)
    } else {
        Err(format!(
            "`python3 -c \"{import}\"` still fails after pip install"
        ))
    }
}

/// The virtual environment for the Python checks: `<target dir>/python-venv`.
fn venv_dir() -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo_root().join("target"));
    target.join("python-venv")
}

fn imports(python: &Path, import: &str) -> bool {
    succeeds(Command::new(python).args(["-c", import]))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_manual_command_names_apt_get_and_every_package() {
        assert_eq!(
            manual_command(&["chromium"]),
            "sudo apt-get update && sudo apt-get install -y chromium"
        );
        assert_eq!(
            manual_command(&["nodejs", "npm"]),
            "sudo apt-get update && sudo apt-get install -y nodejs npm"
        );
    }

    #[test]
    fn root_commands_go_through_sudo_only_when_not_root() {
        let direct = as_root(Root::Already, "apt-get", &["install", "-y", "chromium"]);
        assert_eq!(direct.get_program(), "apt-get");
        assert_eq!(
            direct.get_args().collect::<Vec<_>>(),
            ["install", "-y", "chromium"]
        );
        let sudo = as_root(Root::Sudo, "apt-get", &["update"]);
        assert_eq!(sudo.get_program(), "sudo");
        assert_eq!(
            sudo.get_args().collect::<Vec<_>>(),
            [
                "-n",
                "env",
                "DEBIAN_FRONTEND=noninteractive",
                "apt-get",
                "update"
            ]
        );
    }

    #[test]
    fn the_venv_lives_under_the_target_directory() {
        assert!(venv_dir().ends_with("python-venv"));
        assert!(venv_dir().parent().is_some_and(
            |p| p.ends_with("target") || std::env::var_os("CARGO_TARGET_DIR").is_some()
        ));
    }
}
