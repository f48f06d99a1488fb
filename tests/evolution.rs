//! The evolving disk (issue 13; docs/model.md section 12) against analytic solutions and
//! published results: the viscous gas against the similarity solution of Lynden-Bell & Pringle
//! 1974 (Hartmann et al. 1998 form), element conservation, the static model as the limit with no
//! drift and no diffusion, the vapour enrichment inside snowlines (qualitative, Öberg & Bergin
//! 2016; Booth et al. 2017), the pile-up of vapour inside the water snowline against the
//! estimate of Schoonenberg & Ormel 2017, and the pile-up of ice just outside it against the
//! flux-balance estimate of docs/model.md section 12.8 (their regime).
//! Run with `cargo test -p nivalis-tests --test evolution`.

use nivalis_physics::evolution::star_track::StarTrack;
use nivalis_physics::evolution::viscous::{alpha_viscosity_cm2_s, SimilaritySolution};
use nivalis_physics::evolution::{evolve, ratios_of, EvolutionParameters, EvolutionRun};
use nivalis_physics::params::{GasMassMeaning, InitialIceState, SootLine, TemperatureLaw};
use nivalis_physics::species::SpeciesTable;
use nivalis_physics::structure::{surface_density_normalisation_g_cm2, DiskStructure};
use nivalis_physics::units::{
    AU_CM, HYDROGEN_MASS_G, JULIAN_YEAR_S, MASS_PER_HYDROGEN_NUCLEUS_AMU_H, MSUN_PER_YR_TO_G_PER_S,
    SOLAR_MASS_G,
};

use nivalis_physics::{Model, ModelParameters, Species};

const MYR_S: f64 = 1.0e6 * JULIAN_YEAR_S;

/// A disk with nu ∝ r exactly: T = 280 K (r/au)^-1/2 (the observed law, floored at 5 K, which no
/// radius here reaches), gamma = 1, the profile's total mass given.
fn similarity_disk() -> (ModelParameters, EvolutionParameters) {
    let mut p = ModelParameters::defaults();
    p.disk.temperature = TemperatureLaw::PowerLaw {
        midplane_1au_k: 280.0,
        midplane_index: 0.5,
        atmosphere: None,
    };
    p.disk.background_temperature_k = 5.0;
    p.disk.surface_density_index = 1.0;
    p.disk.characteristic_radius_au = 40.0;
    p.disk.gas_mass_meaning = GasMassMeaning::ProfileTotal;
    p.disk.gas_mass_msun = 0.05;
    p.disk.inner_radius_au = 0.1;
    p.disk.outer_radius_au = 2000.0;
    p.grid.radial_cells = 300;
    p.grid.vertical_cells = 8;
    let mut e = EvolutionParameters::defaults();
    e.alpha = 3e-3;
    e.start_myr = 0.01;
    e.until_myr = 3.0;
    e.snapshots = 8;
    e.star_track = StarTrack::Fixed;
    (p, e)
}

#[test]
fn gas_follows_the_similarity_solution_within_one_percent() {
    // Lynden-Bell & Pringle 1974; Hartmann et al. 1998 eqs. 33-36: Sigma(r, t) and Mdot(t) of a
    // disk with nu = nu_c (r/R_c), started from the same profile at t0.
    let (p, e) = similarity_disk();
    let run = evolve(&p, &e).unwrap();
    let rc = p.disk.characteristic_radius_au * AU_CM;
    let m_star = p.star.mass_msun * SOLAR_MASS_G;
    let t_rc = 280.0 / (rc / AU_CM).sqrt();
    let lbp = SimilaritySolution {
        sigma_c_g_cm2: surface_density_normalisation_g_cm2(
            p.disk.gas_mass_msun * SOLAR_MASS_G,
            rc,
            1.0,
        ),
        characteristic_radius_cm: rc,
        gamma: 1.0,
        nu_c_cm2_s: alpha_viscosity_cm2_s(e.alpha, t_rc, m_star, rc),
    };
    let ts = lbp.viscous_time_s() / MYR_S;
    assert!(ts > 0.05 && ts < 1.0, "viscous time {ts} Myr");
    let mut checked = 0;
    for s in &run.snapshots[1..] {
        let tau = (s.time_myr - e.start_myr) * MYR_S;
        let mut worst: f64 = 0.0;
        for (j, &r) in run.radius_cm.iter().enumerate() {
            if r < 1.0 * AU_CM || r > 3.0 * rc {
                continue;
            }
            let exact = lbp.surface_density_g_cm2(r, tau);
            worst = worst.max((s.surface_density_g_cm2[j] / exact - 1.0).abs());
        }
        assert!(
            worst < 0.01,
            "t = {} Myr: worst Sigma error {worst}",
            s.time_myr
        );
        let mdot = s.accretion_rate_msun_per_yr * MSUN_PER_YR_TO_G_PER_S;
        let exact = lbp.accretion_rate_g_s(p.disk.inner_radius_au * AU_CM, tau);
        assert!(
            (mdot / exact - 1.0).abs() < 0.01,
            "t = {}: Mdot {mdot:e} vs {exact:e}",
            s.time_myr
        );
        checked += 1;
    }
    assert_eq!(checked, 7);
}

