//! Monte Carlo over uncertain inputs (docs/model.md section 13): percentile bands of the
//! midplane C/O, C/H and O/H of gas, ice and all solids, the distribution of every snowline,
//! a one-at-a-time sensitivity ranking with a first-order variance index, and the inverse
//! formation map marginalised over the inputs.
//!
//! The core knows nothing of files: the caller supplies, per sample, the parameters of that
//! sample (the disk-file crate draws them from a disk file's `uncertainty` section with
//! [`crate::random::Rng::for_sample`]). Every sample depends only on (seed, index), so the
//! order and the threads the samples run in do not change any number.
//!
//! Reuse of the staged core (ARCHITECTURE.md "The staged core"): a sample whose star (mass,
//! luminosity, effective temperature, FUV), disk (except its age) and grid equal the base
//! disk's runs on the base's structure; only the composition and the ice balance are solved,
//! and only at the midplane (the bands, snowlines and the fit need no other height). The
//! midplane path calls the same stage functions as [`Model::run`] ([`Composition::uniform`],
//! [`solve_place`], [`Ratios::of`], [`crate::snowlines::midplane_snowlines`]), so a sample equal to the base disk gives
//! the deterministic model's numbers bit for bit.

use std::borrow::Cow;

use crate::balance::{species_properties, BalanceConstants};
use crate::composition::Composition;
use crate::error::PhysicsError;
use crate::ices::{solve_place, Place};
use crate::math::{exp, ln, ln_1p};
use crate::model::{Model, Ratios};
use crate::params::{DesorptionModel, Element, ModelParameters, SootLine};
use crate::planet::ChiSquareMap;
use crate::snowlines::{CrossingDirection, Snowline};
use crate::species::{Species, SpeciesTable, SPECIES_COUNT};
use crate::structure::{early_soot_line_radius_cm, DiskStructure};
use crate::units::AU_CM;

/// The default number of Monte Carlo samples (issue 12).
pub const DEFAULT_SAMPLES: usize = 1000;

/// The percentiles of every band: 2.5, 16, 50, 84 and 97.5 per cent (the median and the
/// central 68 and 95 per cent, the 1 and 2 sigma ranges of a normal distribution rounded as usual).
pub const PERCENTILES: [f64; 5] = [0.025, 0.16, 0.5, 0.84, 0.975];

/// The keys of [`PERCENTILES`] in exports.
pub const PERCENTILE_KEYS: [&str; 5] = ["p2_5", "p16", "p50", "p84", "p97_5"];

/// A midplane quantity with bands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// C/O of the gas (number ratio).
    CToOGas,
    /// C/O of the ices.
    CToOIce,
    /// C/O of all solids (ice + refractory).
    CToOSolid,
    /// C/H of the gas (atoms per H nucleus of the disk).
    CToHGas,
    /// C/H in ices (atoms per H nucleus of the disk).
    CToHIce,
    /// C/H in all solids (atoms per H nucleus of the disk).
    CToHSolid,
    /// O/H of the gas (atoms per H nucleus of the disk).
    OToHGas,
    /// O/H in ices (atoms per H nucleus of the disk).
    OToHIce,
    /// O/H in all solids (atoms per H nucleus of the disk).
    OToHSolid,
}

/// Number of [`Quantity`] values.
pub const QUANTITY_COUNT: usize = 9;

impl Quantity {
    /// Every quantity, in export order.
    pub const ALL: [Quantity; QUANTITY_COUNT] = [
        Quantity::CToOGas,
        Quantity::CToOIce,
        Quantity::CToOSolid,
        Quantity::CToHGas,
        Quantity::CToHIce,
        Quantity::CToHSolid,
        Quantity::OToHGas,
        Quantity::OToHIce,
        Quantity::OToHSolid,
    ];

    /// Key in exports (`c_to_o_gas`, ...).
    pub fn key(self) -> &'static str {
        match self {
            Quantity::CToOGas => "c_to_o_gas",
            Quantity::CToOIce => "c_to_o_ice",
            Quantity::CToOSolid => "c_to_o_solid",
            Quantity::CToHGas => "c_to_h_gas",
            Quantity::CToHIce => "c_to_h_ice",
            Quantity::CToHSolid => "c_to_h_solid",
            Quantity::OToHGas => "o_to_h_gas",
            Quantity::OToHIce => "o_to_h_ice",
            Quantity::OToHSolid => "o_to_h_solid",
        }
    }

    /// Unit in exports.
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::CToOGas | Quantity::CToOIce | Quantity::CToOSolid => "",
            _ => "per H nucleus",
        }
    }

    /// Index in [`Quantity::ALL`].
    pub fn index(self) -> usize {
        self as usize
    }
}

