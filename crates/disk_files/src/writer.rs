//! The writer: a validated disk file back to JSON, every field resolved
//! (defaults filled in), so an exported file records exactly what was run.

use crate::{DiskFile, SCHEMA};
use nivalis_physics::params::{
    Element, GasMassMeaning, Opacity, TemperatureLaw, VerticalTemperature,
};
use nivalis_physics::Species;
use serde_json::{json, Map, Value};

/// The resolved disk file as a JSON value (keys in the documented order).
pub fn to_value(file: &DiskFile) -> Value {
    let p = &file.parameters;
    let mut offsets = Map::new();
    for (i, e) in Element::ALL.iter().enumerate() {
        offsets.insert(e.symbol().into(), json!(p.star.offset_dex[i]));
    }
    let opacity = match p.disk.opacity {
        Opacity::Constant {
            rosseland_cm2_per_g,
        } => json!({"kind": "constant", "rosseland_cm2_per_g": rosseland_cm2_per_g}),
        Opacity::BellLin1994 => json!({"kind": "bell_lin_1994"}),
    };
    let vertical = match p.disk.vertical_temperature {
        VerticalTemperature::Isothermal => json!({"kind": "isothermal"}),
        VerticalTemperature::TwoLayer {
            superheating,
            transition_scale_heights,
            delta,
        } => json!({
            "kind": "two_layer", "superheating": superheating,
            "transition_scale_heights": transition_scale_heights, "delta": delta
        }),
    };
    let temperature = match p.disk.temperature {
        TemperatureLaw::EnergyBalance => json!({"kind": "energy_balance"}),
        TemperatureLaw::PowerLaw {
            midplane_1au_k,
            midplane_index,
            atmosphere,
        } => {
            let mut m = Map::new();
            m.insert("kind".into(), json!("power_law"));
            m.insert("midplane_1au_k".into(), json!(midplane_1au_k));
            m.insert("midplane_index".into(), json!(midplane_index));
            if let Some((t, q)) = atmosphere {
                m.insert("atmosphere_1au_k".into(), json!(t));
                m.insert("atmosphere_index".into(), json!(q));
            }
            Value::Object(m)
        }
    };
    let mass_key = match p.disk.gas_mass_meaning {
        GasMassMeaning::BetweenEdges => "gas_mass_msun",
        GasMassMeaning::ProfileTotal => "gas_mass_profile_total_msun",
    };
    let mut overrides = Map::new();
    for s in Species::ALL {
        let o = p.ices.overrides[s.index()];
        let mut m = Map::new();
        if let Some(v) = o.binding_energy_k {
            m.insert("binding_energy_k".into(), json!(v));
        }
        if let Some(v) = o.attempt_frequency_s {
            m.insert("attempt_frequency_s".into(), json!(v));
        }
        if let Some(v) = o.photodesorption_yield {
            m.insert("photodesorption_yield".into(), json!(v));
        }
        if let Some(v) = o.condensation_temperature_k {
            m.insert("condensation_temperature_k".into(), json!(v));
        }
        if !m.is_empty() {
            overrides.insert(s.key().into(), Value::Object(m));
        }
    }
    let c = &p.composition;
    let e = &p.disk.early_phase;
    let mut value = json!({
        "schema": SCHEMA,
        "name": file.name,
        "notes": file.notes,
        "star": {
            "mass_msun": p.star.mass_msun,
            "luminosity_lsun": p.star.luminosity_lsun,
            "effective_temperature_k": p.star.effective_temperature_k,
            "fuv_1au_habing": p.star.fuv_1au_habing,
            "abundances": {"reference": p.star.abundance_reference.key(), "offset_dex": offsets}
        },
        "disk": {
            "gas_mass_msun": p.disk.gas_mass_msun,
            "gas_mass_profile_total_msun": p.disk.gas_mass_msun,
            "characteristic_radius_au": p.disk.characteristic_radius_au,
            "surface_density_index": p.disk.surface_density_index,
            "inner_radius_au": p.disk.inner_radius_au,
            "outer_radius_au": p.disk.outer_radius_au,
            "accretion_rate_msun_per_yr": p.disk.accretion_rate_msun_per_yr,
            "flaring_angle": p.disk.flaring_angle,
            "self_consistent_flaring": p.disk.self_consistent_flaring,
            "opacity": opacity,
            "vertical_temperature": vertical,
            "temperature": temperature,
            "early_phase": {
                "accretion_rate_msun_per_yr": e.accretion_rate_msun_per_yr,
                "luminosity_lsun": e.luminosity_lsun,
                "surface_density_scale": e.surface_density_scale
            },
            "background_temperature_k": p.disk.background_temperature_k,
            "dust_to_gas": p.disk.dust_to_gas,
            "grain_radius_um": p.disk.grain_radius_um,
            "grain_density_g_cm3": p.disk.grain_density_g_cm3,
            "cosmic_ray_rate_s": p.disk.cosmic_ray_rate_s,
            "interstellar_fuv_habing": p.disk.interstellar_fuv_habing,
            "age_myr": p.disk.age_myr,
            "midplane_temperature_scale": p.disk.midplane_temperature_scale
        },
        "ices": {
            "desorption": p.ices.desorption.key(),
            "sticking": p.ices.sticking,
            "photodesorption": p.ices.photodesorption,
            "cosmic_ray_desorption": p.ices.cosmic_ray_desorption,
            "binding_energies": p.ices.binding_energy_set.key(),
            "initial_state": p.ices.initial_state.key(),
            "species_overrides": overrides
        },
        "composition": {
            "carbon": {"CO": c.carbon.co, "CO2": c.carbon.co2, "CH4": c.carbon.ch4, "CH3OH": c.carbon.ch3oh, "HCN": c.carbon.hcn, "refractory": c.carbon.refractory},
            "nitrogen": {"N2": c.nitrogen.n2, "NH3": c.nitrogen.nh3},
            "sulfur": {"H2S": c.sulfur.h2s, "refractory": c.sulfur.refractory},
            "oxygen_per_silicon": c.oxygen_per_silicon,
            "soot_line_k": c.soot_line_k,
            "soot_line": c.soot_line.key(),
            "sulfide_release_k": c.sulfide_release_k,
            "silicate_sublimation_k": c.silicate_sublimation_k
        },
        "grid": {
            "radial_cells": p.grid.radial_cells,
            "vertical_cells": p.grid.vertical_cells,
            "max_height_scale_heights": p.grid.max_height_scale_heights
        }
    });
    // Exactly one of the two gas-mass fields, the one this file means.
    let other = if mass_key == "gas_mass_msun" {
        "gas_mass_profile_total_msun"
    } else {
        "gas_mass_msun"
    };
    if let Some(disk) = value.get_mut("disk").and_then(Value::as_object_mut) {
        disk.shift_remove(other);
    }
    if let (Some(e), Some(m)) = (&file.evolution, value.as_object_mut()) {
        m.insert("evolution".into(), crate::evolution_to_value(e));
    }
    if let (Some(u), Some(m)) = (&file.uncertainty, value.as_object_mut()) {
        m.insert("uncertainty".into(), u.clone());
    }
    value
}

