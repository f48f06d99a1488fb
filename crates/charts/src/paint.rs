//! The drawing toolkit every view shares: a `Painter` over any plotters
//! `DrawingArea<DB, Shift>` that draws text, clipped and dashed polylines with
//! gaps, markers, axes with typeset tick labels, and legends. Coordinates here
//! are pixels relative to the area, as `f64`; they are rounded only when handed
//! to plotters, whose elements take integer pixels.

use std::cell::RefCell;

use crate::text::superscript;
use plotters::coord::Shift;
use plotters::element::{Circle, Drawable, PointCollection, Polygon, Rectangle, Text};
use plotters::prelude::{DrawingArea, DrawingBackend};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{FontDesc, FontTransform, ShapeStyle, TextStyle};
use plotters_backend::{BackendCoord, DrawingErrorKind};

use crate::colour::Rgba;
use crate::error::ChartError;
use crate::layout::{AxisTransform, PanelLayout, Scale};
use crate::reuse::{Reuse, SegmentKey};
use crate::theme::{LineDash, Marker, SeriesStyle, Theme};

/// plotters' font sizes are line heights: the em size in SVG is `size / 1.24`,
/// so an em of `pt` points needs `pt * 1.24` here.
const PLOTTERS_FONT_SCALE: f64 = 1.24;

/// A rectangle in area pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Frame {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl Frame {
    pub fn width(&self) -> f64 {
        self.right - self.left
    }
    pub fn height(&self) -> f64 {
        self.bottom - self.top
    }
}

/// A plotting area with its axes, in area pixels.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Panel {
    pub name: &'static str,
    pub frame: Frame,
    pub x: AxisTransform,
    pub y: AxisTransform,
}

impl Panel {
    /// Pixel of a data point; `None` where the axes cannot show it.
    pub fn px(&self, x: f64, y: f64) -> Option<(f64, f64)> {
        let tx = self.x.fraction(x)?;
        let ty = self.y.fraction(y)?;
        Some((
            self.frame.left + tx * self.frame.width(),
            self.frame.bottom - ty * self.frame.height(),
        ))
    }

    pub fn px_x(&self, x: f64) -> Option<f64> {
        Some(self.frame.left + self.x.fraction(x)? * self.frame.width())
    }

    pub fn px_y(&self, y: f64) -> Option<f64> {
        Some(self.frame.bottom - self.y.fraction(y)? * self.frame.height())
    }

    /// The public layout, in backend pixels (the area's offset added).
    pub fn to_layout(&self, base: (i32, i32)) -> PanelLayout {
        let left = self.frame.left.round() as i32;
        let top = self.frame.top.round() as i32;
        PanelLayout {
            name: self.name,
            left: base.0 + left,
            top: base.1 + top,
            width: (self.frame.right.round() as i32 - left).max(0) as u32,
            height: (self.frame.bottom.round() as i32 - top).max(0) as u32,
            x: self.x.clone(),
            y: self.y.clone(),
        }
    }
}

/// Text orientation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Orientation {
    Horizontal,
    /// Reading bottom to top.
    Up,
}

pub(crate) struct Painter<'a, DB: DrawingBackend> {
    pub area: &'a DrawingArea<DB, Shift>,
    pub theme: &'a Theme,
    pub ppp: f64,
    /// Buffers reused by every line drawn with this painter (a chart draws
    /// thousands of dashes and segments; each used to allocate its own vectors).
    scratch: Scratch,
    /// Text styles made so far, by (size, colour, anchor, orientation): making one
    /// looks the font up, and a chart asks for the same few styles many times.
    text_styles: RefCell<Vec<(TextKey, TextStyle<'a>)>>,
    /// Where segments drawn before are kept ([`Painter::segment`]); `None`: every
    /// segment is drawn.
    reuse: Option<&'a dyn Reuse>,
    /// The key bytes every segment's key starts with (size, area offset, pixels
    /// per point, theme), written at the first segment.
    context: RefCell<Option<SegmentKey>>,
}

/// The key of a cached text style: size [pt] bits, colour, anchor and orientation.
type TextKey = (u64, Rgba, u8, u8, Orientation);

/// Scratch buffers of a [`Painter`], one per nesting level of the line drawing
/// (series -> runs -> clipped pieces -> dashes -> integer pixels).
#[derive(Default)]
struct Scratch {
    /// A run of defined points of a series [px].
    run: RefCell<Vec<(f64, f64)>>,
    /// A clipped piece of a run [px].
    clipped: RefCell<Vec<(f64, f64)>>,
    /// A dash of a dashed line [px].
    dash: RefCell<Vec<(f64, f64)>>,
    /// A path rounded to integer pixels.
    ints: RefCell<Vec<(i32, i32)>>,
    /// The x pixels of the last radii a series was drawn at ([`XPixels`]).
    x_pixels: RefCell<XPixels>,
}

/// The x pixel of each x of a series on a panel, kept for the next series
/// drawn at the same x values on a panel with the same x axis and frame (every
/// series of a profile shares the radii): the same `Panel::px_x` values,
/// computed once instead of one `log10` per point per series.
#[derive(Default)]
struct XPixels {
    /// The x values, axis (min, max, scale) and frame (left, right) they were computed for.
    xs: Vec<f64>,
    axis: Option<(u64, u64, Scale)>,
    frame: (u64, u64),
    /// `panel.px_x(x)` for each x.
    pixels: Vec<Option<f64>>,
}

impl XPixels {
    /// `panel.px_x(x)` for every x of `xs`, from the kept values when they were
    /// computed for the same x values, axis and frame (compared bit for bit).
    fn of(&mut self, panel: &Panel, xs: &[f64]) -> &[Option<f64>] {
        let axis = Some((panel.x.min.to_bits(), panel.x.max.to_bits(), panel.x.scale));
        let frame = (panel.frame.left.to_bits(), panel.frame.right.to_bits());
        let same = self.axis == axis
            && self.frame == frame
            && self.xs.len() == xs.len()
            && self
                .xs
                .iter()
                .zip(xs)
                .all(|(a, b)| a.to_bits() == b.to_bits());
        if !same {
            self.xs.clear();
            self.xs.extend_from_slice(xs);
            self.axis = axis;
            self.frame = frame;
            self.pixels.clear();
            self.pixels.extend(xs.iter().map(|&x| panel.px_x(x)));
        }
        &self.pixels
    }
}

/// A path of integer pixels borrowed from the painter's buffer: drawn exactly
/// as plotters' `PathElement` draws (one `draw_path` of the translated points),
/// without moving the points into a vector of its own.
struct BorrowedPath<'p> {
    points: &'p [(i32, i32)],
    style: ShapeStyle,
}

impl<'b, 'p> PointCollection<'b, (i32, i32)> for &'b BorrowedPath<'p> {
    type Point = &'b (i32, i32);
    type IntoIter = &'b [(i32, i32)];
    fn point_iter(self) -> &'b [(i32, i32)] {
        self.points
    }
}

impl<DB: DrawingBackend> Drawable<DB> for BorrowedPath<'_> {
    fn draw<I: Iterator<Item = BackendCoord>>(
        &self,
        points: I,
        backend: &mut DB,
        _: (u32, u32),
    ) -> Result<(), DrawingErrorKind<DB::ErrorType>> {
        backend.draw_path(points, &self.style)
    }
}

fn drawing_error<E: std::error::Error + Send + Sync>(
    e: plotters::drawing::DrawingAreaErrorKind<E>,
) -> ChartError {
    ChartError::Drawing {
        message: e.to_string(),
    }
}

#[inline]
fn pt(p: (f64, f64)) -> (i32, i32) {
    (round_to_i32(p.0), round_to_i32(p.1))
}

