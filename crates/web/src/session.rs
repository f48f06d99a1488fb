//! The page's session in plain Rust (no JavaScript types), so it can be
//! tested natively: the last valid disk and its model, the snowline table, and
//! the exports. The wasm-facing [`crate::Explorer`] only converts values at the
//! boundary and forwards here.
//!
//! Invariant: a disk that fails validation or the run never replaces the
//! current result, so the page keeps showing the last valid one.

use nivalis_disk_files::{from_value, to_value, DiskFile, Problem};
use nivalis_physics::species::SpeciesTable;
use nivalis_physics::{rerun, BindingEnergySet, Model, PhysicsError, Rerun};
use serde_json::{json, Value};

/// A validated disk with its computed model.
pub struct Current {
    /// The disk as validated (defaults filled in).
    pub file: DiskFile,
    /// Its model.
    pub model: Model,
}

/// The session: the current result, if any.
#[derive(Default)]
pub struct Session {
    current: Option<Current>,
}

/// What the page may export: the names and texts live in
/// `nivalis_exports::kinds`, shared with the CLI.
pub use nivalis_exports::ExportKind as Export;

/// A core error as a [`Problem`] on the field it names, so the page can show
/// it beside that field. The field, value and range are the error's own data
/// ([`PhysicsError::path`]); an error without a field is attached to `(model)`.
pub fn physics_problem(error: &PhysicsError) -> Problem {
    Problem::from_physics(error)
}

impl Session {
    /// An empty session (no result yet).
    pub fn new() -> Session {
        Session::default()
    }

    /// Validates a disk (as a JSON value, exactly what the CLI reads from a
    /// file) and runs the model. On success the result replaces the current
    /// one; on failure every problem is returned and the current result stays.
    ///
    /// Only what the edit changes is recomputed ([`nivalis_physics::rerun`]):
    /// an edit of the ice parameters re-solves only the ice balance, one of the
    /// composition keeps the structure, an edit of the name or notes computes
    /// nothing; the result equals a fresh `Model::run` bit for bit. Returns
    /// what was re-run, so the page redraws only the views that depend on it.
    pub fn update(&mut self, disk: &Value) -> Result<Rerun, Vec<Problem>> {
        let file = from_value(disk).map_err(|problems| problems.0)?;
        match self.current.as_mut() {
            Some(current) => {
                // On an error the model is left as it was (the last valid result stays).
                let stages = rerun(&mut current.model, &file.parameters)
                    .map_err(|e| vec![physics_problem(&e)])?;
                current.file = file;
                Ok(stages)
            }
            None => {
                let model = Model::run(&file.parameters).map_err(|e| vec![physics_problem(&e)])?;
                self.current = Some(Current { file, model });
                Ok(Rerun::Everything)
            }
        }
    }

    /// Like [`Session::update`] for disk-file text, parsed by the same JSON
    /// reader as the CLI (so an opened file gives the CLI's numbers to the bit).
    pub fn update_from_text(&mut self, text: &str) -> Result<Rerun, Vec<Problem>> {
        // The CLI's own text layer: size and depth limits, byte order mark, duplicate keys.
        let value = nivalis_disk_files::parse_json_text(text).map_err(|p| p.0)?;
        self.update(&value)
    }

    /// The current result.
    pub fn current(&self) -> Option<&Current> {
        self.current.as_ref()
    }

    /// The current disk, resolved (every field present), as a JSON value.
    pub fn resolved_disk(&self) -> Option<Value> {
        self.current.as_ref().map(|c| to_value(&c.file))
    }

    /// One export of the current result as text; `None` before any valid disk.
    pub fn export(&self, what: Export) -> Option<String> {
        let c = self.current.as_ref()?;
        Some(nivalis_exports::export_text(what, &c.file, &c.model))
    }

    /// The snowline table (`nivalis_exports::page_tables::snowline_table`): per
    /// species, every midplane snowline with its direction and midplane temperature.
    pub fn snowline_table(&self) -> Option<Value> {
        let c = self.current.as_ref()?;
        Some(nivalis_exports::page_tables::snowline_table(&c.model))
    }

    /// The snowline table as compact JSON text, `snowline_table()`'s value
    /// written straight from the typed rows (what the page reads after every edit).
    pub fn snowline_table_json(&self) -> Option<String> {
        let c = self.current.as_ref()?;
        Some(nivalis_exports::page_tables::snowline_table_json(&c.model))
    }

    /// A short summary the page shows beside the views
    /// (`nivalis_exports::page_tables::summary`).
    pub fn summary(&self) -> Option<Value> {
        let c = self.current.as_ref()?;
        Some(nivalis_exports::page_tables::summary(&c.file, &c.model))
    }
}

