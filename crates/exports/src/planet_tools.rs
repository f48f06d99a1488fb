//! The planet tools' requests, runs, views, exports and methods text, shared
//! by every front end (issue 9 item 4: the front ends only forward). The page
//! (`crates/web`, `planet_js.rs`) hands its panel's typed fields here as JSON;
//! the CLI's `nivalis planet --methods` and `nivalis fit --methods` write the
//! same methods text through [`planet_methods_text`]; the coming Python module
//! calls the same functions.
//!
//! Every number comes from the same core and export functions the CLI calls
//! with the same arguments (`nivalis planet`, `nivalis fit`, `nivalis anchor`),
//! so the page's files equal the CLI's byte for byte; this module reads the
//! panel's inputs, names problems by field, and phrases results.
//!
//! Problems carry the panel's field names as paths (`planet.radius_au`,
//! `fit.c_to_o_sigma`, `anchor.radius_au`, ...), so the page shows each beside
//! its field.

use crate::bibtex::{bibtex, bibtex_entry, methods_paragraph};
use crate::formats::json_text;
use crate::methods::{cited_keys, methods};
use crate::planet::{
    anchor_summary, explain, fit_ecsv, fit_json, fit_summary, fit_table, parse_covariance,
    parse_range, planet_json, planet_table, sig, weighting_from_key, FitOptions, PlanetOptions,
};
use crate::provenance::program_version;
use crate::{to_csv, Provenance};
use nivalis_disk_files::{DiskFile, Problem};
use nivalis_physics::anchor::{anchor_to_snowline, AnchorParameter, AnchorRequest};
use nivalis_physics::composition::star_c_to_o;
use nivalis_physics::params::Element;
use nivalis_physics::planet::{
    chi_square_map, planet, ChiSquareMap, ConfidenceConvention, FormationPlace, MapSettings,
    MetallicityReference, ObservedEnvelope, Planet, PlanetRequest, RadialWeighting, EARTH_MASS_G,
    JUPITER_MASS_G,
};
use nivalis_physics::references::reference;
use nivalis_physics::{Model, PhysicsError, Species};
use serde_json::{json, Value};

fn physics_problem(error: &PhysicsError) -> Problem {
    Problem::from_physics(error)
}

/// The reference for the envelope bookkeeping (docs/model.md section 9), kept in
/// `nivalis_physics::references` with its full record.
const PLANET_REFERENCE: &str = "oberg2011";

/// A placed planet: the request as the CLI builds it, and its result.
#[derive(Debug)]
pub struct PlacedPlanet {
    /// Where it accreted.
    pub place: FormationPlace,
    /// The forward model's result.
    pub planet: Planet,
    /// The disk it was computed in (for provenance).
    pub file: DiskFile,
}

/// An inverse map and the disk it was computed in.
#[derive(Debug)]
pub struct FittedMap {
    /// The chi-square map.
    pub map: ChiSquareMap,
    /// The disk (for provenance and methods).
    pub file: DiskFile,
    /// The union of the 1-sigma radius ranges over every solid-to-gas ratio,
    /// as (inner, outer) cell edges [au].
    pub allowed_union_au: Vec<(f64, f64)>,
}

/// The planet tools' state on the page.
#[derive(Default)]
pub struct PlanetState {
    /// The last placed planet (`None` before any, or after invalid input).
    pub placed: Option<PlacedPlanet>,
    /// The last inverse map.
    pub fitted: Option<FittedMap>,
}

/// Exports of the planet tools; each names the CLI command it equals.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PlanetExport {
    /// `nivalis planet DISK ... --format json`.
    PlanetJson,
    /// `nivalis planet DISK ... --format csv`.
    PlanetCsv,
    /// `nivalis fit DISK ... --format csv`.
    FitCsv,
    /// `nivalis fit DISK ... --format ecsv`.
    FitEcsv,
    /// `nivalis fit DISK ... --format json`.
    FitJson,
    /// The planet methods paragraph followed by the disk's (`nivalis methods DISK`).
    PlanetMethods,
    /// BibTeX of exactly what the planet methods text cites.
    PlanetBibtex,
}

impl PlanetExport {
    /// Every planet export, in the page's order.
    pub const ALL: [PlanetExport; 7] = [
        PlanetExport::PlanetJson,
        PlanetExport::PlanetCsv,
        PlanetExport::FitCsv,
        PlanetExport::FitEcsv,
        PlanetExport::FitJson,
        PlanetExport::PlanetMethods,
        PlanetExport::PlanetBibtex,
    ];

    /// The export's name, as the page's `planetExport(what)` takes it.
    pub fn key(self) -> &'static str {
        match self {
            PlanetExport::PlanetJson => "planet_json",
            PlanetExport::PlanetCsv => "planet_csv",
            PlanetExport::FitCsv => "fit_csv",
            PlanetExport::FitEcsv => "fit_ecsv",
            PlanetExport::FitJson => "fit_json",
            PlanetExport::PlanetMethods => "planet_methods",
            PlanetExport::PlanetBibtex => "planet_bibtex",
        }
    }

    /// The export of a name; `None` for any other text.
    pub fn from_key(key: &str) -> Option<PlanetExport> {
        PlanetExport::ALL.into_iter().find(|k| k.key() == key)
    }

    /// Parses the page's name of an export (the same as [`PlanetExport::from_key`]).
    pub fn from_name(name: &str) -> Option<PlanetExport> {
        PlanetExport::from_key(name)
    }
}

/// A typed number of the panel: a JSON number, or text that reads as one
/// (what a person typed). Blank or absent is `None`; anything else, or a
/// non-finite value, is a problem naming the field and what was typed.
pub fn typed_number(input: &Value, key: &str, path: &str) -> Result<Option<f64>, Problem> {
    let problem = |got: String| {
        Problem::new(path, format!("must be a finite number, got {got}"))
            .with_value(&got)
            .with_allowed("a finite number")
    };
    match input.get(key) {
        None | Some(Value::Null) => Ok(None),
        Some(Value::Number(n)) => n
            .as_f64()
            .filter(|x| x.is_finite())
            .map(Some)
            .ok_or_else(|| problem(n.to_string())),
        Some(Value::String(s)) if s.trim().is_empty() => Ok(None),
        Some(Value::String(s)) => {
            let t = s.trim();
            // Rust's float parser also reads "inf" and "NaN"; neither is a value here.
            match t.parse::<f64>() {
                Ok(x)
                    if x.is_finite()
                        && !t
                            .chars()
                            .any(|c| c.is_ascii_alphabetic() && c != 'e' && c != 'E') =>
                {
                    Ok(Some(x))
                }
                _ => Err(problem(format!("{s:?}"))),
            }
        }
        Some(other) => Err(problem(other.to_string())),
    }
}

