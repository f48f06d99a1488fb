//! Paper figures from the page, byte-identical to `nivalis figure` and
//! `nivalis fit --figure`: the same `nivalis_charts::draw_figure` on the same
//! data, the same renderers (`render_svg`, whose text is measured from the
//! bundled font on every target, see `nivalis_charts::text`; `render_png`,
//! text from the bundled DejaVu Sans) and the same provenance embedding
//! (`nivalis_exports::figures`).
//!
//! Plain Rust (no JavaScript types), so it is tested natively.

use nivalis_charts::{ChartError, Figure, RenderedFigure};
use nivalis_exports::figures::{embed_png_provenance_with, embed_svg_provenance_with};
use nivalis_exports::Provenance;

use crate::readout::ViewData;

/// The options of a figure download: read and checked in
/// `nivalis_charts::options`, shared with `nivalis figure`.
pub use nivalis_charts::{FigureFormat, FigureOptions};

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
    figure_file_with(figure, options, provenance, view, &[])
}

/// [`figure_file`] with further provenance pairs (the uncertainty figures' seed and samples).
pub fn figure_file_with(
    figure: &Figure,
    options: &FigureOptions,
    provenance: &Provenance,
    view: &str,
    extra: &[(&str, String)],
) -> Result<Vec<u8>, ChartError> {
    Ok(match options.render(figure)? {
        RenderedFigure::Svg(svg) => {
            embed_svg_provenance_with(&svg, provenance, view, extra).into_bytes()
        }
        RenderedFigure::Png(png) => embed_png_provenance_with(&png, provenance, view, extra),
    })
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
