//! A display list ([`Op`]s, `crate::display`) as a compact command buffer for
//! the page's JavaScript replay (`web/replay.js`): the canvas calls of a
//! redraw are made by ONE JavaScript loop instead of one wasm-bindgen call
//! each (about ten thousand per full redraw, which cost more than the drawing
//! itself). Plain Rust, so it is tested natively.
//!
//! The buffer has four parts, handed to JavaScript as views of WebAssembly
//! memory (no copy) and reused across draws:
//! - `words` (`Uint32Array`): opcodes ([`op`]) with their integer operands
//!   (string ids, counts, an image's address, length and size);
//! - `numbers` (`Float64Array`): coordinates, widths and angles, in the order
//!   the opcodes read them (canvas coordinates here are integers or halves,
//!   exact in f64);
//! - `new_strings` with `new_lengths`: the CSS colours, fonts and texts not
//!   sent before, concatenated, each with its length in UTF-16 code units; the
//!   JavaScript side appends them to its string table, whose ids the opcodes
//!   name. A chart draws the same labels, fonts and colours (a colour bar's 128
//!   bands) on every redraw, so a redraw usually sends no string at all and
//!   the page decodes no UTF-8 for them. The table is emptied (`reset`) when
//!   it holds more than [`Strings::LIMIT`] entries (texts that change with the
//!   data, e.g. a marked value).
//!
//! The commands are exactly the canvas calls, in order and with the
//! arguments, of the Rust replay they replace: each run of strokes of one pen
//! (`display::run_length`) is one path stroked once, each run of markers or
//! polygons one path, and a style is set only when it changes.

use std::collections::HashMap;

use crate::display::{run_length, Colour, Op};

/// The opcodes of `words`; `web/replay.js` reads them with the same numbers.
/// After each: its words, then what it reads from `numbers`.
pub mod op {
    /// `strokeStyle = string[id]`. Words: id.
    pub const STROKE_STYLE: u32 = 1;
    /// `lineWidth = w`. Numbers: w.
    pub const LINE_WIDTH: u32 = 2;
    /// `fillStyle = string[id]`. Words: id.
    pub const FILL_STYLE: u32 = 3;
    /// `font = string[id]`. Words: id.
    pub const FONT: u32 = 4;
    /// `textAlign` = start, end, center (0, 1, 2). Words: k.
    pub const TEXT_ALIGN: u32 = 5;
    /// `textBaseline` = top, middle, bottom (0, 1, 2). Words: k.
    pub const TEXT_BASELINE: u32 = 6;
    /// `beginPath`, per polyline `moveTo` + `lineTo`s, `stroke`. Words: n, then
    /// n point counts. Numbers: x, y per point.
    pub const STROKE_PATHS: u32 = 7;
    /// `strokeRect(x, y, w, h)`. Numbers: x, y, w, h.
    pub const STROKE_RECT: u32 = 8;
    /// `fillRect(x, y, w, h)`. Numbers: x, y, w, h.
    pub const FILL_RECT: u32 = 9;
    /// `beginPath`, per polygon `moveTo` + `lineTo`s + `closePath`, `fill`.
    /// Words: n, then n point counts. Numbers: x, y per point.
    pub const FILL_POLYGONS: u32 = 10;
    /// `beginPath`, per circle `moveTo(x + r, y)` + `arc(x, y, r, 0, 2 pi)`.
    /// Words: n. Numbers: x, y, r per circle.
    pub const CIRCLES: u32 = 11;
    /// `fill()` (of the circles' path).
    pub const FILL: u32 = 12;
    /// `stroke()` (of the circles' path).
    pub const STROKE: u32 = 13;
    /// `fillText(string[id], x, y)`. Words: id. Numbers: x, y.
    pub const TEXT: u32 = 14;
    /// `fillText(string[id], 0, 0)` rotated by `a` about (x, y): as `save`,
    /// `translate(x, y)`, `rotate(a)`, `fillText`, `restore` (web/replay.js
    /// sets a quarter turn as one exact `setTransform`, the same pixels).
    /// Words: id. Numbers: x, y, a [rad].
    pub const TEXT_ROTATED: u32 = 15;
    /// RGBA pixels `width x height` at WebAssembly memory address `ptr`
    /// (`len` bytes), put at (x, y); `opaque` (1 or 0): every pixel's alpha
    /// is 255, so the image may be put with `putImageData` on the layer under
    /// the chart canvas (in a list encoded in parts, only the image the plan
    /// puts there, `crate::layers::Plan::put`, is marked).
    /// Words: ptr, len, width, height, opaque. Numbers: x, y.
    pub const IMAGE: u32 = 16;
}