/// The default disk on a coarser grid (the tests run unoptimised).
fn small_disk() -> ModelParameters {
    let mut p = ModelParameters::defaults();
    p.grid.radial_cells = 100;
    p.grid.vertical_cells = 20;
    p
}

fn short_run() -> EvolutionParameters {
    let mut e = EvolutionParameters::defaults();
    e.until_myr = 2.0;
    e.snapshots = 8;
    e
}

#[test]
fn every_element_is_conserved_to_1e_10() {
    // Issue 13 item 5: M_end + M_out = M_start for every element, M_out what left through the
    // edges (common practice for conservative schemes; the tolerance is the issue's).
    for drift in [true, false] {
        let mut e = short_run();
        e.dust.drift = drift;
        e.co_processing = Some(nivalis_physics::evolution::CoProcessing {
            timescale_myr: 0.5,
            max_temperature_k: 30.0,
        });
        let run = evolve(&small_disk(), &e).unwrap();
        println!(
            "drift {drift}: {:?}, gas {:e}",
            run.conservation_relative_error, run.gas_conservation_relative_error
        );
        for (k, err) in run.conservation_relative_error.iter().enumerate() {
            assert!(*err < 1e-10, "drift {drift}: element {k}: {err:e}");
        }
        assert!(run.gas_conservation_relative_error < 1e-10);
        // Something did leave (the test is not vacuous): the gas mass fell.
        let first = &run.snapshots[0];
        let last = run.snapshots.last().unwrap();
        let mass = |s: &nivalis_physics::evolution::Snapshot| -> f64 {
            s.surface_density_g_cm2
                .iter()
                .zip(&run.radius_cm)
                .map(|(x, r)| x * r)
                .sum()
        };
        assert!(mass(last) < 0.9 * mass(first));
    }
}

/// The static model at a snapshot's age: the same Sigma, star and accretion rate.
fn static_at(run: &EvolutionRun, k: usize, initial: InitialIceState) -> Model {
    let s = &run.snapshots[k];
    let mut q = s.parameters.clone();
    q.ices.initial_state = initial;
    let st =
        DiskStructure::from_surface_density(&q, &run.radius_cm, &s.surface_density_g_cm2).unwrap();
    Model::run_on(st, &q).unwrap()
}