/// The largest grid the page accepts, in samples (radial x (vertical + 1)): a
/// model holds about 26 doubles per sample and the wasm32 heap ends at 4 GiB,
/// so the page stops well before memory runs out. The CLI has no such limit.
pub const MAX_SAMPLES: usize = 4_000_000;

/// A problem when the disk's grid would not fit in the page's memory (checked
/// before the run, so an oversized grid cannot exhaust the wasm heap).
pub fn grid_too_large(disk: &Value) -> Option<Problem> {
    // The default grid, taken once from the core's defaults (asked on every edit).
    static DEFAULT_CELLS: std::sync::OnceLock<(usize, usize)> = std::sync::OnceLock::new();
    let &(default_radial, default_vertical) = DEFAULT_CELLS.get_or_init(|| {
        let grid = nivalis_physics::ModelParameters::defaults().grid;
        (grid.radial_cells, grid.vertical_cells)
    });
    let grid = disk.get("grid")?;
    let cells =
        |key: &str, default: usize| grid.get(key).map_or(Some(default as f64), Value::as_f64);
    let (radial, vertical) = (
        cells("radial_cells", default_radial)?,
        cells("vertical_cells", default_vertical)?,
    );
    let samples = radial * (vertical + 1.0);
    (samples > MAX_SAMPLES as f64).then(|| {
        Problem::new(
            "grid.radial_cells",
            format!(
                "the page holds at most {MAX_SAMPLES} samples (radial cells x (vertical cells + 1)), this grid has {samples}; use the command-line tool for larger grids"
            ),
        )
        .with_value(samples.to_string())
        .with_allowed(format!("at most {MAX_SAMPLES} samples"))
    })
}

