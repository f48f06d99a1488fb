//! Calibrated temperatures (docs/model.md section 4): where the CO snowline of
//! well-studied T Tauri and Herbig Ae disks lands with the defaults for their
//! star type, against the observed radius; the Chiang & Goldreich 1997 midplane
//! at 1 au; and the observed power-law temperature option.
//!
//! The stellar and disk parameters and the observed snowline radii are quoted
//! from memory of the literature (status M). The default grazing-angle law
//! `default_flaring_angle` was calibrated on these two disks, so this test
//! guards that calibration; it is not an independent validation.

use nivalis_physics::params::{default_flaring_angle, DesorptionModel, EarlyPhase, TemperatureLaw};
use nivalis_physics::units::AU_CM;
use nivalis_physics::{CrossingDirection, Model, ModelParameters, Species};
use nivalis_tests::{assert_rel, small_default};

/// A published disk: star, disk, and the observed CO snowline range [au].
struct PublishedDisk {
    what: &'static str,
    mass_msun: f64,
    luminosity_lsun: f64,
    effective_temperature_k: f64,
    gas_mass_msun: f64,
    characteristic_radius_au: f64,
    accretion_rate_msun_per_yr: f64,
    observed_co_snowline_au: (f64, f64),
}

/// Both from memory (M). TW Hya: M* 0.8 Msun, L* 0.28 Lsun, T* 4000 K, gas mass >= 0.05 Msun
/// (Bergin et al. 2013), R_c ~30 au, Mdot ~2e-9 Msun/yr; CO snowline ~30 au from N2H+ (Qi et al. 2013,
/// Science 341, 630) and ~17 au from 13C18O (Zhang et al. 2017, Nat. Astron. 1, 0130).
/// HD 163296: M* 2.0 Msun, L* 17 Lsun (Gaia distance), T* 9250 K, gas mass ~0.1 Msun, R_c ~165 au
/// (Isella et al. 2016), Mdot ~1e-7 Msun/yr; CO snowline ~90 au from DCO+/N2H+ (Qi et al. 2015,
/// ApJ 813, 128) and ~65 au in later work.
const DISKS: [PublishedDisk; 2] = [
    PublishedDisk {
        what: "T Tauri disk of TW Hya",
        mass_msun: 0.8,
        luminosity_lsun: 0.28,
        effective_temperature_k: 4000.0,
        gas_mass_msun: 0.05,
        characteristic_radius_au: 30.0,
        accretion_rate_msun_per_yr: 2e-9,
        observed_co_snowline_au: (17.0, 30.0),
    },
    PublishedDisk {
        what: "Herbig Ae disk of HD 163296",
        mass_msun: 2.0,
        luminosity_lsun: 17.0,
        effective_temperature_k: 9250.0,
        gas_mass_msun: 0.1,
        characteristic_radius_au: 165.0,
        accretion_rate_msun_per_yr: 1e-7,
        observed_co_snowline_au: (65.0, 90.0),
    },
];

/// The disk with every other value at its default, and the defaults that follow the star
/// (grazing angle, early phase) as the disk-file reader sets them.
fn parameters(d: &PublishedDisk, flaring_angle: f64) -> ModelParameters {
    let mut p = small_default();
    p.star.mass_msun = d.mass_msun;
    p.star.luminosity_lsun = d.luminosity_lsun;
    p.star.effective_temperature_k = d.effective_temperature_k;
    p.disk.gas_mass_msun = d.gas_mass_msun;
    p.disk.characteristic_radius_au = d.characteristic_radius_au;
    p.disk.accretion_rate_msun_per_yr = d.accretion_rate_msun_per_yr;
    p.disk.flaring_angle = flaring_angle;
    p.disk.early_phase = EarlyPhase::defaults_for(
        &p.star,
        d.accretion_rate_msun_per_yr,
        EarlyPhase::DEFAULT_ACCRETION_RATE_MSUN_PER_YR,
    );
    p
}

fn co_snowline_au(p: &ModelParameters) -> f64 {
    let model = Model::run(p).unwrap();
    model
        .snowlines(Species::CO)
        .iter()
        .find(|s| s.direction == CrossingDirection::FreezeOut)
        .expect("a CO snowline")
        .radius_cm
        / AU_CM
}

