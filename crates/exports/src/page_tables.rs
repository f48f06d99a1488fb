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
use serde_json::{json, Value};

/// The snowline table: per species (in `Species::ALL` order), every midplane
/// snowline (`radius_au`, `direction`, the model's `midplane_temperature_k`
/// there and `out_of_equilibrium`) and the species' `formula`,
/// `abundance_per_h`, `condensation_temperature_k` of the step model (the
/// resolved value, override or built-in) and `binding_energy_k`. `inner_edge`
/// says what the midplane holds at the inner edge: `absent` (no carrier),
/// `ice_at_inner_edge` or `gas_at_inner_edge`; for a species without any
/// crossing it tells whether its midplane is all ice or all gas.
pub fn snowline_table(model: &Model) -> Value {
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
                    let radius_au = line.radius_cm / AU_CM;
                    // The midplane temperature at the snowline, interpolated in ln r
                    // between the grid cells as the snowline radius itself is (a
                    // fresh column per snowline, `Model::midplane_at`, would cost
                    // several milliseconds per redraw for no visible difference).
                    let temperature = Some(interpolate_in_ln_r(
                        st.radius_cm(),
                        st.midplane_temperature_k(),
                        line.radius_cm,
                    ))
                    .filter(|t| t.is_finite());
                    json!({
                        "radius_au": radius_au,
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
