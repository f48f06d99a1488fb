//! Time evolution of the disk (docs/model.md section 12): viscous gas, two-population dust,
//! every volatile's vapour and ice carried by the gas and by the pebbles while it sublimates and
//! freezes at the rates of the ice balance, irreversible loss of refractory carbon above the soot
//! line, an optional CO-processing term, and the star contracting along its pre-main-sequence
//! track. The structure at each step comes from [`DiskStructure::from_surface_density`] with the
//! star's L(t) and the evolving accretion rate, so the temperature follows both.
//!
//! [`evolve`] runs it from `start_myr` to `until_myr` and returns snapshots at log-spaced ages,
//! with the relative error of every element's budget (boundary fluxes accounted).

pub mod dust;
pub mod fit;
pub mod star_track;
pub mod transport;
pub mod viscous;

use crate::balance::{species_properties, BalanceConstants, RateEquation};
use crate::budget::{defined_ratio, zero_below_rounding, Carriers, PhaseAbundances};
use crate::composition::Composition;
use crate::error::PhysicsError;
use crate::ices::{IceBalance, Place};
use crate::math::{exp, ln};
use crate::model::{Model, Ratios};
use crate::params::{Element, InitialIceState, ModelParameters, SootLine, ELEMENT_COUNT};
use crate::snowlines::{crossings, CrossingDirection};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};
use crate::star::stellar_abundances_per_h;
use crate::structure::{
    keplerian_frequency_s, sound_speed_cm_s, surface_density_g_cm2, DiskConstants, DiskStructure,
};
use crate::units::{
    ATOMIC_MASS_UNIT_G, AU_CM, HYDROGEN_MASS_G, JULIAN_YEAR_S, MASS_PER_HYDROGEN_NUCLEUS_AMU_H,
    MICRON_CM, MSUN_PER_YR_TO_G_PER_S,
};
use dust::{kepler_speed_cm_s, radial_speed_cm_s, stokes_number, DustModel, DustPlace};
use star_track::StarTrack;
use std::f64::consts::PI;
use transport::{advect_diffuse, advect_diffuse_exchange, FaceCoefficients, LinearExchange};
use viscous::{alpha_viscosity_cm2_s, viscous_step, RadialGrid, StepBuffers};

/// Seconds per Myr (Julian years).
const MYR_S: f64 = 1.0e6 * JULIAN_YEAR_S;

/// The dust parameters (docs/disk-file.md, `evolution.dust`).
#[derive(Debug, Clone, PartialEq)]
pub struct DustParameters {
    /// Radial drift of the pebbles relative to the gas. Default on. Off: the dust moves with the gas.
    pub drift: bool,
    /// Fragmentation velocity u_f [cm s^-1]. Default 1000 (10 m/s, the value of BKE12's fiducial
    /// model; silicate-ice laboratory range 1-10 m/s, Blum & Wurm 2008).
    pub fragmentation_velocity_cm_s: f64,
    /// Monomer radius a_0 [micron]. Default 1 (BKE12's a_0).
    pub monomer_radius_um: f64,
    /// Material density of the pebbles rho_s [g cm^-3]. Default 1.6 (BKE12).
    pub material_density_g_cm3: f64,
}

/// The optional conversion of gas-phase CO into less volatile carriers on grains
/// (docs/model.md section 12.6), parametrised after Bosman et al. 2018 and Krijt et al. 2020.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoProcessing {
    /// e-folding time of gas CO where the midplane is cold enough [Myr]. Default 1 (CO depleted
    /// by about an order of magnitude in a few Myr, Bosman et al. 2018; Krijt et al. 2020; from memory).
    pub timescale_myr: f64,
    /// Warmest midplane temperature where the conversion runs [K]. Default 30 (below it
    /// grain-surface hydrogenation keeps up, Bosman et al. 2018; from memory).
    pub max_temperature_k: f64,
}

/// The `evolution` section of a disk file, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct EvolutionParameters {
    /// Turbulence parameter alpha, constant. Default 1e-3 (common practice for pebble-drift
    /// models, e.g. Booth et al. 2017; Hartmann et al. 1998 infer ~1e-2 for R_c = 10 au).
    pub alpha: f64,
    /// Schmidt number Sc = nu / D of the gas's turbulent diffusion. Default 1 (common practice).
    pub schmidt_number: f64,
    /// Turbulent diffusion of vapour and dust. Default on.
    pub diffusion: bool,
    /// Viscous evolution of the gas. Default on (off holds Sigma_gas fixed: a test switch).
    pub viscous_evolution: bool,
    /// Age at which the run starts from the disk file's profile [Myr]. Default 0.01.
    pub start_myr: f64,
    /// Age at which the run ends [Myr]. Default 5.
    pub until_myr: f64,
    /// Number of snapshots, log-spaced in age from start to end inclusive. Default 20.
    pub snapshots: usize,
    /// Largest step as a fraction of the age, dt <= f t. Default 0.05 (the viscous solution stays
    /// within 1 % of the similarity solution, tests/evolution.rs; any step is stable).
    pub max_step_fraction: f64,
    /// Vertical cells of the columns that give each step's midplane conditions (temperature,
    /// density, FUV flux and ionisation rate at z = 0). Default 16: the midplane values need no
    /// finer columns, and the structure is most of a step's cost. The snapshots' static models
    /// use the same.
    pub vertical_cells: usize,
    /// The dust.
    pub dust: DustParameters,
    /// The star's track.
    pub star_track: StarTrack,
    /// CO processing, off (`None`) by default.
    pub co_processing: Option<CoProcessing>,
}

impl EvolutionParameters {
    /// The documented defaults.
    pub fn defaults() -> EvolutionParameters {
        EvolutionParameters {
            alpha: 1.0e-3,
            schmidt_number: 1.0,
            diffusion: true,
            viscous_evolution: true,
            start_myr: 0.01,
            until_myr: 5.0,
            snapshots: 20,
            max_step_fraction: 0.05,
            vertical_cells: 16,
            dust: DustParameters {
                drift: true,
                fragmentation_velocity_cm_s: 1000.0,
                monomer_radius_um: 1.0,
                material_density_g_cm3: 1.6,
            },
            star_track: StarTrack::HayashiContraction,
            co_processing: None,
        }
    }

