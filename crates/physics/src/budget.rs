//! Element budget (docs/model.md section 8): how the star's C, O, N, S, Si, Mg, Fe
//! are divided among volatile carriers and refractory solids, and, given the
//! local temperature and ice fractions, how much of each element is in the gas,
//! in ices and in refractory solids.

use crate::error::PhysicsError;
use crate::params::{CompositionParameters, Element, ELEMENT_COUNT};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};

/// Abundances per H nucleus of the carriers, fixed for one disk.
#[derive(Debug, Clone, PartialEq)]
pub struct Carriers {
    /// Stellar abundances per H (C, O, N, S, Si, Mg, Fe).
    pub stellar_per_h: [f64; ELEMENT_COUNT],
    /// Total (gas + ice) abundance of each volatile species per H, `Species::ALL` order.
    pub species_per_h: [f64; SPECIES_COUNT],
    /// Refractory carbon per H.
    pub refractory_carbon_per_h: f64,
    /// Refractory (sulfide) sulfur per H.
    pub refractory_sulfur_per_h: f64,
    /// Oxygen held in silicates per H.
    pub silicate_oxygen_per_h: f64,
    /// Atoms of C, O, N, S per molecule, per species.
    pub atoms: [[f64; 4]; SPECIES_COUNT],
    /// Molecular masses [amu] per species.
    pub mass_amu: [f64; SPECIES_COUNT],
    /// Release temperatures [K]: soot line, sulfide, silicates.
    pub soot_line_k: f64,
    /// FeS release temperature [K].
    pub sulfide_release_k: f64,
    /// Silicate sublimation temperature [K].
    pub silicate_sublimation_k: f64,
    /// Radius [cm] inside which refractory carbon is in the gas whatever today's
    /// temperature: the furthest extent of the irreversible soot line (0 = none).
    pub carbon_released_within_cm: f64,
}

/// Element abundances per H nucleus in each phase at one place.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhaseAbundances {
    /// Gas phase (volatiles in the gas plus released refractories).
    pub gas: [f64; ELEMENT_COUNT],
    /// Ices.
    pub ice: [f64; ELEMENT_COUNT],
    /// Refractory solids still solid here.
    pub refractory: [f64; ELEMENT_COUNT],
}

impl PhaseAbundances {
    /// Ice + refractory abundance of element `e`.
    pub fn solid(&self, e: Element) -> f64 {
        self.ice[e as usize] + self.refractory[e as usize]
    }
}

/// `value`, or exactly 0 where it is zero up to rounding: below 1e-9 of
/// `total`, the element's total abundance (docs/model.md section 8: never a
/// noisy number; the same threshold as [`defined_ratio`]).
pub fn zero_below_rounding(value: f64, total: f64) -> f64 {
    if value.abs() < 1e-9 * total.abs() {
        0.0
    } else {
        value
    }
}

/// A ratio to a reference that equals 1 up to rounding (within 1e-9) is
/// written as exactly 1, so its logarithm is exactly 0 dex.
pub fn one_within_rounding(ratio: f64) -> f64 {
    if (ratio - 1.0).abs() < 1e-9 {
        1.0
    } else {
        ratio
    }
}

/// Ratio `numerator / denominator`, undefined (`None`) where the denominator
/// is below 1e-9 of `reference` (docs/model.md section 8: never a noisy number).
pub fn defined_ratio(numerator: f64, denominator: f64, reference: f64) -> Option<f64> {
    if denominator < 1e-9 * reference || denominator <= 0.0 {
        None
    } else {
        Some(numerator / denominator)
    }
}

