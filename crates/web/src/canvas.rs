//! Drawing on the page's canvases: the charts crate's `draw_*` functions are
//! recorded into a display list ([`record`], `crate::display`), which the
//! page compares with what the canvas already shows and otherwise encodes as a
//! command buffer (`crate::commands`) that the page's JavaScript (web/replay.js)
//! draws in ONE call ([`replay_parts`]): a view is three stacked canvases and
//! an edit redraws only the part of the list it changed (`crate::layers`). For
//! r-z maps the cells are ONE `putImageData` of the RGBA buffer the charts
//! crate rasterised (per-cell canvas calls would be far too slow), on the
//! layer under the chart canvas. The chi-square map is recorded and replayed the same way
//! ([`record_chi2`]: its background and cells as one image, on the one
//! canvas). The evolution views draw through the `plotters-canvas` back end
//! ([`MeasuredCanvas`]).
//!
//! Text is measured with the canvas's own `measureText` ([`MeasuredCanvas`]):
//! plotters' default for the web measures each label by adding a `<span>` to
//! the document and reading its size, which forces a layout of the whole page
//! per label and made drawing about ten times slower than everything else.

use nivalis_charts::{draw_chi2_map, ChartLayout, Chi2Data, Theme};
use std::cell::RefCell;
use std::collections::HashMap;

use plotters::prelude::IntoDrawingArea;
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};
use plotters_canvas::CanvasBackend;
use wasm_bindgen::{JsCast, JsValue};
use web_sys::{CanvasRenderingContext2d, HtmlCanvasElement};

use crate::commands::Commands;
use crate::display::{css_font, leading_rects_as_image, MeasureText, Op, Recorder, TextSizes};
use crate::layers::{Layer, Part, Plan};
use crate::readout::ViewData;

/// The canvas element with this id.
pub fn canvas_by_id(id: &str) -> Result<HtmlCanvasElement, String> {
    let document = web_sys::window()
        .and_then(|w| w.document())
        .ok_or("no document")?;
    let element = document
        .get_element_by_id(id)
        .ok_or_else(|| format!("no element with id {id:?}"))?;
    element
        .dyn_into::<HtmlCanvasElement>()
        .map_err(|_| format!("element {id:?} is not a canvas"))
}

fn context(canvas: &HtmlCanvasElement) -> Result<CanvasRenderingContext2d, String> {
    canvas
        .get_context("2d")
        .ok()
        .flatten()
        .and_then(|c| c.dyn_into::<CanvasRenderingContext2d>().ok())
        .ok_or_else(|| "the canvas has no 2d context".to_string())
}

/// Records what the chart of `data` draws on a canvas of `size` pixels
/// ([`crate::display::record_view_reusing`], timed with `performance.now()`), into
/// the memory of an earlier list (`buffers`), its static parts put again from
/// `segments` where unchanged. `raster_ms` receives the
/// milliseconds spent rasterising a map's cells (0 for other views), for
/// `Explorer.drawTimings`.
#[allow(clippy::too_many_arguments)]
pub fn record(
    size: (u32, u32),
    data: &ViewData,
    theme: &Theme,
    pixels_per_point: f64,
    measure: &dyn MeasureText,
    raster_ms: &mut f64,
    buffers: crate::display::Buffers,
    segments: &mut crate::display::Segments,
) -> Result<(Vec<Op>, ChartLayout), String> {
    crate::display::record_view_reusing(
        size,
        data,
        theme,
        pixels_per_point,
        measure,
        &crate::explorer::now_ms,
        raster_ms,
        buffers,
        segments,
    )
}

/// Records the chi-square map of `data` as [`record`] records a view: its
/// background and cells become ONE image ([`leading_rects_as_image`]), its
/// lines, axes, colour bar and legend follow.
pub fn record_chi2(
    size: (u32, u32),
    data: &Chi2Data,
    theme: &Theme,
    pixels_per_point: f64,
    measure: &dyn MeasureText,
) -> Result<(Vec<Op>, ChartLayout), String> {
    let ops = RefCell::new(Vec::new());
    let recorder = Recorder::new(size, &ops, measure);
    let area = recorder.into_drawing_area();
    let layout = draw_chi2_map(&area, data, theme, pixels_per_point).map_err(|e| e.to_string())?;
    area.present().map_err(|e| e.to_string())?;
    drop(area);
    Ok((leading_rects_as_image(ops.into_inner(), size), layout))
}

