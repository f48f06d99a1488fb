//! Anchoring a disk to an observed snowline: find the value of one disk
//! parameter (the flaring angle, or the midplane temperature scale) that puts
//! the model's first freeze-out snowline of a species at an observed radius.
//!
//! The snowline depends only on the midplane, so the solver does not run the
//! whole model: per trial value it solves the midplane temperatures, then
//! builds columns outward only until the first freeze-out crossing, with the
//! very functions `Model::run` uses (`DiskConstants::new`, `flaring_solution`,
//! `column`, `BalanceConstants::solve`, `crossings`), so the result equals a
//! full run with the anchored parameters to the root tolerance (a test checks it).
//!
//! Root solve: Brent's method (Brent 1973, Algorithms for Minimization without
//! Derivatives, ch. 4; in the form of Press et al. 2007, Numerical Recipes,
//! section 9.3) on g(x) = ln r_snow(e^x) - ln r_obs, x = ln(parameter), over the
//! allowed range, to |dx| <= 1e-12. If the range ends do not bracket the
//! observed radius, 15 interior values are scanned for a bracket; failing that
//! the error states which radii the range can reach.

use crate::balance::{species_properties, BalanceConstants};
use crate::budget::Carriers;
use crate::error::PhysicsError;
use crate::ices::{solve_species_at, Place};
use crate::math::{exp, ln};
use crate::params::{DesorptionModel, ModelParameters};
use crate::snowlines::{crossings, CrossingDirection};
use crate::species::{Species, SpeciesTable};
use crate::star::stellar_abundances_per_h;
use crate::structure::{
    column, flaring_solution, radial_cell_centres_cm, surface_density_g_cm2, DiskConstants,
};
use crate::units::AU_CM;

/// Absolute tolerance of the root in ln(parameter).
pub const ROOT_TOLERANCE_LN: f64 = 1e-12;

/// Largest |ln r_snow - ln r_obs| accepted at the root; beyond it the snowline
/// jumps across the observed radius (a discontinuity, not a root).
pub const RADIUS_MATCH_TOLERANCE_LN: f64 = 1e-6;

/// Interior values scanned for a bracket when the range ends do not bracket.
const SCAN_POINTS: usize = 15;

/// Which disk parameter the anchor adjusts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AnchorParameter {
    /// `disk.flaring_angle`, the fixed grazing angle phi (T_irr ~ phi^(1/4)).
    /// Not with `self_consistent_flaring`, where phi is solved, not set.
    FlaringAngle,
    /// `disk.midplane_temperature_scale`, a multiplier of T_mid.
    MidplaneTemperatureScale,
}

impl AnchorParameter {
    /// The parameter's name in disk files.
    pub fn name(self) -> &'static str {
        match self {
            AnchorParameter::FlaringAngle => "disk.flaring_angle",
            AnchorParameter::MidplaneTemperatureScale => "disk.midplane_temperature_scale",
        }
    }

    /// Default search range: flaring angle [1e-4, 1] (the allowed (0, 1], with a
    /// finite lower end for the search in ln phi), temperature scale [0.1, 10].
    pub fn default_range(self) -> (f64, f64) {
        match self {
            AnchorParameter::FlaringAngle => (1e-4, 1.0),
            AnchorParameter::MidplaneTemperatureScale => (0.1, 10.0),
        }
    }

    /// The parameter's value in `p`.
    pub fn value(self, p: &ModelParameters) -> f64 {
        match self {
            AnchorParameter::FlaringAngle => p.disk.flaring_angle,
            AnchorParameter::MidplaneTemperatureScale => p.disk.midplane_temperature_scale,
        }
    }

    /// `p` with the parameter set to `value`.
    pub fn with_value(self, p: &ModelParameters, value: f64) -> ModelParameters {
        let mut q = p.clone();
        match self {
            AnchorParameter::FlaringAngle => q.disk.flaring_angle = value,
            AnchorParameter::MidplaneTemperatureScale => q.disk.midplane_temperature_scale = value,
        }
        q
    }
}

