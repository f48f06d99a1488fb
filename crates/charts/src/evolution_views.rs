//! The views of an evolving disk (docs/model.md section 12): (g) the snowline tracks, radius
//! against age; (h) gas C/O against radius at one age with the static model's at the same age;
//! (i) a radius x age map of gas C/O. A child module of `views`, sharing its frame helpers.

use plotters::coord::Shift;
use plotters::prelude::{DrawingArea, DrawingBackend};
use plotters::style::text_anchor::{HPos, VPos};

use super::{area_size, check_frame, decade_range, radius_axis, right_padding, PAD_PT};
use crate::colour::ColourMap;
use crate::error::{check_increasing_positive, ChartError};
use crate::layout::{AxisTransform, ChartLayout, Scale};
use crate::paint::{AxisOptions, Frame, Orientation, Painter, Panel};
use crate::theme::{LineDash, Marker, SeriesStyle, Theme};

const DASHES: [LineDash; 4] = [
    LineDash::Solid,
    LineDash::Dashed,
    LineDash::Dotted,
    LineDash::DashDot,
];
const MARKERS: [Marker; 3] = [Marker::None, Marker::Square, Marker::Circle];

/// The snowline of each species at each snapshot age.
#[derive(Debug, Clone, PartialEq)]
pub struct SnowlineTrackData {
    /// Snapshot ages [Myr], increasing.
    pub times_myr: Vec<f64>,
    /// Per species: its name and the snowline radius [au] at each age (`None` where there is none).
    pub tracks: Vec<(String, Vec<Option<f64>>)>,
    /// The age the page shows [Myr], marked by a vertical line.
    pub current_myr: Option<f64>,
}

/// Gas C/O against radius at one age, evolved and static.
#[derive(Debug, Clone, PartialEq)]
pub struct EvolvedProfileData {
    /// Radial cell centres [au], increasing.
    pub radius_au: Vec<f64>,
    /// Gas C/O of the evolved disk.
    pub evolved: Vec<Option<f64>>,
    /// Gas C/O of the static model at the same age.
    pub static_profile: Vec<Option<f64>>,
    /// The star's C/O.
    pub star_c_to_o: Option<f64>,
    /// The age [Myr], shown in the title line.
    pub age_myr: f64,
}

/// A quantity over radius x age (one row per snapshot).
#[derive(Debug, Clone, PartialEq)]
pub struct RadiusTimeMapData {
    /// Radial cell centres [au], increasing.
    pub radius_au: Vec<f64>,
    /// Snapshot ages [Myr], increasing.
    pub times_myr: Vec<f64>,
    /// `values[k][j]`: the value at age k and radius j.
    pub values: Vec<Vec<Option<f64>>>,
    /// Colour scale limits (values outside are clamped).
    pub range: (f64, f64),
    /// The quantity's name, e.g. "gas C/O".
    pub label: String,
    /// The age the page shows [Myr], marked by a horizontal line.
    pub current_myr: Option<f64>,
}

fn background<DB: DrawingBackend>(p: &Painter<DB>) -> Result<(f64, f64), ChartError> {
    let size = p.size();
    p.fill_rect(
        Frame {
            left: 0.0,
            top: 0.0,
            right: size.0,
            bottom: size.1,
        },
        p.theme.background,
    )?;
    Ok(size)
}

fn frame_for<DB: DrawingBackend>(
    p: &Painter<DB>,
    x: &AxisTransform,
    y: &AxisTransform,
    size: (f64, f64),
) -> Result<Frame, ChartError> {
    let frame = Frame {
        left: p.px(PAD_PT) + p.y_label_space(y)?,
        top: p.top_space(PAD_PT)?,
        right: size.0 - right_padding(p, x)?,
        bottom: size.1 - p.x_label_space(x)? - p.px(1.0),
    };
    check_frame(&frame, size)?;
    Ok(frame)
}

