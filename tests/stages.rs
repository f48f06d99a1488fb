//! The staged core (issue 9 item 1): re-running only the ice balance on a computed structure gives
//! the same bits as a full run; a structure built from a given surface-density profile uses the
//! same column code as the computed one; one radius runs through the same stage functions as the
//! grid. The oracle for the equalities is the full `Model::run` itself (bit for bit, D); the
//! outside checks are named where they are made.

use nivalis_physics::params::{DesorptionModel, InitialIceState, VerticalTemperature};
use nivalis_physics::structure::{Column, DiskStructure};
use nivalis_physics::units::AU_CM;
use nivalis_physics::{BindingEnergySet, Model, ModelParameters, PhysicsError, Species};
use nivalis_tests::assert_rel;
use std::f64::consts::PI;

/// The default disk on a small grid (fast in debug builds).
fn small() -> ModelParameters {
    let mut p = ModelParameters::defaults();
    p.grid.radial_cells = 60;
    p.grid.vertical_cells = 24;
    p
}

fn same_bits(a: &[f64], b: &[f64], what: &str) {
    assert_eq!(a.len(), b.len(), "{what}: lengths");
    for (k, (x, y)) in a.iter().zip(b).enumerate() {
        assert_eq!(x.to_bits(), y.to_bits(), "{what}[{k}]: {x:e} vs {y:e}");
    }
}

fn same_columns(a: &Column, b: &Column, what: &str) {
    same_bits(&a.height_cm, &b.height_cm, &format!("{what} height"));
    same_bits(&a.temperature_k, &b.temperature_k, &format!("{what} T"));
    same_bits(&a.density_g_cm3, &b.density_g_cm3, &format!("{what} rho"));
    same_bits(
        &a.hydrogen_density_cm3,
        &b.hydrogen_density_cm3,
        &format!("{what} n_H"),
    );
    same_bits(
        &a.column_above_g_cm2,
        &b.column_above_g_cm2,
        &format!("{what} column"),
    );
    same_bits(
        &a.visual_extinction_mag,
        &b.visual_extinction_mag,
        &format!("{what} A_V"),
    );
    same_bits(
        &a.fuv_photon_flux_cm2_s,
        &b.fuv_photon_flux_cm2_s,
        &format!("{what} FUV"),
    );
    same_bits(
        &a.ionization_rate_s,
        &b.ionization_rate_s,
        &format!("{what} zeta"),
    );
}

/// Every number a consumer can read from the ice stage and what is derived from it.
fn same_model(a: &Model, b: &Model, what: &str) {
    assert_eq!(a.parameters(), b.parameters(), "{what}: parameters");
    assert_eq!(
        a.species_properties(),
        b.species_properties(),
        "{what}: species"
    );
    for sp in Species::ALL {
        let (x, y) = (a.ices(), b.ices());
        same_bits(
            x.ice_fraction(sp),
            y.ice_fraction(sp),
            &format!("{what} f_ice {sp:?}"),
        );
        same_bits(
            x.equilibrium_ice_fraction(sp),
            y.equilibrium_ice_fraction(sp),
            &format!("{what} f_eq {sp:?}"),
        );
        same_bits(
            x.equilibration_time_s(sp),
            y.equilibration_time_s(sp),
            &format!("{what} t_eq {sp:?}"),
        );
        assert_eq!(
            x.out_of_equilibrium(sp),
            y.out_of_equilibrium(sp),
            "{what} flags {sp:?}"
        );
        assert_eq!(a.snowlines(sp), b.snowlines(sp), "{what} snowlines {sp:?}");
    }
    assert_eq!(
        a.midplane_profile(),
        b.midplane_profile(),
        "{what}: profile"
    );
}

/// The ice edits the page and the coming sweeps make, each away from the default.
fn ice_edits() -> Vec<(&'static str, ModelParameters)> {
    let mut edits = Vec::new();
    let mut p = small();
    p.ices.sticking = 0.9;
    edits.push(("sticking 0.9", p));
    let mut p = small();
    p.ices.desorption = DesorptionModel::FirstOrder;
    edits.push(("first order", p));
    let mut p = small();
    p.ices.desorption = DesorptionModel::FixedTemperature;
    edits.push(("step model", p));
    let mut p = small();
    p.ices.binding_energy_set = BindingEnergySet::OnWaterIce;
    edits.push(("on water ice", p));
    let mut p = small();
    p.ices.photodesorption = false;
    p.ices.cosmic_ray_desorption = false;
    edits.push(("thermal only", p));
    let mut p = small();
    p.ices.initial_state = InitialIceState::Gas;
    edits.push(("from the gas", p));
    edits
}