/// What to anchor to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AnchorRequest {
    /// The species whose snowline was observed.
    pub species: Species,
    /// Observed snowline radius [au].
    pub observed_radius_au: f64,
    /// Its 1-sigma error [au] (>= 0; 0 for none).
    pub sigma_au: f64,
    /// The parameter to adjust.
    pub parameter: AnchorParameter,
    /// Search range (lower, upper) of the parameter; see [`AnchorParameter::default_range`].
    pub range: (f64, f64),
}

impl AnchorRequest {
    /// A request with the parameter's default range.
    pub fn new(
        species: Species,
        observed_radius_au: f64,
        sigma_au: f64,
        parameter: AnchorParameter,
    ) -> AnchorRequest {
        AnchorRequest {
            species,
            observed_radius_au,
            sigma_au,
            parameter,
            range: parameter.default_range(),
        }
    }
}

/// Where the first freeze-out snowline lies for one parameter set.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SnowlinePosition {
    /// At this radius [au].
    Radius(f64),
    /// No freeze-out crossing and frozen in the first cell: inside the grid's first cell centre.
    InsideGrid,
    /// No freeze-out crossing and not frozen in the first cell: gas everywhere (beyond the grid).
    BeyondGrid,
}

impl SnowlinePosition {
    fn ln_offset(self, ln_target: f64) -> f64 {
        match self {
            SnowlinePosition::Radius(r) => ln(r) - ln_target,
            SnowlinePosition::InsideGrid => f64::NEG_INFINITY,
            SnowlinePosition::BeyondGrid => f64::INFINITY,
        }
    }
    fn describe(self) -> String {
        match self {
            SnowlinePosition::Radius(r) => format!("{r:.4} au"),
            SnowlinePosition::InsideGrid => "inside the first grid cell".to_string(),
            SnowlinePosition::BeyondGrid => "nowhere (gas everywhere)".to_string(),
        }
    }
}

/// The parameter value at one end of the observed radius +- sigma.
#[derive(Debug, Clone, PartialEq)]
pub struct SigmaEnd {
    /// The radius [au] (observed - sigma or observed + sigma).
    pub radius_au: f64,
    /// The parameter value putting the snowline there; `None` where no value in range can.
    pub value: Option<f64>,
    /// Why there is no value, in words (empty when there is one).
    pub reason: String,
}

/// An anchored disk.
#[derive(Debug, Clone, PartialEq)]
pub struct AnchoredDisk {
    /// The input parameters with the adjusted value in place.
    pub parameters: ModelParameters,
    /// Which parameter was adjusted.
    pub parameter: AnchorParameter,
    /// The anchored value.
    pub value: f64,
    /// The value before anchoring.
    pub original_value: f64,
    /// The species.
    pub species: Species,
    /// Observed radius [au].
    pub observed_radius_au: f64,
    /// Observed 1-sigma error [au].
    pub sigma_au: f64,
    /// The model's first freeze-out snowline with the anchored value [au].
    pub achieved_radius_au: f64,
    /// The value at observed - sigma (the inner end).
    pub at_minus_sigma: SigmaEnd,
    /// The value at observed + sigma (the outer end).
    pub at_plus_sigma: SigmaEnd,
    /// How many trial values were evaluated (each a midplane-only snowline calculation).
    pub snowline_evaluations: usize,
}

/// The fast midplane-only snowline calculator.
struct SnowlineProbe {
    base: ModelParameters,
    parameter: AnchorParameter,
    species_index: usize,
    molecules_per_h: f64,
    balance: BalanceConstants,
    condensation_k: f64,
    step_model: bool,
    radii_cm: Vec<f64>,
    sigma_g_cm2: Vec<f64>,
}

