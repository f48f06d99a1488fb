//! The exports of an evolving run (`nivalis evolve`, docs/model.md section 12): the JSON with
//! every snapshot (issue 13's layout), the long-form radius x time table and the snowline tracks
//! with the pebble and vapour fluxes through each snowline, for CSV and ECSV.

use crate::evolution_methods::{evolution_methods, evolution_methods_paragraph};
use crate::provenance::Provenance;
use crate::tables::{col, finite, Table};
use nivalis_physics::evolution::{dex, ratios_of, EvolutionParameters, EvolutionRun};
use nivalis_physics::params::Element;
use nivalis_physics::units::AU_CM;
use nivalis_physics::{Model, ModelParameters, Species};
use serde_json::{json, Map, Value};

fn opt(x: Option<f64>) -> Value {
    x.filter(|v| v.is_finite())
        .map_or(Value::Null, |v| json!(v))
}

/// The profiles of one snapshot: gas C/O, solid C/O, gas [C/H] and [O/H] relative to the star
/// [dex] per radius.
struct Profiles {
    c_to_o_gas: Vec<Option<f64>>,
    c_to_o_solid: Vec<Option<f64>>,
    c_to_h_gas_dex: Vec<Option<f64>>,
    o_to_h_gas_dex: Vec<Option<f64>>,
}

fn evolved_profiles(run: &EvolutionRun, k: usize) -> Profiles {
    let r: Vec<_> = run.snapshots[k]
        .phases
        .iter()
        .map(|ph| ratios_of(&run.stellar_per_h, ph))
        .collect();
    Profiles {
        c_to_o_gas: r.iter().map(|x| x.c_to_o_gas).collect(),
        c_to_o_solid: r.iter().map(|x| x.c_to_o_solid).collect(),
        c_to_h_gas_dex: r.iter().map(|x| dex(x.c_to_h_gas_rel_star)).collect(),
        o_to_h_gas_dex: r.iter().map(|x| dex(x.o_to_h_gas_rel_star)).collect(),
    }
}

fn static_profiles(model: &Model) -> Profiles {
    let p = model.midplane_profile();
    Profiles {
        c_to_h_gas_dex: p.c_to_h_gas_rel_star.iter().map(|x| dex(*x)).collect(),
        o_to_h_gas_dex: p.o_to_h_gas_rel_star.iter().map(|x| dex(*x)).collect(),
        c_to_o_gas: p.c_to_o_gas,
        c_to_o_solid: p.c_to_o_solid,
    }
}