#[test]
fn ice_only_rerun_equals_a_full_run_bit_for_bit() {
    let base = Model::run(&small()).unwrap();
    let mut reused = base.clone();
    for (what, p) in ice_edits() {
        let full = Model::run(&p).unwrap();
        same_model(&base.with_ices(&p.ices), &full, what);
        // In place, one edit after another on the same buffers.
        reused.set_ices(&p.ices);
        same_model(&reused, &full, &format!("{what} (in place)"));
        // The edit changes the answer (it is not the base model again).
        assert!(
            Species::ALL
                .iter()
                .any(|&sp| full.ices().ice_fraction(sp) != base.ices().ice_fraction(sp)),
            "{what}: no ice fraction moved"
        );
    }
    // And back to the start.
    reused.set_ices(&small().ices);
    same_model(&reused, &base, "back to the default ices");
}

#[test]
fn given_profile_equal_to_the_computed_one_reproduces_the_structure() {
    for self_consistent in [false, true] {
        let mut p = small();
        p.disk.self_consistent_flaring = self_consistent;
        let computed = DiskStructure::compute(&p).unwrap();
        let given = DiskStructure::from_surface_density(
            &p,
            computed.radius_cm(),
            computed.surface_density_g_cm2(),
        )
        .unwrap();
        let what = format!("self-consistent flaring {self_consistent}");
        same_bits(
            given.midplane_temperature_k(),
            computed.midplane_temperature_k(),
            &format!("{what}: T_mid"),
        );
        same_bits(
            given.flaring_angle(),
            computed.flaring_angle(),
            &format!("{what}: phi"),
        );
        same_columns(given.samples(), computed.samples(), &what);
        assert_eq!(
            given.early_soot_line_radius_cm(),
            computed.early_soot_line_radius_cm()
        );
        // The whole model on it.
        same_model(
            &Model::run_on(given, &p).unwrap(),
            &Model::run(&p).unwrap(),
            &what,
        );
    }
}

#[test]
fn given_profile_sets_the_midplane_density() {
    // A profile of another shape: Hayashi 1981's minimum-mass nebula, Sigma = 1700 (r/au)^-3/2 g cm^-2
    // (Hayashi 1981, Prog. Theor. Phys. Suppl. 70, 35). With isothermal columns the thin-disk
    // hydrostatic solution is Gaussian, rho_0 = Sigma / (sqrt(2 pi) H) (Pringle 1981, ARA&A 19, 137;
    // any disk textbook). The model's columns keep the full (r^2 + z^2)^(-3/2) gravity and are cut
    // at z_max, so they differ by the H/r correction: 2 % allowed.
    let mut p = small();
    p.disk.vertical_temperature = VerticalTemperature::Isothermal;
    let computed = DiskStructure::compute(&p).unwrap();
    let sigma: Vec<f64> = computed
        .radius_cm()
        .iter()
        .map(|r| 1700.0 * (r / AU_CM).powf(-1.5))
        .collect();
    let st = DiskStructure::from_surface_density(&p, computed.radius_cm(), &sigma).unwrap();
    for j in (0..st.radial_cells()).step_by(7) {
        let rho0 = st.samples().density_g_cm3[st.index(j, 0)];
        let gaussian = sigma[j] / ((2.0 * PI).sqrt() * st.scale_height_cm()[j]);
        assert_rel(
            rho0,
            gaussian,
            0.02,
            &format!("rho_0 at {:.2} au", st.radius_cm()[j] / AU_CM),
        );
        // And a column at an arbitrary radius interpolates the given profile, not the default one.
        assert_rel(
            st.surface_density_at(st.radius_cm()[j]),
            sigma[j],
            1e-12,
            "Sigma at a given radius",
        );
    }
    let r = (st.radius_cm()[10] * st.radius_cm()[11]).sqrt();
    assert_rel(
        st.surface_density_at(r),
        1700.0 * (r / AU_CM).powf(-1.5),
        1e-9,
        "a power law is exact in ln Sigma against ln r",
    );
    let model = Model::run_on(st, &p).unwrap();
    assert!(!model.snowlines(Species::H2O).is_empty());
}