/// The midplane results of one sample on the base radial grid.
#[derive(Debug, Clone, PartialEq)]
pub struct SampleValues {
    /// Per radial cell, the value of each [`Quantity`] (`None` where undefined, e.g. the ice C/O
    /// where there is no ice).
    pub values: Vec<[Option<f64>; QUANTITY_COUNT]>,
    /// Per species (`Species::ALL` order), the radius [au] of its innermost freeze-out snowline
    /// (gas inside, ice outside), or `None` when it has none on the grid.
    pub snowline_au: [Option<f64>; SPECIES_COUNT],
}

impl SampleValues {
    /// The gas C/O at `radius_au`, linear in ln r between the grid cells around it (the nearest
    /// cell at and beyond the outermost cell centres); `None` where either cell's is undefined.
    pub fn gas_c_to_o_at(&self, radius_au: &[f64], at_au: f64) -> Option<f64> {
        interpolate_ln_r(radius_au, at_au, |j| {
            self.values[j][Quantity::CToOGas.index()]
        })
    }
}

/// One Monte Carlo sample: its index, the input values drawn (for the variance index), how
/// many draws fell outside the allowed ranges and were drawn again, and its values or the
/// reason it failed.
#[derive(Debug, Clone, PartialEq)]
pub struct SampleResult {
    /// Sample index (0-based).
    pub index: u64,
    /// The drawn value of each uncertain input (caller's order; a choice is its option index).
    pub inputs: Vec<f64>,
    /// Draws refused as outside an allowed range and drawn again.
    pub redraws: u32,
    /// The sample's values, or why it failed (a message naming the field where there is one).
    pub outcome: Result<SampleValues, String>,
}

/// What a caller's draw function returns for one sample.
#[derive(Debug, Clone, PartialEq)]
pub struct Draw {
    /// The sample's parameters (validated by the caller).
    pub parameters: ModelParameters,
    /// The drawn value of each uncertain input, for the variance index.
    pub inputs: Vec<f64>,
    /// Draws refused and drawn again.
    pub redraws: u32,
}

/// The Monte Carlo engine around one base (nominal) model.
#[derive(Debug, Clone)]
pub struct Engine {
    base: Model,
    radius_au: Vec<f64>,
    table: SpeciesTable,
}

/// Whether the structure stage of `a` and `b` is the same: the star's mass, luminosity,
/// effective temperature and FUV, the disk (its age aside, which only the ices see) and the
/// grid. The early soot line (set by the composition's soot-line choice) is handled apart.
pub fn same_structure(a: &ModelParameters, b: &ModelParameters) -> bool {
    let (sa, sb) = (&a.star, &b.star);
    let mut disk_b = b.disk.clone();
    disk_b.age_myr = a.disk.age_myr;
    sa.mass_msun == sb.mass_msun
        && sa.luminosity_lsun == sb.luminosity_lsun
        && sa.effective_temperature_k == sb.effective_temperature_k
        && sa.fuv_1au_habing == sb.fuv_1au_habing
        && a.disk == disk_b
        && a.grid == b.grid
}

impl Engine {
    /// An engine around the deterministic run `base` of the nominal disk.
    pub fn new(base: Model) -> Engine {
        let radius_au = base
            .structure()
            .radius_cm
            .iter()
            .map(|r| r / AU_CM)
            .collect();
        Engine {
            base,
            radius_au,
            table: SpeciesTable::built_in(),
        }
    }

    /// The nominal model.
    pub fn base(&self) -> &Model {
        &self.base
    }

    /// The base radial grid [au] (cell centres) every band is given on.
    pub fn radius_au(&self) -> &[f64] {
        &self.radius_au
    }

