//! The ice-balance stage: (structure, composition, ice constants) -> the phase
//! of every volatile in every sample (docs/model.md section 7).
//!
//! [`solve_place`] and [`solve_species_at`] are the stage functions for one
//! place; [`IceBalance::solve_into`] runs them over a whole [`DiskStructure`],
//! writing into buffers it keeps, so re-solving the same grid with new ice
//! parameters allocates nothing. `Model::run`, `Model::midplane_at` and the
//! anchor's snowline probe all go through these functions.

use crate::balance::{AgedIceState, BalanceConstants, BlockOutput, SampleBlock, BLOCK};
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
    let inverse_n_h = 1.0 / n_h;
    std::array::from_fn(|i| {
        let x = totals_per_h[i];
        balance.solve_aged_with_inverse(&sample, i, x * n_h, (1.0 / x) * inverse_n_h)
    })
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
    let n_h = place.hydrogen_density_cm3;
    balance.solve_aged_with_inverse(
        &sample,
        i,
        molecules_per_h * n_h,
        (1.0 / molecules_per_h) * (1.0 / n_h),
    )
}

/// The species-major output arrays of a whole grid.
struct GridOutput<'a> {
    ice_fraction: &'a mut [f64],
    equilibrium_ice_fraction: &'a mut [f64],
    equilibration_time_s: &'a mut [f64],
    out_of_equilibrium: &'a mut [bool],
}

/// The grid loop of [`IceBalance::solve_into`]. On x86-64 the same code is compiled again for
/// AVX2 and for AVX-512F (wider vectors of the same IEEE operations, no fused multiply-add) and
/// chosen at run time; every version gives the same bits (`tests::vector_versions_give_the_same_bits`,
/// the model digest). WebAssembly and other targets use the portable version.
#[allow(unsafe_code)]
fn solve_grid(
    balance: &BalanceConstants,
    structure: &DiskStructure,
    composition: &Composition,
    out: GridOutput<'_>,
) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the processor has AVX-512F, checked on the line above.
            return unsafe { solve_grid_avx512(balance, structure, composition, out) };
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor has AVX2, checked on the line above.
            return unsafe { solve_grid_avx2(balance, structure, composition, out) };
        }
    }
    solve_grid_portable(balance, structure, composition, out)
}

/// [`solve_grid`] compiled for AVX-512F.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
fn solve_grid_avx512(
    balance: &BalanceConstants,
    structure: &DiskStructure,
    composition: &Composition,
    out: GridOutput<'_>,
) {
    solve_grid_portable(balance, structure, composition, out)
}

/// [`solve_grid`] compiled for AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn solve_grid_avx2(
    balance: &BalanceConstants,
    structure: &DiskStructure,
    composition: &Composition,
    out: GridOutput<'_>,
) {
    solve_grid_portable(balance, structure, composition, out)
}

/// The body of [`solve_grid`], inlined into each version: column by column (the composition
/// is per radial cell), in blocks of places, the species-independent quantities once per place,
/// then one vectorised pass per species.
#[inline(always)]
fn solve_grid_portable(
    balance: &BalanceConstants,
    structure: &DiskStructure,
    composition: &Composition,
    out: GridOutput<'_>,
) {
    let n = structure.samples.temperature_k.len();
    let spc = structure.samples_per_column;
    let s = &structure.samples;
    let mut block = SampleBlock::new();
    for j in 0..n / spc.max(1) {
        let totals = composition.species_per_h_in_cell(j);
        let mut start = j * spc;
        let end = start + spc;
        while start < end {
            let stop = (start + BLOCK).min(end);
            let r = start..stop;
            balance.fill_block(
                &mut block,
                &s.temperature_k[r.clone()],
                &s.density_g_cm3[r.clone()],
                &s.fuv_photon_flux_cm2_s[r.clone()],
                &s.ionization_rate_s[r.clone()],
                &s.hydrogen_density_cm3[r],
            );
            for (i, &per_h) in totals.iter().enumerate() {
                let r = i * n + start..i * n + stop;
                balance.solve_block(
                    i,
                    per_h,
                    &block,
                    BlockOutput {
                        ice_fraction: &mut out.ice_fraction[r.clone()],
                        equilibrium_ice_fraction: &mut out.equilibrium_ice_fraction[r.clone()],
                        equilibration_time_s: &mut out.equilibration_time_s[r.clone()],
                        out_of_equilibrium: &mut out.out_of_equilibrium[r],
                    },
                );
            }
            start = stop;
        }
    }
}

