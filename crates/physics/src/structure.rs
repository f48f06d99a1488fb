//! Disk physical structure (docs/model.md sections 2-6): radial grid, surface
//! density, midplane temperature, vertical temperature and hydrostatic density
//! per column, and the radiation fields (columns, A_V, FUV, cosmic rays).

use crate::error::PhysicsError;
#[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
use crate::math::powi_slice;
use crate::math::{cos, cos_reduced, exp, exp_poly_slice, ln, pow, root4, sqrt};
use crate::opacity::bell_lin_1994_cm2_per_g;
use crate::params::{
    GasMassMeaning, ModelParameters, Opacity, SootLine, TemperatureLaw, VerticalTemperature,
};
use crate::star::stellar_radius_cm;
use crate::units::*;
use std::f64::consts::PI;

/// Disk constants in cgs, derived once from the parameters.
#[derive(Debug, Clone, PartialEq)]
pub struct DiskConstants {
    /// Stellar mass [g].
    pub star_mass_g: f64,
    /// Stellar luminosity [erg s^-1].
    pub luminosity_erg_s: f64,
    /// Stellar radius [cm].
    pub stellar_radius_cm: f64,
    /// Sigma_c [g cm^-2].
    pub sigma_c_g_cm2: f64,
    /// R_c [cm].
    pub characteristic_radius_cm: f64,
    /// gamma.
    pub gamma: f64,
    /// Accretion rate [g s^-1].
    pub accretion_rate_g_s: f64,
    /// Inner and outer edge [cm].
    pub inner_radius_cm: f64,
    /// Outer edge [cm].
    pub outer_radius_cm: f64,
    /// Opacity choice.
    pub opacity: Opacity,
    /// Vertical temperature choice.
    pub vertical: VerticalTemperature,
    /// Background temperature [K].
    pub background_temperature_k: f64,
    /// Midplane temperature multiplier.
    pub temperature_scale: f64,
    /// Fixed flaring angle (also the start of the self-consistent iteration).
    pub flaring_angle: f64,
    /// z_max / H_mid.
    pub max_height_scale_heights: f64,
    /// Vertical cells.
    pub vertical_cells: usize,
    /// Surface cosmic-ray rate [s^-1].
    pub cosmic_ray_rate_s: f64,
    /// Stellar FUV at 1 au [Habing].
    pub fuv_1au_habing: f64,
    /// Interstellar FUV [Habing].
    pub interstellar_fuv_habing: f64,
    /// Visual extinction per H nucleus column [mag cm^2] of the disk's dust.
    pub extinction_per_hydrogen_mag_cm2: f64,
    /// Midplane temperature law.
    pub temperature_law: TemperatureLaw,
}

impl DiskConstants {
    /// Derive the cgs constants. Fails if the inner radius lies inside the star.
    pub fn new(p: &ModelParameters) -> Result<DiskConstants, PhysicsError> {
        let d = &p.disk;
        let r_star = stellar_radius_cm(p.star.luminosity_lsun, p.star.effective_temperature_k);
        if d.inner_radius_au * AU_CM <= r_star {
            return Err(PhysicsError::InnerRadiusInsideStar {
                inner_radius_au: d.inner_radius_au,
                stellar_radius_au: r_star / AU_CM,
            });
        }
        let rc = d.characteristic_radius_au * AU_CM;
        let gamma = d.surface_density_index;
        let profile_mass_g = match d.gas_mass_meaning {
            GasMassMeaning::ProfileTotal => d.gas_mass_msun * SOLAR_MASS_G,
            GasMassMeaning::BetweenEdges => {
                let f = profile_fraction_between(
                    d.inner_radius_au,
                    d.outer_radius_au,
                    d.characteristic_radius_au,
                    gamma,
                );
                if !(f >= MIN_PROFILE_FRACTION_BETWEEN_EDGES) {
                    return Err(PhysicsError::OutOfRange {
                        name: "disk.gas_mass_msun",
                        value: f,
                        allowed: "a disk whose edges hold at least 1e-9 of the surface-density profile (the value is that fraction)",
                    });
                }
                d.gas_mass_msun * SOLAR_MASS_G / f
            }
        };
        Ok(DiskConstants {
            star_mass_g: p.star.mass_msun * SOLAR_MASS_G,
            luminosity_erg_s: p.star.luminosity_lsun * SOLAR_LUMINOSITY_ERG_PER_S,
            stellar_radius_cm: r_star,
            sigma_c_g_cm2: surface_density_normalisation_g_cm2(profile_mass_g, rc, gamma),
            characteristic_radius_cm: rc,
            gamma,
            accretion_rate_g_s: d.accretion_rate_msun_per_yr * MSUN_PER_YR_TO_G_PER_S,
            inner_radius_cm: d.inner_radius_au * AU_CM,
            outer_radius_cm: d.outer_radius_au * AU_CM,
            opacity: d.opacity.clone(),
            vertical: d.vertical_temperature.clone(),
            background_temperature_k: d.background_temperature_k,
            temperature_scale: d.midplane_temperature_scale,
            flaring_angle: d.flaring_angle,
            max_height_scale_heights: p.grid.max_height_scale_heights,
            vertical_cells: p.grid.vertical_cells,
            cosmic_ray_rate_s: d.cosmic_ray_rate_s,
            fuv_1au_habing: p.star.fuv_1au_habing,
            interstellar_fuv_habing: d.interstellar_fuv_habing,
            extinction_per_hydrogen_mag_cm2: visual_extinction_per_hydrogen_mag_cm2(
                d.dust_to_gas,
                d.grain_radius_um * MICRON_CM,
                d.grain_density_g_cm3,
            ),
            temperature_law: d.temperature.clone(),
        })
    }
}

/// Log-spaced radial cell centres [cm] (docs/model.md Numerics):
/// r_j = r_in (r_out/r_in)^((j + 0.5)/N_r).
pub fn radial_cell_centres_cm(inner_cm: f64, outer_cm: f64, cells: usize) -> Vec<f64> {
    let ln_ratio = ln(outer_cm / inner_cm);
    (0..cells)
        .map(|j| inner_cm * exp(ln_ratio * (j as f64 + 0.5) / cells as f64))
        .collect()
}

/// Sigma_c [g cm^-2] of the self-similar profile holding total mass `mass_g`:
/// Sigma_c = (2 - gamma) M_disk / (2 pi R_c^2) (Lynden-Bell & Pringle 1974;
/// Hartmann et al. 1998; form of Andrews et al. 2009), valid for gamma < 2.
pub fn surface_density_normalisation_g_cm2(
    mass_g: f64,
    characteristic_radius_cm: f64,
    gamma: f64,
) -> f64 {
    (2.0 - gamma) * mass_g / (2.0 * PI * characteristic_radius_cm * characteristic_radius_cm)
}

/// The smallest fraction of the profile the edges may hold when the gas mass is
/// given between the edges (below it Sigma_c would be absurd or infinite).
pub const MIN_PROFILE_FRACTION_BETWEEN_EDGES: f64 = 1e-9;

/// Fraction of the self-similar profile's total mass between r_in and r_out:
/// M(<r) / M_total = 1 - exp[-(r/R_c)^(2-gamma)] for Sigma of
/// [`surface_density_g_cm2`] (exact integral of 2 pi r Sigma dr, gamma < 2;
/// Lynden-Bell & Pringle 1974; Hartmann et al. 1998), so the fraction is
/// exp[-(r_in/R_c)^(2-gamma)] - exp[-(r_out/R_c)^(2-gamma)]. Radii in any one unit.
pub fn profile_fraction_between(
    inner_radius: f64,
    outer_radius: f64,
    characteristic_radius: f64,
    gamma: f64,
) -> f64 {
    let k = 2.0 - gamma;
    exp(-pow(inner_radius / characteristic_radius, k))
        - exp(-pow(outer_radius / characteristic_radius, k))
}

/// Visual wavelength [cm] at which A_V is defined (Johnson V, 0.55 um).
pub const VISUAL_WAVELENGTH_CM: f64 = 0.55e-4;

/// Size parameter x_c = 2 pi a / lambda_V above which the extinction efficiency
/// is the large-grain limit Q_ext = 2 (see [`extinction_efficiency_visual`]).
/// Fixed so that ISM dust (dust-to-gas 0.01, a = 0.1 um, rho = 3 g cm^-3)
/// gives N_H / A_V = 1.87e21 cm^-2 mag^-1 (Bohlin, Savage & Drake 1978):
/// Q_ext(ISM) = 1.087 / (1.086 x 3 x 0.01 x 1.4 m_H / (4 a rho)) = 0.8409 at
/// x = 1.1424, so x_c = 2 x / Q_ext(ISM) = 2.717.
pub fn extinction_transition_size_parameter() -> f64 {
    let per_h = ism_geometric_extinction_per_hydrogen_mag_cm2();
    let q_ism = 1.0 / (HYDROGEN_COLUMN_PER_AV_CM2 * per_h);
    let x_ism = 2.0 * PI * 0.1 * MICRON_CM / VISUAL_WAVELENGTH_CM;
    2.0 * x_ism / q_ism
}

/// 1.086 pi a^2 n_gr / n_H [mag cm^2] for ISM dust with Q_ext = 1.
fn ism_geometric_extinction_per_hydrogen_mag_cm2() -> f64 {
    geometric_extinction_per_hydrogen_mag_cm2(0.01, 0.1 * MICRON_CM, 3.0)
}

/// 1.086 pi a^2 n_gr / n_H [mag cm^2] (Q_ext = 1): grains of radius a and
/// material density rho_gr carrying the mass fraction d/g of the gas,
/// n_gr / n_H = (d/g) 1.4 m_H / ((4/3) pi a^3 rho_gr), so
/// 1.086 pi a^2 n_gr / n_H = 1.086 x 3 (d/g) 1.4 m_H / (4 a rho_gr).
fn geometric_extinction_per_hydrogen_mag_cm2(
    dust_to_gas: f64,
    grain_radius_cm: f64,
    grain_density_g_cm3: f64,
) -> f64 {
    1.086 * 3.0 * dust_to_gas * MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G
        / (4.0 * grain_radius_cm * grain_density_g_cm3)
}

/// Extinction efficiency at V of one grain size, Q_ext(x), x = 2 pi a / lambda_V:
/// Q_ext = 2 for x >= x_c (the large-grain limit of Mie theory, the
/// "extinction paradox": van de Hulst 1957; Bohren & Huffman 1983) and
/// Q_ext = 2 x / x_c below (small absorbing grains: Q_abs proportional to x in
/// the Rayleigh limit, Bohren & Huffman 1983), with x_c from
/// [`extinction_transition_size_parameter`] (about 2.72, a = 0.24 um).
/// So for a < 0.24 um the extinction per gram of dust no longer depends on a.
pub fn extinction_efficiency_visual(grain_radius_cm: f64) -> f64 {
    let x = 2.0 * PI * grain_radius_cm / VISUAL_WAVELENGTH_CM;
    let x_c = extinction_transition_size_parameter();
    if x >= x_c {
        2.0
    } else {
        2.0 * x / x_c
    }
}

