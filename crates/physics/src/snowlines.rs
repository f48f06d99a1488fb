//! Snowlines (midplane crossings of f_ice = 0.5) and snow surfaces (the height
//! where f_ice falls through 0.5), docs/model.md section 7 and Numerics.

use crate::math::{exp, ln};

/// Which way the ice fraction changes going outward through a snowline.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CrossingDirection {
    /// Gas inside, ice outside (the usual snowline).
    FreezeOut,
    /// Ice inside, gas outside (e.g. photodesorbed or warmer outer regions).
    Desorption,
}

impl CrossingDirection {
    /// Key in outputs.
    pub fn key(self) -> &'static str {
        match self {
            CrossingDirection::FreezeOut => "freeze_out",
            CrossingDirection::Desorption => "desorption",
        }
    }
}

/// One snowline.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Snowline {
    /// Radius [cm].
    pub radius_cm: f64,
    /// Direction going outward.
    pub direction: CrossingDirection,
}

/// Where the snow surface is in one column.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SnowSurface {
    /// The midplane is not frozen (f_ice < 0.5 at z = 0): no surface.
    MidplaneNotFrozen,
    /// f_ice falls through 0.5 at this height [cm].
    Height(f64),
    /// f_ice >= 0.5 all the way to the top of the grid.
    AboveGrid,
}

/// The snowlines along the midplane (docs/model.md section 7 and Numerics): with a condensation
/// temperature (the step model) where T_mid crosses it, ln T against ln r; otherwise where the
/// midplane ice fraction (from `ice_fraction`, asked only then) crosses 0.5, linear in ln r.
pub fn midplane_snowlines(
    radius_cm: &[f64],
    midplane_temperature_k: &[f64],
    step_condensation_k: Option<f64>,
    ice_fraction: impl FnOnce() -> Vec<f64>,
) -> Vec<Snowline> {
    match step_condensation_k {
        Some(t_cond) => crossings(radius_cm, midplane_temperature_k, t_cond, true, false),
        None => crossings(radius_cm, &ice_fraction(), 0.5, false, true),
    }
}

/// Every crossing of `threshold` by `values` (indexed by radius), inner first,
/// interpolated linearly in ln r of `values` (or, with `log_values`, of ln values
/// against ln r). "Frozen" means value >= threshold when `frozen_above`, else value < threshold.
pub fn crossings(
    radii_cm: &[f64],
    values: &[f64],
    threshold: f64,
    log_values: bool,
    frozen_above: bool,
) -> Vec<Snowline> {
    let frozen = |v: f64| {
        if frozen_above {
            v >= threshold
        } else {
            v < threshold
        }
    };
    let map = |v: f64| if log_values { ln(v) } else { v };
    let mut out = Vec::new();
    for j in 0..radii_cm.len().saturating_sub(1) {
        let (a, b) = (values[j], values[j + 1]);
        if frozen(a) == frozen(b) {
            continue;
        }
        let t = (map(threshold) - map(a)) / (map(b) - map(a));
        let ln_r = ln(radii_cm[j]) + t * (ln(radii_cm[j + 1]) - ln(radii_cm[j]));
        out.push(Snowline {
            radius_cm: exp(ln_r),
            direction: if frozen(b) {
                CrossingDirection::FreezeOut
            } else {
                CrossingDirection::Desorption
            },
        });
    }
    out
}

/// The snow surface of one column: scanning up from z = 0, the lowest height where
/// the column goes from frozen below to not frozen above, interpolated linearly in z.
/// `values` are at `heights_cm` (index 0 is z = 0).
pub fn snow_surface(
    heights_cm: &[f64],
    values: &[f64],
    threshold: f64,
    frozen_above: bool,
) -> SnowSurface {
    let frozen = |v: f64| {
        if frozen_above {
            v >= threshold
        } else {
            v < threshold
        }
    };
    if !frozen(values[0]) {
        return SnowSurface::MidplaneNotFrozen;
    }
    for s in 1..values.len() {
        if !frozen(values[s]) {
            let (a, b) = (values[s - 1], values[s]);
            let t = (threshold - a) / (b - a);
            return SnowSurface::Height(
                heights_cm[s - 1] + t * (heights_cm[s] - heights_cm[s - 1]),
            );
        }
    }
    SnowSurface::AboveGrid
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crossing_interpolates_in_log_radius() {
        let r = [1.0, 100.0];
        let s = crossings(&r, &[0.0, 1.0], 0.5, false, true);
        assert_eq!(s.len(), 1);
        assert!((s[0].radius_cm - 10.0).abs() < 1e-12);
        assert_eq!(s[0].direction, CrossingDirection::FreezeOut);
    }

    #[test]
    fn snow_surface_cases() {
        let z = [0.0, 1.0, 2.0];
        assert_eq!(
            snow_surface(&z, &[0.2, 0.1, 0.0], 0.5, true),
            SnowSurface::MidplaneNotFrozen
        );
        assert_eq!(
            snow_surface(&z, &[1.0, 1.0, 0.9], 0.5, true),
            SnowSurface::AboveGrid
        );
        assert_eq!(
            snow_surface(&z, &[1.0, 1.0, 0.0], 0.5, true),
            SnowSurface::Height(1.5)
        );
    }
}
