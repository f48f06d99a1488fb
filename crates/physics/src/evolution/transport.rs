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
    let storage = |j: usize| grid.area_cm2[j] / dt_s;
    transport_rows(faces, sigma_gas, storage, lower, diag, upper);
    for j in 0..n {
        rhs[j] = storage(j) * x[j];
    }
    solve_tridiagonal(lower, diag, upper, rhs, scratch, x);
    face_fluxes(faces, sigma_gas, x, face_flux);
}

/// The rows of one carrier's implicit step: `lower[j] X_{j-1} + diag[j] X_j + upper[j] X_{j+1}` is
/// `storage(j) X_j` plus the net outward flux of cell j [X cm^2 s^-1]. [`advect_diffuse`] passes
/// the A_j / dt of the time derivative as `storage`; the coupled vapour-ice step passes 0 and adds
/// its own terms (0 + t is exactly t, so both keep the bits of a separate loop).
fn transport_rows(
    faces: &FaceCoefficients,
    sigma_gas: &[f64],
    storage: impl Fn(usize) -> f64,
    lower: &mut [f64],
    diag: &mut [f64],
    upper: &mut [f64],
) {
    let n = sigma_gas.len();
    let u = &faces.advective;
    let d = &faces.diffusive;
    for j in 0..n {
        let (inner, outer) = (j, j + 1);
        let (uo_plus, uo_minus) = if outer == n {
            (u[n].max(0.0), 0.0)
        } else {
            (u[outer].max(0.0), u[outer].min(0.0))
        };
        let (ui_plus, ui_minus) = if inner == 0 {
            (0.0, u[0].min(0.0))
        } else {
            (u[inner].max(0.0), u[inner].min(0.0))
        };
        let d_out = if outer == n { 0.0 } else { d[outer] };
        let d_in = if inner == 0 { 0.0 } else { d[inner] };
        diag[j] = storage(j) + uo_plus + d_out / sigma_gas[j] - ui_minus + d_in / sigma_gas[j];
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
    }
}

/// The outward face fluxes [X cm^2 s^-1] of a carrier with faces `faces` and content `x`.
fn face_fluxes(faces: &FaceCoefficients, sigma_gas: &[f64], x: &[f64], face_flux: &mut [f64]) {
    let n = x.len();
    let u = &faces.advective;
    let d = &faces.diffusive;
    face_flux[0] = u[0].min(0.0) * x[0];
    for e in 1..n {
        face_flux[e] = u[e].max(0.0) * x[e - 1] + u[e].min(0.0) * x[e]
            - d[e] * (x[e] / sigma_gas[e] - x[e - 1] / sigma_gas[e - 1]);
    }
    face_flux[n] = u[n].max(0.0) * x[n - 1];
}

/// The local exchange between vapour V and ice I of one species in one cell, linear over a step:
/// dI/dt = -dV/dt = a V - k I - s [X s^-1] (docs/model.md section 12.4).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LinearExchange {
    /// Freezing rate per unit of vapour a [s^-1].
    pub freezing_s: f64,
    /// Sublimation rate per unit of ice k [s^-1].
    pub sublimation_s: f64,
    /// Sublimation independent of the ice s [X s^-1].
    pub constant_sublimation: f64,
}

