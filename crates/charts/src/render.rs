//! Paper-ready output: journal figure sizes, the [`Figure`] enum that pairs a
//! view with its data, and [`render_svg`] / [`render_png`], which draw a figure
//! into an SVG string or PNG bytes. Also the bundled font that PNG text uses.

use nivalis_physics::{Model, Species};
use plotters::coord::Shift;
use plotters::prelude::{DrawingArea, DrawingBackend, IntoDrawingArea, SVGBackend};

use crate::data::{AbundanceData, Chi2Data, ProfileData, TemperatureData};
use crate::error::ChartError;
use crate::layout::ChartLayout;
use crate::map::MapData;
use crate::theme::Theme;
use crate::views::{
    draw_abundance_profiles, draw_c_to_o_map, draw_c_to_o_profile, draw_chi2_map, draw_ice_map,
    draw_temperature_profile, CellDrawing,
};

/// Single-column width of the common astronomy journals [pt] (3.5 in).
pub const SINGLE_COLUMN_WIDTH_PT: f64 = 252.0;
/// Double-column (full page) width [pt] (7.1 in).
pub const DOUBLE_COLUMN_WIDTH_PT: f64 = 511.0;
/// Default height over width.
pub const DEFAULT_ASPECT: f64 = 0.75;
/// SVG user units per point: drawing happens on integer pixels, so the SVG is
/// drawn at 10 units per pt (0.035 mm steps) and declared in pt.
pub const SVG_UNITS_PER_POINT: f64 = 10.0;
/// Points per inch.
pub const POINTS_PER_INCH: f64 = 72.0;

/// A figure's size in points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FigureSize {
    /// Width [pt].
    pub width_pt: f64,
    /// Height [pt].
    pub height_pt: f64,
}

impl FigureSize {
    /// A width with the default 0.75 aspect.
    pub fn with_width_pt(width_pt: f64) -> FigureSize {
        FigureSize {
            width_pt,
            height_pt: width_pt * DEFAULT_ASPECT,
        }
    }
    /// 252 pt x 189 pt.
    pub fn single_column() -> FigureSize {
        FigureSize::with_width_pt(SINGLE_COLUMN_WIDTH_PT)
    }
    /// 511 pt x 383.25 pt.
    pub fn double_column() -> FigureSize {
        FigureSize::with_width_pt(DOUBLE_COLUMN_WIDTH_PT)
    }
    /// Pixels at `dpi`: inches x dpi, rounded.
    pub fn pixels_at_dpi(&self, dpi: f64) -> (u32, u32) {
        (
            (self.width_pt / POINTS_PER_INCH * dpi).round() as u32,
            (self.height_pt / POINTS_PER_INCH * dpi).round() as u32,
        )
    }

    pub(crate) fn validate(&self) -> Result<(), ChartError> {
        for (field, v) in [("width_pt", self.width_pt), ("height_pt", self.height_pt)] {
            if !(v.is_finite() && (72.0..=2880.0).contains(&v)) {
                return Err(ChartError::InvalidValue {
                    field,
                    value: v,
                    allowed: "between 72 and 2880 (1 to 40 in)",
                });
            }
        }
        Ok(())
    }
}

/// Which view to build from a model.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum View {
    /// (a) C/O profile.
    CToOProfile,
    /// (b) Temperature and surface density.
    TemperatureProfile,
    /// (c) Ice-fraction map of a species.
    IceMap(Species),
    /// (d) Gas C/O map.
    CToOMap,
    /// (e) Abundance profiles.
    Abundances,
}

impl View {
    /// The names every front end accepts, for messages and help texts.
    pub const NAMES: &'static str =
        "c_to_o, temperature, abundances, ice_map:<SPECIES>, c_to_o_map";

