//! Shared helpers of the integration tests: comparisons that print the
//! expected value, the actual value, the tolerance and what was compared, so
//! a failing check explains itself without a debugger.

/// Assert that `actual` is within the relative tolerance `rel_tol` of `expected`.
///
/// `what` names the check and its source, e.g. "T_eff at 1 au (docs/check-values.md section 3, D)".
#[track_caller]
pub fn assert_rel(actual: f64, expected: f64, rel_tol: f64, what: &str) {
    let rel = ((actual - expected) / expected).abs();
    assert!(
        actual.is_finite() && rel <= rel_tol,
        "{what}: got {actual:.10e}, expected {expected:.10e}, relative difference {rel:.3e} > tolerance {rel_tol:.1e}"
    );
}

/// Assert that `actual` is within the absolute tolerance `abs_tol` of `expected`.
#[track_caller]
pub fn assert_abs(actual: f64, expected: f64, abs_tol: f64, what: &str) {
    let diff = (actual - expected).abs();
    assert!(
        actual.is_finite() && diff <= abs_tol,
        "{what}: got {actual:.10}, expected {expected:.10}, difference {diff:.3e} > tolerance {abs_tol:.1e}"
    );
}

/// Midpoint-rule integral of `f` over ln r from `a` to `b` (both > 0), `n` points.
pub fn integrate_ln(a: f64, b: f64, n: usize, f: impl Fn(f64) -> f64) -> f64 {
    let (la, lb) = (a.ln(), b.ln());
    let h = (lb - la) / n as f64;
    (0..n)
        .map(|i| f((la + (i as f64 + 0.5) * h).exp()) * h)
        .sum()
}

/// The default disk on a coarser vertical grid (midplane checks only need each
/// column's normalisation, not its vertical resolution).
pub fn small_default() -> nivalis_physics::ModelParameters {
    let mut p = nivalis_physics::ModelParameters::defaults();
    p.grid.vertical_cells = 24;
    p
}

/// The docs/check-values.md section 5a inputs (D) in the step model on [`small_default`]:
/// Asplund et al. 2009 C/H and O/H, refractory C 50 %, CO/H = 1.0e-4, CO2 the
/// rest of the volatile carbon, no CH4, CH3OH or HCN, silicates holding 20 %
/// of the oxygen (oxygen_per_silicon x_Si = 0.2 x_O, about 3.03), water the rest;
/// the step model's built-in Oberg, Murray-Clay & Bergin 2011 condensation
/// temperatures (H2O 135 K, CO2 47 K, CO 20 K).
pub fn step_model_5a() -> nivalis_physics::ModelParameters {
    let mut p = small_default();
    p.ices.desorption = nivalis_physics::params::DesorptionModel::FixedTemperature;
    let x_c = f64::powf(10.0, 8.43 - 12.0);
    let x_o = f64::powf(10.0, 8.69 - 12.0);
    let x_si = f64::powf(10.0, 7.51 - 12.0);
    let cf = &mut p.composition.carbon;
    cf.refractory = 0.5;
    cf.co = 1.0e-4 / x_c;
    cf.co2 = 1.0 - cf.refractory - cf.co;
    cf.ch4 = 0.0;
    cf.ch3oh = 0.0;
    cf.hcn = 0.0;
    p.composition.oxygen_per_silicon = 0.2 * x_o / x_si;
    // Oberg, Murray-Clay & Bergin 2011 keep refractory carbon solid wherever today's disk is below
    // the soot line: the reversible picture, kept as an option (docs/model.md section 8).
    p.composition.soot_line = nivalis_physics::params::SootLine::Reversible;
    p
}
