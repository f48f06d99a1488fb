//! Scratch run of the default model (developer aid).
use nivalis_physics::*;
fn main() {
    let mut p = ModelParameters::defaults();
    if std::env::args().nth(1).as_deref() == Some("bl") { p.disk.opacity = params::Opacity::BellLin1994; }
    if std::env::args().nth(1).as_deref() == Some("sc") { p.disk.self_consistent_flaring = true; }
    let t0 = std::time::Instant::now();
    let m = Model::run(&p).unwrap();
    eprintln!("run {:?}", t0.elapsed());
    for s in Species::ALL { println!("{:6} {:?}", s.key(), m.snowlines(s).iter().map(|x| (x.radius_cm/units::AU_CM, x.direction.key())).collect::<Vec<_>>()); }
    let prof = m.midplane_profile();
    for j in (0..200).step_by(20) { println!("r={:8.3} T={:7.2} Tirr={:7.2} Tacc={:7.2} Sig={:9.3e} C/O gas={:?} solid={:?}", prof.radius_au[j], m.structure.midplane_temperature_k[j], m.structure.irradiation_temperature_k[j], m.structure.accretion_temperature_k[j], m.structure.surface_density_g_cm2[j], prof.c_to_o_gas[j], prof.c_to_o_solid[j]); }
    let j=150; for s in (0..81).step_by(8) { let k = m.structure.index(j,s); println!("z/H={:.2} T={:.1} nH={:.3e} Av={:.3e} fuv={:.3e} zeta={:.3e} fCO={:.3}", m.structure.samples.height_cm[k]/m.structure.scale_height_cm[j], m.structure.samples.temperature_k[k], m.structure.samples.hydrogen_density_cm3[k], m.structure.samples.visual_extinction_mag[k], m.structure.samples.fuv_photon_flux_cm2_s[k], m.structure.samples.ionization_rate_s[k], m.ice_fraction_at(Species::CO,k)); }
}
