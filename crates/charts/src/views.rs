//! The figures: one public `draw_*` function per view, each generic over any
//! plotters `DrawingBackend`, taking plain data, a theme and the output's
//! pixels per point, and returning where it drew ([`ChartLayout`]).
//!
//! Every function fills its area with the theme background first (maps with
//! [`CellDrawing::Omit`] leave the plotting rectangle alone, see there).

use plotters::coord::Shift;
use plotters::element::BitMapElement;
use plotters::prelude::{DrawingArea, DrawingBackend};
use plotters::style::text_anchor::{HPos, VPos};

use crate::colour::{ColourMap, Rgba};
use crate::contour::marching_squares;
use crate::data::{AbundanceData, Chi2Data, ProfileData, TemperatureData};
use crate::error::ChartError;
use crate::layout::{AxisTransform, ChartLayout, Scale};
use crate::map::{raster_checked, raster_checked_into, MapData, RasterImage};
use crate::paint::{for_each_clipped, ticks, AxisOptions, Frame, Orientation, Painter, Panel};
use crate::reuse::Reuse;
use crate::theme::{LineDash, Marker, SeriesStyle, Theme};

#[path = "evolution_views.rs"]
mod evolution_views;
pub use evolution_views::{
    draw_evolved_c_to_o, draw_radius_time_map, draw_snowline_tracks, evolution_figure,
    evolution_view_data, format_age, EvolutionView, EvolvedProfileData, RadiusTimeMapData,
    SnowlineTrackData,
};

/// Outer padding [pt].
const PAD_PT: f64 = 4.0;
/// The smallest area the axes fit in [px].
const MIN_AREA_PX: (u32, u32) = (60, 45);

/// How a map's cells reach the output.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CellDrawing {
    /// Rasterise with [`rasterise_map`] and blit one bitmap (`BitMapElement`): for bitmap back ends.
    Raster,
    /// One rectangle per run of equal-coloured cells: for SVG, whose default
    /// bitmap blit would write one rectangle per pixel. Text stays text either way.
    Rectangles,
    /// Draw nothing inside the plotting rectangle except lines: the caller paints
    /// the cells first (the page: [`map_layout`], then [`rasterise_map`] and one
    /// `putImageData` at the main panel's rectangle, then this).
    Omit,
}

fn area_size<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
    let (w, h) = area.dim_in_pixel();
    if w < MIN_AREA_PX.0 || h < MIN_AREA_PX.1 {
        return Err(ChartError::AreaTooSmall {
            width: w,
            height: h,
        });
    }
    Ok(())
}

fn check_frame(p: &Frame, area: (f64, f64)) -> Result<(), ChartError> {
    if p.width() < 20.0 || p.height() < 15.0 {
        return Err(ChartError::AreaTooSmall {
            width: area.0 as u32,
            height: area.1 as u32,
        });
    }
    Ok(())
}

/// Right padding [px]: room for half the last x tick label.
fn right_padding<DB: DrawingBackend>(
    p: &Painter<DB>,
    x: &AxisTransform,
) -> Result<f64, ChartError> {
    let t = ticks(x);
    let half = match t.major.last() {
        Some((_, label)) => 0.5 * p.text_size(label, p.theme.tick_font_pt)?.0,
        None => 0.0,
    };
    Ok(p.px(PAD_PT).max(half + p.px(1.0)))
}

/// log10 range rounded out to whole decades.
fn decade_range(min: f64, max: f64) -> (f64, f64) {
    let lo = 10f64.powf(min.log10().floor());
    let mut hi = 10f64.powf(max.log10().ceil());
    if hi <= lo {
        hi = lo * 10.0;
    }
    (lo, hi)
}

/// The smallest and largest finite positive value of the series. The running
/// extremes are kept by comparisons (`f64::min` and `max` are library calls in
/// WebAssembly, one per value); for finite positive values they pick the same
/// numbers (`extent_tests::positive_extent_equals_the_min_max_fold`).
fn positive_extent<'a>(series: impl IntoIterator<Item = &'a Option<f64>>) -> Option<(f64, f64)> {
    let mut out: Option<(f64, f64)> = None;
    for &v in series.into_iter().flatten() {
        if v.is_finite() && v > 0.0 {
            out = Some(match out {
                None => (v, v),
                Some((a, b)) => (if v < a { v } else { a }, if v > b { v } else { b }),
            });
        }
    }
    out
}

/// The radius axis of the profiles: from the inner edge of the first cell to
/// the outer edge of the last, so the grid's own edges (say 0.1 au) are on
/// the axis and get their tick labels. The cells are log-spaced with centres
/// at the geometric mean of their edges, so each edge lies half a cell's
/// ratio beyond its centre: r_0 * sqrt(r_0 / r_1) and r_n * sqrt(r_n / r_(n-1)).
/// A radius list that is not increasing keeps the plain span of its ends.
fn radius_axis(radius_au: &[f64]) -> AxisTransform {
    let n = radius_au.len();
    let (a, b) = (radius_au[0], radius_au[n - 1]);
    let (a, b) = if b <= a {
        (a / 1.5, a * 1.5)
    } else if n >= 2 && radius_au[1] > a && b > radius_au[n - 2] && a > 0.0 {
        let low = a * nivalis_physics::math::sqrt(a / radius_au[1]);
        let high = b * nivalis_physics::math::sqrt(b / radius_au[n - 2]);
        if low.is_finite() && high.is_finite() && low > 0.0 {
            (low, high)
        } else {
            (a, b)
        }
    } else {
        (a, b)
    };
    AxisTransform::new(a, b, Scale::Log10, "r [au]")
}

/// Centres for labels of width `slot` that want to sit at `wanted` (sorted
/// ascending), within `[low, high]`, no two closer than `slot`: overlapping
/// neighbours are merged into clusters centred on the mean of what they want
/// (the usual one-dimensional label-spreading scheme), then clusters are kept
/// inside the bounds. When the bounds are too narrow for all of them the
/// labels keep `slot` apart and run past `high` (the caller adds rows so this
/// does not happen).
fn label_positions(wanted: &[f64], slot: f64, low: f64, high: f64) -> Vec<f64> {
    // Each cluster: (first index, count, sum of wanted centres).
    let mut clusters: Vec<(usize, usize, f64)> = Vec::new();
    let start = |c: &(usize, usize, f64)| (c.2 / c.1 as f64) - 0.5 * slot * (c.1 as f64 - 1.0);
    for (i, &w) in wanted.iter().enumerate() {
        clusters.push((i, 1, w));
        while clusters.len() > 1 {
            let last = clusters[clusters.len() - 1];
            let prev = clusters[clusters.len() - 2];
            let prev_end = start(&prev) + slot * (prev.1 as f64 - 1.0);
            if start(&last) - prev_end >= slot {
                break;
            }
            clusters.pop();
            let merged = clusters.last_mut().expect("two clusters were present");
            merged.1 += last.1;
            merged.2 += last.2;
        }
    }
    let mut out = Vec::with_capacity(wanted.len());
    for c in &clusters {
        let s = start(c);
        for k in 0..c.1 {
            out.push(s + slot * k as f64);
        }
    }
    // Keep them in bounds: from the right (nothing past `high`), then from the
    // left (nothing before `low`, which wins when both cannot hold).
    let mut limit = high;
    for x in out.iter_mut().rev() {
        *x = x.min(limit);
        limit = *x - slot;
    }
    let mut floor = low;
    for x in out.iter_mut() {
        *x = x.max(floor);
        floor = *x + slot;
    }
    out
}

