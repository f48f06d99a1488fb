//! Physical invariants of the model over random valid disks (property tests).
//!
//! Each case draws a star, a disk, grains, cosmic rays, a desorption model and
//! a binding-energy set within physically valid ranges, on a small grid
//! (24 x 16) so the file runs in seconds in debug builds. Cases where
//! `Model::run` refuses the disk with a legitimate `PhysicsError` (oxygen
//! exhausted by a carbon-rich draw, inner edge inside the star, a
//! non-converged self-consistent flaring solve) are counted, and the test
//! requires that most cases run.
//!
//! The random generator is seeded with a fixed value so CI sees the same
//! disks every run; set `PROPTEST_RNG_SEED` (and `PROPTEST_CASES`) to explore
//! others. Run with `cargo test -p nivalis-tests --test properties`.

use nivalis_physics::params::{
    AbundanceReference, DesorptionModel, Element, ModelParameters, Opacity, VerticalTemperature,
    ELEMENT_COUNT,
};
use nivalis_physics::units::AU_CM;
use nivalis_physics::{BindingEnergySet, CrossingDirection, Model, PhysicsError, Species};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed, TestCaseError, TestRunner};
use std::cell::RefCell;
use std::collections::BTreeMap;

/// Cases per property run; override with PROPTEST_CASES.
const CASES: u32 = 48;
/// Fixed seed ("nivalis" in ASCII); override with PROPTEST_RNG_SEED.
const SEED: u64 = 0x006e_6976_616c_6973;

fn runner() -> TestRunner {
    let base = Config::default();
    let cases = if std::env::var_os("PROPTEST_CASES").is_some() {
        base.cases
    } else {
        CASES
    };
    let rng_seed = match base.rng_seed {
        RngSeed::Random => RngSeed::Fixed(SEED),
        fixed => fixed,
    };
    // No persistence file: the seed is fixed, so a failure reproduces by rerunning.
    TestRunner::new(Config {
        cases,
        rng_seed,
        failure_persistence: None,
        ..base
    })
}

/// log10-uniform values in [10^lo, 10^hi].
fn log_uniform(lo: f64, hi: f64) -> impl Strategy<Value = f64> {
    (lo..hi).prop_map(|x| 10f64.powf(x))
}