    /// Range checks (the disk-file reader checks the same ranges with the file's paths).
    pub fn check(&self) -> Result<(), PhysicsError> {
        let range = |name: &'static str, v: f64, lo: f64, hi: f64, allowed: &'static str| {
            if v >= lo && v <= hi {
                Ok(())
            } else {
                Err(PhysicsError::OutOfRange {
                    name,
                    value: v,
                    allowed,
                })
            }
        };
        range("evolution.alpha", self.alpha, 1e-6, 0.1, "in [1e-6, 0.1]")?;
        range(
            "evolution.schmidt_number",
            self.schmidt_number,
            0.1,
            10.0,
            "in [0.1, 10]",
        )?;
        range(
            "evolution.start_myr",
            self.start_myr,
            1e-4,
            1.0,
            "in [1e-4, 1] Myr",
        )?;
        range(
            "evolution.until_myr",
            self.until_myr,
            self.start_myr * (1.0 + 1e-9),
            20.0,
            "above evolution.start_myr and at most 20 Myr",
        )?;
        range(
            "evolution.snapshots",
            self.snapshots as f64,
            2.0,
            500.0,
            "an integer in [2, 500]",
        )?;
        range(
            "evolution.max_step_fraction",
            self.max_step_fraction,
            1e-4,
            0.5,
            "in [1e-4, 0.5]",
        )?;
        let d = &self.dust;
        range(
            "evolution.dust.fragmentation_velocity_m_s",
            d.fragmentation_velocity_cm_s / 100.0,
            0.1,
            100.0,
            "in [0.1, 100] m/s",
        )?;
        range(
            "evolution.dust.monomer_radius_um",
            d.monomer_radius_um,
            0.01,
            100.0,
            "in [0.01, 100] micron",
        )?;
        range(
            "evolution.dust.material_density_g_cm3",
            d.material_density_g_cm3,
            0.1,
            10.0,
            "in [0.1, 10] g/cm^3",
        )?;
        if let Some(c) = self.co_processing {
            range(
                "evolution.co_processing.timescale_myr",
                c.timescale_myr,
                0.01,
                1000.0,
                "in [0.01, 1000] Myr",
            )?;
            range(
                "evolution.co_processing.max_temperature_k",
                c.max_temperature_k,
                5.0,
                100.0,
                "in [5, 100] K",
            )?;
        }
        if let StarTrack::Table(rows) = &self.star_track {
            if rows.is_empty() {
                return Err(PhysicsError::OutOfRange {
                    name: "evolution.star.table",
                    value: 0.0,
                    allowed: "at least one row",
                });
            }
            for (k, r) in rows.iter().enumerate() {
                let increasing = k == 0 || r.age_myr > rows[k - 1].age_myr;
                if !(r.age_myr > 0.0 && r.age_myr.is_finite() && increasing) {
                    return Err(PhysicsError::OutOfRange {
                        name: "evolution.star.table",
                        value: r.age_myr,
                        allowed: "ages finite, > 0 and strictly increasing",
                    });
                }
                range(
                    "evolution.star.table",
                    r.luminosity_lsun,
                    1e-4,
                    1e4,
                    "luminosities in [1e-4, 1e4] Lsun",
                )?;
                range(
                    "evolution.star.table",
                    r.effective_temperature_k,
                    2000.0,
                    50000.0,
                    "effective temperatures in [2000, 50000] K",
                )?;
            }
        }
        Ok(())
    }
}

/// The state of the disk at one snapshot age.
#[derive(Debug, Clone, PartialEq)]
pub struct Snapshot {
    /// Age [Myr].
    pub time_myr: f64,
    /// The parameters of the static model at this age: the disk file's, with the star's L and
    /// T_eff of the track and the accretion rate of the evolving disk (docs/model.md section 12.5).
    pub parameters: ModelParameters,
    /// Accretion rate onto the star [Msun/yr].
    pub accretion_rate_msun_per_yr: f64,
    /// Gas surface density [g cm^-2] per radial cell.
    pub surface_density_g_cm2: Vec<f64>,
    /// Inward gas mass flux through each of the N + 1 cell faces over the last step [g s^-1]
    /// (zero at the start).
    pub gas_inward_flux_g_s: Vec<f64>,
    /// Dust surface density [g cm^-2] per radial cell.
    pub dust_surface_density_g_cm2: Vec<f64>,
    /// Radius of the large grains [cm].
    pub large_grain_radius_cm: Vec<f64>,
    /// Midplane temperature [K].
    pub midplane_temperature_k: Vec<f64>,
    /// Total (vapour + ice) abundance per H of every species, per cell.
    pub species_per_h: Vec<[f64; SPECIES_COUNT]>,
    /// Midplane ice fraction of every species, per cell.
    pub ice_fraction: Vec<[f64; SPECIES_COUNT]>,
    /// Element abundances per H in each phase, per cell.
    pub phases: Vec<PhaseAbundances>,
    /// The (first freeze-out) snowline of each species [cm], `None` where there is none.
    pub snowline_cm: [Option<f64>; SPECIES_COUNT],
    /// Inward mass flux of each species' ice through its snowline over the last step [g s^-1]
    /// (`None` without a snowline, and at the start, before any step).
    pub pebble_flux_g_s: [Option<f64>; SPECIES_COUNT],
    /// Inward mass flux of each species' vapour through its snowline over the last step [g s^-1].
    pub vapour_flux_g_s: [Option<f64>; SPECIES_COUNT],
    /// Inward mass flux of each species' ice (on the pebbles) through each of the N + 1 cell
    /// faces over the last step [g s^-1] (zero at the start).
    pub ice_inward_flux_g_s: Vec<[f64; SPECIES_COUNT]>,
    /// Inward mass flux of each species' vapour through each of the N + 1 cell faces over the
    /// last step [g s^-1] (zero at the start).
    pub vapour_inward_flux_g_s: Vec<[f64; SPECIES_COUNT]>,
    /// Outermost radius that has been above the soot line so far [cm] (irreversible soot line).
    pub soot_line_history_cm: Option<f64>,
}

/// A finished run.
#[derive(Debug, Clone, PartialEq)]
pub struct EvolutionRun {
    /// Radial cell centres [cm].
    pub radius_cm: Vec<f64>,
    /// Cell faces [cm] (N + 1; face j is the inner face of cell j).
    pub face_cm: Vec<f64>,
    /// The snapshots, in age order.
    pub snapshots: Vec<Snapshot>,
    /// The star's abundances per H.
    pub stellar_per_h: [f64; ELEMENT_COUNT],
    /// Per element (C, O, N, S, Si, Mg, Fe): |M_end + M_out - M_start| / M_start, with M_out what
    /// left through the two edges.
    pub conservation_relative_error: [f64; ELEMENT_COUNT],
    /// The same for the gas mass.
    pub gas_conservation_relative_error: f64,
    /// Number of time steps taken.
    pub steps: usize,
}

impl EvolutionRun {
    /// Ages of the snapshots [Myr].
    pub fn times_myr(&self) -> Vec<f64> {
        self.snapshots.iter().map(|s| s.time_myr).collect()
    }

    /// The ice balance in every sample of the columns at snapshot `k`'s age with the transported
    /// totals per H of every species ([`Composition::with_species_per_h_per_cell`]): the plug-in
    /// of the evolved composition into the static stages (docs/model.md sections 7 and 12.5),
    /// with the structure and composition it was solved on. The ice there is the balance at the
    /// snapshot's age from the file's initial state, as in the static model.
    pub fn ice_balance_at(
        &self,
        k: usize,
    ) -> Result<(DiskStructure, Composition, IceBalance), PhysicsError> {
        let s = &self.snapshots[k];
        let p = &s.parameters;
        let st = DiskStructure::from_surface_density(p, &self.radius_cm, &s.surface_density_g_cm2)?;
        let table = SpeciesTable::built_in();
        let composition =
            Composition::with_species_per_h_per_cell(p, &table, &st, &s.species_per_h)?;
        let balance = BalanceConstants::new(p, &species_properties(p, &table));
        let ices = IceBalance::solve(&st, &composition, &balance);
        Ok((st, composition, ices))
    }

