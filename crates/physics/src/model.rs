//! The full model: structure, ice balance in every sample, element budget,
//! snowlines. [`Model::run`] is the one entry point the CLI and the page call.

use crate::balance::{species_properties, BalanceConstants, SpeciesProperties};
use crate::budget::{
    defined_ratio, one_within_rounding, zero_below_rounding, Carriers, PhaseAbundances,
};
use crate::composition::Composition;
use crate::error::PhysicsError;
use crate::ices::{solve_place, IceBalance, Place};
use crate::params::{
    CompositionParameters, DesorptionModel, Element, IceParameters, ModelParameters, SootLine,
    ELEMENT_COUNT,
};
use crate::snowlines::{snow_surface, SnowSurface, Snowline};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};
use crate::structure::{early_soot_line_radius_cm, DiskStructure};
use crate::units::AU_CM;

/// A computed disk: the structure, composition and ice-balance stages with the
/// inputs they came from. The arrays are private; the query methods below are
/// the interface (docs/model.md sections 3-9).
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    parameters: ModelParameters,
    table: SpeciesTable,
    species: [SpeciesProperties; SPECIES_COUNT],
    structure: DiskStructure,
    composition: Composition,
    balance: BalanceConstants,
    ices: IceBalance,
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
    /// Per species: out of equilibrium at the disk's age (see [`Model::out_of_equilibrium_at`]).
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

impl Ratios {
    /// The ratios of phase abundances `ph` for a star with abundances per H `x` (what
    /// [`Model::ratios`] computes; the Monte Carlo's midplane path calls it without a `Model`).
    pub fn of(ph: &PhaseAbundances, x: &[f64; ELEMENT_COUNT]) -> Ratios {
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
}

impl Model {
    /// Run the whole model: [`DiskStructure::compute`], [`Composition::uniform`],
    /// [`IceBalance::solve`].
    pub fn run(parameters: &ModelParameters) -> Result<Model, PhysicsError> {
        let structure = DiskStructure::compute(parameters)?;
        Model::run_on(structure, parameters)
    }

    /// Run the composition and ice-balance stages of `parameters` on a structure already
    /// computed (for example by [`DiskStructure::from_surface_density`]); `Model::run(p)` is
    /// `Model::run_on(DiskStructure::compute(p)?, p)`. The structure is trusted to belong to
    /// `parameters`' disk (its grid and fields are used as they are).
    pub fn run_on(
        structure: DiskStructure,
        parameters: &ModelParameters,
    ) -> Result<Model, PhysicsError> {
        let table = SpeciesTable::built_in();
        let composition = Composition::uniform(parameters, &table, &structure)?;
        let species = species_properties(parameters, &table);
        let balance = BalanceConstants::new(parameters, &species);
        let ices = IceBalance::solve(&structure, &composition, &balance);
        let model = Model {
            parameters: parameters.clone(),
            table,
            species,
            structure,
            composition,
            balance,
            ices,
        };
        // No NaN or infinity leaves a run (issue 15 item 5): a typed error names the likely input instead.
        crate::finite::check_finite(&model)?;
        Ok(model)
    }

    /// [`Model::run`] into this model's own buffers: the same result bit for bit, without
    /// allocating the per-sample arrays again when the grid keeps its size (what the page does
    /// when an edit changes the star, the disk or the grid; [`crate::rerun`]'s full branch).
    /// On an error the model is left as it was.
    pub fn run_into(&mut self, parameters: &ModelParameters) -> Result<(), PhysicsError> {
        if self.structure.has_given_surface_density() || !self.composition.is_uniform() {
            // The structure or the composition was given, not computed from the parameters:
            // this model could not be rebuilt after a failed finite check, so the run goes to
            // fresh buffers.
            *self = Model::run(parameters)?;
            return Ok(());
        }
        let previous = self.parameters.clone();
        let result = self.overwrite(parameters);
        if result.is_err() && self.parameters != previous {
            // Only the finite check fails after the buffers were written. The previous
            // parameters ran to this model (every model of a computed structure equals
            // `Model::run` of its parameters bit for bit), so running them again restores it;
            // that run cannot fail where it succeeded before.
            let _ = self.overwrite(&previous);
        }
        result
    }