/// Whether every pixel of an RGBA buffer has alpha 255: the check for an image
/// not known to be opaque by construction (`Op::Image`'s `opaque`).
pub(crate) fn opaque(rgba: &[u8]) -> bool {
    // 16 bytes (4 pixels) at a time, so the check vectorises. (Four `u64` per 32
    // bytes was 5x faster natively but, in the page's module built for size, made a
    // map's record 0.5 ms slower: measured with bench.mjs, not used.)
    let mut chunks = rgba.chunks_exact(16);
    let whole = chunks
        .by_ref()
        .fold(255u8, |acc, c| acc & c[3] & c[7] & c[11] & c[15]);
    whole == 255
        && chunks.remainder().len().is_multiple_of(4)
        && chunks
            .remainder()
            .iter()
            .skip(3)
            .step_by(4)
            .all(|a| *a == 255)
}

/// The ids of the strings the JavaScript side holds, by content.
#[derive(Debug)]
pub struct Strings {
    texts: HashMap<String, u32>,
    colours: HashMap<(u8, u8, u8, u64), u32>,
    next: u32,
    /// The JavaScript table must be emptied before the next strings are added.
    reset: bool,
}

impl Default for Strings {
    fn default() -> Self {
        // A new instance (also after the page rebuilt the core) starts the
        // JavaScript table afresh.
        Strings {
            texts: HashMap::new(),
            colours: HashMap::new(),
            next: 0,
            reset: true,
        }
    }
}

impl Strings {
    /// Entries kept before the table is emptied.
    pub const LIMIT: usize = 4096;
}

/// A display list encoded for `web/replay.js` (see the module's text).
#[derive(Debug, Default)]
pub struct Commands {
    /// Opcodes and integer operands.
    pub words: Vec<u32>,
    /// Coordinates, widths, angles.
    pub numbers: Vec<f64>,
    /// The strings new to the JavaScript table, concatenated.
    pub new_strings: String,
    /// Their lengths in UTF-16 code units.
    pub new_lengths: Vec<u32>,
    /// The id of the first new string (the table's length after `reset`).
    pub first_new: u32,
    /// Whether the JavaScript table is to be emptied before the new strings are added.
    pub reset: bool,
    /// Where each part of [`Commands::encode_parts`] ends: its end in `words`
    /// and in `numbers` (one part, the whole list, after [`Commands::encode`]).
    pub ends: Vec<(u32, u32)>,
    strings: Strings,
}

/// The styles last set on the context during one replay.
#[derive(Default)]
struct Styles {
    stroke: Option<Colour>,
    fill: Option<Colour>,
    width: Option<u32>,
    font: Option<u32>,
    align: Option<u32>,
    baseline: Option<u32>,
}

impl Commands {
    /// Encodes `ops`, replacing what the buffers held (their memory is kept).
    /// `image_address` gives the WebAssembly address of an image's bytes (the
    /// page passes the slice's pointer; native tests anything).
    pub fn encode(&mut self, ops: &[Op], image_address: &dyn Fn(&[u8]) -> u32) {
        self.encode_parts(
            ops,
            std::iter::once(0..ops.len()),
            image_address,
            &|rgba, known| known || opaque(rgba),
        );
    }