/// Random valid disks. Ranges: M* 0.3-3 Msun, L* 0.1-20 Lsun, T* 3000-10000 K (young stars),
/// [C/H], [O/H] within +-0.2 dex, M_disk 1e-3-0.1 Msun, R_c 10-200 au, gamma 0.2-1.5
/// (Andrews et al. 2009, 2010 ranges), Mdot 0 or 1e-10-1e-7 Msun/yr, phi 0.01-0.1, grain radius
/// 0.05-10 micron, dust-to-gas 1e-3-3e-2, zeta 1e-19-1e-16 s^-1, G_ISM 0-10, stellar FUV
/// 1e5-1e8 G0 at 1 au, constant or Bell & Lin opacity, isothermal or two-layer columns.
fn disks() -> impl Strategy<Value = ModelParameters> {
    let star = (
        0.3f64..3.0,
        log_uniform(-1.0, 1.3),
        3000f64..10000.0,
        -0.2f64..0.2,
        -0.2f64..0.2,
        log_uniform(5.0, 8.0),
        prop::bool::ANY,
    );
    let disk = (
        log_uniform(-3.0, -1.0),
        10f64..200.0,
        0.2f64..1.5,
        prop_oneof![1 => Just(0.0), 4 => log_uniform(-10.0, -7.0)],
        0.01f64..0.1,
        prop::bool::weighted(0.15),
        prop_oneof![Just(None), (0.1f64..10.0).prop_map(Some)],
        prop_oneof![
            Just(VerticalTemperature::Isothermal),
            (1.0f64..2.0, 2.0f64..5.0, 1.0f64..3.0).prop_map(|(s, zq, d)| {
                VerticalTemperature::TwoLayer {
                    superheating: s,
                    transition_scale_heights: zq,
                    delta: d,
                }
            })
        ],
        5f64..20.0,
        0.1f64..0.5,
    );
    let dust = (
        log_uniform(-1.3, 1.0),
        log_uniform(-3.0, -1.5),
        log_uniform(-19.0, -16.0),
        0f64..10.0,
    );
    let ices = (
        prop_oneof![
            Just(DesorptionModel::ZerothOrder),
            Just(DesorptionModel::FirstOrder),
            Just(DesorptionModel::FixedTemperature)
        ],
        prop_oneof![
            Just(BindingEnergySet::TransitionState),
            Just(BindingEnergySet::Hhl92FrequencyLegacy),
            Just(BindingEnergySet::OnWaterIce)
        ],
        prop::bool::weighted(0.8),
        prop::bool::weighted(0.8),
    );
    (star, disk, dust, ices).prop_map(|(star, disk, dust, ices)| {
        let mut p = ModelParameters::defaults();
        let (mass, lum, teff, c_dex, o_dex, fuv, a21) = star;
        p.star.mass_msun = mass;
        p.star.luminosity_lsun = lum;
        p.star.effective_temperature_k = teff;
        p.star.offset_dex[Element::C as usize] = c_dex;
        p.star.offset_dex[Element::O as usize] = o_dex;
        p.star.fuv_1au_habing = fuv;
        p.star.abundance_reference = if a21 {
            AbundanceReference::Asplund2021
        } else {
            AbundanceReference::Asplund2009
        };
        let (m_disk, rc, gamma, mdot, phi, self_consistent, kappa, vertical, t_bg, r_in) = disk;
        p.disk.gas_mass_msun = m_disk;
        p.disk.characteristic_radius_au = rc;
        p.disk.surface_density_index = gamma;
        p.disk.accretion_rate_msun_per_yr = mdot;
        p.disk.flaring_angle = phi;
        p.disk.self_consistent_flaring = self_consistent;
        p.disk.opacity = match kappa {
            Some(k) => Opacity::Constant {
                rosseland_cm2_per_g: k,
            },
            None => Opacity::BellLin1994,
        };
        p.disk.vertical_temperature = vertical;
        p.disk.background_temperature_k = t_bg;
        p.disk.inner_radius_au = r_in;
        let (grain_um, dust_to_gas, zeta, g_ism) = dust;
        p.disk.grain_radius_um = grain_um;
        p.disk.dust_to_gas = dust_to_gas;
        p.disk.cosmic_ray_rate_s = zeta;
        p.disk.interstellar_fuv_habing = g_ism;
        let (desorption, set, photo, cr) = ices;
        p.ices.desorption = desorption;
        p.ices.binding_energy_set = set;
        p.ices.photodesorption = photo;
        p.ices.cosmic_ray_desorption = cr;
        p.grid.radial_cells = 24;
        p.grid.vertical_cells = 16;
        p
    })
}

/// Tally of what the cases did, so the test can insist that most of them ran.
#[derive(Default, Debug)]
struct Tally {
    ran: u32,
    refused: BTreeMap<&'static str, u32>,
    counters: BTreeMap<&'static str, u32>,
}

impl Tally {
    fn count(&mut self, what: &'static str) {
        *self.counters.entry(what).or_default() += 1;
    }
}

fn error_kind(e: &PhysicsError) -> &'static str {
    match e {
        PhysicsError::InnerRadiusInsideStar { .. } => "inner radius inside star",
        PhysicsError::OxygenExhausted { .. } => "oxygen exhausted",
        PhysicsError::NitrogenExhausted { .. } => "nitrogen exhausted",
        PhysicsError::FlaringNotConverged { .. } => "flaring not converged",
        PhysicsError::NoTemperatureSolution { .. } => "no temperature solution",
        _ => "other",
    }
}