/// (g) Snowline radius [au] against age [Myr], log-log, one line per species (colour, dash and
/// marker differ), with the shown age as a vertical line.
pub fn draw_snowline_tracks<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &SnowlineTrackData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    check_increasing_positive("times_myr", &data.times_myr)?;
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point);
    let size = background(&p)?;
    let n = data.times_myr.len();
    let (t0, t1) = (data.times_myr[0], data.times_myr[n - 1]);
    let (t0, t1) = if t1 > t0 {
        (t0, t1)
    } else {
        (t0 / 2.0, t0 * 2.0)
    };
    let x = AxisTransform::new(t0, t1, Scale::Log10, "age [Myr]");
    let radii = data
        .tracks
        .iter()
        .flat_map(|(_, v)| v.iter().flatten())
        .filter(|r| r.is_finite() && **r > 0.0);
    let (lo, hi) = radii.fold((f64::INFINITY, 0.0f64), |(a, b), &r| (a.min(r), b.max(r)));
    let (lo, hi) = if hi > 0.0 {
        decade_range(lo, hi)
    } else {
        (0.1, 100.0)
    };
    let y = AxisTransform::new(lo, hi, Scale::Log10, "snowline [au]");
    let frame = frame_for(&p, &x, &y, size)?;
    let panel = Panel {
        name: "snowline_tracks",
        frame,
        x,
        y,
    };
    p.grid(&panel)?;
    let mut entries = Vec::new();
    for (i, (name, radii)) in data.tracks.iter().enumerate() {
        if radii.len() != n {
            return Err(ChartError::LengthMismatch {
                field: "tracks",
                expected: n,
                got: radii.len(),
            });
        }
        let style = SeriesStyle::line(theme.series_colour(i), DASHES[i % 4])
            .with_marker(MARKERS[(i / 4) % 3]);
        p.series(&panel, &data.times_myr, radii, &style)?;
        if radii.iter().any(Option::is_some) {
            entries.push((name.clone(), style));
        }
    }
    if let Some(xp) = data.current_myr.and_then(|t| panel.px_x(t)) {
        if xp >= frame.left && xp <= frame.right {
            p.polyline(
                &[(xp, frame.top), (xp, frame.bottom)],
                theme.foreground,
                theme.line_width_pt,
                LineDash::Solid,
            )?;
        }
    }
    p.axes(&panel, AxisOptions::FULL)?;
    p.legend(&frame, &entries, &[])?;
    Ok(ChartLayout {
        panels: vec![panel.to_layout(area.get_base_pixel())],
    })
}

/// (h) Gas C/O against radius at one age: the evolved disk (solid) and the static model at the
/// same age (dashed), with the star's C/O (dash-dot) and the age written in the frame.
pub fn draw_evolved_c_to_o<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &EvolvedProfileData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    check_increasing_positive("radius_au", &data.radius_au)?;
    for (field, v) in [
        ("evolved", &data.evolved),
        ("static_profile", &data.static_profile),
    ] {
        if v.len() != data.radius_au.len() {
            return Err(ChartError::LengthMismatch {
                field,
                expected: data.radius_au.len(),
                got: v.len(),
            });
        }
    }
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point);
    let size = background(&p)?;
    let x = radius_axis(&data.radius_au);
    let top = data
        .evolved
        .iter()
        .chain(&data.static_profile)
        .flatten()
        .filter(|v| v.is_finite())
        .fold(data.star_c_to_o.unwrap_or(0.0) * 1.4, |a, &b| a.max(b))
        .max(1.0);
    let y_max = ((top * 1.05 / 0.5).ceil() * 0.5).min(3.0);
    let y = AxisTransform::new(0.0, y_max, Scale::Linear, "gas C/O");
    let frame = frame_for(&p, &x, &y, size)?;
    let panel = Panel {
        name: "evolved_c_to_o",
        frame,
        x,
        y,
    };
    p.grid(&panel)?;
    let mut entries = Vec::new();
    if let Some(star) = data.star_c_to_o {
        if let Some(yp) = panel.px_y(star) {
            p.polyline(
                &[(frame.left, yp), (frame.right, yp)],
                theme.muted,
                theme.line_width_pt * 0.8,
                LineDash::DashDot,
            )?;
            entries.push((
                "star".to_string(),
                SeriesStyle::line(theme.muted, LineDash::DashDot),
            ));
        }
    }
    let evolved = SeriesStyle::line(theme.series_colour(0), LineDash::Solid);
    let stat = SeriesStyle::line(theme.series_colour(1), LineDash::Dashed);
    p.series(&panel, &data.radius_au, &data.static_profile, &stat)?;
    p.series(&panel, &data.radius_au, &data.evolved, &evolved)?;
    entries.insert(0, ("static".to_string(), stat));
    entries.insert(
        0,
        (
            format!("evolved, {} Myr", format_age(data.age_myr)),
            evolved,
        ),
    );
    p.axes(&panel, AxisOptions::FULL)?;
    p.legend(&frame, &entries, &[])?;
    Ok(ChartLayout {
        panels: vec![panel.to_layout(area.get_base_pixel())],
    })
}

/// Cell edges of increasing positive centres: geometric midpoints between neighbours, half a
/// step (in ln) beyond the ends; a single centre gets edges a factor 1.5 either side.
fn log_edges(c: &[f64]) -> Vec<f64> {
    let n = c.len();
    if n == 1 {
        return vec![c[0] / 1.5, c[0] * 1.5];
    }
    let mut out = Vec::with_capacity(n + 1);
    out.push(c[0] * (c[0] / c[1]).sqrt());
    out.extend(c.windows(2).map(|w| (w[0] * w[1]).sqrt()));
    out.push(c[n - 1] * (c[n - 1] / c[n - 2]).sqrt());
    out
}