    /// The stages of [`Model::run`] written into this model's buffers: every fallible step
    /// before any buffer is written, then the finite check.
    fn overwrite(&mut self, parameters: &ModelParameters) -> Result<(), PhysicsError> {
        let plan = DiskStructure::plan(parameters)?;
        let composition = Composition::uniform_on(
            parameters,
            &self.table,
            plan.radial_cells(),
            plan.early_soot_line_radius_cm,
        )?;
        self.structure.fill(parameters, plan);
        self.parameters = parameters.clone();
        // `self.table` is the built-in table already (every model holds it).
        self.species = species_properties(parameters, &self.table);
        self.balance = BalanceConstants::new(parameters, &self.species);
        self.composition = composition;
        self.ices
            .solve_into(&self.structure, &self.composition, &self.balance);
        crate::finite::check_finite(self)
    }

    /// This disk with other ice parameters: only the ice balance is re-solved (the structure
    /// and composition do not depend on them), equal bit for bit to
    /// `Model::run` of the edited parameters.
    pub fn with_ices(&self, ices: &IceParameters) -> Model {
        let mut model = self.clone();
        model.set_ices(ices);
        model
    }

    /// Replace the ice parameters in place, re-solving only the ice balance into the buffers
    /// this model already holds (no allocation): the same numbers as [`Model::with_ices`].
    pub fn set_ices(&mut self, ices: &IceParameters) {
        self.parameters.ices = ices.clone();
        self.species = species_properties(&self.parameters, &self.table);
        self.balance = BalanceConstants::new(&self.parameters, &self.species);
        self.ices
            .solve_into(&self.structure, &self.composition, &self.balance);
    }

    /// Replace the element carriers (composition parameters) in place: the composition and the
    /// ice balance are re-solved (into the buffers this model holds), the structure is kept; only
    /// the early soot line (irreversible soot line, docs/model.md section 8) is recomputed when
    /// the soot-line kind or temperature changed. Equal bit for bit to `Model::run` of the edited
    /// parameters. On an error (for example a composition the star's oxygen cannot fill) the
    /// model is left as it was.
    pub fn set_composition(
        &mut self,
        composition: &CompositionParameters,
    ) -> Result<(), PhysicsError> {
        let mut p = self.parameters.clone();
        p.composition = composition.clone();
        let old = &self.parameters.composition;
        let soot_moved =
            old.soot_line != composition.soot_line || old.soot_line_k != composition.soot_line_k;
        let early = if soot_moved {
            match composition.soot_line {
                SootLine::Irreversible => early_soot_line_radius_cm(
                    &p,
                    &self.structure.radius_cm,
                    composition.soot_line_k,
                )?,
                SootLine::Reversible => None,
            }
        } else {
            self.structure.early_soot_line_radius_cm
        };
        let previous = self.structure.early_soot_line_radius_cm;
        self.structure.early_soot_line_radius_cm = early;
        let new_composition = match Composition::uniform(&p, &self.table, &self.structure) {
            Ok(c) => c,
            Err(e) => {
                self.structure.early_soot_line_radius_cm = previous;
                return Err(e);
            }
        };
        self.parameters = p;
        self.composition = new_composition;
        self.ices
            .solve_into(&self.structure, &self.composition, &self.balance);
        Ok(())
    }

    /// This disk with other composition parameters ([`Model::set_composition`] on a copy).
    pub fn with_composition(
        &self,
        composition: &CompositionParameters,
    ) -> Result<Model, PhysicsError> {
        let mut model = self.clone();
        model.set_composition(composition)?;
        Ok(model)
    }

    /// The inputs.
    pub fn parameters(&self) -> &ModelParameters {
        &self.parameters
    }

    /// Built-in species data.
    pub fn species_table(&self) -> &SpeciesTable {
        &self.table
    }

    /// Resolved properties (binding energy, frequency, T_cond, ...) of every species,
    /// `Species::ALL` order.
    pub fn species_properties(&self) -> &[SpeciesProperties; SPECIES_COUNT] {
        &self.species
    }