    /// What a planet accretes in a formation window (docs/model.md section 12.8): the atoms per
    /// gram of the midplane gas and solids of the evolved disk, averaged over the snapshots with
    /// ages in [`from_myr`, `to_myr`] and the radial cells with centres in [`inner_au`,
    /// `outer_au`] (the nearest snapshot or cell where none lies inside), each cell weighted by
    /// its gas mass Sigma A (solids by their own mass), as `AccretedPhases::averaged` weights by
    /// accreted mass. The result feeds `AccretedPhases::envelope`. Errors (`OutOfRange`): radii
    /// outside the grid or not inner <= outer (`inner_radius_au`), ages outside the run or not
    /// from <= to (`from_myr`).
    pub fn accreted_phases(
        &self,
        inner_au: f64,
        outer_au: f64,
        from_myr: f64,
        to_myr: f64,
    ) -> Result<crate::planet::AccretedPhases, PhysicsError> {
        let r = &self.radius_cm;
        let n = r.len();
        let (r_lo, r_hi) = (self.face_cm[0] / AU_CM, self.face_cm[n] / AU_CM);
        if !(inner_au >= r_lo && outer_au <= r_hi && inner_au <= outer_au) {
            return Err(PhysicsError::OutOfRange {
                name: "inner_radius_au",
                value: inner_au,
                allowed: "radii inside the disk's grid, inner <= outer",
            });
        }
        let times = self.times_myr();
        let (t_lo, t_hi) = (times[0], times[times.len() - 1]);
        if !(from_myr >= t_lo * (1.0 - 1e-12)
            && to_myr <= t_hi * (1.0 + 1e-12)
            && from_myr <= to_myr)
        {
            return Err(PhysicsError::OutOfRange {
                name: "from_myr",
                value: from_myr,
                allowed: "ages inside the run (evolution.start_myr to the end age), from <= to",
            });
        }
        let nearest = |v: &[f64], x: f64| -> usize {
            (0..v.len())
                .min_by(|&a, &b| {
                    (ln(v[a]) - ln(x))
                        .abs()
                        .total_cmp(&(ln(v[b]) - ln(x)).abs())
                })
                .unwrap_or(0)
        };
        let mut cells: Vec<usize> = (0..n)
            .filter(|&j| r[j] >= inner_au * AU_CM && r[j] <= outer_au * AU_CM)
            .collect();
        if cells.is_empty() {
            cells.push(nearest(r, (inner_au * outer_au).sqrt() * AU_CM));
        }
        let mut snaps: Vec<usize> = (0..times.len())
            .filter(|&k| times[k] >= from_myr * (1.0 - 1e-12) && times[k] <= to_myr * (1.0 + 1e-12))
            .collect();
        if snaps.is_empty() {
            snaps.push(nearest(&times, (from_myr * to_myr).sqrt()));
        }
        Ok(self.phases_over(&cells, &snaps, inner_au, outer_au))
    }

    /// The accreted phases averaged over the radial cells `cells` of the snapshots `snaps` (both
    /// non-empty, in range), weighted as [`EvolutionRun::accreted_phases`] says; the radii are the
    /// labels of the result.
    pub(crate) fn phases_over(
        &self,
        cells: &[usize],
        snaps: &[usize],
        inner_au: f64,
        outer_au: f64,
    ) -> crate::planet::AccretedPhases {
        let table = SpeciesTable::built_in();
        let mass_amu: [f64; SPECIES_COUNT] = Species::ALL.map(|s| table.get(s).mass_amu);
        let h_per_g = 1.0 / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G);
        // Every heavy atom condensed [amu per H]: solids below 1e-9 of it count as none
        // (docs/model.md section 8, the rounding rule).
        let all_heavy_amu: f64 = Element::ALL
            .iter()
            .map(|e| self.stellar_per_h[*e as usize] * e.atomic_mass_amu())
            .sum();
        let (mut gas, mut solid) = ([0.0; ELEMENT_COUNT], [0.0; ELEMENT_COUNT]);
        let (mut gas_w, mut solid_w, mut solid_to_gas) = (0.0, 0.0, 0.0);
        let mut with_solids = 0;
        for &k in snaps {
            let s = &self.snapshots[k];
            for &j in cells {
                let area = PI * (self.face_cm[j + 1].powi(2) - self.face_cm[j].powi(2));
                let w = s.surface_density_g_cm2[j] * area;
                let ph = &s.phases[j];
                for (sum, x) in gas.iter_mut().zip(ph.gas) {
                    *sum += w * x * h_per_g;
                }
                gas_w += w;
                // Solid mass per H [amu]: the ices' molecules and the refractory atoms.
                let ice_mass: f64 = (0..SPECIES_COUNT)
                    .map(|i| s.species_per_h[j][i] * s.ice_fraction[j][i] * mass_amu[i])
                    .sum();
                let refractory_mass: f64 = Element::ALL
                    .iter()
                    .map(|e| ph.refractory[*e as usize] * e.atomic_mass_amu())
                    .sum();
                let m_solid = ice_mass + refractory_mass;
                let ratio = m_solid * ATOMIC_MASS_UNIT_G * h_per_g;
                solid_to_gas += w * ratio;
                if m_solid > 1e-9 * all_heavy_amu {
                    with_solids += 1;
                    let per_g = 1.0 / (m_solid * ATOMIC_MASS_UNIT_G);
                    for (e, sum) in solid.iter_mut().enumerate() {
                        *sum += w * ratio * (ph.ice[e] + ph.refractory[e]) * per_g;
                    }
                    solid_w += w * ratio;
                }
            }
        }
        let star = &self.snapshots[0].parameters.star;
        let mut solar = star.clone();
        solar.offset_dex = [0.0; ELEMENT_COUNT];
        crate::planet::AccretedPhases {
            inner_radius_au: inner_au,
            outer_radius_au: outer_au,
            hydrogen_per_gram_of_gas: h_per_g,
            gas_atoms_per_g: gas.map(|v| v / gas_w),
            solid_atoms_per_g: (solid_w > 0.0).then(|| solid.map(|v| v / solid_w)),
            solid_to_gas_available: solid_to_gas / gas_w,
            points_with_solids: with_solids,
            points: cells.len() * snaps.len(),
            stellar_per_h: self.stellar_per_h,
            out_of_equilibrium: [false; SPECIES_COUNT],
            solar_per_h: stellar_abundances_per_h(&solar),
        }
    }

    /// The static model at snapshot `k`'s age: the same surface density, star and accretion rate
    /// with no transport (the uniform composition; docs/model.md sections 3-8 and 12.5).
    pub fn static_model_at(&self, k: usize) -> Result<Model, PhysicsError> {
        let s = &self.snapshots[k];
        let st = DiskStructure::from_surface_density(
            &s.parameters,
            &self.radius_cm,
            &s.surface_density_g_cm2,
        )?;
        Model::run_on(st, &s.parameters)
    }
}