/// `x.round() as i32` (half away from zero, saturating, NaN to 0), without
/// `round`'s library call (no instruction rounds half away from zero on
/// x86-64 or in WebAssembly): below 2^52 in magnitude, truncation and the
/// difference to it are exact, so comparing that difference with 1/2 decides
/// as `round` does; larger values (and infinities, NaN) are integers already.
#[inline]
pub(crate) fn round_to_i32(x: f64) -> i32 {
    const EXACT: f64 = 4_503_599_627_370_496.0; // 2^52
    if !(x.abs() < EXACT) {
        return x as i32;
    }
    let t = x as i64;
    let f = x - t as f64;
    let r = if f >= 0.5 {
        t + 1
    } else if f <= -0.5 {
        t - 1
    } else {
        t
    };
    r.clamp(i64::from(i32::MIN), i64::from(i32::MAX)) as i32
}

/// `x.round().clamp(0.0, 255.0) as usize` (a colour-table index), without
/// `round`'s library call: below 255 a positive `x` truncates exactly and its
/// fraction decides the rounding as `round` does; NaN gives 0 as before.
pub(crate) fn round_to_byte_index(x: f64) -> usize {
    if x >= 255.0 {
        255
    } else if x > 0.0 {
        let i = x as usize;
        if x - i as f64 >= 0.5 {
            i + 1
        } else {
            i
        }
    } else {
        0
    }
}

/// The bytes every segment key of a painter starts with: the area's size and
/// offset, the pixels per point and the theme (not generic over the back end,
/// so the module holds it once).
fn context_key(size: (u32, u32), base: (i32, i32), ppp: f64, theme: &Theme) -> SegmentKey {
    let mut k = SegmentKey::default();
    k.u64(u64::from(size.0)).u64(u64::from(size.1));
    k.u64(base.0 as u64)
        .u64(base.1 as u64)
        .f64(ppp)
        .theme(theme);
    k
}

impl<'a, DB: DrawingBackend> Painter<'a, DB> {
    pub fn new(area: &'a DrawingArea<DB, Shift>, theme: &'a Theme, ppp: f64) -> Self {
        crate::render::ensure_font(theme);
        Painter {
            area,
            theme,
            ppp,
            scratch: Scratch::default(),
            text_styles: RefCell::new(Vec::new()),
            reuse: None,
            context: RefCell::new(None),
        }
    }

    /// This painter with segments kept in `reuse` ([`Painter::segment`]).
    pub fn reusing(mut self, reuse: Option<&'a dyn Reuse>) -> Self {
        self.reuse = reuse;
        self
    }

    /// Draws a segment of the chart with `draw`, which must read nothing but
    /// this painter and what `inputs` writes into the key (`crate::reuse`):
    /// with a [`Reuse`] store the store decides whether `draw` runs or what it
    /// drew for the same key is put again; without one `draw` just runs (and
    /// no key is written).
    pub fn segment(
        &self,
        name: &str,
        inputs: impl FnOnce(&mut SegmentKey),
        draw: impl FnOnce() -> Result<(), ChartError>,
    ) -> Result<(), ChartError> {
        // One body for both ways (the drawing is not compiled twice per call site).
        let mut draw = Some(draw);
        let draw: &mut dyn FnMut() -> Result<(), ChartError> = &mut || match draw.take() {
            Some(draw) => draw(),
            // Called at most once (`Reuse::segment`).
            None => Ok(()),
        };
        let Some(reuse) = self.reuse else {
            return draw();
        };
        let mut key = {
            let mut context = self.context.borrow_mut();
            context
                .get_or_insert_with(|| {
                    context_key(
                        self.area.dim_in_pixel(),
                        self.area.get_base_pixel(),
                        self.ppp,
                        self.theme,
                    )
                })
                .clone()
        };
        key.text(name);
        inputs(&mut key);
        reuse.segment(key.bytes(), draw)
    }

    pub fn size(&self) -> (f64, f64) {
        let (w, h) = self.area.dim_in_pixel();
        (w as f64, h as f64)
    }

    /// Points to pixels.
    pub fn px(&self, points: f64) -> f64 {
        points * self.ppp
    }

    fn stroke(&self, width_pt: f64) -> u32 {
        (width_pt * self.ppp).round().max(1.0) as u32
    }

