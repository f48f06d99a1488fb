//! Rosseland mean opacities of Bell & Lin 1994 (ApJ 427, 987, Table 3 as
//! recalled in docs/model.md section 4): kappa = k rho^a T^b per regime, regimes in
//! order of rising temperature, boundaries where neighbouring laws meet.

use crate::math::{ln, pow};

/// One regime: kappa = k rho^a T^b [cm^2 g^-1].
#[derive(Debug, Clone, Copy)]
struct Regime {
    k: f64,
    a: f64,
    b: f64,
}

/// Bell & Lin 1994 regimes in order of rising temperature: ice grains, ice
/// evaporation, metal grains, metal evaporation, molecules, H-, bound-free and
/// free-free, electron scattering.
const REGIMES: [Regime; 8] = [
    Regime {
        k: 2e-4,
        a: 0.0,
        b: 2.0,
    },
    Regime {
        k: 2e16,
        a: 0.0,
        b: -7.0,
    },
    Regime {
        k: 0.1,
        a: 0.0,
        b: 0.5,
    },
    Regime {
        k: 2e81,
        a: 1.0,
        b: -24.0,
    },
    Regime {
        k: 1e-8,
        a: 2.0 / 3.0,
        b: 3.0,
    },
    Regime {
        k: 1e-36,
        a: 1.0 / 3.0,
        b: 10.0,
    },
    Regime {
        k: 1.5e20,
        a: 1.0,
        b: -2.5,
    },
    Regime {
        k: 0.348,
        a: 0.0,
        b: 0.0,
    },
];

/// Temperature [K] where regimes `lo` and `hi` give the same opacity at `density_g_cm3`:
/// T = (k_lo rho^a_lo / (k_hi rho^a_hi))^(1/(b_hi - b_lo)).
fn intersection_k(lo: &Regime, hi: &Regime, ln_rho: f64) -> f64 {
    let ln_t = (ln(lo.k) - ln(hi.k) + (lo.a - hi.a) * ln_rho) / (hi.b - lo.b);
    crate::math::exp(ln_t)
}

/// The Bell & Lin 1994 Rosseland opacity [cm^2 g^-1] at density and temperature.
///
/// Regimes whose interval is empty at this density are dropped and their
/// neighbours meet at their own intersection (docs/model.md section 4), so kappa
/// is continuous in T. Valid for rho > 0, T > 0.
pub fn bell_lin_1994_cm2_per_g(density_g_cm3: f64, temperature_k: f64) -> f64 {
    let ln_rho = ln(density_g_cm3);
    // Stack of (regime index, lower boundary temperature).
    let mut stack: [(usize, f64); 8] = [(0, 0.0); 8];
    let mut len = 1;
    for (i, next) in REGIMES.iter().enumerate().skip(1) {
        let mut t_b = intersection_k(&REGIMES[stack[len - 1].0], next, ln_rho);
        while len > 1 && t_b <= stack[len - 1].1 {
            len -= 1;
            t_b = intersection_k(&REGIMES[stack[len - 1].0], next, ln_rho);
        }
        stack[len] = (i, t_b);
        len += 1;
    }
    let mut regime = REGIMES[stack[0].0];
    for &(i, t_lower) in &stack[1..len] {
        if temperature_k >= t_lower {
            regime = REGIMES[i];
        } else {
            break;
        }
    }
    regime.k * pow(density_g_cm3, regime.a) * pow(temperature_k, regime.b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ice_boundaries_match_model_md() {
        // docs/model.md section 4: ice boundaries at 166.8 K and 202.7 K (derived from the laws).
        let rho = 1e-10;
        let t1 = intersection_k(&REGIMES[0], &REGIMES[1], ln(rho));
        let t2 = intersection_k(&REGIMES[1], &REGIMES[2], ln(rho));
        assert!((t1 - 166.8).abs() < 0.05, "{t1}");
        assert!((t2 - 202.7).abs() < 0.05, "{t2}");
        assert!((bell_lin_1994_cm2_per_g(rho, 100.0) - 2.0).abs() < 1e-12);
    }

    #[test]
    fn opacity_is_continuous_in_temperature() {
        for rho in [1e-12, 1e-9, 1e-6] {
            let mut t: f64 = 10.0;
            let mut prev = bell_lin_1994_cm2_per_g(rho, t);
            while t < 1e5 {
                let next_t = t * 1.0001;
                let next = bell_lin_1994_cm2_per_g(rho, next_t);
                // A jump would exceed the largest local power law (|b| = 24) times the step.
                assert!(
                    (next / prev).ln().abs() < 25.0 * 1e-4 * 1.01,
                    "rho={rho} T={t}"
                );
                prev = next;
                t = next_t;
            }
        }
    }
}
