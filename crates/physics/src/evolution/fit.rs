//! The fit of an observed envelope over formation radius x formation age on the evolving disk
//! (docs/model.md section 12.9): the static chi-square map (`planet::chi_square_map_with`,
//! docs/model.md section 9) evaluated at every snapshot in an age window on the snapshot's own
//! structure and transported composition, with the solid-to-gas ratio profiled out per cell.

use super::EvolutionRun;
use crate::error::PhysicsError;
use crate::planet::{
    chi_square_map_with, radius_runs, unacceptable_reason, ChiSquareMap, DeltaChiSquare, Goodness,
    MapSettings, ObservedEnvelope, RadiusInterval, ACCEPTABLE_P_VALUE,
};
use crate::statistics::chi_square_survival;

/// Fitted parameters of the radius x age map: formation radius, formation age and the
/// solid-to-gas ratio (profiled out per cell).
pub const AGE_FIT_PARAMETERS: usize = 3;

/// One (age, radius) cell of the map, at the solid-to-gas ratio that fits best there.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AgeRadiusRow {
    /// Snapshot age [Myr].
    pub time_myr: f64,
    /// Radial cell centre [au].
    pub radius_au: f64,
    /// The eligible solid-to-gas ratio with the smallest chi-square in this cell (the grid's
    /// first value where none is defined).
    pub solid_to_gas: f64,
    /// Its index in the ratio grid.
    pub ratio_index: usize,
    /// The static map's row at that ratio (model values, chi-square, flags; `delta_chi2` and
    /// `within_*` are the per-snapshot map's and are superseded by the fields below).
    pub row: crate::planet::MapRow,
    /// Chi-square at the best ratio (`None` where no eligible ratio gives defined values).
    pub chi2: Option<f64>,
    /// Chi-square minus the minimum over the whole radius x age map.
    pub delta_chi2: Option<f64>,
    /// Inside the 1-sigma region (the fit acceptable).
    pub within_1sigma: bool,
    /// Inside the 2-sigma region (the fit acceptable).
    pub within_2sigma: bool,
}

/// The allowed formation radii at one age.
#[derive(Debug, Clone, PartialEq)]
pub struct AllowedAtAge {
    /// Snapshot age [Myr].
    pub time_myr: f64,
    /// 1-sigma radius ranges, inner first.
    pub one_sigma: Vec<RadiusInterval>,
    /// 2-sigma radius ranges, inner first.
    pub two_sigma: Vec<RadiusInterval>,
}

/// The best (age, radius, solid-to-gas) of the map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AgeRadiusBest {
    /// Index into `AgeRadiusMap::times_myr`.
    pub time_index: usize,
    /// Radial cell.
    pub radial_cell: usize,
    /// The cell's row.
    pub row: AgeRadiusRow,
}

/// The chi-square map over formation radius x formation age.
#[derive(Debug, Clone, PartialEq)]
pub struct AgeRadiusMap {
    /// The observation.
    pub observed: ObservedEnvelope,
    /// The settings (the static map's).
    pub settings: MapSettings,
    /// Delta chi-square thresholds of the two mapped parameters (radius, age).
    pub thresholds: DeltaChiSquare,
    /// Snapshot ages [Myr] in the window.
    pub times_myr: Vec<f64>,
    /// The run's snapshot index of each age.
    pub snapshot_index: Vec<usize>,
    /// Radial cell centres [au].
    pub radius_au: Vec<f64>,
    /// Radial cell edges [au].
    pub cell_edges_au: Vec<f64>,
    /// The solid-to-gas grid.
    pub solid_to_gas: Vec<f64>,
    /// Rows, age-major: row `k * radius_au.len() + j`.
    pub rows: Vec<AgeRadiusRow>,
    /// The smallest chi-square (first in row order on ties).
    pub best: Option<AgeRadiusBest>,
    /// Goodness of fit of the best cell, with max(n_obs - 3, 1) degrees of freedom.
    pub goodness: Goodness,
    /// Per age, the allowed radius ranges (empty when the fit is unacceptable).
    pub allowed: Vec<AllowedAtAge>,
}

