//! The Monte Carlo of docs/model.md section 13 against exact and analytic answers (issue 12):
//! zero widths give the deterministic model bit for bit; the same seed gives the same numbers
//! (a fixed digest, checked natively and, in `cargo xtask test`, as WebAssembly); a log-normal
//! luminosity gives a log-normal snowline radius of half the dex width in the irradiation-only
//! step model (analytic); 1000 and 4000 samples agree within their Monte Carlo error; the
//! marginalised posterior of synthetic planets covers their true formation radius.

use nivalis_physics::params::{DesorptionModel, ModelParameters, Opacity, TemperatureLaw};
use nivalis_physics::planet::{chi_square_map, MapSettings, Observable, ObservedEnvelope};
use nivalis_physics::random::Rng;
use nivalis_physics::uncertainty::{
    one_at_a_time, quantile_sorted, summarise, Draw, Engine, MonteCarlo, PosteriorAccumulator,
    Quantity, SampleResult, PERCENTILES,
};
use nivalis_physics::{Model, Species};

/// A smaller grid than the default, so the tests also run quickly as WebAssembly.
fn small(mut p: ModelParameters) -> ModelParameters {
    p.grid.radial_cells = 60;
    p.grid.vertical_cells = 20;
    p
}

/// Inputs that leave the structure alone (star abundances, carbon carriers, ices), so every
/// sample runs on the base structure.
fn draw_composition(base: &ModelParameters) -> impl Fn(&mut Rng) -> Result<Draw, String> + '_ {
    move |rng: &mut Rng| {
        let mut p = base.clone();
        let c_dex = rng.normal_with(0.0, 0.05);
        let o_dex = rng.normal_with(0.0, 0.05);
        p.star.offset_dex[0] = c_dex;
        p.star.offset_dex[1] = o_dex;
        let c = &base.composition.carbon;
        let f = [c.co, c.co2, c.ch4, c.ch3oh, c.hcn, c.refractory];
        let alpha = f.map(|x| 50.0 * x);
        let mut out = [0.0; 6];
        rng.dirichlet(&alpha, &mut out);
        let k = &mut p.composition.carbon;
        (k.co, k.co2, k.ch4, k.ch3oh, k.hcn, k.refractory) =
            (out[0], out[1], out[2], out[3], out[4], out[5]);
        let sticking = rng.uniform_in(0.8, 1.0);
        p.ices.sticking = sticking;
        Ok(Draw {
            parameters: p,
            inputs: vec![c_dex, o_dex, out[5], sticking],
            redraws: 0,
        })
    }
}

#[test]
fn zero_widths_give_the_deterministic_model_exactly() {
    for p in [small(ModelParameters::defaults()), {
        let mut p = small(ModelParameters::defaults());
        p.ices.desorption = DesorptionModel::FixedTemperature;
        p
    }] {
        let model = Model::run(&p).unwrap();
        let engine = Engine::new(model.clone());
        let draw = |_: &mut Rng| {
            Ok(Draw {
                parameters: p.clone(),
                inputs: vec![],
                redraws: 0,
            })
        };
        let mc = engine.monte_carlo(11, 5, &draw);
        assert_eq!(mc.succeeded, 5);
        let prof = model.midplane_profile();
        let c = 0;
        let o = 1;
        for (j, _) in prof.radius_au.iter().enumerate() {
            let ph = &prof.phases[j];
            let expect = [
                prof.c_to_o_gas[j],
                prof.c_to_o_ice[j],
                prof.c_to_o_solid[j],
                Some(ph.gas[c]),
                Some(ph.ice[c]),
                Some(ph.ice[c] + ph.refractory[c]),
                Some(ph.gas[o]),
                Some(ph.ice[o]),
                Some(ph.ice[o] + ph.refractory[o]),
            ];
            for q in Quantity::ALL {
                for band in &mc.bands[q.index()].percentiles {
                    // Bit for bit: the same Option<f64>.
                    assert_eq!(band[j], expect[q.index()], "{} at cell {j}", q.key());
                }
            }
        }
        for s in Species::ALL {
            let expect = model
                .snowlines(s)
                .iter()
                .find(|l| l.direction == nivalis_physics::CrossingDirection::FreezeOut)
                .map(|l| l.radius_cm / nivalis_physics::units::AU_CM);
            let d = &mc.snowlines[s.index()];
            assert_eq!(d.fraction, if expect.is_some() { 1.0 } else { 0.0 });
            for v in d.percentiles {
                assert_eq!(v, expect, "{}", s.key());
            }
        }
    }
}

