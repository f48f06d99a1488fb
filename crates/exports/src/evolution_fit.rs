//! Exports of the fit over formation radius x formation age on the evolving disk
//! (`nivalis fit DISK ... --over-age-myr T1,T2[,N]`, docs/model.md section 12.9): the long-form
//! age x radius table (at the best solid-to-gas ratio of each cell) with the best fit, the
//! goodness of fit and the allowed radius ranges per age, as the static fit reports them.

use crate::formats::{json_text, to_csv, to_ecsv_with_meta, to_json, Format};
use crate::methods::MethodEntry;
use crate::planet::{
    fit_inputs_json, flag, goodness_json, interval_json, rel_suffix, thresholds_json,
};
use crate::provenance::Provenance;
use crate::tables::{col, Table};
use nivalis_disk_files::DiskFile;
use nivalis_physics::evolution::fit::{chi_square_over_age, AgeRadiusMap};
use nivalis_physics::evolution::{evolve_with_progress, EvolutionParameters};
use nivalis_physics::planet::{MapSettings, MetallicityReference, ObservedEnvelope};
use nivalis_physics::PhysicsError;
use serde_json::{json, Value};

/// The radius x age map as a long-form table, age-major.
pub fn age_fit_table(map: &AgeRadiusMap) -> Table {
    let rel = rel_suffix(map.observed.relative_to);
    let who = match map.observed.relative_to {
        MetallicityReference::Star => "the star",
        MetallicityReference::Sun => "the Sun",
    };
    let columns = vec![
        col(
            "time_myr",
            "Myr",
            "formation age (snapshot of the evolving disk)",
        ),
        col("radius_au", "AU", "formation radius (radial cell centre)"),
        col(
            "solid_to_gas",
            "",
            "the solid-to-gas ratio of the grid that fits best in this cell",
        ),
        col(
            "c_to_o",
            "",
            "model envelope C/O (linear number ratio) at that ratio",
        ),
        col(
            format!("c_to_h_dex_{rel}"),
            "dex",
            format!("model envelope [C/H] relative to {who}"),
        ),
        col(
            format!("o_to_h_dex_{rel}"),
            "dex",
            format!("model envelope [O/H] relative to {who}"),
        ),
        col(
            format!("m_to_h_dex_{rel}"),
            "dex",
            format!("model envelope [M/H] = (C+O+N+S)/H relative to {who}"),
        ),
        col(
            "chi2",
            "",
            "chi-square against the observation, minimised over the eligible ratios",
        ),
        col(
            "delta_chi2",
            "",
            "chi-square minus its minimum over the whole radius x age map",
        ),
        col(
            "within_1sigma",
            "",
            "1 inside the 1-sigma region (fit acceptable), else 0",
        ),
        col(
            "within_2sigma",
            "",
            "1 inside the 2-sigma region (fit acceptable), else 0",
        ),
    ];
    let rows = map
        .rows
        .iter()
        .map(|r| {
            vec![
                Some(r.time_myr),
                Some(r.radius_au),
                Some(r.solid_to_gas),
                r.row.c_to_o,
                r.row.c_to_h_dex,
                r.row.o_to_h_dex,
                r.row.m_to_h_dex,
                r.chi2,
                r.delta_chi2,
                flag(r.within_1sigma),
                flag(r.within_2sigma),
            ]
        })
        .collect();
    Table { columns, rows }
}

/// Best fit (age, radius, ratio), goodness, thresholds and the allowed radius ranges per age.
pub fn age_fit_summary(map: &AgeRadiusMap) -> Value {
    let rel = rel_suffix(map.observed.relative_to);
    let best = map.best.as_ref().map(|b| {
        let r = &b.row;
        json!({
            "time_myr": r.time_myr,
            "radius_au": r.radius_au,
            "solid_to_gas": r.solid_to_gas,
            "chi2": r.chi2,
            "c_to_o": r.row.c_to_o,
            format!("c_to_h_dex_{rel}"): r.row.c_to_h_dex,
            format!("o_to_h_dex_{rel}"): r.row.o_to_h_dex,
            format!("m_to_h_dex_{rel}"): r.row.m_to_h_dex,
        })
    });
    let allowed: Vec<Value> = map
        .allowed
        .iter()
        .map(|a| {
            json!({
                "time_myr": a.time_myr,
                "one_sigma": a.one_sigma.iter().map(interval_json).collect::<Vec<_>>(),
                "two_sigma": a.two_sigma.iter().map(interval_json).collect::<Vec<_>>(),
            })
        })
        .collect();
    let mut warnings = Vec::new();
    if let Some(r) = &map.goodness.reason {
        warnings.push(format!("{r}; no formation place is allowed"));
    }
    if map.goodness.best_on_ratio_grid_edge {
        warnings.push("the best fit lies on an end of the solid-to-gas grid; the true minimum may lie beyond it (widen the ratio range)".to_string());
    }
    let mut v = fit_inputs_json(&map.observed, &map.settings);
    v.insert(
        "ages_myr".into(),
        json!({"window": [map.times_myr.first(), map.times_myr.last()], "snapshots": map.times_myr}),
    );
    v.insert(
        "solid_to_gas_treatment".into(),
        json!(
            "profiled: the smallest chi-square over the eligible ratios of each (age, radius) cell"
        ),
    );
    v.insert("goodness".into(), goodness_json(&map.goodness));
    v.insert("warnings".into(), json!(warnings));
    v.insert("thresholds".into(), thresholds_json(&map.thresholds));
    v.insert("best_fit".into(), best.unwrap_or(Value::Null));
    v.insert("allowed_radii_per_age".into(), json!(allowed));
    Value::Object(v)
}

