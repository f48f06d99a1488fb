//! Running grid points: each is the base disk with the axis values set, read
//! by the same reader as a file and run by `Model::run`; the results are
//! columns (the same for every shard, fixed by the sweep alone).

use crate::definition::Sweep;
use nivalis_disk_files::{from_value, Problem};
use nivalis_exports::Provenance;
use nivalis_physics::params::Element;
use nivalis_physics::planet::{chi_square_map, planet};
use nivalis_physics::units::AU_CM;
use nivalis_physics::{Model, Species};
use serde_json::Value;

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// 64-bit floats, null where undefined.
    Float,
    /// Text (JSON text for non-numeric axis values; the disk hash).
    Text,
    /// Unsigned 64-bit integers (the grid point).
    Index,
}

/// One column's name, unit (astropy unit string, empty for dimensionless) and description.
#[derive(Debug, Clone, PartialEq)]
pub struct ColumnInfo {
    /// Column name.
    pub name: String,
    /// Unit as astropy parses it ("AU", "K", "solLum"), or "".
    pub unit: String,
    /// One-line description.
    pub description: String,
    /// What it holds.
    pub kind: Kind,
}

/// One column's values.
#[derive(Debug, Clone, PartialEq)]
pub enum ColumnData {
    /// Floats.
    Float(Vec<Option<f64>>),
    /// Text.
    Text(Vec<String>),
    /// Indices.
    Index(Vec<u64>),
}

impl ColumnData {
    /// Number of rows.
    pub fn len(&self) -> usize {
        match self {
            ColumnData::Float(v) => v.len(),
            ColumnData::Text(v) => v.len(),
            ColumnData::Index(v) => v.len(),
        }
    }
    /// Whether it has no rows.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    fn empty(kind: Kind) -> ColumnData {
        match kind {
            Kind::Float => ColumnData::Float(Vec::new()),
            Kind::Text => ColumnData::Text(Vec::new()),
            Kind::Index => ColumnData::Index(Vec::new()),
        }
    }
    /// Append the rows of `other` (same kind).
    pub fn extend(&mut self, other: &ColumnData) {
        match (self, other) {
            (ColumnData::Float(a), ColumnData::Float(b)) => a.extend_from_slice(b),
            (ColumnData::Text(a), ColumnData::Text(b)) => a.extend_from_slice(b),
            (ColumnData::Index(a), ColumnData::Index(b)) => a.extend_from_slice(b),
            _ => {}
        }
    }
}

/// A column: its description and values.
#[derive(Debug, Clone, PartialEq)]
pub struct Column {
    /// Name, unit, description, kind.
    pub info: ColumnInfo,
    /// Values.
    pub data: ColumnData,
}

/// A grid point that did not run, with every problem (`{path, value, allowed, message}`).
#[derive(Debug, Clone, PartialEq)]
pub struct FailedPoint {
    /// Index of the point in the whole grid.
    pub point: usize,
    /// The axis values there, by path.
    pub values: Vec<(String, Value)>,
    /// What is wrong.
    pub problems: Vec<Problem>,
}

impl FailedPoint {
    /// As JSON for the manifest.
    pub fn to_json(&self) -> Value {
        let mut values = serde_json::Map::new();
        for (p, v) in &self.values {
            values.insert(p.clone(), v.clone());
        }
        serde_json::json!({
            "point": self.point,
            "values": values,
            "problems": self.problems.iter().map(crate::problem_json).collect::<Vec<_>>(),
        })
    }
}

/// The rows of a range of grid points and the points that failed.
#[derive(Debug, Clone, PartialEq)]
pub struct Part {
    /// The columns (one row per point that ran).
    pub columns: Vec<Column>,
    /// Points that did not run.
    pub failed: Vec<FailedPoint>,
}

impl Part {
    /// Rows held.
    pub fn rows(&self) -> usize {
        self.columns.first().map_or(0, |c| c.data.len())
    }
}

