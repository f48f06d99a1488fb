//! Prints a digest of the core's numbers for a few configurations, so that the
//! native build and the WebAssembly build can be compared byte for byte
//! (`cargo xtask test`, stage "core in WebAssembly"). Each line carries a
//! 64-bit FNV-1a hash over the exact bits of every sample's temperature,
//! density, radiation fields and ice fractions, and the midplane C/O of the gas
//! at a few radii in shortest round-trip notation. Equal lines mean equal bits.

use nivalis_physics::params::{DesorptionModel, Opacity};
use nivalis_physics::{Model, ModelParameters, Species};

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

fn digest(name: &str, p: &ModelParameters) {
    let model = match Model::run(p) {
        Ok(m) => m,
        Err(e) => {
            println!("{name}: error {e}");
            return;
        }
    };
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
    let mut p = base;
    p.star.luminosity_lsun = 17.0;
    p.star.mass_msun = 2.0;
    p.disk.accretion_rate_msun_per_yr = 1e-7;
    digest("bright_star", &p);
}
