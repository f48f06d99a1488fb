//! Validated model inputs (display units as named) and their defaults.
//!
//! The disk-file reader (`nivalis-disk-files`) builds these after checking every
//! range; the core trusts them. Each default names its source here, the one
//! place defaults live.

use crate::species::{BindingEnergySet, Species, SPECIES_COUNT};

/// Elements tracked by the budget, in array order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Element {
    /// Carbon.
    C,
    /// Oxygen.
    O,
    /// Nitrogen.
    N,
    /// Sulfur.
    S,
    /// Silicon.
    Si,
    /// Magnesium.
    Mg,
    /// Iron.
    Fe,
}

/// Number of tracked elements.
pub const ELEMENT_COUNT: usize = 7;

impl Element {
    /// All elements in array order.
    pub const ALL: [Element; ELEMENT_COUNT] = [
        Element::C,
        Element::O,
        Element::N,
        Element::S,
        Element::Si,
        Element::Mg,
        Element::Fe,
    ];
    /// Chemical symbol.
    pub fn symbol(self) -> &'static str {
        match self {
            Element::C => "C",
            Element::O => "O",
            Element::N => "N",
            Element::S => "S",
            Element::Si => "Si",
            Element::Mg => "Mg",
            Element::Fe => "Fe",
        }
    }
    /// Parse a chemical symbol.
    pub fn from_symbol(s: &str) -> Option<Element> {
        Element::ALL.iter().copied().find(|e| e.symbol() == s)
    }
    /// Atomic mass [amu] (IUPAC standard atomic weights, conventional values).
    pub fn atomic_mass_amu(self) -> f64 {
        match self {
            Element::C => 12.011,
            Element::O => 15.999,
            Element::N => 14.007,
            Element::S => 32.06,
            Element::Si => 28.085,
            Element::Mg => 24.305,
            Element::Fe => 55.845,
        }
    }
}

/// Solar abundance compilation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AbundanceReference {
    /// Asplund et al. 2009, ARA&A 47, 481, Table 1 (photosphere). Default.
    Asplund2009,
    /// Asplund, Amarsi & Grevesse 2021, A&A 653, A141 (photosphere).
    Asplund2021,
}

impl AbundanceReference {
    /// Key in disk files.
    pub fn key(self) -> &'static str {
        match self {
            AbundanceReference::Asplund2009 => "asplund2009",
            AbundanceReference::Asplund2021 => "asplund2021",
        }
    }
    /// Parse a key.
    pub fn from_key(key: &str) -> Option<Self> {
        match key {
            "asplund2009" => Some(Self::Asplund2009),
            "asplund2021" => Some(Self::Asplund2021),
            _ => None,
        }
    }
    /// log eps(X) = log10(N_X/N_H) + 12 for C, O, N, S, Si, Mg, Fe.
    pub fn log_eps(self) -> [f64; ELEMENT_COUNT] {
        match self {
            // Asplund et al. 2009 Table 1, photospheric values.
            AbundanceReference::Asplund2009 => [8.43, 8.69, 7.83, 7.12, 7.51, 7.60, 7.50],
            // Asplund, Amarsi & Grevesse 2021 Table 2, photospheric values.
            AbundanceReference::Asplund2021 => [8.46, 8.69, 7.83, 7.12, 7.51, 7.55, 7.46],
        }
    }
}

/// The star.
#[derive(Debug, Clone, PartialEq)]
pub struct StarParameters {
    /// Stellar mass [Msun]. Default 1.0 (a solar-mass T Tauri star).
    pub mass_msun: f64,
    /// Stellar luminosity [Lsun]. Default 1.0.
    pub luminosity_lsun: f64,
    /// Effective temperature [K]. Default 4000 K, the T Tauri star of Chiang & Goldreich 1997.
    pub effective_temperature_k: f64,
    /// Stellar FUV field at 1 au [Habing G0], scaled as r^-2. Default 1e7
    /// (order of T Tauri FUV luminosities of 1e31-1e32 erg/s; common practice).
    pub fuv_1au_habing: f64,
    /// Solar reference compilation. Default Asplund et al. 2009.
    pub abundance_reference: AbundanceReference,
    /// Offsets [dex] of C, O, N, S, Si, Mg, Fe from the reference. Default 0.
    pub offset_dex: [f64; ELEMENT_COUNT],
}

