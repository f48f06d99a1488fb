//! The optional `uncertainty` section of a disk file (docs/disk-file.md "Uncertainty"): which
//! inputs are uncertain and how, read into an [`UncertaintySpec`] that draws one valid disk per
//! Monte Carlo sample (docs/model.md section 13).
//!
//! Keys are dotted disk-file paths (`"star.luminosity_lsun"`); each value is a distribution:
//! `{"distribution": "normal", "sigma": s}`, `{"distribution": "lognormal", "sigma_dex": s}`,
//! `{"distribution": "uniform", "low": a, "high": b}`, `{"distribution": "choice", "options":
//! [...]}` or, for a group of composition fractions, `{"distribution": "dirichlet",
//! "concentration": k}`. A sample is made by writing each drawn value at its path into the disk
//! file as written and reading the result with the same reader ([`crate::from_value`]), so every
//! sampled disk is a valid disk; a draw the reader refuses (outside a field's range) is drawn
//! again, at most [`MAX_REDRAWS`] times.

use crate::{from_value, shorten, DiskFile, Problem, Problems};
use nivalis_physics::balance::species_properties;
use nivalis_physics::math::{exp10, ln, sqrt};
use nivalis_physics::random::Rng;
use nivalis_physics::species::SpeciesTable;
use nivalis_physics::uncertainty::Draw;
use nivalis_physics::{ModelParameters, Species};
use serde_json::{Map, Value};

/// How many times a sample's draw may be refused (outside an allowed range) and drawn again
/// before the sample is reported as failed.
pub const MAX_REDRAWS: u32 = 100;

/// The composition groups a Dirichlet may vary (their fractions sum to 1).
pub const FRACTION_GROUPS: [&str; 3] = [
    "composition.carbon",
    "composition.nitrogen",
    "composition.sulfur",
];

/// Paths that set the radial grid, which must be the same in every sample (the bands are given
/// on one grid).
const GRID_PATHS: [&str; 5] = [
    "grid.radial_cells",
    "grid.vertical_cells",
    "grid.max_height_scale_heights",
    "disk.inner_radius_au",
    "disk.outer_radius_au",
];

/// One distribution.
#[derive(Debug, Clone, PartialEq)]
pub enum Distribution {
    /// Normal about the nominal value with standard deviation `sigma` (in the field's unit).
    Normal {
        /// Standard deviation.
        sigma: f64,
    },
    /// Log-normal: nominal x 10^(sigma_dex N(0, 1)) (median the nominal value).
    LogNormal {
        /// Width in dex.
        sigma_dex: f64,
    },
    /// Uniform in [low, high].
    Uniform {
        /// Lower end.
        low: f64,
        /// Upper end.
        high: f64,
    },
    /// One of the options, each equally likely.
    Choice {
        /// The options (any JSON values the field accepts).
        options: Vec<Value>,
    },
    /// Dirichlet about the nominal fractions f_i: alpha_i = concentration x f_i, so each
    /// fraction has mean f_i and standard deviation sqrt(f_i (1 - f_i) / (concentration + 1)).
    Dirichlet {
        /// The concentration (> 0).
        concentration: f64,
    },
}

impl Distribution {
    /// Key in disk files.
    pub fn key(&self) -> &'static str {
        match self {
            Distribution::Normal { .. } => "normal",
            Distribution::LogNormal { .. } => "lognormal",
            Distribution::Uniform { .. } => "uniform",
            Distribution::Choice { .. } => "choice",
            Distribution::Dirichlet { .. } => "dirichlet",
        }
    }

    /// The distribution in words, e.g. `normal, sigma 0.05`.
    pub fn describe(&self) -> String {
        match self {
            Distribution::Normal { sigma } => format!("normal, sigma {sigma}"),
            Distribution::LogNormal { sigma_dex } => format!("log-normal, sigma {sigma_dex} dex"),
            Distribution::Uniform { low, high } => format!("uniform in [{low}, {high}]"),
            Distribution::Choice { options } => format!(
                "one of {}",
                options
                    .iter()
                    .map(Value::to_string)
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            Distribution::Dirichlet { concentration } => {
                format!("Dirichlet about the given fractions, concentration {concentration}")
            }
        }
    }
}

/// One uncertain input.
#[derive(Debug, Clone, PartialEq)]
pub struct UncertainInput {
    /// Dotted disk-file path.
    pub path: String,
    /// Its distribution.
    pub distribution: Distribution,
    /// The nominal value (the file's, or the default the reader resolves).
    pub nominal: Value,
}

