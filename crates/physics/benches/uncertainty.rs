//! Criterion benchmarks of the Monte Carlo over uncertain inputs (docs/model.md section 13,
//! issue 12 item 6) on the default disk and grid (200 x 80), one thread:
//!
//! - `uncertainty/one_run`: one deterministic run as the page and the CLI do it (`Model::run`,
//!   the midplane profile, every species' snowlines), the unit of the ratios;
//! - `uncertainty/ice_only_1000`: 1000 samples whose inputs leave the structure alone (the
//!   star's C and O offsets, the carbon carriers by a Dirichlet, the sticking coefficient), each
//!   on the nominal structure with the midplane-only composition and ice balance, then the bands;
//! - `uncertainty/structural_100`: 100 samples with a log-normal luminosity (0.1 dex), each
//!   computing its own structure, then the bands (1000 such samples take 10x this).
//!
//! After the runs it reads criterion's per-sample records (`target/criterion/uncertainty/<case>/
//! new/sample.json`, per sample `iters` iterations took `times` ns) and prints each case's median
//! and the ratios `ice_only_1000 / one_run` and `10 x structural_100 / one_run` (percentiles as
//! in `cargo xtask bench`: Hyndman & Fan 1996 definition 7). Run with
//! `cargo bench -p nivalis-physics --bench uncertainty`.

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, SamplingMode};
use nivalis_physics::random::Rng;
use nivalis_physics::uncertainty::{quantile_sorted, Draw, Engine};
use nivalis_physics::{Model, ModelParameters, Species};

fn one_run(p: &ModelParameters) -> usize {
    let model = Model::run(p).expect("the default disk must run");
    let profile = model.midplane_profile();
    profile.radius_au.len()
        + Species::ALL
            .iter()
            .map(|&s| model.snowlines(s).len())
            .sum::<usize>()
}

fn composition_draw(base: &ModelParameters, rng: &mut Rng) -> Result<Draw, String> {
    let mut p = base.clone();
    p.star.offset_dex[0] = rng.normal_with(0.0, 0.05);
    p.star.offset_dex[1] = rng.normal_with(0.0, 0.05);
    let c = &base.composition.carbon;
    let alpha = [c.co, c.co2, c.ch4, c.ch3oh, c.hcn, c.refractory].map(|x| 30.0 * x);
    let mut f = [0.0; 6];
    rng.dirichlet(&alpha, &mut f);
    let k = &mut p.composition.carbon;
    (k.co, k.co2, k.ch4, k.ch3oh, k.hcn, k.refractory) = (f[0], f[1], f[2], f[3], f[4], f[5]);
    p.ices.sticking = rng.uniform_in(0.8, 1.0);
    Ok(Draw {
        parameters: p,
        inputs: Vec::new(),
        redraws: 0,
    })
}

fn median_ns(case: &str) -> Option<f64> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../target/criterion/uncertainty")
        .join(case)
        .join("new/sample.json");
    let text = std::fs::read_to_string(path).ok()?;
    // {"sampling_mode":"Flat","iters":[...],"times":[...]}: read the two arrays by hand (no serde here).
    let array = |key: &str| -> Option<Vec<f64>> {
        let start = text.find(&format!("\"{key}\":["))? + key.len() + 4;
        let end = start + text[start..].find(']')?;
        text[start..end]
            .split(',')
            .map(|x| x.trim().parse().ok())
            .collect()
    };
    let (iters, times) = (array("iters")?, array("times")?);
    let mut per: Vec<f64> = times.iter().zip(&iters).map(|(t, i)| t / i).collect();
    per.sort_by(f64::total_cmp);
    quantile_sorted(&per, 0.5)
}

fn main() {
    let mut c = Criterion::default().configure_from_args();
    let base = ModelParameters::defaults();
    let mut group = c.benchmark_group("uncertainty");
    group
        .sampling_mode(SamplingMode::Flat)
        .sample_size(10)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(5));
    group.bench_function("one_run", |b| b.iter(|| one_run(black_box(&base))));
    let engine = Engine::new(Model::run(&base).expect("the default disk must run"));
    let draw = |rng: &mut Rng| composition_draw(&base, rng);
    group.bench_function("ice_only_1000", |b| {
        b.iter(|| {
            let mc = engine.monte_carlo(1, 1000, &draw);
            assert_eq!(mc.succeeded, 1000);
            black_box(mc.bands.len())
        })
    });
    let structural = |rng: &mut Rng| {
        let mut p = base.clone();
        p.star.luminosity_lsun = rng.lognormal_dex(1.0, 0.1);
        Ok(Draw {
            parameters: p,
            inputs: Vec::new(),
            redraws: 0,
        })
    };
    group.measurement_time(Duration::from_secs(10));
    group.bench_function("structural_100", |b| {
        b.iter(|| {
            let mc = engine.monte_carlo(2, 100, &structural);
            assert_eq!(mc.succeeded, 100);
            black_box(mc.bands.len())
        })
    });
    group.finish();
    c.final_summary();
    let one = median_ns("one_run");
    let ice = median_ns("ice_only_1000");
    let st = median_ns("structural_100");
    println!("\nuncertainty medians (one thread, default disk 200 x 80):");
    for (name, v) in [
        ("one_run", one),
        ("ice_only_1000", ice),
        ("structural_100", st),
    ] {
        match v {
            Some(ns) => println!("  {name:<16} {:>12.3} ms", ns / 1e6),
            None => println!("  {name:<16} (no record)"),
        }
    }
    if let (Some(one), Some(ice), Some(st)) = (one, ice, st) {
        println!("  ice_only_1000 / one_run          = {:.2}", ice / one);
        println!(
            "  10 x structural_100 / one_run    = {:.1}  (1000 structural samples)",
            10.0 * st / one
        );
    }
}
