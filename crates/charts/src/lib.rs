//! # nivalis-charts
//!
//! Every figure of Nivalis, drawn once and generic over plotters'
//! [`DrawingBackend`](plotters::prelude::DrawingBackend): the page's canvas
//! (through a canvas back end in the web crate), SVG files and PNG files (the CLI).
//!
//! Views, each a `draw_*` function taking a `DrawingArea<DB, Shift>`, plain
//! data, a [`Theme`] and the output's pixels per point, and returning a
//! [`ChartLayout`] (pixel rectangles and axis transforms, for hover readouts):
//! (a) [`draw_c_to_o_profile`], (b) [`draw_temperature_profile`],
//! (c) [`draw_ice_map`], (d) [`draw_c_to_o_map`], (e) [`draw_abundance_profiles`],
//! (f) [`draw_chi2_map`], (j) [`age_fit::draw_chi2_age_map`] (the fit over formation radius x age),
//! and the uncertainty panel's figures ([`UncertaintyView`], drawn by
//! `uncertainty::draw_uncertainty`). Data structs ([`ProfileData`], [`TemperatureData`],
//! [`MapData`], [`AbundanceData`], [`Chi2Data`]) are built from a
//! `nivalis_physics::Model` by their `from_model`-style functions or
//! [`Figure::from_model`]. [`render_svg`] and [`render_png`] give paper-ready files;
//! [`FigureOptions`] reads and checks their options for every front end;
//! [`readout`] gives the one-line text of the data under a pixel of a drawn view.
//!
//! ```
//! use nivalis_charts::{render_svg, Figure, FigureSize, Theme, View};
//! use nivalis_physics::{Model, ModelParameters};
//! let model = Model::run(&ModelParameters::defaults()).unwrap();
//! let figure = Figure::from_model(View::CToOProfile, &model);
//! let svg = render_svg(&figure, &Theme::light(), FigureSize::single_column()).unwrap();
//! assert!(svg.contains("C/O"));
//! ```
//!
//! Undefined values (`None`, NaN) break lines, show as neutral grey in maps and
//! never reach the output as numbers. Lines differ by dash and marker as well as
//! colour, so every figure reads in greyscale; maps use viridis or cividis.

pub mod age_fit;
pub mod colour;
pub mod contour;
pub mod data;
pub mod error;
pub mod layout;
pub mod map;
pub mod options;
mod paint;
pub mod readout;
pub mod render;
pub mod reuse;
pub mod text;
pub mod theme;
pub mod uncertainty;
pub mod views;

pub use colour::{ColourMap, Rgba};
pub use data::{
    model_snowlines, AbundanceData, Chi2Data, ProfileData, SpeciesAbundance, TemperatureData,
};
pub use error::ChartError;
pub use layout::{AxisTransform, ChartLayout, PanelLayout, Scale};
pub use map::{rasterise_map, rasterise_map_over, MapData, MapGrid, RasterImage};
pub use options::{FigureFormat, FigureOptions, RenderedFigure};
#[cfg(feature = "png")]
pub use render::render_png;
pub use render::AnyView;
pub use render::{
    draw_figure, render_svg, Figure, FigureSize, View, DEFAULT_ASPECT, DOUBLE_COLUMN_WIDTH_PT,
    SINGLE_COLUMN_WIDTH_PT,
};
pub use reuse::{Reuse, SegmentKey};
pub use text::typeset_formula;
pub use theme::{LineDash, Marker, SeriesStyle, Theme};
#[cfg(feature = "png")]
pub use uncertainty::uncertainty_png;
pub use uncertainty::{
    posterior_figure, uncertainty_figure, uncertainty_svg, UncertaintyFigure, UncertaintySource,
    UncertaintyView,
};
pub use views::{
    draw_abundance_profiles, draw_abundance_profiles_reusing, draw_c_to_o_map, draw_c_to_o_profile,
    draw_c_to_o_profile_reusing, draw_chi2_map, draw_ice_map, draw_temperature_profile,
    draw_temperature_profile_reusing, map_layout, prepare_map, CellDrawing, MapDrawing,
};
pub use views::{
    draw_evolved_c_to_o, draw_radius_time_map, draw_snowline_tracks, evolution_figure,
    evolution_view_data, EvolutionView, EvolvedProfileData, RadiusTimeMapData, SnowlineTrackData,
};