    /// The view's name as the CLI (`--view`), the page and the provenance write it:
    /// `c_to_o`, `temperature`, `abundances`, `ice_map:<SPECIES>`, `c_to_o_map`.
    pub fn key(&self) -> String {
        match self {
            View::CToOProfile => "c_to_o".to_string(),
            View::TemperatureProfile => "temperature".to_string(),
            View::Abundances => "abundances".to_string(),
            View::CToOMap => "c_to_o_map".to_string(),
            View::IceMap(species) => format!("ice_map:{}", species.key()),
        }
    }

    /// Parses a view name (see [`View::key`]); the error names what is allowed.
    pub fn from_key(text: &str) -> Result<View, String> {
        Ok(match text {
            "c_to_o" => View::CToOProfile,
            "temperature" => View::TemperatureProfile,
            "abundances" => View::Abundances,
            "c_to_o_map" => View::CToOMap,
            _ => match text.strip_prefix("ice_map:") {
                Some(s) => View::IceMap(Species::from_key(s).ok_or_else(|| {
                    format!(
                        "unknown species {s:?}; expected one of {}",
                        Species::ALL.map(|s| s.key()).join(", ")
                    )
                })?),
                None => {
                    return Err(format!(
                        "unknown view {text:?}; expected one of {}",
                        View::NAMES
                    ))
                }
            },
        })
    }
}

/// Any view key of the figure table: a view of one model ([`View`]) or of an evolving run
/// ([`crate::EvolutionView`], docs/model.md section 12).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AnyView {
    /// A view of the static model.
    Model(View),
    /// A view of an evolving run.
    Evolution(crate::EvolutionView),
}

impl AnyView {
    /// Every key the figure table accepts, for messages and help texts.
    pub const NAMES: &'static str = "c_to_o, temperature, abundances, ice_map:<SPECIES>, c_to_o_map, snowline_tracks, evolved_c_to_o, c_to_o_time_map";

    /// Parses a view key: the evolution views' keys, then [`View::from_key`]; the error names
    /// every allowed key.
    pub fn from_key(text: &str) -> Result<AnyView, String> {
        if let Some(v) = crate::EvolutionView::from_key(text) {
            return Ok(AnyView::Evolution(v));
        }
        View::from_key(text).map(AnyView::Model).map_err(|e| {
            if e.starts_with("unknown view") {
                format!("unknown view {text:?}; expected one of {}", AnyView::NAMES)
            } else {
                e
            }
        })
    }

    /// The view's key.
    pub fn key(&self) -> String {
        match self {
            AnyView::Model(v) => v.key(),
            AnyView::Evolution(v) => v.key().to_string(),
        }
    }
}

/// A view together with its data: what [`render_svg`] and [`render_png`] draw.
#[derive(Debug, Clone, PartialEq)]
pub enum Figure {
    /// (a)
    CToOProfile(ProfileData),
    /// (b)
    TemperatureProfile(TemperatureData),
    /// (c)
    IceMap(MapData),
    /// (d)
    CToOMap(MapData),
    /// (e)
    Abundances(AbundanceData),
    /// (f)
    Chi2(Chi2Data),
    /// (g) Snowline tracks of an evolving run.
    SnowlineTracks(crate::SnowlineTrackData),
    /// (h) Gas C/O at one age of an evolving run, with the static model's.
    EvolvedCToO(crate::EvolvedProfileData),
    /// (i) Gas C/O over radius x age.
    RadiusTimeMap(crate::RadiusTimeMapData),
    /// (j) Delta chi-square of the planet fit over formation radius x formation age
    /// ([`crate::age_fit`]).
    Chi2Age(Chi2Data),
    /// (k) A figure of the Monte Carlo over uncertain inputs (docs/model.md section 13).
    Uncertainty(crate::uncertainty::UncertaintyFigure),
}

