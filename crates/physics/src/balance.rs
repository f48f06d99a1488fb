//! Freeze-out / desorption of each volatile in each cell (docs/model.md section 7):
//! the equilibrium and the state after the disk's age, both in closed form, no
//! iteration and no time stepping.

use crate::math::{exp, exp_m1, exp_poly, inverse_upper_bound, ln_1p, ln_upper_bound, sqrt};
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
    /// Per species: 1 / (S coef), so that 1/A = that / (n_gr pi a^2 sqrt(T)).
    inverse_sticking_speed: [f64; SPECIES_COUNT],
    /// Per species: nu and -E_b.
    nu: [f64; SPECIES_COUNT],
    minus_binding: [f64; SPECIES_COUNT],
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

    /// The two linear branches of this equation (their rates and roots), computed as the grid's
    /// ice balance computes them (see [`Branches`]).
    fn branches(&self) -> Branches {
        let (a, m, big_n) = (self.adsorption_s, self.monolayer_cm3, self.molecules_cm3);
        Branches::new(
            a,
            1.0 / a,
            self.desorption_s,
            self.photodesorption_cm3_s / m,
            m,
            big_n,
            self.zeroth_order,
        )
    }

    /// The one root n_eq of dn/dt = 0 [cm^-3] and the relaxation time there [s]: on the thin
    /// branch (n_eq <= M, or first order) n_eq = A N/(A + B + C/M), time 1/(A + B + C/M); on the
    /// thick branch n_eq = N - (B M + C)/A, time 1/A.
    pub fn equilibrium(&self) -> (f64, f64) {
        let b = self.branches();
        if b.thin_branch() {
            (b.thin_root, b.inverse_thin_rate)
        } else {
            (b.thick_root, b.inverse_adsorption)
        }
    }

    /// The exact solution n(t) [cm^-3] from n(0) = `initial_cm3`, closed form.
    ///
    /// Each branch is linear: n' = A N - (A + B + C/M) n for n <= M (and first order everywhere),
    /// n' = A (N - n) - (B M + C) for n > M, so n relaxes exponentially towards the branch's own
    /// root, n = n_root + (n0 - n_root) e^{-k t}. R(n) is continuous and increasing, so a path
    /// crosses n = M at most once, at t_s = ln((n0 - n_root)/(M - n_root))/k, and continues on the
    /// other branch from n = M (docs/model.md section 7). A > 0 and M > 0 are required.
    pub fn evolve(&self, initial_cm3: f64, time_s: f64) -> f64 {
        self.branches().evolve(initial_cm3, time_s)
    }
}

/// The two linear branches of the ice rate equation at one place (docs/model.md section 7), with
/// the rates and roots in the form the grid computes them: one division (1/(A + B + C/M)) per
/// species and place; 1/A, 1/N and C/M come from quantities of the place and of the species
/// computed once ([`BalanceConstants::sample`]).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Branches {
    adsorption: f64,
    inverse_adsorption: f64,
    monolayer: f64,
    /// A + B + C/M and its inverse.
    thin_rate: f64,
    inverse_thin_rate: f64,
    /// A / (A + B + C/M).
    thin_fraction: f64,
    /// A N / (A + B + C/M).
    thin_root: f64,
    /// N - (B + C/M) M / A.
    thick_root: f64,
    zeroth_order: bool,
}

impl Branches {
    #[inline(always)]
    fn new(
        adsorption: f64,
        inverse_adsorption: f64,
        desorption: f64,
        photodesorption_per_monolayer: f64,
        monolayer: f64,
        molecules: f64,
        zeroth_order: bool,
    ) -> Branches {
        let thin_rate = adsorption + desorption + photodesorption_per_monolayer;
        let inverse_thin_rate = 1.0 / thin_rate;
        let thin_fraction = adsorption * inverse_thin_rate;
        Branches {
            adsorption,
            inverse_adsorption,
            monolayer,
            thin_rate,
            inverse_thin_rate,
            thin_fraction,
            thin_root: thin_fraction * molecules,
            thick_root: molecules
                - monolayer * (desorption + photodesorption_per_monolayer) * inverse_adsorption,
            zeroth_order,
        }
    }

    /// Whether the equilibrium lies on the thin branch (first order, or n_eq <= M there).
    #[inline(always)]
    fn thin_branch(&self) -> bool {
        !self.zeroth_order | (self.thin_root <= self.monolayer)
    }

