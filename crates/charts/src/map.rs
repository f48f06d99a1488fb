//! r-z maps: their input data ([`MapData`]), the one-pass rasteriser that
//! turns a map into an RGBA buffer for the page's `putImageData`
//! ([`rasterise_map`]), and the cell geometry both share.
//!
//! Geometry: column j covers log10 r between the midpoints to its neighbours
//! (the outer columns extend half a spacing outward; on the model's log grid
//! that is exactly r_in..r_out). Within a column, sample k covers z/r between
//! the midpoints to its neighbours, from max(0, first - half a spacing) to
//! last + half a spacing; above that top the map is outside the grid
//! (transparent). Undefined values (NaN) are drawn in the theme's neutral grey.

use std::borrow::Cow;
use std::ops::Deref;
use std::sync::Arc;

use nivalis_physics::units::AU_CM;
use nivalis_physics::{Model, SnowSurface, Species};

use crate::colour::{ColourMap, Rgba};
use crate::contour::marching_squares;
use crate::error::{check_increasing_positive, check_length, ChartError};
use crate::paint::round_to_byte_index;
use crate::text::typeset_formula;
use crate::theme::Theme;

/// Inputs of an r-z map (views c and d): the values on an r-z grid ([`MapGrid`],
/// shared by every map of one structure and read through the map: `map.radius_au()`,
/// `map.rows()`, `map.z_over_r()`, `map.scale_height_over_r()`, `map.z_over_r_max()`).
#[derive(Debug, Clone, PartialEq)]
pub struct MapData {
    /// The r-z grid the values sit on.
    pub grid: Arc<MapGrid>,
    /// Value of each sample, `[column * rows + row]` as the grid's z/r; NaN where undefined.
    pub values: Vec<f64>,
    /// Colour-bar label, e.g. "CO ice fraction".
    pub value_label: String,
    /// Values mapped to the ends of the colour map (values outside are clamped).
    pub value_range: (f64, f64),
    /// The colour map.
    pub colour_map: ColourMap,
    /// Draw the contour of this level (marching squares over the samples), e.g. 0.5 for the snow surface.
    pub contour_level: Option<f64>,
    /// Legend text of that contour, e.g. "f = 0.5".
    pub contour_label: String,
    /// Polylines of (r [au], z/r) drawn as given (e.g. the model's own snow surface); each breaks at gaps.
    pub curves: Vec<Vec<(f64, f64)>>,
    /// A value marked on the colour bar, as (label, value), e.g. ("star", 0.55).
    pub reference_value: Option<(String, f64)>,
}

/// A map reads as its grid (`map.radius_au()`, `map.rows()`, ...).
impl Deref for MapData {
    type Target = MapGrid;
    fn deref(&self) -> &MapGrid {
        &self.grid
    }
}

/// The r-z grid of a model's maps: what [`MapData`] takes from the structure
/// alone (radii, z/r of every sample, H/r, the plot's top), the same for every
/// map of one structure. Built once ([`MapGrid::new`], [`MapGrid::from_model`])
/// and not changed after: its checks ([`MapData`]'s validation of the grid) and
/// the cell edges the raster, the readout and the SVG cells use are made when
/// it is built, so the maps drawn on it after every edit do not make them again.
#[derive(Debug, Clone, PartialEq)]
pub struct MapGrid {
    /// Radius of each column [au], increasing.
    radius_au: Vec<f64>,
    /// Samples per column.
    rows: usize,
    /// z/r of each sample, `[column * rows + row]`, increasing within a column.
    z_over_r: Vec<f64>,
    /// H/r of each column (midplane scale height over radius); empty draws no scale-height lines.
    scale_height_over_r: Vec<f64>,
    /// Top of the plot in z/r.
    z_over_r_max: f64,
    /// The grid's part of [`MapData::validate`], in its order: the radii, the row count and
    /// the length of z/r (checked before the values' length); then the length of H/r and
    /// every z/r finite and >= 0 (after it).
    checks: [Result<(), ChartError>; 2],
    /// log10 r at the column edges (n + 1 of them); empty when the radii are.
    column_edges_log: Vec<f64>,
    /// Upper z/r edge of every sample, `[column * rows + row]`; empty unless the first checks pass.
    row_tops: Vec<f64>,
    /// Lower z/r edge of each column; empty unless the first checks pass.
    row_bottoms: Vec<f64>,
    /// Whether z/r never decreases within any column (every model's map), so that
    /// the cells' tops never decrease either (the raster's walk then stops at the
    /// first cell reaching the top pixel row); false unless the first checks pass.
    rising: bool,
}

impl MapGrid {
    /// A grid of `radius_au.len()` columns of `rows` samples each: radius of each column
    /// [au] (increasing), z/r of each sample `[column * rows + row]` (finite, >= 0,
    /// increasing within a column), H/r of each column (empty: no scale-height lines) and
    /// the plot's top in z/r. Nothing is refused here: a map on a grid that breaks these
    /// rules is refused when drawn, with the first offending field (as before the grid was
    /// shared).
    pub fn new(
        radius_au: Vec<f64>,
        rows: usize,
        z_over_r: Vec<f64>,
        scale_height_over_r: Vec<f64>,
        z_over_r_max: f64,
    ) -> MapGrid {
        let heights_valid = all_valid_heights(&z_over_r);
        MapGrid::assemble(
            radius_au,
            rows,
            z_over_r,
            scale_height_over_r,
            z_over_r_max,
            heights_valid,
        )
    }