/// Chi-square of `observed` over formation radius x formation age (docs/model.md section 12.9):
/// for every snapshot of `run` with an age in [`from_myr`, `to_myr`] the static map
/// ([`chi_square_map_with`]) on the snapshot's structure (`EvolutionRun::static_model_at`) with
/// the accreted phases of each radial cell taken from the transported composition
/// (`EvolutionRun::accreted_phases` of that one cell and snapshot); in each (age, radius) cell
/// the eligible solid-to-gas ratio with the smallest chi-square is kept (the profile over the
/// ratio). The best fit is the smallest chi-square of the map; its goodness is the chi-square
/// survival function with max(n_obs - 3, 1) degrees of freedom (radius, age and ratio fitted);
/// below p = 0.01 nothing is allowed. The 1- and 2-sigma regions use the static map's
/// thresholds (two mapped parameters: radius and age).
///
/// Errors: the static map's input errors; `OutOfRange` named `from_myr` when the window is not
/// inside the run or holds no snapshot.
pub fn chi_square_over_age(
    run: &EvolutionRun,
    from_myr: f64,
    to_myr: f64,
    observed: &ObservedEnvelope,
    settings: &MapSettings,
) -> Result<AgeRadiusMap, PhysicsError> {
    let times = run.times_myr();
    let snaps: Vec<usize> = (0..times.len())
        .filter(|&k| times[k] >= from_myr * (1.0 - 1e-9) && times[k] <= to_myr * (1.0 + 1e-9))
        .collect();
    if !(from_myr <= to_myr) || snaps.is_empty() {
        return Err(PhysicsError::OutOfRange {
            name: "from_myr",
            value: from_myr,
            allowed: "an age window (from <= to) holding at least one snapshot of the run",
        });
    }
    let mut maps: Vec<ChiSquareMap> = Vec::with_capacity(snaps.len());
    for &k in &snaps {
        let model = run.static_model_at(k)?;
        let map = chi_square_map_with(&model, observed, settings, &|j, r_au| {
            run.phases_over(&[j], &[k], r_au, r_au)
        })?;
        maps.push(map);
    }
    let first = &maps[0];
    let (radius_au, cell_edges_au) = (first.radius_au.clone(), first.cell_edges_au.clone());
    let n_r = radius_au.len();
    let n_q = first.solid_to_gas.len();
    let mut rows = Vec::with_capacity(snaps.len() * n_r);
    for (map, &k) in maps.iter().zip(&snaps) {
        for (j, &r_au) in radius_au.iter().enumerate() {
            let cell = &map.rows[j * n_q..(j + 1) * n_q];
            let best_q = (0..n_q)
                .filter(|&q| cell[q].feasible && cell[q].in_prior)
                .filter_map(|q| cell[q].chi2.map(|c| (q, c)))
                .fold(None, |b: Option<(usize, f64)>, (q, c)| {
                    if b.is_none_or(|(_, bc)| c < bc) {
                        Some((q, c))
                    } else {
                        b
                    }
                });
            let q = best_q.map_or(0, |(q, _)| q);
            rows.push(AgeRadiusRow {
                time_myr: times[k],
                radius_au: r_au,
                solid_to_gas: cell[q].solid_to_gas,
                ratio_index: q,
                row: cell[q],
                chi2: best_q.map(|(_, c)| c),
                delta_chi2: None,
                within_1sigma: false,
                within_2sigma: false,
            });
        }
    }
    let mut best: Option<(usize, f64)> = None;
    for (i, r) in rows.iter().enumerate() {
        if let Some(c) = r.chi2 {
            if best.is_none_or(|(_, b)| c < b) {
                best = Some((i, c));
            }
        }
    }
    let n_obs = observed.fitted_quantities();
    let degrees_of_freedom = n_obs.saturating_sub(AGE_FIT_PARAMETERS).max(1);
    let p_value = best.and_then(|(_, c)| chi_square_survival(c, degrees_of_freedom));
    let acceptable = p_value.is_some_and(|p| p >= ACCEPTABLE_P_VALUE);
    let thresholds = first.thresholds;
    let reason = match best {
        _ if acceptable => None,
        None => Some(format!(
            "no place and age in the window gives defined values of {} inside the priors",
            observed.fitted_label()
        )),
        Some((_, c)) => Some(unacceptable_reason(
            observed,
            c,
            degrees_of_freedom,
            p_value,
        )),
    };
    if let Some((_, min)) = best {
        for r in rows.iter_mut() {
            if let Some(c) = r.chi2 {
                let d = c - min;
                r.delta_chi2 = Some(d);
                r.within_1sigma = acceptable && d <= thresholds.one_sigma;
                r.within_2sigma = acceptable && d <= thresholds.two_sigma;
            }
        }
    }
    let allowed = snaps
        .iter()
        .enumerate()
        .map(|(a, &k)| AllowedAtAge {
            time_myr: times[k],
            one_sigma: radius_runs(&radius_au, &cell_edges_au, &|j| {
                rows[a * n_r + j].within_1sigma
            }),
            two_sigma: radius_runs(&radius_au, &cell_edges_au, &|j| {
                rows[a * n_r + j].within_2sigma
            }),
        })
        .collect();
    let best = best.map(|(i, _)| AgeRadiusBest {
        time_index: i / n_r,
        radial_cell: i % n_r,
        row: rows[i],
    });
    let goodness = Goodness {
        chi2_min: best.and_then(|b| b.row.chi2),
        degrees_of_freedom,
        degrees_of_freedom_floored: n_obs < AGE_FIT_PARAMETERS + 1,
        p_value,
        acceptable,
        best_on_ratio_grid_edge: best
            .is_some_and(|b| b.row.ratio_index == 0 || b.row.ratio_index + 1 == n_q),
        reason,
    };
    Ok(AgeRadiusMap {
        observed: observed.clone(),
        settings: *settings,
        thresholds,
        times_myr: snaps.iter().map(|&k| times[k]).collect(),
        snapshot_index: snaps,
        radius_au,
        cell_edges_au,
        solid_to_gas: first.solid_to_gas.clone(),
        rows,
        best,
        goodness,
        allowed,
    })
}