    /// [`RateEquation::evolve`] on these branches.
    fn evolve(&self, initial_cm3: f64, time_s: f64) -> f64 {
        let (a, m) = (self.adsorption, self.monolayer);
        let (thin_rate, thin_root, thick_root) = (self.thin_rate, self.thin_root, self.thick_root);
        // n0 e^{-k t} + root (1 - e^{-k t}), with 1 - e^{-k t} from expm1 for small k t.
        let relax = |n0: f64, root: f64, k: f64, t: f64| {
            let decay = -exp_m1(-k * t);
            n0 * (1.0 - decay) + root * decay
        };
        if !self.zeroth_order {
            return relax(initial_cm3, thin_root, thin_rate, time_s);
        }
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

    /// The root [`Branches::evolve`] ends on after `time_s` from `initial_cm3`, and whether it is
    /// provably reached exactly: the last relaxation has k t > 40, and libm's expm1 returns
    /// exactly -1 for arguments below -56 ln 2 = -38.8, so `relax` returns the root itself. For a
    /// path that crosses n = M the crossing time ln(1 + q)/k is bounded from above without a
    /// logarithm or a division, by the smaller of two bounds of ln(1 + q), q = num/den: the
    /// binary exponents' ([`ln_upper_bound`]) and q itself (ln(1 + q) <= q, with 1/den bounded
    /// by [`inverse_upper_bound`]; used where that product is a normal number), with a relative
    /// margin of 1e-9, the bound being a normal number (so each rounding is relative, below
    /// 2^-52). Branch-free; `false` (not proven) sends the place through [`Branches::evolve`].
    #[inline(always)]
    fn settled_root(&self, initial_cm3: f64, time_s: f64) -> (f64, bool) {
        const SETTLED_RATE_TIME: f64 = 40.0;
        let (a, m) = (self.adsorption, self.monolayer);
        let (thin_root, thick_root) = (self.thin_root, self.thick_root);
        let zeroth = self.zeroth_order;
        let above = initial_cm3 > m;
        let thick_holds = thick_root >= m;
        let thin_holds = thin_root <= m;
        let direct_thick = zeroth & above & thick_holds;
        let to_thin = zeroth & above & !thick_holds;
        let to_thick = zeroth & !above & !thin_holds;
        let root = if direct_thick | to_thick {
            thick_root
        } else {
            thin_root
        };
        let direct_rate = if direct_thick { a } else { self.thin_rate };
        let direct = direct_rate * time_s > SETTLED_RATE_TIME;
        // Crossing n = M: ln(1 + num/den) = ln(num + den) - ln(den) <= ub(num + den) - ub(den) + ln 2.
        let (num, den) = if to_thin {
            (initial_cm3 - m, m - thick_root)
        } else {
            (m - initial_cm3, thin_root - m)
        };
        let (inverse_first, second) = if to_thin {
            (self.inverse_adsorption, self.thin_rate)
        } else {
            (self.inverse_thin_rate, a)
        };
        let sum = num + den;
        let exponents = ln_upper_bound(sum) - ln_upper_bound(den) + std::f64::consts::LN_2;
        // ln(1 + q) <= q <= num 2^-e(den): the tighter one where q is small (a path that
        // barely crosses, whose first rate is slow).
        let ratio = num * inverse_upper_bound(den);
        let log_bound = if ratio >= f64::MIN_POSITIVE {
            exponents.min(ratio)
        } else {
            exponents
        };
        let crossing = log_bound * inverse_first * (1.0 + 1e-9);
        let switched = (den >= f64::MIN_POSITIVE)
            & (sum < f64::MAX)
            & (crossing >= f64::MIN_POSITIVE)
            & (time_s > crossing)
            & (second * (time_s - crossing) > SETTLED_RATE_TIME);
        (root, if to_thin | to_thick { switched } else { direct })
    }
}

/// f clamped to [0, 1] (NaN stays NaN), written as two selects so that it vectorises.
#[inline(always)]
fn clamp_unit(f: f64) -> f64 {
    let f = if f < 0.0 { 0.0 } else { f };
    if f > 1.0 {
        1.0
    } else {
        f
    }
}

/// How many places one [`SampleBlock`] holds: a multiple of [`LANE_GROUP`], large enough for a
/// whole column of the default grid (81 samples) in one block.
pub(crate) const BLOCK: usize = 96;

/// The species-independent quantities of up to [`BLOCK`] places, one array per quantity, so
/// that the loop over places for one species is vectorised.
pub(crate) struct SampleBlock {
    len: usize,
    inverse_temperature: [f64; BLOCK],
    sqrt_temperature: [f64; BLOCK],
    grain_area: [f64; BLOCK],
    inverse_area_sqrt_temperature: [f64; BLOCK],
    monolayer: [f64; BLOCK],
    fuv_per_site: [f64; BLOCK],
    ionization_rate: [f64; BLOCK],
    hydrogen_density: [f64; BLOCK],
    inverse_hydrogen_density: [f64; BLOCK],
    temperature: [f64; BLOCK],
    fuv_photons: [f64; BLOCK],
}

/// The output of one species over one block: slices of the grid's species-major arrays.
pub(crate) struct BlockOutput<'a> {
    pub(crate) ice_fraction: &'a mut [f64],
    pub(crate) equilibrium_ice_fraction: &'a mut [f64],
    pub(crate) equilibration_time_s: &'a mut [f64],
    pub(crate) out_of_equilibrium: &'a mut [bool],
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
        let thermal_speed_coefficient =
            props.map(|s| sqrt(8.0 * BOLTZMANN_ERG_PER_K / (PI * s.mass_g)));
        BalanceConstants {
            model: p.ices.desorption,
            grains_per_gram: p.disk.dust_to_gas / grain_mass,
            cross_section_cm2: PI * a * a,
            sticking: p.ices.sticking,
            photodesorption: p.ices.photodesorption,
            thermal_speed_coefficient,
            inverse_sticking_speed: thermal_speed_coefficient
                .map(|coef| 1.0 / (p.ices.sticking * coef)),
            nu: props.map(|s| s.vibration_frequency_s),
            minus_binding: props.map(|s| -s.binding_energy_k),
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
    /// section 7; exp by [`exp_poly`]); cosmic-ray desorption B_cr = [`cosmic_ray_desorption_rate_s`]
    /// zeta/1.3e-17 (Hasegawa & Herbst 1993, spike-limited);
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
        let sqrt_temperature = sqrt(temperature_k);
        let fuv = if self.photodesorption {
            fuv_photons_cm2_s
        } else {
            0.0
        };
        SampleState {
            temperature_k,
            inverse_temperature: 1.0 / temperature_k,
            sqrt_temperature,
            grain_area_cm2_per_cm3: grain_area,
            inverse_area_sqrt_temperature: 1.0 / (grain_area * sqrt_temperature),
            monolayer_cm3: 4.0 * BINDING_SITES_PER_CM2 * grain_area,
            fuv_photons_cm2_s: fuv,
            // C/M = F Y pi a^2 n_gr / (4 pi a^2 N_s n_gr) = Y F / (4 N_s).
            fuv_per_site: fuv / (4.0 * BINDING_SITES_PER_CM2),
            ionization_rate_s,
        }
    }

    /// The rates of species `i` at one place, as one lane of the grid's loop computes them:
    /// A (and 1/A from the place's 1/(n_gr pi a^2 sqrt T)), B = nu [`exp_poly`](-E_b/T) + B_cr,
    /// C/M = Y F/(4 N_s); with N molecules per cm^3, these give the branches.
    #[allow(clippy::too_many_arguments)]
    #[inline(always)]
    fn branches_at(
        &self,
        i: usize,
        inverse_temperature: f64,
        sqrt_temperature: f64,
        grain_area: f64,
        inverse_area_sqrt_temperature: f64,
        monolayer: f64,
        fuv_per_site: f64,
        ionization_rate: f64,
        molecules: f64,
    ) -> (Branches, f64) {
        let desorption = self.nu[i] * exp_poly(self.minus_binding[i] * inverse_temperature)
            + self.cr_per_zeta[i] * ionization_rate;
        (
            self.branches_given(
                i,
                sqrt_temperature,
                grain_area,
                inverse_area_sqrt_temperature,
                monolayer,
                fuv_per_site,
                molecules,
                desorption,
            ),
            desorption,
        )
    }

    /// [`BalanceConstants::branches_at`] with the desorption rate B already computed.
    #[allow(clippy::too_many_arguments)]
    #[inline(always)]
    fn branches_given(
        &self,
        i: usize,
        sqrt_temperature: f64,
        grain_area: f64,
        inverse_area_sqrt_temperature: f64,
        monolayer: f64,
        fuv_per_site: f64,
        molecules: f64,
        desorption: f64,
    ) -> Branches {
        let adsorption =
            self.sticking * grain_area * self.thermal_speed_coefficient[i] * sqrt_temperature;
        let inverse_adsorption = self.inverse_sticking_speed[i] * inverse_area_sqrt_temperature;
        let per_monolayer = fuv_per_site * self.yields[i];
        Branches::new(
            adsorption,
            inverse_adsorption,
            desorption,
            per_monolayer,
            monolayer,
            molecules,
            self.model == DesorptionModel::ZerothOrder,
        )
    }

