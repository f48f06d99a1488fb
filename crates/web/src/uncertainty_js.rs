//! The page's uncertainty panel (docs/model.md section 13), run in a Web Worker: a session
//! holds the nominal model and the samples so far, runs them in chunks (so the worker can report
//! progress and partial bands between chunks), and builds the summary, the figures (SVG, from
//! `nivalis_charts::uncertainty`) and the exports (from `nivalis_exports::uncertainty`, the
//! CLI's own functions, so the files are byte-identical for the same seed and samples).
//! [`UncertaintySession`] is plain Rust (tested natively); `UncertaintyRunner` is its wasm
//! binding.

use nivalis_charts::{
    posterior_figure, uncertainty_figure, uncertainty_svg, Figure, FigureSize, Theme,
    UncertaintyFigure, UncertaintySource, UncertaintyView,
};
use nivalis_disk_files::uncertainty::{read_uncertainty, UncertaintySpec};
use nivalis_disk_files::{from_value, DiskFile, Problem};
use nivalis_exports::uncertainty::{
    check_sensitivity_radius, marginal_fit_json, methods_file, posterior_median_swing,
    posterior_sample_map, uncertainty_json, uncertainty_text, UncertaintyResult, UncertaintyTable,
};
use nivalis_exports::{Format, Provenance};
use nivalis_physics::planet::chi_square_map;
use nivalis_physics::random::Rng;
use nivalis_physics::uncertainty::{
    one_at_a_time, summarise, Engine, InputSensitivity, MarginalPosterior, MonteCarlo,
    PosteriorAccumulator, SampleResult, SampleValues,
};
use nivalis_physics::Model;
use serde_json::{json, Value};

/// A running Monte Carlo of the page.
pub struct UncertaintySession {
    file: DiskFile,
    spec: UncertaintySpec,
    engine: Engine,
    results: Vec<SampleResult>,
    sensitivity: Option<Vec<InputSensitivity>>,
    seed: u64,
    at_au: f64,
    /// The last marginalised posterior and the samples it was asked over.
    posterior: Option<(MarginalPosterior, u64)>,
}

impl UncertaintySession {
    /// A session for a disk (a JSON value with an `uncertainty` section).
    pub fn new(disk: &Value, seed: u64, at_au: f64) -> Result<UncertaintySession, Vec<Problem>> {
        let file = from_value(disk).map_err(|p| p.0)?;
        let spec = match read_uncertainty(disk, &file) {
            Ok(Some(s)) => s,
            Ok(None) => {
                return Err(vec![Problem::new(
                    "uncertainty",
                    "the disk has no uncertainty section; give one (docs/disk-file.md, \"Uncertainty\")",
                )])
            }
            Err(p) => return Err(p.0),
        };
        check_sensitivity_radius(&file.parameters, at_au)
            .map_err(|e| vec![Problem::new("at_au", e)])?;
        let model = Model::run(&file.parameters).map_err(|e| vec![Problem::from_physics(&e)])?;
        Ok(UncertaintySession {
            file,
            spec,
            engine: Engine::new(model),
            results: Vec::new(),
            sensitivity: None,
            seed,
            at_au,
            posterior: None,
        })
    }

    /// Run samples `start..start + count` (appended in order).
    pub fn run_chunk(&mut self, start: u64, count: u64) {
        let spec = &self.spec;
        let draw = |rng: &mut Rng| spec.draw(rng);
        for i in start..start + count {
            let r = self.engine.run_sample(self.seed, i, &draw);
            self.results.push(r);
        }
    }

    /// Samples run so far.
    pub fn done(&self) -> usize {
        self.results.len()
    }

    /// The one-at-a-time sensitivity and the first-order indices over the samples so far.
    pub fn finish(&mut self) {
        let levels = self.spec.one_at_a_time_levels();
        self.sensitivity = Some(one_at_a_time(
            &self.engine,
            self.at_au,
            &levels,
            Some(&self.results),
        ));
    }

