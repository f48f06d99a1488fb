//! `nivalis._core`: the thin PyO3 layer of the `nivalis` Python module.
//!
//! It only forwards: disks are read by `nivalis_disk_files` (the same reader
//! as the CLI and the page), models run by `nivalis_physics::Model::run`,
//! tables and texts built by `nivalis_exports` exactly as the CLI builds them,
//! and sweep points run by `nivalis_sweep`. The Python package
//! (`python/nivalis/`) turns these into `Disk`, `Model`, astropy `QTable`s and
//! Dask sweeps. Every model run releases the GIL.

use nivalis_disk_files::{from_value, parse_json_text, set_path, DiskFile, Problem};
use nivalis_exports::formats::json_text;
use nivalis_exports::methods::methods;
use nivalis_exports::planet::{weighting_from_key, FitOptions, PlanetOptions};
use nivalis_exports::{
    elements_table, map_table, model_table, structure_table, to_csv, to_ecsv, to_json, MapQuantity,
    Provenance, Table,
};
use nivalis_physics::planet::{ConfidenceConvention, MetallicityReference};
use nivalis_sweep::{ColumnData, Sweep};
use numpy::PyArray1;
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::types::PyList;
use serde_json::{json, Value};
use std::path::Path;

fn problems_json(problems: &[Problem]) -> String {
    Value::Array(
        problems
            .iter()
            .map(|p| {
                json!({"path": p.path, "value": p.value, "allowed": p.allowed, "message": p.message})
            })
            .collect(),
    )
    .to_string()
}

fn value_error(message: impl Into<String>) -> PyErr {
    PyValueError::new_err(message.into())
}

fn parse_value(text: &str) -> Result<Value, Vec<Problem>> {
    parse_json_text(text).map_err(|p| p.0)
}

/// Read and validate a disk given as JSON text with the same reader as the CLI.
/// Returns `(True, resolved_disk_json, warnings_json)` or `(False, problems_json, "[]")`:
/// problems as a JSON list of `{path, value, allowed, message}`.
#[pyfunction]
fn read_disk(text: &str) -> (bool, String, String) {
    match parse_value(text).and_then(|v| from_value(&v).map_err(|p| p.0)) {
        Ok(file) => (
            true,
            nivalis_disk_files::to_json_string(&file),
            problems_json(&file.warnings),
        ),
        Err(problems) => (false, problems_json(&problems), "[]".into()),
    }
}

/// The disk JSON `disk` with every `{dotted path: value}` of the JSON object
/// `values` set (not validated: read the result with `read_disk`).
#[pyfunction]
fn with_values(disk: &str, values: &str) -> PyResult<String> {
    let mut v = parse_value(disk).map_err(|p| value_error(problems_json(&p)))?;
    let values: Value = serde_json::from_str(values).map_err(|e| value_error(e.to_string()))?;
    let Some(map) = values.as_object() else {
        return Err(value_error(
            "values must be a mapping of dotted paths to values",
        ));
    };
    for (path, x) in map {
        set_path(&mut v, path, x.clone()).map_err(|p| value_error(problems_json(&[p])))?;
    }
    Ok(v.to_string())
}

/// A computed model with its disk file and provenance.
#[pyclass(module = "nivalis._core", frozen)]
struct CoreModel {
    file: DiskFile,
    model: nivalis_physics::Model,
    provenance: Provenance,
}

/// Run the model of a disk (JSON text); the GIL is released while it runs.
/// Invalid disks raise `ValueError` with the problems as JSON.
#[pyfunction]
fn run(py: Python<'_>, disk: &str) -> PyResult<CoreModel> {
    let text = disk.to_string();
    py.detach(move || {
        let v = parse_value(&text).map_err(|p| problems_json(&p))?;
        let file = from_value(&v).map_err(|p| problems_json(&p.0))?;
        let model = nivalis_physics::Model::run(&file.parameters)
            .map_err(|e| problems_json(&[Problem::from_physics(&e)]))?;
        let provenance = Provenance::of(&file);
        Ok::<CoreModel, String>(CoreModel {
            file,
            model,
            provenance,
        })
    })
    .map_err(value_error)
}

