//! Plain input data of the line charts, and the builders that fill them from a
//! computed `nivalis_physics::Model`. Undefined values are `None`; they break
//! lines and are never drawn as numbers.

use nivalis_physics::units::AU_CM;
use nivalis_physics::{CrossingDirection, Model, Species};

use crate::error::{check_increasing_positive, check_length, ChartError};
use crate::text::typeset_formula;

/// `Some(v)` for finite positive values, the only ones a log axis can show.
fn positive(v: f64) -> Option<f64> {
    (v.is_finite() && v > 0.0).then_some(v)
}

/// Inputs of the C/O profile (view a).
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileData {
    /// Radius [au], increasing.
    pub radius_au: Vec<f64>,
    /// C/O of the gas per radius.
    pub c_to_o_gas: Vec<Option<f64>>,
    /// C/O of the ices alone.
    pub c_to_o_ice: Vec<Option<f64>>,
    /// C/O of all solids (ices and refractories).
    pub c_to_o_solid: Vec<Option<f64>>,
    /// The star's C/O, drawn as a horizontal reference line.
    pub star_c_to_o: Option<f64>,
    /// Snowlines as (label, radius [au]); each drawn as a labelled vertical line.
    pub snowlines: Vec<(String, f64)>,
    /// A planet's radius [au], marked when given.
    pub planet_radius_au: Option<f64>,
    /// Radius intervals [au] (inner, outer) where the planet may have formed, shaded.
    pub allowed_formation_radii_au: Vec<(f64, f64)>,
    /// Radius intervals [au] (inner, outer) where the planet cannot have formed
    /// (too little gas in its feeding zone), hatched.
    pub infeasible_formation_radii_au: Vec<(f64, f64)>,
}

/// Every snowline of a model as (typeset species label, radius [au]), inner first per species.
/// Desorption fronts (ice inside, gas outside) get a trailing "↑" so they are not mistaken for freeze-out.
pub fn model_snowlines(model: &Model) -> Vec<(String, f64)> {
    let mut out = Vec::new();
    for species in Species::ALL {
        for line in model.snowlines(species) {
            let mut label = typeset_formula(species.key());
            if line.direction == CrossingDirection::Desorption {
                label.push('\u{2191}');
            }
            out.push((label, line.radius_cm / AU_CM));
        }
    }
    out.sort_by(|a, b| a.1.total_cmp(&b.1));
    out
}

impl ProfileData {
    /// The midplane C/O profile of a model, its star's C/O and its snowlines.
    pub fn from_model(model: &Model) -> ProfileData {
        let p = model.midplane_profile();
        let star = model.star_c_to_o();
        ProfileData {
            radius_au: p.radius_au,
            c_to_o_gas: p.c_to_o_gas,
            c_to_o_ice: p.c_to_o_ice,
            c_to_o_solid: p.c_to_o_solid,
            star_c_to_o: positive(star),
            snowlines: model_snowlines(model),
            planet_radius_au: None,
            allowed_formation_radii_au: Vec::new(),
            infeasible_formation_radii_au: Vec::new(),
        }
    }

    /// The same profile with a planet's radius marked.
    pub fn with_planet_radius_au(mut self, radius_au: f64) -> ProfileData {
        self.planet_radius_au = Some(radius_au);
        self
    }

    /// The same profile with shaded intervals of allowed formation radii [au].
    pub fn with_allowed_formation_radii_au(mut self, intervals: Vec<(f64, f64)>) -> ProfileData {
        self.allowed_formation_radii_au = intervals;
        self
    }

    pub(crate) fn validate(&self) -> Result<(), ChartError> {
        check_increasing_positive("radius_au", &self.radius_au)?;
        let n = self.radius_au.len();
        check_length("c_to_o_gas", &self.c_to_o_gas, n)?;
        check_length("c_to_o_ice", &self.c_to_o_ice, n)?;
        check_length("c_to_o_solid", &self.c_to_o_solid, n)
    }
}

