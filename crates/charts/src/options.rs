//! The options of a figure file (format, journal width, PNG resolution,
//! colours), read and checked once for every front end (issue 9 item 4):
//! `nivalis figure --format --width --dpi --theme` and the page's figure
//! downloads take the same names, the same defaults and give the same
//! messages, and [`FigureOptions::render`] draws the file with them.

use serde_json::Value;

use crate::render::{Figure, FigureSize};
use crate::{ChartError, Theme};

/// The lowest PNG resolution accepted [dots per inch].
pub const MIN_DPI: f64 = 36.0;
/// The highest PNG resolution accepted [dots per inch].
pub const MAX_DPI: f64 = 1200.0;
/// The default PNG resolution [dots per inch].
pub const DEFAULT_DPI: f64 = 300.0;

/// File format of a figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureFormat {
    /// Scalable vector graphics, text as text.
    Svg,
    /// Portable network graphics at a chosen DPI.
    Png,
}

impl FigureFormat {
    /// The format's name: `svg` or `png`.
    pub fn key(self) -> &'static str {
        match self {
            FigureFormat::Svg => "svg",
            FigureFormat::Png => "png",
        }
    }

    /// The format of a name; `None` for any other text.
    pub fn from_key(key: &str) -> Option<FigureFormat> {
        [FigureFormat::Svg, FigureFormat::Png]
            .into_iter()
            .find(|f| f.key() == key)
    }
}

/// The options of a figure file, as `nivalis figure` takes them
/// (`--format`, `--width`, `--dpi`, `--theme`), with the CLI's defaults.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FigureOptions {
    /// `--format svg|png` (default svg).
    pub format: FigureFormat,
    /// `--width single|double` (default single): 252 pt or 511 pt wide.
    pub double_column: bool,
    /// `--dpi` (default 300), PNG only; [`MIN_DPI`]..=[`MAX_DPI`].
    pub dpi: f64,
    /// `--theme light|dark` (default light).
    pub dark: bool,
}

impl Default for FigureOptions {
    fn default() -> Self {
        FigureOptions {
            format: FigureFormat::Svg,
            double_column: false,
            dpi: DEFAULT_DPI,
            dark: false,
        }
    }
}

/// The message for a resolution outside [`MIN_DPI`]..=[`MAX_DPI`] (`got` as typed).
fn dpi_problem(got: &str) -> String {
    format!("dpi: must be a number between 36 and 1200, got {got}")
}

impl FigureOptions {
    /// Reads `{format, width, dpi, theme}` (each optional; `dpi` a number or
    /// text that reads as one); an error names the field and what it allows.
    pub fn from_value(value: &Value) -> Result<FigureOptions, String> {
        let mut out = FigureOptions::default();
        let text = |key: &str| value.get(key).filter(|v| !v.is_null());
        if let Some(v) = text("format") {
            out.format = v
                .as_str()
                .and_then(FigureFormat::from_key)
                .ok_or_else(|| format!("format: must be svg or png, got {v}"))?;
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
                Some(d) if FigureOptions::dpi_allowed(d) => d,
                _ => return Err(dpi_problem(&v.to_string())),
            };
        }
        Ok(out)
    }

    fn dpi_allowed(dpi: f64) -> bool {
        dpi.is_finite() && (MIN_DPI..=MAX_DPI).contains(&dpi)
    }

    /// Checks options built from parsed flags (the CLI's): the same message
    /// as [`FigureOptions::from_value`] for a resolution out of range.
    pub fn check(&self) -> Result<(), String> {
        if FigureOptions::dpi_allowed(self.dpi) {
            Ok(())
        } else {
            Err(dpi_problem(&self.dpi.to_string()))
        }
    }

    /// The colours.
    pub fn theme(&self) -> Theme {
        if self.dark {
            Theme::dark()
        } else {
            Theme::light()
        }
    }

    /// The journal width (height 0.75 x width).
    pub fn size(&self) -> FigureSize {
        if self.double_column {
            FigureSize::double_column()
        } else {
            FigureSize::single_column()
        }
    }

    /// The figure drawn as a file in these options (without provenance;
    /// `nivalis_exports::figures` embeds it).
    #[cfg(feature = "png")]
    pub fn render(&self, figure: &Figure) -> Result<RenderedFigure, ChartError> {
        Ok(match self.format {
            FigureFormat::Svg => {
                RenderedFigure::Svg(crate::render_svg(figure, &self.theme(), self.size())?)
            }
            FigureFormat::Png => RenderedFigure::Png(crate::render_png(
                figure,
                &self.theme(),
                self.size(),
                self.dpi,
            )?),
        })
    }
}

/// A figure file as drawn by [`FigureOptions::render`].
#[derive(Debug, Clone, PartialEq)]
pub enum RenderedFigure {
    /// SVG text.
    Svg(String),
    /// PNG bytes.
    Png(Vec<u8>),
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn options_follow_the_cli_defaults_and_name_bad_fields() {
        let o = FigureOptions::from_value(&json!({})).unwrap();
        assert_eq!(o, FigureOptions::default());
        let o = FigureOptions::from_value(
            &json!({"format": "png", "width": "double", "dpi": "150", "theme": "dark"}),
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
            FigureOptions::from_value(&json!({"dpi": 20})).unwrap_err(),
            "dpi: must be a number between 36 and 1200, got 20"
        );
        assert_eq!(
            FigureOptions::from_value(&json!({"dpi": "5000"})).unwrap_err(),
            "dpi: must be a number between 36 and 1200, got \"5000\""
        );
        assert_eq!(
            FigureOptions::from_value(&json!({"width": "triple"})).unwrap_err(),
            "width: must be single or double, got \"triple\""
        );
        assert_eq!(
            FigureOptions::from_value(&json!({"format": "gif"})).unwrap_err(),
            "format: must be svg or png, got \"gif\""
        );
        assert_eq!(
            FigureOptions::from_value(&json!({"theme": 1})).unwrap_err(),
            "theme: must be light or dark, got 1"
        );
    }

    #[test]
    fn flags_are_checked_with_the_same_message() {
        assert_eq!(FigureOptions::default().check(), Ok(()));
        let o = FigureOptions {
            dpi: 20.0,
            ..FigureOptions::default()
        };
        assert_eq!(
            o.check().unwrap_err(),
            "dpi: must be a number between 36 and 1200, got 20"
        );
        let o = FigureOptions {
            dpi: f64::NAN,
            ..FigureOptions::default()
        };
        assert!(o.check().is_err());
        for f in [FigureFormat::Svg, FigureFormat::Png] {
            assert_eq!(FigureFormat::from_key(f.key()), Some(f));
        }
    }
}