/// (a) C/O of gas, ices and all solids against radius (log r), with the star's
/// C/O as a reference line, snowlines as labelled vertical lines, and the
/// optional planet radius and shaded allowed formation radii. C/O above the
/// axis top (at most 3) is clipped at the frame.
pub fn draw_c_to_o_profile<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &ProfileData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    draw_c_to_o_profile_reusing(area, data, theme, pixels_per_point, None)
}

/// [`draw_c_to_o_profile`] with its grid and its axes and legend as segments
/// kept in `reuse` ([`crate::reuse`]): the same drawing.
pub fn draw_c_to_o_profile_reusing<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &ProfileData,
    theme: &Theme,
    pixels_per_point: f64,
    reuse: Option<&dyn Reuse>,
) -> Result<ChartLayout, ChartError> {
    data.validate()?;
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point).reusing(reuse);
    let size = p.size();
    p.fill_rect(
        Frame {
            left: 0.0,
            top: 0.0,
            right: size.0,
            bottom: size.1,
        },
        theme.background,
    )?;

    let x = radius_axis(&data.radius_au);
    let top_value = positive_extent(
        data.c_to_o_gas
            .iter()
            .chain(&data.c_to_o_ice)
            .chain(&data.c_to_o_solid),
    )
    .map(|e| e.1)
    .unwrap_or(1.0)
    .max(data.star_c_to_o.unwrap_or(0.0) * 1.4)
    .max(1.0);
    let y_max = ((top_value * 1.05 / 0.5).ceil() * 0.5).min(3.0);
    let y = AxisTransform::new(0.0, y_max, Scale::Linear, "C/O");
    let left = p.px(PAD_PT) + p.y_label_space(&y)?;
    let frame = Frame {
        left,
        top: p.top_space(PAD_PT)?,
        right: size.0 - right_padding(&p, &x)?,
        bottom: size.1 - p.x_label_space(&x)? - p.px(1.0),
    };
    check_frame(&frame, size)?;
    let panel = Panel {
        name: "c_to_o",
        frame,
        x,
        y,
    };

    // Shading first, so lines and grid sit on top.
    for &(a, b) in &data.allowed_formation_radii_au {
        if let (Some(xa), Some(xb)) = (panel.px_x(a.min(b)), panel.px_x(a.max(b))) {
            let (xa, xb) = (xa.max(frame.left), xb.min(frame.right));
            if xb > xa {
                p.fill_rect(
                    Frame {
                        left: xa,
                        top: frame.top,
                        right: xb,
                        bottom: frame.bottom,
                    },
                    theme.highlight,
                )?;
            }
        }
    }
    // Infeasible radii: thin diagonal hatching in the muted colour.
    for &(a, b) in &data.infeasible_formation_radii_au {
        if let (Some(xa), Some(xb)) = (panel.px_x(a.min(b)), panel.px_x(a.max(b))) {
            let (xa, xb) = (xa.max(frame.left), xb.min(frame.right));
            let (h, step) = (frame.bottom - frame.top, p.px(6.0));
            let mut x0 = xa - h;
            while x0 < xb {
                // The segment from (x0, bottom) to (x0 + h, top), clipped to [xa, xb].
                let (s, e) = ((xa - x0).max(0.0), (xb - x0).min(h));
                if e > s {
                    p.polyline(
                        &[(x0 + s, frame.bottom - s), (x0 + e, frame.bottom - e)],
                        theme.muted,
                        theme.axis_width_pt * 0.6,
                        LineDash::Solid,
                    )?;
                }
                x0 += step;
            }
        }
    }
    p.segment(
        "grid",
        |k| {
            k.panel(&panel);
        },
        || p.grid(&panel),
    )?;

    let mut occupied = Vec::new();
    // Snowlines: dotted vertical lines, every one labelled. The labels, rotated
    // to read upward, hang from the top of the frame; where neighbours would
    // overlap they are spread apart sideways (label_positions) and a short
    // leader joins each moved label to its line. When even that cannot fit
    // them in one row, they take further rows below the first, so no two
    // labels ever overlap and none is dropped.
    let label_pt = theme.legend_font_pt;
    let mut lines = Vec::new();
    for (label, r) in &data.snowlines {
        let Some(xp) = panel.px_x(*r) else { continue };
        if xp < frame.left || xp > frame.right {
            continue;
        }
        p.polyline(
            &[(xp, frame.top), (xp, frame.bottom)],
            theme.muted,
            theme.axis_width_pt,
            LineDash::Dotted,
        )?;
        let (tw, th) = p.text_size(label, label_pt)?;
        lines.push((label.as_str(), xp, tw, th));
    }
    if !lines.is_empty() {
        let slot = lines.iter().map(|l| l.3).fold(0.0, f64::max) + p.px(1.0);
        let leader = p.px(5.0);
        let longest = lines.iter().map(|l| l.2).fold(0.0, f64::max);
        lines.sort_by(|a, b| a.1.total_cmp(&b.1));
        // Rows needed so each row's labels fit side by side in the frame.
        let per_row = ((frame.right - frame.left) / slot).floor().max(1.0) as usize;
        let rows = lines.len().div_ceil(per_row);
        for row in 0..rows {
            let members: Vec<_> = lines.iter().skip(row).step_by(rows).collect();
            // A label's centre (it sits to the left of its anchor, half a slot wide each way).
            let wanted: Vec<f64> = members
                .iter()
                .map(|l| l.1 - 0.5 * l.3 - p.px(0.8))
                .collect();
            let placed = label_positions(
                &wanted,
                slot,
                frame.left + 0.5 * slot,
                frame.right - 0.5 * slot,
            );
            let y0 = frame.top + p.px(2.0) + row as f64 * (longest + leader + p.px(2.0));
            for ((label, xp, tw, th), centre) in members.iter().zip(placed) {
                let anchor = centre + 0.5 * th;
                let moved = (anchor - (xp - p.px(0.8))).abs() > p.px(0.5);
                let y_text = y0;
                p.text(
                    label,
                    (anchor, y_text),
                    label_pt,
                    theme.muted,
                    (HPos::Right, VPos::Bottom),
                    Orientation::Up,
                )?;
                if moved {
                    // The leader: from under the label to its line.
                    let from = (centre, y_text + tw + p.px(1.0));
                    let to = (*xp, y_text + tw + leader);
                    p.polyline(
                        &[from, to],
                        theme.muted,
                        theme.axis_width_pt,
                        LineDash::Solid,
                    )?;
                }
                for t in 0..5 {
                    occupied.push((centre, y_text + tw * t as f64 / 4.0));
                }
            }
        }
    }
    if let Some(star) = data.star_c_to_o {
        if let Some(yp) = panel.px_y(star) {
            p.polyline(
                &[(frame.left, yp), (frame.right, yp)],
                theme.muted,
                theme.line_width_pt * 0.8,
                LineDash::DashDot,
            )?;
        }
    }
    let styles = [
        (
            "gas",
            SeriesStyle::line(theme.series_colour(0), LineDash::Solid),
            &data.c_to_o_gas,
        ),
        (
            "ices",
            SeriesStyle::line(theme.series_colour(1), LineDash::Dashed),
            &data.c_to_o_ice,
        ),
        (
            "all solids",
            SeriesStyle::line(theme.series_colour(2), LineDash::Dotted).with_marker(Marker::Square),
            &data.c_to_o_solid,
        ),
    ];
    // Every defined point of the three series, for placing the legend
    // (`occupied_points` of them), noted while drawing them.
    for (_, style, ys) in &styles {
        p.series_noting(&panel, &data.radius_au, ys, style, Some(&mut occupied))?;
    }
    if let Some(r) = data.planet_radius_au {
        if let Some(xp) = panel
            .px_x(r)
            .filter(|&xp| xp >= frame.left && xp <= frame.right)
        {
            p.polyline(
                &[(xp, frame.top), (xp, frame.bottom)],
                theme.foreground,
                theme.line_width_pt * 1.4,
                LineDash::Solid,
            )?;
            p.text(
                "planet",
                (xp + p.px(2.0), frame.bottom - p.px(2.0)),
                label_pt,
                theme.foreground,
                (HPos::Left, VPos::Top),
                Orientation::Up,
            )?;
        }
    }
    let mut entries: Vec<(String, SeriesStyle)> =
        styles.iter().map(|(l, s, _)| (l.to_string(), *s)).collect();
    if data.star_c_to_o.is_some() {
        entries.push((
            "star".to_string(),
            SeriesStyle::line(theme.muted, LineDash::DashDot),
        ));
    }
    let corner = p.legend_corner(&frame, &entries, &occupied)?;
    p.segment(
        "front",
        |k| {
            k.panel(&panel).entries(&entries).corner(corner);
        },
        || {
            p.axes(&panel, AxisOptions::FULL)?;
            match corner {
                Some(corner) => p.legend_in_corner(corner, &entries),
                None => Ok(()),
            }
        },
    )?;
    Ok(ChartLayout {
        panels: vec![panel.to_layout(area.get_base_pixel())],
    })
}