/// The ratios of a set of phase abundances against the star's (the same definitions and
/// rounding rules as `Model::ratios`, docs/model.md section 8).
pub fn ratios_of(stellar_per_h: &[f64; ELEMENT_COUNT], ph: &PhaseAbundances) -> Ratios {
    let (c, o) = (Element::C as usize, Element::O as usize);
    let (xc, xo) = (stellar_per_h[c], stellar_per_h[o]);
    let carbon = |v: f64| zero_below_rounding(v, xc);
    Ratios {
        c_to_o_gas: defined_ratio(carbon(ph.gas[c]), ph.gas[o], xo),
        c_to_o_ice: defined_ratio(carbon(ph.ice[c]), ph.ice[o], xo),
        c_to_o_solid: defined_ratio(
            carbon(ph.ice[c] + ph.refractory[c]),
            ph.ice[o] + ph.refractory[o],
            xo,
        ),
        c_to_h_gas_rel_star: Some(carbon(ph.gas[c]) / xc),
        o_to_h_gas_rel_star: Some(zero_below_rounding(ph.gas[o], xo) / xo),
    }
}

/// log10 of a positive ratio to the star, `None` for zero (no such gas).
pub fn dex(ratio: Option<f64>) -> Option<f64> {
    ratio
        .filter(|r| *r > 0.0)
        .map(|r| ln(r) / core::f64::consts::LN_10)
}

struct Evolver<'a> {
    p: &'a ModelParameters,
    e: &'a EvolutionParameters,
    grid: RadialGrid,
    carriers: Carriers,
    balance: BalanceConstants,
    dust_model: DustModel,
    dust_to_gas0: f64,
    time_myr: f64,
    sigma: Vec<f64>,
    dust: Vec<f64>,
    large_radius_cm: Vec<f64>,
    vapour: Vec<Vec<f64>>,
    ice: Vec<Vec<f64>>,
    carbon_solid: Vec<f64>,
    carbon_gas: Vec<f64>,
    accretion_g_s: f64,
    structure: DiskStructure,
    parameters_now: ModelParameters,
    soot_history_cm: Option<f64>,
    lost: [f64; ELEMENT_COUNT],
    gas_lost: f64,
    buffers: StepBuffers,
    gas_flux: Vec<f64>,
    scratch_flux: Vec<f64>,
    ice_flux: Vec<Vec<f64>>,
    vapour_flux: Vec<Vec<f64>>,
}

/// Run the evolution (docs/model.md section 12). Errors: out-of-range evolution parameters, and
/// those of the structure at any age (for example an early star so large that the inner edge
/// lies inside it).
pub fn evolve(p: &ModelParameters, e: &EvolutionParameters) -> Result<EvolutionRun, PhysicsError> {
    evolve_with_progress(p, e, &mut |_| true).map(|run| run.expect("never cancelled"))
}

/// [`evolve`] calling `progress(fraction done)` after every step; a `false` from it cancels the
/// run (`Ok(None)`).
pub fn evolve_with_progress(
    p: &ModelParameters,
    e: &EvolutionParameters,
    progress: &mut dyn FnMut(f64) -> bool,
) -> Result<Option<EvolutionRun>, PhysicsError> {
    run_evolution(p, e, progress, false).map(|run| run.map(|(run, _)| run))
}

/// [`evolve_with_progress`] that also returns the static model at every snapshot's age, equal
/// bit for bit to [`EvolutionRun::static_model_at`] (tests/evolution.rs checks it) but computed
/// on the structure the run already built for that age (docs/model.md section 12.7): the run's
/// structure at a snapshot is `DiskStructure::from_surface_density` of the snapshot's own
/// parameters and surface density, so building it again only repeats the same arithmetic.
/// This is what the CLI's `nivalis evolve` and the page use.
pub fn evolve_with_statics(
    p: &ModelParameters,
    e: &EvolutionParameters,
    progress: &mut dyn FnMut(f64) -> bool,
) -> Result<Option<(EvolutionRun, Vec<Model>)>, PhysicsError> {
    run_evolution(p, e, progress, true)
}

fn run_evolution(
    p: &ModelParameters,
    e: &EvolutionParameters,
    progress: &mut dyn FnMut(f64) -> bool,
    with_statics: bool,
) -> Result<Option<(EvolutionRun, Vec<Model>)>, PhysicsError> {
    e.check()?;
    if !(p.disk.dust_to_gas > 0.0) {
        return Err(PhysicsError::OutOfRange {
            name: "disk.dust_to_gas",
            value: p.disk.dust_to_gas,
            allowed: "> 0 for an evolving disk (the dust carries the refractories)",
        });
    }
    let mut ev = Evolver::new(p, e)?;
    let totals0 = ev.element_totals();
    let gas0 = ev.gas_mass();
    let n_snap = e.snapshots;
    let times: Vec<f64> = (0..n_snap)
        .map(|k| {
            if k + 1 == n_snap {
                e.until_myr
            } else {
                e.start_myr * exp(ln(e.until_myr / e.start_myr) * k as f64 / (n_snap - 1) as f64)
            }
        })
        .collect();
    let mut snapshots = vec![ev.snapshot()];
    let mut statics = Vec::new();
    if with_statics {
        statics.push(ev.static_model()?);
    }
    let mut steps = 0;
    for &target in &times[1..] {
        while ev.time_myr < target {
            let dt = (e.max_step_fraction * ev.time_myr).min(target - ev.time_myr);
            let next = if target - (ev.time_myr + dt) < 1e-9 * target {
                target
            } else {
                ev.time_myr + dt
            };
            ev.step(next)?;
            steps += 1;
            let done = (ev.time_myr - e.start_myr) / (e.until_myr - e.start_myr);
            if !progress(done) {
                return Ok(None);
            }
        }
        snapshots.push(ev.snapshot());
        if with_statics {
            statics.push(ev.static_model()?);
        }
    }
    let totals = ev.element_totals();
    let conservation = std::array::from_fn(|k| {
        if totals0[k] > 0.0 {
            ((totals[k] + ev.lost[k]) - totals0[k]).abs() / totals0[k]
        } else {
            0.0
        }
    });
    let run = EvolutionRun {
        radius_cm: ev.grid.centre_cm.clone(),
        face_cm: ev.grid.face_cm.clone(),
        snapshots,
        stellar_per_h: ev.carriers.stellar_per_h,
        conservation_relative_error: conservation,
        gas_conservation_relative_error: ((ev.gas_mass() + ev.gas_lost) - gas0).abs() / gas0,
        steps,
    };
    Ok(Some((run, statics)))
}