fn required(input: &Value, key: &str, path: &str, problems: &mut Vec<Problem>) -> Option<f64> {
    match typed_number(input, key, path) {
        Ok(Some(x)) => Some(x),
        Ok(None) => {
            problems.push(Problem::new(path, "is required".to_string()));
            None
        }
        Err(p) => {
            problems.push(p);
            None
        }
    }
}

fn optional(input: &Value, key: &str, path: &str, problems: &mut Vec<Problem>) -> Option<f64> {
    typed_number(input, key, path).unwrap_or_else(|p| {
        problems.push(p);
        None
    })
}

/// A core error as a problem on the panel field it concerns: the core names
/// its own parameters (`solid_mixing_fraction`, `outer_radius_au`, ...), the
/// panel's fields are named after the CLI options.
fn core_problem(error: &PhysicsError, prefix: &str, fields: &[(&str, &str)]) -> Problem {
    let p = physics_problem(error);
    match fields.iter().find(|(core, _)| *core == p.path) {
        Some((_, field)) => Problem {
            path: format!("{prefix}.{field}"),
            ..p
        },
        None => Problem::new(prefix, error.to_string()),
    }
}

/// The request `nivalis planet` builds from `--radius-au`, `--to-radius-au`,
/// `--weighting`, `--solid-to-gas` and `--mix` (default 1), read from the
/// panel's `{radius_au, to_radius_au, weighting, solid_to_gas, mix}`.
pub fn planet_request(input: &Value) -> Result<PlanetRequest, Vec<Problem>> {
    let mut problems = Vec::new();
    let radius_au = required(input, "radius_au", "planet.radius_au", &mut problems);
    let to_radius_au = optional(input, "to_radius_au", "planet.to_radius_au", &mut problems);
    let solid_to_gas = required(input, "solid_to_gas", "planet.solid_to_gas", &mut problems);
    let mix = optional(input, "mix", "planet.mix", &mut problems).unwrap_or(1.0);
    let weighting = match input.get("weighting").and_then(Value::as_str) {
        None | Some("") => RadialWeighting::AccretedMass,
        Some(key) => weighting_from_key(key).unwrap_or_else(|| {
            problems.push(Problem::new(
                "planet.weighting",
                format!("must be accreted_mass, uniform or log_radius, got {key:?}"),
            ));
            RadialWeighting::AccretedMass
        }),
    };
    let (Some(radius_au), Some(solid_to_gas)) = (radius_au, solid_to_gas) else {
        return Err(problems);
    };
    if !problems.is_empty() {
        return Err(problems);
    }
    // The same request `nivalis planet` builds (PlanetOptions, shared with the CLI).
    Ok(PlanetOptions {
        radius_au,
        to_radius_au,
        weighting,
        solid_to_gas,
        mix,
    }
    .request())
}

/// Runs the forward model as `nivalis planet` does; problems name the panel's fields.
pub fn place_planet(
    model: &Model,
    file: &DiskFile,
    input: &Value,
) -> Result<PlacedPlanet, Vec<Problem>> {
    let request = planet_request(input)?;
    let fields = [
        ("radius_au", "radius_au"),
        ("inner_radius_au", "radius_au"),
        ("outer_radius_au", "to_radius_au"),
        ("solid_to_gas", "solid_to_gas"),
        ("solid_mixing_fraction", "mix"),
    ];
    let result = planet(model, &request).map_err(|e| vec![core_problem(&e, "planet", &fields)])?;
    Ok(PlacedPlanet {
        place: request.place,
        planet: result,
        file: file.clone(),
    })
}