/// (b) Midplane temperature with its irradiation and accretion components (top
/// panel) and the gas surface density (bottom panel) against radius, log-log,
/// the panels sharing the radius axis.
pub fn draw_temperature_profile<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &TemperatureData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    draw_temperature_profile_reusing(area, data, theme, pixels_per_point, None)
}

/// [`draw_temperature_profile`] with its grids and its axes and legend as
/// segments kept in `reuse` ([`crate::reuse`]): the same drawing.
pub fn draw_temperature_profile_reusing<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &TemperatureData,
    theme: &Theme,
    pixels_per_point: f64,
    reuse: Option<&dyn Reuse>,
) -> Result<ChartLayout, ChartError> {
    data.validate()?;
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point).reusing(reuse);
    let size = p.size();
    p.fill_rect(
        Frame {
            left: 0.0,
            top: 0.0,
            right: size.0,
            bottom: size.1,
        },
        theme.background,
    )?;

    let x = radius_axis(&data.radius_au);
    let (t_min, t_max) = positive_extent(
        data.midplane_temperature_k
            .iter()
            .chain(&data.irradiation_temperature_k),
    )
    .ok_or(ChartError::EmptyData {
        field: "midplane_temperature_k",
    })?;
    // The accretion component falls steeply outward; show it down to a fifth of the coldest midplane.
    let t_floor =
        positive_extent(&data.accretion_temperature_k).map_or(t_min, |(a, _)| a.max(t_min / 5.0));
    let (t0, t1) = decade_range(t_min.min(t_floor), t_max);
    let ty = AxisTransform::new(t0, t1, Scale::Log10, "T [K]");
    let (s_min, s_max) =
        positive_extent(&data.surface_density_g_cm2).ok_or(ChartError::EmptyData {
            field: "surface_density_g_cm2",
        })?;
    let (s0, s1) = decade_range(s_min.max(s_max * 1e-8), s_max);
    let sy = AxisTransform::new(s0, s1, Scale::Log10, "\u{03a3} [g cm\u{207b}\u{00b2}]");

    let left = p.px(PAD_PT) + p.y_label_space(&ty)?.max(p.y_label_space(&sy)?);
    let right = size.0 - right_padding(&p, &x)?;
    let top = p.top_space(PAD_PT)?;
    let bottom = size.1 - p.x_label_space(&x)? - p.px(1.0);
    let gap = p.px(3.0);
    let split = top + 0.58 * (bottom - top - gap);
    let upper = Frame {
        left,
        top,
        right,
        bottom: split,
    };
    let lower = Frame {
        left,
        top: split + gap,
        right,
        bottom,
    };
    check_frame(&upper, size)?;
    check_frame(&lower, size)?;
    let tp = Panel {
        name: "temperature",
        frame: upper,
        x: x.clone(),
        y: ty,
    };
    let sp = Panel {
        name: "surface_density",
        frame: lower,
        x,
        y: sy,
    };

    p.segment(
        "grids",
        |k| {
            k.panel(&tp).panel(&sp);
        },
        || {
            p.grid(&tp)?;
            p.grid(&sp)
        },
    )?;
    let styles = [
        (
            "midplane",
            SeriesStyle {
                width_scale: 1.3,
                ..SeriesStyle::line(theme.series_colour(0), LineDash::Solid)
            },
            &data.midplane_temperature_k,
        ),
        (
            "irradiation",
            SeriesStyle::line(theme.series_colour(1), LineDash::Dashed),
            &data.irradiation_temperature_k,
        ),
        (
            "accretion",
            SeriesStyle::line(theme.series_colour(2), LineDash::Dotted)
                .with_marker(Marker::Triangle),
            &data.accretion_temperature_k,
        ),
    ];
    // Every defined point of the three temperatures, for placing the legend
    // (`occupied_points` of them), noted while drawing them.
    let mut occupied = Vec::new();
    for (_, style, ys) in &styles {
        p.series_noting(&tp, &data.radius_au, ys, style, Some(&mut occupied))?;
    }
    p.series(
        &sp,
        &data.radius_au,
        &data.surface_density_g_cm2,
        &SeriesStyle::line(theme.series_colour(0), LineDash::Solid),
    )?;
    let entries: Vec<(String, SeriesStyle)> =
        styles.iter().map(|(l, s, _)| (l.to_string(), *s)).collect();
    let corner = p.legend_corner(&upper, &entries, &occupied)?;
    p.segment(
        "front",
        |k| {
            k.panel(&tp).panel(&sp).entries(&entries).corner(corner);
        },
        || {
            p.axes(
                &tp,
                AxisOptions {
                    x_labels: false,
                    skip_y_end_labels: (true, false),
                    ..AxisOptions::FULL
                },
            )?;
            p.axes(
                &sp,
                AxisOptions {
                    skip_y_end_labels: (false, true),
                    ..AxisOptions::FULL
                },
            )?;
            match corner {
                Some(corner) => p.legend_in_corner(corner, &entries),
                None => Ok(()),
            }
        },
    )?;
    let base = area.get_base_pixel();
    Ok(ChartLayout {
        panels: vec![tp.to_layout(base), sp.to_layout(base)],
    })
}

