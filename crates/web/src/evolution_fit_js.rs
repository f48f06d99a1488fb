//! The evolution panel's fit over formation radius x formation age (issue 13; docs/model.md
//! section 12.9; docs/page.md "The disk in time"), run in a Web Worker (web/evolution_fit.js).
//! Only forwarding: the observation is read by the CLI's request builder
//! (`nivalis_exports::planet_tools::fit_request`), the age window by the CLI's parser
//! (`nivalis_exports::evolution_fit::parse_age_window`), the run is the CLI's
//! (`nivalis_exports::evolution_fit::run_age_fit`), the tables its `AgeFit::text`, the figure
//! `nivalis_charts::age_fit` through the page's figure files (`crate::figures::figure_file`),
//! so every download equals `nivalis fit DISK ... --over-age-myr T1,T2,N` byte for byte.
//! [`AgeFitSession`] is plain Rust (tested natively); `AgeFitRunner` is its wasm binding.

use nivalis_charts::age_fit::{age_fit_figure, CHI2_AGE_MAP_VIEW};
use nivalis_disk_files::{from_value, Problem};
use nivalis_exports::evolution_fit::{
    age_fit_summary, parse_age_window, run_age_fit, AgeFit, AgeFitError, AgeFitRequest,
};
use nivalis_exports::planet::FitOptions;
use nivalis_exports::planet_tools::{fit_problem, fit_request};
use nivalis_exports::Format;
use serde_json::Value;

use crate::figures::{figure_file, FigureOptions};

/// A finished radius x age fit of the page.
#[derive(Debug, Clone)]
pub struct AgeFitSession {
    fit: AgeFit,
}

impl AgeFitSession {
    /// Runs the fit of `disk` (the page's disk object as JSON) for the fit panel's fields in
    /// `request` over the age window `window` ("T1,T2[,N]", as `--over-age-myr` reads it),
    /// calling `progress(fraction)`; a `false` from it cancels. Problems name the field
    /// (`age_window`, `fit.<option>`, the disk's dotted paths).
    pub fn run(
        disk: &Value,
        request: &Value,
        window: &str,
        progress: &mut dyn FnMut(f64) -> bool,
    ) -> Result<AgeFitSession, Vec<Problem>> {
        let file = from_value(disk).map_err(|p| p.0)?;
        let window = parse_age_window(window).map_err(|m| vec![Problem::new("age_window", m)])?;
        let (observed, settings) = fit_request(request)?;
        let request = AgeFitRequest {
            window,
            observed,
            settings,
        };
        let fit = run_age_fit(&file, &request, progress).map_err(|e| match e {
            AgeFitError::Window(m) => vec![Problem::new("age_window", m)],
            AgeFitError::Physics(err) => match err.path() {
                Some(p) if FitOptions::known_option_of(p).is_some() => vec![fit_problem(&err)],
                Some("from_myr") | Some("evolution.until_myr") => {
                    vec![Problem::new("age_window", err.detail())]
                }
                _ => vec![Problem::from_physics(&err)],
            },
            AgeFitError::Cancelled => vec![Problem::new("(run)", "cancelled")],
        })?;
        Ok(AgeFitSession { fit })
    }

    /// The fit's summary (the `fit` object of the JSON export: best fit, goodness, warnings,
    /// thresholds, allowed radii per age).
    pub fn summary(&self) -> Value {
        age_fit_summary(&self.fit.map)
    }

    /// A table export: `csv`, `ecsv` or `json`, the CLI's `--format` files.
    pub fn text(&self, format: &str) -> Result<String, String> {
        Format::from_key(format)
            .map(|f| self.fit.text(f))
            .ok_or_else(|| format!("unknown format {format:?}; csv, ecsv or json"))
    }

    /// The figure file (`{format, width, dpi, theme}` as the page's other figure downloads),
    /// as `nivalis fit ... --over-age-myr ... --figure FILE --width --dpi --theme` writes it.
    pub fn figure(&self, options: &Value) -> Result<Vec<u8>, String> {
        let options = FigureOptions::from_value(options)?;
        figure_file(
            &age_fit_figure(&self.fit.map),
            &options,
            &self.fit.provenance(),
            CHI2_AGE_MAP_VIEW,
        )
        .map_err(|e| e.to_string())
    }
}

#[cfg(target_arch = "wasm32")]
mod binding {
    use super::AgeFitSession;
    use crate::explorer::to_js;
    use serde_json::{json, Value};
    use wasm_bindgen::prelude::*;

    fn problems(ps: &[nivalis_disk_files::Problem]) -> JsValue {
        to_js(
            &json!({"problems": ps.iter().map(|p| json!({"path": p.path, "message": p.message})).collect::<Vec<_>>()}),
        )
    }

