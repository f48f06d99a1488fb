//! Exports of the Monte Carlo over uncertain inputs (docs/model.md section 13): the percentile
//! bands, snowline distributions and sensitivity as CSV/ECSV tables and one JSON document, the
//! marginalised formation-radius posterior, and the methods text. The seed, the number of
//! samples and the `uncertainty` section are in every file. The CLI and the page call these same
//! functions, so their files are byte-identical.

use crate::formats::{csv_provenance_lines, number, to_csv, to_ecsv_with_meta};
use crate::methods::MethodEntry;
use crate::provenance::Provenance;
use crate::tables::{ColumnSpec, Table};
use nivalis_disk_files::uncertainty::UncertaintySpec;
use nivalis_physics::planet::{chi_square_map, ChiSquareMap, MapSettings, ObservedEnvelope};
use nivalis_physics::random::Rng;
use nivalis_physics::uncertainty::{
    Engine, InputSensitivity, MarginalPosterior, MonteCarlo, PosteriorAccumulator, Quantity,
    PERCENTILES, PERCENTILE_KEYS,
};
use nivalis_physics::ModelParameters;
use nivalis_physics::Species;
use serde_json::{json, Map, Value};

/// Which table of a Monte Carlo.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum UncertaintyTable {
    /// Percentile bands of every quantity per radius.
    Bands,
    /// Percentiles of each snowline radius and the fraction of samples with it.
    Snowlines,
    /// One-at-a-time swings and first-order indices per input.
    Sensitivity,
}

impl UncertaintyTable {
    /// Parse `bands`, `snowlines` or `sensitivity`.
    pub fn from_key(key: &str) -> Option<UncertaintyTable> {
        match key {
            "bands" => Some(UncertaintyTable::Bands),
            "snowlines" => Some(UncertaintyTable::Snowlines),
            "sensitivity" => Some(UncertaintyTable::Sensitivity),
            _ => None,
        }
    }
}

/// Everything one Monte Carlo export needs.
pub struct UncertaintyResult<'a> {
    /// The summarised samples.
    pub monte_carlo: &'a MonteCarlo,
    /// The uncertain inputs.
    pub spec: &'a UncertaintySpec,
    /// The sensitivity (one entry per input), if computed.
    pub sensitivity: Option<&'a [InputSensitivity]>,
    /// The radius [au] the gas C/O sensitivity is taken at.
    pub sensitivity_radius_au: f64,
    /// The nominal disk's provenance.
    pub provenance: &'a Provenance,
    /// The nominal disk's methods.
    pub methods: &'a [MethodEntry],
}

fn col(name: impl Into<String>, unit: &'static str, description: impl Into<String>) -> ColumnSpec {
    ColumnSpec {
        name: name.into(),
        unit,
        description: description.into(),
    }
}

fn percent(q: f64) -> String {
    let p = q * 100.0;
    if p.fract() == 0.0 {
        format!("{p:.0}")
    } else {
        format!("{p:.1}")
    }
}

/// The bands as a table: radius_au, then per quantity its five percentiles and the fraction of
/// samples defining it.
pub fn bands_table(mc: &MonteCarlo) -> Table {
    let mut columns = vec![col(
        "radius_au",
        "AU",
        "radial cell centre of the nominal grid",
    )];
    for q in Quantity::ALL {
        let what = match q.unit() {
            "" => q.key().replace('_', " "),
            u => format!("{} [{u}]", q.key().replace('_', " ")),
        };
        for (k, p) in PERCENTILE_KEYS.iter().zip(PERCENTILES) {
            columns.push(col(
                format!("{}_{k}", q.key()),
                // Ratios and abundances per H nucleus are dimensionless (astropy unit "").
                "",
                format!(
                    "{} percentile of {what} over the samples defining it",
                    percent(p)
                ),
            ));
        }
        columns.push(col(
            format!("{}_defined_fraction", q.key()),
            "",
            format!("fraction of the successful samples in which {what} is defined"),
        ));
    }
    let rows = (0..mc.radius_au.len())
        .map(|j| {
            let mut row = vec![Some(mc.radius_au[j])];
            for b in &mc.bands {
                for p in &b.percentiles {
                    row.push(p[j]);
                }
                row.push(Some(b.defined_fraction[j]));
            }
            row
        })
        .collect();
    Table { columns, rows }
}

