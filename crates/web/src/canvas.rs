//! Drawing on the page's canvases: a `plotters-canvas` back end over the
//! canvas found by id, the charts crate's `draw_*` functions on it, and for
//! r-z maps the cells as ONE `putImageData` of the RGBA buffer the charts
//! crate rasterised (per-cell canvas calls would be far too slow), with the
//! axes, lines and colour bar drawn by plotters on top.
//!
//! Text is measured with the canvas's own `measureText` ([`MeasuredCanvas`]):
//! plotters' default for the web measures each label by adding a `<span>` to
//! the document and reading its size, which forces a layout of the whole page
//! per label and made drawing about ten times slower than everything else.

use nivalis_charts::{
    draw_abundance_profiles, draw_c_to_o_map, draw_c_to_o_profile, draw_ice_map,
    draw_temperature_profile, map_layout, rasterise_map, CellDrawing, ChartLayout, Theme,
};
use std::cell::RefCell;
use std::collections::HashMap;

use plotters::prelude::IntoDrawingArea;
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};
use plotters_canvas::CanvasBackend;
use wasm_bindgen::{Clamped, JsCast};
use web_sys::{CanvasRenderingContext2d, HtmlCanvasElement, ImageData};

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

/// Draws `data` on `canvas` (its backing-store size) and returns where it drew.
pub fn draw(
    canvas: &HtmlCanvasElement,
    data: &ViewData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, String> {
    let backend = MeasuredCanvas::new(canvas)?;
    let area = backend.into_drawing_area();
    let layout = match data {
        ViewData::Profile(d) => draw_c_to_o_profile(&area, d, theme, pixels_per_point),
        ViewData::Temperature(d) => draw_temperature_profile(&area, d, theme, pixels_per_point),
        ViewData::Abundances(d) => draw_abundance_profiles(&area, d, theme, pixels_per_point),
        ViewData::IceMap(d) | ViewData::CToOMap(d) => {
            let layout =
                map_layout(&area, d, theme, pixels_per_point).map_err(|e| e.to_string())?;
            let main = layout.main();
            let mut image =
                rasterise_map(d, theme, main.width, main.height).map_err(|e| e.to_string())?;
            // Pixels above a column's top are transparent; putImageData copies
            // alpha rather than blending, so composite them over the background here.
            for p in image.rgba.chunks_exact_mut(4) {
                if p[3] != 255 {
                    let c = nivalis_charts::Rgba {
                        r: p[0],
                        g: p[1],
                        b: p[2],
                        a: p[3],
                    }
                    .over(theme.background);
                    p.copy_from_slice(&[c.r, c.g, c.b, 255]);
                }
            }
            let pixels = ImageData::new_with_u8_clamped_array_and_sh(
                Clamped(&image.rgba),
                image.width,
                image.height,
            )
            .map_err(|e| format!("cannot make the map image: {e:?}"))?;
            context(canvas)?
                .put_image_data(&pixels, f64::from(main.left), f64::from(main.top))
                .map_err(|e| format!("cannot put the map image: {e:?}"))?;
            if matches!(data, ViewData::CToOMap(_)) {
                draw_c_to_o_map(&area, d, theme, pixels_per_point, CellDrawing::Omit)
            } else {
                draw_ice_map(&area, d, theme, pixels_per_point, CellDrawing::Omit)
            }
        }
    }
    .map_err(|e| e.to_string())?;
    area.present().map_err(|e| e.to_string())?;
    Ok(layout)
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

    /// Width from `measureText`; height from the font's ascent and descent
    /// (the line box plotters' own estimate reports), falling back to 1.2 em.
    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<CanvasError>> {
        // The same font string plotters-canvas sets when it draws the text.
        let font = format!(
            "{} {}px {}",
            style.style().as_str(),
            style.size(),
            style.family().as_str()
        );
        let key = (font, text.to_string());
        if let Some(size) = self.sizes.borrow().get(&key) {
            return Ok(*size);
        }
        self.context.set_font(&key.0);
        let size = match self.context.measure_text(text) {
            Ok(m) => {
                let height = m.font_bounding_box_ascent() + m.font_bounding_box_descent();
                let height = if height.is_finite() && height > 0.0 {
                    height
                } else {
                    1.2 * style.size()
                };
                (m.width().ceil().max(0.0) as u32, height.ceil() as u32)
            }
            Err(_) => (
                (0.6 * style.size() * text.chars().count() as f64) as u32,
                (1.2 * style.size()) as u32,
            ),
        };
        self.sizes.borrow_mut().insert(key, size);
        Ok(size)
    }
}