    fn text_style(
        &self,
        size_pt: f64,
        colour: Rgba,
        pos: Pos,
        orientation: Orientation,
    ) -> TextStyle<'a> {
        let font: FontDesc<'a> = (
            self.theme.font_family.as_str(),
            size_pt * PLOTTERS_FONT_SCALE * self.ppp,
        )
            .into();
        let font = match orientation {
            Orientation::Horizontal => font,
            Orientation::Up => font.transform(FontTransform::Rotate270),
        };
        font.color(&colour.to_plotters()).pos(pos)
    }

    /// [`Self::text_style`] with the anchor `anchor`, made once per painter and
    /// handed to `with` (the same style every time, so the same text).
    fn with_text_style<R>(
        &self,
        size_pt: f64,
        colour: Rgba,
        anchor: (HPos, VPos),
        orientation: Orientation,
        with: impl FnOnce(&TextStyle<'a>) -> R,
    ) -> R {
        let h = match anchor.0 {
            HPos::Left => 0,
            HPos::Right => 1,
            HPos::Center => 2,
        };
        let v = match anchor.1 {
            VPos::Top => 0,
            VPos::Center => 1,
            VPos::Bottom => 2,
        };
        let key: TextKey = (size_pt.to_bits(), colour, h, v, orientation);
        let mut styles = self.text_styles.borrow_mut();
        let at = match styles.iter().position(|(k, _)| *k == key) {
            Some(at) => at,
            None => {
                let style =
                    self.text_style(size_pt, colour, Pos::new(anchor.0, anchor.1), orientation);
                styles.push((key, style));
                styles.len() - 1
            }
        };
        with(&styles[at].1)
    }

    /// Width and height [px] of a horizontal text.
    pub fn text_size(&self, text: &str, size_pt: f64) -> Result<(f64, f64), ChartError> {
        let (w, h) = self
            .with_text_style(
                size_pt,
                self.theme.foreground,
                (HPos::Left, VPos::Top),
                Orientation::Horizontal,
                |style| self.area.estimate_text_size(text, style),
            )
            .map_err(drawing_error)?;
        // Some font back ends report a zero height; the em size is the floor.
        Ok((w as f64, (h as f64).max(size_pt * self.ppp)))
    }

    pub fn text(
        &self,
        text: &str,
        at: (f64, f64),
        size_pt: f64,
        colour: Rgba,
        anchor: (HPos, VPos),
        orientation: Orientation,
    ) -> Result<(), ChartError> {
        if text.is_empty() {
            return Ok(());
        }
        let style = self.with_text_style(size_pt, colour, anchor, orientation, Clone::clone);
        self.area
            .draw(&Text::new(text, pt(at), style))
            .map_err(drawing_error)
    }

    pub fn fill_rect(&self, frame: Frame, colour: Rgba) -> Result<(), ChartError> {
        if colour.a == 0 || frame.width() <= 0.0 || frame.height() <= 0.0 {
            return Ok(());
        }
        let style = ShapeStyle {
            color: colour.to_plotters(),
            filled: true,
            stroke_width: 0,
        };
        self.area
            .draw(&Rectangle::new(
                [pt((frame.left, frame.top)), pt((frame.right, frame.bottom))],
                style,
            ))
            .map_err(drawing_error)
    }

    /// A polyline of pixel points, solid or dashed, `width_pt` wide.
    pub fn polyline(
        &self,
        points: &[(f64, f64)],
        colour: Rgba,
        width_pt: f64,
        dash: LineDash,
    ) -> Result<(), ChartError> {
        if points.len() < 2 {
            return Ok(());
        }
        let style = ShapeStyle {
            color: colour.to_plotters(),
            filled: false,
            stroke_width: self.stroke(width_pt),
        };
        match dash.pattern() {
            None => self.draw_path(points, style),
            Some(pattern) => {
                let unit = (width_pt * self.ppp).max(1.0);
                let mut dash = self.scratch.dash.borrow_mut();
                for_each_dash(points, &pattern.map(|p| p * unit), &mut dash, |piece| {
                    self.draw_path(piece, style)
                })
            }
        }
    }

    /// A path through `points` rounded to integer pixels, repeated pixels
    /// dropped, drawn with one `draw_path` (through the painter's buffer).
    fn draw_path(&self, points: &[(f64, f64)], style: ShapeStyle) -> Result<(), ChartError> {
        let mut ints = self.scratch.ints.borrow_mut();
        ints.clear();
        ints.extend(points.iter().map(|&p| pt(p)));
        ints.dedup();
        if ints.len() == 1 {
            // A dot shorter than a pixel still shows as one pixel-long dash.
            let only = ints[0];
            ints.push((only.0 + 1, only.1));
        }
        self.area
            .draw(&BorrowedPath {
                points: &ints,
                style,
            })
            .map_err(drawing_error)
    }

    /// Each defined point of a series on `panel` [px], in order (undefined
    /// points: `None`, NaN, non-positive on log axes); `run_end` after the last
    /// point of each run of consecutive defined points. The x pixels come from
    /// the painter's [`XPixels`].
    fn defined_points<E>(
        &self,
        panel: &Panel,
        xs: &[f64],
        ys: &[Option<f64>],
        mut point: impl FnMut((f64, f64)) -> Result<(), E>,
        mut run_end: impl FnMut() -> Result<(), E>,
    ) -> Result<(), E> {
        let mut cache = self.scratch.x_pixels.borrow_mut();
        let x_pixels = cache.of(panel, xs);
        let mut open = false;
        for (x, y) in x_pixels.iter().zip(ys) {
            // As `panel.px(x, y)`: both coordinates defined.
            match x.zip(y.and_then(|y| panel.px_y(y))) {
                Some(p) => {
                    point(p)?;
                    open = true;
                }
                None => {
                    if open {
                        run_end()?;
                        open = false;
                    }
                }
            }
        }
        if open {
            run_end()?;
        }
        Ok(())
    }

    /// The pieces of line a series on `panel` draws [px], in order: each run of
    /// defined points clipped to the frame (`defined_runs`, then
    /// `clip_polyline` of each run), through the painter's buffers.
    #[cfg(test)]
    fn series_pieces<E>(
        &self,
        panel: &Panel,
        xs: &[f64],
        ys: &[Option<f64>],
        piece: impl FnMut(&[(f64, f64)]) -> Result<(), E>,
    ) -> Result<(), E> {
        self.series_pieces_noting(panel, xs, ys, None, piece)
    }

    /// [`Self::series_pieces`], appending each defined point [px] to `noted`
    /// (when given) as it goes: what `extend_defined_points` would
    /// append for the series, without computing the pixels a second time.
    fn series_pieces_noting<E>(
        &self,
        panel: &Panel,
        xs: &[f64],
        ys: &[Option<f64>],
        mut noted: Option<&mut Vec<(f64, f64)>>,
        mut piece: impl FnMut(&[(f64, f64)]) -> Result<(), E>,
    ) -> Result<(), E> {
        let run = RefCell::new(self.scratch.run.borrow_mut());
        let mut clipped = self.scratch.clipped.borrow_mut();
        run.borrow_mut().clear();
        self.defined_points(
            panel,
            xs,
            ys,
            |p| {
                run.borrow_mut().push(p);
                if let Some(noted) = noted.as_deref_mut() {
                    noted.push(p);
                }
                Ok(())
            },
            || {
                let mut run = run.borrow_mut();
                let drawn = for_each_clipped(&run, &panel.frame, &mut clipped, &mut piece);
                run.clear();
                drawn
            },
        )
    }

    /// Every defined point of each series on `panel` [px] (`defined_runs`
    /// flattened), appended to `out` (the reference of what
    /// [`Self::series_noting`] notes).
    #[cfg(test)]
    pub fn extend_defined_points(
        &self,
        panel: &Panel,
        xs: &[f64],
        series: &[&[Option<f64>]],
        out: &mut Vec<(f64, f64)>,
    ) {
        for ys in series {
            let _ = self.defined_points::<()>(
                panel,
                xs,
                ys,
                |p| {
                    out.push(p);
                    Ok(())
                },
                || Ok(()),
            );
        }
    }

    /// A data series on a panel: undefined points (`None`, NaN, non-positive on
    /// log axes) break the line; the line is clipped to the frame.
    pub fn series(
        &self,
        panel: &Panel,
        xs: &[f64],
        ys: &[Option<f64>],
        style: &SeriesStyle,
    ) -> Result<(), ChartError> {
        self.series_noting(panel, xs, ys, style, None)
    }

    /// [`Self::series`], appending every defined point of the series [px] to
    /// `occupied` (when given): the points `extend_defined_points` gives for
    /// it, taken from the drawing instead of being computed again (on a log
    /// axis that is one `log10` per point).
    pub fn series_noting(
        &self,
        panel: &Panel,
        xs: &[f64],
        ys: &[Option<f64>],
        style: &SeriesStyle,
        occupied: Option<&mut Vec<(f64, f64)>>,
    ) -> Result<(), ChartError> {
        let width = self.theme.line_width_pt * style.width_scale;
        self.series_pieces_noting(panel, xs, ys, occupied, |piece| {
            self.polyline(piece, style.colour, width, style.dash)
        })?;
        if style.marker != Marker::None {
            // About ten markers along the whole radial range, whatever the grid resolution.
            let every = (xs.len() / 10).max(1);
            let offset = every / 2;
            for (i, (&x, y)) in xs.iter().zip(ys).enumerate() {
                if i % every != offset {
                    continue;
                }
                if let Some(p) = y.and_then(|y| panel.px(x, y)) {
                    if inside(&panel.frame, p) {
                        self.marker(p, style.marker, style.colour)?;
                    }
                }
            }
        }
        Ok(())
    }

    /// A marker centred at `p` [px].
    pub fn marker(&self, p: (f64, f64), marker: Marker, colour: Rgba) -> Result<(), ChartError> {
        let r = self.px(2.0);
        let stroke = self.stroke(self.theme.line_width_pt * 0.8);
        let filled = ShapeStyle {
            color: colour.to_plotters(),
            filled: true,
            stroke_width: 1,
        };
        let open = ShapeStyle {
            color: colour.to_plotters(),
            filled: false,
            stroke_width: stroke,
        };
        let (x, y) = p;
        let closed = |pts: Vec<(f64, f64)>| {
            let mut pts = pts;
            pts.push(pts[0]);
            pts
        };
        match marker {
            Marker::None => Ok(()),
            Marker::Circle => self
                .area
                .draw(&Circle::new(pt(p), r.round().max(1.0) as i32, filled))
                .map_err(drawing_error),
            Marker::Triangle => self
                .area
                .draw(&Polygon::new(
                    vec![
                        pt((x, y - 1.15 * r)),
                        pt((x + r, y + 0.6 * r)),
                        pt((x - r, y + 0.6 * r)),
                    ],
                    filled,
                ))
                .map_err(drawing_error),
            Marker::Square => self.draw_path(
                &closed(vec![
                    (x - r, y - r),
                    (x + r, y - r),
                    (x + r, y + r),
                    (x - r, y + r),
                ]),
                open,
            ),
            Marker::Diamond => self.draw_path(
                &closed(vec![
                    (x, y - 1.3 * r),
                    (x + 1.3 * r, y),
                    (x, y + 1.3 * r),
                    (x - 1.3 * r, y),
                ]),
                open,
            ),
            Marker::Cross => {
                self.draw_path(&[(x - r, y - r), (x + r, y + r)], open)?;
                self.draw_path(&[(x - r, y + r), (x + r, y - r)], open)
            }
            Marker::Plus => {
                self.draw_path(&[(x - 1.2 * r, y), (x + 1.2 * r, y)], open)?;
                self.draw_path(&[(x, y - 1.2 * r), (x, y + 1.2 * r)], open)
            }
        }
    }
}

