//! The class the page's JavaScript uses, `Explorer`: every method converts its
//! arguments at the boundary and forwards to [`Session`], the charts crate or
//! [`crate::readout`]. Values cross as plain JS objects (serde-wasm-bindgen in
//! its JSON-compatible mode), errors as `JsError` with the one-line message.

use std::cell::RefCell;
use std::collections::HashMap;
use std::rc::Rc;
use std::sync::Arc;

use nivalis_charts::{
    AbundanceData, ChartLayout, MapData, MapGrid, ProfileData, TemperatureData, Theme,
};
use nivalis_disk_files::{to_value, DiskFile, Problem};
use nivalis_physics::{Rerun, Species};
use serde::Serialize;
use serde_json::{json, Value};
use wasm_bindgen::prelude::*;
use wasm_bindgen::JsCast;
use web_sys::HtmlCanvasElement;

use crate::canvas;
use crate::display::Op;
use crate::layers::Layers;
use crate::readout::{readout, ViewData};
use crate::session::{grid_too_large, species_info, Export, Session};
use crate::transfer::{from_parts, to_parts, ViewParts};

/// A result computed in the page's worker: everything the page shows or
/// exports, without the model itself.
pub(crate) struct Remote {
    summary: Value,
    snowline_table: Value,
    resolved_disk: Value,
    exports: HashMap<String, String>,
}

/// Screen pixels (CSS px) per typographic point. 96/72 is the CSS definition;
/// the extra factor 1.2 makes the paper-sized fonts of the charts' themes
/// readable at screen distance.
pub(crate) const CSS_PX_PER_POINT: f64 = 96.0 / 72.0 * 1.2;

/// A JSON value as the plain JS value it denotes: its compact text parsed by
/// the browser's `JSON.parse` (one string across and V8's parser, much cheaper
/// than building the object property by property through the bindings). The
/// same value as serde-wasm-bindgen's JSON-compatible serialiser gives: a
/// `Value` holds no NaN or infinity, and the shortest round-trip text of each
/// number parses back to the same double.
pub(crate) fn to_js(value: &Value) -> JsValue {
    js_sys::JSON::parse(&value.to_string()).unwrap_or_else(|_| {
        // Invariant: serde_json's text is JSON, and serde_json values always serialise.
        value
            .serialize(&serde_wasm_bindgen::Serializer::json_compatible())
            .expect("JSON value converts to JS")
    })
}

pub(crate) fn problems_js(problems: &[Problem]) -> Value {
    Value::Array(problems.iter().map(|p| json!({"path": p.path, "value": p.value, "allowed": p.allowed, "message": p.message})).collect())
}

/// The page's session: the last valid disk and its model, the views' data and
/// where each canvas was last drawn.
#[wasm_bindgen]
pub struct Explorer {
    pub(crate) session: Session,
    /// View data by key ("c_to_o", "temperature", "abundances", "c_to_o_map", "ice_map:CO"), built on first use per model;
    /// shared with the canvases drawn from it ([`Drawn`]), so a draw copies none of it.
    pub(crate) data: HashMap<String, Rc<ViewData>>,
    /// Per canvas id: the data key it shows and its layout.
    pub(crate) layouts: HashMap<String, (String, ChartLayout)>,
    /// The r-z grid of the session model's maps, built on first use and kept
    /// while the structure is (an ice or composition edit keeps it).
    map_grid: Option<Arc<MapGrid>>,
    /// The current result when it came from the worker (`loadPacket`); `None`
    /// when it is the session's own model.
    pub(crate) remote: Option<Remote>,
    /// The planet panel's placed planet and inverse map (see `planet_js`).
    pub(crate) planet: crate::planet::PlanetState,
    /// Per canvas id: what it shows now, so an unchanged view is not drawn again.
    drawn: HashMap<String, Drawn>,
    /// Per canvas id: the memory of the list it showed before, for its next
    /// recording (`display::Buffers`: a map's raster is not allocated again).
    spare: HashMap<String, crate::display::Buffers>,
    /// Per canvas id: the static parts of its last recording by what they were
    /// drawn from (`display::Segments`), put again by the next recording where unchanged.
    segments: HashMap<String, crate::display::Segments>,
    /// Text sizes by (CSS font, text), measured once for all canvases and draws.
    text_sizes: crate::display::TextSizes,
    /// Per canvas id: how many times it was actually drawn (`drawCount`).
    draw_counts: HashMap<String, u32>,
    /// Per canvas id: how many of those draws drew its layers again (`layerRedraws`).
    layer_redraws: HashMap<String, u32>,
    /// Per canvas id: the milliseconds of the last `draw`'s steps (`drawTimings`, for the benchmark).
    draw_timings: HashMap<String, [f64; 4]>,
}

