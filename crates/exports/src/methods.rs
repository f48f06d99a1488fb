//! The methods a configuration uses, each with the keys of its references in
//! `nivalis_physics::references`. Only what the configuration actually uses is
//! listed, so no reference is cited that the run did not use.

use nivalis_physics::balance::species_properties;
use nivalis_physics::params::{
    default_flaring_angle, DesorptionModel, GasMassMeaning, InitialIceState, ModelParameters,
    Opacity, SootLine, TemperatureLaw, VerticalTemperature,
};
use nivalis_physics::references::reference;
use nivalis_physics::species::SpeciesTable;
use nivalis_physics::BindingEnergySet;
use serde_json::{json, Value};

/// One method of the run.
#[derive(Debug, Clone, PartialEq)]
pub struct MethodEntry {
    /// What it computes, e.g. "surface density".
    pub topic: &'static str,
    /// The method and its parameter values as one clause of plain prose
    /// (sets and references named in words, never by internal key); the
    /// methods paragraph capitalises it and appends the citations.
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
            if p.star.offset_dex.iter().all(|&x| x == 0.0) {
                "the stellar abundances per H nucleus are the solar photospheric values".to_string()
            } else {
                format!(
                    "the stellar abundances per H nucleus are the solar photospheric values shifted for this star by {:+} dex in C, {:+} in O, {:+} in N, {:+} in S, {:+} in Si, {:+} in Mg and {:+} in Fe",
                    p.star.offset_dex[0], p.star.offset_dex[1], p.star.offset_dex[2], p.star.offset_dex[3],
                    p.star.offset_dex[4], p.star.offset_dex[5], p.star.offset_dex[6]
                )
            },
            &[p.star.abundance_reference.key()],
        ),
        entry(
            "surface density",
            format!(
                "the gas surface density is the self-similar viscous-disk profile with a gas mass of {} M☉ {}, characteristic radius R_c = {} au and index γ = {}",
                d.gas_mass_msun,
                match d.gas_mass_meaning {
                    GasMassMeaning::BetweenEdges => format!("between {} and {} au", d.inner_radius_au, d.outer_radius_au),
                    GasMassMeaning::ProfileTotal => "in the whole profile (the disk between its edges holds less)".to_string(),
                },
                d.characteristic_radius_au,
                d.surface_density_index
            ),
            &["lynden-bell1974", "hartmann1998", "andrews2009"],
        ),
    ];
    if let TemperatureLaw::PowerLaw {
        midplane_1au_k,
        midplane_index,
        atmosphere,
    } = d.temperature
    {
        out.push(entry(
            "midplane temperature",
            format!(
                "observed power-law midplane temperature T = {midplane_1au_k} K (r/1 au)^-{midplane_index}, floored at {} K{}",
                d.background_temperature_k,
                match atmosphere {
                    Some((t, q)) => format!(", atmosphere T = {t} K (r/1 au)^-{q}"),
                    None => String::new(),
                }
            ),
            &["andrews2005", "dartois2003"],
        ));
    } else if d.self_consistent_flaring {
        out.push(entry(
            "irradiation",
            "starlight heats the disk at a grazing angle solved self-consistently, φ = 0.4 R*/r + r d(h/r)/dr with the absorbing surface at h = 4 H".into(),
            &["chiang1997"],
        ));
    } else {
        if d.flaring_angle == default_flaring_angle(p.star.luminosity_lsun) {
            out.push(entry(
                "irradiation",
                format!(
                    "starlight heats the disk at a fixed flaring angle φ = {}, the default for the star's luminosity, φ = 0.02 (L*/L☉)^(−1/3), calibrated on the midplane temperature law of Huang et al. 2018 and Dullemond et al. 2018 and on the observed CO snowlines of a T Tauri and a Herbig Ae disk",
                    d.flaring_angle
                ),
                &["chiang1997", "dullemond2001", "huang2018", "dullemond2018", "qi2013", "zhang2017", "qi2015"],
            ));
        } else {
            out.push(entry(
                "irradiation",
                format!(
                    "starlight heats the disk at a fixed flaring angle φ = {}",
                    d.flaring_angle
                ),
                &["chiang1997", "dullemond2001"],
            ));
        }
    }
    let energy_balance = d.temperature == TemperatureLaw::EnergyBalance;
    if energy_balance && d.accretion_rate_msun_per_yr > 0.0 {
        let (text, refs): (String, Vec<&'static str>) = match d.opacity {
            Opacity::Constant { rosseland_cm2_per_g } => (
                format!(
                    "viscous heating for an accretion rate of {:e} M☉/yr adds to it in a grey midplane with a constant Rosseland mean opacity of {} cm² per gram of gas",
                    d.accretion_rate_msun_per_yr, rosseland_cm2_per_g
                ),
                vec!["shakura1973", "pringle1981"],
            ),
            Opacity::BellLin1994 => (
                format!(
                    "viscous heating for an accretion rate of {:e} M☉/yr adds to it in a grey midplane with piecewise power-law Rosseland mean opacities",
                    d.accretion_rate_msun_per_yr
                ),
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
            out.push(entry(
                "vertical structure",
                "each column is vertically isothermal and in hydrostatic equilibrium in the full stellar gravity, with a mean molecular weight of 2.37".into(),
                &["kauffmann2008"],
            ))
        }
        VerticalTemperature::TwoLayer { superheating, transition_scale_heights, delta } => out.push(entry(
            "vertical structure",
            format!(
                "the vertical temperature has two layers, with the transition at z_q = {transition_scale_heights} H, exponent δ = {delta} and the surface layer superheated by a factor {superheating}, and the density is hydrostatic in the full stellar gravity with a mean molecular weight of 2.37"
            ),
            &["dartois2003", "williams2014", "chiang1997", "kauffmann2008"],
        )),
    }
    let mut radiation = vec![
        "bohlin1978",
        "vandehulst1957",
        "bohren1983",
        "habing1968",
        "umebayashi1981",
    ];
    if p.ices.photodesorption {
        radiation.extend(["prasad1983", "shen2004"]);
    }
    out.push(MethodEntry {
        topic: "radiation",
        text: format!(
            "radiation is followed in 1+1D vertical columns, with the visual extinction per hydrogen nucleus of the dust actually present, A_V/N_H = 1.086 Q_ext π a² n_gr/n_H with the extinction efficiency Q_ext = min(2, 2x/x_c), x = 2π a/0.55 µm and x_c = 2.717 chosen so that interstellar dust gives N_H/A_V = 1.87e21 cm⁻² (here N_H/A_V = {:.4e} cm⁻²), a stellar FUV field of {:e} G0 at 1 au entering at the grazing angle, an interstellar FUV field of {} G0 from above, and cosmic rays of rate ζ = {:e} s⁻¹ attenuated over 96 g cm⁻² from both sides{}",
            1.0 / nivalis_physics::structure::visual_extinction_per_hydrogen_mag_cm2(
                d.dust_to_gas,
                d.grain_radius_um * nivalis_physics::units::MICRON_CM,
                d.grain_density_g_cm3
            ),
            p.star.fuv_1au_habing,
            d.interstellar_fuv_habing,
            d.cosmic_ray_rate_s,
            if p.ices.photodesorption { ", which also induce UV photons" } else { "" }
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
                    "the ices follow the step model, in which each species is ice below a fixed condensation temperature{}",
                    if overridden { ", some of them set by the user" } else { "" }
                ),
                references: refs,
            });
        }
        model => {
            let mut refs: Vec<&'static str> = Vec::new();
            if p.ices.cosmic_ray_desorption {
                refs.push("hasegawa1993");
            }
            for prop in &props {
                if reference(prop.frequency_source).is_some() {
                    refs.push(prop.frequency_source);
                }
            }
            if p.ices.binding_energy_set == BindingEnergySet::TransitionState {
                refs.push("minissale2022");
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
                    "each volatile is an independent pure ice in {} desorption balance: adsorption with a sticking coefficient of {}, thermal desorption{}{}, with binding energies and the attempt frequencies they were measured with taken as pairs from the {}{}; the freeze-out/desorption rate equation is integrated in closed form over the disk age of {} Myr starting from {}; the grains have a radius of {} µm and a density of {} g cm⁻³ at a dust-to-gas mass ratio of {}",
                    if model == DesorptionModel::ZerothOrder { "zeroth-order (multilayer)" } else { "first-order" },
                    p.ices.sticking,
                    if p.ices.cosmic_ray_desorption { ", cosmic-ray induced desorption" } else { "" },
                    if p.ices.photodesorption { " and photodesorption" } else { "" },
                    set_description(p.ices.binding_energy_set),
                    if props.iter().any(|s| s.binding_energy_source == "override" || s.frequency_source == "override") { ", some of them set by the user" } else { "" },
                    d.age_myr,
                    match p.ices.initial_state {
                        InitialIceState::Inherited => "inherited ices (every volatile frozen at the start)",
                        InitialIceState::Gas => "every volatile in the gas",
                        InitialIceState::Equilibrium => "the equilibrium, its long-time limit (the age then only flags slow cells)",
                    },
                    d.grain_radius_um,
                    d.grain_density_g_cm3,
                    d.dust_to_gas
                ),
                references: refs,
            });
        }
    }
    let c = &p.composition;
    if c.soot_line == SootLine::Irreversible {
        let e = &d.early_phase;
        out.push(entry(
            "soot line",
            format!(
                "the soot line is irreversible: refractory carbon stays in the gas inside the furthest radius where the midplane reached {3} K during a hot early phase with an accretion rate of {0:e} M☉/yr, a luminosity of {1:.4} L☉ including the accretion luminosity 0.8 G M* Ṁ/R*, and {2} times today's surface density",
                e.accretion_rate_msun_per_yr, e.luminosity_lsun, e.surface_density_scale, c.soot_line_k
            ),
            &["li2021", "dunham2014", "gullbring1998", "pringle1981"],
        ));
    }
    out.push(entry(
        "element budget",
        format!(
            "the carbon is carried as CO {}, CO2 {}, CH4 {}, CH3OH {}, HCN {} and refractory carbon {} (fractions of all carbon), the nitrogen left after HCN as N2 {} and NH3 {}, and the sulfur as H2S {} and refractory sulfide {}; silicates hold {} O per Si and water takes the oxygen left; refractory carbon is released to the gas at {} K, sulfide at {} K and silicates at {} K",
            c.carbon.co, c.carbon.co2, c.carbon.ch4, c.carbon.ch3oh, c.carbon.hcn, c.carbon.refractory,
            c.nitrogen.n2, c.nitrogen.nh3, c.sulfur.h2s, c.sulfur.refractory, c.oxygen_per_silicon,
            c.soot_line_k, c.sulfide_release_k, c.silicate_sublimation_k
        ),
        &["oberg2011", "bergin2015", "li2021", "lodders2003"],
    ));
    out
}

/// The binding-energy set in words, by its citations, for the methods text.
fn set_description(set: BindingEnergySet) -> &'static str {
    match set {
        BindingEnergySet::TransitionState => "transition-state-theory frequencies of Ligterink & Minissale 2023 with energies matched to the laboratory sublimation pressures of Murphy & Koop 2005, Fray & Schmitt 2009 and Brown & Ziegler 1980",
        BindingEnergySet::Hhl92FrequencyLegacy => "pure-ice energies of their sources with the frequency of Hasegawa, Herbst & Leung 1992, a legacy pairing",
        BindingEnergySet::OnWaterIce => "energies on a water-ice surface of Garrod & Herbst 2006 with the frequency of Hasegawa, Herbst & Leung 1992",
    }
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