    /// [`BalanceConstants::branches_at`] at a [`SampleState`].
    #[inline(always)]
    fn branches_of(&self, p: &SampleState, i: usize, molecules: f64) -> (Branches, f64) {
        self.branches_at(
            i,
            p.inverse_temperature,
            p.sqrt_temperature,
            p.grain_area_cm2_per_cm3,
            p.inverse_area_sqrt_temperature,
            p.monolayer_cm3,
            p.fuv_per_site,
            p.ionization_rate_s,
            molecules,
        )
    }

    /// One lane of the grid's loop: species `i` at one place with N = `molecules` (and 1/N =
    /// `inverse_molecules`): the aged state with its equilibrium, and whether it is final (the
    /// closed form provably reached its root, or no kinetics apply). Kinetic models only.
    #[allow(clippy::too_many_arguments)]
    #[inline(always)]
    fn lane(
        &self,
        i: usize,
        inverse_temperature: f64,
        sqrt_temperature: f64,
        grain_area: f64,
        inverse_area_sqrt_temperature: f64,
        monolayer: f64,
        fuv_per_site: f64,
        ionization_rate: f64,
        molecules: f64,
        inverse_molecules: f64,
    ) -> (AgedIceState, bool, f64) {
        let (b, desorption) = self.branches_at(
            i,
            inverse_temperature,
            sqrt_temperature,
            grain_area,
            inverse_area_sqrt_temperature,
            monolayer,
            fuv_per_site,
            ionization_rate,
            molecules,
        );
        let valid = (molecules > 0.0) & (grain_area > 0.0);
        let thin = b.thin_branch();
        let equilibrium = if !valid {
            0.0
        } else if thin {
            b.thin_fraction
        } else {
            clamp_unit(b.thick_root * inverse_molecules)
        };
        let time = if !valid {
            f64::NAN
        } else if thin {
            b.inverse_thin_rate
        } else {
            b.inverse_adsorption
        };
        let kinetic = valid & (self.initial_state != InitialIceState::Equilibrium);
        let initial = if self.initial_state == InitialIceState::Inherited {
            molecules
        } else {
            0.0
        };
        let (root, settled) = b.settled_root(initial, self.age_s);
        let aged = if kinetic {
            clamp_unit(root * inverse_molecules)
        } else {
            equilibrium
        };
        let out = (time > self.age_s)
            | (kinetic & ((aged - equilibrium).abs() > EQUILIBRIUM_FRACTION_TOLERANCE));
        (
            AgedIceState {
                ice_fraction: aged,
                equilibrium_ice_fraction: equilibrium,
                equilibration_time_s: time,
                out_of_equilibrium: out,
            },
            settled | !kinetic,
            desorption,
        )
    }

    /// [`BalanceConstants::lane`] at a [`SampleState`].
    #[inline(always)]
    fn lane_at(
        &self,
        p: &SampleState,
        i: usize,
        molecules: f64,
        inverse_molecules: f64,
    ) -> (AgedIceState, bool, f64) {
        self.lane(
            i,
            p.inverse_temperature,
            p.sqrt_temperature,
            p.grain_area_cm2_per_cm3,
            p.inverse_area_sqrt_temperature,
            p.monolayer_cm3,
            p.fuv_per_site,
            p.ionization_rate_s,
            molecules,
            inverse_molecules,
        )
    }

    /// The step model: f = 1 where T < T_cond, else 0; no time, always in equilibrium.
    fn step(&self, p: &SampleState, i: usize) -> AgedIceState {
        let f = if p.temperature_k < self.condensation[i] {
            1.0
        } else {
            0.0
        };
        AgedIceState {
            ice_fraction: f,
            equilibrium_ice_fraction: f,
            equilibration_time_s: f64::NAN,
            out_of_equilibrium: false,
        }
    }

