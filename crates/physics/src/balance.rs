//! Freeze-out / desorption of each volatile in each cell (docs/model.md section 7):
//! the equilibrium and the state after the disk's age, both in closed form, no
//! iteration and no time stepping.

use crate::math::{exp, exp_m1, ln_1p, sqrt};
use crate::params::{DesorptionModel, InitialIceState, ModelParameters};
use crate::species::{FrequencyRule, Species, SpeciesTable, SPECIES_COUNT};
use crate::units::{
    BINDING_SITES_PER_CM2, BOLTZMANN_ERG_PER_K, JULIAN_YEAR_S, MICRON_CM,
    REFERENCE_COSMIC_RAY_RATE_S,
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
/// Cooling time of a cosmic-ray heated grain from its 70 K peak [s], about 1e-5 s (Hasegawa & Herbst
/// 1993; the duty cycle 3.16e-19 is this time over the 3.16e13 s between heating hits at zeta = 1.3e-17).
pub const CR_COOLING_TIME_S: f64 = 1.0e-5;

/// Cosmic-ray desorption rate per surface molecule at the reference rate zeta = 1.3e-17 s^-1 [s^-1]:
/// B_cr = (f / t_cool) (1 - exp(-k_70 t_cool)), k_70 = nu exp(-E_b/70 K), f = 3.16e-19, t_cool = 1e-5 s.
/// For k_70 t_cool << 1 this is Hasegawa & Herbst 1993's f k_70; for larger k_70 a surface molecule
/// leaves at most once per heating event (its spike-limited form, derived here from the same two
/// times). The limit matters for the supervolatiles with matched high attempt frequencies: CO with
/// nu = 8e16 s^-1 has k_70 t_cool = 5e4, and the linear form would desorb it 5e4 times per hit.
pub fn cosmic_ray_desorption_rate_s(attempt_frequency_s: f64, binding_energy_k: f64) -> f64 {
    let k70 = attempt_frequency_s * exp(-binding_energy_k / CR_PEAK_TEMPERATURE_K);
    CR_HEATING_DUTY_CYCLE / CR_COOLING_TIME_S * -exp_m1(-k70 * CR_COOLING_TIME_S)
}

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
    /// Attempt frequency nu [s^-1] of thermal desorption, the one paired with the energy.
    pub vibration_frequency_s: f64,
    /// Source key of nu ("override" for a user value).
    pub frequency_source: &'static str,
}

/// Resolve each species' properties from the table, the chosen set and overrides.
///
/// The energy and its attempt frequency come as the set's pair. An overridden energy without an
/// overridden frequency keeps the set's frequency rule: the set's fixed nu of that species
/// (transition-state set), or nu = sqrt(2 N_s k E_b/(pi^2 m)) of the overridden energy (HHL92 sets).
pub fn species_properties(
    p: &ModelParameters,
    table: &SpeciesTable,
) -> [SpeciesProperties; SPECIES_COUNT] {
    Species::ALL.map(|s| {
        let d = table.get(s);
        let o = p.species_override(s);
        let pair = d.pair(p.ices.binding_energy_set);
        let (e, src) = match o.binding_energy_k {
            Some(v) => (v, "override"),
            None => (pair.binding_energy_k, pair.energy_source),
        };
        let (nu, nu_src) = match (o.attempt_frequency_s, pair.frequency) {
            (Some(v), _) => (v, "override"),
            (None, FrequencyRule::Value(v)) => (v, pair.frequency_source),
            (None, FrequencyRule::Hhl92) => {
                (vibration_frequency_s(e, d.mass_g()), pair.frequency_source)
            }
        };
        SpeciesProperties {
            binding_energy_k: e,
            binding_energy_source: src,
            photodesorption_yield: o.photodesorption_yield.unwrap_or(d.photodesorption_yield),
            condensation_temperature_k: o
                .condensation_temperature_k
                .unwrap_or(d.condensation_temperature_k),
            mass_g: d.mass_g(),
            vibration_frequency_s: nu,
            frequency_source: nu_src,
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
    /// Disk age [s].
    age_s: f64,
    initial_state: InitialIceState,
}

/// Ice fraction and equilibration time of one species at one place.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IceState {
    /// f_ice = n_ice / N in [0, 1].
    pub ice_fraction: f64,
    /// Equilibration time [s]; NaN where undefined (step model, no grains or no molecules).
    pub equilibration_time_s: f64,
}

/// The ice of one species at one place after the disk's age, with its equilibrium.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AgedIceState {
    /// f_ice at the disk's age, in [0, 1] (the equilibrium for `InitialIceState::Equilibrium`).
    pub ice_fraction: f64,
    /// The equilibrium f_ice (the long-time limit).
    pub equilibrium_ice_fraction: f64,
    /// Equilibration time [s] at the equilibrium; NaN where undefined.
    pub equilibration_time_s: f64,
    /// The equilibration time exceeds the age, or the state at the age still differs from the
    /// equilibrium by more than 0.01 in f_ice. Never set where the time is undefined.
    pub out_of_equilibrium: bool,
}

/// Largest |f(age) - f_eq| still called equilibrium (an ice fraction of 1 %; common practice, no source).
pub const EQUILIBRIUM_FRACTION_TOLERANCE: f64 = 0.01;

/// The rates of the ice rate equation of one species at one place (all per cm^3 or per s):
/// dn/dt = A (N - n) - R(n), R(n) = B min(n, M) + C min(1, n/M) (zeroth order) or (B + C/M) n
/// (first order), docs/model.md section 7.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RateEquation {
    /// Adsorption rate per gas molecule A [s^-1].
    pub adsorption_s: f64,
    /// Thermal plus cosmic-ray desorption rate per surface molecule B [s^-1].
    pub desorption_s: f64,
    /// Photodesorption rate per cm^3 of grains' surface layer C [cm^-3 s^-1].
    pub photodesorption_cm3_s: f64,
    /// One monolayer M [molecules cm^-3].
    pub monolayer_cm3: f64,
    /// Molecules in total N [cm^-3].
    pub molecules_cm3: f64,
    /// Zeroth order (multilayer) when true, first order when false.
    pub zeroth_order: bool,
}