/// One backward-Euler step of the vapour V (carried with `gas` faces) and the ice I (with `dust`
/// faces) of one species together with their local exchange, solved as one system
/// (docs/model.md section 12.4):
/// A_j (V_j - V_j^0)/dt = Phi^V_{j-1/2} - Phi^V_{j+1/2} - A_j (a_j V_j - k_j I_j - s_j),
/// A_j (I_j - I_j^0)/dt = Phi^I_{j-1/2} - Phi^I_{j+1/2} + A_j (a_j V_j - k_j I_j - s_j),
/// with the face fluxes of [`advect_diffuse`]. No operator splitting: a steady state of the
/// transported, exchanging species is a fixed point of the step at any dt. The unknowns (V_j,
/// I_j) are solved by block-tridiagonal elimination (2 x 2 blocks) on the rows "sum" (V + I,
/// where the exchange cancels, so the element budget is kept to rounding whatever the
/// exchange's rates) and "ice".
///
/// `vapour`, `ice` are replaced by the new values; `vapour_flux`, `ice_flux` (N + 1) receive the
/// outward face fluxes of the step.
#[allow(clippy::too_many_arguments)]
pub fn advect_diffuse_exchange(
    grid: &RadialGrid,
    gas: &FaceCoefficients,
    dust: &FaceCoefficients,
    sigma_gas: &[f64],
    exchange: &[LinearExchange],
    vapour: &mut [f64],
    ice: &mut [f64],
    dt_s: f64,
    vapour_flux: &mut [f64],
    ice_flux: &mut [f64],
) {
    let n = grid.cells();
    let (mut lv, mut dv, mut uv) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
    let (mut li, mut di, mut ui) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
    transport_rows(gas, sigma_gas, |_| 0.0, &mut lv, &mut dv, &mut uv);
    transport_rows(dust, sigma_gas, |_| 0.0, &mut li, &mut di, &mut ui);
    // Block rows j: L_j x_{j-1} + D_j x_j + U_j x_{j+1} = b_j, x = (V, I); row 0 the sum, row 1
    // the ice. L_j = [[lv, li], [0, li]], U_j = [[uv, ui], [0, ui]].
    type M2 = [[f64; 2]; 2];
    let mut dp: Vec<M2> = vec![[[0.0; 2]; 2]; n];
    let mut bp: Vec<[f64; 2]> = vec![[0.0; 2]; n];
    let inv_mul = |m: &M2, v: [f64; 2]| -> [f64; 2] {
        let det = m[0][0] * m[1][1] - m[0][1] * m[1][0];
        [
            (m[1][1] * v[0] - m[0][1] * v[1]) / det,
            (m[0][0] * v[1] - m[1][0] * v[0]) / det,
        ]
    };
    for j in 0..n {
        let area = grid.area_cm2[j];
        let a = area / dt_s;
        let x = exchange[j];
        let mut d: M2 = [
            [a + dv[j], a + di[j]],
            [-area * x.freezing_s, a + di[j] + area * x.sublimation_s],
        ];
        let mut b = [
            a * (vapour[j] + ice[j]),
            a * ice[j] - area * x.constant_sublimation,
        ];
        if j > 0 {
            // m = L_j D'_{j-1}^{-1}; D'_j = D_j - m U_{j-1}; b'_j = b_j - m b'_{j-1}.
            let prev = dp[j - 1];
            let det = prev[0][0] * prev[1][1] - prev[0][1] * prev[1][0];
            let inv = [
                [prev[1][1] / det, -prev[0][1] / det],
                [-prev[1][0] / det, prev[0][0] / det],
            ];
            let l = [[lv[j], li[j]], [0.0, li[j]]];
            let mut m = [[0.0; 2]; 2];
            for r in 0..2 {
                for c in 0..2 {
                    m[r][c] = l[r][0] * inv[0][c] + l[r][1] * inv[1][c];
                }
            }
            let u = [[uv[j - 1], ui[j - 1]], [0.0, ui[j - 1]]];
            for r in 0..2 {
                for c in 0..2 {
                    d[r][c] -= m[r][0] * u[0][c] + m[r][1] * u[1][c];
                }
                b[r] -= m[r][0] * bp[j - 1][0] + m[r][1] * bp[j - 1][1];
            }
        }
        dp[j] = d;
        bp[j] = b;
    }
    let mut next = [0.0; 2];
    for j in (0..n).rev() {
        let mut b = bp[j];
        if j + 1 < n {
            b[0] -= uv[j] * next[0] + ui[j] * next[1];
            b[1] -= ui[j] * next[1];
        }
        next = inv_mul(&dp[j], b);
        vapour[j] = next[0];
        ice[j] = next[1];
    }
    face_fluxes(gas, sigma_gas, vapour, vapour_flux);
    face_fluxes(dust, sigma_gas, ice, ice_flux);
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