    /// The structure stage.
    pub fn structure(&self) -> &DiskStructure {
        &self.structure
    }

    /// The composition stage.
    pub fn composition(&self) -> &Composition {
        &self.composition
    }

    /// The element carriers of the composition (uniform in radius today).
    pub fn carriers(&self) -> &Carriers {
        self.composition.carriers()
    }

    /// The ice-balance stage.
    pub fn ices(&self) -> &IceBalance {
        &self.ices
    }

    /// The star's abundances per H (C, O, N, S, Si, Mg, Fe).
    pub fn stellar_per_h(&self) -> &[f64; ELEMENT_COUNT] {
        self.composition.stellar_per_h()
    }

    /// The star's C/O (number ratio).
    pub fn star_c_to_o(&self) -> f64 {
        self.composition.star_c_to_o()
    }

    /// Number of samples (radial cells x (vertical cells + 1)).
    pub fn sample_count(&self) -> usize {
        self.structure.samples.temperature_k.len()
    }

    /// Ice fraction (at the disk's age) of species `species` at flat sample index `k`.
    pub fn ice_fraction_at(&self, species: Species, k: usize) -> f64 {
        self.ices.ice_fraction(species)[k]
    }

    /// Equilibrium ice fraction of species `species` at flat sample index `k`.
    pub fn equilibrium_ice_fraction_at(&self, species: Species, k: usize) -> f64 {
        self.ices.equilibrium_ice_fraction(species)[k]
    }

    /// Equilibration time [s] of species `species` at flat sample index `k` (NaN where undefined).
    pub fn equilibration_time_s_at(&self, species: Species, k: usize) -> f64 {
        self.ices.equilibration_time_s(species)[k]
    }

    /// Whether species `species` at flat sample index `k` is out of equilibrium at the disk's age
    /// (equilibration time longer than the age, or f_ice still more than 0.01 from its equilibrium).
    pub fn out_of_equilibrium_at(&self, species: Species, k: usize) -> bool {
        self.ices.out_of_equilibrium(species)[k]
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
        let j = k / self.structure.samples_per_column;
        let radius_cm = self.structure.radius_cm[j];
        self.composition
            .phases(j, self.structure.samples.temperature_k[k], radius_cm, |i| {
                self.ice_fraction_at(Species::ALL[i], k)
            })
    }

    /// Ratios of a set of phase abundances.
    pub fn ratios(&self, ph: &PhaseAbundances) -> Ratios {
        Ratios::of(ph, self.stellar_per_h())
    }

    /// Gas C/O (number ratio) in every sample, flat sample index as
    /// [`Model::phases_at`], NaN where it is undefined (docs/model.md section 8):
    /// `self.ratios(&self.phases_at(k)).c_to_o_gas` for every `k`, bit for bit
    /// (the page's gas C/O map).
    ///
    /// Only the gas carbon and gas oxygen of [`Carriers::phases`] are formed, with the same
    /// operations in the same order (per species with x != 0 and a != 0: gas += a (x - f x);
    /// then the refractory carbon and the silicate oxygen where released), a column at a time
    /// and a species at a time over the column's samples (loops that vectorise), instead of
    /// all seven elements of all three phases per sample.
    pub fn gas_c_to_o_samples(&self) -> Vec<f64> {
        let st = &self.structure;
        let rows = st.samples_per_column;
        let stellar = self.stellar_per_h();
        let (c, o) = (Element::C as usize, Element::O as usize);
        let n = rows * st.radial_cells;
        // Holds the gas carbon of each sample, then its C/O.
        let mut out = vec![0.0; n];
        let mut gas_o = vec![0.0; rows];
        for j in 0..st.radial_cells {
            let carriers = self.composition.carriers_in_cell(j);
            let radius_cm = st.radius_cm[j];
            let r = j * rows..(j + 1) * rows;
            let gas_c = &mut out[r.clone()];
            gas_o.fill(0.0);
            for (i, species) in Species::ALL.into_iter().enumerate() {
                let x = carriers.species_per_h[i];
                if x == 0.0 {
                    continue;
                }
                let fractions = &self.ices.ice_fraction(species)[r.clone()];
                for (gas, a) in [
                    (&mut *gas_c, carriers.atoms[i][c]),
                    (&mut gas_o[..], carriers.atoms[i][o]),
                ] {
                    if a != 0.0 {
                        gas_c_to_o::add_gas(gas, fractions, a, x);
                    }
                }
            }
            let ends = gas_c_to_o::Ends {
                carbon_released: radius_cm <= carriers.carbon_released_within_cm,
                soot_line_k: carriers.soot_line_k,
                refractory_carbon_per_h: carriers.refractory_carbon_per_h,
                silicate_sublimation_k: carriers.silicate_sublimation_k,
                silicate_oxygen_per_h: carriers.silicate_oxygen_per_h,
                stellar_carbon: stellar[c],
                stellar_oxygen: stellar[o],
            };
            ends.ratios(gas_c, &gas_o, &st.samples.temperature_k[r]);
        }
        out
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
        if !self.composition.is_present(species) {
            return Vec::new();
        }
        let st = &self.structure;
        crate::snowlines::midplane_snowlines(
            &st.radius_cm,
            &st.midplane_temperature_k,
            self.is_step_model()
                .then(|| self.species[species.index()].condensation_temperature_k),
            || self.midplane_ice_fraction(species),
        )
    }

