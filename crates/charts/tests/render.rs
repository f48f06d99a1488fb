//! Integration tests of the rendered output: SVG that parses as XML and keeps
//! its axis labels as text, PNG whose size matches width and DPI, non-blank
//! drawings of every view of the default model, no "NaN" anywhere, and the
//! rasteriser's speed on the default grid.

use nivalis_charts::*;
use nivalis_physics::{Model, ModelParameters, Species};

fn default_model() -> Model {
    Model::run(&ModelParameters::defaults()).expect("default model runs")
}

fn all_views() -> Vec<View> {
    vec![
        View::CToOProfile,
        View::TemperatureProfile,
        View::IceMap(Species::CO),
        View::IceMap(Species::H2O),
        View::CToOMap,
        View::Abundances,
    ]
}

/// Every `<text>` element's content.
fn svg_texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).expect("svg parses as xml");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect()
}

fn chi2_figure() -> Figure {
    // An invented paraboloid in (log r, log ratio), minimum at r = 10 au, ratio 0.1 (demo data).
    let radii: Vec<f64> = (0..30)
        .map(|i| 10f64.powf(-1.0 + 3.0 * i as f64 / 29.0))
        .collect();
    let ratios: Vec<f64> = (0..20)
        .map(|k| 10f64.powf(-3.0 + 3.0 * k as f64 / 19.0))
        .collect();
    let mut chi2 = Vec::new();
    for s in &ratios {
        for r in &radii {
            let (a, b) = (r.log10() - 1.0, s.log10() + 1.0);
            chi2.push(3.0 + 8.0 * a * a + 5.0 * b * b);
        }
    }
    // One undefined corner, to check it is drawn as undefined and not as a number.
    chi2[0] = f64::NAN;
    let thresholds = vec![
        ("1\u{03c3}".to_string(), 2.30),
        ("2\u{03c3}".to_string(), 6.18),
    ];
    Figure::Chi2(Chi2Data::new(
        &radii,
        &ratios,
        &chi2,
        &thresholds,
        Some((10.0, 0.1)),
    ))
}

#[test]
fn svg_parses_and_keeps_axis_labels_as_text() {
    let model = default_model();
    let expected: [(View, &[&str]); 5] = [
        (
            View::CToOProfile,
            &[
                "r [au]",
                "C/O",
                "gas",
                "ices",
                "all solids",
                "star",
                "H\u{2082}O",
            ],
        ),
        (
            View::TemperatureProfile,
            &[
                "r [au]",
                "T [K]",
                "\u{03a3} [g cm\u{207b}\u{00b2}]",
                "midplane",
            ],
        ),
        (
            View::IceMap(Species::CO),
            &["r [au]", "z/r", "CO ice fraction", "1H", "f = 0.5"],
        ),
        (View::CToOMap, &["r [au]", "z/r", "gas C/O", "star"]),
        (
            View::Abundances,
            &["r [au]", "X/H (gas)", "X/H (ice)", "CH\u{2083}OH"],
        ),
    ];
    for (view, labels) in expected {
        let svg = render_svg(
            &Figure::from_model(view, &model),
            &Theme::light(),
            FigureSize::single_column(),
        )
        .unwrap();
        let texts = svg_texts(&svg);
        for label in labels {
            assert!(
                texts.iter().any(|t| t == label),
                "{view:?}: no <text> {label:?} in {texts:?}"
            );
        }
        assert!(
            svg.contains("width=\"252pt\"") && svg.contains("height=\"189pt\""),
            "{view:?}: physical size"
        );
        assert!(svg.contains("font-family=\"DejaVu Sans, Verdana, Arial, Helvetica, sans-serif\""));
    }
}

