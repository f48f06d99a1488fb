//! The ice-balance stage: (structure, composition, ice constants) -> the phase
//! of every volatile in every sample (docs/model.md section 7).
//!
//! [`solve_place`] and [`solve_species_at`] are the stage functions for one
//! place; [`IceBalance::solve_into`] runs them over a whole [`DiskStructure`],
//! writing into buffers it keeps, so re-solving the same grid with new ice
//! parameters allocates nothing. `Model::run`, `Model::midplane_at` and the
//! anchor's snowline probe all go through these functions.

use crate::balance::{AgedIceState, BalanceConstants};
use crate::composition::Composition;
use crate::species::{Species, SPECIES_COUNT};
use crate::structure::{Column, DiskStructure};

/// The physical state of one place that the ice balance needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Place {
    /// Gas (= dust) temperature [K].
    pub temperature_k: f64,
    /// Gas mass density [g cm^-3].
    pub density_g_cm3: f64,
    /// H nuclei per cm^3.
    pub hydrogen_density_cm3: f64,
    /// FUV photon flux [photons cm^-2 s^-1].
    pub fuv_photon_flux_cm2_s: f64,
    /// Cosmic-ray ionisation rate [s^-1].
    pub ionization_rate_s: f64,
}

impl Place {
    /// Sample `k` of a column (or of the flat per-sample fields of a structure).
    pub fn of(samples: &Column, k: usize) -> Place {
        Place {
            temperature_k: samples.temperature_k[k],
            density_g_cm3: samples.density_g_cm3[k],
            hydrogen_density_cm3: samples.hydrogen_density_cm3[k],
            fuv_photon_flux_cm2_s: samples.fuv_photon_flux_cm2_s[k],
            ionization_rate_s: samples.ionization_rate_s[k],
        }
    }
}

/// The ice of every species at one place, with `totals_per_h` the total (gas + ice) abundance
/// per H of each species there: [`BalanceConstants::solve_aged`] with N = x n_H
/// (docs/model.md section 7).
#[inline]
pub fn solve_place(
    balance: &BalanceConstants,
    place: &Place,
    totals_per_h: &[f64; SPECIES_COUNT],
) -> [AgedIceState; SPECIES_COUNT] {
    let sample = balance.sample(
        place.temperature_k,
        place.density_g_cm3,
        place.fuv_photon_flux_cm2_s,
        place.ionization_rate_s,
    );
    let n_h = place.hydrogen_density_cm3;
    std::array::from_fn(|i| balance.solve_aged(&sample, i, totals_per_h[i] * n_h))
}

/// The ice of one species (index `i`) at one place, `molecules_per_h` its total abundance per H:
/// the same numbers as entry `i` of [`solve_place`].
#[inline]
pub fn solve_species_at(
    balance: &BalanceConstants,
    place: &Place,
    i: usize,
    molecules_per_h: f64,
) -> AgedIceState {
    let sample = balance.sample(
        place.temperature_k,
        place.density_g_cm3,
        place.fuv_photon_flux_cm2_s,
        place.ionization_rate_s,
    );
    balance.solve_aged(&sample, i, molecules_per_h * place.hydrogen_density_cm3)
}

/// The solved ice balance on a grid: per species and sample, the ice fraction at the disk's age,
/// its equilibrium, the equilibration time and whether the ice is out of equilibrium.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct IceBalance {
    samples: usize,
    // Flat, species-major: index species * samples + sample.
    ice_fraction: Vec<f64>,
    equilibrium_ice_fraction: Vec<f64>,
    equilibration_time_s: Vec<f64>,
    out_of_equilibrium: Vec<bool>,
}

impl IceBalance {
    /// Solve the ice balance in every sample of `structure`.
    pub fn solve(
        structure: &DiskStructure,
        composition: &Composition,
        balance: &BalanceConstants,
    ) -> IceBalance {
        let mut ices = IceBalance::default();
        ices.solve_into(structure, composition, balance);
        ices
    }

    /// Re-solve in place, reusing the buffers (no allocation when the grid size is unchanged).
    pub fn solve_into(
        &mut self,
        structure: &DiskStructure,
        composition: &Composition,
        balance: &BalanceConstants,
    ) {
        let n = structure.samples.temperature_k.len();
        let total = SPECIES_COUNT * n;
        self.samples = n;
        self.ice_fraction.resize(total, 0.0);
        self.equilibrium_ice_fraction.resize(total, 0.0);
        self.equilibration_time_s.resize(total, f64::NAN);
        self.out_of_equilibrium.resize(total, false);
        let spc = structure.samples_per_column;
        for k in 0..n {
            let totals = composition.species_per_h_in_cell(k / spc);
            let states = solve_place(balance, &Place::of(&structure.samples, k), &totals);
            for (i, state) in states.iter().enumerate() {
                let idx = i * n + k;
                self.ice_fraction[idx] = state.ice_fraction;
                self.equilibrium_ice_fraction[idx] = state.equilibrium_ice_fraction;
                self.equilibration_time_s[idx] = state.equilibration_time_s;
                self.out_of_equilibrium[idx] = state.out_of_equilibrium;
            }
        }
    }

    /// Number of samples per species.
    pub fn sample_count(&self) -> usize {
        self.samples
    }

    fn range(&self, species: Species) -> std::ops::Range<usize> {
        let base = species.index() * self.samples;
        base..base + self.samples
    }

    /// Ice fraction at the disk's age of `species` in every sample (flat sample index).
    pub fn ice_fraction(&self, species: Species) -> &[f64] {
        &self.ice_fraction[self.range(species)]
    }

    /// Equilibrium ice fraction (the long-time limit) of `species` in every sample.
    pub fn equilibrium_ice_fraction(&self, species: Species) -> &[f64] {
        &self.equilibrium_ice_fraction[self.range(species)]
    }

    /// Equilibration time [s] of `species` in every sample (NaN where undefined: step model, no
    /// grains or no molecules).
    pub fn equilibration_time_s(&self, species: Species) -> &[f64] {
        &self.equilibration_time_s[self.range(species)]
    }

    /// Whether `species` is out of equilibrium at the disk's age in every sample (equilibration
    /// time longer than the age, or f_ice still more than 0.01 from its equilibrium).
    pub fn out_of_equilibrium(&self, species: Species) -> &[bool] {
        &self.out_of_equilibrium[self.range(species)]
    }
}