/// (e) Gas (top panel) and ice (bottom panel) abundance per H of every species
/// against radius, log-log; species differ by colour, dash and marker, with
/// one legend to the right. The y axes span eight decades below the largest value.
pub fn draw_abundance_profiles<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &AbundanceData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    draw_abundance_profiles_reusing(area, data, theme, pixels_per_point, None)
}

/// [`draw_abundance_profiles`] with its grids and its axes and legend as
/// segments kept in `reuse` ([`crate::reuse`]): the same drawing.
pub fn draw_abundance_profiles_reusing<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &AbundanceData,
    theme: &Theme,
    pixels_per_point: f64,
    reuse: Option<&dyn Reuse>,
) -> Result<ChartLayout, ChartError> {
    data.validate()?;
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point).reusing(reuse);
    let size = p.size();
    p.fill_rect(
        Frame {
            left: 0.0,
            top: 0.0,
            right: size.0,
            bottom: size.1,
        },
        theme.background,
    )?;

    let x = radius_axis(&data.radius_au);
    let (_, max) = positive_extent(
        data.species
            .iter()
            .flat_map(|s| s.gas_per_h.iter().chain(&s.ice_per_h)),
    )
    .ok_or(ChartError::EmptyData { field: "gas_per_h" })?;
    let (_, hi) = decade_range(max, max);
    let lo = hi * 1e-8;
    let gy = AxisTransform::new(lo, hi, Scale::Log10, "X/H (gas)");
    let iy = AxisTransform::new(lo, hi, Scale::Log10, "X/H (ice)");
    let styles: Vec<SeriesStyle> = (0..data.species.len())
        .map(|i| SeriesStyle {
            colour: theme.series_colour(i),
            dash: LineDash::CYCLE[i % LineDash::CYCLE.len()],
            marker: Marker::CYCLE[i % Marker::CYCLE.len()],
            width_scale: 1.0,
        })
        .collect();
    let entries: Vec<(String, SeriesStyle)> = data
        .species
        .iter()
        .zip(&styles)
        .map(|(s, st)| (s.label.clone(), *st))
        .collect();
    let (legend_w, legend_h) = p.legend_size(&entries)?;

    let left = p.px(PAD_PT) + p.y_label_space(&gy)?;
    let right = size.0 - p.px(PAD_PT) - legend_w - p.px(4.0);
    let top = p.top_space(PAD_PT)?;
    let bottom = size.1 - p.x_label_space(&x)? - p.px(1.0);
    let gap = p.px(3.0);
    let split = top + 0.5 * (bottom - top - gap);
    let upper = Frame {
        left,
        top,
        right,
        bottom: split,
    };
    let lower = Frame {
        left,
        top: split + gap,
        right,
        bottom,
    };
    check_frame(&upper, size)?;
    let gp = Panel {
        name: "gas_abundance",
        frame: upper,
        x: x.clone(),
        y: gy,
    };
    let ip = Panel {
        name: "ice_abundance",
        frame: lower,
        x,
        y: iy,
    };
    p.segment(
        "grids",
        |k| {
            k.panel(&gp).panel(&ip);
        },
        || {
            p.grid(&gp)?;
            p.grid(&ip)
        },
    )?;
    for (s, style) in data.species.iter().zip(&styles) {
        p.series(&gp, &data.radius_au, &s.gas_per_h, style)?;
        p.series(&ip, &data.radius_au, &s.ice_per_h, style)?;
    }
    let ly = (0.5 * (top + bottom) - 0.5 * legend_h).max(0.0);
    let at = (right + p.px(4.0), ly);
    p.segment(
        "front",
        |k| {
            k.panel(&gp)
                .panel(&ip)
                .entries(&entries)
                .f64(at.0)
                .f64(at.1);
        },
        || {
            p.axes(
                &gp,
                AxisOptions {
                    x_labels: false,
                    skip_y_end_labels: (true, false),
                    ..AxisOptions::FULL
                },
            )?;
            p.axes(
                &ip,
                AxisOptions {
                    skip_y_end_labels: (false, true),
                    ..AxisOptions::FULL
                },
            )?;
            p.legend_at(at, &entries, theme.background, theme.grid, theme.foreground)
        },
    )?;
    let base = area.get_base_pixel();
    Ok(ChartLayout {
        panels: vec![gp.to_layout(base), ip.to_layout(base)],
    })
}

/// The main panel and the colour-bar panel of a map, in area pixels.
fn map_panels<DB: DrawingBackend>(
    p: &Painter<DB>,
    x: AxisTransform,
    y: AxisTransform,
    bar: AxisTransform,
    reference: Option<&str>,
) -> Result<(Panel, Panel), ChartError> {
    let size = p.size();
    let bar_ticks = ticks(&bar);
    let mut widest: f64 = 0.0;
    for (_, label) in &bar_ticks.major {
        widest = widest.max(p.text_size(label, p.theme.tick_font_pt)?.0);
    }
    if let Some(label) = reference {
        widest = widest.max(p.text_size(label, p.theme.tick_font_pt)?.0);
    }
    let (_, label_h) = p.text_size(&bar.label, p.theme.label_font_pt)?;
    let (gap, bar_w) = (p.px(6.0), p.px(7.0));
    let bar_extra = gap + bar_w + p.px(2.5) + widest + p.px(3.0) + label_h;
    let left = p.px(PAD_PT) + p.y_label_space(&y)?;
    let right = size.0 - p.px(PAD_PT) - bar_extra;
    let frame = Frame {
        left,
        top: p.top_space(PAD_PT)?,
        right,
        bottom: size.1 - p.x_label_space(&x)? - p.px(1.0),
    };
    check_frame(&frame, size)?;
    let bar_frame = Frame {
        left: right + gap,
        top: frame.top,
        right: right + gap + bar_w,
        bottom: frame.bottom,
    };
    Ok((
        Panel {
            name: "map",
            frame,
            x,
            y,
        },
        Panel {
            name: "colour_bar",
            frame: bar_frame,
            x: AxisTransform::new(0.0, 1.0, Scale::Linear, ""),
            y: bar,
        },
    ))
}

fn map_axes(data: &MapData) -> (AxisTransform, AxisTransform, AxisTransform) {
    let (r0, r1) = data.radius_range_au();
    (
        AxisTransform::new(r0, r1, Scale::Log10, "r [au]"),
        AxisTransform::new(0.0, data.z_over_r_max(), Scale::Linear, "z/r"),
        AxisTransform::new(
            data.value_range.0,
            data.value_range.1,
            Scale::Linear,
            data.value_label.clone(),
        ),
    )
}

