//! Hover readouts: the data under the pointer, as one line of text. The chart's
//! [`ChartLayout`] turns the pixel into data coordinates (which panel, which
//! radius and height); this module looks the nearest grid point up in the
//! same data the chart was drawn from. Shared by every front end (the page
//! forwards its pointer here), so the CLI and the Python module can give the
//! same text for a point of a figure.

use crate::{AbundanceData, ChartLayout, MapData, ProfileData, TemperatureData};
use nivalis_physics::planet::ChiSquareMap;

/// The views' input data, built once per model and shared by drawing and readouts.
#[derive(Debug, Clone, PartialEq)]
pub enum ViewData {
    /// (a) C/O profile.
    Profile(ProfileData),
    /// (b) Midplane temperature and surface density.
    Temperature(TemperatureData),
    /// (c) The r-z map of one species' ice fraction.
    IceMap(MapData),
    /// (d) The r-z map of the gas C/O.
    CToOMap(MapData),
    /// (e) Abundances.
    Abundances(AbundanceData),
}

/// A number with `n` significant digits, in exponent form when very large or small.
pub fn format_sig(x: f64, n: usize) -> String {
    if !x.is_finite() {
        return "undefined".to_string();
    }
    if x == 0.0 {
        return "0".to_string();
    }
    // The magnitude after rounding to n digits, so 0.99996 shows as 1.00, not 1.000.
    let rounded: f64 = format!("{:.*e}", n.saturating_sub(1), x)
        .parse()
        .unwrap_or(x);
    let magnitude = rounded.abs().log10().floor() as i32;
    if !(-3..=4).contains(&magnitude) {
        let s = format!("{:.*e}", n.saturating_sub(1), x);
        // Rust writes 1.2e-5; keep that compact form.
        return s;
    }
    let decimals = (n as i32 - 1 - magnitude).max(0) as usize;
    format!("{x:.decimals$}")
}

fn optional(x: Option<f64>, n: usize) -> String {
    x.map_or_else(|| "undefined".to_string(), |v| format_sig(v, n))
}

/// Index of the radius nearest `r` in log distance (radii increasing and positive).
pub fn nearest_radius(radii: &[f64], r: f64) -> Option<usize> {
    if radii.is_empty() || !(r > 0.0) {
        return None;
    }
    let i = radii.partition_point(|&x| x < r);
    Some(match i {
        0 => 0,
        i if i >= radii.len() => radii.len() - 1,
        i => {
            if (r / radii[i - 1]).ln() <= (radii[i] / r).ln() {
                i - 1
            } else {
                i
            }
        }
    })
}

/// The readout at backend pixel (`px`, `py`) of a chart drawn from `data` with `layout`;
/// `None` outside every plotting area.
pub fn readout(data: &ViewData, layout: &ChartLayout, px: f64, py: f64) -> Option<String> {
    let (panel, x, y) = layout.panel_at(px, py)?;
    if panel.name == "colour_bar" {
        let label = &panel.y.label;
        return Some(format!("colour bar: {label} {}", format_sig(y, 3)));
    }
    match data {
        ViewData::Profile(d) => {
            let j = nearest_radius(&d.radius_au, x)?;
            let mut text = format!(
                "r = {} au: C/O gas {}, ice {}, all solids {}",
                format_sig(d.radius_au[j], 3),
                optional(d.c_to_o_gas[j], 3),
                optional(d.c_to_o_ice[j], 3),
                optional(d.c_to_o_solid[j], 3)
            );
            if let Some(star) = d.star_c_to_o {
                text.push_str(&format!(" (star {})", format_sig(star, 3)));
            }
            // The snowline nearest the pointer in log r, when it is within a tenth of a decade.
            let near = d
                .snowlines
                .iter()
                .map(|(label, r)| (label, r, (r / x).log10().abs()))
                .filter(|(_, _, d)| *d < 0.1)
                .min_by(|a, b| a.2.total_cmp(&b.2));
            if let Some((label, r, _)) = near {
                text.push_str(&format!("; {label} snowline at {} au", format_sig(*r, 3)));
            }
            Some(text)
        }
        ViewData::Temperature(d) => {
            let j = nearest_radius(&d.radius_au, x)?;
            Some(format!(
                "r = {} au: midplane T {} K (irradiation {} K, accretion {} K), surface density {} g/cm²",
                format_sig(d.radius_au[j], 3),
                optional(d.midplane_temperature_k[j], 3),
                optional(d.irradiation_temperature_k[j], 3),
                optional(d.accretion_temperature_k[j], 3),
                optional(d.surface_density_g_cm2[j], 3)
            ))
        }
        ViewData::Abundances(d) => {
            let j = nearest_radius(&d.radius_au, x)?;
            let gas = panel.name != "ice_abundance";
            let values: Vec<String> = d
                .species
                .iter()
                .map(|s| {
                    let v = if gas { s.gas_per_h[j] } else { s.ice_per_h[j] };
                    format!(
                        "{} {}",
                        s.label,
                        v.map_or_else(|| "0".to_string(), |v| format_sig(v, 2))
                    )
                })
                .collect();
            Some(format!(
                "r = {} au, {} per H: {}",
                format_sig(d.radius_au[j], 3),
                if gas { "gas" } else { "ice" },
                values.join(", ")
            ))
        }
        ViewData::IceMap(d) | ViewData::CToOMap(d) => {
            let j = nearest_radius(d.radius_au(), x)?;
            let column = &d.z_over_r()[j * d.rows()..(j + 1) * d.rows()];
            let column_top = column.last().copied().unwrap_or(0.0);
            if y > column_top * 1.02 {
                return Some(format!(
                    "r = {} au, z/r = {}: above the model grid",
                    format_sig(d.radius_au()[j], 3),
                    format_sig(y, 3)
                ));
            }
            // Nearest sample in z/r (increasing within a column).
            let k = column.partition_point(|&z| z < y).min(d.rows() - 1);
            let k = if k > 0 && (y - column[k - 1]).abs() <= (column[k] - y).abs() {
                k - 1
            } else {
                k
            };
            let v = d.values[j * d.rows() + k];
            let mut text = format!(
                "r = {} au, z/r = {}: {} {}",
                format_sig(d.radius_au()[j], 3),
                format_sig(column[k], 3),
                d.value_label,
                if v.is_nan() {
                    "undefined".to_string()
                } else {
                    format_sig(v, 3)
                }
            );
            if let Some(h) = d.scale_height_over_r().get(j).filter(|h| **h > 0.0) {
                text.push_str(&format!(" (z = {} H)", format_sig(column[k] / h, 2)));
            }
            Some(text)
        }
    }
}