/// A table with a text first column (`label`), written by [`labelled_csv`] and [`labelled_ecsv`].
pub struct LabelledTable {
    /// The text column's name.
    pub label: &'static str,
    /// Its description.
    pub label_description: &'static str,
    /// One label per row.
    pub labels: Vec<String>,
    /// The numeric columns.
    pub table: Table,
}

/// Snowline percentiles per species: species, p2_5_au ... p97_5_au, fraction.
pub fn snowlines_table(mc: &MonteCarlo) -> LabelledTable {
    let mut columns: Vec<ColumnSpec> = PERCENTILE_KEYS
        .iter()
        .zip(PERCENTILES)
        .map(|(k, p)| {
            col(
                format!("{k}_au"),
                "AU",
                format!(
                    "{} percentile of the innermost freeze-out snowline radius over the samples that have one",
                    percent(p)
                ),
            )
        })
        .collect();
    columns.push(col(
        "fraction",
        "",
        "fraction of the successful samples with the snowline",
    ));
    let rows = mc
        .snowlines
        .iter()
        .map(|s| {
            let mut r: Vec<Option<f64>> = s.percentiles.to_vec();
            r.push(Some(s.fraction));
            r
        })
        .collect();
    LabelledTable {
        label: "species",
        label_description: "the species",
        labels: mc
            .snowlines
            .iter()
            .map(|s| s.species.key().to_string())
            .collect(),
        table: Table { columns, rows },
    }
}

/// Sensitivity per input: input, gas C/O swing and first-order index, then per species the
/// snowline swing [au] and first-order index.
pub fn sensitivity_table(s: &[InputSensitivity], radius_au: f64) -> LabelledTable {
    let mut columns = vec![
        col(
            "gas_c_to_o_swing",
            "",
            format!(
                "one-at-a-time swing (max - min over the input's levels) of the gas C/O at {} au",
                number(radius_au)
            ),
        ),
        col(
            "gas_c_to_o_first_order",
            "",
            format!(
                "first-order variance index of the gas C/O at {} au from the Monte Carlo samples",
                number(radius_au)
            ),
        ),
    ];
    for sp in Species::ALL {
        columns.push(col(
            format!("snowline_{}_swing_au", sp.key()),
            "AU",
            format!("one-at-a-time swing of the {} snowline radius", sp.key()),
        ));
        columns.push(col(
            format!("snowline_{}_first_order", sp.key()),
            "",
            format!(
                "first-order variance index of the {} snowline radius",
                sp.key()
            ),
        ));
    }
    let rows = s
        .iter()
        .map(|i| {
            let mut r = vec![i.swing_gas_c_to_o, i.first_order_gas_c_to_o];
            for k in 0..Species::ALL.len() {
                r.push(i.swing_snowline_au[k]);
                r.push(i.first_order_snowline[k]);
            }
            r
        })
        .collect();
    LabelledTable {
        label: "input",
        label_description: "the uncertain input's disk-file path",
        labels: s.iter().map(|i| i.name.clone()).collect(),
        table: Table { columns, rows },
    }
}

/// The `#` lines every uncertainty CSV adds after the provenance: seed and samples.
pub fn csv_seed_lines(mc: &MonteCarlo) -> String {
    format!(
        "# monte carlo: seed {}, {} samples, {} succeeded, {} redraws; the uncertain inputs are in the ECSV/JSON export and the disk file's uncertainty section\n",
        mc.seed, mc.samples, mc.succeeded, mc.redraws
    )
}