    /// [`BalanceConstants::solve`] with the per-place quantities precomputed.
    #[inline]
    pub fn solve_at(&self, p: &SampleState, i: usize, molecules_cm3: f64) -> IceState {
        let state = self.solve_aged(p, i, molecules_cm3);
        IceState {
            ice_fraction: state.equilibrium_ice_fraction,
            equilibration_time_s: state.equilibration_time_s,
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
        let (b, desorption) = self.branches_of(p, i, molecules_cm3);
        Some(RateEquation {
            adsorption_s: b.adsorption,
            desorption_s: desorption,
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
        self.solve_aged_with_inverse(p, i, molecules_cm3, 1.0 / molecules_cm3)
    }

    /// [`BalanceConstants::solve_aged`] with 1/N given (the grid forms it as (1/x) (1/n_H)).
    #[inline]
    pub(crate) fn solve_aged_with_inverse(
        &self,
        p: &SampleState,
        i: usize,
        molecules: f64,
        inverse_molecules: f64,
    ) -> AgedIceState {
        if self.model == DesorptionModel::FixedTemperature {
            return self.step(p, i);
        }
        let (state, settled, desorption) = self.lane_at(p, i, molecules, inverse_molecules);
        if settled {
            state
        } else {
            self.unsettled(p, i, molecules, inverse_molecules, state, desorption)
        }
    }

    /// The aged state of a lane whose closed form is not provably at its root: [`Branches::evolve`].
    #[cold]
    #[inline(never)]
    fn unsettled(
        &self,
        p: &SampleState,
        i: usize,
        molecules: f64,
        inverse_molecules: f64,
        state: AgedIceState,
        desorption: f64,
    ) -> AgedIceState {
        // B as the lane computed it (the same number; its exp is not evaluated twice).
        let b = self.branches_given(
            i,
            p.sqrt_temperature,
            p.grain_area_cm2_per_cm3,
            p.inverse_area_sqrt_temperature,
            p.monolayer_cm3,
            p.fuv_per_site,
            molecules,
            desorption,
        );
        let initial = match self.initial_state {
            InitialIceState::Inherited => molecules,
            _ => 0.0,
        };
        let f = clamp_unit(b.evolve(initial, self.age_s) * inverse_molecules);
        AgedIceState {
            ice_fraction: f,
            out_of_equilibrium: state.equilibration_time_s > self.age_s
                || (f - state.equilibrium_ice_fraction).abs() > EQUILIBRIUM_FRACTION_TOLERANCE,
            ..state
        }
    }

    /// Fill a block with the places `temperature_k[k]` ... of one column's samples.
    #[allow(clippy::too_many_arguments)]
    #[inline(always)]
    pub(crate) fn fill_block(
        &self,
        block: &mut SampleBlock,
        temperature_k: &[f64],
        density_g_cm3: &[f64],
        fuv_photons_cm2_s: &[f64],
        ionization_rate_s: &[f64],
        hydrogen_density_cm3: &[f64],
    ) {
        let len = temperature_k.len().min(BLOCK);
        block.len = len;
        let (temperature_k, density_g_cm3, fuv_photons_cm2_s, ionization_rate_s) = (
            &temperature_k[..len],
            &density_g_cm3[..len],
            &fuv_photons_cm2_s[..len],
            &ionization_rate_s[..len],
        );
        let hydrogen_density_cm3 = &hydrogen_density_cm3[..len];
        // WebAssembly simd128: two places per vector, [`BalanceConstants::sample`]'s
        // operations in its order (the same bits), the odd last place below.
        #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
        let start = {
            use crate::math::simd128::{load2, splat, store2};
            use core::arch::wasm32::*;
            let pairs = len / 2 * 2;
            let [grains_per_gram, cross_section, one, sites, photodesorption] =
                core::hint::black_box([
                    splat(self.grains_per_gram),
                    splat(self.cross_section_cm2),
                    splat(1.0),
                    splat(4.0 * BINDING_SITES_PER_CM2),
                    u64x2_splat(if self.photodesorption { u64::MAX } else { 0 }),
                ]);
            let (mul, div) = (f64x2_mul, f64x2_div);
            for q in (0..pairs).step_by(2) {
                let temperature = load2(temperature_k, q);
                let grain_area = mul(mul(grains_per_gram, load2(density_g_cm3, q)), cross_section);
                let sqrt_temperature = f64x2_sqrt(temperature);
                // `if photodesorption { F } else { 0 }` as a mask.
                let fuv = v128_and(load2(fuv_photons_cm2_s, q), photodesorption);
                let hydrogen = load2(hydrogen_density_cm3, q);
                store2(&mut block.temperature, q, temperature);
                store2(&mut block.inverse_temperature, q, div(one, temperature));
                store2(&mut block.sqrt_temperature, q, sqrt_temperature);
                store2(&mut block.grain_area, q, grain_area);
                store2(
                    &mut block.inverse_area_sqrt_temperature,
                    q,
                    div(one, mul(grain_area, sqrt_temperature)),
                );
                store2(&mut block.monolayer, q, mul(sites, grain_area));
                store2(&mut block.fuv_photons, q, fuv);
                store2(&mut block.fuv_per_site, q, div(fuv, sites));
                store2(&mut block.ionization_rate, q, load2(ionization_rate_s, q));
                store2(&mut block.hydrogen_density, q, hydrogen);
                store2(&mut block.inverse_hydrogen_density, q, div(one, hydrogen));
            }
            pairs
        };
        #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
        let start = 0;
        for q in start..len {
            let s = self.sample(
                temperature_k[q],
                density_g_cm3[q],
                fuv_photons_cm2_s[q],
                ionization_rate_s[q],
            );
            block.temperature[q] = s.temperature_k;
            block.inverse_temperature[q] = s.inverse_temperature;
            block.sqrt_temperature[q] = s.sqrt_temperature;
            block.grain_area[q] = s.grain_area_cm2_per_cm3;
            block.inverse_area_sqrt_temperature[q] = s.inverse_area_sqrt_temperature;
            block.monolayer[q] = s.monolayer_cm3;
            block.fuv_photons[q] = s.fuv_photons_cm2_s;
            block.fuv_per_site[q] = s.fuv_per_site;
            block.ionization_rate[q] = s.ionization_rate_s;
            block.hydrogen_density[q] = hydrogen_density_cm3[q];
            block.inverse_hydrogen_density[q] = 1.0 / hydrogen_density_cm3[q];
        }
    }

    /// Species `i` with `per_h` molecules per H over a block: every lane in one vectorised pass,
    /// then [`Branches::evolve`] for the lanes not provably settled. The numbers equal
    /// [`BalanceConstants::solve_aged`] with N = x n_H and 1/N = (1/x)(1/n_H), bit for bit.
    ///
    /// Inlined into each version of the grid loop ([`crate::ices::IceBalance::solve_into`]:
    /// portable, and on x86-64 AVX2 and AVX-512F).
    #[inline(always)]
    pub(crate) fn solve_block(
        &self,
        i: usize,
        per_h: f64,
        block: &SampleBlock,
        out: BlockOutput<'_>,
    ) {
        let len = block.len;
        let inverse_per_h = 1.0 / per_h;
        let (ice, equilibrium, time, flag) = (
            &mut out.ice_fraction[..len],
            &mut out.equilibrium_ice_fraction[..len],
            &mut out.equilibration_time_s[..len],
            &mut out.out_of_equilibrium[..len],
        );
        if self.model != DesorptionModel::FixedTemperature {
            // Every lane in whole vectors: the whole groups of LANE_GROUP lanes straight into
            // the output, then the last partial group computed whole (its lanes past `len` hold
            // another place of the block or zeros, and are dropped), so no lane of a place falls
            // to a scalar remainder loop.
            let mut settled = [true; BLOCK];
            let mut desorption = [0.0; BLOCK];
            // Whether any lane of the block is not (yet) settled: the passes below run only
            // then. The scalar loops do not track it (always run).
            #[cfg_attr(
                not(all(target_arch = "wasm32", target_feature = "simd128")),
                allow(unused_mut)
            )]
            let mut pending = true;
            // WebAssembly with simd128: two places per vector, explicitly (module `simd128`).
            #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
            {
                use crate::math::simd128::store2;
                // The constants once, read in the loops (see ExpVectors).
                let constants = core::hint::black_box(crate::math::simd128::ExpVectors::new());
                let lanes = core::hint::black_box(self.lane_vectors(i, per_h, inverse_per_h));
                // Two passes, so that each loop holds fewer vectors at once: the desorption
                // rates B of every place of the block (the exponential), then the rest of the
                // lane from them (the same operations on the same numbers).
                let mut q = 0;
                while q < len {
                    store2(
                        &mut desorption,
                        q,
                        self.desorption_pair(block, q, &lanes, &constants),
                    );
                    q += 2;
                }
                let mut unsettled = 0u8;
                let mut q = 0;
                while q < len {
                    let pair = self.lane_pair(
                        block,
                        q,
                        &lanes,
                        &desorption,
                        [&mut *ice, &mut *equilibrium, &mut *time],
                    );
                    if q + 1 < len {
                        flag[q] = pair.flag & 1 != 0;
                        flag[q + 1] = pair.flag & 2 != 0;
                        settled[q] = pair.settled & 1 != 0;
                        settled[q + 1] = pair.settled & 2 != 0;
                        unsettled |= !pair.settled & 3;
                    } else {
                        // The last place of an odd block.
                        flag[q] = pair.flag & 1 != 0;
                        settled[q] = pair.settled & 1 != 0;
                        unsettled |= !pair.settled & 1;
                    }
                    q += 2;
                }
                pending &= unsettled != 0;
            }
            #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
            {
                // WebAssembly without simd128 has no vectors: every lane in one scalar loop (one
                // copy of the lane's code instead of two).
                let full = if cfg!(target_arch = "wasm32") {
                    len
                } else {
                    len / LANE_GROUP * LANE_GROUP
                };
                {
                    let (ice, equilibrium, time, flag, settled, desorption) = (
                        &mut ice[..full],
                        &mut equilibrium[..full],
                        &mut time[..full],
                        &mut flag[..full],
                        &mut settled[..full],
                        &mut desorption[..full],
                    );
                    for q in 0..full {
                        let (s, done, b) = self.lane(
                            i,
                            block.inverse_temperature[q],
                            block.sqrt_temperature[q],
                            block.grain_area[q],
                            block.inverse_area_sqrt_temperature[q],
                            block.monolayer[q],
                            block.fuv_per_site[q],
                            block.ionization_rate[q],
                            per_h * block.hydrogen_density[q],
                            inverse_per_h * block.inverse_hydrogen_density[q],
                        );
                        ice[q] = s.ice_fraction;
                        equilibrium[q] = s.equilibrium_ice_fraction;
                        time[q] = s.equilibration_time_s;
                        flag[q] = s.out_of_equilibrium;
                        settled[q] = done;
                        desorption[q] = b;
                    }
                }
                if full < len {
                    let mut lanes = LaneGroup::new();
                    // full <= BLOCK - LANE_GROUP (BLOCK is a multiple of LANE_GROUP and full < len <=
                    // BLOCK): the `min` changes nothing but lets the compiler drop the bounds checks.
                    let base = full.min(BLOCK - LANE_GROUP);
                    for k in 0..LANE_GROUP {
                        let q = base + k;
                        let (s, done, b) = self.lane(
                            i,
                            block.inverse_temperature[q],
                            block.sqrt_temperature[q],
                            block.grain_area[q],
                            block.inverse_area_sqrt_temperature[q],
                            block.monolayer[q],
                            block.fuv_per_site[q],
                            block.ionization_rate[q],
                            per_h * block.hydrogen_density[q],
                            inverse_per_h * block.inverse_hydrogen_density[q],
                        );
                        lanes.ice[k] = s.ice_fraction;
                        lanes.equilibrium[k] = s.equilibrium_ice_fraction;
                        lanes.time[k] = s.equilibration_time_s;
                        lanes.flag[k] = s.out_of_equilibrium;
                        lanes.settled[k] = done;
                        lanes.desorption[k] = b;
                    }
                    // At most 7 values each: a loop, not a call to memcpy.
                    #[allow(clippy::manual_memcpy)]
                    for k in 0..len - full {
                        ice[full + k] = lanes.ice[k];
                        equilibrium[full + k] = lanes.equilibrium[k];
                        time[full + k] = lanes.time[k];
                        flag[full + k] = lanes.flag[k];
                        settled[full + k] = lanes.settled[k];
                        desorption[full + k] = lanes.desorption[k];
                    }
                }
            }
            // WebAssembly with simd128: a place that crosses one monolayer before the age and
            // relaxes for k t > 40 after it ends on its root too (the case of nearly every place
            // `settled_root` cannot prove, whose bound on the crossing time is too loose when
            // the second rate is much the larger): proven with the crossing time that
            // `Branches::evolve` computes (libm's log1p in two lanes, bit for bit), so its lane
            // already holds `Branches::evolve`'s numbers.
            #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
            if pending {
                let mut unsettled = 0u8;
                let lanes = core::hint::black_box(self.lane_vectors(i, per_h, inverse_per_h));
                let log1p = core::hint::black_box(crate::math::simd128::Log1pVectors::new());
                let mut q = 0;
                while q < len {
                    let second = q + 1 < len;
                    if !settled[q] || (second && !settled[q + 1]) {
                        let proven = self.crossing_settled(block, q, &lanes, &desorption, &log1p);
                        settled[q] |= proven & 1 != 0;
                        unsettled |= u8::from(!settled[q]);
                        if second {
                            settled[q + 1] |= proven & 2 != 0;
                            unsettled |= u8::from(!settled[q + 1]);
                        }
                    }
                    q += 2;
                }
                pending &= unsettled != 0;
            }
            for q in 0..if pending { len } else { 0 } {
                if !settled[q] {
                    let state = AgedIceState {
                        ice_fraction: ice[q],
                        equilibrium_ice_fraction: equilibrium[q],
                        equilibration_time_s: time[q],
                        out_of_equilibrium: flag[q],
                    };
                    let s = self.unsettled(
                        &block.state(q),
                        i,
                        per_h * block.hydrogen_density[q],
                        inverse_per_h * block.inverse_hydrogen_density[q],
                        state,
                        desorption[q],
                    );
                    ice[q] = s.ice_fraction;
                    flag[q] = s.out_of_equilibrium;
                }
            }
            return;
        }
        // The step model: no kinetics.
        for q in 0..len {
            let s = self.step(&block.state(q), i);
            ice[q] = s.ice_fraction;
            equilibrium[q] = s.equilibrium_ice_fraction;
            time[q] = s.equilibration_time_s;
            flag[q] = s.out_of_equilibrium;
        }
    }
}

/// How many lanes the block loop computes at once at most (8 doubles: one AVX-512 vector).
#[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
const LANE_GROUP: usize = 8;

/// The results of one group of lanes.
#[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
struct LaneGroup {
    ice: [f64; LANE_GROUP],
    equilibrium: [f64; LANE_GROUP],
    time: [f64; LANE_GROUP],
    flag: [bool; LANE_GROUP],
    settled: [bool; LANE_GROUP],
    desorption: [f64; LANE_GROUP],
}

#[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
impl LaneGroup {
    #[inline(always)]
    fn new() -> LaneGroup {
        LaneGroup {
            ice: [0.0; LANE_GROUP],
            equilibrium: [0.0; LANE_GROUP],
            time: [0.0; LANE_GROUP],
            flag: [false; LANE_GROUP],
            settled: [true; LANE_GROUP],
            desorption: [0.0; LANE_GROUP],
        }
    }
}

impl SampleBlock {
    /// The [`SampleState`] of place `q` ([`BalanceConstants::sample`]'s numbers, as
    /// [`BalanceConstants::fill_block`] stored them).
    fn state(&self, q: usize) -> SampleState {
        SampleState {
            temperature_k: self.temperature[q],
            inverse_temperature: self.inverse_temperature[q],
            sqrt_temperature: self.sqrt_temperature[q],
            grain_area_cm2_per_cm3: self.grain_area[q],
            inverse_area_sqrt_temperature: self.inverse_area_sqrt_temperature[q],
            monolayer_cm3: self.monolayer[q],
            fuv_photons_cm2_s: self.fuv_photons[q],
            fuv_per_site: self.fuv_per_site[q],
            ionization_rate_s: self.ionization_rate[q],
        }
    }