impl SnowlineProbe {
    fn new(
        base: &ModelParameters,
        parameter: AnchorParameter,
        species: Species,
    ) -> Result<SnowlineProbe, PhysicsError> {
        let table = SpeciesTable::built_in();
        let carriers = Carriers::new(
            stellar_abundances_per_h(&base.star),
            &base.composition,
            &table,
        )?;
        let props = species_properties(base, &table);
        let c = DiskConstants::new(base)?;
        let radii_cm =
            radial_cell_centres_cm(c.inner_radius_cm, c.outer_radius_cm, base.grid.radial_cells);
        let sigma_g_cm2 = radii_cm
            .iter()
            .map(|&r| surface_density_g_cm2(&c, r))
            .collect();
        Ok(SnowlineProbe {
            base: base.clone(),
            parameter,
            species_index: species.index(),
            molecules_per_h: carriers.species_per_h[species.index()],
            balance: BalanceConstants::new(base, &props),
            condensation_k: props[species.index()].condensation_temperature_k,
            step_model: base.ices.desorption == DesorptionModel::FixedTemperature,
            radii_cm,
            sigma_g_cm2,
        })
    }

    /// The first freeze-out snowline with the parameter at `value`, computed as
    /// `Model::run` + `Model::snowlines` would, but only as far out as needed.
    fn position(&self, value: f64) -> Result<SnowlinePosition, PhysicsError> {
        let p = self.parameter.with_value(&self.base, value);
        let c = DiskConstants::new(&p)?;
        let (phi, mid) = flaring_solution(
            &c,
            p.disk.self_consistent_flaring,
            &self.radii_cm,
            &self.sigma_g_cm2,
        )?;
        let n = self.radii_cm.len();
        let first_frozen = if self.step_model {
            let t: Vec<f64> = mid.iter().map(|m| m.temperature_k).collect();
            let found = crossings(&self.radii_cm, &t, self.condensation_k, true, false)
                .into_iter()
                .find(|s| s.direction == CrossingDirection::FreezeOut);
            if let Some(s) = found {
                return Ok(SnowlinePosition::Radius(s.radius_cm / AU_CM));
            }
            t[0] < self.condensation_k
        } else {
            let mut f = Vec::with_capacity(n);
            for j in 0..n {
                let col = column(
                    &c,
                    self.radii_cm[j],
                    self.sigma_g_cm2[j],
                    mid[j].temperature_k,
                    phi[j],
                );
                // The ice stage's own function, as in `Model::run` (ice at the disk's age).
                let state = solve_species_at(
                    &self.balance,
                    &Place::of(&col, 0),
                    self.species_index,
                    self.molecules_per_h,
                );
                f.push(state.ice_fraction);
                if j > 0 {
                    // The same pairwise test `Model::snowlines` applies to the whole profile.
                    let pair =
                        crossings(&self.radii_cm[j - 1..=j], &f[j - 1..=j], 0.5, false, true);
                    if let Some(s) = pair
                        .into_iter()
                        .find(|s| s.direction == CrossingDirection::FreezeOut)
                    {
                        return Ok(SnowlinePosition::Radius(s.radius_cm / AU_CM));
                    }
                }
            }
            f[0] >= 0.5
        };
        Ok(if first_frozen {
            SnowlinePosition::InsideGrid
        } else {
            SnowlinePosition::BeyondGrid
        })
    }
}

/// The first freeze-out snowline of `species` for `parameters`, by the fast
/// midplane-only path (equal to the first `FreezeOut` entry of
/// `Model::run(parameters)?.snowlines(species)`).
pub fn first_freeze_out_snowline(
    parameters: &ModelParameters,
    species: Species,
) -> Result<SnowlinePosition, PhysicsError> {
    let probe = SnowlineProbe::new(
        parameters,
        AnchorParameter::MidplaneTemperatureScale,
        species,
    )?;
    probe.position(parameters.disk.midplane_temperature_scale)
}