/// The JSON of an evolving run. `statics[k]` is the static model at snapshot k's age
/// ([`EvolutionRun::static_model_at`]). Layout (issue 13): `times_myr`, `radius_au`, per snapshot
/// `surface_density_g_cm2`, `dust_surface_density_g_cm2`, `large_grain_radius_cm`,
/// `midplane_temperature_k`, `c_to_o_gas`, `c_to_o_solid`, `c_to_h_gas_dex`, `o_to_h_gas_dex`
/// (arrays over radius, null where undefined), `static` (the same four for the static model at
/// each age), `snowlines.<SPECIES>` (radius [au] per snapshot, null where there is none),
/// `pebble_flux_g_s.<SPECIES>` and `vapour_flux_g_s.<SPECIES>` (inward through the snowline),
/// per snapshot `accretion_rate_msun_per_yr`, `luminosity_lsun`, `effective_temperature_k`,
/// `soot_line_history_au`; `conservation` (relative error per element and of the gas), the
/// `star_c_to_o`, the resolved disk with its evolution section, the methods and the methods
/// paragraph.
pub fn evolution_json(
    run: &EvolutionRun,
    statics: &[Model],
    parameters: &ModelParameters,
    evolution: &EvolutionParameters,
    provenance: &Provenance,
) -> Value {
    let n = run.snapshots.len();
    let per = |f: &dyn Fn(usize) -> Value| Value::Array((0..n).map(f).collect());
    let radial = |v: &[f64]| Value::Array(v.iter().map(|x| opt(Some(*x))).collect());
    let profiles: Vec<Profiles> = (0..n).map(|k| evolved_profiles(run, k)).collect();
    let statics: Vec<Profiles> = statics.iter().map(static_profiles).collect();
    let list = |v: &[Option<f64>]| Value::Array(v.iter().map(|x| opt(*x)).collect());
    let four = |p: &[Profiles]| {
        json!({
            "c_to_o_gas": p.iter().map(|x| list(&x.c_to_o_gas)).collect::<Vec<_>>(),
            "c_to_o_solid": p.iter().map(|x| list(&x.c_to_o_solid)).collect::<Vec<_>>(),
            "c_to_h_gas_dex": p.iter().map(|x| list(&x.c_to_h_gas_dex)).collect::<Vec<_>>(),
            "o_to_h_gas_dex": p.iter().map(|x| list(&x.o_to_h_gas_dex)).collect::<Vec<_>>(),
        })
    };
    let mut snowlines = Map::new();
    let mut pebbles = Map::new();
    let mut vapour = Map::new();
    for s in Species::ALL {
        let i = s.index();
        snowlines.insert(
            s.key().into(),
            per(&|k| opt(run.snapshots[k].snowline_cm[i].map(|r| r / AU_CM))),
        );
        pebbles.insert(
            s.key().into(),
            per(&|k| opt(run.snapshots[k].pebble_flux_g_s[i])),
        );
        vapour.insert(
            s.key().into(),
            per(&|k| opt(run.snapshots[k].vapour_flux_g_s[i])),
        );
    }
    let mut conservation = Map::new();
    for e in Element::ALL {
        conservation.insert(
            e.symbol().into(),
            json!(run.conservation_relative_error[e as usize]),
        );
    }
    conservation.insert("gas".into(), json!(run.gas_conservation_relative_error));
    let evolved = four(&profiles);
    let mut out = json!({
        "program": provenance.program,
        "disk_hash": provenance.disk_hash,
        "disk": provenance.disk_value(),
        "times_myr": run.times_myr(),
        "radius_au": run.radius_cm.iter().map(|r| r / AU_CM).collect::<Vec<_>>(),
        "surface_density_g_cm2": per(&|k| radial(&run.snapshots[k].surface_density_g_cm2)),
        "dust_surface_density_g_cm2": per(&|k| radial(&run.snapshots[k].dust_surface_density_g_cm2)),
        "large_grain_radius_cm": per(&|k| radial(&run.snapshots[k].large_grain_radius_cm)),
        "midplane_temperature_k": per(&|k| radial(&run.snapshots[k].midplane_temperature_k)),
    });
    let m = out.as_object_mut().expect("an object");
    for (k, v) in evolved.as_object().expect("an object") {
        m.insert(k.clone(), v.clone());
    }
    m.insert("static".into(), four(&statics));
    m.insert(
        "star_c_to_o".into(),
        json!(run.stellar_per_h[Element::C as usize] / run.stellar_per_h[Element::O as usize]),
    );
    m.insert("snowlines".into(), Value::Object(snowlines));
    m.insert("pebble_flux_g_s".into(), Value::Object(pebbles));
    m.insert("vapour_flux_g_s".into(), Value::Object(vapour));
    m.insert(
        "accretion_rate_msun_per_yr".into(),
        per(&|k| opt(Some(run.snapshots[k].accretion_rate_msun_per_yr))),
    );
    m.insert(
        "luminosity_lsun".into(),
        per(&|k| opt(Some(run.snapshots[k].parameters.star.luminosity_lsun))),
    );
    m.insert(
        "effective_temperature_k".into(),
        per(&|k| {
            opt(Some(
                run.snapshots[k].parameters.star.effective_temperature_k,
            ))
        }),
    );
    m.insert(
        "soot_line_history_au".into(),
        per(&|k| opt(run.snapshots[k].soot_line_history_cm.map(|r| r / AU_CM))),
    );
    m.insert("conservation".into(), Value::Object(conservation));
    m.insert("steps".into(), json!(run.steps));
    m.insert(
        "methods".into(),
        crate::methods::to_json(&evolution_methods(parameters, evolution)),
    );
    m.insert(
        "methods_text".into(),
        json!(evolution_methods_paragraph(
            parameters, evolution, provenance
        )),
    );
    out
}