/// Rosseland mean opacity used for viscous heating.
#[derive(Debug, Clone, PartialEq)]
pub enum Opacity {
    /// Constant kappa_R per gram of gas [cm^2 g^-1]. Default 1 cm^2/g
    /// (Bell & Lin 1994's ice-grain law 2e-4 T^2 gives 2 cm^2/g at 100 K).
    Constant {
        /// kappa_R [cm^2 per g of gas].
        rosseland_cm2_per_g: f64,
    },
    /// Piecewise power laws of Bell & Lin 1994.
    BellLin1994,
}

/// Vertical temperature profile.
#[derive(Debug, Clone, PartialEq)]
pub enum VerticalTemperature {
    /// T(z) = T_mid.
    Isothermal,
    /// Two-layer profile of Dartois et al. 2003 (form of Williams & Best 2014). Default.
    TwoLayer {
        /// Superheating factor s of the surface layer. Default 1.5 (common practice).
        superheating: f64,
        /// z_q in midplane scale heights. Default 4 (Williams & Best 2014 use z_q = 4 H).
        transition_scale_heights: f64,
        /// Exponent delta. Default 2 (Dartois et al. 2003; Williams & Best 2014).
        delta: f64,
    },
}

/// What `DiskParameters::gas_mass_msun` means (docs/disk-file.md; docs/model.md section 3).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GasMassMeaning {
    /// The gas mass between the inner and outer edges (disk-file `disk.gas_mass_msun`). Default.
    BetweenEdges,
    /// The total of the self-similar profile from 0 to infinity, the meaning of
    /// `disk.gas_mass_msun` before this change (disk-file `disk.gas_mass_profile_total_msun`).
    ProfileTotal,
}

/// Midplane temperature law (docs/model.md section 4).
#[derive(Debug, Clone, PartialEq)]
pub enum TemperatureLaw {
    /// Energy balance of irradiation, accretion heating and background. Default.
    EnergyBalance,
    /// An observed power law T_mid = T_1au (r / 1 au)^-q, as observers fit it
    /// (e.g. Andrews & Williams 2005; Williams & Best 2014), floored at the
    /// background temperature; optionally with its own atmosphere law
    /// T_atm = T_atm,1au (r / 1 au)^-q_atm for the two-layer vertical profile.
    PowerLaw {
        /// T_mid at 1 au [K].
        midplane_1au_k: f64,
        /// Index q of the midplane law.
        midplane_index: f64,
        /// T_atm at 1 au [K] and its index, or `None` to keep the superheated-layer law.
        atmosphere: Option<(f64, f64)>,
    },
}

/// The disk's hot early phase, which sets the furthest extent of the soot line
/// (docs/model.md section 8; Li et al. 2021).
#[derive(Debug, Clone, PartialEq)]
pub struct EarlyPhase {
    /// Accretion rate of the early (Class I) phase [Msun/yr]. Default 1e-6
    /// (Class 0/I accretion rates of order 1e-6 Msun/yr, e.g. Hartmann et al. 1998 and
    /// Dunham et al. 2014; from memory).
    pub accretion_rate_msun_per_yr: f64,
    /// Stellar (plus accretion) luminosity of the early phase [Lsun]. The reader's
    /// default is the star's luminosity plus the accretion luminosity
    /// 0.8 G M* Mdot_early / R* (Gullbring et al. 1998, magnetospheric infall from 5 R*).
    pub luminosity_lsun: f64,
    /// Surface density of the early phase over today's. The reader's default is
    /// Mdot_early / Mdot (a steady viscous disk at the same viscosity, Mdot = 3 pi nu Sigma,
    /// Pringle 1981), or 1 for a passive disk (Mdot = 0).
    pub surface_density_scale: f64,
}

