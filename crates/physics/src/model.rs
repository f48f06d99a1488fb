//! The full model: structure, ice balance in every sample, element budget,
//! snowlines. [`Model::run`] is the one entry point the CLI and the page call.

use crate::balance::{species_properties, BalanceConstants, SpeciesProperties};
use crate::budget::{
    defined_ratio, one_within_rounding, zero_below_rounding, Carriers, PhaseAbundances,
};
use crate::error::PhysicsError;
use crate::params::{DesorptionModel, Element, ModelParameters};
use crate::snowlines::{crossings, snow_surface, SnowSurface, Snowline};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};
use crate::star::stellar_abundances_per_h;
use crate::structure::{column, midplane_temperature, surface_density_g_cm2, DiskStructure};
use crate::units::AU_CM;

/// A computed disk.
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    /// The inputs.
    pub parameters: ModelParameters,
    /// Built-in species data.
    pub table: SpeciesTable,
    /// Resolved species properties.
    pub species: [SpeciesProperties; SPECIES_COUNT],
    /// Element carriers.
    pub carriers: Carriers,
    /// Physical structure.
    pub structure: DiskStructure,
    balance: BalanceConstants,
    /// Ice fraction at the disk's age per species and sample: index `species * n_samples + sample`.
    pub ice_fraction: Vec<f64>,
    /// Equilibrium ice fraction (the long-time limit), same indexing.
    pub equilibrium_ice_fraction: Vec<f64>,
    /// Equilibration time [s] per species and sample (NaN where undefined).
    pub equilibration_time_s: Vec<f64>,
    /// Whether the ice is out of equilibrium at the disk's age (equilibration time longer than the
    /// age, or f_ice still more than 0.01 from its equilibrium), same indexing.
    pub out_of_equilibrium: Vec<bool>,
}

/// Midplane state at one radius, for the planet tools.
#[derive(Debug, Clone, PartialEq)]
pub struct LocalMidplane {
    /// Radius [cm].
    pub radius_cm: f64,
    /// Midplane temperature [K].
    pub temperature_k: f64,
    /// Ice fraction per species (at the disk's age).
    pub ice_fraction: [f64; SPECIES_COUNT],
    /// Per species: out of equilibrium at the disk's age (see [`Model::out_of_equilibrium`]).
    pub out_of_equilibrium: [bool; SPECIES_COUNT],
    /// Element abundances per H in each phase.
    pub phases: PhaseAbundances,
    /// Solid mass per H nucleus [amu].
    pub solid_mass_per_h_amu: f64,
}

/// The radial (midplane) profile.
#[derive(Debug, Clone, PartialEq)]
pub struct MidplaneProfile {
    /// Radius [au].
    pub radius_au: Vec<f64>,
    /// Per radius: phases.
    pub phases: Vec<PhaseAbundances>,
    /// C/O of the gas.
    pub c_to_o_gas: Vec<Option<f64>>,
    /// C/O of the ices alone.
    pub c_to_o_ice: Vec<Option<f64>>,
    /// C/O of all solids (ice + refractory).
    pub c_to_o_solid: Vec<Option<f64>>,
    /// Gas C/H over the star's.
    pub c_to_h_gas_rel_star: Vec<Option<f64>>,
    /// Gas O/H over the star's.
    pub o_to_h_gas_rel_star: Vec<Option<f64>>,
}

/// Ratios of one set of phase abundances (undefined where the denominator is below 1e-9 of the star's).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ratios {
    /// Gas C/O.
    pub c_to_o_gas: Option<f64>,
    /// Ice C/O.
    pub c_to_o_ice: Option<f64>,
    /// Solid C/O.
    pub c_to_o_solid: Option<f64>,
    /// Gas C/H relative to the star.
    pub c_to_h_gas_rel_star: Option<f64>,
    /// Gas O/H relative to the star.
    pub o_to_h_gas_rel_star: Option<f64>,
}

