//! Figures of the Monte Carlo over uncertain inputs (docs/model.md section 13): percentile
//! bands of a midplane quantity against radius, the histogram of a snowline's radius, the
//! ranked sensitivity bars and the marginalised formation-radius posterior. Drawn with the same
//! painter as every other view, generic over the plotters back end, and rendered as paper
//! figures through the same path as every other view ([`Figure::Uncertainty`] with
//! `render_svg` / `render_png`, or [`uncertainty_svg`] / [`uncertainty_png`]). The views have
//! names ([`UncertaintyView`]) and are built from a Monte Carlo by [`uncertainty_figure`] or
//! from a marginalised fit by [`posterior_figure`], so the CLI and the page draw the same data.

use plotters::coord::Shift;
use plotters::element::Polygon;
use plotters::prelude::{DrawingArea, DrawingBackend};
use plotters::style::text_anchor::{HPos, VPos};
use plotters::style::ShapeStyle;

use crate::colour::Rgba;
use crate::error::ChartError;
use crate::layout::ChartLayout;
use crate::layout::{AxisTransform, Scale};
use crate::paint::{AxisOptions, Frame, Orientation, Painter, Panel};
use crate::render::{Figure, FigureSize};
use crate::theme::{LineDash, SeriesStyle, Theme};
use nivalis_physics::math::{exp, ln};
use nivalis_physics::uncertainty::{
    InputSensitivity, MarginalPosterior, MonteCarlo, Quantity, SampleValues,
};
use nivalis_physics::Species;

const PAD_PT: f64 = 4.0;

/// Percentile bands of one quantity against radius.
#[derive(Debug, Clone, PartialEq)]
pub struct BandsData {
    /// Radius [au].
    pub radius_au: Vec<f64>,
    /// The 2.5, 16, 50, 84 and 97.5 percentiles per radius.
    pub percentiles: [Vec<Option<f64>>; 5],
    /// The nominal (deterministic) model per radius, drawn dashed, if given.
    pub nominal: Vec<Option<f64>>,
    /// The y-axis label, e.g. "C/O (gas)".
    pub label: String,
    /// Log y axis (for abundances per H).
    pub log_y: bool,
}

/// The sampled radii of one snowline.
#[derive(Debug, Clone, PartialEq)]
pub struct HistogramData {
    /// Sampled radii [au].
    pub radii_au: Vec<f64>,
    /// The 16th, 50th and 84th percentiles [au], marked by lines.
    pub marks_au: Vec<f64>,
    /// The x-axis label, e.g. "H2O snowline radius (au)".
    pub label: String,
}

/// Ranked bars.
#[derive(Debug, Clone, PartialEq)]
pub struct BarsData {
    /// One label per bar (largest first once drawn).
    pub labels: Vec<String>,
    /// The bar lengths (>= 0).
    pub values: Vec<f64>,
    /// The x-axis label, e.g. "swing of the gas C/O at 1 au".
    pub label: String,
}

/// The formation-radius posterior.
#[derive(Debug, Clone, PartialEq)]
pub struct PosteriorData {
    /// Radial cell centres [au].
    pub radius_au: Vec<f64>,
    /// Probability per cell.
    pub probability: Vec<f64>,
    /// The 68 % and 95 % credible intervals [au].
    pub intervals_au: Vec<(f64, f64)>,
}

/// One uncertainty figure.
#[derive(Debug, Clone, PartialEq)]
pub enum UncertaintyFigure {
    /// Percentile bands.
    Bands(BandsData),
    /// A snowline histogram.
    Histogram(HistogramData),
    /// Sensitivity bars.
    Bars(BarsData),
    /// The posterior.
    Posterior(PosteriorData),
}

fn drawing_error(e: impl std::fmt::Display) -> ChartError {
    ChartError::Drawing {
        message: e.to_string(),
    }
}

fn log_axis(values: impl Iterator<Item = f64>, label: &str) -> Option<AxisTransform> {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite() && *v > 0.0) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        return None;
    }
    if hi <= lo * 1.01 {
        lo /= 1.5;
        hi *= 1.5;
    }
    Some(AxisTransform::new(lo, hi, Scale::Log10, label))
}