impl Figure {
    /// Build a view's data from a model.
    pub fn from_model(view: View, model: &Model) -> Figure {
        match view {
            View::CToOProfile => Figure::CToOProfile(ProfileData::from_model(model)),
            View::TemperatureProfile => {
                Figure::TemperatureProfile(TemperatureData::from_model(model))
            }
            View::IceMap(species) => Figure::IceMap(MapData::ice_fraction(model, species)),
            View::CToOMap => Figure::CToOMap(MapData::gas_c_to_o(model)),
            View::Abundances => Figure::Abundances(AbundanceData::from_model(model)),
        }
    }
}

/// Draw any figure on any area (what the CLI and the page call).
pub fn draw_figure<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    figure: &Figure,
    theme: &Theme,
    pixels_per_point: f64,
    cells: CellDrawing,
) -> Result<ChartLayout, ChartError> {
    match figure {
        Figure::CToOProfile(d) => draw_c_to_o_profile(area, d, theme, pixels_per_point),
        Figure::TemperatureProfile(d) => draw_temperature_profile(area, d, theme, pixels_per_point),
        Figure::IceMap(d) => draw_ice_map(area, d, theme, pixels_per_point, cells),
        Figure::CToOMap(d) => draw_c_to_o_map(area, d, theme, pixels_per_point, cells),
        Figure::Abundances(d) => draw_abundance_profiles(area, d, theme, pixels_per_point),
        Figure::Chi2(d) => draw_chi2_map(area, d, theme, pixels_per_point),
        Figure::SnowlineTracks(d) => crate::draw_snowline_tracks(area, d, theme, pixels_per_point),
        Figure::EvolvedCToO(d) => crate::draw_evolved_c_to_o(area, d, theme, pixels_per_point),
        Figure::RadiusTimeMap(d) => crate::draw_radius_time_map(area, d, theme, pixels_per_point),
        Figure::Chi2Age(d) => crate::age_fit::draw_chi2_age_map(area, d, theme, pixels_per_point),
        Figure::Uncertainty(d) => {
            crate::uncertainty::draw_uncertainty(area, d, theme, pixels_per_point)
        }
    }
}

/// The figure as a standalone SVG document, `size` in pt (width and height
/// attributes in pt, drawn at [`SVG_UNITS_PER_POINT`]). Text is `<text>` with
/// the theme's font-family list; map cells are rectangles of merged equal cells.
pub fn render_svg(figure: &Figure, theme: &Theme, size: FigureSize) -> Result<String, ChartError> {
    size.validate()?;
    let w = (size.width_pt * SVG_UNITS_PER_POINT).round() as u32;
    let h = (size.height_pt * SVG_UNITS_PER_POINT).round() as u32;
    let mut out = String::new();
    {
        // Text measured from the bundled font on every target (crate::text), so
        // the page and the CLI lay the figure out identically.
        #[cfg(feature = "png")]
        let area =
            crate::text::MeasuredSvg(SVGBackend::with_string(&mut out, (w, h))).into_drawing_area();
        #[cfg(not(feature = "png"))]
        let area = SVGBackend::with_string(&mut out, (w, h)).into_drawing_area();
        draw_figure(
            &area,
            figure,
            theme,
            SVG_UNITS_PER_POINT,
            CellDrawing::Rectangles,
        )?;
        area.present().map_err(|e| ChartError::Drawing {
            message: e.to_string(),
        })?;
    }
    // Declare the physical size: plotters writes width/height in user units.
    let header = format!("<svg width=\"{w}\" height=\"{h}\"");
    let physical = format!(
        "<svg width=\"{}pt\" height=\"{}pt\"",
        fmt_pt(size.width_pt),
        fmt_pt(size.height_pt)
    );
    Ok(out.replacen(&header, &physical, 1))
}