    /// An empty block.
    pub(crate) fn new() -> SampleBlock {
        let zero = [0.0; BLOCK];
        SampleBlock {
            len: 0,
            inverse_temperature: zero,
            sqrt_temperature: zero,
            grain_area: zero,
            inverse_area_sqrt_temperature: zero,
            monolayer: zero,
            fuv_per_site: zero,
            ionization_rate: zero,
            hydrogen_density: zero,
            inverse_hydrogen_density: zero,
            temperature: zero,
            fuv_photons: zero,
        }
    }
}

/// Species-independent quantities of one place (see [`BalanceConstants::sample`]).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SampleState {
    temperature_k: f64,
    inverse_temperature: f64,
    sqrt_temperature: f64,
    grain_area_cm2_per_cm3: f64,
    inverse_area_sqrt_temperature: f64,
    monolayer_cm3: f64,
    fuv_photons_cm2_s: f64,
    fuv_per_site: f64,
    ionization_rate_s: f64,
}

/// The lane loop of [`BalanceConstants::solve_block`] in explicit WebAssembly SIMD (simd128,
/// two places per vector): the same IEEE operations in the same order as
/// [`BalanceConstants::lane`] (with `math::simd128`'s `exp_poly_pair` and, in `lane_pair`, two-lane
/// forms of [`ln_upper_bound`] and `clamp_unit` on the black-boxed `LaneVectors`), selects
/// as bit masks, no fused multiply-add, so every lane gives the scalar lane's bits
/// (`tests::grid_equals_the_scalar_lanes_bit_for_bit`, run as WebAssembly with simd128). Built
/// only when the target has simd128 (a page built with `-C target-feature=+simd128`); the
/// size-optimised build does not vectorise the scalar loop itself.
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
mod simd128 {
    use super::{BalanceConstants, SampleBlock, BLOCK, EQUILIBRIUM_FRACTION_TOLERANCE};
    use crate::math::simd128::{
        exp_poly_pair, log1p_positive, select, splat, store2, ExpVectors, Log1pVectors,
    };
    use crate::params::{DesorptionModel, InitialIceState};
    use core::arch::wasm32::*;