    /// The structure of a sample: the base's (with the early soot line re-found when the
    /// soot-line choice or temperature differ) when [`same_structure`], else a new one. Errors:
    /// `OutOfRange` named `grid` when the sample's radial grid differs from the base's (the
    /// bands need one grid), and those of [`DiskStructure::compute`].
    pub fn structure_for(
        &self,
        p: &ModelParameters,
    ) -> Result<Cow<'_, DiskStructure>, PhysicsError> {
        let base_p = self.base.parameters();
        if same_structure(base_p, p) {
            let (a, b) = (&base_p.composition, &p.composition);
            if a.soot_line == b.soot_line && a.soot_line_k == b.soot_line_k {
                return Ok(Cow::Borrowed(self.base.structure()));
            }
            let mut st = self.base.structure().clone();
            st.early_soot_line_radius_cm = match b.soot_line {
                SootLine::Irreversible => {
                    early_soot_line_radius_cm(p, &st.radius_cm, b.soot_line_k)?
                }
                SootLine::Reversible => None,
            };
            return Ok(Cow::Owned(st));
        }
        let same_grid = p.grid.radial_cells == base_p.grid.radial_cells
            && p.disk.inner_radius_au == base_p.disk.inner_radius_au
            && p.disk.outer_radius_au == base_p.disk.outer_radius_au;
        if !same_grid {
            return Err(PhysicsError::OutOfRange {
                name: "grid",
                value: p.grid.radial_cells as f64,
                allowed: "the base disk's radial grid (edges and radial cells cannot be uncertain)",
            });
        }
        Ok(Cow::Owned(DiskStructure::compute(p)?))
    }

    /// The whole model of a sample, reusing the base structure where [`Engine::structure_for`]
    /// can (equal bit for bit to `Model::run(p)`, as `Model::run_on` is).
    pub fn model(&self, p: &ModelParameters) -> Result<Model, PhysicsError> {
        if p == self.base.parameters() {
            return Ok(self.base.clone());
        }
        let structure = self.structure_for(p)?.into_owned();
        Model::run_on(structure, p)
    }

    /// The midplane values of a sample (docs/model.md section 13): the composition and the ice
    /// balance at the midplane of every radial cell, on the sample's structure, through the
    /// same stage functions as [`Model::run`], [`Model::midplane_profile`] and
    /// [`Model::snowlines`]. Errors: those of [`Engine::structure_for`] and
    /// [`Composition::uniform`]; `NonFinite`-like results are refused as `OutOfRange` named by
    /// the quantity.
    pub fn sample(&self, p: &ModelParameters) -> Result<SampleValues, PhysicsError> {
        let structure = self.structure_for(p)?;
        let st: &DiskStructure = &structure;
        let composition = Composition::uniform(p, &self.table, st)?;
        let species = species_properties(p, &self.table);
        let balance = BalanceConstants::new(p, &species);
        let n_r = st.radial_cells;
        let x = *composition.stellar_per_h();
        let mut values = Vec::with_capacity(n_r);
        let mut ice = Vec::with_capacity(n_r);
        let (c, o) = (Element::C as usize, Element::O as usize);
        for j in 0..n_r {
            let k = st.index(j, 0);
            let totals = composition.species_per_h_in_cell(j);
            let states = solve_place(&balance, &Place::of(&st.samples, k), &totals);
            let f: [f64; SPECIES_COUNT] = states.map(|s| s.ice_fraction);
            ice.push(f);
            let ph = composition.phases(j, st.samples.temperature_k[k], st.radius_cm[j], |i| f[i]);
            let r = Ratios::of(&ph, &x);
            let v = [
                r.c_to_o_gas,
                r.c_to_o_ice,
                r.c_to_o_solid,
                Some(ph.gas[c]),
                Some(ph.ice[c]),
                Some(ph.ice[c] + ph.refractory[c]),
                Some(ph.gas[o]),
                Some(ph.ice[o]),
                Some(ph.ice[o] + ph.refractory[o]),
            ];
            for (q, value) in Quantity::ALL.iter().zip(&v) {
                if value.is_some_and(|y| !y.is_finite()) {
                    return Err(PhysicsError::OutOfRange {
                        name: q.key(),
                        value: value.unwrap_or(f64::NAN),
                        allowed: "a finite value (the sampled inputs gave none)",
                    });
                }
            }
            values.push(v);
        }
        let step = p.ices.desorption == DesorptionModel::FixedTemperature;
        let snowline_au = Species::ALL.map(|sp| {
            if !composition.is_present(sp) {
                return None;
            }
            let lines = crate::snowlines::midplane_snowlines(
                &st.radius_cm,
                &st.midplane_temperature_k,
                step.then(|| species[sp.index()].condensation_temperature_k),
                || {
                    ice.iter()
                        .map(|row: &[f64; SPECIES_COUNT]| row[sp.index()])
                        .collect()
                },
            );
            first_freeze_out_au(&lines)
        });
        Ok(SampleValues {
            values,
            snowline_au,
        })
    }

    /// One sample: its parameters from `draw` with the sample's own random stream
    /// ([`crate::random::Rng::for_sample`]`(seed, index)`), then [`Engine::sample`]. A failed draw
    /// or run is recorded in the result, not returned as an error, so one bad corner of the
    /// input space does not stop the others.
    pub fn run_sample<F>(&self, seed: u64, index: u64, draw: &F) -> SampleResult
    where
        F: Fn(&mut crate::random::Rng) -> Result<Draw, String> + ?Sized,
    {
        let mut rng = crate::random::Rng::for_sample(seed, index);
        match draw(&mut rng) {
            Err(message) => SampleResult {
                index,
                inputs: Vec::new(),
                redraws: 0,
                outcome: Err(message),
            },
            Ok(d) => SampleResult {
                index,
                inputs: d.inputs,
                redraws: d.redraws,
                outcome: self.sample(&d.parameters).map_err(|e| e.to_string()),
            },
        }
    }

    /// `samples` samples one after the other (the page's worker runs chunks of this; the CLI
    /// runs [`Engine::run_sample`] on threads), summarised by [`summarise`].
    pub fn monte_carlo<F>(&self, seed: u64, samples: usize, draw: &F) -> MonteCarlo
    where
        F: Fn(&mut crate::random::Rng) -> Result<Draw, String> + ?Sized,
    {
        let results: Vec<SampleResult> = (0..samples as u64)
            .map(|i| self.run_sample(seed, i, draw))
            .collect();
        summarise(&self.radius_au, seed, &results)
    }
}

