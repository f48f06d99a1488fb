//! Freeze-out / desorption equilibrium of each volatile in each cell
//! (docs/model.md section 7): closed form, no iteration.

use crate::math::{exp, sqrt};
use crate::params::{DesorptionModel, ModelParameters};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};
use crate::units::{
    BINDING_SITES_PER_CM2, BOLTZMANN_ERG_PER_K, MICRON_CM, REFERENCE_COSMIC_RAY_RATE_S,
};
use std::f64::consts::PI;

/// Characteristic vibration frequency [s^-1] of a physisorbed molecule:
/// nu = sqrt(2 N_s k E_b / (pi^2 m)) (Hasegawa, Herbst & Leung 1992, eq. 3),
/// N_s = 1.5e15 cm^-2, E_b = `binding_energy_k` [K], m = `mass_g` [g].
pub fn vibration_frequency_s(binding_energy_k: f64, mass_g: f64) -> f64 {
    sqrt(2.0 * BINDING_SITES_PER_CM2 * BOLTZMANN_ERG_PER_K * binding_energy_k / (PI * PI * mass_g))
}

/// Fraction of a grain's time spent near 70 K after a cosmic-ray (Fe nucleus)
/// hit, f = 3.16e-19 (Hasegawa & Herbst 1993).
pub const CR_HEATING_DUTY_CYCLE: f64 = 3.16e-19;
/// Peak temperature of a cosmic-ray heated grain [K] (Hasegawa & Herbst 1993).
pub const CR_PEAK_TEMPERATURE_K: f64 = 70.0;

/// Resolved properties of one species for this disk (built-in data with overrides applied).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpeciesProperties {
    /// Binding energy [K].
    pub binding_energy_k: f64,
    /// Source key of the binding energy ("override" for a user value).
    pub binding_energy_source: &'static str,
    /// Photodesorption yield.
    pub photodesorption_yield: f64,
    /// Condensation temperature of the step model [K].
    pub condensation_temperature_k: f64,
    /// Molecular mass [g].
    pub mass_g: f64,
    /// nu [s^-1].
    pub vibration_frequency_s: f64,
}

/// Resolve each species' properties from the table, the chosen set and overrides.
pub fn species_properties(
    p: &ModelParameters,
    table: &SpeciesTable,
) -> [SpeciesProperties; SPECIES_COUNT] {
    Species::ALL.map(|s| {
        let d = table.get(s);
        let o = p.species_override(s);
        let (e_set, src) = d.binding_energy(p.ices.binding_energy_set);
        let (e, src) = match o.binding_energy_k {
            Some(v) => (v, "override"),
            None => (e_set, src),
        };
        SpeciesProperties {
            binding_energy_k: e,
            binding_energy_source: src,
            photodesorption_yield: o.photodesorption_yield.unwrap_or(d.photodesorption_yield),
            condensation_temperature_k: o
                .condensation_temperature_k
                .unwrap_or(d.condensation_temperature_k),
            mass_g: d.mass_g(),
            vibration_frequency_s: vibration_frequency_s(e, d.mass_g()),
        }
    })
}

/// Everything the balance needs that is fixed for the disk, precomputed.
#[derive(Debug, Clone, PartialEq)]
pub struct BalanceConstants {
    model: DesorptionModel,
    /// Grain number per gram of gas [g^-1]: dust_to_gas / (4/3 pi a^3 rho_gr).
    grains_per_gram: f64,
    /// Grain cross-section pi a^2 [cm^2].
    cross_section_cm2: f64,
    sticking: f64,
    photodesorption: bool,
    /// Per species: sqrt(8 k / (pi m)) so that v_th = coef sqrt(T).
    thermal_speed_coefficient: [f64; SPECIES_COUNT],
    /// Per species: nu and E_b.
    nu: [f64; SPECIES_COUNT],
    binding: [f64; SPECIES_COUNT],
    /// Per species: cosmic-ray desorption rate per unit zeta [s^-1 per s^-1].
    cr_per_zeta: [f64; SPECIES_COUNT],
    yields: [f64; SPECIES_COUNT],
    condensation: [f64; SPECIES_COUNT],
}

/// Ice fraction and equilibration time of one species at one place.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IceState {
    /// f_ice = n_ice / N in [0, 1].
    pub ice_fraction: f64,
    /// Equilibration time [s]; NaN where undefined (step model, no grains or no molecules).
    pub equilibration_time_s: f64,
}

impl BalanceConstants {
    /// Precompute the balance constants.
    pub fn new(
        p: &ModelParameters,
        props: &[SpeciesProperties; SPECIES_COUNT],
    ) -> BalanceConstants {
        let a = p.disk.grain_radius_um * MICRON_CM;
        let grain_mass = 4.0 / 3.0 * PI * a * a * a * p.disk.grain_density_g_cm3;
        let cr_on = p.ices.cosmic_ray_desorption;
        BalanceConstants {
            model: p.ices.desorption,
            grains_per_gram: p.disk.dust_to_gas / grain_mass,
            cross_section_cm2: PI * a * a,
            sticking: p.ices.sticking,
            photodesorption: p.ices.photodesorption,
            thermal_speed_coefficient: props
                .map(|s| sqrt(8.0 * BOLTZMANN_ERG_PER_K / (PI * s.mass_g))),
            nu: props.map(|s| s.vibration_frequency_s),
            binding: props.map(|s| s.binding_energy_k),
            cr_per_zeta: props.map(|s| {
                if cr_on {
                    CR_HEATING_DUTY_CYCLE
                        * s.vibration_frequency_s
                        * exp(-s.binding_energy_k / CR_PEAK_TEMPERATURE_K)
                        / REFERENCE_COSMIC_RAY_RATE_S
                } else {
                    0.0
                }
            }),
            yields: props.map(|s| s.photodesorption_yield),
            condensation: props.map(|s| s.condensation_temperature_k),
        }
    }