#[test]
fn with_no_drift_and_no_diffusion_the_evolved_disk_is_the_static_model_at_each_age() {
    // Issue 13 item 5. With the dust moving with the gas and no diffusion, every species' total per
    // H stays the star's, and the phases are the static model's for the evolved Sigma, L(t) and
    // Mdot(t). Step model (instant equilibrium): equal to rounding everywhere. Reversible soot line,
    // whose static form has no history.
    let mut p = small_disk();
    p.composition.soot_line = SootLine::Reversible;
    p.ices.desorption = nivalis_physics::params::DesorptionModel::FixedTemperature;
    let mut e = short_run();
    e.dust.drift = false;
    e.diffusion = false;
    let run = evolve(&p, &e).unwrap();
    for k in 0..run.snapshots.len() {
        let s = &run.snapshots[k];
        let model = static_at(&run, k, InitialIceState::Equilibrium);
        let prof = model.midplane_profile();
        for j in 0..run.radius_cm.len() {
            for (i, sp) in Species::ALL.iter().enumerate() {
                let x = model.carriers().species_per_h[i];
                assert!(
                    (s.species_per_h[j][i] - x).abs() <= 1e-12 * x,
                    "{} {j}",
                    sp.key()
                );
            }
            for el in 0..7 {
                for (a, b) in [
                    (s.phases[j].gas[el], prof.phases[j].gas[el]),
                    (s.phases[j].ice[el], prof.phases[j].ice[el]),
                    (s.phases[j].refractory[el], prof.phases[j].refractory[el]),
                ] {
                    assert!(
                        (a - b).abs() <= 1e-12 * run.stellar_per_h[el],
                        "t {} j {j} el {el}: {a:e} {b:e}",
                        s.time_myr
                    );
                }
            }
        }
    }
    // The kinetic ice balance: where the static equilibration time is below 1e-7 of the age the
    // rates have kept up with the changing disk, and the evolved ice fractions equal the static
    // equilibrium (the lag is tau df/dt, of order (tau/t) |df/dln t| <= 1e-7; the implicit step
    // of section 12.4 has the same lag, to first order in dt).
    let mut p = small_disk();
    p.composition.soot_line = SootLine::Reversible;
    let run = evolve(&p, &e).unwrap();
    let mut compared = 0;
    for k in 1..run.snapshots.len() {
        let s = &run.snapshots[k];
        let model = static_at(&run, k, InitialIceState::Equilibrium);
        let age_s = s.time_myr * MYR_S;
        for j in 0..run.radius_cm.len() {
            let kk = model.structure().index(j, 0);
            for sp in Species::ALL {
                let tau = model.equilibration_time_s_at(sp, kk);
                if tau < 1e-7 * age_s {
                    let a = s.ice_fraction[j][sp.index()];
                    let b = model.ice_fraction_at(sp, kk);
                    assert!(
                        (a - b).abs() < 1e-6,
                        "t {} r {} {}: {a} vs {b} (tau/t {:e})",
                        s.time_myr,
                        run.radius_cm[j] / AU_CM,
                        sp.key(),
                        tau / age_s
                    );
                    compared += 1;
                }
            }
        }
    }
    println!("compared {compared}");
    assert!(compared > 1000, "{compared}");
}

#[test]
fn drift_enriches_the_gas_inside_the_snowlines() {
    // Qualitative (Öberg & Bergin 2016; Booth et al. 2017): icy pebbles drifting through the water
    // snowline raise the water vapour inside it, so the gas there gains oxygen and its C/O falls
    // below the static value; inside the CO snowline the gas carries more carbon than the star
    // at early times. "Early" is before 0.3 Myr for this small disk (R_c = 50 au, 0.01 Msun):
    // by 0.5-1 Myr its pebbles have drained and the inner gas is poorer in water than the static
    // disk, the later phase Booth et al. 2017 also find.
    let p = small_disk();
    let run = evolve(&p, &short_run()).unwrap();
    let stat = Model::run(&p).unwrap();
    let water = Species::H2O.index();
    let mut water_checked = false;
    let mut carbon_rich = false;
    for s in run
        .snapshots
        .iter()
        .filter(|s| s.time_myr > 0.05 && s.time_myr < 0.3)
    {
        let r_w = s.snowline_cm[water].unwrap();
        let r_co = s.snowline_cm[Species::CO.index()].unwrap();
        let inside: Vec<usize> = (0..run.radius_cm.len())
            .filter(|&j| run.radius_cm[j] < 0.7 * r_w && s.midplane_temperature_k[j] < 400.0)
            .collect();
        assert!(!inside.is_empty());
        let static_prof = static_at(
            &run,
            run.snapshots
                .iter()
                .position(|x| x.time_myr == s.time_myr)
                .unwrap(),
            InitialIceState::Equilibrium,
        )
        .midplane_profile();
        for &j in &inside {
            let x_static = stat.carriers().species_per_h[water];
            let x_vap = s.species_per_h[j][water] * (1.0 - s.ice_fraction[j][water]);
            assert!(
                x_vap > x_static,
                "t {} r {}: water vapour {x_vap:e} vs {x_static:e}",
                s.time_myr,
                run.radius_cm[j] / AU_CM
            );
            let co = ratios_of(&run.stellar_per_h, &s.phases[j])
                .c_to_o_gas
                .unwrap();
            let co_static = static_prof.c_to_o_gas[j].unwrap();
            assert!(
                co < co_static,
                "t {} r {}: C/O {co} vs static {co_static}",
                s.time_myr,
                run.radius_cm[j] / AU_CM
            );
            water_checked = true;
        }
        for j in 0..run.radius_cm.len() {
            if run.radius_cm[j] > r_w && run.radius_cm[j] < r_co {
                let ch = ratios_of(&run.stellar_per_h, &s.phases[j])
                    .c_to_h_gas_rel_star
                    .unwrap();
                carbon_rich |= ch > 1.0;
            }
        }
    }
    assert!(water_checked);
    assert!(
        carbon_rich,
        "no gas with C/H above the star's inside the CO snowline before 0.3 Myr"
    );
}