/// The radius [au] of the innermost freeze-out crossing (gas inside, ice outside), if any.
pub fn first_freeze_out_au(lines: &[Snowline]) -> Option<f64> {
    lines
        .iter()
        .find(|l| l.direction == CrossingDirection::FreezeOut)
        .map(|l| l.radius_cm / AU_CM)
}

/// `value(j)` at `at_au`, linear in ln r between the grid cells `radius_au` around it; the end
/// cell's value outside the cell centres.
fn interpolate_ln_r(
    radius_au: &[f64],
    at_au: f64,
    value: impl Fn(usize) -> Option<f64>,
) -> Option<f64> {
    let n = radius_au.len();
    if n == 0 || !at_au.is_finite() || at_au <= 0.0 {
        return None;
    }
    let hi = radius_au.partition_point(|&r| r < at_au);
    if hi == 0 {
        return value(0);
    }
    if hi >= n {
        return value(n - 1);
    }
    let lo = hi - 1;
    let (a, b) = (value(lo)?, value(hi)?);
    let t = (ln(at_au) - ln(radius_au[lo])) / (ln(radius_au[hi]) - ln(radius_au[lo]));
    Some(a + (b - a) * t)
}

/// The q-quantile of sorted values, linear between order statistics at position (n - 1) q
/// counted from 0 (Hyndman & Fan 1996, definition 7; numpy's default; as `cargo xtask bench`).
/// `None` for no values.
pub fn quantile_sorted(sorted: &[f64], q: f64) -> Option<f64> {
    let n = sorted.len();
    if n == 0 {
        return None;
    }
    let pos = (n - 1) as f64 * q.clamp(0.0, 1.0);
    let lo = pos.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let frac = pos - lo as f64;
    Some(sorted[lo] + (sorted[hi] - sorted[lo]) * frac)
}

/// The [`PERCENTILES`] of `values` (sorted in place, total order).
pub fn percentiles(values: &mut [f64]) -> [Option<f64>; 5] {
    values.sort_by(f64::total_cmp);
    PERCENTILES.map(|q| quantile_sorted(values, q))
}

/// The percentile bands of one quantity over radius.
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    /// Per [`PERCENTILES`] entry, the value per radial cell (`None` where no sample defines it).
    pub percentiles: [Vec<Option<f64>>; 5],
    /// Per radial cell, the fraction of the successful samples in which the quantity is defined
    /// (the percentiles are over those samples).
    pub defined_fraction: Vec<f64>,
}

/// The distribution of one species' snowline radius.
#[derive(Debug, Clone, PartialEq)]
pub struct SnowlineDistribution {
    /// The species.
    pub species: Species,
    /// [`PERCENTILES`] of the radius [au] over the samples that have the snowline.
    pub percentiles: [Option<f64>; 5],
    /// The fraction of the successful samples with a snowline.
    pub fraction: f64,
    /// Every sampled radius [au], sorted (for histograms).
    pub radii_au: Vec<f64>,
}

/// A summarised Monte Carlo.
#[derive(Debug, Clone, PartialEq)]
pub struct MonteCarlo {
    /// The seed.
    pub seed: u64,
    /// Samples run.
    pub samples: usize,
    /// Samples that gave values (the bands are over these).
    pub succeeded: usize,
    /// The first failures (index, reason), at most 20.
    pub failures: Vec<(u64, String)>,
    /// Draws refused (outside an allowed range) and drawn again, over all samples.
    pub redraws: u64,
    /// The base radial grid [au].
    pub radius_au: Vec<f64>,
    /// Bands, [`Quantity::ALL`] order.
    pub bands: Vec<Band>,
    /// Snowline distributions, `Species::ALL` order.
    pub snowlines: Vec<SnowlineDistribution>,
}