/// The radius x age map as JSON: the table plus the summary under `fit`.
pub fn age_fit_json(map: &AgeRadiusMap, provenance: &Provenance, methods: &[MethodEntry]) -> Value {
    let mut v = to_json(&age_fit_table(map), provenance, methods);
    if let Value::Object(o) = &mut v {
        o.insert("fit".into(), age_fit_summary(map));
    }
    v
}

/// The radius x age map as ECSV, with the summary (compact JSON) in the metadata.
pub fn age_fit_ecsv(
    map: &AgeRadiusMap,
    provenance: &Provenance,
    methods: &[MethodEntry],
) -> String {
    to_ecsv_with_meta(
        &age_fit_table(map),
        provenance,
        methods,
        &[("fit", age_fit_summary(map).to_string())],
    )
}

/// Default number of ages of the radius x age fit when `--over-age-myr T1,T2` gives none.
pub const DEFAULT_AGE_COUNT: usize = 6;

/// Reads an age window "T1,T2[,N]" [Myr]: 0 < T1 <= T2 <= 20, N an integer in [1, 100]
/// (default [`DEFAULT_AGE_COUNT`]; 1 when T1 = T2).
pub fn parse_age_window(text: &str) -> Result<(f64, f64, usize), String> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    let number = |s: &str| s.parse::<f64>().ok().filter(|v| v.is_finite());
    let (t1, t2) = match parts.as_slice() {
        [a, b] | [a, b, _] => (number(a), number(b)),
        _ => (None, None),
    };
    let (Some(t1), Some(t2)) = (t1, t2) else {
        return Err(format!(
            "expected T1,T2[,N] (ages in Myr, optional count), got {text:?}"
        ));
    };
    if !(t1 > 0.0 && t1 <= t2 && t2 <= 20.0) {
        return Err(format!(
            "ages must satisfy 0 < T1 <= T2 <= 20 Myr, got {t1},{t2}"
        ));
    }
    let n = match parts.get(2) {
        None if t1 == t2 => 1,
        None => DEFAULT_AGE_COUNT,
        Some(s) => match s.parse::<usize>() {
            Ok(n) if (1..=100).contains(&n) => n,
            _ => {
                return Err(format!(
                    "the age count must be an integer in [1, 100], got {s:?}"
                ))
            }
        },
    };
    Ok((t1, t2, n))
}

/// The number of snapshots of a run from `start_myr` to `t2` (log-spaced, as `evolve` places
/// them, docs/model.md section 12) that puts at least `count` snapshots in [`t1`, `t2`]: the
/// smallest such number in [2, 500], or `None` when `t1` lies before `start_myr` or 500 do not.
pub fn snapshots_for_window(start_myr: f64, t1: f64, t2: f64, count: usize) -> Option<usize> {
    if !(t1 >= start_myr && t2 > start_myr) {
        return None;
    }
    use nivalis_physics::math::ln;
    let f = ln(t1 / start_myr) / ln(t2 / start_myr);
    (2..=500usize).find(|&m| {
        let last = (m - 1) as f64;
        // Snapshot k lies in the window when k / (m - 1) >= f (up to rounding).
        let inside = (0..m).filter(|&k| k as f64 / last >= f - 1e-12).count();
        inside >= count
    })
}

/// What the radius x age fit is asked: the age window `(T1, T2, N)` [Myr] as
/// [`parse_age_window`] reads it, and the observation and settings of the static fit
/// (`FitOptions::build`, `planet_tools::fit_request`).
#[derive(Debug, Clone, PartialEq)]
pub struct AgeFitRequest {
    /// `(T1, T2, N)`: ages in Myr and at least N snapshots in the window.
    pub window: (f64, f64, usize),
    /// The observed envelope.
    pub observed: ObservedEnvelope,
    /// The map's grid, priors and conventions.
    pub settings: MapSettings,
}

/// Why the radius x age fit was not made.
#[derive(Debug, Clone, PartialEq)]
pub enum AgeFitError {
    /// The age window does not fit the run (message without the flag or field name).
    Window(String),
    /// The core's error (its field path names a fit option, an evolution field or `from_myr`).
    Physics(PhysicsError),
    /// The progress callback asked to stop.
    Cancelled,
}

