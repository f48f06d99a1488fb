//! Exports of the planet tools: the forward model's envelope (one-row CSV or
//! JSON), the inverse chi-square map (long-form table with the best fit, the
//! allowed radius ranges and the degeneracies in words), and the anchoring summary.

use crate::formats::{number, to_ecsv_with_meta, to_json};
use crate::methods::MethodEntry;
use crate::provenance::Provenance;
use crate::tables::{ColumnSpec, Table};
use nivalis_physics::anchor::AnchoredDisk;
use nivalis_physics::params::Element;
use nivalis_physics::planet::{
    ChiSquareMap, ConfidenceConvention, FormationPlace, Goodness, MapSettings,
    MetallicityReference, Observable, Observation, ObservedEnvelope, Planet, PlanetRequest,
    RadialWeighting, RadiusInterval, SigmaLevel, ACCEPTABLE_P_VALUE,
    BURROWS_SHARP_OXYGEN_SEQUESTERED, EARTH_MASS_G,
};
use nivalis_physics::units::AU_CM;
use nivalis_physics::{CrossingDirection, Model, Species};
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
        spec("c_to_o", "", "envelope C/O (linear number ratio)"),
        spec("c_to_o_rel_star", "", "envelope C/O / (C/O)_star (linear)"),
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
        let sym = el.symbol();
        columns.push(spec(
            &format!("{s}_to_h_rel_star"),
            "",
            &format!("envelope {sym}/H / ({sym}/H)_star (linear)"),
        ));
        columns.push(spec(
            &format!("{s}_to_h_rel_sun"),
            "",
            &format!("envelope {sym}/H / ({sym}/H)_sun (linear)"),
        ));
        columns.push(spec(
            &format!("{s}_to_h_dex_rel_star"),
            "dex",
            &format!("[{sym}/H] of the envelope relative to the star"),
        ));
        columns.push(spec(
            &format!("{s}_to_h_dex_rel_sun"),
            "dex",
            &format!("[{sym}/H] of the envelope relative to the Sun"),
        ));
        columns.push(spec(
            &format!("{s}_from_solids"),
            "",
            &format!("fraction of the envelope's {sym} atoms that came with the solids"),
        ));
        row.push(Some(x.relative_to_star));
        row.push(Some(x.relative_to_sun));
        row.push(x.dex);
        row.push(x.dex_sun);
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
                "relative_to_sun": x.relative_to_sun,
                "dex_rel_star": x.dex,
                "dex_rel_sun": x.dex_sun,
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
            "c_to_h_dex_rel_star": e.c_to_h_dex(),
            "c_to_h_dex_rel_sun": e.c_to_h_dex_rel_sun(),
            "o_to_h_dex_rel_star": e.o_to_h_dex(),
            "o_to_h_dex_rel_sun": e.o_to_h_dex_rel_sun(),
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

pub(crate) fn flag(b: bool) -> Option<f64> {
    Some(if b { 1.0 } else { 0.0 })
}

/// The suffix naming what a metallicity is relative to: "rel_star" or "rel_sun".
pub(crate) fn rel_suffix(r: MetallicityReference) -> &'static str {
    match r {
        MetallicityReference::Star => "rel_star",
        MetallicityReference::Sun => "rel_sun",
    }
}

/// The chi-square map as a long-form table. Metallicity columns name their
/// reference and unit (`c_to_h_dex_rel_star` or `..._rel_sun`).
pub fn fit_table(map: &ChiSquareMap) -> Table {
    let rel = rel_suffix(map.observed.relative_to);
    let who = match map.observed.relative_to {
        MetallicityReference::Star => "the star",
        MetallicityReference::Sun => "the Sun",
    };
    let columns = vec![
        spec("radius_au", "AU", "formation radius (radial cell centre)"),
        spec("solid_to_gas", "", "accreted solid mass over accreted gas mass"),
        spec("c_to_o", "", "model envelope C/O (linear number ratio)"),
        spec(&format!("c_to_h_dex_{rel}"), "dex", &format!("model envelope [C/H] relative to {who}")),
        spec(&format!("o_to_h_dex_{rel}"), "dex", &format!("model envelope [O/H] relative to {who}")),
        spec(&format!("m_to_h_dex_{rel}"), "dex", &format!("model envelope [M/H] = (C+O+N+S)/H relative to {who}")),
        spec("chi2", "", "chi-square against the observation"),
        spec("delta_chi2", "", "chi-square minus its minimum over the eligible places"),
        spec("feasible", "", "1 where the feeding zone holds at least the envelope's gas (always 1 without a planet mass), else 0"),
        spec("in_prior", "", "1 inside the priors on radius and solid-to-gas, else 0"),
        spec("within_1sigma", "", "1 where delta_chi2 is within the 1-sigma threshold (eligible, fit acceptable), else 0"),
        spec("within_2sigma", "", "1 where delta_chi2 is within the 2-sigma threshold (eligible, fit acceptable), else 0"),
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
                r.m_to_h_dex,
                r.chi2,
                r.delta_chi2,
                flag(r.feasible),
                flag(r.in_prior),
                flag(r.within_1sigma),
                flag(r.within_2sigma),
            ]
        })
        .collect();
    Table { columns, rows }
}

