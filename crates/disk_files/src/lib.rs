//! # nivalis-disk-files
//!
//! Reads, validates and writes disk description files in the `nivalis-disk/1`
//! JSON format (`docs/disk-file.md`). Every field is optional; a missing
//! field takes the default of [`ModelParameters::defaults`], whose docs name
//! each default's source. Validation happens once, here, into the typed
//! parameters the physics core takes; every problem of a file is reported at
//! once, each naming the full field path, the value and the allowed range.
//!
//! ```
//! let file = nivalis_disk_files::parse_disk_json(r#"{"star": {"luminosity_lsun": 2}}"#).unwrap();
//! assert_eq!(file.parameters.star.luminosity_lsun, 2.0);
//! let bad = nivalis_disk_files::parse_disk_json(r#"{"disk": {"gass_mass_msun": 1}}"#).unwrap_err();
//! assert_eq!(bad.to_string(), "disk.gass_mass_msun: unknown field; did you mean gas_mass_msun?");
//! ```
//!
//! Every field is one entry of the table in [`fields`] (path, unit, range
//! with its reason, default with its source, label, slider); the reader, the
//! writer's tests, the page's controls and the docs' tests all use it. Tools
//! working on dotted paths use [`field_by_path`], [`suggest_path`] and
//! [`apply_setting`].

mod evolution;
pub mod fields;
pub mod fragment;
mod json;
mod reader;
mod set_path;
pub mod uncertainty;
mod writer;

pub use evolution::{evolution_to_value, read_evolution, MAX_STAR_TRACK_ROWS};
pub use fields::{
    apply_setting, field_by_path, fields, fields_json, get_at_path, parse_value_text, set_at_path,
    suggest_path, unknown_path, Field, Kind, Range, Slider,
};
pub use json::{
    cap_problems, parse_json_text, MAX_DISK_FILE_BYTES, MAX_LISTED_PROBLEMS, MAX_NESTING_DEPTH,
};
pub use reader::{from_value, parse_disk_json};
pub use set_path::{apply_assignments, is_unknown_field, parse_assignment, set_path};
pub use writer::{to_json_string, to_value};

use nivalis_physics::ModelParameters;
use std::fmt;

/// The format identifier written to and accepted in the `schema` field.
pub const SCHEMA: &str = "nivalis-disk/1";

/// A validated disk file.
#[derive(Debug, Clone, PartialEq)]
pub struct DiskFile {
    /// Free-text name of the scenario (default empty).
    pub name: String,
    /// Free-text notes, e.g. where each value comes from (default empty).
    pub notes: String,
    /// The validated model inputs.
    pub parameters: ModelParameters,
    /// The optional `evolution` section (docs/disk-file.md), `None` when the file has none.
    pub evolution: Option<nivalis_physics::evolution::EvolutionParameters>,
    /// The optional `uncertainty` section (docs/disk-file.md, "Uncertainty") as
    /// written, after [`crate::uncertainty`] checked it; `None` when the file has
    /// none or an empty one. Kept so that a disk saved or anchored by any front
    /// end keeps its uncertain inputs (the writer writes it back last).
    pub uncertainty: Option<serde_json::Value>,
    /// Things worth knowing that do not stop a run (e.g. edges that cut off most of
    /// the surface-density profile; the new meaning of `disk.gas_mass_msun`).
    pub warnings: Vec<Problem>,
}

impl DiskFile {
    /// The default disk (what `{}` means).
    pub fn defaults() -> DiskFile {
        DiskFile {
            name: String::new(),
            notes: String::new(),
            parameters: ModelParameters::defaults(),
            evolution: None,
            uncertainty: None,
            warnings: Vec::new(),
        }
    }
}

/// One problem found in a disk file (or in a request checked like one), as
/// data: the field, the offending value, what is allowed, and the sentence
/// shown to a person. Front ends place a problem beside its field from
/// `path`; no code needs to parse `message`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// Full dotted path of the field, e.g. `disk.gas_mass_msun` (or `(file)` for syntax errors).
    pub path: String,
    /// The offending value as short JSON text (at most [`MAX_SHOWN_CHARS`] characters), if there is one.
    pub value: Option<String>,
    /// The allowed range or options in words, e.g. `> 0 and finite` or `in [8, 4096]`, if there is one.
    pub allowed: Option<String>,
    /// What is wrong, naming the value and the allowed range.
    pub message: String,
}

/// Memory a model takes per sample (radial cell x (vertical cells + 1)), in
/// bytes: 26 doubles (the structure's per-sample fields and the ice fraction and
/// equilibration time of each of the nine species); measured as 205 bytes per
/// sample from the peak resident size of `nivalis structure` at 512 x 255 and
/// 1024 x 255 (release build). Per-cell exports (`nivalis map`) take up to about
/// 4x more while they are written.
pub const MODEL_BYTES_PER_SAMPLE: usize = 26 * 8;

/// Largest model the reader accepts: 1 GiB, so a large grid is refused with a
/// clear message before the run instead of aborting when memory runs out.
pub const MAX_MODEL_BYTES: usize = 1 << 30;

/// Longest key or value shown in a problem, in characters; longer text is cut
/// and ends in `...`, so a huge bad input cannot produce a huge message.
pub const MAX_SHOWN_CHARS: usize = 80;

/// `text` cut to at most [`MAX_SHOWN_CHARS`] characters (ending in `...` when cut).
pub fn shorten(text: &str) -> String {
    if text.chars().count() <= MAX_SHOWN_CHARS {
        text.to_string()
    } else {
        let cut: String = text.chars().take(MAX_SHOWN_CHARS - 3).collect();
        format!("{cut}...")
    }
}

impl Problem {
    /// A problem with only a path and a message.
    pub fn new(path: impl Into<String>, message: impl Into<String>) -> Problem {
        Problem {
            path: path.into(),
            value: None,
            allowed: None,
            message: message.into(),
        }
    }

    /// The same problem recording the offending value (shortened).
    pub fn with_value(mut self, value: impl AsRef<str>) -> Problem {
        self.value = Some(shorten(value.as_ref()));
        self
    }

    /// The same problem recording what is allowed.
    pub fn with_allowed(mut self, allowed: impl Into<String>) -> Problem {
        self.allowed = Some(allowed.into());
        self
    }

    /// A core (physics) error as a problem: its field, value and allowed range
    /// come from the error's own data; an error without a field is attached to `(model)`.
    pub fn from_physics(error: &nivalis_physics::PhysicsError) -> Problem {
        Problem {
            path: error.path().unwrap_or("(model)").to_string(),
            value: error.value().map(|v| shorten(&v)),
            allowed: error.allowed(),
            message: if error.path().is_some() {
                error.detail()
            } else {
                error.to_string()
            },
        }
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.path, self.message)
    }
}

/// Every problem of one file (never empty).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problems(pub Vec<Problem>);

impl fmt::Display for Problems {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, p) in self.0.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            write!(f, "{p}")?;
        }
        Ok(())
    }
}

impl std::error::Error for Problems {}
