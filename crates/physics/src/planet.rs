//! The planet-formation argument (docs/model.md section 9): what a giant planet's
//! envelope contains if it accreted gas and solids at one place in the disk,
//! or along a migration path, and the inverse question: which formation places
//! fit an observed envelope C/O (and optionally [C/H] or [O/H]).
//!
//! # Forward model
//! A planet accretes gas mass M_gas and solid mass M_solid. Each gram of gas
//! carries 1 / (1.4 m_H) H nuclei (the 1.4 accounts for helium, docs/model.md
//! section 5) and, per H nucleus, the local gas-phase abundance x_e,gas of every
//! element; each gram of solids carries x_e,solid / m_solid_per_H atoms of
//! element e, where m_solid_per_H = `solid_mass_per_h_amu` u is the mass of
//! solids (ices as molecules, refractories as atoms) per H nucleus of the disk.
//! A fraction f_mix of the solids' atoms enters the envelope (the rest stays in
//! the core). The envelope then holds
//!
//!   N_e = (M_gas / 1.4 m_H) x_e,gas + f_mix (M_solid / m_solid_per_H) x_e,solid
//!
//! (the bookkeeping of Oberg, Murray-Clay & Bergin 2011, ApJL 743, L16, and
//! Madhusudhan, Amin & Kennedy 2014, ApJL 794, L12). Ratios: C/O = N_C / N_O;
//! X/H = N_X / N_H with **N_H = M_gas / 1.4 m_H from the gas only**: the
//! hydrogen locked in accreted ices (water, ammonia, ...) is not counted, so
//! X/H is "per H nucleus of the accreted gas". Divided by the star's X/H, and
//! in dex, [X/H] = log10 of that ratio. Only the mass ratio M_solid / M_gas
//! matters for every ratio; the absolute scale (`gas_mass_g`) only scales the
//! atom counts.
//!
//! # Inverse map
//! [`chi_square_map`] evaluates the forward model on the model's radial grid
//! (cell centres) times a log-spaced solid-to-gas ratio over 1e-3..1 and
//! compares with an observation by chi-square. See [`ConfidenceConvention`]
//! for which delta chi-square marks the 1- and 2-sigma regions and why.
//!
//! # Undefined values
//! A ratio whose denominator is below 1e-9 of the star's abundance of that
//! element (per H nucleus, or per gram on the same footing) is `None`, as
//! everywhere in the core (docs/model.md section 8). A place with no solids at all
//! (everything sublimated) cannot supply solids: asking for a positive
//! solid-to-gas ratio there is an error in the forward model and an undefined
//! row in the map.

use crate::budget::{defined_ratio, one_within_rounding, zero_below_rounding};
use crate::composition::star_c_to_o;
use crate::error::PhysicsError;
use crate::math::{exp, exp10, ln};
use crate::model::{LocalMidplane, Model};
use crate::params::{Element, ELEMENT_COUNT};
use crate::species::{Species, SPECIES_COUNT};
use crate::statistics::chi_square_survival;
use crate::units::{ATOMIC_MASS_UNIT_G, AU_CM, HYDROGEN_MASS_G, MASS_PER_HYDROGEN_NUCLEUS_AMU_H};

/// Number of midpoint-rule points used to average over a migration range (docs/model.md section 9).
pub const AVERAGING_POINTS: usize = 200;

/// Smallest and largest solid-to-gas mass ratio of the inverse map (docs/model.md section 9).
pub const MAP_SOLID_TO_GAS_RANGE: (f64, f64) = (1.0e-3, 1.0);

/// Default number of log-spaced solid-to-gas values in the inverse map.
pub const DEFAULT_MAP_RATIO_COUNT: usize = 48;

/// Fewest solid-to-gas values the inverse map accepts (docs/model.md section 9: at least 40).
pub const MIN_MAP_RATIO_COUNT: usize = 40;

/// Smallest 1-sigma error of an observed envelope C/O the inverse map accepts.
/// No spectrum measures C/O to better than about 0.01 (common practice, no
/// source); the floor of 1e-6 lies far below that and keeps chi2 =
/// (delta / sigma)^2 finite for every C/O in [0, [`MAX_OBSERVED_C_TO_O`]]
/// (at most (100 / 1e-6)^2 = 1e16), so no `inf` can reach an export.
pub const MIN_C_TO_O_SIGMA: f64 = 1e-6;

/// Smallest 1-sigma error of an observed [C/H] or [O/H] [dex]; same reasoning
/// as [`MIN_C_TO_O_SIGMA`] (abundances are measured to about 0.05 dex at best, common practice, no source).
pub const MIN_METALLICITY_SIGMA_DEX: f64 = 1e-6;

/// Largest observed envelope C/O accepted: C/O of planets and disks lies in
/// about 0.1-2 (common practice, no source); 100 leaves room for carbon-rich
/// extremes while bounding chi2.
pub const MAX_OBSERVED_C_TO_O: f64 = 100.0;

/// Largest |[C/H]| or |[O/H]| accepted [dex]: 10 dex is 10^10 times the star,
/// beyond any envelope (common practice, no source), and bounds chi2.
pub const MAX_OBSERVED_METALLICITY_DEX: f64 = 10.0;

/// Most solid-to-gas values the inverse map accepts (a bound on memory, 1000 x N_r rows).
pub const MAX_MAP_RATIO_COUNT: usize = 1000;

/// How the atoms per gram of each phase are weighted along a migration range.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RadialWeighting {
    /// Weighted by the mass the planet accretes there: midpoints uniform in
    /// radius as for `Uniform`, the gas's atoms per gram weighted by the gas
    /// mass of each annulus, w_k = Sigma_gas(r_k) 2 pi r_k dr, and the solids'
    /// by the solid mass, w_k times the local solid-to-gas ratio (a planet
    /// sweeping the range takes in each annulus's material in proportion to
    /// what is there; docs/model.md section 9, a model choice of this program). Default.
    #[default]
    AccretedMass,
    /// Uniform in radius: midpoints r_k = r1 + (k + 1/2)(r2 - r1)/200, equal
    /// weights (the specification's original average).
    Uniform,
    /// Uniform in ln r: midpoints r_k = r1 (r2/r1)^((k + 1/2)/200), equal
    /// weights; a planet spending equal time per factor in radius (common
    /// practice for migration at a rate proportional to r, no single source).
    LogRadius,
}

impl RadialWeighting {
    /// Key in outputs.
    pub fn key(self) -> &'static str {
        match self {
            RadialWeighting::AccretedMass => "accreted_mass",
            RadialWeighting::Uniform => "uniform",
            RadialWeighting::LogRadius => "log_radius",
        }
    }
}

/// Where the planet accretes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FormationPlace {
    /// At one radius, with the model evaluated at that radius itself (its own
    /// column, not the nearest grid cell).
    Radius {
        /// Formation radius [au].
        radius_au: f64,
    },
    /// Along a migration path from `inner_radius_au` to `outer_radius_au`:
    /// atoms per gram of each phase averaged over 200 midpoints.
    Migration {
        /// Inner end [au].
        inner_radius_au: f64,
        /// Outer end [au], greater than the inner end.
        outer_radius_au: f64,
        /// Weighting of the midpoints. Default by accreted mass.
        weighting: RadialWeighting,
    },
}

/// Atoms per gram of the gas and of the solids a planet can accrete at one
/// place (or averaged over a migration range).
#[derive(Debug, Clone, PartialEq)]
pub struct AccretedPhases {
    /// Inner end of the place [au] (equal to the outer end for one radius).
    pub inner_radius_au: f64,
    /// Outer end of the place [au].
    pub outer_radius_au: f64,
    /// H nuclei per gram of gas: 1 / (1.4 m_H) [g^-1].
    pub hydrogen_per_gram_of_gas: f64,
    /// Atoms of each element (C, O, N, S, Si, Mg, Fe) per gram of gas [g^-1].
    pub gas_atoms_per_g: [f64; ELEMENT_COUNT],
    /// Atoms of each element per gram of solids [g^-1]; `None` where the disk
    /// holds no solids (solid mass per H below 1e-9 of the fully condensed value).
    pub solid_atoms_per_g: Option<[f64; ELEMENT_COUNT]>,
    /// Solid mass per gram of gas [g/g] at this place: m_solid_per_H / (1.4 m_H),
    /// the local dust-to-gas mass ratio of the model (averaged like the atoms).
    pub solid_to_gas_available: f64,
    /// Number of the averaging points that held solids (1 or 0 for one radius).
    pub points_with_solids: usize,
    /// Number of averaging points (1 for one radius).
    pub points: usize,
    /// The star's abundances per H (C, O, N, S, Si, Mg, Fe).
    pub stellar_per_h: [f64; ELEMENT_COUNT],
    /// Per species (`Species::ALL` order): its ice is out of equilibrium at the disk's age at this
    /// place (at any averaging point), so the accreted phases depend on the disk's history.
    pub out_of_equilibrium: [bool; SPECIES_COUNT],
    /// The Sun's abundances per H: the star's reference compilation without its offsets.
    pub solar_per_h: [f64; ELEMENT_COUNT],
}

/// The Sun's X/H (C, O, N, S, Si, Mg, Fe): 10^(log eps - 12) of the model's
/// reference compilation, without the star's offsets (docs/model.md section 1).
pub fn solar_per_h(model: &Model) -> [f64; ELEMENT_COUNT] {
    model
        .parameters()
        .star
        .abundance_reference
        .log_eps()
        .map(|l| exp10(l - 12.0))
}

/// One element in the envelope.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ElementInEnvelope {
    /// The element.
    pub element: Element,
    /// Atoms in the envelope, N_e (for the given `gas_mass_g`).
    pub atoms: f64,
    /// Atoms that came with the gas.
    pub from_gas_atoms: f64,
    /// Atoms that came with the solids (after f_mix).
    pub from_solids_atoms: f64,
    /// N_e / N_H, with N_H from the gas only.
    pub per_h: f64,
    /// (N_e / N_H) / (X/H of the star).
    pub relative_to_star: f64,
    /// [X/H] relative to the star = log10 of `relative_to_star`; `None` where N_e/N_H is below 1e-9 of the star's X/H.
    pub dex: Option<f64>,
    /// (N_e / N_H) / (X/H of the Sun).
    pub relative_to_sun: f64,
    /// [X/H] relative to the Sun [dex]; `None` where N_e/N_H is below 1e-9 of the Sun's X/H.
    pub dex_sun: Option<f64>,
    /// Fraction of the atoms that came with the solids; `None` where the envelope has none.
    pub solid_share: Option<f64>,
}

/// The envelope of a planet.
#[derive(Debug, Clone, PartialEq)]
pub struct Envelope {
    /// Accreted gas mass [g] (scale only; ratios do not depend on it).
    pub gas_mass_g: f64,
    /// Accreted solid mass [g] = `solid_to_gas` x `gas_mass_g`.
    pub solid_mass_g: f64,
    /// M_solid / M_gas.
    pub solid_to_gas: f64,
    /// Fraction f_mix of the solids' atoms in the envelope.
    pub solid_mixing_fraction: f64,
    /// H nuclei in the envelope, from the gas only: M_gas / (1.4 m_H).
    pub hydrogen_atoms: f64,
    /// Per element, in `Element::ALL` order.
    pub elements: [ElementInEnvelope; ELEMENT_COUNT],
    /// C/O = N_C / N_O; `None` where N_O / N_H is below 1e-9 of the star's O/H.
    pub c_to_o: Option<f64>,
    /// The star's abundances per H (C, O, N, S, Si, Mg, Fe), the reference of every [X/H].
    pub stellar_per_h: [f64; ELEMENT_COUNT],
}

