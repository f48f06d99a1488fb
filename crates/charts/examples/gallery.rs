//! Writes every view of the default model as SVG and PNG (light and dark) into
//! a folder given as the first argument, for looking at the figures by eye.

use nivalis_charts::*;
use nivalis_physics::{Model, ModelParameters, Species};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = std::path::PathBuf::from(
        std::env::args()
            .nth(1)
            .ok_or("usage: gallery <output folder>")?,
    );
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
            // A demo planet at 8 au allowed between 3 and 12 au, infeasible beyond 190 au (invented).
            let mut p = p
                .with_planet_radius_au(8.0)
                .with_allowed_formation_radii_au(vec![(3.0, 12.0)]);
            p.infeasible_formation_radii_au = vec![(0.1, 0.5), (190.0, 500.0)];
            figure = Figure::CToOProfile(p);
        }
        for (theme_name, theme) in [("light", Theme::light()), ("dark", Theme::dark())] {
            let svg = render_svg(&figure, &theme, FigureSize::single_column())?;
            std::fs::write(dir.join(format!("{name}_{theme_name}.svg")), svg)?;
            #[cfg(feature = "png")]
            {
                let t = std::time::Instant::now();
                let png = render_png(&figure, &theme, FigureSize::single_column(), 300.0)?;
                eprintln!("{name} {theme_name}: png {:?}", t.elapsed());
                std::fs::write(dir.join(format!("{name}_{theme_name}.png")), png)?;
            }
        }
    }
    // An invented chi-square surface (demo data): a tilted paraboloid in log r and log ratio.
    let radii: Vec<f64> = (0..40)
        .map(|i| 10f64.powf(-1.0 + 3.5 * i as f64 / 39.0))
        .collect();
    let ratios: Vec<f64> = (0..30)
        .map(|k| 10f64.powf(-3.0 + 3.0 * k as f64 / 29.0))
        .collect();
    let mut chi2 = Vec::new();
    for s in &ratios {
        for r in &radii {
            let (a, b) = (r.log10() - 1.2, s.log10() + 1.3);
            chi2.push(4.0 + 6.0 * a * a + 4.0 * a * b + 5.0 * b * b);
        }
    }
    let thresholds = [
        ("1\u{03c3}".to_string(), 2.30),
        ("2\u{03c3}".to_string(), 6.18),
    ];
    let figure = Figure::Chi2(Chi2Data::new(
        &radii,
        &ratios,
        &chi2,
        &thresholds,
        Some((10f64.powf(1.2), 10f64.powf(-1.3))),
    ));
    for (theme_name, theme) in [("light", Theme::light()), ("dark", Theme::dark())] {
        std::fs::write(
            dir.join(format!("chi2_{theme_name}.svg")),
            render_svg(&figure, &theme, FigureSize::single_column())?,
        )?;
        #[cfg(feature = "png")]
        std::fs::write(
            dir.join(format!("chi2_{theme_name}.png")),
            render_png(&figure, &theme, FigureSize::single_column(), 300.0)?,
        )?;
    }
    Ok(())
}