#[test]
fn water_vapour_inside_the_snowline_follows_the_pebble_flux() {
    // Where the inner disk is in a steady state, the water crossing the snowline inward (pebble ice
    // plus vapour) is carried on by the gas, so the vapour's mass fraction inside it is the flux
    // ratio (Mdot_ice + Mdot_vap) / Mdot_gas at the snowline (the steady-state estimate of
    // Schoonenberg & Ormel 2017, section 3; Ciesla & Cuzzi 2006; from memory). It applies where the
    // gas crosses the inner disk faster than the pebble flux changes: a large disk (R_c = 200 au,
    // slowly declining pebble flux) with alpha = 1e-2 (a fast inner disk), after 0.5 Myr. In the
    // default disk the pebble flux falls on the inner disk's own time scale and the estimate does
    // not apply. Checked to 10 %.
    let mut p = small_disk();
    p.disk.characteristic_radius_au = 200.0;
    p.disk.gas_mass_msun = 0.1;
    p.disk.outer_radius_au = 1000.0;
    let mut e = short_run();
    e.alpha = 1e-2;
    e.until_myr = 3.0;
    let run = evolve(&p, &e).unwrap();
    let water = Species::H2O;
    let mass_per_h = 18.015 / 1.4 / 1.007_825;
    let mut checked = 0;
    for s in run.snapshots.iter().filter(|s| s.time_myr >= 0.5) {
        let r_w = s.snowline_cm[water.index()].unwrap();
        let face = nivalis_physics::evolution::nearest_face(&run.face_cm, r_w);
        let ratio = (s.pebble_flux_g_s[water.index()].unwrap()
            + s.vapour_flux_g_s[water.index()].unwrap())
            / s.gas_inward_flux_g_s[face];
        for j in 0..run.radius_cm.len() {
            let r = run.radius_cm[j];
            if r > 0.3 * r_w && r < 0.6 * r_w {
                let x = s.species_per_h[j][water.index()]
                    * (1.0 - s.ice_fraction[j][water.index()])
                    * mass_per_h;
                assert!(
                    (x / ratio - 1.0).abs() < 0.1,
                    "t {} r {}: {x:e} vs {ratio:e}",
                    s.time_myr,
                    r / AU_CM
                );
                checked += 1;
            }
        }
    }
    assert!(checked > 3, "{checked}");
}

#[test]
fn the_transported_composition_plugs_into_the_ice_stage() {
    // Composition::with_species_per_h_per_cell: the uniform totals given per cell give the same
    // ice balance bit for bit; the transported totals change the ices where they differ.
    let p = small_disk();
    let mut e = short_run();
    e.until_myr = 0.2;
    e.snapshots = 3;
    let run = evolve(&p, &e).unwrap();
    let k = 2;
    let model = run.static_model_at(k).unwrap();
    let uniform = vec![model.carriers().species_per_h; run.radius_cm.len()];
    let table = nivalis_physics::species::SpeciesTable::built_in();
    let q = &run.snapshots[k].parameters;
    let c = nivalis_physics::Composition::with_species_per_h_per_cell(
        q,
        &table,
        model.structure(),
        &uniform,
    )
    .unwrap();
    let balance = nivalis_physics::balance::BalanceConstants::new(
        q,
        &nivalis_physics::balance::species_properties(q, &table),
    );
    let same = nivalis_physics::IceBalance::solve(model.structure(), &c, &balance);
    assert_eq!(&same, model.ices());
    let (st, comp, ices) = run.ice_balance_at(k).unwrap();
    let w = Species::H2O;
    let mut differs = 0;
    for j in 0..st.radial_cells() {
        assert_eq!(
            comp.species_per_h(w, j),
            run.snapshots[k].species_per_h[j][w.index()]
        );
        if ices.ice_fraction(w)[st.index(j, 0)] != model.ices().ice_fraction(w)[st.index(j, 0)] {
            differs += 1;
        }
    }
    assert!(differs > 0);
    // A row count that does not match the grid is refused with the field named.
    let err = nivalis_physics::Composition::with_species_per_h_per_cell(
        q,
        &table,
        model.structure(),
        &uniform[1..],
    )
    .unwrap_err();
    assert_eq!(err.path(), Some("species_per_h"));
}