impl RateEquation {
    /// The right side dn/dt [cm^-3 s^-1] at ice density `n`.
    pub fn rate(&self, n: f64) -> f64 {
        let (a, b, c, m) = (
            self.adsorption_s,
            self.desorption_s,
            self.photodesorption_cm3_s,
            self.monolayer_cm3,
        );
        let loss = if self.zeroth_order {
            b * n.min(m) + c * (n / m).min(1.0)
        } else {
            (b + c / m) * n
        };
        a * (self.molecules_cm3 - n) - loss
    }

    /// The one root n_eq of dn/dt = 0 [cm^-3] and the relaxation time there [s]: on the thin
    /// branch (n_eq <= M, or first order) n_eq = A N/(A + B + C/M), time 1/(A + B + C/M); on the
    /// thick branch n_eq = N - (B M + C)/A, time 1/A.
    pub fn equilibrium(&self) -> (f64, f64) {
        let (a, m) = (self.adsorption_s, self.monolayer_cm3);
        let thin_rate = a + self.desorption_s + self.photodesorption_cm3_s / m;
        let thin = a * self.molecules_cm3 / thin_rate;
        if !self.zeroth_order || thin <= m {
            (thin, 1.0 / thin_rate)
        } else {
            (self.thick_equilibrium(), 1.0 / a)
        }
    }

    fn thick_equilibrium(&self) -> f64 {
        self.molecules_cm3
            - (self.desorption_s * self.monolayer_cm3 + self.photodesorption_cm3_s)
                / self.adsorption_s
    }

    /// The exact solution n(t) [cm^-3] from n(0) = `initial_cm3`, closed form.
    ///
    /// Each branch is linear: n' = A N - (A + B + C/M) n for n <= M (and first order everywhere),
    /// n' = A (N - n) - (B M + C) for n > M, so n relaxes exponentially towards the branch's own
    /// root, n = n_root + (n0 - n_root) e^{-k t}. R(n) is continuous and increasing, so a path
    /// crosses n = M at most once, at t_s = ln((n0 - n_root)/(M - n_root))/k, and continues on the
    /// other branch from n = M (docs/model.md section 7). A > 0 and M > 0 are required.
    pub fn evolve(&self, initial_cm3: f64, time_s: f64) -> f64 {
        let (a, m, big_n) = (self.adsorption_s, self.monolayer_cm3, self.molecules_cm3);
        let thin_rate = a + self.desorption_s + self.photodesorption_cm3_s / m;
        let thin_root = a * big_n / thin_rate;
        // n0 e^{-k t} + root (1 - e^{-k t}), with 1 - e^{-k t} from expm1 for small k t.
        let relax = |n0: f64, root: f64, k: f64, t: f64| {
            let decay = -exp_m1(-k * t);
            n0 * (1.0 - decay) + root * decay
        };
        if !self.zeroth_order {
            return relax(initial_cm3, thin_root, thin_rate, time_s);
        }
        let thick_root = self.thick_equilibrium();
        if initial_cm3 > m {
            if thick_root >= m {
                return relax(initial_cm3, thick_root, a, time_s);
            }
            // ln((n0 - root)/(M - root)) = ln(1 + (n0 - M)/(M - root)).
            let switch = ln_1p((initial_cm3 - m) / (m - thick_root)) / a;
            if time_s <= switch {
                relax(initial_cm3, thick_root, a, time_s).max(m)
            } else {
                relax(m, thin_root, thin_rate, time_s - switch)
            }
        } else {
            if thin_root <= m {
                return relax(initial_cm3, thin_root, thin_rate, time_s);
            }
            let switch = ln_1p((m - initial_cm3) / (thin_root - m)) / thin_rate;
            if time_s <= switch {
                relax(initial_cm3, thin_root, thin_rate, time_s).min(m)
            } else {
                relax(m, thick_root, a, time_s - switch)
            }
        }
    }
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
                    cosmic_ray_desorption_rate_s(s.vibration_frequency_s, s.binding_energy_k)
                        / REFERENCE_COSMIC_RAY_RATE_S
                } else {
                    0.0
                }
            }),
            yields: props.map(|s| s.photodesorption_yield),
            condensation: props.map(|s| s.condensation_temperature_k),
            age_s: p.disk.age_myr * 1.0e6 * JULIAN_YEAR_S,
            initial_state: p.ices.initial_state,
        }
    }

    /// The equilibrium of species `i` with `molecules_cm3` molecules per cm^3 in
    /// total, at temperature T, gas density rho, FUV photon flux F and CR rate zeta.
    ///
    /// Adsorption A = S n_gr pi a^2 v_th, v_th = sqrt(8 k T/(pi m)); thermal
    /// desorption B_th = nu exp(-E_b/T) with the (E_b, nu) pair of the chosen set (docs/model.md
    /// section 7); cosmic-ray desorption B_cr = [`cosmic_ray_desorption_rate_s`] zeta/1.3e-17
    /// (Hasegawa & Herbst 1993, spike-limited);
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