pub(crate) fn interval_json(i: &RadiusInterval) -> Value {
    json!({"inner_edge_au": i.inner_edge_au, "outer_edge_au": i.outer_edge_au, "inner_centre_au": i.inner_centre_au, "outer_centre_au": i.outer_centre_au})
}

/// The goodness of fit as JSON: `{chi2_min, degrees_of_freedom,
/// degrees_of_freedom_floored, p_value, acceptable, acceptable_p_value,
/// best_on_ratio_grid_edge, reason?}`.
pub fn goodness_json(g: &Goodness) -> Value {
    let mut v = json!({
        "chi2_min": g.chi2_min,
        "degrees_of_freedom": g.degrees_of_freedom,
        "degrees_of_freedom_floored": g.degrees_of_freedom_floored,
        "p_value": g.p_value,
        "acceptable": g.acceptable,
        "acceptable_p_value": ACCEPTABLE_P_VALUE,
        "best_on_ratio_grid_edge": g.best_on_ratio_grid_edge,
    });
    if let (Some(r), Value::Object(o)) = (&g.reason, &mut v) {
        o.insert("reason".into(), json!(r));
    }
    v
}

/// Warnings about the fit in words (unacceptable fit, best fit on the edge of the ratio grid).
pub fn fit_warnings(map: &ChiSquareMap) -> Vec<String> {
    let g = &map.goodness;
    let mut out = Vec::new();
    if let Some(r) = &g.reason {
        out.push(format!("{r}; no formation radius is allowed"));
    }
    if let (true, Some(b)) = (g.best_on_ratio_grid_edge, &map.best) {
        let which = if b.ratio_index == 0 {
            "smallest"
        } else {
            "largest"
        };
        out.push(format!(
            "the best fit lies on the {which} solid-to-gas ratio of the grid ({}); the true minimum may lie beyond it (widen the ratio range)",
            sig(b.solid_to_gas, 2)
        ));
    }
    out
}

