//! Paper figures from the page, byte-identical to `nivalis figure` and
//! `nivalis fit --figure`: the same `nivalis_charts::draw_figure` on the same
//! data, the same PNG renderer (`render_png`, text from the bundled DejaVu
//! Sans) and the same provenance embedding (`nivalis_exports::figures`).
//!
//! The one thing that differs between the platforms is how plotters measures
//! text for the SVG layout: natively it measures with the font the charts
//! crate registered (the bundled DejaVu Sans, through plotters' `ab_glyph`
//! back end), in the browser it would ask the page layout with the browser's
//! fonts. [`render_svg`] therefore wraps plotters' SVG back end in
//! [`MeasuredSvg`], which measures exactly as plotters' native `ab_glyph`
//! back end does, from the same font bytes. A native test checks that the
//! result equals `nivalis_charts::render_svg` for every view.
//!
//! Plain Rust (no JavaScript types), so it is tested natively.

use ab_glyph::{Font, FontRef, ScaleFont};
use nivalis_charts::render::{BUNDLED_FONT, SVG_UNITS_PER_POINT};
use nivalis_charts::{draw_figure, CellDrawing, ChartError, Figure, FigureSize, Theme};
use nivalis_exports::figures::{embed_png_provenance, embed_svg_provenance};
use nivalis_exports::Provenance;
use plotters::prelude::{IntoDrawingArea, SVGBackend};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};
use serde_json::Value;
use std::sync::OnceLock;

use crate::readout::ViewData;

/// File format of a figure download.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureFormat {
    /// Scalable vector graphics, text as text.
    Svg,
    /// Portable network graphics at a chosen DPI.
    Png,
}

/// The options of a figure download, as `nivalis figure` takes them
/// (`--format`, `--width`, `--dpi`, `--theme`), with the CLI's defaults.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FigureOptions {
    /// `--format svg|png` (default svg).
    pub format: FigureFormat,
    /// `--width single|double` (default single): 252 pt or 511 pt wide.
    pub double_column: bool,
    /// `--dpi` (default 300), PNG only; the renderer checks 36..1200.
    pub dpi: f64,
    /// `--theme light|dark` (default light).
    pub dark: bool,
}

impl Default for FigureOptions {
    fn default() -> Self {
        FigureOptions {
            format: FigureFormat::Svg,
            double_column: false,
            dpi: 300.0,
            dark: false,
        }
    }
}

impl FigureOptions {
    /// Reads `{format, width, dpi, theme}` (each optional); an error names the field and what it allows.
    pub fn from_value(value: &Value) -> Result<FigureOptions, String> {
        let mut out = FigureOptions::default();
        let text = |key: &str| value.get(key).filter(|v| !v.is_null());
        if let Some(v) = text("format") {
            out.format = match v.as_str() {
                Some("svg") => FigureFormat::Svg,
                Some("png") => FigureFormat::Png,
                _ => return Err(format!("format: must be svg or png, got {v}")),
            };
        }
        if let Some(v) = text("width") {
            out.double_column = match v.as_str() {
                Some("single") => false,
                Some("double") => true,
                _ => return Err(format!("width: must be single or double, got {v}")),
            };
        }
        if let Some(v) = text("theme") {
            out.dark = match v.as_str() {
                Some("light") => false,
                Some("dark") => true,
                _ => return Err(format!("theme: must be light or dark, got {v}")),
            };
        }
        if let Some(v) = text("dpi") {
            let dpi = match v {
                Value::Number(n) => n.as_f64(),
                Value::String(s) => s.trim().parse::<f64>().ok(),
                _ => None,
            };
            out.dpi = match dpi {
                Some(d) if d.is_finite() && (36.0..=1200.0).contains(&d) => d,
                _ => {
                    return Err(format!(
                        "dpi: must be a number between 36 and 1200, got {v}"
                    ))
                }
            };
        }
        Ok(out)
    }

    fn theme(&self) -> Theme {
        if self.dark {
            Theme::dark()
        } else {
            Theme::light()
        }
    }

    fn size(&self) -> FigureSize {
        if self.double_column {
            FigureSize::double_column()
        } else {
            FigureSize::single_column()
        }
    }
}

/// The paper figure of a view, from the data the page draws it from. The C/O
/// profile loses the planet marks the page may have added, so the figure is
/// exactly what `nivalis figure --view c_to_o` draws.
pub fn figure_of(data: &ViewData) -> Figure {
    match data {
        ViewData::Profile(d) => {
            let mut d = d.clone();
            d.planet_radius_au = None;
            d.allowed_formation_radii_au.clear();
            Figure::CToOProfile(d)
        }
        ViewData::Temperature(d) => Figure::TemperatureProfile(d.clone()),
        ViewData::IceMap(d) => Figure::IceMap(d.clone()),
        ViewData::CToOMap(d) => Figure::CToOMap(d.clone()),
        ViewData::Abundances(d) => Figure::Abundances(d.clone()),
    }
}