/// Where a map would be drawn on `area`, without drawing: the page calls this to
/// place its `putImageData` before [`draw_ice_map`] / [`draw_c_to_o_map`] with
/// [`CellDrawing::Omit`]. Panels: "map" (main) and "colour_bar".
pub fn map_layout<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &MapData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    Ok(prepare_map(area, data, theme, pixels_per_point)?.layout())
}

/// A map checked and laid out on its area, to rasterise and draw without
/// doing either again: [`map_layout`], [`rasterise_map_over`] at the main
/// panel's size and [`draw_ice_map`] / [`draw_c_to_o_map`] in one (the page
/// records a map this way: the same layout, pixels and drawing as those three
/// calls, with the data checked and the axes measured once).
pub struct MapDrawing<'d, DB: DrawingBackend> {
    painter: Painter<'d, DB>,
    data: &'d MapData,
    main: Panel,
    bar: Panel,
}

/// Checks `data` and lays the map out on `area` ([`MapDrawing`]).
pub fn prepare_map<'d, DB: DrawingBackend>(
    area: &'d DrawingArea<DB, Shift>,
    data: &'d MapData,
    theme: &'d Theme,
    pixels_per_point: f64,
) -> Result<MapDrawing<'d, DB>, ChartError> {
    data.validate()?;
    area_size(area)?;
    let painter = Painter::new(area, theme, pixels_per_point);
    let (x, y, bar) = map_axes(data);
    let (main, bar) = map_panels(
        &painter,
        x,
        y,
        bar,
        data.reference_value.as_ref().map(|r| r.0.as_str()),
    )?;
    Ok(MapDrawing {
        painter,
        data,
        main,
        bar,
    })
}

impl<'d, DB: DrawingBackend> MapDrawing<'d, DB> {
    /// Where the map goes ([`map_layout`]).
    pub fn layout(&self) -> ChartLayout {
        let base = self.painter.area.get_base_pixel();
        ChartLayout {
            panels: vec![self.main.to_layout(base), self.bar.to_layout(base)],
        }
    }

    /// The cells at the main panel's size composited over `background`
    /// ([`rasterise_map_over`]; the data was checked by [`prepare_map`]).
    pub fn raster_over(&self, background: Rgba) -> RasterImage {
        self.raster_over_into(background, Vec::new())
    }

    /// [`MapDrawing::raster_over`] written into `buffer` (its contents dropped,
    /// its memory reused: the page keeps the previous raster's buffer).
    pub fn raster_over_into(&self, background: Rgba, buffer: Vec<u8>) -> RasterImage {
        let main = self.main.to_layout((0, 0));
        raster_checked_into(
            self.data,
            self.painter.theme,
            Some(background),
            main.width,
            main.height,
            buffer,
        )
    }

    /// This map drawn with its axes, colour bar and legend as a segment kept
    /// in `reuse` ([`crate::reuse`]): the same drawing.
    pub fn reusing(mut self, reuse: Option<&'d dyn Reuse>) -> Self {
        self.painter = self.painter.reusing(reuse);
        self
    }

    /// Draws the map ([`draw_ice_map`] / [`draw_c_to_o_map`] with `cells`).
    pub fn draw(&self, cells: CellDrawing) -> Result<ChartLayout, ChartError> {
        draw_prepared_map(self, cells)
    }
}

/// White line over a dark halo: visible on every part of both colour maps.
fn halo_line<DB: DrawingBackend>(
    p: &Painter<DB>,
    panel: &Panel,
    points: &[(f64, f64)],
    width_pt: f64,
    dash: LineDash,
) -> Result<(), ChartError> {
    // The pieces `clip_polyline` gives, streamed through one buffer.
    let mut buffer = Vec::new();
    for_each_clipped(points, &panel.frame, &mut buffer, |piece| {
        p.polyline(
            piece,
            Rgba::hex(0x000000).with_alpha(150),
            width_pt * 2.4,
            LineDash::Solid,
        )?;
        p.polyline(piece, Rgba::hex(0xffffff), width_pt, dash)
    })
}

fn fill_around<DB: DrawingBackend>(
    p: &Painter<DB>,
    f: &Frame,
    colour: Rgba,
) -> Result<(), ChartError> {
    let (w, h) = p.size();
    p.fill_rect(
        Frame {
            left: 0.0,
            top: 0.0,
            right: w,
            bottom: f.top,
        },
        colour,
    )?;
    p.fill_rect(
        Frame {
            left: 0.0,
            top: f.bottom,
            right: w,
            bottom: h,
        },
        colour,
    )?;
    p.fill_rect(
        Frame {
            left: 0.0,
            top: f.top,
            right: f.left,
            bottom: f.bottom,
        },
        colour,
    )?;
    p.fill_rect(
        Frame {
            left: f.right,
            top: f.top,
            right: w,
            bottom: f.bottom,
        },
        colour,
    )
}

/// The colour bar: the map's colours from bottom to top, ticks and label on the
/// right, an optional reference value marked across the bar and labelled.
fn colour_bar<DB: DrawingBackend>(
    p: &Painter<DB>,
    bar: &Panel,
    map: ColourMap,
    reference: Option<&(String, f64)>,
) -> Result<(), ChartError> {
    let f = bar.frame;
    let theme = p.theme;
    let steps = (f.height().round() as usize).clamp(2, 128);
    for s in 0..steps {
        let t0 = s as f64 / steps as f64;
        let t1 = (s + 1) as f64 / steps as f64;
        let c = map.at(0.5 * (t0 + t1));
        // Overlap each band by a pixel so no background seam shows between them.
        let (yb, yt) = (f.bottom - t0 * f.height(), f.bottom - t1 * f.height());
        p.fill_rect(
            Frame {
                left: f.left,
                top: (yt - 1.0).max(f.top),
                right: f.right,
                bottom: yb,
            },
            c,
        )?;
    }
    let fg = theme.foreground;
    let w = theme.axis_width_pt;
    p.polyline(
        &[
            (f.left, f.top),
            (f.right, f.top),
            (f.right, f.bottom),
            (f.left, f.bottom),
            (f.left, f.top),
        ],
        fg,
        w,
        LineDash::Solid,
    )?;
    let t = ticks(&bar.y);
    let gap = p.px(2.5);
    let mut widest: f64 = 0.0;
    let reference_y = reference
        .and_then(|(_, v)| bar.px_y(*v))
        .filter(|y| *y >= f.top - 0.5 && *y <= f.bottom + 0.5);
    let (_, tick_h) = p.text_size("0", theme.tick_font_pt)?;
    for (v, label) in &t.major {
        if let Some(y) = bar.px_y(*v) {
            p.polyline(
                &[(f.right, y), (f.right - p.px(2.0), y)],
                fg,
                w,
                LineDash::Solid,
            )?;
            widest = widest.max(p.text_size(label, theme.tick_font_pt)?.0);
            // A tick label colliding with the reference label gives way to it.
            if reference_y.is_some_and(|ry| (ry - y).abs() < tick_h) {
                continue;
            }
            p.text(
                label,
                (f.right + gap, y),
                theme.tick_font_pt,
                fg,
                (HPos::Left, VPos::Center),
                Orientation::Horizontal,
            )?;
        }
    }
    if let (Some(y), Some((label, _))) = (reference_y, reference) {
        p.polyline(
            &[(f.left - p.px(2.0), y), (f.right + p.px(2.0), y)],
            Rgba::hex(0x000000),
            w * 3.0,
            LineDash::Solid,
        )?;
        p.polyline(
            &[(f.left - p.px(2.0), y), (f.right + p.px(2.0), y)],
            Rgba::hex(0xffffff),
            w * 1.2,
            LineDash::Solid,
        )?;
        p.text(
            label,
            (f.right + gap, y),
            theme.tick_font_pt,
            fg,
            (HPos::Left, VPos::Center),
            Orientation::Horizontal,
        )?;
        widest = widest.max(p.text_size(label, theme.tick_font_pt)?.0);
    }
    let (_, label_h) = p.text_size(&bar.y.label, theme.label_font_pt)?;
    let x = f.right + gap + widest + p.px(2.0) + 0.5 * label_h;
    p.text(
        &bar.y.label,
        (x, 0.5 * (f.top + f.bottom)),
        theme.label_font_pt,
        fg,
        (HPos::Center, VPos::Center),
        Orientation::Up,
    )
}