impl CoreModel {
    fn table(&self, kind: &str, quantity: Option<&str>) -> PyResult<Table> {
        Ok(match kind {
            "profile" => model_table(&self.model),
            "structure" => structure_table(&self.model),
            "elements" => elements_table(&self.model),
            "map" => {
                let q = quantity.ok_or_else(|| value_error("map needs a quantity"))?;
                let parsed = MapQuantity::parse(q).map_err(value_error)?;
                map_table(&self.model, parsed, &q.replace(':', "_"))
            }
            other => {
                return Err(value_error(format!(
                    "unknown table {other:?}; expected profile, structure, elements or map"
                )))
            }
        })
    }
}

#[pymethods]
impl CoreModel {
    /// The resolved disk file, exactly as `nivalis` saves it.
    fn disk_json(&self) -> String {
        self.provenance.disk_json.clone()
    }

    /// Provenance as JSON: `{program, disk_hash, disk}`.
    fn provenance_json(&self) -> String {
        json!({
            "program": self.provenance.program,
            "disk_hash": self.provenance.disk_hash,
            "disk": self.provenance.disk,
        })
        .to_string()
    }

    /// A table's columns `[{name, unit, description}]` as JSON and its values,
    /// one float64 array per column (NaN where undefined).
    fn table_arrays<'py>(
        &self,
        py: Python<'py>,
        kind: &str,
        quantity: Option<&str>,
    ) -> PyResult<(String, Vec<Bound<'py, PyArray1<f64>>>)> {
        let t = self.table(kind, quantity)?;
        let columns = Value::Array(
            t.columns
                .iter()
                .map(|c| json!({"name": c.name, "unit": c.unit, "description": c.description}))
                .collect(),
        );
        let arrays = (0..t.columns.len())
            .map(|k| {
                let v: Vec<f64> = t.rows.iter().map(|r| r[k].unwrap_or(f64::NAN)).collect();
                PyArray1::from_vec(py, v)
            })
            .collect();
        Ok((columns.to_string(), arrays))
    }

    /// A table as the CLI writes it (`csv`, `ecsv` or `json`), byte for byte.
    fn table_text(&self, kind: &str, quantity: Option<&str>, format: &str) -> PyResult<String> {
        let t = self.table(kind, quantity)?;
        let used = methods(&self.file.parameters);
        Ok(match format {
            "csv" => to_csv(&t, &self.provenance),
            "ecsv" => to_ecsv(&t, &self.provenance, &used),
            "json" => json_text(&to_json(&t, &self.provenance, &used)),
            other => {
                return Err(value_error(format!(
                    "unknown format {other:?}; expected csv, ecsv or json"
                )))
            }
        })
    }

    /// `nivalis snowlines` output (JSON text).
    fn snowlines_text(&self) -> String {
        json_text(&nivalis_exports::snowlines::snowlines_json(
            &self.model,
            &self.provenance,
        ))
    }

    /// `nivalis planet` output (`json` or `csv`).
    #[pyo3(signature = (radius_au, solid_to_gas, to_radius_au=None, weighting="accreted_mass", mix=1.0, format="json"))]
    fn planet_text(
        &self,
        radius_au: f64,
        solid_to_gas: f64,
        to_radius_au: Option<f64>,
        weighting: &str,
        mix: f64,
        format: &str,
    ) -> PyResult<String> {
        let weighting = weighting_from_key(weighting).ok_or_else(|| {
            value_error(format!(
                "weighting: must be one of accreted_mass, uniform, log_radius, got {weighting:?}"
            ))
        })?;
        let request = PlanetOptions {
            radius_au,
            to_radius_au,
            weighting,
            solid_to_gas,
            mix,
        }
        .request();
        let result = nivalis_physics::planet::planet(&self.model, &request)
            .map_err(|e| value_error(problems_json(&[Problem::from_physics(&e)])))?;
        Ok(match format {
            "json" => json_text(&nivalis_exports::planet::planet_json(
                &result,
                &request.place,
                &self.provenance,
            )),
            "csv" => to_csv(
                &nivalis_exports::planet::planet_table(&result),
                &self.provenance,
            ),
            other => {
                return Err(value_error(format!(
                    "unknown format {other:?}; expected json or csv"
                )))
            }
        })
    }

    /// `nivalis fit` output (`json`, `csv` or `ecsv`) for the options given as a
    /// JSON object with the CLI's option names (underscored).
    fn fit_text(&self, options: &str, format: &str) -> PyResult<String> {
        let o = fit_options(options)?;
        let (observed, settings) = o.build().map_err(|ps| {
            value_error(problems_json(
                &ps.iter()
                    .map(|p| Problem::new(p.option.clone(), p.message.clone()))
                    .collect::<Vec<_>>(),
            ))
        })?;
        let map = nivalis_physics::planet::chi_square_map(&self.model, &observed, &settings)
            .map_err(|e| value_error(problems_json(&[Problem::from_physics(&e)])))?;
        let used = methods(&self.file.parameters);
        let p = &self.provenance;
        Ok(match format {
            "json" => json_text(&nivalis_exports::planet::fit_json(&map, p, &used)),
            "csv" => to_csv(&nivalis_exports::planet::fit_table(&map), p),
            "ecsv" => nivalis_exports::planet::fit_ecsv(&map, p, &used),
            other => {
                return Err(value_error(format!(
                    "unknown format {other:?}; expected json, csv or ecsv"
                )))
            }
        })
    }

    /// `nivalis methods` output: the methods paragraph.
    fn methods_text(&self) -> String {
        let used = methods(&self.file.parameters);
        nivalis_exports::bibtex::methods_paragraph(&self.file.parameters, &used, &self.provenance)
    }

    /// `nivalis methods --bibtex FILE` output: the BibTeX of the references cited.
    fn bibtex_text(&self) -> String {
        nivalis_exports::bibtex::bibtex(&methods(&self.file.parameters))
    }
}