fn inside(frame: &Frame, p: (f64, f64)) -> bool {
    p.0 >= frame.left - 0.5
        && p.0 <= frame.right + 0.5
        && p.1 >= frame.top - 0.5
        && p.1 <= frame.bottom + 0.5
}

/// Runs of consecutive defined points, in pixels (the reference the painter's
/// streaming `defined_points` is tested against).
#[cfg(test)]
pub(crate) fn defined_runs(panel: &Panel, xs: &[f64], ys: &[Option<f64>]) -> Vec<Vec<(f64, f64)>> {
    let mut runs = Vec::new();
    let mut current: Vec<(f64, f64)> = Vec::new();
    for (&x, y) in xs.iter().zip(ys) {
        match y.and_then(|y| panel.px(x, y)) {
            Some(p) => current.push(p),
            None => {
                if !current.is_empty() {
                    runs.push(std::mem::take(&mut current));
                }
            }
        }
    }
    if !current.is_empty() {
        runs.push(current);
    }
    runs
}

/// Clip a polyline to a rectangle (Liang-Barsky per segment); pieces outside
/// are dropped (the collecting reference of [`for_each_clipped`], which the
/// charts use).
#[cfg(test)]
pub(crate) fn clip_polyline(points: &[(f64, f64)], frame: &Frame) -> Vec<Vec<(f64, f64)>> {
    collect_pieces(|piece| for_each_clipped(points, frame, &mut Vec::new(), piece))
}

/// The pieces a streaming walker ([`for_each_clipped`], [`for_each_dash`])
/// hands out, collected in order.
#[cfg(test)]
fn collect_pieces(
    walk: impl FnOnce(&mut dyn FnMut(&[(f64, f64)]) -> Result<(), ()>) -> Result<(), ()>,
) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let _ = walk(&mut |piece| {
        out.push(piece.to_vec());
        Ok(())
    });
    out
}

/// [`clip_polyline`] without collecting: each piece is built in `current` (a
/// reused buffer) and handed to `piece` in order.
pub(crate) fn for_each_clipped<E>(
    points: &[(f64, f64)],
    frame: &Frame,
    current: &mut Vec<(f64, f64)>,
    mut piece: impl FnMut(&[(f64, f64)]) -> Result<(), E>,
) -> Result<(), E> {
    current.clear();
    if points.len() == 1 && inside(frame, points[0]) {
        return piece(points);
    }
    for w in points.windows(2) {
        match clip_segment(w[0], w[1], frame) {
            Some((a, b)) => {
                let continues = current
                    .last()
                    .is_some_and(|&l| (l.0 - a.0).abs() < 1e-9 && (l.1 - a.1).abs() < 1e-9);
                if !continues {
                    if current.len() > 1 {
                        piece(current)?;
                    }
                    current.clear();
                    current.push(a);
                }
                current.push(b);
            }
            None => {
                if current.len() > 1 {
                    piece(current)?;
                }
                current.clear();
            }
        }
    }
    if current.len() > 1 {
        piece(current)?;
    }
    Ok(())
}

fn clip_segment(a: (f64, f64), b: (f64, f64), f: &Frame) -> Option<((f64, f64), (f64, f64))> {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    if wholly_inside(a, b, (dx, dy), f) {
        // What the loop below gives such a segment: t0 = 0, t1 = 1 (see
        // `wholly_inside`), without its four divisions.
        return Some((
            (a.0 + 0.0 * dx, a.1 + 0.0 * dy),
            (a.0 + 1.0 * dx, a.1 + 1.0 * dy),
        ));
    }
    clip_segment_general(a, (dx, dy), f)
}

/// Whether the clipping loop of [`clip_segment_general`] surely leaves the
/// segment whole (t0 exactly +0, t1 exactly 1): `a` inside the frame by at
/// least 1e-200 on every side, `b` inside or on the frame, the steps at most
/// 1e100. Then every edge the segment runs toward has `p < 0` and `q >= 1e-200`,
/// so `r = q / p` is negative and not zero (|r| >= 1e-300, no underflow) and
/// `max(0, r)` is 0; every edge it runs away from has `q >= p > 0` (rounding
/// is monotone, and `b` is not beyond the edge), so `r >= 1` and `min(1, r)`
/// is 1; `p = 0` edges have `q > 0` and change nothing. NaN fails every test.
fn wholly_inside(a: (f64, f64), b: (f64, f64), (dx, dy): (f64, f64), f: &Frame) -> bool {
    const MARGIN: f64 = 1e-200;
    const STEP: f64 = 1e100;
    a.0 - f.left >= MARGIN
        && f.right - a.0 >= MARGIN
        && a.1 - f.top >= MARGIN
        && f.bottom - a.1 >= MARGIN
        && b.0 >= f.left
        && b.0 <= f.right
        && b.1 >= f.top
        && b.1 <= f.bottom
        && dx.abs() <= STEP
        && dy.abs() <= STEP
}

/// Liang-Barsky clipping of the segment from `a` by `(dx, dy)` to the frame.
fn clip_segment_general(
    a: (f64, f64),
    (dx, dy): (f64, f64),
    f: &Frame,
) -> Option<((f64, f64), (f64, f64))> {
    let mut t0: f64 = 0.0;
    let mut t1: f64 = 1.0;
    for (p, q) in [
        (-dx, a.0 - f.left),
        (dx, f.right - a.0),
        (-dy, a.1 - f.top),
        (dy, f.bottom - a.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let r = q / p;
            if p < 0.0 {
                t0 = fmax(t0, r);
            } else {
                t1 = fmin(t1, r);
            }
        }
    }
    if t0 > t1 {
        return None;
    }
    Some((
        (a.0 + t0 * dx, a.1 + t0 * dy),
        (a.0 + t1 * dx, a.1 + t1 * dy),
    ))
}

/// `x.max(y)` as the page's WebAssembly computes it, without the call: there
/// `f64::max` is a call of the bundled libm's `fmax`, which is this expression
/// (libm 0.2.16, `src/math/generic/fmax.rs`; `canonicalize` changes no
/// number). It is `f64::max` wherever that is specified (it leaves the sign
/// of max(0, -0) open; this gives `x`).
#[inline]
fn fmax(x: f64, y: f64) -> f64 {
    if x.is_nan() || x < y {
        y
    } else {
        x
    }
}

/// `x.min(y)` as the page's WebAssembly computes it (libm's `fmin`, as
/// [`fmax`]; min(0, -0) gives `y`).
#[inline]
fn fmin(x: f64, y: f64) -> f64 {
    if y.is_nan() || x < y {
        x
    } else {
        y
    }
}

/// Split a polyline into the "on" pieces of a dash pattern (lengths in px),
/// the pattern running on across vertices so dashes turn corners.
#[cfg(test)]
pub(crate) fn dashes(points: &[(f64, f64)], pattern: &[f64; 4]) -> Vec<Vec<(f64, f64)>> {
    collect_pieces(|piece| for_each_dash(points, pattern, &mut Vec::new(), piece))
}