fn linear_axis(values: impl Iterator<Item = f64>, label: &str, from_zero: bool) -> AxisTransform {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        (lo, hi) = (0.0, 1.0);
    }
    if from_zero {
        lo = lo.min(0.0);
    }
    if hi <= lo {
        hi = lo + if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
    }
    let span = hi - lo;
    AxisTransform::new(
        if from_zero { lo } else { lo - 0.05 * span },
        hi + 0.05 * span,
        Scale::Linear,
        label,
    )
}

fn panel<DB: DrawingBackend>(
    p: &Painter<DB>,
    x: AxisTransform,
    y: AxisTransform,
    left_extra: f64,
) -> Result<Panel, ChartError> {
    let size = p.size();
    let frame = Frame {
        left: p.px(PAD_PT) + p.y_label_space(&y)? + left_extra,
        top: p.top_space(PAD_PT)?,
        right: size.0 - p.px(3.0 * PAD_PT),
        bottom: size.1 - p.x_label_space(&x)? - p.px(1.0),
    };
    if frame.right - frame.left < 20.0 || frame.bottom - frame.top < 15.0 {
        return Err(ChartError::AreaTooSmall {
            width: size.0 as u32,
            height: size.1 as u32,
        });
    }
    Ok(Panel {
        name: "uncertainty",
        frame,
        x,
        y,
    })
}

fn fill_polygon<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    points: &[(f64, f64)],
    colour: Rgba,
) -> Result<(), ChartError> {
    if points.len() < 3 {
        return Ok(());
    }
    let pts: Vec<(i32, i32)> = points
        .iter()
        .map(|&(x, y)| (x.round() as i32, y.round() as i32))
        .collect();
    area.draw(&Polygon::new(
        pts,
        ShapeStyle {
            color: colour.to_plotters(),
            filled: true,
            stroke_width: 0,
        },
    ))
    .map_err(drawing_error)
}

fn with_alpha(c: Rgba, a: u8) -> Rgba {
    Rgba { a, ..c }
}

