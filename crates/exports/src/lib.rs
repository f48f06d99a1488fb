//! # nivalis-exports
//!
//! Everything Nivalis writes for a user, built once so the CLI and the page
//! produce byte-identical files: tables of the radial profile, the structure
//! and r-z maps ([`tables`]), written as CSV, ECSV or JSON ([`formats`]);
//! snowline listings ([`snowlines`]); the methods used with their references
//! ([`methods`]); the provenance every file carries ([`provenance`]); and the
//! planet tools' requests, views, exports and methods text ([`planet_tools`]);
//! the names of the exports and what each writes ([`kinds`]); the page's
//! snowline table and result summary ([`page_tables`]).

pub mod bibtex;
pub mod evolution;
pub mod evolution_fit;
pub mod evolution_methods;
pub mod figures;
pub mod formats;
pub mod kinds;
pub mod methods;
pub mod page_tables;
pub mod planet;
pub mod planet_tools;
pub mod provenance;
pub mod snowlines;
pub mod tables;
pub mod uncertainty;

pub use formats::{to_csv, to_ecsv, to_json, Format};
pub use kinds::{export_text, table_text, ExportKind};
pub use provenance::Provenance;
pub use tables::{
    elements_table, map_table, model_table, structure_table, MapQuantity, Phase, Table,
};