impl EarlyPhase {
    /// The default early accretion rate [Msun/yr] (see the field).
    pub const DEFAULT_ACCRETION_RATE_MSUN_PER_YR: f64 = 1.0e-6;

    /// The documented defaults for a star, today's accretion rate and the early one:
    /// L_early = L* + 0.8 G M* Mdot_early / R*, s = Mdot_early / Mdot (1 if Mdot = 0),
    /// clamped to the allowed [1e-3, 1e4].
    pub fn defaults_for(
        star: &StarParameters,
        accretion_rate_msun_per_yr: f64,
        mdot_early: f64,
    ) -> EarlyPhase {
        let r_star =
            crate::star::stellar_radius_cm(star.luminosity_lsun, star.effective_temperature_k);
        let l_acc = 0.8
            * crate::units::GRAVITATIONAL_CONSTANT_CGS
            * star.mass_msun
            * crate::units::SOLAR_MASS_G
            * mdot_early
            * crate::units::MSUN_PER_YR_TO_G_PER_S
            / r_star;
        EarlyPhase {
            accretion_rate_msun_per_yr: mdot_early,
            luminosity_lsun: star.luminosity_lsun
                + l_acc / crate::units::SOLAR_LUMINOSITY_ERG_PER_S,
            surface_density_scale: if accretion_rate_msun_per_yr > 0.0 {
                (mdot_early / accretion_rate_msun_per_yr).clamp(1e-3, 1e4)
            } else {
                1.0
            },
        }
    }
}

/// How refractory carbon responds to the soot line (docs/model.md section 8).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SootLine {
    /// Carbon that was ever above the soot-line temperature (today, or in the hot
    /// early phase) stays in the gas (Li et al. 2021). Default.
    Irreversible,
    /// Refractory carbon is solid wherever today's temperature is below the soot line.
    Reversible,
}

impl SootLine {
    /// Key in disk files.
    pub fn key(self) -> &'static str {
        match self {
            SootLine::Irreversible => "irreversible",
            SootLine::Reversible => "reversible",
        }
    }
}

/// The disk.
#[derive(Debug, Clone, PartialEq)]
pub struct DiskParameters {
    /// Gas mass [Msun], between the edges or of the whole profile as `gas_mass_meaning` says.
    /// Default 0.01 between the edges (about the minimum-mass solar nebula, Hayashi 1981).
    pub gas_mass_msun: f64,
    /// What `gas_mass_msun` means. Default: between the edges.
    pub gas_mass_meaning: GasMassMeaning,
    /// Characteristic radius R_c [au]. Default 50 (inside the 14-200 au range of Andrews et al. 2009, 2010).
    pub characteristic_radius_au: f64,
    /// Surface density index gamma. Default 1.0 (Andrews et al. 2009 median about 0.9; Hartmann et al. 1998 use 1).
    pub surface_density_index: f64,
    /// Inner edge [au]. Default 0.1 (docs/model.md section 2).
    pub inner_radius_au: f64,
    /// Outer edge [au]. Default 500 (docs/model.md section 2).
    pub outer_radius_au: f64,
    /// Accretion rate [Msun/yr], constant in radius. Default 1e-8 (typical T Tauri value, Hartmann et al. 1998).
    pub accretion_rate_msun_per_yr: f64,
    /// Flaring (grazing) angle phi. The reader's default depends on the star
    /// ([`default_flaring_angle`]); `ModelParameters::defaults()` holds its value for the default star.
    pub flaring_angle: f64,
    /// Solve the grazing angle self-consistently (Chiang & Goldreich 1997). Default false.
    pub self_consistent_flaring: bool,
    /// Rosseland opacity for viscous heating. Default constant 1 cm^2/g.
    pub opacity: Opacity,
    /// Vertical temperature structure. Default two-layer.
    pub vertical_temperature: VerticalTemperature,
    /// Midplane temperature law. Default: the energy balance.
    pub temperature: TemperatureLaw,
    /// The hot early phase that sets the irreversible soot line.
    pub early_phase: EarlyPhase,
    /// Background temperature floor [K]. Default 10 K (docs/model.md section 4).
    pub background_temperature_k: f64,
    /// Dust-to-gas mass ratio. Default 0.01 (ISM value, e.g. Bohlin et al. 1978).
    pub dust_to_gas: f64,
    /// Grain radius [micron]. Default 0.1 (docs/model.md section 3, typical of MRN grains).
    pub grain_radius_um: f64,
    /// Grain material density [g cm^-3]. Default 3 (silicate; docs/model.md section 3).
    pub grain_density_g_cm3: f64,
    /// Cosmic-ray ionisation rate at the disk surface, per H2 [s^-1]. Default 1.3e-17.
    pub cosmic_ray_rate_s: f64,
    /// Interstellar FUV field [Habing]. Default 1.
    pub interstellar_fuv_habing: f64,
    /// Disk age [Myr]: the ice balance is integrated over it from `ices.initial_state`, and cells whose
    /// equilibration time exceeds it are flagged. Default 1 (a typical T Tauri disk age; common practice).
    pub age_myr: f64,
    /// Multiplier of the midplane temperature (and so of the whole column), for
    /// anchoring a model to an observed snowline. Default 1 (no change).
    pub midplane_temperature_scale: f64,
}