    /// The radius x age fit, run by the evolution panel's Web Worker.
    #[wasm_bindgen]
    pub struct AgeFitRunner {
        session: AgeFitSession,
    }

    #[wasm_bindgen]
    impl AgeFitRunner {
        /// Run the fit of `disk` for the fit panel's `request` over `window` ("T1,T2,N"),
        /// calling `progress(fraction)`. Problems are thrown as `{problems: [...]}`.
        #[wasm_bindgen(constructor)]
        pub fn new(
            disk: JsValue,
            request: JsValue,
            window: &str,
            progress: &js_sys::Function,
        ) -> Result<AgeFitRunner, JsValue> {
            let read = |v: JsValue, path: &str| {
                serde_wasm_bindgen::from_value::<Value>(v).map_err(|e| {
                    to_js(&json!({"problems": [{"path": path, "message": e.to_string()}]}))
                })
            };
            let disk = read(disk, "(input)")?;
            let request = read(request, "fit")?;
            let mut report = |fraction: f64| {
                let _ = progress.call1(&JsValue::NULL, &JsValue::from_f64(fraction));
                true
            };
            AgeFitSession::run(&disk, &request, window, &mut report)
                .map(|session| AgeFitRunner { session })
                .map_err(|ps| problems(&ps))
        }

        /// The fit's summary (the JSON export's `fit` object).
        pub fn summary(&self) -> JsValue {
            to_js(&self.session.summary())
        }

        /// A table export's text: `csv`, `ecsv` or `json`.
        pub fn text(&self, format: &str) -> Result<String, JsValue> {
            self.session.text(format).map_err(|e| JsValue::from_str(&e))
        }

        /// The figure file's bytes for `{format, width, dpi, theme}`.
        pub fn figure(&self, options: JsValue) -> Result<Vec<u8>, JsValue> {
            let options: Value = serde_wasm_bindgen::from_value(options)
                .map_err(|e| JsValue::from_str(&e.to_string()))?;
            self.session
                .figure(&options)
                .map_err(|e| JsValue::from_str(&e))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn the_page_fit_is_the_shared_run_and_names_bad_fields() {
        let disk = json!({"grid": {"radial_cells": 30, "vertical_cells": 8}});
        let request = json!({"c_to_o": "0.5", "c_to_o_sigma": "0.05"});
        let mut seen = Vec::new();
        let s = AgeFitSession::run(&disk, &request, "0.05,0.3,3", &mut |f| {
            seen.push(f);
            true
        })
        .unwrap();
        // Progress rises to 1.
        assert!(seen.windows(2).all(|w| w[1] >= w[0]), "{seen:?}");
        assert_eq!(seen.last(), Some(&1.0));
        // The tables are the shared run's (`nivalis fit ... --over-age-myr`, crates/cli tests).
        let file = from_value(&disk).unwrap();
        let (observed, settings) = fit_request(&request).unwrap();
        let shared = run_age_fit(
            &file,
            &AgeFitRequest {
                window: (0.05, 0.3, 3),
                observed,
                settings,
            },
            &mut |_| true,
        )
        .unwrap();
        for (key, f) in [
            ("csv", Format::Csv),
            ("ecsv", Format::Ecsv),
            ("json", Format::Json),
        ] {
            assert_eq!(s.text(key).unwrap(), shared.text(f), "{key}");
        }
        assert!(s.text("xlsx").is_err());
        assert!(s.summary()["best_fit"]["time_myr"].is_number());
        let svg = s.figure(&json!({"format": "svg"})).unwrap();
        assert!(String::from_utf8(svg).unwrap().contains("chi2_age_map"));
        assert_eq!(
            s.figure(&json!({"dpi": 5})).unwrap_err(),
            "dpi: must be a number between 36 and 1200, got 5"
        );
        // Problems name the age window and the fit panel's fields.
        let bad = AgeFitSession::run(&disk, &request, "0.3,0.05", &mut |_| true).unwrap_err();
        assert_eq!(bad[0].path, "age_window");
        let bad = AgeFitSession::run(&disk, &request, "0.001,0.3,3", &mut |_| true).unwrap_err();
        assert_eq!(bad[0].path, "age_window");
        let bad = AgeFitSession::run(
            &disk,
            &json!({"c_to_o": "0.5", "c_to_o_sigma": "-1"}),
            "0.05,0.3,3",
            &mut |_| true,
        )
        .unwrap_err();
        assert!(bad.iter().any(|p| p.path == "fit.c_to_o_sigma"), "{bad:?}");
    }
}
