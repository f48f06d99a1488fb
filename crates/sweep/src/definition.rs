//! The sweep file (`nivalis-sweep/1`, docs/sweep.md): base disk, axes, how
//! they combine, planets and fits; read with every problem listed at once.

use crate::SweepError;
use nivalis_disk_files::{is_unknown_field, set_path, Problem};
use nivalis_exports::planet::{weighting_from_key, FitOptions, PlanetOptions};
use nivalis_physics::planet::{MapSettings, MetallicityReference, ObservedEnvelope};
use serde_json::{Map, Value};
use std::path::Path;

/// The format identifier of a sweep file.
pub const SWEEP_SCHEMA: &str = "nivalis-sweep/1";

/// Most grid points one sweep may hold (a job array splits them into shards).
pub const MAX_POINTS: usize = 100_000_000;

/// Most values one range axis may hold.
pub const MAX_AXIS_VALUES: usize = 1_000_000;

/// How the axes combine into grid points.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Combine {
    /// Every combination; the first axis varies slowest.
    Grid,
    /// The i-th value of every axis together (all axes of equal length).
    Zip,
}

/// One axis: a dotted disk-file path and its values.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    /// Dotted path, e.g. `star.luminosity_lsun`.
    pub path: String,
    /// The values, in order.
    pub values: Vec<Value>,
    /// Whether every value is a number (a float column; else a column of JSON text).
    pub numeric: bool,
}

/// A planet placed in every model.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanetSpec {
    /// Column prefix (`planet_<name>_`).
    pub name: String,
    /// The request, as `nivalis planet` takes it.
    pub options: PlanetOptions,
}

/// An observed envelope fitted in every model.
#[derive(Debug, Clone, PartialEq)]
pub struct FitSpec {
    /// Column prefix (`fit_<name>_`).
    pub name: String,
    /// The observation.
    pub observed: ObservedEnvelope,
    /// The map settings.
    pub settings: MapSettings,
}

/// A validated sweep.
#[derive(Debug, Clone)]
pub struct Sweep {
    /// The sweep file with the base disk inlined (what the manifest records and the hash covers).
    pub resolved: Value,
    /// The base disk's JSON value.
    pub base: Value,
    /// The axes.
    pub axes: Vec<Axis>,
    /// How they combine.
    pub combine: Combine,
    /// Planets placed in every model.
    pub planets: Vec<PlanetSpec>,
    /// Observations fitted in every model.
    pub fits: Vec<FitSpec>,
    /// Number of grid points.
    pub points: usize,
    /// SHA-256 (hex) of the resolved sweep's compact JSON: shards of different sweeps never mix.
    pub hash: String,
}

fn bad(path: &str, value: &Value, allowed: &str, message: String) -> Problem {
    Problem::new(path, message)
        .with_value(value.to_string())
        .with_allowed(allowed)
}

fn unknown_keys(map: &Map<String, Value>, path: &str, known: &[&str], out: &mut Vec<Problem>) {
    for k in map.keys() {
        if !known.contains(&k.as_str()) {
            let at = if path.is_empty() {
                k.clone()
            } else {
                format!("{path}.{k}")
            };
            out.push(
                Problem::new(
                    at,
                    format!("unknown field; expected one of {}", known.join(", ")),
                )
                .with_value(k)
                .with_allowed(known.join(", ")),
            );
        }
    }
}

/// `from`, `to`, `count` of a range axis.
fn range_values(spec: &Value, path: &str, log: bool, out: &mut Vec<Problem>) -> Vec<Value> {
    let Some(m) = spec.as_object() else {
        out.push(bad(
            path,
            spec,
            "an object {from, to, count}",
            format!("must be an object {{\"from\", \"to\", \"count\"}}, got {spec}"),
        ));
        return Vec::new();
    };
    unknown_keys(m, path, &["from", "to", "count"], out);
    let number = |key: &str, out: &mut Vec<Problem>| -> Option<f64> {
        let v = m.get(key);
        match v.and_then(Value::as_f64).filter(|x| x.is_finite()) {
            Some(x) if !log || x > 0.0 => Some(x),
            _ => {
                let allowed = if log {
                    "a number > 0 (log range)"
                } else {
                    "a finite number"
                };
                let shown = v.cloned().unwrap_or(Value::Null);
                out.push(bad(
                    &format!("{path}.{key}"),
                    &shown,
                    allowed,
                    format!("must be {allowed}, got {shown}"),
                ));
                None
            }
        }
    };
    let from = number("from", out);
    let to = number("to", out);
    let count_v = m.get("count").cloned().unwrap_or(Value::Null);
    let count = count_v
        .as_u64()
        .filter(|&c| c >= 1 && c as usize <= MAX_AXIS_VALUES);
    if count.is_none() {
        out.push(bad(
            &format!("{path}.count"),
            &count_v,
            &format!("a whole number in [1, {MAX_AXIS_VALUES}]"),
            format!("must be a whole number in [1, {MAX_AXIS_VALUES}], got {count_v}"),
        ));
    }
    let (Some(a), Some(b), Some(n)) = (from, to, count) else {
        return Vec::new();
    };
    let n = n as usize;
    (0..n)
        .map(|k| {
            // Both ends exact; interior points from the start by a fraction of the span.
            let x = if k == 0 {
                a
            } else if k + 1 == n {
                b
            } else {
                let t = k as f64 / (n - 1) as f64;
                if log {
                    // a (b/a)^t: exact at decades (0.001 to 0.1 in 3 steps gives 0.01).
                    a * nivalis_physics::math::pow(b / a, t)
                } else {
                    a + t * (b - a)
                }
            };
            serde_json::json!(x)
        })
        .collect()
}

