//! Parts of a chart drawn again only when what they are drawn from changed.
//!
//! A chart's frame, ticks, tick labels, axis titles, colour bar and legend
//! depend on a few inputs (the output's size and pixels per point, the
//! theme, the panels' rectangles and axes, the legend's entries ...), not on
//! the data lines, so after an edit that leaves those inputs alone they come
//! out the same. A view drawn with a [`Reuse`] store (the page's display
//! lists, `crates/web/src/display.rs`) draws each such part ("segment") as a
//! closure with a key: the bytes of every input the closure reads besides
//! the painter's own context, which the painter's `segment` prefixes (size,
//! area offset, pixels per point, every field of the theme, the segment's
//! name). The store either runs the closure (and keeps what it
//! drew under that key) or, when the key equals the one kept, puts what it
//! drew the last time instead. Back ends without a store (SVG, PNG) just run
//! the closure. Keys are compared byte for byte (no hash), so equal keys mean
//! equal inputs; a closure must read nothing outside its key and the painter.

use crate::colour::{ColourMap, Rgba};
use crate::error::ChartError;
use crate::layout::{AxisTransform, Scale};
use crate::paint::{Frame, Panel};
use crate::theme::{SeriesStyle, Theme};

/// A store of drawn segments by key: see the module documentation.
pub trait Reuse {
    /// Draws a segment by calling `draw` once, or instead puts what `draw`
    /// drew the last time this store was given the same `key` (the same
    /// drawing calls, in order). An error of `draw` is returned as it is.
    fn segment(
        &self,
        key: &[u8],
        draw: &mut dyn FnMut() -> Result<(), ChartError>,
    ) -> Result<(), ChartError>;
}

/// The bytes of a segment's inputs, written field by field (floats as their
/// bits, texts with their length first, so no two inputs write the same bytes).
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct SegmentKey(pub(crate) Vec<u8>);

impl SegmentKey {
    /// The bytes written.
    pub fn bytes(&self) -> &[u8] {
        &self.0
    }

    pub(crate) fn u64(&mut self, v: u64) -> &mut Self {
        self.0.extend_from_slice(&v.to_le_bytes());
        self
    }

    pub(crate) fn f64(&mut self, v: f64) -> &mut Self {
        self.u64(v.to_bits())
    }

    pub(crate) fn byte(&mut self, v: u8) -> &mut Self {
        self.0.push(v);
        self
    }

    pub(crate) fn text(&mut self, s: &str) -> &mut Self {
        self.u64(s.len() as u64);
        self.0.extend_from_slice(s.as_bytes());
        self
    }

    pub(crate) fn rgba(&mut self, c: Rgba) -> &mut Self {
        self.0.extend_from_slice(&[c.r, c.g, c.b, c.a]);
        self
    }

    pub(crate) fn colour_map(&mut self, m: ColourMap) -> &mut Self {
        self.byte(m as u8)
    }

    /// Every field of `theme` (destructured without `..`, so a field added to
    /// the theme cannot be left out of the key).
    pub(crate) fn theme(&mut self, theme: &Theme) -> &mut Self {
        let Theme {
            background,
            foreground,
            grid,
            muted,
            undefined,
            highlight,
            series,
            font_family,
            tick_font_pt,
            label_font_pt,
            legend_font_pt,
            line_width_pt,
            axis_width_pt,
            colour_map,
        } = theme;
        for c in [background, foreground, grid, muted, undefined, highlight] {
            self.rgba(*c);
        }
        self.u64(series.len() as u64);
        for c in series {
            self.rgba(*c);
        }
        self.text(font_family);
        for v in [
            tick_font_pt,
            label_font_pt,
            legend_font_pt,
            line_width_pt,
            axis_width_pt,
        ] {
            self.f64(*v);
        }
        self.colour_map(*colour_map)
    }

    pub(crate) fn frame(&mut self, f: &Frame) -> &mut Self {
        self.f64(f.left).f64(f.top).f64(f.right).f64(f.bottom)
    }

    pub(crate) fn axis(&mut self, a: &AxisTransform) -> &mut Self {
        let scale = match a.scale {
            Scale::Linear => 0,
            Scale::Log10 => 1,
        };
        self.f64(a.min).f64(a.max).byte(scale).text(&a.label)
    }

    pub(crate) fn panel(&mut self, p: &Panel) -> &mut Self {
        self.text(p.name).frame(&p.frame).axis(&p.x).axis(&p.y)
    }

    pub(crate) fn style(&mut self, s: &SeriesStyle) -> &mut Self {
        self.rgba(s.colour)
            .byte(s.dash as u8)
            .byte(s.marker as u8)
            .f64(s.width_scale)
    }

    pub(crate) fn corner(&mut self, corner: Option<(f64, f64)>) -> &mut Self {
        match corner {
            Some((x, y)) => self.byte(1).f64(x).f64(y),
            None => self.byte(0),
        }
    }

    pub(crate) fn entries(&mut self, entries: &[(String, SeriesStyle)]) -> &mut Self {
        self.u64(entries.len() as u64);
        for (label, style) in entries {
            self.text(label).style(style);
        }
        self
    }
}