impl Envelope {
    /// The entry of one element.
    pub fn element(&self, e: Element) -> &ElementInEnvelope {
        &self.elements[e as usize]
    }
    /// [C/H] relative to the Sun, in dex.
    pub fn c_to_h_dex_rel_sun(&self) -> Option<f64> {
        self.element(Element::C).dex_sun
    }
    /// [O/H] relative to the Sun, in dex.
    pub fn o_to_h_dex_rel_sun(&self) -> Option<f64> {
        self.element(Element::O).dex_sun
    }
    /// [C/H] relative to the star, in dex.
    pub fn c_to_h_dex(&self) -> Option<f64> {
        self.element(Element::C).dex
    }
    /// [O/H] relative to the star, in dex.
    pub fn o_to_h_dex(&self) -> Option<f64> {
        self.element(Element::O).dex
    }
    /// The envelope C/O divided by the star's C/O.
    pub fn c_to_o_relative_to_star(&self) -> Option<f64> {
        let star = star_c_to_o(&self.stellar_per_h);
        self.c_to_o.map(|r| r / star)
    }
}

/// What a planet asks for: where, how much gas, how much solid, how mixed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlanetRequest {
    /// Where it accretes.
    pub place: FormationPlace,
    /// Accreted gas mass [g]. Default 1 (the absolute scale cancels in every ratio). Must be > 0.
    pub gas_mass_g: f64,
    /// Solid-to-gas mass ratio M_solid / M_gas; >= 0 and finite.
    pub solid_to_gas: f64,
    /// Fraction f_mix of the solids' atoms that enter the envelope, in [0, 1]. Default 1.
    pub solid_mixing_fraction: f64,
}

impl PlanetRequest {
    /// A planet accreting at one radius, with M_gas = 1 g and f_mix = 1.
    pub fn at(radius_au: f64, solid_to_gas: f64) -> PlanetRequest {
        PlanetRequest {
            place: FormationPlace::Radius { radius_au },
            gas_mass_g: 1.0,
            solid_to_gas,
            solid_mixing_fraction: 1.0,
        }
    }
    /// A planet accreting along [inner, outer] au, weighted by accreted mass (the default), M_gas = 1 g, f_mix = 1.
    pub fn migrating(
        inner_radius_au: f64,
        outer_radius_au: f64,
        solid_to_gas: f64,
    ) -> PlanetRequest {
        PlanetRequest {
            place: FormationPlace::Migration {
                inner_radius_au,
                outer_radius_au,
                weighting: RadialWeighting::AccretedMass,
            },
            gas_mass_g: 1.0,
            solid_to_gas,
            solid_mixing_fraction: 1.0,
        }
    }
}

/// The result of the forward model: the phases accreted and the envelope.
#[derive(Debug, Clone, PartialEq)]
pub struct Planet {
    /// Atoms per gram of the accreted phases.
    pub phases: AccretedPhases,
    /// The envelope.
    pub envelope: Envelope,
}

/// The forward model (docs/model.md section 9): the envelope of a planet that
/// accreted as `request` says in the disk `model`.
///
/// Errors (`PhysicsError`): `OutOfRange` for `gas_mass_g` (> 0, finite),
/// `solid_to_gas` (>= 0, finite), `solid_mixing_fraction` ([0, 1]);
/// `RadiusOutsideDisk` for a radius outside [r_in, r_out]; `NotIncreasing`
/// when the migration range is not inner < outer; `NoSolidsToAccrete` for a
/// positive solid-to-gas ratio where the disk holds no solids.
pub fn planet(model: &Model, request: &PlanetRequest) -> Result<Planet, PhysicsError> {
    check_envelope_inputs(
        request.gas_mass_g,
        request.solid_to_gas,
        request.solid_mixing_fraction,
    )?;
    let phases = match request.place {
        FormationPlace::Radius { radius_au } => AccretedPhases::at(model, radius_au)?,
        FormationPlace::Migration {
            inner_radius_au,
            outer_radius_au,
            weighting,
        } => AccretedPhases::averaged(model, inner_radius_au, outer_radius_au, weighting)?,
    };
    let envelope = phases.envelope(
        request.gas_mass_g,
        request.solid_to_gas,
        request.solid_mixing_fraction,
    )?;
    Ok(Planet { phases, envelope })
}

fn check_envelope_inputs(
    gas_mass_g: f64,
    solid_to_gas: f64,
    solid_mixing_fraction: f64,
) -> Result<(), PhysicsError> {
    if !(gas_mass_g > 0.0 && gas_mass_g.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "gas_mass_g",
            value: gas_mass_g,
            allowed: "> 0 and finite",
        });
    }
    if !(solid_to_gas >= 0.0 && solid_to_gas.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "solid_to_gas",
            value: solid_to_gas,
            allowed: ">= 0 and finite",
        });
    }
    if !(0.0..=1.0).contains(&solid_mixing_fraction) {
        return Err(PhysicsError::OutOfRange {
            name: "solid_mixing_fraction",
            value: solid_mixing_fraction,
            allowed: "in [0, 1]",
        });
    }
    Ok(())
}

fn check_radius(model: &Model, name: &'static str, radius_au: f64) -> Result<(), PhysicsError> {
    let d = &model.parameters().disk;
    if !(radius_au >= d.inner_radius_au && radius_au <= d.outer_radius_au) {
        return Err(PhysicsError::RadiusOutsideDisk {
            name,
            radius_au,
            inner_au: d.inner_radius_au,
            outer_au: d.outer_radius_au,
        });
    }
    Ok(())
}

/// Atoms per gram of the two phases at one local midplane state.
struct PointPhases {
    gas: [f64; ELEMENT_COUNT],
    solid: Option<[f64; ELEMENT_COUNT]>,
    solid_to_gas: f64,
    out_of_equilibrium: [bool; SPECIES_COUNT],
}

/// Mass of solids per H [amu] if every carrier were solid: the reference below
/// which a place counts as holding no solids.
fn fully_condensed_mass_per_h_amu(model: &Model) -> f64 {
    let c = &model.carriers();
    let mut m: f64 = c
        .species_per_h
        .iter()
        .zip(&c.mass_amu)
        .map(|(x, m)| x * m)
        .sum();
    m += c.refractory_carbon_per_h * Element::C.atomic_mass_amu();
    m += c.refractory_sulfur_per_h * Element::S.atomic_mass_amu();
    m += c.silicate_oxygen_per_h * Element::O.atomic_mass_amu();
    for e in [Element::Si, Element::Mg, Element::Fe] {
        m += c.stellar_per_h[e as usize] * e.atomic_mass_amu();
    }
    m
}

fn point_phases(local: &LocalMidplane, reference_solid_amu: f64) -> PointPhases {
    let gram_per_h = MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G;
    let ph = &local.phases;
    let gas = ph.gas.map(|x| x / gram_per_h);
    let solid = if local.solid_mass_per_h_amu > 1e-9 * reference_solid_amu {
        let m = local.solid_mass_per_h_amu * ATOMIC_MASS_UNIT_G;
        let mut s = [0.0; ELEMENT_COUNT];
        for (e, v) in s.iter_mut().enumerate() {
            *v = (ph.ice[e] + ph.refractory[e]) / m;
        }
        Some(s)
    } else {
        None
    };
    PointPhases {
        gas,
        solid,
        solid_to_gas: local.solid_mass_per_h_amu * ATOMIC_MASS_UNIT_G / gram_per_h,
        out_of_equilibrium: local.out_of_equilibrium,
    }
}

/// The local midplane state of grid cell `j` taken straight from the computed
/// grid (the same numbers as `Model::midplane_at` at the cell centre, without
/// recomputing the column).
fn grid_midplane(model: &Model, j: usize) -> LocalMidplane {
    let st = &model.structure();
    let k = st.index(j, 0);
    let phases = model.phases_at(k);
    let ice_fraction = Species::ALL.map(|s| model.ice_fraction_at(s, k));
    let out_of_equilibrium = Species::ALL.map(|s| model.out_of_equilibrium_at(s, k));
    let solid_mass_per_h_amu = model
        .composition()
        .solid_mass_per_h_amu(j, &phases, |i| ice_fraction[i]);
    LocalMidplane {
        radius_cm: st.radius_cm[j],
        temperature_k: st.midplane_temperature_k[j],
        ice_fraction,
        out_of_equilibrium,
        phases,
        solid_mass_per_h_amu,
    }
}