#[wasm_bindgen]
extern "C" {
    /// `performance.now()`, read without naming it from Rust (a JS string made
    /// from WebAssembly memory is a UTF-8 decode per call).
    #[wasm_bindgen(catch, js_namespace = performance, js_name = now)]
    fn performance_now() -> Result<f64, JsValue>;

    /// The options object of `Explorer.draw`, read through getters (no property
    /// name crosses from WebAssembly memory).
    type DrawOptions;
    #[wasm_bindgen(method, getter)]
    fn theme(this: &DrawOptions) -> JsValue;
    #[wasm_bindgen(method, getter)]
    fn species(this: &DrawOptions) -> JsValue;
    #[wasm_bindgen(method, getter = pixelRatio)]
    fn pixel_ratio(this: &DrawOptions) -> JsValue;
    #[wasm_bindgen(method, getter = oneCanvas)]
    fn one_canvas(this: &DrawOptions) -> JsValue;
    /// The canvas itself, when the caller has it (the page does): no
    /// `getElementById` through the bindings per draw.
    #[wasm_bindgen(method, getter)]
    fn canvas(this: &DrawOptions) -> JsValue;
}

/// `performance.now()` [ms], or 0 where there is none.
pub(crate) fn now_ms() -> f64 {
    performance_now().unwrap_or(0.0)
}