/// Inputs of the temperature and surface-density profile (view b).
#[derive(Debug, Clone, PartialEq)]
pub struct TemperatureData {
    /// Radius [au], increasing.
    pub radius_au: Vec<f64>,
    /// Midplane temperature [K].
    pub midplane_temperature_k: Vec<Option<f64>>,
    /// Irradiation component [K].
    pub irradiation_temperature_k: Vec<Option<f64>>,
    /// Accretion (viscous) component [K].
    pub accretion_temperature_k: Vec<Option<f64>>,
    /// Gas surface density [g cm^-2].
    pub surface_density_g_cm2: Vec<Option<f64>>,
}

impl TemperatureData {
    /// The midplane temperatures and surface density of a model.
    pub fn from_model(model: &Model) -> TemperatureData {
        let s = &model.structure();
        let wrap = |v: &[f64]| v.iter().map(|&t| positive(t)).collect::<Vec<_>>();
        TemperatureData {
            radius_au: s.radius_cm().iter().map(|r| r / AU_CM).collect(),
            midplane_temperature_k: wrap(s.midplane_temperature_k()),
            irradiation_temperature_k: wrap(s.irradiation_temperature_k()),
            accretion_temperature_k: wrap(s.accretion_temperature_k()),
            surface_density_g_cm2: wrap(s.surface_density_g_cm2()),
        }
    }

    pub(crate) fn validate(&self) -> Result<(), ChartError> {
        check_increasing_positive("radius_au", &self.radius_au)?;
        let n = self.radius_au.len();
        check_length("midplane_temperature_k", &self.midplane_temperature_k, n)?;
        check_length(
            "irradiation_temperature_k",
            &self.irradiation_temperature_k,
            n,
        )?;
        check_length("accretion_temperature_k", &self.accretion_temperature_k, n)?;
        check_length("surface_density_g_cm2", &self.surface_density_g_cm2, n)
    }
}

/// Gas and ice abundance of one species along the midplane.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesAbundance {
    /// Label as drawn, e.g. "CO₂".
    pub label: String,
    /// Gas-phase abundance per H nucleus.
    pub gas_per_h: Vec<Option<f64>>,
    /// Ice abundance per H nucleus.
    pub ice_per_h: Vec<Option<f64>>,
}

/// Inputs of the abundance profiles (view e).
#[derive(Debug, Clone, PartialEq)]
pub struct AbundanceData {
    /// Radius [au], increasing.
    pub radius_au: Vec<f64>,
    /// One entry per species.
    pub species: Vec<SpeciesAbundance>,
}

impl AbundanceData {
    /// Midplane gas and ice abundances per H of every species present in a model
    /// (x_gas = x (1 - f_ice), x_ice = x f_ice; species with x = 0 are left out).
    pub fn from_model(model: &Model) -> AbundanceData {
        let s = &model.structure();
        let species = Species::ALL
            .iter()
            .filter(|sp| model.composition().is_present(**sp))
            .map(|&sp| {
                let composition = model.composition();
                let f = model.midplane_ice_fraction(sp);
                // One pass over the radii filling both series (same products as two passes).
                let mut gas_per_h = Vec::with_capacity(f.len());
                let mut ice_per_h = Vec::with_capacity(f.len());
                for (j, &f) in f.iter().enumerate() {
                    let x = composition.species_per_h(sp, j);
                    gas_per_h.push(positive(x * (1.0 - f)));
                    ice_per_h.push(positive(x * f));
                }
                SpeciesAbundance {
                    label: typeset_formula(sp.key()),
                    gas_per_h,
                    ice_per_h,
                }
            })
            .collect();
        AbundanceData {
            radius_au: s.radius_cm().iter().map(|r| r / AU_CM).collect(),
            species,
        }
    }

    pub(crate) fn validate(&self) -> Result<(), ChartError> {
        check_increasing_positive("radius_au", &self.radius_au)?;
        if self.species.is_empty() {
            return Err(ChartError::EmptyData { field: "species" });
        }
        let n = self.radius_au.len();
        for s in &self.species {
            check_length("gas_per_h", &s.gas_per_h, n)?;
            check_length("ice_per_h", &s.ice_per_h, n)?;
        }
        Ok(())
    }
}