/// Anchor `parameters` to an observed snowline (see the module docs).
///
/// Errors: `RadiusOutsideDisk` (name `observed_radius_au`) outside the disk;
/// `OutOfRange` for a negative or non-finite `sigma_au` or a bad search range
/// (flaring angle within (0, 1], temperature scale > 0, lower < upper);
/// `InvalidChoice` for an absent species or for the flaring angle under
/// self-consistent flaring; `NoSolutionInRange` when no value in the range
/// puts the snowline at the observed radius (the message gives the radii the
/// range reaches) or the snowline jumps across it.
pub fn anchor_to_snowline(
    parameters: &ModelParameters,
    request: &AnchorRequest,
) -> Result<AnchoredDisk, PhysicsError> {
    let d = &parameters.disk;
    let r_obs = request.observed_radius_au;
    if !(r_obs >= d.inner_radius_au && r_obs <= d.outer_radius_au) {
        return Err(PhysicsError::RadiusOutsideDisk {
            name: "observed_radius_au",
            radius_au: r_obs,
            inner_au: d.inner_radius_au,
            outer_au: d.outer_radius_au,
        });
    }
    if !(request.sigma_au >= 0.0 && request.sigma_au.is_finite()) {
        return Err(PhysicsError::OutOfRange {
            name: "sigma_au",
            value: request.sigma_au,
            allowed: ">= 0 and finite",
        });
    }
    let (lo, hi) = request.range;
    match request.parameter {
        AnchorParameter::FlaringAngle => {
            if !(lo > 0.0 && lo <= 1.0) {
                return Err(PhysicsError::OutOfRange {
                    name: "range_lower",
                    value: lo,
                    allowed: "in (0, 1] for the flaring angle",
                });
            }
            if !(hi > 0.0 && hi <= 1.0) {
                return Err(PhysicsError::OutOfRange {
                    name: "range_upper",
                    value: hi,
                    allowed: "in (0, 1] for the flaring angle",
                });
            }
            if d.self_consistent_flaring {
                return Err(PhysicsError::InvalidChoice {
                    name: "disk.self_consistent_flaring",
                    allowed: "false to anchor disk.flaring_angle (the grazing angle is otherwise solved, not set; anchor disk.midplane_temperature_scale instead)",
                    got: "true".to_string(),
                });
            }
        }
        AnchorParameter::MidplaneTemperatureScale => {
            if !(lo > 0.0 && lo.is_finite()) {
                return Err(PhysicsError::OutOfRange {
                    name: "range_lower",
                    value: lo,
                    allowed: "> 0 and finite for the temperature scale",
                });
            }
            if !(hi > 0.0 && hi.is_finite()) {
                return Err(PhysicsError::OutOfRange {
                    name: "range_upper",
                    value: hi,
                    allowed: "> 0 and finite for the temperature scale",
                });
            }
        }
    }
    if !(hi > lo) {
        return Err(PhysicsError::NotIncreasing {
            name: "range_upper",
            value: hi,
            lower_name: "range_lower",
            lower: lo,
        });
    }
    let probe = SnowlineProbe::new(parameters, request.parameter, request.species)?;
    if probe.molecules_per_h == 0.0 {
        return Err(PhysicsError::InvalidChoice {
            name: "species",
            allowed: "a species present in the disk (abundance > 0)",
            got: request.species.key().to_string(),
        });
    }
    let mut solver = Solver {
        probe: &probe,
        cache: Vec::new(),
    };
    let value = solver.solve(r_obs, (lo, hi), request.species)?;
    let achieved = match solver.evaluate(value)? {
        SnowlinePosition::Radius(r) => r,
        // The solve only returns values whose snowline matched the target.
        other => unreachable_position(other)?,
    };
    let end = |solver: &mut Solver, r: f64| -> SigmaEnd {
        if !(r > 0.0) || r < d.inner_radius_au || r > d.outer_radius_au {
            return SigmaEnd {
                radius_au: r,
                value: None,
                reason: format!("{r} au lies outside the disk"),
            };
        }
        match solver.solve(r, (lo, hi), request.species) {
            Ok(v) => SigmaEnd {
                radius_au: r,
                value: Some(v),
                reason: String::new(),
            },
            Err(e) => SigmaEnd {
                radius_au: r,
                value: None,
                reason: e.to_string(),
            },
        }
    };
    let (at_minus_sigma, at_plus_sigma) = if request.sigma_au > 0.0 {
        (
            end(&mut solver, r_obs - request.sigma_au),
            end(&mut solver, r_obs + request.sigma_au),
        )
    } else {
        let same = SigmaEnd {
            radius_au: r_obs,
            value: Some(value),
            reason: String::new(),
        };
        (same.clone(), same)
    };
    Ok(AnchoredDisk {
        parameters: request.parameter.with_value(parameters, value),
        parameter: request.parameter,
        value,
        original_value: request.parameter.value(parameters),
        species: request.species,
        observed_radius_au: r_obs,
        sigma_au: request.sigma_au,
        achieved_radius_au: achieved,
        at_minus_sigma,
        at_plus_sigma,
        snowline_evaluations: solver.cache.len(),
    })
}