/// Draw one uncertainty figure on `area`.
pub fn draw_uncertainty<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    figure: &UncertaintyFigure,
    theme: &Theme,
    pixels_per_point: f64,
) -> Result<ChartLayout, ChartError> {
    let p = Painter::new(area, theme, pixels_per_point);
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
    let colour = theme.series_colour(0);
    let pan = match figure {
        UncertaintyFigure::Bands(d) => {
            let x = log_axis(d.radius_au.iter().copied(), "Radius (au)")
                .ok_or_else(|| drawing_error("no radii"))?;
            let all = d
                .percentiles
                .iter()
                .flatten()
                .chain(&d.nominal)
                .flatten()
                .copied();
            let y = if d.log_y {
                log_axis(all, &d.label).unwrap_or(AxisTransform::new(
                    1e-12,
                    1.0,
                    Scale::Log10,
                    &d.label,
                ))
            } else {
                linear_axis(all, &d.label, true)
            };
            let pan = panel(&p, x, y, 0.0)?;
            p.grid(&pan)?;
            // Bands: 95 % light, 68 % darker, each a polygon over every run of defined radii.
            for (lo, hi, alpha) in [(0usize, 4usize, 60u8), (1, 3, 120)] {
                let mut run: Vec<(f64, f64, f64)> = Vec::new();
                let flush = |run: &mut Vec<(f64, f64, f64)>| -> Result<(), ChartError> {
                    let mut pts = Vec::with_capacity(2 * run.len());
                    for &(r, _, h) in run.iter() {
                        if let Some(q) = pan.px(r, h) {
                            pts.push(q);
                        }
                    }
                    for &(r, l, _) in run.iter().rev() {
                        if let Some(q) = pan.px(r, l) {
                            pts.push(q);
                        }
                    }
                    let f = pan.frame;
                    let pts: Vec<(f64, f64)> = pts
                        .into_iter()
                        .map(|(a, b)| (a.clamp(f.left, f.right), b.clamp(f.top, f.bottom)))
                        .collect();
                    fill_polygon(area, &pts, with_alpha(colour, alpha))?;
                    run.clear();
                    Ok(())
                };
                for (j, &r) in d.radius_au.iter().enumerate() {
                    match (
                        d.percentiles[lo].get(j).copied().flatten(),
                        d.percentiles[hi].get(j).copied().flatten(),
                    ) {
                        (Some(l), Some(h)) if !d.log_y || (l > 0.0 && h > 0.0) => {
                            run.push((r, l, h))
                        }
                        _ => flush(&mut run)?,
                    }
                }
                flush(&mut run)?;
            }
            p.series(
                &pan,
                &d.radius_au,
                &d.percentiles[2],
                &SeriesStyle::line(colour, LineDash::Solid),
            )?;
            if !d.nominal.is_empty() {
                p.series(
                    &pan,
                    &d.radius_au,
                    &d.nominal,
                    &SeriesStyle::line(theme.foreground, LineDash::Dashed),
                )?;
            }
            p.axes(&pan, AxisOptions::FULL)?;
            p.text(
                "median, 68 % and 95 % bands; dashed: nominal",
                (pan.frame.right - p.px(2.0), pan.frame.top + p.px(2.0)),
                theme.legend_font_pt,
                theme.foreground,
                (HPos::Right, VPos::Top),
                Orientation::Horizontal,
            )?;
            pan
        }
        UncertaintyFigure::Histogram(d) => {
            let x = log_axis(d.radii_au.iter().copied(), &d.label)
                .ok_or_else(|| drawing_error("no sampled snowline"))?;
            let bins = 24usize;
            let (a, b) = (ln(x.min), ln(x.max));
            let mut counts = vec![0usize; bins];
            for &r in &d.radii_au {
                if r > 0.0 {
                    let k = (((ln(r) - a) / (b - a)) * bins as f64).floor() as isize;
                    counts[k.clamp(0, bins as isize - 1) as usize] += 1;
                }
            }
            let n = d.radii_au.len().max(1) as f64;
            let frac: Vec<f64> = counts.iter().map(|&c| c as f64 / n).collect();
            let y = linear_axis(frac.iter().copied(), "Fraction of samples", true);
            let pan = panel(&p, x, y, 0.0)?;
            p.grid(&pan)?;
            for (k, &f) in frac.iter().enumerate() {
                let r0 = exp(a + (b - a) * k as f64 / bins as f64);
                let r1 = exp(a + (b - a) * (k + 1) as f64 / bins as f64);
                if let (Some(p0), Some(p1)) = (pan.px(r0, f), pan.px(r1, 0.0)) {
                    p.fill_rect(
                        Frame {
                            left: p0.0,
                            top: p0.1,
                            right: p1.0 - 0.5,
                            bottom: p1.1,
                        },
                        with_alpha(colour, 200),
                    )?;
                }
            }
            for &m in &d.marks_au {
                if let Some(xm) = pan.px_x(m) {
                    p.polyline(
                        &[(xm, pan.frame.top), (xm, pan.frame.bottom)],
                        theme.foreground,
                        theme.line_width_pt,
                        LineDash::Dashed,
                    )?;
                }
            }
            p.axes(&pan, AxisOptions::FULL)?;
            pan
        }
        UncertaintyFigure::Bars(d) => {
            let mut order: Vec<usize> = (0..d.values.len()).collect();
            order.sort_by(|&i, &j| d.values[j].total_cmp(&d.values[i]));
            let n = order.len().max(1);
            let label_w = d
                .labels
                .iter()
                .map(|l| p.text_size(l, theme.tick_font_pt).map(|s| s.0))
                .collect::<Result<Vec<f64>, _>>()?
                .into_iter()
                .fold(0.0, f64::max);
            let x = linear_axis(d.values.iter().copied(), &d.label, true);
            let y = AxisTransform::new(0.0, n as f64, Scale::Linear, "");
            let pan = panel(&p, x, y, label_w + p.px(PAD_PT))?;
            for (row, &i) in order.iter().enumerate() {
                let y0 = row as f64 + 0.15;
                let y1 = row as f64 + 0.85;
                // Row 0 (largest) at the top.
                let (top, bottom) = (n as f64 - y0, n as f64 - y1);
                if let (Some(p0), Some(p1)) =
                    (pan.px(0.0, top), pan.px(d.values[i].max(0.0), bottom))
                {
                    p.fill_rect(
                        Frame {
                            left: p0.0,
                            top: p0.1,
                            right: p1.0.max(p0.0 + 1.0),
                            bottom: p1.1,
                        },
                        colour,
                    )?;
                    p.text(
                        &d.labels[i],
                        (pan.frame.left - p.px(PAD_PT), 0.5 * (p0.1 + p1.1)),
                        theme.tick_font_pt,
                        theme.foreground,
                        (HPos::Right, VPos::Center),
                        Orientation::Horizontal,
                    )?;
                }
            }
            p.axes(
                &pan,
                AxisOptions {
                    x_labels: true,
                    y_labels: false,
                    skip_y_end_labels: (true, true),
                },
            )?;
            pan
        }
        UncertaintyFigure::Posterior(d) => {
            let x = log_axis(d.radius_au.iter().copied(), "Formation radius (au)")
                .ok_or_else(|| drawing_error("no radii"))?;
            let y = linear_axis(
                d.probability.iter().copied(),
                "Posterior probability per cell",
                true,
            );
            let pan = panel(&p, x, y, 0.0)?;
            for (k, &(a, b)) in d.intervals_au.iter().enumerate() {
                if let (Some(xa), Some(xb)) = (pan.px_x(a), pan.px_x(b)) {
                    let f = pan.frame;
                    p.fill_rect(
                        Frame {
                            left: xa.max(f.left),
                            top: f.top,
                            right: xb.min(f.right),
                            bottom: f.bottom,
                        },
                        with_alpha(theme.highlight, if k == 0 { 255 } else { 140 }),
                    )?;
                }
            }
            p.grid(&pan)?;
            let ys: Vec<Option<f64>> = d.probability.iter().map(|&v| Some(v)).collect();
            p.series(
                &pan,
                &d.radius_au,
                &ys,
                &SeriesStyle::line(colour, LineDash::Solid),
            )?;
            p.axes(&pan, AxisOptions::FULL)?;
            pan
        }
    };
    Ok(ChartLayout {
        panels: vec![pan.to_layout(area.get_base_pixel())],
    })
}

