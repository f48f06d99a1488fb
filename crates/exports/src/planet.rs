//! Exports of the planet tools: the forward model's envelope (one-row CSV or
//! JSON), the inverse chi-square map (long-form table with the best fit, the
//! allowed radius ranges and the degeneracies in words), and the anchoring summary.

use crate::formats::{number, to_ecsv_with_meta, to_json};
use crate::methods::MethodEntry;
use crate::provenance::Provenance;
use crate::tables::{ColumnSpec, Table};
use nivalis_physics::anchor::AnchoredDisk;
use nivalis_physics::params::Element;
use nivalis_physics::planet::{ChiSquareMap, FormationPlace, Planet, RadiusInterval, SigmaLevel};
use nivalis_physics::Species;
use serde_json::{json, Map, Value};

fn spec(name: &str, unit: &'static str, description: &str) -> ColumnSpec {
    ColumnSpec {
        name: name.into(),
        unit,
        description: description.into(),
    }
}

fn place_bounds(planet: &Planet) -> (f64, f64) {
    (planet.phases.inner_radius_au, planet.phases.outer_radius_au)
}

/// The envelope as a one-row table: place, mass ratio, mixing, C/O and each element's abundance.
pub fn planet_table(planet: &Planet) -> Table {
    let e = &planet.envelope;
    let (r1, r2) = place_bounds(planet);
    let mut columns = vec![
        spec(
            "radius_au",
            "AU",
            "formation radius (inner end of a migration range)",
        ),
        spec(
            "to_radius_au",
            "AU",
            "outer end of a migration range (equal to radius_au for one radius)",
        ),
        spec(
            "solid_to_gas",
            "",
            "accreted solid mass over accreted gas mass",
        ),
        spec(
            "solid_mixing_fraction",
            "",
            "fraction of the solids' atoms that enter the envelope",
        ),
        spec("local_gas_c_to_o", "", "C/O of the accreted gas"),
        spec("local_solid_c_to_o", "", "C/O of the accreted solids"),
        spec("c_to_o", "", "envelope C/O"),
        spec("c_to_o_rel_star", "", "envelope C/O over the star's"),
    ];
    let mut row = vec![
        Some(r1),
        Some(r2),
        Some(e.solid_to_gas),
        Some(e.solid_mixing_fraction),
        planet.phases.gas_c_to_o(),
        planet.phases.solid_c_to_o(),
        e.c_to_o,
        e.c_to_o_relative_to_star(),
    ];
    for el in [Element::C, Element::O, Element::N, Element::S] {
        let s = el.symbol().to_lowercase();
        let x = e.element(el);
        columns.push(spec(
            &format!("{s}_to_h_rel_star"),
            "",
            &format!("envelope {}/H over the star's", el.symbol()),
        ));
        columns.push(spec(
            &format!("{s}_to_h_dex"),
            "dex",
            &format!("[{}/H] of the envelope", el.symbol()),
        ));
        columns.push(spec(
            &format!("{s}_from_solids"),
            "",
            &format!(
                "fraction of the envelope's {} atoms that came with the solids",
                el.symbol()
            ),
        ));
        row.push(Some(x.relative_to_star));
        row.push(x.dex);
        row.push(x.solid_share);
    }
    Table {
        columns,
        rows: vec![row],
    }
}

/// The envelope as JSON, with provenance; `place` is the request's formation place.
pub fn planet_json(planet: &Planet, place: &FormationPlace, provenance: &Provenance) -> Value {
    let e = &planet.envelope;
    let (r1, r2) = place_bounds(planet);
    let mut elements = Map::new();
    for x in &e.elements {
        elements.insert(
            x.element.symbol().into(),
            json!({
                "per_h": x.per_h,
                "relative_to_star": x.relative_to_star,
                "dex": x.dex,
                "from_gas_atoms": x.from_gas_atoms,
                "from_solids_atoms": x.from_solids_atoms,
                "solid_share": x.solid_share,
            }),
        );
    }
    let weighting = weighting_key(place).map_or(Value::Null, |w| Value::String(w.into()));
    let out_of_equilibrium: Vec<&str> = Species::ALL
        .iter()
        .filter(|s| planet.phases.out_of_equilibrium[s.index()])
        .map(|s| s.key())
        .collect();
    json!({
        "program": provenance.program,
        "disk_hash": provenance.disk_hash,
        "place": {"radius_au": r1, "to_radius_au": r2, "weighting": weighting, "points": planet.phases.points},
        "solid_to_gas": e.solid_to_gas,
        "solid_mixing_fraction": e.solid_mixing_fraction,
        "local": {
            "gas_c_to_o": planet.phases.gas_c_to_o(),
            "solid_c_to_o": planet.phases.solid_c_to_o(),
            "solid_to_gas_available": planet.phases.solid_to_gas_available,
            "ices_out_of_equilibrium": out_of_equilibrium,
        },
        "envelope": {
            "c_to_o": e.c_to_o,
            "c_to_o_rel_star": e.c_to_o_relative_to_star(),
            "c_to_h_dex": e.c_to_h_dex(),
            "o_to_h_dex": e.o_to_h_dex(),
            "elements": elements,
        },
        "assumptions": "local accretion of midplane gas and solids (or their average over the migration range), a fraction solid_mixing_fraction of the solids' atoms mixed into the envelope, H from the gas only, the disk at one moment: its ices evolved over the disk's age from the chosen initial state (species whose ice has not reached equilibrium there are listed in local.ices_out_of_equilibrium)",
    })
}