impl Carriers {
    /// Divide the star's elements among carriers (docs/model.md section 8).
    ///
    /// Carbon fractions are of all carbon; nitrogen fractions of the nitrogen
    /// left after HCN (x_N2 = f x_left / 2, x_NH3 = f x_left); sulfur fractions
    /// of all sulfur; silicates hold `oxygen_per_silicon` O per Si; water takes
    /// the oxygen left: x_H2O = x_O - ops x_Si - x_CO - 2 x_CO2 - x_CH3OH
    /// (bookkeeping as in Oberg et al. 2011; Madhusudhan et al. 2014).
    /// The fraction groups must already sum to 1 (the disk-file reader renormalises).
    pub fn new(
        stellar_per_h: [f64; ELEMENT_COUNT],
        composition: &CompositionParameters,
        table: &SpeciesTable,
    ) -> Result<Carriers, PhysicsError> {
        let [x_c, x_o, x_n, x_s, x_si, _, _] = stellar_per_h;
        let cf = &composition.carbon;
        let x_co = cf.co * x_c;
        let x_co2 = cf.co2 * x_c;
        let x_ch4 = cf.ch4 * x_c;
        let x_ch3oh = cf.ch3oh * x_c;
        let x_hcn = cf.hcn * x_c;
        let nitrogen_left = x_n - x_hcn;
        if nitrogen_left < 0.0 {
            return Err(PhysicsError::NitrogenExhausted {
                nitrogen_per_h: x_n,
                hcn_per_h: x_hcn,
            });
        }
        let silicate_o = composition.oxygen_per_silicon * x_si;
        let x_h2o = x_o - silicate_o - x_co - 2.0 * x_co2 - x_ch3oh;
        if x_h2o < 0.0 {
            return Err(PhysicsError::OxygenExhausted {
                oxygen_per_h: x_o,
                silicate_oxygen_per_h: silicate_o,
                co_oxygen_per_h: x_co,
                co2_oxygen_per_h: 2.0 * x_co2,
                ch3oh_oxygen_per_h: x_ch3oh,
                star_c_to_o: x_c / x_o,
            });
        }
        let mut species_per_h = [0.0; SPECIES_COUNT];
        species_per_h[Species::H2O.index()] = x_h2o;
        species_per_h[Species::CO.index()] = x_co;
        species_per_h[Species::CO2.index()] = x_co2;
        species_per_h[Species::CH4.index()] = x_ch4;
        species_per_h[Species::CH3OH.index()] = x_ch3oh;
        species_per_h[Species::HCN.index()] = x_hcn;
        species_per_h[Species::N2.index()] = composition.nitrogen.n2 * nitrogen_left / 2.0;
        species_per_h[Species::NH3.index()] = composition.nitrogen.nh3 * nitrogen_left;
        species_per_h[Species::H2S.index()] = composition.sulfur.h2s * x_s;
        let mut atoms = [[0.0; 4]; SPECIES_COUNT];
        let mut mass_amu = [0.0; SPECIES_COUNT];
        for s in Species::ALL {
            let d = table.get(s);
            for (k, a) in d.atoms_c_o_n_s.iter().enumerate() {
                atoms[s.index()][k] = f64::from(*a);
            }
            mass_amu[s.index()] = d.mass_amu;
        }
        Ok(Carriers {
            stellar_per_h,
            species_per_h,
            refractory_carbon_per_h: cf.refractory * x_c,
            refractory_sulfur_per_h: composition.sulfur.refractory * x_s,
            silicate_oxygen_per_h: silicate_o,
            atoms,
            mass_amu,
            soot_line_k: composition.soot_line_k,
            sulfide_release_k: composition.sulfide_release_k,
            silicate_sublimation_k: composition.silicate_sublimation_k,
            carbon_released_within_cm: 0.0,
        })
    }