    /// Two places of a block array, from index `q` (q + 1 < BLOCK).
    #[inline(always)]
    #[allow(unsafe_code)]
    fn load(values: &[f64; BLOCK], q: usize) -> v128 {
        assert!(q + 1 < BLOCK);
        // SAFETY: q + 1 < BLOCK (checked above), so both doubles lie inside the array;
        // v128_load has no alignment requirement.
        unsafe { v128_load(values.as_ptr().add(q).cast::<v128>()) }
    }

    /// The flags of places `q` and `q + 1` (`lane_pair` stores their numbers itself).
    pub(super) struct Pair {
        /// Bit 0: place q, bit 1: place q + 1.
        pub(super) flag: u8,
        pub(super) settled: u8,
    }

    /// The vectors a lane pair of one species reads: the species' constants and x (and 1/x),
    /// the disk's constants and the fixed numbers of the lane, built once per species and
    /// block (through `core::hint::black_box`, so that the loop reads them from memory instead
    /// of materialising each constant in every iteration, see `ExpVectors`).
    #[derive(Clone, Copy)]
    pub(super) struct LaneVectors {
        nu: v128,
        minus_binding: v128,
        cr_per_zeta: v128,
        sticking: v128,
        thermal_speed_coefficient: v128,
        inverse_sticking_speed: v128,
        yields: v128,
        per_h: v128,
        inverse_per_h: v128,
        age: v128,
        zeroth: v128,
        /// All ones unless the initial state is the equilibrium.
        kinetic: v128,
        /// All ones when the initial state is inherited (n0 = N), else zero (n0 = 0).
        inherited: v128,
        zero: v128,
        one: v128,
        nan: v128,
        settled_rate_time: v128,
        ln_2: v128,
        margin: v128,
        min_positive: v128,
        max: v128,
        tolerance: v128,
        exponent_bits: v128,
        two_52: v128,
        bias: v128,
        exponent_top: v128,
        exponent_clamp: v128,
    }

    impl BalanceConstants {
        /// The [`LaneVectors`] of species `i` with `per_h` (and its inverse) molecules per H.
        #[inline(always)]
        pub(super) fn lane_vectors(&self, i: usize, per_h: f64, inverse_per_h: f64) -> LaneVectors {
            let mask = |b: bool| u64x2_splat(if b { u64::MAX } else { 0 });
            LaneVectors {
                nu: splat(self.nu[i]),
                minus_binding: splat(self.minus_binding[i]),
                cr_per_zeta: splat(self.cr_per_zeta[i]),
                sticking: splat(self.sticking),
                thermal_speed_coefficient: splat(self.thermal_speed_coefficient[i]),
                inverse_sticking_speed: splat(self.inverse_sticking_speed[i]),
                yields: splat(self.yields[i]),
                per_h: splat(per_h),
                inverse_per_h: splat(inverse_per_h),
                age: splat(self.age_s),
                zeroth: mask(self.model == DesorptionModel::ZerothOrder),
                kinetic: mask(self.initial_state != InitialIceState::Equilibrium),
                inherited: mask(self.initial_state == InitialIceState::Inherited),
                zero: splat(0.0),
                one: splat(1.0),
                nan: splat(f64::NAN),
                settled_rate_time: splat(40.0),
                ln_2: splat(core::f64::consts::LN_2),
                margin: splat(1.0 + 1e-9),
                min_positive: splat(f64::MIN_POSITIVE),
                max: splat(f64::MAX),
                tolerance: splat(EQUILIBRIUM_FRACTION_TOLERANCE),
                exponent_bits: i64x2_splat(0x4330_0000_0000_0000),
                two_52: splat(4_503_599_627_370_496.0),
                bias: splat(1022.0),
                exponent_top: splat(2046.0),
                exponent_clamp: splat(2045.0),
            }
        }

        /// The desorption rates B = nu exp(-E_b/T) + B_cr of places `q` and `q + 1` of a block
        /// ([`BalanceConstants::branches_at`]'s first line).
        #[inline(always)]
        pub(super) fn desorption_pair(
            &self,
            block: &SampleBlock,
            q: usize,
            l: &LaneVectors,
            k: &ExpVectors,
        ) -> v128 {
            f64x2_add(
                f64x2_mul(
                    l.nu,
                    exp_poly_pair(
                        f64x2_mul(l.minus_binding, load(&block.inverse_temperature, q)),
                        k,
                    ),
                ),
                f64x2_mul(l.cr_per_zeta, load(&block.ionization_rate, q)),
            )
        }