/// The weighting key of a formation place (for JSON), `None` at one radius.
pub fn weighting_key(place: &FormationPlace) -> Option<&'static str> {
    match place {
        FormationPlace::Radius { .. } => None,
        FormationPlace::Migration { weighting, .. } => Some(weighting.key()),
    }
}

fn flag(b: bool) -> Option<f64> {
    Some(if b { 1.0 } else { 0.0 })
}

/// The chi-square map as a long-form table.
pub fn fit_table(map: &ChiSquareMap) -> Table {
    let columns = vec![
        spec("radius_au", "AU", "formation radius (radial cell centre)"),
        spec(
            "solid_to_gas",
            "",
            "accreted solid mass over accreted gas mass",
        ),
        spec("c_to_o", "", "model envelope C/O"),
        spec("c_to_h_dex", "dex", "model envelope [C/H]"),
        spec("o_to_h_dex", "dex", "model envelope [O/H]"),
        spec("chi2", "", "chi-square against the observation"),
        spec(
            "delta_chi2",
            "",
            "chi-square minus its minimum over the map",
        ),
        spec(
            "within_1sigma",
            "",
            "1 where delta_chi2 is within the 1-sigma threshold, else 0",
        ),
        spec(
            "within_2sigma",
            "",
            "1 where delta_chi2 is within the 2-sigma threshold, else 0",
        ),
    ];
    let rows = map
        .rows
        .iter()
        .map(|r| {
            vec![
                Some(r.radius_au),
                Some(r.solid_to_gas),
                r.c_to_o,
                r.c_to_h_dex,
                r.o_to_h_dex,
                r.chi2,
                r.delta_chi2,
                flag(r.within_1sigma),
                flag(r.within_2sigma),
            ]
        })
        .collect();
    Table { columns, rows }
}

fn interval_json(i: &RadiusInterval) -> Value {
    json!({"inner_edge_au": i.inner_edge_au, "outer_edge_au": i.outer_edge_au, "inner_centre_au": i.inner_centre_au, "outer_centre_au": i.outer_centre_au})
}

/// Best fit, thresholds, allowed radius ranges per mass ratio and degeneracy sentences.
pub fn fit_summary(map: &ChiSquareMap) -> Value {
    let best = map.best.as_ref().map(|b| {
        json!({"radius_au": b.radius_au, "solid_to_gas": b.solid_to_gas, "chi2": b.chi2, "c_to_o": b.row.c_to_o,
               "c_to_h_dex": b.row.c_to_h_dex, "o_to_h_dex": b.row.o_to_h_dex})
    });
    let allowed: Vec<Value> = map
        .allowed
        .iter()
        .map(|a| {
            json!({
                "solid_to_gas": a.solid_to_gas,
                "one_sigma": a.one_sigma.iter().map(interval_json).collect::<Vec<_>>(),
                "two_sigma": a.two_sigma.iter().map(interval_json).collect::<Vec<_>>(),
            })
        })
        .collect();
    let o = &map.observed;
    let metallicity = o
        .metallicity
        .map(|m| json!({"tracer": m.tracer.label(), "dex": m.dex, "sigma_dex": m.sigma_dex}));
    json!({
        "observed": {"c_to_o": o.c_to_o, "c_to_o_sigma": o.c_to_o_sigma, "metallicity": metallicity},
        "fitted": o.fitted_label(),
        "solid_mixing_fraction": map.settings.solid_mixing_fraction,
        "thresholds": {
            "convention": map.thresholds.convention.key(),
            "degrees_of_freedom": map.thresholds.degrees_of_freedom,
            "one_sigma": map.thresholds.one_sigma,
            "two_sigma": map.thresholds.two_sigma,
        },
        "best_fit": best,
        "allowed_radii": allowed,
        "degeneracies": map.degeneracy_summary(),
        "degeneracies_2sigma": map.degeneracies(SigmaLevel::Two).iter().map(|d| d.text()).collect::<Vec<_>>(),
    })
}

/// The map as JSON: the table plus the summary.
pub fn fit_json(map: &ChiSquareMap, provenance: &Provenance, methods: &[MethodEntry]) -> Value {
    let mut v = to_json(&fit_table(map), provenance, methods);
    if let Value::Object(o) = &mut v {
        o.insert("fit".into(), fit_summary(map));
    }
    v
}

/// The map as ECSV, with the summary (compact JSON) in the metadata.
pub fn fit_ecsv(map: &ChiSquareMap, provenance: &Provenance, methods: &[MethodEntry]) -> String {
    to_ecsv_with_meta(
        &fit_table(map),
        provenance,
        methods,
        &[("fit", fit_summary(map).to_string())],
    )
}

/// One line per fact of an anchoring, for the terminal and the page.
pub fn anchor_summary(a: &AnchoredDisk) -> Vec<String> {
    let mut lines = vec![format!(
        "anchored {} = {} (was {}): the {} snowline moves to {} au (observed {} +- {} au)",
        a.parameter.name(),
        number(a.value),
        number(a.original_value),
        a.species.key(),
        number(a.achieved_radius_au),
        a.observed_radius_au,
        a.sigma_au
    )];
    if a.sigma_au > 0.0 {
        for (label, end) in [
            ("observed - sigma", &a.at_minus_sigma),
            ("observed + sigma", &a.at_plus_sigma),
        ] {
            match end.value {
                Some(v) => lines.push(format!(
                    "at {label} = {} au: {} = {}",
                    end.radius_au,
                    a.parameter.name(),
                    number(v)
                )),
                None => lines.push(format!(
                    "at {label} = {} au: no value ({})",
                    end.radius_au, end.reason
                )),
            }
        }
    }
    lines
}