    fn monte_carlo(&self) -> MonteCarlo {
        summarise(self.engine.radius_au(), self.seed, &self.results)
    }

    fn with_result<T>(&self, f: impl FnOnce(&UncertaintyResult) -> T) -> T {
        let mc = self.monte_carlo();
        let prov = Provenance::of(&self.file);
        let used = nivalis_exports::methods::methods(&self.file.parameters);
        let r = UncertaintyResult {
            monte_carlo: &mc,
            spec: &self.spec,
            sensitivity: self.sensitivity.as_deref(),
            sensitivity_radius_au: self.at_au,
            provenance: &prov,
            methods: &used,
        };
        f(&r)
    }

    /// The JSON export (the CLI's `--format json` for the same seed and samples).
    pub fn summary(&self) -> Value {
        self.with_result(uncertainty_json)
    }

    /// An export file's text: `json`, or `csv`/`ecsv` of `bands`, `snowlines`, `sensitivity`,
    /// or `methods` (the methods text).
    pub fn export(&self, format: &str, table: &str) -> Result<String, String> {
        let which = UncertaintyTable::from_key(table)
            .ok_or_else(|| format!("unknown table {table:?}; bands, snowlines or sensitivity"))?;
        self.with_result(|r| match (format, Format::from_key(format)) {
            ("methods", _) => Ok(methods_file(r.spec, r.monte_carlo)),
            ("bibtex", _) => Ok(nivalis_exports::uncertainty::uncertainty_bibtex()),
            (_, Some(f)) => Ok(uncertainty_text(r, f, which)),
            _ => Err(format!(
                "unknown format {format:?}; csv, ecsv, json, methods or bibtex"
            )),
        })
    }

    /// The nominal (deterministic) model's values, drawn dashed over the bands.
    fn nominal(&self) -> Option<SampleValues> {
        self.engine.sample(self.engine.base().parameters()).ok()
    }

    /// The figure of a view (`nivalis_charts::UncertaintyView`) from the samples so far.
    fn figure(&self, view: UncertaintyView) -> Result<UncertaintyFigure, String> {
        if view == UncertaintyView::Posterior {
            return self
                .posterior
                .as_ref()
                .map(|(p, _)| posterior_figure(p))
                .ok_or_else(|| "posterior: no marginalised posterior yet".to_string());
        }
        self.with_source(|source| uncertainty_figure(view, source))
    }

    /// Calls `f` with the samples so far, the nominal model and the sensitivity (once
    /// computed) as the charts' [`UncertaintySource`].
    fn with_source<T>(&self, f: impl FnOnce(&UncertaintySource) -> T) -> T {
        let mc = self.monte_carlo();
        let nominal = self.nominal();
        f(&UncertaintySource {
            monte_carlo: &mc,
            nominal: nominal.as_ref(),
            sensitivity: self.sensitivity.as_deref(),
            sensitivity_radius_au: self.at_au,
        })
    }

    /// The four panel figures as SVG for the screen: the bands of `quantity` (a [`Quantity`]
    /// key) with the nominal model, the histogram of `species`' snowline, the sensitivity of the
    /// gas C/O and of the species' snowline (once computed).
    pub fn figures(&self, quantity: &str, species: &str, dark: bool) -> Result<Value, String> {
        let theme = if dark { Theme::dark() } else { Theme::light() };
        let size = FigureSize::single_column();
        let bands = UncertaintyView::from_key(&format!("bands:{quantity}"))?;
        let hist = UncertaintyView::from_key(&format!("snowlines:{species}"))?;
        let UncertaintyView::Snowlines(sp) = hist else {
            return Err(format!("unknown species {species:?}"));
        };
        Ok(self.with_source(|source| {
            let svg = |v: UncertaintyView| {
                uncertainty_figure(v, source)
                    .ok()
                    .and_then(|f| uncertainty_svg(&f, &theme, size).ok())
            };
            json!({
                "bands": svg(bands),
                "histogram": svg(hist),
                "sensitivity_c_to_o": svg(UncertaintyView::Sensitivity(None)),
                "sensitivity_snowline": svg(UncertaintyView::Sensitivity(Some(sp))),
            })
        }))
    }