/// One uncertainty figure as an SVG file of `size` (pt): [`crate::render_svg`] of
/// [`Figure::Uncertainty`], the paper-figure path every view takes.
pub fn uncertainty_svg(
    figure: &UncertaintyFigure,
    theme: &Theme,
    size: FigureSize,
) -> Result<String, ChartError> {
    crate::render_svg(&Figure::Uncertainty(figure.clone()), theme, size)
}

/// One uncertainty figure as PNG bytes of `size` (pt) at `dpi`: [`crate::render_png`] of
/// [`Figure::Uncertainty`].
#[cfg(feature = "png")]
pub fn uncertainty_png(
    figure: &UncertaintyFigure,
    theme: &Theme,
    size: FigureSize,
    dpi: f64,
) -> Result<Vec<u8>, ChartError> {
    crate::render_png(&Figure::Uncertainty(figure.clone()), theme, size, dpi)
}

/// A figure of the uncertainty panel, by name: what `nivalis uncertainty --figure VIEW`,
/// `nivalis fit --uncertainty --figure FILE` and the page's downloads draw.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum UncertaintyView {
    /// `bands:<QUANTITY>`: percentile bands of a midplane quantity (a [`Quantity`] key) with
    /// the nominal model.
    Bands(Quantity),
    /// `snowlines:<SPECIES>`: the histogram of a species' snowline radius.
    Snowlines(Species),
    /// `sensitivity`: the one-at-a-time swing of the gas C/O per input;
    /// `sensitivity:<SPECIES>`: the swing of that species' snowline radius.
    Sensitivity(Option<Species>),
    /// `posterior`: the marginalised formation-radius posterior (`nivalis fit --uncertainty`).
    Posterior,
}

impl UncertaintyView {
    /// The names every front end accepts, for messages and help texts.
    pub const NAMES: &'static str =
        "bands:<QUANTITY>, snowlines:<SPECIES>, sensitivity, sensitivity:<SPECIES>, posterior";

    /// The view's name (see [`UncertaintyView::from_key`]).
    pub fn key(&self) -> String {
        match self {
            UncertaintyView::Bands(q) => format!("bands:{}", q.key()),
            UncertaintyView::Snowlines(s) => format!("snowlines:{}", s.key()),
            UncertaintyView::Sensitivity(None) => "sensitivity".to_string(),
            UncertaintyView::Sensitivity(Some(s)) => format!("sensitivity:{}", s.key()),
            UncertaintyView::Posterior => "posterior".to_string(),
        }
    }