/// What a canvas shows: the view's data and options it was drawn from, its
/// display list and its layout.
pub(crate) struct Drawn {
    key: String,
    /// The view data (shared with `Explorer::data` while that holds the same).
    data: Rc<ViewData>,
    theme: Theme,
    pixels_per_point: f64,
    /// Drawn on the view's three canvases (false: the `oneCanvas` test hook).
    layered: bool,
    /// What the layers under and over the canvas hold (`crate::layers`);
    /// `None` when drawn on one canvas (no layers, or not `layered`).
    layers: Option<Layers>,
    size: (u32, u32),
    ops: Vec<Op>,
    layout: ChartLayout,
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
        Explorer {
            session: Session::new(),
            data: HashMap::new(),
            layouts: HashMap::new(),
            map_grid: None,
            remote: None,
            planet: Default::default(),
            drawn: HashMap::new(),
            spare: HashMap::new(),
            segments: HashMap::new(),
            text_sizes: RefCell::new(HashMap::new()),
            draw_counts: HashMap::new(),
            layer_redraws: HashMap::new(),
            draw_timings: HashMap::new(),
        }
    }

    /// The default disk with every field resolved (what `{}` means), as a JS object.
    #[wasm_bindgen(js_name = defaultDisk)]
    pub fn default_disk() -> JsValue {
        to_js(&to_value(&DiskFile::defaults()))
    }

    /// Decodes the address fragment's `disk=` value (base64url of compact
    /// JSON) in Rust, with its size and nesting depth checked before
    /// deserialising. Returns `{ok: true, disk}` or `{ok: false, problems}`.
    #[wasm_bindgen(js_name = decodeFragment)]
    pub fn decode_fragment(text: &str) -> JsValue {
        match nivalis_disk_files::fragment::decode_fragment(text) {
            Ok(disk) => to_js(&json!({"ok": true, "disk": disk})),
            Err(problems) => to_js(&json!({"ok": false, "problems": problems_js(&problems.0)})),
        }
    }

    /// The fragment's `disk=` value for a disk (a plain JS object): base64url of its compact JSON.
    #[wasm_bindgen(js_name = encodeFragment)]
    pub fn encode_fragment(disk: JsValue) -> Result<String, JsError> {
        let value: Value = serde_wasm_bindgen::from_value(disk)
            .map_err(|e| JsError::new(&format!("cannot read the disk object: {e}")))?;
        Ok(nivalis_disk_files::fragment::encode_fragment(&value))
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
                let p = Problem::new("(file)", format!("cannot read the disk object: {e}"));
                return self.outcome(Err(vec![p]));
            }
        };
        if let Some(p) = grid_too_large(&value) {
            return self.outcome(Err(vec![p]));
        }
        let result = self.session.update(&value);
        self.outcome(result)
    }

    /// Like `update` for the page's own disk object as `JSON.stringify` wrote it:
    /// the text crosses as one string and is parsed by serde_json, much cheaper
    /// than reading the object property by property through the bindings. The
    /// value is the one `update` reads from the object (same keys in the same
    /// order, strings, booleans, nulls and the same doubles; integers beyond
    /// 2^53 stay integers here, as the CLI reads them, where the object path
    /// makes them floats, which only changes how a problem message prints such
    /// a number). Returns `undefined` when the text does not parse (a lone
    /// surrogate in a string, which `JSON.stringify` writes as an escape
    /// serde_json refuses): the caller then passes the object to `update`.
    #[wasm_bindgen(js_name = updateJson)]
    pub fn update_json(&mut self, text: &str) -> JsValue {
        let Ok(value) = serde_json::from_str::<Value>(text) else {
            return JsValue::UNDEFINED;
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

    fn outcome(&mut self, result: Result<Rerun, Vec<Problem>>) -> JsValue {
        match result {
            Ok(stages) => {
                // Only the views whose inputs changed are rebuilt (and so redrawn):
                // the temperature view reads only the structure. After a worker
                // result the session's model is not what the views show: rebuild all.
                let keep: &[&str] = match stages {
                    _ if self.remote.is_some() => &[],
                    Rerun::Nothing => &["c_to_o", "temperature", "abundances", "c_to_o_map"],
                    Rerun::Ices | Rerun::Composition => &["temperature"],
                    Rerun::Everything => &[],
                };
                let keep_key = |key: &str| {
                    keep.contains(&key)
                        || (stages == Rerun::Nothing
                            && self.remote.is_none()
                            && key.starts_with("ice_map:"))
                };
                if stages.structure_changed() || self.remote.is_some() {
                    self.map_grid = None;
                }
                self.data.retain(|key, _| keep_key(key));
                self.layouts.retain(|_, (key, _)| keep_key(key));
                self.remote = None;
                to_js(
                    &json!({"ok": true, "problems": [], "summary": self.session.summary(), "recomputed": stages.key()}),
                )
            }
            Err(problems) => to_js(
                &json!({"ok": false, "problems": problems_js(&problems), "summary": self.session.summary()}),
            ),
        }
    }

    /// The current (last valid) disk with every field resolved; `null` before any.
    #[wasm_bindgen(js_name = resolvedDisk)]
    pub fn resolved_disk(&self) -> JsValue {
        if let Some(r) = &self.remote {
            return to_js(&r.resolved_disk);
        }
        self.session
            .resolved_disk()
            .map_or(JsValue::NULL, |v| to_js(&v))
    }

    /// The snowline table (see `Session::snowline_table`); `null` before any result.
    #[wasm_bindgen(js_name = snowlineTable)]
    pub fn snowline_table(&self) -> JsValue {
        if let Some(r) = &self.remote {
            return to_js(&r.snowline_table);
        }
        self.session
            .snowline_table()
            .map_or(JsValue::NULL, |v| to_js(&v))
    }

    /// The snowline table as `snowlineTable` gives it, as compact JSON text
    /// (`null` before any result): the page compares the text with the table it
    /// shows and parses it only when it changed, and no object is built
    /// property by property through the bindings (`to_js` of the table cost
    /// more than building it).
    #[wasm_bindgen(js_name = snowlineTableJson)]
    pub fn snowline_table_json(&self) -> String {
        let table = match &self.remote {
            Some(r) => Some(r.snowline_table.to_string()),
            None => self.session.snowline_table_json(),
        };
        table.unwrap_or_else(|| "null".to_string())
    }

    /// One export as text: `profile_csv`, `profile_ecsv`, `profile_json`,
    /// `structure_csv`, `snowlines_json`, `disk`, `methods_text` or `bibtex`;
    /// `undefined` before any result.
    #[wasm_bindgen(js_name = exportText)]
    pub fn export_text(&self, what: &str) -> Result<Option<String>, JsError> {
        let kind = Export::from_key(what)
            .ok_or_else(|| JsError::new(&format!("unknown export {what:?}")))?;
        if let Some(r) = &self.remote {
            return Ok(r.exports.get(what).cloned());
        }
        Ok(self.session.export(kind))
    }

    /// Draws a view into the canvas with id `canvas_id` at its current backing size.
    /// `view`: `c_to_o`, `temperature`, `ice_map`, `c_to_o_map`, `abundances`.
    /// `options`: `{theme: "light"|"dark", species: "CO" (ice_map), pixelRatio: devicePixelRatio,
    /// canvas: the canvas element (optional; else found by `canvas_id`)}`.
    ///
    /// Only what changed is drawn: a view whose data, options and canvas size are
    /// those it was last drawn with is left as it is, and so is one whose display
    /// list comes out the same; otherwise the list is replayed in few canvas calls
    /// (`canvas::replay`). Returns whether the canvas was drawn.
    pub fn draw(&mut self, view: &str, canvas_id: &str, options: JsValue) -> Result<bool, JsError> {
        // Getters on anything but an object would throw: no options, the defaults.
        let options = options
            .is_object()
            .then(|| options.unchecked_into::<DrawOptions>());
        let get = |read: fn(&DrawOptions) -> JsValue| options.as_ref().map(read);
        let theme = match get(DrawOptions::theme)
            .and_then(|v| v.as_string())
            .as_deref()
        {
            Some("dark") => Theme::dark(),
            _ => Theme::light(),
        };
        let ratio = get(DrawOptions::pixel_ratio)
            .and_then(|v| v.as_f64())
            .filter(|r| r.is_finite() && *r > 0.0)
            .unwrap_or(1.0);
        // Test hook (tests/browser/redraw.test.mjs): `oneCanvas: true` draws the whole list
        // on the chart canvas itself rather than on the view's three canvases.
        let layered = get(DrawOptions::one_canvas).and_then(|v| v.as_bool()) != Some(true);
        let key = view_key(
            view,
            get(DrawOptions::species)
                .and_then(|v| v.as_string())
                .as_deref(),
        )?;
        let t0 = now_ms();
        self.view_data(&key)?;
        // Invariant: built just above.
        let data = self.data.get(&key).expect("view data present");
        let canvas =
            match get(DrawOptions::canvas).filter(|c| c.is_instance_of::<HtmlCanvasElement>()) {
                Some(c) => c.unchecked_into::<HtmlCanvasElement>(),
                None => canvas::canvas_by_id(canvas_id).map_err(|e| JsError::new(&e))?,
            };
        let size = (canvas.width(), canvas.height());
        let pixels_per_point = CSS_PX_PER_POINT * ratio;
        let previous = self
            .drawn
            .get(canvas_id)
            .filter(|d| d.key == key && d.size == size);
        let same_options = previous.is_some_and(|d| {
            d.theme == theme && d.pixels_per_point == pixels_per_point && d.layered == layered
        });
        if same_options && previous.is_some_and(|d| Rc::ptr_eq(&d.data, data) || d.data == *data) {
            let layout = previous.map(|d| d.layout.clone()).expect("checked above");
            self.layouts.insert(canvas_id.to_string(), (key, layout));
            self.draw_timings
                .insert(canvas_id.to_string(), [now_ms() - t0, 0.0, 0.0, 0.0]);
            return Ok(false);
        }
        let t1 = now_ms();
        let measure = canvas::CanvasMeasure::new(&canvas, &self.text_sizes);
        let mut raster_ms = 0.0;
        let segments = self.segments.entry(canvas_id.to_string()).or_default();
        let (ops, layout) = canvas::record(
            size,
            data,
            &theme,
            pixels_per_point,
            &measure,
            &mut raster_ms,
            self.spare.remove(canvas_id).unwrap_or_default(),
            segments,
        )
        .map_err(|e| JsError::new(&e))?;
        // What the canvases show, when they show a list of this size and style on three canvases.
        let shown = previous
            .filter(|_| same_options && layered)
            .and_then(|d| d.layers.map(|l| (d.ops.as_slice(), l)));
        let plan = layered.then(|| crate::layers::plan(shown, &ops));
        let unchanged = match &plan {
            Some(plan) => plan.unchanged,
            None => same_options && previous.is_some_and(|d| d.ops == ops),
        };
        let t2 = now_ms();
        let mut layers = plan.as_ref().map(|p| p.layers);
        if !unchanged {
            let drawn = match &plan {
                Some(plan) => canvas::replay_parts(&canvas, &ops, plan),
                None => canvas::replay(&canvas, &ops).map(|()| false),
            };
            let has_layers = match drawn {
                Ok(has_layers) => has_layers,
                Err(e) => {
                    // What the canvases hold is not known now: the next draw draws them all.
                    self.drawn.remove(canvas_id);
                    return Err(JsError::new(&e));
                }
            };
            if !has_layers {
                layers = None;
            }
            if plan.as_ref().is_some_and(|p| p.full) {
                *self.layer_redraws.entry(canvas_id.to_string()).or_default() += 1;
            }
            *self.draw_counts.entry(canvas_id.to_string()).or_default() += 1;
        }
        self.draw_timings.insert(
            canvas_id.to_string(),
            [t1 - t0, t2 - t1, now_ms() - t2, raster_ms],
        );
        self.layouts
            .insert(canvas_id.to_string(), (key.clone(), layout.clone()));
        let before = self.drawn.insert(
            canvas_id.to_string(),
            Drawn {
                key,
                data: Rc::clone(data),
                theme,
                pixels_per_point,
                layered,
                layers,
                size,
                ops,
                layout,
            },
        );
        if let Some(before) = before {
            self.spare.insert(
                canvas_id.to_string(),
                crate::display::Buffers::of(before.ops),
            );
        }
        Ok(!unchanged)
    }

    /// How many times the canvas with id `canvas_id` was actually drawn by `draw`
    /// (a view left as it was does not count), for the browser tests.
    #[wasm_bindgen(js_name = drawCount)]
    pub fn draw_count(&self, canvas_id: &str) -> u32 {
        self.draw_counts.get(canvas_id).copied().unwrap_or(0)
    }

    /// How many of the canvas `canvas_id`'s draws drew the layers under and over it
    /// again, not only the part of the list that changed (`crate::layers`), for the
    /// browser tests.
    #[wasm_bindgen(js_name = layerRedraws)]
    pub fn layer_redraws(&self, canvas_id: &str) -> u32 {
        self.layer_redraws.get(canvas_id).copied().unwrap_or(0)
    }

    /// What the canvas `canvas_id`'s last draw left on its three canvases, as operation
    /// counts `[back, middle, front]` of its display list (the layer under, the chart
    /// canvas, the layer over; an image put on the layer under counts in the middle);
    /// empty when it was drawn on one canvas or not at all.
    #[wasm_bindgen(js_name = layerSplit)]
    pub fn layer_split(&self, canvas_id: &str) -> Vec<u32> {
        self.drawn
            .get(canvas_id)
            .and_then(|d| d.layers.map(|l| (d.ops.len(), l)))
            .map_or_else(Vec::new, |(n, l)| {
                vec![l.back as u32, (n - l.back - l.front) as u32, l.front as u32]
            })
    }

    /// The last `draw` of the canvas `canvas_id`, in milliseconds, for the benchmark:
    /// `[data, record, replay, raster]` = building the view's data (and comparing it with
    /// what the canvas shows), recording the chart's display list, drawing it on the
    /// canvas, and the part of `record` spent rasterising a map's cells.
    #[wasm_bindgen(js_name = drawTimings)]
    pub fn draw_timings(&self, canvas_id: &str) -> Vec<f64> {
        self.draw_timings
            .get(canvas_id)
            .map_or_else(Vec::new, |t| t.to_vec())
    }

    /// The value under backend pixel (`x`, `y`) of a drawn canvas, as one line;
    /// `undefined` outside its plotting areas or before it was drawn.
    pub fn readout(&self, canvas_id: &str, x: f64, y: f64) -> Option<String> {
        let (key, layout) = self.layouts.get(canvas_id)?;
        readout(self.data.get(key)?.as_ref(), layout, x, y)
    }

    /// Test hook (tests/browser/survive.test.mjs, docs/page.md): traps the
    /// WebAssembly instance (the `unreachable` instruction) while this
    /// Explorer is mutably borrowed, as an out-of-memory abort inside `update`
    /// does, so the page's restart after a trap can be tested; afterwards the
    /// old instance answers every call with "recursive use of an object
    /// detected". Outside wasm32 it does nothing. Not a panic: no Rust code
    /// runs after the trap.
    #[wasm_bindgen(js_name = testTrap)]
    pub fn test_trap(&mut self) {
        #[cfg(target_arch = "wasm32")]
        core::arch::wasm32::unreachable();
    }

    /// Whether the view data for `view` (and `species`, for `ice_map`) is at hand;
    /// after a worker result, other species' ice maps must be fetched from the worker first.
    #[wasm_bindgen(js_name = hasView)]
    pub fn has_view(&self, view: &str, species: Option<String>) -> Result<bool, JsError> {
        let key = view_key(view, species.as_deref())?;
        Ok(self.data.contains_key(&key)
            || (self.remote.is_none() && self.session.current().is_some()))
    }

    /// Worker side: validates and runs like `update`, then packs everything the
    /// page needs into transferable parts: `{ok, problems, summary, snowlineTable,
    /// resolvedDisk, exports: {name: text}, views: {key: {meta, arrays: {name: Float64Array}}}}`.
    /// `species` picks the ice map included.
    #[wasm_bindgen(js_name = computePacket)]
    pub fn compute_packet(&mut self, disk: JsValue, species: &str) -> Result<JsValue, JsError> {
        let outcome = self.update(disk);
        let ok = js_sys::Reflect::get(&outcome, &JsValue::from_str("ok"))
            .ok()
            .and_then(|v| v.as_bool())
            .unwrap_or(false);
        if !ok {
            return Ok(outcome);
        }
        self.pack_current(species)
    }

    /// Worker side: the packet of the current result (see `computePacket`),
    /// after an `update` that succeeded; the worker times the two apart.
    #[wasm_bindgen(js_name = packCurrent)]
    pub fn pack_current(&mut self, species: &str) -> Result<JsValue, JsError> {
        if self.session.current().is_none() {
            return Err(JsError::new("no valid disk has been computed yet"));
        }
        let packet = js_sys::Object::new();
        let set = |key: &str, value: &JsValue| {
            js_sys::Reflect::set(&packet, &JsValue::from_str(key), value).map(|_| ())
        };
        let fail = |_| JsError::new("cannot build the result packet");
        set("ok", &JsValue::TRUE).map_err(fail)?;
        set("problems", &js_sys::Array::new()).map_err(fail)?;
        set(
            "summary",
            &to_js(&self.session.summary().unwrap_or(Value::Null)),
        )
        .map_err(fail)?;
        set(
            "snowlineTable",
            &to_js(&self.session.snowline_table().unwrap_or(Value::Null)),
        )
        .map_err(fail)?;
        set(
            "resolvedDisk",
            &to_js(&self.session.resolved_disk().unwrap_or(Value::Null)),
        )
        .map_err(fail)?;
        let exports = js_sys::Object::new();
        for kind in Export::ALL {
            // Invariant: a result exists (checked above).
            let text = self.session.export(kind).unwrap_or_default();
            js_sys::Reflect::set(
                &exports,
                &JsValue::from_str(kind.key()),
                &JsValue::from_str(&text),
            )
            .map_err(fail)?;
        }
        set("exports", &exports).map_err(fail)?;
        let views = js_sys::Object::new();
        let ice = view_key("ice_map", Some(species))?;
        for key in [
            "c_to_o",
            "temperature",
            "abundances",
            "c_to_o_map",
            ice.as_str(),
        ] {
            let parts = to_parts(self.view_data(key)?.as_ref());
            js_sys::Reflect::set(&views, &JsValue::from_str(key), &parts_to_js(&parts))
                .map_err(fail)?;
        }
        set("views", &views).map_err(fail)?;
        Ok(packet.into())
    }

    /// Worker side: the parts of one species' ice map of the current model.
    #[wasm_bindgen(js_name = mapPacket)]
    pub fn map_packet(&mut self, species: &str) -> Result<JsValue, JsError> {
        let key = view_key("ice_map", Some(species))?;
        let parts = to_parts(self.view_data(&key)?.as_ref());
        Ok(parts_to_js(&parts))
    }

    /// Page side: makes a worker result (`computePacket`) the current one.
    #[wasm_bindgen(js_name = loadPacket)]
    pub fn load_packet(&mut self, packet: JsValue) -> Result<(), JsError> {
        let get = |key: &str| {
            js_sys::Reflect::get(&packet, &JsValue::from_str(key))
                .map_err(|_| JsError::new(&format!("packet lacks {key}")))
        };
        let value = |key: &str| -> Result<Value, JsError> {
            serde_wasm_bindgen::from_value(get(key)?)
                .map_err(|e| JsError::new(&format!("packet {key}: {e}")))
        };
        let mut exports = HashMap::new();
        let texts = get("exports")?;
        for name in Export::ALL.map(Export::key) {
            if let Some(text) = js_sys::Reflect::get(&texts, &JsValue::from_str(name))
                .ok()
                .and_then(|v| v.as_string())
            {
                exports.insert(name.to_string(), text);
            }
        }
        let remote = Remote {
            summary: value("summary")?,
            snowline_table: value("snowlineTable")?,
            resolved_disk: value("resolvedDisk")?,
            exports,
        };
        let views = get("views")?;
        let mut data = HashMap::new();
        for key in js_sys::Object::keys(&views.clone().into())
            .iter()
            .filter_map(|k| k.as_string())
        {
            let parts = parts_from_js(
                &js_sys::Reflect::get(&views, &JsValue::from_str(&key))
                    .map_err(|_| JsError::new("packet view"))?,
            )?;
            data.insert(
                key,
                Rc::new(from_parts(&parts).map_err(|e| JsError::new(&e))?),
            );
        }
        self.data = data;
        self.layouts.clear();
        self.remote = Some(remote);
        Ok(())
    }

    /// Page side: adds one view's parts from the worker (`mapPacket`), e.g. another species' ice map.
    #[wasm_bindgen(js_name = loadView)]
    pub fn load_view(
        &mut self,
        view: &str,
        species: Option<String>,
        parts: JsValue,
    ) -> Result<(), JsError> {
        let key = view_key(view, species.as_deref())?;
        let data = from_parts(&parts_from_js(&parts)?).map_err(|e| JsError::new(&e))?;
        self.data.insert(key, Rc::new(data));
        Ok(())
    }

    /// The summary of the current result (worker or own), as `update` returns it.
    pub fn summary(&self) -> JsValue {
        match &self.remote {
            Some(r) => to_js(&r.summary),
            None => self.session.summary().map_or(JsValue::NULL, |v| to_js(&v)),
        }
    }

    pub(crate) fn view_data(&mut self, key: &str) -> Result<&Rc<ViewData>, JsError> {
        if !self.data.contains_key(key) {
            if self.remote.is_some() {
                return Err(JsError::new(&format!(
                    "the view {key} has not been received from the worker"
                )));
            }
            let current = self
                .session
                .current()
                .ok_or_else(|| JsError::new("no valid disk has been computed yet"))?;
            let model = &current.model;
            let grid = |cached: &mut Option<Arc<MapGrid>>| {
                Arc::clone(cached.get_or_insert_with(|| Arc::new(MapGrid::from_model(model))))
            };
            let data = match key {
                // With the planet panel's marks (planet radius, allowed formation radii).
                "c_to_o" => ViewData::Profile(crate::planet::with_marks(
                    ProfileData::from_model(model),
                    &self.planet,
                )),
                "temperature" => ViewData::Temperature(TemperatureData::from_model(model)),
                "abundances" => ViewData::Abundances(AbundanceData::from_model(model)),
                "c_to_o_map" => {
                    ViewData::CToOMap(MapData::gas_c_to_o_on(&grid(&mut self.map_grid), model))
                }
                _ => {
                    // Invariant: `draw` builds ice-map keys from a parsed species.
                    let species = key
                        .strip_prefix("ice_map:")
                        .and_then(Species::from_key)
                        .expect("ice-map key names a species");
                    ViewData::IceMap(MapData::ice_fraction_on(
                        &grid(&mut self.map_grid),
                        model,
                        species,
                    ))
                }
            };
            self.data.insert(key.to_string(), Rc::new(data));
        }
        // Invariant: inserted just above when missing.
        Ok(self.data.get(key).expect("view data present"))
    }
}

/// The data key of a view: the view's name, or `ice_map:<SPECIES>` (default
/// species H2O); names and messages from `nivalis_charts::View`.
fn view_key(view: &str, species: Option<&str>) -> Result<String, JsError> {
    let name = if view == "ice_map" {
        format!("ice_map:{}", species.unwrap_or("H2O"))
    } else {
        view.to_string()
    };
    nivalis_charts::View::from_key(&name)
        .map(|v| v.key())
        .map_err(|e| JsError::new(&e))
}

/// `{meta, arrays: {name: Float64Array}}`.
fn parts_to_js(parts: &ViewParts) -> JsValue {
    let arrays = js_sys::Object::new();
    for (name, values) in &parts.arrays {
        // Reflect::set on a fresh plain object cannot fail.
        let _ = js_sys::Reflect::set(
            &arrays,
            &JsValue::from_str(name),
            &js_sys::Float64Array::from(&values[..]),
        );
    }
    let out = js_sys::Object::new();
    let _ = js_sys::Reflect::set(&out, &JsValue::from_str("meta"), &to_js(&parts.meta));
    let _ = js_sys::Reflect::set(&out, &JsValue::from_str("arrays"), &arrays);
    out.into()
}

fn parts_from_js(value: &JsValue) -> Result<ViewParts, JsError> {
    let meta = js_sys::Reflect::get(value, &JsValue::from_str("meta"))
        .map_err(|_| JsError::new("view parts lack meta"))?;
    let meta: Value = serde_wasm_bindgen::from_value(meta)
        .map_err(|e| JsError::new(&format!("view meta: {e}")))?;
    let arrays_js = js_sys::Reflect::get(value, &JsValue::from_str("arrays"))
        .map_err(|_| JsError::new("view parts lack arrays"))?;
    let mut arrays = Vec::new();
    for name in js_sys::Object::keys(&arrays_js.clone().into())
        .iter()
        .filter_map(|k| k.as_string())
    {
        let array = js_sys::Reflect::get(&arrays_js, &JsValue::from_str(&name))
            .map_err(|_| JsError::new("view array"))?;
        let array: js_sys::Float64Array = array
            .dyn_into()
            .map_err(|_| JsError::new(&format!("view array {name} is not a Float64Array")))?;
        arrays.push((name, array.to_vec()));
    }
    Ok(ViewParts { meta, arrays })
}