/// Visual extinction per H nucleus column [mag cm^2] of single-size grains:
/// A_V / N_H = 1.086 Q_ext pi a^2 n_gr / n_H (extinction cross-section of a
/// sphere; 1.086 = 2.5 log10 e), with Q_ext from [`extinction_efficiency_visual`]
/// and n_gr / n_H = (d/g) 1.4 m_H / ((4/3) pi a^3 rho_gr). ISM dust gives
/// 1 / 1.87e21 (Bohlin, Savage & Drake 1978); for grains above 0.24 um it is
/// proportional to (d/g) / (a rho_gr).
pub fn visual_extinction_per_hydrogen_mag_cm2(
    dust_to_gas: f64,
    grain_radius_cm: f64,
    grain_density_g_cm3: f64,
) -> f64 {
    extinction_efficiency_visual(grain_radius_cm)
        * geometric_extinction_per_hydrogen_mag_cm2(
            dust_to_gas,
            grain_radius_cm,
            grain_density_g_cm3,
        )
}

/// Gas surface density [g cm^-2]:
/// Sigma(r) = Sigma_c (r/R_c)^-gamma exp[-(r/R_c)^(2-gamma)] (Andrews et al. 2009, eq. 1 form).
pub fn surface_density_g_cm2(c: &DiskConstants, radius_cm: f64) -> f64 {
    let x = radius_cm / c.characteristic_radius_cm;
    c.sigma_c_g_cm2 * pow(x, -c.gamma) * exp(-pow(x, 2.0 - c.gamma))
}

/// Irradiation temperature [K] of a flared disk with grazing angle phi:
/// T_irr^4 = phi L* / (8 pi sigma r^2) (Chiang & Goldreich 1997; fixed-angle form
/// of Dullemond, Dominik & Natta 2001). phi = 1/2 gives the optically thin blackbody.
pub fn irradiation_temperature_k(luminosity_erg_s: f64, flaring_angle: f64, radius_cm: f64) -> f64 {
    root4(
        flaring_angle * luminosity_erg_s
            / (8.0 * PI * STEFAN_BOLTZMANN_CGS * radius_cm * radius_cm),
    )
}

/// Viscous effective temperature to the fourth [K^4] for accretion rate Mdot:
/// T_eff^4 = 3 G M* Mdot (1 - sqrt(R*/r)) / (8 pi sigma r^3)
/// (Shakura & Sunyaev 1973; Pringle 1981 eq. 3.13 flux). Zero inside R*.
pub fn viscous_effective_temperature4(
    star_mass_g: f64,
    accretion_rate_g_s: f64,
    stellar_radius_cm: f64,
    radius_cm: f64,
) -> f64 {
    let boundary = 1.0 - sqrt(stellar_radius_cm / radius_cm);
    if boundary <= 0.0 {
        return 0.0;
    }
    3.0 * GRAVITATIONAL_CONSTANT_CGS * star_mass_g * accretion_rate_g_s * boundary
        / (8.0 * PI * STEFAN_BOLTZMANN_CGS * radius_cm * radius_cm * radius_cm)
}

/// Isothermal sound speed [cm s^-1]: c_s = sqrt(k T / (mu m_H)), mu = 2.37.
pub fn sound_speed_cm_s(temperature_k: f64) -> f64 {
    sqrt(BOLTZMANN_ERG_PER_K * temperature_k / (MEAN_MOLECULAR_WEIGHT * HYDROGEN_MASS_G))
}

/// Keplerian angular frequency [s^-1]: Omega = sqrt(G M / r^3).
pub fn keplerian_frequency_s(star_mass_g: f64, radius_cm: f64) -> f64 {
    sqrt(GRAVITATIONAL_CONSTANT_CGS * star_mass_g / (radius_cm * radius_cm * radius_cm))
}

/// Midplane pressure scale height [cm]: H = c_s(T_mid) / Omega_K.
pub fn scale_height_cm(star_mass_g: f64, temperature_k: f64, radius_cm: f64) -> f64 {
    sound_speed_cm_s(temperature_k) / keplerian_frequency_s(star_mass_g, radius_cm)
}

/// The midplane energy balance at one radius.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MidplaneTemperature {
    /// T_mid [K] (after the temperature scale).
    pub temperature_k: f64,
    /// T_irr [K].
    pub irradiation_temperature_k: f64,
    /// T_acc [K] at the solution.
    pub accretion_temperature_k: f64,
}

/// Midplane temperature (docs/model.md section 4):
/// T_mid^4 = T_irr^4 + T_acc^4 + T_bg^4, T_acc^4 = (3/4)(tau + 2/3) T_eff,acc^4,
/// tau = kappa_R Sigma / 2 (grey Eddington approximation).
///
/// With the Bell & Lin 1994 opacity kappa depends on T_mid and on
/// rho_mid = Sigma / (sqrt(2 pi) H(T_mid)); the root is bracketed by scanning
/// upward from the kappa = 0 solution in steps of 2 % to 1e6 K and bisected
/// to 1e-13 relative (the lowest root above the kappa = 0 solution).
/// The result is multiplied by `temperature_scale` (default 1).
///
/// With the observed law (`TemperatureLaw::PowerLaw`) T_mid = max(T_1au (r/au)^-q, T_bg)
/// instead (the power law observers fit, e.g. Andrews & Williams 2005), then scaled;
/// it is reported as the irradiation temperature, with no accretion part.
pub fn midplane_temperature(
    c: &DiskConstants,
    flaring_angle: f64,
    radius_cm: f64,
    surface_density_g_cm2: f64,
) -> Result<MidplaneTemperature, PhysicsError> {
    if let TemperatureLaw::PowerLaw {
        midplane_1au_k,
        midplane_index,
        ..
    } = c.temperature_law
    {
        let t = (midplane_1au_k * pow(radius_cm / AU_CM, -midplane_index))
            .max(c.background_temperature_k);
        return Ok(MidplaneTemperature {
            temperature_k: t * c.temperature_scale,
            irradiation_temperature_k: t,
            accretion_temperature_k: 0.0,
        });
    }
    let t_irr = irradiation_temperature_k(c.luminosity_erg_s, flaring_angle, radius_cm);
    let t_bg = c.background_temperature_k;
    let t_eff4 = viscous_effective_temperature4(
        c.star_mass_g,
        c.accretion_rate_g_s,
        c.stellar_radius_cm,
        radius_cm,
    );
    let fixed4 = t_irr.powi(4) + t_bg.powi(4);
    let t_acc4 = |kappa: f64| 0.75 * (kappa * surface_density_g_cm2 / 2.0 + 2.0 / 3.0) * t_eff4;
    let t = match c.opacity {
        Opacity::Constant {
            rosseland_cm2_per_g,
        } => root4(fixed4 + t_acc4(rosseland_cm2_per_g)),
        Opacity::BellLin1994 => {
            let omega = keplerian_frequency_s(c.star_mass_g, radius_cm);
            let kappa_at = |t: f64| {
                let rho = surface_density_g_cm2 * omega / (sqrt(2.0 * PI) * sound_speed_cm_s(t));
                bell_lin_1994_cm2_per_g(rho, t)
            };
            let balance = |t: f64| t.powi(4) - fixed4 - t_acc4(kappa_at(t));
            let mut lo = root4(fixed4 + t_acc4(0.0));
            if t_eff4 == 0.0 {
                lo
            } else {
                let mut hi = lo;
                while balance(hi) <= 0.0 {
                    lo = hi;
                    hi *= 1.02;
                    if hi > 1e6 {
                        return Err(PhysicsError::NoTemperatureSolution {
                            radius_au: radius_cm / AU_CM,
                        });
                    }
                }
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if balance(mid) <= 0.0 {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                    if hi - lo <= 1e-13 * hi {
                        break;
                    }
                }
                0.5 * (lo + hi)
            }
        }
    };
    let tau_term = t.powi(4) - fixed4;
    Ok(MidplaneTemperature {
        temperature_k: t * c.temperature_scale,
        irradiation_temperature_k: t_irr,
        accretion_temperature_k: root4(tau_term.max(0.0)),
    })
}