/// What the panel shows of a placed planet: the envelope (C/O, [C/H], [O/H],
/// and C, O, N, S per H relative to the star, with each element's share from
/// the solids), the local gas and solid C/O, and the star's C/O (which is
/// also the C/O of the disk's gas and solids together). Undefined values are `null`.
pub fn planet_view(p: &PlacedPlanet) -> Value {
    let e = &p.planet.envelope;
    let x = &e.stellar_per_h;
    let elements: serde_json::Map<String, Value> = [Element::C, Element::O, Element::N, Element::S]
        .iter()
        .map(|&el| {
            let v = e.element(el);
            (
                el.symbol().to_string(),
                json!({"relative_to_star": finite(v.relative_to_star), "relative_to_sun": finite(v.relative_to_sun),
                       "dex_rel_star": v.dex, "dex_rel_sun": v.dex_sun, "solid_share": v.solid_share}),
            )
        })
        .collect();
    let (r1, r2) = (
        p.planet.phases.inner_radius_au,
        p.planet.phases.outer_radius_au,
    );
    json!({
        "radius_au": r1,
        "to_radius_au": if r2 != r1 { Some(r2) } else { None },
        "solid_to_gas": e.solid_to_gas,
        "mix": e.solid_mixing_fraction,
        "envelope": {
            "c_to_o": e.c_to_o,
            "c_to_o_rel_star": e.c_to_o_relative_to_star(),
            "c_to_h_dex_rel_star": e.c_to_h_dex(),
            "c_to_h_dex_rel_sun": e.c_to_h_dex_rel_sun(),
            "o_to_h_dex_rel_star": e.o_to_h_dex(),
            "o_to_h_dex_rel_sun": e.o_to_h_dex_rel_sun(),
            "elements": elements,
        },
        "local": {
            "gas_c_to_o": p.planet.phases.gas_c_to_o(),
            "solid_c_to_o": p.planet.phases.solid_c_to_o(),
            "solid_to_gas_available": finite(p.planet.phases.solid_to_gas_available),
            "ices_out_of_equilibrium": Species::ALL
                .iter()
                .filter(|s| p.planet.phases.out_of_equilibrium[s.index()])
                .map(|s| s.key())
                .collect::<Vec<_>>(),
        },
        "star_c_to_o": finite(star_c_to_o(x)),
    })
}

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// The options `nivalis fit` reads, from the panel's fields of the same names
/// (`c_to_o`, `c_to_o_sigma`, `c_to_h_dex`, `c_to_h_sigma`, `o_to_h_dex`,
/// `o_to_h_sigma`, `m_to_h_dex`, `m_to_h_sigma`, `covariance` as text,
/// `relative_to`: "star"|"sun", `mix`, `ratio_min`, `ratio_max`,
/// `ratio_count`, `radius_prior_au` and `solid_to_gas_prior` as "MIN,MAX",
/// `oxygen_correction`: true|"on", `planet_mass_mjup`,
/// `feeding_zone_hill_radii`, `convention`). The older single-metallicity
/// fields `{tracer: "none"|"C"|"O"|"M", metallicity_dex, metallicity_sigma_dex}`
/// (saved addresses) are read as the matching pair. Problems name the fields.
pub fn fit_options(input: &Value) -> Result<FitOptions, Vec<Problem>> {
    let mut problems = Vec::new();
    let mut o = FitOptions::default();
    let mut num = |key: &str| optional(input, key, &format!("fit.{key}"), &mut problems);
    o.c_to_o = num("c_to_o");
    o.c_to_o_sigma = num("c_to_o_sigma");
    o.c_to_h_dex = num("c_to_h_dex");
    o.c_to_h_sigma = num("c_to_h_sigma");
    o.o_to_h_dex = num("o_to_h_dex");
    o.o_to_h_sigma = num("o_to_h_sigma");
    o.m_to_h_dex = num("m_to_h_dex");
    o.m_to_h_sigma = num("m_to_h_sigma");
    o.mix = num("mix").unwrap_or(1.0);
    if let Some(x) = num("ratio_min") {
        o.ratio_min = x;
    }
    if let Some(x) = num("ratio_max") {
        o.ratio_max = x;
    }
    if let Some(x) = num("feeding_zone_hill_radii") {
        o.feeding_zone_hill_radii = x;
    }
    o.planet_mass_mjup = num("planet_mass_mjup");
    let count = num("ratio_count");
    let legacy = match input.get("tracer").and_then(Value::as_str) {
        None | Some("none") | Some("") => None,
        Some("C") => Some(0),
        Some("O") => Some(1),
        Some("M") => Some(2),
        Some(other) => {
            problems.push(Problem::new(
                "fit.tracer",
                format!("must be none, C, O or M, got {other:?}"),
            ));
            None
        }
    };
    if let Some(which) = legacy {
        let dex = required(
            input,
            "metallicity_dex",
            "fit.metallicity_dex",
            &mut problems,
        );
        let sigma = required(
            input,
            "metallicity_sigma_dex",
            "fit.metallicity_sigma_dex",
            &mut problems,
        );
        let slot = match which {
            0 => (&mut o.c_to_h_dex, &mut o.c_to_h_sigma),
            1 => (&mut o.o_to_h_dex, &mut o.o_to_h_sigma),
            _ => (&mut o.m_to_h_dex, &mut o.m_to_h_sigma),
        };
        if slot.0.is_none() {
            *slot.0 = dex;
            *slot.1 = sigma;
        }
    }
    if let Some(c) = count {
        if (1.0..=1.0e6).contains(&c) && c.fract() == 0.0 {
            o.ratio_count = c as usize;
        } else {
            problems.push(Problem::new(
                "fit.ratio_count",
                format!("must be a whole number in [40, 1000], got {c}"),
            ));
        }
    }
    let text = |key: &str| {
        input
            .get(key)
            .and_then(Value::as_str)
            .map(str::trim)
            .filter(|t| !t.is_empty())
    };
    if let Some(t) = text("covariance") {
        match parse_covariance(t) {
            Ok(c) => o.covariance = Some(c),
            Err(m) => problems.push(Problem::new("fit.covariance", m)),
        }
    }
    for (key, slot) in [
        ("radius_prior_au", &mut o.radius_prior_au),
        ("solid_to_gas_prior", &mut o.solid_to_gas_prior),
    ] {
        if let Some(t) = text(key) {
            match parse_range(t) {
                Ok(r) => *slot = Some(r),
                Err(m) => problems.push(Problem::new(format!("fit.{key}"), m)),
            }
        }
    }
    o.relative_to = match input.get("relative_to").and_then(Value::as_str) {
        None | Some("star") | Some("") => MetallicityReference::Star,
        Some("sun") => MetallicityReference::Sun,
        Some(other) => {
            problems.push(Problem::new(
                "fit.relative_to",
                format!("must be star or sun, got {other:?}"),
            ));
            MetallicityReference::Star
        }
    };
    o.oxygen_correction = match input.get("oxygen_correction") {
        None | Some(Value::Null) => false,
        Some(Value::Bool(b)) => *b,
        Some(Value::String(s)) => matches!(s.as_str(), "on" | "true" | "yes" | "1"),
        Some(other) => {
            problems.push(Problem::new(
                "fit.oxygen_correction",
                format!("must be true or false, got {other}"),
            ));
            false
        }
    };
    o.convention = match input.get("convention").and_then(Value::as_str) {
        None | Some("mapped_parameters") => ConfidenceConvention::MappedParameters,
        Some("fitted_quantities") => ConfidenceConvention::FittedQuantities,
        Some(other) => {
            problems.push(Problem::new(
                "fit.convention",
                format!("must be mapped_parameters or fitted_quantities, got {other:?}"),
            ));
            ConfidenceConvention::MappedParameters
        }
    };
    if problems.is_empty() {
        Ok(o)
    } else {
        Err(problems)
    }
}

/// The observation and settings `nivalis fit` builds from the same options
/// ([`FitOptions::build`], shared with the CLI); problems name the panel's fields.
pub fn fit_request(input: &Value) -> Result<(ObservedEnvelope, MapSettings), Vec<Problem>> {
    let options = fit_options(input)?;
    options.build().map_err(|ps| {
        ps.into_iter()
            .map(|p| Problem::new(format!("fit.{}", p.option), p.message))
            .collect()
    })
}

/// A core error of the inverse map as a problem naming the fit panel's field (`fit.<option>`).
pub fn fit_problem(error: &PhysicsError) -> Problem {
    let p = physics_problem(error);
    Problem::new(format!("fit.{}", FitOptions::option_of(&p.path)), p.message)
}

