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

mod reader;
mod writer;

pub use reader::{from_value, parse_disk_json};
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
            warnings: Vec::new(),
        }
    }
}

/// One problem found in a disk file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// Full dotted path of the field, e.g. `disk.gas_mass_msun` (or `(file)` for syntax errors).
    pub path: String,
    /// What is wrong, naming the value and the allowed range.
    pub message: String,
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