    /// [`MapGrid::new`] given whether every z/r is finite and >= 0
    /// ([`all_valid_heights`], or the same test made while z/r was formed).
    fn assemble(
        radius_au: Vec<f64>,
        rows: usize,
        z_over_r: Vec<f64>,
        scale_height_over_r: Vec<f64>,
        z_over_r_max: f64,
        heights_valid: bool,
    ) -> MapGrid {
        let first = (|| {
            check_increasing_positive("radius_au", &radius_au)?;
            if rows == 0 {
                return Err(ChartError::EmptyData { field: "rows" });
            }
            check_length("z_over_r", &z_over_r, radius_au.len() * rows)
        })();
        let second = if scale_height_over_r.is_empty() {
            Ok(())
        } else {
            check_length("scale_height_over_r", &scale_height_over_r, radius_au.len())
        }
        .and_then(|()| {
            if heights_valid {
                Ok(())
            } else {
                Err(first_invalid_height(&z_over_r))
            }
        });
        let column_edges_log = if radius_au.is_empty() {
            Vec::new()
        } else {
            column_edges_log(&radius_au)
        };
        let (mut row_tops, mut row_bottoms) = (Vec::new(), Vec::new());
        let mut rising = false;
        if first.is_ok() {
            row_tops.reserve(z_over_r.len());
            row_bottoms.reserve(radius_au.len());
            rising = true;
            for column in z_over_r.chunks_exact(rows) {
                row_bottoms.push(push_row_edges(column, &mut row_tops));
                rising &= column.windows(2).fold(true, |all, w| all & (w[0] <= w[1]));
            }
        }
        MapGrid {
            radius_au,
            rows,
            z_over_r,
            scale_height_over_r,
            z_over_r_max,
            checks: [first, second],
            column_edges_log,
            row_tops,
            row_bottoms,
            rising,
        }
    }

    /// The grid of a model's structure.
    pub fn from_model(model: &Model) -> MapGrid {
        let st = &model.structure();
        let rows = st.samples_per_column();
        // Each sample's height straight from the structure's flat array (the
        // `height_cm` of `st.sample(j, s)`, without building the whole sample).
        let heights = &st.samples().height_cm;
        let mut z_over_r = Vec::with_capacity(heights.len());
        // While z/r is formed: the grid's top (`fold(0.0, f64::max)`, whose library call
        // per sample WebAssembly makes, written as the comparison it comes to: NaN and
        // equal values keep the top) and whether every z/r is a valid height.
        let mut grid_top = 0.0;
        let mut heights_valid = true;
        for (j, &r) in st.radius_cm().iter().enumerate() {
            let column = &heights[st.index(j, 0)..st.index(j, 0) + rows];
            for h in column {
                let z = h / r;
                if z > grid_top {
                    grid_top = z;
                }
                heights_valid &= valid_height(z);
                z_over_r.push(z);
            }
        }
        let h_over_r: Vec<f64> = st
            .scale_height_cm()
            .iter()
            .zip(st.radius_cm())
            .map(|(h, r)| h / r)
            .collect();
        // Show up to four scale heights of the thickest column: the snow surfaces and the
        // 1-3 H lines sit below that, and the grid's 10 H top would squash them.
        let thickest = h_over_r.iter().copied().fold(0.0, f64::max);
        let z_max = ((4.0 * thickest / 0.05).ceil() * 0.05)
            .min(grid_top)
            .max(1e-3);
        MapGrid::assemble(
            st.radius_cm().iter().map(|r| r / AU_CM).collect(),
            rows,
            z_over_r,
            h_over_r,
            z_max,
            heights_valid,
        )
    }

    /// Radius of each column [au], increasing.
    pub fn radius_au(&self) -> &[f64] {
        &self.radius_au
    }

    /// Samples per column.
    pub fn rows(&self) -> usize {
        self.rows
    }

    /// z/r of each sample, `[column * rows + row]`, increasing within a column.
    pub fn z_over_r(&self) -> &[f64] {
        &self.z_over_r
    }

    /// H/r of each column; empty draws no scale-height lines.
    pub fn scale_height_over_r(&self) -> &[f64] {
        &self.scale_height_over_r
    }

    /// Top of the plot in z/r.
    pub fn z_over_r_max(&self) -> f64 {
        self.z_over_r_max
    }

    /// The radius range [au] the cells cover.
    pub fn radius_range_au(&self) -> (f64, f64) {
        let g = self.column_edges_log();
        (10f64.powf(g[0]), 10f64.powf(g[g.len() - 1]))
    }

    /// log10 r at the column edges (n + 1 of them).
    fn column_edges_log(&self) -> Cow<'_, [f64]> {
        if self.column_edges_log.is_empty() {
            Cow::Owned(column_edges_log(&self.radius_au))
        } else {
            Cow::Borrowed(&self.column_edges_log)
        }
    }

    /// Upper z/r edge of each sample of column j, and the column's lower edge (the
    /// grid's first checks must pass: a map is validated before it is drawn).
    fn row_edges(&self, j: usize) -> (&[f64], f64) {
        (
            &self.row_tops[j * self.rows..(j + 1) * self.rows],
            self.row_bottoms[j],
        )
    }
}

/// A valid height z/r: finite and >= 0 (`0 <= z < inf`, false for NaN; -0 passes),
/// both comparisons made, without a branch.
#[inline(always)]
fn valid_height(z: f64) -> bool {
    // Both comparisons, no short circuit (`contains` would branch).
    #[allow(clippy::manual_range_contains)]
    let valid = (z >= 0.0) & (z < f64::INFINITY);
    valid
}

/// Whether every z/r is a valid height, without a branch per sample.
fn all_valid_heights(z_over_r: &[f64]) -> bool {
    z_over_r.iter().fold(true, |all, &z| all & valid_height(z))
}

/// The error naming the first z/r that is not a valid height (looked up only when
/// [`all_valid_heights`] is false).
fn first_invalid_height(z_over_r: &[f64]) -> ChartError {
    let z = z_over_r
        .iter()
        .copied()
        .find(|&z| !valid_height(z))
        .unwrap_or(f64::NAN);
    ChartError::InvalidValue {
        field: "z_over_r",
        value: z,
        allowed: "finite and >= 0",
    }
}

