//! Themes (light and dark) and line styles. Every size is in points (1/72 in);
//! the drawing functions multiply by `pixels_per_point` of the output, so one
//! theme serves the canvas, SVG and PNG alike.

use crate::colour::{ColourMap, Rgba, OKABE_ITO};

/// Colours, fonts and sizes of every figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Theme {
    /// Figure background.
    pub background: Rgba,
    /// Axes, tick labels, axis labels and the first data series.
    pub foreground: Rgba,
    /// Grid lines (light, behind the data).
    pub grid: Rgba,
    /// Reference lines (the star's C/O, snowlines) and secondary text.
    pub muted: Rgba,
    /// Map cells whose value is undefined (a neutral grey that no colour map uses).
    pub undefined: Rgba,
    /// Shading of highlighted intervals (allowed formation radii); drawn with alpha.
    pub highlight: Rgba,
    /// Colours of the data series in order; lines also differ by dash and marker.
    pub series: Vec<Rgba>,
    /// Font family list as in CSS and SVG, ending in a generic family.
    pub font_family: String,
    /// Tick-label size [pt].
    pub tick_font_pt: f64,
    /// Axis-label size [pt].
    pub label_font_pt: f64,
    /// Legend and annotation size [pt].
    pub legend_font_pt: f64,
    /// Data-line width [pt].
    pub line_width_pt: f64,
    /// Axis and tick width [pt].
    pub axis_width_pt: f64,
    /// Colour map of r-z maps.
    pub colour_map: ColourMap,
}

/// The family list used by both themes: the bundled DejaVu Sans first (PNG
/// output draws with it), then common fallbacks for SVG viewers and browsers.
pub const DEFAULT_FONT_FAMILY: &str = "DejaVu Sans, Verdana, Arial, Helvetica, sans-serif";

impl Theme {
    /// Dark text on white: the paper theme.
    pub fn light() -> Theme {
        Theme {
            background: Rgba::hex(0xffffff),
            foreground: Rgba::hex(0x1a1a1a),
            grid: Rgba::hex(0xe3e3e3),
            muted: Rgba::hex(0x6b6b6b),
            undefined: Rgba::hex(0xb4b4b4),
            highlight: Rgba::hex(0x0072b2).with_alpha(40),
            series: OKABE_ITO.to_vec(),
            font_family: DEFAULT_FONT_FAMILY.to_string(),
            tick_font_pt: 7.0,
            label_font_pt: 8.0,
            legend_font_pt: 6.5,
            line_width_pt: 1.0,
            axis_width_pt: 0.6,
            colour_map: ColourMap::Viridis,
        }
    }

    /// Light text on a dark grey: the screen theme. The Okabe & Ito colours keep
    /// their contrast on dark grey; the foreground series becomes near-white.
    pub fn dark() -> Theme {
        Theme {
            background: Rgba::hex(0x1d1f21),
            foreground: Rgba::hex(0xe8e8e8),
            grid: Rgba::hex(0x3a3d40),
            muted: Rgba::hex(0xa0a0a0),
            undefined: Rgba::hex(0x55585b),
            highlight: Rgba::hex(0x56b4e9).with_alpha(45),
            // Sky blue before blue: the darker blue loses contrast on dark grey.
            series: vec![
                OKABE_ITO[0],
                OKABE_ITO[5],
                OKABE_ITO[2],
                OKABE_ITO[3],
                OKABE_ITO[4],
                OKABE_ITO[1],
            ],
            ..Theme::light()
        }
    }

    /// Colour of series `i`: the foreground, then `series` in order, cycling through all of them.
    pub fn series_colour(&self, i: usize) -> Rgba {
        let i = i % (self.series.len() + 1);
        if i == 0 {
            self.foreground
        } else {
            self.series[i - 1]
        }
    }
}

/// Dash pattern of a line; with markers, what keeps lines apart in greyscale.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LineDash {
    /// Continuous.
    Solid,
    /// Long dashes.
    Dashed,
    /// Dots (short dashes).
    Dotted,
    /// Dash, dot.
    DashDot,
}

impl LineDash {
    /// Dash pattern as (on, off, on, off) lengths in units of the line width; `None` for solid.
    pub(crate) fn pattern(self) -> Option<[f64; 4]> {
        match self {
            LineDash::Solid => None,
            LineDash::Dashed => Some([5.0, 3.0, 5.0, 3.0]),
            LineDash::Dotted => Some([1.2, 2.2, 1.2, 2.2]),
            LineDash::DashDot => Some([5.0, 2.5, 1.2, 2.5]),
        }
    }

    /// Dashes in the order series use them.
    pub const CYCLE: [LineDash; 4] = [
        LineDash::Solid,
        LineDash::Dashed,
        LineDash::Dotted,
        LineDash::DashDot,
    ];
}

/// A point marker drawn every few points along a line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// No marker.
    None,
    /// Filled circle.
    Circle,
    /// Open square.
    Square,
    /// Filled triangle (point up).
    Triangle,
    /// Open diamond.
    Diamond,
    /// Cross (x).
    Cross,
    /// Plus (+).
    Plus,
}

impl Marker {
    /// Markers in the order series use them.
    pub const CYCLE: [Marker; 6] = [
        Marker::Circle,
        Marker::Square,
        Marker::Triangle,
        Marker::Diamond,
        Marker::Cross,
        Marker::Plus,
    ];
}

/// How one data series is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeriesStyle {
    /// Line colour.
    pub colour: Rgba,
    /// Dash pattern.
    pub dash: LineDash,
    /// Marker.
    pub marker: Marker,
    /// Width relative to the theme's line width.
    pub width_scale: f64,
}

impl SeriesStyle {
    /// A plain line.
    pub fn line(colour: Rgba, dash: LineDash) -> SeriesStyle {
        SeriesStyle {
            colour,
            dash,
            marker: Marker::None,
            width_scale: 1.0,
        }
    }

    /// The same style with a marker.
    pub fn with_marker(self, marker: Marker) -> SeriesStyle {
        SeriesStyle { marker, ..self }
    }
}
