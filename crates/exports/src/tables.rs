//! Tables built from a computed model: the radial structure profile, the
//! radial model profile (C/O and ice fractions), and long-form r-z maps.
//! Cells hold `Option<f64>`: `None` is undefined (empty in CSV, null in JSON).

use nivalis_physics::budget::defined_ratio;
use nivalis_physics::params::Element;
use nivalis_physics::units::{AU_CM, HABING_PHOTONS_PER_CM2_S, JULIAN_YEAR_S};
use nivalis_physics::{Model, Species};

/// One column's name, unit (astropy unit string, empty for dimensionless) and description.
#[derive(Debug, Clone, PartialEq)]
pub struct ColumnSpec {
    /// Column name (unit in the name, e.g. `radius_au`).
    pub name: String,
    /// Unit as astropy parses it ("AU", "K", "g / cm2", "cm-3", "yr", "1 / s"), or "" if dimensionless.
    pub unit: &'static str,
    /// One-line description.
    pub description: String,
}

/// A table: column specs and rows of optional numbers.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// Columns.
    pub columns: Vec<ColumnSpec>,
    /// Rows, each with one cell per column.
    pub rows: Vec<Vec<Option<f64>>>,
}

pub(crate) fn col(
    name: impl Into<String>,
    unit: &'static str,
    description: impl Into<String>,
) -> ColumnSpec {
    ColumnSpec {
        name: name.into(),
        unit,
        description: description.into(),
    }
}

/// A number only if finite (NaN and infinities are undefined).
pub(crate) fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// The radial structure profile (`nivalis structure`).
pub fn structure_table(model: &Model) -> Table {
    let st = &model.structure();
    let columns = vec![
        col("radius_au", "AU", "radial cell centre"),
        col("surface_density_g_cm2", "g / cm2", "gas surface density"),
        col("midplane_temperature_k", "K", "midplane temperature"),
        col(
            "irradiation_temperature_k",
            "K",
            "stellar irradiation temperature",
        ),
        col(
            "accretion_temperature_k",
            "K",
            "viscous (accretion) heating temperature",
        ),
        col(
            "midplane_density_h_cm3",
            "cm-3",
            "midplane H-nucleus number density",
        ),
        col("scale_height_au", "AU", "midplane pressure scale height"),
        col("aspect_ratio", "", "scale height over radius"),
    ];
    let rows = (0..st.radial_cells())
        .map(|j| {
            let r = st.radius_cm()[j];
            vec![
                finite(r / AU_CM),
                finite(st.surface_density_g_cm2()[j]),
                finite(st.midplane_temperature_k()[j]),
                finite(st.irradiation_temperature_k()[j]),
                finite(st.accretion_temperature_k()[j]),
                finite(st.sample(j, 0).hydrogen_density_cm3),
                finite(st.scale_height_cm()[j] / AU_CM),
                finite(st.scale_height_cm()[j] / r),
            ]
        })
        .collect();
    Table { columns, rows }
}

/// The radial model profile (`nivalis model`): C/O of gas, ice and solids, gas
/// C/H and O/H relative to the star, and the midplane ice fraction of each species.
pub fn model_table(model: &Model) -> Table {
    let st = &model.structure();
    let profile = model.midplane_profile();
    let mut columns = vec![
        col("radius_au", "AU", "radial cell centre"),
        col("midplane_temperature_k", "K", "midplane temperature"),
        col(
            "midplane_density_h_cm3",
            "cm-3",
            "midplane H-nucleus number density",
        ),
        col("c_to_o_gas", "", "C/O number ratio of the gas"),
        col("c_to_o_ice", "", "C/O number ratio of the ices alone"),
        col(
            "c_to_o_solid",
            "",
            "C/O number ratio of all solids (ices and refractories)",
        ),
        col(
            "c_to_h_gas_rel_star",
            "",
            "gas C/H divided by the star's C/H",
        ),
        col(
            "o_to_h_gas_rel_star",
            "",
            "gas O/H divided by the star's O/H",
        ),
    ];
    for s in Species::ALL {
        columns.push(col(
            format!("ice_fraction_{}", s.key()),
            "",
            format!("fraction of {} in ice at the midplane", s.key()),
        ));
    }
    let fractions: Vec<Vec<f64>> = Species::ALL
        .iter()
        .map(|&s| model.midplane_ice_fraction(s))
        .collect();
    let rows = (0..st.radial_cells())
        .map(|j| {
            let mut row = vec![
                finite(profile.radius_au[j]),
                finite(st.midplane_temperature_k()[j]),
                finite(st.sample(j, 0).hydrogen_density_cm3),
                profile.c_to_o_gas[j],
                profile.c_to_o_ice[j],
                profile.c_to_o_solid[j],
                profile.c_to_h_gas_rel_star[j],
                profile.o_to_h_gas_rel_star[j],
            ];
            row.extend(fractions.iter().map(|f| finite(f[j])));
            row
        })
        .collect();
    Table { columns, rows }
}

