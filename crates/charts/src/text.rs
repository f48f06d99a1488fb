//! Text for every figure, in one place: the bundled font, text measurement
//! for the SVG layout, and formula typesetting (subscript and superscript
//! digits).
//!
//! SVG layout depends on how wide each label is. Natively plotters could
//! measure with a registered font, but in the browser it would ask the page's
//! fonts, so the same figure would lay out differently on the two platforms.
//! [`MeasuredSvg`] therefore wraps plotters' SVG back end and measures every
//! text from the bundled DejaVu Sans exactly as plotters 0.3's own `ab_glyph`
//! font back end does (advances plus kerning at a scale of `size` px, height
//! `size / 1.24`, both truncated). [`crate::render_svg`] draws through it on
//! every target, so the page and the CLI write the same SVG byte for byte.

/// A chemical formula with subscript digits: "CH3OH" becomes "CH₃OH".
pub fn typeset_formula(formula: &str) -> String {
    formula
        .chars()
        .map(|c| {
            if c.is_ascii_digit() {
                char::from_u32(0x2080 + (c as u32 - '0' as u32)).unwrap_or(c)
            } else {
                c
            }
        })
        .collect()
}

/// Digits and minus signs as superscripts: "-2" becomes "⁻²" (for units and powers of ten).
pub fn superscript(s: &str) -> String {
    s.chars()
        .map(|c| match c {
            '0' => '\u{2070}',
            '1' => '\u{00b9}',
            '2' => '\u{00b2}',
            '3' => '\u{00b3}',
            '4'..='9' => char::from_u32(0x2074 + (c as u32 - '4' as u32)).unwrap_or(c),
            '-' => '\u{207b}',
            other => other,
        })
        .collect()
}

#[cfg(feature = "png")]
pub(crate) use measured::MeasuredSvg;
#[cfg(feature = "png")]
pub use measured::{bundled_font, plotters_text_size};

#[cfg(feature = "png")]
mod measured {
    use crate::render::BUNDLED_FONT;
    use ab_glyph::{Font, FontRef, ScaleFont};
    use plotters::prelude::SVGBackend;
    use plotters_backend::{
        BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend,
        DrawingErrorKind,
    };
    use std::sync::OnceLock;

    /// The bundled font, parsed once.
    pub fn bundled_font() -> &'static FontRef<'static> {
        static FONT: OnceLock<FontRef<'static>> = OnceLock::new();
        // The bundled bytes are a valid font: a unit test parses them.
        FONT.get_or_init(|| FontRef::try_from_slice(BUNDLED_FONT).expect("bundled font parses"))
    }

    /// Width and height [px] of `text` at plotters font size `size`, as
    /// plotters 0.3's `ab_glyph` font back end computes its layout box.
    pub fn plotters_text_size(text: &str, size: f64) -> (u32, u32) {
        let pixel_per_em = size / 1.24;
        let scaled = bundled_font().as_scaled(size as f32);
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
    pub(crate) struct MeasuredSvg<'a>(pub SVGBackend<'a>);

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
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formulas_get_subscripts() {
        assert_eq!(typeset_formula("CH3OH"), "CH\u{2083}OH");
        assert_eq!(superscript("-2"), "\u{207b}\u{00b2}");
    }

    /// The measured SVG equals what plotters' own native `ab_glyph` back end
    /// lays out with the bundled font registered, for every view: our copy of
    /// plotters' measurement is exact (native only: the browser has no
    /// registered font to compare with).
    #[cfg(all(feature = "png", not(target_arch = "wasm32")))]
    #[test]
    fn measured_svg_equals_plotters_native_layout() {
        use crate::render::{draw_figure, ensure_font, SVG_UNITS_PER_POINT};
        use crate::CellDrawing;
        use crate::{render_svg, Chi2Data, Figure, FigureSize, Theme, View};
        use nivalis_physics::planet::{chi_square_map, MapSettings, ObservedEnvelope};
        use nivalis_physics::{Model, ModelParameters, Species};
        use plotters::prelude::{IntoDrawingArea, SVGBackend};
        let model = Model::run(&ModelParameters::defaults()).unwrap();
        let views = [
            View::CToOProfile,
            View::TemperatureProfile,
            View::Abundances,
            View::IceMap(Species::CO),
            View::CToOMap,
        ];
        let map = chi_square_map(
            &model,
            &ObservedEnvelope::c_to_o(0.8, 0.1),
            &MapSettings::defaults(),
        )
        .unwrap();
        let mut figures: Vec<Figure> = views
            .into_iter()
            .map(|v| Figure::from_model(v, &model))
            .collect();
        figures.push(Figure::Chi2(Chi2Data::from_map(&map)));
        for (i, figure) in figures.into_iter().enumerate() {
            let theme = if i % 2 == 0 {
                Theme::light()
            } else {
                Theme::dark()
            };
            let size = if i < 2 {
                FigureSize::single_column()
            } else {
                FigureSize::double_column()
            };
            ensure_font(&theme);
            let w = (size.width_pt * SVG_UNITS_PER_POINT).round() as u32;
            let h = (size.height_pt * SVG_UNITS_PER_POINT).round() as u32;
            let mut plain = String::new();
            {
                let area = SVGBackend::with_string(&mut plain, (w, h)).into_drawing_area();
                draw_figure(
                    &area,
                    &figure,
                    &theme,
                    SVG_UNITS_PER_POINT,
                    CellDrawing::Rectangles,
                )
                .unwrap();
                area.present().unwrap();
            }
            let ours = render_svg(&figure, &theme, size).unwrap();
            let body = |s: &str| s[s.find('>').unwrap()..].to_string();
            assert!(
                body(&ours) == body(&plain),
                "figure {i}: measured layout differs from plotters' native one"
            );
        }
    }
}