/// log10 r at the edges of columns centred on `radius_au` (not empty): the midpoints
/// between neighbours, the ends half a spacing outward.
fn column_edges_log(radius_au: &[f64]) -> Vec<f64> {
    let logs: Vec<f64> = radius_au.iter().map(|r| r.log10()).collect();
    let n = logs.len();
    let mut edges = Vec::with_capacity(n + 1);
    if n == 1 {
        // One column: give it a tenth of a decade either side.
        return vec![logs[0] - 0.1, logs[0] + 0.1];
    }
    edges.push(logs[0] - 0.5 * (logs[1] - logs[0]));
    for j in 1..n {
        edges.push(0.5 * (logs[j - 1] + logs[j]));
    }
    edges.push(logs[n - 1] + 0.5 * (logs[n - 1] - logs[n - 2]));
    edges
}

/// Appends the upper z/r edge of each sample of a column (its z/r, not empty) to `out`
/// and returns the column's lower edge.
fn push_row_edges(z: &[f64], out: &mut Vec<f64>) -> f64 {
    let n = z.len();
    if n == 1 {
        out.push(z[0] * 1.5 + 1e-12);
        return 0.0;
    }
    for k in 0..n - 1 {
        out.push(0.5 * (z[k] + z[k + 1]));
    }
    out.push(z[n - 1] + 0.5 * (z[n - 1] - z[n - 2]));
    (z[0] - 0.5 * (z[1] - z[0])).max(0.0)
}

/// An RGBA image, rows top to bottom, 4 bytes per pixel (the layout of the
/// browser's `ImageData`).
#[derive(Debug, Clone, PartialEq)]
pub struct RasterImage {
    /// Width [px].
    pub width: u32,
    /// Height [px].
    pub height: u32,
    /// `width * height * 4` bytes: R, G, B, A.
    pub rgba: Vec<u8>,
}

impl RasterImage {
    /// The image composited over an opaque background, as packed RGB (what plotters' bitmaps take).
    pub fn to_rgb_over(&self, background: Rgba) -> Vec<u8> {
        let mut out = Vec::with_capacity(self.rgba.len() / 4 * 3);
        for p in self.rgba.chunks_exact(4) {
            let c = Rgba {
                r: p[0],
                g: p[1],
                b: p[2],
                a: p[3],
            }
            .over(background);
            out.extend_from_slice(&[c.r, c.g, c.b]);
        }
        out
    }
}

impl MapData {
    /// A map on a grid ([`MapGrid`], shared) with the given values.
    fn on_grid(
        grid: &Arc<MapGrid>,
        values: Vec<f64>,
        value_label: String,
        value_range: (f64, f64),
        colour_map: ColourMap,
    ) -> MapData {
        MapData {
            grid: Arc::clone(grid),
            values,
            value_label,
            value_range,
            colour_map,
            contour_level: None,
            contour_label: String::new(),
            curves: Vec::new(),
            reference_value: None,
        }
    }

    /// Ice fraction (0..1) of one species in every sample, with the 0.5 contour
    /// (the snow surface as the field's own 0.5 level) and the 1, 2, 3 H lines.
    /// An absent species gives an all-undefined map.
    pub fn ice_fraction(model: &Model, species: Species) -> MapData {
        MapData::ice_fraction_on(&Arc::new(MapGrid::from_model(model)), model, species)
    }

    /// [`MapData::ice_fraction`] on the model's grid built beforehand (`grid` must
    /// be `MapGrid::from_model(model)`): the page builds the grid once per
    /// structure for both maps, and they share it.
    pub fn ice_fraction_on(grid: &Arc<MapGrid>, model: &Model, species: Species) -> MapData {
        let n = model.sample_count();
        let present = model.composition().is_present(species);
        // `model.ice_fraction_at(species, k)` for every k, as one slice.
        let values = if present {
            model.ices().ice_fraction(species)[..n].to_vec()
        } else {
            vec![f64::NAN; n]
        };
        let label = format!("{} ice fraction", typeset_formula(species.key()));
        let mut map = MapData::on_grid(grid, values, label, (0.0, 1.0), ColourMap::Viridis);
        map.contour_level = Some(0.5);
        map.contour_label = "f = 0.5".to_string();
        map
    }

    /// Gas C/O in every sample on a 0..2 scale, the star's C/O marked on the colour bar.
    pub fn gas_c_to_o(model: &Model) -> MapData {
        MapData::gas_c_to_o_on(&Arc::new(MapGrid::from_model(model)), model)
    }

    /// [`MapData::gas_c_to_o`] on the model's grid built beforehand (`grid` must
    /// be `MapGrid::from_model(model)`).
    pub fn gas_c_to_o_on(grid: &Arc<MapGrid>, model: &Model) -> MapData {
        // The core's bulk query: the same values as `ratios(&phases_at(k))` per sample.
        let values = model.gas_c_to_o_samples();
        let mut map = MapData::on_grid(
            grid,
            values,
            "gas C/O".to_string(),
            (0.0, 2.0),
            ColourMap::Cividis,
        );
        let star = model.star_c_to_o();
        if star.is_finite() {
            map.reference_value = Some(("star".to_string(), star));
        }
        map
    }

    /// The model's snow surface of a species as (r [au], z/r) polylines: the lowest
    /// height per column where f_ice falls through 0.5, broken where a column has none.
    pub fn model_snow_surface(model: &Model, species: Species) -> Vec<Vec<(f64, f64)>> {
        let st = &model.structure();
        let mut lines = Vec::new();
        let mut current = Vec::new();
        for j in 0..st.radial_cells() {
            match model.snow_surface(species, j) {
                SnowSurface::Height(h) => {
                    current.push((st.radius_cm()[j] / AU_CM, h / st.radius_cm()[j]))
                }
                SnowSurface::MidplaneNotFrozen | SnowSurface::AboveGrid => {
                    if current.len() > 1 {
                        lines.push(std::mem::take(&mut current));
                    }
                    current.clear();
                }
            }
        }
        if current.len() > 1 {
            lines.push(current);
        }
        lines
    }