/// Best fit, goodness, thresholds, allowed radius ranges per mass ratio and degeneracy sentences.
pub fn fit_summary(map: &ChiSquareMap) -> Value {
    let rel = rel_suffix(map.observed.relative_to);
    let best = map.best.as_ref().map(|b| {
        let mut o = Map::new();
        o.insert("radius_au".into(), json!(b.radius_au));
        o.insert("solid_to_gas".into(), json!(b.solid_to_gas));
        o.insert("chi2".into(), json!(b.chi2));
        o.insert("c_to_o".into(), json!(b.row.c_to_o));
        o.insert(format!("c_to_h_dex_{rel}"), json!(b.row.c_to_h_dex));
        o.insert(format!("o_to_h_dex_{rel}"), json!(b.row.o_to_h_dex));
        o.insert(format!("m_to_h_dex_{rel}"), json!(b.row.m_to_h_dex));
        if let Some(m) = map.feeding_zone_gas_g.get(b.radial_cell) {
            o.insert("feeding_zone_gas_mearth".into(), json!(m / EARTH_MASS_G));
        }
        Value::Object(o)
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
    let mut v = fit_inputs_json(&map.observed, &map.settings);
    let s = &map.settings;
    v.extend(
        json!({
            "feasibility": {
                "planet_mass_mjup": s.planet_mass_mjup,
                "feeding_zone_hill_radii": s.feeding_zone_hill_radii,
                "infeasible_radii": map.infeasible.iter().map(interval_json).collect::<Vec<_>>(),
            },
            "goodness": goodness_json(&map.goodness),
            "warnings": fit_warnings(map),
            "thresholds": thresholds_json(&map.thresholds),
            "best_fit": best,
            "allowed_radii": allowed,
            "degeneracies": map.degeneracy_summary(),
            "degeneracies_2sigma": map.degeneracies(SigmaLevel::Two).iter().map(|d| d.text()).collect::<Vec<_>>(),
        })
        .as_object()
        .cloned()
        .unwrap_or_default(),
    );
    Value::Object(v)
}

/// The Delta chi-square thresholds as JSON.
pub(crate) fn thresholds_json(t: &nivalis_physics::planet::DeltaChiSquare) -> Value {
    json!({
        "convention": t.convention.key(),
        "degrees_of_freedom": t.degrees_of_freedom,
        "one_sigma": t.one_sigma,
        "two_sigma": t.two_sigma,
    })
}

/// What was fitted and how, as JSON: the observation, the ratio grid, the priors, the mixing
/// and the oxygen correction (shared by the static map and the radius x age map).
pub(crate) fn fit_inputs_json(o: &ObservedEnvelope, s: &MapSettings) -> Map<String, Value> {
    let rel = rel_suffix(o.relative_to);
    let observations: Vec<Value> = o
        .observations
        .iter()
        .map(|x| {
            if x.quantity.is_metallicity() {
                json!({"quantity": x.quantity.label(), "key": format!("{}_dex_{rel}", x.quantity.key()), "value": x.value, "sigma": if o.covariance.is_some() { Value::Null } else { json!(x.sigma) }, "unit": "dex", "relative_to": o.relative_to.key()})
            } else {
                json!({"quantity": x.quantity.label(), "key": x.quantity.key(), "value": x.value, "sigma": if o.covariance.is_some() { Value::Null } else { json!(x.sigma) }, "unit": "linear"})
            }
        })
        .collect();
    let range = |r: Option<(f64, f64)>| r.map(|(a, b)| json!([a, b]));
    json!({
        "observed": {"quantities": observations, "covariance": o.covariance, "relative_to": o.relative_to.key()},
        "fitted": o.fitted_label(),
        "solid_mixing_fraction": s.solid_mixing_fraction,
        "solid_to_gas_grid": {"min": s.ratio_min, "max": s.ratio_max, "count": s.ratio_count, "spacing": "logarithmic"},
        "priors": {"radius_au": range(s.radius_prior_au), "solid_to_gas": range(s.solid_to_gas_prior)},
        "oxygen_sequestered_fraction": s.oxygen_sequestered_fraction,
    })
    .as_object()
    .cloned()
    .unwrap_or_default()
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

// ---------------------------------------------------------------------------
// The planet request, built once for the CLI (`nivalis planet`) and the page.

/// The options of `nivalis planet` (`--radius-au`, `--to-radius-au`,
/// `--weighting`, `--solid-to-gas`, `--mix`), as the CLI and the page read them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlanetOptions {
    /// Formation radius, or the inner end of a migration range [au].
    pub radius_au: f64,
    /// Outer end of a migration range [au].
    pub to_radius_au: Option<f64>,
    /// Weighting of a migration range.
    pub weighting: RadialWeighting,
    /// Accreted solid-to-gas mass ratio.
    pub solid_to_gas: f64,
    /// f_mix.
    pub mix: f64,
}

impl PlanetOptions {
    /// The core's request: one radius, or a migration range; gas mass 1 g
    /// (only the mass ratio enters every ratio).
    pub fn request(&self) -> PlanetRequest {
        let place = match self.to_radius_au {
            None => FormationPlace::Radius {
                radius_au: self.radius_au,
            },
            Some(outer) => FormationPlace::Migration {
                inner_radius_au: self.radius_au,
                outer_radius_au: outer,
                weighting: self.weighting,
            },
        };
        PlanetRequest {
            place,
            gas_mass_g: 1.0,
            solid_to_gas: self.solid_to_gas,
            solid_mixing_fraction: self.mix,
        }
    }
}

/// The weighting named by its key (`accreted_mass`, `uniform`, `log_radius`).
pub fn weighting_from_key(key: &str) -> Option<RadialWeighting> {
    [
        RadialWeighting::AccretedMass,
        RadialWeighting::Uniform,
        RadialWeighting::LogRadius,
    ]
    .into_iter()
    .find(|w| w.key() == key)
}

// ---------------------------------------------------------------------------
// The fit request, built once for the CLI (`nivalis fit`) and the page.

/// The options of `nivalis fit`, as the CLI and the page read them (the page's
/// fields carry the same names with underscores). [`FitOptions::build`] turns
/// them into the core's observation and settings, so both fronts fit exactly
/// the same thing.
#[derive(Debug, Clone, PartialEq)]
pub struct FitOptions {
    /// Observed C/O and its 1-sigma error.
    pub c_to_o: Option<f64>,
    /// 1-sigma error of C/O.
    pub c_to_o_sigma: Option<f64>,
    /// Observed [C/H] [dex].
    pub c_to_h_dex: Option<f64>,
    /// Its 1-sigma error [dex].
    pub c_to_h_sigma: Option<f64>,
    /// Observed [O/H] [dex].
    pub o_to_h_dex: Option<f64>,
    /// Its 1-sigma error [dex].
    pub o_to_h_sigma: Option<f64>,
    /// Observed [M/H] [dex] ((C+O+N+S)/H).
    pub m_to_h_dex: Option<f64>,
    /// Its 1-sigma error [dex].
    pub m_to_h_sigma: Option<f64>,
    /// Covariance matrix, row-major, in the order C/O, [C/H], [O/H], [M/H] of the quantities given.
    pub covariance: Option<Vec<f64>>,
    /// What the metallicities are relative to.
    pub relative_to: MetallicityReference,
    /// f_mix over the map.
    pub mix: f64,
    /// Smallest solid-to-gas ratio of the grid.
    pub ratio_min: f64,
    /// Largest solid-to-gas ratio of the grid.
    pub ratio_max: f64,
    /// Number of solid-to-gas values.
    pub ratio_count: usize,
    /// Prior range of the formation radius [au].
    pub radius_prior_au: Option<(f64, f64)>,
    /// Prior range of the solid-to-gas ratio.
    pub solid_to_gas_prior: Option<(f64, f64)>,
    /// Correct for the oxygen the planet's condensates hide (Burrows & Sharp 1999, 20 %).
    pub oxygen_correction: bool,
    /// Planet mass [M_Jup].
    pub planet_mass_mjup: Option<f64>,
    /// Feeding-zone half-width [Hill radii].
    pub feeding_zone_hill_radii: f64,
    /// Delta chi-square convention.
    pub convention: ConfidenceConvention,
}

impl Default for FitOptions {
    fn default() -> FitOptions {
        let s = MapSettings::defaults();
        FitOptions {
            c_to_o: None,
            c_to_o_sigma: None,
            c_to_h_dex: None,
            c_to_h_sigma: None,
            o_to_h_dex: None,
            o_to_h_sigma: None,
            m_to_h_dex: None,
            m_to_h_sigma: None,
            covariance: None,
            relative_to: MetallicityReference::Star,
            mix: 1.0,
            ratio_min: s.ratio_min,
            ratio_max: s.ratio_max,
            ratio_count: s.ratio_count,
            radius_prior_au: None,
            solid_to_gas_prior: None,
            oxygen_correction: false,
            planet_mass_mjup: None,
            feeding_zone_hill_radii: s.feeding_zone_hill_radii,
            convention: ConfidenceConvention::MappedParameters,
        }
    }
}

/// A problem with one fit option: the option's name (underscored, as the
/// page's field) and what is wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OptionProblem {
    /// Option name, e.g. `c_to_h_sigma`.
    pub option: String,
    /// What is wrong.
    pub message: String,
}

impl FitOptions {
    /// The observation and the map settings. Every quantity needs its sigma
    /// unless a covariance is given (then the sigmas are its diagonal's square
    /// roots); at least one quantity is required. Problems name the options.
    pub fn build(&self) -> Result<(ObservedEnvelope, MapSettings), Vec<OptionProblem>> {
        let mut problems = Vec::new();
        let mut observations = Vec::new();
        let pairs = [
            (
                Observable::CToO,
                self.c_to_o,
                self.c_to_o_sigma,
                "c_to_o",
                "c_to_o_sigma",
            ),
            (
                Observable::CToH,
                self.c_to_h_dex,
                self.c_to_h_sigma,
                "c_to_h_dex",
                "c_to_h_sigma",
            ),
            (
                Observable::OToH,
                self.o_to_h_dex,
                self.o_to_h_sigma,
                "o_to_h_dex",
                "o_to_h_sigma",
            ),
            (
                Observable::MToH,
                self.m_to_h_dex,
                self.m_to_h_sigma,
                "m_to_h_dex",
                "m_to_h_sigma",
            ),
        ];
        for (quantity, value, sigma, name, sigma_name) in pairs {
            match (value, sigma) {
                (Some(value), Some(sigma)) => observations.push(Observation {
                    quantity,
                    value,
                    sigma,
                }),
                (Some(value), None) if self.covariance.is_some() => {
                    observations.push(Observation {
                        quantity,
                        value,
                        sigma: f64::NAN,
                    })
                }
                (Some(_), None) => problems.push(OptionProblem {
                    option: sigma_name.into(),
                    message: format!("is required with {name}"),
                }),
                (None, Some(_)) => problems.push(OptionProblem {
                    option: name.into(),
                    message: format!("is required with {sigma_name}"),
                }),
                (None, None) => {}
            }
        }
        if observations.is_empty() && problems.is_empty() {
            problems.push(OptionProblem {
                option: "c_to_o".into(),
                message: "is required (or one of [C/H], [O/H], [M/H])".into(),
            });
        }
        if let Some(c) = &self.covariance {
            let n = observations.len();
            if c.len() != n * n {
                problems.push(OptionProblem {
                    option: "covariance".into(),
                    message: format!(
                        "must have {} entries ({n} x {n}, for {n} observed quantities), got {}",
                        n * n,
                        c.len()
                    ),
                });
            } else {
                for (i, o) in observations.iter_mut().enumerate() {
                    o.sigma = nivalis_physics::math::sqrt(c[i * n + i]);
                }
            }
        }
        if !problems.is_empty() {
            return Err(problems);
        }
        let observed = ObservedEnvelope {
            observations,
            covariance: self.covariance.clone(),
            relative_to: self.relative_to,
        };
        let settings = MapSettings {
            ratio_count: self.ratio_count,
            ratio_min: self.ratio_min,
            ratio_max: self.ratio_max,
            solid_mixing_fraction: self.mix,
            convention: self.convention,
            radius_prior_au: self.radius_prior_au,
            solid_to_gas_prior: self.solid_to_gas_prior,
            oxygen_sequestered_fraction: if self.oxygen_correction {
                BURROWS_SHARP_OXYGEN_SEQUESTERED
            } else {
                0.0
            },
            planet_mass_mjup: self.planet_mass_mjup,
            feeding_zone_hill_radii: self.feeding_zone_hill_radii,
        };
        Ok((observed, settings))
    }

    /// The option a core error of [`chi_square_map`](nivalis_physics::planet::chi_square_map)
    /// concerns (`c_to_o` for a name that is none of the fit's, see [`FitOptions::known_option_of`]).
    pub fn option_of(core_name: &str) -> &'static str {
        Self::known_option_of(core_name).unwrap_or("c_to_o")
    }

    /// The option of a core field name of the fit (`solid_mixing_fraction` is `mix`), or `None`
    /// where the name is not one of the fit's (for example a disk field).
    pub fn known_option_of(core_name: &str) -> Option<&'static str> {
        FIT_CORE_FIELDS
            .iter()
            .find(|(core, _)| *core == core_name)
            .map(|(_, option)| *option)
    }
}