fn fit_options(text: &str) -> PyResult<FitOptions> {
    let v: Value = serde_json::from_str(text).map_err(|e| value_error(e.to_string()))?;
    let m = v
        .as_object()
        .ok_or_else(|| value_error("fit options must be a mapping"))?;
    let mut o = FitOptions::default();
    let mut problems = Vec::new();
    for (key, x) in m {
        let num = || x.as_f64();
        let range = || -> Option<(f64, f64)> {
            let a = x.as_array()?;
            (a.len() == 2)
                .then(|| (a[0].as_f64(), a[1].as_f64()))
                .and_then(|(a, b)| Some((a?, b?)))
        };
        let ok = match key.as_str() {
            "c_to_o" => num().map(|y| o.c_to_o = Some(y)),
            "c_to_o_sigma" => num().map(|y| o.c_to_o_sigma = Some(y)),
            "c_to_h_dex" => num().map(|y| o.c_to_h_dex = Some(y)),
            "c_to_h_sigma" => num().map(|y| o.c_to_h_sigma = Some(y)),
            "o_to_h_dex" => num().map(|y| o.o_to_h_dex = Some(y)),
            "o_to_h_sigma" => num().map(|y| o.o_to_h_sigma = Some(y)),
            "m_to_h_dex" => num().map(|y| o.m_to_h_dex = Some(y)),
            "m_to_h_sigma" => num().map(|y| o.m_to_h_sigma = Some(y)),
            "mix" => num().map(|y| o.mix = y),
            "ratio_min" => num().map(|y| o.ratio_min = y),
            "ratio_max" => num().map(|y| o.ratio_max = y),
            "ratio_count" => x.as_u64().map(|y| o.ratio_count = y as usize),
            "planet_mass_mjup" => num().map(|y| o.planet_mass_mjup = Some(y)),
            "feeding_zone_hill_radii" => num().map(|y| o.feeding_zone_hill_radii = y),
            "oxygen_correction" => x.as_bool().map(|y| o.oxygen_correction = y),
            "radius_prior_au" => range().map(|y| o.radius_prior_au = Some(y)),
            "solid_to_gas_prior" => range().map(|y| o.solid_to_gas_prior = Some(y)),
            "covariance" => x
                .as_array()
                .and_then(|a| a.iter().map(Value::as_f64).collect::<Option<Vec<f64>>>())
                .map(|y| o.covariance = Some(y)),
            "relative_to" => match x.as_str() {
                Some("star") => Some(MetallicityReference::Star),
                Some("sun") => Some(MetallicityReference::Sun),
                _ => None,
            }
            .map(|r| o.relative_to = r),
            "convention" => match x.as_str() {
                Some("mapped_parameters") => Some(ConfidenceConvention::MappedParameters),
                Some("fitted_quantities") => Some(ConfidenceConvention::FittedQuantities),
                _ => None,
            }
            .map(|c| o.convention = c),
            _ => {
                problems.push(Problem::new(key.clone(), "unknown fit option").with_value(key));
                Some(())
            }
        };
        if ok.is_none() {
            problems.push(
                Problem::new(key.clone(), format!("invalid value {x}")).with_value(x.to_string()),
            );
        }
    }
    if problems.is_empty() {
        Ok(o)
    } else {
        Err(value_error(problems_json(&problems)))
    }
}

