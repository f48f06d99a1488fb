//! Viscous evolution of the gas surface density on the log radial grid, implicit in time, and
//! the similarity solution it is checked against (docs/model.md section 12.1). Equation numbers
//! (Pringle 1981, Hartmann et al. 1998) are from memory (docs/model.md section 12.11); the
//! similarity solution itself is checked by tests/python/check_evolution.py.

use crate::math::{exp, ln, pow, sqrt};
use crate::structure::{keplerian_frequency_s, sound_speed_cm_s};
use std::f64::consts::PI;

/// The finite-volume grid: cell centres r_j = r_in (r_out/r_in)^((j + 1/2)/N) (the same centres
/// as the static model, docs/model.md Numerics), faces r_{j-1/2} = r_in (r_out/r_in)^(j/N), and
/// the annulus areas A_j = pi (r_{j+1/2}^2 - r_{j-1/2}^2).
#[derive(Debug, Clone, PartialEq)]
pub struct RadialGrid {
    /// Cell centres [cm], N of them.
    pub centre_cm: Vec<f64>,
    /// Faces [cm], N + 1 of them (face j is the inner face of cell j).
    pub face_cm: Vec<f64>,
    /// Annulus areas [cm^2].
    pub area_cm2: Vec<f64>,
}

impl RadialGrid {
    /// The log grid of `cells` cells between `inner_cm` and `outer_cm`.
    pub fn log(inner_cm: f64, outer_cm: f64, cells: usize) -> RadialGrid {
        let ln_ratio = ln(outer_cm / inner_cm);
        let at = |x: f64| inner_cm * exp(ln_ratio * x / cells as f64);
        let face_cm: Vec<f64> = (0..=cells).map(|j| at(j as f64)).collect();
        let centre_cm = (0..cells).map(|j| at(j as f64 + 0.5)).collect();
        let area_cm2 = (0..cells)
            .map(|j| PI * (face_cm[j + 1] * face_cm[j + 1] - face_cm[j] * face_cm[j]))
            .collect();
        RadialGrid {
            centre_cm,
            face_cm,
            area_cm2,
        }
    }

    /// Number of cells.
    pub fn cells(&self) -> usize {
        self.centre_cm.len()
    }

    /// Centre of the ghost cell one cell beyond the outer edge [cm].
    pub fn outer_ghost_cm(&self) -> f64 {
        let n = self.cells();
        self.centre_cm[n - 1] * self.centre_cm[n - 1] / self.centre_cm[n - 2]
    }
}

/// Kinematic viscosity [cm^2 s^-1] of the alpha prescription, nu = alpha c_s^2 / Omega_K
/// (Shakura & Sunyaev 1973), c_s the isothermal sound speed at T.
pub fn alpha_viscosity_cm2_s(
    alpha: f64,
    temperature_k: f64,
    star_mass_g: f64,
    radius_cm: f64,
) -> f64 {
    let cs = sound_speed_cm_s(temperature_k);
    alpha * cs * cs / keplerian_frequency_s(star_mass_g, radius_cm)
}

/// Solve a tridiagonal system by the Thomas algorithm: row j reads
/// `lower[j] x[j-1] + diag[j] x[j] + upper[j] x[j+1] = rhs[j]` (lower[0], upper[N-1] unused).
/// Without pivoting, which is stable for the column diagonally dominant M-matrices of the
/// implicit steps here (Higham 2002, section 9.5). `scratch` is reused storage.
pub fn solve_tridiagonal(
    lower: &[f64],
    diag: &[f64],
    upper: &[f64],
    rhs: &[f64],
    scratch: &mut Vec<f64>,
    x: &mut [f64],
) {
    let n = diag.len();
    scratch.clear();
    scratch.resize(n, 0.0);
    let mut beta = diag[0];
    x[0] = rhs[0] / beta;
    for j in 1..n {
        scratch[j] = upper[j - 1] / beta;
        beta = diag[j] - lower[j] * scratch[j];
        x[j] = (rhs[j] - lower[j] * x[j - 1]) / beta;
    }
    for j in (0..n - 1).rev() {
        x[j] -= scratch[j + 1] * x[j + 1];
    }
}

