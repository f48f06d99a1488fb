//! # nivalis-web
//!
//! The WebAssembly side of the Nivalis page, deliberately thin: it converts
//! the page's JavaScript disk object into the JSON value the disk-file reader
//! takes (so the page and the CLI validate with the same code and the same
//! messages), runs `nivalis_physics::Model::run`, keeps the last valid result,
//! draws the views into canvases through `nivalis-charts` and
//! `plotters-canvas`, answers hover readouts from the charts' layouts, and
//! builds the exports with `nivalis-exports` (byte-identical to the CLI's).
//! It does no physics of its own.
//!
//! Modules: [`session`] (plain Rust, tested natively: state; the snowline
//! table, summary and exports come from `nivalis-exports`), [`readout`]
//! (re-exports `nivalis_charts::readout`: the value under the pointer), [`planet`] (plain Rust: the planet panel's
//! forward model, inverse map, anchor and their exports), [`figures`] (plain
//! Rust: SVG/PNG files identical to `nivalis figure`), and, on wasm32 only,
//! `canvas` (plotters-canvas drawing and the one `putImageData` per map), the
//! exported [`Explorer`], `planet_js` (its planet and figure methods) and
//! `fields_js` (`fieldTable`, the disk file's field table for the controls).
//!
//! JavaScript names are camelCase (`updateFromText`, `snowlineTable`, ...);
//! DEVELOPERS.md lists the mapping.

pub mod commands;
pub mod display;
pub mod evolution_fit_js;
pub mod figures;
pub mod layers;
pub mod planet;
pub mod readout;
pub mod session;
pub mod transfer;
pub mod uncertainty_js;

#[cfg(target_arch = "wasm32")]
mod canvas;
#[cfg(target_arch = "wasm32")]
mod evolution_js;
#[cfg(target_arch = "wasm32")]
mod explorer;
#[cfg(target_arch = "wasm32")]
pub use explorer::Explorer;
#[cfg(target_arch = "wasm32")]
mod fields_js;
#[cfg(target_arch = "wasm32")]
mod planet_js;