/// Runs the inverse map as `nivalis fit` does; problems name the panel's fields.
pub fn fit_planet(
    model: &Model,
    file: &DiskFile,
    input: &Value,
) -> Result<FittedMap, Vec<Problem>> {
    let (observed, settings) = fit_request(input)?;
    let map = chi_square_map(model, &observed, &settings).map_err(|e| vec![fit_problem(&e)])?;
    let allowed_union_au = allowed_union(&map);
    Ok(FittedMap {
        map,
        file: file.clone(),
        allowed_union_au,
    })
}

/// Every radius allowed at 1 sigma for some solid-to-gas ratio of the map, as
/// merged intervals of cell edges [au], inner first: where the planet may have
/// formed, whatever it accreted.
pub fn allowed_union(map: &ChiSquareMap) -> Vec<(f64, f64)> {
    let n_r = map.radius_au.len();
    let mut inside = vec![false; n_r];
    for a in &map.allowed {
        for i in &a.one_sigma {
            for cell in inside.iter_mut().take(i.last_cell + 1).skip(i.first_cell) {
                *cell = true;
            }
        }
    }
    let mut out = Vec::new();
    let mut start = None;
    #[allow(clippy::needless_range_loop)] // j runs one past the last cell to close a range
    for j in 0..=n_r {
        let ok = inside.get(j).copied().unwrap_or(false);
        match (ok, start) {
            (true, None) => start = Some(j),
            (false, Some(s)) => {
                out.push((map.cell_edges_au[s], map.cell_edges_au[j]));
                start = None;
            }
            _ => {}
        }
    }
    out
}

/// What the panel shows of an inverse map: the CLI's summary (observation,
/// thresholds, best fit, allowed radii per ratio, degeneracy sentences; the
/// same object `nivalis fit --format json` writes under `fit`), the union of
/// 1-sigma radii, the local C/O at the best fit and the plain-words explanation.
pub fn fit_view(model: &Model, fitted: &FittedMap) -> Value {
    let mut summary = fit_summary(&fitted.map);
    if let Value::Object(o) = &mut summary {
        o.insert(
            "allowed_union_au".into(),
            json!(fitted
                .allowed_union_au
                .iter()
                .map(|(a, b)| json!([a, b]))
                .collect::<Vec<_>>()),
        );
        o.insert("explanation".into(), json!(explain(model, &fitted.map)));
        if let Some(b) = &fitted.map.best {
            let profile = model.midplane_profile();
            o.insert(
                "best_local".into(),
                json!({"gas_c_to_o": profile.c_to_o_gas[b.radial_cell], "solid_c_to_o": profile.c_to_o_solid[b.radial_cell]}),
            );
        }
    }
    summary
}

/// One planet export as text; `None` when the tool it needs has no result yet.
pub fn export(state: &PlanetState, what: PlanetExport) -> Option<String> {
    Some(match what {
        PlanetExport::PlanetJson => {
            let p = state.placed.as_ref()?;
            json_text(&planet_json(&p.planet, &p.place, &Provenance::of(&p.file)))
        }
        PlanetExport::PlanetCsv => {
            let p = state.placed.as_ref()?;
            to_csv(&planet_table(&p.planet), &Provenance::of(&p.file))
        }
        PlanetExport::FitCsv => {
            let f = state.fitted.as_ref()?;
            to_csv(&fit_table(&f.map), &Provenance::of(&f.file))
        }
        PlanetExport::FitEcsv => {
            let f = state.fitted.as_ref()?;
            fit_ecsv(
                &f.map,
                &Provenance::of(&f.file),
                &methods(&f.file.parameters),
            )
        }
        PlanetExport::FitJson => {
            let f = state.fitted.as_ref()?;
            json_text(&fit_json(
                &f.map,
                &Provenance::of(&f.file),
                &methods(&f.file.parameters),
            ))
        }
        PlanetExport::PlanetMethods => planet_methods(state)?,
        PlanetExport::PlanetBibtex => planet_bibtex(state)?,
    })
}

fn number_text(x: f64) -> String {
    // Shortest text that reads back as the same double (what the user typed, usually).
    format!("{x}")
}

/// The planet methods paragraph (the placed planet and/or the inverse map),
/// followed by the disk's methods paragraph exactly as `nivalis methods DISK`
/// writes it, so one text covers everything the numbers rest on. States the
/// assumptions: local accretion of midplane gas and solids, full mixing of
/// the solids' atoms unless f_mix < 1, hydrogen from the gas only, and the
/// disk at one moment, its ices evolved over the disk's age.
pub fn planet_methods(state: &PlanetState) -> Option<String> {
    let file = state
        .placed
        .as_ref()
        .map(|p| &p.file)
        .or(state.fitted.as_ref().map(|f| &f.file))?;
    Some(planet_methods_text(
        file,
        state.placed.as_ref().map(|p| (&p.place, &p.planet)),
        state
            .fitted
            .as_ref()
            .map(|f| (&f.map, f.allowed_union_au.as_slice())),
    ))
}