/// Unit of an axis column from the unit suffix of its field name
/// (docs/disk-file.md names every unit in the field name).
pub fn unit_of_path(path: &str) -> &'static str {
    let key = path.rsplit('.').next().unwrap_or(path);
    const SUFFIXES: [(&str, &str); 12] = [
        ("_msun_per_yr", "solMass / yr"),
        ("_msun", "solMass"),
        ("_lsun", "solLum"),
        ("_rsun", "solRad"),
        ("_au", "AU"),
        ("_k", "K"),
        ("_myr", "Myr"),
        ("_yr", "yr"),
        ("_g_cm2", "g / cm2"),
        ("_cm2", "cm2"),
        ("_s", "1 / s"),
        ("_habing", ""),
    ];
    if key.ends_with("_per_s") {
        return "1 / s";
    }
    SUFFIXES
        .iter()
        .find(|(s, _)| key.ends_with(s))
        .map_or("", |(_, u)| *u)
}

fn info(
    name: impl Into<String>,
    unit: &str,
    description: impl Into<String>,
    kind: Kind,
) -> ColumnInfo {
    ColumnInfo {
        name: name.into(),
        unit: unit.to_string(),
        description: description.into(),
        kind,
    }
}

impl Sweep {
    /// The columns every shard of this sweep writes, in order: `point`, one
    /// per axis (named by its path; numbers as floats, other values as JSON
    /// text), `disk_hash`, `star_c_to_o`, the innermost midplane snowline of
    /// each species, then per planet and per fit their results.
    pub fn columns(&self) -> Vec<ColumnInfo> {
        let mut c = vec![info(
            "point",
            "",
            "index of the grid point in the whole sweep (0-based; the first axis varies slowest)",
            Kind::Index,
        )];
        for a in &self.axes {
            let numeric = a.numeric;
            c.push(info(
                a.path.clone(),
                if numeric { unit_of_path(&a.path) } else { "" },
                format!("swept value of {}", a.path),
                if numeric { Kind::Float } else { Kind::Text },
            ));
        }
        c.push(info(
            "disk_hash",
            "",
            "first 12 hex digits of the SHA-256 of the resolved disk file (as every export's provenance)",
            Kind::Text,
        ));
        c.push(info(
            "star_c_to_o",
            "",
            "C/O number ratio of the star",
            Kind::Float,
        ));
        for s in Species::ALL {
            c.push(info(
                format!("snowline_au_{}", s.key()),
                "AU",
                format!(
                    "innermost midplane snowline of {} (f_ice = 0.5 crossing; null if none)",
                    s.key()
                ),
                Kind::Float,
            ));
        }
        for p in &self.planets {
            let pre = format!("planet_{}_", p.name);
            c.push(info(
                format!("{pre}c_to_o"),
                "",
                "envelope C/O (linear number ratio)",
                Kind::Float,
            ));
            c.push(info(
                format!("{pre}c_to_o_rel_star"),
                "",
                "envelope C/O / (C/O)_star",
                Kind::Float,
            ));
            c.push(info(
                format!("{pre}local_gas_c_to_o"),
                "",
                "C/O of the accreted gas",
                Kind::Float,
            ));
            c.push(info(
                format!("{pre}local_solid_c_to_o"),
                "",
                "C/O of the accreted solids",
                Kind::Float,
            ));
            for el in PLANET_ELEMENTS {
                let s = el.symbol().to_lowercase();
                let sym = el.symbol();
                c.push(info(
                    format!("{pre}{s}_to_h_dex_rel_star"),
                    "dex",
                    format!("[{sym}/H] of the envelope relative to the star"),
                    Kind::Float,
                ));
                c.push(info(
                    format!("{pre}{s}_from_solids"),
                    "",
                    format!("fraction of the envelope's {sym} atoms that came with the solids"),
                    Kind::Float,
                ));
            }
        }
        for f in &self.fits {
            let pre = format!("fit_{}_", f.name);
            c.push(info(
                format!("{pre}best_radius_au"),
                "AU",
                "best-fit formation radius",
                Kind::Float,
            ));
            c.push(info(
                format!("{pre}best_solid_to_gas"),
                "",
                "best-fit accreted solid-to-gas mass ratio",
                Kind::Float,
            ));
            c.push(info(
                format!("{pre}chi2_min"),
                "",
                "smallest chi-square of the map",
                Kind::Float,
            ));
            c.push(info(
                format!("{pre}p_value"),
                "",
                "probability of a chi-square at least chi2_min",
                Kind::Float,
            ));
        }
        c
    }

