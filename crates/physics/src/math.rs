//! Transcendental functions used by the model, routed through the `libm` crate.
//!
//! Native builds would otherwise use the platform's C library and WebAssembly
//! builds Rust's own port, which can differ in the last bit. Using one
//! implementation everywhere makes the page and the CLI agree to the bit, so
//! exported tables are byte-identical (an invariant the browser tests check).

/// e^x.
#[inline]
pub fn exp(x: f64) -> f64 {
    libm::exp(x)
}
/// Natural logarithm.
#[inline]
pub fn ln(x: f64) -> f64 {
    libm::log(x)
}
/// x^y.
#[inline]
pub fn pow(x: f64, y: f64) -> f64 {
    libm::pow(x, y)
}
/// Square root (IEEE-exact on every platform; kept here for uniformity).
#[inline]
pub fn sqrt(x: f64) -> f64 {
    libm::sqrt(x)
}
/// Cosine.
#[inline]
pub fn cos(x: f64) -> f64 {
    libm::cos(x)
}
/// 10^x.
#[inline]
pub fn exp10(x: f64) -> f64 {
    libm::pow(10.0, x)
}
/// Fourth root.
#[inline]
pub fn root4(x: f64) -> f64 {
    libm::sqrt(libm::sqrt(x))
}

/// exp(x) - 1, accurate for small |x| (libm `expm1`).
#[inline]
pub fn exp_m1(x: f64) -> f64 {
    libm::expm1(x)
}

/// ln(1 + x), accurate for small |x| (libm `log1p`).
#[inline]
pub fn ln_1p(x: f64) -> f64 {
    libm::log1p(x)
}

/// ln Gamma(x) (libm `lgamma`).
#[inline]
pub fn ln_gamma(x: f64) -> f64 {
    libm::lgamma(x)
}
