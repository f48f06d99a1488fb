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

use crate::budget::defined_ratio;
use crate::error::PhysicsError;
use crate::math::{exp, exp10, ln};
use crate::model::{LocalMidplane, Model};
use crate::params::{Element, ELEMENT_COUNT};
use crate::species::SPECIES_COUNT;
use crate::units::{ATOMIC_MASS_UNIT_G, AU_CM, HYDROGEN_MASS_G, MASS_PER_HYDROGEN_NUCLEUS_AMU_H};

/// Number of midpoint-rule points used to average over a migration range (docs/model.md section 9).
pub const AVERAGING_POINTS: usize = 200;

/// Smallest and largest solid-to-gas mass ratio of the inverse map (docs/model.md section 9).
pub const MAP_SOLID_TO_GAS_RANGE: (f64, f64) = (1.0e-3, 1.0);

/// Default number of log-spaced solid-to-gas values in the inverse map.
pub const DEFAULT_MAP_RATIO_COUNT: usize = 48;

/// Fewest solid-to-gas values the inverse map accepts (docs/model.md section 9: at least 40).
pub const MIN_MAP_RATIO_COUNT: usize = 40;

/// Most solid-to-gas values the inverse map accepts (a bound on memory, 1000 x N_r rows).
pub const MAX_MAP_RATIO_COUNT: usize = 1000;