    /// Parses a view name; the error names every allowed name (and the quantities or species
    /// after a known prefix).
    pub fn from_key(text: &str) -> Result<UncertaintyView, String> {
        let species = |s: &str| {
            Species::from_key(s).ok_or_else(|| {
                format!(
                    "unknown species {s:?}; expected one of {}",
                    Species::ALL.map(|s| s.key()).join(", ")
                )
            })
        };
        if text == "posterior" {
            return Ok(UncertaintyView::Posterior);
        }
        if text == "sensitivity" {
            return Ok(UncertaintyView::Sensitivity(None));
        }
        if let Some(q) = text.strip_prefix("bands:") {
            return Quantity::ALL
                .into_iter()
                .find(|x| x.key() == q)
                .map(UncertaintyView::Bands)
                .ok_or_else(|| {
                    format!(
                        "unknown quantity {q:?}; expected one of {}",
                        Quantity::ALL.map(|q| q.key()).join(", ")
                    )
                });
        }
        if let Some(s) = text.strip_prefix("snowlines:") {
            return species(s).map(UncertaintyView::Snowlines);
        }
        if let Some(s) = text.strip_prefix("sensitivity:") {
            return species(s).map(|s| UncertaintyView::Sensitivity(Some(s)));
        }
        Err(format!(
            "unknown view {text:?}; expected one of {}",
            UncertaintyView::NAMES
        ))
    }
}

/// What the figures of one Monte Carlo are drawn from.
#[derive(Clone, Copy)]
pub struct UncertaintySource<'a> {
    /// The summary of the samples.
    pub monte_carlo: &'a MonteCarlo,
    /// The nominal (deterministic) model's values, drawn dashed over the bands.
    pub nominal: Option<&'a SampleValues>,
    /// The one-at-a-time sensitivity, once computed.
    pub sensitivity: Option<&'a [InputSensitivity]>,
    /// The radius [au] of the gas C/O's sensitivity.
    pub sensitivity_radius_au: f64,
}

/// The y-axis label of a band quantity, e.g. "C/O gas".
fn quantity_label(q: Quantity) -> String {
    q.key()
        .replace("c_to_o", "C/O")
        .replace("c_to_h", "C/H")
        .replace("o_to_h", "O/H")
        .replace('_', " ")
}

/// The figure of `view` from a Monte Carlo. The posterior is not drawn from it (see
/// [`posterior_figure`]); the sensitivity needs `source.sensitivity`.
pub fn uncertainty_figure(
    view: UncertaintyView,
    source: &UncertaintySource,
) -> Result<UncertaintyFigure, String> {
    let mc = source.monte_carlo;
    Ok(match view {
        UncertaintyView::Bands(q) => UncertaintyFigure::Bands(BandsData {
            radius_au: mc.radius_au.clone(),
            percentiles: mc.bands[q.index()].percentiles.clone(),
            nominal: source
                .nominal
                .map(|v| v.values.iter().map(|row| row[q.index()]).collect())
                .unwrap_or_default(),
            label: quantity_label(q),
            log_y: !q.key().starts_with("c_to_o"),
        }),
        UncertaintyView::Snowlines(sp) => {
            let s = &mc.snowlines[sp.index()];
            UncertaintyFigure::Histogram(HistogramData {
                radii_au: s.radii_au.clone(),
                marks_au: [1, 2, 3].iter().filter_map(|&k| s.percentiles[k]).collect(),
                label: format!("{} snowline radius (au)", sp.key()),
            })
        }
        UncertaintyView::Sensitivity(which) => {
            let s = source
                .sensitivity
                .ok_or_else(|| "the sensitivity is not computed yet".to_string())?;
            let labels = s.iter().map(|i| i.name.clone()).collect();
            match which {
                None => UncertaintyFigure::Bars(BarsData {
                    labels,
                    values: s
                        .iter()
                        .map(|i| i.swing_gas_c_to_o.unwrap_or(0.0))
                        .collect(),
                    label: format!(
                        "swing of the gas C/O at {} au",
                        source.sensitivity_radius_au
                    ),
                }),
                Some(sp) => UncertaintyFigure::Bars(BarsData {
                    labels,
                    values: s
                        .iter()
                        .map(|i| i.swing_snowline_au[sp.index()].unwrap_or(0.0))
                        .collect(),
                    label: format!("swing of the {} snowline (au)", sp.key()),
                }),
            }
        }
        UncertaintyView::Posterior => {
            return Err(
                "posterior: drawn from a marginalised fit (nivalis fit ... --uncertainty --figure FILE)"
                    .to_string(),
            )
        }
    })
}