/// A disk file's uncertain inputs, ready to draw samples.
#[derive(Debug, Clone, PartialEq)]
pub struct UncertaintySpec {
    /// The inputs, in the file's order.
    pub inputs: Vec<UncertainInput>,
    /// The disk file as written, without its `uncertainty` section.
    base: Value,
    /// The section as written.
    section: Value,
}

const DISTRIBUTION_KEYS: [&str; 5] = ["normal", "lognormal", "uniform", "choice", "dirichlet"];

/// Read the `uncertainty` section of `root` (a disk file already read into `file` without
/// problems). `Ok(None)` when there is none. Every problem is reported at once under
/// `uncertainty.<path>...`: unknown paths (with the reader's did-you-mean), unknown or missing
/// keys, negative widths, ranges outside the field's allowed range or with low > high, options
/// the field does not accept, distributions that do not fit the field's type.
pub fn read_uncertainty(
    root: &Value,
    file: &DiskFile,
) -> Result<Option<UncertaintySpec>, Problems> {
    let Some(section) = root.get("uncertainty") else {
        return Ok(None);
    };
    let mut problems = Vec::new();
    let Some(entries) = section.as_object() else {
        return Err(Problems(vec![Problem::new(
            "uncertainty",
            format!(
                "must be an object of dotted disk-file paths and distributions, got {}",
                shorten(&section.to_string())
            ),
        )
        .with_value(section.to_string())
        .with_allowed("an object")]));
    };
    let mut base = root.clone();
    if let Some(m) = base.as_object_mut() {
        m.shift_remove("uncertainty");
    }
    let resolved = crate::to_value(file);
    let mut inputs = Vec::new();
    for (path, spec) in entries {
        let at = format!("uncertainty.{path}");
        match read_input(path, spec, &at, &base, &resolved, file) {
            Ok(input) => inputs.push(input),
            Err(mut p) => problems.append(&mut p),
        }
    }
    if problems.is_empty() {
        Ok(Some(UncertaintySpec {
            inputs,
            base,
            section: section.clone(),
        }))
    } else {
        Err(Problems(crate::cap_problems(problems)))
    }
}

/// The problems of `root`'s `uncertainty` section, for the reader's hook (none when the section
/// is absent or fine).
pub(crate) fn section_problems(root: &Value, file: &DiskFile) -> Vec<Problem> {
    match read_uncertainty(root, file) {
        Ok(_) => Vec::new(),
        Err(p) => p.0,
    }
}

fn number(
    spec: &Map<String, Value>,
    key: &str,
    at: &str,
    problems: &mut Vec<Problem>,
) -> Option<f64> {
    match spec.get(key) {
        None => {
            problems.push(Problem::new(
                format!("{at}.{key}"),
                format!("missing; the distribution needs {key}"),
            ));
            None
        }
        Some(v) => match v.as_f64() {
            Some(x) if x.is_finite() => Some(x),
            _ => {
                problems.push(
                    Problem::new(
                        format!("{at}.{key}"),
                        format!("must be a finite number, got {}", shorten(&v.to_string())),
                    )
                    .with_value(v.to_string())
                    .with_allowed("a finite number"),
                );
                None
            }
        },
    }
}

/// Sets a sampled value at its dotted path through the one setter of the crate
/// ([`crate::set_path`]). The section's paths were checked against the field
/// table and the base disk was read, so the walk meets only objects; were it
/// ever refused, the unchanged disk is kept and the reader's check of the
/// sample (which follows every set) still stands.
fn set_path(root: &mut Value, path: &str, value: Value) {
    let outcome = crate::set_path(root, path, value);
    debug_assert!(outcome.is_ok(), "{path}: {outcome:?}");
}

/// The problems the reader finds in `base` with `value` at `path` (empty when it reads).
fn problems_with(base: &Value, path: &str, value: Value) -> Vec<Problem> {
    let mut v = base.clone();
    set_path(&mut v, path, value);
    match from_value(&v) {
        Ok(_) => Vec::new(),
        Err(p) => p.0,
    }
}