/// A finished radius x age fit: the map and the disk file whose `evolution` section is the
/// run's (its provenance is the exports' and the figure's).
#[derive(Debug, Clone)]
pub struct AgeFit {
    /// The chi-square map over formation radius x formation age.
    pub map: AgeRadiusMap,
    /// The disk with the run's evolution parameters.
    pub file: DiskFile,
}

impl AgeFit {
    /// The provenance of every file of this fit.
    pub fn provenance(&self) -> Provenance {
        Provenance::of(&self.file)
    }

    /// The table as `nivalis fit ... --over-age-myr T1,T2[,N] --format F` writes it.
    pub fn text(&self, format: Format) -> String {
        let prov = self.provenance();
        let used = crate::methods::methods(&self.file.parameters);
        match format {
            Format::Csv => to_csv(&age_fit_table(&self.map), &prov),
            Format::Ecsv => age_fit_ecsv(&self.map, &prov, &used),
            Format::Json => json_text(&age_fit_json(&self.map, &prov, &used)),
        }
    }

    /// The warning the CLI prints on standard error (no place allowed), if any.
    pub fn warning(&self) -> Option<String> {
        self.map
            .goodness
            .reason
            .as_ref()
            .map(|r| format!("{r}; no formation place is allowed"))
    }
}

/// Share of the progress that the evolution takes; the map over the snapshots takes the rest.
const EVOLVE_SHARE: f64 = 0.8;

/// The radius x age fit of `file` (docs/model.md section 12.9), as the CLI
/// (`nivalis fit DISK ... --over-age-myr T1,T2[,N]`) and the page's evolution panel run it:
/// the file's `evolution` section (or its defaults) run to T2 with enough log-spaced snapshots
/// to put N in [T1, T2] ([`snapshots_for_window`]), then
/// `evolution::fit::chi_square_over_age` over that window. `progress(fraction)` is called
/// during the run; a `false` from it cancels ([`AgeFitError::Cancelled`]).
pub fn run_age_fit(
    file: &DiskFile,
    request: &AgeFitRequest,
    progress: &mut dyn FnMut(f64) -> bool,
) -> Result<AgeFit, AgeFitError> {
    let (t1, t2, count) = request.window;
    let mut e = file
        .evolution
        .clone()
        .unwrap_or_else(EvolutionParameters::defaults);
    e.until_myr = t2;
    e.snapshots = snapshots_for_window(e.start_myr, t1, t2, count).ok_or_else(|| {
        AgeFitError::Window(format!(
            "the window must start at or after evolution.start_myr = {} Myr and end after it, with at most 500 snapshots; got {t1},{t2},{count}",
            e.start_myr
        ))
    })?;
    e.check().map_err(AgeFitError::Physics)?;
    let run = evolve_with_progress(&file.parameters, &e, &mut |f| progress(EVOLVE_SHARE * f))
        .map_err(AgeFitError::Physics)?
        .ok_or(AgeFitError::Cancelled)?;
    let map = chi_square_over_age(&run, t1, t2, &request.observed, &request.settings)
        .map_err(AgeFitError::Physics)?;
    progress(1.0);
    let mut file = file.clone();
    file.evolution = Some(e);
    Ok(AgeFit { map, file })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn age_windows_parse_and_place_enough_snapshots() {
        assert_eq!(
            parse_age_window("0.1,2").unwrap(),
            (0.1, 2.0, DEFAULT_AGE_COUNT)
        );
        assert_eq!(parse_age_window("0.1, 2, 9").unwrap(), (0.1, 2.0, 9));
        assert_eq!(parse_age_window("1,1").unwrap(), (1.0, 1.0, 1));
        for bad in ["2,1", "0,1", "1", "a,b", "0.1,2,0", "0.1,30"] {
            assert!(parse_age_window(bad).is_err(), "{bad}");
        }
        // Log-spaced from 0.01 to 2 Myr: the count of ages in [0.1, 2] is at least 6 and one
        // snapshot fewer would not do.
        let m = snapshots_for_window(0.01, 0.1, 2.0, 6).unwrap();
        let times: Vec<f64> = (0..m)
            .map(|k| 0.01 * (200f64).powf(k as f64 / (m - 1) as f64))
            .collect();
        assert!(times.iter().filter(|&&t| t >= 0.1 * (1.0 - 1e-9)).count() >= 6);
        let fewer = m - 1;
        let t2: Vec<f64> = (0..fewer)
            .map(|k| 0.01 * (200f64).powf(k as f64 / (fewer - 1) as f64))
            .collect();
        assert!(t2.iter().filter(|&&t| t >= 0.1 * (1.0 - 1e-9)).count() < 6);
        assert_eq!(snapshots_for_window(0.01, 0.005, 2.0, 6), None);
        assert_eq!(snapshots_for_window(0.01, 2.0, 2.0, 1), Some(2));
    }
}
