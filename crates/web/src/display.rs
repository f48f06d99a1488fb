//! A display list: a plotters back end that records what a chart draws as a
//! list of [`Op`]s instead of drawing it. The page records a view, compares the
//! list with the one already on that canvas (an unchanged view is not drawn
//! again) and otherwise replays it on the canvas in few calls (`canvas::replay`:
//! consecutive strokes of one pen as one path, style changes only when the
//! style changes). Those strokes are merged already when recorded (one
//! [`Op::Stroke`] with several polylines), so a dashed line is one operation,
//! not one per dash. Plain Rust, so it is tested natively; the figures (SVG, PNG)
//! never pass through here.
//!
//! Coordinates are the canvas back end's: integer pixels, with plotters-canvas's
//! half-pixel shift of horizontal and vertical `draw_line`s applied when recording,
//! so a replayed chart looks as the plotters-canvas back end drew it.

use std::cell::RefCell;
use std::collections::HashMap;

use nivalis_charts::readout::ViewData;
use nivalis_charts::{
    draw_abundance_profiles_reusing, draw_c_to_o_profile_reusing, draw_temperature_profile_reusing,
    prepare_map, CellDrawing, ChartError, ChartLayout, Reuse, Theme,
};
use plotters::prelude::IntoDrawingArea;
use plotters_backend::text_anchor::{HPos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
    FontTransform,
};

/// A colour with straight alpha in [0, 1], as plotters hands it over.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Colour {
    /// Red, green, blue.
    pub rgb: (u8, u8, u8),
    /// Opacity.
    pub alpha: f64,
}

impl Colour {
    fn of(c: BackendColor) -> Colour {
        Colour {
            rgb: c.rgb,
            alpha: c.alpha,
        }
    }

    /// The CSS colour text plotters-canvas sets (`rgba(r,g,b,a)`).
    pub fn css(&self) -> String {
        let (r, g, b) = self.rgb;
        format!("rgba({},{},{},{})", r, g, b, self.alpha)
    }
}

/// One drawing operation, in canvas pixels.
#[derive(Debug, Clone, PartialEq)]
pub enum Op {
    /// Open polylines stroked `width` px wide, as one path stroked once: the
    /// lines and dashes a chart draws one after another with one pen are
    /// recorded into one operation (no vector per dash).
    Stroke {
        /// Colour.
        colour: Colour,
        /// Line width [px].
        width: u32,
        /// The vertices of all polylines, one polyline after another.
        points: Vec<(f64, f64)>,
        /// The number of vertices of each polyline, in order (each at least
        /// one; they add up to `points.len()`).
        lengths: Vec<u32>,
    },
    /// A rectangle's outline.
    StrokeRect {
        /// Colour.
        colour: Colour,
        /// Line width [px].
        width: u32,
        /// Upper left and lower right corners.
        corners: [(i32, i32); 2],
    },
    /// A filled rectangle.
    FillRect {
        /// Colour.
        colour: Colour,
        /// Upper left and lower right corners.
        corners: [(i32, i32); 2],
    },
    /// A filled closed polygon.
    FillPolygon {
        /// Colour.
        colour: Colour,
        /// Vertices.
        points: Vec<(i32, i32)>,
    },
    /// A circle, filled or stroked `width` px wide.
    Circle {
        /// Colour.
        colour: Colour,
        /// Line width [px] (stroked circles).
        width: u32,
        /// Filled rather than stroked.
        fill: bool,
        /// Centre.
        centre: (i32, i32),
        /// Radius [px].
        radius: u32,
    },
    /// A text.
    Text {
        /// The text.
        text: String,
        /// CSS font (`style size px family`), as plotters-canvas sets it.
        font: String,
        /// Colour.
        colour: Colour,
        /// CSS `textAlign`.
        align: &'static str,
        /// CSS `textBaseline`.
        baseline: &'static str,
        /// Clockwise rotation [degrees]: 0, 90, 180 or 270.
        rotation: u16,
        /// Anchor.
        at: (i32, i32),
    },
    /// RGBA pixels put on the canvas as they are (`putImageData`).
    Image {
        /// Upper left corner.
        at: (i32, i32),
        /// Width [px].
        width: u32,
        /// Height [px].
        height: u32,
        /// Row-major RGBA, `width x height x 4` bytes.
        rgba: Vec<u8>,
        /// Every pixel's alpha is 255 by construction (a map's cells composited
        /// over the background, a bitmap of RGB rows); `false` when not known,
        /// and then the pixels are checked where it matters (`commands::opaque`).
        opaque: bool,
    },
}

impl Op {
    /// The pen of a stroke (colour, width); `None` for other operations.
    pub fn stroke_pen(&self) -> Option<(Colour, u32)> {
        match self {
            Op::Stroke { colour, width, .. } => Some((*colour, *width)),
            _ => None,
        }
    }
}

/// Measured text sizes [px] by CSS font, then text, kept across draws (two
/// levels, so a lookup borrows both strings and allocates nothing).
pub type TextSizes = RefCell<HashMap<String, HashMap<String, (u32, u32)>>>;

/// Text measuring for the recorder: width and height [px] of `text` in the CSS `font`
/// of `size` px (the page asks the canvas; tests use a fixed rule).
pub trait MeasureText {
    /// The text's size [px].
    fn measure(&self, font: &str, size: f64, text: &str) -> (u32, u32);
}

/// The error type of the recorder (recording cannot fail).
#[derive(Debug)]
pub struct RecordError;

impl std::fmt::Display for RecordError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("recording failed")
    }
}