/// The nominal value of a path the resolved file lacks: a species override takes the value the
/// species has without one (its binding-energy set's energy, frequency and yields).
fn override_nominal(path: &str, file: &DiskFile) -> Option<Value> {
    let rest = path.strip_prefix("ices.species_overrides.")?;
    let (species, field) = rest.split_once('.')?;
    let s = Species::from_key(species)?;
    let props = species_properties(&file.parameters, &SpeciesTable::built_in())[s.index()];
    let x = match field {
        "binding_energy_k" => props.binding_energy_k,
        "attempt_frequency_s" => props.vibration_frequency_s,
        "photodesorption_yield" => props.photodesorption_yield,
        "condensation_temperature_k" => props.condensation_temperature_k,
        _ => return None,
    };
    Some(Value::from(x))
}

fn read_input(
    path: &str,
    spec: &Value,
    at: &str,
    base: &Value,
    resolved: &Value,
    file: &DiskFile,
) -> Result<UncertainInput, Vec<Problem>> {
    let mut problems = Vec::new();
    if path.is_empty() || path.split('.').any(str::is_empty) {
        return Err(vec![Problem::new(
            at,
            "a path must be dotted disk-file field names, e.g. star.luminosity_lsun",
        )
        .with_value(format!("\"{}\"", shorten(path)))]);
    }
    if GRID_PATHS.contains(&path) {
        return Err(vec![Problem::new(
            at,
            "the radial grid (disk edges, grid cells) cannot be uncertain: every sample's bands are on the same grid",
        )]);
    }
    if path == "schema" || path == "name" || path == "notes" || path.starts_with("uncertainty") {
        return Err(vec![Problem::new(at, "not a model input")]);
    }
    let Some(spec) = spec.as_object() else {
        return Err(vec![Problem::new(
            at,
            format!("must be a distribution object, e.g. {{\"distribution\": \"normal\", \"sigma\": 0.1}}, got {}", shorten(&spec.to_string())),
        )
        .with_value(spec.to_string())]);
    };
    let kind = match spec.get("distribution").and_then(Value::as_str) {
        Some(k) if DISTRIBUTION_KEYS.contains(&k) => k,
        Some(k) => {
            let hint = crate::reader::suggestion(k, &DISTRIBUTION_KEYS)
                .map(|s| format!("; did you mean {s}?"))
                .unwrap_or_default();
            return Err(vec![Problem::new(
                format!("{at}.distribution"),
                format!(
                    "must be one of {}, got \"{}\"{hint}",
                    DISTRIBUTION_KEYS.join(", "),
                    shorten(k)
                ),
            )
            .with_value(format!("\"{k}\""))
            .with_allowed(DISTRIBUTION_KEYS.join(", "))]);
        }
        None => {
            return Err(vec![Problem::new(
                format!("{at}.distribution"),
                format!("missing; one of {}", DISTRIBUTION_KEYS.join(", ")),
            )
            .with_allowed(DISTRIBUTION_KEYS.join(", "))])
        }
    };
    let known: &[&str] = match kind {
        "normal" => &["distribution", "sigma"],
        "lognormal" => &["distribution", "sigma_dex"],
        "uniform" => &["distribution", "low", "high"],
        "choice" => &["distribution", "options"],
        _ => &["distribution", "concentration"],
    };
    for key in spec.keys() {
        if !known.contains(&key.as_str()) {
            let msg = match crate::reader::suggestion(key, known) {
                Some(s) => format!("unknown field of a {kind} distribution; did you mean {s}?"),
                None => format!(
                    "unknown field of a {kind} distribution; expected one of {}",
                    known.join(", ")
                ),
            };
            problems.push(Problem::new(format!("{at}.{key}"), msg));
        }
    }
    // The nominal value, and the path checked against the reader.
    let nominal = crate::get_at_path(resolved, path)
        .cloned()
        .or_else(|| override_nominal(path, file));
    let nominal = match nominal {
        Some(v) => v,
        None => {
            // Unknown to the resolved file: let the reader name the problem (with its did-you-mean).
            let probe = match kind {
                "choice" => spec
                    .get("options")
                    .and_then(|o| o.get(0))
                    .cloned()
                    .unwrap_or(Value::from(1.0)),
                _ => Value::from(1.0),
            };
            let found = problems_with(base, path, probe);
            let reason = found
                .iter()
                .find(|p| path.starts_with(&p.path) || p.path.starts_with(path))
                .or(found.first())
                .map(|p| format!("{}: {}", p.path, p.message))
                .unwrap_or_else(|| "not a field of the resolved disk file".to_string());
            problems.push(
                Problem::new(at, format!("unknown disk-file path ({reason})"))
                    .with_value(format!("\"{}\"", shorten(path))),
            );
            return Err(problems);
        }
    };
    if kind != "dirichlet"
        && FRACTION_GROUPS
            .iter()
            .any(|g| path.starts_with(&format!("{g}.")))
    {
        let group = FRACTION_GROUPS
            .iter()
            .find(|g| path.starts_with(&format!("{g}.")))
            .unwrap_or(&"");
        problems.push(Problem::new(
            at,
            format!("a single composition fraction cannot vary alone (the fractions sum to 1); give {group} a {{\"distribution\": \"dirichlet\", \"concentration\": ...}}"),
        ));
        return Err(problems);
    }
    let numeric = nominal.is_number();
    let check_value = |x: f64, key: &str, problems: &mut Vec<Problem>| {
        for p in problems_with(base, path, Value::from(x)) {
            problems.push(
                Problem::new(
                    format!("{at}.{key}"),
                    format!(
                        "gives {path} = {x}, which the disk file refuses: {}",
                        p.message
                    ),
                )
                .with_value(x.to_string())
                .with_allowed(p.allowed.clone().unwrap_or_default()),
            );
        }
    };
    let distribution = match kind {
        "normal" | "lognormal" | "uniform" if !numeric => {
            problems.push(Problem::new(
                at,
                format!(
                    "{path} is not a number ({}); use a choice distribution",
                    shorten(&nominal.to_string())
                ),
            ));
            None
        }
        "normal" => number(spec, "sigma", at, &mut problems).and_then(|sigma| {
            if sigma < 0.0 {
                problems.push(
                    Problem::new(format!("{at}.sigma"), format!("must be >= 0, got {sigma}"))
                        .with_value(sigma.to_string())
                        .with_allowed(">= 0"),
                );
                return None;
            }
            let x = nominal.as_f64().unwrap_or(0.0);
            // The 1-sigma range must be allowed: a wider one would be mostly redrawn (use a log-normal for a positive quantity).
            check_value(x - sigma, "sigma", &mut problems);
            check_value(x + sigma, "sigma", &mut problems);
            Some(Distribution::Normal { sigma })
        }),
        "lognormal" => number(spec, "sigma_dex", at, &mut problems).and_then(|sigma_dex| {
            if sigma_dex < 0.0 {
                problems.push(
                    Problem::new(
                        format!("{at}.sigma_dex"),
                        format!("must be >= 0, got {sigma_dex}"),
                    )
                    .with_value(sigma_dex.to_string())
                    .with_allowed(">= 0"),
                );
                return None;
            }
            let x = nominal.as_f64().unwrap_or(0.0);
            if !(x > 0.0) {
                problems.push(Problem::new(
                    at,
                    format!("a log-normal needs a positive nominal value; {path} is {x}"),
                ));
                return None;
            }
            check_value(x * exp10(-sigma_dex), "sigma_dex", &mut problems);
            check_value(x * exp10(sigma_dex), "sigma_dex", &mut problems);
            Some(Distribution::LogNormal { sigma_dex })
        }),
        "uniform" => {
            let low = number(spec, "low", at, &mut problems);
            let high = number(spec, "high", at, &mut problems);
            match (low, high) {
                (Some(low), Some(high)) if low > high => {
                    problems.push(
                        Problem::new(
                            format!("{at}.high"),
                            format!("must be >= low ({low}), got {high}"),
                        )
                        .with_value(high.to_string())
                        .with_allowed(format!(">= {low}")),
                    );
                    None
                }
                (Some(low), Some(high)) => {
                    check_value(low, "low", &mut problems);
                    check_value(high, "high", &mut problems);
                    Some(Distribution::Uniform { low, high })
                }
                _ => None,
            }
        }
        "choice" => match spec.get("options").and_then(Value::as_array) {
            None => {
                problems.push(
                    Problem::new(
                        format!("{at}.options"),
                        "missing or not a list; give the options as a JSON array",
                    )
                    .with_allowed("a non-empty array"),
                );
                None
            }
            Some(options) if options.is_empty() => {
                problems.push(
                    Problem::new(format!("{at}.options"), "must list at least one option")
                        .with_allowed("a non-empty array"),
                );
                None
            }
            Some(options) => {
                for (i, o) in options.iter().enumerate() {
                    for p in problems_with(base, path, o.clone()) {
                        problems.push(
                            Problem::new(
                                format!("{at}.options[{i}]"),
                                format!("{}: {}", p.path, p.message),
                            )
                            .with_value(o.to_string())
                            .with_allowed(p.allowed.clone().unwrap_or_default()),
                        );
                    }
                }
                Some(Distribution::Choice {
                    options: options.clone(),
                })
            }
        },
        _ => {
            if !FRACTION_GROUPS.contains(&path) {
                problems.push(Problem::new(
                    at,
                    format!("a Dirichlet distribution varies a group of fractions that sum to 1: one of {}", FRACTION_GROUPS.join(", ")),
                ));
                None
            } else {
                number(spec, "concentration", at, &mut problems).and_then(|k| {
                    if !(k > 0.0) {
                        problems.push(
                            Problem::new(
                                format!("{at}.concentration"),
                                format!("must be > 0, got {k}"),
                            )
                            .with_value(k.to_string())
                            .with_allowed("> 0"),
                        );
                        None
                    } else {
                        Some(Distribution::Dirichlet { concentration: k })
                    }
                })
            }
        }
    };
    match distribution {
        Some(distribution) if problems.is_empty() => Ok(UncertainInput {
            path: path.to_string(),
            distribution,
            nominal,
        }),
        _ => Err(problems),
    }
}

