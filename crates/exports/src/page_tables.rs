//! The page's tables as JSON values: the snowline table beside the views and
//! the short summary of a result. Built here rather than in the web crate so
//! the CLI and the Python module can reach the same values; the page only
//! forwards them (`Explorer.snowlineTable`, `Explorer.summary`).
//!
//! The snowline radii, directions and equilibrium flags are those of
//! `nivalis snowlines` ([`crate::snowlines::snowlines_json`]): both read
//! `Model::snowlines` and `Model::snowline_out_of_equilibrium`.

use nivalis_disk_files::DiskFile;
use nivalis_physics::structure::interpolate_in_ln_r;
use nivalis_physics::units::AU_CM;
use nivalis_physics::{Model, Species};
use serde::Serialize;
use serde_json::{json, Value};

/// One midplane snowline of a row of the snowline table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SnowlineEntry {
    /// Radius [au].
    pub radius_au: f64,
    /// `freeze_out` or `desorption` ([`nivalis_physics::CrossingDirection::key`]).
    pub direction: &'static str,
    /// The model's midplane temperature there [K] (`None`, JSON `null`, when not finite).
    pub midplane_temperature_k: Option<f64>,
    /// Whether the ices there are not in equilibrium at the disk's age.
    pub out_of_equilibrium: bool,
}

/// One species' row of the snowline table (see [`snowline_table`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SnowlineRow {
    /// The species' key (`H2O`, `CO`, ...).
    pub species: &'static str,
    /// Its formula as the species table writes it.
    pub formula: &'static str,
    /// Its abundance per H nucleus.
    pub abundance_per_h: f64,
    /// The step model's condensation temperature [K] (resolved).
    pub condensation_temperature_k: f64,
    /// The binding energy [K] (resolved).
    pub binding_energy_k: f64,
    /// Every midplane snowline, inner first.
    pub snowlines: Vec<SnowlineEntry>,
    /// `absent`, `ice_at_inner_edge` or `gas_at_inner_edge`.
    pub inner_edge: &'static str,
}

/// The rows of the snowline table, typed: per species (in `Species::ALL` order),
/// every midplane snowline (`radius_au`, `direction`, the model's
/// `midplane_temperature_k` there and `out_of_equilibrium`) and the species'
/// `formula`, `abundance_per_h`, `condensation_temperature_k` of the step model
/// (the resolved value, override or built-in) and `binding_energy_k`.
/// `inner_edge` says what the midplane holds at the inner edge: `absent` (no
/// carrier), `ice_at_inner_edge` or `gas_at_inner_edge`; for a species without
/// any crossing it tells whether its midplane is all ice or all gas.
pub fn snowline_rows(model: &Model) -> Vec<SnowlineRow> {
    let st = &model.structure();
    Species::ALL
        .iter()
        .map(|&s| {
            let snowlines = model
                .snowlines(s)
                .iter()
                .map(|line| SnowlineEntry {
                    radius_au: line.radius_cm / AU_CM,
                    direction: line.direction.key(),
                    // The midplane temperature at the snowline, interpolated in ln r
                    // between the grid cells as the snowline radius itself is (a
                    // fresh column per snowline, `Model::midplane_at`, would cost
                    // several milliseconds per redraw for no visible difference).
                    midplane_temperature_k: Some(interpolate_in_ln_r(
                        st.radius_cm(),
                        st.midplane_temperature_k(),
                        line.radius_cm,
                    ))
                    .filter(|t| t.is_finite()),
                    out_of_equilibrium: model.snowline_out_of_equilibrium(s, line),
                })
                .collect();
            let inner_edge = if !model.composition().is_present(s) {
                "absent"
            } else if st.radial_cells() > 0 && model.ice_fraction_at(s, st.index(0, 0)) >= 0.5 {
                "ice_at_inner_edge"
            } else {
                "gas_at_inner_edge"
            };
            let properties = &model.species_properties()[s.index()];
            SnowlineRow {
                species: s.key(),
                formula: model.species_table().get(s).formula,
                abundance_per_h: model.carriers().species_per_h[s.index()],
                condensation_temperature_k: properties.condensation_temperature_k,
                binding_energy_k: properties.binding_energy_k,
                snowlines,
                inner_edge,
            }
        })
        .collect()
}

/// The snowline table ([`snowline_rows`]) as a JSON value: an array of row
/// objects with the fields in the order [`SnowlineRow`] declares them.
pub fn snowline_table(model: &Model) -> Value {
    // Invariant: the rows hold only strings, numbers, booleans and nulls.
    serde_json::to_value(snowline_rows(model)).unwrap_or(Value::Null)
}