#[test]
fn structure_reuse_equals_a_full_run() {
    // A sample that changes only composition and ices runs on the base structure; its whole
    // model equals Model::run of its parameters bit for bit, and so do its midplane values.
    let base = small(ModelParameters::defaults());
    let engine = Engine::new(Model::run(&base).unwrap());
    let draw = draw_composition(&base);
    for i in 0..3 {
        let d = draw(&mut Rng::for_sample(5, i)).unwrap();
        let full = Model::run(&d.parameters).unwrap();
        assert_eq!(engine.model(&d.parameters).unwrap(), full);
        let v = engine.sample(&d.parameters).unwrap();
        let prof = full.midplane_profile();
        for j in 0..prof.radius_au.len() {
            assert_eq!(v.values[j][Quantity::CToOGas.index()], prof.c_to_o_gas[j]);
            assert_eq!(
                v.values[j][Quantity::CToOSolid.index()],
                prof.c_to_o_solid[j]
            );
        }
    }
    // A structural input (the luminosity) takes the full path, with the same result.
    let mut p = base.clone();
    p.star.luminosity_lsun = 1.3;
    let full = Model::run(&p).unwrap();
    assert_eq!(engine.model(&p).unwrap(), full);
}

/// A digest of every bit of a small Monte Carlo: the same in every run and on every platform
/// (the core's tests run as WebAssembly in `cargo xtask test`, so this number is checked there
/// too). If the model's equations change, this number changes: print it with
/// `cargo test -p nivalis-tests --test uncertainty -- --nocapture` and update it.
#[test]
fn same_seed_same_numbers_native_and_wasm() {
    let base = small(ModelParameters::defaults());
    let engine = Engine::new(Model::run(&base).unwrap());
    let comp = draw_composition(&base);
    // One structural input too: the luminosity, log-normal 0.1 dex.
    let draw = |rng: &mut Rng| {
        let mut d = comp(rng)?;
        d.parameters.star.luminosity_lsun = rng.lognormal_dex(1.0, 0.1);
        Ok(d)
    };
    let run = |order: &[u64]| -> Vec<SampleResult> {
        let mut r: Vec<SampleResult> = order
            .iter()
            .map(|&i| engine.run_sample(77, i, &draw))
            .collect();
        r.sort_by_key(|s| s.index);
        r
    };
    let forward = run(&[0, 1, 2, 3, 4, 5, 6, 7]);
    let backward = run(&[7, 6, 5, 4, 3, 2, 1, 0]);
    assert_eq!(forward, backward, "sample order changed the numbers");
    let mc = summarise(engine.radius_au(), 77, &forward);
    let mut h: u64 = 0xcbf2_9ce4_8422_2325; // FNV-1a 64 (Fowler, Noll & Vo)
    let mut feed = |x: Option<f64>| {
        for b in x.map_or(u64::MAX, f64::to_bits).to_le_bytes() {
            h ^= b as u64;
            h = h.wrapping_mul(0x0100_0000_01b3);
        }
    };
    for band in &mc.bands {
        for p in &band.percentiles {
            p.iter().for_each(|&v| feed(v));
        }
    }
    for s in &mc.snowlines {
        s.percentiles.iter().for_each(|&v| feed(v));
    }
    for r in &forward {
        r.inputs.iter().for_each(|&v| feed(Some(v)));
    }
    println!("uncertainty digest {h:016x}");
    assert_eq!(format!("{h:016x}"), "e911634e33df897d");
}