#[test]
fn a_planet_in_a_formation_window_takes_the_evolved_gas() {
    // The planet tool on the evolved disk (docs/model.md sections 9 and 12.8): for one cell and
    // one snapshot, an envelope of gas alone has the gas C/O of that place; and gas accreted
    // inside the water snowline early, while the pebbles' water vapour is there, is richer in
    // oxygen than the star (qualitative: Öberg & Bergin 2016; Booth et al. 2017).
    let p = small_disk();
    let run = evolve(&p, &short_run()).unwrap();
    let k = run
        .snapshots
        .iter()
        .position(|s| s.time_myr > 0.09)
        .unwrap();
    let s = &run.snapshots[k];
    let j = run.radius_cm.iter().position(|&r| r > 0.5 * AU_CM).unwrap();
    let r_au = run.radius_cm[j] / AU_CM;
    let phases = run
        .accreted_phases(r_au, r_au, s.time_myr, s.time_myr)
        .unwrap();
    assert_eq!(phases.points, 1);
    let envelope = phases.envelope(1.0, 0.0, 1.0).unwrap();
    let local = ratios_of(&run.stellar_per_h, &s.phases[j])
        .c_to_o_gas
        .unwrap();
    let c_to_o = envelope.c_to_o.unwrap();
    assert!((c_to_o / local - 1.0).abs() < 1e-12, "{c_to_o} vs {local}");
    assert!(envelope.o_to_h_dex().unwrap() > 0.0);
    // A window over ages and radii averages several places; bad windows are refused.
    let window = run.accreted_phases(0.3, 1.0, 0.02, 0.3).unwrap();
    assert!(window.points > 4);
    assert!(run.accreted_phases(0.3, 1.0, 0.5, 0.1).is_err());
    assert!(run.accreted_phases(0.01, 1.0, 0.1, 0.2).is_err());
}

#[test]
fn self_consistency_the_age_radius_fit_recovers_a_planet_made_from_the_evolved_disk() {
    // Self-consistency check, not an outside reference (docs/model.md section 12.9): an envelope
    // built from the evolved disk's own gas and solids at a known (radius, age, solid-to-gas)
    // is fitted over radius x age; the best fit must come back within one radial cell and at the
    // same snapshot, with a chi-square of zero up to rounding and an acceptable fit.
    use nivalis_physics::evolution::fit::chi_square_over_age;
    use nivalis_physics::planet::{MapSettings, Observable, ObservedEnvelope};
    let p = small_disk();
    let run = evolve(&p, &short_run()).unwrap();
    let times = run.times_myr();
    let k = times.iter().position(|&t| t > 0.09).unwrap();
    let j = run.radius_cm.iter().position(|&r| r > 0.5 * AU_CM).unwrap();
    let r_au = run.radius_cm[j] / AU_CM;
    let settings = MapSettings::defaults();
    let ratios = nivalis_physics::planet::solid_to_gas_values(
        settings.ratio_min,
        settings.ratio_max,
        settings.ratio_count,
    );
    let q = ratios[20];
    let envelope = run
        .accreted_phases(r_au, r_au, times[k], times[k])
        .unwrap()
        .envelope(1.0, q, settings.solid_mixing_fraction)
        .unwrap();
    let observed = ObservedEnvelope::c_to_o(envelope.c_to_o.unwrap(), 0.005)
        .with(Observable::CToH, envelope.c_to_h_dex().unwrap(), 0.01)
        .with(Observable::OToH, envelope.o_to_h_dex().unwrap(), 0.01);
    let map = chi_square_over_age(&run, 0.04, 1.0, &observed, &settings).unwrap();
    assert_eq!(map.times_myr.len(), 5, "{:?}", map.times_myr);
    assert_eq!(map.rows.len(), 5 * run.radius_cm.len());
    let best = map.best.unwrap();
    assert_eq!(map.snapshot_index[best.time_index], k, "{best:?}");
    assert!(
        best.radial_cell.abs_diff(j) <= 1,
        "{} vs {j}",
        best.radial_cell
    );
    assert!(best.row.chi2.unwrap() < 1e-6, "{best:?}");
    assert!(map.goodness.acceptable);
    assert_eq!(map.goodness.degrees_of_freedom, 1);
    // The allowed region holds the true place at its age.
    let at_k = &map.allowed[best.time_index];
    assert!(at_k
        .one_sigma
        .iter()
        .any(|i| i.first_cell <= j && j <= i.last_cell));
    // A window with no snapshot is refused with the field named.
    let err = chi_square_over_age(&run, 0.05, 0.06, &observed, &settings).unwrap_err();
    assert_eq!(err.path(), Some("from_myr"));
}