/// How ices desorb.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DesorptionModel {
    /// Multilayer ice: only the top monolayer desorbs. Default.
    ZerothOrder,
    /// Every ice molecule can desorb.
    FirstOrder,
    /// The step model: ice below the condensation temperature, gas above.
    FixedTemperature,
}

impl DesorptionModel {
    /// Key in disk files.
    pub fn key(self) -> &'static str {
        match self {
            DesorptionModel::ZerothOrder => "zeroth_order",
            DesorptionModel::FirstOrder => "first_order",
            DesorptionModel::FixedTemperature => "fixed_temperature",
        }
    }
}

/// The ice state at the disk's birth, from which the rate equation is integrated over its age
/// (docs/model.md section 7).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum InitialIceState {
    /// Every volatile starts frozen: ices inherited from the parent cloud. Default (common practice
    /// for disks, whose ices are largely inherited from the protostellar envelope).
    Inherited,
    /// Every volatile starts in the gas (a fully reset disk).
    Gas,
    /// No history: the equilibrium, the long-time limit of either start.
    Equilibrium,
}

impl InitialIceState {
    /// Every state, in file-key order.
    pub const ALL: [InitialIceState; 3] = [
        InitialIceState::Inherited,
        InitialIceState::Gas,
        InitialIceState::Equilibrium,
    ];
    /// Key in disk files.
    pub fn key(self) -> &'static str {
        match self {
            InitialIceState::Inherited => "inherited",
            InitialIceState::Gas => "gas",
            InitialIceState::Equilibrium => "equilibrium",
        }
    }
}

/// Per-species replacements of the built-in data.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SpeciesOverride {
    /// Binding energy E_b/k [K].
    pub binding_energy_k: Option<f64>,
    /// Attempt frequency nu [s^-1] of thermal desorption. Without it the set's rule applies:
    /// the set's fixed nu of the species, or the HHL92 formula with the (overridden) energy.
    pub attempt_frequency_s: Option<f64>,
    /// Photodesorption yield [molecules per photon].
    pub photodesorption_yield: Option<f64>,
    /// Condensation temperature of the step model [K].
    pub condensation_temperature_k: Option<f64>,
}

/// Ice physics choices.
#[derive(Debug, Clone, PartialEq)]
pub struct IceParameters {
    /// Desorption model. Default zeroth order.
    pub desorption: DesorptionModel,
    /// Sticking coefficient S. Default 1 (standard below ~20 K; Bisschop et al. 2006 measure >= 0.87).
    pub sticking: f64,
    /// Include photodesorption (and the cosmic-ray induced photons). Default true.
    pub photodesorption: bool,
    /// Include cosmic-ray desorption. Default true.
    pub cosmic_ray_desorption: bool,
    /// Binding-energy set (energies with their matched attempt frequencies). Default
    /// `TransitionState`, the set whose multilayer regime reproduces laboratory sublimation pressures.
    pub binding_energy_set: BindingEnergySet,
    /// Overrides per species, `Species::ALL` order.
    pub overrides: [SpeciesOverride; SPECIES_COUNT],
    /// Ice state at t = 0 of the rate equation integrated over `disk.age_myr`. Default inherited.
    pub initial_state: InitialIceState,
}