    /// The equilibrium of species `i` with `molecules_cm3` molecules per cm^3 in
    /// total, at temperature T, gas density rho, FUV photon flux F and CR rate zeta.
    ///
    /// Adsorption A = S n_gr pi a^2 v_th, v_th = sqrt(8 k T/(pi m)); thermal
    /// desorption B_th = nu exp(-E_b/T) (Hasegawa, Herbst & Leung 1992); cosmic-ray
    /// desorption B_cr = 3.16e-19 nu exp(-E_b/70 K) zeta/1.3e-17 (Hasegawa & Herbst 1993);
    /// photodesorption C = F Y pi a^2 n_gr; one monolayer M = 4 pi a^2 N_s n_gr.
    /// Zeroth order: A (N - n) = (B_th + B_cr) min(n, M) + C min(1, n/M), one root:
    /// n = A N/(A + B + C/M) if <= M, else n = N - (B M + C)/A.
    /// First order: A (N - n) = (B + C/M) n. Step model: f = 1 where T < T_cond.
    /// Equilibration time: 1/(A + B + C/M) on the thin-ice branch, 1/A on the thick one.
    pub fn solve(
        &self,
        i: usize,
        molecules_cm3: f64,
        temperature_k: f64,
        density_g_cm3: f64,
        fuv_photons_cm2_s: f64,
        ionization_rate_s: f64,
    ) -> IceState {
        self.solve_at(
            &self.sample(
                temperature_k,
                density_g_cm3,
                fuv_photons_cm2_s,
                ionization_rate_s,
            ),
            i,
            molecules_cm3,
        )
    }

    /// The species-independent quantities of one place, computed once for all species.
    #[inline]
    pub fn sample(
        &self,
        temperature_k: f64,
        density_g_cm3: f64,
        fuv_photons_cm2_s: f64,
        ionization_rate_s: f64,
    ) -> SampleState {
        let grain_area = self.grains_per_gram * density_g_cm3 * self.cross_section_cm2;
        SampleState {
            temperature_k,
            inverse_temperature: 1.0 / temperature_k,
            sqrt_temperature: sqrt(temperature_k),
            grain_area_cm2_per_cm3: grain_area,
            monolayer_cm3: 4.0 * BINDING_SITES_PER_CM2 * grain_area,
            fuv_photons_cm2_s: if self.photodesorption {
                fuv_photons_cm2_s
            } else {
                0.0
            },
            ionization_rate_s,
        }
    }

    /// [`BalanceConstants::solve`] with the per-place quantities precomputed.
    #[inline]
    pub fn solve_at(&self, p: &SampleState, i: usize, molecules_cm3: f64) -> IceState {
        if self.model == DesorptionModel::FixedTemperature {
            let f = if p.temperature_k < self.condensation[i] {
                1.0
            } else {
                0.0
            };
            return IceState {
                ice_fraction: f,
                equilibration_time_s: f64::NAN,
            };
        }
        if !(molecules_cm3 > 0.0) || !(p.grain_area_cm2_per_cm3 > 0.0) {
            return IceState {
                ice_fraction: 0.0,
                equilibration_time_s: f64::NAN,
            };
        }
        let adsorption = self.sticking
            * p.grain_area_cm2_per_cm3
            * self.thermal_speed_coefficient[i]
            * p.sqrt_temperature;
        let desorption = self.nu[i] * exp(-self.binding[i] * p.inverse_temperature)
            + self.cr_per_zeta[i] * p.ionization_rate_s;
        let photo = p.fuv_photons_cm2_s * self.yields[i] * p.grain_area_cm2_per_cm3;
        let thin_rate = adsorption + desorption + photo / p.monolayer_cm3;
        let thin_fraction = adsorption / thin_rate;
        if self.model == DesorptionModel::FirstOrder
            || thin_fraction * molecules_cm3 <= p.monolayer_cm3
        {
            IceState {
                ice_fraction: thin_fraction,
                equilibration_time_s: 1.0 / thin_rate,
            }
        } else {
            let f = 1.0 - (desorption * p.monolayer_cm3 + photo) / (adsorption * molecules_cm3);
            IceState {
                ice_fraction: f.clamp(0.0, 1.0),
                equilibration_time_s: 1.0 / adsorption,
            }
        }
    }
}

/// Species-independent quantities of one place (see [`BalanceConstants::sample`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SampleState {
    temperature_k: f64,
    inverse_temperature: f64,
    sqrt_temperature: f64,
    grain_area_cm2_per_cm3: f64,
    monolayer_cm3: f64,
    fuv_photons_cm2_s: f64,
    ionization_rate_s: f64,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::ATOMIC_MASS_UNIT_G;

    #[test]
    fn hasegawa_frequencies_match_worked_values() {
        // docs/check-values.md section 4b worked nu0 (D, n_s = 1.5e15, m = mu u): tolerance 4e-3 (printed digits).
        for (e, m, expected) in [
            (5773.0, 18.0, 2.85e12),
            (855.0, 28.0, 8.785e11),
            (790.0, 28.0, 8.44e11),
            (2575.0, 44.0, 1.216e12),
            (1090.0, 16.0, 1.31e12),
        ] {
            let nu = vibration_frequency_s(e, m * ATOMIC_MASS_UNIT_G);
            assert!(
                (nu / expected - 1.0).abs() < 4e-3,
                "E={e}: {nu:e} vs {expected:e}"
            );
        }
    }
}
