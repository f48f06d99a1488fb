//! `cargo xtask dist`: builds the single-file page `target/site/nivalis.html`
//! from `crates/web` (compiled to wasm32-unknown-unknown) and `web/`.
//!
//! Placeholder: the page engineer replaces the body of [`dist`] when the web
//! crate lands. Until then it reports that the page cannot be built, and the
//! other commands react to that: `open` shows the CLI's output instead and
//! `test` skips the page build while `crates/web/Cargo.toml` is absent.
//! The signature is the contract the other commands rely on.

use std::path::PathBuf;

/// Builds the page and returns the path of the finished HTML file.
/// `release` selects the size-optimised `wasm-release` profile; `false` is a
/// faster unoptimised build for development.
pub fn dist(release: bool) -> Result<PathBuf, String> {
    let _ = release;
    Err("the web page crate does not exist yet".to_string())
}