/// The planet methods text for a disk file, a placed planet (its place and
/// result) and/or an inverse map (with its union of 1-sigma radii), as
/// [`planet_methods`] gives it on the page and `nivalis planet --methods` /
/// `nivalis fit --methods` write it.
pub fn planet_methods_text(
    file: &DiskFile,
    placed: Option<(&FormationPlace, &Planet)>,
    fitted: Option<(&ChiSquareMap, &[(f64, f64)])>,
) -> String {
    let provenance = Provenance::of(file);
    // Invariant: the key is in nivalis_physics::references (a unit test checks it).
    let citation = reference(PLANET_REFERENCE).map_or("", |r| r.citation);
    let mut text = format!(
        "We estimated the planet's envelope composition with {} on the disk described below (disk file hash {}), with the bookkeeping of {citation}: the envelope takes in the gas and the solids of the disk midplane where the planet accretes (local accretion), its hydrogen is counted from the accreted gas only, and the disk is taken at one moment, its ices having followed the freeze-out/desorption rate equation over the disk's age, with no radial drift of grains, no vapour transport and no evolution of the disk while the planet accretes.",
        provenance.program, provenance.disk_hash
    );
    let mixing = |f: f64| {
        if f >= 1.0 {
            "all of the accreted solids' atoms enter the envelope (full mixing)".to_string()
        } else if f <= 0.0 {
            "none of the accreted solids' atoms enter the envelope (f_mix = 0: the solids stay in the core)".to_string()
        } else {
            format!("a fraction f_mix = {} of the accreted solids' atoms enters the envelope and the rest stays in the core", number_text(f))
        }
    };
    if let Some((place, planet)) = placed {
        let e = &planet.envelope;
        let place = match *place {
            FormationPlace::Radius { radius_au } => format!("at r = {} au", number_text(radius_au)),
            FormationPlace::Migration { inner_radius_au, outer_radius_au, weighting } => format!(
                "along a migration range from {} to {} au, with the gas and solids averaged over {} points {}",
                number_text(inner_radius_au),
                number_text(outer_radius_au),
                planet.phases.points,
                match weighting {
                    RadialWeighting::AccretedMass => "weighted by the mass accreted in each annulus (gas by its surface density times the annulus area, solids by their own mass)",
                    RadialWeighting::Uniform => "uniform in radius",
                    RadialWeighting::LogRadius => "uniform in log radius",
                }
            ),
        };
        text.push_str(&format!(
            " The planet accreted {place} with a solid-to-gas accreted mass ratio of {}; {}. Its envelope then has C/O = {}, [C/H] = {} and [O/H] = {} dex relative to the star.",
            number_text(e.solid_to_gas),
            mixing(e.solid_mixing_fraction),
            e.c_to_o.map_or("undefined".to_string(), |v| sig(v, 3)),
            e.c_to_h_dex().map_or("undefined".to_string(), |v| format!("{v:+.2}")),
            e.o_to_h_dex().map_or("undefined".to_string(), |v| format!("{v:+.2}")),
        ));
    }
    if let Some((map, union_au)) = fitted {
        text.push(' ');
        text.push_str(&fit_methods(map, union_au));
    }
    text.push_str("\n\n");
    text.push_str(&methods_paragraph(
        &file.parameters,
        &methods(&file.parameters),
        &provenance,
    ));
    text
}

/// The fit's methods sentences: what was observed (with ±), the grid, the
/// mixing, the priors, the oxygen correction, the feasibility test, the
/// thresholds, the goodness of fit and the allowed radii (or that none are).
pub fn fit_methods(m: &ChiSquareMap, union_au: &[(f64, f64)]) -> String {
    let o = &m.observed;
    let s = &m.settings;
    let reference = match o.relative_to {
        MetallicityReference::Star => "the star",
        MetallicityReference::Sun => "the Sun",
    };
    let quantities: Vec<String> = o
        .observations
        .iter()
        .map(|x| {
            let unit = if x.quantity.is_metallicity() {
                " dex"
            } else {
                ""
            };
            if o.covariance.is_some() {
                format!("{} = {}{unit}", x.quantity.label(), number_text(x.value))
            } else {
                format!(
                    "{} = {} ± {}{unit}",
                    x.quantity.label(),
                    number_text(x.value),
                    number_text(x.sigma)
                )
            }
        })
        .collect();
    let listed = match quantities.len() {
        1 => quantities[0].clone(),
        n => format!(
            "{} and {}",
            quantities[..n - 1].join(", "),
            quantities[n - 1]
        ),
    };
    let mut t = format!("To find where a planet with the observed {listed}");
    if o.has_metallicity() {
        t.push_str(&format!(
            " (metallicities relative to {reference}; [M/H] is (C+O+N+S)/H)"
        ));
    }
    if o.covariance.is_some() {
        t.push_str(" and the given covariance matrix of these quantities");
    }
    let mixing = if s.solid_mixing_fraction >= 1.0 {
        "all of the accreted solids' atoms entering the envelope (full mixing) at every place"
            .to_string()
    } else {
        format!("a fraction f_mix = {} of the accreted solids' atoms entering the envelope at every place", number_text(s.solid_mixing_fraction))
    };
    t.push_str(&format!(
        " could have formed, we computed chi-square over the {} radial cells of the disk model and {} solid-to-gas ratios spaced logarithmically from {} to {}, with {}.",
        m.radius_au.len(),
        m.solid_to_gas.len(),
        sig(s.ratio_min, 3),
        sig(s.ratio_max, 3),
        mixing
    ));
    if let Some((a, b)) = s.radius_prior_au {
        t.push_str(&format!(
            " Only formation radii from {} to {} au were allowed (flat prior).",
            number_text(a),
            number_text(b)
        ));
    }
    if let Some((a, b)) = s.solid_to_gas_prior {
        t.push_str(&format!(
            " Only solid-to-gas ratios from {} to {} were allowed (flat prior).",
            number_text(a),
            number_text(b)
        ));
    }
    if s.oxygen_sequestered_fraction > 0.0 {
        t.push_str(&format!(
            " Before comparing, {} % of the envelope's oxygen was taken as hidden in the planet's own silicate condensates (Burrows & Sharp 1999).",
            sig(100.0 * s.oxygen_sequestered_fraction, 2)
        ));
    }
    if let Some(mp) = s.planet_mass_mjup {
        t.push_str(&format!(
            " For a planet of {} Jupiter masses ({} Earth masses), places whose feeding zone (±{} Hill radii) holds less gas than the envelope, M_p/(1 + solid-to-gas), were excluded as infeasible",
            number_text(mp),
            sig(mp * JUPITER_MASS_G / EARTH_MASS_G, 3),
            sig(s.feeding_zone_hill_radii, 3)
        ));
        if m.infeasible.is_empty() {
            t.push_str("; none was.");
        } else {
            let runs: Vec<String> = m
                .infeasible
                .iter()
                .map(|i| format!("{}–{} au", sig(i.inner_edge_au, 2), sig(i.outer_edge_au, 2)))
                .collect();
            t.push_str(&format!(
                "; at every ratio this excludes {}.",
                runs.join(", ")
            ));
        }
    }
    t.push_str(&format!(
        " The 1- and 2-sigma regions are those with delta chi-square up to {} and {}, the 68.27 % and 95.45 % quantiles of a chi-square distribution with {} degree{} of freedom ({}).",
        sig(m.thresholds.one_sigma, 3),
        sig(m.thresholds.two_sigma, 3),
        m.thresholds.degrees_of_freedom,
        if m.thresholds.degrees_of_freedom == 1 { "" } else { "s" },
        match m.thresholds.convention {
            ConfidenceConvention::MappedParameters => "the two mapped parameters",
            ConfidenceConvention::FittedQuantities => "the number of fitted quantities",
        }
    ));
    let g = &m.goodness;
    let dof_words = if g.degrees_of_freedom_floored {
        format!(
            "{} degree of freedom ({} fitted quantit{} and two fitted parameters; the number is floored at 1)",
            g.degrees_of_freedom,
            o.fitted_quantities(),
            if o.fitted_quantities() == 1 { "y" } else { "ies" }
        )
    } else {
        format!("{} degrees of freedom", g.degrees_of_freedom)
    };
    match (&m.best, g.chi2_min, g.p_value) {
        (Some(b), Some(c), Some(p)) => {
            t.push_str(&format!(
                " The best fit lies at {} au with solid-to-gas {}, with minimum chi-square {} for {dof_words}, p = {}",
                sig(b.radius_au, 3),
                sig(b.solid_to_gas, 2),
                sig(c, 3),
                if p < 1e-3 { format!("{p:.1e}") } else { sig(p, 2) }
            ));
            if g.best_on_ratio_grid_edge {
                t.push_str(", on the edge of the solid-to-gas grid");
            }
            t.push('.');
        }
        _ => t.push_str(" No place of the map gives defined values of the fitted quantities."),
    }
    if g.acceptable {
        if union_au.is_empty() {
            t.push_str(" No radius is allowed at 1 sigma.");
        } else {
            let runs: Vec<String> = union_au
                .iter()
                .map(|(a, b)| format!("{}–{} au", sig(*a, 2), sig(*b, 2)))
                .collect();
            t.push_str(&format!(
                " At 1 sigma, for some solid-to-gas ratio, the planet may have formed at {}.",
                runs.join(", ")
            ));
        }
    } else {
        t.push_str(&format!(
            " Since p < {}, no place in the disk is acceptable and no formation radius is allowed.",
            nivalis_physics::planet::ACCEPTABLE_P_VALUE
        ));
    }
    t
}

