//! Provenance: the program version, the resolved disk file and a short hash of
//! it, carried by every exported file so a result can be traced and remade.

use nivalis_disk_files::{to_json_string, to_value, DiskFile};
use sha2::{Digest, Sha256};

/// Program name and version, e.g. "nivalis 0.1.0".
pub fn program_version() -> String {
    format!("nivalis {}", env!("CARGO_PKG_VERSION"))
}

/// Where a result comes from.
#[derive(Debug, Clone, PartialEq)]
pub struct Provenance {
    /// "nivalis X.Y.Z".
    pub program: String,
    /// The resolved disk file exactly as `nivalis` would save it.
    pub disk_json: String,
    /// The resolved disk as a JSON value, built from the typed file (never re-parsed from text).
    pub disk: serde_json::Value,
    /// The first 12 hex digits of the SHA-256 of `disk_json` (check with `sha256sum` on the saved disk file).
    pub disk_hash: String,
}

impl Provenance {
    /// Provenance of a disk file.
    pub fn of(file: &DiskFile) -> Provenance {
        let disk_json = to_json_string(file);
        let digest = Sha256::digest(disk_json.as_bytes());
        let disk_hash = digest.iter().take(6).map(|b| format!("{b:02x}")).collect();
        Provenance {
            program: program_version(),
            disk_json,
            disk: to_value(file),
            disk_hash,
        }
    }

    /// The resolved disk as a JSON value.
    pub fn disk_value(&self) -> serde_json::Value {
        self.disk.clone()
    }
}