    /// Phase abundances at temperature `temperature_k` and cylindrical radius
    /// `radius_cm` with ice fractions `ice_fraction` (per species, in [0, 1]).
    ///
    /// Refractory carbon is gas where T >= soot line or, for the irreversible
    /// soot line, at r <= `carbon_released_within_cm` (carbon once sublimated
    /// there stays in the gas, Li et al. 2021; kept in the gas so that elements
    /// are conserved in a static disk), sulfide sulfur where
    /// T >= sulfide release, silicate O, Si, Mg, Fe where T >= silicate
    /// sublimation (docs/model.md section 8). Gas + ice + refractory equals the
    /// stellar abundance of every element (to rounding).
    pub fn phases(
        &self,
        temperature_k: f64,
        radius_cm: f64,
        ice_fraction: impl Fn(usize) -> f64,
    ) -> PhaseAbundances {
        let mut gas = [0.0; ELEMENT_COUNT];
        let mut ice = [0.0; ELEMENT_COUNT];
        let mut refractory = [0.0; ELEMENT_COUNT];
        for i in 0..SPECIES_COUNT {
            let x = self.species_per_h[i];
            if x == 0.0 {
                continue;
            }
            let f = ice_fraction(i);
            let x_ice = f * x;
            let x_gas = x - x_ice;
            for k in 0..4 {
                let a = self.atoms[i][k];
                if a != 0.0 {
                    gas[k] += a * x_gas;
                    ice[k] += a * x_ice;
                }
            }
        }
        let c = Element::C as usize;
        let o = Element::O as usize;
        let s = Element::S as usize;
        if temperature_k >= self.soot_line_k || radius_cm <= self.carbon_released_within_cm {
            gas[c] += self.refractory_carbon_per_h;
        } else {
            refractory[c] += self.refractory_carbon_per_h;
        }
        if temperature_k >= self.sulfide_release_k {
            gas[s] += self.refractory_sulfur_per_h;
        } else {
            refractory[s] += self.refractory_sulfur_per_h;
        }
        let silicate_target = if temperature_k >= self.silicate_sublimation_k {
            &mut gas
        } else {
            &mut refractory
        };
        silicate_target[o] += self.silicate_oxygen_per_h;
        for e in [Element::Si, Element::Mg, Element::Fe] {
            silicate_target[e as usize] += self.stellar_per_h[e as usize];
        }
        PhaseAbundances {
            gas,
            ice,
            refractory,
        }
    }

    /// Mass of solids per H nucleus [amu]: ices (abundance x molecular mass)
    /// plus refractory atoms x atomic mass (docs/model.md section 9).
    pub fn solid_mass_per_h_amu(
        &self,
        phases: &PhaseAbundances,
        ice_fraction: impl Fn(usize) -> f64,
    ) -> f64 {
        let mut m = 0.0;
        for i in 0..SPECIES_COUNT {
            m += ice_fraction(i) * self.species_per_h[i] * self.mass_amu[i];
        }
        for e in Element::ALL {
            m += phases.refractory[e as usize] * e.atomic_mass_amu();
        }
        m
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::params::ModelParameters;
    use crate::star::stellar_abundances_per_h;

    fn carriers(p: &ModelParameters) -> Result<Carriers, PhysicsError> {
        Carriers::new(
            stellar_abundances_per_h(&p.star),
            &p.composition,
            &SpeciesTable::built_in(),
        )
    }

    #[test]
    fn elements_are_conserved_in_every_regime() {
        let c = carriers(&ModelParameters::defaults()).unwrap();
        let mut c = c;
        c.carbon_released_within_cm = 2.0e13;
        for t in [20.0, 600.0, 800.0, 2000.0] {
            for f in [0.0, 0.3, 1.0] {
                let ph = c.phases(t, 1.0e13, |_| f);
                for e in 0..ELEMENT_COUNT {
                    let total = ph.gas[e] + ph.ice[e] + ph.refractory[e];
                    assert!(
                        (total / c.stellar_per_h[e] - 1.0).abs() < 1e-12,
                        "T={t} f={f} e={e}"
                    );
                }
            }
        }
    }

    #[test]
    fn carbon_rich_star_is_an_error_with_numbers() {
        let mut p = ModelParameters::defaults();
        p.star.offset_dex[0] = 0.5; // C/O = 1.74
        let err = carriers(&p).unwrap_err();
        assert!(matches!(err, PhysicsError::OxygenExhausted { .. }));
        assert!(err.to_string().contains("C/O = 1.738"), "{err}");
    }
}
