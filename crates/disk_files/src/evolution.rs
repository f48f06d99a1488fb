//! The optional `evolution` section of a disk file (docs/disk-file.md, "evolution"): the
//! parameters of a time-evolving run (`nivalis evolve`), read and validated on their own so the
//! main reader needs only a one-line hook, and written back resolved.

use crate::{shorten, Problem};
use nivalis_physics::error::num;
use nivalis_physics::evolution::star_track::{StarTrack, StarTrackPoint};
use nivalis_physics::evolution::{CoProcessing, EvolutionParameters};
use nivalis_physics::star::stellar_radius_au;
use nivalis_physics::ModelParameters;
use serde_json::{json, Map, Value};

/// Most rows a star-track table may have.
pub const MAX_STAR_TRACK_ROWS: usize = 1000;

const KEYS: [&str; 10] = [
    "alpha",
    "schmidt_number",
    "diffusion",
    "start_myr",
    "until_myr",
    "snapshots",
    "max_step_fraction",
    "vertical_cells",
    "dust",
    "star",
];
const DUST_KEYS: [&str; 4] = [
    "drift",
    "fragmentation_velocity_m_s",
    "monomer_radius_um",
    "material_density_g_cm3",
];
const STAR_KEYS: [&str; 2] = ["track", "table"];
const ROW_KEYS: [&str; 3] = ["age_myr", "luminosity_lsun", "effective_temperature_k"];
const CO_KEYS: [&str; 3] = ["enabled", "timescale_myr", "max_temperature_k"];
const TRACKS: [&str; 3] = ["hayashi_contraction", "fixed", "table"];

struct Section {
    problems: Vec<Problem>,
}

fn join(path: &str, key: &str) -> String {
    format!("{path}.{key}")
}

fn shown(v: &Value) -> String {
    shorten(&v.to_string())
}

impl Section {
    fn bad(&mut self, path: String, v: &Value, allowed: &str) {
        self.problems.push(
            Problem::new(path, format!("must be {allowed}, got {}", shown(v)))
                .with_value(v.to_string())
                .with_allowed(allowed),
        );
    }

    fn object<'v>(
        &mut self,
        v: Option<&'v Value>,
        path: &str,
        known: &[&str],
    ) -> Option<&'v Map<String, Value>> {
        match v? {
            Value::Object(m) => {
                for k in m.keys() {
                    if !known.contains(&k.as_str()) {
                        self.problems.push(
                            Problem::new(
                                join(path, &shorten(k)),
                                format!("unknown field; expected one of {}", known.join(", ")),
                            )
                            .with_value(shorten(k))
                            .with_allowed(known.join(", ")),
                        );
                    }
                }
                Some(m)
            }
            other => {
                self.bad(path.to_string(), other, "an object");
                None
            }
        }
    }

    /// A real in [lo, hi] (both finite).
    fn real(
        &mut self,
        m: Option<&Map<String, Value>>,
        path: &str,
        key: &str,
        default: f64,
        lo: f64,
        hi: f64,
    ) -> f64 {
        let Some(v) = m.and_then(|m| m.get(key)) else {
            return default;
        };
        match v.as_f64() {
            Some(x) if v.is_number() && x >= lo && x <= hi => x,
            _ => {
                self.bad(
                    join(path, key),
                    v,
                    &format!("a number in [{}, {}]", num(lo), num(hi)),
                );
                default
            }
        }
    }

    fn boolean(
        &mut self,
        m: Option<&Map<String, Value>>,
        path: &str,
        key: &str,
        default: bool,
    ) -> bool {
        match m.and_then(|m| m.get(key)) {
            None => default,
            Some(Value::Bool(b)) => *b,
            Some(v) => {
                self.bad(join(path, key), v, "true or false");
                default
            }
        }
    }
}