    /// Run grid points `range` (in order): rows of the points that ran, and
    /// the points that failed with their problems.
    pub fn run_points(&self, range: std::ops::Range<usize>) -> Part {
        let infos = self.columns();
        let mut data: Vec<ColumnData> = infos.iter().map(|i| ColumnData::empty(i.kind)).collect();
        let mut failed = Vec::new();
        for point in range {
            match self.run_point(point) {
                Ok(row) => {
                    for (col, cell) in data.iter_mut().zip(row) {
                        match (col, cell) {
                            (ColumnData::Float(v), Cell::Float(x)) => v.push(x),
                            (ColumnData::Text(v), Cell::Text(x)) => v.push(x),
                            (ColumnData::Index(v), Cell::Index(x)) => v.push(x),
                            _ => unreachable!("a row's cells follow the columns"),
                        }
                    }
                }
                Err(problems) => failed.push(FailedPoint {
                    point,
                    values: self
                        .axes
                        .iter()
                        .zip(self.values_at(point))
                        .map(|(a, v)| (a.path.clone(), v.clone()))
                        .collect(),
                    problems,
                }),
            }
        }
        Part {
            columns: infos
                .into_iter()
                .zip(data)
                .map(|(info, data)| Column { info, data })
                .collect(),
            failed,
        }
    }

    fn run_point(&self, point: usize) -> Result<Vec<Cell>, Vec<Problem>> {
        let file = from_value(&self.disk_value_at(point)).map_err(|p| p.0)?;
        let model = Model::run(&file.parameters).map_err(|e| vec![Problem::from_physics(&e)])?;
        let mut row = vec![Cell::Index(point as u64)];
        for (a, v) in self.axes.iter().zip(self.values_at(point)) {
            // An axis of numbers is a float column; any other axis holds each value's JSON text.
            row.push(if a.numeric {
                Cell::Float(v.as_f64())
            } else {
                Cell::Text(v.to_string())
            });
        }
        row.push(Cell::Text(Provenance::of(&file).disk_hash));
        row.push(Cell::Float(Some(model.star_c_to_o())));
        for s in Species::ALL {
            row.push(Cell::Float(
                model.snowlines(s).first().map(|l| l.radius_cm / AU_CM),
            ));
        }
        for (i, p) in self.planets.iter().enumerate() {
            let result = planet(&model, &p.options.request()).map_err(|e| {
                let mut pr = Problem::from_physics(&e);
                pr.path = format!("planets[{i}].{}", pr.path);
                vec![pr]
            })?;
            let e = &result.envelope;
            row.push(Cell::Float(e.c_to_o));
            row.push(Cell::Float(e.c_to_o_relative_to_star()));
            row.push(Cell::Float(result.phases.gas_c_to_o()));
            row.push(Cell::Float(result.phases.solid_c_to_o()));
            for el in PLANET_ELEMENTS {
                let x = e.element(el);
                row.push(Cell::Float(x.dex));
                row.push(Cell::Float(x.solid_share));
            }
        }
        for (i, f) in self.fits.iter().enumerate() {
            let map = chi_square_map(&model, &f.observed, &f.settings).map_err(|e| {
                let mut pr = Problem::from_physics(&e);
                pr.path = format!("fits[{i}].{}", pr.path);
                vec![pr]
            })?;
            let best = map.best.as_ref();
            row.push(Cell::Float(best.map(|b| b.radius_au)));
            row.push(Cell::Float(best.map(|b| b.solid_to_gas)));
            row.push(Cell::Float(map.goodness.chi2_min));
            row.push(Cell::Float(map.goodness.p_value));
        }
        Ok(row)
    }
}

const PLANET_ELEMENTS: [Element; 4] = [Element::C, Element::O, Element::N, Element::S];

enum Cell {
    Float(Option<f64>),
    Text(String),
    Index(u64),
}
