//! Drawing on the page's canvases: the charts crate's `draw_*` functions are
//! recorded into a display list ([`record`], `crate::display`), which the
//! page compares with what the canvas already shows and otherwise replays in
//! few canvas calls ([`replay`]). For r-z maps the cells are ONE
//! `putImageData` of the RGBA buffer the charts crate rasterised (per-cell
//! canvas calls would be far too slow), with the axes, lines and colour bar on
//! top. The chi-square map is recorded and replayed the same way
//! ([`record_chi2`]: its background and cells as one image). The evolution
//! views draw through the `plotters-canvas` back end ([`MeasuredCanvas`]).
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
use wasm_bindgen::{Clamped, JsCast, JsValue};
use web_sys::{CanvasRenderingContext2d, HtmlCanvasElement, ImageData};

use crate::display::{
    css_font, leading_rects_as_image, run_length, Colour, MeasureText, Op, Recorder, TextSizes,
};
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
/// ([`crate::display::record_view`], timed with `performance.now()`).
/// `raster_ms` receives the milliseconds spent rasterising a map's cells (0 for
/// other views), for `Explorer.drawTimings`.
pub fn record(
    size: (u32, u32),
    data: &ViewData,
    theme: &Theme,
    pixels_per_point: f64,
    measure: &dyn MeasureText,
    raster_ms: &mut f64,
) -> Result<(Vec<Op>, ChartLayout), String> {
    crate::display::record_view(
        size,
        data,
        theme,
        pixels_per_point,
        measure,
        &crate::explorer::now_ms,
        raster_ms,
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

/// The canvas's 2D context, for [`replay`].
pub fn context_of(canvas: &HtmlCanvasElement) -> Result<CanvasRenderingContext2d, String> {
    context(canvas)
}

// The canvas calls of `replay` that take text, with the text as a JS string
// already made (see `JsText`).
#[wasm_bindgen::prelude::wasm_bindgen]
extern "C" {
    /// A `CanvasRenderingContext2D`, with the calls `replay` makes with JS strings.
    #[wasm_bindgen(js_name = CanvasRenderingContext2D)]
    type Context2d;
    #[wasm_bindgen(method, setter = fillStyle)]
    fn set_fill_style(this: &Context2d, value: &JsValue);
    #[wasm_bindgen(method, setter = strokeStyle)]
    fn set_stroke_style(this: &Context2d, value: &JsValue);
    #[wasm_bindgen(method, setter = font)]
    fn set_font(this: &Context2d, value: &JsValue);
    #[wasm_bindgen(method, catch, js_name = fillText)]
    fn fill_text(this: &Context2d, text: &JsValue, x: f64, y: f64) -> Result<(), JsValue>;
}

/// The context as [`Context2d`] (the same JS object).
fn js_context(c: &CanvasRenderingContext2d) -> &Context2d {
    c.unchecked_ref()
}

/// JS strings of the CSS colours, fonts and texts `replay` hands to the
/// canvas, made once and kept across draws: a chart draws the same labels,
/// fonts and colours (a colour bar's 128 bands) on every redraw, and making a
/// JS string from WebAssembly memory (a UTF-8 decode per call) cost more than
/// the canvas calls themselves. The same strings reach the canvas, so the
/// pixels are the same. Emptied when it holds more than `JsText::LIMIT`
/// entries (texts that change with the data, e.g. a marked value).
#[derive(Default)]
struct JsText {
    colours: HashMap<(u8, u8, u8, u64), JsValue>,
    texts: HashMap<String, JsValue>,
}

impl JsText {
    const LIMIT: usize = 4096;

    fn colour(&mut self, colour: Colour) -> &JsValue {
        if self.colours.len() > Self::LIMIT {
            self.colours.clear();
        }
        let (r, g, b) = colour.rgb;
        self.colours
            .entry((r, g, b, colour.alpha.to_bits()))
            .or_insert_with(|| JsValue::from_str(&colour.css()))
    }

    fn text(&mut self, text: &str) -> &JsValue {
        if self.texts.len() > Self::LIMIT {
            self.texts.clear();
        }
        if !self.texts.contains_key(text) {
            self.texts.insert(text.to_string(), JsValue::from_str(text));
        }
        // Invariant: inserted just above when missing.
        &self.texts[text]
    }
}

thread_local! {
    static JS_TEXT: RefCell<JsText> = RefCell::new(JsText::default());
}

/// The styles last set on a context, so each is set only when it changes.
#[derive(Default)]
struct Styles {
    stroke: Option<Colour>,
    fill: Option<Colour>,
    width: Option<u32>,
    font: Option<String>,
    align: Option<&'static str>,
    baseline: Option<&'static str>,
}

impl Styles {
    fn stroke(&mut self, c: &CanvasRenderingContext2d, colour: Colour, width: u32) {
        if self.stroke != Some(colour) {
            JS_TEXT.with(|t| js_context(c).set_stroke_style(t.borrow_mut().colour(colour)));
            self.stroke = Some(colour);
        }
        if self.width != Some(width) {
            c.set_line_width(f64::from(width));
            self.width = Some(width);
        }
    }

    fn fill(&mut self, c: &CanvasRenderingContext2d, colour: Colour) {
        if self.fill != Some(colour) {
            JS_TEXT.with(|t| js_context(c).set_fill_style(t.borrow_mut().colour(colour)));
            self.fill = Some(colour);
        }
    }
}

/// Draws a display list on the canvas in few calls: each run of strokes of one
/// pen (a dashed series' dashes, the grid, the ticks) as one path stroked once,
/// each run of markers as one path, styles set only when they change. An image
/// (a map's cells) is put on `scratch`, a canvas of its own that is never shown,
/// and drawn from there with one `drawImage`: a `putImageData` on the shown
/// canvas would first make the browser rasterise everything still queued on it.
/// The canvas is not cleared first: every chart paints its own background.
pub fn replay(
    context: &CanvasRenderingContext2d,
    ops: &[Op],
    scratch: &HtmlCanvasElement,
) -> Result<(), String> {
    let c = context;
    let mut styles = Styles::default();
    fn fail(what: &'static str) -> impl Fn(wasm_bindgen::JsValue) -> String {
        move |e| format!("cannot draw {what}: {e:?}")
    }
    let mut i = 0;
    while i < ops.len() {
        let n = run_length(ops, i);
        let run = &ops[i..i + n];
        match &ops[i] {
            Op::Stroke { colour, width, .. } => {
                styles.stroke(c, *colour, *width);
                c.begin_path();
                for op in run {
                    if let Op::Stroke { points, .. } = op {
                        if let Some((first, rest)) = points.split_first() {
                            c.move_to(first.0, first.1);
                            for p in rest {
                                c.line_to(p.0, p.1);
                            }
                        }
                    }
                }
                c.stroke();
            }
            Op::StrokeRect {
                colour,
                width,
                corners: [a, b],
            } => {
                styles.stroke(c, *colour, *width);
                c.stroke_rect(
                    f64::from(a.0),
                    f64::from(a.1),
                    f64::from(b.0 - a.0),
                    f64::from(b.1 - a.1),
                );
            }
            Op::FillRect {
                colour,
                corners: [a, b],
            } => {
                styles.fill(c, *colour);
                c.fill_rect(
                    f64::from(a.0),
                    f64::from(a.1),
                    f64::from(b.0 - a.0),
                    f64::from(b.1 - a.1),
                );
            }
            Op::FillPolygon { colour, .. } => {
                styles.fill(c, *colour);
                c.begin_path();
                for op in run {
                    if let Op::FillPolygon { points, .. } = op {
                        if let Some((first, rest)) = points.split_first() {
                            c.move_to(f64::from(first.0), f64::from(first.1));
                            for p in rest {
                                c.line_to(f64::from(p.0), f64::from(p.1));
                            }
                            c.close_path();
                        }
                    }
                }
                c.fill();
            }
            Op::Circle {
                colour,
                width,
                fill,
                ..
            } => {
                c.begin_path();
                for op in run {
                    if let Op::Circle { centre, radius, .. } = op {
                        let (x, y, r) =
                            (f64::from(centre.0), f64::from(centre.1), f64::from(*radius));
                        c.move_to(x + r, y);
                        c.arc(x, y, r, 0.0, std::f64::consts::TAU)
                            .map_err(fail("a marker"))?;
                    }
                }
                if *fill {
                    styles.fill(c, *colour);
                    c.fill();
                } else {
                    styles.stroke(c, *colour, *width);
                    c.stroke();
                }
            }
            Op::Text {
                text,
                font,
                colour,
                align,
                baseline,
                rotation,
                at,
            } => {
                styles.fill(c, *colour);
                if styles.font.as_deref() != Some(font.as_str()) {
                    JS_TEXT.with(|t| js_context(c).set_font(t.borrow_mut().text(font)));
                    styles.font = Some(font.clone());
                }
                if styles.align != Some(*align) {
                    c.set_text_align(align);
                    styles.align = Some(*align);
                }
                if styles.baseline != Some(*baseline) {
                    c.set_text_baseline(baseline);
                    styles.baseline = Some(*baseline);
                }
                if *rotation == 0 {
                    JS_TEXT
                        .with(|t| {
                            js_context(c).fill_text(
                                t.borrow_mut().text(text),
                                f64::from(at.0),
                                f64::from(at.1),
                            )
                        })
                        .map_err(fail("a text"))?;
                } else {
                    // As plotters-canvas: rotate about the anchor. save/restore
                    // keep the styles set above, so the cache stays true.
                    c.save();
                    c.translate(f64::from(at.0), f64::from(at.1))
                        .map_err(fail("a text"))?;
                    c.rotate(f64::from(*rotation).to_radians())
                        .map_err(fail("a text"))?;
                    let drawn = JS_TEXT
                        .with(|t| js_context(c).fill_text(t.borrow_mut().text(text), 0.0, 0.0));
                    c.restore();
                    drawn.map_err(fail("a text"))?;
                }
            }
            Op::Image {
                at,
                width,
                height,
                rgba,
            } => {
                let pixels =
                    ImageData::new_with_u8_clamped_array_and_sh(Clamped(rgba), *width, *height)
                        .map_err(fail("the map image"))?;
                if scratch.width() != *width || scratch.height() != *height {
                    scratch.set_width(*width);
                    scratch.set_height(*height);
                }
                context_of(scratch)?
                    .put_image_data(&pixels, 0.0, 0.0)
                    .map_err(fail("the map image"))?;
                c.draw_image_with_html_canvas_element(scratch, f64::from(at.0), f64::from(at.1))
                    .map_err(fail("the map image"))?;
            }
        }
        i += n;
    }
    Ok(())
}

/// A new canvas that is never shown, for [`replay`]'s images.
pub fn scratch_canvas() -> Result<HtmlCanvasElement, String> {
    web_sys::window()
        .and_then(|w| w.document())
        .ok_or("no document")?
        .create_element("canvas")
        .map_err(|e| format!("cannot make a canvas: {e:?}"))?
        .dyn_into::<HtmlCanvasElement>()
        .map_err(|_| "not a canvas".to_string())
}

/// Text measured with a canvas's `measureText`, remembered by (CSS font, text)
/// across draws and canvases: the charts measure the same labels on every redraw.
pub struct CanvasMeasure<'a> {
    context: CanvasRenderingContext2d,
    sizes: &'a TextSizes,
}

impl<'a> CanvasMeasure<'a> {
    /// Measures on `canvas`'s context, remembering sizes in `sizes`.
    pub fn new(
        canvas: &HtmlCanvasElement,
        sizes: &'a TextSizes,
    ) -> Result<CanvasMeasure<'a>, String> {
        Ok(CanvasMeasure {
            context: context(canvas)?,
            sizes,
        })
    }
}

impl MeasureText for CanvasMeasure<'_> {
    fn measure(&self, font: &str, size: f64, text: &str) -> (u32, u32) {
        if let Some(size) = self.sizes.borrow().get(font).and_then(|m| m.get(text)) {
            return *size;
        }
        let measured = measure_with(&self.context, font, size, text);
        self.sizes
            .borrow_mut()
            .entry(font.to_string())
            .or_default()
            .insert(text.to_string(), measured);
        measured
    }
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
        Err(_) => (
            (0.6 * size * text.chars().count() as f64) as u32,
            (1.2 * size) as u32,
        ),
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