/// Read the `evolution` section (`None` when the file has none) with the disk it belongs to
/// (for the star's size along its track). Problems carry full paths (`evolution.alpha`).
pub fn read_evolution(
    value: Option<&Value>,
    disk: &ModelParameters,
) -> (Option<EvolutionParameters>, Vec<Problem>) {
    let mut s = Section {
        problems: Vec::new(),
    };
    let Some(value) = value else {
        return (None, s.problems);
    };
    let d = EvolutionParameters::defaults();
    let path = "evolution";
    let mut keys = KEYS.to_vec();
    keys.push("co_processing");
    let Some(m) = s.object(Some(value), path, &keys) else {
        return (None, s.problems);
    };
    let m = Some(m);
    let mut e = d.clone();
    e.alpha = s.real(m, path, "alpha", d.alpha, 1e-6, 0.1);
    e.schmidt_number = s.real(m, path, "schmidt_number", d.schmidt_number, 0.1, 10.0);
    e.diffusion = s.boolean(m, path, "diffusion", d.diffusion);
    e.start_myr = s.real(m, path, "start_myr", d.start_myr, 1e-4, 1.0);
    e.until_myr = s.real(m, path, "until_myr", d.until_myr, 1e-4, 20.0);
    if e.until_myr <= e.start_myr {
        let v = m
            .and_then(|m| m.get("until_myr"))
            .cloned()
            .unwrap_or(json!(e.until_myr));
        s.bad(
            "evolution.until_myr".into(),
            &v,
            &format!("above evolution.start_myr ({})", num(e.start_myr)),
        );
    }
    if let Some(v) = m.and_then(|m| m.get("snapshots")) {
        match v
            .as_f64()
            .filter(|x| x.fract() == 0.0 && (2.0..=500.0).contains(x))
        {
            Some(x) => e.snapshots = x as usize,
            None => s.bad(
                "evolution.snapshots".into(),
                v,
                "a whole number in [2, 500]",
            ),
        }
    }
    e.max_step_fraction = s.real(m, path, "max_step_fraction", d.max_step_fraction, 1e-4, 0.5);
    if let Some(v) = m.and_then(|m| m.get("vertical_cells")) {
        match v
            .as_f64()
            .filter(|x| x.fract() == 0.0 && (8.0..=4096.0).contains(x))
        {
            Some(x) => e.vertical_cells = x as usize,
            None => s.bad(
                "evolution.vertical_cells".into(),
                v,
                "a whole number in [8, 4096]",
            ),
        }
    }
    // Dust.
    let dp = "evolution.dust";
    let dust = s.object(m.and_then(|m| m.get("dust")), dp, &DUST_KEYS);
    e.dust.drift = s.boolean(dust, dp, "drift", d.dust.drift);
    e.dust.fragmentation_velocity_cm_s = 100.0
        * s.real(
            dust,
            dp,
            "fragmentation_velocity_m_s",
            d.dust.fragmentation_velocity_cm_s / 100.0,
            0.1,
            100.0,
        );
    e.dust.monomer_radius_um = s.real(
        dust,
        dp,
        "monomer_radius_um",
        d.dust.monomer_radius_um,
        0.01,
        100.0,
    );
    e.dust.material_density_g_cm3 = s.real(
        dust,
        dp,
        "material_density_g_cm3",
        d.dust.material_density_g_cm3,
        0.1,
        10.0,
    );
    // Star.
    let sp = "evolution.star";
    let star = s.object(m.and_then(|m| m.get("star")), sp, &STAR_KEYS);
    let table = star.and_then(|st| st.get("table"));
    let track = match star.and_then(|st| st.get("track")) {
        None => Some(if table.is_some() { 2 } else { 0 }),
        Some(Value::String(t)) if TRACKS.contains(&t.as_str()) => {
            TRACKS.iter().position(|x| x == t)
        }
        Some(v) => {
            s.bad(
                "evolution.star.track".into(),
                v,
                &format!("one of {}", TRACKS.join(", ")),
            );
            None
        }
    };
    match (track, table) {
        (Some(2), None) => s.problems.push(
            Problem::new(
                "evolution.star.table",
                "is required with the track \"table\": rows of age_myr, luminosity_lsun and effective_temperature_k",
            )
            .with_allowed("an array of 1 to 1000 rows"),
        ),
        (Some(t), Some(v)) if t != 2 => s.bad(
            "evolution.star.table".into(),
            v,
            "absent unless evolution.star.track is \"table\"",
        ),
        _ => {}
    }
    e.star_track = match track {
        Some(1) => StarTrack::Fixed,
        Some(2) => StarTrack::Table(table.map(|t| s.rows(t)).unwrap_or_default()),
        _ => StarTrack::HayashiContraction,
    };
    // CO processing.
    let cp = "evolution.co_processing";
    let co = s.object(m.and_then(|m| m.get("co_processing")), cp, &CO_KEYS);
    if s.boolean(co, cp, "enabled", false) {
        e.co_processing = Some(CoProcessing {
            timescale_myr: s.real(co, cp, "timescale_myr", 1.0, 0.01, 1000.0),
            max_temperature_k: s.real(co, cp, "max_temperature_k", 30.0, 5.0, 100.0),
        });
    } else {
        // Still check the values given, so a typo does not pass silently.
        s.real(co, cp, "timescale_myr", 1.0, 0.01, 1000.0);
        s.real(co, cp, "max_temperature_k", 30.0, 5.0, 100.0);
    }
    // The star at its largest along the run must stay inside the disk's inner edge.
    if s.problems.is_empty() {
        let mut ages = vec![e.start_myr, e.until_myr];
        if let StarTrack::Table(rows) = &e.star_track {
            ages.extend(
                rows.iter()
                    .map(|r| r.age_myr)
                    .filter(|a| *a > e.start_myr && *a < e.until_myr),
            );
        }
        for age in ages {
            let (l, t) = e.star_track.at(
                disk.star.luminosity_lsun,
                disk.star.effective_temperature_k,
                disk.disk.age_myr,
                age,
            );
            let r = stellar_radius_au(l, t);
            if r >= disk.disk.inner_radius_au {
                s.problems.push(
                    Problem::new(
                        "evolution.start_myr",
                        format!(
                            "at {} Myr the star on its track (L = {} Lsun, T_eff = {} K) has R* = {} au, outside the disk's inner edge {} au; start later or move disk.inner_radius_au out",
                            num(age), num(l), num(t), num(r), num(disk.disk.inner_radius_au)
                        ),
                    )
                    .with_value(num(e.start_myr))
                    .with_allowed("an age at which the star is smaller than disk.inner_radius_au"),
                );
                break;
            }
        }
    }
    if s.problems.is_empty() {
        if let Err(err) = e.check() {
            s.problems.push(Problem::from_physics(&err));
        }
    }
    let ok = s.problems.is_empty();
    (ok.then_some(e), s.problems)
}