impl AccretedPhases {
    fn from_point(
        model: &Model,
        inner_radius_au: f64,
        outer_radius_au: f64,
        p: PointPhases,
    ) -> AccretedPhases {
        AccretedPhases {
            inner_radius_au,
            outer_radius_au,
            hydrogen_per_gram_of_gas: 1.0 / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G),
            gas_atoms_per_g: p.gas,
            points_with_solids: usize::from(p.solid.is_some()),
            solid_atoms_per_g: p.solid,
            solid_to_gas_available: p.solid_to_gas,
            points: 1,
            stellar_per_h: *model.stellar_per_h(),
            out_of_equilibrium: p.out_of_equilibrium,
            solar_per_h: solar_per_h(model),
        }
    }

    /// The phases at one radius: `Model::midplane_at(radius_au)`, the model's
    /// own column at that radius. `RadiusOutsideDisk` (name `radius_au`) outside [r_in, r_out].
    pub fn at(model: &Model, radius_au: f64) -> Result<AccretedPhases, PhysicsError> {
        check_radius(model, "radius_au", radius_au)?;
        let local = model.midplane_at(radius_au)?;
        let p = point_phases(&local, fully_condensed_mass_per_h_amu(model));
        Ok(AccretedPhases::from_point(model, radius_au, radius_au, p))
    }

    /// The phases at the centre of radial grid cell `j`, read from the computed
    /// grid (equal to [`AccretedPhases::at`] at that radius; a test checks it).
    /// `OutOfRange` (name `radial_cell`) for `j` beyond the grid.
    pub fn at_grid_cell(model: &Model, j: usize) -> Result<AccretedPhases, PhysicsError> {
        if j >= model.structure().radial_cells {
            return Err(PhysicsError::OutOfRange {
                name: "radial_cell",
                value: j as f64,
                allowed: "below the number of radial cells",
            });
        }
        let r_au = model.structure().radius_cm[j] / AU_CM;
        let p = point_phases(
            &grid_midplane(model, j),
            fully_condensed_mass_per_h_amu(model),
        );
        Ok(AccretedPhases::from_point(model, r_au, r_au, p))
    }

    /// The phases averaged over a migration range [inner, outer] au
    /// (docs/model.md section 9): atoms per gram of each phase averaged with the
    /// midpoint rule over 200 points placed and weighted as `weighting` says
    /// (by accreted mass: gas weights Sigma_gas(r_k) r_k, solid weights those
    /// times the local solid-to-gas ratio), each point the model's own column at
    /// that radius. The solids' atoms per gram are averaged over the points that
    /// hold solids (a place without solids supplies none), so they are `None`
    /// only when no point holds solids.
    pub fn averaged(
        model: &Model,
        inner_radius_au: f64,
        outer_radius_au: f64,
        weighting: RadialWeighting,
    ) -> Result<AccretedPhases, PhysicsError> {
        check_radius(model, "inner_radius_au", inner_radius_au)?;
        check_radius(model, "outer_radius_au", outer_radius_au)?;
        if !(outer_radius_au > inner_radius_au) {
            return Err(PhysicsError::NotIncreasing {
                name: "outer_radius_au",
                value: outer_radius_au,
                lower_name: "inner_radius_au",
                lower: inner_radius_au,
            });
        }
        let reference = fully_condensed_mass_per_h_amu(model);
        let n = AVERAGING_POINTS;
        let mut gas = [0.0; ELEMENT_COUNT];
        let mut solid = [0.0; ELEMENT_COUNT];
        let mut solid_to_gas = 0.0;
        let mut with_solids = 0usize;
        let mut out_of_equilibrium = [false; SPECIES_COUNT];
        let (mut gas_weight, mut solid_weight) = (0.0, 0.0);
        let ln_ratio = ln(outer_radius_au / inner_radius_au);
        for k in 0..n {
            let t = (k as f64 + 0.5) / n as f64;
            let r = match weighting {
                RadialWeighting::Uniform | RadialWeighting::AccretedMass => {
                    inner_radius_au + t * (outer_radius_au - inner_radius_au)
                }
                RadialWeighting::LogRadius => inner_radius_au * exp(t * ln_ratio),
            };
            let p = point_phases(&model.midplane_at(r)?, reference);
            // Gas weight: Sigma_gas r (dr is the same at every midpoint), or 1.
            let w = match weighting {
                RadialWeighting::AccretedMass => {
                    model.structure().surface_density_at(r * AU_CM) * r
                }
                _ => 1.0,
            };
            for (sum, v) in gas.iter_mut().zip(p.gas) {
                *sum += w * v;
            }
            gas_weight += w;
            if let Some(s) = p.solid {
                with_solids += 1;
                let ws = match weighting {
                    RadialWeighting::AccretedMass => w * p.solid_to_gas,
                    _ => 1.0,
                };
                for (sum, v) in solid.iter_mut().zip(s) {
                    *sum += ws * v;
                }
                solid_weight += ws;
            }
            solid_to_gas += w * p.solid_to_gas;
            for (flag, point) in out_of_equilibrium.iter_mut().zip(p.out_of_equilibrium) {
                *flag |= point;
            }
        }
        let gas = gas.map(|v| v / gas_weight);
        let solid_atoms_per_g = if with_solids > 0 && solid_weight > 0.0 {
            Some(solid.map(|v| v / solid_weight))
        } else {
            None
        };
        let solid_to_gas = solid_to_gas * n as f64 / gas_weight;
        Ok(AccretedPhases {
            inner_radius_au,
            outer_radius_au,
            hydrogen_per_gram_of_gas: 1.0 / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G),
            gas_atoms_per_g: gas,
            solid_atoms_per_g,
            solid_to_gas_available: solid_to_gas / n as f64,
            points_with_solids: with_solids,
            points: n,
            stellar_per_h: *model.stellar_per_h(),
            out_of_equilibrium,
            solar_per_h: solar_per_h(model),
        })
    }

    /// C/O of the accreted gas (atoms per gram); `None` below the 1e-9 rule.
    pub fn gas_c_to_o(&self) -> Option<f64> {
        let (c, o) = (Element::C as usize, Element::O as usize);
        let carbon = zero_below_rounding(
            self.gas_atoms_per_g[c],
            self.stellar_per_h[c] * self.hydrogen_per_gram_of_gas,
        );
        defined_ratio(
            carbon,
            self.gas_atoms_per_g[o],
            self.stellar_per_h[o] * self.hydrogen_per_gram_of_gas,
        )
    }

    /// C/O of the accreted solids (atoms per gram); `None` where there are no
    /// solids or their oxygen per gram is below 1e-9 of the star's O per gram of gas.
    pub fn solid_c_to_o(&self) -> Option<f64> {
        let (c, o) = (Element::C as usize, Element::O as usize);
        let s = self.solid_atoms_per_g?;
        // Carbon per gram of solids below 1e-9 of the star's C per gram of gas is zero up to rounding.
        let carbon =
            zero_below_rounding(s[c], self.stellar_per_h[c] * self.hydrogen_per_gram_of_gas);
        defined_ratio(
            carbon,
            s[o],
            self.stellar_per_h[o] * self.hydrogen_per_gram_of_gas,
        )
    }

    /// The envelope for gas mass `gas_mass_g`, solid-to-gas ratio and f_mix
    /// (validated as in [`planet`]; `NoSolidsToAccrete` for a positive ratio
    /// where these phases hold no solids).
    pub fn envelope(
        &self,
        gas_mass_g: f64,
        solid_to_gas: f64,
        solid_mixing_fraction: f64,
    ) -> Result<Envelope, PhysicsError> {
        check_envelope_inputs(gas_mass_g, solid_to_gas, solid_mixing_fraction)?;
        if solid_to_gas > 0.0 && self.solid_atoms_per_g.is_none() {
            return Err(PhysicsError::NoSolidsToAccrete {
                name: "solid_to_gas",
                value: solid_to_gas,
                inner_au: self.inner_radius_au,
                outer_au: self.outer_radius_au,
            });
        }
        Ok(self.envelope_unchecked(gas_mass_g, solid_to_gas, solid_mixing_fraction))
    }

    /// The envelope without input checks; the solids contribute nothing where
    /// there are none (callers make sure that only happens for a zero ratio).
    fn envelope_unchecked(
        &self,
        gas_mass_g: f64,
        solid_to_gas: f64,
        solid_mixing_fraction: f64,
    ) -> Envelope {
        let solid_mass_g = solid_to_gas * gas_mass_g;
        let hydrogen_atoms = gas_mass_g * self.hydrogen_per_gram_of_gas;
        let elements: [ElementInEnvelope; ELEMENT_COUNT] = std::array::from_fn(|e| {
            // Atoms below 1e-9 of the star's share of this element (per H of the
            // accreted gas) are zero up to rounding (docs/model.md section 8).
            let star = self.stellar_per_h[e];
            let total = star * hydrogen_atoms;
            let from_gas_atoms = zero_below_rounding(gas_mass_g * self.gas_atoms_per_g[e], total);
            let from_solids_atoms = match &self.solid_atoms_per_g {
                Some(s) => zero_below_rounding(
                    solid_mixing_fraction * solid_mass_g * s[e],
                    total.max(from_gas_atoms),
                ),
                None => 0.0,
            };
            let atoms = from_gas_atoms + from_solids_atoms;
            let per_h = atoms / hydrogen_atoms;
            let relative_to_star = one_within_rounding(per_h / star);
            ElementInEnvelope {
                element: Element::ALL[e],
                atoms,
                from_gas_atoms,
                from_solids_atoms,
                per_h,
                relative_to_star,
                dex: if per_h >= 1e-9 * star && per_h > 0.0 {
                    Some(log10(relative_to_star))
                } else {
                    None
                },
                relative_to_sun: one_within_rounding(per_h / self.solar_per_h[e]),
                dex_sun: if per_h >= 1e-9 * self.solar_per_h[e] && per_h > 0.0 {
                    Some(log10(one_within_rounding(per_h / self.solar_per_h[e])))
                } else {
                    None
                },
                solid_share: if atoms > 0.0 {
                    Some(from_solids_atoms / atoms)
                } else {
                    None
                },
            }
        });
        let (c, o) = (Element::C as usize, Element::O as usize);
        let c_to_o = defined_ratio(elements[c].per_h, elements[o].per_h, self.stellar_per_h[o])
            .map(|_| elements[c].atoms / elements[o].atoms);
        Envelope {
            gas_mass_g,
            solid_mass_g,
            solid_to_gas,
            solid_mixing_fraction,
            hydrogen_atoms,
            elements,
            c_to_o,
            stellar_per_h: self.stellar_per_h,
        }
    }
}

/// log10 through the shared libm routines (so native and wasm agree).
fn log10(x: f64) -> f64 {
    ln(x) / std::f64::consts::LN_10
}

// ---------------------------------------------------------------------------
// Inverse map.

/// A quantity an atmospheric retrieval gives of a planet's envelope.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Observable {
    /// C/O, the number ratio (linear, no reference).
    CToO,
    /// [C/H] [dex], relative to the star or the Sun.
    CToH,
    /// [O/H] [dex], relative to the star or the Sun.
    OToH,
    /// [M/H] [dex]: (C + O + N + S)/H relative to the same sum of the
    /// reference, the metallicity of the volatile elements the model partitions
    /// between gas and solids (Si, Mg, Fe are not counted). A choice of this
    /// program (no single source; retrievals define [M/H] in several ways).
    MToH,
}

impl Observable {
    /// Every observable, in the order they are fitted and listed.
    pub const ALL: [Observable; 4] = [
        Observable::CToO,
        Observable::CToH,
        Observable::OToH,
        Observable::MToH,
    ];
    /// Key in outputs and options: c_to_o, c_to_h, o_to_h, m_to_h.
    pub fn key(self) -> &'static str {
        match self {
            Observable::CToO => "c_to_o",
            Observable::CToH => "c_to_h",
            Observable::OToH => "o_to_h",
            Observable::MToH => "m_to_h",
        }
    }
    /// Label: "C/O", "[C/H]", "[O/H]", "[M/H]".
    pub fn label(self) -> &'static str {
        match self {
            Observable::CToO => "C/O",
            Observable::CToH => "[C/H]",
            Observable::OToH => "[O/H]",
            Observable::MToH => "[M/H]",
        }
    }
    /// True for the metallicities (in dex).
    pub fn is_metallicity(self) -> bool {
        self != Observable::CToO
    }
}

/// What a metallicity [X/H] is relative to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum MetallicityReference {
    /// The star's own X/H (the reference compilation plus the star's offsets). Default.
    #[default]
    Star,
    /// The Sun: the reference compilation's photospheric X/H without the star's offsets.
    Sun,
}

impl MetallicityReference {
    /// Key in outputs: "star" or "sun".
    pub fn key(self) -> &'static str {
        match self {
            MetallicityReference::Star => "star",
            MetallicityReference::Sun => "sun",
        }
    }
}

/// One observed quantity with its 1-sigma error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Observation {
    /// What was observed.
    pub quantity: Observable,
    /// The value (C/O linear; metallicities in dex).
    pub value: f64,
    /// 1-sigma error (> 0; ignored when a covariance matrix is given).
    pub sigma: f64,
}

/// What was observed of a planet's envelope: any of C/O, [C/H], [O/H] and
/// [M/H], each at most once, optionally with their covariance.
#[derive(Debug, Clone, PartialEq)]
pub struct ObservedEnvelope {
    /// The observed quantities (at least one, each at most once).
    pub observations: Vec<Observation>,
    /// Optional covariance matrix, row-major n x n in the order of
    /// `observations`; symmetric and positive definite. When given it
    /// replaces the sigmas: chi2 = r^T C^-1 r.
    pub covariance: Option<Vec<f64>>,
    /// What the metallicities are relative to.
    pub relative_to: MetallicityReference,
}

impl ObservedEnvelope {
    /// C/O alone, metallicities (none) relative to the star.
    pub fn c_to_o(value: f64, sigma: f64) -> ObservedEnvelope {
        ObservedEnvelope {
            observations: vec![Observation {
                quantity: Observable::CToO,
                value,
                sigma,
            }],
            covariance: None,
            relative_to: MetallicityReference::Star,
        }
    }
    /// Adds an observed quantity.
    pub fn with(mut self, quantity: Observable, value: f64, sigma: f64) -> ObservedEnvelope {
        self.observations.push(Observation {
            quantity,
            value,
            sigma,
        });
        self
    }
    /// The observation of `quantity`, if any.
    pub fn get(&self, quantity: Observable) -> Option<&Observation> {
        self.observations.iter().find(|o| o.quantity == quantity)
    }
    /// True when a metallicity ([C/H], [O/H] or [M/H]) is fitted.
    pub fn has_metallicity(&self) -> bool {
        self.observations
            .iter()
            .any(|o| o.quantity.is_metallicity())
    }
    /// Number of observed quantities fitted.
    pub fn fitted_quantities(&self) -> usize {
        self.observations.len()
    }
    /// What is fitted, in words ("C/O", "C/O and [O/H]", "C/O, [C/H] and [O/H]").
    pub fn fitted_label(&self) -> String {
        let labels: Vec<&str> = self
            .observations
            .iter()
            .map(|o| o.quantity.label())
            .collect();
        match labels.len() {
            0 => String::new(),
            1 => labels[0].to_string(),
            n => format!("{} and {}", labels[..n - 1].join(", "), labels[n - 1]),
        }
    }
}

