//! The planet tools, figure downloads and snowline anchor as methods of the
//! page's `Explorer` (a second `#[wasm_bindgen] impl` block, so the planet
//! panel's bindings live apart from the views'). Each converts its arguments
//! at the boundary and forwards to [`crate::planet`] or [`crate::figures`];
//! results cross as plain JS objects, figure files as `Uint8Array`s.
//!
//! The planet tools need the model itself, so they work on results computed
//! on the page; a result computed in the page's Web Worker (very large grids)
//! only has the views' data here, and the tools say so.

use std::cell::RefCell;
use std::collections::HashMap;

use nivalis_charts::{Chi2Data, Figure, Theme};
use nivalis_disk_files::{from_value, to_value, DiskFile, Problem};
use nivalis_exports::Provenance;
use serde_json::{json, Value};
use wasm_bindgen::prelude::*;

use crate::canvas;
use crate::explorer::{problems_js, to_js, Explorer, CSS_PX_PER_POINT};
use crate::figures::{figure_file, figure_of, FigureOptions};
use crate::planet::{self, PlanetExport};

/// The message when the planet tools have no model on the page.
const NO_MODEL: &str = "the planet tools need the model on this page, but this grid was computed in the background; use a grid of at most about twice the default size, or the command-line tool (nivalis planet / fit)";

fn from_js(value: JsValue) -> Result<Value, Problem> {
    serde_wasm_bindgen::from_value(value)
        .map_err(|e| Problem::new("(input)", format!("cannot read the input: {e}")))
}

fn failed(problems: &[Problem]) -> JsValue {
    to_js(&json!({"ok": false, "problems": problems_js(problems)}))
}

fn option_text(options: &JsValue, key: &str) -> Option<String> {
    js_sys::Reflect::get(options, &JsValue::from_str(key))
        .ok()
        .and_then(|v| v.as_string())
}

#[wasm_bindgen]
impl Explorer {
    /// Whether the current result's model is on the page (the planet tools need it).
    #[wasm_bindgen(js_name = hasModel)]
    pub fn has_model(&self) -> bool {
        self.remote.is_none() && self.session.current().is_some()
    }

    /// Places a planet as `nivalis planet` does. `input`: `{radius_au,
    /// to_radius_au, weighting, solid_to_gas, mix}` (numbers or typed text).
    /// Returns `{ok, problems: [{path, message}], planet}`; on problems the
    /// planet is removed (nothing stale stays marked or exported).
    #[wasm_bindgen(js_name = placePlanet)]
    pub fn place_planet(&mut self, input: JsValue) -> JsValue {
        self.planet.placed = None;
        let outcome = match (self.has_model(), from_js(input)) {
            (false, _) => Err(vec![Problem::new("planet", NO_MODEL)]),
            (true, Err(p)) => Err(vec![p]),
            (true, Ok(input)) => {
                // Invariant: has_model checked that a current result exists.
                let current = self.session.current().expect("current result");
                planet::place_planet(&current.model, &current.file, &input)
            }
        };
        let result = match outcome {
            Ok(placed) => {
                let view = planet::planet_view(&placed);
                self.planet.placed = Some(placed);
                to_js(&json!({"ok": true, "problems": [], "planet": view}))
            }
            Err(problems) => failed(&problems),
        };
        self.refresh_marks();
        result
    }

    /// Removes the placed planet.
    #[wasm_bindgen(js_name = clearPlanet)]
    pub fn clear_planet(&mut self) {
        self.planet.placed = None;
        self.refresh_marks();
    }