impl std::error::Error for RecordError {}

/// The recording back end: a canvas of `size` whose operations land in `ops`.
pub struct Recorder<'a> {
    size: (u32, u32),
    ops: &'a RefCell<Vec<Op>>,
    measure: &'a dyn MeasureText,
    /// The CSS fonts made so far by (size bits, family, style): a chart uses a
    /// few fonts for many texts, and formatting the size each time cost more
    /// than recording the text.
    fonts: RefCell<Vec<(u64, String, String, String)>>,
}

impl<'a> Recorder<'a> {
    /// A recorder for a canvas of `size` pixels.
    pub fn new(size: (u32, u32), ops: &'a RefCell<Vec<Op>>, measure: &'a dyn MeasureText) -> Self {
        Recorder {
            size,
            ops,
            measure,
            fonts: RefCell::new(Vec::new()),
        }
    }

    /// [`css_font`] of `style`, made once per font and handed to `with`.
    fn with_css_font<S: BackendTextStyle, R>(&self, style: &S, with: impl FnOnce(&str) -> R) -> R {
        let size = style.size().to_bits();
        let (family, font_style) = (style.family(), style.style());
        let (family, font_style) = (family.as_str(), font_style.as_str());
        let mut fonts = self.fonts.borrow_mut();
        let at = match fonts
            .iter()
            .position(|f| f.0 == size && f.1 == family && f.2 == font_style)
        {
            Some(at) => at,
            None => {
                fonts.push((
                    size,
                    family.to_string(),
                    font_style.to_string(),
                    css_font(style),
                ));
                fonts.len() - 1
            }
        };
        with(&fonts[at].3)
    }

    /// Appends an operation drawn before the chart's (a map's cells).
    pub fn push(&self, op: Op) {
        self.ops.borrow_mut().push(op);
    }

    /// Appends the polyline `points` stroked with the pen (`colour`, `width`):
    /// to the last operation when that is a stroke of the same pen (the canvas
    /// then strokes both in one path, as it did when each was an operation of
    /// its own and the replay joined the run), else as a new stroke. An empty
    /// polyline adds nothing.
    fn stroke(&self, colour: Colour, width: u32, points: impl IntoIterator<Item = (f64, f64)>) {
        let mut ops = self.ops.borrow_mut();
        let same_pen = matches!(
            ops.last(),
            Some(Op::Stroke { colour: c, width: w, .. }) if *c == colour && *w == width
        );
        if !same_pen {
            ops.push(Op::Stroke {
                colour,
                width,
                points: Vec::new(),
                lengths: Vec::new(),
            });
        }
        let mut added = 0;
        if let Some(Op::Stroke {
            points: all,
            lengths,
            ..
        }) = ops.last_mut()
        {
            let before = all.len();
            all.extend(points);
            added = all.len() - before;
            if added > 0 {
                lengths.push(added as u32);
            }
        }
        if added == 0 && !same_pen {
            ops.pop();
        }
    }
}

type Result2 = Result<(), DrawingErrorKind<RecordError>>;

/// The CSS font plotters-canvas sets for a text style.
pub fn css_font<S: BackendTextStyle>(style: &S) -> String {
    format!(
        "{} {}px {}",
        style.style().as_str(),
        style.size(),
        style.family().as_str()
    )
}

/// plotters-canvas's shift of horizontal and vertical lines to pixel centres.
fn fine_line(from: BackendCoord, to: BackendCoord) -> [(f64, f64); 2] {
    let mut a = (f64::from(from.0), f64::from(from.1));
    let mut b = (f64::from(to.0), f64::from(to.1));
    if a.0 == b.0 {
        a.0 -= 0.5;
        b.0 -= 0.5;
    }
    if a.1 == b.1 {
        a.1 -= 0.5;
        b.1 -= 0.5;
    }
    [a, b]
}