/// A quantity that can be mapped in r-z.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum MapQuantity {
    /// Gas temperature [K].
    TemperatureK,
    /// H-nucleus density [cm^-3].
    DensityHCm3,
    /// FUV photon flux in Habing units (1e8 photons cm^-2 s^-1).
    FuvFluxHabing,
    /// Cosmic-ray ionisation rate [s^-1].
    IonizationRateS,
    /// Visual extinction from above [mag].
    VisualExtinctionMag,
    /// Ice fraction of one species.
    IceFraction(Species),
    /// Gas C/O.
    CToOGas,
    /// Equilibration time of one species [yr].
    EquilibrationTimeYr(Species),
    /// 1 where the ice of one species is out of equilibrium at the disk's age, else 0.
    OutOfEquilibrium(Species),
    /// Gas-phase number density of one species [cm^-3].
    GasDensityCm3(Species),
    /// Ice number density of one species [molecules cm^-3].
    IceDensityCm3(Species),
    /// Abundance per H nucleus of an element in one phase.
    ElementAbundance(Phase, Element),
}

/// A phase of the element budget.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Phase {
    /// Gas (volatiles in the gas and released refractories).
    Gas,
    /// Ices.
    Ice,
    /// Refractory solids.
    Refractory,
    /// All solids (ices and refractories).
    Solid,
}

impl Phase {
    /// Key in quantity names.
    pub fn key(self) -> &'static str {
        match self {
            Phase::Gas => "gas",
            Phase::Ice => "ice",
            Phase::Refractory => "refractory",
            Phase::Solid => "solid",
        }
    }

    /// The phase's abundance of element `e` in `ph`.
    pub fn abundance(self, ph: &nivalis_physics::budget::PhaseAbundances, e: Element) -> f64 {
        let i = e as usize;
        match self {
            Phase::Gas => ph.gas[i],
            Phase::Ice => ph.ice[i],
            Phase::Refractory => ph.refractory[i],
            Phase::Solid => ph.solid(e),
        }
    }
}

impl MapQuantity {
    /// Every accepted spelling, for help texts.
    pub const NAMES: &'static str = "temperature_k, density_h_cm3, fuv_flux_habing, ionization_rate_s, visual_extinction_mag, ice_fraction:<SPECIES>, c_to_o_gas, equilibration_time_yr:<SPECIES>, out_of_equilibrium:<SPECIES>, gas_density_cm3:<SPECIES>, ice_density_cm3:<SPECIES>, gas_abundance:<ELEMENT>, ice_abundance:<ELEMENT>, refractory_abundance:<ELEMENT>, solid_abundance:<ELEMENT>";