/// [`dashes`] without collecting: each dash is built in `current` (a reused
/// buffer) and handed to `dash` in order. `points` is not empty.
pub(crate) fn for_each_dash<E>(
    points: &[(f64, f64)],
    pattern: &[f64; 4],
    current: &mut Vec<(f64, f64)>,
    mut dash: impl FnMut(&[(f64, f64)]) -> Result<(), E>,
) -> Result<(), E> {
    let mut index = 0usize;
    let mut left = pattern[0];
    let mut on = true;
    current.clear();
    current.push(points[0]);
    for w in points.windows(2) {
        let (a, b) = (w[0], w[1]);
        let length = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        let mut s = 0.0;
        while length - s > left {
            s += left;
            let p = (
                a.0 + (b.0 - a.0) * s / length,
                a.1 + (b.1 - a.1) * s / length,
            );
            if on {
                current.push(p);
                dash(current)?;
                current.clear();
            } else {
                current.clear();
                current.push(p);
            }
            on = !on;
            index = (index + 1) % 4;
            left = pattern[index];
        }
        left -= length - s;
        if on {
            current.push(b);
        }
    }
    if on && current.len() > 1 {
        dash(current)?;
    }
    Ok(())
}

/// Tick positions of an axis: labelled majors and unlabelled minors.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Ticks {
    pub major: Vec<(f64, String)>,
    pub minor: Vec<f64>,
}

/// Ticks for an axis (decades on log axes, 1-2-5 steps on linear ones).
pub(crate) fn ticks(axis: &AxisTransform) -> Ticks {
    match axis.scale {
        Scale::Log10 => log_ticks(axis.min, axis.max),
        Scale::Linear => linear_ticks(axis.min, axis.max),
    }
}

fn within(v: f64, min: f64, max: f64) -> bool {
    let eps = (max - min).abs() * 1e-9;
    v >= min - eps && v <= max + eps
}

fn log_ticks(min: f64, max: f64) -> Ticks {
    let lo = min.log10().floor() as i32;
    let hi = max.log10().ceil() as i32;
    let decades: Vec<i32> = (lo..=hi)
        .filter(|&k| within(10f64.powi(k), min, max))
        .collect();
    // Label every decade while there is room; thin to every 2nd or 3rd on long axes.
    let step = match decades.len() {
        0..=7 => 1,
        8..=12 => 2,
        _ => 3,
    };
    let mut major: Vec<(f64, String)> = decades
        .iter()
        .filter(|&&k| k.rem_euclid(step) == 0)
        .map(|&k| (10f64.powi(k), format_power_of_ten(k)))
        .collect();
    let mut minor = Vec::new();
    // On long axes the 2..9 minors would merge into a solid bar: keep only the unlabelled decades.
    let multiples: &[u32] = if decades.len() > 6 {
        &[1]
    } else {
        &[1, 2, 3, 4, 5, 6, 7, 8, 9]
    };
    for k in lo..=hi {
        for &m in multiples {
            let v = m as f64 * 10f64.powi(k);
            if within(v, min, max) && !major.iter().any(|(x, _)| (x / v - 1.0).abs() < 1e-9) {
                minor.push(v);
            }
        }
    }
    // Less than about two labelled decades: label 2 and 5 multiples too, so the axis can be read.
    if major.len() < 2 {
        for k in lo..=hi {
            for m in [2.0, 5.0] {
                let v = m * 10f64.powi(k);
                if within(v, min, max) {
                    major.push((v, format_plain(v)));
                }
            }
        }
        major.sort_by(|a, b| a.0.total_cmp(&b.0));
        minor.retain(|v| !major.iter().any(|(x, _)| (x / v - 1.0).abs() < 1e-9));
    }
    Ticks { major, minor }
}

fn linear_ticks(min: f64, max: f64) -> Ticks {
    let span = max - min;
    let raw = span / 5.0;
    let magnitude = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * magnitude)
        .find(|&s| s >= raw * 0.999)
        .unwrap_or(10.0 * magnitude);
    let decimals = (-(step.log10().floor()) as i32).max(0) as usize
        + usize::from((step / magnitude - 2.5).abs() < 1e-9);
    let first = (min / step).ceil() as i64;
    let last = (max / step).floor() as i64;
    let mut major = Vec::new();
    for i in first..=last {
        let v = i as f64 * step;
        let v = if v.abs() < step * 1e-9 { 0.0 } else { v };
        major.push((v, format!("{:.*}", decimals, v).replace('-', "\u{2212}")));
    }
    let minor_step = step
        / if (step / magnitude - 2.0).abs() < 1e-9 {
            4.0
        } else {
            5.0
        };
    let mut minor = Vec::new();
    let first_minor = (min / minor_step).ceil() as i64;
    let last_minor = (max / minor_step).floor() as i64;
    for i in first_minor..=last_minor {
        let v = i as f64 * minor_step;
        if !major.iter().any(|(x, _)| (x - v).abs() < minor_step * 1e-6) {
            minor.push(v);
        }
    }
    Ticks { major, minor }
}

/// 10^k typeset: plain decimals from 0.001 to 10000, otherwise "10" with a superscript exponent.
pub(crate) fn format_power_of_ten(k: i32) -> String {
    if (-3..=4).contains(&k) {
        format_plain(10f64.powi(k))
    } else {
        format!("10{}", superscript(&k.to_string()))
    }
}

fn format_plain(v: f64) -> String {
    if v >= 1.0 {
        format!("{}", v.round() as i64)
    } else {
        let decimals = (-(v.log10().floor()) as usize).max(1);
        format!("{:.*}", decimals, v)
    }
}

/// Which sides of a panel carry tick labels and the axis label.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct AxisOptions {
    pub x_labels: bool,
    pub y_labels: bool,
    /// Leave out the y tick labels at the bottom and top edges (stacked panels would collide there).
    pub skip_y_end_labels: (bool, bool),
}

impl AxisOptions {
    pub const FULL: AxisOptions = AxisOptions {
        x_labels: true,
        y_labels: true,
        skip_y_end_labels: (false, false),
    };
}

impl<'a, DB: DrawingBackend> Painter<'a, DB> {
    /// Space [px] the y tick labels and the y axis label need left of a frame.
    pub fn y_label_space(&self, axis: &AxisTransform) -> Result<f64, ChartError> {
        let t = ticks(axis);
        let mut widest: f64 = 0.0;
        for (_, label) in &t.major {
            widest = widest.max(self.text_size(label, self.theme.tick_font_pt)?.0);
        }
        let (_, label_h) = self.text_size(&axis.label, self.theme.label_font_pt)?;
        Ok(widest + self.px(3.5) + label_h + self.px(3.0))
    }

    /// Space [px] above a frame: the padding, or half a tick label if that is more
    /// (the top y tick label is centred on the frame's top edge).
    pub fn top_space(&self, pad_pt: f64) -> Result<f64, ChartError> {
        let (_, h) = self.text_size("0.1", self.theme.tick_font_pt)?;
        Ok(self.px(pad_pt).max(0.5 * h + self.px(1.5)))
    }

    /// Space [px] the x tick labels and the x axis label need below a frame.
    pub fn x_label_space(&self, axis: &AxisTransform) -> Result<f64, ChartError> {
        let (_, tick_h) = self.text_size("0.1", self.theme.tick_font_pt)?;
        let (_, label_h) = self.text_size(&axis.label, self.theme.label_font_pt)?;
        Ok(tick_h + self.px(3.0) + label_h + self.px(2.5))
    }

