//! The page's planet tools: everything but the marks on the C/O profile lives
//! in `nivalis_exports::planet_tools` (requests read from the panel's typed
//! fields, runs, views, exports, methods text and BibTeX), shared with the
//! CLI and the coming Python module; this module re-exports it and adds what
//! needs the charts crate.

pub use nivalis_exports::planet_tools::*;

use nivalis_charts::ProfileData;

/// The profile with the planet's radius and the allowed 1-sigma radii marked.
pub fn with_marks(profile: ProfileData, state: &PlanetState) -> ProfileData {
    let mut p = profile;
    p.planet_radius_au = state
        .placed
        .as_ref()
        .map(|pl| pl.planet.phases.inner_radius_au);
    p.allowed_formation_radii_au = state
        .fitted
        .as_ref()
        .map(|f| f.allowed_union_au.clone())
        .unwrap_or_default();
    p.infeasible_formation_radii_au = state
        .fitted
        .as_ref()
        .map(|f| {
            f.map
                .infeasible
                .iter()
                .map(|i| (i.inner_edge_au, i.outer_edge_au))
                .collect()
        })
        .unwrap_or_default();
    p
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_disk_files::DiskFile;
    use nivalis_physics::{Model, ModelParameters};
    use serde_json::json;

    #[test]
    fn the_profile_marks_the_planet_the_allowed_and_the_infeasible_radii() {
        let file = DiskFile::defaults();
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let state = PlanetState {
            placed: Some(
                place_planet(
                    &model,
                    &file,
                    &json!({"radius_au": 12, "solid_to_gas": 0.01}),
                )
                .unwrap(),
            ),
            fitted: Some(
                fit_planet(
                    &model,
                    &file,
                    &json!({"c_to_o": "0.5", "c_to_o_sigma": "0.1", "planet_mass_mjup": "1"}),
                )
                .unwrap(),
            ),
        };
        let marked = with_marks(ProfileData::from_model(&model), &state);
        assert_eq!(marked.planet_radius_au, Some(12.0));
        let fitted = state.fitted.as_ref().unwrap();
        assert_eq!(marked.allowed_formation_radii_au, fitted.allowed_union_au);
        assert_eq!(
            marked.infeasible_formation_radii_au.len(),
            fitted.map.infeasible.len()
        );
        assert!(!marked.infeasible_formation_radii_au.is_empty());
        let empty = with_marks(ProfileData::from_model(&model), &PlanetState::default());
        assert!(empty.planet_radius_au.is_none() && empty.allowed_formation_radii_au.is_empty());
    }
}