    /// The inverse map as `nivalis fit` does. `input`: `{c_to_o, c_to_o_sigma,
    /// tracer: "none"|"C"|"O", metallicity_dex, metallicity_sigma_dex, mix,
    /// convention}`. Returns `{ok, problems, fit}` with the CLI's fit summary,
    /// the union of 1-sigma radii and the explanation in words.
    #[wasm_bindgen(js_name = fitPlanet)]
    pub fn fit_planet(&mut self, input: JsValue) -> JsValue {
        self.planet.fitted = None;
        let outcome = match (self.has_model(), from_js(input)) {
            (false, _) => Err(vec![Problem::new("fit", NO_MODEL)]),
            (true, Err(p)) => Err(vec![p]),
            (true, Ok(input)) => {
                // Invariant: has_model checked that a current result exists.
                let current = self.session.current().expect("current result");
                planet::fit_planet(&current.model, &current.file, &input).map(|f| {
                    let view = planet::fit_view(&current.model, &f);
                    (f, view)
                })
            }
        };
        let result = match outcome {
            Ok((fitted, view)) => {
                self.planet.fitted = Some(fitted);
                to_js(&json!({"ok": true, "problems": [], "fit": view}))
            }
            Err(problems) => failed(&problems),
        };
        self.refresh_marks();
        result
    }

    /// Removes the inverse map.
    #[wasm_bindgen(js_name = clearFit)]
    pub fn clear_fit(&mut self) {
        self.planet.fitted = None;
        self.refresh_marks();
    }

    /// One export of the planet tools as text: `planet_json`, `planet_csv`,
    /// `fit_csv`, `fit_ecsv`, `fit_json`, `planet_methods`, `planet_bibtex`;
    /// `undefined` when the tool has no result.
    #[wasm_bindgen(js_name = planetExport)]
    pub fn planet_export(&self, what: &str) -> Result<Option<String>, JsError> {
        let kind = PlanetExport::from_key(what)
            .ok_or_else(|| JsError::new(&format!("unknown planet export {what:?}")))?;
        Ok(planet::export(&self.planet, kind))
    }

    /// A figure file, byte-identical to `nivalis figure DISK --view VIEW
    /// [--format svg|png] [--width single|double] [--dpi N] [--theme light|dark]`,
    /// or for `view` = `chi2_map` to `nivalis fit ... --figure FILE` (whose
    /// CLI form is single-column, light, 300 dpi). `view`: `c_to_o`,
    /// `temperature`, `abundances`, `c_to_o_map`, `ice_map:<SPECIES>`, `chi2_map`.
    /// `options`: `{format, width, dpi, theme}`.
    #[wasm_bindgen(js_name = figureFile)]
    pub fn figure_file(&mut self, view: &str, options: JsValue) -> Result<Vec<u8>, JsError> {
        let options = from_js(options).map_err(|p| JsError::new(&p.message))?;
        let options = FigureOptions::from_value(&options).map_err(|e| JsError::new(&e))?;
        let (figure, provenance) = if view == "chi2_map" {
            let f = self.planet.fitted.as_ref().ok_or_else(|| {
                JsError::new("no chi-square map yet: fit an observed planet first")
            })?;
            (
                Figure::Chi2(Chi2Data::from_map(&f.map)),
                Provenance::of(&f.file),
            )
        } else {
            let key = nivalis_charts::View::from_key(view)
                .map(|v| v.key())
                .map_err(|e| JsError::new(&e))?;
            let file = self
                .current_file()
                .ok_or_else(|| JsError::new("no valid disk has been computed yet"))?;
            let figure = figure_of(self.view_data(&key)?);
            (figure, Provenance::of(&file))
        };
        figure_file(&figure, &options, &provenance, view).map_err(|e| JsError::new(&e.to_string()))
    }