    /// Parse a quantity name such as `ice_fraction:CO`.
    pub fn parse(text: &str) -> Result<MapQuantity, String> {
        let species = |name: &str| {
            Species::from_key(name).ok_or_else(|| {
                format!(
                    "--quantity: unknown species {name:?}; expected one of {}",
                    Species::ALL.map(|s| s.key()).join(", ")
                )
            })
        };
        Ok(match text {
            "temperature_k" => MapQuantity::TemperatureK,
            "density_h_cm3" => MapQuantity::DensityHCm3,
            "fuv_flux_habing" => MapQuantity::FuvFluxHabing,
            "ionization_rate_s" => MapQuantity::IonizationRateS,
            "visual_extinction_mag" => MapQuantity::VisualExtinctionMag,
            "c_to_o_gas" => MapQuantity::CToOGas,
            _ => {
                if let Some(s) = text.strip_prefix("ice_fraction:") {
                    MapQuantity::IceFraction(species(s)?)
                } else if let Some(s) = text.strip_prefix("equilibration_time_yr:") {
                    MapQuantity::EquilibrationTimeYr(species(s)?)
                } else if let Some(s) = text.strip_prefix("out_of_equilibrium:") {
                    MapQuantity::OutOfEquilibrium(species(s)?)
                } else if let Some(s) = text.strip_prefix("gas_density_cm3:") {
                    MapQuantity::GasDensityCm3(species(s)?)
                } else if let Some(s) = text.strip_prefix("ice_density_cm3:") {
                    MapQuantity::IceDensityCm3(species(s)?)
                } else if let Some((phase, el)) = text.split_once("_abundance:") {
                    let phase = [Phase::Gas, Phase::Ice, Phase::Refractory, Phase::Solid]
                        .into_iter()
                        .find(|p| p.key() == phase)
                        .ok_or_else(|| format!("--quantity: unknown phase {phase:?}; expected gas, ice, refractory or solid"))?;
                    let element = Element::from_symbol(el).ok_or_else(|| {
                        format!(
                            "--quantity: unknown element {el:?}; expected one of {}",
                            Element::ALL.map(|e| e.symbol()).join(", ")
                        )
                    })?;
                    MapQuantity::ElementAbundance(phase, element)
                } else {
                    return Err(format!(
                        "--quantity: unknown quantity {text:?}; expected one of {}",
                        Self::NAMES
                    ));
                }
            }
        })
    }

    /// Unit (astropy string) and description.
    pub fn unit_and_description(self) -> (&'static str, String) {
        match self {
            MapQuantity::TemperatureK => ("K", "gas and dust temperature".into()),
            MapQuantity::DensityHCm3 => ("cm-3", "H-nucleus number density".into()),
            MapQuantity::FuvFluxHabing => ("", "FUV photon flux in Habing units (1e8 photons cm-2 s-1)".into()),
            MapQuantity::IonizationRateS => ("1 / s", "cosmic-ray ionisation rate per H2".into()),
            MapQuantity::VisualExtinctionMag => ("mag", "visual extinction towards the disk surface".into()),
            MapQuantity::IceFraction(s) => ("", format!("fraction of {} in ice", s.key())),
            MapQuantity::CToOGas => ("", "C/O number ratio of the gas".into()),
            MapQuantity::EquilibrationTimeYr(s) => ("yr", format!("freeze-out/desorption equilibration time of {}", s.key())),
            MapQuantity::OutOfEquilibrium(s) => (
                "",
                format!("1 where {} ice has not reached its equilibrium within the disk's age (equilibration time above the age, or f_ice still 0.01 from equilibrium), else 0", s.key()),
            ),
            MapQuantity::GasDensityCm3(s) => ("cm-3", format!("number density of {} in the gas", s.key())),
            MapQuantity::IceDensityCm3(s) => ("cm-3", format!("number density of {} in ice (molecules per cm3 of disk)", s.key())),
            MapQuantity::ElementAbundance(p, e) => ("", format!("{} abundance of {} per H nucleus", p.key(), e.symbol())),
        }
    }