    /// The checks a map passes before it is drawn, each failure naming the first
    /// offending field: the grid's, made once when it was built ([`MapGrid::new`]), and
    /// the values' length and the value range.
    pub(crate) fn validate(&self) -> Result<(), ChartError> {
        self.grid.checks[0].clone()?;
        check_length("values", &self.values, self.radius_au.len() * self.rows)?;
        self.grid.checks[1].clone()?;
        let (a, b) = self.value_range;
        if !(a.is_finite() && b.is_finite() && a < b) {
            return Err(ChartError::InvalidValue {
                field: "value_range",
                value: b,
                allowed: "finite with min < max",
            });
        }
        if !(self.z_over_r_max.is_finite() && self.z_over_r_max > 0.0) {
            return Err(ChartError::InvalidValue {
                field: "z_over_r_max",
                value: self.z_over_r_max,
                allowed: "finite and > 0",
            });
        }
        Ok(())
    }

    /// The colour of every sample (undefined in `undefined`).
    fn cell_colours(&self, undefined: Rgba) -> Vec<[u8; 4]> {
        let lut = self.colour_map.lookup_256();
        let (a, b) = self.value_range;
        let scale = 255.0 / (b - a);
        let grey = [undefined.r, undefined.g, undefined.b, undefined.a];
        self.values
            .iter()
            .map(|&v| {
                if v.is_nan() {
                    grey
                } else {
                    lut[((v - a) * scale).round().clamp(0.0, 255.0) as usize]
                }
            })
            .collect()
    }

    /// The cells as rectangles in data coordinates: (r_min, r_max, zr_min, zr_max, colour),
    /// vertically adjacent cells of one colour merged (what the SVG output draws).
    pub(crate) fn cell_rectangles(&self, undefined: Rgba) -> Vec<(f64, f64, f64, f64, [u8; 4])> {
        let colours = self.cell_colours(undefined);
        let edges = self.column_edges_log();
        let mut out = Vec::new();
        for j in 0..self.radius_au.len() {
            let (r0, r1) = (10f64.powf(edges[j]), 10f64.powf(edges[j + 1]));
            let (tops, mut bottom) = self.row_edges(j);
            let mut k = 0;
            while k < self.rows && bottom < self.z_over_r_max {
                let c = colours[j * self.rows + k];
                let mut end = k;
                while end + 1 < self.rows
                    && colours[j * self.rows + end + 1] == c
                    && tops[end] < self.z_over_r_max
                {
                    end += 1;
                }
                let top = tops[end].min(self.z_over_r_max);
                out.push((r0, r1, bottom, top, c));
                bottom = tops[end];
                k = end + 1;
            }
        }
        out
    }

    /// The value of the cell containing (r, z/r), the cell the raster shows there;
    /// `None` outside the grid or where the value is undefined (for hover readouts).
    pub fn value_at(&self, radius_au: f64, z_over_r: f64) -> Option<f64> {
        if !(radius_au > 0.0 && radius_au.is_finite() && z_over_r.is_finite())
            || self.validate().is_err()
        {
            return None;
        }
        let edges = self.column_edges_log();
        let lx = radius_au.log10();
        if lx < edges[0] || lx > edges[edges.len() - 1] {
            return None;
        }
        let j = edges[1..edges.len() - 1]
            .partition_point(|&e| e <= lx)
            .min(self.radius_au.len() - 1);
        let (tops, bottom) = self.row_edges(j);
        if z_over_r < bottom {
            return None;
        }
        let k = tops.partition_point(|&t| t < z_over_r);
        let v = *self
            .values
            .get(j * self.rows + k)
            .filter(|_| k < self.rows)?;
        (!v.is_nan()).then_some(v)
    }

    /// The `contour_level` contour as (r [au], z/r) polylines.
    pub fn contour(&self, level: f64) -> Vec<Vec<(f64, f64)>> {
        let rows = self.rows;
        // log10 r of each column once (each crossing looks up two nodes).
        let log_r: Vec<f64> = self.radius_au.iter().map(|r| r.log10()).collect();
        let lines = marching_squares(
            self.radius_au.len(),
            rows,
            |j, k| (log_r[j], self.z_over_r[j * rows + k]),
            |j, k| self.values[j * rows + k],
            level,
        );
        lines
            .into_iter()
            .map(|l| l.into_iter().map(|(lr, z)| (10f64.powf(lr), z)).collect())
            .collect()
    }
}

/// Rasterise a map into `width x height` RGBA pixels covering the plot area:
/// x from the map's inner to outer radius (log), y from z/r = 0 (bottom) to
/// `z_over_r_max` (top). Each pixel takes the nearest cell (the cell containing
/// its centre); undefined cells are the theme's neutral grey, pixels above a
/// column's top are transparent. One pass: per pixel column, the row pointer
/// only moves up, so the cost is O(width x (height + rows)).
pub fn rasterise_map(
    data: &MapData,
    theme: &Theme,
    width: u32,
    height: u32,
) -> Result<RasterImage, ChartError> {
    data.validate()?;
    Ok(raster_checked(data, theme, None, width, height))
}

/// Like [`rasterise_map`], with every pixel composited over the opaque
/// `background` ([`Rgba::over`]): the same pixels as compositing the result of
/// `rasterise_map` pixel by pixel, in one pass (the page puts this image on a
/// canvas, which copies alpha rather than blending it).
pub fn rasterise_map_over(
    data: &MapData,
    theme: &Theme,
    background: Rgba,
    width: u32,
    height: u32,
) -> Result<RasterImage, ChartError> {
    data.validate()?;
    Ok(raster_checked(data, theme, Some(background), width, height))
}

/// [`rasterise_map`] (`over` `None`) or [`rasterise_map_over`] of data already
/// validated. A cell's colour is looked up only when a pixel shows it, from a
/// table of the colour map's 256 colours and the undefined grey (each
/// composited over the background once, not once per cell): the colours
/// `cell_colours` gives, composited as before.
pub(crate) fn raster_checked(
    data: &MapData,
    theme: &Theme,
    over: Option<Rgba>,
    width: u32,
    height: u32,
) -> RasterImage {
    raster_checked_into(data, theme, over, width, height, Vec::new())
}