/// Which delta chi-square marks the 1- and 2-sigma regions.
///
/// The map scans two parameters (formation radius, solid-to-gas ratio). For a
/// joint confidence region of nu parameters the threshold is the chi-square
/// quantile with nu degrees of freedom at 68.27 % and 95.45 %: 2.30 and 6.18
/// for nu = 2, 1.00 and 4.00 for nu = 1 (Press et al. 2007, Numerical Recipes,
/// 3rd ed., section 15.6.5 and its table of delta chi-square; Avni 1976,
/// ApJ 210, 642). docs/model.md section 9 prescribes nu = 2, the default.
///
/// With only C/O observed, one number constrains two parameters: the chi-square
/// surface has a valley along which chi2 = 0, the parameters are not
/// determined, and the Gaussian reasoning behind "nu = number of parameters"
/// does not hold. Then the region delta chi2 <= 2.30 is the set of places whose
/// C/O lies within 1.52 sigma of the observation. Some authors instead count
/// the fitted quantities (nu = 1 for C/O alone: the region where the model lies
/// within 1 sigma of the observed value); [`ConfidenceConvention::FittedQuantities`]
/// gives that reading. With two fitted quantities both conventions coincide.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ConfidenceConvention {
    /// nu = 2, the two mapped parameters (docs/model.md section 9). Default.
    #[default]
    MappedParameters,
    /// nu = number of fitted observed quantities (1 for C/O alone, 2 or more with metallicities; capped at 2).
    FittedQuantities,
}

impl ConfidenceConvention {
    /// Key in outputs.
    pub fn key(self) -> &'static str {
        match self {
            ConfidenceConvention::MappedParameters => "mapped_parameters",
            ConfidenceConvention::FittedQuantities => "fitted_quantities",
        }
    }
}

/// The delta chi-square thresholds in use.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DeltaChiSquare {
    /// The convention that chose them.
    pub convention: ConfidenceConvention,
    /// Degrees of freedom nu.
    pub degrees_of_freedom: usize,
    /// 1-sigma (68.27 %) threshold.
    pub one_sigma: f64,
    /// 2-sigma (95.45 %) threshold.
    pub two_sigma: f64,
}

impl DeltaChiSquare {
    /// Thresholds for `convention` when `fitted_quantities` numbers are fitted.
    /// nu = 1: 1.00 and 4.00; nu = 2: 2.30 and 6.18 (Press et al. 2007, section 15.6.5).
    pub fn new(convention: ConfidenceConvention, fitted_quantities: usize) -> DeltaChiSquare {
        let nu = match convention {
            ConfidenceConvention::MappedParameters => 2,
            ConfidenceConvention::FittedQuantities => fitted_quantities.clamp(1, 2),
        };
        let (one_sigma, two_sigma) = if nu == 1 { (1.00, 4.00) } else { (2.30, 6.18) };
        DeltaChiSquare {
            convention,
            degrees_of_freedom: nu,
            one_sigma,
            two_sigma,
        }
    }
}

/// Fraction of a giant planet's oxygen locked in silicate and metal-oxide
/// condensates below the observable atmosphere, about 20 % (Burrows & Sharp
/// 1999, ApJ 512, 843, section on condensation: roughly 20 % of O is bound
/// to Si, Mg, Ca and Al in deep condensates). Used by the optional correction.
pub const BURROWS_SHARP_OXYGEN_SEQUESTERED: f64 = 0.2;

/// Default feeding-zone half-width in Hill radii: 2 sqrt(3) = 3.46, the
/// half-width of the region a protoplanet on a circular orbit can accrete from
/// (Lissauer 1993, ARA&A 31, 129, section 3; from memory, M).
pub const DEFAULT_FEEDING_ZONE_HILL_RADII: f64 = 3.464_101_615_137_754_6;

/// Fitted parameters of the map (formation radius, solid-to-gas ratio).
pub const FITTED_PARAMETERS: usize = 2;

/// Smallest p-value at which a fit counts as acceptable (common practice, no
/// source: a 1 % significance level).
pub const ACCEPTABLE_P_VALUE: f64 = 0.01;

/// Settings of the inverse map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapSettings {
    /// Number of log-spaced solid-to-gas values (both ends included). Default 48, in [40, 1000].
    pub ratio_count: usize,
    /// Smallest solid-to-gas value. Default 1e-3; > 0.
    pub ratio_min: f64,
    /// Largest solid-to-gas value. Default 1; greater than `ratio_min`, at most 1000.
    pub ratio_max: f64,
    /// f_mix, fixed over the map. Default 1.
    pub solid_mixing_fraction: f64,
    /// Delta chi-square convention. Default two mapped parameters (2.30, 6.18).
    pub convention: ConfidenceConvention,
    /// Flat prior on the formation radius [au]: places outside are excluded. Default none.
    pub radius_prior_au: Option<(f64, f64)>,
    /// Flat prior on the solid-to-gas ratio: ratios outside are excluded. Default none.
    pub solid_to_gas_prior: Option<(f64, f64)>,
    /// Fraction of the envelope's oxygen taken as hidden in the planet's own
    /// condensates before comparing with the observation, in [0, 1). Default 0
    /// (no correction); [`BURROWS_SHARP_OXYGEN_SEQUESTERED`] is the usual value.
    pub oxygen_sequestered_fraction: f64,
    /// Planet mass [M_Jup]; when given, places whose feeding zone holds less
    /// gas than the envelope are infeasible. Default none.
    pub planet_mass_mjup: Option<f64>,
    /// Feeding-zone half-width [Hill radii]. Default [`DEFAULT_FEEDING_ZONE_HILL_RADII`].
    pub feeding_zone_hill_radii: f64,
}

impl MapSettings {
    /// The defaults: 48 ratios over 1e-3..1, f_mix = 1, two-parameter
    /// thresholds, no priors, no oxygen correction, no planet mass.
    pub fn defaults() -> MapSettings {
        MapSettings {
            ratio_count: DEFAULT_MAP_RATIO_COUNT,
            ratio_min: MAP_SOLID_TO_GAS_RANGE.0,
            ratio_max: MAP_SOLID_TO_GAS_RANGE.1,
            solid_mixing_fraction: 1.0,
            convention: ConfidenceConvention::MappedParameters,
            radius_prior_au: None,
            solid_to_gas_prior: None,
            oxygen_sequestered_fraction: 0.0,
            planet_mass_mjup: None,
            feeding_zone_hill_radii: DEFAULT_FEEDING_ZONE_HILL_RADII,
        }
    }
}

/// One row of the long-form map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapRow {
    /// Formation radius [au] (a radial cell centre).
    pub radius_au: f64,
    /// M_solid / M_gas.
    pub solid_to_gas: f64,
    /// Model envelope C/O (after the oxygen correction, if any).
    pub c_to_o: Option<f64>,
    /// Model [C/H] [dex], relative to `observed.relative_to`.
    pub c_to_h_dex: Option<f64>,
    /// Model [O/H] [dex], relative to `observed.relative_to` (after the oxygen correction).
    pub o_to_h_dex: Option<f64>,
    /// Model [M/H] [dex], relative to `observed.relative_to` (after the oxygen correction).
    pub m_to_h_dex: Option<f64>,
    /// Chi-square against the observation; `None` where a fitted model quantity is undefined.
    pub chi2: Option<f64>,
    /// chi2 - min chi2 over the eligible rows.
    pub delta_chi2: Option<f64>,
    /// The feeding zone holds at least the envelope's gas (always true without a planet mass).
    pub feasible: bool,
    /// Inside the priors (always true without priors).
    pub in_prior: bool,
    /// delta chi2 <= the 1-sigma threshold, the row eligible and the fit acceptable.
    pub within_1sigma: bool,
    /// delta chi2 <= the 2-sigma threshold, the row eligible and the fit acceptable.
    pub within_2sigma: bool,
}

/// The best-fitting place on the map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BestFit {
    /// Radial cell index.
    pub radial_cell: usize,
    /// Index into the solid-to-gas values.
    pub ratio_index: usize,
    /// Formation radius [au].
    pub radius_au: f64,
    /// M_solid / M_gas.
    pub solid_to_gas: f64,
    /// Minimum chi-square.
    pub chi2: f64,
    /// The row.
    pub row: MapRow,
}

/// How well the best place fits (docs/model.md section 9, goodness of fit).
#[derive(Debug, Clone, PartialEq)]
pub struct Goodness {
    /// Smallest chi-square over the eligible rows (feasible, inside the priors); `None` if none is defined.
    pub chi2_min: Option<f64>,
    /// Degrees of freedom: fitted observables minus the 2 fitted parameters, floored at 1.
    pub degrees_of_freedom: usize,
    /// True when the floor was used (fewer than 3 observables).
    pub degrees_of_freedom_floored: bool,
    /// P(chi2 >= chi2_min) for that many degrees of freedom (chi-square survival function).
    pub p_value: Option<f64>,
    /// p >= 0.01: some place reproduces the observation.
    pub acceptable: bool,
    /// The best fit sits on the smallest or largest solid-to-gas value of the grid.
    pub best_on_ratio_grid_edge: bool,
    /// Why the fit is unacceptable, in words; `None` when acceptable.
    pub reason: Option<String>,
}

/// A contiguous run of radial cells.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RadiusInterval {
    /// First cell of the run.
    pub first_cell: usize,
    /// Last cell of the run (inclusive).
    pub last_cell: usize,
    /// Centre of the first cell [au].
    pub inner_centre_au: f64,
    /// Centre of the last cell [au].
    pub outer_centre_au: f64,
    /// Inner edge of the first cell [au].
    pub inner_edge_au: f64,
    /// Outer edge of the last cell [au].
    pub outer_edge_au: f64,
}

/// The radius ranges allowed at one solid-to-gas ratio.
#[derive(Debug, Clone, PartialEq)]
pub struct AllowedRadii {
    /// M_solid / M_gas.
    pub solid_to_gas: f64,
    /// Runs of cells within 1 sigma, inner first.
    pub one_sigma: Vec<RadiusInterval>,
    /// Runs of cells within 2 sigma, inner first.
    pub two_sigma: Vec<RadiusInterval>,
}

/// 1 or 2 sigma.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SigmaLevel {
    /// The 1-sigma region.
    One,
    /// The 2-sigma region.
    Two,
}

impl SigmaLevel {
    /// "1 sigma" or "2 sigma".
    pub fn label(self) -> &'static str {
        match self {
            SigmaLevel::One => "1 sigma",
            SigmaLevel::Two => "2 sigma",
        }
    }
}

/// A solid-to-gas ratio at which the allowed region splits into several radius ranges.
#[derive(Debug, Clone, PartialEq)]
pub struct Degeneracy {
    /// The region.
    pub level: SigmaLevel,
    /// M_solid / M_gas.
    pub solid_to_gas: f64,
    /// The disjoint radius ranges, inner first (two or more).
    pub ranges: Vec<RadiusInterval>,
    /// What was fitted, in words.
    pub fitted: String,
}

impl Degeneracy {
    /// Plain words, e.g. "at solid-to-gas 0.010, two radius ranges give the same
    /// C/O within 1 sigma: 2.1-4.3 au and 60-85 au" (cell edges).
    pub fn text(&self) -> String {
        format!(
            "at solid-to-gas {}, {} radius ranges give the same {} within {}: {}",
            significant(self.solid_to_gas, 2),
            count_word(self.ranges.len()),
            self.fitted,
            self.level.label(),
            list_ranges(&self.ranges)
        )
    }
}