/// The resolved disk file as pretty-printed JSON text with a final newline.
pub fn to_json_string(file: &DiskFile) -> String {
    // Invariant: a serde_json::Value built from finite numbers always serialises.
    let mut s = serde_json::to_string_pretty(&to_value(file)).expect("JSON value serialises");
    s.push('\n');
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parse_disk_json;

    #[test]
    fn resolved_file_reads_back_identically() {
        let text = r#"{"name": "x", "disk": {"opacity": {"kind": "bell_lin_1994"}, "vertical_temperature": {"kind": "isothermal"}},
            "ices": {"species_overrides": {"CO": {"binding_energy_k": 1000}}}, "composition": {"sulfur": {"H2S": 1}}}"#;
        let f = parse_disk_json(text).unwrap();
        let again = parse_disk_json(&to_json_string(&f)).unwrap();
        assert_eq!(f, again);
        // The new fields: observed temperature law, early phase, soot line, the profile-total mass.
        let text = r#"{"disk": {"gas_mass_profile_total_msun": 0.02, "temperature": {"kind": "power_law", "midplane_1au_k": 150,
            "midplane_index": 0.5, "atmosphere_1au_k": 500, "atmosphere_index": 0.4}, "early_phase": {"luminosity_lsun": 7}},
            "composition": {"soot_line": "reversible"}}"#;
        let f = parse_disk_json(text).unwrap();
        let written = to_json_string(&f);
        assert!(
            written.contains("gas_mass_profile_total_msun")
                && !written.contains("\"gas_mass_msun\""),
            "{written}"
        );
        assert_eq!(f, parse_disk_json(&written).unwrap());
        let d = to_json_string(&parse_disk_json("{}").unwrap());
        assert!(
            d.contains("\"gas_mass_msun\"") && !d.contains("gas_mass_profile_total_msun"),
            "{d}"
        );
    }

    /// The fuzz target's three crash inputs (issue 15 item 3) and 17-digit
    /// values: a number read, written and read again keeps every bit. Correct
    /// rounding is IEEE 754 / the shortest-round-trip rule of Steele & White
    /// 1990 and Ryu (Adams 2018), which serde_json's `float_roundtrip` implements.
    #[test]
    fn numbers_round_trip_to_the_bit() {
        for (text, expected) in [
            ("1.333e51", 1.333e51),
            ("1.3792569329517467e-11", 1.3792569329517467e-11),
            ("888888888888888888888881.0e-8", 8888888888888889.0),
            ("0.30000000000000004", 0.30000000000000004),
            ("2.2250738585072014e-308", 2.2250738585072014e-308),
            ("1.7976931348623157e308", 1.7976931348623157e308),
            ("0.1234567890123456789", 0.12345678901234568),
        ] {
            let x: f64 = text.parse().unwrap();
            assert_eq!(
                x.to_bits(),
                f64::to_bits(expected),
                "{text}: Rust's own parser disagrees with the literal"
            );
            // The JSON reader itself (what every front end uses).
            let v: Value = serde_json::from_str(text).unwrap();
            assert_eq!(
                v.as_f64().unwrap().to_bits(),
                x.to_bits(),
                "{text} read 1 ulp off"
            );
            let back: Value = serde_json::from_str(&v.to_string()).unwrap();
            assert_eq!(back, v, "{text} changed on the round trip");
        }
        // Through a disk file, at values the field ranges accept.
        for text in [
            "1.3792569329517467",
            "0.30000000000000004",
            "1.3330000000000001",
            "8.88888888888888888888881",
            "1.333",
        ] {
            let x: f64 = text.parse().unwrap();
            let f = parse_disk_json(&format!(r#"{{"disk": {{"age_myr": {text}}}}}"#)).unwrap();
            assert_eq!(
                f.parameters.disk.age_myr.to_bits(),
                x.to_bits(),
                "{text} read 1 ulp off"
            );
            let again = parse_disk_json(&to_json_string(&f)).unwrap();
            assert_eq!(
                again.parameters.disk.age_myr.to_bits(),
                x.to_bits(),
                "{text} changed on the round trip"
            );
            assert_eq!(to_json_string(&again), to_json_string(&f));
        }
    }
}