#[test]
fn given_profile_is_validated_with_typed_errors() {
    let p = small();
    let r = [1.0 * AU_CM, 2.0 * AU_CM, 3.0 * AU_CM];
    let cases: [(&[f64], &[f64], &str); 5] = [
        (&r[..1], &[10.0], "radius_cm"),
        (&r, &[10.0, 5.0], "sigma_g_cm2"),
        (&[AU_CM, AU_CM, 3.0 * AU_CM], &[10.0, 5.0, 3.0], "radius_cm"),
        (&r, &[10.0, f64::NAN, 3.0], "sigma_g_cm2"),
        (&r, &[10.0, -1.0, 3.0], "sigma_g_cm2"),
    ];
    for (radii, sigma, field) in cases {
        match DiskStructure::from_surface_density(&p, radii, sigma) {
            Err(PhysicsError::OutOfRange { name, .. }) => assert_eq!(name, field),
            other => panic!("{field}: expected OutOfRange, got {other:?}"),
        }
    }
}

#[test]
fn one_radius_runs_through_the_grid_stages() {
    // At a cell centre, `Model::midplane_at` (one column, `DiskStructure::column_at` + the ice
    // stage's `solve_place`) gives the grid's own numbers bit for bit.
    for p in [small(), {
        let mut q = small();
        q.ices.initial_state = InitialIceState::Gas;
        q.disk.self_consistent_flaring = true;
        q
    }] {
        let model = Model::run(&p).unwrap();
        let st = model.structure();
        for j in [0, 7, 23, 41, st.radial_cells() - 1] {
            let local = model.midplane_at(st.radius_cm()[j] / AU_CM).unwrap();
            let k = st.index(j, 0);
            assert_eq!(
                local.temperature_k.to_bits(),
                st.midplane_temperature_k()[j].to_bits()
            );
            for sp in Species::ALL {
                assert_eq!(
                    local.ice_fraction[sp.index()].to_bits(),
                    model.ice_fraction_at(sp, k).to_bits(),
                    "{sp:?} at cell {j}"
                );
                assert_eq!(
                    local.out_of_equilibrium[sp.index()],
                    model.out_of_equilibrium_at(sp, k)
                );
            }
            assert_eq!(local.phases, model.phases_at(k));
        }
    }
}

#[test]
fn star_c_to_o_is_the_solar_value_by_default() {
    // Asplund et al. 2009 (ARA&A 47, 481) photospheric C/O = 10^(8.43 - 8.69) = 0.55; the default
    // star is solar with no offsets.
    let model = Model::run(&small()).unwrap();
    assert_rel(
        model.star_c_to_o(),
        10f64.powf(8.43 - 8.69),
        1e-12,
        "star C/O",
    );
    assert_eq!(model.star_c_to_o(), model.composition().star_c_to_o());
}

#[test]
fn physics_side_checks_are_typed_errors_with_their_field() {
    assert_eq!(ModelParameters::defaults().check_consistency(), Ok(()));
    // A carbon-rich star: C/O = 10^(8.43 + 0.5 - 8.69) = 1.74 (Asplund et al. 2009 solar values
    // + 0.5 dex) leaves no oxygen for water (docs/model.md section 8).
    let mut p = ModelParameters::defaults();
    p.star.offset_dex[0] = 0.5;
    let e = p.check_consistency().unwrap_err();
    assert_eq!(e.path(), Some("composition"));
    assert!(e.detail().starts_with("oxygen runs out"), "{e}");
    assert_eq!(e.to_string(), format!("composition: {}", e.detail()));
    // An inner edge inside the star: R* = sqrt(L / (4 pi sigma T^4)) = 0.0093 au for 4 Lsun, 5772 K
    // (Stefan-Boltzmann: the Sun's 0.00465 au times sqrt(4) for L = 4 Lsun at the same T; D).
    let mut p = ModelParameters::defaults();
    p.star.luminosity_lsun = 4.0;
    p.star.effective_temperature_k = 5772.0;
    p.disk.inner_radius_au = 0.009;
    let e = p.check_consistency().unwrap_err();
    assert_eq!(e.path(), Some("disk.inner_radius_au"));
    assert_eq!(Model::run(&p).unwrap_err(), e);
}