/// The chi-square map over (formation radius, solid-to-gas ratio).
#[derive(Debug, Clone, PartialEq)]
pub struct ChiSquareMap {
    /// The observation.
    pub observed: ObservedEnvelope,
    /// The settings.
    pub settings: MapSettings,
    /// The thresholds used for `within_1sigma` / `within_2sigma`.
    pub thresholds: DeltaChiSquare,
    /// Radial cell centres [au].
    pub radius_au: Vec<f64>,
    /// Solid-to-gas values.
    pub solid_to_gas: Vec<f64>,
    /// Long-form rows, radius-major: row `j * solid_to_gas.len() + k`.
    pub rows: Vec<MapRow>,
    /// The smallest chi-square over the eligible rows (first in row order on ties); `None` if none is defined.
    pub best: Option<BestFit>,
    /// Goodness of fit of the best place.
    pub goodness: Goodness,
    /// Per solid-to-gas value, the allowed radius ranges (all empty when the fit is unacceptable).
    pub allowed: Vec<AllowedRadii>,
    /// Radial cell edges [au] (N_r + 1 values).
    pub cell_edges_au: Vec<f64>,
    /// Gas mass [g] within the feeding zone of each radial cell; empty without a planet mass.
    pub feeding_zone_gas_g: Vec<f64>,
    /// Runs of radial cells where no solid-to-gas value is feasible (too little gas), inner first.
    pub infeasible: Vec<RadiusInterval>,
}

/// The log-spaced solid-to-gas values of the default map: 10^(-3 + 3 k/(n - 1)), k = 0..n-1.
pub fn map_solid_to_gas_values(count: usize) -> Vec<f64> {
    solid_to_gas_values(MAP_SOLID_TO_GAS_RANGE.0, MAP_SOLID_TO_GAS_RANGE.1, count)
}

/// `count` log-spaced values from `lo` to `hi` (both included exactly).
pub fn solid_to_gas_values(lo: f64, hi: f64, count: usize) -> Vec<f64> {
    let (a, b) = (log10(lo), log10(hi));
    (0..count)
        .map(|k| {
            if k + 1 == count {
                hi
            } else if k == 0 {
                lo
            } else {
                exp10(a + (b - a) * k as f64 / (count - 1) as f64)
            }
        })
        .collect()
}

/// Mass of Jupiter [g] from the IAU 2015 nominal GM_J = 1.266 865 3e26 m^3 s^-2
/// (IAU 2015 Resolution B3) and the CODATA 2018 G.
pub const JUPITER_MASS_G: f64 = 1.266_865_3e23 / crate::units::GRAVITATIONAL_CONSTANT_CGS;

/// Mass of the Earth [g] from the IAU 2015 nominal GM_E = 3.986 004e14 m^3 s^-2
/// (IAU 2015 Resolution B3) and the CODATA 2018 G.
pub const EARTH_MASS_G: f64 = 3.986_004e20 / crate::units::GRAVITATIONAL_CONSTANT_CGS;

/// Hill radius [cm] of a planet of mass `planet_mass_g` at `radius_cm` around
/// a star of mass `star_mass_g`: R_H = r (M_p / (3 M_*))^(1/3) (Hill 1878;
/// e.g. Murray & Dermott 1999, Solar System Dynamics, eq. 3.75).
pub fn hill_radius_cm(radius_cm: f64, planet_mass_g: f64, star_mass_g: f64) -> f64 {
    radius_cm * crate::math::pow(planet_mass_g / (3.0 * star_mass_g), 1.0 / 3.0)
}

/// Gas mass [g] in the annulus [r1, r2] (clipped to the disk's edges):
/// M = integral of Sigma_gas(r) 2 pi r dr (docs/model.md section 2 surface
/// density), by the midpoint rule on 400 points uniform in ln r.
pub fn gas_mass_in_annulus_g(model: &Model, inner_cm: f64, outer_cm: f64) -> f64 {
    let d = &model.parameters().disk;
    let (lo, hi) = (
        inner_cm.max(d.inner_radius_au * AU_CM),
        outer_cm.min(d.outer_radius_au * AU_CM),
    );
    if !(hi > lo) {
        return 0.0;
    }
    const POINTS: usize = 400;
    let l = ln(hi / lo);
    let mut m = 0.0;
    for k in 0..POINTS {
        let r = lo * exp(l * (k as f64 + 0.5) / POINTS as f64);
        // dr = r d(ln r)
        m += model.structure().surface_density_at(r) * 2.0 * std::f64::consts::PI * r * r;
    }
    m * l / POINTS as f64
}