/// CSV of a labelled table: provenance and seed lines, header, rows.
pub fn labelled_csv(t: &LabelledTable, provenance: &Provenance, mc: &MonteCarlo) -> String {
    let mut out = csv_provenance_lines(provenance);
    out.push_str(&csv_seed_lines(mc));
    out.push_str(t.label);
    for c in &t.table.columns {
        out.push(',');
        out.push_str(&c.name);
    }
    out.push('\n');
    for (label, row) in t.labels.iter().zip(&t.table.rows) {
        out.push_str(&csv_field(label));
        for cell in row {
            out.push(',');
            if let Some(x) = cell {
                out.push_str(&number(*x));
            }
        }
        out.push('\n');
    }
    out
}

/// A CSV field, quoted (RFC 4180) when it holds a comma, quote or line break.
fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn meta(r: &UncertaintyResult) -> Vec<(&'static str, String)> {
    vec![
        ("seed", r.monte_carlo.seed.to_string()),
        ("samples", r.monte_carlo.samples.to_string()),
        ("samples_succeeded", r.monte_carlo.succeeded.to_string()),
        ("redraws", r.monte_carlo.redraws.to_string()),
        ("uncertainty", r.spec.section().to_string()),
        ("uncertainty_methods", methods_text(r.spec, r.monte_carlo)),
    ]
}

/// ECSV of a labelled table: the numeric table's ECSV with the text column put first.
pub fn labelled_ecsv(t: &LabelledTable, r: &UncertaintyResult) -> String {
    let numeric = to_ecsv_with_meta(&t.table, r.provenance, r.methods, &meta(r));
    let mut out = String::with_capacity(numeric.len() + 64 * t.labels.len());
    let mut lines = numeric.lines();
    // Header up to and including "# datatype:", then the text column's spec.
    for line in lines.by_ref() {
        out.push_str(line);
        out.push('\n');
        if line == "# datatype:" {
            out.push_str(&format!(
                "# - {{name: {}, datatype: string, description: '{}'}}\n",
                t.label, t.label_description
            ));
            break;
        }
    }
    for line in lines.by_ref() {
        out.push_str(line);
        out.push('\n');
        if line == "# schema: astropy-2.0" {
            break;
        }
    }
    if let Some(header) = lines.next() {
        out.push_str(&format!("{},{header}\n", t.label));
    }
    for (label, line) in t.labels.iter().zip(lines) {
        out.push_str(&format!("{},{line}\n", csv_field(label)));
    }
    out
}

/// The bands CSV (provenance, seed, header, rows).
pub fn bands_csv(r: &UncertaintyResult) -> String {
    let csv = to_csv(&bands_table(r.monte_carlo), r.provenance);
    // The seed line goes right after the provenance lines (the first three).
    let mut out = String::new();
    let mut lines = csv.split_inclusive('\n');
    for line in lines.by_ref().take(3) {
        out.push_str(line);
    }
    out.push_str(&csv_seed_lines(r.monte_carlo));
    for line in lines {
        out.push_str(line);
    }
    out
}

/// A table of the Monte Carlo in CSV.
pub fn table_csv(r: &UncertaintyResult, which: UncertaintyTable) -> String {
    match which {
        UncertaintyTable::Bands => bands_csv(r),
        UncertaintyTable::Snowlines => {
            labelled_csv(&snowlines_table(r.monte_carlo), r.provenance, r.monte_carlo)
        }
        UncertaintyTable::Sensitivity => labelled_csv(
            &sensitivity_table(r.sensitivity.unwrap_or(&[]), r.sensitivity_radius_au),
            r.provenance,
            r.monte_carlo,
        ),
    }
}

/// A table of the Monte Carlo in ECSV (seed, samples, the uncertainty section and the methods
/// text in the metadata).
pub fn table_ecsv(r: &UncertaintyResult, which: UncertaintyTable) -> String {
    match which {
        UncertaintyTable::Bands => to_ecsv_with_meta(
            &bands_table(r.monte_carlo),
            r.provenance,
            r.methods,
            &meta(r),
        ),
        UncertaintyTable::Snowlines => labelled_ecsv(&snowlines_table(r.monte_carlo), r),
        UncertaintyTable::Sensitivity => labelled_ecsv(
            &sensitivity_table(r.sensitivity.unwrap_or(&[]), r.sensitivity_radius_au),
            r,
        ),
    }
}