/// Run every property over `CASES` random disks, then check most of them ran.
fn run_properties(
    name: &str,
    property: impl Fn(&ModelParameters, &Model, &mut Tally) -> Result<(), TestCaseError>,
) -> Tally {
    let tally = RefCell::new(Tally::default());
    let result = runner().run(&disks(), |p| {
        let model = match Model::run(&p) {
            Ok(m) => m,
            Err(e) => {
                // Only legitimate refusals count as skips; anything else is a failure.
                let kind = error_kind(&e);
                prop_assert!(
                    kind != "other" && kind != "no temperature solution",
                    "unexpected error: {e}"
                );
                *tally.borrow_mut().refused.entry(kind).or_default() += 1;
                return Ok(());
            }
        };
        tally.borrow_mut().ran += 1;
        property(&p, &model, &mut tally.borrow_mut())
    });
    let tally = tally.into_inner();
    println!("{name}: {tally:?}");
    if let Err(e) = result {
        panic!("{name}: {e}");
    }
    let total = tally.ran + tally.refused.values().sum::<u32>();
    assert!(
        tally.ran * 4 >= total * 3,
        "{name}: only {} of {total} cases ran: {:?}",
        tally.ran,
        tally.refused
    );
    tally
}

#[test]
fn temperatures_densities_and_ice_fractions_are_physical() {
    // T > 0 and finite everywhere; density positive, finite and falling with height in every column
    // (docs/model.md section 5: d ln rho/dz = -g_z mu m_H/(k T) - d ln T/dz, and T never falls with height in
    // either vertical model, so rho falls; strictly in isothermal columns); 0 <= f_ice <= 1 for every
    // species and sample (docs/model.md section 7). Exact inequalities: no tolerance.
    run_properties("physical fields", |p, m, tally| {
        let st = &m.structure();
        for j in 0..st.radial_cells() {
            let t_mid = st.midplane_temperature_k()[j];
            prop_assert!(
                t_mid.is_finite() && t_mid > 0.0,
                "T_mid = {t_mid} at cell {j}"
            );
            prop_assert!(
                st.accretion_temperature_k()[j] >= 0.0 && st.irradiation_temperature_k()[j] > 0.0
            );
            for s in 0..st.samples_per_column() {
                let k = st.index(j, s);
                let t = st.samples().temperature_k[k];
                let rho = st.samples().density_g_cm3[k];
                prop_assert!(t.is_finite() && t > 0.0, "T = {t} at cell {j} sample {s}");
                prop_assert!(
                    rho.is_finite() && rho > 0.0,
                    "rho = {rho} at cell {j} sample {s}"
                );
                if s > 0 {
                    let below = st.samples().density_g_cm3[k - 1];
                    prop_assert!(
                        t >= st.samples().temperature_k[k - 1],
                        "T falls with height at cell {j} sample {s}"
                    );
                    prop_assert!(
                        rho <= below,
                        "rho rises with height at cell {j} sample {s}: {below} -> {rho}"
                    );
                    if p.disk.vertical_temperature == VerticalTemperature::Isothermal {
                        prop_assert!(
                            rho < below,
                            "isothermal rho not falling at cell {j} sample {s}"
                        );
                    }
                }
            }
        }
        if p.disk.vertical_temperature == VerticalTemperature::Isothermal {
            tally.count("isothermal disks");
        }
        for sp in Species::ALL {
            for (k, f) in m.ices().ice_fraction(sp).iter().enumerate() {
                prop_assert!(
                    (0.0..=1.0).contains(f),
                    "f_ice = {f} of {sp:?} at sample {k}"
                );
            }
        }
        Ok(())
    });
}

#[test]
fn elements_are_conserved_in_every_cell() {
    // docs/model.md section 8: gas + ice + refractory = stellar, every cell, every element, to 1e-12 relative;
    // and the stellar abundances are X/H = 10^(log eps - 12 + offset) of the chosen set (docs/model.md section 1).
    run_properties("element conservation", |p, m, _| {
        let log_eps = p.star.abundance_reference.log_eps();
        let stellar = *m.stellar_per_h();
        for e in 0..ELEMENT_COUNT {
            let expected = 10f64.powf(log_eps[e] - 12.0 + p.star.offset_dex[e]);
            prop_assert!(
                ((stellar[e] - expected) / expected).abs() <= 1e-12,
                "stellar X/H of element {e}"
            );
        }
        for k in 0..m.sample_count() {
            let ph = m.phases_at(k);
            #[allow(clippy::needless_range_loop)] // e indexes four parallel arrays
            for e in 0..ELEMENT_COUNT {
                prop_assert!(ph.gas[e] >= 0.0 && ph.ice[e] >= 0.0 && ph.refractory[e] >= 0.0);
                let total = ph.gas[e] + ph.ice[e] + ph.refractory[e];
                let rel = ((total - stellar[e]) / stellar[e]).abs();
                prop_assert!(
                    rel <= 1e-12,
                    "element {} at sample {k}: relative error {rel:e}",
                    Element::ALL[e].symbol()
                );
            }
        }
        Ok(())
    });
}