/// [`raster_checked`] written into `buffer` (its contents dropped, its memory
/// reused: the page rasterises a map of the same size on every edit).
pub(crate) fn raster_checked_into(
    data: &MapData,
    theme: &Theme,
    over: Option<Rgba>,
    width: u32,
    height: u32,
    buffer: Vec<u8>,
) -> RasterImage {
    let composite = |c: [u8; 4]| match over {
        Some(background) if c[3] != 255 => {
            let o = Rgba {
                r: c[0],
                g: c[1],
                b: c[2],
                a: c[3],
            }
            .over(background);
            [o.r, o.g, o.b, 255]
        }
        _ => c,
    };
    let lut = data.colour_map.lookup_256();
    let u = theme.undefined;
    // Entries 0-255: the colour map; 256: undefined.
    let mut table = [0u32; 257];
    for (t, c) in table.iter_mut().zip(lut.iter()) {
        *t = u32::from_ne_bytes(composite(*c));
    }
    table[256] = u32::from_ne_bytes(composite([u.r, u.g, u.b, u.a]));
    let (a, b) = data.value_range;
    let scale = 255.0 / (b - a);
    let colour_of = |sample: usize| {
        let v = data.values[sample];
        table[if v.is_nan() {
            256
        } else {
            round_to_byte_index((v - a) * scale)
        }]
    };
    let empty = u32::from_ne_bytes(composite([0, 0, 0, 0]));
    raster_cells(data, colour_of, empty, width, height, buffer)
}

