//! Criterion benchmarks of the physics core on the default disk, run by
//! `cargo xtask bench` (which reads criterion's per-sample records and prints
//! medians, p10, p90 and the ratios between them) or `cargo bench -p
//! nivalis-physics --bench model`.
//!
//! Groups (each id is `<group>/<grid>`):
//!
//! - `floor`: the least work a model of this grid can do: one `exp` and one
//!   `sqrt` (through `nivalis_physics::math`, i.e. libm) per cell-species,
//!   written into a preallocated output array laid out like the model's ice
//!   fractions (`species * samples + sample`). "Cell" means every sample the
//!   ice balance solves: radial cells x (vertical cells + 1) (the midplane
//!   sample plus one per vertical cell), times the 9 species; 200 x 81 x 9 =
//!   145 800 at the default grid. The inputs are realistic and prepared outside
//!   the timed loop: the default disk's sample temperatures and their
//!   inverses, and each species' binding energy and thermal-speed factor
//!   8 k / (pi m). Per cell-species the timed loop computes
//!   `exp(-E_b / T) * sqrt(8 k T / (pi m))`, the two transcendentals of the
//!   balance (docs/model.md section 7). The floor keeps libm's `exp` as the
//!   reference cost; the model itself uses `math::exp_poly`, which vectorises.
//! - `structure`: `DiskStructure::compute` alone.
//! - `model`: what the page computes after an edit of the star, the disk or the
//!   grid: `Model::run_into` a model already computed (its buffers reused; the
//!   disk's gas mass alternates between the default and 1.01 times it from one
//!   iteration to the next), followed by the midplane profile and the snowlines
//!   of every species.
//! - `model_fresh`: the same with `Model::run` (every result array freshly
//!   allocated): what the CLI computes for one disk.
//! - `ice_edit`: what an edit of an ice parameter costs: `Model::set_ices` on a
//!   model already computed, whose sticking coefficient alternates between 1.0
//!   and 0.9 from one iteration to the next. Only the ice balance is re-solved,
//!   into the model's own buffers (the structure and composition are reused;
//!   `tests/stages.rs` checks the result equals a full `Model::run` bit for bit).
//!
//! Grids: the default one (200 x 80) for every group and, for `structure`,
//! `model` and `model_fresh`, one with twice the cells along each axis
//! (400 x 160), against which the numpy baseline (`benches/numpy_baseline.py`)
//! is compared.
//!
//! Every group uses flat sampling: 20 samples with the same iteration count,
//! so each sample gives one per-iteration time (`times[i] / iters[i]` in
//! `new/sample.json`). The measurement is short (a few seconds per case): the
//! numbers are for spotting regressions and comparing work done in the same
//! run on the same machine, not for publication.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkGroup, BenchmarkId, Criterion, SamplingMode};
use nivalis_physics::math::{exp, sqrt};
use nivalis_physics::structure::DiskStructure;
use nivalis_physics::units::BOLTZMANN_ERG_PER_K;
use nivalis_physics::{Model, ModelParameters, Species, SPECIES_COUNT};

/// The default grid, the label criterion files it under, and the 4x grid.
/// `cargo xtask bench` reads `target/criterion/<group>/<label>/new/sample.json`.
const DEFAULT_GRID: (&str, usize, usize) = ("200x80", 200, 80);
const LARGE_GRID: (&str, usize, usize) = ("400x160", 400, 160);

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
    summary(&model)
}

/// [`full_model`] into the buffers of a model already computed.
fn full_model_into(model: &mut Model, parameters: &ModelParameters) -> (usize, usize) {
    model
        .run_into(parameters)
        .expect("the default disk must run");
    summary(model)
}

/// The midplane profile and the snowlines of every species, summarised.
fn summary(model: &Model) -> (usize, usize) {
    let profile = model.midplane_profile();
    let snowline_count: usize = Species::ALL
        .iter()
        .map(|&species| model.snowlines(species).len())
        .sum();
    (profile.radius_au.len(), snowline_count)
}

/// Inputs of the floor, computed once outside the timed loop from the default
/// disk's own model: per sample T and 1/T, per species -E_b and 8 k / (pi m).
struct FloorInputs {
    temperature_k: Vec<f64>,
    inverse_temperature: Vec<f64>,
    minus_binding_energy_k: [f64; SPECIES_COUNT],
    thermal_speed_factor: [f64; SPECIES_COUNT],
}

impl FloorInputs {
    fn new(parameters: &ModelParameters) -> FloorInputs {
        let model = Model::run(parameters).expect("the default disk must run");
        let temperature_k = model.structure().samples().temperature_k.clone();
        let inverse_temperature = temperature_k.iter().map(|t| 1.0 / t).collect();
        FloorInputs {
            temperature_k,
            inverse_temperature,
            minus_binding_energy_k: model.species_properties().map(|s| -s.binding_energy_k),
            thermal_speed_factor: model
                .species_properties()
                .map(|s| 8.0 * BOLTZMANN_ERG_PER_K / (std::f64::consts::PI * s.mass_g)),
        }
    }
}

