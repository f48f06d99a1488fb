//! # nivalis-physics
//!
//! The pure-Rust physics core of Nivalis: the structure of a protoplanetary
//! disk in radius and height, the freeze-out/desorption balance of nine
//! volatiles in every cell, the element budget and the C/O ratios of gas, ices
//! and solids, snowlines and snow surfaces.
//!
//! It does no I/O, knows nothing of files, WebAssembly or plotting, and keeps
//! no global state. Everything inside is cgs; inputs are [`ModelParameters`]
//! (validated by the disk-file reader), the main type is [`Model`].
//!
//! A run is three stages, each its own type: [`DiskStructure`] (grid, temperature, density,
//! radiation fields; also from a given surface-density profile), [`Composition`] (totals per
//! radius of every volatile and refractory carrier) and [`IceBalance`] (the phase of every
//! volatile in every sample). [`Model::set_ices`] and [`Model::set_composition`] re-run only the
//! stages an edit touches.
//!
//! ```
//! use nivalis_physics::{Model, ModelParameters, Species};
//! let model = Model::run(&ModelParameters::defaults()).unwrap();
//! let water = model.snowlines(Species::H2O);
//! assert!(!water.is_empty());
//! // An ice-only edit reuses the structure.
//! let mut ices = model.parameters().ices.clone();
//! ices.sticking = 0.9;
//! let edited = model.with_ices(&ices);
//! assert_eq!(edited.parameters().ices.sticking, 0.9);
//! ```

#![deny(missing_docs)]
// Units are written in brackets throughout the docs ("Radius [cm]"), which rustdoc
// would read as links to items named `cm`; they are not links.
#![allow(rustdoc::broken_intra_doc_links)]

pub mod anchor;
pub mod balance;
pub mod budget;
pub mod composition;
pub mod error;
pub mod evolution;
pub mod finite;
pub mod ices;
pub mod math;
pub mod model;
pub mod opacity;
pub mod params;
pub mod planet;
pub mod random;
pub mod references;
pub mod rerun;
pub mod snowlines;
pub mod species;
pub mod star;
pub mod statistics;
pub mod structure;
pub mod uncertainty;
pub mod units;

pub use composition::Composition;
pub use error::PhysicsError;
pub use ices::IceBalance;
pub use model::{LocalMidplane, MidplaneProfile, Model, Ratios};
pub use params::{Element, ModelParameters};
pub use rerun::{rerun, Rerun};
pub use snowlines::{CrossingDirection, SnowSurface, Snowline};
pub use species::{BindingEnergySet, Species, SPECIES_COUNT};
pub use structure::{DiskStructure, Sample};