/// Analytic: with the step model (ice below T_cond) and irradiation heating only
/// (T_mid^4 = phi L / (8 pi sigma r^2), no accretion, no background), the water snowline lies at
/// r = sqrt(phi L / (8 pi sigma)) / T_cond^2, so a luminosity log-normal with width s dex gives
/// a snowline log-normal with width s/2 dex about the nominal radius (docs/model.md sections 4
/// and 13). The step model's crossing is interpolated in ln T against ln r, exact for this power
/// law. Each percentile is checked within 4 of its Monte Carlo standard errors,
/// se(x_q) = sqrt(q (1 - q) / N) / pdf(z_q) in units of the distribution's width.
#[test]
fn lognormal_luminosity_gives_lognormal_snowline_of_half_width() {
    let mut base = small(ModelParameters::defaults());
    base.grid.vertical_cells = 4;
    base.ices.desorption = DesorptionModel::FixedTemperature;
    base.disk.accretion_rate_msun_per_yr = 0.0;
    base.disk.background_temperature_k = 0.0;
    base.disk.self_consistent_flaring = false;
    base.disk.opacity = Opacity::Constant {
        rosseland_cm2_per_g: 1.0,
    };
    base.disk.temperature = TemperatureLaw::EnergyBalance;
    let model = Model::run(&base).unwrap();
    let r0 = model.snowlines(Species::H2O)[0].radius_cm / nivalis_physics::units::AU_CM;
    let engine = Engine::new(model);
    let sigma_dex = 0.2;
    let draw = |rng: &mut Rng| {
        let mut p = base.clone();
        p.star.luminosity_lsun = rng.lognormal_dex(1.0, sigma_dex);
        Ok(Draw {
            parameters: p,
            inputs: vec![],
            redraws: 0,
        })
    };
    let n = 1000;
    let mc = engine.monte_carlo(2026, n, &draw);
    assert_eq!(mc.succeeded, n);
    let d = &mc.snowlines[Species::H2O.index()];
    assert_eq!(d.fraction, 1.0);
    // Standard normal quantiles z_q of 0.025, 0.16, 0.5, 0.84, 0.975 (scipy.stats.norm.ppf).
    let z: [f64; 5] = [
        -1.959963984540054,
        -0.994457883209753,
        0.0,
        0.994457883209753,
        1.959963984540054,
    ];
    let width = sigma_dex / 2.0;
    for (i, q) in PERCENTILES.iter().enumerate() {
        let pdf = (-0.5 * z[i] * z[i]).exp() / (2.0 * std::f64::consts::PI).sqrt();
        let se = (q * (1.0 - q) / n as f64).sqrt() / pdf * width;
        let got = d.percentiles[i].unwrap().log10();
        let expect = r0.log10() + width * z[i];
        assert!(
            (got - expect).abs() < 4.0 * se,
            "p{q}: log10 r = {got}, analytic {expect}, se {se}"
        );
    }
    // The width itself: (p84 - p16)/2 in dex against s/2.
    let w = (d.percentiles[3].unwrap().log10() - d.percentiles[1].unwrap().log10()) / 2.0;
    assert!((w - width).abs() < 0.1 * width, "width {w} dex vs {width}");
}

/// The Monte Carlo standard error of the q-quantile of n draws, from the order-statistic
/// approximation se = sqrt(q (1 - q) / n) / f(x_q), with the density f estimated from the
/// reference sample's quantiles at q +- 0.05 (a difference quotient; common practice).
fn quantile_se(reference: &[f64], q: f64, n: usize) -> f64 {
    let dq = 0.05;
    let (a, b) = ((q - dq).max(0.0), (q + dq).min(1.0));
    let spread = quantile_sorted(reference, b).unwrap() - quantile_sorted(reference, a).unwrap();
    (q * (1.0 - q) / n as f64).sqrt() * spread / (b - a)
}

#[test]
fn bands_converge_between_1000_and_4000_samples() {
    let base = small(ModelParameters::defaults());
    let engine = Engine::new(Model::run(&base).unwrap());
    let draw = draw_composition(&base);
    let results: Vec<SampleResult> = (0..5000u64)
        .map(|i| engine.run_sample(3, i, &draw))
        .collect();
    // Two independent sets: samples 0..1000 and 1000..5000.
    let a: MonteCarlo = summarise(engine.radius_au(), 3, &results[..1000]);
    let b: MonteCarlo = summarise(engine.radius_au(), 3, &results[1000..]);
    assert_eq!((a.succeeded, b.succeeded), (1000, 4000));
    let mut checked = 0;
    for q in [Quantity::CToOGas, Quantity::CToOSolid, Quantity::OToHGas] {
        for j in 0..engine.radius_au().len() {
            let mut reference: Vec<f64> = results[1000..]
                .iter()
                .filter_map(|r| r.outcome.as_ref().ok()?.values[j][q.index()])
                .collect();
            reference.sort_by(f64::total_cmp);
            for (i, &pq) in PERCENTILES.iter().enumerate().skip(1).take(3) {
                let (x, y) = (
                    a.bands[q.index()].percentiles[i][j],
                    b.bands[q.index()].percentiles[i][j],
                );
                let (Some(x), Some(y)) = (x, y) else { continue };
                // Both estimates carry error: se of the difference = sqrt(se_1000^2 + se_4000^2).
                let se = (quantile_se(&reference, pq, 1000).powi(2)
                    + quantile_se(&reference, pq, 4000).powi(2))
                .sqrt();
                assert!(
                    (x - y).abs() <= 4.0 * se + 1e-12 * y.abs(),
                    "{} p{pq} at {} au: {x} vs {y}, se {se}",
                    q.key(),
                    engine.radius_au()[j]
                );
                checked += 1;
            }
        }
    }
    assert!(checked > 400, "only {checked} comparisons");
}