/// The raster of cells of the given colours (`colour_of(sample)`, packed
/// RGBA, asked once per shown cell and pixel-column run), `empty` above a
/// column's top. Each run of pixel columns that shows one model column is
/// found once, and its pixels once, bottom to top in segments of one colour
/// (the cell pointer only moves up, and where a segment ends is found by
/// bisection over the pixel rows, so the cost is O(width + runs x (rows +
/// segments x log height)); the cells above the top row are not looked at
/// when z/r rises within each column), noting only the rows where its colour
/// changes. The image is then written row by row, each row a
/// copy of the one above with only the runs whose colour changes at that row
/// rewritten: most rows differ from the one above in a few runs, so the
/// per-pixel work is one bulk copy, and no pixel is written twice except
/// where a colour changes.
fn raster_cells(
    data: &MapData,
    colour_of: impl Fn(usize) -> u32,
    empty: u32,
    width: u32,
    height: u32,
    mut rgba: Vec<u8>,
) -> RasterImage {
    rgba.clear();
    let (w, h) = (width as usize, height as usize);
    if w == 0 || h == 0 {
        return RasterImage {
            width,
            height,
            rgba: Vec::new(),
        };
    }
    let edges = data.column_edges_log();
    let (lx0, lx1) = (edges[0], edges[edges.len() - 1]);
    let inner_edges = &edges[1..edges.len() - 1];
    // z/r at the centre of each pixel row, top row first.
    let z_of_row: Vec<f64> = (0..h)
        .map(|p| data.z_over_r_max * (1.0 - (p as f64 + 0.5) / h as f64))
        .collect();
    // The runs of x showing one model column: (first x, end x, model column).
    let mut runs: Vec<(usize, usize, usize)> = Vec::new();
    for i in 0..w {
        let lx = lx0 + (i as f64 + 0.5) / w as f64 * (lx1 - lx0);
        // Edges are increasing: the column is the number of inner edges at or below lx.
        let j = inner_edges
            .partition_point(|&e| e <= lx)
            .min(data.radius_au.len() - 1);
        match runs.last_mut() {
            Some(run) if run.2 == j => run.1 = i + 1,
            _ => runs.push((i, i + 1, j)),
        }
    }
    // Per run: the colour of the top row, and every (row, run, colour) where
    // the run's colour differs from the row above's.
    let mut top_colour = vec![empty; runs.len()];
    let mut changes: Vec<(u32, u32, u32)> = Vec::new();
    let rows = data.rows;
    // z/r of the top pixel row: a cell whose top reaches it covers every row above.
    let z_top = z_of_row[0];
    // Whether the cells' tops never decrease within a column (made once with
    // the grid): then a segment whose cell reaches the top row ends the walk
    // without looking at the cells above.
    let rising = data.rising;
    for (r, &(_, _, j)) in runs.iter().enumerate() {
        // Each cell's top and the column's bottom, made once with the grid
        // (`MapGrid::row_edges`).
        let (tops, bottom) = data.row_edges(j);
        let top = |k: usize| tops[k];
        // The colour of the cell looked at last, by cell: the walk asks for
        // the cell above a segment and then starts the next segment there.
        let mut looked = (usize::MAX, 0u32);
        let mut colour = |k: usize| {
            if looked.0 != k {
                looked = (k, colour_of(j * rows + k));
            }
            looked.1
        };
        // Walking up from the bottom row in segments of rows of one colour. A
        // pixel row with z/r `zr` shows cell k, the first cell from the one
        // below's with `zr <= top(k)` (k only moves up, as z/r rises), if
        // k < rows and `zr >= bottom`; otherwise nothing (`empty`). Rows
        // [q, p) are left to walk; `below` is the segment just walked
        // (its top row and colour). z/r falls from row to row, so where a
        // segment ends is found by bisection.
        let mut k = 0;
        let mut p = h;
        let mut below: Option<(usize, u32)> = None;
        while p > 0 {
            let zr = z_of_row[p - 1];
            while k < rows && zr > top(k) {
                k += 1;
            }
            // The segment's colour, and how far up it reaches: while z/r stays
            // at or under the cell's top (in a cell), under the column's
            // bottom (below it), or to the top row (above the column's cells).
            let (q, c) = if k >= rows {
                (0, empty)
            } else if zr >= bottom {
                // The cells above of the same colour join this segment: each
                // row up to the last one's top shows one of them (the first
                // cell whose top is at or above its z/r), so the walk would
                // record no change there, and one scan covers them all. With
                // rising tops, no cell above one that reaches the top row can
                // end the segment lower.
                let c = colour(k);
                while k + 1 < rows && !(rising && top(k) >= z_top) && colour(k + 1) == c {
                    k += 1;
                }
                let t = top(k);
                (z_of_row[..p - 1].partition_point(|&z| z > t), c)
            } else {
                (z_of_row[..p - 1].partition_point(|&z| z >= bottom), empty)
            };
            if let Some((row, colour)) = below {
                if colour != c {
                    changes.push((row as u32, r as u32, colour));
                }
            }
            below = Some((q, c));
            p = q;
        }
        top_colour[r] = below.map_or(empty, |(_, c)| c);
    }
    // The changes by row (a counting sort: rows are few, changes many).
    let mut first = vec![0usize; h + 1];
    for &(row, _, _) in &changes {
        first[row as usize + 1] += 1;
    }
    for p in 0..h {
        first[p + 1] += first[p];
    }
    let mut by_row = vec![(0u32, 0u32); changes.len()];
    let mut next = first.clone();
    for &(row, run, colour) in &changes {
        by_row[next[row as usize]] = (run, colour);
        next[row as usize] += 1;
    }
    let stride = w * 4;
    rgba.reserve(stride * h);
    for (&(x0, x1, _), &c) in runs.iter().zip(&top_colour) {
        let bytes = c.to_ne_bytes();
        for _ in x0..x1 {
            rgba.extend_from_slice(&bytes);
        }
    }
    for p in 1..h {
        rgba.extend_from_within((p - 1) * stride..p * stride);
        let row = &mut rgba[p * stride..];
        for &(run, colour) in &by_row[first[p]..first[p + 1]] {
            let (x0, x1, _) = runs[run as usize];
            row[x0 * 4..x1 * 4]
                .as_chunks_mut::<4>()
                .0
                .fill(colour.to_ne_bytes());
        }
    }
    RasterImage {
        width,
        height,
        rgba,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The raster of cells of the given colours (one per sample).
    fn raster_from_colours(
        data: &MapData,
        colours: &[[u8; 4]],
        empty: [u8; 4],
        width: u32,
        height: u32,
    ) -> RasterImage {
        raster_cells(
            data,
            |i| u32::from_ne_bytes(colours[i]),
            u32::from_ne_bytes(empty),
            width,
            height,
            // A used buffer: its contents must not show through.
            vec![9; 37],
        )
    }

    /// The map's values come from the core's bulk query (`Model::gas_c_to_o_samples`):
    /// bit for bit what the per-sample path `ratios(&phases_at(k))` gives, NaN where undefined,
    /// for the default disk and a brighter star with other ice parameters.
    #[test]
    fn the_gas_c_to_o_map_equals_the_per_sample_ratios() {
        let mut p = nivalis_physics::ModelParameters::defaults();
        p.grid.radial_cells = 60;
        p.grid.vertical_cells = 20;
        let mut other = p.clone();
        other.star.luminosity_lsun = 5.0;
        other.ices.sticking = 0.3;
        other.ices.photodesorption = false;
        for params in [p, other] {
            let model = Model::run(&params).unwrap();
            let map = MapData::gas_c_to_o(&model);
            assert_eq!(map.values.len(), model.sample_count());
            let mut undefined = 0;
            for (k, v) in map.values.iter().enumerate() {
                let expected = model
                    .ratios(&model.phases_at(k))
                    .c_to_o_gas
                    .unwrap_or(f64::NAN);
                assert_eq!(v.to_bits(), expected.to_bits(), "sample {k}");
                undefined += usize::from(v.is_nan());
            }
            assert!(undefined < map.values.len());
        }
    }

    /// The raster as first written (per pixel, each pixel looked up in its
    /// column): the reference the faster `raster_from_colours` must equal.
    fn reference_raster(
        data: &MapData,
        colours: &[[u8; 4]],
        empty: [u8; 4],
        width: u32,
        height: u32,
    ) -> Vec<u8> {
        let (w, h) = (width as usize, height as usize);
        let mut rgba = vec![0u8; w * h * 4];
        // The edges computed here from the map's radii and heights (not the grid's own).
        let edges = column_edges_log(data.radius_au());
        let (lx0, lx1) = (edges[0], edges[edges.len() - 1]);
        let mut tops = Vec::new();
        for i in 0..w {
            let lx = lx0 + (i as f64 + 0.5) / w as f64 * (lx1 - lx0);
            let j = (edges[1..edges.len() - 1].partition_point(|&e| e <= lx))
                .min(data.radius_au.len() - 1);
            tops.clear();
            let bottom = push_row_edges(
                &data.z_over_r()[j * data.rows()..(j + 1) * data.rows()],
                &mut tops,
            );
            for p in 0..h {
                let zr = data.z_over_r_max * (1.0 - (p as f64 + 0.5) / h as f64);
                let k = tops.iter().take_while(|&&t| zr > t).count();
                let c = if k >= data.rows || zr < bottom {
                    empty
                } else {
                    colours[j * data.rows + k]
                };
                let at = (p * w + i) * 4;
                rgba[at..at + 4].copy_from_slice(&c);
            }
        }
        rgba
    }

    /// The run-and-row raster equals the per-pixel reference for the model's maps at
    /// several sizes (fewer and more pixels than cells) and for the small test map.
    #[test]
    fn the_raster_equals_the_per_pixel_reference() {
        let mut p = nivalis_physics::ModelParameters::defaults();
        p.grid.radial_cells = 60;
        p.grid.vertical_cells = 20;
        let model = Model::run(&p).unwrap();
        // The page's default grid too (200 x 80 cells), whose ice maps have
        // long runs of cells of one colour.
        let default = Model::run(&nivalis_physics::ModelParameters::defaults()).unwrap();
        let theme = Theme::light();
        for data in [
            small_map(),
            MapData::ice_fraction(&model, Species::CO),
            MapData::gas_c_to_o(&model),
            MapData::ice_fraction(&default, Species::H2O),
            MapData::ice_fraction(&default, Species::CO),
            MapData::gas_c_to_o(&default),
        ] {
            let colours = data.cell_colours(theme.undefined);
            for (w, h) in [
                (1, 1),
                (7, 300),
                (45, 33),
                (520, 290),
                (560, 330),
                (1000, 90),
            ] {
                let fast = raster_from_colours(&data, &colours, [1, 2, 3, 4], w, h);
                assert_eq!(
                    fast.rgba,
                    reference_raster(&data, &colours, [1, 2, 3, 4], w, h),
                    "{} at {w} x {h}",
                    data.value_label
                );
                // The public raster (colours looked up per shown cell from the
                // colour table) equals the reference over every sample's colour.
                assert_eq!(
                    rasterise_map(&data, &theme, w, h).unwrap().rgba,
                    reference_raster(&data, &colours, [0, 0, 0, 0], w, h),
                    "{} at {w} x {h}",
                    data.value_label
                );
            }
        }
    }

    /// Two columns at 1 and 10 au, three samples each at z/r `z` (0, 0.1, 0.2 by default).
    fn small_grid(z: Vec<f64>) -> Arc<MapGrid> {
        Arc::new(MapGrid::new(vec![1.0, 10.0], 3, z, vec![], 0.3))
    }

    fn small_map() -> MapData {
        // Values 0 / 1 / NaN in the first column, 1 / 1 / 0 in the second.
        MapData {
            grid: small_grid(vec![0.0, 0.1, 0.2, 0.0, 0.1, 0.2]),
            values: vec![0.0, 1.0, f64::NAN, 1.0, 1.0, 0.0],
            value_label: "test".into(),
            value_range: (0.0, 1.0),
            colour_map: ColourMap::Viridis,
            contour_level: Some(0.5),
            contour_label: "f = 0.5".into(),
            curves: vec![],
            reference_value: None,
        }
    }

    /// The checks of a map, the grid's made when it was built, come in the order of
    /// the fields when several fail: radii, rows, z/r length, values length, H/r
    /// length, z/r values, value range, top (derived, D).
    #[test]
    fn a_map_is_refused_with_its_first_failing_check() {
        let first_error = |grid: MapGrid, values: usize, range: (f64, f64)| {
            let map = MapData {
                grid: Arc::new(grid),
                values: vec![0.5; values],
                value_range: range,
                ..small_map()
            };
            match map.validate() {
                Ok(()) => "none".to_string(),
                Err(ChartError::InvalidValue { field, .. }) => field.to_string(),
                Err(ChartError::EmptyData { field }) => field.to_string(),
                Err(ChartError::LengthMismatch { field, .. }) => field.to_string(),
                Err(e) => format!("{e:?}"),
            }
        };
        let z = || vec![0.0, 0.1, 0.2, 0.0, 0.1, 0.2];
        let bad_z = || vec![0.0, f64::NAN, 0.2, 0.0, 0.1, 0.2];
        let grid = |r: Vec<f64>, rows, z, h: Vec<f64>, top| MapGrid::new(r, rows, z, h, top);
        let bad_range = (1.0, 0.0);
        let cases = [
            (
                grid(vec![10.0, 1.0], 3, bad_z(), vec![1.0], -1.0),
                5,
                bad_range,
                "radius_au",
            ),
            (
                grid(vec![1.0, 10.0], 0, bad_z(), vec![1.0], -1.0),
                5,
                bad_range,
                "rows",
            ),
            (
                grid(vec![1.0, 10.0], 3, vec![0.0; 5], vec![1.0], -1.0),
                5,
                bad_range,
                "z_over_r",
            ),
            (
                grid(vec![1.0, 10.0], 3, bad_z(), vec![1.0], -1.0),
                5,
                bad_range,
                "values",
            ),
            (
                grid(vec![1.0, 10.0], 3, bad_z(), vec![1.0], -1.0),
                6,
                bad_range,
                "scale_height_over_r",
            ),
            (
                grid(vec![1.0, 10.0], 3, bad_z(), vec![], -1.0),
                6,
                bad_range,
                "z_over_r",
            ),
            (
                grid(vec![1.0, 10.0], 3, z(), vec![0.1, 0.1], -1.0),
                6,
                bad_range,
                "value_range",
            ),
            (
                grid(vec![1.0, 10.0], 3, z(), vec![], f64::NAN),
                6,
                (0.0, 1.0),
                "z_over_r_max",
            ),
            (
                grid(vec![1.0, 10.0], 3, z(), vec![0.1, 0.1], 0.3),
                6,
                (0.0, 1.0),
                "none",
            ),
        ];
        for (i, (g, values, range, field)) in cases.into_iter().enumerate() {
            assert_eq!(first_error(g, values, range), field, "case {i}");
        }
    }

    /// The grid's edges, made once, are those computed per column from its radii and
    /// heights (the model's grids and the small one).
    #[test]
    fn the_grid_s_edges_are_those_of_its_columns() {
        let mut p = nivalis_physics::ModelParameters::defaults();
        p.grid.radial_cells = 40;
        p.grid.vertical_cells = 12;
        let model = Model::run(&p).unwrap();
        // The model's grid, whose checks and top were made while its z/r was formed, is the
        // grid `new` makes of the same fields, with the top of the former two folds.
        let from_model = MapGrid::from_model(&model);
        let thickest = from_model
            .scale_height_over_r()
            .iter()
            .copied()
            .fold(0.0, f64::max);
        let grid_top = from_model.z_over_r().iter().copied().fold(0.0, f64::max);
        let z_max = ((4.0 * thickest / 0.05).ceil() * 0.05)
            .min(grid_top)
            .max(1e-3);
        assert_eq!(from_model.z_over_r_max().to_bits(), z_max.to_bits());
        let rebuilt = MapGrid::new(
            from_model.radius_au().to_vec(),
            from_model.rows(),
            from_model.z_over_r().to_vec(),
            from_model.scale_height_over_r().to_vec(),
            z_max,
        );
        assert_eq!(rebuilt, from_model);
        assert!(rebuilt.checks.iter().all(Result::is_ok));
        for grid in [
            MapGrid::from_model(&model),
            (*small_grid(vec![0.0, 0.1, 0.2, 0.0, 0.1, 0.2])).clone(),
        ] {
            assert_eq!(
                &*grid.column_edges_log(),
                &column_edges_log(grid.radius_au())[..]
            );
            let mut tops = Vec::new();
            for (j, column) in grid.z_over_r().chunks_exact(grid.rows()).enumerate() {
                tops.clear();
                let bottom = push_row_edges(column, &mut tops);
                assert_eq!(grid.row_edges(j), (&tops[..], bottom), "column {j}");
            }
        }
    }

    /// The branch-free z/r check gives what the per-sample loop gave: the
    /// first sample that is not finite and >= 0 (NaN, infinities, negatives;
    /// -0 passes), or no error.
    #[test]
    fn invalid_heights_are_refused_with_the_first_offending_value() {
        let reference = |z: &[f64]| {
            z.iter()
                .copied()
                .find(|&z| !z.is_finite() || z < 0.0)
                .map(|z| z.to_bits())
        };
        let bad = [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -1e-300, -2.0];
        let mut cases = vec![vec![0.0, 0.1, 0.2, 0.0, 0.1, 0.2], vec![-0.0; 6]];
        for (i, &b) in bad.iter().enumerate() {
            for at in [0, 3, 5] {
                let mut z = vec![0.0, 0.1, 0.2, 0.0, 0.1, 0.2];
                z[at] = b;
                // A second offender after the first: the first is reported.
                z[(at + 1).min(5)] = bad[(i + 1) % bad.len()];
                cases.push(z);
            }
        }
        for z in cases {
            let mut map = small_map();
            map.grid = small_grid(z.clone());
            let got = match map.validate() {
                Ok(()) => None,
                Err(ChartError::InvalidValue {
                    field: "z_over_r",
                    value,
                    allowed: "finite and >= 0",
                }) => Some(value.to_bits()),
                Err(e) => panic!("{e:?} for {z:?}"),
            };
            assert_eq!(got, reference(&z), "{z:?}");
        }
    }

    #[test]
    fn the_opaque_raster_is_the_raster_composited_pixel_by_pixel() {
        let theme = Theme::dark();
        let data = small_map();
        for (w, h) in [(1, 1), (7, 5), (64, 33), (300, 120)] {
            let plain = rasterise_map(&data, &theme, w, h).unwrap();
            let opaque = rasterise_map_over(&data, &theme, theme.background, w, h).unwrap();
            let composited: Vec<u8> = plain
                .to_rgb_over(theme.background)
                .chunks_exact(3)
                .flat_map(|p| [p[0], p[1], p[2], 255])
                .collect();
            assert_eq!(opaque.rgba, composited, "{w} x {h}");
            if h >= 5 {
                let above = plain.rgba.chunks_exact(4).any(|p| p[3] == 0);
                assert!(above, "{w} x {h}: no pixel above a column");
            }
        }
    }

    fn pixel(img: &RasterImage, x: u32, y: u32) -> [u8; 4] {
        let o = ((y * img.width + x) * 4) as usize;
        [
            img.rgba[o],
            img.rgba[o + 1],
            img.rgba[o + 2],
            img.rgba[o + 3],
        ]
    }

    #[test]
    fn raster_takes_the_nearest_cell() {
        let theme = Theme::light();
        let map = small_map();
        // Columns span log r -0.5..1.5, rows: [0, 0.05], [0.05, 0.15], [0.15, 0.25], above 0.25 outside.
        let img = rasterise_map(&map, &theme, 20, 30).unwrap();
        let purple = ColourMap::Viridis.at(0.0);
        let yellow = ColourMap::Viridis.at(1.0);
        let u = theme.undefined;
        assert_eq!(
            pixel(&img, 2, 29),
            [purple.r, purple.g, purple.b, 255],
            "bottom-left: value 0"
        );
        assert_eq!(
            pixel(&img, 2, 15),
            [yellow.r, yellow.g, yellow.b, 255],
            "z/r 0.145: value 1"
        );
        assert_eq!(
            pixel(&img, 2, 8),
            [u.r, u.g, u.b, u.a],
            "undefined cell is neutral grey"
        );
        assert_eq!(pixel(&img, 2, 1)[3], 0, "above the grid is transparent");
        assert_eq!(pixel(&img, 17, 29), [yellow.r, yellow.g, yellow.b, 255]);
        assert_eq!(pixel(&img, 17, 8), [purple.r, purple.g, purple.b, 255]);
    }

    #[test]
    fn value_lookup_agrees_with_the_raster_cells() {
        let map = small_map();
        assert_eq!(map.value_at(1.0, 0.01), Some(0.0));
        assert_eq!(map.value_at(1.0, 0.12), Some(1.0));
        assert_eq!(map.value_at(1.0, 0.2), None, "undefined value");
        assert_eq!(map.value_at(10.0, 0.2), Some(0.0));
        assert_eq!(map.value_at(10.0, 0.26), None, "above the grid");
        assert_eq!(map.value_at(100.0, 0.0), None, "outside the radii");
    }

    #[test]
    fn rectangles_merge_equal_neighbours() {
        let map = small_map();
        let rects = map.cell_rectangles(Rgba::hex(0x808080));
        // Column 1: three distinct cells; column 2: the two value-1 cells merge.
        assert_eq!(rects.len(), 5);
        let merged = rects[3];
        assert!(
            (merged.2 - 0.0).abs() < 1e-12 && (merged.3 - 0.15).abs() < 1e-12,
            "{merged:?}"
        );
    }

    #[test]
    fn contour_lies_between_the_values() {
        let map = small_map();
        let lines = map.contour(0.5);
        assert!(!lines.is_empty());
        for line in &lines {
            for &(r, z) in line {
                assert!(
                    (1.0..=10.0).contains(&r) && (0.0..=0.2).contains(&z),
                    "{r} {z}"
                );
            }
        }
    }
}