/// Grazing angles and midplane temperatures on the radial grid.
///
/// Fixed: phi = `flaring_angle` everywhere. Self-consistent (Chiang & Goldreich
/// 1997): phi(r) = 0.4 R*/r + r d(h/r)/dr with h = 4 H_mid (common practice for
/// small grains), derivative by centred differences in ln r (one-sided at the
/// ends), floored at 0.4 R*/r where the disk self-shadows and capped at 1.
///
/// Solver (a documented departure from the first specification's plain under-relaxed
/// iteration): the T_mid <-> phi fixed point has a grid-scale gain of about
/// (h/r) / (2 phi dln r) (about 6 at 200 cells, growing with N_r), so a relaxed
/// fixed-point iteration diverges unless its weight shrinks as 1/N_r^2. We solve
/// the same discrete equations, ln T_j = ln T_mid(phi_j(T_{j-1}, T_j, T_{j+1})),
/// by damped Newton iterations (tridiagonal Jacobian, partial pivoting), starting
/// from the fixed-angle solution, until the largest relative change of T_mid is
/// below 1e-6; at most 200 iterations, else `FlaringNotConverged`.
pub fn flaring_solution(
    c: &DiskConstants,
    self_consistent: bool,
    radii_cm: &[f64],
    sigma_g_cm2: &[f64],
) -> Result<(Vec<f64>, Vec<MidplaneTemperature>), PhysicsError> {
    let n = radii_cm.len();
    let fixed = vec![c.flaring_angle; n];
    let solve_all = |phi: &[f64]| -> Result<Vec<MidplaneTemperature>, PhysicsError> {
        (0..n)
            .map(|j| midplane_temperature(c, phi[j], radii_cm[j], sigma_g_cm2[j]))
            .collect()
    };
    let mid = solve_all(&fixed)?;
    let observed_law = matches!(c.temperature_law, TemperatureLaw::PowerLaw { .. });
    if !self_consistent || n < 3 || observed_law {
        return Ok((fixed, mid));
    }
    let ln_r: Vec<f64> = radii_cm.iter().map(|&r| ln(r)).collect();
    // y_j = h/r = 4 H(T_j)/r_j = k_j sqrt(T_j).
    let k: Vec<f64> = (0..n)
        .map(|j| 4.0 * scale_height_cm(c.star_mass_g, 1.0, radii_cm[j]) / radii_cm[j])
        .collect();
    let stencil = |j: usize| {
        if j == 0 {
            (0, 1)
        } else if j == n - 1 {
            (n - 2, n - 1)
        } else {
            (j - 1, j + 1)
        }
    };
    // Grazing angle from ln T; also whether it is clamped (floor or cap).
    let angles = |u: &[f64]| -> Vec<(f64, bool)> {
        (0..n)
            .map(|j| {
                let (a, b) = stencil(j);
                let slope = (k[b] * exp(0.5 * u[b]) - k[a] * exp(0.5 * u[a])) / (ln_r[b] - ln_r[a]);
                let floor = 0.4 * c.stellar_radius_cm / radii_cm[j];
                let raw = floor + slope;
                if raw <= floor {
                    (floor, true)
                } else if raw >= 1.0 {
                    (1.0, true)
                } else {
                    (raw, false)
                }
            })
            .collect()
    };
    let residual = |u: &[f64],
                    phi: &[(f64, bool)]|
     -> Result<(Vec<f64>, Vec<MidplaneTemperature>), PhysicsError> {
        let mut r = Vec::with_capacity(n);
        let mut m = Vec::with_capacity(n);
        for j in 0..n {
            let t = midplane_temperature(c, phi[j].0, radii_cm[j], sigma_g_cm2[j])?;
            r.push(u[j] - ln(t.temperature_k));
            m.push(t);
        }
        Ok((r, m))
    };
    let norm = |r: &[f64]| r.iter().fold(0.0f64, |acc, v| acc.max(v.abs()));
    let mut u: Vec<f64> = mid.iter().map(|m| ln(m.temperature_k)).collect();
    let mut phi = angles(&u);
    let (mut res, mut current) = residual(&u, &phi)?;
    const MAX_ITERATIONS: usize = 200;
    let mut last_change = f64::INFINITY;
    for _ in 0..MAX_ITERATIONS {
        // Jacobian J = I - g_j dphi_j/du_m, g_j = d ln T_mid / d phi at j (finite difference).
        let mut sub = vec![0.0; n];
        let mut diag = vec![1.0; n];
        let mut sup = vec![0.0; n];
        for j in 0..n {
            if phi[j].1 {
                continue;
            }
            let p = phi[j].0;
            let dp = 1e-6 * p;
            let t_plus =
                midplane_temperature(c, p + dp, radii_cm[j], sigma_g_cm2[j])?.temperature_k;
            let g = (ln(t_plus) - ln(current[j].temperature_k)) / dp;
            let (a, b) = stencil(j);
            let inv = 1.0 / (ln_r[b] - ln_r[a]);
            let db = 0.5 * k[b] * exp(0.5 * u[b]) * inv;
            let da = -0.5 * k[a] * exp(0.5 * u[a]) * inv;
            for (m, d) in [(a, da), (b, db)] {
                let entry = -g * d;
                if m + 1 == j {
                    sub[j] += entry;
                } else if m == j {
                    diag[j] += entry;
                } else {
                    sup[j] += entry;
                }
            }
        }
        let step = solve_tridiagonal(
            &sub,
            &diag,
            &sup,
            &res.iter().map(|v| -v).collect::<Vec<_>>(),
        );
        let old_norm = norm(&res);
        let mut lambda = 1.0;
        loop {
            let trial: Vec<f64> = u.iter().zip(&step).map(|(a, s)| a + lambda * s).collect();
            let trial_phi = angles(&trial);
            let (trial_res, trial_mid) = residual(&trial, &trial_phi)?;
            if norm(&trial_res) < old_norm || lambda < 1e-3 {
                last_change = trial_mid
                    .iter()
                    .zip(&current)
                    .map(|(a, b)| ((a.temperature_k - b.temperature_k) / b.temperature_k).abs())
                    .fold(0.0, f64::max);
                u = trial;
                phi = trial_phi;
                res = trial_res;
                current = trial_mid;
                break;
            }
            lambda *= 0.5;
        }
        if last_change < 1e-6 && norm(&res) < 1e-6 {
            return Ok((phi.iter().map(|p| p.0).collect(), current));
        }
    }
    Err(PhysicsError::FlaringNotConverged {
        iterations: MAX_ITERATIONS,
        max_relative_change: last_change,
    })
}

/// Solve a tridiagonal system (row j: sub[j] x[j-1] + diag[j] x[j] + sup[j] x[j+1] = rhs[j])
/// by Gaussian elimination with partial pivoting (the LAPACK gtsv scheme).
fn solve_tridiagonal(sub: &[f64], diag: &[f64], sup: &[f64], rhs: &[f64]) -> Vec<f64> {
    let n = diag.len();
    // Row j holds up to three non-zeros after pivoting: columns j, j+1, j+2.
    let mut d: Vec<f64> = diag.to_vec();
    let mut du: Vec<f64> = sup.to_vec();
    let mut du2 = vec![0.0; n];
    let mut dl: Vec<f64> = (0..n)
        .map(|j| if j + 1 < n { sub[j + 1] } else { 0.0 })
        .collect();
    let mut b: Vec<f64> = rhs.to_vec();
    for j in 0..n - 1 {
        if dl[j].abs() > d[j].abs() {
            // Swap rows j and j+1.
            std::mem::swap(&mut d[j], &mut dl[j]);
            let (dj1, duj1) = (d[j + 1], if j + 1 < n - 1 { du[j + 1] } else { 0.0 });
            let old_du = du[j];
            du[j] = dj1;
            d[j + 1] = old_du;
            du2[j] = duj1;
            if j + 1 < n - 1 {
                du[j + 1] = 0.0;
            }
            b.swap(j, j + 1);
            // Now row j = [dl_old->d[j], du[j], du2[j]]; row j+1 = [d_old (in dl[j]) , d[j+1], du[j+1]].
            let factor = dl[j] / d[j];
            d[j + 1] -= factor * du[j];
            if j + 1 < n - 1 {
                du[j + 1] -= factor * du2[j];
            }
            b[j + 1] -= factor * b[j];
        } else {
            let factor = if d[j] != 0.0 { dl[j] / d[j] } else { 0.0 };
            d[j + 1] -= factor * du[j];
            b[j + 1] -= factor * b[j];
        }
    }
    let mut x = vec![0.0; n];
    for j in (0..n).rev() {
        let mut v = b[j];
        if j + 1 < n {
            v -= du[j] * x[j + 1];
        }
        if j + 2 < n {
            v -= du2[j] * x[j + 2];
        }
        x[j] = if d[j] != 0.0 { v / d[j] } else { 0.0 };
    }
    x
}

/// One vertical column: samples at z = 0 (index 0) and at the N_z cell centres
/// z_k = (k + 0.5) z_max / N_z (indices 1..=N_z).
#[derive(Debug, Clone, PartialEq)]
pub struct Column {
    /// Height [cm].
    pub height_cm: Vec<f64>,
    /// Gas (= dust) temperature [K].
    pub temperature_k: Vec<f64>,
    /// Gas mass density [g cm^-3].
    pub density_g_cm3: Vec<f64>,
    /// H nuclei per cm^3: rho / (1.4 m_H).
    pub hydrogen_density_cm3: Vec<f64>,
    /// Gas column above the point, one side [g cm^-2].
    pub column_above_g_cm2: Vec<f64>,
    /// Visual extinction from above [mag].
    pub visual_extinction_mag: Vec<f64>,
    /// FUV photon flux [photons cm^-2 s^-1] incl. cosmic-ray induced photons.
    pub fuv_photon_flux_cm2_s: Vec<f64>,
    /// Cosmic-ray ionisation rate [s^-1].
    pub ionization_rate_s: Vec<f64>,
}

/// Every field of one sample of a [`Column`] (or of a structure's flat per-sample fields).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    /// Height [cm].
    pub height_cm: f64,
    /// Gas (= dust) temperature [K].
    pub temperature_k: f64,
    /// Gas mass density [g cm^-3].
    pub density_g_cm3: f64,
    /// H nuclei per cm^3.
    pub hydrogen_density_cm3: f64,
    /// Gas column above the point, one side [g cm^-2].
    pub column_above_g_cm2: f64,
    /// Visual extinction from above [mag].
    pub visual_extinction_mag: f64,
    /// FUV photon flux [photons cm^-2 s^-1].
    pub fuv_photon_flux_cm2_s: f64,
    /// Cosmic-ray ionisation rate [s^-1].
    pub ionization_rate_s: f64,
}

impl Column {
    /// Every field of sample `k`.
    pub fn sample(&self, k: usize) -> Sample {
        Sample {
            height_cm: self.height_cm[k],
            temperature_k: self.temperature_k[k],
            density_g_cm3: self.density_g_cm3[k],
            hydrogen_density_cm3: self.hydrogen_density_cm3[k],
            column_above_g_cm2: self.column_above_g_cm2[k],
            visual_extinction_mag: self.visual_extinction_mag[k],
            fuv_photon_flux_cm2_s: self.fuv_photon_flux_cm2_s[k],
            ionization_rate_s: self.ionization_rate_s[k],
        }
    }

    /// A column of `n` samples, every field zero.
    pub fn zeroed(n: usize) -> Column {
        Column {
            height_cm: vec![0.0; n],
            temperature_k: vec![0.0; n],
            density_g_cm3: vec![0.0; n],
            hydrogen_density_cm3: vec![0.0; n],
            column_above_g_cm2: vec![0.0; n],
            visual_extinction_mag: vec![0.0; n],
            fuv_photon_flux_cm2_s: vec![0.0; n],
            ionization_rate_s: vec![0.0; n],
        }
    }

    /// An empty column with room for `n` samples.
    pub fn with_capacity(n: usize) -> Column {
        Column {
            height_cm: Vec::with_capacity(n),
            temperature_k: Vec::with_capacity(n),
            density_g_cm3: Vec::with_capacity(n),
            hydrogen_density_cm3: Vec::with_capacity(n),
            column_above_g_cm2: Vec::with_capacity(n),
            visual_extinction_mag: Vec::with_capacity(n),
            fuv_photon_flux_cm2_s: Vec::with_capacity(n),
            ionization_rate_s: Vec::with_capacity(n),
        }
    }

    /// Give every field `n` samples, keeping the buffers (and their values) when the length is
    /// already `n`; new entries are zero.
    pub(crate) fn resize(&mut self, n: usize) {
        for v in [
            &mut self.height_cm,
            &mut self.temperature_k,
            &mut self.density_g_cm3,
            &mut self.hydrogen_density_cm3,
            &mut self.column_above_g_cm2,
            &mut self.visual_extinction_mag,
            &mut self.fuv_photon_flux_cm2_s,
            &mut self.ionization_rate_s,
        ] {
            v.resize(n, 0.0);
        }
    }

    /// Append another column's samples (the grid stores all columns one after another).
    pub fn append(&mut self, other: &Column) {
        self.height_cm.extend_from_slice(&other.height_cm);
        self.temperature_k.extend_from_slice(&other.temperature_k);
        self.density_g_cm3.extend_from_slice(&other.density_g_cm3);
        self.hydrogen_density_cm3
            .extend_from_slice(&other.hydrogen_density_cm3);
        self.column_above_g_cm2
            .extend_from_slice(&other.column_above_g_cm2);
        self.visual_extinction_mag
            .extend_from_slice(&other.visual_extinction_mag);
        self.fuv_photon_flux_cm2_s
            .extend_from_slice(&other.fuv_photon_flux_cm2_s);
        self.ionization_rate_s
            .extend_from_slice(&other.ionization_rate_s);
    }
}