fn name_of(m: &Map<String, Value>, path: &str, i: usize, out: &mut Vec<Problem>) -> String {
    match m.get("name") {
        None => (i + 1).to_string(),
        Some(Value::String(s))
            if !s.is_empty()
                && s.len() <= 40
                && s.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') =>
        {
            s.clone()
        }
        Some(v) => {
            out.push(bad(
                &format!("{path}.name"),
                v,
                "1-40 letters, digits or _",
                format!("must be 1-40 letters, digits or _ (it names columns), got {v}"),
            ));
            String::new()
        }
    }
}

fn opt_f64(m: &Map<String, Value>, path: &str, key: &str, out: &mut Vec<Problem>) -> Option<f64> {
    let v = m.get(key)?;
    match v.as_f64() {
        Some(x) if v.is_number() => Some(x),
        _ => {
            out.push(bad(
                &format!("{path}.{key}"),
                v,
                "a number",
                format!("must be a number, got {v}"),
            ));
            None
        }
    }
}

/// `v` as an object, else a problem at `path`.
fn object<'v>(v: &'v Value, path: &str, out: &mut Vec<Problem>) -> Option<&'v Map<String, Value>> {
    let m = v.as_object();
    if m.is_none() {
        out.push(bad(
            path,
            v,
            "an object",
            format!("must be an object, got {v}"),
        ));
    }
    m
}

fn planet_spec(v: &Value, path: &str, i: usize, out: &mut Vec<Problem>) -> Option<PlanetSpec> {
    let m = object(v, path, out)?;
    unknown_keys(
        m,
        path,
        &[
            "name",
            "radius_au",
            "to_radius_au",
            "weighting",
            "solid_to_gas",
            "mix",
        ],
        out,
    );
    let before = out.len();
    let name = name_of(m, path, i, out);
    let radius_au = opt_f64(m, path, "radius_au", out);
    let solid_to_gas = opt_f64(m, path, "solid_to_gas", out);
    for (key, got) in [("radius_au", radius_au), ("solid_to_gas", solid_to_gas)] {
        if got.is_none() && !m.contains_key(key) {
            out.push(Problem::new(
                format!("{path}.{key}"),
                "is required (a number)",
            ));
        }
    }
    let to_radius_au = opt_f64(m, path, "to_radius_au", out);
    let mix = opt_f64(m, path, "mix", out).unwrap_or(1.0);
    let weighting = match m.get("weighting") {
        None => nivalis_physics::planet::RadialWeighting::AccretedMass,
        Some(w) => match w.as_str().and_then(weighting_from_key) {
            Some(w) => w,
            None => {
                out.push(bad(
                    &format!("{path}.weighting"),
                    w,
                    "accreted_mass, uniform or log_radius",
                    format!("must be one of accreted_mass, uniform, log_radius, got {w}"),
                ));
                nivalis_physics::planet::RadialWeighting::AccretedMass
            }
        },
    };
    (out.len() == before).then(|| PlanetSpec {
        name,
        options: PlanetOptions {
            radius_au: radius_au.unwrap_or_default(),
            to_radius_au,
            weighting,
            solid_to_gas: solid_to_gas.unwrap_or_default(),
            mix,
        },
    })
}

