//! The two-population dust model of Birnstiel, Klahr & Ercolano 2012 (BKE12): the size of the
//! large grains set by growth, fragmentation and drift, their Stokes numbers and the
//! mass-weighted radial speed of the dust (docs/model.md section 12.3). The equation and section
//! numbers of BKE12 and the other papers cited here, and BKE12's calibration constants, are from
//! memory, not re-checked against the papers (docs/model.md section 12.11, which also lists the
//! choices, e.g. the dust diffusivity factor 1/(1 + St^2)).

use crate::math::{exp, sqrt};
use std::f64::consts::PI;

/// Fragmentation-limit calibration factor f_f = 0.37 (BKE12, section 3.2, fitted to their
/// full coagulation simulations).
pub const FRAGMENTATION_FACTOR: f64 = 0.37;
/// Drift-limit calibration factor f_d = 0.55 (BKE12, section 3.3).
pub const DRIFT_FACTOR: f64 = 0.55;
/// Mass fraction in the large population where fragmentation limits the size, 0.75 (BKE12,
/// section 4).
pub const LARGE_FRACTION_FRAGMENTATION: f64 = 0.75;
/// Mass fraction in the large population where drift limits the size (and while growing), 0.97
/// (BKE12, section 4).
pub const LARGE_FRACTION_DRIFT: f64 = 0.97;
/// Power-law index N of the relative velocity in the drift-fragmentation limit, 1/2 (BKE12,
/// eq. 20 and the text around it; from memory).
pub const DRIFT_FRAGMENTATION_INDEX: f64 = 0.5;

/// Midplane Stokes number of a grain of radius a in the Epstein regime,
/// St = (pi/2) a rho_s / Sigma_g (Birnstiel, Dullemond & Brauer 2010, eq. 11; BKE12 eq. 6).
pub fn stokes_number(
    grain_radius_cm: f64,
    material_density_g_cm3: f64,
    gas_surface_density_g_cm2: f64,
) -> f64 {
    0.5 * PI * grain_radius_cm * material_density_g_cm3 / gas_surface_density_g_cm2
}

/// Radial speed [cm s^-1] of a particle of Stokes number St in gas of radial speed v_gas:
/// v = v_gas / (1 + St^2) + 2 St/(1 + St^2) eta v_K, with eta v_K = (c_s^2 / (2 v_K)) dlnP/dlnr
/// (Weidenschilling 1977; Takeuchi & Lin 2002 eq. 18; BKE12 eq. 13). Negative is inward; the
/// drift part peaks at St = 1 with eta v_K.
pub fn radial_speed_cm_s(
    stokes: f64,
    gas_speed_cm_s: f64,
    sound_speed_cm_s: f64,
    kepler_speed_cm_s: f64,
    dlnp_dlnr: f64,
) -> f64 {
    let d = 1.0 + stokes * stokes;
    let eta_vk = 0.5 * sound_speed_cm_s * sound_speed_cm_s / kepler_speed_cm_s * dlnp_dlnr;
    gas_speed_cm_s / d + 2.0 * stokes / d * eta_vk
}

/// The local quantities the size limits need.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DustPlace {
    /// Gas surface density [g cm^-2].
    pub gas_surface_density_g_cm2: f64,
    /// Dust surface density [g cm^-2].
    pub dust_surface_density_g_cm2: f64,
    /// Isothermal sound speed [cm s^-1].
    pub sound_speed_cm_s: f64,
    /// Keplerian speed [cm s^-1].
    pub kepler_speed_cm_s: f64,
    /// |dlnP/dlnr| of the midplane pressure (floored by the caller).
    pub pressure_slope: f64,
}

/// The parameters of the dust model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DustModel {
    /// Turbulence alpha (the gas alpha).
    pub alpha: f64,
    /// Fragmentation velocity u_f [cm s^-1].
    pub fragmentation_velocity_cm_s: f64,
    /// Material density rho_s [g cm^-3].
    pub material_density_g_cm3: f64,
    /// Monomer radius a_0 [cm].
    pub monomer_radius_cm: f64,
}

/// Which limit sets the large grains' size.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SizeLimit {
    /// Still growing (below every limit).
    Growth,
    /// Turbulent fragmentation.
    Fragmentation,
    /// Radial drift.
    Drift,
    /// Fragmentation by the differential drift speed.
    DriftFragmentation,
}

impl DustModel {
    /// Turbulent fragmentation limit a_frag = f_f (2/(3 pi)) (Sigma_g / (rho_s alpha)) u_f^2/c_s^2
    /// (BKE12 eq. 8, f_f = 0.37) [cm].
    pub fn fragmentation_limit_cm(&self, d: &DustPlace) -> f64 {
        let cs2 = d.sound_speed_cm_s * d.sound_speed_cm_s;
        FRAGMENTATION_FACTOR * 2.0 / (3.0 * PI) * d.gas_surface_density_g_cm2
            / (self.material_density_g_cm3 * self.alpha)
            * self.fragmentation_velocity_cm_s
            * self.fragmentation_velocity_cm_s
            / cs2
    }

    /// Drift limit a_drift = f_d (2 Sigma_d / (pi rho_s)) (v_K^2 / c_s^2) / |dlnP/dlnr|
    /// (BKE12 eq. 18, f_d = 0.55) [cm].
    pub fn drift_limit_cm(&self, d: &DustPlace) -> f64 {
        let cs2 = d.sound_speed_cm_s * d.sound_speed_cm_s;
        DRIFT_FACTOR * 2.0 * d.dust_surface_density_g_cm2 / (PI * self.material_density_g_cm3)
            * d.kepler_speed_cm_s
            * d.kepler_speed_cm_s
            / cs2
            / d.pressure_slope
    }