/// The bands and snowline distributions of `results` (any order of any subset of samples: the
/// page draws partial bands this way while samples arrive).
pub fn summarise(radius_au: &[f64], seed: u64, results: &[SampleResult]) -> MonteCarlo {
    let ok: Vec<&SampleValues> = results
        .iter()
        .filter_map(|r| r.outcome.as_ref().ok())
        .collect();
    let n_r = radius_au.len();
    let mut buf = Vec::with_capacity(ok.len());
    let bands = Quantity::ALL
        .iter()
        .map(|q| {
            let mut band = Band {
                percentiles: std::array::from_fn(|_| Vec::with_capacity(n_r)),
                defined_fraction: Vec::with_capacity(n_r),
            };
            for j in 0..n_r {
                buf.clear();
                buf.extend(
                    ok.iter()
                        .filter_map(|s| s.values.get(j).and_then(|v| v[q.index()])),
                );
                band.defined_fraction.push(if ok.is_empty() {
                    0.0
                } else {
                    buf.len() as f64 / ok.len() as f64
                });
                let p = percentiles(&mut buf);
                for (dst, v) in band.percentiles.iter_mut().zip(p) {
                    dst.push(v);
                }
            }
            band
        })
        .collect();
    let snowlines = Species::ALL
        .iter()
        .map(|&sp| {
            let mut radii: Vec<f64> = ok
                .iter()
                .filter_map(|s| s.snowline_au[sp.index()])
                .collect();
            let fraction = if ok.is_empty() {
                0.0
            } else {
                radii.len() as f64 / ok.len() as f64
            };
            let percentiles = percentiles(&mut radii);
            SnowlineDistribution {
                species: sp,
                percentiles,
                fraction,
                radii_au: radii,
            }
        })
        .collect();
    MonteCarlo {
        seed,
        samples: results.len(),
        succeeded: ok.len(),
        failures: results
            .iter()
            .filter_map(|r| r.outcome.as_ref().err().map(|e| (r.index, e.clone())))
            .take(20)
            .collect(),
        redraws: results.iter().map(|r| r.redraws as u64).sum(),
        radius_au: radius_au.to_vec(),
        bands,
        snowlines,
    }
}

// ---------------------------------------------------------------------------------------------
// Sensitivity

/// The outputs the sensitivity ranks inputs by.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SensitivityOutputs {
    /// Gas C/O at the chosen radius (grid interpolation, [`SampleValues::gas_c_to_o_at`]).
    pub gas_c_to_o: Option<f64>,
    /// Innermost freeze-out snowline radius [au] per species.
    pub snowline_au: [Option<f64>; SPECIES_COUNT],
}

impl SensitivityOutputs {
    /// The outputs of one sample's values.
    pub fn of(values: &SampleValues, radius_au: &[f64], at_au: f64) -> SensitivityOutputs {
        SensitivityOutputs {
            gas_c_to_o: values.gas_c_to_o_at(radius_au, at_au),
            snowline_au: values.snowline_au,
        }
    }
}

/// How much one input moves each output.
#[derive(Debug, Clone, PartialEq)]
pub struct InputSensitivity {
    /// The input's name (the caller's, e.g. a disk-file path).
    pub name: String,
    /// The outputs at each of the input's levels (others at their nominal values).
    pub levels: Vec<Result<SensitivityOutputs, String>>,
    /// One-at-a-time swing of the gas C/O: max - min over the levels that define it.
    pub swing_gas_c_to_o: Option<f64>,
    /// One-at-a-time swing of each snowline radius [au].
    pub swing_snowline_au: [Option<f64>; SPECIES_COUNT],
    /// First-order variance index of the gas C/O from the Monte Carlo samples ([`first_order_index`]).
    pub first_order_gas_c_to_o: Option<f64>,
    /// First-order variance index of each snowline radius.
    pub first_order_snowline: [Option<f64>; SPECIES_COUNT],
    /// The same for the posterior's median formation radius [au] (swing), when a fit was made.
    pub swing_posterior_median_au: Option<f64>,
}

fn swing(values: impl Iterator<Item = Option<f64>>) -> Option<f64> {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    let mut n = 0;
    for v in values.flatten() {
        lo = lo.min(v);
        hi = hi.max(v);
        n += 1;
    }
    (n >= 2).then_some(hi - lo)
}