/// The solved ice balance on a grid: per species and sample, the ice fraction at the disk's age,
/// its equilibrium, the equilibration time and whether the ice is out of equilibrium.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct IceBalance {
    samples: usize,
    // Flat, species-major: index species * samples + sample. The three per-sample numbers are
    // one allocation, the ice fractions, the equilibrium fractions and the equilibration times
    // one after another (each SPECIES_COUNT * samples long). With glibc's malloc, whose mmap and
    // trim thresholds grow with the largest block freed, one block of 3 x 4.6 MB (400 x 160)
    // stays in the heap from one fresh run to the next, where three of 4.6 MB were unmapped and
    // faulted in again each run (`model_fresh/400x160` in `cargo xtask bench`).
    values: Vec<f64>,
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
        // Every entry is written below. A new size gets fresh zeroed buffers (not filled first),
        // the same size keeps the buffers (no allocation).
        if self.out_of_equilibrium.len() != total {
            self.values = vec![0.0; 3 * total];
            self.out_of_equilibrium = vec![false; total];
        }
        let (ice_fraction, rest) = self.values.split_at_mut(total);
        let (equilibrium_ice_fraction, equilibration_time_s) = rest.split_at_mut(total);
        let out = GridOutput {
            ice_fraction,
            equilibrium_ice_fraction,
            equilibration_time_s,
            out_of_equilibrium: &mut self.out_of_equilibrium,
        };
        solve_grid(balance, structure, composition, out);
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
        &self.values[self.range(species)]
    }

    /// Equilibrium ice fraction (the long-time limit) of `species` in every sample.
    pub fn equilibrium_ice_fraction(&self, species: Species) -> &[f64] {
        let r = self.range(species);
        let total = SPECIES_COUNT * self.samples;
        &self.values[total + r.start..total + r.end]
    }

    /// Equilibration time [s] of `species` in every sample (NaN where undefined: step model, no
    /// grains or no molecules).
    pub fn equilibration_time_s(&self, species: Species) -> &[f64] {
        let r = self.range(species);
        let total = SPECIES_COUNT * self.samples;
        &self.values[2 * total + r.start..2 * total + r.end]
    }

    /// Whether `species` is out of equilibrium at the disk's age in every sample (equilibration
    /// time longer than the age, or f_ice still more than 0.01 from its equilibrium).
    pub fn out_of_equilibrium(&self, species: Species) -> &[bool] {
        &self.out_of_equilibrium[self.range(species)]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The grid loop (whichever version this build runs: portable, AVX2/AVX-512F, or WebAssembly
    /// simd128) gives, in every sample and species, the numbers of the scalar per-place path
    /// [`solve_place`], bit for bit: the ice fraction, its equilibrium, the equilibration time and
    /// the out-of-equilibrium flag. Disks that reach every branch of the ice balance (both
    /// orders, the three initial states, the step model, large grains and short ages); columns
    /// of odd length and longer than one block (derived, D). Run natively and as WebAssembly
    /// (`cargo xtask test` stage 3; with simd128 when built with `+simd128`).
    #[test]
    fn grid_equals_the_scalar_lanes_bit_for_bit() {
        use crate::params::{DesorptionModel, InitialIceState};
        use crate::{Model, ModelParameters};
        let mut compared = 0usize;
        for (desorption, initial, grain_um, age_myr, vertical) in [
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Inherited,
                0.1,
                1.0,
                44,
            ),
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Gas,
                0.1,
                0.01,
                120,
            ),
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Equilibrium,
                0.1,
                1.0,
                45,
            ),
            (
                DesorptionModel::FirstOrder,
                InitialIceState::Inherited,
                0.1,
                1.0,
                44,
            ),
            (
                DesorptionModel::FirstOrder,
                InitialIceState::Gas,
                1.0,
                0.1,
                30,
            ),
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Inherited,
                100.0,
                0.01,
                44,
            ),
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Gas,
                1000.0,
                0.001,
                31,
            ),
            (
                DesorptionModel::FixedTemperature,
                InitialIceState::Inherited,
                0.1,
                1.0,
                20,
            ),
        ] {
            let mut p = ModelParameters::defaults();
            p.grid.radial_cells = 30;
            p.grid.vertical_cells = vertical;
            p.ices.desorption = desorption;
            p.ices.initial_state = initial;
            p.disk.grain_radius_um = grain_um;
            p.disk.age_myr = age_myr;
            let model = Model::run(&p).unwrap();
            let balance = BalanceConstants::new(&p, model.species_properties());
            let (st, c) = (model.structure(), model.composition());
            let grid = IceBalance::solve(st, c, &balance);
            for k in 0..model.sample_count() {
                let j = k / st.samples_per_column;
                let states = solve_place(
                    &balance,
                    &Place::of(&st.samples, k),
                    &c.species_per_h_in_cell(j),
                );
                for (i, species) in Species::ALL.into_iter().enumerate() {
                    let s = states[i];
                    let at = (desorption, initial, k, species);
                    assert_eq!(
                        grid.ice_fraction(species)[k].to_bits(),
                        s.ice_fraction.to_bits(),
                        "{at:?}"
                    );
                    assert_eq!(
                        grid.equilibrium_ice_fraction(species)[k].to_bits(),
                        s.equilibrium_ice_fraction.to_bits(),
                        "{at:?}"
                    );
                    assert_eq!(
                        grid.equilibration_time_s(species)[k].to_bits(),
                        s.equilibration_time_s.to_bits(),
                        "{at:?}"
                    );
                    assert_eq!(
                        grid.out_of_equilibrium(species)[k],
                        s.out_of_equilibrium,
                        "{at:?}"
                    );
                    compared += 1;
                }
            }
        }
        assert!(compared > 100_000, "{compared}");
    }

    /// The AVX2 and AVX-512F versions of the grid loop give the portable version's bits, over
    /// whole grids of disks that reach every branch of the ice balance (derived, D). Versions the
    /// processor lacks are skipped; the portable one is what WebAssembly runs. Meaningful in an
    /// optimised build (`cargo test --release`), where the versions are vectorised differently.
    #[cfg(target_arch = "x86_64")]
    #[test]
    #[allow(unsafe_code)]
    fn vector_versions_give_the_same_bits() {
        use crate::params::{DesorptionModel, InitialIceState};
        use crate::{Model, ModelParameters};
        let avx2 = std::arch::is_x86_feature_detected!("avx2");
        let avx512 = std::arch::is_x86_feature_detected!("avx512f");
        let mut compared = 0usize;
        for (desorption, initial, age_myr) in [
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Inherited,
                1.0,
            ),
            (DesorptionModel::ZerothOrder, InitialIceState::Gas, 0.01),
            (
                DesorptionModel::FirstOrder,
                InitialIceState::Equilibrium,
                1.0,
            ),
            (
                DesorptionModel::FixedTemperature,
                InitialIceState::Inherited,
                1.0,
            ),
        ] {
            let mut p = ModelParameters::defaults();
            p.grid.radial_cells = 40;
            p.grid.vertical_cells = 45;
            p.ices.desorption = desorption;
            p.ices.initial_state = initial;
            p.disk.age_myr = age_myr;
            let model = Model::run(&p).unwrap();
            let balance = BalanceConstants::new(&p, model.species_properties());
            let total = SPECIES_COUNT * model.sample_count();
            let run = |version: u8| {
                let mut values = vec![0.0; 3 * total];
                let mut flags = vec![false; total];
                let (ice_fraction, rest) = values.split_at_mut(total);
                let (equilibrium_ice_fraction, equilibration_time_s) = rest.split_at_mut(total);
                let out = GridOutput {
                    ice_fraction,
                    equilibrium_ice_fraction,
                    equilibration_time_s,
                    out_of_equilibrium: &mut flags,
                };
                let (st, c) = (model.structure(), model.composition());
                match version {
                    // SAFETY: called only when the processor has AVX2 (checked above).
                    1 => unsafe { solve_grid_avx2(&balance, st, c, out) },
                    // SAFETY: called only when the processor has AVX-512F (checked above).
                    2 => unsafe { solve_grid_avx512(&balance, st, c, out) },
                    _ => solve_grid_portable(&balance, st, c, out),
                }
                let bits: Vec<u64> = values.iter().map(|x| x.to_bits()).collect();
                (bits, flags)
            };
            let portable = run(0);
            if avx2 {
                assert!(run(1) == portable, "AVX2, {desorption:?} {initial:?}");
                compared += 1;
            }
            if avx512 {
                assert!(run(2) == portable, "AVX-512F, {desorption:?} {initial:?}");
                compared += 1;
            }
        }
        eprintln!("{compared} grids compared (AVX2: {avx2}, AVX-512F: {avx512})");
    }
}
