//! Where a drawn chart put its plotting areas, and the axis transforms that
//! turn a pixel back into data coordinates (for hover readouts on the page).

/// How an axis maps data to pixels.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// Linear in the value.
    Linear,
    /// Linear in log10 of the value; non-positive values are undefined.
    Log10,
}

/// One axis: its range, scale and label.
#[derive(Clone)]
pub struct AxisTransform {
    /// Data value at the left (x) or bottom (y) edge of the plotting area.
    pub min: f64,
    /// Data value at the right (x) or top (y) edge.
    pub max: f64,
    /// Linear or logarithmic.
    pub scale: Scale,
    /// Axis label as drawn, e.g. "r [au]".
    pub label: String,
    /// `(min, max, scale)` and their images under `forward`, computed once:
    /// `fraction` runs per drawn point, and on a log axis it took three
    /// `log10`s where one is new. Used only while `min`, `max` and `scale` are
    /// still these (the fields are public), so it never changes a result.
    ends: (f64, f64, Scale, Option<f64>, Option<f64>),
}

// By the axis's own fields, as the derived traits were: the cache is not part of the value.
impl PartialEq for AxisTransform {
    fn eq(&self, other: &Self) -> bool {
        self.min == other.min
            && self.max == other.max
            && self.scale == other.scale
            && self.label == other.label
    }
}

impl std::fmt::Debug for AxisTransform {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("AxisTransform")
            .field("min", &self.min)
            .field("max", &self.max)
            .field("scale", &self.scale)
            .field("label", &self.label)
            .finish()
    }
}

impl AxisTransform {
    /// A new axis; `min < max`, and both > 0 for `Scale::Log10` (checked by the callers).
    pub fn new(min: f64, max: f64, scale: Scale, label: impl Into<String>) -> AxisTransform {
        AxisTransform {
            min,
            max,
            scale,
            label: label.into(),
            ends: (min, max, scale, forward(scale, min), forward(scale, max)),
        }
    }

    fn forward(&self, v: f64) -> Option<f64> {
        forward(self.scale, v)
    }

    /// `forward(min)` and `forward(max)`: from the cache while it is current.
    fn forward_ends(&self) -> (Option<f64>, Option<f64>) {
        let (min, max, scale, a, b) = self.ends;
        if min.to_bits() == self.min.to_bits()
            && max.to_bits() == self.max.to_bits()
            && scale == self.scale
        {
            (a, b)
        } else {
            (self.forward(self.min), self.forward(self.max))
        }
    }

    /// Fraction 0..1 of the way from `min` to `max` (outside 0..1 beyond the range);
    /// `None` for values the scale cannot show (NaN, infinite, non-positive on a log axis).
    pub fn fraction(&self, v: f64) -> Option<f64> {
        let (a, b) = self.forward_ends();
        let (a, b) = (a?, b?);
        Some((self.forward(v)? - a) / (b - a))
    }

    /// The data value at fraction `t` of the way from `min` to `max`.
    pub fn value_at_fraction(&self, t: f64) -> f64 {
        match self.scale {
            Scale::Linear => self.min + t * (self.max - self.min),
            Scale::Log10 => {
                10f64.powf(self.min.log10() + t * (self.max.log10() - self.min.log10()))
            }
        }
    }
}

/// The value on a scale's linear axis: itself, or its log10; `None` where the scale cannot show it.
fn forward(scale: Scale, v: f64) -> Option<f64> {
    match scale {
        Scale::Linear => v.is_finite().then_some(v),
        Scale::Log10 => (v.is_finite() && v > 0.0).then(|| v.log10()),
    }
}