/// Temperature [K] at height z in a column (docs/model.md section 5): isothermal,
/// or the two-layer profile of Dartois et al. 2003 (as used by Williams & Best 2014):
/// T = T_atm + (T_mid - T_atm) cos^(2 delta)(pi z / (2 z_q)) for z < z_q, else T_atm,
/// T_atm = s (L*/(16 pi sigma r^2))^(1/4) (Chiang & Goldreich 1997 surface layer), never below T_mid;
/// with an observed temperature law that gives one, T_atm = T_atm,1au (r/au)^-q_atm
/// (the two-layer fits of Dartois et al. 2003), never below T_mid.
pub fn column_temperature_k(
    c: &DiskConstants,
    radius_cm: f64,
    t_mid: f64,
    h_mid: f64,
    z_cm: f64,
) -> f64 {
    VerticalProfile::new(c, radius_cm, t_mid, h_mid).temperature_k(z_cm)
}

/// The vertical temperature law of one column with its per-column constants
/// precomputed (the hot loop of the structure calls it at every fine point).
#[derive(Debug, Clone, Copy)]
struct VerticalProfile {
    t_mid: f64,
    /// T_atm, or NaN for an isothermal column.
    t_atm: f64,
    z_q: f64,
    /// 2 delta, and whether it is a small whole number (then powi is exact and fast).
    exponent: f64,
    integer_exponent: Option<i32>,
}

impl VerticalProfile {
    fn new(c: &DiskConstants, radius_cm: f64, t_mid: f64, h_mid: f64) -> VerticalProfile {
        match c.vertical {
            VerticalTemperature::Isothermal => VerticalProfile {
                t_mid,
                t_atm: f64::NAN,
                z_q: 0.0,
                exponent: 0.0,
                integer_exponent: None,
            },
            VerticalTemperature::TwoLayer {
                superheating,
                transition_scale_heights,
                delta,
            } => {
                let t_atm = match c.temperature_law {
                    TemperatureLaw::PowerLaw {
                        atmosphere: Some((t_atm_1au, q_atm)),
                        ..
                    } => t_atm_1au * pow(radius_cm / AU_CM, -q_atm),
                    _ => {
                        superheating
                            * root4(
                                c.luminosity_erg_s
                                    / (16.0 * PI * STEFAN_BOLTZMANN_CGS * radius_cm * radius_cm),
                            )
                    }
                }
                .max(t_mid);
                let exponent = 2.0 * delta;
                let integer_exponent =
                    (exponent.fract() == 0.0 && exponent.abs() <= 64.0).then_some(exponent as i32);
                VerticalProfile {
                    t_mid,
                    t_atm,
                    z_q: transition_scale_heights * h_mid,
                    exponent,
                    integer_exponent,
                }
            }
        }
    }

    #[inline]
    fn temperature_k(&self, z_cm: f64) -> f64 {
        if self.t_atm.is_nan() {
            return self.t_mid;
        }
        if z_cm >= self.z_q {
            return self.t_atm;
        }
        let c = cos(PI * z_cm / (2.0 * self.z_q));
        let shape = match self.integer_exponent {
            Some(n) => c.powi(n),
            None => pow(c, self.exponent),
        };
        self.t_atm + (self.t_mid - self.t_atm) * shape
    }

    /// `out[i] = self.temperature_k(index[i] * dz)` for every fine point, bit for bit, in
    /// passes that vectorise when 2 delta is a whole number: the cosines by
    /// [`cos_reduced`] (libm's operations; the rare argument outside its range by libm's
    /// [`cos`] itself), the power by [`powi_slice`] (`powi`'s multiplications), then the blend.
    /// `scratch` (as long as `out`) is overwritten.
    ///
    /// Returns `(k, t)` such that every point from `k` on holds exactly `t` (T_atm above z_q,
    /// T_mid in an isothermal column; `k` is the length where that is not known), so a
    /// caller may compute something of t once for that tail.
    ///
    /// In WebAssembly with simd128 this is a function of its own (not inlined into the column
    /// fill): there the unrolled loop for 2 delta = 4 below is faster, inlined it was slower.
    #[cfg_attr(all(target_arch = "wasm32", target_feature = "simd128"), inline(never))]
    #[cfg_attr(
        not(all(target_arch = "wasm32", target_feature = "simd128")),
        inline(always)
    )]
    fn fill(&self, index: &[f64], dz: f64, out: &mut [f64], scratch: &mut [f64]) -> (usize, f64) {
        let out = &mut out[..index.len()];
        let n = match self.integer_exponent {
            Some(n) if !self.t_atm.is_nan() => n,
            _ => {
                for (t, &i) in out.iter_mut().zip(index) {
                    *t = self.temperature_k(i * dz);
                }
                return if self.t_atm.is_nan() {
                    (0, self.t_mid)
                } else {
                    (out.len(), f64::NAN)
                };
            }
        };
        let z_q = self.z_q;
        // The cosines and their powers only below z_q: z = i dz grows with i, so those points
        // are the ones before the first with z >= z_q (above it the blend below takes T_atm
        // and never reads the shape, so those entries keep whatever they hold).
        // (A binary search: i dz >= z_q holds from that point on, and where it never holds, NaN
        // included, the whole grid is below.)
        let below = index.partition_point(|&i| !(i * dz >= z_q));
        // WebAssembly simd128: two points per vector, the cosine, its power (`powi_slice`'s
        // multiplications, in registers) and the blend in one pass (the same operations as
        // the passes below); the odd last point below z_q by `temperature_k`, which gives the
        // same bits (libm's cos equals cos_reduced where that holds, powi equals powi_slice).
        #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
        {
            use crate::math::simd128::{cos_pair, load2, splat, store2, CosVectors};
            use core::arch::wasm32::*;
            let _ = scratch;
            let (t_mid, t_atm) = (self.t_mid, self.t_atm);
            let pairs = below / 2 * 2;
            // The kernel's constants once, read in the loop (see math::simd128::ExpVectors).
            let constants = core::hint::black_box(CosVectors::new());
            let (pi, two_z_q, dz_v) = (splat(PI), splat(2.0 * z_q), splat(dz));
            let (atmosphere, difference, one) = (splat(t_atm), splat(t_mid - t_atm), splat(1.0));
            // x^|n| by `powi`'s binary powering (power = 1, then power *= square for each set
            // bit of |n| from the lowest, squaring between bits).
            #[inline(always)]
            fn power_of(c: v128, one: v128, magnitude: u32) -> v128 {
                let (mut power, mut square, mut bits) = (one, c, magnitude);
                loop {
                    if bits & 1 != 0 {
                        power = f64x2_mul(power, square);
                    }
                    bits >>= 1;
                    if bits == 0 {
                        break;
                    }
                    square = f64x2_mul(square, square);
                }
                power
            }
            macro_rules! blend_loop {
                ($magnitude:expr) => {
                    for q in (0..pairs).step_by(2) {
                        let z = f64x2_mul(load2(index, q), dz_v);
                        let x = f64x2_div(f64x2_mul(pi, z), two_z_q);
                        let (c, ok) = cos_pair(x, &constants);
                        let power = power_of(c, one, $magnitude);
                        let shape = if n < 0 { f64x2_div(one, power) } else { power };
                        store2(out, q, f64x2_add(atmosphere, f64x2_mul(difference, shape)));
                        if !i64x2_all_true(ok) {
                            // A point cos_reduced does not cover (its high word is pi/2's,
                            // which happens just below z_q): libm's cos, as `temperature_k`
                            // uses it.
                            for p in [q, q + 1] {
                                let z = index[p] * dz;
                                if !cos_reduced(PI * z / (2.0 * z_q)).1 {
                                    out[p] = self.temperature_k(z);
                                }
                            }
                        }
                    }
                };
            }
            // The default 2 delta = 4 in a loop of its own, where the powering's bit loop is
            // unrolled to its two squarings and one multiplication (the same operations).
            if n == 4 {
                blend_loop!(4);
            } else {
                blend_loop!(n.unsigned_abs());
            }
            for q in pairs..below {
                out[q] = self.temperature_k(index[q] * dz);
            }
            for t in &mut out[below..] {
                *t = t_atm;
            }
        }
        #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
        {
            let (cosines, points) = (&mut out[..below], &index[..below]);
            let mut covered = true;
            for (c, &i) in cosines.iter_mut().zip(points) {
                let z = i * dz;
                let (value, ok) = cos_reduced(PI * z / (2.0 * z_q));
                *c = value;
                covered &= ok | (z >= z_q);
            }
            if !covered {
                for (c, &i) in cosines.iter_mut().zip(points) {
                    let z = i * dz;
                    let x = PI * z / (2.0 * z_q);
                    if z < z_q && !cos_reduced(x).1 {
                        *c = cos(x);
                    }
                }
            }
            powi_slice(cosines, scratch, n);
            let (t_mid, t_atm) = (self.t_mid, self.t_atm);
            for (t, &i) in out.iter_mut().zip(index) {
                let shape = *t;
                *t = if i * dz >= z_q {
                    t_atm
                } else {
                    t_atm + (t_mid - t_atm) * shape
                };
            }
        }
        (below, self.t_atm)
    }
}

/// Build one column in hydrostatic equilibrium (docs/model.md sections 5-6).
///
/// d ln rho/dz = -(mu m_H/(k T)) G M* z/(r^2+z^2)^(3/2) - d ln T/dz, integrated
/// exactly in T (rho T = rho0 T0 exp(-integral)) and by the trapezoid rule on a
/// grid 4x finer than the cells; normalised so 2 integral rho dz = Sigma; the
/// density above z_max is zero. Columns above each point by the trapezoid rule
/// from z_max down; A_V = N_H x (A_V/N_H of the disk's dust,
/// [`visual_extinction_per_hydrogen_mag_cm2`]; 1/1.87e21 for ISM dust, Bohlin, Savage & Drake 1978); FUV
/// F = 1e8 [G*(r) exp(-2 A_V/phi) + G_ISM exp(-2 A_V)] + 1e4 zeta/1.3e-17
/// (gamma_UV = 2, common practice; CR photons: Prasad & Tarafdar 1983, Shen et al. 2004);
/// zeta = zeta0/2 [exp(-Sigma_above/96) + exp(-Sigma_below/96)] (Umebayashi & Nakano 1981).
/// These exponentials and the density's are computed by [`crate::math::exp_poly`] (within 1 ulp of libm).
pub fn column(
    c: &DiskConstants,
    radius_cm: f64,
    sigma_g_cm2: f64,
    t_mid: f64,
    flaring_angle: f64,
) -> Column {
    let samples = c.vertical_cells + 1;
    let mut col = Column::zeroed(samples);
    fill_column(
        c,
        radius_cm,
        sigma_g_cm2,
        t_mid,
        flaring_angle,
        &mut FineGrid::default(),
        &mut col,
        0,
    );
    col
}