/// Fractions of all carbon in each carrier (sum 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CarbonFractions {
    /// CO.
    pub co: f64,
    /// CO2.
    pub co2: f64,
    /// CH4.
    pub ch4: f64,
    /// CH3OH.
    pub ch3oh: f64,
    /// HCN.
    pub hcn: f64,
    /// Refractory carbon.
    pub refractory: f64,
}

/// Fractions of the nitrogen left after HCN (sum 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NitrogenFractions {
    /// N2 (fraction of nitrogen atoms).
    pub n2: f64,
    /// NH3.
    pub nh3: f64,
}

/// Fractions of sulfur (sum 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SulfurFractions {
    /// H2S.
    pub h2s: f64,
    /// Refractory sulfide (FeS).
    pub refractory: f64,
}

/// Where the elements are (docs/model.md section 8).
#[derive(Debug, Clone, PartialEq)]
pub struct CompositionParameters {
    /// Carbon carriers. Default: refractory 0.5 (Bergin et al. 2015; Li et al. 2021: about half of
    /// the carbon is refractory), CO 0.30, CO2 0.10, CH4 0.04, CH3OH 0.05, HCN 0.01 (volatile split
    /// guided by protostellar ice medians, Oberg et al. 2011 ApJ 740, 109, plus gas-phase CO; common practice).
    pub carbon: CarbonFractions,
    /// Nitrogen carriers. Default N2 0.8, NH3 0.2 (most nitrogen as N2; NH3 ices about 5 % of H2O; common practice).
    pub nitrogen: NitrogenFractions,
    /// Sulfur carriers. Default H2S 0.1, refractory 0.9 (most sulfur in FeS; common practice).
    pub sulfur: SulfurFractions,
    /// Oxygen atoms per silicon in silicates. Default 3 (MgSiO3-like: about 20 % of O, as ISM depletion studies find).
    pub oxygen_per_silicon: f64,
    /// Soot line [K] above which refractory carbon is gas. Default 500 K (Li et al. 2021).
    pub soot_line_k: f64,
    /// Irreversible (default, Li et al. 2021) or reversible soot line.
    pub soot_line: SootLine,
    /// FeS release temperature [K]. Default 700 K (Lodders 2003 FeS condensation about 704 K, from memory).
    pub sulfide_release_k: f64,
    /// Silicate sublimation temperature [K]. Default 1500 K (common practice).
    pub silicate_sublimation_k: f64,
}

/// Grid resolution.
#[derive(Debug, Clone, PartialEq)]
pub struct GridParameters {
    /// Radial cells. Default 200 (docs/model.md section 2).
    pub radial_cells: usize,
    /// Vertical cells per column. Default 80 (docs/model.md section 2).
    pub vertical_cells: usize,
    /// Top of each column in midplane scale heights. Default 10 (docs/model.md section 2).
    pub max_height_scale_heights: f64,
}

/// The default fixed grazing angle for a star of luminosity `luminosity_lsun` [Lsun]:
/// phi = 0.02 (L*/Lsun)^(-1/3) (docs/model.md section 4; DEVELOPERS.md "Model choices").
///
/// 0.02 at 1 Lsun is the grazing angle of the midplane-temperature law of Huang et al. 2018
/// (Huang et al. 2018; Dullemond et al. 2018; from memory) and gives 131 K at 1 au
/// around the Chiang & Goldreich 1997 T Tauri star (1.44 Lsun), whose two-layer
/// radiative model has about 150 K there. The L^(-1/3) dependence is an empirical
/// calibration on the CO snowlines of a well-studied T Tauri disk (0.28 Lsun,
/// observed 17-30 au: Qi et al. 2013; Zhang et al. 2017) and Herbig Ae disk
/// (17 Lsun, observed 65-90 au: Qi et al. 2015), both from memory; a single
/// angle (0.05) put the Herbig disk's CO snowline 3-4x too far out. Herbig disks'
/// outer midplanes are colder than a flaring angle growing with the star's
/// luminosity would make them (settled dust lowers the absorbing surface;
/// self-shadowing), which this law absorbs without modelling it.
/// Clamped to [1e-3, 0.1].
pub fn default_flaring_angle(luminosity_lsun: f64) -> f64 {
    (0.02 * crate::math::pow(luminosity_lsun, -1.0 / 3.0)).clamp(1.0e-3, 0.1)
}