/// The same disk with the star's luminosity times `factor` at the same stellar radius
/// (T* scaled by factor^1/4), so only the irradiation changes.
fn brighter(p: &ModelParameters, factor: f64) -> ModelParameters {
    let mut q = p.clone();
    q.star.luminosity_lsun *= factor;
    q.star.effective_temperature_k *= factor.powf(0.25);
    q
}

/// The same disk accreting `factor` times faster (1e-9 Msun/yr if it did not accrete).
fn faster_accretion(p: &ModelParameters, factor: f64) -> ModelParameters {
    let mut q = p.clone();
    q.disk.accretion_rate_msun_per_yr = if p.disk.accretion_rate_msun_per_yr > 0.0 {
        p.disk.accretion_rate_msun_per_yr * factor
    } else {
        1e-9
    };
    q
}

/// The water snowline [cm] if the midplane is gas at the inner edge and freezes further out:
/// the first crossing, a freeze-out.
fn water_line_cm(m: &Model) -> Option<f64> {
    let lines = m.snowlines(Species::H2O);
    lines
        .first()
        .filter(|s| s.direction == CrossingDirection::FreezeOut)
        .map(|s| s.radius_cm)
}

#[test]
fn more_heating_never_cools_the_midplane_and_moves_the_water_line_out() {
    // More luminosity (at a fixed stellar radius, so the viscous boundary term is unchanged) or a higher
    // accretion rate adds heat: T_mid^4 = T_irr^4 + T_acc^4 + T_bg^4 with every term non-decreasing
    // (docs/model.md section 4), so the midplane is nowhere cooler (tolerance 1e-12 relative, rounding).
    // At the midplane the ice fraction then falls (hotter, thinner gas; the same column above), so the
    // water snowline, where the inner edge is gas, moves outward (tolerance 1e-9 relative, rounding of
    // the interpolation).
    // Disks with the self-consistent grazing angle are left out on purpose: there phi = 0.4 R*/r +
    // r d(h/r)/dr, and heating the inner disk more than the outer flattens h/r further out, lowering phi
    // and cooling that region (the disk shadows itself; Chiang & Goldreich 1997). A seeded case did
    // exactly that (accretion 0 -> 1e-9 Msun/yr cooled a cell by 1.4e-4), which is physics, not a bug.
    let tally = run_properties("heating", |p, m, tally| {
        if p.disk.self_consistent_flaring {
            tally.count("self-consistent flaring, not compared");
            return Ok(());
        }
        tally.count("fixed-angle disks compared");
        for (label, q) in [
            ("luminosity x2", brighter(p, 2.0)),
            ("accretion x3", faster_accretion(p, 3.0)),
        ] {
            let hot = match Model::run(&q) {
                Ok(h) => h,
                Err(e) => {
                    prop_assert!(
                        matches!(e, PhysicsError::FlaringNotConverged { .. }),
                        "{label}: {e}"
                    );
                    tally.count("perturbed run refused");
                    continue;
                }
            };
            let tol = 1e-12;
            for j in 0..m.structure().radial_cells() {
                let (t0, t1) = (
                    m.structure().midplane_temperature_k()[j],
                    hot.structure().midplane_temperature_k()[j],
                );
                prop_assert!(
                    t1 >= t0 * (1.0 - tol),
                    "{label}: T_mid fell from {t0} to {t1} K at cell {j}"
                );
            }
            if let (Some(r0), Some(r1)) = (water_line_cm(m), water_line_cm(&hot)) {
                prop_assert!(
                    r1 >= r0 * (1.0 - 1e-9),
                    "{label}: water line moved in from {} to {} au",
                    r0 / AU_CM,
                    r1 / AU_CM
                );
                tally.count("water-line comparisons");
            }
        }
        Ok(())
    });
    let compared = tally
        .counters
        .get("fixed-angle disks compared")
        .copied()
        .unwrap_or(0);
    assert!(
        compared * 3 >= tally.ran * 2,
        "too few fixed-angle disks: {tally:?}"
    );
    assert!(
        tally
            .counters
            .get("water-line comparisons")
            .copied()
            .unwrap_or(0)
            >= compared,
        "{tally:?}"
    );
}