/// The fit's core field names (`nivalis_physics::planet` errors) and the options they come from.
const FIT_CORE_FIELDS: [(&str, &str); 18] = [
    ("c_to_o", "c_to_o"),
    ("c_to_o_sigma", "c_to_o_sigma"),
    ("c_to_h_dex", "c_to_h_dex"),
    ("c_to_h_sigma", "c_to_h_sigma"),
    ("o_to_h_dex", "o_to_h_dex"),
    ("o_to_h_sigma", "o_to_h_sigma"),
    ("m_to_h_dex", "m_to_h_dex"),
    ("m_to_h_sigma", "m_to_h_sigma"),
    ("covariance", "covariance"),
    ("ratio_count", "ratio_count"),
    ("ratio_min", "ratio_min"),
    ("ratio_max", "ratio_max"),
    ("solid_mixing_fraction", "mix"),
    ("radius_prior_au", "radius_prior_au"),
    ("solid_to_gas_prior", "solid_to_gas_prior"),
    ("oxygen_sequestered_fraction", "oxygen_correction"),
    ("planet_mass_mjup", "planet_mass_mjup"),
    ("feeding_zone_hill_radii", "feeding_zone_hill_radii"),
];

/// Reads a range "MIN,MAX" (or "MIN..MAX"): two finite numbers, MIN < MAX.
pub fn parse_range(text: &str) -> Result<(f64, f64), String> {
    let t = text.trim();
    let parts: Vec<&str> = if t.contains("..") {
        t.splitn(2, "..").collect()
    } else {
        t.splitn(2, ',').collect()
    };
    let bad = || format!("must be MIN,MAX with two finite numbers, got {text:?}");
    if parts.len() != 2 {
        return Err(bad());
    }
    let a = finite_number(parts[0]).ok_or_else(bad)?;
    let b = finite_number(parts[1]).ok_or_else(bad)?;
    if !(b > a) {
        return Err(format!("must have MIN < MAX, got {text:?}"));
    }
    Ok((a, b))
}

