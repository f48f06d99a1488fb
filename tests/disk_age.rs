//! The disk's age in the ice balance (issue 10, item 5; docs/model.md section 7):
//! the closed-form solution of dn/dt = A (N - n) - R(n) against the exact
//! exponential of the linear (first-order) equation, a fine-step RK4
//! integration of the piecewise zeroth-order equation, the equilibrium limit,
//! and the grain-size dependence of equilibration at 300 au.
//! Run with `cargo test -p nivalis-tests --test disk_age`.

use nivalis_physics::balance::{BalanceConstants, RateEquation};
use nivalis_physics::params::InitialIceState;
use nivalis_physics::units::{AU_CM, JULIAN_YEAR_S};
use nivalis_physics::{Model, Species};
use nivalis_tests::small_default;

/// Classical fourth-order Runge-Kutta with `steps` equal steps (the reference integrator).
fn rk4(eq: &RateEquation, n0: f64, t: f64, steps: usize) -> f64 {
    let h = t / steps as f64;
    let mut n = n0;
    for _ in 0..steps {
        let k1 = eq.rate(n);
        let k2 = eq.rate(n + 0.5 * h * k1);
        let k3 = eq.rate(n + 0.5 * h * k2);
        let k4 = eq.rate(n + h * k3);
        n += h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
    }
    n
}

/// Rate equations covering both branches and both crossings (all numbers invented test inputs).
fn cases() -> Vec<(&'static str, RateEquation)> {
    let base = RateEquation {
        adsorption_s: 1e-9,
        desorption_s: 0.0,
        photodesorption_cm3_s: 0.0,
        monolayer_cm3: 1.0,
        molecules_cm3: 100.0,
        zeroth_order: true,
    };
    vec![
        // Equilibrium on the thick branch (n_eq = N - B M / A = 70 > M).
        (
            "thick equilibrium",
            RateEquation {
                desorption_s: 3e-8,
                ..base
            },
        ),
        // Equilibrium on the thin branch (A N/(A + B) = 0.5 < M): inherited ice crosses n = M.
        (
            "thin equilibrium",
            RateEquation {
                desorption_s: 2e-7,
                ..base
            },
        ),
        // With photodesorption, thin equilibrium just below a monolayer.
        (
            "thin with photodesorption",
            RateEquation {
                desorption_s: 5e-8,
                photodesorption_cm3_s: 6e-8,
                ..base
            },
        ),
        // Thick equilibrium barely above M: a gas start crosses n = M late.
        (
            "thick near a monolayer",
            RateEquation {
                desorption_s: 9.8e-8,
                ..base
            },
        ),
    ]
}

#[test]
fn first_order_matches_the_exact_exponential() {
    // The first-order equation dn/dt = A N - (A + B + C/M) n is linear: n(t) = n_eq + (n0 - n_eq) e^{-k t},
    // k = A + B + C/M, n_eq = A N / k (exact; textbook linear ODE). Written out here independently of the
    // implementation and compared at 8 times from both initial states; tolerance 1e-12 of N (rounding).
    for (name, eq) in cases() {
        let eq = RateEquation {
            zeroth_order: false,
            ..eq
        };
        let k = eq.adsorption_s + eq.desorption_s + eq.photodesorption_cm3_s / eq.monolayer_cm3;
        let n_eq = eq.adsorption_s * eq.molecules_cm3 / k;
        for n0 in [0.0, eq.molecules_cm3] {
            for t in [0.0, 1e5, 1e6, 3e6, 1e7, 1e8, 1e9, 1e11] {
                let exact = n_eq + (n0 - n_eq) * (-k * t).exp();
                let ours = eq.evolve(n0, t);
                assert!(
                    (ours - exact).abs() <= 1e-12 * eq.molecules_cm3,
                    "{name}, n0 = {n0}, t = {t:e}: {ours} vs {exact}"
                );
            }
        }
    }
}