/// One plotting area (the rectangle inside the axes) in backend pixels.
#[derive(Debug, Clone, PartialEq)]
pub struct PanelLayout {
    /// What the panel shows, e.g. "c_to_o", "temperature", "surface_density", "colour_bar".
    pub name: &'static str,
    /// Left edge [backend pixels, from the backend's left edge].
    pub left: i32,
    /// Top edge [backend pixels, from the backend's top edge].
    pub top: i32,
    /// Width [pixels].
    pub width: u32,
    /// Height [pixels].
    pub height: u32,
    /// Horizontal axis.
    pub x: AxisTransform,
    /// Vertical axis.
    pub y: AxisTransform,
}

impl PanelLayout {
    /// Whether the pixel lies inside the plotting area (edges included).
    pub fn contains(&self, px: f64, py: f64) -> bool {
        px >= self.left as f64
            && px <= (self.left + self.width as i32) as f64
            && py >= self.top as f64
            && py <= (self.top + self.height as i32) as f64
    }

    /// Data coordinates at a pixel inside the area; `None` outside it.
    pub fn data_at(&self, px: f64, py: f64) -> Option<(f64, f64)> {
        if !self.contains(px, py) || self.width == 0 || self.height == 0 {
            return None;
        }
        let tx = (px - self.left as f64) / self.width as f64;
        let ty = 1.0 - (py - self.top as f64) / self.height as f64;
        Some((self.x.value_at_fraction(tx), self.y.value_at_fraction(ty)))
    }

    /// Pixel of a data point (may lie outside the area); `None` where the axes cannot show it.
    pub fn pixel_of(&self, x: f64, y: f64) -> Option<(f64, f64)> {
        let tx = self.x.fraction(x)?;
        let ty = self.y.fraction(y)?;
        Some((
            self.left as f64 + tx * self.width as f64,
            self.top as f64 + (1.0 - ty) * self.height as f64,
        ))
    }
}

/// Everything a drawing function tells its caller about where it drew.
#[derive(Debug, Clone, PartialEq)]
pub struct ChartLayout {
    /// The plotting areas, main panel first.
    pub panels: Vec<PanelLayout>,
}

impl ChartLayout {
    /// Data coordinates at a backend pixel, from the first panel containing it
    /// (colour bars included: their x is meaningless, y is the colour-bar value).
    pub fn data_at(&self, px: f64, py: f64) -> Option<(f64, f64)> {
        self.panel_at(px, py).map(|(_, x, y)| (x, y))
    }

    /// The panel containing a pixel with the data coordinates there.
    pub fn panel_at(&self, px: f64, py: f64) -> Option<(&PanelLayout, f64, f64)> {
        self.panels
            .iter()
            .find_map(|p| p.data_at(px, py).map(|(x, y)| (p, x, y)))
    }

    /// The main (first) panel.
    pub fn main(&self) -> &PanelLayout {
        // Invariant: every drawing function returns at least one panel.
        &self.panels[0]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(actual: f64, expected: f64, relative: f64) {
        assert!(
            (actual / expected - 1.0).abs() <= relative,
            "expected {expected} got {actual}"
        );
    }

    #[test]
    fn log_axis_round_trips_pixels() {
        let p = PanelLayout {
            name: "test",
            left: 10,
            top: 20,
            width: 300,
            height: 200,
            x: AxisTransform::new(0.1, 1000.0, Scale::Log10, "r [au]"),
            y: AxisTransform::new(0.0, 2.0, Scale::Linear, "C/O"),
        };
        // 0.1..1000 au spans 4 decades on 300 px: 10 au is 2 decades in, half way (exact arithmetic).
        let (px, py) = p.pixel_of(10.0, 0.5).unwrap();
        check(px, 10.0 + 150.0, 1e-12);
        check(py, 20.0 + 150.0, 1e-12);
        let (x, y) = p.data_at(px, py).unwrap();
        check(x, 10.0, 1e-12);
        check(y, 0.5, 1e-12);
        assert_eq!(p.data_at(5.0, 100.0), None);
        assert_eq!(p.pixel_of(-1.0, 0.5), None);
        assert_eq!(p.pixel_of(f64::NAN, 0.5), None);
    }
}