/// One-at-a-time sensitivity (docs/model.md section 13): each input is set in turn to each of
/// its `levels` (for a continuous input its 16th and 84th percentiles, for a choice every
/// option) with every other input nominal; the swing of an output is its max - min over the
/// levels. `inputs` is (name, parameters per level). The first-order variance indices are
/// filled from `monte_carlo` when given (their inputs in the same order as `inputs`).
pub fn one_at_a_time(
    engine: &Engine,
    at_au: f64,
    inputs: &[(String, Vec<ModelParameters>)],
    monte_carlo: Option<&[SampleResult]>,
) -> Vec<InputSensitivity> {
    let radius = engine.radius_au();
    inputs
        .iter()
        .enumerate()
        .map(|(i, (name, levels))| {
            let outs: Vec<Result<SensitivityOutputs, String>> = levels
                .iter()
                .map(|p| {
                    engine
                        .sample(p)
                        .map(|v| SensitivityOutputs::of(&v, radius, at_au))
                        .map_err(|e| e.to_string())
                })
                .collect();
            let ok = || outs.iter().filter_map(|o| o.as_ref().ok());
            let mut s = InputSensitivity {
                name: name.clone(),
                swing_gas_c_to_o: swing(ok().map(|o| o.gas_c_to_o)),
                swing_snowline_au: std::array::from_fn(|k| swing(ok().map(|o| o.snowline_au[k]))),
                levels: outs.clone(),
                first_order_gas_c_to_o: None,
                first_order_snowline: [None; SPECIES_COUNT],
                swing_posterior_median_au: None,
            };
            if let Some(results) = monte_carlo {
                let pairs = |f: &dyn Fn(&SampleValues) -> Option<f64>| -> (Vec<f64>, Vec<f64>) {
                    results
                        .iter()
                        .filter_map(|r| {
                            let v = r.outcome.as_ref().ok()?;
                            Some((*r.inputs.get(i)?, f(v)?))
                        })
                        .unzip()
                };
                let (x, y) = pairs(&|v| v.gas_c_to_o_at(radius, at_au));
                s.first_order_gas_c_to_o = first_order_index(&x, &y);
                s.first_order_snowline = std::array::from_fn(|k| {
                    let (x, y) = pairs(&|v| v.snowline_au[k]);
                    first_order_index(&x, &y)
                });
            }
            s
        })
        .collect()
}

/// The first-order (main-effect) variance index S = Var(E[Y|X]) / Var(Y) of output `y` on
/// input `x` from given Monte Carlo data (Sobol 1993's first-order index, estimated by the
/// binning of the correlation ratio, e.g. Saltelli et al. 2008 "Global Sensitivity Analysis:
/// The Primer" section 5; Plischke et al. 2013): the pairs sorted by x are cut into
/// B = round(sqrt(n)) bins of equal count (or, for at most 20 distinct x, one bin per value),
/// E[Y|X] is each bin's mean. `None` for fewer than 10 pairs or a constant output. The estimate
/// is biased up by about (B - 1)/n for an input with no effect.
pub fn first_order_index(x: &[f64], y: &[f64]) -> Option<f64> {
    let n = x.len().min(y.len());
    if n < 10 {
        return None;
    }
    let mut pairs: Vec<(f64, f64)> = x.iter().copied().zip(y.iter().copied()).take(n).collect();
    pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mean = pairs.iter().map(|p| p.1).sum::<f64>() / n as f64;
    let total: f64 = pairs.iter().map(|p| (p.1 - mean) * (p.1 - mean)).sum();
    if !(total > 0.0) {
        return None;
    }
    let mut distinct = 1;
    for w in pairs.windows(2) {
        if w[1].0 != w[0].0 {
            distinct += 1;
        }
    }
    let mut groups: Vec<std::ops::Range<usize>> = Vec::new();
    if distinct <= 20 {
        let mut start = 0;
        for k in 1..=n {
            if k == n || pairs[k].0 != pairs[start].0 {
                groups.push(start..k);
                start = k;
            }
        }
    } else {
        let bins = ((n as f64).sqrt().round() as usize).max(2);
        for b in 0..bins {
            groups.push(b * n / bins..(b + 1) * n / bins);
        }
    }
    let between: f64 = groups
        .iter()
        .filter(|g| !g.is_empty())
        .map(|g| {
            let m = pairs[g.clone()].iter().map(|p| p.1).sum::<f64>() / g.len() as f64;
            g.len() as f64 * (m - mean) * (m - mean)
        })
        .sum();
    Some((between / total).clamp(0.0, 1.0))
}

// ---------------------------------------------------------------------------------------------
// The marginalised inverse

/// Accumulates the inverse formation map over Monte Carlo samples: the likelihood
/// exp(-chi2/2) of every (radius, solid-to-gas) cell averaged over the samples (docs/model.md
/// section 13), kept as a log-sum per cell so no exponential over- or underflows.
#[derive(Debug, Clone, PartialEq)]
pub struct PosteriorAccumulator {
    radius_au: Vec<f64>,
    cell_edges_au: Vec<f64>,
    solid_to_gas: Vec<f64>,
    log_sum: Vec<f64>,
    best_chi2: Vec<Option<f64>>,
    p_values: Vec<Option<f64>>,
    degrees_of_freedom: usize,
    samples: usize,
}