        /// [`BalanceConstants::lane`] for places `q` and `q + 1` of a block, with their
        /// desorption rates B from [`BalanceConstants::desorption_pair`] in `desorption`: the
        /// ice fraction, the equilibrium and the equilibration time are stored into `outputs`
        /// (in that order) as soon as each is formed; returns the flags.
        #[inline(always)]
        pub(super) fn lane_pair(
            &self,
            block: &SampleBlock,
            q: usize,
            l: &LaneVectors,
            desorption: &[f64; BLOCK],
            outputs: [&mut [f64]; 3],
        ) -> Pair {
            let [ice_out, equilibrium_out, time_out] = outputs;
            // Both places (q + 1 < the outputs' length) or place q alone.
            let full = q + 1 < time_out.len();
            let put = |values: &mut [f64], v: v128| {
                if full {
                    store2(values, q, v);
                } else {
                    values[q] = f64x2_extract_lane::<0>(v);
                }
            };
            // `clamp_unit`, two lanes: `if f < 0 { 0 } else { f }` is f64x2.pmax(f, 0) and
            // `if f > 1 { 1 } else { f }` is f64x2.pmin(f, 1) (WebAssembly's pseudo-min/max
            // are defined as these selects, NaN and -0 included; one instruction each on x86).
            let clamp_unit = |f: v128| f64x2_pmin(f64x2_pmax(f, l.zero), l.one);
            // `ln_upper_bound`, two lanes.
            let ln_upper_bound = |y: v128| {
                let biased = f64x2_sub(v128_or(l.exponent_bits, u64x2_shr(y, 52)), l.two_52);
                f64x2_mul(f64x2_sub(biased, l.bias), l.ln_2)
            };
            // `inverse_upper_bound`, two lanes (`min` as f64x2.pmin: no NaN here).
            let inverse_upper_bound = |y: v128| {
                let biased = f64x2_sub(v128_or(l.exponent_bits, u64x2_shr(y, 52)), l.two_52);
                let field = f64x2_add(
                    f64x2_sub(l.exponent_top, f64x2_pmin(biased, l.exponent_clamp)),
                    l.two_52,
                );
                i64x2_shl(field, 52)
            };
            let age = l.age;
            let desorption = load(desorption, q);
            let sqrt_temperature = load(&block.sqrt_temperature, q);
            let grain_area = load(&block.grain_area, q);
            let inverse_area_sqrt_temperature = load(&block.inverse_area_sqrt_temperature, q);
            let monolayer = load(&block.monolayer, q);
            let fuv_per_site = load(&block.fuv_per_site, q);
            let molecules = f64x2_mul(l.per_h, load(&block.hydrogen_density, q));
            let inverse_molecules =
                f64x2_mul(l.inverse_per_h, load(&block.inverse_hydrogen_density, q));
            // branches_given.
            let adsorption = f64x2_mul(
                f64x2_mul(
                    f64x2_mul(l.sticking, grain_area),
                    l.thermal_speed_coefficient,
                ),
                sqrt_temperature,
            );
            let inverse_adsorption =
                f64x2_mul(l.inverse_sticking_speed, inverse_area_sqrt_temperature);
            let per_monolayer = f64x2_mul(fuv_per_site, l.yields);
            // Branches::new.
            let thin_rate = f64x2_add(f64x2_add(adsorption, desorption), per_monolayer);
            let inverse_thin_rate = f64x2_div(l.one, thin_rate);
            let thin_fraction = f64x2_mul(adsorption, inverse_thin_rate);
            let thin_root = f64x2_mul(thin_fraction, molecules);
            let thick_root = f64x2_sub(
                molecules,
                f64x2_mul(
                    f64x2_mul(monolayer, f64x2_add(desorption, per_monolayer)),
                    inverse_adsorption,
                ),
            );
            let zeroth = l.zeroth;
            // lane.
            let valid = v128_and(f64x2_gt(molecules, l.zero), f64x2_gt(grain_area, l.zero));
            let thin = v128_or(v128_not(zeroth), f64x2_le(thin_root, monolayer));
            // `select(valid, .., 0)` as a mask (0 has no bit set).
            let equilibrium = v128_and(
                valid,
                select(
                    thin,
                    thin_fraction,
                    clamp_unit(f64x2_mul(thick_root, inverse_molecules)),
                ),
            );
            let time = select(
                valid,
                select(thin, inverse_thin_rate, inverse_adsorption),
                l.nan,
            );
            // Stored as soon as they are known (fewer vectors live at once in the rest).
            put(equilibrium_out, equilibrium);
            put(time_out, time);
            let late = f64x2_gt(time, age);
            let kinetic = v128_and(valid, l.kinetic);
            let initial = v128_and(molecules, l.inherited);
            // Branches::settled_root(initial, age).
            let (a, m) = (adsorption, monolayer);
            let above = f64x2_gt(initial, m);
            let thick_holds = f64x2_ge(thick_root, m);
            let thin_holds = f64x2_le(thin_root, m);
            let direct_thick = v128_and(v128_and(zeroth, above), thick_holds);
            let to_thin = v128_and(v128_and(zeroth, above), v128_not(thick_holds));
            let to_thick = v128_and(v128_andnot(zeroth, above), v128_not(thin_holds));
            let root = select(v128_or(direct_thick, to_thick), thick_root, thin_root);
            // Back in lane: the aged state and its flag do not depend on whether the closed form
            // is proven settled, so they are stored before the crossing bound below (in
            // Chromium's V8 the lane loop is faster so: fewer vectors live across the bound).
            let aged = select(
                kinetic,
                clamp_unit(f64x2_mul(root, inverse_molecules)),
                equilibrium,
            );
            put(ice_out, aged);
            let flag = i64x2_bitmask(v128_or(
                late,
                v128_and(
                    kinetic,
                    f64x2_gt(f64x2_abs(f64x2_sub(aged, equilibrium)), l.tolerance),
                ),
            ));
            let direct_rate = select(direct_thick, a, thin_rate);
            let direct = f64x2_gt(f64x2_mul(direct_rate, age), l.settled_rate_time);
            let crosses = v128_or(to_thin, to_thick);
            // The crossing time's bound only where a lane crosses n = M (two lanes in three
            // on the default disk); elsewhere `settled` is `direct` in both lanes.
            let settled = if v128_any_true(crosses) {
                let num = select(to_thin, f64x2_sub(initial, m), f64x2_sub(m, initial));
                let den = select(to_thin, f64x2_sub(m, thick_root), f64x2_sub(thin_root, m));
                let inverse_first = select(to_thin, inverse_adsorption, inverse_thin_rate);
                let second = select(to_thin, thin_rate, a);
                let sum = f64x2_add(num, den);
                let exponents =
                    f64x2_add(f64x2_sub(ln_upper_bound(sum), ln_upper_bound(den)), l.ln_2);
                let ratio = f64x2_mul(num, inverse_upper_bound(den));
                let log_bound = select(
                    f64x2_ge(ratio, l.min_positive),
                    f64x2_pmin(exponents, ratio),
                    exponents,
                );
                let crossing = f64x2_mul(f64x2_mul(log_bound, inverse_first), l.margin);
                let switched = v128_and(
                    v128_and(
                        v128_and(f64x2_ge(den, l.min_positive), f64x2_lt(sum, l.max)),
                        f64x2_ge(crossing, l.min_positive),
                    ),
                    v128_and(
                        f64x2_gt(age, crossing),
                        f64x2_gt(
                            f64x2_mul(second, f64x2_sub(age, crossing)),
                            l.settled_rate_time,
                        ),
                    ),
                );
                select(crosses, switched, direct)
            } else {
                direct
            };
            let done = v128_or(settled, v128_not(kinetic));
            Pair {
                flag,
                settled: i64x2_bitmask(done),
            }
        }