/// Scratch arrays of the fine vertical grid, reused from column to column.
#[derive(Debug, Default)]
struct FineGrid {
    /// 0, 1, 2, ... as doubles (z_i = i dz in a loop that vectorises).
    index: Vec<f64>,
    temperature: Vec<f64>,
    integrand: Vec<f64>,
    rho: Vec<f64>,
    above: Vec<f64>,
    /// The trapezoid terms 0.5 (y_i + y_(i+1)) dz of the quantity being integrated.
    term: Vec<f64>,
    /// The four exponentials of each sample (cosmic rays from above and below, stellar and
    /// interstellar FUV): arguments, then values ([`exp_poly_slice`]).
    exps: Vec<f64>,
}

/// [`column`] written into `out` at samples `base..base + N_z + 1`, with scratch `fine`. The
/// exponentials go through [`crate::math::exp_poly`] (a slice at a time, [`exp_poly_slice`]); the loops over fine points and over samples are
/// written as separate passes so that the compiler vectorises them.
///
/// On x86-64 the same code is compiled again for AVX2 and for AVX-512F (wider vectors of the
/// same IEEE operations, no fused multiply-add) and chosen at run time; every version gives
/// the same bits. WebAssembly and other targets use the portable version.
#[allow(clippy::too_many_arguments, unsafe_code)]
fn fill_column(
    c: &DiskConstants,
    radius_cm: f64,
    sigma_g_cm2: f64,
    t_mid: f64,
    flaring_angle: f64,
    fine: &mut FineGrid,
    out: &mut Column,
    base: usize,
) {
    let args = (c, radius_cm, sigma_g_cm2, t_mid, flaring_angle);
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the processor has AVX-512F, checked on the line above.
            return unsafe { fill_column_avx512(args, fine, out, base) };
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor has AVX2, checked on the line above.
            return unsafe { fill_column_avx2(args, fine, out, base) };
        }
    }
    fill_column_portable(args, fine, out, base)
}

/// The scalar arguments of [`fill_column`]: constants, radius, Sigma, T_mid, grazing angle.
type ColumnArgs<'a> = (&'a DiskConstants, f64, f64, f64, f64);

/// [`fill_column`] compiled for AVX-512F.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
fn fill_column_avx512(args: ColumnArgs<'_>, fine: &mut FineGrid, out: &mut Column, base: usize) {
    fill_column_portable(args, fine, out, base)
}

/// [`fill_column`] compiled for AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn fill_column_avx2(args: ColumnArgs<'_>, fine: &mut FineGrid, out: &mut Column, base: usize) {
    fill_column_portable(args, fine, out, base)
}

/// The body of [`fill_column`], inlined into each version.
#[inline(always)]
fn fill_column_portable(args: ColumnArgs<'_>, fine: &mut FineGrid, out: &mut Column, base: usize) {
    let (c, radius_cm, sigma_g_cm2, t_mid, flaring_angle) = args;
    let n_z = c.vertical_cells;
    let h_mid = scale_height_cm(c.star_mass_g, t_mid, radius_cm);
    let z_max = c.max_height_scale_heights * h_mid;
    let n_fine = 4 * n_z;
    let points = n_fine + 1;
    let dz = z_max / n_fine as f64;
    let gm = GRAVITATIONAL_CONSTANT_CGS * c.star_mass_g;
    let mu_mh_over_k = MEAN_MOLECULAR_WEIGHT * HYDROGEN_MASS_G / BOLTZMANN_ERG_PER_K;
    let gravity = mu_mh_over_k * gm;
    let r2 = radius_cm * radius_cm;

    if fine.index.len() != points {
        fine.index = (0..points).map(|i| i as f64).collect();
    }
    fine.temperature.resize(points, 0.0);
    fine.integrand.resize(points, 0.0);
    fine.rho.resize(points, 0.0);
    fine.above.resize(points, 0.0);
    let profile = VerticalProfile::new(c, radius_cm, t_mid, h_mid);
    let (uniform_from, uniform_temperature) =
        profile.fill(&fine.index, dz, &mut fine.temperature, &mut fine.integrand);
    // WebAssembly simd128: the integrand two points per vector, the integral's running sum in
    // the same loop, then the exponentials two per vector with the normalisation's running sum
    // in their loop (see `hydrostatic_simd128`); elsewhere in separate passes that vectorise.
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    let half = hydrostatic_simd128(
        fine,
        points,
        [dz, r2, gravity, t_mid],
        (uniform_from, uniform_temperature),
    );
    #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
    let half = {
        for ((g, &t), &i) in fine
            .integrand
            .iter_mut()
            .zip(&fine.temperature)
            .zip(&fine.index)
        {
            let z = i * dz;
            let s = r2 + z * z;
            // (mu m_H / (k T)) G M z / (r^2 + z^2)^(3/2), with one division.
            *g = gravity * z / (t * (s * sqrt(s)));
        }
        // The trapezoid integral from the midplane, held (negated) in `above` for now. Each
        // running sum below first forms its terms 0.5 (y_i + y_(i+1)) dz in a pass that
        // vectorises, then adds them in order with the sum held in a register: the same
        // additions in the same order as summing term by term.
        trapezoid_terms(&mut fine.term, &fine.integrand, dz);
        let mut integral = 0.0;
        fine.above[0] = 0.0;
        for (a, &t) in fine.above[1..].iter_mut().zip(&fine.term) {
            integral += t;
            *a = -integral;
        }
        // rho = (T_mid / T) exp(-integral), the exponentials in one pass over the slice.
        fine.rho.copy_from_slice(&fine.above);
        exp_poly_slice(&mut fine.rho);
        // (T_mid / T) e, as a product of two numbers (the same bits either order); where every
        // point has the same T (above z_q, or an isothermal column) T_mid / T is divided once.
        let (varying, uniform) = fine.rho.split_at_mut(uniform_from);
        for (r, &t) in varying.iter_mut().zip(&fine.temperature) {
            *r *= t_mid / t;
        }
        let ratio = t_mid / uniform_temperature;
        for r in uniform {
            *r *= ratio;
        }
        // Normalise: 2 * trapz(rho) = Sigma.
        trapezoid_terms(&mut fine.term, &fine.rho, dz);
        let mut half = 0.0;
        for &t in &fine.term {
            half += t;
        }
        half
    };
    let scale = sigma_g_cm2 / (2.0 * half);
    for r in fine.rho.iter_mut() {
        *r *= scale;
    }
    // Column above each fine point, from the top down.
    trapezoid_terms(&mut fine.term, &fine.rho, dz);
    let rho = &fine.rho;
    let above = &mut fine.above;
    above[n_fine] = 0.0;
    let mut sum = 0.0;
    for (a, &t) in above[..n_fine].iter_mut().zip(&fine.term).rev() {
        sum += t;
        *a = sum;
    }

    let samples = n_z + 1;
    let g_star = c.fuv_1au_habing * AU_CM * AU_CM / r2;
    let per_h = 1.0 / (MASS_PER_HYDROGEN_NUCLEUS_AMU_H * HYDROGEN_MASS_G);
    let range = base..base + samples;
    // Sample 0 is the midplane (fine point 0), sample s >= 1 the centre of vertical cell s - 1
    // (fine point 4 (s - 1) + 2): the fine points 0, 2, 6, 10, ... (loops over slices, so no
    // index is checked per sample).
    fn pick(out: &mut [f64], fine: &[f64]) {
        out[0] = fine[0];
        for (o, &v) in out[1..].iter_mut().zip(fine[2..].iter().step_by(4)) {
            *o = v;
        }
    }
    pick(&mut out.temperature_k[range.clone()], &fine.temperature);
    pick(&mut out.density_g_cm3[range.clone()], rho);
    pick(&mut out.column_above_g_cm2[range.clone()], above);
    pick(&mut out.height_cm[range.clone()], &fine.index);
    for h in out.height_cm[range.clone()].iter_mut() {
        // z = i dz of fine point i (the index is held as a double).
        *h *= dz;
    }
    for (n, &d) in out.hydrogen_density_cm3[range.clone()]
        .iter_mut()
        .zip(&out.density_g_cm3[range.clone()])
    {
        *n = d * per_h;
    }
    // The four exponentials of every sample: their arguments, then one pass of exp_poly.
    fine.exps.resize(4 * samples, 0.0);
    let (above_cr, rest) = fine.exps.split_at_mut(samples);
    let (below_cr, rest) = rest.split_at_mut(samples);
    let (star_fuv, ism_fuv) = rest.split_at_mut(samples);
    let sigma_above = &out.column_above_g_cm2[range.clone()];
    for (k, (av, &sigma_above)) in out.visual_extinction_mag[range.clone()]
        .iter_mut()
        .zip(sigma_above)
        .enumerate()
    {
        // `max(0.0)` written as a comparison: the same number for every input (NaN gives 0, as
        // libm's fmax does), but WebAssembly has no instruction for Rust's `max` (its f64.max
        // propagates NaN), so `max` was a call to libm's fmax per sample.
        let remainder = sigma_g_cm2 - sigma_above;
        let sigma_below = if remainder >= 0.0 { remainder } else { 0.0 };
        *av = sigma_above * per_h * c.extinction_per_hydrogen_mag_cm2;
        above_cr[k] = -sigma_above / COSMIC_RAY_ATTENUATION_G_PER_CM2;
        below_cr[k] = -sigma_below / COSMIC_RAY_ATTENUATION_G_PER_CM2;
        star_fuv[k] = -2.0 * *av / flaring_angle;
        ism_fuv[k] = -2.0 * *av;
    }
    exp_poly_slice(&mut fine.exps);
    let (above_cr, rest) = fine.exps.split_at(samples);
    let (below_cr, rest) = rest.split_at(samples);
    let (star_fuv, ism_fuv) = rest.split_at(samples);
    for (k, (zeta, fuv)) in out.ionization_rate_s[range.clone()]
        .iter_mut()
        .zip(&mut out.fuv_photon_flux_cm2_s[range])
        .enumerate()
    {
        *zeta = c.cosmic_ray_rate_s * 0.5 * (above_cr[k] + below_cr[k]);
        *fuv = HABING_PHOTONS_PER_CM2_S
            * (g_star * star_fuv[k] + c.interstellar_fuv_habing * ism_fuv[k])
            + 1.0e4 * *zeta / REFERENCE_COSMIC_RAY_RATE_S;
    }
}