#[wasm_bindgen::prelude::wasm_bindgen]
extern "C" {
    /// The page's replay (web/replay.js `Replay`), handed over by web/core.js
    /// with [`set_canvas_replay`].
    pub type Replayer;
    /// Draws one encoded display list (crate::commands) on `canvas`.
    #[wasm_bindgen(method, catch)]
    #[allow(clippy::too_many_arguments)]
    fn replay(
        this: &Replayer,
        canvas: &HtmlCanvasElement,
        layered: bool,
        words: &[u32],
        numbers: &[f64],
        lengths: &[u32],
        text: Option<&str>,
        first: u32,
        reset: bool,
        memory: &JsValue,
        plan: &[u32],
    ) -> Result<JsValue, JsValue>;
}

thread_local! {
    static REPLAYER: RefCell<Option<Replayer>> = const { RefCell::new(None) };
    /// The command buffer, reused across draws, and the ids of the strings
    /// the page's replay holds.
    static COMMANDS: RefCell<Commands> = RefCell::new(Commands::default());
}

/// Sets the page's replay (web/replay.js `Replay`, whose `replay` method
/// draws an encoded display list); web/core.js calls it after starting the core.
#[wasm_bindgen::prelude::wasm_bindgen(js_name = setCanvasReplay)]
pub fn set_canvas_replay(replayer: Replayer) {
    REPLAYER.with(|r| *r.borrow_mut() = Some(replayer));
}

/// Draws a display list on the canvas alone (the chi-square map; the
/// `oneCanvas` test hook): encodes it ([`Commands`]) and hands it to the page's
/// JavaScript replay in ONE call, which makes the canvas calls (each run of
/// strokes of one pen as one path stroked once, each run of markers as one
/// path, styles set only when they change). An image (a map's cells) is put
/// on a scratch canvas and drawn onto the chart with one `drawImage` (a
/// `putImageData` on the shown canvas would first make the browser rasterise
/// everything still queued on it). The canvas is not cleared first: every
/// chart paints its own background. Layers the canvas has (`ID-under`,
/// `ID-over`) are cleared.
pub fn replay(canvas: &HtmlCanvasElement, ops: &[Op]) -> Result<(), String> {
    let part = Part {
        layer: Layer::Chart,
        clear: false,
        ops: 0..ops.len(),
    };
    send(canvas, ops, &[part], false, &|rgba, known| {
        known || crate::commands::opaque(rgba)
    })
    .map(|_| ())
}

/// Draws the parts of a display list on a view's three stacked canvases
/// (`crate::layers`: `ID-under`, the chart canvas `ID`, `ID-over`), in one
/// call to the page's replay as [`replay`]. The opaque image the plan puts on
/// the layer under the chart (`Plan::put`) goes there with one `putImageData`,
/// any other image by a scratch canvas and `drawImage`. Returns whether the
/// canvas has its two layers; without them every part was drawn on the chart
/// canvas, in order and without clearing (as [`replay`]).
pub fn replay_parts(canvas: &HtmlCanvasElement, ops: &[Op], plan: &Plan) -> Result<bool, String> {
    let put = match plan.put.and_then(|k| ops.get(k)) {
        Some(Op::Image { rgba, .. }) => Some(rgba.as_ptr()),
        _ => None,
    };
    send(canvas, ops, &plan.parts, true, &|rgba, _| {
        Some(rgba.as_ptr()) == put
    })
}

fn send(
    canvas: &HtmlCanvasElement,
    ops: &[Op],
    parts: &[Part],
    layered: bool,
    opaque: &dyn Fn(&[u8], bool) -> bool,
) -> Result<bool, String> {
    REPLAYER.with(|r| {
        let replayer = r.borrow();
        let replayer = replayer
            .as_ref()
            .ok_or("the page's canvas replay (web/replay.js) was not handed to the core")?;
        COMMANDS.with(|c| {
            let mut c = c.borrow_mut();
            c.encode_parts(
                ops,
                parts.iter().map(|p| p.ops.clone()),
                &|rgba| rgba.as_ptr() as usize as u32,
                opaque,
            );
            // Per part: its canvas, whether it is cleared first, where it ends in `words`.
            let plan: Vec<u32> = parts
                .iter()
                .zip(&c.ends)
                .flat_map(|(p, end)| [p.layer as u32, u32::from(p.clear), end.0])
                .collect();
            replayer
                .replay(
                    canvas,
                    layered,
                    &c.words,
                    &c.numbers,
                    &c.new_lengths,
                    // No text when there are no new strings (the usual redraw): an
                    // empty string would still cost the page a TextDecoder call.
                    (!c.new_lengths.is_empty()).then_some(c.new_strings.as_str()),
                    c.first_new,
                    c.reset,
                    &wasm_bindgen::memory(),
                    &plan,
                )
                .map(|layers| layers.as_bool() == Some(true))
                .map_err(|e| format!("cannot draw the chart: {e:?}"))
        })
    })
}