    /// Draws the inverse map (with its 1- and 2-sigma contours and the best
    /// fit) into the canvas `canvas_id`. `options`: `{theme, pixelRatio}`.
    #[wasm_bindgen(js_name = drawChi2)]
    pub fn draw_chi2(&mut self, canvas_id: &str, options: JsValue) -> Result<(), JsError> {
        let f = self
            .planet
            .fitted
            .as_ref()
            .ok_or_else(|| JsError::new("no chi-square map yet"))?;
        let theme = match option_text(&options, "theme").as_deref() {
            Some("dark") => Theme::dark(),
            _ => Theme::light(),
        };
        let ratio = js_sys::Reflect::get(&options, &JsValue::from_str("pixelRatio"))
            .ok()
            .and_then(|v| v.as_f64())
            .filter(|r| r.is_finite() && *r > 0.0)
            .unwrap_or(1.0);
        let canvas = canvas::canvas_by_id(canvas_id).map_err(|e| JsError::new(&e))?;
        let size = (canvas.width(), canvas.height());
        // Recorded and replayed as the views are: the background and cells as one image.
        let sizes = RefCell::new(HashMap::new());
        let measure = canvas::CanvasMeasure::new(&canvas, &sizes);
        let data = Chi2Data::from_map(&f.map);
        let (ops, layout) =
            canvas::record_chi2(size, &data, &theme, CSS_PX_PER_POINT * ratio, &measure)
                .map_err(|e| JsError::new(&e))?;
        canvas::replay(&canvas, &ops).map_err(|e| JsError::new(&e))?;
        self.layouts
            .insert(canvas_id.to_string(), ("chi2_map".to_string(), layout));
        Ok(())
    }

    /// The map's values under backend pixel (`x`, `y`) of the drawn chi-square canvas, as one line.
    #[wasm_bindgen(js_name = chi2Readout)]
    pub fn chi2_readout(&self, canvas_id: &str, x: f64, y: f64) -> Option<String> {
        let (key, layout) = self.layouts.get(canvas_id)?;
        let f = self.planet.fitted.as_ref().filter(|_| key == "chi2_map")?;
        nivalis_charts::readout::chi2_readout(&f.map, layout, x, y)
    }

    /// The radius [au] under backend pixel (`x`, `y`) of a drawn profile
    /// canvas (the chart's own axis transform); `undefined` outside its plot.
    #[wasm_bindgen(js_name = radiusAt)]
    pub fn radius_at(&self, canvas_id: &str, x: f64, y: f64) -> Option<f64> {
        let (_, layout) = self.layouts.get(canvas_id)?;
        let (panel, r, _) = layout.panel_at(x, y)?;
        (panel.name != "colour_bar" && r.is_finite() && r > 0.0).then_some(r)
    }

    /// Anchors the current disk to an observed snowline as `nivalis anchor`
    /// does. `input`: `{species, radius_au, sigma_au, adjust}`. Returns `{ok,
    /// problems, disk, summary: [lines]}` where `disk` is the anchored disk
    /// file (every field) the CLI would write; the page then loads it as an edit.
    #[wasm_bindgen(js_name = anchorDisk)]
    pub fn anchor_disk(&self, input: JsValue) -> JsValue {
        let Some(file) = self.current_file() else {
            return failed(&[Problem::new(
                "anchor",
                "no valid disk has been computed yet",
            )]);
        };
        let input = match from_js(input) {
            Ok(v) => v,
            Err(p) => return failed(&[p]),
        };
        match planet::anchor(&file, &input) {
            Ok((anchored, summary)) => to_js(
                &json!({"ok": true, "problems": [], "disk": to_value(&anchored), "summary": summary}),
            ),
            Err(problems) => failed(&problems),
        }
    }
}

impl Explorer {
    /// The current disk file: the session's, or the worker result's resolved disk read back.
    fn current_file(&self) -> Option<DiskFile> {
        if self.remote.is_none() {
            return self.session.current().map(|c| c.file.clone());
        }
        let value: Value = serde_wasm_bindgen::from_value(self.resolved_disk()).ok()?;
        from_value(&value).ok()
    }

    /// Puts the planet's radius and the allowed radii on the C/O profile's data
    /// (built later with them when not built yet; see `view_data`).
    fn refresh_marks(&mut self) {
        // A new value (not changed in place): a canvas drawn from the old one keeps it to compare.
        if let Some(crate::readout::ViewData::Profile(p)) =
            self.data.get("c_to_o").map(|d| d.as_ref())
        {
            let marked = planet::with_marks(p.clone(), &self.planet);
            self.data.insert(
                "c_to_o".to_string(),
                std::rc::Rc::new(crate::readout::ViewData::Profile(marked)),
            );
        }
    }
}
