//! The views' input data as plain parts that can cross from the page's Web
//! Worker to the page: a JSON value for the small fields (labels, ranges,
//! snowlines) and named `f64` arrays for the large ones (undefined = NaN), so
//! the wasm side hands them to JavaScript as `Float64Array`s, which a worker
//! transfers without copying. A large grid is computed in the worker, and the
//! page draws from these parts without having the model itself (the core's
//! `Model` cannot cross threads).
//!
//! Plain Rust, tested natively: every view survives the round trip unchanged.

use nivalis_charts::{
    AbundanceData, ColourMap, MapData, MapGrid, ProfileData, SpeciesAbundance, TemperatureData,
};
use serde_json::{json, Value};

use crate::readout::ViewData;

/// One view in transferable parts.
#[derive(Debug, Clone, PartialEq)]
pub struct ViewParts {
    /// Small fields.
    pub meta: Value,
    /// Large fields by name.
    pub arrays: Vec<(String, Vec<f64>)>,
}

fn nan_for_none(series: &[Option<f64>]) -> Vec<f64> {
    series.iter().map(|v| v.unwrap_or(f64::NAN)).collect()
}

fn none_for_nan(series: &[f64]) -> Vec<Option<f64>> {
    series
        .iter()
        .map(|&v| if v.is_nan() { None } else { Some(v) })
        .collect()
}

fn number(meta: &Value, key: &str) -> Option<f64> {
    meta.get(key).and_then(Value::as_f64)
}

fn text(meta: &Value, key: &str) -> String {
    meta.get(key)
        .and_then(Value::as_str)
        .unwrap_or_default()
        .to_string()
}

fn pairs(value: Option<&Value>) -> Vec<(f64, f64)> {
    value
        .and_then(Value::as_array)
        .map(|a| {
            a.iter()
                .filter_map(|p| Some((p.get(0)?.as_f64()?, p.get(1)?.as_f64()?)))
                .collect()
        })
        .unwrap_or_default()
}

/// The parts of one view.
pub fn to_parts(data: &ViewData) -> ViewParts {
    match data {
        ViewData::Profile(d) => ViewParts {
            meta: json!({
                "kind": "profile",
                "star_c_to_o": d.star_c_to_o,
                "snowlines": d.snowlines.iter().map(|(l, r)| json!([l, r])).collect::<Vec<_>>(),
                "planet_radius_au": d.planet_radius_au,
                "allowed_formation_radii_au": d.allowed_formation_radii_au.iter().map(|(a, b)| json!([a, b])).collect::<Vec<_>>(),
                "infeasible_formation_radii_au": d.infeasible_formation_radii_au.iter().map(|(a, b)| json!([a, b])).collect::<Vec<_>>(),
            }),
            arrays: vec![
                ("radius_au".into(), d.radius_au.clone()),
                ("c_to_o_gas".into(), nan_for_none(&d.c_to_o_gas)),
                ("c_to_o_ice".into(), nan_for_none(&d.c_to_o_ice)),
                ("c_to_o_solid".into(), nan_for_none(&d.c_to_o_solid)),
            ],
        },
        ViewData::Temperature(d) => ViewParts {
            meta: json!({"kind": "temperature"}),
            arrays: vec![
                ("radius_au".into(), d.radius_au.clone()),
                (
                    "midplane_temperature_k".into(),
                    nan_for_none(&d.midplane_temperature_k),
                ),
                (
                    "irradiation_temperature_k".into(),
                    nan_for_none(&d.irradiation_temperature_k),
                ),
                (
                    "accretion_temperature_k".into(),
                    nan_for_none(&d.accretion_temperature_k),
                ),
                (
                    "surface_density_g_cm2".into(),
                    nan_for_none(&d.surface_density_g_cm2),
                ),
            ],
        },
        ViewData::Abundances(d) => {
            let mut arrays = vec![("radius_au".to_string(), d.radius_au.clone())];
            for (i, s) in d.species.iter().enumerate() {
                arrays.push((format!("gas_{i}"), nan_for_none(&s.gas_per_h)));
                arrays.push((format!("ice_{i}"), nan_for_none(&s.ice_per_h)));
            }
            ViewParts {
                meta: json!({"kind": "abundances", "labels": d.species.iter().map(|s| s.label.clone()).collect::<Vec<_>>()}),
                arrays,
            }
        }
        ViewData::IceMap(d) | ViewData::CToOMap(d) => {
            let mut arrays = vec![
                ("radius_au".to_string(), d.radius_au().to_vec()),
                ("z_over_r".to_string(), d.z_over_r().to_vec()),
                ("values".to_string(), d.values.clone()),
                (
                    "scale_height_over_r".to_string(),
                    d.scale_height_over_r().to_vec(),
                ),
            ];
            for (i, curve) in d.curves.iter().enumerate() {
                arrays.push((
                    format!("curve_{i}"),
                    curve.iter().flat_map(|&(r, z)| [r, z]).collect(),
                ));
            }
            ViewParts {
                meta: json!({
                    "kind": if matches!(data, ViewData::CToOMap(_)) { "c_to_o_map" } else { "ice_map" },
                    "rows": d.rows(),
                    "value_label": d.value_label,
                    "value_range": [d.value_range.0, d.value_range.1],
                    "colour_map": d.colour_map.name(),
                    "contour_level": d.contour_level,
                    "contour_label": d.contour_label,
                    "curves": d.curves.len(),
                    "reference_value": d.reference_value.as_ref().map(|(l, v)| json!([l, v])),
                    "z_over_r_max": d.z_over_r_max(),
                }),
                arrays,
            }
        }
    }
}