/// One exp and one sqrt per cell-species, written like the model writes its
/// ice fractions (species-major). Nothing here can be hoisted: both arguments
/// depend on the sample and on the species.
fn floor(inputs: &FloorInputs, out: &mut [f64]) {
    let n = inputs.temperature_k.len();
    let t = black_box(&inputs.temperature_k[..]);
    let inv_t = black_box(&inputs.inverse_temperature[..]);
    for i in 0..SPECIES_COUNT {
        let e = inputs.minus_binding_energy_k[i];
        let a = inputs.thermal_speed_factor[i];
        let row = &mut out[i * n..(i + 1) * n];
        for ((o, &t), &inv_t) in row.iter_mut().zip(t).zip(inv_t) {
            *o = exp(e * inv_t) * sqrt(a * t);
        }
    }
    black_box(out);
}

/// A group with the settings every group shares: flat sampling (the same
/// iteration count in every sample, criterion's advice for runs of
/// milliseconds; the default linear ramp would need about 10 s for 20 samples
/// of the 4x model), 20 samples, a short warm-up.
fn group<'a>(
    c: &'a mut Criterion,
    name: &str,
    seconds: u64,
) -> BenchmarkGroup<'a, criterion::measurement::WallTime> {
    let mut group = c.benchmark_group(name);
    group.sampling_mode(SamplingMode::Flat);
    group
        .sample_size(20)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(seconds));
    group
}

fn floor_benchmark(c: &mut Criterion) {
    let mut group = group(c, "floor", 3);
    let (label, radial, vertical) = DEFAULT_GRID;
    let inputs = FloorInputs::new(&parameters(radial, vertical));
    assert_eq!(
        inputs.temperature_k.len(),
        radial * (vertical + 1),
        "the floor counts radial x (vertical + 1) samples"
    );
    let mut out = vec![0.0; SPECIES_COUNT * inputs.temperature_k.len()];
    group.bench_function(BenchmarkId::from_parameter(label), |b| {
        b.iter(|| floor(&inputs, &mut out))
    });
    group.finish();
    // The output is a real result, not optimised away: every value is finite and positive.
    assert!(out.iter().all(|v| v.is_finite() && *v >= 0.0));
}

fn structure_benchmark(c: &mut Criterion) {
    let mut group = group(c, "structure", 3);
    for (label, radial, vertical) in [DEFAULT_GRID, LARGE_GRID] {
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
    let mut group = group(c, "model", 5);
    for (label, radial, vertical) in [DEFAULT_GRID, LARGE_GRID] {
        let base = parameters(radial, vertical);
        let mut heavier = base.clone();
        heavier.disk.gas_mass_msun *= 1.01;
        let edited = [base.clone(), heavier];
        let mut model = Model::run(&base).expect("the default disk must run");
        let mut turn = 0usize;
        group.bench_function(BenchmarkId::from_parameter(label), |b| {
            b.iter(|| {
                turn += 1;
                full_model_into(&mut model, black_box(&edited[turn % 2]))
            })
        });
    }
    group.finish();
}

fn model_fresh_benchmark(c: &mut Criterion) {
    let mut group = group(c, "model_fresh", 5);
    for (label, radial, vertical) in [DEFAULT_GRID, LARGE_GRID] {
        let p = parameters(radial, vertical);
        group.bench_with_input(BenchmarkId::from_parameter(label), &p, |b, p| {
            b.iter(|| full_model(black_box(p)))
        });
    }
    group.finish();
}

fn ice_edit_benchmark(c: &mut Criterion) {
    let mut group = group(c, "ice_edit", 5);
    let (label, radial, vertical) = DEFAULT_GRID;
    let base = parameters(radial, vertical);
    let mut edited = [base.ices.clone(), base.ices.clone()];
    edited[1].sticking = 0.9;
    let mut model = Model::run(&base).expect("the default disk must run");
    let mut turn = 0usize;
    group.bench_function(BenchmarkId::from_parameter(label), |b| {
        b.iter(|| {
            turn += 1;
            model.set_ices(black_box(&edited[turn % 2]));
            black_box(model.ice_fraction_at(Species::CO, 0))
        })
    });
    group.finish();
}

// Written out instead of `criterion_group!`/`criterion_main!` because those
// macros generate an undocumented public function, which the workspace's
// `missing_docs` lint reports on every build.
fn main() {
    let mut criterion = Criterion::default().configure_from_args();
    floor_benchmark(&mut criterion);
    structure_benchmark(&mut criterion);
    model_benchmark(&mut criterion);
    model_fresh_benchmark(&mut criterion);
    ice_edit_benchmark(&mut criterion);
    criterion.final_summary();
}