fn opt(x: Option<f64>) -> Value {
    x.map_or(Value::Null, |v| json!(v))
}

fn percentile_object(p: &[Option<f64>; 5]) -> Map<String, Value> {
    let mut m = Map::new();
    for (k, v) in PERCENTILE_KEYS.iter().zip(p) {
        m.insert((*k).to_string(), opt(*v));
    }
    m
}

/// The sensitivity as JSON: per input its swings and indices, and per output the inputs ranked
/// by swing.
pub fn sensitivity_json(s: &[InputSensitivity], radius_au: f64) -> Value {
    let inputs: Vec<Value> = s
        .iter()
        .map(|i| {
            let mut snow = Map::new();
            for sp in Species::ALL {
                snow.insert(
                    sp.key().to_string(),
                    json!({"swing_au": opt(i.swing_snowline_au[sp.index()]), "first_order": opt(i.first_order_snowline[sp.index()])}),
                );
            }
            json!({
                "input": i.name,
                "levels": i.levels.len(),
                "gas_c_to_o": {"swing": opt(i.swing_gas_c_to_o), "first_order": opt(i.first_order_gas_c_to_o)},
                "snowlines": snow,
            })
        })
        .collect();
    let rank = |f: &dyn Fn(&InputSensitivity) -> Option<f64>| -> Vec<Value> {
        let mut v: Vec<(&str, f64)> = s
            .iter()
            .filter_map(|i| Some((i.name.as_str(), f(i)?)))
            .collect();
        v.sort_by(|a, b| b.1.total_cmp(&a.1));
        v.into_iter()
            .map(|(n, x)| json!({"input": n, "swing": x}))
            .collect()
    };
    let mut ranking = Map::new();
    ranking.insert(
        "gas_c_to_o".into(),
        Value::Array(rank(&|i| i.swing_gas_c_to_o)),
    );
    for sp in Species::ALL {
        ranking.insert(
            format!("snowline_{}", sp.key()),
            Value::Array(rank(&|i| i.swing_snowline_au[sp.index()])),
        );
    }
    json!({"radius_au": radius_au, "inputs": inputs, "ranking": ranking})
}

/// The whole Monte Carlo as one JSON document (issue 12's layout): `radius_au`;
/// `bands.<quantity>.{p2_5, p16, p50, p84, p97_5, defined_fraction}` (arrays over radius);
/// `snowlines.<SPECIES>.{p2_5, ..., fraction}`; `seed`; `samples`; the sensitivity; the
/// uncertain inputs; the methods text; provenance.
pub fn uncertainty_json(r: &UncertaintyResult) -> Value {
    let mc = r.monte_carlo;
    let mut bands = Map::new();
    for (q, b) in Quantity::ALL.iter().zip(&mc.bands) {
        let mut m = Map::new();
        for (k, p) in PERCENTILE_KEYS.iter().zip(&b.percentiles) {
            m.insert(
                (*k).to_string(),
                Value::Array(p.iter().map(|v| opt(*v)).collect()),
            );
        }
        m.insert("defined_fraction".into(), json!(b.defined_fraction));
        m.insert("unit".into(), json!(q.unit()));
        bands.insert(q.key().to_string(), Value::Object(m));
    }
    let mut snowlines = Map::new();
    for s in &mc.snowlines {
        let mut m = percentile_object(&s.percentiles);
        m.insert("fraction".into(), json!(s.fraction));
        m.insert("radii_au".into(), json!(s.radii_au));
        snowlines.insert(s.species.key().to_string(), Value::Object(m));
    }
    let inputs: Vec<Value> = r
        .spec
        .inputs
        .iter()
        .map(|i| json!({"path": i.path, "distribution": i.distribution.describe(), "nominal": i.nominal}))
        .collect();
    json!({
        "program": r.provenance.program,
        "disk_hash": r.provenance.disk_hash,
        "seed": mc.seed,
        "samples": mc.samples,
        "samples_succeeded": mc.succeeded,
        "redraws": mc.redraws,
        "failures": mc.failures.iter().map(|(i, m)| json!({"sample": i, "reason": m})).collect::<Vec<_>>(),
        "percentiles": PERCENTILES,
        "radius_au": mc.radius_au,
        "bands": bands,
        "snowlines": snowlines,
        "sensitivity": r.sensitivity.map_or(Value::Null, |s| sensitivity_json(s, r.sensitivity_radius_au)),
        "inputs": inputs,
        "uncertainty": r.spec.section(),
        "uncertainty_methods": methods_text(r.spec, mc),
        "disk": r.provenance.disk_value(),
        "methods": crate::methods::to_json(r.methods),
    })
}

