//! The class the page's JavaScript uses, `Explorer`: every method converts its
//! arguments at the boundary and forwards to [`Session`], the charts crate or
//! [`crate::readout`]. Values cross as plain JS objects (serde-wasm-bindgen in
//! its JSON-compatible mode), errors as `JsError` with the one-line message.

use std::collections::HashMap;

use nivalis_charts::{AbundanceData, ChartLayout, MapData, ProfileData, TemperatureData, Theme};
use nivalis_disk_files::{to_value, DiskFile, Problem};
use nivalis_physics::Species;
use serde::Serialize;
use serde_json::{json, Value};
use wasm_bindgen::prelude::*;

use crate::canvas;
use crate::readout::{readout, ViewData};
use crate::session::{grid_too_large, species_info, Export, Session};

/// Screen pixels (CSS px) per typographic point. 96/72 is the CSS definition;
/// the extra factor 1.2 makes the paper-sized fonts of the charts' themes
/// readable at screen distance.
const CSS_PX_PER_POINT: f64 = 96.0 / 72.0 * 1.2;

fn to_js(value: &Value) -> JsValue {
    // Invariant: serde_json values always serialise (objects become plain JS objects).
    value.serialize(&serde_wasm_bindgen::Serializer::json_compatible()).expect("JSON value converts to JS")
}

fn problems_js(problems: &[Problem]) -> Value {
    Value::Array(problems.iter().map(|p| json!({"path": p.path, "message": p.message})).collect())
}

/// The page's session: the last valid disk and its model, the views' data and
/// where each canvas was last drawn.
#[wasm_bindgen]
pub struct Explorer {
    session: Session,
    /// View data by key ("c_to_o", "temperature", "abundances", "c_to_o_map", "ice_map:CO"), built on first use per model.
    data: HashMap<String, ViewData>,
    /// Per canvas id: the data key it shows and its layout.
    layouts: HashMap<String, (String, ChartLayout)>,
}

impl Default for Explorer {
    fn default() -> Self {
        Explorer::new()
    }
}

#[wasm_bindgen]
impl Explorer {
    /// An explorer without a result.
    #[wasm_bindgen(constructor)]
    pub fn new() -> Explorer {
        Explorer { session: Session::new(), data: HashMap::new(), layouts: HashMap::new() }
    }

    /// The default disk with every field resolved (what `{}` means), as a JS object.
    #[wasm_bindgen(js_name = defaultDisk)]
    pub fn default_disk() -> JsValue {
        to_js(&to_value(&DiskFile::defaults()))
    }

    /// Built-in species data and binding-energy set names, for the controls.
    #[wasm_bindgen(js_name = speciesInfo)]
    pub fn species_info() -> JsValue {
        to_js(&species_info())
    }

    /// Validates a disk (a plain JS object in the `nivalis-disk/1` shape) and
    /// runs the model. Returns `{ok, problems: [{path, message}], summary}`.
    /// On problems the previous result stays current.
    pub fn update(&mut self, disk: JsValue) -> JsValue {
        let value: Value = match serde_wasm_bindgen::from_value(disk) {
            Ok(v) => v,
            Err(e) => {
                let p = Problem { path: "(file)".into(), message: format!("cannot read the disk object: {e}") };
                return self.outcome(Err(vec![p]));
            }
        };
        if let Some(p) = grid_too_large(&value) {
            return self.outcome(Err(vec![p]));
        }
        let result = self.session.update(&value);
        self.outcome(result)
    }

    /// Like `update` for disk-file text (an opened file), parsed by the CLI's JSON reader.
    #[wasm_bindgen(js_name = updateFromText)]
    pub fn update_from_text(&mut self, text: &str) -> JsValue {
        let parsed = serde_json::from_str::<Value>(text).ok();
        if let Some(p) = parsed.as_ref().and_then(grid_too_large) {
            return self.outcome(Err(vec![p]));
        }
        let result = self.session.update_from_text(text);
        self.outcome(result)
    }

    fn outcome(&mut self, result: Result<(), Vec<Problem>>) -> JsValue {
        match result {
            Ok(()) => {
                self.data.clear();
                self.layouts.clear();
                to_js(&json!({"ok": true, "problems": [], "summary": self.session.summary()}))
            }
            Err(problems) => to_js(&json!({"ok": false, "problems": problems_js(&problems), "summary": self.session.summary()})),
        }
    }