impl Model {
    /// Run the whole model.
    pub fn run(parameters: &ModelParameters) -> Result<Model, PhysicsError> {
        let table = SpeciesTable::built_in();
        let mut carriers = Carriers::new(
            stellar_abundances_per_h(&parameters.star),
            &parameters.composition,
            &table,
        )?;
        let structure = DiskStructure::compute(parameters)?;
        carriers.carbon_released_within_cm = structure.early_soot_line_radius_cm.unwrap_or(0.0);
        let species = species_properties(parameters, &table);
        let balance = BalanceConstants::new(parameters, &species);
        let n = structure.samples.temperature_k.len();
        let mut ice_fraction = vec![0.0; SPECIES_COUNT * n];
        let mut equilibrium_ice_fraction = vec![0.0; SPECIES_COUNT * n];
        let mut equilibration_time_s = vec![f64::NAN; SPECIES_COUNT * n];
        let mut out_of_equilibrium = vec![false; SPECIES_COUNT * n];
        let s = &structure.samples;
        for k in 0..n {
            let sample = balance.sample(
                s.temperature_k[k],
                s.density_g_cm3[k],
                s.fuv_photon_flux_cm2_s[k],
                s.ionization_rate_s[k],
            );
            let n_h = s.hydrogen_density_cm3[k];
            for i in 0..SPECIES_COUNT {
                let state = balance.solve_aged(&sample, i, carriers.species_per_h[i] * n_h);
                ice_fraction[i * n + k] = state.ice_fraction;
                equilibrium_ice_fraction[i * n + k] = state.equilibrium_ice_fraction;
                equilibration_time_s[i * n + k] = state.equilibration_time_s;
                out_of_equilibrium[i * n + k] = state.out_of_equilibrium;
            }
        }
        let model = Model {
            parameters: parameters.clone(),
            table,
            species,
            carriers,
            structure,
            balance,
            ice_fraction,
            equilibrium_ice_fraction,
            equilibration_time_s,
            out_of_equilibrium,
        };
        // No NaN or infinity leaves a run (issue 15 item 5): a typed error names the likely input instead.
        crate::finite::check_finite(&model)?;
        Ok(model)
    }

    /// Number of samples (radial cells x (vertical cells + 1)).
    pub fn sample_count(&self) -> usize {
        self.structure.samples.temperature_k.len()
    }

    /// Ice fraction of species `species` at flat sample index `k`.
    pub fn ice_fraction_at(&self, species: Species, k: usize) -> f64 {
        self.ice_fraction[species.index() * self.sample_count() + k]
    }

    /// Whether species `species` at flat sample index `k` is out of equilibrium at the disk's age.
    pub fn out_of_equilibrium_at(&self, species: Species, k: usize) -> bool {
        self.out_of_equilibrium[species.index() * self.sample_count() + k]
    }

    /// Whether a snowline is out of equilibrium: either midplane cell bracketing its radius is.
    pub fn snowline_out_of_equilibrium(&self, species: Species, line: &Snowline) -> bool {
        let st = &self.structure;
        let j = st
            .radius_cm
            .partition_point(|&r| r < line.radius_cm)
            .min(st.radial_cells - 1);
        let lo = j.saturating_sub(1);
        self.out_of_equilibrium_at(species, st.index(lo, 0))
            || self.out_of_equilibrium_at(species, st.index(j, 0))
    }

    /// Phase abundances at flat sample index `k`.
    pub fn phases_at(&self, k: usize) -> PhaseAbundances {
        let n = self.sample_count();
        let radius_cm = self.structure.radius_cm[k / self.structure.samples_per_column];
        self.carriers
            .phases(self.structure.samples.temperature_k[k], radius_cm, |i| {
                self.ice_fraction[i * n + k]
            })
    }

    /// Ratios of a set of phase abundances.
    pub fn ratios(&self, ph: &PhaseAbundances) -> Ratios {
        let x = &self.carriers.stellar_per_h;
        let (c, o) = (Element::C as usize, Element::O as usize);
        // Carbon below 1e-9 of the star's is zero up to rounding (docs/model.md section 8).
        let carbon = |v: f64| zero_below_rounding(v, x[c]);
        Ratios {
            c_to_o_gas: defined_ratio(carbon(ph.gas[c]), ph.gas[o], x[o]),
            c_to_o_ice: defined_ratio(carbon(ph.ice[c]), ph.ice[o], x[o]),
            c_to_o_solid: defined_ratio(
                carbon(ph.ice[c] + ph.refractory[c]),
                ph.ice[o] + ph.refractory[o],
                x[o],
            ),
            c_to_h_gas_rel_star: Some(one_within_rounding(carbon(ph.gas[c]) / x[c])),
            o_to_h_gas_rel_star: Some(one_within_rounding(
                zero_below_rounding(ph.gas[o], x[o]) / x[o],
            )),
        }
    }

    /// The midplane (z = 0) radial profile.
    pub fn midplane_profile(&self) -> MidplaneProfile {
        let st = &self.structure;
        let mut p = MidplaneProfile {
            radius_au: st.radius_cm.iter().map(|r| r / AU_CM).collect(),
            phases: Vec::with_capacity(st.radial_cells),
            c_to_o_gas: Vec::with_capacity(st.radial_cells),
            c_to_o_ice: Vec::with_capacity(st.radial_cells),
            c_to_o_solid: Vec::with_capacity(st.radial_cells),
            c_to_h_gas_rel_star: Vec::with_capacity(st.radial_cells),
            o_to_h_gas_rel_star: Vec::with_capacity(st.radial_cells),
        };
        for j in 0..st.radial_cells {
            let ph = self.phases_at(st.index(j, 0));
            let r = self.ratios(&ph);
            p.phases.push(ph);
            p.c_to_o_gas.push(r.c_to_o_gas);
            p.c_to_o_ice.push(r.c_to_o_ice);
            p.c_to_o_solid.push(r.c_to_o_solid);
            p.c_to_h_gas_rel_star.push(r.c_to_h_gas_rel_star);
            p.o_to_h_gas_rel_star.push(r.o_to_h_gas_rel_star);
        }
        p
    }