/// How the atoms per gram of each phase are weighted along a migration range.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RadialWeighting {
    /// Uniform in radius: midpoints r_k = r1 + (k + 1/2)(r2 - r1)/200, equal
    /// weights (docs/model.md section 9). Default.
    #[default]
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
        /// Weighting of the midpoints. Default uniform in radius.
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
    /// [X/H] = log10 of `relative_to_star`; `None` where N_e/N_H is below 1e-9 of the star's X/H.
    pub dex: Option<f64>,
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
    /// [C/H] in dex.
    pub fn c_to_h_dex(&self) -> Option<f64> {
        self.element(Element::C).dex
    }
    /// [O/H] in dex.
    pub fn o_to_h_dex(&self) -> Option<f64> {
        self.element(Element::O).dex
    }
    /// The envelope C/O divided by the star's C/O.
    pub fn c_to_o_relative_to_star(&self) -> Option<f64> {
        let star =
            self.stellar_per_h[Element::C as usize] / self.stellar_per_h[Element::O as usize];
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
    /// A planet accreting along [inner, outer] au, uniform weighting, M_gas = 1 g, f_mix = 1.
    pub fn migrating(
        inner_radius_au: f64,
        outer_radius_au: f64,
        solid_to_gas: f64,
    ) -> PlanetRequest {
        PlanetRequest {
            place: FormationPlace::Migration {
                inner_radius_au,
                outer_radius_au,
                weighting: RadialWeighting::Uniform,
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
    let d = &model.parameters.disk;
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
    let c = &model.carriers;
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
    let st = &model.structure;
    let k = st.index(j, 0);
    let n = model.sample_count();
    let phases = model.phases_at(k);
    let ice_fraction = std::array::from_fn(|i| model.ice_fraction[i * n + k]);
    let out_of_equilibrium = std::array::from_fn(|i| model.out_of_equilibrium[i * n + k]);
    let solid_mass_per_h_amu = model
        .carriers
        .solid_mass_per_h_amu(&phases, |i| ice_fraction[i]);
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
            stellar_per_h: model.carriers.stellar_per_h,
            out_of_equilibrium: p.out_of_equilibrium,
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
        if j >= model.structure.radial_cells {
            return Err(PhysicsError::OutOfRange {
                name: "radial_cell",
                value: j as f64,
                allowed: "below the number of radial cells",
            });
        }
        let r_au = model.structure.radius_cm[j] / AU_CM;
        let p = point_phases(
            &grid_midplane(model, j),
            fully_condensed_mass_per_h_amu(model),
        );
        Ok(AccretedPhases::from_point(model, r_au, r_au, p))
    }

    /// The phases averaged over a migration range [inner, outer] au
    /// (docs/model.md section 9): atoms per gram of each phase averaged with the
    /// midpoint rule over 200 points placed as `weighting` says, each point the
    /// model's own column at that radius. The solids' atoms per gram are
    /// averaged over the points that hold solids (a place without solids
    /// supplies none), so they are `None` only when no point holds solids.
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
        let ln_ratio = ln(outer_radius_au / inner_radius_au);
        for k in 0..n {
            let t = (k as f64 + 0.5) / n as f64;
            let r = match weighting {
                RadialWeighting::Uniform => {
                    inner_radius_au + t * (outer_radius_au - inner_radius_au)
                }
                RadialWeighting::LogRadius => inner_radius_au * exp(t * ln_ratio),
            };
            let p = point_phases(&model.midplane_at(r)?, reference);
            for (sum, v) in gas.iter_mut().zip(p.gas) {
                *sum += v;
            }
            if let Some(s) = p.solid {
                with_solids += 1;
                for (sum, v) in solid.iter_mut().zip(s) {
                    *sum += v;
                }
            }
            solid_to_gas += p.solid_to_gas;
            for (flag, point) in out_of_equilibrium.iter_mut().zip(p.out_of_equilibrium) {
                *flag |= point;
            }
        }
        let gas = gas.map(|v| v / n as f64);
        let solid_atoms_per_g = if with_solids > 0 {
            Some(solid.map(|v| v / with_solids as f64))
        } else {
            None
        };
        Ok(AccretedPhases {
            inner_radius_au,
            outer_radius_au,
            hydrogen_per_gram_of_gas: 1.0 / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G),
            gas_atoms_per_g: gas,
            solid_atoms_per_g,
            solid_to_gas_available: solid_to_gas / n as f64,
            points_with_solids: with_solids,
            points: n,
            stellar_per_h: model.carriers.stellar_per_h,
            out_of_equilibrium,
        })
    }

    /// C/O of the accreted gas (atoms per gram); `None` below the 1e-9 rule.
    pub fn gas_c_to_o(&self) -> Option<f64> {
        let (c, o) = (Element::C as usize, Element::O as usize);
        defined_ratio(
            self.gas_atoms_per_g[c],
            self.gas_atoms_per_g[o],
            self.stellar_per_h[o] * self.hydrogen_per_gram_of_gas,
        )
    }

    /// C/O of the accreted solids (atoms per gram); `None` where there are no
    /// solids or their oxygen per gram is below 1e-9 of the star's O per gram of gas.
    pub fn solid_c_to_o(&self) -> Option<f64> {
        let (c, o) = (Element::C as usize, Element::O as usize);
        let s = self.solid_atoms_per_g?;
        defined_ratio(
            s[c],
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
            let from_gas_atoms = gas_mass_g * self.gas_atoms_per_g[e];
            let from_solids_atoms = match &self.solid_atoms_per_g {
                Some(s) => solid_mixing_fraction * solid_mass_g * s[e],
                None => 0.0,
            };
            let atoms = from_gas_atoms + from_solids_atoms;
            let per_h = atoms / hydrogen_atoms;
            let star = self.stellar_per_h[e];
            let relative_to_star = per_h / star;
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

/// Which metallicity tracer an observation constrains.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MetallicityTracer {
    /// [C/H].
    Carbon,
    /// [O/H].
    Oxygen,
}

impl MetallicityTracer {
    /// Label, e.g. "[C/H]".
    pub fn label(self) -> &'static str {
        match self {
            MetallicityTracer::Carbon => "[C/H]",
            MetallicityTracer::Oxygen => "[O/H]",
        }
    }
}

/// An observed metallicity [X/H] in dex with its 1-sigma error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ObservedMetallicity {
    /// Which element.
    pub tracer: MetallicityTracer,
    /// [X/H] [dex], relative to the star.
    pub dex: f64,
    /// 1-sigma error [dex], > 0.
    pub sigma_dex: f64,
}

/// What was observed of a planet's envelope.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ObservedEnvelope {
    /// Envelope C/O (>= 0).
    pub c_to_o: f64,
    /// 1-sigma error of C/O (> 0).
    pub c_to_o_sigma: f64,
    /// Optional [C/H] or [O/H].
    pub metallicity: Option<ObservedMetallicity>,
}