    /// Value at flat sample index `k` (`None` where undefined).
    pub fn value(self, model: &Model, k: usize) -> Option<f64> {
        let s = &model.structure().samples();
        match self {
            MapQuantity::TemperatureK => finite(s.temperature_k[k]),
            MapQuantity::DensityHCm3 => finite(s.hydrogen_density_cm3[k]),
            MapQuantity::FuvFluxHabing => {
                finite(s.fuv_photon_flux_cm2_s[k] / HABING_PHOTONS_PER_CM2_S)
            }
            MapQuantity::IonizationRateS => finite(s.ionization_rate_s[k]),
            MapQuantity::VisualExtinctionMag => finite(s.visual_extinction_mag[k]),
            MapQuantity::IceFraction(sp) => finite(model.ice_fraction_at(sp, k)),
            MapQuantity::CToOGas => {
                let ph = model.phases_at(k);
                let (c, o) = (Element::C as usize, Element::O as usize);
                defined_ratio(ph.gas[c], ph.gas[o], model.stellar_per_h()[o])
            }
            MapQuantity::EquilibrationTimeYr(sp) => {
                finite(model.equilibration_time_s_at(sp, k) / JULIAN_YEAR_S)
            }
            MapQuantity::OutOfEquilibrium(sp) => Some(if model.out_of_equilibrium_at(sp, k) {
                1.0
            } else {
                0.0
            }),
            MapQuantity::GasDensityCm3(sp) | MapQuantity::IceDensityCm3(sp) => {
                let total = model
                    .composition()
                    .species_per_h(sp, k / model.structure().samples_per_column())
                    * s.hydrogen_density_cm3[k];
                let f = model.ice_fraction_at(sp, k);
                finite(if matches!(self, MapQuantity::IceDensityCm3(_)) {
                    f * total
                } else {
                    (1.0 - f) * total
                })
            }
            MapQuantity::ElementAbundance(p, e) => finite(p.abundance(&model.phases_at(k), e)),
        }
    }
}

/// The r-z map of a quantity as long-form rows (radius_au, height_au, z_over_r, value),
/// one row per cell centre (the z = 0 midplane sample is not a cell and is left out).
pub fn map_table(model: &Model, quantity: MapQuantity, value_name: &str) -> Table {
    let st = &model.structure();
    let (unit, description) = quantity.unit_and_description();
    let columns = vec![
        col("radius_au", "AU", "radial cell centre"),
        col(
            "height_au",
            "AU",
            "height of the cell centre above the midplane",
        ),
        col("z_over_r", "", "height over radius"),
        col(value_name, unit, description),
    ];
    let mut rows = Vec::with_capacity(st.radial_cells() * (st.samples_per_column() - 1));
    for j in 0..st.radial_cells() {
        let r = st.radius_cm()[j];
        for s in 1..st.samples_per_column() {
            let k = st.index(j, s);
            let z = st.sample(j, s).height_cm;
            rows.push(vec![
                finite(r / AU_CM),
                finite(z / AU_CM),
                finite(z / r),
                quantity.value(model, k),
            ]);
        }
    }
    Table { columns, rows }
}

/// Midplane abundance per H nucleus of every element in every phase, per radius
/// (`nivalis elements`): columns radius_au, then <phase>_<element>_per_h for the
/// phases gas, ice, refractory, solid and the elements C, O, N, S, Si, Mg, Fe.
pub fn elements_table(model: &Model) -> Table {
    let phases = [Phase::Gas, Phase::Ice, Phase::Refractory, Phase::Solid];
    let mut columns = vec![col("radius_au", "AU", "radial cell centre")];
    for p in phases {
        for e in Element::ALL {
            columns.push(col(
                format!("{}_{}_per_h", p.key(), e.symbol()),
                "",
                format!(
                    "{} abundance of {} per H nucleus at the midplane",
                    p.key(),
                    e.symbol()
                ),
            ));
        }
    }
    let profile = model.midplane_profile();
    let rows = profile
        .phases
        .iter()
        .zip(&profile.radius_au)
        .map(|(ph, r)| {
            let mut row = vec![finite(*r)];
            for p in phases {
                for e in Element::ALL {
                    // Below 1e-9 of the element's total (the star's X/H) is zero up to rounding (docs/model.md section 8).
                    let total = model.stellar_per_h()[e as usize];
                    row.push(finite(nivalis_physics::budget::zero_below_rounding(
                        p.abundance(ph, e),
                        total,
                    )));
                }
            }
            row
        })
        .collect();
    Table { columns, rows }
}