/// The figure of a marginalised formation-radius posterior: the probability per radial cell
/// with the 68 % and 95 % credible intervals shaded.
pub fn posterior_figure(posterior: &MarginalPosterior) -> UncertaintyFigure {
    UncertaintyFigure::Posterior(PosteriorData {
        radius_au: posterior.radius_au.clone(),
        probability: posterior.radius_probability.clone(),
        intervals_au: [
            posterior.radius_interval_68_au,
            posterior.radius_interval_95_au,
        ]
        .into_iter()
        .flatten()
        .collect(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_figure_draws() {
        let r: Vec<f64> = (0..50).map(|j| 0.1 * 1.2f64.powi(j)).collect();
        let band = |s: f64| {
            r.iter()
                .map(|x| Some(0.5 + s * 0.01 * x.ln()))
                .collect::<Vec<_>>()
        };
        let figures = [
            UncertaintyFigure::Bands(BandsData {
                radius_au: r.clone(),
                percentiles: [band(-2.0), band(-1.0), band(0.0), band(1.0), band(2.0)],
                nominal: band(0.1),
                label: "C/O (gas)".into(),
                log_y: false,
            }),
            UncertaintyFigure::Histogram(HistogramData {
                radii_au: (0..200).map(|i| 1.5 + 0.01 * i as f64).collect(),
                marks_au: vec![1.7, 2.5, 3.2],
                label: "H2O snowline (au)".into(),
            }),
            UncertaintyFigure::Bars(BarsData {
                labels: vec!["star.luminosity_lsun".into(), "composition.carbon".into()],
                values: vec![0.1, 0.3],
                label: "swing of the gas C/O".into(),
            }),
            UncertaintyFigure::Posterior(PosteriorData {
                radius_au: r.clone(),
                probability: r
                    .iter()
                    .map(|x| (-(x.ln() - 1.0).powi(2)).exp() / 30.0)
                    .collect(),
                intervals_au: vec![(1.5, 4.0), (0.8, 8.0)],
            }),
        ];
        for f in &figures {
            // The same SVG as the shared paper-figure path draws for Figure::Uncertainty.
            let svg = uncertainty_svg(f, &Theme::light(), FigureSize::single_column()).unwrap();
            assert_eq!(
                svg,
                crate::render_svg(
                    &Figure::Uncertainty(f.clone()),
                    &Theme::light(),
                    FigureSize::single_column()
                )
                .unwrap()
            );
            #[cfg(feature = "png")]
            {
                // 252 pt x 189 pt at 144 dpi = 3.5 in x 144 = 504 px, 2.625 in x 144 = 378 px.
                let png =
                    uncertainty_png(f, &Theme::dark(), FigureSize::single_column(), 144.0).unwrap();
                let width = u32::from_be_bytes(png[16..20].try_into().unwrap());
                let height = u32::from_be_bytes(png[20..24].try_into().unwrap());
                assert_eq!((width, height), (504, 378));
            }
            assert!(
                svg.starts_with("<svg width=\"252pt\"") && svg.len() > 1000,
                "{}",
                &svg[..80]
            );
        }
    }

    #[test]
    fn view_names_round_trip_and_unknown_names_list_the_allowed() {
        let views = Quantity::ALL
            .map(UncertaintyView::Bands)
            .into_iter()
            .chain(Species::ALL.map(UncertaintyView::Snowlines))
            .chain(Species::ALL.map(|s| UncertaintyView::Sensitivity(Some(s))))
            .chain([
                UncertaintyView::Sensitivity(None),
                UncertaintyView::Posterior,
            ]);
        for v in views {
            assert_eq!(UncertaintyView::from_key(&v.key()), Ok(v));
        }
        assert_eq!(
            UncertaintyView::from_key("band").unwrap_err(),
            format!(
                "unknown view \"band\"; expected one of {}",
                UncertaintyView::NAMES
            )
        );
        assert!(UncertaintyView::from_key("bands:c_to_o")
            .unwrap_err()
            .starts_with("unknown quantity \"c_to_o\"; expected one of c_to_o_gas, "));
        assert!(UncertaintyView::from_key("sensitivity:XY")
            .unwrap_err()
            .starts_with("unknown species \"XY\""));
    }
}