#[test]
fn anchor_probe_equals_the_full_run_for_aged_ices() {
    // The anchor's midplane-only probe runs the ice stage's own function, so its first freeze-out
    // snowline equals the full model's bit for bit, also where the ice has not reached equilibrium
    // at the disk's age (a 1 yr old disk starting from the gas, grown grains without photodesorption).
    use nivalis_physics::anchor::{first_freeze_out_snowline, SnowlinePosition};
    use nivalis_physics::CrossingDirection;
    let mut young = small();
    young.ices.initial_state = InitialIceState::Gas;
    young.disk.age_myr = 1e-6;
    let mut grown = small();
    grown.disk.grain_radius_um = 100.0;
    grown.ices.photodesorption = false;
    let mut moved = 0;
    for (what, p) in [("default", small()), ("young", young), ("grown", grown)] {
        let full = Model::run(&p).unwrap();
        let mut eq = p.clone();
        eq.ices.initial_state = InitialIceState::Equilibrium;
        let equilibrium = Model::run(&eq).unwrap();
        for sp in [Species::H2O, Species::CO2, Species::CO, Species::N2] {
            let first = |m: &Model| {
                m.snowlines(sp)
                    .into_iter()
                    .find(|s| s.direction == CrossingDirection::FreezeOut)
                    .map(|s| s.radius_cm / AU_CM)
            };
            let expected = first(&full);
            match first_freeze_out_snowline(&p, sp).unwrap() {
                SnowlinePosition::Radius(r) => {
                    assert_eq!(
                        Some(r.to_bits()),
                        expected.map(f64::to_bits),
                        "{what} {sp:?}"
                    )
                }
                other => assert_eq!(expected, None, "{what} {sp:?}: probe says {other:?}"),
            }
            if first(&equilibrium) != expected {
                moved += 1;
            }
        }
    }
    // The aged ice moves at least one of these snowlines away from the equilibrium one (so the
    // equality above would fail for a probe that used the equilibrium).
    assert!(moved > 0, "no snowline depends on the ice's age here");
}

#[test]
fn composition_only_rerun_equals_a_full_run_bit_for_bit() {
    use nivalis_physics::params::SootLine;
    let base = Model::run(&small()).unwrap();
    let mut edits = Vec::new();
    let mut p = small();
    p.composition.carbon.co = 0.20;
    p.composition.carbon.co2 = 0.20;
    edits.push(("CO to CO2", p));
    let mut p = small();
    p.composition.soot_line = SootLine::Reversible;
    edits.push(("reversible soot line", p));
    let mut p = small();
    p.composition.soot_line_k = 400.0;
    edits.push(("soot line at 400 K", p));
    let mut p = small();
    p.composition.oxygen_per_silicon = 3.0;
    p.composition.sulfur.h2s = 0.3;
    p.composition.sulfur.refractory = 0.7;
    edits.push(("silicates and sulfur", p));
    let mut reused = base.clone();
    for (what, p) in edits {
        let full = Model::run(&p).unwrap();
        let edited = base.with_composition(&p.composition).unwrap();
        same_model(&edited, &full, what);
        assert_eq!(
            edited.structure().early_soot_line_radius_cm(),
            full.structure().early_soot_line_radius_cm(),
            "{what}: early soot line"
        );
        assert_eq!(edited.carriers(), full.carriers(), "{what}: carriers");
        reused.set_composition(&p.composition).unwrap();
        same_model(&reused, &full, &format!("{what} (in place)"));
        assert_ne!(full.midplane_profile(), base.midplane_profile(), "{what}");
    }
    // A composition the star cannot fill is an error and leaves the model as it was.
    let before = reused.clone();
    let mut bad = reused.parameters().composition.clone();
    bad.carbon.co = 0.80;
    bad.carbon.refractory = 0.0;
    bad.oxygen_per_silicon = 10.0;
    assert!(reused.set_composition(&bad).is_err());
    assert_eq!(reused.parameters(), before.parameters());
    assert_eq!(reused.carriers(), before.carriers());
    assert_eq!(
        reused.structure().early_soot_line_radius_cm(),
        before.structure().early_soot_line_radius_cm()
    );
}