/// Everything the model needs.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelParameters {
    /// The star.
    pub star: StarParameters,
    /// The disk.
    pub disk: DiskParameters,
    /// Ice physics.
    pub ices: IceParameters,
    /// Element carriers.
    pub composition: CompositionParameters,
    /// Resolution.
    pub grid: GridParameters,
}

impl ModelParameters {
    /// The default disk (what `{}` means in a disk file); each value's source is on its field.
    pub fn defaults() -> ModelParameters {
        let star = StarParameters {
            mass_msun: 1.0,
            luminosity_lsun: 1.0,
            effective_temperature_k: 4000.0,
            fuv_1au_habing: 1.0e7,
            abundance_reference: AbundanceReference::Asplund2009,
            offset_dex: [0.0; ELEMENT_COUNT],
        };
        ModelParameters {
            star: star.clone(),
            disk: DiskParameters {
                gas_mass_msun: 0.01,
                gas_mass_meaning: GasMassMeaning::BetweenEdges,
                characteristic_radius_au: 50.0,
                surface_density_index: 1.0,
                inner_radius_au: 0.1,
                outer_radius_au: 500.0,
                accretion_rate_msun_per_yr: 1.0e-8,
                flaring_angle: default_flaring_angle(1.0),
                self_consistent_flaring: false,
                opacity: Opacity::Constant {
                    rosseland_cm2_per_g: 1.0,
                },
                vertical_temperature: VerticalTemperature::TwoLayer {
                    superheating: 1.5,
                    transition_scale_heights: 4.0,
                    delta: 2.0,
                },
                temperature: TemperatureLaw::EnergyBalance,
                early_phase: EarlyPhase::defaults_for(
                    &star,
                    1.0e-8,
                    EarlyPhase::DEFAULT_ACCRETION_RATE_MSUN_PER_YR,
                ),
                background_temperature_k: 10.0,
                dust_to_gas: 0.01,
                grain_radius_um: 0.1,
                grain_density_g_cm3: 3.0,
                cosmic_ray_rate_s: 1.3e-17,
                interstellar_fuv_habing: 1.0,
                age_myr: 1.0,
                midplane_temperature_scale: 1.0,
            },
            ices: IceParameters {
                desorption: DesorptionModel::ZerothOrder,
                sticking: 1.0,
                photodesorption: true,
                cosmic_ray_desorption: true,
                binding_energy_set: BindingEnergySet::TransitionState,
                overrides: [SpeciesOverride::default(); SPECIES_COUNT],
                initial_state: InitialIceState::Inherited,
            },
            composition: CompositionParameters {
                carbon: CarbonFractions {
                    co: 0.30,
                    co2: 0.10,
                    ch4: 0.04,
                    ch3oh: 0.05,
                    hcn: 0.01,
                    refractory: 0.50,
                },
                nitrogen: NitrogenFractions { n2: 0.8, nh3: 0.2 },
                sulfur: SulfurFractions {
                    h2s: 0.1,
                    refractory: 0.9,
                },
                oxygen_per_silicon: 3.0,
                soot_line_k: 500.0,
                soot_line: SootLine::Irreversible,
                sulfide_release_k: 700.0,
                silicate_sublimation_k: 1500.0,
            },
            grid: GridParameters {
                radial_cells: 200,
                vertical_cells: 80,
                max_height_scale_heights: 10.0,
            },
        }
    }

    /// The override of one species.
    pub fn species_override(&self, species: Species) -> SpeciesOverride {
        self.ices.overrides[species.index()]
    }
}