    /// A figure file of `view` (`bands:<QUANTITY>`, `snowlines:<SPECIES>`,
    /// `sensitivity[:<SPECIES>]`, `posterior`) in the shared figure `options` (`{format, width,
    /// dpi, theme}`, read by `nivalis_charts::FigureOptions`), with the provenance, seed and
    /// sample count embedded: the bytes `nivalis uncertainty DISK --figure VIEW` (or, for the
    /// posterior, `nivalis fit ... --uncertainty --figure FILE`) writes.
    pub fn figure_file(&self, view: &str, options: &Value) -> Result<Vec<u8>, String> {
        let options = crate::figures::FigureOptions::from_value(options)?;
        let v = UncertaintyView::from_key(view)?;
        let figure = self.figure(v)?;
        let samples = match (&v, &self.posterior) {
            (UncertaintyView::Posterior, Some((_, n))) => *n as usize,
            _ => self.results.len(),
        };
        let prov = Provenance::of(&self.file);
        crate::figures::figure_file_with(
            &Figure::Uncertainty(figure),
            &options,
            &prov,
            view,
            &nivalis_exports::figures::monte_carlo_provenance(self.seed, samples),
        )
        .map_err(|e| e.to_string())
    }

    /// The formation-radius posterior of an observed planet marginalised over the first
    /// `samples` samples' disks (each a full model; slower than the bands), as
    /// `nivalis fit ... --uncertainty --samples N --seed S`. `request` holds the fit panel's
    /// fields (C/O, [C/H], [O/H], [M/H] with their errors, relative to star or Sun, priors),
    /// read by the CLI's own request builder (`nivalis_exports::planet_tools::fit_request`).
    /// The result is the CLI's JSON plus `text` (its file, byte for byte) and `svg` (the figure).
    pub fn posterior(
        &mut self,
        request: &Value,
        samples: u64,
        dark: bool,
    ) -> Result<Value, Vec<Problem>> {
        let (observed, settings) = nivalis_exports::planet_tools::fit_request(request)?;
        let failure = |e: String| vec![Problem::new("fit", e)];
        let base = chi_square_map(self.engine.base(), &observed, &settings)
            .map_err(|e| vec![nivalis_exports::planet_tools::fit_problem(&e)])?;
        let swings: Vec<(String, Option<f64>)> = self
            .spec
            .one_at_a_time_levels()
            .iter()
            .map(|(name, ps)| {
                let swing = posterior_median_swing(&self.engine, &base, ps, &observed, &settings);
                (name.clone(), swing)
            })
            .collect();
        let mut acc = PosteriorAccumulator::new(&base);
        let mut failed = 0usize;
        for i in 0..samples {
            match posterior_sample_map(&self.engine, &self.spec, self.seed, i, &observed, &settings)
            {
                Ok(m) => acc.add(&m).map_err(|e| failure(e.to_string()))?,
                Err(_) => failed += 1,
            }
        }
        let post = acc.finish();
        let theme = if dark { Theme::dark() } else { Theme::light() };
        let fig = posterior_figure(&post);
        let prov = Provenance::of(&self.file);
        let mut j = marginal_fit_json(&post, self.seed, failed, &self.spec, &prov, &swings);
        j["text"] = json!(nivalis_exports::formats::json_text(&j));
        j["svg"] = json!(uncertainty_svg(&fig, &theme, FigureSize::single_column()).ok());
        self.posterior = Some((post, samples));
        Ok(j)
    }
}

#[cfg(target_arch = "wasm32")]
mod binding {
    use super::UncertaintySession;
    use crate::explorer::to_js;
    use serde_json::{json, Value};
    use wasm_bindgen::prelude::*;