/// Reused buffers of the implicit steps.
#[derive(Debug, Clone, Default)]
pub struct StepBuffers {
    lower: Vec<f64>,
    diag: Vec<f64>,
    upper: Vec<f64>,
    rhs: Vec<f64>,
    scratch: Vec<f64>,
}

/// The four zeroed rows of `n` entries and the scratch space.
type Parts<'a> = (
    &'a mut [f64],
    &'a mut [f64],
    &'a mut [f64],
    &'a mut [f64],
    &'a mut Vec<f64>,
);

impl StepBuffers {
    /// The lower, diagonal, upper and right-hand-side rows (zeroed, `n` entries) and scratch.
    pub fn parts(&mut self, n: usize) -> Parts<'_> {
        for v in [
            &mut self.lower,
            &mut self.diag,
            &mut self.upper,
            &mut self.rhs,
        ] {
            v.clear();
            v.resize(n, 0.0);
        }
        (
            &mut self.lower,
            &mut self.diag,
            &mut self.upper,
            &mut self.rhs,
            &mut self.scratch,
        )
    }
}

/// One step of the viscous diffusion equation
/// dSigma/dt = (3/r) d/dr [ r^(1/2) d/dr (nu Sigma r^(1/2)) ] (Lynden-Bell & Pringle 1974;
/// Pringle 1981 eq. 3.8) in conservative finite-volume form: A_j dSigma_j/dt = F_{j-1/2} -
/// F_{j+1/2}, with the outward mass flux through face r_e
/// F_e = -6 pi r_e^(1/2) (g_{j+1} - g_j)/(r_{j+1} - r_j), g = nu Sigma r^(1/2).
///
/// Boundaries: at the inner edge the gas leaves at F = -3 pi nu_0 Sigma_0, the steady accretion
/// rate of a disk with no torque at the star (Pringle 1981 eq. 3.13 with R* << r_in), which is
/// the inner limit of the similarity solution; at the outer edge g = 0 in a ghost cell one cell
/// beyond (gas leaves freely).
///
/// Time integration: TR-BDF2 (Bank et al. 1985; Hosea & Shampine 1996), a trapezoidal stage to
/// t + gamma dt, gamma = 2 - sqrt 2, then a BDF2 stage to t + dt. It is second order and
/// L-stable, so steps far longer than the inner disk's viscous time are stable and damp. Each
/// stage is one tridiagonal solve. Should the result not be positive everywhere (a profile far
/// from smooth over a very long step), the step is redone by backward Euler, whose matrix is an
/// M-matrix (positive result).
///
/// `nu` [cm^2/s] per cell (held over the step); `sigma` is replaced by the new Sigma [g cm^-2];
/// `face_flux_g_s` (N + 1 entries) receives the step's effective outward face fluxes [g s^-1],
/// those for which A_j (Sigma_new - Sigma_old)_j / dt = F_{j-1/2} - F_{j+1/2} holds exactly (to
/// rounding), so a tracer carried with them stays consistent with the gas. Returns the
/// accretion rate onto the star at the end of the step, 3 pi nu_0 Sigma_0 [g s^-1].
pub fn viscous_step(
    grid: &RadialGrid,
    nu: &[f64],
    sigma: &mut [f64],
    dt_s: f64,
    buffers: &mut StepBuffers,
    face_flux_g_s: &mut [f64],
) -> f64 {
    let n = grid.cells();
    let gamma = 2.0 - std::f64::consts::SQRT_2;
    let a = 1.0 / (gamma * (2.0 - gamma));
    let b = (1.0 - gamma) * (1.0 - gamma) / (gamma * (2.0 - gamma));
    let c = (1.0 - gamma) / (2.0 - gamma);
    let old = sigma.to_vec();
    let mut f_old = vec![0.0; n + 1];
    viscous_fluxes(grid, nu, &old, &mut f_old);
    // Trapezoidal stage: (A/h) S* - D F(S*) = (A/h) S + D F(S), h = gamma dt / 2.
    let h1 = 0.5 * gamma * dt_s;
    let rhs1: Vec<f64> = (0..n)
        .map(|j| grid.area_cm2[j] / h1 * old[j] + f_old[j] - f_old[j + 1])
        .collect();
    let mut star = vec![0.0; n];
    implicit_solve(grid, nu, h1, &rhs1, buffers, &mut star);
    let mut f_star = vec![0.0; n + 1];
    viscous_fluxes(grid, nu, &star, &mut f_star);
    // BDF2 stage: (A/h) S_new - D F(S_new) = (A/h) (a S* - b S), h = c dt.
    let h2 = c * dt_s;
    let rhs2: Vec<f64> = (0..n)
        .map(|j| grid.area_cm2[j] / h2 * (a * star[j] - b * old[j]))
        .collect();
    implicit_solve(grid, nu, h2, &rhs2, buffers, sigma);
    let mut f_new = vec![0.0; n + 1];
    if sigma.iter().all(|&s| s > 0.0) {
        viscous_fluxes(grid, nu, sigma, &mut f_new);
        for e in 0..=n {
            face_flux_g_s[e] = 0.5 * a * gamma * (f_old[e] + f_star[e]) + c * f_new[e];
        }
    } else {
        // A profile too steep for the trapezoidal stage over this step: one backward-Euler step
        // instead (first order, but its matrix is an M-matrix, so Sigma stays positive).
        let rhs: Vec<f64> = (0..n).map(|j| grid.area_cm2[j] / dt_s * old[j]).collect();
        implicit_solve(grid, nu, dt_s, &rhs, buffers, sigma);
        viscous_fluxes(grid, nu, sigma, &mut f_new);
        face_flux_g_s.copy_from_slice(&f_new);
    }
    -f_new[0]
}