/// The inverse map (docs/model.md section 9): chi-square of the forward model
/// at every radial cell centre (the model's own grid midplane, which equals
/// `Model::midplane_at` there) times every solid-to-gas value, against `observed`:
///
///   chi2 = sum_i ((m_i - o_i) / sigma_i)^2,   or   r^T C^-1 r with a covariance C,
///
/// over the observed quantities i (C/O, [C/H], [O/H], [M/H]), the model's
/// metallicities taken relative to the reference the observation names, and
/// (optionally) a fraction of the envelope's oxygen removed as hidden in the
/// planet's condensates (Burrows & Sharp 1999).
///
/// A row is eligible when it lies inside the priors and, with a planet mass,
/// when the gas in its feeding zone (a half-width of `feeding_zone_hill_radii`
/// Hill radii about the place) is at least the envelope's gas mass
/// M_p / (1 + solid-to-gas). The best fit is the smallest chi-square over
/// eligible rows; its goodness is the chi-square survival function with
/// max(n_obs - 2, 1) degrees of freedom. When p < 0.01 no place is acceptable
/// and no radius is allowed.
///
/// Errors: `OutOfRange` for observed values (C/O in [0, 100], metallicities
/// in [-10, 10] dex) and sigmas (>= 1e-6, finite; the floor keeps chi2 finite) named `c_to_o`, `c_to_o_sigma`, `c_to_h_dex`, ...;
/// `observations` (empty or repeated); `covariance` (size, symmetry, positive
/// definiteness); `ratio_count` ([40, 1000]); `ratio_min`, `ratio_max`;
/// `solid_mixing_fraction` ([0, 1]); priors; `oxygen_sequestered_fraction`
/// ([0, 1)); `planet_mass_mjup` (> 0); `feeding_zone_hill_radii` (> 0).
pub fn chi_square_map(
    model: &Model,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<ChiSquareMap, PhysicsError> {
    let reference = fully_condensed_mass_per_h_amu(model);
    chi_square_map_with(model, observed, settings, &|j, r_au| {
        let p = point_phases(&grid_midplane(model, j), reference);
        AccretedPhases::from_point(model, r_au, r_au, p)
    })
}

/// [`chi_square_map`] with the accreted phases of radial cell `j` (centre `r_au`) given by
/// `phases_at` instead of the model's own midplane: the evolving disk's fit over formation radius
/// x age (docs/model.md section 12.9) passes each snapshot's transported composition here, on
/// the snapshot's own structure `model`, so the chi-square, priors, feasibility, thresholds and
/// goodness are the static map's.
pub fn chi_square_map_with(
    model: &Model,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
    phases_at: &dyn Fn(usize, f64) -> AccretedPhases,
) -> Result<ChiSquareMap, PhysicsError> {
    let weights = validate_map_inputs(observed, settings)?;
    let st = &model.structure();
    let n_r = st.radial_cells;
    let ratios = solid_to_gas_values(settings.ratio_min, settings.ratio_max, settings.ratio_count);
    let n_q = ratios.len();
    let radius_au: Vec<f64> = st.radius_cm.iter().map(|r| r / AU_CM).collect();
    let reference_per_h = match observed.relative_to {
        MetallicityReference::Star => *model.stellar_per_h(),
        MetallicityReference::Sun => solar_per_h(model),
    };
    let feeding_zone_gas_g: Vec<f64> = match settings.planet_mass_mjup {
        None => Vec::new(),
        Some(mp) => st
            .radius_cm
            .iter()
            .map(|&r| {
                let half = settings.feeding_zone_hill_radii
                    * hill_radius_cm(r, mp * JUPITER_MASS_G, st.constants.star_mass_g);
                gas_mass_in_annulus_g(model, r - half, r + half)
            })
            .collect(),
    };
    let keep_o = 1.0 - settings.oxygen_sequestered_fraction;
    let mut rows = Vec::with_capacity(n_r * n_q);
    for (j, &r_au) in radius_au.iter().enumerate() {
        let phases = phases_at(j, r_au);
        let in_radius_prior = settings
            .radius_prior_au
            .is_none_or(|(a, b)| r_au >= a && r_au <= b);
        for &q in &ratios {
            let in_prior = in_radius_prior
                && settings
                    .solid_to_gas_prior
                    .is_none_or(|(a, b)| q >= a && q <= b);
            let feasible = match settings.planet_mass_mjup {
                None => true,
                Some(mp) => feeding_zone_gas_g[j] >= mp * JUPITER_MASS_G / (1.0 + q),
            };
            let mut row = MapRow {
                radius_au: r_au,
                solid_to_gas: q,
                c_to_o: None,
                c_to_h_dex: None,
                o_to_h_dex: None,
                m_to_h_dex: None,
                chi2: None,
                delta_chi2: None,
                feasible,
                in_prior,
                within_1sigma: false,
                within_2sigma: false,
            };
            if phases.solid_atoms_per_g.is_none() {
                rows.push(row);
                continue;
            }
            let env = phases.envelope_unchecked(1.0, q, settings.solid_mixing_fraction);
            let per_h =
                |e: Element| env.element(e).per_h * if e == Element::O { keep_o } else { 1.0 };
            let dex = |x: f64, x_ref: f64| {
                (x >= 1e-9 * x_ref && x > 0.0).then(|| zero_if_rounding(log10(x / x_ref)))
            };
            let (c, o) = (per_h(Element::C), per_h(Element::O));
            let (ci, oi) = (Element::C as usize, Element::O as usize);
            row.c_to_o = defined_ratio(c, o, model.stellar_per_h()[oi]);
            row.c_to_h_dex = dex(c, reference_per_h[ci]);
            row.o_to_h_dex = dex(o, reference_per_h[oi]);
            let volatile = [Element::C, Element::O, Element::N, Element::S];
            let m_sum: f64 = volatile.iter().map(|&e| per_h(e)).sum();
            let m_ref: f64 = volatile.iter().map(|&e| reference_per_h[e as usize]).sum();
            row.m_to_h_dex = dex(m_sum, m_ref);
            let model_values: Option<Vec<f64>> = observed
                .observations
                .iter()
                .map(|ob| match ob.quantity {
                    Observable::CToO => row.c_to_o,
                    Observable::CToH => row.c_to_h_dex,
                    Observable::OToH => row.o_to_h_dex,
                    Observable::MToH => row.m_to_h_dex,
                })
                .collect();
            row.chi2 = model_values.map(|m| {
                let n = m.len();
                let r: Vec<f64> = m
                    .iter()
                    .zip(&observed.observations)
                    .map(|(mv, ob)| mv - ob.value)
                    .collect();
                let mut s = 0.0;
                for a in 0..n {
                    for b in 0..n {
                        s += r[a] * weights[a * n + b] * r[b];
                    }
                }
                s
            });
            rows.push(row);
        }
    }
    // Every chi2 is finite by the bounds above; checked anyway so a non-finite value can never reach an export.
    if let Some(row) = rows.iter().find(|r| r.chi2.is_some_and(|c| !c.is_finite())) {
        return Err(PhysicsError::NoSolutionInRange {
            what: format!(
                "the chi-square at {:.4} au is not finite; use larger sigmas",
                row.radius_au
            ),
        });
    }
    let thresholds = DeltaChiSquare::new(settings.convention, observed.fitted_quantities());
    let eligible = |r: &MapRow| r.feasible && r.in_prior;
    let mut best: Option<(usize, f64)> = None;
    for (i, row) in rows.iter().enumerate() {
        if let (Some(c), true) = (row.chi2, eligible(row)) {
            if best.is_none_or(|(_, b)| c < b) {
                best = Some((i, c));
            }
        }
    }
    let n_obs = observed.fitted_quantities();
    let degrees_of_freedom = n_obs.saturating_sub(FITTED_PARAMETERS).max(1);
    let p_value = best.and_then(|(_, c)| chi_square_survival(c, degrees_of_freedom));
    let acceptable = p_value.is_some_and(|p| p >= ACCEPTABLE_P_VALUE);
    let any_defined = rows.iter().any(|r| r.chi2.is_some());
    let reason = if acceptable {
        None
    } else if !any_defined {
        Some(format!(
            "no place in the disk gives defined values of {}",
            observed.fitted_label()
        ))
    } else if best.is_none() {
        if settings.planet_mass_mjup.is_some()
            && rows.iter().any(|r| r.chi2.is_some() && r.in_prior)
        {
            Some("no place allowed by the priors holds enough gas in its feeding zone for the planet's envelope".to_string())
        } else {
            Some(
                "no place inside the priors gives defined values of the fitted quantities"
                    .to_string(),
            )
        }
    } else {
        let (_, c) = best.unwrap_or((0, f64::NAN));
        Some(unacceptable_reason(
            observed,
            c,
            degrees_of_freedom,
            p_value,
        ))
    };
    if let Some((_, min)) = best {
        for row in rows.iter_mut() {
            if let Some(c) = row.chi2 {
                let d = c - min;
                row.delta_chi2 = Some(d);
                let ok = acceptable && eligible(row);
                row.within_1sigma = ok && d <= thresholds.one_sigma;
                row.within_2sigma = ok && d <= thresholds.two_sigma;
            }
        }
    }
    let ln_edge =
        ln(model.parameters().disk.outer_radius_au / model.parameters().disk.inner_radius_au);
    let cell_edges_au: Vec<f64> = (0..=n_r)
        .map(|j| model.parameters().disk.inner_radius_au * exp(ln_edge * j as f64 / n_r as f64))
        .collect();
    let runs_of = |inside: &dyn Fn(usize) -> bool| radius_runs(&radius_au, &cell_edges_au, inside);
    let allowed = (0..n_q)
        .map(|k| AllowedRadii {
            solid_to_gas: ratios[k],
            one_sigma: runs_of(&|j| rows[j * n_q + k].within_1sigma),
            two_sigma: runs_of(&|j| rows[j * n_q + k].within_2sigma),
        })
        .collect();
    let infeasible = if settings.planet_mass_mjup.is_some() {
        runs_of(&|j| (0..n_q).all(|k| !rows[j * n_q + k].feasible))
    } else {
        Vec::new()
    };
    let best = best.map(|(i, chi2)| BestFit {
        radial_cell: i / n_q,
        ratio_index: i % n_q,
        radius_au: rows[i].radius_au,
        solid_to_gas: rows[i].solid_to_gas,
        chi2,
        row: rows[i],
    });
    let goodness = Goodness {
        chi2_min: best.map(|b| b.chi2),
        degrees_of_freedom,
        degrees_of_freedom_floored: n_obs < FITTED_PARAMETERS + 1,
        p_value,
        acceptable,
        best_on_ratio_grid_edge: best
            .is_some_and(|b| b.ratio_index == 0 || b.ratio_index + 1 == n_q),
        reason,
    };
    Ok(ChiSquareMap {
        observed: observed.clone(),
        settings: *settings,
        thresholds,
        radius_au,
        solid_to_gas: ratios,
        rows,
        best,
        goodness,
        allowed,
        cell_edges_au,
        feeding_zone_gas_g,
        infeasible,
    })
}

/// Why a best fit with chi-square `chi2_min` is not acceptable, in words.
pub(crate) fn unacceptable_reason(
    observed: &ObservedEnvelope,
    chi2_min: f64,
    degrees_of_freedom: usize,
    p_value: Option<f64>,
) -> String {
    format!(
        "no place in the disk reproduces the observed {}: the smallest chi-square is {} for {} degree{} of freedom, p = {} < {}",
        observed.fitted_label(),
        significant(chi2_min, 3),
        degrees_of_freedom,
        if degrees_of_freedom == 1 { "" } else { "s" },
        p_text(p_value.unwrap_or(0.0)),
        ACCEPTABLE_P_VALUE
    )
}

/// The runs of consecutive radial cells where `inside(j)` holds, inner first, with their cell
/// centres and edges.
pub(crate) fn radius_runs(
    radius_au: &[f64],
    cell_edges_au: &[f64],
    inside: &dyn Fn(usize) -> bool,
) -> Vec<RadiusInterval> {
    let n_r = radius_au.len();
    let mut out = Vec::new();
    let mut start: Option<usize> = None;
    for j in 0..=n_r {
        let ok = j < n_r && inside(j);
        match (ok, start) {
            (true, None) => start = Some(j),
            (false, Some(s)) => {
                out.push(RadiusInterval {
                    first_cell: s,
                    last_cell: j - 1,
                    inner_centre_au: radius_au[s],
                    outer_centre_au: radius_au[j - 1],
                    inner_edge_au: cell_edges_au[s],
                    outer_edge_au: cell_edges_au[j],
                });
                start = None;
            }
            _ => {}
        }
    }
    out
}

/// A p-value in words: "1.2e-20", "0.0034".
fn p_text(p: f64) -> String {
    if p == 0.0 {
        "0 (below the smallest double)".to_string()
    } else if p < 1e-3 {
        format!("{p:.1e}")
    } else {
        significant(p, 2)
    }
}

/// A dex value that is zero up to rounding (|x| < 1e-9 dex, a ratio within
/// 2.3e-9 of the reference) is written as exactly 0.
fn zero_if_rounding(x: f64) -> f64 {
    if x.abs() < 1e-9 {
        0.0
    } else {
        x
    }
}

/// Checks the observation and settings; returns the inverse covariance (row-major n x n).
fn validate_map_inputs(
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<Vec<f64>, PhysicsError> {
    let n = observed.observations.len();
    if n == 0 {
        return Err(PhysicsError::OutOfRange {
            name: "observations",
            value: 0.0,
            allowed: "at least one of C/O, [C/H], [O/H], [M/H]",
        });
    }
    for (i, ob) in observed.observations.iter().enumerate() {
        if observed.observations[..i]
            .iter()
            .any(|o| o.quantity == ob.quantity)
        {
            return Err(PhysicsError::OutOfRange {
                name: "observations",
                value: n as f64,
                allowed: "each quantity at most once",
            });
        }
        let (name, sigma_name): (&'static str, &'static str) = match ob.quantity {
            Observable::CToO => ("c_to_o", "c_to_o_sigma"),
            Observable::CToH => ("c_to_h_dex", "c_to_h_sigma"),
            Observable::OToH => ("o_to_h_dex", "o_to_h_sigma"),
            Observable::MToH => ("m_to_h_dex", "m_to_h_sigma"),
        };
        // Bounds keep every chi2 finite (issue 15 item 5): C/O in [0, 100], metallicities in
        // [-10, 10] dex, and sigmas of at least 1e-6 (see the constants above).
        let (value_ok, allowed, sigma_floor) = if ob.quantity.is_metallicity() {
            (
                (-MAX_OBSERVED_METALLICITY_DEX..=MAX_OBSERVED_METALLICITY_DEX).contains(&ob.value),
                "in [-10, 10]",
                MIN_METALLICITY_SIGMA_DEX,
            )
        } else {
            (
                (0.0..=MAX_OBSERVED_C_TO_O).contains(&ob.value),
                "in [0, 100]",
                MIN_C_TO_O_SIGMA,
            )
        };
        if !value_ok {
            return Err(PhysicsError::OutOfRange {
                name,
                value: ob.value,
                allowed,
            });
        }
        if observed.covariance.is_none() && !(ob.sigma >= sigma_floor && ob.sigma.is_finite()) {
            return Err(PhysicsError::OutOfRange {
                name: sigma_name,
                value: ob.sigma,
                allowed: ">= 1e-6 and finite",
            });
        }
    }
    if !(MIN_MAP_RATIO_COUNT..=MAX_MAP_RATIO_COUNT).contains(&settings.ratio_count) {
        return Err(PhysicsError::OutOfRange {
            name: "ratio_count",
            value: settings.ratio_count as f64,
            allowed: "in [40, 1000]",
        });
    }
    if !(settings.ratio_min > 0.0 && settings.ratio_min.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "ratio_min",
            value: settings.ratio_min,
            allowed: "> 0 and finite",
        });
    }
    if !(settings.ratio_max > settings.ratio_min && settings.ratio_max <= 1000.0) {
        return Err(PhysicsError::NotIncreasing {
            name: "ratio_max",
            value: settings.ratio_max,
            lower_name: "ratio_min",
            lower: settings.ratio_min,
        });
    }
    if !(0.0..=1.0).contains(&settings.solid_mixing_fraction) {
        return Err(PhysicsError::OutOfRange {
            name: "solid_mixing_fraction",
            value: settings.solid_mixing_fraction,
            allowed: "in [0, 1]",
        });
    }
    for (name, prior) in [
        ("radius_prior_au", settings.radius_prior_au),
        ("solid_to_gas_prior", settings.solid_to_gas_prior),
    ] {
        if let Some((a, b)) = prior {
            if !(a.is_finite() && b.is_finite() && a >= 0.0) {
                return Err(PhysicsError::OutOfRange {
                    name,
                    value: if a.is_finite() { b } else { a },
                    allowed: "finite and >= 0",
                });
            }
            if !(b > a) {
                return Err(PhysicsError::NotIncreasing {
                    name,
                    value: b,
                    lower_name: "its lower end",
                    lower: a,
                });
            }
        }
    }
    if !(0.0..1.0).contains(&settings.oxygen_sequestered_fraction) {
        return Err(PhysicsError::OutOfRange {
            name: "oxygen_sequestered_fraction",
            value: settings.oxygen_sequestered_fraction,
            allowed: "in [0, 1)",
        });
    }
    if let Some(m) = settings.planet_mass_mjup {
        if !(m > 0.0 && m.is_finite()) {
            return Err(PhysicsError::OutOfRange {
                name: "planet_mass_mjup",
                value: m,
                allowed: "> 0 and finite",
            });
        }
    }
    if !(settings.feeding_zone_hill_radii > 0.0 && settings.feeding_zone_hill_radii.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "feeding_zone_hill_radii",
            value: settings.feeding_zone_hill_radii,
            allowed: "> 0 and finite",
        });
    }
    match &observed.covariance {
        None => {
            let mut w = vec![0.0; n * n];
            for (i, ob) in observed.observations.iter().enumerate() {
                w[i * n + i] = 1.0 / (ob.sigma * ob.sigma);
            }
            Ok(w)
        }
        Some(c) => {
            if c.len() != n * n {
                return Err(PhysicsError::OutOfRange {
                    name: "covariance",
                    value: c.len() as f64,
                    allowed: "n x n entries for n observed quantities",
                });
            }
            for a in 0..n {
                for b in 0..n {
                    let (x, y) = (c[a * n + b], c[b * n + a]);
                    if !x.is_finite() || (x - y).abs() > 1e-12 * x.abs().max(y.abs()) {
                        return Err(PhysicsError::OutOfRange {
                            name: "covariance",
                            value: x,
                            allowed: "finite and symmetric",
                        });
                    }
                }
            }
            invert_positive_definite(c, n).ok_or(PhysicsError::OutOfRange {
                name: "covariance",
                value: c[0],
                allowed: "positive definite",
            })
        }
    }
}