/// The methods text of a Monte Carlo: sampling, seed, N, each input's distribution, with
/// references in words.
pub fn methods_text(spec: &UncertaintySpec, mc: &MonteCarlo) -> String {
    let inputs: Vec<String> = spec
        .inputs
        .iter()
        .map(|i| {
            format!(
                "{} ({} about {})",
                i.path,
                i.distribution.describe(),
                i.nominal
            )
        })
        .collect();
    let mut t = format!(
        "We propagated the uncertainties of {} input{} by Monte Carlo sampling of {} disks (seed {}): {}.",
        spec.inputs.len(),
        if spec.inputs.len() == 1 { "" } else { "s" },
        mc.samples,
        mc.seed,
        if inputs.is_empty() { "none".to_string() } else { inputs.join("; ") }
    );
    t.push_str(" Random numbers came from xoshiro256** (Blackman & Vigna 2021) seeded through SplitMix64 (Steele, Lea & Flood 2014), one independent stream per sample; normal deviates from Marsaglia's polar method (Marsaglia & Bray 1964), gamma and Dirichlet deviates from the method of Marsaglia & Tsang 2000.");
    t.push_str(" Each sampled disk was validated like an input file; draws outside a field's allowed range were drawn again (truncated distributions).");
    t.push_str(&format!(
        " {} of {} samples ran ({} redraws); the bands are the 2.5, 16, 50, 84 and 97.5 percentiles over them at each radius of the nominal grid (Hyndman & Fan 1996, definition 7), and snowline percentiles are over the samples that have the snowline.",
        mc.succeeded, mc.samples, mc.redraws
    ));
    t.push_str(" The sensitivity is a one-at-a-time swing over each input's 16th and 84th percentiles (or its options) and a first-order variance index (Sobol 1993) estimated from the same samples by binning (Saltelli et al. 2008).");
    t
}

/// The references the uncertainty methods text ([`methods_text`]) cites, in order of first
/// citation (records in `nivalis_physics::references`).
pub const UNCERTAINTY_REFERENCES: [&str; 7] = [
    "blackman2021",
    "steele2014",
    "marsaglia1964",
    "marsaglia2000",
    "hyndman1996",
    "sobol1993",
    "saltelli2008",
];

/// The BibTeX file of the uncertainty methods text: the software first, then each reference it
/// cites once.
pub fn uncertainty_bibtex() -> String {
    std::iter::once(crate::bibtex::software_entry())
        .chain(
            UNCERTAINTY_REFERENCES
                .iter()
                .filter_map(|k| nivalis_physics::references::reference(k))
                .map(crate::bibtex::bibtex_entry),
        )
        .collect::<Vec<_>>()
        .join("\n")
}

/// The marginalised posterior as JSON.
pub fn posterior_json(
    post: &MarginalPosterior,
    seed: u64,
    failures: usize,
    spec: &UncertaintySpec,
    provenance: &Provenance,
) -> Value {
    let pair = |x: Option<(f64, f64)>| x.map_or(Value::Null, |(a, b)| json!([a, b]));
    json!({
        "program": provenance.program,
        "disk_hash": provenance.disk_hash,
        "seed": seed,
        "samples": post.samples + failures,
        "samples_succeeded": post.samples,
        "radius_au": post.radius_au,
        "radius_probability": post.radius_probability,
        "solid_to_gas": post.solid_to_gas,
        "solid_to_gas_probability": post.solid_to_gas_probability,
        "probability": post.probability,
        "radius_mode_au": opt(post.radius_mode_au),
        "radius_median_au": opt(post.radius_median_au),
        "radius_interval_68_au": pair(post.radius_interval_68_au),
        "radius_interval_95_au": pair(post.radius_interval_95_au),
        "goodness": {
            "degrees_of_freedom": post.degrees_of_freedom,
            "best_chi2": percentile_object(&post.best_chi2_percentiles),
            "p_value": percentile_object(&post.p_value_percentiles),
            "acceptable_fraction": post.acceptable_fraction,
        },
        "uncertainty": spec.section(),
        "disk": provenance.disk_value(),
    })
}