#[test]
fn no_nan_reaches_the_output() {
    let model = default_model();
    let mut figures: Vec<Figure> = all_views()
        .into_iter()
        .map(|v| Figure::from_model(v, &model))
        .collect();
    figures.push(chi2_figure());
    // A profile with holes: undefined values must break lines, not print.
    let mut holes = ProfileData::from_model(&model)
        .with_planet_radius_au(5.0)
        .with_allowed_formation_radii_au(vec![(2.0, 8.0)]);
    for j in (0..holes.radius_au.len()).step_by(7) {
        holes.c_to_o_gas[j] = None;
        holes.c_to_o_ice[j] = Some(f64::NAN);
    }
    figures.push(Figure::CToOProfile(holes));
    for theme in [Theme::light(), Theme::dark()] {
        for f in &figures {
            let svg = render_svg(f, &theme, FigureSize::single_column()).unwrap();
            assert!(
                !svg.contains("NaN") && !svg.contains("inf"),
                "NaN or inf in SVG output"
            );
            roxmltree::Document::parse(&svg).expect("svg parses as xml");
        }
    }
}

#[cfg(feature = "png")]
/// Width, height and the pHYs pixels-per-metre of a PNG, read from its header.
fn png_header(bytes: &[u8]) -> (u32, u32, Option<u32>) {
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "png signature");
    assert_eq!(&bytes[12..16], b"IHDR");
    let be = |b: &[u8]| u32::from_be_bytes([b[0], b[1], b[2], b[3]]);
    let (w, h) = (be(&bytes[16..20]), be(&bytes[20..24]));
    // Walk the chunks for pHYs.
    let mut at = 8;
    let mut ppm = None;
    while at + 8 <= bytes.len() {
        let len = be(&bytes[at..at + 4]) as usize;
        if &bytes[at + 4..at + 8] == b"pHYs" {
            ppm = Some(be(&bytes[at + 8..at + 12]));
        }
        at += 12 + len;
    }
    (w, h, ppm)
}

#[cfg(feature = "png")]
#[test]
fn png_size_matches_width_and_dpi() {
    let model = default_model();
    let figure = Figure::from_model(View::TemperatureProfile, &model);
    for (size, dpi, expected) in [
        // 3.5 in x 300 dpi = 1050 px; 2.625 in x 300 = 787.5 -> 788.
        (FigureSize::single_column(), 300.0, (1050, 788)),
        // 511 pt = 7.097 in x 150 dpi = 1064.6 -> 1065 px.
        (FigureSize::double_column(), 150.0, (1065, 798)),
        (
            FigureSize {
                width_pt: 144.0,
                height_pt: 144.0,
            },
            72.0,
            (144, 144),
        ),
    ] {
        let bytes = render_png(&figure, &Theme::light(), size, dpi).unwrap();
        let (w, h, ppm) = png_header(&bytes);
        assert_eq!((w, h), expected);
        // 300 dpi = 11811 px/m (1 in = 0.0254 m).
        assert_eq!(ppm, Some((dpi / 0.0254f64).round() as u32));
    }
}

#[cfg(feature = "png")]
/// Decode an RGB PNG into pixels with the `png` crate.
fn decode(bytes: &[u8]) -> (u32, u32, Vec<u8>) {
    let decoder = png::Decoder::new(bytes);
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    buf.truncate(info.buffer_size());
    assert_eq!(info.color_type, png::ColorType::Rgb);
    (info.width, info.height, buf)
}

#[cfg(feature = "png")]
#[test]
fn every_view_draws_a_non_blank_png() {
    let model = default_model();
    let mut figures: Vec<(String, Figure)> = all_views()
        .into_iter()
        .map(|v| (format!("{v:?}"), Figure::from_model(v, &model)))
        .collect();
    figures.push(("chi2".into(), chi2_figure()));
    for theme in [Theme::light(), Theme::dark()] {
        let bg = theme.background;
        for (name, f) in &figures {
            let bytes = render_png(f, &theme, FigureSize::single_column(), 150.0).unwrap();
            let (w, h, px) = decode(&bytes);
            let differing = px
                .chunks_exact(3)
                .filter(|p| (p[0], p[1], p[2]) != (bg.r, bg.g, bg.b))
                .count();
            let fraction = differing as f64 / (w * h) as f64;
            // Axes, text and lines alone cover a few percent; maps cover most of the area.
            let floor = if name.contains("Map") || name == "chi2" {
                0.4
            } else {
                0.02
            };
            assert!(
                fraction > floor,
                "{name}: only {:.3} of pixels differ from the background",
                fraction
            );
        }
    }
}