/// The snowline table as compact JSON text: `snowline_table(model).to_string()`,
/// written straight from the typed rows (no `Value` built on the way; the page
/// asks for it after every edit).
pub fn snowline_table_json(model: &Model) -> String {
    // Invariant: as `snowline_table`.
    serde_json::to_string(&snowline_rows(model)).unwrap_or_else(|_| "null".to_string())
}

/// The short summary shown beside the views: the grid (`radial_cells`,
/// `vertical_cells`, `samples`), its inner and outer radius [au], the star's
/// C/O and radius [au], and the disk's `name` and `notes`.
pub fn summary(file: &DiskFile, model: &Model) -> Value {
    let st = &model.structure();
    json!({
        "radial_cells": st.radial_cells(),
        "vertical_cells": st.samples_per_column() - 1,
        "samples": model.sample_count(),
        "inner_radius_au": st.radius_cm().first().map(|r| r / AU_CM),
        "outer_radius_au": st.radius_cm().last().map(|r| r / AU_CM),
        "star_c_to_o": model.star_c_to_o(),
        "stellar_radius_au": st.constants().stellar_radius_cm / AU_CM,
        "name": file.name,
        "notes": file.notes,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::params::DesorptionModel;
    use nivalis_physics::ModelParameters;

    /// The table as it was built before the typed rows (a `json!` object per
    /// row and snowline): the reference the typed rows must reproduce exactly,
    /// key order and number text included.
    fn reference_table(model: &Model) -> Value {
        let inner_ice = |s: Species| {
            model
                .midplane_ice_fraction(s)
                .first()
                .copied()
                .unwrap_or(0.0)
        };
        let st = &model.structure();
        let rows: Vec<Value> = Species::ALL
            .iter()
            .map(|&s| {
                let lines: Vec<Value> = model
                    .snowlines(s)
                    .iter()
                    .map(|line| {
                        let temperature = Some(interpolate_in_ln_r(
                            st.radius_cm(),
                            st.midplane_temperature_k(),
                            line.radius_cm,
                        ))
                        .filter(|t| t.is_finite());
                        json!({
                            "radius_au": line.radius_cm / AU_CM,
                            "direction": line.direction.key(),
                            "midplane_temperature_k": temperature,
                            "out_of_equilibrium": model.snowline_out_of_equilibrium(s, line),
                        })
                    })
                    .collect();
                let absent = !model.composition().is_present(s);
                let everywhere = if absent {
                    "absent"
                } else if inner_ice(s) >= 0.5 {
                    "ice_at_inner_edge"
                } else {
                    "gas_at_inner_edge"
                };
                let properties = &model.species_properties()[s.index()];
                json!({
                    "species": s.key(),
                    "formula": model.species_table().get(s).formula,
                    "abundance_per_h": model.carriers().species_per_h[s.index()],
                    "condensation_temperature_k": properties.condensation_temperature_k,
                    "binding_energy_k": properties.binding_energy_k,
                    "snowlines": lines,
                    "inner_edge": everywhere,
                })
            })
            .collect();
        Value::Array(rows)
    }

    fn models() -> Vec<Model> {
        let mut small = ModelParameters::defaults();
        small.grid.radial_cells = 60;
        small.grid.vertical_cells = 20;
        // The step model (snowlines where T_mid = T_cond).
        let mut step = small.clone();
        step.ices.desorption = DesorptionModel::FixedTemperature;
        // No methanol or HCN (absent rows), and a hotter star.
        let mut absent = small.clone();
        absent.composition.carbon.ch3oh = 0.0;
        absent.composition.carbon.hcn = 0.0;
        absent.composition.carbon.co += 0.06;
        absent.star.luminosity_lsun = 5.0;
        [ModelParameters::defaults(), small, step, absent]
            .iter()
            .map(|p| Model::run(p).unwrap())
            .collect()
    }

    #[test]
    fn the_typed_rows_give_the_reference_table_and_its_text() {
        let mut absent_rows = 0;
        for model in models() {
            let reference = reference_table(&model);
            assert_eq!(snowline_table(&model), reference);
            // The text the page reads is the reference's compact text, byte for byte.
            assert_eq!(snowline_table_json(&model), reference.to_string());
            absent_rows += snowline_rows(&model)
                .iter()
                .filter(|r| r.inner_edge == "absent")
                .count();
        }
        // The case with carriers set to zero exercised the `absent` rows.
        assert!(absent_rows >= 2, "{absent_rows}");
    }
}