impl BalanceConstants {
    /// The rate equation of species `i` at a place, or `None` where it is undefined (step model,
    /// no molecules or no grain surface).
    pub fn rate_equation(
        &self,
        p: &SampleState,
        i: usize,
        molecules_cm3: f64,
    ) -> Option<RateEquation> {
        if self.model == DesorptionModel::FixedTemperature
            || !(molecules_cm3 > 0.0)
            || !(p.grain_area_cm2_per_cm3 > 0.0)
        {
            return None;
        }
        Some(RateEquation {
            adsorption_s: self.sticking
                * p.grain_area_cm2_per_cm3
                * self.thermal_speed_coefficient[i]
                * p.sqrt_temperature,
            desorption_s: self.nu[i] * exp(-self.binding[i] * p.inverse_temperature)
                + self.cr_per_zeta[i] * p.ionization_rate_s,
            photodesorption_cm3_s: p.fuv_photons_cm2_s * self.yields[i] * p.grain_area_cm2_per_cm3,
            monolayer_cm3: p.monolayer_cm3,
            molecules_cm3,
            zeroth_order: self.model == DesorptionModel::ZerothOrder,
        })
    }

    /// The ice of species `i` after the disk's age from the chosen initial state (all ice, all
    /// gas, or the equilibrium), by [`RateEquation::evolve`], with the equilibrium of
    /// [`BalanceConstants::solve_at`]. The step model has no kinetics: its state is its equilibrium.
    #[inline]
    pub fn solve_aged(&self, p: &SampleState, i: usize, molecules_cm3: f64) -> AgedIceState {
        let eq = self.solve_at(p, i, molecules_cm3);
        let equilibrium = AgedIceState {
            ice_fraction: eq.ice_fraction,
            equilibrium_ice_fraction: eq.ice_fraction,
            equilibration_time_s: eq.equilibration_time_s,
            out_of_equilibrium: eq.equilibration_time_s > self.age_s,
        };
        let n0 = match self.initial_state {
            InitialIceState::Equilibrium => return equilibrium,
            InitialIceState::Inherited => molecules_cm3,
            InitialIceState::Gas => 0.0,
        };
        let Some(eqn) = self.rate_equation(p, i, molecules_cm3) else {
            return equilibrium;
        };
        let f = (eqn.evolve(n0, self.age_s) / molecules_cm3).clamp(0.0, 1.0);
        AgedIceState {
            ice_fraction: f,
            out_of_equilibrium: equilibrium.out_of_equilibrium
                || (f - eq.ice_fraction).abs() > EQUILIBRIUM_FRACTION_TOLERANCE,
            ..equilibrium
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
    fn cosmic_ray_desorption_is_hasegawa_herbst_when_slow_and_one_per_hit_when_fast() {
        // Hasegawa & Herbst 1993: B_cr = 3.16e-19 k_70 for k_70 t_cool << 1 (water, legacy pair: k_70 ~ 5e-24 s^-1);
        // at most one desorption per hit, f / t_cool = 3.16e-14 s^-1, when k_70 t_cool >> 1 (CO, nu = 8e16 s^-1).
        let (nu, e) = (2.85e12, 5773.0);
        let linear = CR_HEATING_DUTY_CYCLE * nu * exp(-e / CR_PEAK_TEMPERATURE_K);
        assert!((cosmic_ray_desorption_rate_s(nu, e) / linear - 1.0).abs() < 1e-9);
        let fast = cosmic_ray_desorption_rate_s(7.967e16, 1158.0);
        assert!(
            (fast / (CR_HEATING_DUTY_CYCLE / CR_COOLING_TIME_S) - 1.0).abs() < 1e-9,
            "{fast:e}"
        );
    }

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