#[test]
fn run_into_existing_buffers_equals_a_fresh_run_bit_for_bit() {
    // The page's structure edit path (`Model::run_into`, `rerun`'s full branch): one edit
    // after another into the same model, each compared with a fresh `Model::run`, including
    // grids that grow and shrink and vertical laws that take the scalar paths.
    let mut edits = Vec::new();
    let mut p = small();
    p.disk.gas_mass_msun *= 1.01;
    edits.push(("heavier disk", p));
    let mut p = small();
    p.star.luminosity_lsun = 3.0;
    edits.push(("brighter star", p));
    let mut p = small();
    p.grid.radial_cells = 90;
    p.grid.vertical_cells = 31;
    edits.push(("larger grid", p));
    let mut p = small();
    p.grid.radial_cells = 7;
    p.grid.vertical_cells = 3;
    edits.push(("smaller grid", p));
    let mut p = small();
    p.disk.self_consistent_flaring = true;
    edits.push(("self-consistent flaring", p));
    let mut p = small();
    p.disk.vertical_temperature = VerticalTemperature::Isothermal;
    edits.push(("isothermal", p));
    let mut p = small();
    p.disk.vertical_temperature = VerticalTemperature::TwoLayer {
        superheating: 1.5,
        transition_scale_heights: 3.0,
        delta: 1.25,
    };
    edits.push(("non-integer delta", p));
    let mut p = small();
    p.disk.vertical_temperature = VerticalTemperature::TwoLayer {
        superheating: 1.5,
        transition_scale_heights: 12.0,
        delta: 3.0,
    };
    edits.push(("transition above the grid", p));
    let mut p = small();
    p.ices.desorption = DesorptionModel::FirstOrder;
    p.disk.age_myr = 0.01;
    edits.push(("first order, young", p));
    edits.push(("back to the start", small()));
    let mut model = Model::run(&small()).unwrap();
    for (what, p) in edits {
        let fresh = Model::run(&p).unwrap();
        model.run_into(&p).unwrap();
        same_model(&model, &fresh, what);
        same_columns(
            model.structure().samples(),
            fresh.structure().samples(),
            what,
        );
        same_bits(
            model.structure().scale_height_cm(),
            fresh.structure().scale_height_cm(),
            &format!("{what} H"),
        );
        same_bits(
            model.structure().flaring_angle(),
            fresh.structure().flaring_angle(),
            &format!("{what} phi"),
        );
        assert_eq!(
            model.structure().early_soot_line_radius_cm(),
            fresh.structure().early_soot_line_radius_cm(),
            "{what}: early soot line"
        );
    }
    // Errors before and after the structure leave the model as it was: an inner edge inside
    // the star (the structure's constants) and a composition the star cannot fill.
    let before = model.clone();
    let mut bad = model.parameters().clone();
    bad.disk.inner_radius_au = 1e-4;
    assert!(Model::run(&bad).is_err());
    assert!(model.run_into(&bad).is_err());
    let mut bad = model.parameters().clone();
    bad.composition.carbon.co = 0.80;
    bad.composition.carbon.refractory = 0.0;
    bad.composition.oxygen_per_silicon = 10.0;
    assert!(Model::run(&bad).is_err());
    assert!(model.run_into(&bad).is_err());
    same_model(&model, &before, "after the errors");
    same_columns(
        model.structure().samples(),
        before.structure().samples(),
        "after the errors",
    );
}

#[test]
fn run_into_a_model_of_a_given_profile_equals_a_fresh_run() {
    // A model on a given surface-density profile (here half the computed one) cannot be
    // rebuilt from its parameters; `run_into` gives the fresh run's numbers all the same.
    let p = small();
    let computed = DiskStructure::compute(&p).unwrap();
    let halved: Vec<f64> = computed
        .surface_density_g_cm2()
        .iter()
        .map(|s| 0.5 * s)
        .collect();
    let given = DiskStructure::from_surface_density(&p, computed.radius_cm(), &halved).unwrap();
    let mut model = Model::run_on(given, &p).unwrap();
    let mut edited = small();
    edited.star.luminosity_lsun = 2.0;
    let fresh = Model::run(&edited).unwrap();
    model.run_into(&edited).unwrap();
    same_model(&model, &fresh, "given profile, then run_into");
    same_columns(
        model.structure().samples(),
        fresh.structure().samples(),
        "given profile, then run_into",
    );
}
