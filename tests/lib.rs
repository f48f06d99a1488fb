//! Shared helpers of the integration tests: comparisons that print the
//! expected value, the actual value, the tolerance and what was compared, so
//! a failing check explains itself without a debugger.

/// Assert that `actual` is within the relative tolerance `rel_tol` of `expected`.
///
/// `what` names the check and its source, e.g. "T_eff at 1 au (CHECK_VALUES 3, D)".
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
    (0..n).map(|i| f((la + (i as f64 + 0.5) * h).exp()) * h).sum()
}