pub(crate) fn fmt_pt(v: f64) -> String {
    let s = format!("{v:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The figure as PNG bytes: `size` in pt at `dpi` (pixel width = inches x dpi),
/// the DPI recorded in the pHYs chunk; text drawn with the bundled DejaVu Sans.
#[cfg(feature = "png")]
pub fn render_png(
    figure: &Figure,
    theme: &Theme,
    size: FigureSize,
    dpi: f64,
) -> Result<Vec<u8>, ChartError> {
    use plotters::prelude::BitMapBackend;
    size.validate()?;
    if !(dpi.is_finite() && (36.0..=1200.0).contains(&dpi)) {
        return Err(ChartError::InvalidValue {
            field: "dpi",
            value: dpi,
            allowed: "between 36 and 1200",
        });
    }
    let (w, h) = size.pixels_at_dpi(dpi);
    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    {
        let area = BundledText(BitMapBackend::with_buffer(&mut rgb, (w, h))).into_drawing_area();
        draw_figure(
            &area,
            figure,
            theme,
            dpi / POINTS_PER_INCH,
            CellDrawing::Raster,
        )?;
        area.present().map_err(|e| ChartError::Drawing {
            message: e.to_string(),
        })?;
    }
    encode_png(&rgb, w, h, dpi)
}

/// The bitmap back end with text drawn by this crate from the bundled font.
///
/// plotters' own glyph renderer places each glyph at its advance origin without
/// its side bearing (uneven letter spacing) and puts the baseline half a font
/// size below the anchor (text sits high). This wrapper lays text out itself:
/// advances with kerning, bearings, the em size SVG uses (plotters' size / 1.24),
/// baselines matching the SVG output's anchors (top: 0.76 em below, centre:
/// half the cap height, bottom: the descent), rotations as plotters defines them.
/// Every other call goes straight through.
#[cfg(feature = "png")]
struct BundledText<B>(B);

#[cfg(feature = "png")]
mod bundled_text {
    use super::BundledText;
    use ab_glyph::{point, Font, FontRef, PxScale, ScaleFont};
    use plotters_backend::text_anchor::{HPos, VPos};
    use plotters_backend::{
        BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend,
        DrawingErrorKind,
    };
    /// plotters' font sizes are line heights: the em is `size / 1.24` (as its SVG back end writes).
    const EM_PER_SIZE: f32 = 1.0 / 1.24;
    /// DejaVu Sans cap height [em] (1493 / 2048 units).
    const CAP_HEIGHT_EM: f32 = 0.729;

    fn font() -> &'static FontRef<'static> {
        crate::text::bundled_font()
    }

    /// Scale for an em of `em_px` pixels (ab_glyph scales by ascent - descent).
    fn scale(em_px: f32) -> PxScale {
        let f = font();
        PxScale::from(em_px * f.height_unscaled() / f.units_per_em().unwrap_or(2048.0))
    }

    /// Advance width [px] of a text at `em_px`.
    fn width(text: &str, em_px: f32) -> f32 {
        let f = font().as_scaled(scale(em_px));
        let mut x = 0.0;
        let mut previous = None;
        for c in text.chars() {
            let id = f.glyph_id(c);
            if let Some(p) = previous {
                x += f.kern(p, id);
            }
            x += f.h_advance(id);
            previous = Some(id);
        }
        x
    }

    impl<B: DrawingBackend> BundledText<B> {
        fn text<S: BackendTextStyle>(
            &mut self,
            text: &str,
            style: &S,
            pos: BackendCoord,
        ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
            let colour = style.color();
            if colour.alpha == 0.0 {
                return Ok(());
            }
            let em = style.size() as f32 * EM_PER_SIZE;
            let f = font().as_scaled(scale(em));
            let w = width(text, em);
            let x0 = match style.anchor().h_pos {
                HPos::Left => 0.0,
                HPos::Center => -0.5 * w,
                HPos::Right => -w,
            };
            let baseline = match style.anchor().v_pos {
                VPos::Top => 0.76 * em,
                VPos::Center => 0.5 * CAP_HEIGHT_EM * em,
                VPos::Bottom => f.descent(),
            };
            let transform = style.transform();
            let mut x = x0;
            let mut previous = None;
            for c in text.chars() {
                let id = f.glyph_id(c);
                if let Some(p) = previous {
                    x += f.kern(p, id);
                }
                previous = Some(id);
                let glyph = id.with_scale_and_position(scale(em), point(x, baseline));
                x += f.h_advance(id);
                let Some(outline) = font().outline_glyph(glyph) else {
                    continue;
                };
                let bounds = outline.px_bounds();
                let mut pixels = Vec::new();
                outline.draw(|gx, gy, coverage| {
                    if coverage > 0.0 {
                        pixels.push((
                            bounds.min.x as i32 + gx as i32,
                            bounds.min.y as i32 + gy as i32,
                            coverage,
                        ));
                    }
                });
                for (tx, ty, coverage) in pixels {
                    let (dx, dy) = transform.transform(tx, ty);
                    let c = BackendColor {
                        alpha: colour.alpha * f64::from(coverage.min(1.0)),
                        rgb: colour.rgb,
                    };
                    self.0.draw_pixel((pos.0 + dx, pos.1 + dy), c)?;
                }
            }
            Ok(())
        }
    }

    impl<B: DrawingBackend> DrawingBackend for BundledText<B> {
        type ErrorType = B::ErrorType;
        fn get_size(&self) -> (u32, u32) {
            self.0.get_size()
        }
        fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.ensure_prepared()
        }
        fn present(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.present()
        }
        fn draw_pixel(
            &mut self,
            point: BackendCoord,
            color: BackendColor,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.draw_pixel(point, color)
        }
        fn draw_line<S: BackendStyle>(
            &mut self,
            from: BackendCoord,
            to: BackendCoord,
            style: &S,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.draw_line(from, to, style)
        }
        fn draw_rect<S: BackendStyle>(
            &mut self,
            upper_left: BackendCoord,
            bottom_right: BackendCoord,
            style: &S,
            fill: bool,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.draw_rect(upper_left, bottom_right, style, fill)
        }
        fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
            &mut self,
            path: I,
            style: &S,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.draw_path(path, style)
        }
        fn draw_circle<S: BackendStyle>(
            &mut self,
            center: BackendCoord,
            radius: u32,
            style: &S,
            fill: bool,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.draw_circle(center, radius, style, fill)
        }
        fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
            &mut self,
            vert: I,
            style: &S,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.fill_polygon(vert, style)
        }
        fn draw_text<S: BackendTextStyle>(
            &mut self,
            text: &str,
            style: &S,
            pos: BackendCoord,
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.text(text, style, pos)
        }
        fn estimate_text_size<S: BackendTextStyle>(
            &self,
            text: &str,
            style: &S,
        ) -> Result<(u32, u32), DrawingErrorKind<Self::ErrorType>> {
            let em = style.size() as f32 * EM_PER_SIZE;
            Ok((width(text, em).ceil() as u32, em.ceil() as u32))
        }
        fn blit_bitmap(
            &mut self,
            pos: BackendCoord,
            size: (u32, u32),
            src: &[u8],
        ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
            self.0.blit_bitmap(pos, size, src)
        }
    }
}

