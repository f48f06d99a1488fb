//! (j) The fit over formation radius x formation age on the evolving disk (docs/model.md
//! section 12.9; `nivalis fit DISK ... --over-age-myr T1,T2[,N] --figure FILE`, the page's
//! evolution panel): delta chi-square over formation radius (x, au, log) and formation age
//! (y, Myr, log) with a colour bar, the 1- and 2-sigma contours and the best cell marked.
//!
//! The drawing is the planet chi-square map's ([`crate::draw_chi2_map`]: the same colour
//! scale, contouring, cell grouping, legend and colour bar), fed the age grid as its y axis;
//! only the data and the axis label differ. View name [`CHI2_AGE_MAP_VIEW`].

use nivalis_physics::evolution::fit::AgeRadiusMap;
use plotters::coord::Shift;
use plotters::prelude::{DrawingArea, DrawingBackend};

use crate::data::Chi2Data;
use crate::error::ChartError;
use crate::layout::ChartLayout;
use crate::render::Figure;
use crate::theme::Theme;

/// The view name of the radius x age map, as the figure's provenance records it.
pub const CHI2_AGE_MAP_VIEW: &str = "chi2_age_map";

/// The y-axis label of the radius x age map.
pub const AGE_AXIS_LABEL: &str = "formation age t [Myr]";

/// The map's data: chi-square at `[age_index * radius_au.len() + radius_index]` (the
/// `AgeRadiusMap` rows are age-major in the same order), NaN where no eligible solid-to-gas
/// ratio gives defined values; the ages on the y axis; the contours at the map's 1- and
/// 2-sigma delta chi-square (2.30 and 6.18 for the two mapped parameters radius and age,
/// Press et al. 2007, Numerical Recipes, section 15.6; Avni 1976), only when the fit is acceptable;
/// the best cell (radius [au], age [Myr]) marked.
pub fn age_fit_data(map: &AgeRadiusMap) -> Chi2Data {
    let chi2: Vec<f64> = map
        .rows
        .iter()
        .map(|r| r.chi2.unwrap_or(f64::NAN))
        .collect();
    let thresholds = if map.goodness.acceptable {
        vec![
            ("1σ".to_string(), map.thresholds.one_sigma),
            ("2σ".to_string(), map.thresholds.two_sigma),
        ]
    } else {
        Vec::new()
    };
    let mut data = Chi2Data::new(
        &map.radius_au,
        &map.times_myr,
        &chi2,
        &thresholds,
        map.best.map(|b| (b.row.radius_au, b.row.time_myr)),
    );
    data.y_label = AGE_AXIS_LABEL.to_string();
    data
}

/// The radius x age map as a [`Figure`] for [`crate::render_svg`], [`crate::render_png`] and
/// `FigureOptions::render`.
pub fn age_fit_figure(map: &AgeRadiusMap) -> Figure {
    Figure::Chi2Age(age_fit_data(map))
}

/// (j) Draws the radius x age map ([`age_fit_data`]) on any area: the planet chi-square map's
/// drawing with ages on the y axis.
pub fn draw_chi2_age_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &Chi2Data,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    crate::draw_chi2_map(area, data, theme, pixels_per_point)
}