/// The long-form radius x time table: one row per snapshot and radial cell.
pub fn evolution_table(run: &EvolutionRun, statics: &[Model]) -> Table {
    let mut columns = vec![
        col("time_myr", "Myr", "disk age"),
        col("radius_au", "AU", "radial cell centre"),
        col("surface_density_g_cm2", "g / cm2", "gas surface density"),
        col(
            "dust_surface_density_g_cm2",
            "g / cm2",
            "dust surface density",
        ),
        col(
            "large_grain_radius_cm",
            "cm",
            "radius of the large dust population",
        ),
        col("midplane_temperature_k", "K", "midplane temperature"),
        col("c_to_o_gas", "", "C/O number ratio of the gas"),
        col(
            "c_to_o_solid",
            "",
            "C/O number ratio of all solids (ices and refractories)",
        ),
        col(
            "c_to_h_gas_dex",
            "dex",
            "log10 of gas C/H over the star's C/H",
        ),
        col(
            "o_to_h_gas_dex",
            "dex",
            "log10 of gas O/H over the star's O/H",
        ),
        col(
            "c_to_o_gas_static",
            "",
            "gas C/O of the static model at this age",
        ),
        col(
            "c_to_h_gas_dex_static",
            "dex",
            "gas [C/H] of the static model at this age",
        ),
        col(
            "o_to_h_gas_dex_static",
            "dex",
            "gas [O/H] of the static model at this age",
        ),
    ];
    for s in Species::ALL {
        columns.push(col(
            format!("gas_per_h_{}", s.key()),
            "",
            format!("{} in the gas per H nucleus at the midplane", s.key()),
        ));
    }
    let mut rows = Vec::new();
    for (k, s) in run.snapshots.iter().enumerate() {
        let e = evolved_profiles(run, k);
        let st = static_profiles(&statics[k]);
        for j in 0..run.radius_cm.len() {
            let mut row = vec![
                finite(s.time_myr),
                finite(run.radius_cm[j] / AU_CM),
                finite(s.surface_density_g_cm2[j]),
                finite(s.dust_surface_density_g_cm2[j]),
                finite(s.large_grain_radius_cm[j]),
                finite(s.midplane_temperature_k[j]),
                e.c_to_o_gas[j],
                e.c_to_o_solid[j],
                e.c_to_h_gas_dex[j],
                e.o_to_h_gas_dex[j],
                st.c_to_o_gas[j],
                st.c_to_h_gas_dex[j],
                st.o_to_h_gas_dex[j],
            ];
            row.extend(
                (0..Species::ALL.len())
                    .map(|i| finite(s.species_per_h[j][i] * (1.0 - s.ice_fraction[j][i]))),
            );
            rows.push(row);
        }
    }
    Table { columns, rows }
}