    /// The uncertainty panel's Monte Carlo, driven by the page's Web Worker.
    #[wasm_bindgen]
    pub struct UncertaintyRunner {
        session: UncertaintySession,
    }

    #[wasm_bindgen]
    impl UncertaintyRunner {
        /// Start a session for `disk` (a JS object with an `uncertainty` section); `seed` is a
        /// whole number below 2^53 (JS numbers). Problems are thrown as `{problems: [...]}`.
        #[wasm_bindgen(constructor)]
        pub fn new(disk: JsValue, seed: f64, at_au: f64) -> Result<UncertaintyRunner, JsValue> {
            let value: Value = serde_wasm_bindgen::from_value(disk).map_err(|e| {
                to_js(&json!({"problems": [{"path": "(input)", "message": e.to_string()}]}))
            })?;
            if !(seed.is_finite()
                && seed >= 0.0
                && seed.fract() == 0.0
                && seed < 9.007_199_254_740_992e15)
            {
                return Err(to_js(
                    &json!({"problems": [{"path": "seed", "message": format!("must be a whole number in [0, 2^53), got {seed}")}]}),
                ));
            }
            UncertaintySession::new(&value, seed as u64, at_au)
                .map(|session| UncertaintyRunner { session })
                .map_err(|ps| {
                    to_js(&json!({"problems": ps.iter().map(|p| json!({"path": p.path, "message": p.message})).collect::<Vec<_>>()}))
                })
        }

        /// Run samples start..start + count.
        #[wasm_bindgen(js_name = runChunk)]
        pub fn run_chunk(&mut self, start: f64, count: f64) {
            self.session.run_chunk(start as u64, count as u64);
        }

        /// Samples run so far.
        pub fn done(&self) -> f64 {
            self.session.done() as f64
        }

        /// Compute the sensitivity (after the last chunk).
        pub fn finish(&mut self) {
            self.session.finish();
        }

        /// The JSON summary (bands, snowlines, sensitivity, seed, samples).
        pub fn summary(&self) -> JsValue {
            to_js(&self.session.summary())
        }

        /// The figures as SVG text.
        pub fn figures(
            &self,
            quantity: &str,
            species: &str,
            dark: bool,
        ) -> Result<JsValue, JsValue> {
            self.session
                .figures(quantity, species, dark)
                .map(|v| to_js(&v))
                .map_err(|e| JsValue::from_str(&e))
        }

        /// A figure file (SVG or PNG bytes) of `view` in the shared figure `options`
        /// (`{format, width, dpi, theme}`), as `nivalis uncertainty DISK --figure VIEW` writes it.
        #[wasm_bindgen(js_name = figureFile)]
        pub fn figure_file(&self, view: &str, options: JsValue) -> Result<Vec<u8>, JsValue> {
            let options: Value = serde_wasm_bindgen::from_value(options)
                .map_err(|e| JsValue::from_str(&e.to_string()))?;
            self.session
                .figure_file(view, &options)
                .map_err(|e| JsValue::from_str(&e))
        }

        /// An export file's text.
        pub fn export(&self, format: &str, table: &str) -> Result<String, JsValue> {
            self.session
                .export(format, table)
                .map_err(|e| JsValue::from_str(&e))
        }