impl PosteriorAccumulator {
    /// An empty accumulator on the grids of `map` (the base disk's map).
    pub fn new(map: &ChiSquareMap) -> PosteriorAccumulator {
        PosteriorAccumulator {
            radius_au: map.radius_au.clone(),
            cell_edges_au: map.cell_edges_au.clone(),
            solid_to_gas: map.solid_to_gas.clone(),
            log_sum: vec![f64::NEG_INFINITY; map.rows.len()],
            best_chi2: Vec::new(),
            p_values: Vec::new(),
            degrees_of_freedom: map.goodness.degrees_of_freedom,
            samples: 0,
        }
    }

    /// Add one sample's map (same grids). Rows outside the priors, infeasible or without a
    /// defined chi-square have zero likelihood. Errors: `OutOfRange` named `grid` for a map on
    /// other grids.
    pub fn add(&mut self, map: &ChiSquareMap) -> Result<(), PhysicsError> {
        if map.rows.len() != self.log_sum.len()
            || map.radius_au != self.radius_au
            || map.solid_to_gas != self.solid_to_gas
        {
            return Err(PhysicsError::OutOfRange {
                name: "grid",
                value: map.rows.len() as f64,
                allowed: "the base disk's radial and solid-to-gas grids",
            });
        }
        for (acc, row) in self.log_sum.iter_mut().zip(&map.rows) {
            if let (Some(c), true) = (row.chi2, row.feasible && row.in_prior) {
                let l = -0.5 * c;
                *acc = log_add(*acc, l);
            }
        }
        self.best_chi2.push(map.best.map(|b| b.chi2));
        self.p_values.push(map.goodness.p_value);
        self.samples += 1;
        Ok(())
    }

    /// The posterior so far.
    pub fn finish(&self) -> MarginalPosterior {
        let n_q = self.solid_to_gas.len().max(1);
        let n_r = self.radius_au.len();
        let max = self
            .log_sum
            .iter()
            .copied()
            .fold(f64::NEG_INFINITY, f64::max);
        let mut probability: Vec<f64> = if max.is_finite() {
            self.log_sum.iter().map(|&l| exp(l - max)).collect()
        } else {
            vec![0.0; self.log_sum.len()]
        };
        let total: f64 = probability.iter().sum();
        if total > 0.0 {
            for p in &mut probability {
                *p /= total;
            }
        }
        let radius_probability: Vec<f64> = (0..n_r)
            .map(|j| probability[j * n_q..(j + 1) * n_q].iter().sum())
            .collect();
        let solid_to_gas_probability: Vec<f64> = (0..n_q)
            .map(|k| (0..n_r).map(|j| probability[j * n_q + k]).sum())
            .collect();
        let defined = total > 0.0;
        let cdf_at = |q: f64| {
            defined.then(|| quantile_of_cells(&radius_probability, &self.cell_edges_au, q))
        };
        let mode =
            defined.then(|| {
                let (j, _) = radius_probability.iter().enumerate().fold(
                    (0, f64::NEG_INFINITY),
                    |b, (j, &p)| if p > b.1 { (j, p) } else { b },
                );
                self.radius_au[j]
            });
        let mut best: Vec<f64> = self.best_chi2.iter().flatten().copied().collect();
        let mut p: Vec<f64> = self.p_values.iter().flatten().copied().collect();
        let acceptable = p
            .iter()
            .filter(|&&v| v >= crate::planet::ACCEPTABLE_P_VALUE)
            .count();
        let radius_median_au = cdf_at(0.5);
        let radius_interval_68_au = cdf_at(0.16).zip(cdf_at(0.84));
        let radius_interval_95_au = cdf_at(0.025).zip(cdf_at(0.975));
        MarginalPosterior {
            samples: self.samples,
            radius_au: self.radius_au.clone(),
            solid_to_gas: self.solid_to_gas.clone(),
            probability,
            radius_probability,
            solid_to_gas_probability,
            radius_mode_au: mode,
            radius_median_au,
            radius_interval_68_au,
            radius_interval_95_au,
            best_chi2_percentiles: percentiles(&mut best),
            p_value_percentiles: percentiles(&mut p),
            acceptable_fraction: if self.p_values.is_empty() {
                0.0
            } else {
                acceptable as f64 / self.p_values.len() as f64
            },
            degrees_of_freedom: self.degrees_of_freedom,
        }
    }
}