/// The figure file's bytes with provenance, exactly as the CLI writes it.
/// `view` is the CLI's view text (`c_to_o`, `ice_map:CO`, `chi2_map`, ...),
/// which the provenance records.
pub fn figure_file(
    figure: &Figure,
    options: &FigureOptions,
    provenance: &Provenance,
    view: &str,
) -> Result<Vec<u8>, ChartError> {
    match options.format {
        FigureFormat::Svg => {
            let svg = render_svg(figure, &options.theme(), options.size())?;
            Ok(embed_svg_provenance(&svg, provenance, view).into_bytes())
        }
        FigureFormat::Png => {
            let png =
                nivalis_charts::render_png(figure, &options.theme(), options.size(), options.dpi)?;
            Ok(embed_png_provenance(&png, provenance, view))
        }
    }
}

/// `nivalis_charts::render_svg` with the text measured by [`MeasuredSvg`]:
/// the same steps (size check, SVG drawn at 10 units per pt, the physical
/// size declared in pt), so the output is the CLI's on every platform.
pub fn render_svg(figure: &Figure, theme: &Theme, size: FigureSize) -> Result<String, ChartError> {
    // The size check of render_svg: 72..2880 pt (1 to 40 in).
    for (field, v) in [("width_pt", size.width_pt), ("height_pt", size.height_pt)] {
        if !(v.is_finite() && (72.0..=2880.0).contains(&v)) {
            return Err(ChartError::InvalidValue {
                field,
                value: v,
                allowed: "between 72 and 2880 (1 to 40 in)",
            });
        }
    }
    let w = (size.width_pt * SVG_UNITS_PER_POINT).round() as u32;
    let h = (size.height_pt * SVG_UNITS_PER_POINT).round() as u32;
    let mut out = String::new();
    {
        let area = MeasuredSvg(SVGBackend::with_string(&mut out, (w, h))).into_drawing_area();
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
    let header = format!("<svg width=\"{w}\" height=\"{h}\"");
    let physical = format!(
        "<svg width=\"{}pt\" height=\"{}pt\"",
        fmt_pt(size.width_pt),
        fmt_pt(size.height_pt)
    );
    Ok(out.replacen(&header, &physical, 1))
}

/// A size in pt as render_svg writes it: two decimals, trailing zeros dropped.
fn fmt_pt(v: f64) -> String {
    let s = format!("{v:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

fn font() -> &'static FontRef<'static> {
    static FONT: OnceLock<FontRef<'static>> = OnceLock::new();
    // The bundled bytes are a valid font: the charts crate's tests parse them.
    FONT.get_or_init(|| FontRef::try_from_slice(BUNDLED_FONT).expect("bundled font parses"))
}

/// Width and height [px] of `text` at plotters font size `size`, computed as
/// plotters 0.3's `ab_glyph` font back end computes its layout box (advances
/// plus kerning at a scale of `size` px, height `size / 1.24`, both truncated),
/// which is what the CLI's SVG layout uses.
pub fn plotters_text_size(text: &str, size: f64) -> (u32, u32) {
    let pixel_per_em = size / 1.24;
    let scaled = font().as_scaled(size as f32);
    let mut x_pixels = 0f32;
    let mut previous = None;
    for c in text.chars() {
        let id = scaled.glyph_id(c);
        x_pixels += scaled.h_advance(id);
        if let Some(p) = previous {
            x_pixels += scaled.kern(p, id);
        }
        previous = Some(id);
    }
    (x_pixels as i32 as u32, pixel_per_em as i32 as u32)
}

/// plotters' SVG back end with text measured by [`plotters_text_size`];
/// every drawing call is forwarded unchanged.
struct MeasuredSvg<'a>(SVGBackend<'a>);

type SvgError = <SVGBackend<'static> as DrawingBackend>::ErrorType;

impl DrawingBackend for MeasuredSvg<'_> {
    type ErrorType = SvgError;

    fn get_size(&self) -> (u32, u32) {
        self.0.get_size()
    }
    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.ensure_prepared()
    }
    fn present(&mut self) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.present()
    }
    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.draw_pixel(point, color)
    }
    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.draw_line(from, to, style)
    }
    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.draw_rect(upper_left, bottom_right, style, fill)
    }
    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.draw_path(path, style)
    }
    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.draw_circle(center, radius, style, fill)
    }
    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.fill_polygon(vert, style)
    }
    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.draw_text(text, style, pos)
    }
    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<SvgError>> {
        Ok(plotters_text_size(text, style.size()))
    }
    fn blit_bitmap(
        &mut self,
        pos: BackendCoord,
        size: (u32, u32),
        src: &[u8],
    ) -> Result<(), DrawingErrorKind<SvgError>> {
        self.0.blit_bitmap(pos, size, src)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_charts::{Chi2Data, View};
    use nivalis_physics::planet::{chi_square_map, MapSettings, ObservedEnvelope};
    use nivalis_physics::{Model, ModelParameters, Species};

    #[test]
    fn svg_equals_the_cli_renderer_for_every_view() {
        // The CLI's renderer measures text through plotters' own ab_glyph back end
        // with the bundled font registered; ours measures with our copy of that
        // computation. Both must give the same document, byte for byte.
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let views = [
            View::CToOProfile,
            View::TemperatureProfile,
            View::Abundances,
            View::IceMap(Species::CO),
            View::CToOMap,
        ];
        for (view, theme, size) in [
            (0, Theme::light(), FigureSize::single_column()),
            (1, Theme::dark(), FigureSize::double_column()),
            (2, Theme::light(), FigureSize::double_column()),
            (3, Theme::light(), FigureSize::single_column()),
            (4, Theme::dark(), FigureSize::single_column()),
        ] {
            let figure = Figure::from_model(views[view], &model);
            let ours = render_svg(&figure, &theme, size).unwrap();
            let cli = nivalis_charts::render_svg(&figure, &theme, size).unwrap();
            assert!(
                ours == cli,
                "view {:?}: SVG differs from nivalis_charts::render_svg",
                views[view]
            );
        }
        let map = chi_square_map(
            &model,
            &ObservedEnvelope {
                c_to_o: 0.8,
                c_to_o_sigma: 0.1,
                metallicity: None,
            },
            &MapSettings::defaults(),
        )
        .unwrap();
        let figure = Figure::Chi2(Chi2Data::from_map(&map));
        assert!(
            render_svg(&figure, &Theme::light(), FigureSize::single_column()).unwrap()
                == nivalis_charts::render_svg(
                    &figure,
                    &Theme::light(),
                    FigureSize::single_column()
                )
                .unwrap()
        );
    }

    #[test]
    fn figure_of_the_page_profile_drops_the_planet_marks() {
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let marked = nivalis_charts::ProfileData::from_model(&model)
            .with_planet_radius_au(5.0)
            .with_allowed_formation_radii_au(vec![(1.0, 2.0)]);
        assert_eq!(
            figure_of(&ViewData::Profile(marked)),
            Figure::from_model(View::CToOProfile, &model)
        );
    }

    #[test]
    fn options_follow_the_cli_defaults_and_name_bad_fields() {
        let o = FigureOptions::from_value(&serde_json::json!({})).unwrap();
        assert_eq!(o, FigureOptions::default());
        let o = FigureOptions::from_value(
            &serde_json::json!({"format": "png", "width": "double", "dpi": "150", "theme": "dark"}),
        )
        .unwrap();
        assert_eq!(
            o,
            FigureOptions {
                format: FigureFormat::Png,
                double_column: true,
                dpi: 150.0,
                dark: true
            }
        );
        assert_eq!(
            FigureOptions::from_value(&serde_json::json!({"dpi": 20})).unwrap_err(),
            "dpi: must be a number between 36 and 1200, got 20"
        );
        assert!(
            FigureOptions::from_value(&serde_json::json!({"width": "triple"}))
                .unwrap_err()
                .starts_with("width:")
        );
    }

    #[test]
    fn png_has_the_requested_pixels() {
        // 252 pt at 150 dpi = 3.5 in x 150 = 525 px wide, 189 pt = 393.75 -> 394 px high (FigureSize::pixels_at_dpi).
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let figure = Figure::from_model(View::TemperatureProfile, &model);
        let options = FigureOptions {
            format: FigureFormat::Png,
            dpi: 150.0,
            ..FigureOptions::default()
        };
        let file = nivalis_disk_files::DiskFile::defaults();
        let bytes = figure_file(&figure, &options, &Provenance::of(&file), "temperature").unwrap();
        assert_eq!(&bytes[1..4], b"PNG");
        let width = u32::from_be_bytes(bytes[16..20].try_into().unwrap());
        let height = u32::from_be_bytes(bytes[20..24].try_into().unwrap());
        assert_eq!((width, height), (525, 394));
    }
}