        /// The marginalised posterior of the observed planet in `request` (the fit panel's
        /// fields); problems are thrown as `{problems: [...]}`.
        pub fn posterior(
            &mut self,
            request: JsValue,
            samples: f64,
            dark: bool,
        ) -> Result<JsValue, JsValue> {
            let problems = |ps: Vec<nivalis_disk_files::Problem>| {
                to_js(
                    &json!({"problems": ps.iter().map(|p| json!({"path": p.path, "message": p.message})).collect::<Vec<_>>()}),
                )
            };
            let request: Value = serde_wasm_bindgen::from_value(request).map_err(|e| {
                to_js(&json!({"problems": [{"path": "fit", "message": e.to_string()}]}))
            })?;
            self.session
                .posterior(&request, samples.max(1.0) as u64, dark)
                .map(|v| to_js(&v))
                .map_err(problems)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_page_session_matches_the_cli_numbers() {
        let disk: Value = serde_json::from_str(
            r#"{"grid": {"radial_cells": 30, "vertical_cells": 10}, "uncertainty": {
                "star.abundances.offset_dex.C": {"distribution": "normal", "sigma": 0.05},
                "composition.carbon": {"distribution": "dirichlet", "concentration": 30}}}"#,
        )
        .unwrap();
        // Chunks of any size give the same samples as one run.
        let mut a = UncertaintySession::new(&disk, 11, 1.0).unwrap();
        a.run_chunk(0, 3);
        a.run_chunk(3, 5);
        let mut b = UncertaintySession::new(&disk, 11, 1.0).unwrap();
        b.run_chunk(0, 8);
        a.finish();
        b.finish();
        assert_eq!(
            a.export("json", "bands").unwrap(),
            b.export("json", "bands").unwrap()
        );
        let f = a.figures("c_to_o_gas", "H2O", false).unwrap();
        assert!(f["bands"].as_str().unwrap().starts_with("<svg"));
        assert!(f["sensitivity_c_to_o"]
            .as_str()
            .unwrap()
            .starts_with("<svg"));
        let request = json!({"c_to_o": "0.6", "c_to_o_sigma": "0.05", "c_to_h_dex": "0.1", "c_to_h_sigma": "0.2"});
        let p = a.posterior(&request, 4, false).unwrap();
        assert!(p["svg"].as_str().unwrap().starts_with("<svg"));
        assert_eq!(p["samples"], json!(4));
        // The same text as `nivalis fit --uncertainty --format json` writes (json_text of the
        // CLI's value, without the page's own `text` and `svg`).
        let mut plain = p.clone();
        let text = plain["text"].take();
        plain.as_object_mut().unwrap().remove("text");
        plain.as_object_mut().unwrap().remove("svg");
        assert_eq!(text, json!(nivalis_exports::formats::json_text(&plain)));
        // A bad field is named as the fit panel names it.
        let bad = a.posterior(&json!({"c_to_o": "0.6", "c_to_o_sigma": "-1"}), 4, false);
        assert!(bad
            .unwrap_err()
            .iter()
            .any(|p| p.path == "fit.c_to_o_sigma"));
        assert!(a
            .export("csv", "snowlines")
            .unwrap()
            .contains("# monte carlo: seed 11, 8 samples"));
        // Figure files through the shared path, with the seed and samples embedded; the
        // posterior's samples are those it was fitted over.
        let png = a
            .figure_file("bands:c_to_o_gas", &json!({"format": "png", "dpi": 72}))
            .unwrap();
        // 252 pt x 189 pt at 72 dpi: 252 x 189 px (1 pt = 1/72 in).
        assert_eq!(&png[12..24], b"IHDR\0\0\0\xfc\0\0\0\xbd");
        let text = String::from_utf8_lossy(&png);
        assert!(
            text.contains("nivalis:seed\0\0\0\0\x0011")
                && text.contains("nivalis:samples\0\0\0\0\x008")
        );
        let svg = String::from_utf8(a.figure_file("posterior", &json!({})).unwrap()).unwrap();
        assert!(svg.contains("view=\"posterior\"") && svg.contains(" seed=\"11\" samples=\"4\">"));
        assert!(a
            .figure_file("bands:nothing", &json!({}))
            .unwrap_err()
            .contains("unknown quantity"));
        assert_eq!(
            a.figure_file("sensitivity", &json!({"dpi": 10}))
                .unwrap_err(),
            "dpi: must be a number between 36 and 1200, got 10"
        );
    }
}