/// The built-in species data and binding-energy sets, for the controls'
/// placeholders (what a blank override field means).
pub fn species_info() -> Value {
    let table = SpeciesTable::built_in();
    let sets: Vec<&str> = BindingEnergySet::ALL.iter().map(|s| s.key()).collect();
    let species: Vec<Value> = table
        .entries
        .iter()
        .map(|e| {
            let energies: serde_json::Map<String, Value> = BindingEnergySet::ALL
                .iter()
                .map(|set| (set.key().to_string(), json!(e.binding_energy(*set).0)))
                .collect();
            json!({
                "species": e.species.key(),
                "formula": e.formula,
                "mass_amu": e.mass_amu,
                "binding_energy_k": energies,
                "photodesorption_yield": e.photodesorption_yield,
                "condensation_temperature_k": e.condensation_temperature_k,
            })
        })
        .collect();
    json!({"binding_energy_sets": sets, "species": species})
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_disk_files::to_json_string;
    use nivalis_exports::{model_table, to_csv, Provenance};

    #[test]
    fn invalid_disk_keeps_the_previous_result() {
        let mut s = Session::new();
        s.update(&json!({})).unwrap();
        let before = s.export(Export::ProfileCsv).unwrap();
        let problems = s
            .update(&json!({"star": {"luminosity_lsun": -1}}))
            .unwrap_err();
        assert_eq!(
            problems[0].to_string(),
            "star.luminosity_lsun: must be in [1e-5, 10000000], got -1"
        );
        assert_eq!(s.export(Export::ProfileCsv).unwrap(), before);
    }

    #[test]
    fn an_edit_recomputes_only_its_stages_with_a_fresh_run_s_exports() {
        let mut s = Session::new();
        assert_eq!(s.update(&json!({})).unwrap(), Rerun::Everything);
        assert_eq!(
            s.update(&json!({"name": "renamed"})).unwrap(),
            Rerun::Nothing
        );
        let edits = [
            (json!({"ices": {"sticking": 0.5}}), Rerun::Ices),
            (
                json!({"ices": {"sticking": 0.5}, "composition": {"sulfur": {"H2S": 0.2, "refractory": 0.8}}}),
                Rerun::Composition,
            ),
            (json!({"star": {"luminosity_lsun": 2}}), Rerun::Everything),
        ];
        for (disk, stages) in edits {
            assert_eq!(s.update(&disk).unwrap(), stages, "{disk}");
            let mut fresh = Session::new();
            fresh.update(&disk).unwrap();
            assert_eq!(s.current().unwrap().model, fresh.current().unwrap().model);
            for what in [
                Export::ProfileCsv,
                Export::StructureCsv,
                Export::SnowlinesJson,
                Export::DiskFile,
            ] {
                assert_eq!(s.export(what), fresh.export(what), "{disk} {what:?}");
            }
        }
    }

    /// The page keeps its maps' grid (`nivalis_charts::MapGrid`) across edits that
    /// keep the structure: after each such edit it must equal the edited model's own.
    #[test]
    fn the_map_grid_outlives_only_edits_that_keep_the_structure() {
        use nivalis_charts::{MapData, MapGrid};
        use nivalis_physics::Species;
        let small = json!({"grid": {"radial_cells": 40, "vertical_cells": 16}});
        let mut s = Session::new();
        s.update(&small).unwrap();
        let kept = std::sync::Arc::new(MapGrid::from_model(&s.current().unwrap().model));
        let mut edits = Vec::new();
        for (ices, carbon) in [(0.5, 0.3), (0.5, 0.25), (1.0, 0.25)] {
            let mut disk = small.clone();
            disk["ices"] = json!({"sticking": ices});
            disk["composition"] = json!({"carbon": {
                "CO": carbon, "CO2": 0.4 - carbon, "CH4": 0.04, "CH3OH": 0.05, "HCN": 0.01, "refractory": 0.5
            }});
            let stages = s.update(&disk).unwrap();
            assert!(!stages.structure_changed(), "{disk}");
            edits.push(stages);
            let model = &s.current().unwrap().model;
            assert_eq!(MapGrid::from_model(model), *kept);
            // The maps built on the kept grid are those built from the model alone.
            assert_eq!(
                MapData::ice_fraction_on(&kept, model, Species::CO),
                MapData::ice_fraction(model, Species::CO)
            );
            assert_eq!(
                MapData::gas_c_to_o_on(&kept, model),
                MapData::gas_c_to_o(model)
            );
        }
        assert!(
            edits.contains(&Rerun::Ices) && edits.contains(&Rerun::Composition),
            "{edits:?}"
        );
        // A structure edit gives another grid (the page then builds it again).
        let mut disk = small.clone();
        disk["star"] = json!({"luminosity_lsun": 2});
        assert!(s.update(&disk).unwrap().structure_changed());
        assert_ne!(MapGrid::from_model(&s.current().unwrap().model), *kept);
    }

    #[test]
    fn exports_match_the_cli_functions() {
        let mut s = Session::new();
        s.update_from_text(r#"{"star": {"luminosity_lsun": 2}}"#)
            .unwrap();
        let c = s.current().unwrap();
        assert_eq!(
            s.export(Export::ProfileCsv).unwrap(),
            to_csv(&model_table(&c.model), &Provenance::of(&c.file))
        );
        assert!(s
            .export(Export::ProfileEcsv)
            .unwrap()
            .starts_with("# %ECSV 1.0\n"));
        assert_eq!(s.export(Export::DiskFile).unwrap(), to_json_string(&c.file));
    }

    #[test]
    fn water_snowline_listed_with_its_temperature() {
        let mut s = Session::new();
        s.update(&json!({})).unwrap();
        let table = s.snowline_table().unwrap();
        // The page's text is the value's compact text.
        assert_eq!(s.snowline_table_json().unwrap(), table.to_string());
        let water = &table[0];
        assert_eq!(water["species"], "H2O");
        let first = &water["snowlines"][0];
        assert_eq!(first["direction"], "freeze_out");
        // A water snowline sits where the midplane is of order 100-200 K (common practice, no source).
        let t = first["midplane_temperature_k"].as_f64().unwrap();
        assert!(t > 80.0 && t < 250.0, "{t}");
    }

    #[test]
    fn oversized_grids_are_refused_before_the_run() {
        assert!(grid_too_large(&json!({})).is_none());
        assert!(grid_too_large(&json!({"grid": {"radial_cells": 4096}})).is_none());
        let p = grid_too_large(&json!({"grid": {"radial_cells": 4096, "vertical_cells": 4096}}))
            .unwrap();
        assert_eq!(p.path, "grid.radial_cells");
        assert!(p.message.contains("16781312"), "{}", p.message);
    }

    #[test]
    fn core_errors_name_their_field() {
        let p = physics_problem(&PhysicsError::NitrogenExhausted {
            nitrogen_per_h: 1e-5,
            hcn_per_h: 2e-5,
        });
        assert_eq!(p.path, "composition.carbon.HCN");
        assert_eq!(
            p.message,
            "HCN/H = 2.0000e-5 needs more nitrogen than the star has (N/H = 1.0000e-5)"
        );
        assert_eq!(p.value.as_deref(), Some("2.0000e-5"));
        let p = physics_problem(&PhysicsError::NoTemperatureSolution { radius_au: 0.1 });
        assert_eq!(p.path, "(model)");
        let p = physics_problem(&PhysicsError::OutOfRange {
            name: "mix",
            value: 2.0,
            allowed: "in [0, 1]",
        });
        assert_eq!(
            (p.path.as_str(), p.value.as_deref(), p.allowed.as_deref()),
            ("mix", Some("2"), Some("in [0, 1]"))
        );
        assert_eq!(p.to_string(), "mix: must be in [0, 1], got 2");
    }
}