    /// Drift-fragmentation limit a_df = f_f (2 Sigma_g / (pi rho_s)) u_f v_K /
    /// (|dlnP/dlnr| c_s^2 (1 - N)), N = 1/2 (BKE12 eq. 20; from memory) [cm].
    pub fn drift_fragmentation_limit_cm(&self, d: &DustPlace) -> f64 {
        let cs2 = d.sound_speed_cm_s * d.sound_speed_cm_s;
        FRAGMENTATION_FACTOR * 2.0 * d.gas_surface_density_g_cm2
            / (PI * self.material_density_g_cm3)
            * self.fragmentation_velocity_cm_s
            * d.kepler_speed_cm_s
            / (d.pressure_slope * cs2 * (1.0 - DRIFT_FRAGMENTATION_INDEX))
    }

    /// The large grains' radius after a step `dt_s` from `radius_cm`: growth at the rate
    /// da/dt = a / tau_grow, tau_grow = 1/(epsilon Omega_K), epsilon = Sigma_d/Sigma_g (BKE12
    /// eq. 17 and section 3.1), exact over the step (a exp(dt/tau)), then capped by the smallest
    /// limit and floored at the monomer radius. Returns the radius, the limit and the large
    /// population's mass fraction f_m (0.75 fragmentation, 0.97 drift or growth; BKE12 section 4).
    pub fn grow(
        &self,
        d: &DustPlace,
        radius_cm: f64,
        omega_s: f64,
        dt_s: f64,
    ) -> (f64, SizeLimit, f64) {
        let epsilon = d.dust_surface_density_g_cm2 / d.gas_surface_density_g_cm2;
        let grown = radius_cm * exp((dt_s * epsilon * omega_s).min(700.0));
        let frag = self.fragmentation_limit_cm(d);
        let drift = self.drift_limit_cm(d);
        let df = self.drift_fragmentation_limit_cm(d);
        let (limit, which) = [
            (frag, SizeLimit::Fragmentation),
            (drift, SizeLimit::Drift),
            (df, SizeLimit::DriftFragmentation),
        ]
        .into_iter()
        .fold((f64::INFINITY, SizeLimit::Growth), |acc, x| {
            if x.0 < acc.0 {
                x
            } else {
                acc
            }
        });
        let (a, kind) = if grown < limit {
            (grown, SizeLimit::Growth)
        } else {
            (limit, which)
        };
        let a = a.max(self.monomer_radius_cm);
        let fm = match kind {
            SizeLimit::Fragmentation | SizeLimit::DriftFragmentation => {
                LARGE_FRACTION_FRAGMENTATION
            }
            SizeLimit::Drift | SizeLimit::Growth => LARGE_FRACTION_DRIFT,
        };
        (a, kind, fm)
    }
}

/// Keplerian speed v_K = sqrt(G M / r) [cm s^-1].
pub fn kepler_speed_cm_s(star_mass_g: f64, radius_cm: f64) -> f64 {
    sqrt(crate::units::GRAVITATIONAL_CONSTANT_CGS * star_mass_g / radius_cm)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn drift_peaks_at_unit_stokes_number_with_eta_vk() {
        // Weidenschilling 1977: the inward drift peaks at St = 1 (his ~1 m bodies at 1 au) with
        // speed eta v_K, about 50-60 m/s in the minimum-mass nebula (from memory). MMSN at 1 au
        // (Hayashi 1981): T = 280 K, dlnP/dlnr = -3.25 (Sigma ∝ r^-1.5, T ∝ r^-0.5).
        let cs = crate::structure::sound_speed_cm_s(280.0);
        let vk = kepler_speed_cm_s(crate::units::SOLAR_MASS_G, crate::units::AU_CM);
        let peak = radial_speed_cm_s(1.0, 0.0, cs, vk, -3.25);
        let eta_vk = 0.5 * cs * cs / vk * 3.25;
        assert!((peak + eta_vk).abs() < 1e-9 * eta_vk);
        assert!(peak < -4.5e3 && peak > -6.5e3, "{peak}");
        for st in [0.1, 0.5, 0.9, 1.1, 2.0, 10.0] {
            assert!(radial_speed_cm_s(st, 0.0, cs, vk, -3.25) > peak);
        }
        // Small grains move with the gas.
        let v = radial_speed_cm_s(1e-9, -10.0, cs, vk, -3.25);
        assert!((v + 10.0).abs() < 1e-4, "{v}");
    }

    #[test]
    fn size_is_capped_by_the_smallest_limit() {
        let m = DustModel {
            alpha: 1e-3,
            fragmentation_velocity_cm_s: 1000.0,
            material_density_g_cm3: 1.6,
            monomer_radius_cm: 1e-4,
        };
        let d = DustPlace {
            gas_surface_density_g_cm2: 100.0,
            dust_surface_density_g_cm2: 1.0,
            sound_speed_cm_s: 6e4,
            kepler_speed_cm_s: 2.98e6,
            pressure_slope: 2.75,
        };
        let (a, kind, fm) = m.grow(&d, 1e-4, 2e-7, 1e14);
        let lim = m
            .fragmentation_limit_cm(&d)
            .min(m.drift_limit_cm(&d))
            .min(m.drift_fragmentation_limit_cm(&d));
        assert_eq!(a, lim);
        assert_ne!(kind, SizeLimit::Growth);
        assert!(fm == 0.75 || fm == 0.97);
        // A short step grows exponentially at epsilon Omega.
        let (a2, kind2, _) = m.grow(&d, 1e-4, 2e-7, 1e8);
        assert_eq!(kind2, SizeLimit::Growth);
        assert!((a2 / (1e-4 * exp(1e8 * 0.01 * 2e-7)) - 1.0).abs() < 1e-14);
    }
}