#[test]
fn the_ice_piles_up_outside_the_water_snowline_as_the_flux_balance_says() {
    // docs/model.md section 12.8, "The ice just outside the water snowline": in a steady state
    // the water flux (pebble ice + vapour) is the same through every face near the snowline
    // (continuity), and the vapour that diffuses outward across the line recondenses on the
    // pebbles, so the ice abundance just outside it rises to (D/D_d) times the vapour abundance
    // just inside it (D_gas x_v + D_d x_ice continuous across the narrow condensation front; the
    // recondensation mechanism of Stevenson & Lunine 1988 and Schoonenberg & Ormel 2017, the
    // estimate derived in model.md from flux balance, not taken from their equations). The regime
    // of Schoonenberg & Ormel 2017: alpha = 1e-2 and a slowly changing pebble flux (R_c = 200 au,
    // after 1 Myr), with pebbles that drift faster than the gas (u_f = 30 m/s, St ~ 1e-2), so
    // the ice outside the line without recondensation would be well below the vapour inside.
    let (p, e) = pile_up_disk(200);
    let run = evolve(&p, &e).unwrap();
    let snapshots = pile_up_numbers(&run, 1.0);
    for n in &snapshots {
        // (a) Continuity: the water flux through every face in [r_s/2, 2 r_s] is the flux through
        // the snowline, up to the change of the water held there: |dM/dt| / Mdot ~ (M / Mdot) /
        // t_change with t_change the time over which the supply changes (at least 0.3 of the
        // age in this disk: the supply falls by less than e between snapshots 1.5x apart);
        // tolerance 3 M / (Mdot t), evaluated on the snapshot's own numbers.
        assert!(
            n.tolerance < 0.1,
            "t {}: not steady ({})",
            n.time_myr,
            n.tolerance
        );
        assert!(
            n.continuity < n.tolerance,
            "t {}: water flux off the snowline's by {} (tolerance {})",
            n.time_myr,
            n.continuity,
            n.tolerance
        );
        // (c) It is a pile-up: the peak stands above the ice at 2 r_s, where the pebbles carry
        // the supply alone, by the factor P = (v_d/v_g)(D/D_d) of the estimate (model.md; v_d the
        // pebbles' inward speed, v_g the gas's): above 1 when the pebbles outrun the gas. Required:
        // above 2.5 (seen 3.5 here; 2.9-3.8 over 100-400 cells and step fractions 0.05-0.0005,
        // converged in the step, model.md section 12.11; the split scheme before gave 1.5-1.7).
        assert!(
            n.pile_up > 2.5,
            "t {}: no pile-up ({})",
            n.time_myr,
            n.pile_up
        );
        // (b) The pile-up height: the peak against the vapour abundance per H just inside the
        // condensation front (the outermost cell inside r_s with less than 1 % of its water as
        // ice), times D/D_d = 1 + St^2 (St < 0.03 here: 1 to 1e-3). The advective terms the
        // estimate drops change D x_v + D_d x_ice over the front by about
        // eps = (3/2) Sc (w/r) (v_d/v_g - 1) of itself, w the distance from that cell to the peak
        // and v_d/v_g = P (D_d = D to 1e-3): the peak lies up to eps below the estimate when the
        // pebbles outrun the gas and not above it. Allowed: [1 - eps - 0.05, 1.05] (0.05 for
        // the cell-to-cell steps of the discrete profile, about the vapour's change over one
        // cell inside the front, and St^2; model.md).
        // Known limits (model.md): the model's peak follows D/D_d only in part when D_d is
        // changed alone (halving the dust diffusivity in the code raised it x1.55 where the
        // estimate says x2), so this checks the estimate only at D_d = D to 1e-3, the physical
        // case here. The front is converged in the time step
        // (`the_pile_up_is_converged_in_the_time_step`).
        let eps = 1.5 * e.schmidt_number * n.front_width_over_r * (n.pile_up - 1.0);
        assert!(
            n.height > 1.0 - eps - 0.05 && n.height < 1.05,
            "t {}: ice peak over the vapour inside {} (eps {eps})",
            n.time_myr,
            n.height
        );
        println!(
            "t {:.2} Myr: r_s {:.2} au, ice peak / vapour inside {:.3} (allowed from {:.3}), peak / ice at 2 r_s {:.2}, flux tolerance {:.3}",
            n.time_myr,
            n.snowline_au,
            n.height,
            1.0 - eps - 0.05,
            n.pile_up,
            n.tolerance
        );
    }
    assert!(snapshots.len() >= 3, "{}", snapshots.len());
}