/// The hydrostatic part of [`fill_column`] in WebAssembly simd128, the portable passes' numbers
/// bit for bit: the integrand g = (mu m_H/(k T)) G M z / (T (r^2 + z^2)^(3/2)) two points
/// per vector, with the trapezoid integral from the midplane, -sum of 0.5 (g_i + g_(i+1)) dz,
/// added in order in the same loop (into `fine.above`); then rho = exp_poly(-integral)
/// (T_mid / T) two points per vector (into `fine.rho`), with the normalisation's trapezoid sum
/// of rho added in order in that loop. Returns that sum (half the column's Sigma before
/// scaling). Each running sum is a chain of dependent additions, which here overlaps the
/// divisions, square roots and exponentials of the same loop instead of taking a pass of its
/// own. `numbers` = [dz, r^2, (mu m_H/k) G M, T_mid]; every point from `uniform.0` on has
/// the temperature `uniform.1`, whose T_mid / T is divided once.
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
#[inline(never)]
fn hydrostatic_simd128(
    fine: &mut FineGrid,
    points: usize,
    numbers: [f64; 4],
    uniform: (usize, f64),
) -> f64 {
    use crate::math::exp_poly;
    use crate::math::simd128::{exp_poly_pair, load2, splat, store2, ExpVectors};
    use core::arch::wasm32::*;
    let [dz, r2, gravity, t_mid] = numbers;
    let (uniform_from, uniform_temperature) = uniform;
    let (temperature, index) = (&fine.temperature[..points], &fine.index[..points]);
    let (above, rho) = (&mut fine.above[..points], &mut fine.rho[..points]);
    let pairs = points / 2 * 2;
    // The column's numbers as vectors through `black_box`, so that the loop reads them: V8
    // otherwise computed dz again in every iteration (from the column's radius and
    // temperature: a square root and four divisions), a third of the loop's time.
    let [dz_v, r2_v, gravity_v] = core::hint::black_box([splat(dz), splat(r2), splat(gravity)]);
    let integrand = |q: usize| {
        let t = load2(temperature, q);
        let z = f64x2_mul(load2(index, q), dz_v);
        let s = f64x2_add(r2_v, f64x2_mul(z, z));
        f64x2_div(
            f64x2_mul(gravity_v, z),
            f64x2_mul(t, f64x2_mul(s, f64x2_sqrt(s))),
        )
    };
    let integrand_at = |q: usize| {
        let z = index[q] * dz;
        let s = r2 + z * z;
        gravity * z / (temperature[q] * (s * sqrt(s)))
    };
    // The integral: integral += 0.5 (g_(i-1) + g_i) dz, above[i] = -integral (above[0] = 0).
    let mut integral = 0.0;
    // g of the point before the pair.
    let mut previous = 0.0;
    let mut q = 0;
    while q < pairs {
        let g = integrand(q);
        let (g0, g1) = (f64x2_extract_lane::<0>(g), f64x2_extract_lane::<1>(g));
        if q == 0 {
            above[0] = 0.0;
        } else {
            integral += 0.5 * (previous + g0) * dz;
            above[q] = -integral;
        }
        integral += 0.5 * (g0 + g1) * dz;
        above[q + 1] = -integral;
        previous = g1;
        q += 2;
    }
    for q in pairs..points {
        let g = integrand_at(q);
        if q == 0 {
            above[0] = 0.0;
        } else {
            integral += 0.5 * (previous + g) * dz;
            above[q] = -integral;
        }
        previous = g;
    }
    // rho = exp_poly(above) (T_mid / T), and half += 0.5 (rho_(i-1) + rho_i) dz.
    let constants = core::hint::black_box(ExpVectors::new());
    let ratio = t_mid / uniform_temperature;
    let [t_mid_v, ratio_v] = core::hint::black_box([splat(t_mid), splat(ratio)]);
    let mut half = 0.0;
    let mut previous = 0.0;
    let mut q = 0;
    while q < pairs {
        let e = exp_poly_pair(load2(above, q), &constants);
        // Both points' T_mid / T by division where either lies below the uniform tail (its
        // quotient there is `ratio` too).
        let factor = if q < uniform_from {
            f64x2_div(t_mid_v, load2(temperature, q))
        } else {
            ratio_v
        };
        let r = f64x2_mul(e, factor);
        store2(rho, q, r);
        let (r0, r1) = (f64x2_extract_lane::<0>(r), f64x2_extract_lane::<1>(r));
        if q > 0 {
            half += 0.5 * (previous + r0) * dz;
        }
        half += 0.5 * (r0 + r1) * dz;
        previous = r1;
        q += 2;
    }
    for q in pairs..points {
        let factor = if q < uniform_from {
            t_mid / temperature[q]
        } else {
            ratio
        };
        let r = exp_poly(above[q]) * factor;
        rho[q] = r;
        if q > 0 {
            half += 0.5 * (previous + r) * dz;
        }
        previous = r;
    }
    half
}

/// The trapezoid terms 0.5 (y_i + y_(i+1)) dz, i = 0 .. len(y) - 2, into `term`.
#[inline(always)]
fn trapezoid_terms(term: &mut Vec<f64>, y: &[f64], dz: f64) {
    let n = y.len().saturating_sub(1);
    term.resize(n, 0.0);
    for ((t, &a), &b) in term.iter_mut().zip(&y[..n]).zip(&y[1..]) {
        *t = 0.5 * (a + b) * dz;
    }
}

/// Outermost radius [cm] where the midplane of the disk's hot early phase
/// reached the soot-line temperature `soot_line_k`, or `None` where it never did
/// on this radial grid (docs/model.md section 8; Li et al. 2021: carbon lost
/// there does not come back).
///
/// The early phase is this disk computed with the same functions
/// ([`DiskConstants::new`], [`surface_density_g_cm2`], [`midplane_temperature`])
/// but with the early accretion rate, early luminosity and early surface
/// density Sigma_early = s Sigma (s = `early_phase.surface_density_scale`), the
/// energy-balance temperature law, the fixed grazing angle and no temperature scale.
/// Between the outermost hot cell centre and the next one the radius is
/// interpolated linearly in ln T against ln r; if the outermost cell is hot it is
/// the outer edge.
pub fn early_soot_line_radius_cm(
    p: &ModelParameters,
    radii_cm: &[f64],
    soot_line_k: f64,
) -> Result<Option<f64>, PhysicsError> {
    let e = &p.disk.early_phase;
    let mut c = DiskConstants::new(p)?;
    c.luminosity_erg_s = e.luminosity_lsun * SOLAR_LUMINOSITY_ERG_PER_S;
    c.accretion_rate_g_s = e.accretion_rate_msun_per_yr * MSUN_PER_YR_TO_G_PER_S;
    c.sigma_c_g_cm2 *= e.surface_density_scale;
    c.temperature_law = TemperatureLaw::EnergyBalance;
    c.temperature_scale = 1.0;
    let mut previous: Option<(f64, f64)> = None;
    for &r in radii_cm.iter().rev() {
        let t = match midplane_temperature(&c, c.flaring_angle, r, surface_density_g_cm2(&c, r)) {
            Ok(m) => m.temperature_k,
            Err(PhysicsError::NoTemperatureSolution { radius_au }) => {
                return Err(PhysicsError::NoSolutionInRange {
                    what: format!(
                        "disk.early_phase: no midplane temperature below 1e6 K balances the early phase's heating at r = {radius_au:.4} au; lower disk.early_phase.accretion_rate_msun_per_yr or surface_density_scale, or set composition.soot_line to reversible"
                    ),
                })
            }
            Err(e) => return Err(e),
        };
        if t >= soot_line_k {
            return Ok(Some(match previous {
                None => c.outer_radius_cm,
                Some((r_out, t_out)) => {
                    let w = (ln(soot_line_k) - ln(t)) / (ln(t_out) - ln(t));
                    exp(ln(r) + w * (ln(r_out) - ln(r)))
                }
            }));
        }
        previous = Some((r, t));
    }
    Ok(None)
}

/// The radial part of a structure, everything that can fail, computed before any per-sample
/// array is written ([`DiskStructure::compute_into`] leaves the structure as it was on an error).
#[derive(Debug)]
pub(crate) struct Plan {
    constants: DiskConstants,
    radii: Vec<f64>,
    sigma: Vec<f64>,
    phi: Vec<f64>,
    mid: Vec<MidplaneTemperature>,
    pub(crate) early_soot_line_radius_cm: Option<f64>,
    given_surface_density: bool,
}

impl Plan {
    /// The plan of [`DiskStructure::compute`].
    fn compute(p: &ModelParameters) -> Result<Plan, PhysicsError> {
        let c = DiskConstants::new(p)?;
        let radii =
            radial_cell_centres_cm(c.inner_radius_cm, c.outer_radius_cm, p.grid.radial_cells);
        let sigma: Vec<f64> = radii
            .iter()
            .map(|&r| surface_density_g_cm2(&c, r))
            .collect();
        Plan::new(p, c, radii, sigma, false)
    }

    fn new(
        p: &ModelParameters,
        c: DiskConstants,
        radii: Vec<f64>,
        sigma: Vec<f64>,
        given_surface_density: bool,
    ) -> Result<Plan, PhysicsError> {
        let (phi, mid) = flaring_solution(&c, p.disk.self_consistent_flaring, &radii, &sigma)?;
        let early_soot_line_radius_cm = match p.composition.soot_line {
            SootLine::Irreversible => {
                early_soot_line_radius_cm(p, &radii, p.composition.soot_line_k)?
            }
            SootLine::Reversible => None,
        };
        Ok(Plan {
            constants: c,
            radii,
            sigma,
            phi,
            mid,
            early_soot_line_radius_cm,
            given_surface_density,
        })
    }

    /// Number of radial cells.
    pub(crate) fn radial_cells(&self) -> usize {
        self.radii.len()
    }
}

/// The disk structure on the grid. Per-radius arrays have N_r entries;
/// per-sample arrays are flat with stride N_z + 1 (sample 0 is the midplane z = 0,
/// sample k + 1 the centre of vertical cell k).
#[derive(Debug, Clone, PartialEq)]
pub struct DiskStructure {
    /// Derived constants.
    pub(crate) constants: DiskConstants,
    /// N_r.
    pub(crate) radial_cells: usize,
    /// N_z + 1.
    pub(crate) samples_per_column: usize,
    /// Radial cell centres [cm].
    pub(crate) radius_cm: Vec<f64>,
    /// Sigma_gas [g cm^-2].
    pub(crate) surface_density_g_cm2: Vec<f64>,
    /// Midplane temperature [K].
    pub(crate) midplane_temperature_k: Vec<f64>,
    /// Irradiation temperature [K].
    pub(crate) irradiation_temperature_k: Vec<f64>,
    /// Accretion temperature [K].
    pub(crate) accretion_temperature_k: Vec<f64>,
    /// H_mid [cm].
    pub(crate) scale_height_cm: Vec<f64>,
    /// Grazing angle used at each radius.
    pub(crate) flaring_angle: Vec<f64>,
    /// Per-sample fields (flat, stride `samples_per_column`).
    pub(crate) samples: Column,
    /// Furthest extent of the soot line in the hot early phase [cm] (irreversible
    /// soot line only; `None` when reversible or never reached).
    pub(crate) early_soot_line_radius_cm: Option<f64>,
    /// Whether the surface density was given ([`DiskStructure::from_surface_density`]).
    given_surface_density: bool,
}