/// Read a sweep (JSON text; a base disk path is relative to `base_dir`).
/// Returns `(True, info_json)` with `{points, hash, columns, sweep}` or
/// `(False, problems_json)`.
#[pyfunction]
fn sweep_info(text: &str, base_dir: &str) -> (bool, String) {
    match Sweep::from_json_text(text, Path::new(base_dir)) {
        Ok(s) => {
            let columns: Vec<Value> = s
                .columns()
                .iter()
                .map(|c| {
                    json!({"name": c.name, "unit": c.unit, "description": c.description,
                    "kind": match c.kind { nivalis_sweep::run::Kind::Float => "float", nivalis_sweep::run::Kind::Text => "text", nivalis_sweep::run::Kind::Index => "index" }})
                })
                .collect();
            (
                true,
                json!({"points": s.points, "hash": s.hash, "columns": columns, "sweep": s.resolved})
                    .to_string(),
            )
        }
        Err(e) => (false, problems_json(&e.0)),
    }
}

/// Run grid points `start..end` of a sweep (the same code as `nivalis sweep`),
/// releasing the GIL. Returns one array per column (float64 with NaN where
/// undefined, uint64 for `point`, a list of str for text) and the failed
/// points as JSON.
#[pyfunction]
fn sweep_points(
    py: Python<'_>,
    text: &str,
    base_dir: &str,
    start: usize,
    end: usize,
) -> PyResult<(Vec<Py<PyAny>>, String)> {
    let sweep = Sweep::from_json_text(text, Path::new(base_dir))
        .map_err(|e| value_error(problems_json(&e.0)))?;
    let end = end.min(sweep.points);
    let part = py.detach(|| sweep.run_points(start.min(end)..end));
    let mut out = Vec::with_capacity(part.columns.len());
    for c in part.columns {
        out.push(match c.data {
            ColumnData::Float(v) => {
                PyArray1::from_vec(py, v.into_iter().map(|x| x.unwrap_or(f64::NAN)).collect())
                    .into_any()
                    .unbind()
            }
            ColumnData::Index(v) => PyArray1::from_vec(py, v).into_any().unbind(),
            ColumnData::Text(v) => PyList::new(py, v)?.into_any().unbind(),
        });
    }
    let failed = Value::Array(part.failed.iter().map(|f| f.to_json()).collect());
    Ok((out, failed.to_string()))
}

/// The program name and version, as every export records it.
#[pyfunction]
fn program_version() -> String {
    nivalis_exports::provenance::program_version()
}

/// The compiled core of the `nivalis` package.
#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(read_disk, m)?)?;
    m.add_function(wrap_pyfunction!(with_values, m)?)?;
    m.add_function(wrap_pyfunction!(run, m)?)?;
    m.add_function(wrap_pyfunction!(sweep_info, m)?)?;
    m.add_function(wrap_pyfunction!(sweep_points, m)?)?;
    m.add_function(wrap_pyfunction!(program_version, m)?)?;
    m.add_class::<CoreModel>()?;
    Ok(())
}