/// Inputs of the planet chi-square map (view f), plain slices' owned form.
#[derive(Debug, Clone, PartialEq)]
pub struct Chi2Data {
    /// Formation radius grid [au], increasing (x axis, log).
    pub radius_au: Vec<f64>,
    /// Solid-to-gas ratio grid, increasing (y axis, log).
    pub solid_to_gas: Vec<f64>,
    /// chi^2 at `[ratio_index * radius_au.len() + radius_index]`; NaN where undefined.
    pub chi2: Vec<f64>,
    /// Contour levels as (label, delta chi^2 above the minimum), e.g. ("1σ", 2.30), ("2σ", 6.18)
    /// for two fitted parameters (Press et al., Numerical Recipes, section 15.6).
    pub thresholds: Vec<(String, f64)>,
    /// The best fit (radius [au], solid-to-gas), marked when given.
    pub best: Option<(f64, f64)>,
    /// x-axis label.
    pub x_label: String,
    /// y-axis label.
    pub y_label: String,
}

impl Chi2Data {
    /// Build from plain slices with the usual labels.
    pub fn new(
        radius_au: &[f64],
        solid_to_gas: &[f64],
        chi2: &[f64],
        thresholds: &[(String, f64)],
        best: Option<(f64, f64)>,
    ) -> Chi2Data {
        Chi2Data {
            radius_au: radius_au.to_vec(),
            solid_to_gas: solid_to_gas.to_vec(),
            chi2: chi2.to_vec(),
            thresholds: thresholds.to_vec(),
            best,
            x_label: "formation radius r [au]".to_string(),
            y_label: "solid-to-gas ratio".to_string(),
        }
    }

    /// Build from the planet module's inverse map (its rows are radius-major;
    /// this transposes them), with its 1- and 2-sigma thresholds and best fit.
    pub fn from_map(map: &nivalis_physics::planet::ChiSquareMap) -> Chi2Data {
        let (n_r, n_q) = (map.radius_au.len(), map.solid_to_gas.len());
        let mut chi2 = vec![f64::NAN; n_r * n_q];
        for j in 0..n_r {
            for k in 0..n_q {
                // Infeasible places and places outside the priors are left blank (drawn as no data).
                let row = &map.rows[j * n_q + k];
                if let (Some(c), true) = (row.chi2, row.feasible && row.in_prior) {
                    chi2[k * n_r + j] = c;
                }
            }
        }
        // No contours when no place is acceptable (docs/model.md section 9, goodness of fit).
        let thresholds = if map.goodness.acceptable {
            vec![
                ("1σ".to_string(), map.thresholds.one_sigma),
                ("2σ".to_string(), map.thresholds.two_sigma),
            ]
        } else {
            Vec::new()
        };
        Chi2Data::new(
            &map.radius_au,
            &map.solid_to_gas,
            &chi2,
            &thresholds,
            map.best.map(|b| (b.radius_au, b.solid_to_gas)),
        )
    }

    pub(crate) fn validate(&self) -> Result<(), ChartError> {
        check_increasing_positive("radius_au", &self.radius_au)?;
        check_increasing_positive("solid_to_gas", &self.solid_to_gas)?;
        check_length(
            "chi2",
            &self.chi2,
            self.radius_au.len() * self.solid_to_gas.len(),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::ModelParameters;

    /// The abundance series are x (1 - f) and x f per radius (docs/model.md
    /// section 8), bit for bit, for every species present, with the species
    /// per cell and the midplane ice fraction read one at a time from the model.
    #[test]
    fn abundance_series_are_the_gas_and_ice_shares_of_each_species() {
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 50;
        p.grid.vertical_cells = 12;
        let model = Model::run(&p).unwrap();
        let data = AbundanceData::from_model(&model);
        let present: Vec<Species> = Species::ALL
            .into_iter()
            .filter(|&s| model.composition().is_present(s))
            .collect();
        assert_eq!(data.species.len(), present.len());
        let st = model.structure();
        let mut some_ice = false;
        for (series, &s) in data.species.iter().zip(&present) {
            assert_eq!(series.label, typeset_formula(s.key()));
            for j in 0..st.radial_cells() {
                let x = model.composition().species_per_h(s, j);
                let f = model.ice_fraction_at(s, st.index(j, 0));
                assert_eq!(series.gas_per_h[j], positive(x * (1.0 - f)), "{s:?} {j}");
                assert_eq!(series.ice_per_h[j], positive(x * f), "{s:?} {j}");
                some_ice |= series.ice_per_h[j].is_some();
            }
        }
        assert!(some_ice);
    }
}
