//! Prints a digest of the core's numbers for a few configurations, so that the
//! native build and the WebAssembly build can be compared byte for byte
//! (`cargo xtask test`, stage "core in WebAssembly"). Each line carries a
//! 64-bit FNV-1a hash over the exact bits of every sample's temperature,
//! density, radiation fields and ice fractions, and the midplane C/O of the gas
//! at a few radii in shortest round-trip notation. Equal lines mean equal bits.
//! A second hash (`all`) covers every per-sample output of the structure and of
//! the ice balance (equilibria, equilibration times, out-of-equilibrium flags),
//! and a third (`edits`) the models reached through `rerun` after a structure
//! edit and an ice edit of the same disk (the page's edit path, whose buffers
//! are reused).

use nivalis_physics::params::{DesorptionModel, InitialIceState, Opacity, VerticalTemperature};
use nivalis_physics::{rerun, Model, ModelParameters, Species};

/// FNV-1a over the bits of a stream of f64 (Fowler, Noll & Vo; public domain hash).
struct Fnv(u64);

impl Fnv {
    fn add(&mut self, x: f64) {
        for byte in x.to_bits().to_le_bytes() {
            self.0 ^= u64::from(byte);
            self.0 = self.0.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }
}

/// FNV-1a over every per-sample output of a model (structure and ice balance).
fn all_outputs(model: &Model) -> u64 {
    let mut h = Fnv(0xcbf2_9ce4_8422_2325);
    let s = &model.structure().samples();
    for v in [
        &s.height_cm,
        &s.temperature_k,
        &s.density_g_cm3,
        &s.hydrogen_density_cm3,
        &s.column_above_g_cm2,
        &s.visual_extinction_mag,
        &s.fuv_photon_flux_cm2_s,
        &s.ionization_rate_s,
    ] {
        v.iter().for_each(|&x| h.add(x));
    }
    let ices = model.ices();
    for sp in Species::ALL {
        ices.ice_fraction(sp).iter().for_each(|&x| h.add(x));
        ices.equilibrium_ice_fraction(sp)
            .iter()
            .for_each(|&x| h.add(x));
        ices.equilibration_time_s(sp).iter().for_each(|&x| h.add(x));
        ices.out_of_equilibrium(sp)
            .iter()
            .for_each(|&x| h.add(f64::from(u8::from(x))));
    }
    h.0
}

fn digest(name: &str, p: &ModelParameters) {
    let model = match Model::run(p) {
        Ok(m) => m,
        Err(e) => {
            println!("{name}: error {e}");
            return;
        }
    };
    // The page's edit path: a structure edit, then an ice edit, into the same buffers.
    let mut edited = model.clone();
    let mut q = p.clone();
    q.star.luminosity_lsun *= 1.5;
    let structure_edit = rerun(&mut edited, &q).map(|_| all_outputs(&edited));
    q.ices.sticking *= 0.5;
    let ice_edit = rerun(&mut edited, &q).map(|_| all_outputs(&edited));
    println!(
        "{name}: all {:016x} edits {:016x?} {:016x?}",
        all_outputs(&model),
        structure_edit,
        ice_edit
    );
    let mut h = Fnv(0xcbf2_9ce4_8422_2325);
    let s = &model.structure().samples();
    for v in [
        &s.temperature_k,
        &s.density_g_cm3,
        &s.fuv_photon_flux_cm2_s,
        &s.ionization_rate_s,
    ] {
        v.iter().for_each(|&x| h.add(x));
    }
    // Species-major, as the flat array was laid out.
    for sp in Species::ALL {
        model.ices().ice_fraction(sp).iter().for_each(|&x| h.add(x));
    }
    let profile = model.midplane_profile();
    let n = profile.radius_au.len();
    let picks: Vec<String> = [0, n / 4, n / 2, 3 * n / 4, n - 1]
        .iter()
        .map(|&j| format!("{:?}", profile.c_to_o_gas[j]))
        .collect();
    let water: Vec<String> = model
        .snowlines(Species::H2O)
        .iter()
        .map(|l| format!("{:?}", l.radius_cm))
        .collect();
    println!(
        "{name}: fnv {:016x} c_to_o_gas {} water_snowlines_cm [{}]",
        h.0,
        picks.join(" "),
        water.join(" ")
    );
}

fn main() {
    let base = ModelParameters::defaults();
    digest("default", &base);
    let mut p = base.clone();
    p.disk.opacity = Opacity::BellLin1994;
    digest("bell_lin_1994", &p);
    let mut p = base.clone();
    p.disk.self_consistent_flaring = true;
    digest("self_consistent_flaring", &p);
    let mut p = base.clone();
    p.ices.desorption = DesorptionModel::FirstOrder;
    digest("first_order", &p);
    // Ices that start as gas on large grains in a young disk (many places still relaxing,
    // crossings of one monolayer), with a fractional 2 delta (libm's pow on the fine grid).
    let mut p = base.clone();
    p.ices.initial_state = InitialIceState::Gas;
    p.disk.grain_radius_um = 100.0;
    p.disk.age_myr = 0.01;
    p.disk.vertical_temperature = VerticalTemperature::TwoLayer {
        superheating: 1.5,
        transition_scale_heights: 4.0,
        delta: 1.3,
    };
    digest("gas_start_large_grains", &p);
    // The equilibrium state in a vertically isothermal disk.
    let mut p = base.clone();
    p.ices.initial_state = InitialIceState::Equilibrium;
    p.disk.vertical_temperature = VerticalTemperature::Isothermal;
    digest("equilibrium_isothermal", &p);
    let mut p = base;
    p.star.luminosity_lsun = 17.0;
    p.star.mass_msun = 2.0;
    p.disk.accretion_rate_msun_per_yr = 1e-7;
    digest("bright_star", &p);
}