/// A level of one input for the one-at-a-time sensitivity.
fn normal_quantile_16_84() -> [f64; 2] {
    // z of the 16th and 84th percentiles, rounded to +-1 as the bands' 1-sigma range.
    [-1.0, 1.0]
}

impl UncertaintySpec {
    /// The section as written (for exports and methods).
    pub fn section(&self) -> &Value {
        &self.section
    }

    /// The disk file as written, without the section.
    pub fn base(&self) -> &Value {
        &self.base
    }

    /// Draw one value of input `i`: the JSON value to write at its path and the scalar recorded
    /// for the variance index (the value; a choice's option index; a Dirichlet's largest nominal
    /// fraction).
    fn draw_input(&self, i: usize, rng: &mut Rng) -> (Value, f64) {
        let input = &self.inputs[i];
        let x = input.nominal.as_f64().unwrap_or(0.0);
        match &input.distribution {
            Distribution::Normal { sigma } => {
                let v = rng.normal_with(x, *sigma);
                (Value::from(v), v)
            }
            Distribution::LogNormal { sigma_dex } => {
                let v = rng.lognormal_dex(x, *sigma_dex);
                (Value::from(v), v)
            }
            Distribution::Uniform { low, high } => {
                let v = rng.uniform_in(*low, *high);
                (Value::from(v), v)
            }
            Distribution::Choice { options } => {
                let k = rng.index(options.len());
                (options[k].clone(), k as f64)
            }
            Distribution::Dirichlet { concentration } => {
                let Some(m) = input.nominal.as_object() else {
                    return (input.nominal.clone(), 0.0);
                };
                let keys: Vec<&String> = m.keys().collect();
                let f: Vec<f64> = m.values().map(|v| v.as_f64().unwrap_or(0.0)).collect();
                let alpha: Vec<f64> = f.iter().map(|x| concentration * x).collect();
                let mut out = vec![0.0; f.len()];
                rng.dirichlet(&alpha, &mut out);
                let largest = (0..f.len()).fold(0, |b, k| if f[k] > f[b] { k } else { b });
                let mut obj = Map::new();
                for (k, v) in keys.iter().zip(&out) {
                    obj.insert((*k).clone(), Value::from(*v));
                }
                (Value::Object(obj), out.get(largest).copied().unwrap_or(0.0))
            }
        }
    }