/// Text measured with a canvas's `measureText`, remembered by (CSS font, text)
/// across draws and canvases: the charts measure the same labels on every redraw.
/// The canvas's 2d context is asked for only when a text was not measured
/// before (a redraw usually measures nothing, so it makes no call at all).
pub struct CanvasMeasure<'a> {
    canvas: &'a HtmlCanvasElement,
    context: RefCell<Option<CanvasRenderingContext2d>>,
    sizes: &'a TextSizes,
}

impl<'a> CanvasMeasure<'a> {
    /// Measures on `canvas`'s context, remembering sizes in `sizes`.
    pub fn new(canvas: &'a HtmlCanvasElement, sizes: &'a TextSizes) -> CanvasMeasure<'a> {
        CanvasMeasure {
            canvas,
            context: RefCell::new(None),
            sizes,
        }
    }
}

impl MeasureText for CanvasMeasure<'_> {
    fn measure(&self, font: &str, size: f64, text: &str) -> (u32, u32) {
        if let Some(size) = self.sizes.borrow().get(font).and_then(|m| m.get(text)) {
            return *size;
        }
        let mut context = self.context.borrow_mut();
        if context.is_none() {
            *context = self::context(self.canvas).ok();
        }
        let measured = match context.as_ref() {
            Some(c) => measure_with(c, font, size, text),
            // No 2d context (never on the page's canvases): plotters' own estimate.
            None => estimate(size, text),
        };
        self.sizes
            .borrow_mut()
            .entry(font.to_string())
            .or_default()
            .insert(text.to_string(), measured);
        measured
    }
}

/// A text's size without a canvas: 0.6 em per character, 1.2 em high.
fn estimate(size: f64, text: &str) -> (u32, u32) {
    (
        (0.6 * size * text.chars().count() as f64) as u32,
        (1.2 * size) as u32,
    )
}

/// Width from `measureText`; height from the font's ascent and descent (the
/// line box plotters' own estimate reports), falling back to 1.2 em.
fn measure_with(
    context: &CanvasRenderingContext2d,
    font: &str,
    size: f64,
    text: &str,
) -> (u32, u32) {
    context.set_font(font);
    match context.measure_text(text) {
        Ok(m) => {
            let height = m.font_bounding_box_ascent() + m.font_bounding_box_descent();
            let height = if height.is_finite() && height > 0.0 {
                height
            } else {
                1.2 * size
            };
            (m.width().ceil().max(0.0) as u32, height.ceil() as u32)
        }
        Err(_) => estimate(size, text),
    }
}

/// The plotters-canvas back end with text measured by the canvas itself.
/// Every drawing call is forwarded unchanged.
pub(crate) struct MeasuredCanvas {
    inner: CanvasBackend,
    context: CanvasRenderingContext2d,
    /// Measured sizes by (CSS font, text): the charts measure the same labels repeatedly.
    sizes: RefCell<HashMap<(String, String), (u32, u32)>>,
}

impl MeasuredCanvas {
    pub(crate) fn new(canvas: &HtmlCanvasElement) -> Result<MeasuredCanvas, String> {
        let inner = CanvasBackend::with_canvas_object(canvas.clone())
            .ok_or("the canvas has no 2d context")?;
        Ok(MeasuredCanvas {
            inner,
            context: context(canvas)?,
            sizes: RefCell::new(HashMap::new()),
        })
    }
}

type CanvasError = <CanvasBackend as DrawingBackend>::ErrorType;

impl DrawingBackend for MeasuredCanvas {
    type ErrorType = CanvasError;

    fn get_size(&self) -> (u32, u32) {
        self.inner.get_size()
    }

    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.ensure_prepared()
    }

    fn present(&mut self) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.present()
    }

    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_pixel(point, color)
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_line(from, to, style)
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_rect(upper_left, bottom_right, style, fill)
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_path(path, style)
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_circle(center, radius, style, fill)
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.fill_polygon(vert, style)
    }

    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<CanvasError>> {
        self.inner.draw_text(text, style, pos)
    }

    /// Measured as [`CanvasMeasure`] does.
    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<CanvasError>> {
        // The same font string plotters-canvas sets when it draws the text.
        let key = (css_font(style), text.to_string());
        if let Some(size) = self.sizes.borrow().get(&key) {
            return Ok(*size);
        }
        let size = measure_with(&self.context, &key.0, style.size(), text);
        self.sizes.borrow_mut().insert(key, size);
        Ok(size)
    }
}