    /// Encodes consecutive parts of `ops` (ranges in order, each starting
    /// where the one before ends), each as if it were a list of its own (its
    /// styles set afresh: it may be drawn on another canvas), recording where
    /// each ends in [`Commands::ends`]. One part of the whole list is
    /// [`Commands::encode`]. `opaque` gives an image's `opaque` word ([`op::IMAGE`])
    /// from its pixels and whether it is opaque by construction (`Op::Image`'s
    /// `opaque`): [`Commands::encode`] checks every pixel of an image not known to
    /// be opaque; a caller that knows which image it means to put on the layer
    /// under the chart (`crate::layers::Plan::put`) marks that one alone, so no
    /// image is scanned twice.
    pub fn encode_parts(
        &mut self,
        ops: &[Op],
        parts: impl IntoIterator<Item = std::ops::Range<usize>>,
        image_address: &dyn Fn(&[u8]) -> u32,
        opaque: &dyn Fn(&[u8], bool) -> bool,
    ) {
        self.ends.clear();
        self.words.clear();
        self.numbers.clear();
        self.new_strings.clear();
        self.new_lengths.clear();
        let s = &mut self.strings;
        if s.texts.len() + s.colours.len() > Strings::LIMIT {
            s.texts.clear();
            s.colours.clear();
            s.next = 0;
            s.reset = true;
        }
        self.reset = s.reset;
        s.reset = false;
        self.first_new = s.next;
        for part in parts {
            let ops = &ops[part];
            let mut styles = Styles::default();
            let mut i = 0;
            while i < ops.len() {
                let n = run_length(ops, i).max(1);
                let run = &ops[i..i + n];
                self.encode_run(run, &mut styles, image_address, opaque);
                i += n;
            }
            self.ends
                .push((self.words.len() as u32, self.numbers.len() as u32));
        }
    }

    fn string(&mut self, text: &str) -> u32 {
        if let Some(id) = self.strings.texts.get(text) {
            return *id;
        }
        let id = self.new_string(text);
        self.strings.texts.insert(text.to_string(), id);
        id
    }

    fn colour(&mut self, colour: Colour) -> u32 {
        let (r, g, b) = colour.rgb;
        let key = (r, g, b, colour.alpha.to_bits());
        if let Some(id) = self.strings.colours.get(&key) {
            return *id;
        }
        let id = self.new_string(&colour.css());
        self.strings.colours.insert(key, id);
        id
    }

    fn new_string(&mut self, text: &str) -> u32 {
        let id = self.strings.next;
        self.strings.next += 1;
        self.new_strings.push_str(text);
        self.new_lengths.push(text.encode_utf16().count() as u32);
        id
    }

    fn stroke_style(&mut self, styles: &mut Styles, colour: Colour, width: u32) {
        if styles.stroke != Some(colour) {
            let id = self.colour(colour);
            self.words.extend([op::STROKE_STYLE, id]);
            styles.stroke = Some(colour);
        }
        if styles.width != Some(width) {
            self.words.push(op::LINE_WIDTH);
            self.numbers.push(f64::from(width));
            styles.width = Some(width);
        }
    }

    fn fill_style(&mut self, styles: &mut Styles, colour: Colour) {
        if styles.fill != Some(colour) {
            let id = self.colour(colour);
            self.words.extend([op::FILL_STYLE, id]);
            styles.fill = Some(colour);
        }
    }

    fn rect(&mut self, code: u32, [a, b]: [(i32, i32); 2]) {
        self.words.push(code);
        self.numbers.extend([
            f64::from(a.0),
            f64::from(a.1),
            f64::from(b.0 - a.0),
            f64::from(b.1 - a.1),
        ]);
    }