/// Reads a covariance matrix: rows separated by ';', entries by ',' or spaces
/// ("0.0025,0.001; 0.001,0.04"). The matrix must be square; symmetry and
/// positive definiteness are checked by the core.
pub fn parse_covariance(text: &str) -> Result<Vec<f64>, String> {
    let rows: Vec<Vec<f64>> = text
        .split(';')
        .map(|r| {
            r.split(|c: char| c == ',' || c.is_whitespace())
                .filter(|s| !s.is_empty())
                .map(finite_number)
                .collect::<Option<Vec<f64>>>()
        })
        .collect::<Option<Vec<Vec<f64>>>>()
        .ok_or_else(|| format!("must be rows of finite numbers separated by ';', got {text:?}"))?;
    let n = rows.len();
    if n == 0 || rows.iter().any(|r| r.len() != n) {
        return Err(format!(
            "must be a square matrix (rows separated by ';'), got {text:?}"
        ));
    }
    Ok(rows.into_iter().flatten().collect())
}

fn finite_number(s: &str) -> Option<f64> {
    let t = s.trim();
    // Rust's parser also reads "inf" and "NaN"; neither is a value here.
    if t.chars()
        .any(|c| c.is_ascii_alphabetic() && c != 'e' && c != 'E')
    {
        return None;
    }
    t.parse::<f64>().ok().filter(|x| x.is_finite())
}

// ---------------------------------------------------------------------------
// The explanation in words, for the page and the CLI.

/// Digits as subscripts: "H2O" -> "H₂O".
fn formula(key: &str) -> String {
    key.chars()
        .map(|c| {
            if c.is_ascii_digit() {
                char::from_u32(0x2080 + (c as u32 - '0' as u32)).unwrap_or(c)
            } else {
                c
            }
        })
        .collect()
}

/// A number in about `digits` significant digits for sentences (no exponent
/// below 1e-3); log10 through the core's libm routines, so the page and the
/// native tools agree.
pub(crate) fn sig(x: f64, digits: usize) -> String {
    if !x.is_finite() {
        return "undefined".into();
    }
    if x == 0.0 {
        return "0".into();
    }
    let magnitude = (nivalis_physics::math::ln(x.abs()) / std::f64::consts::LN_10).floor() as i32;
    let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
    format!("{x:.decimals$}")
}

fn ratio_text(x: Option<f64>) -> String {
    x.map_or_else(
        || "undefined (too little oxygen)".to_string(),
        |v| sig(v, 2),
    )
}

/// Every front of the model's midplane, inner first: (words, radius [au]).
/// A freeze-out crossing is "the H₂O snowline"; a desorption crossing (ice
/// inside, gas outside) is "the outer CO desorption front". Species the disk
/// does not contain are left out.
pub fn zone_fronts(model: &Model) -> Vec<(String, f64)> {
    let mut lines: Vec<(String, f64)> = Species::ALL
        .iter()
        .filter(|s| model.composition().is_present(**s))
        .flat_map(|&s| {
            model.snowlines(s).into_iter().map(move |l| {
                let words = match l.direction {
                    CrossingDirection::FreezeOut => format!("the {} snowline", formula(s.key())),
                    CrossingDirection::Desorption => {
                        format!("the outer {} desorption front", formula(s.key()))
                    }
                };
                (words, l.radius_cm / AU_CM)
            })
        })
        .collect();
    lines.sort_by(|a, b| a.1.total_cmp(&b.1));
    lines
}