    /// One sample's disk: every input drawn and written at its path, read by the reader; drawn
    /// again (all inputs) while the reader refuses it, at most [`MAX_REDRAWS`] times.
    pub fn draw(&self, rng: &mut Rng) -> Result<Draw, String> {
        let mut last = String::new();
        for redraws in 0..=MAX_REDRAWS {
            let mut v = self.base.clone();
            let mut inputs = Vec::with_capacity(self.inputs.len());
            for (i, input) in self.inputs.iter().enumerate() {
                let (value, scalar) = self.draw_input(i, rng);
                set_path(&mut v, &input.path, value);
                inputs.push(scalar);
            }
            match from_value(&v) {
                Ok(file) => {
                    return Ok(Draw {
                        parameters: file.parameters,
                        inputs,
                        redraws,
                    })
                }
                Err(p) => last = p.to_string(),
            }
        }
        Err(format!(
            "no valid disk in {} draws; the last was refused: {}",
            MAX_REDRAWS + 1,
            last.lines().next().unwrap_or("")
        ))
    }

    /// The disk with input `i` at `value` and every other input nominal.
    fn with_value(&self, i: usize, value: Value) -> Result<ModelParameters, String> {
        let mut v = self.base.clone();
        set_path(&mut v, &self.inputs[i].path, value);
        from_value(&v)
            .map(|f| f.parameters)
            .map_err(|p| p.to_string())
    }