    /// The current (last valid) disk with every field resolved; `null` before any.
    #[wasm_bindgen(js_name = resolvedDisk)]
    pub fn resolved_disk(&self) -> JsValue {
        self.session.resolved_disk().map_or(JsValue::NULL, |v| to_js(&v))
    }

    /// The snowline table (see `Session::snowline_table`); `null` before any result.
    #[wasm_bindgen(js_name = snowlineTable)]
    pub fn snowline_table(&self) -> JsValue {
        self.session.snowline_table().map_or(JsValue::NULL, |v| to_js(&v))
    }

    /// One export as text: `profile_csv`, `profile_ecsv`, `profile_json`,
    /// `structure_csv`, `snowlines_json` or `disk`; `undefined` before any result.
    #[wasm_bindgen(js_name = exportText)]
    pub fn export_text(&self, what: &str) -> Result<Option<String>, JsError> {
        let kind = Export::from_name(what).ok_or_else(|| JsError::new(&format!("unknown export {what:?}")))?;
        Ok(self.session.export(kind))
    }

    /// Draws a view into the canvas with id `canvas_id` at its current backing size.
    /// `view`: `c_to_o`, `temperature`, `ice_map`, `c_to_o_map`, `abundances`.
    /// `options`: `{theme: "light"|"dark", species: "CO" (ice_map), pixelRatio: devicePixelRatio}`.
    pub fn draw(&mut self, view: &str, canvas_id: &str, options: JsValue) -> Result<(), JsError> {
        let get = |key: &str| js_sys::Reflect::get(&options, &JsValue::from_str(key)).ok();
        let theme = match get("theme").and_then(|v| v.as_string()).as_deref() {
            Some("dark") => Theme::dark(),
            _ => Theme::light(),
        };
        let ratio = get("pixelRatio").and_then(|v| v.as_f64()).filter(|r| r.is_finite() && *r > 0.0).unwrap_or(1.0);
        let key = match view {
            "ice_map" => {
                let name = get("species").and_then(|v| v.as_string()).unwrap_or_else(|| "H2O".to_string());
                let species = Species::from_key(&name).ok_or_else(|| JsError::new(&format!("unknown species {name:?}")))?;
                format!("ice_map:{}", species.key())
            }
            "c_to_o" | "temperature" | "abundances" | "c_to_o_map" => view.to_string(),
            other => return Err(JsError::new(&format!("unknown view {other:?}"))),
        };
        let data = self.view_data(&key)?;
        let canvas = canvas::canvas_by_id(canvas_id).map_err(|e| JsError::new(&e))?;
        let layout = canvas::draw(&canvas, data, &theme, CSS_PX_PER_POINT * ratio).map_err(|e| JsError::new(&e))?;
        self.layouts.insert(canvas_id.to_string(), (key, layout));
        Ok(())
    }

    /// The value under backend pixel (`x`, `y`) of a drawn canvas, as one line;
    /// `undefined` outside its plotting areas or before it was drawn.
    pub fn readout(&self, canvas_id: &str, x: f64, y: f64) -> Option<String> {
        let (key, layout) = self.layouts.get(canvas_id)?;
        readout(self.data.get(key)?, layout, x, y)
    }

    fn view_data(&mut self, key: &str) -> Result<&ViewData, JsError> {
        if !self.data.contains_key(key) {
            let current = self.session.current().ok_or_else(|| JsError::new("no valid disk has been computed yet"))?;
            let model = &current.model;
            let data = match key {
                "c_to_o" => ViewData::Profile(ProfileData::from_model(model)),
                "temperature" => ViewData::Temperature(TemperatureData::from_model(model)),
                "abundances" => ViewData::Abundances(AbundanceData::from_model(model)),
                "c_to_o_map" => ViewData::CToOMap(MapData::gas_c_to_o(model)),
                _ => {
                    // Invariant: `draw` builds ice-map keys from a parsed species.
                    let species = key.strip_prefix("ice_map:").and_then(Species::from_key).expect("ice-map key names a species");
                    ViewData::IceMap(MapData::ice_fraction(model, species))
                }
            };
            self.data.insert(key.to_string(), data);
        }
        // Invariant: inserted just above when missing.
        Ok(self.data.get(key).expect("view data present"))
    }
}