/// A view back from its parts; an error names what is missing.
pub fn from_parts(parts: &ViewParts) -> Result<ViewData, String> {
    let array = |name: &str| -> Result<Vec<f64>, String> {
        parts
            .arrays
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, v)| v.clone())
            .ok_or_else(|| format!("view data lacks the array {name:?}"))
    };
    let meta = &parts.meta;
    Ok(match meta.get("kind").and_then(Value::as_str) {
        Some("profile") => ViewData::Profile(ProfileData {
            radius_au: array("radius_au")?,
            c_to_o_gas: none_for_nan(&array("c_to_o_gas")?),
            c_to_o_ice: none_for_nan(&array("c_to_o_ice")?),
            c_to_o_solid: none_for_nan(&array("c_to_o_solid")?),
            star_c_to_o: number(meta, "star_c_to_o"),
            snowlines: meta
                .get("snowlines")
                .and_then(Value::as_array)
                .map(|a| {
                    a.iter()
                        .filter_map(|p| {
                            Some((p.get(0)?.as_str()?.to_string(), p.get(1)?.as_f64()?))
                        })
                        .collect()
                })
                .unwrap_or_default(),
            planet_radius_au: number(meta, "planet_radius_au"),
            allowed_formation_radii_au: pairs(meta.get("allowed_formation_radii_au")),
            infeasible_formation_radii_au: pairs(meta.get("infeasible_formation_radii_au")),
        }),
        Some("temperature") => ViewData::Temperature(TemperatureData {
            radius_au: array("radius_au")?,
            midplane_temperature_k: none_for_nan(&array("midplane_temperature_k")?),
            irradiation_temperature_k: none_for_nan(&array("irradiation_temperature_k")?),
            accretion_temperature_k: none_for_nan(&array("accretion_temperature_k")?),
            surface_density_g_cm2: none_for_nan(&array("surface_density_g_cm2")?),
        }),
        Some("abundances") => {
            let labels: Vec<String> = meta
                .get("labels")
                .and_then(Value::as_array)
                .map(|a| {
                    a.iter()
                        .filter_map(|l| l.as_str().map(str::to_string))
                        .collect()
                })
                .unwrap_or_default();
            let mut species = Vec::with_capacity(labels.len());
            for (i, label) in labels.into_iter().enumerate() {
                species.push(SpeciesAbundance {
                    label,
                    gas_per_h: none_for_nan(&array(&format!("gas_{i}"))?),
                    ice_per_h: none_for_nan(&array(&format!("ice_{i}"))?),
                });
            }
            ViewData::Abundances(AbundanceData {
                radius_au: array("radius_au")?,
                species,
            })
        }
        Some(kind @ ("ice_map" | "c_to_o_map")) => {
            let range = pairs(Some(&json!([meta
                .get("value_range")
                .cloned()
                .unwrap_or(Value::Null)])));
            let curves = meta.get("curves").and_then(Value::as_u64).unwrap_or(0) as usize;
            let mut curve_points = Vec::with_capacity(curves);
            for i in 0..curves {
                curve_points.push(
                    array(&format!("curve_{i}"))?
                        .chunks_exact(2)
                        .map(|p| (p[0], p[1]))
                        .collect(),
                );
            }
            let grid = MapGrid::new(
                array("radius_au")?,
                meta.get("rows")
                    .and_then(Value::as_u64)
                    .ok_or("view data lacks rows")? as usize,
                array("z_over_r")?,
                array("scale_height_over_r")?,
                number(meta, "z_over_r_max").ok_or("view data lacks z_over_r_max")?,
            );
            let map = MapData {
                grid: std::sync::Arc::new(grid),
                values: array("values")?,
                value_label: text(meta, "value_label"),
                value_range: *range.first().ok_or("view data lacks value_range")?,
                colour_map: if text(meta, "colour_map") == ColourMap::Cividis.name() {
                    ColourMap::Cividis
                } else {
                    ColourMap::Viridis
                },
                contour_level: number(meta, "contour_level"),
                contour_label: text(meta, "contour_label"),
                curves: curve_points,
                reference_value: meta
                    .get("reference_value")
                    .and_then(|p| Some((p.get(0)?.as_str()?.to_string(), p.get(1)?.as_f64()?))),
            };
            if kind == "c_to_o_map" {
                ViewData::CToOMap(map)
            } else {
                ViewData::IceMap(map)
            }
        }
        other => return Err(format!("unknown view data kind {other:?}")),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::{Model, ModelParameters, Species};

    fn same(a: &ViewData, b: &ViewData) -> bool {
        // NaN != NaN, so compare through the parts, whose JSON and bit patterns are exact.
        let (pa, pb) = (to_parts(a), to_parts(b));
        pa.meta == pb.meta
            && pa.arrays.len() == pb.arrays.len()
            && pa
                .arrays
                .iter()
                .zip(&pb.arrays)
                .all(|((na, va), (nb, vb))| {
                    na == nb
                        && va.len() == vb.len()
                        && va.iter().zip(vb).all(|(x, y)| x.to_bits() == y.to_bits())
                })
    }

    #[test]
    fn every_view_survives_the_round_trip() {
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let mut with_curve = MapData::ice_fraction(&model, Species::CO);
        with_curve.curves = MapData::model_snow_surface(&model, Species::CO);
        assert!(!with_curve.curves.is_empty());
        let views = [
            ViewData::Profile(ProfileData::from_model(&model)),
            ViewData::Temperature(TemperatureData::from_model(&model)),
            ViewData::Abundances(AbundanceData::from_model(&model)),
            ViewData::IceMap(with_curve),
            ViewData::CToOMap(MapData::gas_c_to_o(&model)),
        ];
        for view in &views {
            let back = from_parts(&to_parts(view)).unwrap();
            assert!(same(view, &back), "{:?}", to_parts(view).meta);
        }
        // The C/O map keeps its kind, colour map and the star's mark.
        match from_parts(&to_parts(&views[4])).unwrap() {
            ViewData::CToOMap(m) => {
                assert_eq!(m.colour_map, ColourMap::Cividis);
                assert!(m.reference_value.is_some());
            }
            _ => panic!("the C/O map came back as another view"),
        }
    }

    #[test]
    fn missing_parts_are_named() {
        let parts = ViewParts {
            meta: json!({"kind": "temperature"}),
            arrays: vec![],
        };
        assert!(matches!(from_parts(&parts), Err(message) if message.contains("radius_au")));
    }
}