impl<'a> Evolver<'a> {
    fn new(
        p: &'a ModelParameters,
        e: &'a EvolutionParameters,
    ) -> Result<Evolver<'a>, PhysicsError> {
        let c = DiskConstants::new(p)?;
        let grid = RadialGrid::log(c.inner_radius_cm, c.outer_radius_cm, p.grid.radial_cells);
        let n = grid.cells();
        let sigma: Vec<f64> = grid
            .centre_cm
            .iter()
            .map(|&r| surface_density_g_cm2(&c, r).max(1e-200))
            .collect();
        let table = SpeciesTable::built_in();
        let carriers = Carriers::new(stellar_abundances_per_h(&p.star), &p.composition, &table)?;
        let balance = BalanceConstants::new(p, &species_properties(p, &table));
        let dust_to_gas0 = p.disk.dust_to_gas;
        let dust: Vec<f64> = sigma.iter().map(|s| s * dust_to_gas0).collect();
        let a0 = e.dust.monomer_radius_um * MICRON_CM;
        let parameters_now = p.clone();
        let structure = DiskStructure::from_surface_density(p, &grid.centre_cm, &sigma)?;
        let mut ev = Evolver {
            p,
            e,
            carriers,
            balance,
            dust_model: DustModel {
                alpha: e.alpha,
                fragmentation_velocity_cm_s: e.dust.fragmentation_velocity_cm_s,
                material_density_g_cm3: e.dust.material_density_g_cm3,
                monomer_radius_cm: a0,
            },
            dust_to_gas0,
            time_myr: e.start_myr,
            large_radius_cm: vec![a0; n],
            vapour: vec![vec![0.0; n]; SPECIES_COUNT],
            ice: vec![vec![0.0; n]; SPECIES_COUNT],
            carbon_solid: vec![0.0; n],
            carbon_gas: vec![0.0; n],
            accretion_g_s: p.disk.accretion_rate_msun_per_yr * MSUN_PER_YR_TO_G_PER_S,
            structure,
            parameters_now,
            soot_history_cm: None,
            lost: [0.0; ELEMENT_COUNT],
            gas_lost: 0.0,
            buffers: StepBuffers::default(),
            gas_flux: vec![0.0; n + 1],
            scratch_flux: vec![0.0; n + 1],
            ice_flux: vec![vec![0.0; n + 1]; SPECIES_COUNT],
            vapour_flux: vec![vec![0.0; n + 1]; SPECIES_COUNT],
            sigma,
            dust,
            grid,
        };
        // The accretion rate of the initial profile, 3 pi nu_0 Sigma_0 (section 12.1), with the
        // temperature of the file's rate; then the structure with that rate.
        if e.viscous_evolution {
            ev.refresh_structure()?;
            let nu0 = ev.viscosity(0);
            ev.accretion_g_s = 3.0 * PI * nu0 * ev.sigma[0];
        }
        ev.refresh_structure()?;
        // Totals per H of every species from the carriers; phases from the initial state.
        for i in 0..SPECIES_COUNT {
            let x = ev.carriers.species_per_h[i];
            for j in 0..n {
                let total = x * ev.sigma[j];
                match p.ices.initial_state {
                    InitialIceState::Inherited => ev.ice[i][j] = total,
                    InitialIceState::Gas | InitialIceState::Equilibrium => ev.vapour[i][j] = total,
                }
            }
        }
        // The ice at the start age: the initial state evolved over the disk's life so far at the
        // start's conditions, as the static model does over its age (docs/model.md section 7).
        ev.exchange(match p.ices.initial_state {
            InitialIceState::Equilibrium => f64::INFINITY,
            _ => e.start_myr * MYR_S,
        });
        // Refractory carbon: released inside the early phase's soot line (docs/model.md section 8).
        let early = match p.composition.soot_line {
            SootLine::Irreversible => ev.structure.early_soot_line_radius_cm,
            SootLine::Reversible => None,
        };
        ev.soot_history_cm = early;
        for j in 0..n {
            let x = ev.carriers.refractory_carbon_per_h * ev.sigma[j];
            if early.is_some_and(|r| ev.grid.centre_cm[j] <= r) {
                ev.carbon_gas[j] = x;
            } else {
                ev.carbon_solid[j] = x;
            }
        }
        ev.release_soot();
        Ok(ev)
    }

    fn viscosity(&self, j: usize) -> f64 {
        alpha_viscosity_cm2_s(
            self.e.alpha,
            self.structure.midplane_temperature_k[j],
            self.structure.constants.star_mass_g,
            self.grid.centre_cm[j],
        )
    }

    /// The static parameters at the current age: the star on its track, today's accretion rate.
    fn parameters_at_now(&self) -> ModelParameters {
        let mut q = self.p.clone();
        let (l, t) = self.e.star_track.at(
            self.p.star.luminosity_lsun,
            self.p.star.effective_temperature_k,
            self.p.disk.age_myr,
            self.time_myr,
        );
        q.star.luminosity_lsun = l;
        q.star.effective_temperature_k = t;
        q.disk.accretion_rate_msun_per_yr = self.accretion_g_s / MSUN_PER_YR_TO_G_PER_S;
        q.disk.age_myr = self.time_myr;
        q.grid.vertical_cells = self.e.vertical_cells;
        q
    }

    fn refresh_structure(&mut self) -> Result<(), PhysicsError> {
        let q = self.parameters_at_now();
        let sigma: Vec<f64> = self.sigma.iter().map(|s| s.max(1e-200)).collect();
        self.structure = DiskStructure::from_surface_density(&q, &self.grid.centre_cm, &sigma)?;
        self.parameters_now = q;
        Ok(())
    }

    fn step(&mut self, next_myr: f64) -> Result<(), PhysicsError> {
        let n = self.grid.cells();
        let dt = (next_myr - self.time_myr) * MYR_S;
        let nu: Vec<f64> = (0..n).map(|j| self.viscosity(j)).collect();
        // 1. Gas.
        if self.e.viscous_evolution {
            let mdot = viscous_step(
                &self.grid,
                &nu,
                &mut self.sigma,
                dt,
                &mut self.buffers,
                &mut self.gas_flux,
            );
            for s in self.sigma.iter_mut() {
                *s = s.max(1e-200);
            }
            self.accretion_g_s = mdot.max(0.0);
            self.gas_lost += dt * (self.gas_flux[n] - self.gas_flux[0]);
        }
        // 2. Face coefficients of the gas and of the dust.
        let (gas_faces, dust_faces) = self.face_coefficients(&nu, dt);
        // 3. Transport of every carried quantity.
        let mut dust = std::mem::take(&mut self.dust);
        let out = self.carry(&dust_faces, &mut dust, dt);
        self.account(out, Tracer::Dust);
        self.dust = dust;
        let mut c = std::mem::take(&mut self.carbon_solid);
        let out = self.carry(&dust_faces, &mut c, dt);
        self.account(out, Tracer::Carbon);
        self.carbon_solid = c;
        let mut c = std::mem::take(&mut self.carbon_gas);
        let out = self.carry(&gas_faces, &mut c, dt);
        self.account(out, Tracer::Carbon);
        self.carbon_gas = c;
        // 4. The new age's structure; then the local processes over the step.
        self.time_myr = next_myr;
        self.refresh_structure()?;
        self.release_soot();
        self.process_co(dt);
        // 5. Every species' vapour and ice, carried and exchanged together.
        self.carry_and_exchange(&gas_faces, &dust_faces, dt);
        Ok(())
    }

    /// Transport of every species' vapour (with the gas) and ice (with the pebbles) together with
    /// sublimation and freezing at the rates of the ice balance at the new age's midplane
    /// conditions, in one implicit step ([`transport::advect_diffuse_exchange`], docs/model.md
    /// section 12.4). The rate equation's loss R(n) is piecewise linear (section 7): each cell
    /// takes the branch of its ice before the step, and the step is solved again with the
    /// branches of its result until they agree (at most four solves). Where the ice balance has
    /// no kinetics (the step model, or no grains) or the cell held none of the species before
    /// the step, the species is carried without exchange and then set to its equilibrium.
    fn carry_and_exchange(&mut self, gas: &FaceCoefficients, dust: &FaceCoefficients, dt: f64) {
        let n = self.grid.cells();
        let st = &self.structure;
        let places: Vec<_> = (0..n)
            .map(|j| {
                let place = Place::of(&st.samples, st.index(j, 0));
                let sample = self.balance.sample(
                    place.temperature_k,
                    place.density_g_cm3,
                    place.fuv_photon_flux_cm2_s,
                    place.ionization_rate_s,
                );
                (sample, place.hydrogen_density_cm3)
            })
            .collect();
        let mut exchange = vec![LinearExchange::default(); n];
        let mut thick = vec![false; n];
        let mut equations = vec![None; n];
        for i in 0..SPECIES_COUNT {
            let (v0, i0) = (self.vapour[i].clone(), self.ice[i].clone());
            for j in 0..n {
                let total = v0[j] + i0[j];
                let per_x = places[j].1 / self.sigma[j];
                equations[j] = if total > 0.0 {
                    self.balance.rate_equation(&places[j].0, i, total * per_x)
                } else {
                    None
                };
                thick[j] = equations[j].is_some_and(|q: RateEquation| {
                    q.zeroth_order && i0[j] * per_x > q.monolayer_cm3
                });
            }
            let (mut v, mut x) = (v0.clone(), i0.clone());
            for _ in 0..4 {
                for j in 0..n {
                    exchange[j] = match equations[j] {
                        None => LinearExchange::default(),
                        Some(q) if thick[j] => LinearExchange {
                            freezing_s: q.adsorption_s,
                            sublimation_s: 0.0,
                            constant_sublimation: (q.desorption_s * q.monolayer_cm3
                                + q.photodesorption_cm3_s)
                                * self.sigma[j]
                                / places[j].1,
                        },
                        Some(q) => LinearExchange {
                            freezing_s: q.adsorption_s,
                            sublimation_s: q.desorption_s
                                + q.photodesorption_cm3_s / q.monolayer_cm3,
                            constant_sublimation: 0.0,
                        },
                    };
                }
                v.copy_from_slice(&v0);
                x.copy_from_slice(&i0);
                advect_diffuse_exchange(
                    &self.grid,
                    gas,
                    dust,
                    &self.sigma,
                    &exchange,
                    &mut v,
                    &mut x,
                    dt,
                    &mut self.vapour_flux[i],
                    &mut self.ice_flux[i],
                );
                let mut changed = false;
                for j in 0..n {
                    let now = equations[j].is_some_and(|q: RateEquation| {
                        q.zeroth_order && x[j] * places[j].1 / self.sigma[j] > q.monolayer_cm3
                    });
                    changed |= now != thick[j];
                    thick[j] = now;
                }
                if !changed {
                    break;
                }
            }
            for j in 0..n {
                let total = v[j] + x[j];
                if equations[j].is_none() && total > 0.0 {
                    // No kinetics here: the equilibrium of the carried total.
                    let molecules = total / self.sigma[j] * places[j].1;
                    let f = self
                        .balance
                        .solve_at(&places[j].0, i, molecules)
                        .ice_fraction
                        .clamp(0.0, 1.0);
                    x[j] = f * total;
                    v[j] = total - x[j];
                } else if x[j] < 0.0 {
                    // Rounding (or a branch left unresolved): the total is kept.
                    v[j] += x[j];
                    x[j] = 0.0;
                } else if v[j] < 0.0 {
                    x[j] += v[j];
                    v[j] = 0.0;
                }
            }
            self.vapour[i] = v;
            self.ice[i] = x;
            for flux in [&self.vapour_flux[i], &self.ice_flux[i]] {
                let out = (-flux[0] * dt, flux[n] * dt);
                let w = self.element_weights(Tracer::Species(i));
                for (lost, w) in self.lost.iter_mut().zip(w) {
                    *lost += w * (out.0 + out.1);
                }
            }
        }
    }

    /// Outward edge flux of one quantity over the step: (inner, outer) [X cm^2].
    fn carry(&mut self, faces: &FaceCoefficients, x: &mut [f64], dt: f64) -> (f64, f64) {
        advect_diffuse(
            &self.grid,
            faces,
            &self.sigma,
            x,
            dt,
            &mut self.buffers,
            &mut self.scratch_flux,
        );
        let n = self.grid.cells();
        (-self.scratch_flux[0] * dt, self.scratch_flux[n] * dt)
    }

    fn account(&mut self, (inner, outer): (f64, f64), tracer: Tracer) {
        let w = self.element_weights(tracer);
        for (lost, w) in self.lost.iter_mut().zip(w) {
            *lost += w * (inner + outer);
        }
    }

    /// Atoms of each element per unit of a tracer (X = abundance per H times Sigma_g).
    fn element_weights(&self, tracer: Tracer) -> [f64; ELEMENT_COUNT] {
        let mut w = [0.0; ELEMENT_COUNT];
        match tracer {
            Tracer::Species(i) => w[..4].copy_from_slice(&self.carriers.atoms[i]),
            Tracer::Carbon => w[Element::C as usize] = 1.0,
            Tracer::Dust => {
                let per = 1.0 / self.dust_to_gas0;
                w[Element::O as usize] = self.carriers.silicate_oxygen_per_h * per;
                w[Element::S as usize] = self.carriers.refractory_sulfur_per_h * per;
                for el in [Element::Si, Element::Mg, Element::Fe] {
                    w[el as usize] = self.carriers.stellar_per_h[el as usize] * per;
                }
            }
        }
        w
    }

    fn element_totals(&self) -> [f64; ELEMENT_COUNT] {
        let mut t = [0.0; ELEMENT_COUNT];
        let mut add = |w: [f64; ELEMENT_COUNT], x: &[f64]| {
            let m: f64 = x.iter().zip(&self.grid.area_cm2).map(|(a, b)| a * b).sum();
            for k in 0..ELEMENT_COUNT {
                t[k] += w[k] * m;
            }
        };
        add(self.element_weights(Tracer::Dust), &self.dust);
        add(self.element_weights(Tracer::Carbon), &self.carbon_solid);
        add(self.element_weights(Tracer::Carbon), &self.carbon_gas);
        for i in 0..SPECIES_COUNT {
            add(self.element_weights(Tracer::Species(i)), &self.vapour[i]);
            add(self.element_weights(Tracer::Species(i)), &self.ice[i]);
        }
        t
    }

    fn gas_mass(&self) -> f64 {
        self.sigma
            .iter()
            .zip(&self.grid.area_cm2)
            .map(|(a, b)| a * b)
            .sum()
    }

    /// Face coefficients of the gas (vapour, released carbon) and of the dust (pebbles, their
    /// ice and refractory carbon), docs/model.md sections 12.3-12.4; also grows the large grains.
    fn face_coefficients(&mut self, nu: &[f64], dt: f64) -> (FaceCoefficients, FaceCoefficients) {
        let n = self.grid.cells();
        let r = &self.grid.centre_cm;
        let f = &self.grid.face_cm;
        let m_star = self.structure.constants.star_mass_g;
        let t = &self.structure.midplane_temperature_k;
        let cs: Vec<f64> = t.iter().map(|&t| sound_speed_cm_s(t)).collect();
        let omega: Vec<f64> = r
            .iter()
            .map(|&r| keplerian_frequency_s(m_star, r))
            .collect();
        // Midplane pressure P = rho c_s^2 = Sigma c_s Omega / sqrt(2 pi).
        let ln_p: Vec<f64> = (0..n)
            .map(|j| ln(self.sigma[j] * cs[j] * omega[j]))
            .collect();
        let mut slope = vec![0.0; n + 1];
        for e in 1..n {
            slope[e] = (ln_p[e] - ln_p[e - 1]) / (ln(r[e]) - ln(r[e - 1]));
        }
        slope[0] = slope[1];
        slope[n] = slope[n - 1];
        // Large grains: size, Stokes numbers and mass fraction per cell.
        let rho_s = self.e.dust.material_density_g_cm3;
        let mut st0 = vec![0.0; n];
        let mut st1 = vec![0.0; n];
        let mut fm = vec![0.0; n];
        for j in 0..n {
            let place = DustPlace {
                gas_surface_density_g_cm2: self.sigma[j],
                dust_surface_density_g_cm2: self.dust[j],
                sound_speed_cm_s: cs[j],
                kepler_speed_cm_s: kepler_speed_cm_s(m_star, r[j]),
                // Floored at 0.01 where the pressure is nearly flat (docs/model.md section 12.3).
                pressure_slope: (0.5 * (slope[j] + slope[j + 1])).abs().max(0.01),
            };
            let (a, _, m) = self
                .dust_model
                .grow(&place, self.large_radius_cm[j], omega[j], dt);
            self.large_radius_cm[j] = a;
            st0[j] = stokes_number(self.dust_model.monomer_radius_cm, rho_s, self.sigma[j]);
            st1[j] = stokes_number(a, rho_s, self.sigma[j]);
            fm[j] = m;
        }
        let mut gas = FaceCoefficients::zeros(n + 1);
        let mut dust = FaceCoefficients::zeros(n + 1);
        let sc = self.e.schmidt_number;
        for e in 0..=n {
            let flux = if self.e.viscous_evolution {
                self.gas_flux[e]
            } else {
                0.0
            };
            let up = if flux > 0.0 {
                e.saturating_sub(1)
            } else {
                e.min(n - 1)
            };
            gas.advective[e] = flux / self.sigma[up];
            let (a, b) = (e.saturating_sub(1), e.min(n - 1));
            let mean = |v: &[f64]| 0.5 * (v[a] + v[b]);
            let v_gas = gas.advective[e] / (2.0 * PI * f[e]);
            let (s0, s1, m) = (mean(&st0), mean(&st1), mean(&fm));
            let v_dust = if self.e.dust.drift {
                let c = mean(&cs);
                let vk = kepler_speed_cm_s(m_star, f[e]);
                (1.0 - m) * radial_speed_cm_s(s0, v_gas, c, vk, slope[e])
                    + m * radial_speed_cm_s(s1, v_gas, c, vk, slope[e])
            } else {
                v_gas
            };
            dust.advective[e] = 2.0 * PI * f[e] * v_dust;
            if self.e.diffusion && e > 0 && e < n {
                let conductance =
                    2.0 * PI * f[e] * mean(nu) / sc * mean(&self.sigma) / (r[b] - r[a]);
                gas.diffusive[e] = conductance;
                let factor = if self.e.dust.drift {
                    (1.0 - m) / (1.0 + s0 * s0) + m / (1.0 + s1 * s1)
                } else {
                    1.0
                };
                dust.diffusive[e] = conductance * factor;
            }
        }
        (gas, dust)
    }

    /// Irreversible soot line: refractory carbon in cells at or above the soot-line temperature
    /// goes to the gas for good (docs/model.md section 12.5; Li et al. 2021).
    fn release_soot(&mut self) {
        if self.p.composition.soot_line != SootLine::Irreversible {
            return;
        }
        let t_soot = self.p.composition.soot_line_k;
        for j in 0..self.grid.cells() {
            if self.structure.midplane_temperature_k[j] >= t_soot {
                self.carbon_gas[j] += self.carbon_solid[j];
                self.carbon_solid[j] = 0.0;
                let r = self.grid.centre_cm[j];
                self.soot_history_cm = Some(self.soot_history_cm.map_or(r, |h| h.max(r)));
            }
        }
    }

    /// Optional CO processing: gas CO -> CH3OH (same C and O) at rate 1/tau where T_mid is at or
    /// below the threshold (docs/model.md section 12.6).
    fn process_co(&mut self, dt: f64) {
        let Some(c) = self.e.co_processing else {
            return;
        };
        let fraction = -crate::math::exp_m1(-dt / (c.timescale_myr * MYR_S));
        let (co, ch3oh) = (Species::CO.index(), Species::CH3OH.index());
        for j in 0..self.grid.cells() {
            if self.structure.midplane_temperature_k[j] <= c.max_temperature_k {
                let moved = self.vapour[co][j] * fraction;
                self.vapour[co][j] -= moved;
                self.vapour[ch3oh][j] += moved;
            }
        }
    }

    /// Sublimation and freezing over `dt` at the midplane conditions of the current structure:
    /// the exact solution of the ice balance's rate equation ([`crate::balance::RateEquation::evolve`])
    /// from the present ice, or its equilibrium for the step model or an infinite step.
    fn exchange(&mut self, dt: f64) {
        let st = &self.structure;
        for j in 0..self.grid.cells() {
            let place = Place::of(&st.samples, st.index(j, 0));
            let sample = self.balance.sample(
                place.temperature_k,
                place.density_g_cm3,
                place.fuv_photon_flux_cm2_s,
                place.ionization_rate_s,
            );
            for i in 0..SPECIES_COUNT {
                let total = self.vapour[i][j] + self.ice[i][j];
                if !(total > 0.0) {
                    continue;
                }
                let molecules = total / self.sigma[j] * place.hydrogen_density_cm3;
                let old = self.ice[i][j] / total;
                let f = match self.balance.rate_equation(&sample, i, molecules) {
                    Some(eq) if dt.is_finite() => eq.evolve(old * molecules, dt) / molecules,
                    _ => self.balance.solve_at(&sample, i, molecules).ice_fraction,
                }
                .clamp(0.0, 1.0);
                self.ice[i][j] = f * total;
                self.vapour[i][j] = total - self.ice[i][j];
            }
        }
    }

    /// The static model at the current age on the current structure: what
    /// [`EvolutionRun::static_model_at`] gives for a snapshot taken now, without building the
    /// structure again (it is `DiskStructure::from_surface_density` of `parameters_now` and the
    /// surface density, which the snapshot stores; the run keeps Sigma >= 1e-200, so the floor
    /// of `refresh_structure` changes nothing).
    fn static_model(&self) -> Result<Model, PhysicsError> {
        Model::run_on(self.structure.clone(), &self.parameters_now)
    }

    fn snapshot(&self) -> Snapshot {
        let n = self.grid.cells();
        let st = &self.structure;
        let cr = &self.carriers;
        let per = 1.0 / self.dust_to_gas0;
        let mut species_per_h = Vec::with_capacity(n);
        let mut ice_fraction = Vec::with_capacity(n);
        let mut phases = Vec::with_capacity(n);
        for j in 0..n {
            let s = self.sigma[j];
            let t = st.midplane_temperature_k[j];
            let mut gas = [0.0; ELEMENT_COUNT];
            let mut ice = [0.0; ELEMENT_COUNT];
            let mut refractory = [0.0; ELEMENT_COUNT];
            let mut totals = [0.0; SPECIES_COUNT];
            let mut fractions = [0.0; SPECIES_COUNT];
            for i in 0..SPECIES_COUNT {
                let (v, c) = (self.vapour[i][j] / s, self.ice[i][j] / s);
                totals[i] = v + c;
                fractions[i] = if v + c > 0.0 { c / (v + c) } else { 0.0 };
                for k in 0..4 {
                    gas[k] += cr.atoms[i][k] * v;
                    ice[k] += cr.atoms[i][k] * c;
                }
            }
            let carbon = Element::C as usize;
            gas[carbon] += self.carbon_gas[j] / s;
            let solid_c = self.carbon_solid[j] / s;
            if self.p.composition.soot_line == SootLine::Reversible && t >= cr.soot_line_k {
                gas[carbon] += solid_c;
            } else {
                refractory[carbon] += solid_c;
            }
            let d = self.dust[j] / s * per;
            let sulfur = if t >= cr.sulfide_release_k {
                &mut gas
            } else {
                &mut refractory
            };
            sulfur[Element::S as usize] += cr.refractory_sulfur_per_h * d;
            let silicate = if t >= cr.silicate_sublimation_k {
                &mut gas
            } else {
                &mut refractory
            };
            silicate[Element::O as usize] += cr.silicate_oxygen_per_h * d;
            for el in [Element::Si, Element::Mg, Element::Fe] {
                silicate[el as usize] += cr.stellar_per_h[el as usize] * d;
            }
            species_per_h.push(totals);
            ice_fraction.push(fractions);
            phases.push(PhaseAbundances {
                gas,
                ice,
                refractory,
            });
        }
        let mut snowline_cm = [None; SPECIES_COUNT];
        let mut pebble = [None; SPECIES_COUNT];
        let mut vapour = [None; SPECIES_COUNT];
        // Grams per unit of a tracer's flux (abundance per H x Sigma x area / time).
        let to_g_s: [f64; SPECIES_COUNT] = std::array::from_fn(|i| {
            cr.mass_amu[i] * ATOMIC_MASS_UNIT_G
                / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G)
        });
        let inward = |flux: &[Vec<f64>]| -> Vec<[f64; SPECIES_COUNT]> {
            (0..=n)
                .map(|e| std::array::from_fn(|i| (0.0 - flux[i][e]) * to_g_s[i]))
                .collect()
        };
        let ice_inward = inward(&self.ice_flux);
        let vapour_inward = inward(&self.vapour_flux);
        for i in 0..SPECIES_COUNT {
            if cr.species_per_h[i] == 0.0 {
                continue;
            }
            let f: Vec<f64> = ice_fraction.iter().map(|a| a[i]).collect();
            let line = crossings(&self.grid.centre_cm, &f, 0.5, false, true)
                .into_iter()
                .find(|l| l.direction == CrossingDirection::FreezeOut);
            if let Some(l) = line {
                snowline_cm[i] = Some(l.radius_cm);
                // The fluxes are those of the last step: none before the first.
                if self.time_myr > self.e.start_myr {
                    let e = nearest_face(&self.grid.face_cm, l.radius_cm);
                    pebble[i] = Some(ice_inward[e][i]);
                    vapour[i] = Some(vapour_inward[e][i]);
                }
            }
        }
        Snapshot {
            time_myr: self.time_myr,
            parameters: self.parameters_now.clone(),
            accretion_rate_msun_per_yr: self.accretion_g_s / MSUN_PER_YR_TO_G_PER_S,
            surface_density_g_cm2: self.sigma.clone(),
            gas_inward_flux_g_s: self.gas_flux.iter().map(|f| 0.0 - f).collect(),
            dust_surface_density_g_cm2: self.dust.clone(),
            large_grain_radius_cm: self.large_radius_cm.clone(),
            midplane_temperature_k: st.midplane_temperature_k.clone(),
            species_per_h,
            ice_fraction,
            phases,
            snowline_cm,
            pebble_flux_g_s: pebble,
            vapour_flux_g_s: vapour,
            ice_inward_flux_g_s: ice_inward,
            vapour_inward_flux_g_s: vapour_inward,
            soot_line_history_cm: self.soot_history_cm,
        }
    }
}

/// The index of the face nearest to `radius_cm` in ln r.
pub fn nearest_face(faces: &[f64], radius_cm: f64) -> usize {
    let k = faces.partition_point(|&f| f <= radius_cm);
    if k == 0 {
        return 0;
    }
    if k >= faces.len() {
        return faces.len() - 1;
    }
    if ln(radius_cm / faces[k - 1]) < ln(faces[k] / radius_cm) {
        k - 1
    } else {
        k
    }
}

#[derive(Debug, Clone, Copy)]
enum Tracer {
    Species(usize),
    Carbon,
    Dust,
}
