//! The composition stage: the total (gas + ice) abundance per H nucleus of
//! every volatile species and every refractory carrier, per radial cell
//! (docs/model.md section 8).
//!
//! Today the totals are uniform in radius, built once from the star's elements
//! by [`Carriers::new`]; the accessors already take the radial cell, so a
//! radius-dependent composition (transport) changes this type, not its users.

use crate::budget::{Carriers, PhaseAbundances};
use crate::error::PhysicsError;
use crate::params::{Element, ModelParameters, ELEMENT_COUNT};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};
use crate::star::stellar_abundances_per_h;
use crate::structure::DiskStructure;

/// The star's C/O: the number ratio x_C / x_O of its abundances per H (docs/model.md
/// section 1). The one place it is derived.
pub fn star_c_to_o(stellar_per_h: &[f64; ELEMENT_COUNT]) -> f64 {
    stellar_per_h[Element::C as usize] / stellar_per_h[Element::O as usize]
}

/// Totals per radius of each volatile species and each refractory carrier.
#[derive(Debug, Clone, PartialEq)]
pub struct Composition {
    carriers: Carriers,
    radial_cells: usize,
    /// Per radial cell, the totals per H of every species when they vary in radius
    /// ([`Composition::with_species_per_h_per_cell`]); `None` for the uniform composition.
    per_cell: Option<Vec<[f64; SPECIES_COUNT]>>,
}

impl Composition {
    /// The uniform composition of `parameters` on the radial grid of `structure`: the star's
    /// elements divided among carriers ([`Carriers::new`], docs/model.md section 8), with the
    /// refractory carbon released inside the early soot line of the structure (section 8,
    /// irreversible soot line). Errors: those of [`Carriers::new`] (for example a star with more
    /// carbon than the carbon carriers can hold), with the field they concern.
    pub fn uniform(
        parameters: &ModelParameters,
        table: &SpeciesTable,
        structure: &DiskStructure,
    ) -> Result<Composition, PhysicsError> {
        Composition::uniform_on(
            parameters,
            table,
            structure.radial_cells,
            structure.early_soot_line_radius_cm,
        )
    }

    /// [`Composition::uniform`] from the two things it reads of the structure: the number of
    /// radial cells and the early soot line.
    pub(crate) fn uniform_on(
        parameters: &ModelParameters,
        table: &SpeciesTable,
        radial_cells: usize,
        early_soot_line_radius_cm: Option<f64>,
    ) -> Result<Composition, PhysicsError> {
        let mut carriers = Carriers::new(
            stellar_abundances_per_h(&parameters.star),
            &parameters.composition,
            table,
        )?;
        carriers.carbon_released_within_cm = early_soot_line_radius_cm.unwrap_or(0.0);
        Ok(Composition {
            carriers,
            radial_cells,
            per_cell: None,
        })
    }

    /// The composition of `parameters` with the totals per H of every volatile species given per
    /// radial cell (`totals[j]`, `Species::ALL` order), for example transported by the evolving
    /// disk (docs/model.md section 12); the refractory carriers stay those of
    /// [`Composition::uniform`]. Errors (`OutOfRange`, field `species_per_h`): not one row per
    /// radial cell of `structure`, or a value not finite and >= 0.
    pub fn with_species_per_h_per_cell(
        parameters: &ModelParameters,
        table: &SpeciesTable,
        structure: &DiskStructure,
        totals: &[[f64; SPECIES_COUNT]],
    ) -> Result<Composition, PhysicsError> {
        if totals.len() != structure.radial_cells {
            return Err(PhysicsError::OutOfRange {
                name: "species_per_h",
                value: totals.len() as f64,
                allowed: "one row per radial cell",
            });
        }
        if let Some(&bad) = totals
            .iter()
            .flatten()
            .find(|x| !(x.is_finite() && **x >= 0.0))
        {
            return Err(PhysicsError::OutOfRange {
                name: "species_per_h",
                value: bad,
                allowed: "finite and >= 0",
            });
        }
        let mut c = Composition::uniform(parameters, table, structure)?;
        c.per_cell = Some(totals.to_vec());
        Ok(c)
    }

    /// Whether this is the uniform composition of [`Composition::uniform`] (no per-cell totals).
    pub(crate) fn is_uniform(&self) -> bool {
        self.per_cell.is_none()
    }

    /// The carriers of cell `j` (the per-cell totals in place of the uniform ones).
    pub(crate) fn carriers_in_cell(&self, j: usize) -> std::borrow::Cow<'_, Carriers> {
        match &self.per_cell {
            None => std::borrow::Cow::Borrowed(&self.carriers),
            Some(cells) => {
                let mut c = self.carriers.clone();
                c.species_per_h = cells[j];
                std::borrow::Cow::Owned(c)
            }
        }
    }

    /// Number of radial cells the composition is defined on.
    pub fn radial_cells(&self) -> usize {
        self.radial_cells
    }

    /// The element carriers (uniform today: the same in every radial cell).
    pub fn carriers(&self) -> &Carriers {
        &self.carriers
    }

    /// The star's abundances per H (C, O, N, S, Si, Mg, Fe).
    pub fn stellar_per_h(&self) -> &[f64; ELEMENT_COUNT] {
        &self.carriers.stellar_per_h
    }

    /// The star's C/O (number ratio, [`star_c_to_o`]).
    pub fn star_c_to_o(&self) -> f64 {
        star_c_to_o(&self.carriers.stellar_per_h)
    }

    /// Total (gas + ice) abundance per H of `species` in radial cell `j`.
    pub fn species_per_h(&self, species: Species, j: usize) -> f64 {
        debug_assert!(j < self.radial_cells.max(1));
        match &self.per_cell {
            None => self.carriers.species_per_h[species.index()],
            Some(cells) => cells[j][species.index()],
        }
    }

    /// Totals per H of every volatile species in radial cell `j`, `Species::ALL` order.
    pub fn species_per_h_in_cell(&self, j: usize) -> [f64; SPECIES_COUNT] {
        debug_assert!(j < self.radial_cells.max(1));
        match &self.per_cell {
            None => self.carriers.species_per_h,
            Some(cells) => cells[j],
        }
    }

    /// Whether `species` is present anywhere in the disk (x > 0).
    pub fn is_present(&self, species: Species) -> bool {
        match &self.per_cell {
            None => self.carriers.species_per_h[species.index()] > 0.0,
            Some(cells) => cells.iter().any(|c| c[species.index()] > 0.0),
        }
    }

    /// Element abundances per H in each phase in radial cell `j` at radius `radius_cm` and
    /// temperature `temperature_k`, with the ice fraction of species `i` given by `ice_fraction`
    /// ([`Carriers::phases`], docs/model.md section 8).
    pub fn phases(
        &self,
        j: usize,
        temperature_k: f64,
        radius_cm: f64,
        ice_fraction: impl Fn(usize) -> f64,
    ) -> PhaseAbundances {
        debug_assert!(j < self.radial_cells.max(1));
        self.carriers_in_cell(j)
            .phases(temperature_k, radius_cm, ice_fraction)
    }

    /// Solid (ice + refractory) mass per H nucleus [amu] in radial cell `j`
    /// ([`Carriers::solid_mass_per_h_amu`]).
    pub fn solid_mass_per_h_amu(
        &self,
        j: usize,
        phases: &PhaseAbundances,
        ice_fraction: impl Fn(usize) -> f64,
    ) -> f64 {
        debug_assert!(j < self.radial_cells.max(1));
        self.carriers_in_cell(j)
            .solid_mass_per_h_amu(phases, ice_fraction)
    }
}