fn unreachable_position(p: SnowlinePosition) -> Result<f64, PhysicsError> {
    Err(PhysicsError::NoSolutionInRange {
        what: format!(
            "anchor: the solved value gave no snowline radius ({})",
            p.describe()
        ),
    })
}

/// Brent's method over ln(parameter), with cached evaluations (the range ends
/// are shared by the three solves of one anchor).
struct Solver<'a> {
    probe: &'a SnowlineProbe,
    cache: Vec<(f64, SnowlinePosition)>,
}

impl Solver<'_> {
    fn evaluate(&mut self, value: f64) -> Result<SnowlinePosition, PhysicsError> {
        if let Some((_, p)) = self.cache.iter().find(|(v, _)| *v == value) {
            return Ok(*p);
        }
        let p = self.probe.position(value)?;
        self.cache.push((value, p));
        Ok(p)
    }

    /// The first sign change of g in ascending parameter order among the
    /// evaluated values inside [lo, hi] (so later solves start from the
    /// tightest bracket the earlier ones found), as (x_a, x_b, g_a, g_b) in ln(parameter).
    fn cached_bracket(&self, ln_target: f64, lo: f64, hi: f64) -> Option<(f64, f64, f64, f64)> {
        let mut points: Vec<(f64, f64)> = self
            .cache
            .iter()
            .filter(|(v, _)| *v >= lo && *v <= hi)
            .map(|(v, p)| (*v, p.ln_offset(ln_target)))
            .collect();
        points.sort_by(|p, q| p.0.total_cmp(&q.0));
        points
            .windows(2)
            .find(|w| w[0].1.signum() != w[1].1.signum())
            .map(|w| (ln(w[0].0), ln(w[1].0), w[0].1, w[1].1))
    }

    fn solve(
        &mut self,
        r_target: f64,
        (lo, hi): (f64, f64),
        species: Species,
    ) -> Result<f64, PhysicsError> {
        let ln_target = ln(r_target);
        let name = self.probe.parameter.name();
        let (xa, xb) = (ln(lo), ln(hi));
        let g = |p: SnowlinePosition| p.ln_offset(ln_target);
        let (at_lo, at_hi) = (self.evaluate(lo)?, self.evaluate(hi)?);
        if g(at_lo) == 0.0 {
            return Ok(lo);
        }
        if g(at_hi) == 0.0 {
            return Ok(hi);
        }
        // An earlier evaluation may already sit exactly on the target.
        if let Some((v, _)) = self
            .cache
            .iter()
            .find(|(v, p)| *v >= lo && *v <= hi && g(*p) == 0.0)
        {
            return Ok(*v);
        }
        let mut bracket = self.cached_bracket(ln_target, lo, hi);
        if bracket.is_none() {
            // Scan interior values, equally spaced in ln(parameter), for a sign change.
            for k in 1..SCAN_POINTS + 1 {
                self.evaluate(exp(xa + (xb - xa) * k as f64 / (SCAN_POINTS + 1) as f64))?;
            }
            bracket = self.cached_bracket(ln_target, lo, hi);
        }
        let Some((a, b, fa, fb)) = bracket else {
            return Err(PhysicsError::NoSolutionInRange {
                what: format!(
                    "{}: no {} in [{lo}, {hi}] puts the {} snowline at {r_target} au; the range puts it between {} (at {lo}) and {} (at {hi})",
                    name,
                    name,
                    species.key(),
                    at_lo.describe(),
                    at_hi.describe(),
                ),
            });
        };
        let (x, partner) = self.brent(a, b, fa, fb, ln_target)?;
        let value = exp(x);
        let pos = self.evaluate(value)?;
        if g(pos).abs() <= RADIUS_MATCH_TOLERANCE_LN {
            return Ok(value);
        }
        let other = self.evaluate(exp(partner))?;
        Err(PhysicsError::NoSolutionInRange {
            what: format!(
                "{}: the {} snowline jumps across {r_target} au near {} = {:.6} (from {} to {}); no value puts it there",
                name,
                species.key(),
                name,
                value,
                pos.describe(),
                other.describe(),
            ),
        })
    }

    /// Brent's root finder on g(x) = ln r_snow(e^x) - ln r_target with g(a) g(b) < 0.
    /// Infinite values of g (no snowline on the grid) force a bisection step.
    /// Returns the root and the other end of the final bracket.
    fn brent(
        &mut self,
        a: f64,
        b: f64,
        fa: f64,
        fb: f64,
        ln_target: f64,
    ) -> Result<(f64, f64), PhysicsError> {
        let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
        let (mut c, mut fc) = (b, fb);
        let (mut d, mut e) = (b - a, b - a);
        for _ in 0..200 {
            if (fb > 0.0 && fc > 0.0) || (fb < 0.0 && fc < 0.0) {
                c = a;
                fc = fa;
                d = b - a;
                e = d;
            }
            if fc.abs() < fb.abs() {
                a = b;
                b = c;
                c = a;
                fa = fb;
                fb = fc;
                fc = fa;
            }
            let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * ROOT_TOLERANCE_LN;
            let xm = 0.5 * (c - b);
            if xm.abs() <= tol1 || fb == 0.0 {
                return Ok((b, c));
            }
            let finite = fa.is_finite() && fb.is_finite() && fc.is_finite();
            if finite && e.abs() >= tol1 && fa.abs() > fb.abs() {
                let s = fb / fa;
                let (mut p, mut q);
                if a == c {
                    p = 2.0 * xm * s;
                    q = 1.0 - s;
                } else {
                    let qq = fa / fc;
                    let r = fb / fc;
                    p = s * (2.0 * xm * qq * (qq - r) - (b - a) * (r - 1.0));
                    q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
                }
                if p > 0.0 {
                    q = -q;
                }
                p = p.abs();
                let min1 = 3.0 * xm * q - (tol1 * q).abs();
                let min2 = (e * q).abs();
                if 2.0 * p < min1.min(min2) {
                    e = d;
                    d = p / q;
                } else {
                    d = xm;
                    e = d;
                }
            } else {
                d = xm;
                e = d;
            }
            a = b;
            fa = fb;
            b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
            fb = self.evaluate(exp(b))?.ln_offset(ln_target);
        }
        Ok((b, c))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Model;

    fn small() -> ModelParameters {
        let mut p = ModelParameters::defaults();
        p.grid.vertical_cells = 40;
        p.grid.max_height_scale_heights = 8.0;
        p
    }

    fn full_run_first_freeze_out_au(p: &ModelParameters, s: Species) -> Option<f64> {
        Model::run(p)
            .unwrap()
            .snowlines(s)
            .into_iter()
            .find(|x| x.direction == CrossingDirection::FreezeOut)
            .map(|x| x.radius_cm / AU_CM)
    }

    #[test]
    fn fast_path_equals_the_full_model() {
        // Internal consistency: the probe must reproduce Model::run + snowlines exactly.
        let mut p = small();
        for s in [Species::H2O, Species::CO2, Species::CO] {
            for scale in [0.7, 1.0, 1.6] {
                p.disk.midplane_temperature_scale = scale;
                let fast = first_freeze_out_snowline(&p, s).unwrap();
                let full = full_run_first_freeze_out_au(&p, s);
                match (fast, full) {
                    (SnowlinePosition::Radius(a), Some(b)) => {
                        assert_eq!(a, b, "{s:?} scale {scale}")
                    }
                    // No freeze-out crossing on the grid in either calculation.
                    (SnowlinePosition::InsideGrid | SnowlinePosition::BeyondGrid, None) => {}
                    (a, b) => panic!("{s:?} scale {scale}: fast {a:?}, full {b:?}"),
                }
            }
        }
        p.ices.desorption = DesorptionModel::FixedTemperature;
        let fast = first_freeze_out_snowline(&p, Species::CO2).unwrap();
        assert_eq!(
            fast,
            SnowlinePosition::Radius(full_run_first_freeze_out_au(&p, Species::CO2).unwrap())
        );
    }

    #[test]
    fn anchoring_to_the_models_own_snowline_returns_the_original_value() {
        // Round trip (internal): anchor to the radius the model itself produced.
        let mut p = small();
        p.disk.midplane_temperature_scale = 1.3;
        let r = full_run_first_freeze_out_au(&p, Species::CO).unwrap();
        let a = anchor_to_snowline(
            &p,
            &AnchorRequest::new(
                Species::CO,
                r,
                0.0,
                AnchorParameter::MidplaneTemperatureScale,
            ),
        )
        .unwrap();
        assert!((a.value / 1.3 - 1.0).abs() < 1e-9, "{}", a.value);
        assert!((a.achieved_radius_au / r - 1.0).abs() < 1e-9);
    }

    #[test]
    fn unreachable_radius_says_what_the_range_spans() {
        let p = small();
        let req = AnchorRequest {
            range: (0.9, 1.1),
            ..AnchorRequest::new(
                Species::H2O,
                200.0,
                0.0,
                AnchorParameter::MidplaneTemperatureScale,
            )
        };
        let err = anchor_to_snowline(&p, &req).unwrap_err();
        let text = err.to_string();
        assert!(text.starts_with("disk.midplane_temperature_scale: no disk.midplane_temperature_scale in [0.9, 1.1] puts the H2O snowline at 200 au; the range puts it between "), "{text}");
    }

    #[test]
    fn invalid_requests_are_refused_with_names() {
        let mut p = small();
        let e = anchor_to_snowline(
            &p,
            &AnchorRequest::new(Species::CO, 900.0, 0.0, AnchorParameter::FlaringAngle),
        )
        .unwrap_err();
        assert_eq!(
            e.to_string(),
            "observed_radius_au: must lie in the disk [0.1, 500] au, got 900"
        );
        let e = anchor_to_snowline(
            &p,
            &AnchorRequest::new(Species::CO, 30.0, -1.0, AnchorParameter::FlaringAngle),
        )
        .unwrap_err();
        assert_eq!(e.to_string(), "sigma_au: must be >= 0 and finite, got -1");
        let req = AnchorRequest {
            range: (0.0, 1.0),
            ..AnchorRequest::new(Species::CO, 30.0, 1.0, AnchorParameter::FlaringAngle)
        };
        assert_eq!(
            anchor_to_snowline(&p, &req).unwrap_err().to_string(),
            "range_lower: must be in (0, 1] for the flaring angle, got 0"
        );
        p.disk.self_consistent_flaring = true;
        let e = anchor_to_snowline(
            &p,
            &AnchorRequest::new(Species::CO, 30.0, 1.0, AnchorParameter::FlaringAngle),
        )
        .unwrap_err();
        assert!(
            e.to_string().starts_with(
                "disk.self_consistent_flaring: must be false to anchor disk.flaring_angle"
            ),
            "{e}"
        );
        p.disk.self_consistent_flaring = false;
        p.composition.carbon.hcn = 0.0;
        p.composition.carbon.co += 0.01;
        let e = anchor_to_snowline(
            &p,
            &AnchorRequest::new(Species::HCN, 30.0, 1.0, AnchorParameter::FlaringAngle),
        )
        .unwrap_err();
        assert_eq!(
            e.to_string(),
            "species: must be a species present in the disk (abundance > 0), got HCN"
        );
    }
}