/// An age to three significant digits, without trailing zeros.
pub fn format_age(age_myr: f64) -> String {
    if age_myr == 0.0 || !age_myr.is_finite() {
        return "0".to_string();
    }
    let digits = (2.0 - age_myr.abs().log10().floor()).clamp(0.0, 6.0) as usize;
    let s = format!("{age_myr:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// (i) A quantity over radius (x, log) and age (y, log), each cell filled with viridis between
/// `range` (undefined cells grey), the shown age as a horizontal line, the scale in the label.
pub fn draw_radius_time_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    data: &RadiusTimeMapData,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    check_increasing_positive("radius_au", &data.radius_au)?;
    check_increasing_positive("times_myr", &data.times_myr)?;
    if data.values.len() != data.times_myr.len() {
        return Err(ChartError::LengthMismatch {
            field: "values",
            expected: data.times_myr.len(),
            got: data.values.len(),
        });
    }
    area_size(area)?;
    let p = Painter::new(area, theme, pixels_per_point);
    let size = background(&p)?;
    let x = radius_axis(&data.radius_au);
    let nt = data.times_myr.len();
    let t_edges = log_edges(&data.times_myr);
    let y = AxisTransform::new(
        t_edges[0],
        t_edges[nt],
        Scale::Log10,
        format!(
            "age [Myr]; colour: {} {} to {}",
            data.label,
            format_age(data.range.0),
            format_age(data.range.1)
        ),
    );
    let frame = frame_for(&p, &x, &y, size)?;
    let panel = Panel {
        name: "radius_time_map",
        frame,
        x,
        y,
    };
    let nr = data.radius_au.len();
    let r_edges = log_edges(&data.radius_au);
    let (lo, hi) = data.range;
    for (k, row) in data.values.iter().enumerate() {
        if row.len() != nr {
            return Err(ChartError::LengthMismatch {
                field: "values",
                expected: nr,
                got: row.len(),
            });
        }
        let (Some(top), Some(bottom)) = (panel.px_y(t_edges[k + 1]), panel.px_y(t_edges[k])) else {
            continue;
        };
        for (j, v) in row.iter().enumerate() {
            let (Some(left), Some(right)) = (panel.px_x(r_edges[j]), panel.px_x(r_edges[j + 1]))
            else {
                continue;
            };
            let colour = match v {
                Some(v) if v.is_finite() && hi > lo => {
                    ColourMap::Viridis.at(((v - lo) / (hi - lo)).clamp(0.0, 1.0))
                }
                _ => theme.muted,
            };
            p.fill_rect(
                Frame {
                    left: left.max(frame.left),
                    top: top.max(frame.top),
                    right: (right + 0.5).min(frame.right),
                    bottom: (bottom + 0.5).min(frame.bottom),
                },
                colour,
            )?;
        }
    }
    if let Some(yp) = data.current_myr.and_then(|t| panel.px_y(t)) {
        p.polyline(
            &[(frame.left, yp), (frame.right, yp)],
            theme.background,
            theme.line_width_pt * 1.2,
            LineDash::Solid,
        )?;
        p.text(
            &format!("{} Myr", format_age(data.current_myr.unwrap_or(0.0))),
            (frame.right - p.px(2.0), yp - p.px(1.0)),
            theme.legend_font_pt,
            theme.background,
            (HPos::Right, VPos::Bottom),
            Orientation::Horizontal,
        )?;
    }
    p.axes(&panel, AxisOptions::FULL)?;
    Ok(ChartLayout {
        panels: vec![panel.to_layout(area.get_base_pixel())],
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use plotters::prelude::{IntoDrawingArea, SVGBackend};

    #[test]
    fn the_three_views_draw_and_refuse_bad_data() {
        let tracks = SnowlineTrackData {
            times_myr: vec![0.01, 0.1, 1.0],
            tracks: vec![
                ("H2O".into(), vec![Some(3.0), Some(1.5), Some(1.0)]),
                ("CO".into(), vec![Some(100.0), None, Some(30.0)]),
            ],
            current_myr: Some(0.1),
        };
        let profile = EvolvedProfileData {
            radius_au: vec![0.5, 1.0, 2.0],
            evolved: vec![Some(0.3), Some(0.5), None],
            static_profile: vec![Some(0.55), Some(0.55), Some(0.8)],
            star_c_to_o: Some(0.55),
            age_myr: 0.1,
        };
        let map = RadiusTimeMapData {
            radius_au: vec![0.5, 1.0, 2.0],
            times_myr: vec![0.01, 0.1, 1.0],
            values: vec![vec![Some(0.5), Some(1.0), None]; 3],
            range: (0.0, 2.0),
            label: "gas C/O".into(),
            current_myr: Some(0.1),
        };
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (400, 300)).into_drawing_area();
            draw_snowline_tracks(&area, &tracks, &Theme::light(), 1.0).unwrap();
            draw_evolved_c_to_o(&area, &profile, &Theme::light(), 1.0).unwrap();
            draw_radius_time_map(&area, &map, &Theme::dark(), 1.0).unwrap();
            let mut bad = tracks.clone();
            bad.tracks[0].1.pop();
            assert!(matches!(
                draw_snowline_tracks(&area, &bad, &Theme::light(), 1.0),
                Err(ChartError::LengthMismatch { .. })
            ));
        }
        assert!(svg.contains("snowline [au]") && svg.contains("gas C/O"));
        assert!(!svg.contains("NaN"));
        assert_eq!(format_age(0.0215443), "0.0215");
        assert_eq!(format_age(5.0), "5");
        assert_eq!(format_age(0.0), "0");
    }
}

/// The views of an evolving run, by the keys the CLI (`nivalis figure --view`), the page and the
/// provenance use: `snowline_tracks` (g), `evolved_c_to_o` (h), `c_to_o_time_map` (i).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EvolutionView {
    /// (g) Snowline radius against age.
    SnowlineTracks,
    /// (h) Gas C/O against radius at one age, with the static model's.
    EvolvedCToO,
    /// (i) Gas C/O over radius x age.
    CToOTimeMap,
}