/// BibTeX of exactly the references the planet methods text cites: the disk
/// methods' (as `nivalis methods --bibtex` writes them) and the envelope bookkeeping's.
pub fn planet_bibtex(state: &PlanetState) -> Option<String> {
    let file = state
        .placed
        .as_ref()
        .map(|p| &p.file)
        .or(state.fitted.as_ref().map(|f| &f.file))?;
    let used = methods(&file.parameters);
    let mut text = bibtex(&used);
    if !cited_keys(&used).contains(&PLANET_REFERENCE) {
        if let Some(r) = reference(PLANET_REFERENCE) {
            text.push('\n');
            text.push_str(&bibtex_entry(r));
        }
    }
    Some(text)
}

/// The anchored disk, exactly as `nivalis anchor` writes it (the parameter
/// solved, the note appended), with the summary lines; problems name the
/// panel's `anchor.*` fields. Input: `{species, radius_au, sigma_au, adjust:
/// "flaring_angle"|"temperature_scale"}`.
pub fn anchor(file: &DiskFile, input: &Value) -> Result<(DiskFile, Vec<String>), Vec<Problem>> {
    let mut problems = Vec::new();
    let species = match input
        .get("species")
        .and_then(Value::as_str)
        .and_then(Species::from_key)
    {
        Some(s) => Some(s),
        None => {
            let got = input
                .get("species")
                .map_or("nothing".to_string(), Value::to_string);
            problems.push(Problem::new(
                "anchor.species",
                format!(
                    "must be one of {}, got {got}",
                    Species::ALL.map(|s| s.key()).join(", ")
                ),
            ));
            None
        }
    };
    let radius_au = required(input, "radius_au", "anchor.radius_au", &mut problems);
    let sigma_au = optional(input, "sigma_au", "anchor.sigma_au", &mut problems).unwrap_or(0.0);
    let parameter = match input.get("adjust").and_then(Value::as_str) {
        None | Some("flaring_angle") => AnchorParameter::FlaringAngle,
        Some("temperature_scale") => AnchorParameter::MidplaneTemperatureScale,
        Some(other) => {
            problems.push(Problem::new(
                "anchor.adjust",
                format!("must be flaring_angle or temperature_scale, got {other:?}"),
            ));
            AnchorParameter::FlaringAngle
        }
    };
    let (Some(species), Some(radius_au)) = (species, radius_au) else {
        return Err(problems);
    };
    if !problems.is_empty() {
        return Err(problems);
    }
    let anchored = anchor_to_snowline(
        &file.parameters,
        &AnchorRequest::new(species, radius_au, sigma_au, parameter),
    )
    .map_err(|e| {
        let fields = [
            ("observed_radius_au", "radius_au"),
            ("sigma_au", "sigma_au"),
            ("species", "species"),
            ("disk.self_consistent_flaring", "adjust"),
        ];
        vec![core_problem(&e, "anchor", &fields)]
    })?;
    let summary = anchor_summary(&anchored);
    // As the CLI: the solved parameters, and a note naming the program and the anchoring.
    let mut out = file.clone();
    out.parameters = anchored.parameters.clone();
    let note = format!("[{}] {}.", program_version(), summary[0]);
    out.notes = if file.notes.is_empty() {
        note
    } else {
        format!("{} {note}", file.notes)
    };
    // As the CLI: a range (sigma_au > 0) goes into the disk's uncertainty section.
    if sigma_au > 0.0 {
        nivalis_disk_files::uncertainty::add_anchor_entry(
            &mut out,
            anchored.parameter.name(),
            anchored.at_minus_sigma.value,
            anchored.at_plus_sigma.value,
        );
    }
    Ok((out, summary))
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_disk_files::to_json_string;
    use nivalis_physics::units::AU_CM;
    use nivalis_physics::ModelParameters;

    fn model() -> (Model, DiskFile) {
        let file = DiskFile::defaults();
        (Model::run(&ModelParameters::defaults()).unwrap(), file)
    }

    #[test]
    fn typed_numbers_are_read_or_named() {
        let v = json!({"a": 2.5, "b": " 1e-3 ", "c": "", "d": "abc", "e": "inf", "f": "NaN"});
        assert_eq!(typed_number(&v, "a", "x.a").unwrap(), Some(2.5));
        assert_eq!(typed_number(&v, "b", "x.b").unwrap(), Some(1e-3));
        assert_eq!(typed_number(&v, "c", "x.c").unwrap(), None);
        assert_eq!(typed_number(&v, "missing", "x.m").unwrap(), None);
        assert_eq!(
            typed_number(&v, "d", "x.d").unwrap_err().to_string(),
            "x.d: must be a finite number, got \"abc\""
        );
        assert!(typed_number(&v, "e", "x.e").is_err());
        assert!(typed_number(&v, "f", "x.f").is_err());
    }

    #[test]
    fn planet_equals_the_cli_calls() {
        // The CLI (crates/cli, Command::Planet) calls planet() with gas_mass_g = 1 and
        // writes planet_json / planet_table; the page must produce the same text.
        let (model, file) = model();
        let placed = place_planet(
            &model,
            &file,
            &json!({"radius_au": "12", "solid_to_gas": 0.05, "mix": 1}),
        )
        .unwrap();
        let request = PlanetRequest {
            place: FormationPlace::Radius { radius_au: 12.0 },
            gas_mass_g: 1.0,
            solid_to_gas: 0.05,
            solid_mixing_fraction: 1.0,
        };
        let direct = planet(&model, &request).unwrap();
        let state = PlanetState {
            placed: Some(placed),
            fitted: None,
        };
        assert_eq!(
            export(&state, PlanetExport::PlanetJson).unwrap(),
            json_text(&planet_json(
                &direct,
                &request.place,
                &Provenance::of(&file)
            ))
        );
        assert_eq!(
            export(&state, PlanetExport::PlanetCsv).unwrap(),
            to_csv(&planet_table(&direct), &Provenance::of(&file))
        );
        let view = planet_view(state.placed.as_ref().unwrap());
        assert_eq!(view["envelope"]["c_to_o"].as_f64(), direct.envelope.c_to_o);
        assert!(view["to_radius_au"].is_null());
    }

    #[test]
    fn pure_gas_planet_has_the_local_gas_c_to_o() {
        // docs/model.md section 9: with no solids the envelope is the local gas (Oberg, Murray-Clay & Bergin 2011).
        let (model, file) = model();
        let placed =
            place_planet(&model, &file, &json!({"radius_au": 30, "solid_to_gas": 0})).unwrap();
        let v = planet_view(&placed);
        let (env, gas) = (
            v["envelope"]["c_to_o"].as_f64().unwrap(),
            v["local"]["gas_c_to_o"].as_f64().unwrap(),
        );
        assert!((env / gas - 1.0).abs() < 1e-12, "{env} vs {gas}");
    }

    #[test]
    fn invalid_planet_input_names_the_field() {
        let (model, file) = model();
        let p = place_planet(
            &model,
            &file,
            &json!({"radius_au": 1000, "solid_to_gas": 0.1}),
        )
        .unwrap_err();
        assert_eq!(p[0].path, "planet.radius_au");
        assert_eq!(p[0].message, "must lie in the disk [0.1, 500] au, got 1000");
        let p = place_planet(
            &model,
            &file,
            &json!({"radius_au": 5, "solid_to_gas": 0.1, "mix": 2}),
        )
        .unwrap_err();
        assert_eq!(
            (p[0].path.as_str(), p[0].message.as_str()),
            ("planet.mix", "must be in [0, 1], got 2")
        );
        let p = place_planet(
            &model,
            &file,
            &json!({"radius_au": 5, "to_radius_au": 2, "solid_to_gas": 0.1}),
        )
        .unwrap_err();
        assert_eq!(p[0].path, "planet.to_radius_au");
        let p = place_planet(
            &model,
            &file,
            &json!({"radius_au": "x", "solid_to_gas": ""}),
        )
        .unwrap_err();
        assert_eq!(p.len(), 2);
        assert_eq!(p[1].to_string(), "planet.solid_to_gas: is required");
    }

    #[test]
    fn fit_equals_the_cli_calls_and_marks_allowed_radii() {
        let (model, file) = model();
        let fitted = fit_planet(
            &model,
            &file,
            &json!({"c_to_o": "0.8", "c_to_o_sigma": "0.1"}),
        )
        .unwrap();
        let direct = chi_square_map(
            &model,
            &ObservedEnvelope::c_to_o(0.8, 0.1),
            &MapSettings::defaults(),
        )
        .unwrap();
        assert!(fitted.map == direct);
        let state = PlanetState {
            placed: None,
            fitted: Some(fitted),
        };
        assert_eq!(
            export(&state, PlanetExport::FitCsv).unwrap(),
            to_csv(&fit_table(&direct), &Provenance::of(&file))
        );
        let prov = Provenance::of(&file);
        assert_eq!(
            export(&state, PlanetExport::FitEcsv).unwrap(),
            fit_ecsv(&direct, &prov, &methods(&file.parameters))
        );
        // The union of the 1-sigma ranges covers the best fit's radius.
        let best = direct.best.unwrap();
        let union = &state.fitted.as_ref().unwrap().allowed_union_au;
        assert!(
            union
                .iter()
                .any(|(a, b)| *a <= best.radius_au && best.radius_au <= *b),
            "{union:?} vs {}",
            best.radius_au
        );
        // The explanation starts with the core's sentences and adds ours.
        let words = explain(&model, &direct);
        assert!(words.len() > direct.degeneracy_summary().len());
        assert!(words.iter().any(|w| w.contains("two unknowns")));
    }

    #[test]
    fn an_impossible_fit_shades_nothing_and_a_mass_marks_infeasible_radii() {
        // Issue 11: a C/O out of the disk's reach (twice the largest local C/O of gas or solids plus
        // 0.5, +- 0.05; an envelope mixes the two) is reported so; the page shades no radius.
        let (model, file) = model();
        let profile = model.midplane_profile();
        let highest = profile
            .c_to_o_gas
            .iter()
            .chain(&profile.c_to_o_solid)
            .flatten()
            .fold(0.0f64, |a, &b| a.max(b));
        let fitted = fit_planet(
            &model,
            &file,
            &json!({"c_to_o": (2.0 * highest + 0.5).to_string(), "c_to_o_sigma": "0.05"}),
        )
        .unwrap();
        assert!(!fitted.map.goodness.acceptable);
        assert!(fitted.allowed_union_au.is_empty());
        let view = fit_view(&model, &fitted);
        assert_eq!(view["goodness"]["acceptable"], json!(false));
        assert!(view["goodness"]["reason"]
            .as_str()
            .unwrap()
            .starts_with("no place in the disk reproduces"));
        let state = PlanetState {
            placed: None,
            fitted: Some(fitted),
        };
        assert!(planet_methods(&state)
            .unwrap()
            .contains("no place in the disk is acceptable and no formation radius is allowed"));
        // A 1 M_Jup planet: the outer disk is drawn infeasible; the request equals the CLI's options.
        let input = json!({"c_to_o": "0.5", "c_to_o_sigma": "0.1", "planet_mass_mjup": "1", "relative_to": "sun",
                           "o_to_h_dex": "0.2", "o_to_h_sigma": "0.3", "ratio_count": "60", "oxygen_correction": "on"});
        let fitted = fit_planet(&model, &file, &input).unwrap();
        let options = FitOptions {
            c_to_o: Some(0.5),
            c_to_o_sigma: Some(0.1),
            o_to_h_dex: Some(0.2),
            o_to_h_sigma: Some(0.3),
            planet_mass_mjup: Some(1.0),
            relative_to: MetallicityReference::Sun,
            ratio_count: 60,
            oxygen_correction: true,
            ..FitOptions::default()
        };
        let (o, s) = options.build().unwrap();
        assert!(fitted.map == chi_square_map(&model, &o, &s).unwrap());
        let state = PlanetState {
            placed: None,
            fitted: Some(fitted),
        };
        let infeasible = &state.fitted.as_ref().unwrap().map.infeasible;
        assert!(
            infeasible
                .iter()
                .any(|i| i.inner_edge_au < 380.0 && i.outer_edge_au >= 500.0 - 1e-9),
            "{infeasible:?}"
        );
        // The older single-metallicity fields of saved addresses still read.
        let (legacy, _) = fit_request(&json!({"c_to_o": 0.5, "c_to_o_sigma": 0.1, "tracer": "O", "metallicity_dex": 0.2, "metallicity_sigma_dex": 0.3})).unwrap();
        assert_eq!(legacy.fitted_label(), "C/O and [O/H]");
        let methods = planet_methods(&state).unwrap();
        assert!(
            methods.contains("infeasible")
                && methods.contains("Burrows & Sharp 1999")
                && methods.contains("± 0.1"),
            "{methods}"
        );
        assert!(
            !methods.contains("+-") && !methods.contains(") ("),
            "{methods}"
        );
    }

    #[test]
    fn fit_problems_name_the_fields() {
        let (model, file) = model();
        let p = fit_planet(&model, &file, &json!({"c_to_o": 0.8, "c_to_o_sigma": 0})).unwrap_err();
        assert_eq!(
            p[0].to_string(),
            "fit.c_to_o_sigma: must be >= 1e-6 and finite, got 0"
        );
        let p = fit_planet(
            &model,
            &file,
            &json!({"c_to_o": 0.8, "c_to_o_sigma": 0.1, "tracer": "O"}),
        )
        .unwrap_err();
        assert_eq!(
            p.iter().map(|p| p.path.as_str()).collect::<Vec<_>>(),
            ["fit.metallicity_dex", "fit.metallicity_sigma_dex"]
        );
    }

    #[test]
    fn methods_cite_exactly_what_the_bibtex_holds() {
        let (model, file) = model();
        let state = PlanetState {
            placed: Some(
                place_planet(
                    &model,
                    &file,
                    &json!({"radius_au": 8, "solid_to_gas": 0.02, "mix": 0.5}),
                )
                .unwrap(),
            ),
            fitted: Some(
                fit_planet(&model, &file, &json!({"c_to_o": 0.6, "c_to_o_sigma": 0.05})).unwrap(),
            ),
        };
        let text = planet_methods(&state).unwrap();
        assert!(
            text.contains("local accretion")
                && text.contains("f_mix = 0.5")
                && text.contains("rate equation over the disk's age"),
            "{text}"
        );
        // Paper-ready prose (issue 11 item 5): ±, the Unicode author name, no doubled parentheses.
        assert!(
            text.contains("C/O = 0.6 ± 0.05") && text.contains("Öberg, Murray-Clay & Bergin 2011"),
            "{text}"
        );
        for bad in ["+-", "Oberg", ") (", "((", "))"] {
            assert!(!text.contains(bad), "{bad:?} in {text}");
        }
        let full = PlanetState {
            placed: None,
            fitted: Some(
                fit_planet(
                    &model,
                    &file,
                    &json!({"c_to_o": 0.6, "c_to_o_sigma": 0.05, "mix": 1}),
                )
                .unwrap(),
            ),
        };
        let text = planet_methods(&full).unwrap();
        assert!(text.contains("with all of the accreted solids' atoms entering the envelope (full mixing) at every place."), "{text}");
        assert!(text.ends_with(&methods_paragraph(
            &file.parameters,
            &methods(&file.parameters),
            &Provenance::of(&file)
        )));
        let bib = planet_bibtex(&state).unwrap();
        assert!(reference(PLANET_REFERENCE).is_some());
        assert!(bib.contains("@article{oberg2011,"));
        // Unpublished sources ("common practice", "from memory") are cited in words, never in BibTeX.
        let keys = cited_keys(&methods(&file.parameters));
        let published = keys.iter().filter(|k| reference(k).is_some()).count();
        let extra = usize::from(!keys.contains(&PLANET_REFERENCE));
        assert_eq!(bib.matches("@article{").count(), published + extra);
        assert_eq!(bib.matches("@article{oberg2011,").count(), 1);
    }

    #[test]
    fn anchoring_writes_the_cli_file() {
        // Anchor the default disk's CO snowline where the model itself puts it:
        // the flaring angle comes back (round trip, docs/model.md section 9 anchor).
        let (model, file) = model();
        let co = model.snowlines(Species::CO)[0].radius_cm / AU_CM;
        let (anchored, summary) =
            anchor(&file, &json!({"species": "CO", "radius_au": co})).unwrap();
        let phi0 = file.parameters.disk.flaring_angle;
        assert!(
            (anchored.parameters.disk.flaring_angle / phi0 - 1.0).abs() < 1e-3,
            "{} vs {phi0}",
            anchored.parameters.disk.flaring_angle
        );
        assert!(
            anchored.notes.contains("anchored disk.flaring_angle"),
            "{}",
            anchored.notes
        );
        assert!(summary[0].starts_with("anchored disk.flaring_angle"));
        assert!(to_json_string(&anchored).contains("\"notes\""));
        let p = anchor(&file, &json!({"species": "XX", "radius_au": "a"})).unwrap_err();
        assert_eq!(
            p.iter().map(|p| p.path.as_str()).collect::<Vec<_>>(),
            ["anchor.species", "anchor.radius_au"]
        );
    }
}
