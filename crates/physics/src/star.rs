//! The star: radius from luminosity and effective temperature, elemental
//! abundances per H nucleus (docs/model.md section 1).

use crate::math::{exp10, sqrt};
use crate::params::{StarParameters, ELEMENT_COUNT};
use crate::units::{AU_CM, SOLAR_LUMINOSITY_ERG_PER_S, STEFAN_BOLTZMANN_CGS};

/// Stellar radius [cm] from the Stefan-Boltzmann law.
///
/// Equation: R* = sqrt(L* / (4 pi sigma T*^4)).
/// Symbols: L* = `luminosity_lsun` (converted with the IAU nominal L_sun), T* = `effective_temperature_k`.
pub fn stellar_radius_cm(luminosity_lsun: f64, effective_temperature_k: f64) -> f64 {
    let l = luminosity_lsun * SOLAR_LUMINOSITY_ERG_PER_S;
    let t2 = effective_temperature_k * effective_temperature_k;
    sqrt(l / (4.0 * std::f64::consts::PI * STEFAN_BOLTZMANN_CGS * t2 * t2))
}

/// Stellar radius [au].
pub fn stellar_radius_au(luminosity_lsun: f64, effective_temperature_k: f64) -> f64 {
    stellar_radius_cm(luminosity_lsun, effective_temperature_k) / AU_CM
}

/// Elemental abundances per H nucleus (C, O, N, S, Si, Mg, Fe) of the star.
///
/// Equation: X/H = 10^(log eps(X) - 12 + offset_dex(X)), unrounded
/// (Asplund et al. 2009 Table 1, or Asplund, Amarsi & Grevesse 2021).
pub fn stellar_abundances_per_h(star: &StarParameters) -> [f64; ELEMENT_COUNT] {
    let log_eps = star.abundance_reference.log_eps();
    let mut x = [0.0; ELEMENT_COUNT];
    for i in 0..ELEMENT_COUNT {
        x[i] = exp10(log_eps[i] - 12.0 + star.offset_dex[i]);
    }
    x
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::params::ModelParameters;

    #[test]
    fn sun_has_nominal_radius() {
        // IAU 2015 B3: L = 3.828e26 W and R = 6.957e8 m imply T_eff = 5772 K; inverted here.
        let r = stellar_radius_cm(1.0, 5772.0);
        assert!((r / 6.957e10 - 1.0).abs() < 2e-4, "{r}");
    }

    #[test]
    fn solar_c_to_o_asplund2009() {
        // docs/model.md section 1: solar C/O = 10^(8.43-8.69) = 0.5495 (Asplund et al. 2009).
        let x = stellar_abundances_per_h(&ModelParameters::defaults().star);
        assert!((x[0] / x[1] - 0.549_540_873_857_625).abs() < 1e-12);
    }
}