/// ln(e^a + e^b), stably.
fn log_add(a: f64, b: f64) -> f64 {
    if a == f64::NEG_INFINITY {
        return b;
    }
    if b == f64::NEG_INFINITY {
        return a;
    }
    let (hi, lo) = if a > b { (a, b) } else { (b, a) };
    hi + ln_1p(exp(lo - hi))
}

/// The radius [au] where the cumulative probability of the cells reaches `q`: the probability of
/// a cell spread uniformly in ln r over the cell (its edges `edges_au`, n + 1 of them).
fn quantile_of_cells(p: &[f64], edges_au: &[f64], q: f64) -> f64 {
    let mut cum = 0.0;
    for (j, &pj) in p.iter().enumerate() {
        if pj > 0.0 && cum + pj >= q {
            let t = ((q - cum) / pj).clamp(0.0, 1.0);
            let (a, b) = (ln(edges_au[j]), ln(edges_au[j + 1]));
            return exp(a + (b - a) * t);
        }
        cum += pj;
    }
    edges_au[edges_au.len() - 1]
}

/// The inverse formation map marginalised over the uncertain inputs.
#[derive(Debug, Clone, PartialEq)]
pub struct MarginalPosterior {
    /// Samples averaged.
    pub samples: usize,
    /// Radial cell centres [au].
    pub radius_au: Vec<f64>,
    /// Solid-to-gas values.
    pub solid_to_gas: Vec<f64>,
    /// Posterior probability of each (radius, solid-to-gas) cell, radius-major (index
    /// j * solid_to_gas.len() + k), summing to 1 (all 0 when no sample fits anywhere).
    pub probability: Vec<f64>,
    /// Posterior probability of each radial cell (marginal over solid-to-gas).
    pub radius_probability: Vec<f64>,
    /// Posterior probability of each solid-to-gas value (marginal over radius).
    pub solid_to_gas_probability: Vec<f64>,
    /// The most probable radial cell's centre [au].
    pub radius_mode_au: Option<f64>,
    /// The posterior median formation radius [au].
    pub radius_median_au: Option<f64>,
    /// The central 68 % credible interval of the formation radius [au] (16th to 84th percentile).
    pub radius_interval_68_au: Option<(f64, f64)>,
    /// The central 95 % credible interval (2.5th to 97.5th percentile) [au].
    pub radius_interval_95_au: Option<(f64, f64)>,
    /// [`PERCENTILES`] of the samples' smallest chi-square.
    pub best_chi2_percentiles: [Option<f64>; 5],
    /// [`PERCENTILES`] of the samples' goodness-of-fit p-values.
    pub p_value_percentiles: [Option<f64>; 5],
    /// Fraction of the samples whose best fit is acceptable (p >= `planet::ACCEPTABLE_P_VALUE`).
    pub acceptable_fraction: f64,
    /// Degrees of freedom of the goodness of fit.
    pub degrees_of_freedom: usize,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn type_7_quantiles_match_numpy() {
        // numpy.percentile([1, 2, 3, 4], [25, 50, 90]) = [1.75, 2.5, 3.7] (numpy's default linear method).
        let v = [1.0, 2.0, 3.0, 4.0];
        assert!((quantile_sorted(&v, 0.25).unwrap() - 1.75).abs() < 1e-15);
        assert!((quantile_sorted(&v, 0.5).unwrap() - 2.5).abs() < 1e-15);
        assert!((quantile_sorted(&v, 0.9).unwrap() - 3.7).abs() < 1e-15);
        assert_eq!(quantile_sorted(&[], 0.5), None);
        assert_eq!(quantile_sorted(&[7.0], 0.975), Some(7.0));
    }

    #[test]
    fn first_order_index_of_a_linear_model() {
        // y = x1 + x2/2 with x1, x2 ~ U(0,1) independent: S1 = 1/(1 + 1/4) = 0.8, S2 = 0.2 (analytic).
        let mut r = crate::random::Rng::seeded(9);
        let n = 20_000;
        let x1: Vec<f64> = (0..n).map(|_| r.uniform()).collect();
        let x2: Vec<f64> = (0..n).map(|_| r.uniform()).collect();
        let y: Vec<f64> = x1.iter().zip(&x2).map(|(a, b)| a + 0.5 * b).collect();
        let s1 = first_order_index(&x1, &y).unwrap();
        let s2 = first_order_index(&x2, &y).unwrap();
        assert!((s1 - 0.8).abs() < 0.02, "{s1}");
        assert!((s2 - 0.2).abs() < 0.02, "{s2}");
    }

    #[test]
    fn log_add_is_stable() {
        assert_eq!(log_add(f64::NEG_INFINITY, -3.0), -3.0);
        assert!((log_add(-1000.0, -1000.0) - (-1000.0 + 2f64.ln())).abs() < 1e-12);
    }
}