    /// The snow surface of a species in radial cell `j`.
    pub fn snow_surface(&self, species: Species, j: usize) -> SnowSurface {
        let st = &self.structure;
        let range = st.index(j, 0)..st.index(j, 0) + st.samples_per_column;
        let heights = &st.samples.height_cm[range.clone()];
        if !self.composition.is_present(species) {
            return SnowSurface::MidplaneNotFrozen;
        }
        if self.is_step_model() {
            let t_cond = self.species[species.index()].condensation_temperature_k;
            snow_surface(heights, &st.samples.temperature_k[range], t_cond, false)
        } else {
            snow_surface(heights, &self.ices.ice_fraction(species)[range], 0.5, true)
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
        let r = radius_au * AU_CM;
        // Only the midplane sample is needed, but its density needs the whole column's normalisation.
        let (mid, col) = self.structure.column_at(r)?;
        // The composition of the radial cell holding r.
        let j = self
            .structure
            .radius_cm
            .partition_point(|&rc| rc < r)
            .min(self.structure.radial_cells - 1);
        let states = solve_place(
            &self.balance,
            &Place::of(&col, 0),
            &self.composition.species_per_h_in_cell(j),
        );
        let ice_fraction = states.map(|s| s.ice_fraction);
        let out_of_equilibrium = states.map(|s| s.out_of_equilibrium);
        let phases = self
            .composition
            .phases(j, mid.temperature_k, r, |i| ice_fraction[i]);
        let solid_mass_per_h_amu = self
            .composition
            .solid_mass_per_h_amu(j, &phases, |i| ice_fraction[i]);
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

impl ModelParameters {
    /// The checks on validated inputs that need the physics, as typed errors carrying the field
    /// ([`PhysicsError::path`]): the inner edge outside the star and edges that hold some of the
    /// surface-density profile ([`crate::structure::DiskConstants::new`]), and a composition whose
    /// carriers the star's elements can fill ([`Carriers::new`], docs/model.md section 8). The
    /// disk-file reader runs them after mapping JSON onto the parameters; `Model::run` meets the
    /// same errors.
    pub fn check_consistency(&self) -> Result<(), PhysicsError> {
        crate::structure::DiskConstants::new(self)?;
        Carriers::new(
            crate::star::stellar_abundances_per_h(&self.star),
            &self.composition,
            &SpeciesTable::built_in(),
        )?;
        Ok(())
    }
}

/// The per-sample loops of [`Model::gas_c_to_o_samples`]: scalar (vectorised by the compiler
/// natively), and in explicit two-lane vectors in WebAssembly with simd128, where the page's
/// build (optimised for size after linking) leaves the scalar loops scalar. Both forms do the
/// same IEEE operations in the same order on each sample (no fused multiply-add), so they give
/// the same bits (`tests::gas_c_to_o_samples_equal_the_per_sample_ratios`, run as WebAssembly
/// with simd128 in `cargo xtask test` stage 3).
mod gas_c_to_o {
    use crate::budget::{defined_ratio, zero_below_rounding};

    /// `gas[k] += a (x - f[k] x)` for every sample k of a column: one carrier's atoms of one
    /// element in the gas (x per H, a atoms per molecule, f its ice fraction).
    #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
    pub(super) fn add_gas(gas: &mut [f64], fractions: &[f64], a: f64, x: f64) {
        for (g, &f) in gas.iter_mut().zip(fractions) {
            let x_ice = f * x;
            *g += a * (x - x_ice);
        }
    }

    /// [`add_gas`] two samples per vector.
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    pub(super) fn add_gas(gas: &mut [f64], fractions: &[f64], a: f64, x: f64) {
        use crate::math::simd128::{load2, splat, store2};
        use core::arch::wasm32::{f64x2_add, f64x2_mul, f64x2_sub};
        let n = gas.len().min(fractions.len());
        let (va, vx) = (splat(a), splat(x));
        for i in (0..n / 2).map(|i| 2 * i) {
            let x_ice = f64x2_mul(load2(fractions, i), vx);
            let v = f64x2_add(load2(gas, i), f64x2_mul(va, f64x2_sub(vx, x_ice)));
            store2(gas, i, v);
        }
        for (g, &f) in gas[n / 2 * 2..n].iter_mut().zip(&fractions[n / 2 * 2..n]) {
            let x_ice = f * x;
            *g += a * (x - x_ice);
        }
    }

    /// What a column adds to its gas carbon and oxygen at the end, and the references of the
    /// ratio (docs/model.md section 8).
    pub(super) struct Ends {
        /// Refractory carbon released at every height (inside the early soot line).
        pub(super) carbon_released: bool,
        pub(super) soot_line_k: f64,
        pub(super) refractory_carbon_per_h: f64,
        pub(super) silicate_sublimation_k: f64,
        pub(super) silicate_oxygen_per_h: f64,
        /// The star's C/H: gas carbon below 1e-9 of it is zero up to rounding.
        pub(super) stellar_carbon: f64,
        /// The star's O/H, the reference of the ratio's denominator.
        pub(super) stellar_oxygen: f64,
    }

    impl Ends {
        /// One sample's C/O from its gas carbon and oxygen of the carriers: as
        /// `Carriers::phases` then `Ratios::of`, NaN where undefined.
        #[inline(always)]
        fn ratio(&self, gas_c: f64, gas_o: f64, t: f64) -> f64 {
            let mut gc = gas_c;
            if t >= self.soot_line_k || self.carbon_released {
                gc += self.refractory_carbon_per_h;
            }
            let mut go = gas_o;
            if t >= self.silicate_sublimation_k {
                go += self.silicate_oxygen_per_h;
            }
            let gc = zero_below_rounding(gc, self.stellar_carbon);
            defined_ratio(gc, go, self.stellar_oxygen).unwrap_or(f64::NAN)
        }

        /// Replaces each sample's gas carbon `gas_c[k]` by its C/O, given its gas oxygen of the
        /// carriers `gas_o[k]` and temperature `t[k]`.
        #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
        pub(super) fn ratios(&self, gas_c: &mut [f64], gas_o: &[f64], t: &[f64]) {
            for ((g, &go), &t) in gas_c.iter_mut().zip(gas_o).zip(t) {
                *g = self.ratio(*g, go, t);
            }
        }

        /// [`Ends::ratios`] two samples per vector: each `if` of [`Ends::ratio`] a select
        /// between the two values the scalar form picks from.
        #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
        pub(super) fn ratios(&self, gas_c: &mut [f64], gas_o: &[f64], t: &[f64]) {
            use crate::math::simd128::{load2, select, splat, store2};
            use core::arch::wasm32::{
                f64x2_abs, f64x2_add, f64x2_div, f64x2_ge, f64x2_le, f64x2_lt, i64x2_splat, v128_or,
            };
            let n = gas_c.len().min(gas_o.len()).min(t.len());
            let released = i64x2_splat(if self.carbon_released { -1 } else { 0 });
            let (soot, refractory_c) =
                (splat(self.soot_line_k), splat(self.refractory_carbon_per_h));
            let (silicate, silicate_o) = (
                splat(self.silicate_sublimation_k),
                splat(self.silicate_oxygen_per_h),
            );
            // The thresholds of `zero_below_rounding` and `defined_ratio`, formed as they form them.
            let zero_below = splat(1e-9 * self.stellar_carbon.abs());
            let (zero, undefined_below) = (splat(0.0), splat(1e-9 * self.stellar_oxygen));
            let nan = splat(f64::NAN);
            for i in (0..n / 2).map(|i| 2 * i) {
                let temperature = load2(t, i);
                let gc = load2(gas_c, i);
                let gc = select(
                    v128_or(f64x2_ge(temperature, soot), released),
                    f64x2_add(gc, refractory_c),
                    gc,
                );
                let go = load2(gas_o, i);
                let go = select(
                    f64x2_ge(temperature, silicate),
                    f64x2_add(go, silicate_o),
                    go,
                );
                let gc = select(f64x2_lt(f64x2_abs(gc), zero_below), zero, gc);
                let undefined = v128_or(f64x2_lt(go, undefined_below), f64x2_le(go, zero));
                store2(gas_c, i, select(undefined, nan, f64x2_div(gc, go)));
            }
            for k in n / 2 * 2..n {
                gas_c[k] = self.ratio(gas_c[k], gas_o[k], t[k]);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `gas_c_to_o_samples` gives `ratios(&phases_at(k)).c_to_o_gas` bit for bit (NaN where
    /// undefined): the default disk (irreversible soot line), a hot disk with the reversible
    /// soot line and no photodesorption, a first-order disk, and a per-cell composition with
    /// species absent from some cells (derived, D).
    #[test]
    fn gas_c_to_o_samples_equal_the_per_sample_ratios() {
        let mut base = ModelParameters::defaults();
        base.grid.radial_cells = 50;
        base.grid.vertical_cells = 24;
        let mut hot = base.clone();
        hot.star.luminosity_lsun = 8.0;
        hot.composition.soot_line = SootLine::Reversible;
        hot.ices.photodesorption = false;
        let mut first = base.clone();
        first.ices.desorption = DesorptionModel::FirstOrder;
        first.disk.inner_radius_au = 0.02;
        let mut models: Vec<Model> = [base, hot, first]
            .iter()
            .map(|p| Model::run(p).unwrap())
            .collect();
        // Per cell: CO absent in every third cell, methanol doubled in every other one.
        let mut per_cell = models[0].clone();
        let uniform = per_cell.carriers().species_per_h;
        let totals: Vec<[f64; SPECIES_COUNT]> = (0..per_cell.structure.radial_cells)
            .map(|j| {
                let mut t = uniform;
                if j % 3 == 0 {
                    t[Species::CO.index()] = 0.0;
                }
                if j % 2 == 0 {
                    t[Species::CH3OH.index()] *= 2.0;
                }
                t
            })
            .collect();
        per_cell.composition = Composition::with_species_per_h_per_cell(
            &per_cell.parameters,
            &per_cell.table,
            &per_cell.structure,
            &totals,
        )
        .unwrap();
        per_cell.ices = IceBalance::solve(
            &per_cell.structure,
            &per_cell.composition,
            &per_cell.balance,
        );
        models.push(per_cell);
        let mut released = 0;
        for model in &models {
            released += usize::from(model.carriers().carbon_released_within_cm > 0.0);
            let values = model.gas_c_to_o_samples();
            assert_eq!(values.len(), model.sample_count());
            let mut undefined = 0;
            for (k, v) in values.iter().enumerate() {
                let expected = model
                    .ratios(&model.phases_at(k))
                    .c_to_o_gas
                    .unwrap_or(f64::NAN);
                assert_eq!(v.to_bits(), expected.to_bits(), "sample {k}");
                undefined += usize::from(v.is_nan());
            }
            assert!(undefined < values.len());
        }
        assert!(
            released > 0,
            "no disk with carbon released by the early phase"
        );
    }
}
