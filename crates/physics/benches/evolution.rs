//! Criterion benchmark of the evolving disk (docs/model.md section 12), run by `cargo xtask
//! bench` or `cargo bench -p nivalis-physics --bench evolution`.
//!
//! Group `evolution`, id `200x80`: `evolution::evolve` of the default disk (200 radial cells,
//! 80 vertical cells for the midplane conditions of each step) with the default evolution
//! parameters, from 0.01 to 5 Myr (20 snapshots; steps of at most 5 % of the age, about 130
//! steps, each with a structure of 200 x 16 cells for the midplane conditions).
//! Flat sampling, 10 samples (criterion's least): one run takes about a second.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, SamplingMode};
use nivalis_physics::evolution::{evolve, EvolutionParameters};
use nivalis_physics::ModelParameters;

fn evolution_benchmark(c: &mut Criterion) {
    let mut group = c.benchmark_group("evolution");
    group.sampling_mode(SamplingMode::Flat);
    group
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(15));
    let p = ModelParameters::defaults();
    let mut e = EvolutionParameters::defaults();
    e.until_myr = 5.0;
    group.bench_with_input(BenchmarkId::from_parameter("200x80"), &p, |b, p| {
        b.iter(|| {
            let run = evolve(black_box(p), &e).expect("the default disk must evolve");
            black_box(run.steps)
        })
    });
    group.finish();
}

// Written out instead of `criterion_group!`/`criterion_main!` (see benches/model.rs).
fn main() {
    let mut criterion = Criterion::default().configure_from_args();
    evolution_benchmark(&mut criterion);
    criterion.final_summary();
}
