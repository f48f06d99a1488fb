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

/// The disk.
#[derive(Debug, Clone, PartialEq)]
pub struct DiskParameters {
    /// Total gas mass of the analytic profile [Msun]. Default 0.01 (about the minimum-mass solar nebula, Hayashi 1981).
    pub gas_mass_msun: f64,
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
    /// Flaring (grazing) angle phi. Default 0.05 (docs/model.md section 4; Chiang & Goldreich 1997 find 0.02-0.08).
    pub flaring_angle: f64,
    /// Solve the grazing angle self-consistently (Chiang & Goldreich 1997). Default false.
    pub self_consistent_flaring: bool,
    /// Rosseland opacity for viscous heating. Default constant 1 cm^2/g.
    pub opacity: Opacity,
    /// Vertical temperature structure. Default two-layer.
    pub vertical_temperature: VerticalTemperature,
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
        ModelParameters {
            star: StarParameters {
                mass_msun: 1.0,
                luminosity_lsun: 1.0,
                effective_temperature_k: 4000.0,
                fuv_1au_habing: 1.0e7,
                abundance_reference: AbundanceReference::Asplund2009,
                offset_dex: [0.0; ELEMENT_COUNT],
            },
            disk: DiskParameters {
                gas_mass_msun: 0.01,
                characteristic_radius_au: 50.0,
                surface_density_index: 1.0,
                inner_radius_au: 0.1,
                outer_radius_au: 500.0,
                accretion_rate_msun_per_yr: 1.0e-8,
                flaring_angle: 0.05,
                self_consistent_flaring: false,
                opacity: Opacity::Constant {
                    rosseland_cm2_per_g: 1.0,
                },
                vertical_temperature: VerticalTemperature::TwoLayer {
                    superheating: 1.5,
                    transition_scale_heights: 4.0,
                    delta: 2.0,
                },
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