/// Where a radius lies among the fronts, in words: "inside the H₂O snowline
/// (0.9 au)", "between the CO₂ snowline (8.1 au) and the CO snowline (40 au)",
/// "outside the outer N₂ desorption front (300 au)".
pub fn among_fronts(fronts: &[(String, f64)], r: f64) -> String {
    let outside = fronts.iter().rfind(|(_, x)| *x <= r);
    let inside = fronts.iter().find(|(_, x)| *x > r);
    match (outside, inside) {
        (None, None) => "where no species has a snowline".to_string(),
        (None, Some((b, y))) => format!("inside {b} ({} au)", sig(*y, 2)),
        (Some((a, x)), None) => format!("outside {a} ({} au)", sig(*x, 2)),
        (Some((a, x)), Some((b, y))) => format!(
            "between {a} ({} au) and {b} ({} au)",
            sig(*x, 2),
            sig(*y, 2)
        ),
    }
}

/// Which ices are solid in the midplane at `r_au` (ice fraction >= 0.5), in words:
/// "the ices there are H₂O and CO₂" or "no ice is frozen there".
pub fn ices_at(model: &Model, r_au: f64) -> String {
    let Ok(local) = model.midplane_at(r_au) else {
        return String::new();
    };
    let frozen: Vec<String> = Species::ALL
        .iter()
        .filter(|s| model.composition().is_present(**s) && local.ice_fraction[**s as usize] >= 0.5)
        .map(|s| formula(s.key()))
        .collect();
    match frozen.len() {
        0 => "no ice is frozen there".to_string(),
        1 => format!("the only ice there is {}", frozen[0]),
        n => format!(
            "the ices there are {} and {}",
            frozen[..n - 1].join(", "),
            frozen[n - 1]
        ),
    }
}