#[test]
fn zeroth_order_matches_fine_step_rk4() {
    // The piecewise-linear zeroth-order equation against RK4 with 1e5 steps (the reference; its error
    // at k h <= 1e-2 is < 1e-8 N except for one step's kink at n = M, bounded by h |dn/dt| <= 1e-5 x
    // the total change), at 5 times from both initial states (all ice, all gas). Tolerance 1e-4 of N.
    for (name, eq) in cases() {
        for n0 in [eq.molecules_cm3, 0.0] {
            for t in [1e6, 1e7, 3e7, 1e8, 1e9] {
                let reference = rk4(&eq, n0, t, 100_000);
                let ours = eq.evolve(n0, t);
                println!(
                    "{name}, n0 = {n0}, t = {t:e} s: closed form {ours:.8}, RK4 {reference:.8}"
                );
                assert!(
                    (ours - reference).abs() <= 1e-4 * eq.molecules_cm3,
                    "{name}, n0 = {n0}, t = {t:e}: {ours} vs RK4 {reference}"
                );
            }
        }
    }
}

#[test]
fn long_times_reach_the_closed_form_equilibrium() {
    // The long-time limit of the solution is the closed-form equilibrium (docs/model.md section 7) to 1e-6
    // of N, from both starts, for both desorption orders.
    for (name, eq) in cases() {
        for zeroth_order in [true, false] {
            let eq = RateEquation { zeroth_order, ..eq };
            let (n_eq, t_eq) = eq.equilibrium();
            for n0 in [eq.molecules_cm3, 0.0] {
                let n = eq.evolve(n0, 1e3 * t_eq.max(1.0 / eq.adsorption_s));
                assert!(
                    (n - n_eq).abs() <= 1e-6 * eq.molecules_cm3,
                    "{name} ({zeroth_order}), n0 = {n0}: {n} vs {n_eq}"
                );
            }
        }
    }
}

#[test]
fn old_disk_reproduces_the_equilibrium_model() {
    // With an age far beyond every equilibration time the disk-age model equals the equilibrium solver
    // to 1e-6 in f_ice, from either initial state, in every cell whose equilibration time is below age/100.
    let mut p = small_default();
    p.disk.age_myr = 1e6;
    let eq = Model::run(Model::run(&p).unwrap().parameters()).unwrap();
    let mut checked = 0usize;
    for state in [InitialIceState::Inherited, InitialIceState::Gas] {
        p.ices.initial_state = state;
        let m = Model::run(&p).unwrap();
        let age_s = p.disk.age_myr * 1e6 * JULIAN_YEAR_S;
        for sp in Species::ALL {
            for k in 0..m.sample_count() {
                let f = m.ice_fraction_at(sp, k);
                let t_eq = m.equilibration_time_s_at(sp, k);
                assert_eq!(
                    m.equilibrium_ice_fraction_at(sp, k),
                    eq.equilibrium_ice_fraction_at(sp, k)
                );
                if t_eq < age_s / 100.0 {
                    checked += 1;
                    assert!(
                        (f - m.equilibrium_ice_fraction_at(sp, k)).abs() <= 1e-6,
                        "{state:?} {sp:?} sample {k}: {f} vs {}",
                        m.equilibrium_ice_fraction_at(sp, k)
                    );
                }
            }
        }
    }
    assert!(checked > 1000, "{checked} samples checked");
}

#[test]
fn ice_fractions_stay_in_zero_one() {
    // Property: 0 <= f_ice <= 1 in every sample, for every initial state, ages from 1 yr to 10 Gyr and
    // grains from 0.1 to 100 um.
    for state in InitialIceState::ALL {
        for age_myr in [1e-6, 1e-2, 1.0, 1e4] {
            for grain in [0.1, 100.0] {
                let mut p = small_default();
                p.grid.radial_cells = 60;
                p.ices.initial_state = state;
                p.disk.age_myr = age_myr;
                p.disk.grain_radius_um = grain;
                let m = Model::run(&p).unwrap();
                assert!(
                    Species::ALL.iter().all(|&sp| m
                        .ices()
                        .ice_fraction(sp)
                        .iter()
                        .all(|f| (0.0..=1.0).contains(f))),
                    "{state:?}, {age_myr} Myr, {grain} um"
                );
            }
        }
    }
}

/// Midplane CO freeze-out time 1/A [yr] and flat sample index at the grid cell nearest `radius_au`.
fn co_freeze_out_yr(m: &Model, radius_au: f64) -> (usize, f64) {
    let st = &m.structure();
    let j = st
        .radius_cm()
        .partition_point(|&x| x < radius_au * AU_CM)
        .min(st.radial_cells() - 1);
    let k = st.index(j, 0);
    let s = &st.samples();
    let balance = BalanceConstants::new(m.parameters(), m.species_properties());
    let sample = balance.sample(
        s.temperature_k[k],
        s.density_g_cm3[k],
        s.fuv_photon_flux_cm2_s[k],
        s.ionization_rate_s[k],
    );
    let i = Species::CO.index();
    let eq = balance
        .rate_equation(
            &sample,
            i,
            m.composition().species_per_h(Species::CO, j) * s.hydrogen_density_cm3[k],
        )
        .unwrap();
    (k, 1.0 / eq.adsorption_s / JULIAN_YEAR_S)
}