impl DiskStructure {
    /// Compute the structure on the grid of `p`, with the surface density of its profile
    /// ([`surface_density_g_cm2`], docs/model.md section 3).
    pub fn compute(p: &ModelParameters) -> Result<DiskStructure, PhysicsError> {
        Ok(DiskStructure::build(p, Plan::compute(p)?))
    }

    /// Whether the surface density was given ([`DiskStructure::from_surface_density`]) rather
    /// than computed from the parameters' profile.
    pub(crate) fn has_given_surface_density(&self) -> bool {
        self.given_surface_density
    }

    /// The structure for a GIVEN gas surface density `sigma_g_cm2[j]` at radii `radius_cm[j]`
    /// (for example an evolved disk), everything else from `p`: the same midplane temperatures,
    /// grazing angles and hydrostatic columns as [`DiskStructure::compute`] (docs/model.md
    /// sections 4-6), which is this constructor applied to the profile of section 3.
    ///
    /// Errors (`OutOfRange`, field `radius_cm` or `sigma_g_cm2`): fewer than two
    /// radii, lengths that differ, radii not finite, positive and strictly increasing, or a
    /// surface density not finite and positive; and those of [`DiskConstants::new`] and
    /// [`flaring_solution`]. The early soot line (irreversible soot line) is found on these radii
    /// with the early phase of `p`'s own profile.
    pub fn from_surface_density(
        p: &ModelParameters,
        radius_cm: &[f64],
        sigma_g_cm2: &[f64],
    ) -> Result<DiskStructure, PhysicsError> {
        if radius_cm.len() < 2 {
            return Err(PhysicsError::OutOfRange {
                name: "radius_cm",
                value: radius_cm.len() as f64,
                allowed: "at least 2 radii",
            });
        }
        if sigma_g_cm2.len() != radius_cm.len() {
            return Err(PhysicsError::OutOfRange {
                name: "sigma_g_cm2",
                value: sigma_g_cm2.len() as f64,
                allowed: "one value per radius (as many as radius_cm)",
            });
        }
        for (j, &r) in radius_cm.iter().enumerate() {
            let increasing = j == 0 || r > radius_cm[j - 1];
            if !(r.is_finite() && r > 0.0 && increasing) {
                return Err(PhysicsError::OutOfRange {
                    name: "radius_cm",
                    value: r,
                    allowed: "finite, > 0 and strictly increasing",
                });
            }
        }
        for &s in sigma_g_cm2 {
            if !(s.is_finite() && s > 0.0) {
                return Err(PhysicsError::OutOfRange {
                    name: "sigma_g_cm2",
                    value: s,
                    allowed: "finite and > 0",
                });
            }
        }
        let c = DiskConstants::new(p)?;
        let plan = Plan::new(p, c, radius_cm.to_vec(), sigma_g_cm2.to_vec(), true)?;
        Ok(DiskStructure::build(p, plan))
    }

    /// The shared column code of both constructors: a structure with `plan`'s columns written
    /// into fresh buffers.
    fn build(p: &ModelParameters, plan: Plan) -> DiskStructure {
        let mut structure = DiskStructure {
            given_surface_density: plan.given_surface_density,
            early_soot_line_radius_cm: None,
            constants: plan.constants.clone(),
            radial_cells: 0,
            samples_per_column: 0,
            midplane_temperature_k: Vec::new(),
            irradiation_temperature_k: Vec::new(),
            accretion_temperature_k: Vec::new(),
            radius_cm: Vec::new(),
            surface_density_g_cm2: Vec::new(),
            scale_height_cm: Vec::new(),
            flaring_angle: Vec::new(),
            samples: Column::with_capacity(0),
        };
        structure.fill(p, plan);
        structure
    }

    /// [`DiskStructure::compute`] into this structure's own buffers: the same numbers bit for
    /// bit, without allocating the per-sample arrays again when the grid keeps its size (what
    /// the page does when an edit changes the star, the disk or the grid). On an error the
    /// structure is left as it was.
    pub fn compute_into(&mut self, p: &ModelParameters) -> Result<(), PhysicsError> {
        let plan = Plan::compute(p)?;
        self.fill(p, plan);
        Ok(())
    }

    /// Every fallible step of [`DiskStructure::compute`] with nothing written yet.
    pub(crate) fn plan(p: &ModelParameters) -> Result<Plan, PhysicsError> {
        Plan::compute(p)
    }

    /// Write the columns and radial fields of `plan` into this structure's buffers (cannot fail).
    pub(crate) fn fill(&mut self, p: &ModelParameters, plan: Plan) {
        let Plan {
            constants: c,
            radii,
            sigma,
            phi,
            mid,
            early_soot_line_radius_cm,
            given_surface_density,
        } = plan;
        let samples_per_column = p.grid.vertical_cells + 1;
        let total = radii.len() * samples_per_column;
        // Every entry is written below; the same size keeps the buffers.
        self.samples.resize(total);
        let mut fine = FineGrid::default();
        self.scale_height_cm.clear();
        for j in 0..radii.len() {
            fill_column(
                &c,
                radii[j],
                sigma[j],
                mid[j].temperature_k,
                phi[j],
                &mut fine,
                &mut self.samples,
                j * samples_per_column,
            );
            self.scale_height_cm.push(scale_height_cm(
                c.star_mass_g,
                mid[j].temperature_k,
                radii[j],
            ));
        }
        let refill = |v: &mut Vec<f64>, f: &dyn Fn(&MidplaneTemperature) -> f64| {
            v.clear();
            v.extend(mid.iter().map(f));
        };
        refill(&mut self.midplane_temperature_k, &|m| m.temperature_k);
        refill(&mut self.irradiation_temperature_k, &|m| {
            m.irradiation_temperature_k
        });
        refill(&mut self.accretion_temperature_k, &|m| {
            m.accretion_temperature_k
        });
        self.given_surface_density = given_surface_density;
        self.early_soot_line_radius_cm = early_soot_line_radius_cm;
        self.constants = c;
        self.radial_cells = radii.len();
        self.samples_per_column = samples_per_column;
        self.radius_cm = radii;
        self.surface_density_g_cm2 = sigma;
        self.flaring_angle = phi;
    }

    /// Derived constants of the disk (cgs).
    pub fn constants(&self) -> &DiskConstants {
        &self.constants
    }

    /// N_r, the number of radial cells.
    pub fn radial_cells(&self) -> usize {
        self.radial_cells
    }

    /// N_z + 1, the samples of one column (the midplane and one per vertical cell).
    pub fn samples_per_column(&self) -> usize {
        self.samples_per_column
    }

    /// Number of samples, N_r (N_z + 1).
    pub fn sample_count(&self) -> usize {
        self.samples.temperature_k.len()
    }

    /// Radial cell centres [cm].
    pub fn radius_cm(&self) -> &[f64] {
        &self.radius_cm
    }

    /// Gas surface density per radial cell [g cm^-2].
    pub fn surface_density_g_cm2(&self) -> &[f64] {
        &self.surface_density_g_cm2
    }

    /// Midplane temperature per radial cell [K].
    pub fn midplane_temperature_k(&self) -> &[f64] {
        &self.midplane_temperature_k
    }

    /// Irradiation temperature per radial cell [K].
    pub fn irradiation_temperature_k(&self) -> &[f64] {
        &self.irradiation_temperature_k
    }

    /// Accretion temperature per radial cell [K].
    pub fn accretion_temperature_k(&self) -> &[f64] {
        &self.accretion_temperature_k
    }

    /// Midplane pressure scale height per radial cell [cm].
    pub fn scale_height_cm(&self) -> &[f64] {
        &self.scale_height_cm
    }

    /// Grazing angle used at each radial cell.
    pub fn flaring_angle(&self) -> &[f64] {
        &self.flaring_angle
    }

    /// The per-sample fields, flat with stride [`DiskStructure::samples_per_column`]
    /// ([`DiskStructure::index`] gives the flat index).
    pub fn samples(&self) -> &Column {
        &self.samples
    }

    /// Furthest extent of the soot line in the hot early phase [cm] (irreversible soot line only;
    /// `None` when reversible or never reached).
    pub fn early_soot_line_radius_cm(&self) -> Option<f64> {
        self.early_soot_line_radius_cm
    }

    /// Flat index of sample `s` (0 = midplane) of radial cell `j`.
    pub fn index(&self, j: usize, s: usize) -> usize {
        j * self.samples_per_column + s
    }

    /// Every per-sample field of sample `s` (0 = midplane) of radial cell `j`.
    pub fn sample(&self, j: usize, s: usize) -> Sample {
        self.samples.sample(self.index(j, s))
    }

    /// Grazing angle at an arbitrary radius, interpolated linearly in ln r
    /// between cell centres (constant beyond the outermost centres).
    pub fn flaring_angle_at(&self, radius_cm: f64) -> f64 {
        interpolate_in_ln_r(&self.radius_cm, &self.flaring_angle, radius_cm)
    }

    /// Gas surface density [g cm^-2] at an arbitrary radius: the profile of docs/model.md
    /// section 3 for a computed structure; for one built from a given profile
    /// ([`DiskStructure::from_surface_density`]) ln Sigma interpolated linearly in ln r between
    /// the given radii (constant beyond them).
    pub fn surface_density_at(&self, radius_cm: f64) -> f64 {
        if !self.given_surface_density {
            return surface_density_g_cm2(&self.constants, radius_cm);
        }
        let n = self.radius_cm.len();
        let s = &self.surface_density_g_cm2;
        if radius_cm <= self.radius_cm[0] {
            return s[0];
        }
        if radius_cm >= self.radius_cm[n - 1] {
            return s[n - 1];
        }
        let j = self.radius_cm.partition_point(|&r| r <= radius_cm) - 1;
        let (r0, r1) = (self.radius_cm[j], self.radius_cm[j + 1]);
        let t = (ln(radius_cm) - ln(r0)) / (ln(r1) - ln(r0));
        exp(ln(s[j]) + t * (ln(s[j + 1]) - ln(s[j])))
    }

    /// One radius through the structure's stage functions: the midplane temperature
    /// ([`midplane_temperature`], with the grazing angle of [`DiskStructure::flaring_angle_at`])
    /// and the hydrostatic column ([`column`]) at `radius_cm`, with the surface density of
    /// [`DiskStructure::surface_density_at`] (docs/model.md sections 3-6). At a cell centre of a
    /// computed structure this is that cell's column.
    pub fn column_at(&self, radius_cm: f64) -> Result<(MidplaneTemperature, Column), PhysicsError> {
        let c = &self.constants;
        let phi = self.flaring_angle_at(radius_cm);
        let sigma = self.surface_density_at(radius_cm);
        let mid = midplane_temperature(c, phi, radius_cm, sigma)?;
        let col = column(c, radius_cm, sigma, mid.temperature_k, phi);
        Ok((mid, col))
    }
}