    fn encode_run(
        &mut self,
        run: &[Op],
        styles: &mut Styles,
        image_address: &dyn Fn(&[u8]) -> u32,
        opaque: &dyn Fn(&[u8], bool) -> bool,
    ) {
        match &run[0] {
            Op::Stroke { colour, width, .. } => {
                self.stroke_style(styles, *colour, *width);
                // A stroke holds the polylines recorded with one pen; the
                // recorder merges consecutive ones, so a run is usually one op.
                let paths: usize = run
                    .iter()
                    .map(|o| match o {
                        Op::Stroke { lengths, .. } => lengths.len(),
                        _ => 0,
                    })
                    .sum();
                self.words.extend([op::STROKE_PATHS, paths as u32]);
                for o in run {
                    if let Op::Stroke {
                        points, lengths, ..
                    } = o
                    {
                        self.words.extend_from_slice(lengths);
                        self.numbers.reserve(2 * points.len());
                        for p in points {
                            self.numbers.push(p.0);
                            self.numbers.push(p.1);
                        }
                    }
                }
            }
            Op::StrokeRect {
                colour,
                width,
                corners,
            } => {
                self.stroke_style(styles, *colour, *width);
                self.rect(op::STROKE_RECT, *corners);
            }
            Op::FillRect { colour, corners } => {
                self.fill_style(styles, *colour);
                self.rect(op::FILL_RECT, *corners);
            }
            Op::FillPolygon { colour, .. } => {
                self.fill_style(styles, *colour);
                self.words.extend([op::FILL_POLYGONS, run.len() as u32]);
                for o in run {
                    if let Op::FillPolygon { points, .. } = o {
                        self.words.push(points.len() as u32);
                        self.numbers
                            .extend(points.iter().flat_map(|p| [f64::from(p.0), f64::from(p.1)]));
                    }
                }
            }
            Op::Circle {
                colour,
                width,
                fill,
                ..
            } => {
                self.words.extend([op::CIRCLES, run.len() as u32]);
                for o in run {
                    if let Op::Circle { centre, radius, .. } = o {
                        self.numbers.extend([
                            f64::from(centre.0),
                            f64::from(centre.1),
                            f64::from(*radius),
                        ]);
                    }
                }
                if *fill {
                    self.fill_style(styles, *colour);
                    self.words.push(op::FILL);
                } else {
                    self.stroke_style(styles, *colour, *width);
                    self.words.push(op::STROKE);
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
                self.fill_style(styles, *colour);
                let font = self.string(font);
                if styles.font != Some(font) {
                    self.words.extend([op::FONT, font]);
                    styles.font = Some(font);
                }
                let align = match *align {
                    "end" => 1,
                    "center" => 2,
                    _ => 0,
                };
                if styles.align != Some(align) {
                    self.words.extend([op::TEXT_ALIGN, align]);
                    styles.align = Some(align);
                }
                let baseline = match *baseline {
                    "middle" => 1,
                    "bottom" => 2,
                    _ => 0,
                };
                if styles.baseline != Some(baseline) {
                    self.words.extend([op::TEXT_BASELINE, baseline]);
                    styles.baseline = Some(baseline);
                }
                let id = self.string(text);
                let (x, y) = (f64::from(at.0), f64::from(at.1));
                if *rotation == 0 {
                    self.words.extend([op::TEXT, id]);
                    self.numbers.extend([x, y]);
                } else {
                    // As plotters-canvas: rotate about the anchor.
                    self.words.extend([op::TEXT_ROTATED, id]);
                    self.numbers
                        .extend([x, y, f64::from(*rotation).to_radians()]);
                }
            }
            Op::Image {
                at,
                width,
                height,
                rgba,
                opaque: known,
            } => {
                self.words.extend([
                    op::IMAGE,
                    image_address(rgba),
                    rgba.len() as u32,
                    *width,
                    *height,
                    u32::from(opaque(rgba, *known)),
                ]);
                self.numbers.extend([f64::from(at.0), f64::from(at.1)]);
            }
        }
    }

    /// The strings sent so far by id (for tests: what the JavaScript table holds
    /// after every encoded list was replayed).
    #[cfg(test)]
    fn table(&self) -> Vec<String> {
        let mut out = vec![String::new(); self.strings.next as usize];
        for (text, id) in &self.strings.texts {
            out[*id as usize] = text.clone();
        }
        for ((r, g, b, a), id) in &self.strings.colours {
            out[*id as usize] = Colour {
                rgb: (*r, *g, *b),
                alpha: f64::from_bits(*a),
            }
            .css();
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// See [`the_five_views_encode_to_the_reference_calls`]. The two maps'
    /// entries changed when their cells were moved after the four rectangles
    /// of background around them (`display::after_disjoint_rects`: the same
    /// pixels, and the rectangles stay on the layer under the chart after an
    /// edit); [`REFERENCE_CELLS_FIRST`] are the entries before.
    const REFERENCE: [(usize, u64); 5] = [
        (97, 6090975608769960693),
        (68, 14747292027336714795),
        (354, 12923940074268143422),
        (348, 9523436174745263388),
        (174, 10319424167815263078),
    ];

    /// [`REFERENCE`] of main 8cda4b6, when a map's cells opened its list.
    const REFERENCE_CELLS_FIRST: [(usize, u64); 5] = [
        (97, 6090975608769960693),
        (68, 14747292027336714795),
        (354, 14241411238712506958),
        (348, 7988665566778458400),
        (174, 10319424167815263078),
    ];

    fn red(alpha: f64) -> Colour {
        Colour {
            rgb: (255, 0, 0),
            alpha,
        }
    }

    fn text(s: &str, rotation: u16) -> Op {
        Op::Text {
            text: s.to_string(),
            font: "normal 12px sans-serif".to_string(),
            colour: red(1.0),
            align: "center",
            baseline: "top",
            rotation,
            at: (10, 20),
        }
    }

    /// A small decoder of the buffer (the JavaScript replay's reading, as call
    /// names with their arguments) so the encoding is checked call by call.
    fn decode(c: &Commands, table: &[String]) -> Vec<String> {
        let (w, n) = (&c.words, &c.numbers);
        let (mut i, mut j) = (0, 0);
        let mut out = Vec::new();
        let mut num = |k: usize| {
            let v = n[j..j + k].to_vec();
            j += k;
            v
        };
        while i < w.len() {
            let code = w[i];
            i += 1;
            match code {
                op::STROKE_STYLE | op::FILL_STYLE | op::FONT => {
                    out.push(format!("{code} {}", table[w[i] as usize]));
                    i += 1;
                }
                op::TEXT_ALIGN | op::TEXT_BASELINE => {
                    out.push(format!("{code} {}", w[i]));
                    i += 1;
                }
                op::LINE_WIDTH => out.push(format!("width {:?}", num(1))),
                op::STROKE_PATHS | op::FILL_POLYGONS => {
                    let count = w[i] as usize;
                    i += 1;
                    let mut paths = Vec::new();
                    for _ in 0..count {
                        paths.push(num(2 * w[i] as usize));
                        i += 1;
                    }
                    out.push(format!("{code} {paths:?}"));
                }
                op::STROKE_RECT | op::FILL_RECT => out.push(format!("{code} {:?}", num(4))),
                op::CIRCLES => {
                    let count = w[i] as usize;
                    i += 1;
                    out.push(format!("circles {:?}", num(3 * count)));
                }
                op::FILL => out.push("fill".into()),
                op::STROKE => out.push("stroke".into()),
                op::TEXT => {
                    out.push(format!("text {} {:?}", table[w[i] as usize], num(2)));
                    i += 1;
                }
                op::TEXT_ROTATED => {
                    out.push(format!("rotated {} {:?}", table[w[i] as usize], num(3)));
                    i += 1;
                }
                op::IMAGE => {
                    out.push(format!("image {:?} {:?}", &w[i..i + 5], num(2)));
                    i += 5;
                }
                _ => panic!("unknown opcode {code}"),
            }
        }
        assert_eq!(j, n.len(), "numbers left over");
        out
    }

    #[test]
    fn runs_become_one_path_and_styles_are_set_only_when_they_change() {
        let ops = vec![
            Op::Stroke {
                colour: red(1.0),
                width: 1,
                points: vec![(0.5, 0.5), (10.5, 0.5)],
                lengths: vec![2],
            },
            Op::Stroke {
                colour: red(1.0),
                width: 1,
                points: vec![(1.0, 2.0), (3.0, 4.0), (5.0, 6.0)],
                lengths: vec![3],
            },
            Op::Stroke {
                colour: red(1.0),
                width: 2,
                points: vec![(1.0, 2.0), (3.0, 4.0), (7.0, 8.0)],
                lengths: vec![2, 1],
            },
            Op::FillRect {
                colour: red(0.5),
                corners: [(1, 2), (4, 8)],
            },
            Op::Circle {
                colour: red(0.5),
                width: 1,
                fill: true,
                centre: (5, 6),
                radius: 3,
            },
            Op::Circle {
                colour: red(0.5),
                width: 1,
                fill: true,
                centre: (7, 8),
                radius: 3,
            },
            text("a", 0),
            text("b", 90),
            Op::Image {
                at: (3, 4),
                width: 1,
                height: 2,
                rgba: vec![0; 8],
                opaque: false,
            },
        ];
        let mut c = Commands::default();
        c.encode(&ops, &|_| 77);
        assert!(c.reset);
        assert_eq!(c.first_new, 0);
        let table = c.table();
        assert_eq!(
            decode(&c, &table),
            [
                "1 rgba(255,0,0,1)",
                "width [1.0]",
                "7 [[0.5, 0.5, 10.5, 0.5], [1.0, 2.0, 3.0, 4.0, 5.0, 6.0]]",
                "width [2.0]",
                "7 [[1.0, 2.0, 3.0, 4.0], [7.0, 8.0]]",
                "3 rgba(255,0,0,0.5)",
                "9 [1.0, 2.0, 3.0, 6.0]",
                "circles [5.0, 6.0, 3.0, 7.0, 8.0, 3.0]",
                "fill",
                "3 rgba(255,0,0,1)",
                "4 normal 12px sans-serif",
                "5 2",
                "6 0",
                "text a [10.0, 20.0]",
                "rotated b [10.0, 20.0, 1.5707963267948966]",
                "image [77, 8, 1, 2, 0] [3.0, 4.0]",
            ]
        );
        // The strings went out once each, with their UTF-16 lengths.
        assert_eq!(c.new_lengths.len(), 5);
        assert_eq!(
            c.new_strings,
            "rgba(255,0,0,1)rgba(255,0,0,0.5)normal 12px sans-serifab"
        );
        // The same list again sends no string and the same commands.
        let (words, numbers) = (c.words.clone(), c.numbers.clone());
        c.encode(&ops, &|_| 77);
        assert!(!c.reset);
        assert_eq!(c.first_new, 5);
        assert!(c.new_strings.is_empty() && c.new_lengths.is_empty());
        assert_eq!((c.words.clone(), c.numbers.clone()), (words, numbers));
        // A new text is one new string; its length counts UTF-16 units.
        c.encode(&[text("χ² ≥ 𝑥", 0)], &|_| 0);
        assert_eq!(c.first_new, 5);
        assert_eq!(c.new_lengths, ["χ² ≥ 𝑥".encode_utf16().count() as u32]);
        assert_eq!(c.new_lengths, [7]);
    }

    /// The display lists of the five views of the default disk (60 x 20
    /// cells), recorded at 640 x 360 with a fixed text rule.
    fn five_views() -> Vec<Vec<Op>> {
        use nivalis_charts::readout::ViewData;
        use nivalis_charts::{AbundanceData, MapData, ProfileData, TemperatureData, Theme};
        use nivalis_physics::{Model, ModelParameters, Species};
        struct Fixed;
        impl crate::display::MeasureText for Fixed {
            fn measure(&self, _font: &str, size: f64, text: &str) -> (u32, u32) {
                (
                    (0.6 * size * text.chars().count() as f64) as u32,
                    (1.2 * size) as u32,
                )
            }
        }
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 60;
        p.grid.vertical_cells = 20;
        let model = Model::run(&p).unwrap();
        let views = [
            ViewData::Profile(ProfileData::from_model(&model)),
            ViewData::Temperature(TemperatureData::from_model(&model)),
            ViewData::IceMap(MapData::ice_fraction(&model, Species::CO)),
            ViewData::CToOMap(MapData::gas_c_to_o(&model)),
            ViewData::Abundances(AbundanceData::from_model(&model)),
        ];
        let mut raster_ms = 0.0;
        views
            .iter()
            .map(|view| {
                crate::display::record_view(
                    (640, 360),
                    view,
                    &Theme::light(),
                    1.6,
                    &Fixed,
                    &|| 0.0,
                    &mut raster_ms,
                )
                .unwrap()
                .0
            })
            .collect()
    }

    /// The decoded calls of [`five_views`], one text per call.
    fn five_views_calls() -> Vec<Vec<String>> {
        let mut c = Commands::default();
        five_views()
            .iter()
            .map(|ops| {
                c.encode(ops, &|rgba| rgba.len() as u32);
                decode(&c, &c.table())
            })
            .collect()
    }

    /// Each polyline of a stroke as a stroke of its own (what the recorder
    /// recorded before it merged the strokes of one pen).
    fn split_strokes(ops: &[Op]) -> Vec<Op> {
        let mut out = Vec::new();
        for o in ops {
            match o {
                Op::Stroke {
                    colour,
                    width,
                    points,
                    lengths,
                } => {
                    let mut at = 0;
                    for n in lengths {
                        let n = *n as usize;
                        out.push(Op::Stroke {
                            colour: *colour,
                            width: *width,
                            points: points[at..at + n].to_vec(),
                            lengths: vec![n as u32],
                        });
                        at += n;
                    }
                    assert_eq!(at, points.len(), "lengths do not add up");
                }
                other => out.push(other.clone()),
            }
        }
        out
    }

    /// A list whose strokes are merged and the same list with one stroke per
    /// polyline give the same buffer (the replay joins a run of one pen either
    /// way); the views hold dashed lines, so merging did happen.
    #[test]
    fn merged_strokes_encode_as_one_stroke_per_polyline_did() {
        let mut merged_any = false;
        for ops in five_views() {
            let split = split_strokes(&ops);
            merged_any |= split.len() > ops.len();
            let (mut a, mut b) = (Commands::default(), Commands::default());
            a.encode(&ops, &|rgba| rgba.len() as u32);
            b.encode(&split, &|rgba| rgba.len() as u32);
            assert_eq!(a.words, b.words);
            assert_eq!(a.numbers, b.numbers);
            assert_eq!(a.new_strings, b.new_strings);
            assert_eq!(a.new_lengths, b.new_lengths);
        }
        assert!(merged_any);
    }

    /// FNV-1a (64 bits) of the calls, each followed by a newline.
    fn fnv1a(calls: &[String]) -> u64 {
        let mut h: u64 = 0xcbf2_9ce4_8422_2325;
        for call in calls {
            for b in call.bytes().chain([b'\n']) {
                h ^= u64::from(b);
                h = h.wrapping_mul(0x0100_0000_01b3);
            }
        }
        h
    }

    /// The calls of the five views are those encoded from the display lists
    /// before strokes of one pen were merged at record time (reference: the
    /// number of calls and their FNV-1a hash, printed by this test, from the
    /// encoder of main 36de5ad, one `Op::Stroke` per line or dash). If a chart
    /// or the model changes on purpose, the reference changes with it.
    #[test]
    fn the_five_views_encode_to_the_reference_calls() {
        let calls = five_views_calls();
        let got: Vec<(usize, u64)> = calls.iter().map(|c| (c.len(), fnv1a(c))).collect();
        println!("{got:?}");
        let reference: [(usize, u64); 5] = REFERENCE;
        assert_eq!(got, reference);
        // With a map's image call moved back to the front, its calls are those of
        // the list with the cells first: the move changed the order and nothing else.
        let cells_first: Vec<(usize, u64)> = calls
            .into_iter()
            .map(|mut c| {
                if let Some(k) = c.iter().position(|call| call.starts_with("image ")) {
                    assert_eq!(k, 5, "fill style, four rectangles, then the cells: {c:?}");
                    c[..=k].rotate_right(1);
                }
                (c.len(), fnv1a(&c))
            })
            .collect();
        assert_eq!(cells_first, REFERENCE_CELLS_FIRST);
    }

    /// Each part of a list encoded in parts is the list of its own: its
    /// styles set afresh (it may be drawn on a canvas of another state), and
    /// the parts' ends recorded; the whole list in one part is `encode`.
    #[test]
    fn parts_set_their_styles_afresh_and_end_where_recorded() {
        let ops = vec![text("a", 0), text("b", 0), text("c", 0)];
        let mut c = Commands::default();
        c.encode(&ops, &|_| 0);
        let whole = c.words.clone();
        assert_eq!(c.ends, vec![(whole.len() as u32, c.numbers.len() as u32)]);
        let mut d = Commands::default();
        d.encode_parts(&ops, [0..1, 1..1, 1..3], &|_| 0, &|rgba, _| opaque(rgba));
        assert_eq!(d.ends.len(), 3);
        assert_eq!(
            d.ends[0], d.ends[1],
            "an empty part ends where the one before does"
        );
        // The first part is the one-part encoding of its operation.
        let (end, _) = d.ends[0];
        let mut e = Commands::default();
        e.encode(&ops[..1], &|_| 0);
        assert_eq!(&d.words[..end as usize], &e.words[..]);
        // The third part sets the fill, font, alignment and baseline again (the same
        // words as the first part's), which the one-part encoding sets once.
        let styles = &e.words[..e.words.len() - 2];
        assert_eq!(
            styles.iter().step_by(2).copied().collect::<Vec<_>>(),
            vec![op::FILL_STYLE, op::FONT, op::TEXT_ALIGN, op::TEXT_BASELINE]
        );
        let third = &d.words[end as usize..];
        assert_eq!(&third[..styles.len()], styles);
        assert_eq!(third.len(), styles.len() + 4);
        assert_eq!(whole.len(), styles.len() + 6);
        assert_eq!(d.ends[2], (d.words.len() as u32, d.numbers.len() as u32));
    }

    /// An image opaque by construction is marked so without its pixels being
    /// read (these pixels would say otherwise); one not known is checked.
    #[test]
    fn an_image_known_to_be_opaque_is_not_scanned() {
        let image = |opaque| Op::Image {
            at: (0, 0),
            width: 2,
            height: 1,
            rgba: vec![0; 8],
            opaque,
        };
        let mut c = Commands::default();
        for (known, word) in [(true, 1), (false, 0)] {
            c.encode(&[image(known)], &|_| 0);
            assert_eq!(c.words, [op::IMAGE, 0, 8, 2, 1, word]);
        }
    }

    #[test]
    fn images_are_opaque_only_when_every_alpha_is_255() {
        assert!(opaque(&[]));
        assert!(opaque(&[1, 2, 3, 255].repeat(9)));
        // Whole chunks of 8 pixels and a remainder: every pixel's place is checked.
        for n in [9, 17, 35] {
            assert!(opaque(&[1, 2, 3, 255].repeat(n)));
            for k in 0..n {
                let mut rgba = [255, 255, 255, 255].repeat(n);
                rgba[4 * k + 3] = 254;
                assert!(!opaque(&rgba), "pixel {k} of {n}");
            }
        }
        // Not whole pixels.
        assert!(!opaque(&[255; 35]));
        // A colour byte of 0 does not matter.
        assert!(opaque(&[0, 0, 0, 255].repeat(5)));
    }

    #[test]
    fn the_table_is_emptied_past_its_limit() {
        let mut c = Commands::default();
        let many: Vec<Op> = (0..=Strings::LIMIT)
            .map(|k| text(&k.to_string(), 0))
            .collect();
        c.encode(&many, &|_| 0);
        assert!(c.reset);
        c.encode(&[text("again", 0)], &|_| 0);
        assert!(c.reset, "not emptied past the limit");
        assert_eq!(c.first_new, 0);
        assert_eq!(c.table().len(), 3); // colour, font, text
    }
}