#[test]
fn map_raster_covers_the_plot_and_is_fast() {
    let model = default_model();
    let map = MapData::ice_fraction(&model, Species::CO);
    let theme = Theme::light();
    // Warm up once, then time the best of five (the machine is shared).
    rasterise_map(&map, &theme, 600, 300).unwrap();
    let mut best = std::time::Duration::MAX;
    let mut image = None;
    for _ in 0..5 {
        let t = std::time::Instant::now();
        image = Some(rasterise_map(&map, &theme, 600, 300).unwrap());
        best = best.min(t.elapsed());
    }
    let image = image.unwrap();
    assert_eq!(image.rgba.len(), 600 * 300 * 4);
    let opaque = image.rgba.chunks_exact(4).filter(|p| p[3] == 255).count();
    assert!(opaque > 600 * 300 / 2, "only {opaque} opaque pixels");
    eprintln!("rasterise_map 200x80 -> 600x300: {best:?}");
    // The budget is "a few ms" natively; unoptimised test builds are slower, so allow 100 ms here.
    assert!(best.as_secs_f64() < 0.1, "{best:?}");
}

#[test]
fn layout_maps_pixels_back_to_data() {
    let model = default_model();
    let data = ProfileData::from_model(&model);
    let mut svg = String::new();
    let layout = {
        use plotters::prelude::{IntoDrawingArea, SVGBackend};
        let area = SVGBackend::with_string(&mut svg, (600, 400)).into_drawing_area();
        draw_c_to_o_profile(&area, &data, &Theme::light(), 1.5).unwrap()
    };
    let p = layout.main();
    // The left edge is the grid's inner edge, the right edge its outer edge
    // (half a log-spaced cell beyond the first and last centres, so the edge
    // radius gets its tick label); the bottom is C/O = 0.
    let r = &data.radius_au;
    let n = r.len();
    let sqrt = nivalis_physics::math::sqrt;
    let (inner, outer) = (
        r[0] * sqrt(r[0] / r[1]),
        r[n - 1] * sqrt(r[n - 1] / r[n - 2]),
    );
    let (x, y) = layout
        .data_at(p.left as f64, (p.top + p.height as i32) as f64)
        .unwrap();
    assert!((x / inner - 1.0).abs() < 1e-9 && y.abs() < 1e-9, "{x} {y}");
    // That is the default disk's inner edge, 0.1 au.
    assert!((x / 0.1 - 1.0).abs() < 1e-6, "{x}");
    let (x, _) = layout
        .data_at((p.left + p.width as i32) as f64, p.top as f64)
        .unwrap();
    assert!((x / outer - 1.0).abs() < 1e-9, "{x} vs {outer}");
    assert_eq!(layout.data_at(0.0, 0.0), None);
}

#[test]
fn map_layout_matches_the_drawn_layout() {
    let model = default_model();
    let data = MapData::gas_c_to_o(&model);
    use plotters::prelude::{IntoDrawingArea, SVGBackend};
    let mut a = String::new();
    let mut b = String::new();
    let planned = map_layout(
        &SVGBackend::with_string(&mut a, (640, 360)).into_drawing_area(),
        &data,
        &Theme::dark(),
        1.0,
    )
    .unwrap();
    let drawn = draw_c_to_o_map(
        &SVGBackend::with_string(&mut b, (640, 360)).into_drawing_area(),
        &data,
        &Theme::dark(),
        1.0,
        CellDrawing::Omit,
    )
    .unwrap();
    assert_eq!(planned, drawn);
}