/// A filled triangle of height `h` standing on the top of the colour bar
/// `bar`, in the bar's top colour and outlined: values beyond the bar's range.
/// Filled row by row with one-pixel lines (the painter has no polygon fill).
fn over_range_mark<DB: DrawingBackend>(
    p: &Painter<DB>,
    bar: &Frame,
    h: f64,
    colour: Rgba,
) -> Result<(), ChartError> {
    let (base, apex) = (bar.top - p.px(1.0), bar.top - p.px(1.0) - h);
    let (left, right) = (bar.left, bar.right);
    let mid = 0.5 * (left + right);
    let rows = h.ceil().max(1.0) as usize;
    for r in 0..=rows {
        let y = apex + h * r as f64 / rows as f64;
        let half = 0.5 * (right - left) * (y - apex) / h;
        if half > 0.0 {
            p.polyline(
                &[(mid - half, y), (mid + half, y)],
                colour,
                1.0 / p.px(1.0),
                LineDash::Solid,
            )?;
        }
    }
    let fg = p.theme.foreground;
    p.polyline(
        &[(left, base), (mid, apex), (right, base), (left, base)],
        fg,
        p.theme.axis_width_pt,
        LineDash::Solid,
    )
}

fn draw_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &MapData,
    theme: &Theme,
    pixels_per_point: f64,
    cells: CellDrawing,
) -> Result<ChartLayout, ChartError> {
    prepare_map(area, data, theme, pixels_per_point)?.draw(cells)
}

fn draw_prepared_map<DB: DrawingBackend>(
    prepared: &MapDrawing<'_, DB>,
    cells: CellDrawing,
) -> Result<ChartLayout, ChartError> {
    let MapDrawing {
        painter: p,
        data,
        main,
        bar,
    } = prepared;
    let (area, theme) = (p.area, p.theme);
    let f = main.frame;
    let (w, h) = p.size();
    match cells {
        CellDrawing::Omit => fill_around(p, &f, theme.background)?,
        _ => p.fill_rect(
            Frame {
                left: 0.0,
                top: 0.0,
                right: w,
                bottom: h,
            },
            theme.background,
        )?,
    }
    match cells {
        CellDrawing::Raster => {
            let layout = main.to_layout((0, 0));
            let image = raster_checked(data, theme, None, layout.width, layout.height);
            let rgb = image.to_rgb_over(theme.background);
            if let Some(element) = BitMapElement::with_owned_buffer(
                (layout.left, layout.top),
                (image.width, image.height),
                rgb,
            ) {
                area.draw(&element).map_err(|e| ChartError::Drawing {
                    message: e.to_string(),
                })?;
            }
        }
        CellDrawing::Rectangles => {
            for (r0, r1, z0, z1, c) in data.cell_rectangles(theme.undefined) {
                if c[3] == 0 {
                    continue;
                }
                if let (Some((xa, ya)), Some((xb, yb))) = (main.px(r0, z0), main.px(r1, z1)) {
                    // Overlap the right and upper neighbours by a pixel: anti-aliased renderers
                    // would otherwise show hairline seams of background between abutting cells.
                    let cell = Frame {
                        left: xa.max(f.left),
                        top: (yb - 1.0).max(f.top),
                        right: (xb + 1.0).min(f.right),
                        bottom: ya.min(f.bottom),
                    };
                    p.fill_rect(
                        cell,
                        Rgba {
                            r: c[0],
                            g: c[1],
                            b: c[2],
                            a: c[3],
                        },
                    )?;
                }
            }
        }
        CellDrawing::Omit => {}
    }
    let mut entries: Vec<(String, SeriesStyle)> = Vec::new();
    let white = Rgba::hex(0xffffff);
    if !data.scale_height_over_r().is_empty() {
        // The x pixel of each column, shared by the three lines: what
        // `main.px(r, n * h)` computes first (one log10 per column, not three).
        let column_x: Vec<Option<f64>> = data.radius_au().iter().map(|&r| main.px_x(r)).collect();
        let mut points: Vec<(f64, f64)> = Vec::with_capacity(column_x.len());
        for (n, dash) in [
            (1.0, LineDash::Dotted),
            (2.0, LineDash::Dotted),
            (3.0, LineDash::Dotted),
        ] {
            // As `main.px(r, n * h)` for each column (defined where both are).
            points.clear();
            points.extend(
                column_x
                    .iter()
                    .zip(data.scale_height_over_r())
                    .filter_map(|(x, &h)| x.zip(main.px_y(n * h))),
            );
            halo_line(p, main, &points, theme.line_width_pt * 0.7, dash)?;
            // Label each line where it leaves the frame or at its outer end.
            if let Some(&(xe, ye)) = points
                .iter()
                .rev()
                .find(|(px, py)| *px <= f.right && *py >= f.top)
            {
                let label = format!("{}H", n as u32);
                let (tw, th) = p.text_size(&label, theme.legend_font_pt)?;
                let (lx, ly) = (
                    (xe - p.px(1.5)).min(f.right - p.px(1.5)),
                    (ye - p.px(1.0)).max(f.top + th),
                );
                p.fill_rect(
                    Frame {
                        left: lx - tw - p.px(1.0),
                        top: ly - th,
                        right: lx + p.px(0.5),
                        bottom: ly + p.px(0.5),
                    },
                    Rgba::hex(0x000000).with_alpha(130),
                )?;
                p.text(
                    &label,
                    (lx, ly),
                    theme.legend_font_pt,
                    white,
                    (HPos::Right, VPos::Bottom),
                    Orientation::Horizontal,
                )?;
            }
        }
        entries.push((
            "1, 2, 3 H".to_string(),
            SeriesStyle::line(white, LineDash::Dotted),
        ));
    }
    if let Some(level) = data.contour_level {
        for line in data.contour(level) {
            let points: Vec<(f64, f64)> = line.iter().filter_map(|&(r, z)| main.px(r, z)).collect();
            halo_line(p, main, &points, theme.line_width_pt * 1.2, LineDash::Solid)?;
        }
        entries.push((
            data.contour_label.clone(),
            SeriesStyle::line(white, LineDash::Solid),
        ));
    }
    for line in &data.curves {
        let points: Vec<(f64, f64)> = line.iter().filter_map(|&(r, z)| main.px(r, z)).collect();
        halo_line(
            p,
            main,
            &points,
            theme.line_width_pt * 1.2,
            LineDash::Dashed,
        )?;
    }
    if !data.curves.is_empty() {
        entries.push((
            "given surface".to_string(),
            SeriesStyle::line(white, LineDash::Dashed),
        ));
    }
    // The axes, colour bar and legend: the same after every edit that leaves
    // the panels, the colour scale and the legend's entries alone.
    p.segment(
        "front",
        |k| {
            k.panel(main).panel(bar).colour_map(data.colour_map);
            match &data.reference_value {
                Some((label, value)) => k.byte(1).text(label).f64(*value),
                None => k.byte(0),
            };
            k.entries(&entries);
        },
        || {
            p.axes(main, AxisOptions::FULL)?;
            colour_bar(p, bar, data.colour_map, data.reference_value.as_ref())?;
            if !entries.is_empty() {
                let (_, lh) = p.legend_size(&entries)?;
                let inset = p.px(3.0);
                p.legend_at(
                    (f.left + inset, f.top + inset.max(0.0)).min_y(f.bottom - lh - inset),
                    &entries,
                    Rgba::hex(0x000000).with_alpha(140),
                    Rgba::hex(0xffffff).with_alpha(120),
                    white,
                )?;
            }
            Ok(())
        },
    )?;
    let base = area.get_base_pixel();
    Ok(ChartLayout {
        panels: vec![main.to_layout(base), bar.to_layout(base)],
    })
}