    /// Grid lines (behind the data): call before drawing series.
    pub fn grid(&self, panel: &Panel) -> Result<(), ChartError> {
        let f = panel.frame;
        let w = self.theme.axis_width_pt * 0.7;
        for (v, _) in ticks(&panel.x).major {
            if let Some(x) = panel.px_x(v) {
                self.polyline(
                    &[(x, f.top), (x, f.bottom)],
                    self.theme.grid,
                    w,
                    LineDash::Solid,
                )?;
            }
        }
        for (v, _) in ticks(&panel.y).major {
            if let Some(y) = panel.px_y(v) {
                self.polyline(
                    &[(f.left, y), (f.right, y)],
                    self.theme.grid,
                    w,
                    LineDash::Solid,
                )?;
            }
        }
        Ok(())
    }

    /// Frame, inward ticks on all four sides, tick labels and axis labels.
    pub fn axes(&self, panel: &Panel, options: AxisOptions) -> Result<(), ChartError> {
        let f = panel.frame;
        let fg = self.theme.foreground;
        let w = self.theme.axis_width_pt;
        let (major_len, minor_len) = (self.px(3.5), self.px(2.0));
        let xt = ticks(&panel.x);
        let yt = ticks(&panel.y);
        for (v, _) in &xt.major {
            if let Some(x) = panel.px_x(*v) {
                self.polyline(
                    &[(x, f.bottom), (x, f.bottom - major_len)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
                self.polyline(
                    &[(x, f.top), (x, f.top + major_len)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
            }
        }
        for v in &xt.minor {
            if let Some(x) = panel.px_x(*v) {
                self.polyline(
                    &[(x, f.bottom), (x, f.bottom - minor_len)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
                self.polyline(
                    &[(x, f.top), (x, f.top + minor_len)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
            }
        }
        for (v, _) in &yt.major {
            if let Some(y) = panel.px_y(*v) {
                self.polyline(
                    &[(f.left, y), (f.left + major_len, y)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
                self.polyline(
                    &[(f.right, y), (f.right - major_len, y)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
            }
        }
        for v in &yt.minor {
            if let Some(y) = panel.px_y(*v) {
                self.polyline(
                    &[(f.left, y), (f.left + minor_len, y)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
                self.polyline(
                    &[(f.right, y), (f.right - minor_len, y)],
                    fg,
                    w,
                    LineDash::Solid,
                )?;
            }
        }
        self.polyline(
            &[
                (f.left, f.top),
                (f.right, f.top),
                (f.right, f.bottom),
                (f.left, f.bottom),
                (f.left, f.top),
            ],
            fg,
            w,
            LineDash::Solid,
        )?;
        let tick_pt = self.theme.tick_font_pt;
        let gap = self.px(2.5);
        if options.x_labels {
            let mut tick_h: f64 = 0.0;
            for (v, label) in &xt.major {
                if let Some(x) = panel.px_x(*v) {
                    self.text(
                        label,
                        (x, f.bottom + gap),
                        tick_pt,
                        fg,
                        (HPos::Center, VPos::Top),
                        Orientation::Horizontal,
                    )?;
                    tick_h = tick_h.max(self.text_size(label, tick_pt)?.1);
                }
            }
            let y = f.bottom + gap + tick_h + self.px(1.5);
            let x = 0.5 * (f.left + f.right);
            self.text(
                &panel.x.label,
                (x, y),
                self.theme.label_font_pt,
                fg,
                (HPos::Center, VPos::Top),
                Orientation::Horizontal,
            )?;
        }
        if options.y_labels {
            let mut widest: f64 = 0.0;
            for (v, label) in &yt.major {
                if let Some(y) = panel.px_y(*v) {
                    let at_bottom = (y - f.bottom).abs() < 1.0;
                    let at_top = (y - f.top).abs() < 1.0;
                    if (at_bottom && options.skip_y_end_labels.0)
                        || (at_top && options.skip_y_end_labels.1)
                    {
                        continue;
                    }
                    self.text(
                        label,
                        (f.left - gap, y),
                        tick_pt,
                        fg,
                        (HPos::Right, VPos::Center),
                        Orientation::Horizontal,
                    )?;
                    widest = widest.max(self.text_size(label, tick_pt)?.0);
                }
            }
            let (_, label_h) = self.text_size(&panel.y.label, self.theme.label_font_pt)?;
            let x = f.left - gap - widest - self.px(3.0) - 0.5 * label_h;
            let y = 0.5 * (f.top + f.bottom);
            self.text(
                &panel.y.label,
                (x, y),
                self.theme.label_font_pt,
                fg,
                (HPos::Center, VPos::Center),
                Orientation::Up,
            )?;
        }
        Ok(())
    }

    /// Width and height [px] of a legend box.
    pub fn legend_size(&self, entries: &[(String, SeriesStyle)]) -> Result<(f64, f64), ChartError> {
        let (text_w, row_h) = self.legend_metrics(entries)?;
        let pad = self.px(3.0);
        Ok((
            pad + self.px(14.0) + self.px(3.0) + text_w + pad,
            pad + row_h * entries.len() as f64 + pad,
        ))
    }

    fn legend_metrics(&self, entries: &[(String, SeriesStyle)]) -> Result<(f64, f64), ChartError> {
        let mut text_w: f64 = 0.0;
        let mut row_h: f64 = 0.0;
        for (label, _) in entries {
            let (w, h) = self.text_size(label, self.theme.legend_font_pt)?;
            text_w = text_w.max(w);
            row_h = row_h.max(h);
        }
        Ok((text_w, row_h + self.px(1.5)))
    }

    /// A legend in the corner of `frame` that covers the fewest of `occupied` points.
    pub fn legend(
        &self,
        frame: &Frame,
        entries: &[(String, SeriesStyle)],
        occupied: &[(f64, f64)],
    ) -> Result<(), ChartError> {
        match self.legend_corner(frame, entries, occupied)? {
            Some(corner) => self.legend_in_corner(corner, entries),
            None => Ok(()),
        }
    }

    /// Where [`Self::legend`] puts its box (the top-left corner); `None` without entries.
    pub fn legend_corner(
        &self,
        frame: &Frame,
        entries: &[(String, SeriesStyle)],
        occupied: &[(f64, f64)],
    ) -> Result<Option<(f64, f64)>, ChartError> {
        if entries.is_empty() {
            return Ok(None);
        }
        let (box_w, box_h) = self.legend_size(entries)?;
        let inset = self.px(3.0);
        let corners = [
            (frame.right - inset - box_w, frame.top + inset),
            (frame.left + inset, frame.top + inset),
            (frame.right - inset - box_w, frame.bottom - inset - box_h),
            (frame.left + inset, frame.bottom - inset - box_h),
        ];
        Ok(Some(
            corners
                .iter()
                .copied()
                .min_by_key(|&(x, y)| {
                    occupied
                        .iter()
                        .filter(|p| p.0 >= x && p.0 <= x + box_w && p.1 >= y && p.1 <= y + box_h)
                        .count()
                })
                .unwrap_or(corners[0]),
        ))
    }

    /// The box of [`Self::legend`] at `corner` ([`Self::legend_corner`]).
    pub fn legend_in_corner(
        &self,
        corner: (f64, f64),
        entries: &[(String, SeriesStyle)],
    ) -> Result<(), ChartError> {
        self.legend_at(
            corner,
            entries,
            self.theme.background.with_alpha(225),
            self.theme.grid,
            self.theme.foreground,
        )
    }

    /// A legend box with its top-left corner at `at`.
    pub fn legend_at(
        &self,
        at: (f64, f64),
        entries: &[(String, SeriesStyle)],
        fill: Rgba,
        border: Rgba,
        text: Rgba,
    ) -> Result<(), ChartError> {
        let (box_w, box_h) = self.legend_size(entries)?;
        let (_, row_h) = self.legend_metrics(entries)?;
        let pad = self.px(3.0);
        let sample = self.px(14.0);
        let (x0, y0) = at;
        let b = Frame {
            left: x0,
            top: y0,
            right: x0 + box_w,
            bottom: y0 + box_h,
        };
        self.fill_rect(b, fill)?;
        self.polyline(
            &[
                (b.left, b.top),
                (b.right, b.top),
                (b.right, b.bottom),
                (b.left, b.bottom),
                (b.left, b.top),
            ],
            border,
            self.theme.axis_width_pt,
            LineDash::Solid,
        )?;
        for (i, (label, style)) in entries.iter().enumerate() {
            let y = y0 + pad + row_h * (i as f64 + 0.5);
            let (xa, xb) = (x0 + pad, x0 + pad + sample);
            self.polyline(
                &[(xa, y), (xb, y)],
                style.colour,
                self.theme.line_width_pt * style.width_scale,
                style.dash,
            )?;
            if style.marker != Marker::None {
                self.marker((0.5 * (xa + xb), y), style.marker, style.colour)?;
            }
            let size = self.theme.legend_font_pt;
            self.text(
                label,
                (xb + self.px(3.0), y),
                size,
                text,
                (HPos::Left, VPos::Center),
                Orientation::Horizontal,
            )?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_ticks_label_decades() {
        let t = log_ticks(0.1, 500.0);
        let labels: Vec<&str> = t.major.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["0.1", "1", "10", "100"]);
        assert!(t.minor.iter().any(|&v| (v - 200.0).abs() < 1e-9));
        let t = log_ticks(1e-12, 1e-3);
        assert_eq!(t.major[0].1, "10\u{207b}\u{00b9}\u{00b2}");
    }

    #[test]
    fn linear_ticks_use_nice_steps() {
        let t = linear_ticks(0.0, 2.0);
        let labels: Vec<&str> = t.major.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["0.0", "0.5", "1.0", "1.5", "2.0"]);
        let t = linear_ticks(0.0, 0.35);
        let labels: Vec<&str> = t.major.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["0.0", "0.1", "0.2", "0.3"]);
        // A 2.5 step needs one more decimal than its magnitude.
        let t = linear_ticks(0.0, 12.0);
        let labels: Vec<&str> = t.major.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["0.0", "2.5", "5.0", "7.5", "10.0"]);
    }

    #[test]
    fn clipping_keeps_the_inside() {
        let f = Frame {
            left: 0.0,
            top: 0.0,
            right: 10.0,
            bottom: 10.0,
        };
        let pieces = clip_polyline(&[(-5.0, 5.0), (5.0, 5.0), (15.0, 5.0)], &f);
        assert_eq!(pieces, vec![vec![(0.0, 5.0), (5.0, 5.0), (10.0, 5.0)]]);
        assert!(clip_polyline(&[(-5.0, -5.0), (-1.0, -1.0)], &f).is_empty());
    }

    /// The collecting versions as first written (before the painter's buffers):
    /// the references the streaming ones must equal.
    fn reference_clip(points: &[(f64, f64)], frame: &Frame) -> Vec<Vec<(f64, f64)>> {
        let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
        let mut current: Vec<(f64, f64)> = Vec::new();
        if points.len() == 1 && inside(frame, points[0]) {
            return vec![points.to_vec()];
        }
        for w in points.windows(2) {
            match clip_segment(w[0], w[1], frame) {
                Some((a, b)) => {
                    let continues = current
                        .last()
                        .is_some_and(|&l| (l.0 - a.0).abs() < 1e-9 && (l.1 - a.1).abs() < 1e-9);
                    if !continues {
                        if current.len() > 1 {
                            out.push(std::mem::take(&mut current));
                        }
                        current.clear();
                        current.push(a);
                    }
                    current.push(b);
                }
                None => {
                    if current.len() > 1 {
                        out.push(std::mem::take(&mut current));
                    }
                    current.clear();
                }
            }
        }
        if current.len() > 1 {
            out.push(current);
        }
        out
    }

    /// The inlined `fmax` and `fmin` equal `f64::max` and `min` bit for bit
    /// wherever those are specified (all but the sign of a max or min of +0
    /// and -0, which libm's code decides as `fmax` and `fmin` do).
    #[test]
    fn inlined_min_and_max_equal_the_library() {
        let values = [
            0.0,
            -0.0,
            1.0,
            -1.0,
            0.5,
            1e-300,
            -1e-300,
            f64::MAX,
            f64::MIN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
        ];
        for &x in &values {
            for &y in &values {
                let (max, min) = (fmax(x, y), fmin(x, y));
                if x == 0.0 && y == 0.0 {
                    assert_eq!(max.to_bits(), x.to_bits());
                    assert_eq!(min.to_bits(), y.to_bits());
                } else {
                    assert_eq!(max.to_bits(), x.max(y).to_bits(), "max {x} {y}");
                    assert_eq!(min.to_bits(), x.min(y).to_bits(), "min {x} {y}");
                }
            }
        }
    }

    fn reference_dashes(points: &[(f64, f64)], pattern: &[f64; 4]) -> Vec<Vec<(f64, f64)>> {
        let mut out = Vec::new();
        let mut index = 0usize;
        let mut left = pattern[0];
        let mut on = true;
        let mut current: Vec<(f64, f64)> = vec![points[0]];
        for w in points.windows(2) {
            let (a, b) = (w[0], w[1]);
            let length = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
            let mut s = 0.0;
            while length - s > left {
                s += left;
                let p = (
                    a.0 + (b.0 - a.0) * s / length,
                    a.1 + (b.1 - a.1) * s / length,
                );
                if on {
                    current.push(p);
                    out.push(std::mem::take(&mut current));
                } else {
                    current = vec![p];
                }
                on = !on;
                index = (index + 1) % 4;
                left = pattern[index];
            }
            left -= length - s;
            if on {
                current.push(b);
            }
        }
        if on && current.len() > 1 {
            out.push(current);
        }
        out
    }

    /// A wiggly polyline of `n` points partly outside the 10..290 x 10..190 frame.
    fn wiggle(n: usize, phase: f64) -> Vec<(f64, f64)> {
        (0..n)
            .map(|i| {
                let t = i as f64 / n as f64;
                (
                    -20.0 + 340.0 * t,
                    100.0 + 120.0 * (17.0 * t + phase).sin() * (3.0 * t).cos(),
                )
            })
            .collect()
    }

    fn frame() -> Frame {
        Frame {
            left: 10.0,
            top: 10.0,
            right: 290.0,
            bottom: 190.0,
        }
    }

    #[test]
    fn streamed_dashes_and_clipping_equal_the_collected_ones() {
        let mut buffer = Vec::new();
        for (n, phase) in [(1, 0.0), (2, 0.3), (7, 1.0), (60, 2.0), (2500, 0.5)] {
            let points = wiggle(n, phase);
            let mut clipped = Vec::new();
            for_each_clipped::<()>(&points, &frame(), &mut buffer, |p| {
                clipped.push(p.to_vec());
                Ok(())
            })
            .unwrap();
            assert_eq!(clipped, reference_clip(&points, &frame()), "{n} points");
            for pattern in [
                [5.0, 5.0, 5.0, 5.0],
                [0.8, 2.4, 0.8, 2.4],
                [9.6, 3.2, 1.6, 3.2],
            ] {
                let mut pieces = Vec::new();
                for_each_dash::<()>(&points, &pattern, &mut buffer, |p| {
                    pieces.push(p.to_vec());
                    Ok(())
                })
                .unwrap();
                assert_eq!(pieces, reference_dashes(&points, &pattern), "{n} points");
            }
        }
    }

    /// The painter's series pieces (its kept x pixels, streamed runs and
    /// clipping) equal `defined_runs` then the reference clipping, for series
    /// drawn one after another on panels with other axes, frames and radii
    /// (each change must drop the kept x pixels).
    #[test]
    fn series_pieces_equal_runs_then_clipping() {
        use plotters::prelude::{IntoDrawingArea, SVGBackend};
        let mut svg = String::new();
        let area = SVGBackend::with_string(&mut svg, (300, 200)).into_drawing_area();
        let theme = Theme::light();
        let painter = Painter::new(&area, &theme, 1.6);
        let radii: Vec<f64> = (0..200).map(|i| 0.1 * 1.04f64.powi(i)).collect();
        let other_radii: Vec<f64> = radii.iter().map(|r| r * 1.5).collect();
        let log_x = AxisTransform::new(0.09, 300.0, Scale::Log10, "r");
        let linear_x = AxisTransform::new(-5.0, 250.0, Scale::Linear, "r");
        let y = AxisTransform::new(1e-3, 10.0, Scale::Log10, "y");
        let values: Vec<Option<f64>> = (0..200)
            .map(|i| match i % 37 {
                0 => None,
                5 => Some(f64::NAN),
                9 => Some(-1.0),
                _ => Some(0.01 * (1.0 + (i as f64 * 0.3).sin()) * 10f64.powi(i % 4)),
            })
            .collect();
        let mut narrow = frame();
        narrow.right = 150.0;
        let cases = [
            (&log_x, frame(), &radii),
            (&log_x, frame(), &radii),
            (&log_x, narrow, &radii),
            (&linear_x, narrow, &radii),
            (&linear_x, narrow, &other_radii),
            (&log_x, frame(), &other_radii),
        ];
        for (n, (x, frame, xs)) in cases.into_iter().enumerate() {
            let panel = Panel {
                name: "test",
                frame,
                x: x.clone(),
                y: y.clone(),
            };
            let mut pieces = Vec::new();
            painter
                .series_pieces::<()>(&panel, xs, &values, |p| {
                    pieces.push(p.to_vec());
                    Ok(())
                })
                .unwrap();
            // The same pieces while noting the defined points (two series
            // noted one after the other, as the profiles note theirs).
            let mut noted_pieces = Vec::new();
            let mut noted = vec![(-1.0, -1.0)];
            for _ in 0..2 {
                painter
                    .series_pieces_noting::<()>(&panel, xs, &values, Some(&mut noted), |p| {
                        noted_pieces.push(p.to_vec());
                        Ok(())
                    })
                    .unwrap();
            }
            assert_eq!(noted_pieces, [pieces.clone(), pieces.clone()].concat());
            let expected: Vec<Vec<(f64, f64)>> = defined_runs(&panel, xs, &values)
                .iter()
                .flat_map(|run| reference_clip(run, &panel.frame))
                .collect();
            assert!(!expected.is_empty());
            assert_eq!(pieces, expected, "case {n}");
            let mut points = Vec::new();
            painter.extend_defined_points(&panel, xs, &[&values], &mut points);
            let flat: Vec<(f64, f64)> = defined_runs(&panel, xs, &values).concat();
            assert_eq!(points, flat, "case {n}");
            let bits = |v: &[(f64, f64)]| -> Vec<(u64, u64)> {
                v.iter().map(|p| (p.0.to_bits(), p.1.to_bits())).collect()
            };
            assert_eq!(
                bits(&noted),
                bits(&[vec![(-1.0, -1.0)], flat.clone(), flat].concat()),
                "case {n}"
            );
        }
    }

    /// The shortcut for segments wholly inside the frame gives, bit for bit,
    /// what the general Liang-Barsky loop gives, on random segments in, out and
    /// across frames of several sizes and on points on or a hair inside edges.
    #[test]
    fn the_inside_shortcut_equals_the_general_clipping() {
        let bits = |c: Option<((f64, f64), (f64, f64))>| {
            c.map(|(a, b)| [a.0, a.1, b.0, b.1].map(f64::to_bits))
        };
        let mut state: u64 = 0x9e37_79b9_7f4a_7c15;
        let mut next = || {
            state ^= state >> 12;
            state ^= state << 25;
            state ^= state >> 27;
            (state.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64
        };
        let frames = [
            frame(),
            Frame {
                left: 0.0,
                top: 0.0,
                right: 1.0,
                bottom: 1.0,
            },
            Frame {
                left: -3e5,
                top: -7.5,
                right: 2e6,
                bottom: 1e-3,
            },
        ];
        let mut shortcuts = 0;
        for f in &frames {
            let (w, h) = (f.width(), f.height());
            // Points near and on the edges, a hair inside, and NaN.
            let mut special = vec![
                (f.left, f.top),
                (f.right, f.bottom),
                (f.left + 1e-12 * w, f.top + 0.5 * h),
                (f.right - f64::EPSILON * f.right.abs(), f.bottom - 1e-9 * h),
                (f.left + 0.5 * w, f64::NAN),
            ];
            special.push((f.left.next_up(), f.top.next_up()));
            for _ in 0..200_000 {
                let mut p = || {
                    (
                        f.left - 0.2 * w + 1.4 * w * next(),
                        f.top - 0.2 * h + 1.4 * h * next(),
                    )
                };
                let (mut a, mut b) = (p(), p());
                let pick = next();
                if pick < 0.1 {
                    a = special[(next() * special.len() as f64) as usize % special.len()];
                } else if pick < 0.2 {
                    b = special[(next() * special.len() as f64) as usize % special.len()];
                }
                let d = (b.0 - a.0, b.1 - a.1);
                shortcuts += usize::from(wholly_inside(a, b, d, f));
                assert_eq!(
                    bits(clip_segment(a, b, f)),
                    bits(clip_segment_general(a, d, f)),
                    "{a:?} {b:?} {f:?}"
                );
            }
        }
        assert!(
            shortcuts > 100_000,
            "{shortcuts} segments took the shortcut"
        );
    }

    /// The rounding helpers give what `round` gives, on edge cases and on a
    /// million values spread over many magnitudes.
    #[test]
    fn fast_rounding_equals_round() {
        let mut values = vec![
            0.0,
            -0.0,
            0.5,
            -0.5,
            1.5,
            -1.5,
            2.5,
            0.49999999999999994,
            -0.49999999999999994,
            254.5,
            254.49999999999997,
            255.0,
            255.5,
            -1e-300,
            1e-300,
            2147483647.4,
            2147483647.5,
            -2147483648.5,
            -2147483649.0,
            4503599627370495.5,
            4503599627370497.0,
            1e19,
            -1e19,
            1e300,
            f64::MAX,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
        ];
        let mut state: u64 = 0x2545_f491_4f6c_dd1d;
        for _ in 0..1_000_000 {
            // xorshift64*: uniform bits, so every exponent and fraction occurs.
            state ^= state >> 12;
            state ^= state << 25;
            state ^= state >> 27;
            let bits = state.wrapping_mul(0x2545_f491_4f6c_dd1d);
            let scale = 10f64.powi((bits % 23) as i32 - 8);
            values.push(((bits >> 11) as f64 / (1u64 << 53) as f64 - 0.3) * 300.0 * scale);
            values.push(f64::from_bits(bits));
        }
        for x in values {
            assert_eq!(round_to_i32(x), x.round() as i32, "{x:e}");
            assert_eq!(
                round_to_byte_index(x),
                x.round().clamp(0.0, 255.0) as usize,
                "{x:e}"
            );
        }
    }

    #[test]
    fn dashes_cover_half_of_an_even_pattern() {
        let pieces = dashes(&[(0.0, 0.0), (100.0, 0.0)], &[5.0, 5.0, 5.0, 5.0]);
        assert_eq!(pieces.len(), 10);
        let total: f64 = pieces.iter().map(|p| p.last().unwrap().0 - p[0].0).sum();
        assert!((total - 50.0).abs() < 1e-9, "{total}");
    }
}
