//! The methods a configuration uses, each with the keys of its references in
//! `nivalis_physics::references`. Only what the configuration actually uses is
//! listed, so no reference is cited that the run did not use.

use nivalis_physics::balance::species_properties;
use nivalis_physics::params::{DesorptionModel, ModelParameters, Opacity, VerticalTemperature};
use nivalis_physics::references::reference;
use nivalis_physics::species::SpeciesTable;
use serde_json::{json, Value};

/// One method of the run.
#[derive(Debug, Clone, PartialEq)]
pub struct MethodEntry {
    /// What it computes, e.g. "surface density".
    pub topic: &'static str,
    /// The method and its parameter values, one sentence.
    pub text: String,
    /// Reference keys (publications only).
    pub references: Vec<&'static str>,
}

fn entry(topic: &'static str, text: String, references: &[&'static str]) -> MethodEntry {
    MethodEntry {
        topic,
        text,
        references: references.to_vec(),
    }
}

/// The methods used by a configuration, in the order of the model.
pub fn methods(p: &ModelParameters) -> Vec<MethodEntry> {
    let d = &p.disk;
    let mut out = vec![
        entry(
            "stellar abundances",
            format!(
                "stellar abundances per H from {} photospheric values with offsets [dex] C {:+}, O {:+}, N {:+}, S {:+}, Si {:+}, Mg {:+}, Fe {:+}",
                p.star.abundance_reference.key(),
                p.star.offset_dex[0], p.star.offset_dex[1], p.star.offset_dex[2], p.star.offset_dex[3],
                p.star.offset_dex[4], p.star.offset_dex[5], p.star.offset_dex[6]
            ),
            &[p.star.abundance_reference.key()],
        ),
        entry(
            "surface density",
            format!(
                "self-similar viscous-disk surface density, gas mass {} Msun, R_c = {} au, gamma = {}",
                d.gas_mass_msun, d.characteristic_radius_au, d.surface_density_index
            ),
            &["lynden-bell1974", "hartmann1998", "andrews2009"],
        ),
    ];
    if d.self_consistent_flaring {
        out.push(entry(
            "irradiation",
            "passive irradiation with the grazing angle solved self-consistently, phi = 0.4 R*/r + r d(h/r)/dr with h = 4 H".into(),
            &["chiang1997"],
        ));
    } else {
        out.push(entry(
            "irradiation",
            format!(
                "passive irradiation with a fixed flaring angle phi = {}",
                d.flaring_angle
            ),
            &["chiang1997", "dullemond2001"],
        ));
    }
    if d.accretion_rate_msun_per_yr > 0.0 {
        let (text, refs): (String, Vec<&'static str>) = match d.opacity {
            Opacity::Constant { rosseland_cm2_per_g } => (
                format!("viscous heating for Mdot = {:e} Msun/yr, grey midplane with constant kappa_R = {} cm2/g", d.accretion_rate_msun_per_yr, rosseland_cm2_per_g),
                vec!["shakura1973", "pringle1981"],
            ),
            Opacity::BellLin1994 => (
                format!("viscous heating for Mdot = {:e} Msun/yr, grey midplane with the Bell & Lin 1994 opacities", d.accretion_rate_msun_per_yr),
                vec!["shakura1973", "pringle1981", "bell1994"],
            ),
        };
        out.push(MethodEntry {
            topic: "accretion heating",
            text,
            references: refs,
        });
    }
    match d.vertical_temperature {
        VerticalTemperature::Isothermal => {
            out.push(entry("vertical structure", "vertically isothermal columns in hydrostatic equilibrium in the full stellar gravity, mu = 2.37".into(), &["kauffmann2008"]))
        }
        VerticalTemperature::TwoLayer { superheating, transition_scale_heights, delta } => out.push(entry(
            "vertical structure",
            format!(
                "two-layer vertical temperature (z_q = {transition_scale_heights} H, delta = {delta}, superheated surface factor {superheating}), hydrostatic density in the full stellar gravity, mu = 2.37"
            ),
            &["dartois2003", "williams2014", "chiang1997", "kauffmann2008"],
        )),
    }
    let mut radiation = vec!["bohlin1978", "habing1968", "umebayashi1981"];
    if p.ices.photodesorption {
        radiation.extend(["prasad1983", "shen2004"]);
    }
    out.push(MethodEntry {
        topic: "radiation",
        text: format!(
            "1+1D radiation: A_V = N_H/1.87e21 cm-2, stellar FUV {:e} G0 at 1 au entering at the grazing angle, interstellar FUV {} G0, cosmic rays zeta = {:e} s-1 attenuated over 96 g cm-2 from both sides{}",
            p.star.fuv_1au_habing,
            d.interstellar_fuv_habing,
            d.cosmic_ray_rate_s,
            if p.ices.photodesorption { ", cosmic-ray induced UV photons" } else { "" }
        ),
        references: radiation,
    });
    let table = SpeciesTable::built_in();
    let props = species_properties(p, &table);
    match p.ices.desorption {
        DesorptionModel::FixedTemperature => {
            let mut refs: Vec<&'static str> = table
                .entries
                .iter()
                .map(|e| e.condensation_source)
                .filter(|k| reference(k).is_some())
                .collect();
            refs.sort();
            refs.dedup();
            let overridden = p
                .ices
                .overrides
                .iter()
                .any(|o| o.condensation_temperature_k.is_some());
            out.push(MethodEntry {
                topic: "ices",
                text: format!(
                    "step model: each species is ice below a fixed condensation temperature{}",
                    if overridden {
                        " (some temperatures set by the user)"
                    } else {
                        ""
                    }
                ),
                references: refs,
            });
        }
        model => {
            let mut refs: Vec<&'static str> = vec!["hasegawa1992"];
            if p.ices.cosmic_ray_desorption {
                refs.push("hasegawa1993");
            }
            for prop in &props {
                if reference(prop.binding_energy_source).is_some() {
                    refs.push(prop.binding_energy_source);
                }
            }
            if p.ices.photodesorption {
                for (e, s) in table.entries.iter().zip(p.ices.overrides.iter()) {
                    if s.photodesorption_yield.is_none() && reference(e.yield_source).is_some() {
                        refs.push(e.yield_source);
                    }
                }
            }
            let mut seen = Vec::new();
            refs.retain(|k| {
                if seen.contains(k) {
                    false
                } else {
                    seen.push(*k);
                    true
                }
            });
            out.push(MethodEntry {
                topic: "ices",
                text: format!(
                    "{} desorption balance of independent pure ices with adsorption (sticking {}), thermal desorption with the Hasegawa-Herbst-Leung frequency{}{}; binding energies: set {}{}; grains a = {} um, rho = {} g cm-3, dust-to-gas {}",
                    if model == DesorptionModel::ZerothOrder { "zeroth-order (multilayer)" } else { "first-order" },
                    p.ices.sticking,
                    if p.ices.cosmic_ray_desorption { ", cosmic-ray desorption" } else { "" },
                    if p.ices.photodesorption { ", photodesorption" } else { "" },
                    p.ices.binding_energy_set.key(),
                    if props.iter().any(|s| s.binding_energy_source == "override") { " with user overrides" } else { "" },
                    d.grain_radius_um,
                    d.grain_density_g_cm3,
                    d.dust_to_gas
                ),
                references: refs,
            });
        }
    }
    let c = &p.composition;
    out.push(entry(
        "element budget",
        format!(
            "carbon fractions CO {}, CO2 {}, CH4 {}, CH3OH {}, HCN {}, refractory {}; nitrogen after HCN: N2 {}, NH3 {}; sulfur: H2S {}, refractory {}; {} O per Si in silicates; water takes the oxygen left; refractory carbon released at {} K, sulfide at {} K, silicates at {} K",
            c.carbon.co, c.carbon.co2, c.carbon.ch4, c.carbon.ch3oh, c.carbon.hcn, c.carbon.refractory,
            c.nitrogen.n2, c.nitrogen.nh3, c.sulfur.h2s, c.sulfur.refractory, c.oxygen_per_silicon,
            c.soot_line_k, c.sulfide_release_k, c.silicate_sublimation_k
        ),
        &["oberg2011", "bergin2015", "li2021", "lodders2003"],
    ));
    out
}