trait MinY {
    fn min_y(self, y: f64) -> Self;
}

impl MinY for (f64, f64) {
    fn min_y(self, y: f64) -> Self {
        (self.0, self.1.min(y))
    }
}

/// (c) r-z map of an ice fraction (0..1): radius log, z/r linear, the 0.5
/// contour (marching squares over the samples), the z = 1, 2, 3 H lines and a
/// labelled colour bar. Undefined cells are neutral grey, above the grid transparent.
pub fn draw_ice_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &MapData,
    theme: &Theme,
    pixels_per_point: f64,
    cells: CellDrawing,
) -> Result<ChartLayout, ChartError> {
    draw_map(area, data, theme, pixels_per_point, cells)
}

/// (d) r-z map of the gas C/O (colour scale `data.value_range`, e.g. 0..2,
/// values beyond clamped to the end colours), the star's C/O marked on the
/// colour bar, undefined cells neutral grey.
pub fn draw_c_to_o_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &MapData,
    theme: &Theme,
    pixels_per_point: f64,
    cells: CellDrawing,
) -> Result<ChartLayout, ChartError> {
    draw_map(area, data, theme, pixels_per_point, cells)
}

/// Cell edges of node-centred samples on a log axis: geometric midpoints, the
/// ends extended by half a spacing.
fn log_edges(nodes: &[f64]) -> Vec<f64> {
    let l: Vec<f64> = nodes.iter().map(|v| v.log10()).collect();
    let n = l.len();
    if n == 1 {
        return vec![10f64.powf(l[0] - 0.1), 10f64.powf(l[0] + 0.1)];
    }
    let mut e = vec![l[0] - 0.5 * (l[1] - l[0])];
    for i in 1..n {
        e.push(0.5 * (l[i - 1] + l[i]));
    }
    e.push(l[n - 1] + 0.5 * (l[n - 1] - l[n - 2]));
    e.into_iter().map(|v| 10f64.powf(v)).collect()
}

/// Resolution to which the chi-square map's cells are grouped in vector
/// output [dots per inch]: a 300 dpi print, the usual journal requirement for
/// figures (common practice, no source).
pub const CHI2_MAP_DPI: f64 = 300.0;

/// Groups of consecutive cells, `(first, end)` with `end` exclusive, each
/// spanning at least `min_span` device pixels between `edges[first]` and `edges[end]`
/// (`to_px` maps an edge to its pixel coordinate); the last group takes any
/// remainder. With cells wider than a pixel every group is one cell.
fn pixel_groups(
    edges: &[f64],
    min_span: f64,
    to_px: impl Fn(f64) -> Option<f64>,
) -> Vec<(usize, usize)> {
    let n = edges.len().saturating_sub(1);
    let mut groups = Vec::new();
    let mut start = 0;
    let mut start_px = to_px(edges[0]).unwrap_or(0.0);
    for (end, &edge) in edges.iter().enumerate().take(n + 1).skip(1) {
        let px = to_px(edge).unwrap_or(start_px);
        if (px - start_px).abs() >= min_span || end == n {
            groups.push((start, end));
            start = end;
            start_px = px;
        }
    }
    if start < n {
        // Cannot happen (the loop closes a group at end == n); kept so every cell is covered.
        groups.push((start, n));
    }
    groups
}

