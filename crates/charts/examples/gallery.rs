//! Writes every view of the default model as SVG and PNG (light and dark) into
//! a folder given as the first argument, for looking at the figures by eye.

use nivalis_charts::*;
use nivalis_physics::{Model, ModelParameters, Species};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = std::path::PathBuf::from(std::env::args().nth(1).ok_or("usage: gallery <output folder>")?);
    std::fs::create_dir_all(&dir)?;
    let model = Model::run(&ModelParameters::defaults())?;
    let views = [
        ("c_to_o", View::CToOProfile),
        ("temperature", View::TemperatureProfile),
        ("ice_co", View::IceMap(Species::CO)),
        ("ice_h2o", View::IceMap(Species::H2O)),
        ("c_to_o_map", View::CToOMap),
        ("abundances", View::Abundances),
    ];
    for (name, view) in views {
        let mut figure = Figure::from_model(view, &model);
        if let Figure::CToOProfile(p) = figure {
            // A demo planet at 8 au allowed between 3 and 12 au (invented).
            figure = Figure::CToOProfile(p.with_planet_radius_au(8.0).with_allowed_formation_radii_au(vec![(3.0, 12.0)]));
        }
        for (theme_name, theme) in [("light", Theme::light()), ("dark", Theme::dark())] {
            let svg = render_svg(&figure, &theme, FigureSize::single_column())?;
            std::fs::write(dir.join(format!("{name}_{theme_name}.svg")), svg)?;
            let t = std::time::Instant::now();
            let png = render_png(&figure, &theme, FigureSize::single_column(), 300.0)?;
            eprintln!("{name} {theme_name}: png {:?}", t.elapsed());
            std::fs::write(dir.join(format!("{name}_{theme_name}.png")), png)?;
        }
    }
    Ok(())
}