/// Methods as JSON objects.
pub fn to_json(methods: &[MethodEntry]) -> Value {
    Value::Array(
        methods
            .iter()
            .map(|m| json!({"topic": m.topic, "method": m.text, "references": m.references}))
            .collect(),
    )
}

/// Every reference key the methods cite, once each, in order of first use.
pub fn cited_keys(methods: &[MethodEntry]) -> Vec<&'static str> {
    let mut keys = Vec::new();
    for m in methods {
        for k in &m.references {
            if !keys.contains(k) {
                keys.push(*k);
            }
        }
    }
    keys
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_cited_key_is_a_publication() {
        let mut p = ModelParameters::defaults();
        for desorption in [
            DesorptionModel::ZerothOrder,
            DesorptionModel::FixedTemperature,
        ] {
            p.ices.desorption = desorption;
            for k in cited_keys(&methods(&p)) {
                assert!(reference(k).is_some(), "{k}");
            }
        }
    }

    #[test]
    fn unused_methods_are_not_cited() {
        let mut p = ModelParameters::defaults();
        p.disk.accretion_rate_msun_per_yr = 0.0;
        p.ices.cosmic_ray_desorption = false;
        let keys = cited_keys(&methods(&p));
        assert!(
            !keys.contains(&"shakura1973")
                && !keys.contains(&"bell1994")
                && !keys.contains(&"hasegawa1993"),
            "{keys:?}"
        );
    }
}