/// 6 pi sqrt(r_e) / (r_{e} - r_{e-1}) for interior faces, and the outer edge's with the ghost.
fn conductance(grid: &RadialGrid, e: usize) -> f64 {
    let n = grid.cells();
    let (r, f) = (&grid.centre_cm, &grid.face_cm);
    if e == n {
        6.0 * PI * sqrt(f[n]) / (grid.outer_ghost_cm() - r[n - 1])
    } else {
        6.0 * PI * sqrt(f[e]) / (r[e] - r[e - 1])
    }
}

/// The outward face fluxes F_e [g s^-1] of a profile (see [`viscous_step`]).
pub fn viscous_fluxes(grid: &RadialGrid, nu: &[f64], sigma: &[f64], out: &mut [f64]) {
    let n = grid.cells();
    let w = |j: usize| nu[j] * sqrt(grid.centre_cm[j]);
    out[0] = -3.0 * PI * nu[0] * sigma[0];
    for e in 1..n {
        out[e] = -conductance(grid, e) * (w(e) * sigma[e] - w(e - 1) * sigma[e - 1]);
    }
    out[n] = conductance(grid, n) * w(n - 1) * sigma[n - 1];
}

/// Solve (A_j/h) S_j + F_{j+1/2}(S) - F_{j-1/2}(S) = rhs_j for S.
fn implicit_solve(
    grid: &RadialGrid,
    nu: &[f64],
    h: f64,
    rhs_in: &[f64],
    buffers: &mut StepBuffers,
    out: &mut [f64],
) {
    let n = grid.cells();
    let (lower, diag, upper, rhs, scratch) = buffers.parts(n);
    let w = |j: usize| nu[j] * sqrt(grid.centre_cm[j]);
    for j in 0..n {
        diag[j] = grid.area_cm2[j] / h;
        rhs[j] = rhs_in[j];
        if j > 0 {
            let ke = conductance(grid, j);
            diag[j] += ke * w(j);
            lower[j] = -ke * w(j - 1);
        } else {
            diag[j] += 3.0 * PI * nu[0];
        }
        let ke = conductance(grid, j + 1);
        diag[j] += ke * w(j);
        if j + 1 < n {
            upper[j] = -ke * w(j + 1);
        }
    }
    solve_tridiagonal(lower, diag, upper, rhs, scratch, out);
}

/// The similarity solution of a disk with nu = nu_c (r/R_c)^gamma (Lynden-Bell & Pringle 1974;
/// in the form of Hartmann et al. 1998, eqs. 33-35).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SimilaritySolution {
    /// Sigma_c [g cm^-2]: Sigma(r, 0) = Sigma_c (r/R_c)^-gamma exp[-(r/R_c)^(2-gamma)].
    pub sigma_c_g_cm2: f64,
    /// R_c [cm].
    pub characteristic_radius_cm: f64,
    /// gamma (< 2).
    pub gamma: f64,
    /// nu at R_c [cm^2 s^-1].
    pub nu_c_cm2_s: f64,
}