/// (f) The planet chi-square map over formation radius x solid-to-gas ratio
/// (log-log): colour = delta chi^2 above the minimum (cividis, clamped at twice
/// the largest threshold), contours at each threshold (solid, dashed, dotted),
/// the best fit marked by a cross. Plain slices: `chi2[ratio_index * radii.len() + radius_index]`,
/// NaN where undefined. Cells are drawn as rectangles, grouped to at most one per device pixel.
pub fn draw_chi2_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &Chi2Data,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    data.validate()?;
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point);
    let (nr, ns) = (data.radius_au.len(), data.solid_to_gas.len());
    let min = data
        .chi2
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .fold(f64::INFINITY, f64::min);
    if !min.is_finite() {
        return Err(ChartError::EmptyData { field: "chi2" });
    }
    let largest = data.thresholds.iter().map(|t| t.1).fold(0.0, f64::max);
    let top = if largest > 0.0 {
        2.0 * largest
    } else {
        data.chi2
            .iter()
            .copied()
            .filter(|v| v.is_finite())
            .fold(0.0, f64::max)
            - min
    };
    let top = if top > 0.0 { top } else { 1.0 };
    let re = log_edges(&data.radius_au);
    let se = log_edges(&data.solid_to_gas);
    let x = AxisTransform::new(re[0], re[nr], Scale::Log10, data.x_label.clone());
    let y = AxisTransform::new(se[0], se[ns], Scale::Log10, data.y_label.clone());
    let bar = AxisTransform::new(0.0, top, Scale::Linear, "\u{0394}\u{03c7}\u{00b2}");
    let (main, mut bar) = map_panels(&p, x, y, bar, None)?;
    // Cells above the bar's range take its top colour; a triangle over the bar
    // (the usual "extended colour bar" mark) says so. It takes the bar's top.
    let over_range = data.chi2.iter().any(|v| v.is_finite() && v - min > top);
    let triangle_h = bar.frame.width() * 0.9;
    if over_range {
        bar.frame.top += triangle_h + p.px(1.0);
    }
    let undefined_cells = data.chi2.iter().any(|v| !v.is_finite());
    let (w, h) = p.size();
    p.fill_rect(
        Frame {
            left: 0.0,
            top: 0.0,
            right: w,
            bottom: h,
        },
        theme.background,
    )?;
    let map = ColourMap::Cividis;
    // Never more drawn cells than pixels: model cells are grouped into runs at
    // least one device pixel wide (and high), and each group shows the smallest
    // chi^2 of the cells it covers, so the best-fit valley never disappears
    // (a 4096-cell map would otherwise write hundreds of MB of SVG).
    // The finest useful cell is one device pixel, and in vector output (10 units per point) one
    // pixel of a 300 dpi print: max(1, ppp x 72 / 300) device units.
    let min_span = (pixels_per_point * 72.0 / CHI2_MAP_DPI).max(1.0);
    let columns = pixel_groups(&re, min_span, |r| main.px(r, se[0]).map(|q| q.0));
    let rows = pixel_groups(&se, min_span, |s| main.px(re[0], s).map(|q| q.1));
    for &(k0, k1) in &rows {
        for &(i0, i1) in &columns {
            let v = (k0..k1)
                .flat_map(|k| (i0..i1).map(move |i| data.chi2[k * nr + i]))
                .filter(|v| v.is_finite())
                .fold(f64::NAN, f64::min);
            let c = if v.is_finite() {
                map.at((v - min) / top)
            } else {
                theme.undefined
            };
            if let (Some((xa, ya)), Some((xb, yb))) =
                (main.px(re[i0], se[k0]), main.px(re[i1], se[k1]))
            {
                let f = main.frame;
                p.fill_rect(
                    Frame {
                        left: xa,
                        top: (yb - 1.0).max(f.top),
                        right: (xb + 1.0).min(f.right),
                        bottom: ya,
                    },
                    c,
                )?;
            }
        }
    }
    let dashes = [
        LineDash::Solid,
        LineDash::Dashed,
        LineDash::Dotted,
        LineDash::DashDot,
    ];
    let mut entries = Vec::new();
    for (n, (label, delta)) in data.thresholds.iter().enumerate() {
        let dash = dashes[n % dashes.len()];
        let lines = marching_squares(
            nr,
            ns,
            |i, k| (data.radius_au[i].log10(), data.solid_to_gas[k].log10()),
            |i, k| data.chi2[k * nr + i] - min,
            *delta,
        );
        for line in lines {
            let points: Vec<(f64, f64)> = line
                .iter()
                .filter_map(|&(a, b)| main.px(10f64.powf(a), 10f64.powf(b)))
                .collect();
            halo_line(&p, &main, &points, theme.line_width_pt * 1.1, dash)?;
        }
        entries.push((label.clone(), SeriesStyle::line(Rgba::hex(0xffffff), dash)));
    }
    if let Some((r, s)) = data.best {
        if let Some(pt) = main.px(r, s) {
            p.marker(pt, Marker::Cross, Rgba::hex(0xffffff))?;
            entries.push((
                "best fit".to_string(),
                SeriesStyle::line(Rgba::hex(0xffffff), LineDash::Solid).with_marker(Marker::Cross),
            ));
        }
    }
    p.axes(&main, AxisOptions::FULL)?;
    colour_bar(&p, &bar, map, None)?;
    if over_range {
        over_range_mark(&p, &bar.frame, triangle_h, map.at(1.0))?;
    }
    if undefined_cells {
        // Grey cells: no chi-square, because a fitted model quantity is undefined there.
        entries.push((
            "undefined (no solids or no O)".to_string(),
            SeriesStyle::line(theme.undefined, LineDash::Solid),
        ));
    }
    if !entries.is_empty() {
        let inset = p.px(3.0);
        p.legend_at(
            (main.frame.left + inset, main.frame.top + inset),
            &entries,
            Rgba::hex(0x000000).with_alpha(140),
            Rgba::hex(0xffffff).with_alpha(120),
            Rgba::hex(0xffffff),
        )?;
    }
    let base = area.get_base_pixel();
    Ok(ChartLayout {
        panels: vec![main.to_layout(base), bar.to_layout(base)],
    })
}

#[cfg(test)]
mod label_tests {
    use super::label_positions;

    fn check(wanted: &[f64], slot: f64, low: f64, high: f64) -> Vec<f64> {
        let out = label_positions(wanted, slot, low, high);
        assert_eq!(out.len(), wanted.len());
        for pair in out.windows(2) {
            assert!(pair[1] - pair[0] >= slot - 1e-9, "labels overlap: {out:?}");
        }
        out
    }

    #[test]
    fn labels_far_apart_stay_where_they_want() {
        assert_eq!(
            check(&[10.0, 50.0, 90.0], 10.0, 0.0, 100.0),
            vec![10.0, 50.0, 90.0]
        );
    }

    #[test]
    fn crowded_labels_spread_around_their_mean_without_overlap() {
        // Nine labels wanting one spot: centred on it, one slot apart.
        let out = check(&[50.0; 9], 10.0, 0.0, 200.0);
        assert_eq!(
            out,
            vec![10.0, 20.0, 30.0, 40.0, 50.0, 60.0, 70.0, 80.0, 90.0]
        );
        // Two pairs: each pair spreads about its own mean.
        assert_eq!(
            check(&[20.0, 22.0, 80.0, 82.0], 10.0, 0.0, 200.0),
            vec![16.0, 26.0, 76.0, 86.0]
        );
    }

    #[test]
    fn labels_are_kept_inside_the_frame() {
        let out = check(&[95.0, 96.0, 97.0], 10.0, 0.0, 100.0);
        assert_eq!(out, vec![80.0, 90.0, 100.0]);
        let out = check(&[0.0, 1.0], 10.0, 5.0, 100.0);
        assert_eq!(out, vec![5.0, 15.0]);
    }
}

#[cfg(test)]
mod extent_tests {
    use super::positive_extent;

    /// `positive_extent` gives what the fold with `f64::min` and `max` over the finite
    /// positive values gave, bit for bit, skipping None, NaN, infinities, zeros and
    /// negatives (derived, D).
    #[test]
    fn positive_extent_equals_the_min_max_fold() {
        let reference = |s: &[Option<f64>]| {
            s.iter()
                .flatten()
                .filter(|v| v.is_finite() && **v > 0.0)
                .fold(None, |out: Option<(f64, f64)>, &v| {
                    Some(out.map_or((v, v), |(a, b)| (a.min(v), b.max(v))))
                })
        };
        let values = [
            Some(3.0),
            None,
            Some(f64::NAN),
            Some(1e-300),
            Some(-2.0),
            Some(0.0),
            Some(-0.0),
            Some(f64::INFINITY),
            Some(7.5e10),
            Some(5e-324),
            Some(3.0),
            Some(f64::MAX),
        ];
        for start in 0..values.len() {
            for end in start..=values.len() {
                let s = &values[start..end];
                let got = positive_extent(s).map(|(a, b)| (a.to_bits(), b.to_bits()));
                let want = reference(s).map(|(a, b)| (a.to_bits(), b.to_bits()));
                assert_eq!(got, want, "{s:?}");
            }
        }
    }
}