/// The marginalised posterior as a table: radius_au, probability (marginal over solid-to-gas),
/// cumulative probability.
pub fn posterior_table(post: &MarginalPosterior) -> Table {
    let mut cum = 0.0;
    Table {
        columns: vec![
            col("radius_au", "AU", "radial cell centre"),
            col("probability", "", "posterior probability of the radial cell, marginalised over the uncertain inputs and the solid-to-gas ratio"),
            col("cumulative", "", "cumulative posterior probability up to and including the cell"),
        ],
        rows: post
            .radius_au
            .iter()
            .zip(&post.radius_probability)
            .map(|(r, p)| {
                cum += p;
                vec![Some(*r), Some(*p), Some(cum)]
            })
            .collect(),
    }
}

/// The marginalised posterior as CSV: provenance lines, a seed line, [`posterior_table`].
pub fn posterior_csv(
    post: &MarginalPosterior,
    seed: u64,
    failures: usize,
    provenance: &Provenance,
) -> String {
    let mut out = csv_provenance_lines(provenance);
    out.push_str(&format!(
        "# monte carlo: seed {seed}, {} samples, {} succeeded; marginalised formation-radius posterior\n",
        post.samples + failures,
        post.samples
    ));
    let csv = to_csv(&posterior_table(post), provenance);
    out.push_str(&csv[csv_provenance_lines(provenance).len()..]);
    out
}

/// The marginalised posterior as ECSV (seed, samples and the uncertainty section in the metadata).
pub fn posterior_ecsv(
    post: &MarginalPosterior,
    seed: u64,
    failures: usize,
    spec: &UncertaintySpec,
    provenance: &Provenance,
    methods: &[MethodEntry],
) -> String {
    to_ecsv_with_meta(
        &posterior_table(post),
        provenance,
        methods,
        &[
            ("seed", seed.to_string()),
            ("samples", (post.samples + failures).to_string()),
            ("samples_succeeded", post.samples.to_string()),
            ("uncertainty", spec.section().to_string()),
        ],
    )
}

/// Checks the radius [au] the sensitivity is taken at: inside the disk. The
/// message has no field name; the CLI puts `--at-au: ` before it, the page
/// files it under `at_au`.
pub fn check_sensitivity_radius(
    p: &nivalis_physics::ModelParameters,
    at_au: f64,
) -> Result<(), String> {
    let d = &p.disk;
    if at_au >= d.inner_radius_au && at_au <= d.outer_radius_au {
        Ok(())
    } else {
        Err(format!(
            "must be inside the disk, in [{}, {}] au, got {at_au}",
            d.inner_radius_au, d.outer_radius_au
        ))
    }
}

/// A table of a Monte Carlo as `nivalis uncertainty --format F --table T`
/// writes it (JSON holds every table, so `which` only matters for CSV and ECSV).
pub fn uncertainty_text(
    r: &UncertaintyResult,
    format: crate::Format,
    which: UncertaintyTable,
) -> String {
    match format {
        crate::Format::Csv => table_csv(r, which),
        crate::Format::Ecsv => table_ecsv(r, which),
        crate::Format::Json => crate::formats::json_text(&uncertainty_json(r)),
    }
}

/// The methods file of a Monte Carlo (`nivalis uncertainty --methods FILE`): the
/// methods text and a final newline.
pub fn methods_file(spec: &UncertaintySpec, mc: &MonteCarlo) -> String {
    let mut text = methods_text(spec, mc);
    text.push('\n');
    text
}

