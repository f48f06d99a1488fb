//! A canvas back end wrapper that paints the leading run of filled rectangles
//! into one RGBA buffer and puts it on the canvas in ONE `putImageData`, then
//! forwards every later call unchanged. The chi-square map (`draw_chi2_map`)
//! fills its background and then one rectangle per map cell (about ten
//! thousand) before it draws any line; as separate `fillRect` calls those took
//! 40-90 ms, as one image a few milliseconds. What the chart draws is the
//! same: rectangles keep their half-open pixel extent [x0, x1) x [y0, y1) as
//! plotters-canvas fills them, blended over what is below.

use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};
use wasm_bindgen::Clamped;
use web_sys::{CanvasRenderingContext2d, ImageData};

/// The wrapper: `inner` draws on the canvas whose 2D context is `context`.
pub(crate) struct LeadingRects<B: DrawingBackend> {
    inner: B,
    context: CanvasRenderingContext2d,
    /// The canvas's pixels while rectangles are being collected; `None` once flushed.
    buffer: Option<Vec<u8>>,
    size: (u32, u32),
}

impl<B: DrawingBackend> LeadingRects<B> {
    /// Wraps `inner`; the canvas's current pixels are read once so that the
    /// final image starts from them.
    pub(crate) fn new(inner: B, context: CanvasRenderingContext2d) -> LeadingRects<B> {
        let size = inner.get_size();
        let buffer = context
            .get_image_data(0.0, 0.0, f64::from(size.0), f64::from(size.1))
            .ok()
            .map(|d| d.data().0);
        LeadingRects {
            inner,
            context,
            buffer: buffer.filter(|b| b.len() == size.0 as usize * size.1 as usize * 4),
            size,
        }
    }

    /// Puts the collected pixels on the canvas (once).
    fn flush(&mut self) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        if let Some(buffer) = self.buffer.take() {
            if let Ok(image) = ImageData::new_with_u8_clamped_array_and_sh(
                Clamped(&buffer),
                self.size.0,
                self.size.1,
            ) {
                // A failed put leaves the canvas as it was; the later calls still draw.
                let _ = self.context.put_image_data(&image, 0.0, 0.0);
            }
        }
        Ok(())
    }

    /// Blends a filled rectangle into the buffer; false when no buffer is collecting.
    fn paint(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        colour: BackendColor,
    ) -> bool {
        let (w, h) = (self.size.0 as i32, self.size.1 as i32);
        let Some(buffer) = self.buffer.as_mut() else {
            return false;
        };
        let (x0, x1) = (upper_left.0.clamp(0, w), bottom_right.0.clamp(0, w));
        let (y0, y1) = (upper_left.1.clamp(0, h), bottom_right.1.clamp(0, h));
        let a = colour.alpha.clamp(0.0, 1.0);
        let (r, g, b) = colour.rgb;
        for y in y0..y1 {
            let row = (y * w) as usize * 4;
            for x in x0..x1 {
                let p = row + x as usize * 4;
                let px = &mut buffer[p..p + 4];
                if a >= 1.0 {
                    px.copy_from_slice(&[r, g, b, 255]);
                } else {
                    // Source over destination, straight alpha.
                    let da = f64::from(px[3]) / 255.0;
                    let oa = a + da * (1.0 - a);
                    let mix = |s: u8, d: u8| {
                        if oa > 0.0 {
                            ((f64::from(s) * a + f64::from(d) * da * (1.0 - a)) / oa).round() as u8
                        } else {
                            0
                        }
                    };
                    let out = [
                        mix(r, px[0]),
                        mix(g, px[1]),
                        mix(b, px[2]),
                        (oa * 255.0).round() as u8,
                    ];
                    px.copy_from_slice(&out);
                }
            }
        }
        true
    }
}

impl<B: DrawingBackend> DrawingBackend for LeadingRects<B> {
    type ErrorType = B::ErrorType;

    fn get_size(&self) -> (u32, u32) {
        self.inner.get_size()
    }
    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.ensure_prepared()
    }
    fn present(&mut self) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.present()
    }
    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.draw_pixel(point, color)
    }
    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.draw_line(from, to, style)
    }
    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        if style.color().alpha == 0.0 {
            return Ok(());
        }
        if fill && self.paint(upper_left, bottom_right, style.color()) {
            return Ok(());
        }
        self.flush()?;
        self.inner.draw_rect(upper_left, bottom_right, style, fill)
    }
    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.draw_path(path, style)
    }
    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.draw_circle(center, radius, style, fill)
    }
    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.fill_polygon(vert, style)
    }
    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.draw_text(text, style, pos)
    }
    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<B::ErrorType>> {
        self.inner.estimate_text_size(text, style)
    }
    fn blit_bitmap(
        &mut self,
        pos: BackendCoord,
        size: (u32, u32),
        src: &[u8],
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.flush()?;
        self.inner.blit_bitmap(pos, size, src)
    }
}