/// The readout at backend pixel (`px`, `py`) of the chi-square map of `map`
/// drawn with `layout` ([`crate::draw_chi2_map`] of [`crate::Chi2Data::from_map`]):
/// the nearest place's envelope C/O, [C/H], [O/H] and Δχ² with its confidence
/// region; `None` outside every plotting area.
pub fn chi2_readout(map: &ChiSquareMap, layout: &ChartLayout, px: f64, py: f64) -> Option<String> {
    let (panel, r, q) = layout.panel_at(px, py)?;
    if panel.name == "colour_bar" {
        return Some(format!(
            "colour bar: {} {}",
            panel.y.label,
            format_sig(q, 3)
        ));
    }
    let j = nearest_radius(&map.radius_au, r)?;
    let k = nearest_radius(&map.solid_to_gas, q)?;
    let row = map.rows.get(j * map.solid_to_gas.len() + k)?;
    let region = if row.within_1sigma {
        "inside 1σ"
    } else if row.within_2sigma {
        "inside 2σ"
    } else {
        "outside 2σ"
    };
    Some(format!(
        "r = {} au, solid-to-gas {}: envelope C/O {}, [C/H] {}, [O/H] {}; Δχ² {} ({region})",
        format_sig(row.radius_au, 3),
        format_sig(row.solid_to_gas, 2),
        optional(row.c_to_o, 3),
        optional(row.c_to_h_dex, 3),
        optional(row.o_to_h_dex, 3),
        optional(row.delta_chi2, 3)
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::{Model, ModelParameters, Species};

    #[test]
    fn numbers_keep_three_significant_digits() {
        assert_eq!(format_sig(1.23456, 3), "1.23");
        assert_eq!(format_sig(0.0123456, 3), "0.0123");
        assert_eq!(format_sig(123.456, 3), "123");
        assert_eq!(format_sig(1.234e-5, 3), "1.23e-5");
        assert_eq!(format_sig(0.99996, 3), "1.00");
        assert_eq!(format_sig(f64::NAN, 3), "undefined");
    }

    #[test]
    fn nearest_radius_in_log_distance() {
        let r = [1.0, 10.0, 100.0];
        assert_eq!(nearest_radius(&r, 3.0), Some(0));
        assert_eq!(nearest_radius(&r, 3.2), Some(1));
        assert_eq!(nearest_radius(&r, 1000.0), Some(2));
        assert_eq!(nearest_radius(&r, 0.0), None);
    }

    #[test]
    fn map_readout_names_the_cell_value() {
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let map = MapData::ice_fraction(&model, Species::H2O);
        // A hand-made layout: the map spans 100 x 100 px.
        let layout = ChartLayout {
            panels: vec![crate::PanelLayout {
                name: "map",
                left: 0,
                top: 0,
                width: 100,
                height: 100,
                x: crate::AxisTransform::new(
                    map.radius_au()[0],
                    *map.radius_au().last().unwrap(),
                    crate::Scale::Log10,
                    "r [au]",
                ),
                y: crate::AxisTransform::new(0.0, map.z_over_r_max(), crate::Scale::Linear, "z/r"),
            }],
        };
        // 62 % of the way along 0.1..500 au (log) is about 20 au, on the midplane,
        // where water is frozen (common practice: the water snowline lies at a few au).
        let text = readout(&ViewData::IceMap(map), &layout, 62.0, 99.9).unwrap();
        assert!(
            text.starts_with("r = 19.") && text.contains("z/r = 0: H₂O ice fraction 1.00"),
            "{text}"
        );
        assert_eq!(
            readout(
                &ViewData::Profile(crate::ProfileData::from_model(&model)),
                &layout,
                200.0,
                50.0
            ),
            None
        );
    }
}