#[cfg(feature = "png")]
fn encode_png(rgb: &[u8], w: u32, h: u32, dpi: f64) -> Result<Vec<u8>, ChartError> {
    let mut bytes = Vec::new();
    {
        let mut encoder = png::Encoder::new(&mut bytes, w, h);
        encoder.set_color(png::ColorType::Rgb);
        encoder.set_depth(png::BitDepth::Eight);
        let per_metre = (dpi / 0.0254).round() as u32;
        encoder.set_pixel_dims(Some(png::PixelDimensions {
            xppu: per_metre,
            yppu: per_metre,
            unit: png::Unit::Meter,
        }));
        let mut writer = encoder.write_header().map_err(|e| ChartError::Png {
            message: e.to_string(),
        })?;
        writer.write_image_data(rgb).map_err(|e| ChartError::Png {
            message: e.to_string(),
        })?;
    }
    Ok(bytes)
}

/// DejaVu Sans 2.37 cut to the characters the figures use (fonts/LICENSE says how), compiled
/// in so PNG text needs no font files at run time.
#[cfg(feature = "png")]
pub static BUNDLED_FONT: &[u8] = include_bytes!("../fonts/DejaVuSans.ttf");

/// Register the bundled font under the theme's family list (and "sans-serif"),
/// once per name: plotters' text measurement (used for the SVG layout) looks
/// fonts up by that exact string. On the browser target the canvas measures
/// with the page's fonts and this does nothing. PNG text does not depend on it
/// (see `BundledText`).
pub(crate) fn ensure_font(theme: &Theme) {
    #[cfg(all(feature = "png", not(target_arch = "wasm32")))]
    {
        use std::collections::HashSet;
        use std::sync::{Mutex, OnceLock};
        static REGISTERED: OnceLock<Mutex<HashSet<String>>> = OnceLock::new();
        let set = REGISTERED.get_or_init(|| Mutex::new(HashSet::new()));
        // A poisoned lock only means another thread panicked mid-insert; the set is still usable.
        let mut set = set.lock().unwrap_or_else(|e| e.into_inner());
        for name in [theme.font_family.as_str(), "sans-serif"] {
            if !set.contains(name) {
                // The bundled bytes are a valid font (a unit test parses them), so this cannot fail.
                let _ = plotters::style::register_font(
                    name,
                    plotters::style::FontStyle::Normal,
                    BUNDLED_FONT,
                );
                set.insert(name.to_string());
            }
        }
    }
    #[cfg(not(all(feature = "png", not(target_arch = "wasm32"))))]
    let _ = theme;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn view_names_round_trip() {
        for view in [
            View::CToOProfile,
            View::TemperatureProfile,
            View::Abundances,
            View::CToOMap,
        ]
        .into_iter()
        .chain(Species::ALL.map(View::IceMap))
        {
            assert_eq!(View::from_key(&view.key()), Ok(view));
        }
        assert!(View::from_key("ice_map:XY")
            .unwrap_err()
            .contains("unknown species"));
        assert!(View::from_key("map").unwrap_err().contains("c_to_o_map"));
    }

    #[test]
    fn journal_sizes() {
        // 3.5 in = 252 pt and 7.1 in = 511.2 pt (1 in = 72 pt, PostScript point).
        assert_eq!(
            FigureSize::single_column().pixels_at_dpi(300.0),
            (1050, 788)
        );
        assert!((DOUBLE_COLUMN_WIDTH_PT / POINTS_PER_INCH - 7.1).abs() < 0.01);
    }

    #[cfg(feature = "png")]
    #[test]
    fn bundled_font_has_every_glyph_the_charts_use() {
        // A character without a glyph maps to glyph 0 (.notdef) and would print as a box.
        use ab_glyph::{Font, FontRef};
        let font = FontRef::try_from_slice(BUNDLED_FONT).expect("bundled font parses");
        let used = "\u{03a3} [g cm\u{207b}\u{00b2}] CH\u{2083}OH H\u{2082}O CO\u{2082} NH\u{2083} CH\u{2084} H\u{2082}S \
                    10\u{2070}\u{00b9}\u{00b2}\u{00b3}\u{2074}\u{2075}\u{2076}\u{2077}\u{2078}\u{2079} \u{0394}\u{03c7}\u{00b2} \u{2212} \u{2191} z/r T [K] C/O";
        // The bundled font is a subset (fonts/LICENSE): all of printable ASCII as well.
        let ascii: String = (0x21u8..=0x7e).map(char::from).collect();
        for c in used
            .chars()
            .chain(ascii.chars())
            .filter(|c| !c.is_whitespace())
        {
            assert_ne!(font.glyph_id(c).0, 0, "no glyph for {c:?}");
        }
    }
}