    /// The levels of each input for the one-at-a-time sensitivity: a continuous input at its
    /// 16th and 84th percentiles (nominal -+ sigma, nominal x 10^-+sigma_dex, or the uniform's
    /// 16th and 84th percentiles), a choice at every option, a Dirichlet at the nominal fractions
    /// with the largest moved by -+ its standard deviation (the others scaled to keep the sum).
    /// Levels the reader refuses are left out.
    pub fn one_at_a_time_levels(&self) -> Vec<(String, Vec<ModelParameters>)> {
        self.inputs
            .iter()
            .enumerate()
            .map(|(i, input)| {
                let x = input.nominal.as_f64().unwrap_or(0.0);
                let values: Vec<Value> = match &input.distribution {
                    Distribution::Normal { sigma } => normal_quantile_16_84()
                        .iter()
                        .map(|z| Value::from(x + z * sigma))
                        .collect(),
                    Distribution::LogNormal { sigma_dex } => normal_quantile_16_84()
                        .iter()
                        .map(|z| Value::from(x * exp10(z * sigma_dex)))
                        .collect(),
                    Distribution::Uniform { low, high } => [0.16, 0.84]
                        .iter()
                        .map(|q| Value::from(low + (high - low) * q))
                        .collect(),
                    Distribution::Choice { options } => options.clone(),
                    Distribution::Dirichlet { concentration } => {
                        let m = input.nominal.as_object().cloned().unwrap_or_default();
                        let f: Vec<f64> = m.values().map(|v| v.as_f64().unwrap_or(0.0)).collect();
                        let largest = (0..f.len()).fold(0, |b, k| if f[k] > f[b] { k } else { b });
                        let fl = f.get(largest).copied().unwrap_or(0.0);
                        let sd = sqrt(fl * (1.0 - fl) / (concentration + 1.0));
                        [-1.0, 1.0]
                            .iter()
                            .map(|z| {
                                let target = (fl + z * sd).clamp(0.0, 1.0);
                                let rest = 1.0 - fl;
                                let scale = if rest > 0.0 {
                                    (1.0 - target) / rest
                                } else {
                                    0.0
                                };
                                let mut obj = Map::new();
                                for (k, (key, _)) in m.iter().enumerate() {
                                    let v = if k == largest { target } else { f[k] * scale };
                                    obj.insert(key.clone(), Value::from(v));
                                }
                                Value::Object(obj)
                            })
                            .collect()
                    }
                };
                let levels = values
                    .into_iter()
                    .filter_map(|v| self.with_value(i, v).ok())
                    .collect();
                (input.path.clone(), levels)
            })
            .collect()
    }
}

/// An `uncertainty` entry for the range an anchor found (`nivalis anchor --sigma-au`): the
/// parameter's values at the observed radius -+ sigma taken as its 16th and 84th percentiles
/// of a log-normal about the anchored value, sigma_dex = (log10 high - log10 low) / 2.
/// `None` when either end has no value or they are not positive.
pub fn anchor_entry(low: Option<f64>, high: Option<f64>) -> Option<Value> {
    let (a, b) = (low?, high?);
    let (lo, hi) = if a <= b { (a, b) } else { (b, a) };
    if !(lo > 0.0 && hi.is_finite()) {
        return None;
    }
    let sigma_dex = (ln(hi) - ln(lo)) / (2.0 * std::f64::consts::LN_10);
    Some(serde_json::json!({"distribution": "lognormal", "sigma_dex": sigma_dex}))
}

