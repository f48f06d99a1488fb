//! Paper figures from the page, byte-identical to `nivalis figure` and
//! `nivalis fit --figure`: the same `nivalis_charts::draw_figure` on the same
//! data, the same renderers (`render_svg`, whose text is measured from the
//! bundled font on every target, see `nivalis_charts::text`; `render_png`,
//! text from the bundled DejaVu Sans) and the same provenance embedding
//! (`nivalis_exports::figures`).
//!
//! Plain Rust (no JavaScript types), so it is tested natively.

use nivalis_charts::{ChartError, Figure, FigureSize, Theme};
use nivalis_exports::figures::{embed_png_provenance, embed_svg_provenance};
use nivalis_exports::Provenance;
use serde_json::Value;

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
            d.infeasible_formation_radii_au.clear();
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
            let svg = nivalis_charts::render_svg(figure, &options.theme(), options.size())?;
            Ok(embed_svg_provenance(&svg, provenance, view).into_bytes())
        }
        FigureFormat::Png => {
            let png =
                nivalis_charts::render_png(figure, &options.theme(), options.size(), options.dpi)?;
            Ok(embed_png_provenance(&png, provenance, view))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_charts::View;
    use nivalis_physics::{Model, ModelParameters};

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