/// One sample's inverse map for the marginalised posterior (docs/model.md section 13): the
/// sample's inputs drawn from `(seed, index)`, its disk (structure reused where it can be) and
/// the chi-square map of the observed planet over it. Shared by `nivalis fit --uncertainty`
/// (in parallel) and the page's worker (in order); both add the maps in index order.
pub fn posterior_sample_map(
    engine: &Engine,
    spec: &UncertaintySpec,
    seed: u64,
    index: u64,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<ChiSquareMap, String> {
    let d = spec.draw(&mut Rng::for_sample(seed, index))?;
    let m = engine.model(&d.parameters).map_err(|e| e.to_string())?;
    chi_square_map(&m, observed, settings).map_err(|e| e.to_string())
}

/// The one-at-a-time swing of the posterior's median formation radius [au] for one input: the
/// input at each of its `levels` (others nominal), the median of that one disk's posterior on the
/// nominal map's grid; `None` where fewer than two levels give a median (docs/model.md
/// section 13).
pub fn posterior_median_swing(
    engine: &Engine,
    base_map: &ChiSquareMap,
    levels: &[ModelParameters],
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Option<f64> {
    let medians: Vec<f64> = levels
        .iter()
        .filter_map(|p| {
            let m = engine.model(p).ok()?;
            let map = chi_square_map(&m, observed, settings).ok()?;
            let mut acc = PosteriorAccumulator::new(base_map);
            acc.add(&map).ok()?;
            acc.finish().radius_median_au
        })
        .collect();
    (medians.len() >= 2).then(|| {
        medians.iter().copied().fold(f64::NEG_INFINITY, f64::max)
            - medians.iter().copied().fold(f64::INFINITY, f64::min)
    })
}

/// The JSON of `nivalis fit ... --uncertainty --format json` (and of the page's marginalised
/// posterior): [`posterior_json`] plus `sensitivity_median_radius_au`, each input's swing.
pub fn marginal_fit_json(
    post: &MarginalPosterior,
    seed: u64,
    failures: usize,
    spec: &UncertaintySpec,
    provenance: &Provenance,
    swings: &[(String, Option<f64>)],
) -> Value {
    let mut j = posterior_json(post, seed, failures, spec, provenance);
    j["sensitivity_median_radius_au"] = Value::Array(
        swings
            .iter()
            .map(|(name, swing)| json!({"input": name, "swing_au": swing}))
            .collect(),
    );
    j
}

#[cfg(test)]
mod tests {
    /// The BibTeX entries are exactly the references the methods text cites (each once), plus
    /// the software's own entry; no other reference's citation appears in the text.
    #[test]
    fn uncertainty_bibtex_entries_equal_the_citations() {
        let text = r#"{"uncertainty": {"ices.sticking": {"distribution": "uniform", "low": 0.8, "high": 1}}}"#;
        let root = nivalis_disk_files::parse_json_text(text).unwrap();
        let file = nivalis_disk_files::from_value(&root).unwrap();
        let spec = nivalis_disk_files::uncertainty::read_uncertainty(&root, &file)
            .unwrap()
            .unwrap();
        let mc = nivalis_physics::uncertainty::summarise(&[1.0], 1, &[]);
        let text = super::methods_text(&spec, &mc);
        for r in nivalis_physics::references::REFERENCES {
            let listed = super::UNCERTAINTY_REFERENCES.contains(&r.key);
            assert_eq!(
                text.contains(r.citation),
                listed,
                "{}: {}",
                r.key,
                r.citation
            );
        }
        let bib = super::uncertainty_bibtex();
        for key in super::UNCERTAINTY_REFERENCES {
            assert_eq!(bib.matches(&format!("{{{key},")).count(), 1, "{key}");
        }
        assert_eq!(
            bib.matches("\n@").count(),
            super::UNCERTAINTY_REFERENCES.len()
        );
    }

    use super::*;
    use nivalis_disk_files::uncertainty::read_uncertainty;
    use nivalis_physics::uncertainty::{one_at_a_time, Engine};
    use nivalis_physics::Model;

    #[test]
    fn every_export_carries_the_seed_and_the_layout() {
        let text = r#"{"grid": {"radial_cells": 30, "vertical_cells": 10}, "uncertainty": {
            "star.abundances.offset_dex.C": {"distribution": "normal", "sigma": 0.05},
            "composition.carbon": {"distribution": "dirichlet", "concentration": 40}}}"#;
        let root = nivalis_disk_files::parse_json_text(text).unwrap();
        let file = nivalis_disk_files::from_value(&root).unwrap();
        let spec = read_uncertainty(&root, &file).unwrap().unwrap();
        let engine = Engine::new(Model::run(&file.parameters).unwrap());
        let draw = |rng: &mut nivalis_physics::random::Rng| spec.draw(rng);
        let results: Vec<_> = (0..20).map(|i| engine.run_sample(4242, i, &draw)).collect();
        let mc = nivalis_physics::uncertainty::summarise(engine.radius_au(), 4242, &results);
        let sens = one_at_a_time(&engine, 1.0, &spec.one_at_a_time_levels(), Some(&results));
        let prov = Provenance::of(&file);
        let used = crate::methods::methods(&file.parameters);
        let r = UncertaintyResult {
            monte_carlo: &mc,
            spec: &spec,
            sensitivity: Some(&sens),
            sensitivity_radius_au: 1.0,
            provenance: &prov,
            methods: &used,
        };
        let j = uncertainty_json(&r);
        assert_eq!(j["seed"], 4242);
        assert_eq!(j["samples"], 20);
        assert_eq!(j["radius_au"].as_array().unwrap().len(), 30);
        for q in [
            "c_to_o_gas",
            "c_to_o_ice",
            "c_to_o_solid",
            "c_to_h_gas",
            "o_to_h_solid",
        ] {
            for k in PERCENTILE_KEYS {
                assert_eq!(j["bands"][q][k].as_array().unwrap().len(), 30, "{q} {k}");
            }
        }
        assert!(j["snowlines"]["H2O"]["fraction"].as_f64().unwrap() > 0.9);
        assert!(j["snowlines"]["CO"]["p50"].is_number());
        assert!(j["uncertainty_methods"]
            .as_str()
            .unwrap()
            .contains("seed 4242"));
        for which in [
            UncertaintyTable::Bands,
            UncertaintyTable::Snowlines,
            UncertaintyTable::Sensitivity,
        ] {
            let csv = table_csv(&r, which);
            assert!(
                csv.contains("# monte carlo: seed 4242, 20 samples"),
                "{csv}"
            );
            let ecsv = table_ecsv(&r, which);
            assert!(ecsv.contains("#   seed: '4242'"), "{ecsv}");
            assert!(ecsv.starts_with("# %ECSV 1.0"));
        }
        let snow = table_csv(&r, UncertaintyTable::Snowlines);
        assert!(
            snow.contains("\nspecies,p2_5_au,p16_au,p50_au,p84_au,p97_5_au,fraction\nH2O,"),
            "{snow}"
        );
        let ecsv = table_ecsv(&r, UncertaintyTable::Sensitivity);
        assert!(ecsv.contains("\ninput,gas_c_to_o_swing,"), "{ecsv}");
        assert!(ecsv.contains("\nstar.abundances.offset_dex.C,"), "{ecsv}");
    }
}

#[cfg(test)]
mod front_end_tests {
    use super::*;

    #[test]
    fn the_sensitivity_radius_must_lie_in_the_disk() {
        let p = nivalis_physics::ModelParameters::defaults();
        let (inner, outer) = (p.disk.inner_radius_au, p.disk.outer_radius_au);
        assert_eq!(check_sensitivity_radius(&p, inner), Ok(()));
        assert_eq!(check_sensitivity_radius(&p, outer), Ok(()));
        assert_eq!(
            check_sensitivity_radius(&p, outer * 2.0).unwrap_err(),
            format!(
                "must be inside the disk, in [{inner}, {outer}] au, got {}",
                outer * 2.0
            )
        );
        assert!(check_sensitivity_radius(&p, f64::NAN).is_err());
    }
}
