use nivalis_charts::*;
use nivalis_physics::{Model, ModelParameters, Species};
use nivalis_web::display::{MeasureText, Recorder};
use plotters::prelude::IntoDrawingArea;
use std::cell::RefCell;
use std::time::Instant;
struct Fixed;
impl MeasureText for Fixed {
    fn measure(&self, _f: &str, size: f64, text: &str) -> (u32, u32) {
        (
            (0.6 * size * text.chars().count() as f64) as u32,
            (1.2 * size) as u32,
        )
    }
}
fn main() {
    let model = Model::run(&ModelParameters::defaults()).unwrap();
    let theme = Theme::light();
    let n = 50;
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(MapData::gas_c_to_o(&model));
    }
    println!(
        "gas_c_to_o data {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(MapData::ice_fraction(&model, Species::H2O));
    }
    println!(
        "ice data {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
    let d = MapData::ice_fraction(&model, Species::H2O);
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(rasterise_map_over(&d, &theme, theme.background, 560, 330).unwrap());
    }
    println!(
        "raster {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(d.contour(0.5));
    }
    println!(
        "contour {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
    let t = Instant::now();
    for _ in 0..n {
        let ops = RefCell::new(Vec::new());
        let area = Recorder::new((700, 420), &ops, &Fixed).into_drawing_area();
        draw_ice_map(&area, &d, &theme, 1.6, CellDrawing::Omit).unwrap();
        drop(area);
        std::hint::black_box(ops.into_inner());
    }
    println!(
        "draw omit {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
    let t = Instant::now();
    for _ in 0..n {
        let ops = RefCell::new(Vec::new());
        let area = Recorder::new((700, 420), &ops, &Fixed).into_drawing_area();
        map_layout(&area, &d, &theme, 1.6).unwrap();
        drop(area);
    }
    println!(
        "layout {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
    let ops = RefCell::new(Vec::new());
    let area = Recorder::new((700, 420), &ops, &Fixed).into_drawing_area();
    draw_ice_map(&area, &d, &theme, 1.6, CellDrawing::Omit).unwrap();
    drop(area);
    println!("ops {}", ops.borrow().len());
    let p = ProfileData::from_model(&model);
    let t = Instant::now();
    for _ in 0..n {
        let ops = RefCell::new(Vec::new());
        let area = Recorder::new((700, 420), &ops, &Fixed).into_drawing_area();
        draw_c_to_o_profile(&area, &p, &theme, 1.6).unwrap();
        drop(area);
    }
    println!(
        "profile draw {:.3} ms",
        t.elapsed().as_secs_f64() * 1e3 / n as f64
    );
}