#[test]
fn bad_input_is_an_error_not_a_panic() {
    let model = default_model();
    let mut data = ProfileData::from_model(&model);
    data.c_to_o_gas.pop();
    let err = render_svg(
        &Figure::CToOProfile(data),
        &Theme::light(),
        FigureSize::single_column(),
    )
    .unwrap_err();
    assert_eq!(err.to_string(), "c_to_o_gas must have 200 entries, got 199");
    let figure = Figure::from_model(View::CToOProfile, &model);
    #[cfg(feature = "png")]
    {
        let err =
            render_png(&figure, &Theme::light(), FigureSize::single_column(), 0.0).unwrap_err();
        assert_eq!(err.to_string(), "dpi must be between 36 and 1200, got 0");
    }
    let err = render_svg(
        &figure,
        &Theme::light(),
        FigureSize::with_width_pt(f64::NAN),
    )
    .unwrap_err();
    assert!(err
        .to_string()
        .starts_with("width_pt must be between 72 and 2880"));
}

#[cfg(feature = "png")]
#[test]
fn png_text_is_drawn_in_the_margins() {
    // Only text lives in the leftmost 4 % of a profile figure (y tick labels and the
    // rotated axis label), so pixels there that differ from the background are text.
    let model = default_model();
    let bytes = render_png(
        &Figure::from_model(View::TemperatureProfile, &model),
        &Theme::light(),
        FigureSize::single_column(),
        300.0,
    )
    .unwrap();
    let (w, h, px) = decode(&bytes);
    let strip = (w as f64 * 0.04) as usize;
    let mut inked = 0;
    for y in 0..h as usize {
        for x in 0..strip {
            let o = (y * w as usize + x) * 3;
            if px[o] < 200 {
                inked += 1;
            }
        }
    }
    assert!(inked > 200, "only {inked} dark pixels in the label strip");
}

#[test]
fn omit_leaves_the_plot_rectangle_to_the_caller() {
    // The page paints the cells itself, then draws with CellDrawing::Omit: everything
    // inside the plot rectangle except lines, legend and labels must stay as painted.
    use plotters::prelude::{BitMapBackend, IntoDrawingArea};
    let model = default_model();
    let data = MapData::ice_fraction(&model, Species::CO);
    let (w, h) = (640u32, 360u32);
    let sentinel = [1u8, 2, 3];
    let mut rgb: Vec<u8> = sentinel
        .iter()
        .copied()
        .cycle()
        .take((w * h * 3) as usize)
        .collect();
    let layout = {
        let area = BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area();
        draw_ice_map(&area, &data, &Theme::light(), 1.0, CellDrawing::Omit).unwrap()
    };
    let p = layout.main();
    let (mut kept, mut total) = (0, 0);
    for y in p.top + 2..p.top + p.height as i32 - 2 {
        for x in p.left + 2..p.left + p.width as i32 - 2 {
            let o = ((y as u32 * w + x as u32) * 3) as usize;
            total += 1;
            if rgb[o..o + 3] == sentinel {
                kept += 1;
            }
        }
    }
    assert!(
        kept as f64 > 0.8 * total as f64,
        "only {kept} of {total} plot pixels left alone"
    );
    // Outside the plot rectangle the background was painted.
    assert_ne!(rgb[0..3], sentinel);
}