impl SimilaritySolution {
    /// Viscous time t_s = R_c^2 / (3 (2 - gamma)^2 nu_c) [s] (Hartmann et al. 1998, eq. 20).
    pub fn viscous_time_s(&self) -> f64 {
        let k = 2.0 - self.gamma;
        self.characteristic_radius_cm * self.characteristic_radius_cm
            / (3.0 * k * k * self.nu_c_cm2_s)
    }

    fn scaled(&self, time_s: f64) -> (f64, f64) {
        let big_t = 1.0 + time_s / self.viscous_time_s();
        let k = 2.0 - self.gamma;
        (big_t, pow(big_t, -(2.5 - self.gamma) / k))
    }

    /// Sigma(r, t) [g cm^-2] = Sigma_c T^(-(5/2 - gamma)/(2 - gamma)) (r/R_c)^-gamma
    /// exp[-(r/R_c)^(2-gamma) / T], T = 1 + t/t_s (Hartmann et al. 1998, eq. 35 with
    /// C = 3 pi nu_c Sigma_c).
    pub fn surface_density_g_cm2(&self, radius_cm: f64, time_s: f64) -> f64 {
        let (big_t, amp) = self.scaled(time_s);
        let x = radius_cm / self.characteristic_radius_cm;
        self.sigma_c_g_cm2 * amp * pow(x, -self.gamma) * exp(-pow(x, 2.0 - self.gamma) / big_t)
    }

    /// Inward mass flux Mdot(r, t) [g s^-1] = 3 pi nu_c Sigma_c T^(-(5/2 - gamma)/(2 - gamma))
    /// exp[-x^(2-gamma)/T] [1 - 2 (2 - gamma) x^(2-gamma)/T], x = r/R_c (Hartmann et al. 1998,
    /// eq. 36). At r -> 0 this is the accretion rate onto the star.
    pub fn accretion_rate_g_s(&self, radius_cm: f64, time_s: f64) -> f64 {
        let (big_t, amp) = self.scaled(time_s);
        let y = pow(radius_cm / self.characteristic_radius_cm, 2.0 - self.gamma) / big_t;
        3.0 * PI
            * self.nu_c_cm2_s
            * self.sigma_c_g_cm2
            * amp
            * exp(-y)
            * (1.0 - 2.0 * (2.0 - self.gamma) * y)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thomas_solves_a_known_system() {
        // [2 -1 0; -1 2 -1; 0 -1 2] x = [1 0 1] has x = [1 1 1].
        let mut x = [0.0; 3];
        solve_tridiagonal(
            &[0.0, -1.0, -1.0],
            &[2.0, 2.0, 2.0],
            &[-1.0, -1.0, 0.0],
            &[1.0, 0.0, 1.0],
            &mut Vec::new(),
            &mut x,
        );
        for v in x {
            assert!((v - 1.0).abs() < 1e-15);
        }
    }

    #[test]
    fn grid_areas_sum_to_the_annulus() {
        let g = RadialGrid::log(1.0e12, 1.0e15, 100);
        let total: f64 = g.area_cm2.iter().sum();
        assert!((total / (PI * (1.0e30 - 1.0e24)) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn mass_changes_only_through_the_boundaries() {
        let g = RadialGrid::log(1.0e12, 1.0e15, 100);
        let nu: Vec<f64> = g.centre_cm.iter().map(|r| 1e15 * r / 1e14).collect();
        let mut sigma: Vec<f64> = g.centre_cm.iter().map(|r| 100.0 * 1e14 / r).collect();
        let m0: f64 = sigma.iter().zip(&g.area_cm2).map(|(s, a)| s * a).sum();
        let mut flux = vec![0.0; 101];
        let dt = 3.0e12;
        viscous_step(
            &g,
            &nu,
            &mut sigma,
            dt,
            &mut StepBuffers::default(),
            &mut flux,
        );
        let m1: f64 = sigma.iter().zip(&g.area_cm2).map(|(s, a)| s * a).sum();
        let lost = (flux[100] - flux[0]) * dt;
        assert!(((m1 + lost) - m0).abs() < 1e-12 * m0, "{m0} {m1} {lost}");
        assert!(sigma.iter().all(|&s| s > 0.0));
    }
}