/// Linear interpolation of `values` in ln r, clamped to the end values.
pub fn interpolate_in_ln_r(radii_cm: &[f64], values: &[f64], radius_cm: f64) -> f64 {
    let n = radii_cm.len();
    if radius_cm <= radii_cm[0] {
        return values[0];
    }
    if radius_cm >= radii_cm[n - 1] {
        return values[n - 1];
    }
    let j = radii_cm.partition_point(|&r| r <= radius_cm) - 1;
    let t = (ln(radius_cm) - ln(radii_cm[j])) / (ln(radii_cm[j + 1]) - ln(radii_cm[j]));
    values[j] + t * (values[j + 1] - values[j])
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The fine grid's temperatures by `VerticalProfile::fill` (vectorised cosines and powers,
    /// only below z_q; simd128 pairs in WebAssembly) equal `temperature_k` point by point, bit
    /// for bit: whole-number and fractional 2 delta, z_q inside, at the edge of and beyond the
    /// grid, an isothermal column, odd and even lengths (derived, D).
    #[test]
    fn vertical_profile_fill_equals_the_pointwise_law() {
        let (mut checked, mut uncovered) = (0usize, 0usize);
        for points in [1usize, 2, 321, 322] {
            let index: Vec<f64> = (0..points).map(|i| i as f64).collect();
            for (z_q, dz) in [
                (4.0e12, 3.1e10),
                (1.0e12, 3.1e10),
                (3.1e10 * 7.0, 3.1e10),
                (1e20, 3.1e10),
                (0.0, 3.1e10),
                // Point 128 just below z_q: its cosine's argument has pi/2's high word, which
                // cos_reduced does not cover (libm's cos is used there).
                (128.0 * 3.1e10 * (1.0 + 4e-16), 3.1e10),
            ] {
                for (exponent, t_atm) in [
                    (4.0, 180.0),
                    (2.0, 95.5),
                    (3.0, 300.0),
                    (1.5, 120.0),
                    (0.0, f64::NAN),
                ] {
                    let profile = VerticalProfile {
                        t_mid: 42.5,
                        t_atm,
                        z_q,
                        exponent,
                        integer_exponent: (exponent.fract() == 0.0 && exponent > 0.0)
                            .then_some(exponent as i32),
                    };
                    // Stale values in the buffers, as from the previous column.
                    let mut out = vec![1234.5; points];
                    let mut scratch = vec![-7.0; points];
                    let (uniform_from, uniform) = profile.fill(&index, dz, &mut out, &mut scratch);
                    assert!(uniform_from <= points);
                    for &t in &out[uniform_from..] {
                        assert_eq!(
                            t.to_bits(),
                            uniform.to_bits(),
                            "uniform tail from {uniform_from}"
                        );
                    }
                    for (k, &t) in out.iter().enumerate() {
                        let z = k as f64 * dz;
                        if z < z_q && !cos_reduced(PI * z / (2.0 * z_q)).1 && t_atm.is_finite() {
                            uncovered += 1;
                        }
                        let want = profile.temperature_k(z);
                        assert_eq!(
                            t.to_bits(),
                            want.to_bits(),
                            "point {k} z_q {z_q:e} 2delta {exponent}"
                        );
                        checked += 1;
                    }
                }
            }
        }
        assert!(checked > 10_000, "{checked}");
        assert!(uncovered > 0);
    }

    #[test]
    fn tridiagonal_solver_matches_dense_solution() {
        // A system that needs pivoting: zero diagonal in row 0.
        let sub = [0.0, 3.0, -1.0, 2.0];
        let diag = [0.0, 1.0, 4.0, -2.0];
        let sup = [2.0, 5.0, 1.0, 0.0];
        let x_true = [1.0, -2.0, 0.5, 3.0];
        let rhs: Vec<f64> = (0..4)
            .map(|j| {
                let mut v = diag[j] * x_true[j];
                if j > 0 {
                    v += sub[j] * x_true[j - 1];
                }
                if j < 3 {
                    v += sup[j] * x_true[j + 1];
                }
                v
            })
            .collect();
        let x = solve_tridiagonal(&sub, &diag, &sup, &rhs);
        for j in 0..4 {
            assert!((x[j] - x_true[j]).abs() < 1e-12, "{x:?}");
        }
    }

    #[test]
    fn default_fixed_angle_gives_156_k_at_1_au() {
        // docs/model.md section 4 check value: phi = 0.05, L = 1 Lsun gives 156.5 K at 1 au (derived).
        let t = irradiation_temperature_k(SOLAR_LUMINOSITY_ERG_PER_S, 0.05, AU_CM);
        assert!((t - 156.5).abs() < 0.05, "{t}");
    }

    #[test]
    fn surface_density_integrates_to_disk_mass() {
        // The old meaning, kept as `gas_mass_profile_total_msun`: the whole profile holds the mass.
        let mut p = ModelParameters::defaults();
        p.disk.gas_mass_meaning = GasMassMeaning::ProfileTotal;
        let c = DiskConstants::new(&p).unwrap();
        // Integrate 2 pi r Sigma dr in ln r from 1e-6 R_c to 1e3 R_c.
        let n = 200_000;
        let (a, b) = (
            ln(1e-6 * c.characteristic_radius_cm),
            ln(1e3 * c.characteristic_radius_cm),
        );
        let h = (b - a) / n as f64;
        let mass: f64 = (0..n)
            .map(|i| {
                let r = exp(a + (i as f64 + 0.5) * h);
                2.0 * PI * r * r * surface_density_g_cm2(&c, r) * h
            })
            .sum();
        assert!(
            (mass / (p.disk.gas_mass_msun * SOLAR_MASS_G) - 1.0).abs() < 1e-3,
            "{mass}"
        );
    }

    #[test]
    fn profile_fraction_is_the_integral_between_the_edges() {
        // Exact integral of 2 pi r Sigma dr (derived, D) against the midpoint rule.
        for (rin, rout, rc, gamma) in [
            (0.1, 500.0, 4000.0, 1.0),
            (1.0, 100.0, 30.0, 0.5),
            (0.5, 300.0, 80.0, -0.5),
        ] {
            let n = 100_000;
            let (a, b) = (ln(rin), ln(rout));
            let h = (b - a) / n as f64;
            let sigma = |r: f64| pow(r / rc, -gamma) * exp(-pow(r / rc, 2.0 - gamma));
            let inside: f64 = (0..n)
                .map(|i| {
                    let r = exp(a + (i as f64 + 0.5) * h);
                    r * r * sigma(r) * h
                })
                .sum();
            let (a, b) = (ln(1e-8 * rc), ln(1e3 * rc));
            let h = (b - a) / n as f64;
            let total: f64 = (0..n)
                .map(|i| {
                    let r = exp(a + (i as f64 + 0.5) * h);
                    r * r * sigma(r) * h
                })
                .sum();
            let f = profile_fraction_between(rin, rout, rc, gamma);
            assert!(
                (f / (inside / total) - 1.0).abs() < 1e-6,
                "{rin} {rout} {rc} {gamma}: {f} vs {}",
                inside / total
            );
        }
    }

    #[test]
    fn extinction_efficiency_limits() {
        // Large grains: Q_ext -> 2 (van de Hulst 1957; Bohren & Huffman 1983, V, from memory).
        assert_eq!(extinction_efficiency_visual(10.0 * MICRON_CM), 2.0);
        // ISM grains: Q_ext near 0.84, below the large-grain limit (derived from Bohlin et al. 1978, D).
        let q = extinction_efficiency_visual(0.1 * MICRON_CM);
        assert!((q - 0.8409).abs() < 1e-3, "{q}");
        // Small grains: Q proportional to a (Rayleigh absorption), so A_V per H no longer depends on a.
        let a1 = visual_extinction_per_hydrogen_mag_cm2(0.01, 0.01 * MICRON_CM, 3.0);
        let a2 = visual_extinction_per_hydrogen_mag_cm2(0.01, 0.05 * MICRON_CM, 3.0);
        assert!((a1 / a2 - 1.0).abs() < 1e-12, "{a1} {a2}");
    }

    /// The AVX2 and AVX-512F versions of the column fill give the portable version's bits, for
    /// the vertical laws that take each path (isothermal, whole and fractional 2 delta, a
    /// transition above the grid) (derived, D). Versions the processor lacks are skipped.
    #[cfg(target_arch = "x86_64")]
    #[test]
    #[allow(unsafe_code)]
    fn vector_versions_of_the_column_fill_give_the_same_bits() {
        let avx2 = std::arch::is_x86_feature_detected!("avx2");
        let avx512 = std::arch::is_x86_feature_detected!("avx512f");
        let mut laws = vec![VerticalTemperature::Isothermal];
        for (zq, delta) in [
            (4.0, 2.0),
            (3.0, 1.25),
            (12.0, 3.0),
            (0.7, 0.5),
            (4.0, -1.0),
        ] {
            laws.push(VerticalTemperature::TwoLayer {
                superheating: 1.5,
                transition_scale_heights: zq,
                delta,
            });
        }
        let mut compared = 0usize;
        for law in laws {
            let mut p = ModelParameters::defaults();
            p.grid.radial_cells = 30;
            p.grid.vertical_cells = 37;
            p.disk.vertical_temperature = law;
            let st = DiskStructure::compute(&p).unwrap();
            let spc = st.samples_per_column;
            for j in 0..st.radial_cells {
                let args = (
                    &st.constants,
                    st.radius_cm[j],
                    st.surface_density_g_cm2[j],
                    st.midplane_temperature_k[j],
                    st.flaring_angle[j],
                );
                let run = |version: u8| {
                    let mut out = Column::zeroed(spc);
                    let mut fine = FineGrid::default();
                    match version {
                        // SAFETY: called only when the processor has AVX2 (checked above).
                        1 => unsafe { fill_column_avx2(args, &mut fine, &mut out, 0) },
                        // SAFETY: called only when the processor has AVX-512F.
                        2 => unsafe { fill_column_avx512(args, &mut fine, &mut out, 0) },
                        _ => fill_column_portable(args, &mut fine, &mut out, 0),
                    }
                    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                    [
                        bits(&out.height_cm),
                        bits(&out.temperature_k),
                        bits(&out.density_g_cm3),
                        bits(&out.hydrogen_density_cm3),
                        bits(&out.column_above_g_cm2),
                        bits(&out.visual_extinction_mag),
                        bits(&out.fuv_photon_flux_cm2_s),
                        bits(&out.ionization_rate_s),
                    ]
                };
                let portable = run(0);
                // The structure itself went through the dispatching fill_column.
                assert_eq!(
                    portable[1],
                    st.samples.temperature_k[j * spc..(j + 1) * spc]
                        .iter()
                        .map(|x| x.to_bits())
                        .collect::<Vec<_>>()
                );
                if avx2 {
                    assert_eq!(run(1), portable, "AVX2, column {j}");
                    compared += 1;
                }
                if avx512 {
                    assert_eq!(run(2), portable, "AVX-512F, column {j}");
                    compared += 1;
                }
            }
        }
        eprintln!("{compared} columns compared (AVX2: {avx2}, AVX-512F: {avx512})");
    }
}