#[test]
fn grain_growth_slows_co_equilibration() {
    // Issue 10 item 5: at 300 au of the default disk CO freezes out in ~1e4 yr on 0.1 um grains but in
    // ~9 Myr on 100 um grains (1/A grows as the grain radius at fixed dust mass). Our own estimate (D):
    // n_H = 6.7e5 cm^-3, T = 11.3 K there give 1/A = 8.8e3 yr and 8.8e6 yr. Tolerance: a factor 2 (the
    // issue's numbers are estimates; the structure's density moves with the disk model).
    let small = Model::run(&small_default()).unwrap();
    let mut p = small_default();
    p.disk.grain_radius_um = 100.0;
    let big = Model::run(&p).unwrap();
    // The same pair without photodesorption, to see the freeze-out kinetics alone (grown grains let
    // the starlight deeper, since A_V per H falls as (d/g)/a, and photodesorb CO fast in the outer disk).
    let mut q = small_default();
    q.ices.photodesorption = false;
    let small_dark = Model::run(&q).unwrap();
    q.disk.grain_radius_um = 100.0;
    let big_dark = Model::run(&q).unwrap();
    let (_, t_small) = co_freeze_out_yr(&small, 300.0);
    let (_, t_big) = co_freeze_out_yr(&big, 300.0);
    println!("CO at 300 au: freeze-out time {t_small:.3e} yr (0.1 um), {t_big:.3e} yr (100 um)");
    assert!((5e3..2e4).contains(&t_small), "{t_small}");
    assert!((5e6..2e7).contains(&t_big), "{t_big}");
    // Where the midplane CO is partly frozen in equilibrium, 100 um grains (thin-branch times of
    // 1e5-1e6 yr) have not yet lost the inherited ice at 1 Myr: the state differs from the
    // equilibrium and is flagged, while 0.1 um grains have reached it. (Grown grains also let the
    // starlight deeper, since A_V per H falls as (d/g)/a, so the photodesorbed outer disk starts
    // further in than with small grains; the radius is searched for rather than fixed.)
    let st = big_dark.structure();
    let co = Species::CO;
    let slow = (0..st.radial_cells())
        .map(|j| st.index(j, 0))
        .find(|&k| {
            big_dark.out_of_equilibrium_at(co, k)
                && (big_dark.ice_fraction_at(co, k) - big_dark.equilibrium_ice_fraction_at(co, k))
                    .abs()
                    > 0.01
        })
        .expect("some midplane cell keeps inherited CO ice at 1 Myr with 100 um grains");
    println!(
        "100 um, {:.1} au, 1 Myr: f_CO = {:.4}, equilibrium {:.4}, t_eq = {:.3e} yr",
        st.radius_cm()[slow / st.samples_per_column()] / AU_CM,
        big_dark.ice_fraction_at(co, slow),
        big_dark.equilibrium_ice_fraction_at(co, slow),
        big_dark.equilibration_time_s_at(co, slow) / JULIAN_YEAR_S
    );
    assert!(!small_dark.out_of_equilibrium_at(co, slow));
    // 1000x smaller grains relax 1000x faster: at least ten times closer to their equilibrium.
    let gap = |m: &Model, k: usize| {
        (m.ice_fraction_at(co, k) - m.equilibrium_ice_fraction_at(co, k)).abs()
    };
    assert!(gap(&small_dark, slow) <= 0.1 * gap(&big_dark, slow));
    // Everywhere: a sample whose state differs from its equilibrium by more than 0.01 is flagged.
    let mut differing = 0;
    for sp in Species::ALL {
        for k in 0..big.sample_count() {
            let d = (big.ice_fraction_at(sp, k) - big.equilibrium_ice_fraction_at(sp, k)).abs();
            if d > 0.01 {
                differing += 1;
                assert!(
                    big.out_of_equilibrium_at(sp, k),
                    "{sp:?} sample {k} differs by {d} but is not flagged"
                );
            }
        }
    }
    assert!(differing > 0);
}