/// Writes the range an anchor found into the disk's `uncertainty` section, keeping the
/// section's other entries: the entry of [`anchor_entry`] under the anchored parameter's
/// disk-file path. Returns `false` (and leaves the disk as it was) when the range has no
/// value at one end. The CLI's `anchor --sigma-au` and the page's anchoring both call it.
pub fn add_anchor_entry(
    file: &mut crate::DiskFile,
    parameter_path: &str,
    low: Option<f64>,
    high: Option<f64>,
) -> bool {
    let Some(entry) = anchor_entry(low, high) else {
        return false;
    };
    let mut section = file
        .uncertainty
        .take()
        .filter(Value::is_object)
        .unwrap_or_else(|| Value::Object(Map::new()));
    if let Some(m) = section.as_object_mut() {
        m.insert(parameter_path.to_string(), entry);
    }
    file.uncertainty = Some(section);
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::json::parse_json_text;

    /// A disk's section survives reading and writing (a saved or anchored disk keeps its
    /// uncertain inputs), and an anchor's range is added beside the other entries.
    #[test]
    fn the_section_is_kept_and_an_anchor_range_added() {
        let text = r#"{"uncertainty": {"star.luminosity_lsun": {"distribution": "lognormal", "sigma_dex": 0.1}}}"#;
        let mut file = crate::parse_disk_json(text).unwrap();
        let written = crate::to_value(&file);
        assert_eq!(
            written["uncertainty"]["star.luminosity_lsun"]["sigma_dex"],
            serde_json::json!(0.1)
        );
        assert!(add_anchor_entry(
            &mut file,
            "disk.flaring_angle",
            Some(0.01),
            Some(0.04)
        ));
        let section = crate::to_value(&file)["uncertainty"].clone();
        assert!(section.get("star.luminosity_lsun").is_some());
        // log10(0.04 / 0.01) / 2 = log10(2)
        let s = section["disk.flaring_angle"]["sigma_dex"].as_f64().unwrap();
        assert!((s - std::f64::consts::LOG10_2).abs() < 1e-12, "{s}");
        // No value at one end: nothing written.
        assert!(!add_anchor_entry(
            &mut file,
            "disk.flaring_angle",
            None,
            Some(0.04)
        ));
        // The written disk reads again, section and all.
        let again = crate::from_value(&crate::to_value(&file)).unwrap();
        assert_eq!(again.uncertainty, file.uncertainty);
        // A disk without a section writes none.
        assert!(crate::to_value(&crate::DiskFile::defaults())
            .get("uncertainty")
            .is_none());
    }

    fn spec(text: &str) -> Result<Option<UncertaintySpec>, Vec<String>> {
        let root = parse_json_text(text)
            .map_err(|p| p.0.iter().map(|x| x.to_string()).collect::<Vec<_>>())?;
        let mut without = root.clone();
        without.as_object_mut().unwrap().shift_remove("uncertainty");
        let file = from_value(&without)
            .map_err(|p| p.0.iter().map(|x| x.to_string()).collect::<Vec<_>>())?;
        read_uncertainty(&root, &file).map_err(|p| p.0.iter().map(|x| x.to_string()).collect())
    }

    #[test]
    fn a_good_section_is_read() {
        let s = spec(
            r#"{"star": {"luminosity_lsun": 2}, "uncertainty": {
                "star.luminosity_lsun": {"distribution": "lognormal", "sigma_dex": 0.1},
                "star.abundances.offset_dex.C": {"distribution": "normal", "sigma": 0.05},
                "disk.flaring_angle": {"distribution": "uniform", "low": 0.015, "high": 0.03},
                "ices.binding_energies": {"distribution": "choice", "options": ["transition_state", "on_water_ice"]},
                "disk.opacity.kind": {"distribution": "choice", "options": ["constant", "bell_lin_1994"]},
                "composition.carbon": {"distribution": "dirichlet", "concentration": 50},
                "ices.species_overrides.CO.binding_energy_k": {"distribution": "normal", "sigma": 50}
            }}"#,
        )
        .unwrap()
        .unwrap();
        assert_eq!(s.inputs.len(), 7);
        assert_eq!(s.inputs[0].nominal, Value::from(2.0));
        // The override's nominal is the set's energy of CO.
        assert!(s.inputs[6].nominal.as_f64().unwrap() > 500.0);
        let d = s.draw(&mut Rng::for_sample(1, 0)).unwrap();
        assert_eq!(d.inputs.len(), 7);
        let c = &d.parameters.composition.carbon;
        assert!((c.co + c.co2 + c.ch4 + c.ch3oh + c.hcn + c.refractory - 1.0).abs() < 1e-12);
        assert_ne!(d.parameters.star.luminosity_lsun, 2.0);
        let levels = s.one_at_a_time_levels();
        assert_eq!(
            levels.iter().map(|l| l.1.len()).collect::<Vec<_>>(),
            vec![2, 2, 2, 2, 2, 2, 2]
        );
    }

    #[test]
    fn zero_widths_give_the_nominal_disk() {
        let text = r#"{"disk": {"gas_mass_msun": 0.02}, "uncertainty": {
            "disk.gas_mass_msun": {"distribution": "lognormal", "sigma_dex": 0},
            "star.luminosity_lsun": {"distribution": "normal", "sigma": 0},
            "disk.age_myr": {"distribution": "uniform", "low": 1, "high": 1},
            "ices.desorption": {"distribution": "choice", "options": ["zeroth_order"]}
        }}"#;
        let s = spec(text).unwrap().unwrap();
        let nominal = crate::parse_disk_json(text).unwrap().parameters;
        for i in 0..5 {
            let d = s.draw(&mut Rng::for_sample(3, i)).unwrap();
            assert_eq!(d.parameters, nominal);
        }
    }

    #[test]
    fn bad_specifications_are_named() {
        let problems = spec(
            r#"{"uncertainty": {
                "star.luminosity_lsn": {"distribution": "normal", "sigma": 0.1},
                "star.mass_msun": {"distribution": "normal", "sigma": -0.1},
                "disk.dust_to_gas": {"distribution": "normal", "sigma": 0.02},
                "disk.age_myr": {"distribution": "uniform", "low": 3, "high": 1},
                "disk.opacity.kind": {"distribution": "choice", "options": ["constant", "bell_lin"]},
                "star.effective_temperature_k": {"distribution": "gaussian", "sigma": 100},
                "disk.accretion_rate_msun_per_yr": {"distribution": "lognormal", "sigam_dex": 0.3},
                "composition.carbon.CO": {"distribution": "normal", "sigma": 0.05},
                "grid.radial_cells": {"distribution": "choice", "options": [100, 200]}
            }}"#,
        )
        .unwrap_err();
        let all = problems.join("\n");
        for expect in [
            "uncertainty.star.luminosity_lsn: unknown disk-file path (star.luminosity_lsn: unknown field; did you mean luminosity_lsun?)",
            "uncertainty.star.mass_msun.sigma: must be >= 0, got -0.1",
            "uncertainty.disk.dust_to_gas.sigma: gives disk.dust_to_gas = -0.01",
            "uncertainty.disk.age_myr.high: must be >= low (3), got 1",
            "uncertainty.disk.opacity.kind.options[1]: disk.opacity.kind: must be one of",
            "uncertainty.star.effective_temperature_k.distribution: must be one of normal, lognormal, uniform, choice, dirichlet, got \"gaussian\"",
            "uncertainty.disk.accretion_rate_msun_per_yr.sigam_dex: unknown field of a lognormal distribution; did you mean sigma_dex?",
            "uncertainty.composition.carbon.CO: a single composition fraction cannot vary alone",
            "uncertainty.grid.radial_cells: the radial grid",
        ] {
            assert!(all.contains(expect), "missing {expect:?} in\n{all}");
        }
    }

    #[test]
    fn the_reader_reports_a_bad_section() {
        let e = crate::parse_disk_json(
            r#"{"uncertainty": {"star.mass_msun": {"distribution": "normal", "sigma": -1}}}"#,
        )
        .unwrap_err();
        assert!(
            e.to_string()
                .contains("uncertainty.star.mass_msun.sigma: must be >= 0"),
            "{e}"
        );
        assert!(crate::parse_disk_json(
            r#"{"uncertainty": {"star.mass_msun": {"distribution": "normal", "sigma": 0.1}}}"#
        )
        .is_ok());
    }

    #[test]
    fn anchor_range_becomes_a_lognormal() {
        let v = anchor_entry(Some(0.01), Some(0.04)).unwrap();
        assert_eq!(v["distribution"], "lognormal");
        assert!((v["sigma_dex"].as_f64().unwrap() - std::f64::consts::LOG10_2).abs() < 1e-12);
        assert_eq!(anchor_entry(None, Some(1.0)), None);
    }
}