impl EvolutionView {
    /// Every evolution view.
    pub const ALL: [EvolutionView; 3] = [
        EvolutionView::SnowlineTracks,
        EvolutionView::EvolvedCToO,
        EvolutionView::CToOTimeMap,
    ];

    /// The view's key.
    pub fn key(self) -> &'static str {
        match self {
            EvolutionView::SnowlineTracks => "snowline_tracks",
            EvolutionView::EvolvedCToO => "evolved_c_to_o",
            EvolutionView::CToOTimeMap => "c_to_o_time_map",
        }
    }

    /// The view of a key, if it is an evolution view.
    pub fn from_key(text: &str) -> Option<EvolutionView> {
        EvolutionView::ALL.into_iter().find(|v| v.key() == text)
    }
}

fn json_numbers(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .map(|a| a.iter().filter_map(serde_json::Value::as_f64).collect())
        .unwrap_or_default()
}

fn json_optional(v: &serde_json::Value) -> Vec<Option<f64>> {
    v.as_array()
        .map(|a| a.iter().map(serde_json::Value::as_f64).collect())
        .unwrap_or_default()
}

/// The three evolution views' data at snapshot `snapshot` (clamped to the last) of an evolving
/// run's JSON (the layout of `nivalis evolve --format json`, which the page's run returns too),
/// so the page and the CLI draw the same numbers.
pub fn evolution_view_data(
    v: &serde_json::Value,
    snapshot: usize,
) -> (SnowlineTrackData, EvolvedProfileData, RadiusTimeMapData) {
    let times = json_numbers(&v["times_myr"]);
    let k = snapshot.min(times.len().saturating_sub(1));
    let current = times.get(k).copied();
    let tracks = SnowlineTrackData {
        times_myr: times.clone(),
        tracks: v["snowlines"]
            .as_object()
            .map(|m| {
                m.iter()
                    .map(|(s, r)| (s.clone(), json_optional(r)))
                    .collect()
            })
            .unwrap_or_default(),
        current_myr: current,
    };
    let radius = json_numbers(&v["radius_au"]);
    let profile = EvolvedProfileData {
        radius_au: radius.clone(),
        evolved: json_optional(&v["c_to_o_gas"][k]),
        static_profile: json_optional(&v["static"]["c_to_o_gas"][k]),
        star_c_to_o: v["star_c_to_o"].as_f64(),
        age_myr: current.unwrap_or(0.0),
    };
    let map = RadiusTimeMapData {
        radius_au: radius,
        times_myr: times.clone(),
        values: (0..times.len())
            .map(|i| json_optional(&v["c_to_o_gas"][i]))
            .collect(),
        range: (0.0, 2.0),
        label: "gas C/O".into(),
        current_myr: current,
    };
    (tracks, profile, map)
}

/// One evolution view of an evolving run's JSON at snapshot `snapshot`, as a [`crate::Figure`]
/// for `render_svg` / `render_png`.
pub fn evolution_figure(
    view: EvolutionView,
    v: &serde_json::Value,
    snapshot: usize,
) -> crate::Figure {
    let (tracks, profile, map) = evolution_view_data(v, snapshot);
    match view {
        EvolutionView::SnowlineTracks => crate::Figure::SnowlineTracks(tracks),
        EvolutionView::EvolvedCToO => crate::Figure::EvolvedCToO(profile),
        EvolutionView::CToOTimeMap => crate::Figure::RadiusTimeMap(map),
    }
}
