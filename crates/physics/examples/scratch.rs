//! Scratch timing of the model stages (developer aid).
use nivalis_physics::*;
fn main() {
    let p = ModelParameters::defaults();
    for _ in 0..3 {
        let t0 = std::time::Instant::now();
        let s = structure::DiskStructure::compute(&p).unwrap();
        let t1 = t0.elapsed();
        let m = Model::run(&p).unwrap();
        let t2 = t0.elapsed() - t1;
        let t3 = std::time::Instant::now();
        let prof = m.midplane_profile();
        for sp in Species::ALL {
            let _ = m.snowlines(sp);
        }
        eprintln!(
            "structure {:?} model {:?} profile {:?} {}",
            t1,
            t2,
            t3.elapsed(),
            prof.radius_au.len() + s.radial_cells()
        );
    }
}