/// The pile-up check's numbers at one snapshot of the water snowline (docs/model.md 12.8).
#[derive(Debug)]
struct PileUp {
    time_myr: f64,
    snowline_au: f64,
    /// The ice peak outside r_s over the ice at 2 r_s.
    pile_up: f64,
    /// The ice peak over the vapour per H just inside the condensation front.
    height: f64,
    /// (r_peak - r_inside) / r_s, the front's width w / r of the eps of the height's bound.
    front_width_over_r: f64,
    /// The largest |flux / flux at the snowline - 1| over the faces in [r_s/2, 2 r_s].
    continuity: f64,
    /// Its tolerance 3 M / (Mdot t), M the water held in [r_s/2, 2 r_s].
    tolerance: f64,
}

/// [`PileUp`] at every snapshot from `from_myr` on.
fn pile_up_numbers(run: &EvolutionRun, from_myr: f64) -> Vec<PileUp> {
    let w = Species::H2O.index();
    let r = &run.radius_cm;
    let grams_per_h = SpeciesTable::built_in().get(Species::H2O).mass_g()
        / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G);
    let mut out = Vec::new();
    for s in run.snapshots.iter().filter(|s| s.time_myr >= from_myr) {
        let r_s = s.snowline_cm[w].unwrap();
        let e_s = nivalis_physics::evolution::nearest_face(&run.face_cm, r_s);
        let supply = s.ice_inward_flux_g_s[e_s][w] + s.vapour_inward_flux_g_s[e_s][w];
        assert!(supply > 0.0);
        let held_g: f64 = (0..r.len())
            .filter(|&j| r[j] > 0.5 * r_s && r[j] < 2.0 * r_s)
            .map(|j| {
                let area =
                    std::f64::consts::PI * (run.face_cm[j + 1].powi(2) - run.face_cm[j].powi(2));
                s.species_per_h[j][w] * s.surface_density_g_cm2[j] * area * grams_per_h
            })
            .sum();
        let continuity = run
            .face_cm
            .iter()
            .enumerate()
            .filter(|(_, f)| **f > 0.5 * r_s && **f < 2.0 * r_s)
            .map(|(e, _)| {
                let total = s.ice_inward_flux_g_s[e][w] + s.vapour_inward_flux_g_s[e][w];
                (total / supply - 1.0).abs()
            })
            .fold(0.0, f64::max);
        let ice = |j: usize| s.species_per_h[j][w] * s.ice_fraction[j][w];
        let outside: Vec<usize> = (0..r.len())
            .filter(|&j| r[j] > r_s && r[j] < 2.0 * r_s)
            .collect();
        let (peak_at, peak) =
            outside
                .iter()
                .map(|&j| (j, ice(j)))
                .fold((0, 0.0), |a, b| if b.1 > a.1 { b } else { a });
        let far = ice(*outside.last().unwrap());
        let inside = (0..r.len())
            .rev()
            .find(|&j| r[j] < r_s && s.ice_fraction[j][w] < 0.01)
            .unwrap();
        let vapour_in = s.species_per_h[inside][w] * (1.0 - s.ice_fraction[inside][w]);
        out.push(PileUp {
            time_myr: s.time_myr,
            snowline_au: r_s / AU_CM,
            pile_up: peak / far,
            height: peak / vapour_in,
            front_width_over_r: (r[peak_at] - r[inside]) / r_s,
            continuity,
            tolerance: 3.0 * held_g / supply / (s.time_myr * MYR_S),
        });
    }
    out
}

