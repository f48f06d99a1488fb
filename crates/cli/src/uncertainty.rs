//! `nivalis uncertainty` and `nivalis fit --uncertainty`: the Monte Carlo of docs/model.md
//! section 13 over a disk file's `uncertainty` section, samples run in parallel with rayon.
//! Every sample depends only on (seed, index) and results are gathered in index order, so the
//! numbers do not depend on the number of threads.

use nivalis_disk_files::uncertainty::{read_uncertainty, UncertaintySpec};
use nivalis_disk_files::DiskFile;
use nivalis_exports::uncertainty::{posterior_median_swing, posterior_sample_map};
use nivalis_physics::planet::{chi_square_map, MapSettings, ObservedEnvelope};
use nivalis_physics::random::Rng;
use nivalis_physics::uncertainty::{
    one_at_a_time, summarise, Engine, MarginalPosterior, MonteCarlo, PosteriorAccumulator,
    SampleResult,
};
use nivalis_physics::Model;
use rayon::prelude::*;
use serde_json::Value;

/// The largest number of samples accepted (memory: about 30 kB per sample at the default grid).
pub const MAX_SAMPLES: usize = 100_000;

/// A checked sample count: 1..=MAX_SAMPLES.
pub fn check_samples(n: i64) -> Result<usize, String> {
    if (1..=MAX_SAMPLES as i64).contains(&n) {
        Ok(n as usize)
    } else {
        Err(format!("--samples: must be in [1, {MAX_SAMPLES}], got {n}"))
    }
}

/// The uncertainty section of a disk file; an error when there is none.
pub fn spec_of(root: &Value, file: &DiskFile, label: &str) -> Result<UncertaintySpec, Vec<String>> {
    match read_uncertainty(root, file) {
        Ok(Some(spec)) => Ok(spec),
        Ok(None) => Err(vec![format!(
            "{label}: uncertainty: the disk file has no uncertainty section; add one (docs/disk-file.md, \"Uncertainty\"), e.g. {{\"uncertainty\": {{\"star.luminosity_lsun\": {{\"distribution\": \"lognormal\", \"sigma_dex\": 0.1}}}}}}"
        )]),
        Err(p) => Err(p.0.iter().map(|x| format!("{label}: {x}")).collect()),
    }
}

/// The Monte Carlo, its per-sample results and the sensitivity at `at_au`.
pub struct Run {
    /// Summary.
    pub monte_carlo: MonteCarlo,
    /// Sensitivity per input.
    pub sensitivity: Vec<nivalis_physics::uncertainty::InputSensitivity>,
    /// The nominal (deterministic) model's values, drawn dashed over the bands (as the page).
    pub nominal: Option<nivalis_physics::uncertainty::SampleValues>,
}

/// Run `samples` samples in parallel and the one-at-a-time sensitivity at `at_au`.
pub fn run(model: Model, spec: &UncertaintySpec, samples: usize, seed: u64, at_au: f64) -> Run {
    let engine = Engine::new(model);
    let draw = |rng: &mut Rng| spec.draw(rng);
    let results: Vec<SampleResult> = (0..samples as u64)
        .into_par_iter()
        .map(|i| engine.run_sample(seed, i, &draw))
        .collect();
    let monte_carlo = summarise(engine.radius_au(), seed, &results);
    let levels = spec.one_at_a_time_levels();
    let sensitivity = one_at_a_time(&engine, at_au, &levels, Some(&results));
    let nominal = engine.sample(engine.base().parameters()).ok();
    Run {
        monte_carlo,
        sensitivity,
        nominal,
    }
}

/// The inverse map marginalised over `samples` samples (chunks of 32 in parallel, added in index
/// order), with the number of samples that failed.
pub fn posterior(
    model: Model,
    spec: &UncertaintySpec,
    samples: usize,
    seed: u64,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<(MarginalPosterior, usize), String> {
    let base_map = chi_square_map(&model, observed, settings).map_err(|e| e.to_string())?;
    let engine = Engine::new(model);
    let mut acc = PosteriorAccumulator::new(&base_map);
    let mut failed = 0;
    let indices: Vec<u64> = (0..samples as u64).collect();
    for chunk in indices.chunks(32) {
        let maps: Vec<Result<_, String>> = chunk
            .par_iter()
            .map(|&i| posterior_sample_map(&engine, spec, seed, i, observed, settings))
            .collect();
        for m in maps {
            match m {
                Ok(map) => acc.add(&map).map_err(|e| e.to_string())?,
                Err(_) => failed += 1,
            }
        }
    }
    Ok((acc.finish(), failed))
}

/// The one-at-a-time swing of the posterior's median formation radius [au] per input
/// ([`posterior_median_swing`], the inputs in parallel).
pub fn posterior_median_swings(
    model: &Model,
    spec: &UncertaintySpec,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<Vec<(String, Option<f64>)>, String> {
    let base_map = chi_square_map(model, observed, settings).map_err(|e| e.to_string())?;
    let engine = Engine::new(model.clone());
    let levels = spec.one_at_a_time_levels();
    Ok(levels
        .par_iter()
        .map(|(name, ps)| {
            let swing = posterior_median_swing(&engine, &base_map, ps, observed, settings);
            (name.clone(), swing)
        })
        .collect())
}