#[test]
fn co_snowlines_of_published_disks_within_a_factor_1_5() {
    // Target (issue 10 item 4): within a factor 1.5 of the observed radius (the geometric middle of
    // the published range), with the defaults for the star type.
    for d in &DISKS {
        let phi = default_flaring_angle(d.luminosity_lsun);
        let model_au = co_snowline_au(&parameters(d, phi));
        let (lo, hi) = d.observed_co_snowline_au;
        let observed = (lo * hi).sqrt();
        let old = co_snowline_au(&parameters(d, 0.05));
        println!(
            "{}: phi = {phi:.4}, CO snowline {model_au:.1} au (observed {lo}-{hi} au, middle {observed:.1}); with the old phi = 0.05: {old:.1} au",
            d.what
        );
        let factor = (model_au / observed).max(observed / model_au);
        assert!(factor <= 1.5, "{}: CO snowline {model_au:.1} au is a factor {factor:.2} from the observed {observed:.1} au", d.what);
    }
}

#[test]
fn chiang_goldreich_midplane_at_1_au() {
    // Chiang & Goldreich 1997 (ApJ 490, 368): their T Tauri star (M* 0.5 Msun, R* 2.5 Rsun, T* 4000 K,
    // so L* = 1.44 Lsun) has an interior temperature of about 150 K at 1 au (T_i ~ 150 a_AU^-3/7 K;
    // M, from memory). The passive disk with the default grazing angle for that star: within 15 %
    // (the fixed angle does not follow their slowly growing flaring).
    let mut p = small_default();
    p.star.mass_msun = 0.5;
    p.star.luminosity_lsun = 2.5f64.powi(2) * (4000.0f64 / 5772.0).powi(4);
    p.star.effective_temperature_k = 4000.0;
    p.disk.accretion_rate_msun_per_yr = 0.0;
    p.disk.flaring_angle = default_flaring_angle(p.star.luminosity_lsun);
    p.grid.radial_cells = 40;
    let model = Model::run(&p).unwrap();
    let t = model.midplane_at(1.0).unwrap().temperature_k;
    println!(
        "L* = {:.3} Lsun, phi = {:.4}, T_mid(1 au) = {t:.1} K",
        p.star.luminosity_lsun, p.disk.flaring_angle
    );
    assert_rel(
        t,
        150.0,
        0.15,
        "T_mid(1 au) of the Chiang & Goldreich 1997 disk (M)",
    );
}

#[test]
fn observed_power_law_temperature_sets_the_midplane_and_the_step_snowlines() {
    // T_mid = T_1au (r/au)^-q (the law observers fit; D): on every cell centre, and in the step model
    // the CO snowline (T_cond = 20 K, Oberg et al. 2011) lies where the law gives 20 K,
    // r = (T_1au / 20 K)^(1/q) au (tolerance 2e-3: ln T is linear in ln r, so interpolation is exact
    // up to rounding; the grid does not matter).
    let mut p = small_default();
    p.disk.temperature = TemperatureLaw::PowerLaw {
        midplane_1au_k: 160.0,
        midplane_index: 0.55,
        atmosphere: Some((600.0, 0.45)),
    };
    let model = Model::run(&p).unwrap();
    let st = &model.structure();
    for j in 0..st.radial_cells() {
        let r_au = st.radius_cm()[j] / AU_CM;
        let law = (160.0 * r_au.powf(-0.55)).max(p.disk.background_temperature_k);
        assert_rel(
            st.midplane_temperature_k()[j],
            law,
            1e-12,
            &format!("T_mid at {r_au:.3} au"),
        );
        // The two-layer atmosphere follows its own law at the top of the column (z >= z_q = 4 H).
        let top = st.samples().temperature_k[st.index(j, st.samples_per_column() - 1)];
        assert_rel(
            top,
            (600.0 * r_au.powf(-0.45)).max(law),
            1e-12,
            &format!("T_atm at {r_au:.3} au"),
        );
    }
    p.ices.desorption = DesorptionModel::FixedTemperature;
    let step = Model::run(&p).unwrap();
    let r_co = step.snowlines(Species::CO)[0].radius_cm / AU_CM;
    assert_rel(
        r_co,
        (160.0f64 / 20.0).powf(1.0 / 0.55),
        2e-3,
        "step-model CO snowline under the power law",
    );
}
