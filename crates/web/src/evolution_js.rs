//! The evolving disk on the page (issue 13; docs/model.md section 12). `evolveDisk` runs
//! `nivalis_physics::evolution::evolve` and returns the same JSON text as
//! `nivalis evolve DISK --format json` (the page runs it in a Web Worker, web/evolution.js, with
//! a progress callback; cancelling terminates the worker). `drawEvolution` draws the three
//! views of one snapshot from that JSON into canvases through `nivalis-charts`.

use nivalis_charts::{
    draw_evolved_c_to_o, draw_radius_time_map, draw_snowline_tracks, evolution_view_data, Theme,
};
use nivalis_disk_files::{from_value, Problem};
use nivalis_exports::evolution::evolution_json;
use nivalis_exports::formats::json_text;
use nivalis_exports::Provenance;
use nivalis_physics::evolution::{evolve_with_statics, EvolutionParameters};
use plotters::prelude::IntoDrawingArea;
use serde_json::{json, Value};
use wasm_bindgen::prelude::*;

use crate::canvas::{canvas_by_id, MeasuredCanvas};
use crate::explorer::to_js;

fn run(
    disk: JsValue,
    until_myr: f64,
    snapshots: u32,
    progress: &js_sys::Function,
) -> Result<(String, Vec<f64>), Vec<Problem>> {
    let value: Value = serde_wasm_bindgen::from_value(disk).map_err(|e| {
        vec![Problem::new(
            "(input)",
            format!("cannot read the disk: {e}"),
        )]
    })?;
    let mut file = from_value(&value).map_err(|p| p.0)?;
    let mut e = file
        .evolution
        .clone()
        .unwrap_or_else(EvolutionParameters::defaults);
    e.until_myr = until_myr;
    e.snapshots = snapshots as usize;
    let physics = |err: nivalis_physics::PhysicsError| vec![Problem::from_physics(&err)];
    e.check().map_err(physics)?;
    let mut report = |fraction: f64| {
        let _ = progress.call1(&JsValue::NULL, &JsValue::from_f64(fraction));
        true
    };
    // The static models on the run's own structures (the same bits as `static_model_at`).
    let (run, statics) = evolve_with_statics(&file.parameters, &e, &mut report)
        .map_err(physics)?
        .ok_or_else(|| vec![Problem::new("(run)", "cancelled")])?;
    file.evolution = Some(e.clone());
    let text = json_text(&evolution_json(
        &run,
        &statics,
        &file.parameters,
        &e,
        &Provenance::of(&file),
    ));
    Ok((text, run.times_myr()))
}

/// Evolve `disk` (the page's disk object) to `untilMyr` with `snapshots` snapshots, calling
/// `progress(fraction)` after every step. Returns `{ok: true, text, times_myr}` with the JSON of
/// `nivalis evolve` and its snapshot ages (so the page need not parse the text), or `{ok: false, problems: [{path, value, allowed, message}]}`.
#[wasm_bindgen(js_name = evolveDisk)]
pub fn evolve_disk(
    disk: JsValue,
    until_myr: f64,
    snapshots: u32,
    progress: &js_sys::Function,
) -> JsValue {
    to_js(&match run(disk, until_myr, snapshots, progress) {
        Ok((text, times)) => json!({"ok": true, "text": text, "times_myr": times}),
        Err(problems) => json!({
            "ok": false,
            "problems": problems
                .iter()
                .map(|p| json!({"path": p.path, "value": p.value, "allowed": p.allowed, "message": p.message}))
                .collect::<Vec<_>>()
        }),
    })
}

/// Draw snapshot `snapshot` of an evolution JSON (`evolveDisk`'s text) into the canvases with
/// ids `tracksId` (snowline tracks), `profileId` (gas C/O with the static model's) and `mapId`
/// (radius x age map of gas C/O), in the light or dark theme, at `pixelsPerPoint`.
#[wasm_bindgen(js_name = drawEvolution)]
pub fn draw_evolution(
    text: &str,
    snapshot: usize,
    tracks_id: &str,
    profile_id: &str,
    map_id: &str,
    dark: bool,
    pixels_per_point: f64,
) -> Result<(), JsValue> {
    let fail = |e: String| JsValue::from_str(&e);
    let v: Value = serde_json::from_str(text).map_err(|e| fail(e.to_string()))?;
    let theme = if dark { Theme::dark() } else { Theme::light() };
    // The same data the CLI's `nivalis figure --view <evolution view>` draws.
    let (tracks, profile, map) = evolution_view_data(&v, snapshot);
    for id in [tracks_id, profile_id, map_id] {
        let canvas = canvas_by_id(id).map_err(fail)?;
        let area = MeasuredCanvas::new(&canvas)
            .map_err(fail)?
            .into_drawing_area();
        let drawn = if id == tracks_id {
            draw_snowline_tracks(&area, &tracks, &theme, pixels_per_point)
        } else if id == profile_id {
            draw_evolved_c_to_o(&area, &profile, &theme, pixels_per_point)
        } else {
            draw_radius_time_map(&area, &map, &theme, pixels_per_point)
        };
        drawn.map_err(|e| fail(e.to_string()))?;
        area.present().map_err(|e| fail(e.to_string()))?;
    }
    Ok(())
}

/// The paper figure of an evolution view (`snowline_tracks`, `evolved_c_to_o`,
/// `c_to_o_time_map`) at snapshot `snapshot` of an evolution JSON (`evolveDisk`'s text), with
/// the provenance of the run's resolved disk (its `disk` field): the same bytes as
/// `nivalis figure DISK --view <view> [--age-myr T]` for that disk. `options`:
/// `{format, width, dpi, theme}` as the page's other figure downloads.
#[wasm_bindgen(js_name = evolutionFigure)]
pub fn evolution_figure_file(
    text: &str,
    snapshot: usize,
    view: &str,
    options: JsValue,
) -> Result<Vec<u8>, JsError> {
    let options: Value =
        serde_wasm_bindgen::from_value(options).map_err(|e| JsError::new(&e.to_string()))?;
    let options =
        crate::figures::FigureOptions::from_value(&options).map_err(|e| JsError::new(&e))?;
    let (figure, provenance) =
        evolution_figure_of(text, snapshot, view).map_err(|e| JsError::new(&e))?;
    crate::figures::figure_file(&figure, &options, &provenance, view)
        .map_err(|e| JsError::new(&e.to_string()))
}

/// The figure and provenance behind [`evolution_figure_file`].
pub fn evolution_figure_of(
    text: &str,
    snapshot: usize,
    view: &str,
) -> Result<(nivalis_charts::Figure, Provenance), String> {
    let which = nivalis_charts::EvolutionView::from_key(view).ok_or_else(|| {
        format!("unknown evolution view {view:?}; expected snowline_tracks, evolved_c_to_o or c_to_o_time_map")
    })?;
    let v: Value = serde_json::from_str(text).map_err(|e| e.to_string())?;
    let file = from_value(&v["disk"]).map_err(|p| {
        p.0.iter()
            .map(|p| format!("{}: {}", p.path, p.message))
            .collect::<Vec<_>>()
            .join("; ")
    })?;
    Ok((
        nivalis_charts::evolution_figure(which, &v, snapshot),
        Provenance::of(&file),
    ))
}
