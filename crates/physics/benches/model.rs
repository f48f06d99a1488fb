//! Criterion benchmarks of the physics core on the default disk: the disk
//! structure alone (`DiskStructure::compute`) and the full model (`Model::run`
//! followed by the midplane profile and the snowlines of every species), each at
//! the default grid (200 x 80) and at a grid with four times as many samples
//! (400 x 160).
//!
//! Run with `cargo bench -p nivalis-physics` or `cargo xtask bench`, which also
//! prints a table of the medians. The measurement is kept short (20 samples, a
//! few seconds per case) so the whole run fits in about two minutes on two
//! cores; the numbers are for spotting regressions and scaling, not for
//! publication.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, SamplingMode};
use nivalis_physics::structure::DiskStructure;
use nivalis_physics::{Model, ModelParameters, Species};

/// The two grids compared: the default one and one with twice the cells along
/// each axis. The labels become criterion's benchmark ids, which `cargo xtask
/// bench` reads back from `target/criterion/<group>/<label>/new/estimates.json`.
fn grids() -> [(&'static str, usize, usize); 2] {
    [("200x80", 200, 80), ("400x160", 400, 160)]
}

/// The default disk with the given grid.
fn parameters(radial_cells: usize, vertical_cells: usize) -> ModelParameters {
    let mut parameters = ModelParameters::defaults();
    parameters.grid.radial_cells = radial_cells;
    parameters.grid.vertical_cells = vertical_cells;
    parameters
}

/// Everything the page and the CLI compute for one disk: the model itself, its
/// midplane profile (phases and C/O ratios per radius) and every species' snowlines.
/// Returns a small summary so the optimiser cannot drop any of the work.
fn full_model(parameters: &ModelParameters) -> (usize, usize) {
    // The default disk is valid by construction, so a failure here is a bug in
    // the core that the benchmark should surface loudly rather than time.
    let model = Model::run(parameters).expect("the default disk must run");
    let profile = model.midplane_profile();
    let snowline_count: usize = Species::ALL
        .iter()
        .map(|&species| model.snowlines(species).len())
        .sum();
    (profile.radius_au.len(), snowline_count)
}

fn structure_benchmark(c: &mut Criterion) {
    let mut group = c.benchmark_group("structure");
    // Flat sampling, as in the model group, so both report per-sample medians of the same kind.
    group.sampling_mode(SamplingMode::Flat);
    group
        .sample_size(20)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(3));
    for (label, radial, vertical) in grids() {
        let p = parameters(radial, vertical);
        group.bench_with_input(BenchmarkId::from_parameter(label), &p, |b, p| {
            b.iter(|| {
                DiskStructure::compute(black_box(p))
                    .expect("the default disk must have a structure")
            })
        });
    }
    group.finish();
}

fn model_benchmark(c: &mut Criterion) {
    let mut group = c.benchmark_group("model");
    // Flat sampling (the same iteration count in every sample) is criterion's
    // advice for runs of tens of milliseconds; the default linear ramp would
    // need about 10 s for 20 samples of the 4x grid.
    group.sampling_mode(SamplingMode::Flat);
    group
        .sample_size(20)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(5));
    for (label, radial, vertical) in grids() {
        let p = parameters(radial, vertical);
        group.bench_with_input(BenchmarkId::from_parameter(label), &p, |b, p| {
            b.iter(|| full_model(black_box(p)))
        });
    }
    group.finish();
}

// Written out instead of `criterion_group!`/`criterion_main!` because those
// macros generate an undocumented public function, which the workspace's
// `missing_docs` lint reports on every build.
fn main() {
    let mut criterion = Criterion::default().configure_from_args();
    structure_benchmark(&mut criterion);
    model_benchmark(&mut criterion);
    criterion.final_summary();
}