    /// Midplane ice fractions of one species, per radius.
    pub fn midplane_ice_fraction(&self, species: Species) -> Vec<f64> {
        let st = &self.structure;
        (0..st.radial_cells)
            .map(|j| self.ice_fraction_at(species, st.index(j, 0)))
            .collect()
    }

    fn is_step_model(&self) -> bool {
        self.parameters.ices.desorption == DesorptionModel::FixedTemperature
    }

    /// Every snowline of a species, inner first. An absent species (x = 0) has none.
    /// Kinetic models: crossings of midplane f_ice = 0.5, linear in ln r. Step model:
    /// where T_mid = T_cond, ln T interpolated against ln r (docs/model.md section 7).
    pub fn snowlines(&self, species: Species) -> Vec<Snowline> {
        if self.carriers.species_per_h[species.index()] == 0.0 {
            return Vec::new();
        }
        let st = &self.structure;
        if self.is_step_model() {
            let t_cond = self.species[species.index()].condensation_temperature_k;
            crossings(
                &st.radius_cm,
                &st.midplane_temperature_k,
                t_cond,
                true,
                false,
            )
        } else {
            crossings(
                &st.radius_cm,
                &self.midplane_ice_fraction(species),
                0.5,
                false,
                true,
            )
        }
    }

    /// The snow surface of a species in radial cell `j`.
    pub fn snow_surface(&self, species: Species, j: usize) -> SnowSurface {
        let st = &self.structure;
        let range = st.index(j, 0)..st.index(j, 0) + st.samples_per_column;
        let heights = &st.samples.height_cm[range.clone()];
        if self.carriers.species_per_h[species.index()] == 0.0 {
            return SnowSurface::MidplaneNotFrozen;
        }
        if self.is_step_model() {
            let t_cond = self.species[species.index()].condensation_temperature_k;
            snow_surface(heights, &st.samples.temperature_k[range], t_cond, false)
        } else {
            let n = self.sample_count();
            let base = species.index() * n;
            snow_surface(
                heights,
                &self.ice_fraction[base + range.start..base + range.end],
                0.5,
                true,
            )
        }
    }

    /// The model's midplane state at an arbitrary radius, from that radius' own
    /// column (docs/model.md section 9: not the nearest grid cell). The grazing angle
    /// is interpolated in ln r from the grid when it is solved self-consistently.
    pub fn midplane_at(&self, radius_au: f64) -> Result<LocalMidplane, PhysicsError> {
        let d = &self.parameters.disk;
        if !(radius_au >= d.inner_radius_au && radius_au <= d.outer_radius_au) {
            return Err(PhysicsError::RadiusOutsideDisk {
                name: "radius_au",
                radius_au,
                inner_au: d.inner_radius_au,
                outer_au: d.outer_radius_au,
            });
        }
        let c = &self.structure.constants;
        let r = radius_au * AU_CM;
        let phi = self.structure.flaring_angle_at(r);
        let sigma = surface_density_g_cm2(c, r);
        let mid = midplane_temperature(c, phi, r, sigma)?;
        // Only the midplane sample is needed, but its density needs the whole column's normalisation.
        let col = column(c, r, sigma, mid.temperature_k, phi);
        let mut ice_fraction = [0.0; SPECIES_COUNT];
        let mut out_of_equilibrium = [false; SPECIES_COUNT];
        let sample = self.balance.sample(
            col.temperature_k[0],
            col.density_g_cm3[0],
            col.fuv_photon_flux_cm2_s[0],
            col.ionization_rate_s[0],
        );
        for i in 0..SPECIES_COUNT {
            let state = self.balance.solve_aged(
                &sample,
                i,
                self.carriers.species_per_h[i] * col.hydrogen_density_cm3[0],
            );
            ice_fraction[i] = state.ice_fraction;
            out_of_equilibrium[i] = state.out_of_equilibrium;
        }
        let phases = self
            .carriers
            .phases(mid.temperature_k, r, |i| ice_fraction[i]);
        let solid_mass_per_h_amu = self
            .carriers
            .solid_mass_per_h_amu(&phases, |i| ice_fraction[i]);
        Ok(LocalMidplane {
            radius_cm: r,
            temperature_k: mid.temperature_k,
            ice_fraction,
            out_of_equilibrium,
            phases,
            solid_mass_per_h_amu,
        })
    }
}