/// Inverse of a symmetric positive-definite n x n matrix (row-major) by the
/// Cholesky decomposition (Press et al. 2007, section 2.9); `None` if not positive definite.
fn invert_positive_definite(a: &[f64], n: usize) -> Option<Vec<f64>> {
    let mut l = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..=i {
            let mut s = a[i * n + j];
            for k in 0..j {
                s -= l[i * n + k] * l[j * n + k];
            }
            if i == j {
                if !(s > 0.0) {
                    return None;
                }
                l[i * n + i] = crate::math::sqrt(s);
            } else {
                l[i * n + j] = s / l[j * n + j];
            }
        }
    }
    // Solve L L^T x = e_c for every column c.
    let mut inv = vec![0.0; n * n];
    for c in 0..n {
        let mut y = vec![0.0; n];
        for i in 0..n {
            let mut s = if i == c { 1.0 } else { 0.0 };
            for k in 0..i {
                s -= l[i * n + k] * y[k];
            }
            y[i] = s / l[i * n + i];
        }
        for i in (0..n).rev() {
            let mut s = y[i];
            for k in i + 1..n {
                s -= l[k * n + i] * inv[k * n + c];
            }
            inv[i * n + c] = s / l[i * n + i];
        }
    }
    Some(inv)
}

impl ChiSquareMap {
    /// The row of radial cell `j` and ratio index `k`.
    pub fn row(&self, j: usize, k: usize) -> &MapRow {
        &self.rows[j * self.solid_to_gas.len() + k]
    }

    /// Every solid-to-gas value at which the `level` region splits into two or
    /// more disjoint radius ranges: the same observation fits at separate places.
    pub fn degeneracies(&self, level: SigmaLevel) -> Vec<Degeneracy> {
        self.allowed
            .iter()
            .filter_map(|a| {
                let ranges = match level {
                    SigmaLevel::One => &a.one_sigma,
                    SigmaLevel::Two => &a.two_sigma,
                };
                (ranges.len() >= 2).then(|| Degeneracy {
                    level,
                    solid_to_gas: a.solid_to_gas,
                    ranges: ranges.clone(),
                    fitted: self.observed.fitted_label(),
                })
            })
            .collect()
    }

    /// Plain-words summary of the degeneracies for the page, one sentence per
    /// run of consecutive solid-to-gas values with a split region, at 1 and
    /// then 2 sigma; empty when every ratio allows at most one radius range.
    /// Example: "at 1 sigma, for solid-to-gas 0.0010-0.020 the allowed radii
    /// split into two or more ranges; at 0.0010, two radius ranges give the
    /// same C/O: 2.1-4.3 au and 60-85 au".
    pub fn degeneracy_summary(&self) -> Vec<String> {
        let mut out = Vec::new();
        for level in [SigmaLevel::One, SigmaLevel::Two] {
            let split: Vec<bool> = self
                .allowed
                .iter()
                .map(|a| match level {
                    SigmaLevel::One => a.one_sigma.len() >= 2,
                    SigmaLevel::Two => a.two_sigma.len() >= 2,
                })
                .collect();
            let mut k = 0;
            while k < split.len() {
                if !split[k] {
                    k += 1;
                    continue;
                }
                let start = k;
                while k < split.len() && split[k] {
                    k += 1;
                }
                let first = &self.allowed[start];
                let ranges = match level {
                    SigmaLevel::One => &first.one_sigma,
                    SigmaLevel::Two => &first.two_sigma,
                };
                let span = if k - 1 == start {
                    format!("for solid-to-gas {}", significant(first.solid_to_gas, 2))
                } else {
                    format!(
                        "for solid-to-gas {}-{}",
                        significant(first.solid_to_gas, 2),
                        significant(self.allowed[k - 1].solid_to_gas, 2)
                    )
                };
                out.push(format!(
                    "at {}, {} the allowed radii split into two or more ranges; at {}, {} radius ranges give the same {}: {}",
                    level.label(),
                    span,
                    significant(first.solid_to_gas, 2),
                    count_word(ranges.len()),
                    self.observed.fitted_label(),
                    list_ranges(ranges)
                ));
            }
        }
        out
    }
}

/// "2.1-4.3 au and 60-85 au" from cell edges.
fn list_ranges(ranges: &[RadiusInterval]) -> String {
    let parts: Vec<String> = ranges
        .iter()
        .map(|r| {
            format!(
                "{}-{} au",
                short_radius(r.inner_edge_au),
                short_radius(r.outer_edge_au)
            )
        })
        .collect();
    match parts.len() {
        0 => String::new(),
        1 => parts[0].clone(),
        n => format!("{} and {}", parts[..n - 1].join(", "), parts[n - 1]),
    }
}

fn count_word(n: usize) -> String {
    match n {
        2 => "two".into(),
        3 => "three".into(),
        4 => "four".into(),
        5 => "five".into(),
        _ => n.to_string(),
    }
}

/// A radius in about two significant digits: 0.35, 2.1, 60, 150.
fn short_radius(r: f64) -> String {
    if r >= 10.0 {
        format!("{r:.0}")
    } else if r >= 1.0 {
        format!("{r:.1}")
    } else if r >= 0.1 {
        format!("{r:.2}")
    } else {
        format!("{r:.3}")
    }
}