/// The map in plain words: an unacceptable fit first and alone; otherwise the
/// core's degeneracy sentences, then why they arise in this disk (each range's
/// place among the actual fronts, its ices, its gas and solid C/O), and what
/// the fitted quantities can and cannot tell apart.
pub fn explain(model: &Model, map: &ChiSquareMap) -> Vec<String> {
    let mut out = Vec::new();
    let fitted = map.observed.fitted_label();
    if !map.goodness.acceptable {
        out.extend(fit_warnings(map));
        if let Some(b) = &map.best {
            let profile = model.midplane_profile();
            out.push(format!(
                "The closest place is {} au with solid-to-gas {} (envelope C/O {}), {}; there the gas has C/O {} and the solids {}. The observation lies outside what this disk can give a planet formed as modelled.",
                sig(b.radius_au, 2),
                sig(b.solid_to_gas, 2),
                ratio_text(b.row.c_to_o),
                among_fronts(&zone_fronts(model), b.radius_au),
                ratio_text(profile.c_to_o_gas[b.radial_cell]),
                ratio_text(profile.c_to_o_solid[b.radial_cell])
            ));
        }
        return out;
    }
    out.extend(fit_warnings(map));
    out.extend(map.degeneracy_summary());
    let fronts = zone_fronts(model);
    let profile = model.midplane_profile();
    let degeneracies = map.degeneracies(SigmaLevel::One);
    let local = |i: &RadiusInterval| {
        let j = (i.first_cell + i.last_cell) / 2;
        let centre = (i.inner_centre_au * i.outer_centre_au).sqrt();
        format!(
            "in {}-{} au, whose middle ({} au) lies {} and where {}, the gas has C/O {} and the solids {}",
            sig(i.inner_edge_au, 2),
            sig(i.outer_edge_au, 2),
            sig(centre, 2),
            among_fronts(&fronts, centre),
            ices_at(model, centre),
            ratio_text(profile.c_to_o_gas[j]),
            ratio_text(profile.c_to_o_solid[j])
        )
    };
    if let Some(d) = degeneracies.first() {
        let parts: Vec<String> = d.ranges.iter().map(local).collect();
        out.push(format!(
            "Why: the envelope is the mix of the local gas and the local solids, weighted by how much of each the planet took in, and both change in steps at the snowlines and desorption fronts, where an ice takes its carbon and oxygen out of the gas or gives them back. At solid-to-gas {}, {}. Different mixes of gas and solids from these places reach the same {fitted}, so {fitted} {} tell them apart.",
            sig(d.solid_to_gas, 2),
            parts.join("; "),
            if map.observed.fitted_quantities() == 1 { "alone cannot" } else { "cannot" }
        ));
    }
    let n_obs = map.observed.fitted_quantities();
    if n_obs < 2 {
        let band = match &map.best {
            Some(b) => format!(
                " The best fit ({} au, solid-to-gas {}) is only one of many equally good places.",
                sig(b.radius_au, 2),
                sig(b.solid_to_gas, 2)
            ),
            None => String::new(),
        };
        let narrow = if map.observed.has_metallicity() {
            " A measured C/O narrows it, because the snowlines move carbon and oxygen between the phases by different amounts."
        } else {
            " A measured [C/H], [O/H] or [M/H] narrows it, because accreted solids raise the envelope's metallicity while gas from outside a snowline lacks the elements frozen out there."
        };
        out.push(format!(
            "One observed number ({fitted}) is fitted with two unknowns (formation radius and solid-to-gas ratio), so the allowed region is a band across the map rather than a point: formed farther out with more solids can look like formed closer in with fewer.{band}{narrow}"
        ));
    } else if degeneracies.is_empty() {
        out.push(format!("With {fitted} {} fitted, the 1-sigma region does not split into separate radius ranges at any solid-to-gas ratio.", if n_obs == 2 { "both" } else { "all" }));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::planet::chi_square_map;
    use nivalis_physics::ModelParameters;

    fn fronts() -> Vec<(String, f64)> {
        // A constructed disk: two snowlines and two outer desorption fronts (inner first).
        vec![
            ("the H₂O snowline".to_string(), 1.5),
            ("the N₂ snowline".to_string(), 60.0),
            ("the outer N₂ desorption front".to_string(), 200.0),
            ("the outer CO desorption front".to_string(), 260.0),
        ]
    }

    #[test]
    fn a_place_is_named_among_the_actual_fronts() {
        let f = fronts();
        assert_eq!(among_fronts(&f, 0.5), "inside the H₂O snowline (1.5 au)");
        assert_eq!(
            among_fronts(&f, 10.0),
            "between the H₂O snowline (1.5 au) and the N₂ snowline (60 au)"
        );
        assert_eq!(
            among_fronts(&f, 100.0),
            "between the N₂ snowline (60 au) and the outer N₂ desorption front (200 au)"
        );
        // Beyond every outer desorption front: never "outside the N₂ snowline".
        let outer = among_fronts(&f, 400.0);
        assert_eq!(outer, "outside the outer CO desorption front (260 au)");
        assert!(!outer.contains("N₂ snowline"));
        assert_eq!(among_fronts(&[], 3.0), "where no species has a snowline");
    }

    #[test]
    fn the_explanation_follows_what_was_fitted_and_how_well() {
        let mut p = ModelParameters::defaults();
        p.grid.vertical_cells = 40;
        let model = Model::run(&p).unwrap();
        // C/O alone: the "two unknowns" sentence, and any split says C/O alone cannot tell the ranges apart.
        let alone = chi_square_map(
            &model,
            &ObservedEnvelope::c_to_o(0.55, 0.05),
            &MapSettings::defaults(),
        )
        .unwrap();
        let words = explain(&model, &alone).join(" ");
        assert!(
            words.contains("One observed number (C/O) is fitted with two unknowns"),
            "{words}"
        );
        // With [O/H] too, never "C/O alone".
        let both = ObservedEnvelope::c_to_o(0.55, 0.05).with(Observable::OToH, 0.3, 0.2);
        let map = chi_square_map(&model, &both, &MapSettings::defaults()).unwrap();
        let words = explain(&model, &map).join(" ");
        assert!(!words.contains("C/O alone"), "{words}");
        assert!(!words.contains("two unknowns"), "{words}");
        if !map.degeneracies(SigmaLevel::One).is_empty() {
            assert!(
                words.contains("so C/O and [O/H] cannot tell them apart"),
                "{words}"
            );
        }
        // An impossible observation (an envelope's C/O lies between its gas's and its solids', so
        // twice the largest local C/O plus 0.5, +- 0.05, is out of reach): the words say so and
        // describe no allowed range.
        let profile = model.midplane_profile();
        let highest = profile
            .c_to_o_gas
            .iter()
            .chain(&profile.c_to_o_solid)
            .flatten()
            .fold(0.0f64, |a, &b| a.max(b));
        let none = chi_square_map(
            &model,
            &ObservedEnvelope::c_to_o(2.0 * highest + 0.5, 0.05),
            &MapSettings::defaults(),
        )
        .unwrap();
        let words = explain(&model, &none);
        assert!(
            words[0].starts_with("no place in the disk reproduces the observed C/O"),
            "{words:?}"
        );
        assert!(
            words.iter().all(|w| !w.contains("give the same")),
            "{words:?}"
        );
        // Every place named lies among this disk's own fronts.
        for w in explain(&model, &alone) {
            assert!(!w.contains("where no species has a snowline"), "{w}");
        }
    }

    #[test]
    fn every_zone_of_a_step_model_is_named_by_its_ices_and_fronts() {
        // The step model (fixed condensation temperatures; Oberg, Murray-Clay & Bergin 2011 picture):
        // carbon only in CO, CO2 and refractories, oxygen in H2O, CO2, CO and silicates, nitrogen all N2,
        // sulfur all refractory. Each zone between consecutive snowlines holds exactly the ices whose line
        // lies inside it, and its words name the two fronts around it.
        let mut p = ModelParameters::defaults();
        p.grid.vertical_cells = 40;
        p.ices.desorption = nivalis_physics::params::DesorptionModel::FixedTemperature;
        p.composition.carbon = nivalis_physics::params::CarbonFractions {
            co: 0.2,
            co2: 0.3,
            ch4: 0.0,
            ch3oh: 0.0,
            hcn: 0.0,
            refractory: 0.5,
        };
        p.composition.nitrogen.n2 = 1.0;
        p.composition.nitrogen.nh3 = 0.0;
        p.composition.sulfur.h2s = 0.0;
        p.composition.sulfur.refractory = 1.0;
        let model = Model::run(&p).unwrap();
        let fronts = zone_fronts(&model);
        let at = |label: &str| {
            fronts
                .iter()
                .find(|(w, _)| w == label)
                .map(|f| f.1)
                .unwrap_or_else(|| panic!("{label} in {fronts:?}"))
        };
        let (w, d, c, n) = (
            at("the H₂O snowline"),
            at("the CO₂ snowline"),
            at("the CO snowline"),
            at("the N₂ snowline"),
        );
        assert!(w < d && d < c && c <= n, "{fronts:?}");
        let cases = [
            (w / 1.3, "no ice is frozen there", "inside the H₂O snowline"),
            (
                (w * d).sqrt(),
                "the only ice there is H₂O",
                "between the H₂O snowline",
            ),
            (
                (d * c).sqrt(),
                "the ices there are H₂O and CO₂",
                "between the CO₂ snowline",
            ),
        ];
        for (r, ices, place) in cases {
            assert_eq!(ices_at(&model, r), ices, "at {r} au");
            assert!(
                among_fronts(&fronts, r).starts_with(place),
                "{}",
                among_fronts(&fronts, r)
            );
        }
        // Beyond the last front every ice is frozen, and the words name that front, whatever it is.
        let last = fronts.last().unwrap();
        let r = (last.1 * model.parameters().disk.outer_radius_au).sqrt();
        if r > last.1 {
            assert_eq!(
                among_fronts(&fronts, r),
                format!("outside {} ({} au)", last.0, sig(last.1, 2))
            );
        }
        assert!(
            ices_at(&model, c * 1.05).contains("CO"),
            "{}",
            ices_at(&model, c * 1.05)
        );
    }

    #[test]
    fn fit_options_pair_values_with_errors_and_read_ranges() {
        let o = FitOptions {
            c_to_o: Some(0.5),
            c_to_h_dex: Some(0.2),
            ..FitOptions::default()
        };
        let p = o.build().unwrap_err();
        let named: Vec<&str> = p.iter().map(|p| p.option.as_str()).collect();
        assert_eq!(named, ["c_to_o_sigma", "c_to_h_sigma"]);
        let o = FitOptions {
            m_to_h_dex: Some(0.2),
            m_to_h_sigma: Some(0.1),
            ..FitOptions::default()
        };
        let (obs, _) = o.build().unwrap();
        assert_eq!(obs.fitted_label(), "[M/H]");
        let o = FitOptions {
            c_to_o: Some(0.5),
            o_to_h_dex: Some(0.3),
            covariance: Some(vec![0.01, 0.0, 0.0, 0.04]),
            ..FitOptions::default()
        };
        let (obs, _) = o.build().unwrap();
        assert_eq!(
            obs.observations[1].sigma, 0.2,
            "sigma from the covariance diagonal"
        );
        assert_eq!(parse_range("2,50"), Ok((2.0, 50.0)));
        assert_eq!(parse_range("1e-3..0.1"), Ok((1e-3, 0.1)));
        assert!(
            parse_range("5,2").is_err()
                && parse_range("a,b").is_err()
                && parse_range("inf,2").is_err()
        );
        assert_eq!(
            parse_covariance("0.0025,0.001; 0.001 0.04"),
            Ok(vec![0.0025, 0.001, 0.001, 0.04])
        );
        assert!(parse_covariance("1,2;3").is_err());
    }

    #[test]
    fn columns_name_their_reference_and_no_noise_is_written() {
        let mut p = ModelParameters::defaults();
        p.grid.vertical_cells = 40;
        let model = Model::run(&p).unwrap();
        let gas_only = nivalis_physics::planet::planet(
            &model,
            &nivalis_physics::planet::PlanetRequest::at(0.15, 0.0),
        )
        .unwrap();
        let t = planet_table(&gas_only);
        let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
        for n in [
            "c_to_h_dex_rel_star",
            "c_to_h_dex_rel_sun",
            "n_to_h_rel_star",
            "n_to_h_rel_sun",
            "o_to_h_dex_rel_sun",
        ] {
            assert!(names.contains(&n), "{names:?}");
        }
        assert!(
            !names.contains(&"c_to_h_dex"),
            "a dex column without its reference"
        );
        let col = |n: &str| t.rows[0][names.iter().position(|x| *x == n).unwrap()];
        // Inside the soot line a gas-only envelope has exactly the star's C/H and nothing from solids.
        assert_eq!(col("c_to_h_dex_rel_star"), Some(0.0));
        assert_eq!(col("c_to_h_rel_star"), Some(1.0));
        assert_eq!(col("c_from_solids"), Some(0.0));
        // No value of the planet table or of a fit table is a rounding residue (0 < |x| < 1e-9).
        let fit = chi_square_map(
            &model,
            &ObservedEnvelope::c_to_o(0.5, 0.1).with(Observable::CToH, 0.0, 0.2),
            &MapSettings::defaults(),
        )
        .unwrap();
        // (chi2 and delta_chi2 are not abundances: a tiny chi-square is a real, near-perfect fit.)
        for table in [t, fit_table(&fit)] {
            for row in &table.rows {
                for (c, v) in table.columns.iter().zip(row) {
                    if let (Some(v), false) = (v, c.name.contains("chi2")) {
                        assert!(
                            *v == 0.0 || v.abs() >= 1e-9,
                            "noise value {v:e} in {}",
                            c.name
                        );
                    }
                }
            }
        }
    }
}