#[test]
fn every_snowline_label_is_drawn_once_and_none_overlap() {
    // The default disk has many desorption fronts crowded in its cold outer
    // disk (issue 15 item 12: only three of nine labels showed there).
    let model = default_model();
    let data = ProfileData::from_model(&model);
    assert!(
        data.snowlines.len() >= 9,
        "{} snowlines",
        data.snowlines.len()
    );
    for (width, height) in [(600, 400), (378, 260)] {
        let mut svg = String::new();
        {
            use plotters::prelude::{IntoDrawingArea, SVGBackend};
            let area = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
            draw_c_to_o_profile(&area, &data, &Theme::light(), 1.0).unwrap();
        }
        // Every text element: its content and the x, y of its anchor (labels are
        // rotated, so their horizontal extent is their text height around that x).
        let mut texts = Vec::new();
        for piece in svg.split("<text").skip(1) {
            let (tag, rest) = piece.split_once('>').unwrap();
            let content = rest.split("</text>").next().unwrap().trim().to_string();
            let attr = |name: &str| -> f64 {
                tag.split(&format!(" {name}=\""))
                    .nth(1)
                    .unwrap()
                    .split('"')
                    .next()
                    .unwrap()
                    .parse()
                    .unwrap()
            };
            texts.push((content, attr("x"), attr("y")));
        }
        let mut xs = Vec::new();
        for (label, _) in &data.snowlines {
            let drawn: Vec<(f64, f64)> = texts
                .iter()
                .filter(|t| &t.0 == label)
                .map(|t| (t.1, t.2))
                .collect();
            let same = data.snowlines.iter().filter(|(l, _)| l == label).count();
            assert_eq!(
                drawn.len(),
                same,
                "label {label} drawn {} times, expected {same} ({width}x{height})",
                drawn.len()
            );
            xs.extend(drawn);
        }
        xs.sort_by(|a, b| a.partial_cmp(b).unwrap());
        xs.dedup();
        assert_eq!(
            xs.len(),
            data.snowlines.len(),
            "two labels share an anchor ({width}x{height})"
        );
        // Labels in one row (same top) sit at least a text height apart.
        let text_height = 6.0; // the legend font at 1 px per point is about 8 px tall; 6 is a floor
        for a in &xs {
            for b in &xs {
                if a != b && (a.1 - b.1).abs() < 1.0 {
                    assert!(
                        (a.0 - b.0).abs() >= text_height,
                        "labels at {a:?} and {b:?} overlap ({width}x{height})"
                    );
                }
            }
        }
    }
}

/// Issue 15 item 7: a chi-square map far finer than the figure is drawn with
/// at most one cell per device pixel (4096 x 1000 model cells used to give a
/// file of hundreds of MB), and the same paraboloid at coarse and fine
/// resolution gives the same picture size class.
#[test]
fn chi2_map_cells_are_decimated_to_pixels() {
    let paraboloid = |nr: usize, nq: usize| {
        let radii: Vec<f64> = (0..nr)
            .map(|i| 10f64.powf(-1.0 + 3.0 * i as f64 / (nr - 1) as f64))
            .collect();
        let ratios: Vec<f64> = (0..nq)
            .map(|k| 10f64.powf(-3.0 + 3.0 * k as f64 / (nq - 1) as f64))
            .collect();
        let mut chi2 = Vec::with_capacity(nr * nq);
        for s in &ratios {
            for r in &radii {
                let (a, b) = (r.log10() - 1.0, s.log10() + 1.0);
                chi2.push(3.0 + 8.0 * a * a + 5.0 * b * b);
            }
        }
        let thresholds = vec![
            ("1\u{03c3}".to_string(), 2.30),
            ("2\u{03c3}".to_string(), 6.18),
        ];
        Figure::Chi2(Chi2Data::new(
            &radii,
            &ratios,
            &chi2,
            &thresholds,
            Some((10.0, 0.1)),
        ))
    };
    let size = FigureSize::single_column();
    let fine = render_svg(&paraboloid(4096, 1000), &Theme::light(), size).unwrap();
    let rects = fine.matches("<rect").count();
    // Single column (252 x 189 pt) at 300 dpi is 1050 x 788 pixels: the plot area holds fewer cells than that.
    assert!(
        rects < 1050 * 788,
        "{rects} rectangles for a 252 x 189 pt figure"
    );
    assert!(
        rects < 4096 * 1000 / 8,
        "{rects} rectangles for 4096 x 1000 cells"
    );
    // A map coarser than the pixels keeps one rectangle per cell.
    let coarse = render_svg(&paraboloid(30, 20), &Theme::light(), size).unwrap();
    assert!(
        coarse.matches("<rect").count() >= 600,
        "{}",
        coarse.matches("<rect").count()
    );
    assert!(!fine.contains("NaN"));
}