#[test]
fn gas_between_co2_and_co_lines_is_carbon_rich_relative_to_the_star() {
    // Oberg, Murray-Clay & Bergin 2011 (docs/check-values.md section 5, V qualitative): between the CO2 and CO snowlines
    // most O is in ice and most C in gas, so the gas C/O exceeds the total (stellar) C/O, where refractory
    // carbon is still solid (below the soot line). Checked at every midplane cell strictly between the
    // innermost CO2 and CO freeze-out lines. Exact inequality.
    let tally = run_properties("gas C/O between CO2 and CO lines", |_, m, tally| {
        let first = |s: Species| {
            m.snowlines(s)
                .into_iter()
                .find(|l| l.direction == CrossingDirection::FreezeOut)
                .map(|l| l.radius_cm)
        };
        let (Some(r_co2), Some(r_co)) = (first(Species::CO2), first(Species::CO)) else {
            tally.count("no CO2 or CO line");
            return Ok(());
        };
        let st = &m.structure();
        let total = m.star_c_to_o();
        let profile = m.midplane_profile();
        for j in 0..st.radial_cells() {
            let r = st.radius_cm()[j];
            if r <= r_co2 || r >= r_co || st.midplane_temperature_k()[j] >= m.carriers().soot_line_k
            {
                continue;
            }
            let gas = profile.c_to_o_gas[j];
            if total < 1.0 {
                prop_assert!(
                    gas.is_some_and(|g| g > total),
                    "gas C/O {gas:?} not above total {total} at {} au",
                    r / AU_CM
                );
                tally.count("cells checked");
            } else {
                tally.count("carbon-rich cells, not compared");
            }
        }
        Ok(())
    });
    assert!(
        tally.counters.get("cells checked").copied().unwrap_or(0) >= tally.ran,
        "{tally:?}"
    );
}

#[test]
fn step_model_snowlines_sit_at_the_condensation_temperature() {
    // docs/model.md section 7: in the step model the snowline is where T_mid = T_cond, ln T interpolated
    // against ln r. Every species present has as many lines as T_mid crosses T_cond, and ln T
    // interpolated linearly in ln r at each line is ln T_cond (tolerance 1e-9, rounding).
    run_properties("step-model lines", |p, m, tally| {
        if p.ices.desorption != DesorptionModel::FixedTemperature {
            return Ok(());
        }
        tally.count("step-model disks");
        let st = &m.structure();
        for s in Species::ALL {
            if !m.composition().is_present(s) {
                continue;
            }
            let t_cond = m.species_properties()[s.index()].condensation_temperature_k;
            let t = &st.midplane_temperature_k();
            let changes = (1..st.radial_cells())
                .filter(|&j| (t[j - 1] < t_cond) != (t[j] < t_cond))
                .count();
            let lines = m.snowlines(s);
            prop_assert_eq!(
                lines.len(),
                changes,
                "{}: lines vs crossings of T_cond",
                s.key()
            );
            for a in &lines {
                // ln T at the line, interpolated between the bracketing cells, is ln T_cond.
                let j = st.radius_cm().partition_point(|&r| r <= a.radius_cm);
                prop_assert!(j > 0 && j < st.radial_cells());
                let (r0, r1) = (st.radius_cm()[j - 1].ln(), st.radius_cm()[j].ln());
                let (t0, t1) = (
                    st.midplane_temperature_k()[j - 1].ln(),
                    st.midplane_temperature_k()[j].ln(),
                );
                let ln_t = t0 + (a.radius_cm.ln() - r0) / (r1 - r0) * (t1 - t0);
                prop_assert!(
                    (ln_t - t_cond.ln()).abs() <= 1e-9,
                    "{}: T at line {} vs {t_cond}",
                    s.key(),
                    ln_t.exp()
                );
            }
        }
        Ok(())
    });
}