/// Measurement, not a check (issue 13): the pile-up numbers against the step fraction and the
/// radial cells of the pile-up run. `NIVALIS_STEPS` and `NIVALIS_CELLS` (comma-separated) choose
/// them. Run with `cargo test --release -p nivalis-tests --test evolution -- --ignored
/// --nocapture measure_`.
#[test]
#[ignore]
fn measure_the_pile_up_against_step_and_cells() {
    let list = |name: &str, default: &str| -> Vec<f64> {
        std::env::var(name)
            .unwrap_or_else(|_| default.to_string())
            .split(',')
            .map(|v| v.trim().parse().unwrap())
            .collect()
    };
    for cells in list("NIVALIS_CELLS", "200") {
        for f in list("NIVALIS_STEPS", "0.05") {
            let (p, mut e) = pile_up_disk(cells as usize);
            e.snapshots = 8;
            e.max_step_fraction = f;
            let run = evolve(&p, &e).unwrap();
            for n in pile_up_numbers(&run, 0.5) {
                println!(
                    "cells {cells} step {f}: t {:.2} pile-up {:.3} height {:.3} continuity {:.3} (tol {:.3}) steps {}",
                    n.time_myr, n.pile_up, n.height, n.continuity, n.tolerance, run.steps
                );
            }
        }
    }
}

/// The pile-up run of `the_ice_piles_up_outside_the_water_snowline_as_the_flux_balance_says`
/// on `cells` radial cells.
fn pile_up_disk(cells: usize) -> (ModelParameters, EvolutionParameters) {
    let mut p = small_disk();
    p.grid.radial_cells = cells;
    p.disk.characteristic_radius_au = 200.0;
    p.disk.gas_mass_msun = 0.1;
    p.disk.outer_radius_au = 1000.0;
    let mut e = short_run();
    e.alpha = 1e-2;
    e.until_myr = 3.0;
    e.dust.fragmentation_velocity_cm_s = 3000.0;
    e.snapshots = 12;
    (p, e)
}

#[test]
fn the_pile_up_is_converged_in_the_time_step() {
    // Issue 13 (docs/model.md sections 12.5, 12.8, 12.11): vapour and ice are carried and
    // exchanged in one implicit step, so the recondensation front is a fixed point of the step
    // and the pile-up check's numbers do not depend on the step. At the default step fraction
    // (0.05) and at a 10x smaller one (0.005), on 100 cells: the pile-up factor within 3 % and
    // the peak over the vapour inside within 2 % (seen under 1.5 % and 1 %; the earlier split
    // scheme gave 1.67 against 2.36, 40 % apart, and 0.86 against 0.78).
    let (p, mut e) = pile_up_disk(100);
    let coarse = pile_up_numbers(&evolve(&p, &e).unwrap(), 1.0);
    e.max_step_fraction = 0.005;
    let fine = pile_up_numbers(&evolve(&p, &e).unwrap(), 1.0);
    assert_eq!(coarse.len(), 3);
    assert_eq!(fine.len(), 3);
    for (c, f) in coarse.iter().zip(&fine) {
        println!(
            "t {:.2} Myr: pile-up {:.3} vs {:.3}, height {:.3} vs {:.3}",
            c.time_myr, c.pile_up, f.pile_up, c.height, f.height
        );
        assert!((c.time_myr - f.time_myr).abs() < 1e-9 * c.time_myr);
        assert!(
            (c.pile_up / f.pile_up - 1.0).abs() < 0.03,
            "t {}: pile-up {} vs {}",
            c.time_myr,
            c.pile_up,
            f.pile_up
        );
        assert!(
            (c.height / f.height - 1.0).abs() < 0.02,
            "t {}: height {} vs {}",
            c.time_myr,
            c.height,
            f.height
        );
        // Continuity holds at both steps.
        assert!(
            c.continuity < c.tolerance && f.continuity < f.tolerance,
            "t {}: {c:?} {f:?}",
            c.time_myr
        );
    }
}
