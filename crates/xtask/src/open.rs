//! `cargo xtask open`: builds the page with [`crate::dist::dist`] and opens
//! `target/site/nivalis.html` with the system's opener (`xdg-open` on Linux and
//! the BSDs, `open` on macOS, `cmd /c start` on Windows). Without an opener, or
//! without a display, it prints the file's path and its `file://` URL instead.
//!
//! While the page does not exist yet (no `crates/web`, or the build fails), it
//! says so plainly and shows what the project can already compute: the CLI's
//! structure profile of the default disk.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::{cargo, on_path, relative, repo_root, run, web_crate_exists};

pub fn open(release: bool) -> Result<(), String> {
    if !web_crate_exists() {
        println!(
            "the page is not built yet: crates/web does not exist, so there is nothing to open."
        );
        return cli_fallback();
    }
    match crate::dist::dist(release) {
        Ok(page) => open_file(&page),
        Err(message) => {
            println!("the page is not built yet: cargo xtask dist failed: {message}");
            cli_fallback()?;
            // The fallback is a courtesy; the failed build is still an error.
            Err(format!("page build failed: {message}"))
        }
    }
}

/// Shows the file's location and hands it to the system opener when one can work here.
fn open_file(page: &Path) -> Result<(), String> {
    let page = page
        .canonicalize()
        .map_err(|e| format!("built page {} is missing: {e}", page.display()))?;
    println!("page: {}", page.display());
    println!("url:  {}", file_url(&page));
    let Some(mut opener) = system_opener(&page) else {
        println!("no system opener available here; open the URL above in a browser");
        return Ok(());
    };
    if let Err(message) = run(&mut opener) {
        println!("the opener did not work ({message}); open the URL above in a browser");
    }
    Ok(())
}

/// The platform's "open this file with its default program" command, or
/// `None` where it cannot work: CI, or a Unix session without a display.
fn system_opener(page: &Path) -> Option<Command> {
    if std::env::var_os("CI").is_some() {
        return None;
    }
    if cfg!(target_os = "macos") {
        let mut command = Command::new("open");
        command.arg(page);
        Some(command)
    } else if cfg!(windows) {
        // `start` is built into cmd; its first quoted argument is a window
        // title, hence the empty one.
        let mut command = Command::new("cmd");
        command.args(["/c", "start", ""]).arg(page);
        Some(command)
    } else {
        let has_display =
            std::env::var_os("DISPLAY").is_some() || std::env::var_os("WAYLAND_DISPLAY").is_some();
        if has_display && on_path("xdg-open") {
            let mut command = Command::new("xdg-open");
            command.arg(page);
            Some(command)
        } else {
            None
        }
    }
}

/// A `file://` URL for an absolute path, percent-encoding everything but
/// unreserved characters and separators (RFC 3986 section 2.3; RFC 8089 for
/// the file scheme). Windows paths become `file:///C:/...`.
fn file_url(path: &Path) -> String {
    let text = path.to_string_lossy().replace('\\', "/");
    // canonicalize() on Windows yields verbatim paths (`\\?\C:\...`); the prefix is not part of a URL.
    let text = text.strip_prefix("//?/").unwrap_or(&text);
    let mut url = String::from("file://");
    if !text.starts_with('/') {
        url.push('/');
    }
    for byte in text.bytes() {
        match byte {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'.' | b'_' | b'~' | b'/' | b':' => {
                url.push(byte as char)
            }
            other => url.push_str(&format!("%{other:02X}")),
        }
    }
    url
}

/// Until the page exists: the CLI's structure profile of the default disk.
fn cli_fallback() -> Result<(), String> {
    let root = repo_root();
    if !root.join("crates/cli/Cargo.toml").is_file() {
        return Err(
            "the CLI (crates/cli) does not exist yet either, so there is nothing to show"
                .to_string(),
        );
    }
    let disk = default_disk(&root)?;
    println!(
        "showing the CLI's structure profile of the default disk ({}) instead:\n",
        relative(&disk)
    );
    run(cargo()
        .current_dir(&root)
        .args(["run", "--quiet", "-p", "nivalis-cli", "--", "structure"])
        .arg(relative(&disk)))
}

/// The demo disk that is the default disk written out in full (its `notes` say so).
const DEFAULT_DEMO_DISK: &str = "demo_disks/young_sun.json";

/// The disk file to show: [`DEFAULT_DEMO_DISK`] when it exists, else `{}`
/// written to a temporary file, which the disk-file format defines as the
/// default disk (docs/disk-file.md). Another demo disk would not do: the message
/// promises the default disk.
fn default_disk(root: &Path) -> Result<PathBuf, String> {
    let demo = root.join(DEFAULT_DEMO_DISK);
    if demo.is_file() {
        return Ok(demo);
    }
    let file = std::env::temp_dir().join("nivalis-default-disk.json");
    std::fs::write(&file, "{}\n").map_err(|e| format!("cannot write {}: {e}", file.display()))?;
    Ok(file)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn file_urls_encode_spaces_and_keep_separators() {
        assert_eq!(
            file_url(Path::new("/home/a b/site/nivalis.html")),
            "file:///home/a%20b/site/nivalis.html"
        );
        assert_eq!(
            file_url(Path::new("/x/caf\u{e9}.html")),
            "file:///x/caf%C3%A9.html"
        );
    }

    #[test]
    fn default_disk_is_the_full_default_demo_disk_when_present() {
        let root = std::env::temp_dir().join(format!("xtask-default-disk-{}", std::process::id()));
        std::fs::create_dir_all(root.join("demo_disks")).unwrap();
        std::fs::write(root.join("demo_disks/a_cold_disk.json"), "{}").unwrap();
        std::fs::write(root.join(DEFAULT_DEMO_DISK), "{}").unwrap();
        assert_eq!(default_disk(&root).unwrap(), root.join(DEFAULT_DEMO_DISK));
        std::fs::remove_dir_all(&root).unwrap();
    }

    #[test]
    fn default_disk_without_demo_disks_is_an_empty_object() {
        let root = std::env::temp_dir().join(format!("xtask-no-demo-disks-{}", std::process::id()));
        std::fs::create_dir_all(root.join("demo_disks")).unwrap();
        std::fs::write(root.join("demo_disks/a_cold_disk.json"), "{}").unwrap();
        let disk = default_disk(&root).unwrap();
        assert_eq!(std::fs::read_to_string(&disk).unwrap(), "{}\n");
        std::fs::remove_dir_all(&root).unwrap();
    }
}