impl ObservedEnvelope {
    /// Number of observed quantities fitted (1 or 2).
    pub fn fitted_quantities(&self) -> usize {
        1 + usize::from(self.metallicity.is_some())
    }
    /// What is fitted, in words ("C/O" or "C/O and [O/H]").
    pub fn fitted_label(&self) -> String {
        match self.metallicity {
            Some(m) => format!("C/O and {}", m.tracer.label()),
            None => "C/O".to_string(),
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
/// ApJ 210, 642). docs/model.md section 9 prescribes nu = 2, which is the default.
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
    /// nu = number of fitted observed quantities (1 for C/O alone, 2 with a metallicity).
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

/// Settings of the inverse map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapSettings {
    /// Number of log-spaced solid-to-gas values over 1e-3..1 (both ends included). Default 48, in [40, 1000].
    pub ratio_count: usize,
    /// f_mix, fixed over the map. Default 1.
    pub solid_mixing_fraction: f64,
    /// Delta chi-square convention. Default two mapped parameters (2.30, 6.18).
    pub convention: ConfidenceConvention,
}

impl MapSettings {
    /// The defaults: 48 ratios, f_mix = 1, two-parameter thresholds.
    pub fn defaults() -> MapSettings {
        MapSettings {
            ratio_count: DEFAULT_MAP_RATIO_COUNT,
            solid_mixing_fraction: 1.0,
            convention: ConfidenceConvention::MappedParameters,
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
    /// Model envelope C/O.
    pub c_to_o: Option<f64>,
    /// Model [C/H] [dex].
    pub c_to_h_dex: Option<f64>,
    /// Model [O/H] [dex].
    pub o_to_h_dex: Option<f64>,
    /// Chi-square against the observation; `None` where a fitted model quantity is undefined.
    pub chi2: Option<f64>,
    /// chi2 - min chi2 over the map.
    pub delta_chi2: Option<f64>,
    /// delta chi2 <= the 1-sigma threshold.
    pub within_1sigma: bool,
    /// delta chi2 <= the 2-sigma threshold.
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
    /// The smallest chi-square (first in row order on ties); `None` if no row is defined.
    pub best: Option<BestFit>,
    /// Per solid-to-gas value, the allowed radius ranges.
    pub allowed: Vec<AllowedRadii>,
    /// Radial cell edges [au] (N_r + 1 values).
    pub cell_edges_au: Vec<f64>,
}

/// The log-spaced solid-to-gas values of the map: 10^(-3 + 3 k/(n - 1)), k = 0..n-1.
pub fn map_solid_to_gas_values(count: usize) -> Vec<f64> {
    let (lo, hi) = MAP_SOLID_TO_GAS_RANGE;
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

/// The inverse map (docs/model.md section 9): chi-square of the forward model at
/// every radial cell centre (the model's own grid midplane, which equals
/// `Model::midplane_at` there) times every solid-to-gas value, against
/// `observed`:
///
///   chi2 = ((C/O_model - C/O_obs) / sigma)^2 [+ (([X/H]_model - [X/H]_obs) / sigma_dex)^2].
///
/// The per-radius phases are computed once; each ratio then costs a few
/// multiplications. Rows where a fitted model quantity is undefined (no oxygen,
/// no solids to accrete at a positive ratio) have `chi2 = None` and lie in no region.
///
/// Errors: `OutOfRange` for `c_to_o` (>= 0, finite), `c_to_o_sigma` (> 0,
/// finite), the metallicity (finite) and its sigma (> 0, finite), `ratio_count`
/// ([40, 1000]), `solid_mixing_fraction` ([0, 1]).
pub fn chi_square_map(
    model: &Model,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<ChiSquareMap, PhysicsError> {
    if !(observed.c_to_o >= 0.0 && observed.c_to_o.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "c_to_o",
            value: observed.c_to_o,
            allowed: ">= 0 and finite",
        });
    }
    if !(observed.c_to_o_sigma > 0.0 && observed.c_to_o_sigma.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "c_to_o_sigma",
            value: observed.c_to_o_sigma,
            allowed: "> 0 and finite",
        });
    }
    if let Some(m) = observed.metallicity {
        if !m.dex.is_finite() {
            return Err(PhysicsError::OutOfRange {
                name: "metallicity_dex",
                value: m.dex,
                allowed: "finite",
            });
        }
        if !(m.sigma_dex > 0.0 && m.sigma_dex.is_finite()) {
            return Err(PhysicsError::OutOfRange {
                name: "metallicity_sigma_dex",
                value: m.sigma_dex,
                allowed: "> 0 and finite",
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
    if !(0.0..=1.0).contains(&settings.solid_mixing_fraction) {
        return Err(PhysicsError::OutOfRange {
            name: "solid_mixing_fraction",
            value: settings.solid_mixing_fraction,
            allowed: "in [0, 1]",
        });
    }
    let st = &model.structure;
    let n_r = st.radial_cells;
    let ratios = map_solid_to_gas_values(settings.ratio_count);
    let radius_au: Vec<f64> = st.radius_cm.iter().map(|r| r / AU_CM).collect();
    let reference = fully_condensed_mass_per_h_amu(model);
    let mut rows = Vec::with_capacity(n_r * ratios.len());
    for (j, &r_au) in radius_au.iter().enumerate() {
        let p = point_phases(&grid_midplane(model, j), reference);
        let phases = AccretedPhases::from_point(model, r_au, r_au, p);
        for &q in &ratios {
            if phases.solid_atoms_per_g.is_none() {
                rows.push(MapRow {
                    radius_au: r_au,
                    solid_to_gas: q,
                    c_to_o: None,
                    c_to_h_dex: None,
                    o_to_h_dex: None,
                    chi2: None,
                    delta_chi2: None,
                    within_1sigma: false,
                    within_2sigma: false,
                });
                continue;
            }
            let env = phases.envelope_unchecked(1.0, q, settings.solid_mixing_fraction);
            let (c_to_h, o_to_h) = (env.c_to_h_dex(), env.o_to_h_dex());
            let chi2 = env.c_to_o.and_then(|c| {
                let base = sq((c - observed.c_to_o) / observed.c_to_o_sigma);
                match observed.metallicity {
                    None => Some(base),
                    Some(m) => {
                        let model_dex = match m.tracer {
                            MetallicityTracer::Carbon => c_to_h,
                            MetallicityTracer::Oxygen => o_to_h,
                        };
                        model_dex.map(|d| base + sq((d - m.dex) / m.sigma_dex))
                    }
                }
            });
            rows.push(MapRow {
                radius_au: r_au,
                solid_to_gas: q,
                c_to_o: env.c_to_o,
                c_to_h_dex: c_to_h,
                o_to_h_dex: o_to_h,
                chi2,
                delta_chi2: None,
                within_1sigma: false,
                within_2sigma: false,
            });
        }
    }
    let thresholds = DeltaChiSquare::new(settings.convention, observed.fitted_quantities());
    let n_q = ratios.len();
    let mut best: Option<(usize, f64)> = None;
    for (i, row) in rows.iter().enumerate() {
        if let Some(c) = row.chi2 {
            if best.map(|(_, b)| c < b).unwrap_or(true) {
                best = Some((i, c));
            }
        }
    }
    if let Some((_, min)) = best {
        for row in rows.iter_mut() {
            if let Some(c) = row.chi2 {
                let d = c - min;
                row.delta_chi2 = Some(d);
                row.within_1sigma = d <= thresholds.one_sigma;
                row.within_2sigma = d <= thresholds.two_sigma;
            }
        }
    }
    let ln_edge = ln(model.parameters.disk.outer_radius_au / model.parameters.disk.inner_radius_au);
    let cell_edges_au: Vec<f64> = (0..=n_r)
        .map(|j| model.parameters.disk.inner_radius_au * exp(ln_edge * j as f64 / n_r as f64))
        .collect();
    let runs = |k: usize, inside: &dyn Fn(&MapRow) -> bool| -> Vec<RadiusInterval> {
        let mut out = Vec::new();
        let mut start: Option<usize> = None;
        for j in 0..=n_r {
            let ok = j < n_r && inside(&rows[j * n_q + k]);
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
    };
    let allowed = (0..n_q)
        .map(|k| AllowedRadii {
            solid_to_gas: ratios[k],
            one_sigma: runs(k, &|r: &MapRow| r.within_1sigma),
            two_sigma: runs(k, &|r: &MapRow| r.within_2sigma),
        })
        .collect();
    let best = best.map(|(i, chi2)| BestFit {
        radial_cell: i / n_q,
        ratio_index: i % n_q,
        radius_au: rows[i].radius_au,
        solid_to_gas: rows[i].solid_to_gas,
        chi2,
        row: rows[i],
    });
    Ok(ChiSquareMap {
        observed: *observed,
        settings: *settings,
        thresholds,
        radius_au,
        solid_to_gas: ratios,
        rows,
        best,
        allowed,
        cell_edges_au,
    })
}

fn sq(x: f64) -> f64 {
    x * x
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
            let r = m.structure.radius_cm[j] / AU_CM;
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
        let star = m.carriers.stellar_per_h[0] / m.carriers.stellar_per_h[1];
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
        let obs = ObservedEnvelope {
            c_to_o: 0.5,
            c_to_o_sigma: 0.0,
            metallicity: None,
        };
        let err = chi_square_map(&m, &obs, &MapSettings::defaults()).unwrap_err();
        assert_eq!(
            err.to_string(),
            "c_to_o_sigma: must be > 0 and finite, got 0"
        );
        let obs = ObservedEnvelope {
            c_to_o: 0.5,
            c_to_o_sigma: 0.1,
            metallicity: None,
        };
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
        let obs = ObservedEnvelope {
            c_to_o: 0.45,
            c_to_o_sigma: 0.05,
            metallicity: Some(ObservedMetallicity {
                tracer: MetallicityTracer::Oxygen,
                dex: 0.3,
                sigma_dex: 0.2,
            }),
        };
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