/// The snowline tracks: one row per snapshot with the star, the accretion rate, the soot-line
/// history and, per species, the snowline radius and the inward pebble (ice) and vapour mass
/// fluxes through it.
pub fn snowline_tracks_table(run: &EvolutionRun) -> Table {
    let mut columns = vec![
        col("time_myr", "Myr", "disk age"),
        col("luminosity_lsun", "solLum", "stellar luminosity"),
        col(
            "effective_temperature_k",
            "K",
            "stellar effective temperature",
        ),
        col(
            "accretion_rate_msun_per_yr",
            "solMass / yr",
            "accretion rate onto the star",
        ),
        col(
            "soot_line_history_au",
            "AU",
            "outermost radius that has been above the soot line so far",
        ),
    ];
    for s in Species::ALL {
        let k = s.key();
        columns.push(col(
            format!("snowline_{k}_au"),
            "AU",
            format!("{k} snowline (innermost freeze-out crossing of f_ice = 0.5)"),
        ));
        columns.push(col(
            format!("pebble_flux_{k}_g_s"),
            "g / s",
            format!("inward mass flux of {k} ice through its snowline"),
        ));
        columns.push(col(
            format!("vapour_flux_{k}_g_s"),
            "g / s",
            format!("inward mass flux of {k} vapour through its snowline"),
        ));
    }
    let rows = run
        .snapshots
        .iter()
        .map(|s| {
            let mut row = vec![
                finite(s.time_myr),
                finite(s.parameters.star.luminosity_lsun),
                finite(s.parameters.star.effective_temperature_k),
                finite(s.accretion_rate_msun_per_yr),
                s.soot_line_history_cm.map(|r| r / AU_CM),
            ];
            for i in 0..Species::ALL.len() {
                row.push(s.snowline_cm[i].map(|r| r / AU_CM));
                row.push(s.pebble_flux_g_s[i]);
                row.push(s.vapour_flux_g_s[i]);
            }
            row
        })
        .collect();
    Table { columns, rows }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::evolution::evolve;

    #[test]
    fn json_has_the_issue_layout_and_no_nan() {
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 40;
        p.grid.vertical_cells = 10;
        let mut e = EvolutionParameters::defaults();
        e.until_myr = 0.3;
        e.snapshots = 3;
        let run = evolve(&p, &e).unwrap();
        let statics: Vec<Model> = (0..3).map(|k| run.static_model_at(k).unwrap()).collect();
        let file = nivalis_disk_files::DiskFile {
            evolution: Some(e.clone()),
            ..nivalis_disk_files::DiskFile::defaults()
        };
        let v = evolution_json(&run, &statics, &p, &e, &Provenance::of(&file));
        for key in [
            "times_myr",
            "radius_au",
            "surface_density_g_cm2",
            "dust_surface_density_g_cm2",
            "c_to_o_gas",
            "c_to_o_solid",
            "c_to_h_gas_dex",
            "o_to_h_gas_dex",
            "snowlines",
            "conservation",
        ] {
            assert!(v.get(key).is_some(), "{key}");
        }
        assert_eq!(v["times_myr"].as_array().unwrap().len(), 3);
        assert_eq!(v["c_to_o_gas"][2].as_array().unwrap().len(), 40);
        assert_eq!(v["snowlines"]["H2O"].as_array().unwrap().len(), 3);
        assert!(v["conservation"]["C"].as_f64().unwrap() < 1e-10);
        let text = crate::formats::json_text(&v);
        assert!(!text.contains("NaN") && !text.contains("inf"));
        let t = evolution_table(&run, &statics);
        assert_eq!(t.rows.len(), 3 * 40);
        assert!(t.rows.iter().all(|r| r.len() == t.columns.len()));
        let s = snowline_tracks_table(&run);
        assert_eq!(s.rows.len(), 3);
    }

    #[test]
    fn statics_on_the_runs_own_structures_give_the_same_json_text() {
        // `nivalis evolve` and the page take the static models from `evolve_with_statics` (on the
        // structures the run built); the JSON must be byte for byte what the static models built
        // afresh by `static_model_at` give. The default disk at a reduced grid, with the kinetic
        // ices (their balance depends on every input of the structure).
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 60;
        let mut e = EvolutionParameters::defaults();
        e.until_myr = 1.0;
        e.snapshots = 4;
        let run = evolve(&p, &e).unwrap();
        let fresh: Vec<Model> = (0..4).map(|k| run.static_model_at(k).unwrap()).collect();
        let (run2, reused) = nivalis_physics::evolution::evolve_with_statics(&p, &e, &mut |_| true)
            .unwrap()
            .unwrap();
        assert_eq!(run, run2);
        assert_eq!(reused.len(), 4);
        let file = nivalis_disk_files::DiskFile {
            evolution: Some(e.clone()),
            ..nivalis_disk_files::DiskFile::defaults()
        };
        let text = |statics: &[Model]| {
            crate::formats::json_text(&evolution_json(
                &run,
                statics,
                &p,
                &e,
                &Provenance::of(&file),
            ))
        };
        assert_eq!(text(&reused), text(&fresh));
        // Every number of the static models, not only the exported profiles (Debug prints each
        // f64 so that it reads back to the same bits).
        for (a, b) in reused.iter().zip(&fresh) {
            assert!(format!("{a:?}") == format!("{b:?}"), "static models differ");
        }
    }
}
