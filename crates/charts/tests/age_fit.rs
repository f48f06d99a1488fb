//! The radius x age fit's figure (view `chi2_age_map`, docs/model.md section 12.9): it renders
//! as SVG and PNG with its axes, colour bar and contours labelled, and the best-fit cross sits on
//! the smallest chi-square of the map.

use nivalis_charts::age_fit::{age_fit_data, age_fit_figure, AGE_AXIS_LABEL};
use nivalis_charts::*;
use nivalis_physics::evolution::fit::{chi_square_over_age, AgeRadiusMap};
use nivalis_physics::evolution::{evolve, EvolutionParameters};
use nivalis_physics::planet::{MapSettings, Observable, ObservedEnvelope};
use nivalis_physics::ModelParameters;
use plotters::prelude::{IntoDrawingArea, SVGBackend};

const AU_CM: f64 = 1.495_978_707e13;

/// A planet made from the evolved disk's own gas and solids at 0.5 au and the second age
/// (demo data, so the fit is acceptable and draws its contours), fitted over 0.04-0.5 Myr.
fn planted_map() -> AgeRadiusMap {
    let mut p = ModelParameters::defaults();
    p.grid.radial_cells = 40;
    p.grid.vertical_cells = 8;
    let mut e = EvolutionParameters::defaults();
    e.until_myr = 0.5;
    e.snapshots = 6;
    let run = evolve(&p, &e).unwrap();
    let times = run.times_myr();
    let k = times.iter().position(|&t| t > 0.09).unwrap();
    let j = run.radius_cm.iter().position(|&r| r > 0.5 * AU_CM).unwrap();
    let r_au = run.radius_cm[j] / AU_CM;
    let settings = MapSettings::defaults();
    let ratios = nivalis_physics::planet::solid_to_gas_values(
        settings.ratio_min,
        settings.ratio_max,
        settings.ratio_count,
    );
    let envelope = run
        .accreted_phases(r_au, r_au, times[k], times[k])
        .unwrap()
        .envelope(1.0, ratios[20], settings.solid_mixing_fraction)
        .unwrap();
    let observed = ObservedEnvelope::c_to_o(envelope.c_to_o.unwrap(), 0.02)
        .with(Observable::CToH, envelope.c_to_h_dex().unwrap(), 0.1)
        .with(Observable::OToH, envelope.o_to_h_dex().unwrap(), 0.1);
    chi_square_over_age(&run, 0.04, 0.5, &observed, &settings).unwrap()
}

fn svg_texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).expect("svg parses as xml");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect()
}

#[test]
fn the_age_map_renders_with_labelled_axes_colour_bar_and_contours() {
    let map = planted_map();
    assert!(map.goodness.acceptable, "{:?}", map.goodness);
    let data = age_fit_data(&map);
    // y axis: the fitted ages; x: the radial cells.
    assert_eq!(data.solid_to_gas, map.times_myr);
    assert_eq!(data.radius_au, map.radius_au);
    assert_eq!(data.y_label, AGE_AXIS_LABEL);
    // Delta chi-square levels of two jointly mapped parameters: 2.30 and 6.18 (Press et al. 2007,
    // Numerical Recipes, 3rd ed., section 15.6, table of delta chi^2 against confidence level and
    // degrees of freedom). Independently: the chi-square CDF with 2 degrees of freedom is
    // 1 - exp(-x/2), so the level enclosing probability p is -2 ln(1 - p), at the normal 1- and
    // 2-sigma probabilities p = 0.682689, 0.954500 (Abramowitz & Stegun 26.2): 2.2957, 6.1801.
    let levels: Vec<f64> = data.thresholds.iter().map(|t| t.1).collect();
    assert_eq!(levels.len(), 2);
    for (level, p) in levels.iter().zip([0.682_689_492_f64, 0.954_499_736]) {
        let want = -2.0 * (1.0 - p).ln();
        assert!((level - want).abs() < 0.01, "{levels:?} vs {want}");
    }
    let svg = render_svg(
        &age_fit_figure(&map),
        &Theme::light(),
        FigureSize::single_column(),
    )
    .unwrap();
    let texts = svg_texts(&svg);
    for want in [
        "formation radius r [au]",
        AGE_AXIS_LABEL,
        "\u{0394}\u{03c7}\u{00b2}",
        "1σ",
        "2σ",
        "best fit",
    ] {
        assert!(texts.iter().any(|t| t == want), "{want:?} not in {texts:?}");
    }
    assert!(!svg.contains("NaN"));
    let png = render_png(
        &age_fit_figure(&map),
        &Theme::dark(),
        FigureSize::double_column(),
        150.0,
    )
    .unwrap();
    assert_eq!(&png[1..4], b"PNG");
}

#[test]
fn the_best_fit_cross_marks_the_smallest_chi_square() {
    let map = planted_map();
    let data = age_fit_data(&map);
    // The map's minimum found here, independently of the fit's own bookkeeping.
    let nr = data.radius_au.len();
    let (i_min, _) = data
        .chi2
        .iter()
        .enumerate()
        .filter(|(_, v)| v.is_finite())
        .fold((usize::MAX, f64::INFINITY), |b, (i, &v)| {
            if v < b.1 {
                (i, v)
            } else {
                b
            }
        });
    let (k, j) = (i_min / nr, i_min % nr);
    let best = data.best.unwrap();
    assert_eq!(best, (data.radius_au[j], data.solid_to_gas[k]));
    // Where the cross is drawn: the layout of the same figure at 10 px per point (the SVG's), and
    // the PNG at 720 dpi (also 10 px per point). The cross is white, a colour the cividis scale
    // and the grey of undefined cells never take.
    let size = FigureSize::single_column();
    let (w, h) = size.pixels_at_dpi(720.0);
    let mut out = String::new();
    let layout = {
        let area = SVGBackend::with_string(&mut out, (w, h)).into_drawing_area();
        draw_figure(
            &area,
            &age_fit_figure(&map),
            &Theme::light(),
            10.0,
            CellDrawing::Rectangles,
        )
        .unwrap()
    };
    let png = render_png(&age_fit_figure(&map), &Theme::light(), size, 720.0).unwrap();
    let decoder = png::Decoder::new(png.as_slice());
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (w, h));
    let rgb = |(x, y): (f64, f64)| {
        let i = 3 * (y.round() as usize * w as usize + x.round() as usize);
        (buf[i], buf[i + 1], buf[i + 2])
    };
    let white = |c: (u8, u8, u8)| c.0 > 235 && c.1 > 235 && c.2 > 235;
    let at_best = layout.main().pixel_of(best.0, best.1).unwrap();
    assert!(white(rgb(at_best)), "{:?} at {at_best:?}", rgb(at_best));
    // The worst defined cell is not marked.
    let (i_max, _) = data
        .chi2
        .iter()
        .enumerate()
        .filter(|(_, v)| v.is_finite())
        .fold(
            (0, f64::NEG_INFINITY),
            |b, (i, &v)| if v > b.1 { (i, v) } else { b },
        );
    let far = layout
        .main()
        .pixel_of(data.radius_au[i_max % nr], data.solid_to_gas[i_max / nr])
        .unwrap();
    assert!(!white(rgb(far)), "{:?} at {far:?}", rgb(far));
}