/// `x` with `digits` significant digits in plain decimal notation.
fn significant(x: f64, digits: usize) -> String {
    if !(x > 0.0) || !x.is_finite() {
        return format!("{x}");
    }
    let magnitude = log10(x).floor() as i32;
    let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
    format!("{x:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::params::{DesorptionModel, ModelParameters};

    fn small_model() -> Model {
        let mut p = ModelParameters::defaults();
        p.grid.vertical_cells = 40;
        p.grid.max_height_scale_heights = 8.0;
        Model::run(&p).unwrap()
    }

    /// The step model with the carrier choice of Oberg, Murray-Clay & Bergin 2011
    /// (docs/check-values.md section 5a): refractory C 50 %, CO/H = 1e-4, CO2 the rest of the
    /// volatile carbon, silicates 20 % of O, water the rest; condensation
    /// temperatures H2O 135, CO2 47, CO 20 K (the built-in step-model values).
    fn oberg_like_step_model() -> ModelParameters {
        let mut p = ModelParameters::defaults();
        p.ices.desorption = DesorptionModel::FixedTemperature;
        p.grid.vertical_cells = 40;
        let x = crate::star::stellar_abundances_per_h(&p.star);
        let co = 1.0e-4 / x[0];
        p.composition.carbon = crate::params::CarbonFractions {
            co,
            co2: 0.5 - co,
            ch4: 0.0,
            ch3oh: 0.0,
            hcn: 0.0,
            refractory: 0.5,
        };
        p.composition.oxygen_per_silicon = 0.2 * x[1] / x[4];
        p
    }

    fn check_close(actual: f64, expected: f64, rel: f64, what: &str) {
        assert!(
            (actual - expected).abs() <= rel * expected.abs(),
            "{what}: {actual:e} vs {expected:e} (rel {rel:e})"
        );
    }

    #[test]
    fn pure_gas_envelope_has_the_local_gas_c_to_o() {
        // Source: docs/model.md section 9 / docs/check-values.md section 5a mixing formula with f_s = 0 (C, exact).
        let m = small_model();
        for r in [0.5, 3.0, 20.0, 120.0] {
            let p = planet(&m, &PlanetRequest::at(r, 0.0)).unwrap();
            let local = m.midplane_at(r).unwrap();
            let expected = m.ratios(&local.phases).c_to_o_gas;
            match (p.envelope.c_to_o, expected) {
                (Some(a), Some(b)) => check_close(a, b, 1e-12, "gas C/O"),
                (a, b) => assert_eq!(a, b, "r = {r}"),
            }
            // With no solids, every atom came with the gas and X/H equals the local gas X/H.
            let c = p.envelope.element(Element::C);
            assert_eq!(c.from_solids_atoms, 0.0);
            check_close(c.per_h, local.phases.gas[0], 1e-12, "C/H");
        }
    }

    #[test]
    fn grid_cell_and_midplane_at_agree() {
        // Internal consistency (docs/model.md section 9: the local state at r_p is the model at r_p).
        let m = small_model();
        for j in [0, 37, 100, 150, 199] {
            let r = m.structure().radius_cm[j] / AU_CM;
            let a = AccretedPhases::at_grid_cell(&m, j).unwrap();
            let b = AccretedPhases::at(&m, r).unwrap();
            for e in 0..ELEMENT_COUNT {
                let (x, y) = (a.gas_atoms_per_g[e], b.gas_atoms_per_g[e]);
                assert!(
                    (x - y).abs() <= 1e-12 * x.abs().max(1.0),
                    "gas j={j} e={e}: {x:e} {y:e}"
                );
            }
            match (a.solid_atoms_per_g, b.solid_atoms_per_g) {
                (Some(s), Some(t)) => {
                    for e in 0..ELEMENT_COUNT {
                        assert!(
                            (s[e] - t[e]).abs() <= 1e-12 * s[e].abs().max(1.0),
                            "solid j={j} e={e}"
                        );
                    }
                }
                (s, t) => assert_eq!(s.is_some(), t.is_some(), "j={j}"),
            }
        }
    }

    #[test]
    fn solid_mass_per_h_is_near_the_ism_dust_to_gas_ratio_outside_the_water_snowline() {
        // docs/model.md section 9 test: m_solid_per_H / (1.4 m_H) within a factor 2 of 0.01
        // (the ISM dust-to-gas mass ratio, e.g. Bohlin et al. 1978; common practice).
        let m = small_model();
        let water = m.snowlines(crate::Species::H2O)[0].radius_cm / AU_CM;
        let a = AccretedPhases::at(&m, 2.0 * water).unwrap();
        assert!(
            a.solid_to_gas_available > 0.005 && a.solid_to_gas_available < 0.02,
            "{}",
            a.solid_to_gas_available
        );
    }

    #[test]
    fn inputs_are_validated_with_named_errors() {
        let m = small_model();
        let err = planet(&m, &PlanetRequest::at(3.0, -1.0)).unwrap_err();
        assert_eq!(
            err.to_string(),
            "solid_to_gas: must be >= 0 and finite, got -1"
        );
        let err = planet(&m, &PlanetRequest::at(3.0, f64::INFINITY)).unwrap_err();
        assert!(matches!(
            err,
            PhysicsError::OutOfRange {
                name: "solid_to_gas",
                ..
            }
        ));
        let mut req = PlanetRequest::at(3.0, 0.1);
        req.solid_mixing_fraction = 1.5;
        assert_eq!(
            planet(&m, &req).unwrap_err().to_string(),
            "solid_mixing_fraction: must be in [0, 1], got 1.5"
        );
        let err = planet(&m, &PlanetRequest::at(900.0, 0.1)).unwrap_err();
        assert_eq!(
            err.to_string(),
            "radius_au: must lie in the disk [0.1, 500] au, got 900"
        );
        let err = planet(&m, &PlanetRequest::migrating(5.0, 3.0, 0.1)).unwrap_err();
        assert_eq!(
            err.to_string(),
            "outer_radius_au: must be greater than inner_radius_au = 5, got 3"
        );
        let err = planet(&m, &PlanetRequest::migrating(f64::NAN, 3.0, 0.1)).unwrap_err();
        assert!(matches!(
            err,
            PhysicsError::RadiusOutsideDisk {
                name: "inner_radius_au",
                ..
            }
        ));
    }

    #[test]
    fn a_place_without_solids_cannot_supply_them() {
        // The default disk's inner edge is above the silicate sublimation temperature (1500 K).
        let m = small_model();
        let local = m.midplane_at(0.1).unwrap();
        assert!(local.temperature_k > 1500.0, "{}", local.temperature_k);
        let a = AccretedPhases::at(&m, 0.1).unwrap();
        assert!(a.solid_atoms_per_g.is_none());
        assert!(a.envelope(1.0, 0.0, 1.0).is_ok());
        let err = a.envelope(1.0, 0.1, 1.0).unwrap_err();
        assert_eq!(
            err.to_string(),
            "solid_to_gas: must be 0 at 0.1 au, where the disk holds no solids, got 0.1"
        );
    }

    #[test]
    fn gas_mass_only_scales_atom_counts() {
        let m = small_model();
        let a = AccretedPhases::at(&m, 5.0).unwrap();
        let e1 = a.envelope(1.0, 0.05, 0.7).unwrap();
        let e2 = a.envelope(3.0e29, 0.05, 0.7).unwrap();
        check_close(e2.c_to_o.unwrap(), e1.c_to_o.unwrap(), 1e-12, "C/O");
        for e in 0..ELEMENT_COUNT {
            check_close(
                e2.elements[e].atoms,
                3.0e29 * e1.elements[e].atoms,
                1e-12,
                "atoms",
            );
            check_close(e2.elements[e].per_h, e1.elements[e].per_h, 1e-12, "per H");
            let split = e1.elements[e].from_gas_atoms + e1.elements[e].from_solids_atoms;
            check_close(split, e1.elements[e].atoms, 1e-15, "split sums");
        }
    }

    #[test]
    fn migration_average_of_a_flat_zone_equals_the_point_value() {
        // In the step model the composition is constant between snowlines, so any
        // average inside one zone must equal the value at a single radius there.
        let m = Model::run(&oberg_like_step_model()).unwrap();
        let co2 = m.snowlines(crate::Species::CO2)[0].radius_cm / AU_CM;
        let co = m.snowlines(crate::Species::CO)[0].radius_cm / AU_CM;
        let (r1, r2) = (co2 * 1.1, co / 1.1);
        let point = AccretedPhases::at(&m, (r1 * r2).sqrt()).unwrap();
        for w in [RadialWeighting::Uniform, RadialWeighting::LogRadius] {
            let avg = AccretedPhases::averaged(&m, r1, r2, w).unwrap();
            assert_eq!(avg.points, 200);
            for e in 0..ELEMENT_COUNT {
                check_close(
                    avg.gas_atoms_per_g[e],
                    point.gas_atoms_per_g[e],
                    1e-12,
                    "gas",
                );
            }
            check_close(
                avg.gas_c_to_o().unwrap(),
                1.0,
                1e-12,
                "gas C/O between the CO2 and CO lines",
            );
        }
    }

    #[test]
    fn migration_average_is_the_midpoint_rule() {
        // Re-derive the uniform midpoint average from 200 calls of midplane_at.
        let m = small_model();
        let (r1, r2) = (1.0, 30.0);
        let avg = AccretedPhases::averaged(&m, r1, r2, RadialWeighting::Uniform).unwrap();
        let mut c = 0.0;
        for k in 0..200 {
            let r = r1 + (k as f64 + 0.5) * (r2 - r1) / 200.0;
            c += AccretedPhases::at(&m, r).unwrap().gas_atoms_per_g[0];
        }
        check_close(avg.gas_atoms_per_g[0], c / 200.0, 1e-12, "midpoint average");
        // Uniform in ln r: r_k = r1 (r2/r1)^((k + 1/2)/200).
        let avg = AccretedPhases::averaged(&m, r1, r2, RadialWeighting::LogRadius).unwrap();
        let mut o = 0.0;
        for k in 0..200 {
            let r = r1 * (r2 / r1).powf((k as f64 + 0.5) / 200.0);
            o += AccretedPhases::at(&m, r)
                .unwrap()
                .solid_atoms_per_g
                .unwrap()[1];
        }
        check_close(
            avg.solid_atoms_per_g.unwrap()[1],
            o / 200.0,
            1e-10,
            "log-radius midpoint average",
        );
    }

    #[test]
    fn c_to_o_relative_to_the_star_and_zero_carbon() {
        let m = small_model();
        let env = planet(&m, &PlanetRequest::at(5.0, 0.02)).unwrap().envelope;
        let star = m.star_c_to_o();
        check_close(
            env.c_to_o_relative_to_star().unwrap(),
            env.c_to_o.unwrap() / star,
            1e-15,
            "C/O over the star's",
        );
        // Inside the soot line with only silicates as solids, a solid-dominated envelope has tiny carbon:
        // the ratio stays a finite number (never NaN) and [C/H] is reported only above 1e-9 of the star.
        let env = planet(&m, &PlanetRequest::at(0.3, 1e9)).unwrap().envelope;
        assert!(
            env.c_to_o.unwrap().is_finite() && env.c_to_o_relative_to_star().unwrap().is_finite()
        );
    }

    #[test]
    fn delta_chi_square_thresholds_are_the_gaussian_quantiles() {
        // Press et al. 2007 (Numerical Recipes 3rd ed., section 15.6.5): for nu = 2,
        // P(chi2 <= x) = 1 - exp(-x/2); 68.27 % and 95.45 % are the Gaussian 1 and 2 sigma
        // probabilities erf(1/sqrt 2) = 0.682689 and erf(2/sqrt 2) = 0.954500 (standard normal table).
        let t = DeltaChiSquare::new(ConfidenceConvention::MappedParameters, 1);
        assert_eq!(
            (t.degrees_of_freedom, t.one_sigma, t.two_sigma),
            (2, 2.30, 6.18)
        );
        assert!((1.0 - exp(-t.one_sigma / 2.0) - 0.682_689).abs() < 1e-3);
        assert!((1.0 - exp(-t.two_sigma / 2.0) - 0.954_500).abs() < 1e-4);
        let t1 = DeltaChiSquare::new(ConfidenceConvention::FittedQuantities, 1);
        assert_eq!(
            (t1.degrees_of_freedom, t1.one_sigma, t1.two_sigma),
            (1, 1.0, 4.0)
        );
        let t2 = DeltaChiSquare::new(ConfidenceConvention::FittedQuantities, 2);
        assert_eq!(t2.degrees_of_freedom, 2);
    }

    #[test]
    fn map_ratios_are_log_spaced_over_the_range() {
        let q = map_solid_to_gas_values(48);
        assert_eq!(q.len(), 48);
        assert_eq!((q[0], q[47]), (1e-3, 1.0));
        for k in 1..48 {
            check_close(q[k] / q[k - 1], exp10(3.0 / 47.0), 1e-12, "log step");
        }
    }

    #[test]
    fn map_validates_its_inputs() {
        let m = small_model();
        let obs = ObservedEnvelope::c_to_o(0.5, 0.0);
        let err = chi_square_map(&m, &obs, &MapSettings::defaults()).unwrap_err();
        assert_eq!(
            err.to_string(),
            "c_to_o_sigma: must be >= 1e-6 and finite, got 0"
        );
        // The floor: a sigma of 1e-320 would make chi2 infinite (issue 15 item 5).
        let tiny = ObservedEnvelope::c_to_o(0.5, 1e-320);
        assert_eq!(
            chi_square_map(&m, &tiny, &MapSettings::defaults())
                .unwrap_err()
                .to_string(),
            "c_to_o_sigma: must be >= 1e-6 and finite, got 1e-320"
        );
        // At the floor, with the largest accepted C/O and metallicity, every chi2 is finite.
        let edge = ObservedEnvelope::c_to_o(MAX_OBSERVED_C_TO_O, MIN_C_TO_O_SIGMA).with(
            Observable::CToH,
            -MAX_OBSERVED_METALLICITY_DEX,
            MIN_METALLICITY_SIGMA_DEX,
        );
        let map = chi_square_map(&m, &edge, &MapSettings::defaults()).unwrap();
        assert!(map.rows.iter().filter_map(|r| r.chi2).all(f64::is_finite));
        assert!(map.rows.iter().any(|r| r.chi2.is_some()));
        let obs = ObservedEnvelope::c_to_o(0.5, 0.1);
        let mut s = MapSettings::defaults();
        s.ratio_count = 39;
        assert_eq!(
            chi_square_map(&m, &obs, &s).unwrap_err().to_string(),
            "ratio_count: must be in [40, 1000], got 39"
        );
    }

    #[test]
    fn map_rows_are_the_forward_model() {
        let m = small_model();
        let obs = ObservedEnvelope::c_to_o(0.45, 0.05).with(Observable::OToH, 0.3, 0.2);
        let map = chi_square_map(&m, &obs, &MapSettings::defaults()).unwrap();
        assert_eq!(map.rows.len(), 200 * 48);
        for (j, k) in [(60, 0), (120, 20), (180, 47)] {
            let row = map.row(j, k);
            let env = planet(
                &m,
                &PlanetRequest::at(map.radius_au[j], map.solid_to_gas[k]),
            )
            .unwrap()
            .envelope;
            check_close(row.c_to_o.unwrap(), env.c_to_o.unwrap(), 1e-12, "C/O");
            let chi2 = ((env.c_to_o.unwrap() - 0.45) / 0.05).powi(2)
                + ((env.o_to_h_dex().unwrap() - 0.3) / 0.2).powi(2);
            assert!(
                (row.chi2.unwrap() - chi2).abs() <= 1e-9 * chi2.max(1.0),
                "chi2 {} vs {chi2}",
                row.chi2.unwrap()
            );
        }
        let best = map.best.unwrap();
        assert_eq!(
            map.row(best.radial_cell, best.ratio_index).delta_chi2,
            Some(0.0)
        );
        assert!(map
            .rows
            .iter()
            .all(|r| r.chi2.iter().all(|&c| c >= best.chi2)));
        // Rows inside the no-solid inner disk are undefined, never NaN.
        assert!(map.row(0, 10).chi2.is_none());
        assert!(map
            .rows
            .iter()
            .all(|r| r.chi2.iter().all(|c| c.is_finite())));
        // The allowed intervals are exactly the runs of flagged rows.
        for (k, a) in map.allowed.iter().enumerate() {
            let flagged: Vec<usize> = (0..200).filter(|&j| map.row(j, k).within_2sigma).collect();
            let from_runs: Vec<usize> = a
                .two_sigma
                .iter()
                .flat_map(|r| r.first_cell..=r.last_cell)
                .collect();
            assert_eq!(flagged, from_runs);
            for w in a.two_sigma.windows(2) {
                assert!(
                    w[1].first_cell > w[0].last_cell + 1,
                    "runs must be disjoint and separated"
                );
            }
        }
    }

    #[test]
    fn degeneracy_text_reads_plainly() {
        let r = |a: f64, b: f64| RadiusInterval {
            first_cell: 0,
            last_cell: 1,
            inner_centre_au: a,
            outer_centre_au: b,
            inner_edge_au: a,
            outer_edge_au: b,
        };
        let d = Degeneracy {
            level: SigmaLevel::One,
            solid_to_gas: 0.0104,
            ranges: vec![r(2.1, 4.3), r(60.2, 85.0)],
            fitted: "C/O".into(),
        };
        assert_eq!(d.text(), "at solid-to-gas 0.010, two radius ranges give the same C/O within 1 sigma: 2.1-4.3 au and 60-85 au");
        assert_eq!(significant(0.001, 2), "0.0010");
        assert_eq!(significant(0.5, 2), "0.50");
        assert_eq!(short_radius(0.347), "0.35");
    }
}