        /// Whether places `q` and `q + 1` (bit 0 and bit 1) provably end on their branch's root
        /// after crossing n = M: [`Branches::evolve`](super::Branches)'s crossing time
        /// ln(1 + num/den) / rate, computed with the same operations (libm's log1p by
        /// [`log1p_positive`]), lies before the age and the relaxation after it has k t > 40,
        /// where libm's expm1 returns exactly -1 (below -38.8), so relax gives the root to the
        /// bit. The branches are recomputed as [`BalanceConstants::lane_pair`] forms them.
        #[inline(always)]
        pub(super) fn crossing_settled(
            &self,
            block: &SampleBlock,
            q: usize,
            l: &LaneVectors,
            desorption: &[f64; BLOCK],
            log1p: &Log1pVectors,
        ) -> u8 {
            let (add, sub, mul) = (f64x2_add, f64x2_sub, f64x2_mul);
            let desorption = load(desorption, q);
            let grain_area = load(&block.grain_area, q);
            let m = load(&block.monolayer, q);
            let molecules = mul(l.per_h, load(&block.hydrogen_density, q));
            let a = mul(
                mul(mul(l.sticking, grain_area), l.thermal_speed_coefficient),
                load(&block.sqrt_temperature, q),
            );
            let inverse_adsorption = mul(
                l.inverse_sticking_speed,
                load(&block.inverse_area_sqrt_temperature, q),
            );
            let per_monolayer = mul(load(&block.fuv_per_site, q), l.yields);
            let thin_rate = add(add(a, desorption), per_monolayer);
            let thin_root = mul(mul(a, f64x2_div(l.one, thin_rate)), molecules);
            let thick_root = sub(
                molecules,
                mul(mul(m, add(desorption, per_monolayer)), inverse_adsorption),
            );
            let initial = v128_and(molecules, l.inherited);
            let above = f64x2_gt(initial, m);
            let to_thin = v128_andnot(v128_and(l.zeroth, above), f64x2_ge(thick_root, m));
            let to_thick = v128_andnot(v128_andnot(l.zeroth, above), f64x2_le(thin_root, m));
            let num = select(to_thin, sub(initial, m), sub(m, initial));
            let den = select(to_thin, sub(m, thick_root), sub(thin_root, m));
            let first = select(to_thin, a, thin_rate);
            let second = select(to_thin, thin_rate, a);
            let ratio = f64x2_div(num, den);
            let switch = f64x2_div(log1p_positive(ratio, log1p), first);
            let proven = v128_and(
                v128_and(v128_or(to_thin, to_thick), f64x2_gt(ratio, l.zero)),
                v128_and(
                    f64x2_gt(l.age, switch),
                    f64x2_gt(mul(second, sub(l.age, switch)), l.settled_rate_time),
                ),
            );
            i64x2_bitmask(proven)
        }
    }
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
    fn settled_lanes_equal_the_closed_form_bit_for_bit() {
        // The shortcut of `Branches::settled_root` is exact: every lane it calls settled gives
        // the same bits as the full closed form (`unsettled`, i.e. Branches::evolve), over whole
        // grids of disks that reach every branch and both crossings (derived, D).
        use crate::params::{DesorptionModel, InitialIceState};
        use crate::{Model, ModelParameters, Species};
        let mut configs = Vec::new();
        for (desorption, initial, grain_um, age_myr) in [
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Inherited,
                0.1,
                1.0,
            ),
            (DesorptionModel::ZerothOrder, InitialIceState::Gas, 0.1, 1.0),
            (
                DesorptionModel::FirstOrder,
                InitialIceState::Inherited,
                0.1,
                1.0,
            ),
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Inherited,
                100.0,
                0.01,
            ),
            (
                DesorptionModel::ZerothOrder,
                InitialIceState::Gas,
                1000.0,
                0.001,
            ),
        ] {
            let mut p = ModelParameters::defaults();
            p.grid.radial_cells = 60;
            p.grid.vertical_cells = 30;
            p.ices.desorption = desorption;
            p.ices.initial_state = initial;
            p.disk.grain_radius_um = grain_um;
            p.disk.age_myr = age_myr;
            configs.push(p);
        }
        let (mut settled, mut unsettled) = (0usize, 0usize);
        for p in &configs {
            let model = Model::run(p).unwrap();
            let balance = BalanceConstants::new(p, model.species_properties());
            let st = model.structure();
            let s = &st.samples;
            for k in 0..model.sample_count() {
                let place = balance.sample(
                    s.temperature_k[k],
                    s.density_g_cm3[k],
                    s.fuv_photon_flux_cm2_s[k],
                    s.ionization_rate_s[k],
                );
                let j = k / st.samples_per_column;
                for (i, species) in Species::ALL.into_iter().enumerate() {
                    let x = model.composition().species_per_h(species, j);
                    let n_h = s.hydrogen_density_cm3[k];
                    let (n, inv) = (x * n_h, (1.0 / x) * (1.0 / n_h));
                    let (state, done, desorption) = balance.lane_at(&place, i, n, inv);
                    let full = balance.unsettled(&place, i, n, inv, state, desorption);
                    if done && n > 0.0 {
                        settled += 1;
                        assert_eq!(state.ice_fraction.to_bits(), full.ice_fraction.to_bits());
                        assert_eq!(state.out_of_equilibrium, full.out_of_equilibrium);
                    } else {
                        unsettled += 1;
                    }
                    // And the grid holds the full closed form's numbers.
                    assert_eq!(
                        model.ice_fraction_at(species, k).to_bits(),
                        full.ice_fraction.to_bits()
                    );
                }
            }
        }
        assert!(settled > 0 && unsettled > 0, "{settled} {unsettled}");
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