fn fit_spec(v: &Value, path: &str, i: usize, out: &mut Vec<Problem>) -> Option<FitSpec> {
    let m = object(v, path, out)?;
    let numbers = [
        "c_to_o",
        "c_to_o_sigma",
        "c_to_h_dex",
        "c_to_h_sigma",
        "o_to_h_dex",
        "o_to_h_sigma",
        "m_to_h_dex",
        "m_to_h_sigma",
        "mix",
        "ratio_min",
        "ratio_max",
        "ratio_count",
        "planet_mass_mjup",
    ];
    let mut known = vec!["name", "relative_to"];
    known.extend(numbers);
    unknown_keys(m, path, &known, out);
    let before = out.len();
    let name = name_of(m, path, i, out);
    let mut o = FitOptions::default();
    let g = |key: &str, out: &mut Vec<Problem>| opt_f64(m, path, key, out);
    o.c_to_o = g("c_to_o", out);
    o.c_to_o_sigma = g("c_to_o_sigma", out);
    o.c_to_h_dex = g("c_to_h_dex", out);
    o.c_to_h_sigma = g("c_to_h_sigma", out);
    o.o_to_h_dex = g("o_to_h_dex", out);
    o.o_to_h_sigma = g("o_to_h_sigma", out);
    o.m_to_h_dex = g("m_to_h_dex", out);
    o.m_to_h_sigma = g("m_to_h_sigma", out);
    o.planet_mass_mjup = g("planet_mass_mjup", out);
    if let Some(x) = g("mix", out) {
        o.mix = x;
    }
    if let Some(x) = g("ratio_min", out) {
        o.ratio_min = x;
    }
    if let Some(x) = g("ratio_max", out) {
        o.ratio_max = x;
    }
    if let Some(x) = m.get("ratio_count") {
        match x.as_u64() {
            Some(n) => o.ratio_count = n as usize,
            None => out.push(bad(
                &format!("{path}.ratio_count"),
                x,
                "a whole number",
                format!("must be a whole number, got {x}"),
            )),
        }
    }
    if let Some(r) = m.get("relative_to") {
        o.relative_to = match r.as_str() {
            Some("star") => MetallicityReference::Star,
            Some("sun") => MetallicityReference::Sun,
            _ => {
                out.push(bad(
                    &format!("{path}.relative_to"),
                    r,
                    "star or sun",
                    format!("must be \"star\" or \"sun\", got {r}"),
                ));
                MetallicityReference::Star
            }
        };
    }
    if out.len() > before {
        return None;
    }
    match o.build() {
        Ok((observed, settings)) => Some(FitSpec {
            name,
            observed,
            settings,
        }),
        Err(problems) => {
            for p in problems {
                out.push(Problem::new(format!("{path}.{}", p.option), p.message));
            }
            None
        }
    }
}

impl Sweep {
    /// Read a sweep file's text; a base disk given as a path is read relative to `base_dir`.
    pub fn from_json_text(text: &str, base_dir: &Path) -> Result<Sweep, SweepError> {
        let value: Value = serde_json::from_str(text).map_err(|e| {
            SweepError::one(
                "(sweep file)",
                format!(
                    "not valid JSON: {e} (line {}, column {})",
                    e.line(),
                    e.column()
                ),
            )
        })?;
        Sweep::from_value(&value, base_dir)
    }