#[test]
fn sensitivity_ranks_the_carbon_offset_first_for_inner_gas_c_to_o() {
    // Inside the water snowline (0.3 au here) nearly all oxygen and volatile carbon are gas, so
    // the gas C/O follows the star's C/O: the carbon and oxygen offsets move it most, and the
    // sticking coefficient (which only matters where ice forms) hardly at all.
    let base = small(ModelParameters::defaults());
    let engine = Engine::new(Model::run(&base).unwrap());
    let draw = draw_composition(&base);
    let results: Vec<SampleResult> = (0..400u64)
        .map(|i| engine.run_sample(8, i, &draw))
        .collect();
    let level = |f: &dyn Fn(&mut ModelParameters)| {
        let mut p = base.clone();
        f(&mut p);
        p
    };
    let inputs = vec![
        (
            "star.abundances.offset_dex.C".to_string(),
            vec![
                level(&|p| p.star.offset_dex[0] = -0.05),
                level(&|p| p.star.offset_dex[0] = 0.05),
            ],
        ),
        (
            "star.abundances.offset_dex.O".to_string(),
            vec![
                level(&|p| p.star.offset_dex[1] = -0.05),
                level(&|p| p.star.offset_dex[1] = 0.05),
            ],
        ),
        ("composition.carbon".to_string(), vec![base.clone()]),
        (
            "ices.sticking".to_string(),
            vec![
                level(&|p| p.ices.sticking = 0.83),
                level(&|p| p.ices.sticking = 0.97),
            ],
        ),
    ];
    let s = one_at_a_time(&engine, 0.3, &inputs, Some(&results));
    let c = s[0].swing_gas_c_to_o.unwrap();
    let o = s[1].swing_gas_c_to_o.unwrap();
    let st = s[3].swing_gas_c_to_o.unwrap_or(0.0);
    assert!(
        c > 10.0 * st && o > 10.0 * st,
        "C {c}, O {o}, sticking {st}"
    );
    // C/O = C/O_star 10^(dC - dO): a +-0.05 dex swing of C moves C/O by about
    // C/O (10^0.05 - 10^-0.05) = 0.23 C/O.
    let co = engine
        .sample(&base)
        .unwrap()
        .gas_c_to_o_at(engine.radius_au(), 0.3)
        .unwrap();
    assert!(
        (c / co - (10f64.powf(0.05) - 10f64.powf(-0.05))).abs() < 0.03,
        "{}",
        c / co
    );
    let s1c = s[0].first_order_gas_c_to_o.unwrap();
    let s1st = s[3].first_order_gas_c_to_o.unwrap();
    assert!(
        s1c > 0.2 && s1st < 0.1,
        "first-order indices C {s1c}, sticking {s1st}"
    );
}

#[test]
fn marginalised_posterior_covers_the_true_formation_radius() {
    // Synthetic planets made inside disks drawn from the same prior: each planet's envelope is
    // computed in its own (true) disk at a known radius and solid-to-gas ratio; the posterior
    // marginalised over 150 prior samples must hold the true radius in its 95 % interval.
    let base = small(ModelParameters::defaults());
    let engine = Engine::new(Model::run(&base).unwrap());
    let draw = draw_composition(&base);
    let settings = MapSettings::defaults();
    let truths = [
        (12usize, 8usize, 101u64),
        (25, 20, 102),
        (38, 30, 103),
        (50, 12, 104),
    ];
    for (j0, k0, truth_seed) in truths {
        let true_p = draw(&mut Rng::for_sample(truth_seed, 0))
            .unwrap()
            .parameters;
        let true_model = Model::run(&true_p).unwrap();
        // The model values at the true place: the map's own row (its radial cell centre).
        let probe =
            chi_square_map(&true_model, &ObservedEnvelope::c_to_o(0.5, 0.1), &settings).unwrap();
        let n_q = probe.solid_to_gas.len();
        let row = probe.rows[j0 * n_q + k0];
        let observed = ObservedEnvelope::c_to_o(row.c_to_o.unwrap(), 0.05)
            .with(Observable::CToH, row.c_to_h_dex.unwrap(), 0.1)
            .with(Observable::OToH, row.o_to_h_dex.unwrap(), 0.1);
        let base_map = chi_square_map(engine.base(), &observed, &settings).unwrap();
        let mut acc = PosteriorAccumulator::new(&base_map);
        for i in 0..150u64 {
            let d = draw(&mut Rng::for_sample(55, i)).unwrap();
            let m = engine.model(&d.parameters).unwrap();
            acc.add(&chi_square_map(&m, &observed, &settings).unwrap())
                .unwrap();
        }
        let post = acc.finish();
        let total: f64 = post.probability.iter().sum();
        assert!((total - 1.0).abs() < 1e-9);
        let (lo, hi) = post.radius_interval_95_au.unwrap();
        let r0 = row.radius_au;
        assert!(
            lo <= r0 && r0 <= hi,
            "true radius {r0} au outside the 95 % interval [{lo}, {hi}]"
        );
        let (lo68, hi68) = post.radius_interval_68_au.unwrap();
        assert!(lo <= lo68 && lo68 <= post.radius_median_au.unwrap() && hi68 <= hi);
    }
}
