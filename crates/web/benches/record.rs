//! Criterion benchmark of what the page's draw does in Rust after an edit,
//! natively: building each of the five views' data from a computed model of
//! the default disk (`data/<view>`, as `Explorer::view_data`) and recording
//! each view into a display list (`record/<view>`, as `canvas::record`: the
//! charts crate's `draw_*` through plotters into `display::Recorder`, a map's
//! cells rasterised into one image). `cargo xtask bench` reads the per-sample
//! records under `target/criterion/<group>/<view>/new/sample.json` and prints
//! medians, p10 and p90; `cargo bench -p nivalis-web --bench record` runs it
//! alone. `record_edit/<view>` records as the page does after each of a run
//! of structure edits: the data of two models in turn, into the memory of the
//! list before, with the static parts put again from the kept segments
//! (`display::record_view_reusing`).
//!
//! Canvas sizes are those of the page's charts at 1280 CSS px wide on a
//! device pixel ratio of 1 (640 x 360, the tall ones 640 x 460), at the
//! page's 1.6 px per point. Text is measured with a fixed rule (0.6 em per
//! character, 1.2 em high) remembered per (font, text) as the page remembers
//! the canvas's measurements, so no canvas is needed.
//!
//! Each sample records the view a fixed number of times (flat sampling), so
//! `times[i] / iters[i]` is one record's time. The measurement is short (a
//! few seconds per case): for comparing work done in one run on one machine.

use std::cell::RefCell;
use std::collections::HashMap;
use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{Criterion, SamplingMode};
use nivalis_charts::readout::ViewData;
use nivalis_charts::{AbundanceData, MapData, ProfileData, TemperatureData, Theme};
use nivalis_physics::{Model, ModelParameters, Species};
use nivalis_web::display::{record_view, record_view_reusing, Buffers, MeasureText, Segments};

/// The page's pixels per point at a device pixel ratio of 1 (96 / 72 x 1.2).
const PIXELS_PER_POINT: f64 = 96.0 / 72.0 * 1.2;

/// 0.6 em per character, 1.2 em high, remembered per (font, text).
#[derive(Default)]
struct Fixed {
    sizes: RefCell<HashMap<(String, String), (u32, u32)>>,
}

impl MeasureText for Fixed {
    fn measure(&self, font: &str, size: f64, text: &str) -> (u32, u32) {
        let key = (font.to_string(), text.to_string());
        if let Some(s) = self.sizes.borrow().get(&key) {
            return *s;
        }
        let s = (
            (0.6 * size * text.chars().count() as f64) as u32,
            (1.2 * size) as u32,
        );
        self.sizes.borrow_mut().insert(key, s);
        s
    }
}

/// The five views of the page: name, canvas size, and how their data is built.
type Build = fn(&Model) -> ViewData;
const VIEWS: [(&str, (u32, u32), Build); 5] = [
    ("c_to_o", (640, 360), |m| {
        ViewData::Profile(ProfileData::from_model(m))
    }),
    ("temperature", (640, 460), |m| {
        ViewData::Temperature(TemperatureData::from_model(m))
    }),
    ("ice_map", (640, 360), |m| {
        ViewData::IceMap(MapData::ice_fraction(m, Species::H2O))
    }),
    ("c_to_o_map", (640, 360), |m| {
        ViewData::CToOMap(MapData::gas_c_to_o(m))
    }),
    ("abundances", (640, 460), |m| {
        ViewData::Abundances(AbundanceData::from_model(m))
    }),
];

fn settings<'a>(
    c: &'a mut Criterion,
    group: &str,
) -> criterion::BenchmarkGroup<'a, criterion::measurement::WallTime> {
    let mut g = c.benchmark_group(group);
    g.sampling_mode(SamplingMode::Flat)
        .sample_size(20)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2));
    g
}

fn main() {
    let mut c = Criterion::default().configure_from_args();
    let model = Model::run(&ModelParameters::defaults()).expect("the default disk runs");
    let theme = Theme::light();
    let measure = Fixed::default();
    let start = Instant::now();
    let now = move || start.elapsed().as_secs_f64() * 1e3;
    {
        let mut g = settings(&mut c, "data");
        for (name, _, build) in VIEWS {
            g.bench_function(name, |b| b.iter(|| black_box(build(black_box(&model)))));
        }
        g.finish();
    }
    let mut g = settings(&mut c, "record");
    for (name, size, build) in VIEWS {
        let data = build(&model);
        g.bench_function(name, |b| {
            b.iter(|| {
                let mut raster_ms = 0.0;
                black_box(
                    record_view(
                        size,
                        black_box(&data),
                        &theme,
                        PIXELS_PER_POINT,
                        &measure,
                        &now,
                        &mut raster_ms,
                    )
                    .expect("the view records"),
                )
            })
        });
    }
    g.finish();
    // As the page records after each of a run of structure edits (luminosity
    // 1 <-> 1.5, as `tests/browser/bench.mjs`): the two models' data in turn,
    // each recording into the memory of the list before and putting the static
    // parts again from the view's kept segments.
    let mut brighter = ModelParameters::defaults();
    brighter.star.luminosity_lsun = 1.5;
    let edited = Model::run(&brighter).expect("the brighter disk runs");
    let mut g = settings(&mut c, "record_edit");
    for (name, size, build) in VIEWS {
        let data = [build(&model), build(&edited)];
        let mut segments = Segments::default();
        let mut previous = Some(Vec::new());
        let mut turn = 0;
        g.bench_function(name, |b| {
            b.iter(|| {
                turn ^= 1;
                let mut raster_ms = 0.0;
                let (ops, layout) = record_view_reusing(
                    size,
                    black_box(&data[turn]),
                    &theme,
                    PIXELS_PER_POINT,
                    &measure,
                    &now,
                    &mut raster_ms,
                    Buffers::of(previous.take().unwrap_or_default()),
                    &mut segments,
                )
                .expect("the view records");
                black_box(&layout);
                previous = Some(ops);
            })
        });
    }
    g.finish();
    c.final_summary();
}