impl Section {
    fn rows(&mut self, v: &Value) -> Vec<StarTrackPoint> {
        let path = "evolution.star.table";
        let Some(items) = v
            .as_array()
            .filter(|a| !a.is_empty() && a.len() <= MAX_STAR_TRACK_ROWS)
        else {
            self.bad(path.into(), v, "an array of 1 to 1000 rows");
            return Vec::new();
        };
        let mut out: Vec<StarTrackPoint> = Vec::with_capacity(items.len());
        for (k, item) in items.iter().enumerate() {
            let p = format!("{path}[{k}]");
            let row = self.object(Some(item), &p, &ROW_KEYS);
            for key in ROW_KEYS {
                if row.is_some_and(|r| !r.contains_key(key)) {
                    self.problems
                        .push(Problem::new(join(&p, key), "is required").with_allowed("a number"));
                }
            }
            let point = StarTrackPoint {
                age_myr: self.real(row, &p, "age_myr", 1.0, 1e-4, 100.0),
                luminosity_lsun: self.real(row, &p, "luminosity_lsun", 1.0, 1e-4, 1e4),
                effective_temperature_k: self.real(
                    row,
                    &p,
                    "effective_temperature_k",
                    4000.0,
                    2000.0,
                    50000.0,
                ),
            };
            if let Some(prev) = out.last() {
                if point.age_myr <= prev.age_myr {
                    self.problems.push(
                        Problem::new(
                            join(&p, "age_myr"),
                            format!(
                                "must be above the previous row's age {} Myr (ages strictly increasing), got {}",
                                num(prev.age_myr),
                                num(point.age_myr)
                            ),
                        )
                        .with_value(num(point.age_myr))
                        .with_allowed("strictly increasing ages"),
                    );
                }
            }
            out.push(point);
        }
        out
    }
}

