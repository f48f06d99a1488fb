//! Advection and diffusion of a trace quantity (dust, vapour or ice of one species, released
//! carbon) on the radial grid, implicit in time (docs/model.md section 12.4). Equation numbers are
//! from memory (docs/model.md section 12.11).

use super::viscous::{solve_tridiagonal, RadialGrid, StepBuffers};

/// The transport coefficients on the N + 1 faces for one carrier.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FaceCoefficients {
    /// 2 pi r_e v_e [cm^2 s^-1]: the carrier's radial speed at the face times the face length.
    pub advective: Vec<f64>,
    /// 2 pi r_e D_e Sigma_g,e / (r_{j+1} - r_j) [g s^-1]: the diffusive conductance of the
    /// concentration X / Sigma_g across the face (0 at the two edges).
    pub diffusive: Vec<f64>,
}

impl FaceCoefficients {
    /// Zeroed coefficients for `faces` faces.
    pub fn zeros(faces: usize) -> FaceCoefficients {
        FaceCoefficients {
            advective: vec![0.0; faces],
            diffusive: vec![0.0; faces],
        }
    }
}

/// One backward-Euler step of dX/dt + (1/r) d/dr [r (v X - D Sigma_g d(X/Sigma_g)/dr)] = 0 in
/// finite-volume form, A_j dX_j/dt = Phi_{j-1/2} - Phi_{j+1/2}, with the face flux
/// Phi_e = 2 pi r_e v_e X_upwind - 2 pi r_e D_e Sigma_g,e (X_{j+1}/Sigma_{j+1} - X_j/Sigma_j)/(r_{j+1} - r_j)
/// (donor-cell advection; gradient diffusion of the concentration relative to the gas, Clarke &
/// Pringle 1988; Birnstiel, Dullemond & Brauer 2010 eq. 10). Nothing enters through the edges;
/// what the carrier carries out leaves. The matrix is a column diagonally dominant M-matrix, so
/// any step is stable, X stays non-negative and the sum of A_j X_j changes only by the edge
/// fluxes.
///
/// `sigma_gas` is the gas surface density the concentration refers to (the new one); `x` is
/// replaced by the new X. `face_flux` (N + 1) receives the outward face fluxes of the step
/// [X cm^2 s^-1].
pub fn advect_diffuse(
    grid: &RadialGrid,
    faces: &FaceCoefficients,
    sigma_gas: &[f64],
    x: &mut [f64],
    dt_s: f64,
    buffers: &mut StepBuffers,
    face_flux: &mut [f64],
) {
    let n = grid.cells();
    let (lower, diag, upper, rhs, scratch) = buffers.parts(n);
    let u = &faces.advective;
    let d = &faces.diffusive;
    for j in 0..n {
        let a = grid.area_cm2[j] / dt_s;
        let (inner, outer) = (j, j + 1);
        // Outer face of cell j.
        let (uo_plus, uo_minus) = if outer == n {
            (u[n].max(0.0), 0.0)
        } else {
            (u[outer].max(0.0), u[outer].min(0.0))
        };
        // Inner face of cell j.
        let (ui_plus, ui_minus) = if inner == 0 {
            (0.0, u[0].min(0.0))
        } else {
            (u[inner].max(0.0), u[inner].min(0.0))
        };
        let d_out = if outer == n { 0.0 } else { d[outer] };
        let d_in = if inner == 0 { 0.0 } else { d[inner] };
        diag[j] = a + uo_plus + d_out / sigma_gas[j] - ui_minus + d_in / sigma_gas[j];
        upper[j] = if outer < n {
            uo_minus - d_out / sigma_gas[j + 1]
        } else {
            0.0
        };
        lower[j] = if inner > 0 {
            -(ui_plus + d_in / sigma_gas[j - 1])
        } else {
            0.0
        };
        rhs[j] = a * x[j];
    }
    solve_tridiagonal(lower, diag, upper, rhs, scratch, x);
    face_flux[0] = u[0].min(0.0) * x[0];
    for e in 1..n {
        face_flux[e] = u[e].max(0.0) * x[e - 1] + u[e].min(0.0) * x[e]
            - d[e] * (x[e] / sigma_gas[e] - x[e - 1] / sigma_gas[e - 1]);
    }
    face_flux[n] = u[n].max(0.0) * x[n - 1];
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_uniform_concentration_carried_by_the_gas_stays_uniform() {
        // The gas's own face fluxes as the carrier: X = c Sigma_g before and after (to rounding).
        let g = RadialGrid::log(1.0e12, 1.0e15, 60);
        let nu: Vec<f64> = g.centre_cm.iter().map(|r| 1e15 * r / 1e14).collect();
        let mut sigma: Vec<f64> = g.centre_cm.iter().map(|r| 100.0 * 1e14 / r).collect();
        let old = sigma.clone();
        let mut flux = vec![0.0; 61];
        let dt = 1.0e12;
        let mut b = StepBuffers::default();
        super::super::viscous::viscous_step(&g, &nu, &mut sigma, dt, &mut b, &mut flux);
        let mut faces = FaceCoefficients::zeros(61);
        for (e, &f) in flux.iter().enumerate() {
            let up = if f > 0.0 { e - 1 } else { e.min(59) };
            faces.advective[e] = f / sigma[up];
            if e > 0 && e < 60 {
                faces.diffusive[e] = 1e10;
            }
        }
        let mut x: Vec<f64> = old.iter().map(|s| 3e-4 * s).collect();
        let mut tf = vec![0.0; 61];
        advect_diffuse(&g, &faces, &sigma, &mut x, dt, &mut b, &mut tf);
        for j in 0..60 {
            assert!((x[j] / sigma[j] / 3e-4 - 1.0).abs() < 1e-12, "{j}");
        }
    }
}