    /// Read a sweep already parsed (the Python module passes a dict this way).
    pub fn from_value(value: &Value, base_dir: &Path) -> Result<Sweep, SweepError> {
        let mut out = Vec::new();
        let Some(top) = value.as_object() else {
            return Err(SweepError::one(
                "(sweep file)",
                format!(
                    "must be an object, got {}",
                    nivalis_disk_files::shorten(&value.to_string())
                ),
            ));
        };
        unknown_keys(
            top,
            "",
            &[
                "schema", "name", "base", "combine", "axes", "planets", "fits",
            ],
            &mut out,
        );
        if let Some(s) = top.get("schema") {
            if s.as_str() != Some(SWEEP_SCHEMA) {
                out.push(bad(
                    "schema",
                    s,
                    SWEEP_SCHEMA,
                    format!("must be \"{SWEEP_SCHEMA}\", got {s}"),
                ));
            }
        }
        // The base disk: inline, a path to a disk file, or absent (the default disk).
        let base = match top.get("base") {
            None => Value::Object(Map::new()),
            Some(Value::String(file)) => {
                let path = base_dir.join(file);
                match std::fs::read_to_string(&path) {
                    Ok(text) => match nivalis_disk_files::parse_json_text(&text) {
                        Ok(v) => v,
                        Err(ps) => {
                            for p in ps.0 {
                                out.push(Problem::new(
                                    format!("base ({}): {}", path.display(), p.path),
                                    p.message,
                                ));
                            }
                            Value::Null
                        }
                    },
                    Err(e) => {
                        out.push(
                            Problem::new("base", format!("cannot read {}: {e}", path.display()))
                                .with_value(file),
                        );
                        Value::Null
                    }
                }
            }
            Some(v @ Value::Object(_)) => v.clone(),
            Some(v) => {
                out.push(bad(
                    "base",
                    v,
                    "a disk-file path or an inline disk object",
                    format!("must be a disk-file path or an inline disk object, got {v}"),
                ));
                Value::Null
            }
        };
        let combine = match top.get("combine") {
            None => Combine::Grid,
            Some(v) => match v.as_str() {
                Some("grid") => Combine::Grid,
                Some("zip") => Combine::Zip,
                _ => {
                    out.push(bad(
                        "combine",
                        v,
                        "grid or zip",
                        format!("must be \"grid\" or \"zip\", got {v}"),
                    ));
                    Combine::Grid
                }
            },
        };
        let mut axes = Vec::new();
        match top.get("axes") {
            Some(Value::Array(list)) if !list.is_empty() => {
                for (i, a) in list.iter().enumerate() {
                    let at = format!("axes[{i}]");
                    let Some(m) = object(a, &at, &mut out) else {
                        continue;
                    };
                    unknown_keys(m, &at, &["path", "values", "linear", "log"], &mut out);
                    let path = match m.get("path") {
                        Some(Value::String(p)) => p.clone(),
                        other => {
                            let shown = other.cloned().unwrap_or(Value::Null);
                            out.push(bad(
                                &format!("{at}.path"),
                                &shown,
                                "a dotted disk-file path",
                                format!(
                                    "must be a dotted disk-file path such as star.luminosity_lsun, got {shown}"
                                ),
                            ));
                            continue;
                        }
                    };
                    let kinds: Vec<&str> = ["values", "linear", "log"]
                        .into_iter()
                        .filter(|k| m.contains_key(*k))
                        .collect();
                    if kinds.len() != 1 {
                        out.push(
                            Problem::new(
                                at.clone(),
                                format!(
                                    "needs exactly one of values, linear, log; got {}",
                                    if kinds.is_empty() {
                                        "none".to_string()
                                    } else {
                                        kinds.join(", ")
                                    }
                                ),
                            )
                            .with_allowed("one of values, linear, log"),
                        );
                        continue;
                    }
                    let values = match kinds[0] {
                        "values" => match &m["values"] {
                            Value::Array(vs) => vs.clone(),
                            v => {
                                out.push(bad(
                                    &format!("{at}.values"),
                                    v,
                                    "an array",
                                    format!("must be an array of values, got {v}"),
                                ));
                                continue;
                            }
                        },
                        kind => {
                            range_values(&m[kind], &format!("{at}.{kind}"), kind == "log", &mut out)
                        }
                    };
                    if values.is_empty() {
                        if kinds[0] != "values" {
                            continue; // the range's problems are listed already
                        }
                        out.push(
                            Problem::new(
                                format!("{at}.values"),
                                format!("axis {path} is empty: give at least one value"),
                            )
                            .with_value("[]")
                            .with_allowed("at least one value"),
                        );
                        continue;
                    }
                    if axes.iter().any(|x: &Axis| x.path == path) {
                        out.push(
                            Problem::new(
                                format!("{at}.path"),
                                format!("{path} is already an axis"),
                            )
                            .with_value(&path),
                        );
                        continue;
                    }
                    axes.push(Axis {
                        numeric: values.iter().all(Value::is_number),
                        path,
                        values,
                    });
                }
            }
            Some(Value::Array(_)) => out.push(
                Problem::new("axes", "is empty: give at least one axis")
                    .with_value("[]")
                    .with_allowed("at least one axis"),
            ),
            None => out.push(Problem::new(
                "axes",
                "is required: a list of axes {path, values | linear | log}",
            )),
            Some(v) => out.push(bad(
                "axes",
                v,
                "an array",
                format!("must be an array of axes, got {v}"),
            )),
        }
        let mut planets = Vec::new();
        let mut fits = Vec::new();
        for (key, is_planet) in [("planets", true), ("fits", false)] {
            match top.get(key) {
                None => {}
                Some(Value::Array(list)) => {
                    for (i, v) in list.iter().enumerate() {
                        let at = format!("{key}[{i}]");
                        if is_planet {
                            planets.extend(planet_spec(v, &at, i, &mut out));
                        } else {
                            fits.extend(fit_spec(v, &at, i, &mut out));
                        }
                    }
                }
                Some(v) => out.push(bad(
                    key,
                    v,
                    "an array",
                    format!("must be an array, got {v}"),
                )),
            }
        }
        let names: Vec<String> = planets
            .iter()
            .map(|p| format!("planet {}", p.name))
            .chain(fits.iter().map(|f| format!("fit {}", f.name)))
            .collect();
        for (i, n) in names.iter().enumerate() {
            if names[..i].contains(n) {
                out.push(Problem::new(
                    "name",
                    format!("two entries are named {n:?}: names make column names and must differ"),
                ));
            }
        }
        // Unknown paths are refused up front: every point would fail.
        for (i, axis) in axes.iter().enumerate() {
            let mut probe = base.clone();
            if let Err(p) = set_path(&mut probe, &axis.path, axis.values[0].clone()) {
                out.push(Problem::new(format!("axes[{i}].path"), p.message).with_value(&axis.path));
                continue;
            }
            if let Err(ps) = nivalis_disk_files::from_value(&probe) {
                for p in ps.0.iter().filter(|p| {
                    is_unknown_field(p)
                        && (axis.path == p.path || axis.path.starts_with(&format!("{}.", p.path)))
                }) {
                    out.push(
                        Problem::new(
                            format!("axes[{i}].path"),
                            format!("{}: {}", p.path, p.message),
                        )
                        .with_value(&axis.path)
                        .with_allowed(p.allowed.clone().unwrap_or_default()),
                    );
                }
            }
        }
        // An unknown field of the base disk itself (not an axis) would fail every point too.
        if out.is_empty() && !axes.is_empty() {
            let mut probe = base.clone();
            for a in &axes {
                let _ = set_path(&mut probe, &a.path, a.values[0].clone());
            }
            if let Err(ps) = nivalis_disk_files::from_value(&probe) {
                for p in ps.0.iter().filter(|p| is_unknown_field(p)) {
                    out.push(
                        Problem::new(format!("base: {}", p.path), p.message.clone())
                            .with_allowed(p.allowed.clone().unwrap_or_default()),
                    );
                }
            }
        }
        let points = match combine {
            Combine::Grid => axes
                .iter()
                .try_fold(1usize, |n, a| n.checked_mul(a.values.len())),
            Combine::Zip => {
                let n = axes.first().map_or(0, |a| a.values.len());
                for (i, a) in axes.iter().enumerate() {
                    if a.values.len() != n {
                        out.push(Problem::new(
                            format!("axes[{i}]"),
                            format!(
                                "zip needs axes of equal length: {} has {} values, {} has {n}",
                                a.path,
                                a.values.len(),
                                axes[0].path
                            ),
                        ));
                    }
                }
                Some(n)
            }
        };
        let points = match points {
            Some(n) if n <= MAX_POINTS => n,
            _ => {
                out.push(Problem::new(
                    "axes",
                    format!(
                        "the grid has more than {MAX_POINTS} points; split it into several sweeps"
                    ),
                ));
                0
            }
        };
        if !out.is_empty() {
            return Err(SweepError(out));
        }
        let mut resolved = top.clone();
        resolved.insert("base".into(), base.clone());
        let resolved = Value::Object(resolved);
        use sha2::{Digest, Sha256};
        let hash = Sha256::digest(resolved.to_string().as_bytes())
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect();
        Ok(Sweep {
            resolved,
            base,
            axes,
            combine,
            planets,
            fits,
            points,
            hash,
        })
    }

    /// The value of each axis at grid point `point` (< `self.points`).
    pub fn values_at(&self, point: usize) -> Vec<&Value> {
        match self.combine {
            Combine::Zip => self.axes.iter().map(|a| &a.values[point]).collect(),
            Combine::Grid => {
                // Mixed radix, the last axis fastest.
                let mut rest = point;
                let mut idx = vec![0; self.axes.len()];
                for (k, a) in self.axes.iter().enumerate().rev() {
                    idx[k] = rest % a.values.len();
                    rest /= a.values.len();
                }
                self.axes
                    .iter()
                    .zip(idx)
                    .map(|(a, i)| &a.values[i])
                    .collect()
            }
        }
    }

    /// The disk value of grid point `point`: the base with every axis value set.
    pub fn disk_value_at(&self, point: usize) -> Value {
        let mut v = self.base.clone();
        for (a, x) in self.axes.iter().zip(self.values_at(point)) {
            // Paths were checked in `from_value`; a path through a non-object is refused there.
            let _ = set_path(&mut v, &a.path, x.clone());
        }
        v
    }
}