/// The resolved `evolution` section as JSON (every field written).
pub fn evolution_to_value(e: &EvolutionParameters) -> Value {
    let mut star = Map::new();
    star.insert("track".into(), json!(e.star_track.key()));
    if let StarTrack::Table(rows) = &e.star_track {
        star.insert(
            "table".into(),
            Value::Array(
                rows.iter()
                    .map(|r| json!({"age_myr": r.age_myr, "luminosity_lsun": r.luminosity_lsun, "effective_temperature_k": r.effective_temperature_k}))
                    .collect(),
            ),
        );
    }
    let co = match e.co_processing {
        Some(c) => {
            json!({"enabled": true, "timescale_myr": c.timescale_myr, "max_temperature_k": c.max_temperature_k})
        }
        None => json!({"enabled": false, "timescale_myr": 1.0, "max_temperature_k": 30.0}),
    };
    json!({
        "alpha": e.alpha,
        "schmidt_number": e.schmidt_number,
        "diffusion": e.diffusion,
        "start_myr": e.start_myr,
        "until_myr": e.until_myr,
        "snapshots": e.snapshots,
        "max_step_fraction": e.max_step_fraction,
        "vertical_cells": e.vertical_cells,
        "dust": {
            "drift": e.dust.drift,
            "fragmentation_velocity_m_s": e.dust.fragmentation_velocity_cm_s / 100.0,
            "monomer_radius_um": e.dust.monomer_radius_um,
            "material_density_g_cm3": e.dust.material_density_g_cm3
        },
        "star": Value::Object(star),
        "co_processing": co
    })
}

#[cfg(test)]
mod tests {
    use crate::parse_disk_json;

    fn problems(text: &str) -> Vec<String> {
        parse_disk_json(text)
            .unwrap_err()
            .0
            .iter()
            .map(|p| p.to_string())
            .collect()
    }

    #[test]
    fn absent_section_is_none_and_empty_section_the_defaults() {
        assert_eq!(parse_disk_json("{}").unwrap().evolution, None);
        let f = parse_disk_json(r#"{"evolution": {}}"#).unwrap();
        assert_eq!(
            f.evolution,
            Some(nivalis_physics::evolution::EvolutionParameters::defaults())
        );
    }

    #[test]
    fn fields_are_read_and_written_back() {
        let text = r#"{"evolution": {"alpha": 0.01, "until_myr": 3, "snapshots": 7,
            "dust": {"drift": false, "fragmentation_velocity_m_s": 5},
            "star": {"table": [{"age_myr": 0.1, "luminosity_lsun": 5, "effective_temperature_k": 4200},
                               {"age_myr": 3, "luminosity_lsun": 1, "effective_temperature_k": 4300}]},
            "co_processing": {"enabled": true, "timescale_myr": 2}}}"#;
        let f = parse_disk_json(text).unwrap();
        let e = f.evolution.clone().unwrap();
        assert_eq!(e.alpha, 0.01);
        assert_eq!(e.snapshots, 7);
        assert!(!e.dust.drift);
        assert_eq!(e.dust.fragmentation_velocity_cm_s, 500.0);
        assert_eq!(e.star_track.key(), "table");
        assert_eq!(e.co_processing.unwrap().timescale_myr, 2.0);
        // The resolved file reads back to the same parameters.
        let again = parse_disk_json(&crate::to_json_string(&f)).unwrap();
        assert_eq!(again.evolution, f.evolution);
    }

    #[test]
    fn bad_values_name_their_fields() {
        let p = problems(
            r#"{"evolution": {"alpha": 2, "until_myr": 0.001, "snapshots": 1.5, "dust": {"drift": 1, "size": 3},
                "star": {"track": "table"}}}"#,
        );
        for expected in [
            "evolution.alpha: must be a number in [1e-6, 0.1], got 2",
            "evolution.until_myr: must be above evolution.start_myr (0.01), got 0.001",
            "evolution.snapshots: must be a whole number in [2, 500], got 1.5",
            "evolution.dust.drift: must be true or false, got 1",
            "evolution.dust.size: unknown field",
            "evolution.star.table: is required",
        ] {
            assert!(
                p.iter().any(|x| x.starts_with(expected)),
                "{expected} not in {p:?}"
            );
        }
        let p = problems(
            r#"{"evolution": {"star": {"table": [{"age_myr": 1, "luminosity_lsun": 1, "effective_temperature_k": 4000},
                {"age_myr": 0.5, "luminosity_lsun": 1, "effective_temperature_k": 4000}]}}}"#,
        );
        assert!(
            p[0].starts_with(
                "evolution.star.table[1].age_myr: must be above the previous row's age 1 Myr"
            ),
            "{p:?}"
        );
    }

    #[test]
    fn a_star_larger_than_the_inner_edge_is_refused() {
        // Hayashi contraction from 1 Lsun at 1 Myr: at 1e-4 Myr L = 464 Lsun, R* = 0.21 au at 4000 K.
        let p = problems(r#"{"evolution": {"start_myr": 0.0001}}"#);
        assert!(
            p[0].starts_with("evolution.start_myr: at 0.0001 Myr the star"),
            "{p:?}"
        );
    }
}