impl DrawingBackend for Recorder<'_> {
    type ErrorType = RecordError;

    fn get_size(&self) -> (u32, u32) {
        self.size
    }

    fn ensure_prepared(&mut self) -> Result2 {
        Ok(())
    }

    fn present(&mut self) -> Result2 {
        Ok(())
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Result2 {
        if color.alpha > 0.0 {
            self.push(Op::FillRect {
                colour: Colour::of(color),
                corners: [point, (point.0 + 1, point.1 + 1)],
            });
        }
        Ok(())
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result2 {
        if style.color().alpha > 0.0 {
            self.stroke(
                Colour::of(style.color()),
                style.stroke_width(),
                fine_line(from, to),
            );
        }
        Ok(())
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result2 {
        if style.color().alpha > 0.0 {
            let colour = Colour::of(style.color());
            let corners = [upper_left, bottom_right];
            self.push(if fill {
                Op::FillRect { colour, corners }
            } else {
                Op::StrokeRect {
                    colour,
                    width: style.stroke_width(),
                    corners,
                }
            });
        }
        Ok(())
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result2 {
        if style.color().alpha > 0.0 {
            self.stroke(
                Colour::of(style.color()),
                style.stroke_width(),
                path.into_iter().map(|p| (f64::from(p.0), f64::from(p.1))),
            );
        }
        Ok(())
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result2 {
        if style.color().alpha > 0.0 {
            self.push(Op::Circle {
                colour: Colour::of(style.color()),
                width: style.stroke_width(),
                fill,
                centre: center,
                radius,
            });
        }
        Ok(())
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result2 {
        if style.color().alpha > 0.0 {
            let points: Vec<(i32, i32)> = vert.into_iter().collect();
            if !points.is_empty() {
                self.push(Op::FillPolygon {
                    colour: Colour::of(style.color()),
                    points,
                });
            }
        }
        Ok(())
    }

    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result2 {
        let colour = style.color();
        if colour.alpha == 0.0 {
            return Ok(());
        }
        let rotation = match style.transform() {
            FontTransform::None => 0,
            FontTransform::Rotate90 => 90,
            FontTransform::Rotate180 => 180,
            FontTransform::Rotate270 => 270,
        };
        let anchor = style.anchor();
        self.push(Op::Text {
            text: text.to_string(),
            font: self.with_css_font(style, str::to_string),
            colour: Colour::of(colour),
            align: match anchor.h_pos {
                HPos::Left => "start",
                HPos::Right => "end",
                HPos::Center => "center",
            },
            baseline: match anchor.v_pos {
                VPos::Top => "top",
                VPos::Center => "middle",
                VPos::Bottom => "bottom",
            },
            rotation,
            at: pos,
        });
        Ok(())
    }

    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<RecordError>> {
        Ok(self.with_css_font(style, |font| self.measure.measure(font, style.size(), text)))
    }

    fn blit_bitmap(&mut self, pos: BackendCoord, size: (u32, u32), src: &[u8]) -> Result2 {
        // plotters hands RGB rows; the canvas wants RGBA.
        let rgba = src
            .chunks_exact(3)
            .flat_map(|p| [p[0], p[1], p[2], 255])
            .collect();
        self.push(Op::Image {
            at: pos,
            width: size.0,
            height: size.1,
            rgba,
            opaque: true,
        });
        Ok(())
    }
}

/// Records what the chart of `data` draws on a canvas of `size` pixels (no
/// canvas call except measuring text not measured before) and returns the
/// display list with the chart's layout. A map's cells come first, as ONE image
/// rasterised by the charts crate; its axes, lines and colour bar follow.
/// `raster_ms` receives the milliseconds (by `now`, a clock in ms) spent
/// rasterising a map's cells (0 for other views). Plain Rust: the page calls it
/// through `canvas::record`, the native benchmark `benches/record.rs` directly.
pub fn record_view(
    size: (u32, u32),
    data: &ViewData,
    theme: &Theme,
    pixels_per_point: f64,
    measure: &dyn MeasureText,
    now: &dyn Fn() -> f64,
    raster_ms: &mut f64,
) -> Result<(Vec<Op>, ChartLayout), String> {
    record_view_reusing(
        size,
        data,
        theme,
        pixels_per_point,
        measure,
        now,
        raster_ms,
        Buffers::default(),
        &mut Segments::default(),
    )
}

/// The memory of a display list kept for the next recording of a view
/// ([`Buffers::of`]): the list's (emptied) and its map raster's.
#[derive(Debug, Default)]
pub struct Buffers {
    ops: Vec<Op>,
    raster: Vec<u8>,
}

impl Buffers {
    /// The memory of `ops` (a list recorded before, no longer needed): its
    /// operations are dropped now, its vector and its first image's pixel
    /// buffer are kept.
    pub fn of(mut ops: Vec<Op>) -> Buffers {
        let raster = ops
            .iter_mut()
            .find_map(|op| match op {
                Op::Image { rgba, .. } => Some(std::mem::take(rgba)),
                _ => None,
            })
            .unwrap_or_default();
        ops.clear();
        Buffers { ops, raster }
    }
}

/// The segments of a view's last recording (its grids, and its axes, colour
/// bar and legend: `nivalis_charts::reuse`), each with the key of what it was
/// drawn from, kept for the view's next recording.
#[derive(Debug, Default)]
pub struct Segments {
    /// Per segment, in the order the chart draws them: its key and its operations
    /// as recorded on their own (from an empty list).
    kept: Vec<(Vec<u8>, Vec<Op>)>,
    /// How many segments the last recording put again / drew (tests, benchmark).
    pub reused: usize,
    /// See `reused`.
    pub drawn: usize,
}

/// The [`Reuse`] store of one recording: segments go to and come from
/// `segments`, their operations into the recorder's list `ops`.
struct Store<'r> {
    ops: &'r RefCell<Vec<Op>>,
    segments: RefCell<&'r mut Segments>,
    /// The index of the next segment.
    next: std::cell::Cell<usize>,
}

impl Reuse for Store<'_> {
    fn segment(
        &self,
        key: &[u8],
        draw: &mut dyn FnMut() -> Result<(), ChartError>,
    ) -> Result<(), ChartError> {
        let at = self.next.get();
        self.next.set(at + 1);
        let mut segments = self.segments.borrow_mut();
        if let Some((kept, ops)) = segments.kept.get(at) {
            if kept.as_slice() == key {
                append(&mut self.ops.borrow_mut(), ops.iter().cloned());
                segments.reused += 1;
                return Ok(());
            }
        }
        // Recorded on its own (so it can be put after any list), then appended.
        let before = std::mem::take(&mut *self.ops.borrow_mut());
        let drawn = draw();
        let ops = std::mem::replace(&mut *self.ops.borrow_mut(), before);
        drawn?;
        let entry = (key.to_vec(), ops.clone());
        if at < segments.kept.len() {
            segments.kept[at] = entry;
        } else {
            segments.kept.push(entry);
        }
        segments.drawn += 1;
        append(&mut self.ops.borrow_mut(), ops);
        Ok(())
    }
}

/// Appends operations recorded on their own to `list` as the recorder would
/// have recorded them there: a first stroke of the pen of the list's last
/// stroke joins it ([`Recorder`] merges consecutive strokes of one pen).
fn append(list: &mut Vec<Op>, ops: impl IntoIterator<Item = Op>) {
    let mut ops = ops.into_iter();
    let Some(first) = ops.next() else {
        return;
    };
    match (list.last_mut(), first) {
        (
            Some(Op::Stroke {
                colour,
                width,
                points,
                lengths,
            }),
            Op::Stroke {
                colour: c,
                width: w,
                points: p,
                lengths: l,
            },
        ) if *colour == c && *width == w => {
            points.extend_from_slice(&p);
            lengths.extend_from_slice(&l);
        }
        (_, first) => list.push(first),
    }
    list.extend(ops);
}

/// [`record_view`] into the memory of an earlier list (`buffers`, so that
/// redrawing a view allocates neither its list's vector nor a map's raster of
/// about 600 KB again), with the chart's static parts put again from
/// `segments` where what they are drawn from is unchanged (and the segments
/// drawn kept there for the next recording): the same list as a fresh
/// recording.
#[allow(clippy::too_many_arguments)]
pub fn record_view_reusing(
    size: (u32, u32),
    data: &ViewData,
    theme: &Theme,
    pixels_per_point: f64,
    measure: &dyn MeasureText,
    now: &dyn Fn() -> f64,
    raster_ms: &mut f64,
    buffers: Buffers,
    segments: &mut Segments,
) -> Result<(Vec<Op>, ChartLayout), String> {
    *raster_ms = 0.0;
    segments.reused = 0;
    segments.drawn = 0;
    let Buffers {
        ops: mut list,
        raster,
    } = buffers;
    list.clear();
    // Room for a view's operations (strokes of one pen are merged, so a
    // profile has a few hundred), so the list is rarely moved as it grows.
    list.reserve(512);
    let ops = RefCell::new(list);
    let store = Store {
        ops: &ops,
        segments: RefCell::new(segments),
        next: std::cell::Cell::new(0),
    };
    let reuse = Some(&store as &dyn Reuse);
    let recorder = Recorder::new(size, &ops, measure);
    let area = recorder.into_drawing_area();
    let layout = match data {
        ViewData::Profile(d) => {
            draw_c_to_o_profile_reusing(&area, d, theme, pixels_per_point, reuse)
        }
        ViewData::Temperature(d) => {
            draw_temperature_profile_reusing(&area, d, theme, pixels_per_point, reuse)
        }
        ViewData::Abundances(d) => {
            draw_abundance_profiles_reusing(&area, d, theme, pixels_per_point, reuse)
        }
        ViewData::IceMap(d) | ViewData::CToOMap(d) => {
            // As `map_layout`, `rasterise_map_over` at the main panel's size and
            // `draw_ice_map` / `draw_c_to_o_map` with the cells omitted, with the
            // data checked and the map laid out once.
            let map = prepare_map(&area, d, theme, pixels_per_point)
                .map_err(|e| e.to_string())?
                .reusing(reuse);
            let layout = map.layout();
            let main = layout.main();
            // Pixels above a column's top are composited over the background
            // (putImageData copies alpha rather than blending).
            let t0 = now();
            let image = map.raster_over_into(theme.background, raster);
            *raster_ms = now() - t0;
            ops.borrow_mut().push(Op::Image {
                at: (main.left, main.top),
                width: image.width,
                height: image.height,
                rgba: image.rgba,
                // `raster_over` composites every pixel over the background (alpha 255).
                opaque: true,
            });
            let drawn = map.draw(CellDrawing::Omit);
            let rect = (main.left, main.top, image.width, image.height);
            after_disjoint_rects(&mut ops.borrow_mut(), rect);
            drawn
        }
    }
    .map_err(|e| e.to_string())?;
    area.present().map_err(|e| e.to_string())?;
    drop(area);
    Ok((ops.into_inner(), layout))
}

/// Moves the image opening `ops` (of rectangle `rect`: x, y, width, height)
/// past the filled rectangles that follow it and share no pixel with it (a
/// map's background around its cells): the same pixels, as each pixel is
/// painted by one of them alone (a `fillRect` at integer corners covers the
/// pixels of its half-open extent, an image at an integer offset its own),
/// and the rectangles, which an edit leaves as they are, now open the list:
/// the part kept on the layer under the chart (`crate::layers`), so that an
/// edit does not draw them again.
fn after_disjoint_rects(ops: &mut [Op], (x, y, w, h): (i32, i32, u32, u32)) {
    let (x1, y1) = (x.saturating_add_unsigned(w), y.saturating_add_unsigned(h));
    let moved = ops
        .iter()
        .skip(1)
        .take_while(|op| match op {
            Op::FillRect {
                corners: [a, b], ..
            } => {
                let (left, right) = (a.0.min(b.0), a.0.max(b.0));
                let (top, bottom) = (a.1.min(b.1), a.1.max(b.1));
                right <= x || left >= x1 || bottom <= y || top >= y1
            }
            _ => false,
        })
        .count();
    if matches!(ops.first(), Some(Op::Image { .. })) {
        ops[..=moved].rotate_left(1);
    }
}

/// Replaces a chart's leading filled rectangles by ONE image of the whole
/// canvas (`size`), when the list opens with an opaque rectangle covering the
/// canvas (the chart's background): the chi-square map fills its background
/// and then one rectangle per cell group (up to tens of thousands) before it
/// draws any line, which as separate `fillRect` calls took 40-90 ms and as one
/// image a few. Rectangles keep the half-open pixel extent [x0, x1) x [y0, y1)
/// the canvas fills, blended source-over with straight alpha as they come.
/// Any other list is returned as it is.
pub fn leading_rects_as_image(ops: Vec<Op>, size: (u32, u32)) -> Vec<Op> {
    let (w, h) = (size.0 as i32, size.1 as i32);
    let covers = matches!(
        ops.first(),
        Some(Op::FillRect { colour, corners: [a, b] })
            if colour.alpha >= 1.0 && a.0 <= 0 && a.1 <= 0 && b.0 >= w && b.1 >= h
    );
    if !covers || w <= 0 || h <= 0 {
        return ops;
    }
    let n = ops
        .iter()
        .take_while(|op| matches!(op, Op::FillRect { .. }))
        .count();
    let mut rgba = vec![0u8; w as usize * h as usize * 4];
    for op in &ops[..n] {
        if let Op::FillRect {
            colour,
            corners: [a, b],
        } = op
        {
            paint(&mut rgba, (w, h), *a, *b, *colour);
        }
    }
    let mut out = Vec::with_capacity(ops.len() - n + 1);
    out.push(Op::Image {
        at: (0, 0),
        width: size.0,
        height: size.1,
        rgba,
        opaque: false,
    });
    out.extend(ops.into_iter().skip(n));
    out
}

/// Blends a filled rectangle [x0, x1) x [y0, y1) (clipped to the buffer) into
/// `buffer`, source over destination with straight alpha.
fn paint(
    buffer: &mut [u8],
    (w, h): (i32, i32),
    upper_left: (i32, i32),
    bottom_right: (i32, i32),
    colour: Colour,
) {
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
}

/// The length of the run of operations from `start` that can be drawn as one
/// canvas call: strokes of one pen, filled circles (or stroked ones of one pen),
/// or filled polygons of one colour. Other operations are runs of one.
pub fn run_length(ops: &[Op], start: usize) -> usize {
    let Some(first) = ops.get(start) else {
        return 0;
    };
    let same = |other: &Op| match (first, other) {
        (
            Op::Stroke {
                colour: a,
                width: w,
                ..
            },
            Op::Stroke {
                colour: b,
                width: v,
                ..
            },
        ) => a == b && w == v,
        (
            Op::Circle {
                colour: a,
                width: w,
                fill: f,
                ..
            },
            Op::Circle {
                colour: b,
                width: v,
                fill: g,
                ..
            },
        ) => a == b && f == g && (*f || w == v),
        (Op::FillPolygon { colour: a, .. }, Op::FillPolygon { colour: b, .. }) => a == b,
        _ => false,
    };
    1 + ops[start + 1..].iter().take_while(|op| same(op)).count()
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_charts::{
        draw_abundance_profiles, draw_c_to_o_profile, draw_temperature_profile, AbundanceData,
        ProfileData, TemperatureData, Theme,
    };
    use nivalis_physics::{Model, ModelParameters};
    use plotters::prelude::IntoDrawingArea;

    /// 0.6 em per character, 1.2 em high (a fixed rule for tests).
    struct Fixed;
    impl MeasureText for Fixed {
        fn measure(&self, _font: &str, size: f64, text: &str) -> (u32, u32) {
            (
                (0.6 * size * text.chars().count() as f64) as u32,
                (1.2 * size) as u32,
            )
        }
    }

    fn record<F>(draw: F) -> Vec<Op>
    where
        F: FnOnce(&plotters::drawing::DrawingArea<Recorder<'_>, plotters::coord::Shift>),
    {
        let ops = RefCell::new(Vec::new());
        let area = Recorder::new((900, 500), &ops, &Fixed).into_drawing_area();
        draw(&area);
        drop(area);
        ops.into_inner()
    }

    #[test]
    fn the_same_data_records_the_same_list_and_an_edit_changes_it() {
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 60;
        p.grid.vertical_cells = 20;
        let model = Model::run(&p).unwrap();
        let theme = Theme::light();
        let profile = ProfileData::from_model(&model);
        let a = record(|area| {
            draw_c_to_o_profile(area, &profile, &theme, 1.6).unwrap();
        });
        let b = record(|area| {
            draw_c_to_o_profile(area, &profile, &theme, 1.6).unwrap();
        });
        assert!(a.len() > 20, "{} operations", a.len());
        assert_eq!(a, b);
        let mut ices = p.ices.clone();
        ices.sticking = 0.3;
        ices.photodesorption = false;
        let edited = model.with_ices(&ices);
        let c = record(|area| {
            draw_c_to_o_profile(area, &ProfileData::from_model(&edited), &theme, 1.6).unwrap();
        });
        assert_ne!(a, c);
        // The temperature view does not depend on the ice parameters: same list.
        let t = |m: &Model| {
            let data = TemperatureData::from_model(m);
            record(|area| {
                draw_temperature_profile(area, &data, &theme, 1.6).unwrap();
            })
        };
        assert_eq!(t(&model), t(&edited));
    }

    /// A map recorded by `record_view` (checked and laid out once through
    /// `prepare_map`) gives the list the three separate calls gave: the layout
    /// from `map_layout`, the cells from `rasterise_map_over` at the main
    /// panel's size, then `draw_ice_map` / `draw_c_to_o_map` with the cells
    /// omitted, with the cells moved after the four rectangles of background
    /// around them (which share no pixel with them: the same picture).
    #[test]
    fn a_map_records_as_layout_raster_and_drawing_did() {
        use nivalis_charts::{
            draw_c_to_o_map, draw_ice_map, map_layout, rasterise_map_over, CellDrawing, MapData,
        };
        use nivalis_physics::Species;
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 90;
        p.grid.vertical_cells = 30;
        let model = Model::run(&p).unwrap();
        let (mut previous, mut reused) = (None, 0);
        for theme in [Theme::light(), Theme::dark()] {
            for (data, ice) in [
                (MapData::ice_fraction(&model, Species::CO), true),
                (MapData::gas_c_to_o(&model), false),
            ] {
                for (size, ppp) in [((900, 500), 1.6), ((333, 251), 1.0)] {
                    let expected = {
                        let ops = RefCell::new(Vec::new());
                        let area = Recorder::new(size, &ops, &Fixed).into_drawing_area();
                        let layout = map_layout(&area, &data, &theme, ppp).unwrap();
                        let main = layout.main().clone();
                        let image = rasterise_map_over(
                            &data,
                            &theme,
                            theme.background,
                            main.width,
                            main.height,
                        )
                        .unwrap();
                        let cells = Op::Image {
                            at: (main.left, main.top),
                            width: image.width,
                            height: image.height,
                            rgba: image.rgba,
                            opaque: true,
                        };
                        let drawn = if ice {
                            draw_ice_map(&area, &data, &theme, ppp, CellDrawing::Omit)
                        } else {
                            draw_c_to_o_map(&area, &data, &theme, ppp, CellDrawing::Omit)
                        }
                        .unwrap();
                        assert_eq!(drawn, layout);
                        drop(area);
                        let mut ops = ops.into_inner();
                        // The drawing opens with the background around the cells: four
                        // rectangles that with the cells' rectangle tile the canvas (no
                        // pixel painted twice), so the cells may come after them.
                        let mut pieces = vec![(
                            (main.left, main.top),
                            (main.left + main.width as i32, main.top + main.height as i32),
                        )];
                        for op in &ops[..4] {
                            let Op::FillRect { corners, .. } = op else {
                                panic!("not the background around the cells: {op:?}");
                            };
                            pieces.push((corners[0], corners[1]));
                        }
                        let area: i64 = pieces
                            .iter()
                            .map(|(a, b)| i64::from(b.0 - a.0) * i64::from(b.1 - a.1))
                            .sum();
                        assert_eq!(area, i64::from(size.0) * i64::from(size.1));
                        for (i, (a, b)) in pieces.iter().enumerate() {
                            assert!(
                                a.0 >= 0
                                    && a.1 >= 0
                                    && b.0 <= size.0 as i32
                                    && b.1 <= size.1 as i32
                            );
                            for (c, d) in &pieces[i + 1..] {
                                assert!(b.0 <= c.0 || a.0 >= d.0 || b.1 <= c.1 || a.1 >= d.1);
                            }
                        }
                        ops.insert(4, cells);
                        (ops, layout)
                    };
                    let view = if ice {
                        ViewData::IceMap(data.clone())
                    } else {
                        ViewData::CToOMap(data.clone())
                    };
                    let mut raster_ms = -1.0;
                    let got =
                        record_view(size, &view, &theme, ppp, &Fixed, &|| 0.0, &mut raster_ms)
                            .unwrap();
                    assert_eq!(raster_ms, 0.0);
                    // The cells are opaque by construction, and marked so: their pixels agree.
                    let Op::Image { rgba, opaque, .. } = &got.0[4] else {
                        panic!("the cells do not follow the background: {:?}", got.0[4]);
                    };
                    assert!(*opaque && crate::commands::opaque(rgba));
                    // Recorded into the memory of the list recorded before (another
                    // map, size or theme): the same list.
                    if let Some(before) = previous.take() {
                        let again = record_view_reusing(
                            size,
                            &view,
                            &theme,
                            ppp,
                            &Fixed,
                            &|| 0.0,
                            &mut raster_ms,
                            Buffers::of(before),
                            &mut Segments::default(),
                        )
                        .unwrap();
                        assert_eq!(again, got);
                        reused += 1;
                    }
                    previous = Some(got.0.clone());
                    assert_eq!(got, expected, "{} at {size:?}", data.value_label);
                }
            }
        }
        assert_eq!(reused, 7);
    }

    /// A recording that puts the static parts (grids, axes, colour bar,
    /// legend) again from the view's kept segments is the list a fresh
    /// recording gives, after edits that keep what those parts are drawn from
    /// (structure and ice edits: the parts are put again) and after ones that
    /// change it (another size, pixel ratio or theme, another species' map,
    /// a planet mark that adds a legend entry: the parts are drawn again).
    #[test]
    fn a_recording_reusing_kept_segments_equals_a_fresh_one() {
        use nivalis_charts::MapData;
        use nivalis_physics::Species;
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 90;
        p.grid.vertical_cells = 30;
        let model = Model::run(&p).unwrap();
        let mut brighter = p.clone();
        brighter.star.luminosity_lsun = 1.5;
        let structure = Model::run(&brighter).unwrap();
        let mut ices = p.ices.clone();
        ices.sticking = 0.3;
        let ice = model.with_ices(&ices);
        type Build = fn(&Model) -> ViewData;
        let views: [(&str, Build); 6] = [
            ("c_to_o", |m| ViewData::Profile(ProfileData::from_model(m))),
            ("temperature", |m| {
                ViewData::Temperature(TemperatureData::from_model(m))
            }),
            ("abundances", |m| {
                ViewData::Abundances(AbundanceData::from_model(m))
            }),
            ("ice_map", |m| {
                ViewData::IceMap(MapData::ice_fraction(m, Species::H2O))
            }),
            ("ice_map CO", |m| {
                ViewData::IceMap(MapData::ice_fraction(m, Species::CO))
            }),
            ("c_to_o_map", |m| ViewData::CToOMap(MapData::gas_c_to_o(m))),
        ];
        let (light, dark) = (Theme::light(), Theme::dark());
        // (model, theme, size, pixels per point, whether the static parts stay).
        type Step<'m> = (&'m Model, &'m Theme, (u32, u32), f64, bool);
        let steps: [Step; 9] = [
            (&model, &light, (900, 500), 1.6, false),
            (&structure, &light, (900, 500), 1.6, true),
            (&ice, &light, (900, 500), 1.6, true),
            (&model, &light, (900, 500), 1.6, true),
            (&model, &light, (700, 420), 1.6, false),
            (&structure, &light, (700, 420), 1.6, true),
            (&structure, &light, (700, 420), 3.2, false),
            (&structure, &dark, (700, 420), 3.2, false),
            (&ice, &dark, (700, 420), 3.2, true),
        ];
        for (name, build) in views {
            let mut kept = Segments::default();
            for (i, &(m, theme, size, ppp, stays)) in steps.iter().enumerate() {
                let data = build(m);
                let mut raster_ms = 0.0;
                let fresh =
                    record_view(size, &data, theme, ppp, &Fixed, &|| 0.0, &mut raster_ms).unwrap();
                let reused = record_view_reusing(
                    size,
                    &data,
                    theme,
                    ppp,
                    &Fixed,
                    &|| 0.0,
                    &mut raster_ms,
                    Buffers::default(),
                    &mut kept,
                )
                .unwrap();
                assert!(reused == fresh, "{name}, step {i}: the lists differ");
                // Every view has a front (axes, legend ...); the profiles a grid segment too.
                let segments = if name.contains("map") { 1 } else { 2 };
                assert_eq!(kept.reused + kept.drawn, segments, "{name}, step {i}");
                if stays {
                    // The front is put again (a profile's grid too unless its axes moved).
                    assert!(kept.reused >= 1, "{name}, step {i}: nothing reused");
                } else {
                    assert_eq!(kept.reused, 0, "{name}, step {i}: reused a changed part");
                }
            }
            // Another view recorded with this view's segments: nothing is put again
            // (each key names its segment), and the list is a fresh recording's.
            let other = if name == "c_to_o" {
                views[3].1
            } else {
                views[0].1
            };
            let data = other(&model);
            let mut raster_ms = 0.0;
            let fresh = record_view(
                (700, 420),
                &data,
                &dark,
                3.2,
                &Fixed,
                &|| 0.0,
                &mut raster_ms,
            )
            .unwrap();
            let got = record_view_reusing(
                (700, 420),
                &data,
                &dark,
                3.2,
                &Fixed,
                &|| 0.0,
                &mut raster_ms,
                Buffers::default(),
                &mut kept,
            )
            .unwrap();
            assert!(got == fresh && kept.reused == 0, "{name}: another view");
        }
        // The C/O profile with the planet panel's marks: the legend gains no entry
        // for the planet, but the planet line lies under the legend's corner search;
        // and a star C/O of None drops the "star" entry: the front is drawn again.
        let base = ProfileData::from_model(&model);
        let mut kept = Segments::default();
        let mut no_star = base.clone();
        no_star.star_c_to_o = None;
        let mut planet = base.clone();
        planet.planet_radius_au = Some(3.0);
        planet.allowed_formation_radii_au = vec![(1.0, 5.0)];
        for (i, (data, stays)) in [
            (&base, false),
            (&planet, true),
            (&no_star, false),
            (&base, false),
        ]
        .into_iter()
        .enumerate()
        {
            let data = ViewData::Profile(data.clone());
            let mut raster_ms = 0.0;
            let fresh = record_view(
                (900, 500),
                &data,
                &light,
                1.6,
                &Fixed,
                &|| 0.0,
                &mut raster_ms,
            )
            .unwrap();
            let got = record_view_reusing(
                (900, 500),
                &data,
                &light,
                1.6,
                &Fixed,
                &|| 0.0,
                &mut raster_ms,
                Buffers::default(),
                &mut kept,
            )
            .unwrap();
            assert!(got == fresh, "planet marks, step {i}");
            // The grid is always the same here.
            assert!(kept.reused >= usize::from(i > 0), "planet marks, step {i}");
            assert_eq!(kept.reused == 2, stays, "planet marks, step {i}");
        }
    }

    #[test]
    fn the_recorder_merges_consecutive_strokes_of_one_pen() {
        use plotters::style::{Color, RED};
        let ops = RefCell::new(Vec::new());
        let mut r = Recorder::new((100, 100), &ops, &Fixed);
        let (thin, thick) = (Color::stroke_width(&RED, 1), Color::stroke_width(&RED, 2));
        r.draw_line((0, 0), (10, 0), &thin).unwrap();
        r.draw_path(vec![(1, 2), (3, 4), (5, 6)], &thin).unwrap();
        r.draw_path(Vec::new(), &thin).unwrap();
        r.draw_path(Vec::new(), &thick).unwrap();
        r.draw_path(vec![(1, 1), (2, 2)], &thick).unwrap();
        r.draw_rect((0, 0), (5, 5), &thin, false).unwrap();
        r.draw_line((3, 3), (4, 4), &thin).unwrap();
        drop(r);
        let red = Colour {
            rgb: (255, 0, 0),
            alpha: 1.0,
        };
        assert_eq!(
            ops.into_inner(),
            [
                Op::Stroke {
                    colour: red,
                    width: 1,
                    points: vec![
                        (0.0, -0.5),
                        (10.0, -0.5),
                        (1.0, 2.0),
                        (3.0, 4.0),
                        (5.0, 6.0)
                    ],
                    lengths: vec![2, 3],
                },
                Op::Stroke {
                    colour: red,
                    width: 2,
                    points: vec![(1.0, 1.0), (2.0, 2.0)],
                    lengths: vec![2],
                },
                Op::StrokeRect {
                    colour: red,
                    width: 1,
                    corners: [(0, 0), (5, 5)],
                },
                Op::Stroke {
                    colour: red,
                    width: 1,
                    points: vec![(3.0, 3.0), (4.0, 4.0)],
                    lengths: vec![2],
                },
            ]
        );
    }

    #[test]
    fn dashed_series_collapse_into_few_runs() {
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 60;
        p.grid.vertical_cells = 20;
        let model = Model::run(&p).unwrap();
        let data = AbundanceData::from_model(&model);
        let ops = record(|area| {
            draw_abundance_profiles(area, &data, &Theme::light(), 1.6).unwrap();
        });
        // Polylines (a dash each in a dashed series).
        let strokes: usize = ops
            .iter()
            .map(|o| match o {
                Op::Stroke { lengths, .. } => lengths.len(),
                _ => 0,
            })
            .sum();
        let mut runs = 0;
        let mut i = 0;
        while i < ops.len() {
            if ops[i].stroke_pen().is_some() {
                runs += 1;
            }
            i += run_length(&ops, i);
        }
        assert!(
            runs * 3 < strokes,
            "{runs} stroke calls for {strokes} strokes"
        );
        // Merged when recorded: every run is one operation.
        assert_eq!(
            runs,
            ops.iter().filter(|o| o.stroke_pen().is_some()).count()
        );
    }

    #[test]
    fn the_chi_square_map_s_cells_become_one_image() {
        use nivalis_charts::{draw_chi2_map, Chi2Data};
        use nivalis_disk_files::DiskFile;
        use serde_json::json;
        let file = DiskFile::defaults();
        let model = Model::run(&file.parameters).unwrap();
        let fitted = crate::planet::fit_planet(
            &model,
            &file,
            &json!({"c_to_o": "0.5", "c_to_o_sigma": "0.1", "planet_mass_mjup": "1"}),
        )
        .unwrap();
        let data = Chi2Data::from_map(&fitted.map);
        let ops = record(|area| {
            draw_chi2_map(area, &data, &Theme::light(), 1.6).unwrap();
        });
        let rects = ops
            .iter()
            .take_while(|op| matches!(op, Op::FillRect { .. }))
            .count();
        assert!(rects > 100, "{rects} leading rectangles");
        let image = leading_rects_as_image(ops.clone(), (900, 500));
        // Everything after the cells is kept as it was.
        assert_eq!(image[1..], ops[rects..]);
        let Op::Image {
            at,
            width,
            height,
            rgba,
            ..
        } = &image[0]
        else {
            panic!("not an image: {:?}", image[0]);
        };
        assert_eq!((*at, *width, *height), ((0, 0), 900, 500));
        // Each opaque rectangle's pixels show its colour unless a later rectangle covers them:
        // the last rectangle's upper left pixel is its own colour.
        let Op::FillRect { colour, corners } = &ops[rects - 1] else {
            unreachable!()
        };
        let [(x, y), _] = *corners;
        let p = (y.max(0) as usize * 900 + x.max(0) as usize) * 4;
        if colour.alpha >= 1.0 {
            let (r, g, b) = colour.rgb;
            assert_eq!(rgba[p..p + 4], [r, g, b, 255]);
        }
        // Every pixel is opaque (the background covers the canvas).
        assert!(rgba.chunks_exact(4).all(|px| px[3] == 255));
        // A list that does not open with a full-canvas background is left alone.
        let profile = record(|area| {
            draw_c_to_o_profile(area, &ProfileData::from_model(&model), &Theme::light(), 1.6)
                .unwrap();
        });
        let shifted: Vec<Op> = profile.iter().skip(1).cloned().collect();
        assert_eq!(leading_rects_as_image(shifted.clone(), (900, 500)), shifted);
    }

    #[test]
    fn runs_join_strokes_of_one_pen_only() {
        let red = Colour {
            rgb: (255, 0, 0),
            alpha: 1.0,
        };
        let stroke = |width, points: Vec<(f64, f64)>| Op::Stroke {
            colour: red,
            width,
            lengths: vec![points.len() as u32],
            points,
        };
        let ops = vec![
            stroke(1, vec![(0.0, 0.5), (10.0, 0.5)]),
            stroke(1, vec![(1.0, 2.0), (3.0, 4.0), (5.0, 6.0)]),
            stroke(2, vec![(1.0, 2.0), (3.0, 4.0)]),
            Op::FillRect {
                colour: red,
                corners: [(0, 0), (1, 1)],
            },
            stroke(2, vec![(1.0, 2.0), (3.0, 4.0)]),
        ];
        assert_eq!(run_length(&ops, 0), 2);
        assert_eq!(run_length(&ops, 2), 1);
        assert_eq!(run_length(&ops, 3), 1);
        assert_eq!(run_length(&ops, 4), 1);
        assert_eq!(run_length(&ops, 5), 0);
        assert_eq!(red.css(), "rgba(255,0,0,1)");
        assert_eq!(fine_line((5, 0), (5, 10)), [(4.5, 0.0), (4.5, 10.0)]);
    }
}
