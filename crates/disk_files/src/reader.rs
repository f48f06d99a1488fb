//! The validating reader: walks the JSON tree once, collecting every problem.

use crate::fields::{child_keys, closest, field_by_path, fields, Field, Range};
use crate::{shorten, DiskFile, Problem, Problems, SCHEMA};
use nivalis_physics::budget::Carriers;
use nivalis_physics::params::{
    default_flaring_angle, AbundanceReference, CarbonFractions, DesorptionModel, EarlyPhase,
    Element, GasMassMeaning, InitialIceState, NitrogenFractions, Opacity, SootLine,
    SulfurFractions, TemperatureLaw, VerticalTemperature,
};
use nivalis_physics::species::SpeciesTable;
use nivalis_physics::star::{stellar_abundances_per_h, stellar_radius_au};
use nivalis_physics::structure::{profile_fraction_between, MIN_PROFILE_FRACTION_BETWEEN_EDGES};
use nivalis_physics::{BindingEnergySet, ModelParameters, Species};
use serde_json::{Map, Value};
use std::borrow::Cow;

/// Parse and validate a disk file from JSON text.
pub fn parse_disk_json(text: &str) -> Result<DiskFile, Problems> {
    from_value(&crate::parse_json_text(text)?)
}

/// Validate a disk file already parsed into a JSON value (the page passes its JS object this way).
/// At most [`crate::MAX_LISTED_PROBLEMS`] problems are listed, then a count of the rest.
pub fn from_value(value: &Value) -> Result<DiskFile, Problems> {
    let mut r = Reader {
        problems: Vec::new(),
        warnings: Vec::new(),
    };
    let mut file = r.file(value);
    file.warnings = r.warnings;
    if r.problems.is_empty() {
        r.problems = crate::uncertainty::section_problems(value, &file);
    }
    if r.problems.is_empty() {
        file.uncertainty = value
            .get("uncertainty")
            .filter(|v| v.as_object().is_some_and(|m| !m.is_empty()))
            .cloned();
        Ok(file)
    } else {
        Err(Problems(crate::cap_problems(r.problems)))
    }
}

struct Reader {
    problems: Vec<Problem>,
    warnings: Vec<Problem>,
}

fn join(path: &str, key: &str) -> String {
    // An empty key is shown as `""`, so a problem's path is never empty (found by the fuzz smoke test).
    let key = if key.is_empty() { "\"\"" } else { key };
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// The closest known key (did-you-mean), as [`crate::fields`] finds it.
pub(crate) fn suggestion(key: &str, known: &[&str]) -> Option<String> {
    closest(key, known.iter().copied()).map(str::to_string)
}

/// The field of the table at `path`. Every path the reader asks for is in the
/// table (the reader's tests read every one); an unknown one would be a bug,
/// caught in debug builds, and falls back to "> 0" rather than panicking.
fn spec(path: &str) -> &'static Field {
    static FALLBACK: std::sync::OnceLock<Field> = std::sync::OnceLock::new();
    field_by_path(path).unwrap_or_else(|| {
        debug_assert!(false, "{path} is not in the field table");
        FALLBACK.get_or_init(|| fields()[0].clone())
    })
}

fn range_of(path: &str) -> Range {
    spec(path).range.unwrap_or(Range::Positive)
}

/// The keys of the object at `path`, from the table, in order; at the top
/// level also the sections read by their own modules ([`SECTIONS`]).
fn keys_of(path: &str) -> Cow<'static, [&'static str]> {
    let keys = child_keys(path);
    if path.is_empty() {
        Cow::Owned(keys.iter().copied().chain(SECTIONS).collect())
    } else {
        Cow::Borrowed(keys)
    }
}

/// Top-level sections that are not fields of the table but read by modules of
/// their own after the fields (`uncertainty`: [`crate::uncertainty`];
/// `evolution`: `crate::evolution`).
const SECTIONS: [&str; 2] = ["uncertainty", "evolution"];

/// The choices of the field at `path`, from the table.
fn options_of(path: &str) -> Vec<&'static str> {
    spec(path).options.iter().map(|(k, _)| k.as_str()).collect()
}

fn show(v: &Value) -> String {
    let s = v.to_string();
    if s.len() > 40 {
        format!(
            "{}...",
            &s[..s.char_indices().nth(37).map_or(s.len(), |(i, _)| i)]
        )
    } else {
        s
    }
}

impl Reader {
    /// A problem with no single offending value (kept for field checks across several fields).
    #[allow(dead_code)]
    fn problem(&mut self, path: impl Into<String>, message: impl Into<String>) {
        self.problems.push(Problem::new(path, message));
    }

    /// A problem recording the offending value and what is allowed as data.
    fn bad(
        &mut self,
        path: impl Into<String>,
        value: &Value,
        allowed: impl Into<String>,
        message: impl Into<String>,
    ) {
        self.problems.push(
            Problem::new(path, message)
                .with_value(value.to_string())
                .with_allowed(allowed),
        );
    }

    /// The object at `path` (absent = empty), reporting unknown keys.
    fn object<'v>(
        &mut self,
        value: Option<&'v Value>,
        path: &str,
    ) -> Option<&'v Map<String, Value>> {
        match value {
            None => None,
            Some(Value::Object(map)) => {
                let known = &keys_of(path);
                for key in map.keys() {
                    if !known.contains(&key.as_str()) {
                        let msg = match suggestion(key, known) {
                            Some(s) => format!("unknown field; did you mean {s}?"),
                            None => format!("unknown field; expected one of {}", known.join(", ")),
                        };
                        self.problems.push(
                            Problem::new(join(path, &shorten(key)), msg)
                                .with_value(shorten(key))
                                .with_allowed(known.join(", ")),
                        );
                    }
                }
                Some(map)
            }
            Some(other) => {
                self.bad(
                    if path.is_empty() { "(file)" } else { path },
                    other,
                    "an object",
                    format!("must be an object, got {}", show(other)),
                );
                None
            }
        }
    }

    fn real(
        &mut self,
        map: Option<&Map<String, Value>>,
        path: &str,
        key: &str,
        default: f64,
    ) -> f64 {
        let Some(v) = map.and_then(|m| m.get(key)) else {
            return default;
        };
        let p = join(path, key);
        let range = range_of(&p);
        match v.as_f64() {
            Some(x) if v.is_number() => {
                if range.contains(x) {
                    x
                } else {
                    self.bad(
                        p,
                        v,
                        range.describe(),
                        format!("must be {}, got {}", range.describe(), show(v)),
                    );
                    default
                }
            }
            _ => {
                self.bad(
                    p,
                    v,
                    format!("a number {}", range.describe()),
                    format!("must be a number {}, got {}", range.describe(), show(v)),
                );
                default
            }
        }
    }

    fn integer(
        &mut self,
        map: Option<&Map<String, Value>>,
        path: &str,
        key: &str,
        default: usize,
    ) -> usize {
        let Some(v) = map.and_then(|m| m.get(key)) else {
            return default;
        };
        let p = join(path, key);
        let (lo, hi) = match range_of(&p) {
            Range::Closed(a, b) => (a as usize, b as usize),
            _ => (0, usize::MAX),
        };
        let as_int = v.as_f64().filter(|x| x.fract() == 0.0 && x.is_finite());
        match as_int {
            Some(x) if x >= lo as f64 && x <= hi as f64 => x as usize,
            _ => {
                self.bad(
                    p,
                    v,
                    format!("a whole number in [{lo}, {hi}]"),
                    format!("must be a whole number in [{lo}, {hi}], got {}", show(v)),
                );
                default
            }
        }
    }

    fn boolean(
        &mut self,
        map: Option<&Map<String, Value>>,
        path: &str,
        key: &str,
        default: bool,
    ) -> bool {
        let Some(v) = map.and_then(|m| m.get(key)) else {
            return default;
        };
        match v {
            Value::Bool(b) => *b,
            other => {
                self.bad(
                    join(path, key),
                    other,
                    "true or false",
                    format!("must be true or false, got {}", show(other)),
                );
                default
            }
        }
    }

    fn text(&mut self, map: Option<&Map<String, Value>>, path: &str, key: &str) -> Option<String> {
        let v = map.and_then(|m| m.get(key))?;
        match v {
            Value::String(s) => Some(s.clone()),
            other => {
                self.bad(
                    join(path, key),
                    other,
                    "a string",
                    format!("must be a string, got {}", show(other)),
                );
                None
            }
        }
    }

    /// A string that must be one of `choices`; returns the index.
    fn choice(&mut self, map: Option<&Map<String, Value>>, path: &str, key: &str) -> Option<usize> {
        let v = map.and_then(|m| m.get(key))?;
        let p = join(path, key);
        let choices = &options_of(&p);
        match v {
            Value::String(s) => match choices.iter().position(|c| c == s) {
                Some(i) => Some(i),
                None => {
                    let hint = suggestion(s, choices)
                        .map(|c| format!("; did you mean {c}?"))
                        .unwrap_or_default();
                    self.bad(
                        p,
                        v,
                        format!("one of {}", choices.join(", ")),
                        format!(
                            "must be one of {}, got {}{hint}",
                            choices.join(", "),
                            show(v)
                        ),
                    );
                    None
                }
            },
            other => {
                self.bad(
                    p,
                    other,
                    format!("one of {}", choices.join(", ")),
                    format!("must be one of {}, got {}", choices.join(", "), show(other)),
                );
                None
            }
        }
    }

    /// A group of fractions; given = replaces the default whole, missing keys 0, sum renormalised.
    fn fractions<const N: usize>(
        &mut self,
        map: Option<&Map<String, Value>>,
        path: &str,
        key: &str,
        default: [f64; N],
    ) -> [f64; N] {
        let p = join(path, key);
        // The group's keys, in the table's order (the order of `default`).
        let keys = keys_of(&p);
        debug_assert_eq!(keys.len(), N, "{p}");
        let Some(group) = self.object(map.and_then(|m| m.get(key)), &p) else {
            return default;
        };
        let mut out = [0.0; N];
        for (slot, k) in out.iter_mut().zip(keys.iter()) {
            *slot = self.real(Some(group), &p, k, 0.0);
        }
        let sum: f64 = out.iter().sum();
        if (sum - 1.0).abs() > 1e-6 {
            let listed = keys
                .iter()
                .zip(out)
                .map(|(k, v)| format!("{k} {v}"))
                .collect::<Vec<_>>()
                .join(" + ");
            self.problems.push(
                Problem::new(
                    p,
                    format!("fractions must sum to 1 (within 1e-6), got {listed} = {sum}"),
                )
                .with_value(sum.to_string())
                .with_allowed("a sum of 1 (within 1e-6)"),
            );
            return default;
        }
        out.map(|v| v / sum)
    }

    fn file(&mut self, root: &Value) -> DiskFile {
        let mut f = DiskFile::defaults();
        let top = self.object(Some(root), "");
        if let Some(schema) = self.text(top, "", "schema") {
            if schema != SCHEMA {
                self.problems.push(
                    Problem::new(
                        "schema",
                        format!("must be \"{SCHEMA}\", got \"{}\"", shorten(&schema)),
                    )
                    .with_value(&schema)
                    .with_allowed(format!("\"{SCHEMA}\"")),
                );
            }
        }
        f.name = self.text(top, "", "name").unwrap_or_default();
        f.notes = self.text(top, "", "notes").unwrap_or_default();
        let p = &mut f.parameters;
        let d = ModelParameters::defaults();
        let errors_before_star = self.problems.len();

        // Star.
        let star = self.object(top.and_then(|m| m.get("star")), "star");
        p.star.mass_msun = self.real(star, "star", "mass_msun", d.star.mass_msun);
        p.star.luminosity_lsun = self.real(star, "star", "luminosity_lsun", d.star.luminosity_lsun);
        p.star.effective_temperature_k = self.real(
            star,
            "star",
            "effective_temperature_k",
            d.star.effective_temperature_k,
        );
        p.star.fuv_1au_habing = self.real(star, "star", "fuv_1au_habing", d.star.fuv_1au_habing);
        let ab = self.object(star.and_then(|m| m.get("abundances")), "star.abundances");
        if let Some(i) = self.choice(ab, "star.abundances", "reference") {
            p.star.abundance_reference = [
                AbundanceReference::Asplund2009,
                AbundanceReference::Asplund2021,
            ][i];
        }
        let offsets = self.object(
            ab.and_then(|m| m.get("offset_dex")),
            "star.abundances.offset_dex",
        );
        for (i, e) in Element::ALL.iter().enumerate() {
            p.star.offset_dex[i] =
                self.real(offsets, "star.abundances.offset_dex", e.symbol(), 0.0);
        }
        let star_ok = self.problems.len() == errors_before_star;

        // Disk.
        let disk = self.object(top.and_then(|m| m.get("disk")), "disk");
        let dd = &d.disk;
        let q = &mut p.disk;
        let before_mass = self.problems.len();
        let mass_between = disk.is_some_and(|m| m.contains_key("gas_mass_msun"));
        let mass_total = disk.is_some_and(|m| m.contains_key("gas_mass_profile_total_msun"));
        if mass_between && mass_total {
            self.problem(
                "disk.gas_mass_profile_total_msun",
                "give either disk.gas_mass_msun (the mass between the edges) or disk.gas_mass_profile_total_msun (the total of the profile), not both",
            );
        }
        if mass_total {
            q.gas_mass_msun = self.real(
                disk,
                "disk",
                "gas_mass_profile_total_msun",
                dd.gas_mass_msun, // and <= the star's mass (checked below)
            );
            q.gas_mass_meaning = GasMassMeaning::ProfileTotal;
        } else {
            q.gas_mass_msun = self.real(
                disk,
                "disk",
                "gas_mass_msun",
                dd.gas_mass_msun, // and <= the star's mass (checked below)
            );
            q.gas_mass_meaning = GasMassMeaning::BetweenEdges;
        }
        q.characteristic_radius_au = self.real(
            disk,
            "disk",
            "characteristic_radius_au",
            dd.characteristic_radius_au,
        );
        q.surface_density_index = self.real(
            disk,
            "disk",
            "surface_density_index",
            dd.surface_density_index,
        );
        if star_ok && q.gas_mass_msun > p.star.mass_msun {
            // A disk heavier than its star is gravitationally unstable long before (Toomre Q << 1) and is no longer
            // a disk around that star; the model's Keplerian, non-self-gravitating structure does not apply.
            self.problems.push(
                Problem::new(
                    "disk.gas_mass_msun",
                    format!(
                        "must be <= star.mass_msun ({}), got {}",
                        p.star.mass_msun, q.gas_mass_msun
                    ),
                )
                .with_value(q.gas_mass_msun.to_string())
                .with_allowed(format!("<= star.mass_msun ({})", p.star.mass_msun)),
            );
        }
        let before_radii = self.problems.len();
        q.inner_radius_au = self.real(disk, "disk", "inner_radius_au", dd.inner_radius_au);
        q.outer_radius_au = self.real(disk, "disk", "outer_radius_au", dd.outer_radius_au);
        if self.problems.len() == before_radii && q.inner_radius_au >= q.outer_radius_au {
            self.problems.push(
                Problem::new(
                    "disk.inner_radius_au",
                    format!(
                        "must be < disk.outer_radius_au ({}), got {}",
                        q.outer_radius_au, q.inner_radius_au
                    ),
                )
                .with_value(q.inner_radius_au.to_string())
                .with_allowed(format!("< disk.outer_radius_au ({})", q.outer_radius_au)),
            );
        }
        if self.problems.len() == before_radii && star_ok {
            let r_star = stellar_radius_au(p.star.luminosity_lsun, p.star.effective_temperature_k);
            if q.inner_radius_au <= r_star {
                self.problems.push(
                    Problem::new(
                        "disk.inner_radius_au",
                        format!("must exceed the stellar radius {r_star:.4} au (from luminosity and effective temperature), got {}", q.inner_radius_au),
                    )
                    .with_value(q.inner_radius_au.to_string())
                    .with_allowed(format!("> {r_star:.4} au (the stellar radius)")),
                );
            }
        }
        if self.problems.len() == before_mass {
            let f = profile_fraction_between(
                q.inner_radius_au,
                q.outer_radius_au,
                q.characteristic_radius_au,
                q.surface_density_index,
            );
            let (rin, rout, rc) = (
                q.inner_radius_au,
                q.outer_radius_au,
                q.characteristic_radius_au,
            );
            if q.gas_mass_meaning == GasMassMeaning::BetweenEdges
                && !(f >= MIN_PROFILE_FRACTION_BETWEEN_EDGES)
            {
                self.problem(
                    "disk.gas_mass_msun",
                    format!("the edges {rin}-{rout} au hold only {f:.3e} of the surface-density profile (R_c = {rc} au), need at least 1e-9; move the edges or R_c"),
                );
            } else if f < 0.5 {
                self.warnings.push(Problem::new(
                    "disk.inner_radius_au",
                    format!(
                        "the edges {rin}-{rout} au cut off {:.1} % of the surface-density profile (R_c = {rc} au); the disk is a small part of its profile",
                        100.0 * (1.0 - f)
                    ),
                ));
            }
            if mass_between && (MIN_PROFILE_FRACTION_BETWEEN_EDGES..0.99).contains(&f) {
                self.warnings.push(Problem::new(
                    "disk.gas_mass_msun",
                    format!(
                        "now the gas mass between the edges ({} Msun; the whole profile holds {:.4e} Msun); files written before this change meant the profile total, which is now disk.gas_mass_profile_total_msun",
                        q.gas_mass_msun,
                        q.gas_mass_msun / f
                    ),
                ));
            }
        }
        q.accretion_rate_msun_per_yr = self.real(
            disk,
            "disk",
            "accretion_rate_msun_per_yr",
            dd.accretion_rate_msun_per_yr,
        );
        q.flaring_angle = self.real(
            disk,
            "disk",
            "flaring_angle",
            default_flaring_angle(p.star.luminosity_lsun),
        );
        q.self_consistent_flaring = self.boolean(
            disk,
            "disk",
            "self_consistent_flaring",
            dd.self_consistent_flaring,
        );
        let opacity = self.object(disk.and_then(|m| m.get("opacity")), "disk.opacity");
        let kappa_default = match dd.opacity {
            Opacity::Constant {
                rosseland_cm2_per_g,
            } => rosseland_cm2_per_g,
            Opacity::BellLin1994 => 1.0,
        };
        let kappa = self.real(
            opacity,
            "disk.opacity",
            "rosseland_cm2_per_g",
            kappa_default,
        );
        q.opacity = match self.choice(opacity, "disk.opacity", "kind") {
            Some(1) => Opacity::BellLin1994,
            _ => Opacity::Constant {
                rosseland_cm2_per_g: kappa,
            },
        };
        let vt = self.object(
            disk.and_then(|m| m.get("vertical_temperature")),
            "disk.vertical_temperature",
        );
        let (s0, z0, d0) = match dd.vertical_temperature {
            VerticalTemperature::TwoLayer {
                superheating,
                transition_scale_heights,
                delta,
            } => (superheating, transition_scale_heights, delta),
            VerticalTemperature::Isothermal => (1.5, 4.0, 2.0),
        };
        let vp = "disk.vertical_temperature";
        let superheating = self.real(vt, vp, "superheating", s0);
        let transition = self.real(vt, vp, "transition_scale_heights", z0);
        let delta = self.real(vt, vp, "delta", d0);
        q.vertical_temperature = match self.choice(vt, vp, "kind") {
            Some(0) => VerticalTemperature::Isothermal,
            _ => VerticalTemperature::TwoLayer {
                superheating,
                transition_scale_heights: transition,
                delta,
            },
        };
        let tl = self.object(disk.and_then(|m| m.get("temperature")), "disk.temperature");
        let tp = "disk.temperature";
        let kind = self.choice(tl, tp, "kind");
        let power_keys = [
            "midplane_1au_k",
            "midplane_index",
            "atmosphere_1au_k",
            "atmosphere_index",
        ];
        if kind == Some(1) {
            for key in ["midplane_1au_k", "midplane_index"] {
                if !tl.is_some_and(|m| m.contains_key(key)) {
                    self.problem(
                        join(tp, key),
                        "required when disk.temperature.kind is power_law",
                    );
                }
            }
            let t1 = self.real(tl, tp, "midplane_1au_k", 100.0);
            let q1 = self.real(tl, tp, "midplane_index", 0.5);
            let has_atm = tl.is_some_and(|m| {
                m.contains_key("atmosphere_1au_k") || m.contains_key("atmosphere_index")
            });
            let atmosphere = if has_atm {
                let ta = self.real(tl, tp, "atmosphere_1au_k", t1);
                let qa = self.real(tl, tp, "atmosphere_index", q1);
                Some((ta, qa))
            } else {
                None
            };
            q.temperature = TemperatureLaw::PowerLaw {
                midplane_1au_k: t1,
                midplane_index: q1,
                atmosphere,
            };
            if q.self_consistent_flaring {
                self.warnings.push(Problem::new(
                    "disk.self_consistent_flaring",
                    "ignored: disk.temperature.kind power_law sets the midplane temperature (the fixed flaring angle still sets the starlight's path)",
                ));
            }
        } else {
            for key in power_keys {
                if tl.is_some_and(|m| m.contains_key(key)) {
                    self.problem(
                        join(tp, key),
                        "applies only when disk.temperature.kind is power_law",
                    );
                }
            }
            q.temperature = TemperatureLaw::EnergyBalance;
        }
        let ep = self.object(disk.and_then(|m| m.get("early_phase")), "disk.early_phase");
        let epp = "disk.early_phase";
        // Up to 1e-3 Msun/yr: above FU Orionis outbursts (about 1e-4, Hartmann & Kenyon 1996; from memory).
        let mdot_early = self.real(
            ep,
            epp,
            "accretion_rate_msun_per_yr",
            dd.early_phase.accretion_rate_msun_per_yr,
        );
        let early_defaults = EarlyPhase::defaults_for(
            if star_ok { &p.star } else { &d.star },
            q.accretion_rate_msun_per_yr,
            mdot_early,
        );
        q.early_phase = EarlyPhase {
            accretion_rate_msun_per_yr: mdot_early,
            luminosity_lsun: self.real(ep, epp, "luminosity_lsun", early_defaults.luminosity_lsun),
            surface_density_scale: self.real(
                ep,
                epp,
                "surface_density_scale",
                early_defaults.surface_density_scale,
            ),
        };
        q.background_temperature_k = self.real(
            disk,
            "disk",
            "background_temperature_k",
            dd.background_temperature_k,
        );
        q.dust_to_gas = self.real(disk, "disk", "dust_to_gas", dd.dust_to_gas);
        q.grain_radius_um = self.real(disk, "disk", "grain_radius_um", dd.grain_radius_um);
        q.grain_density_g_cm3 =
            self.real(disk, "disk", "grain_density_g_cm3", dd.grain_density_g_cm3);
        q.cosmic_ray_rate_s = self.real(disk, "disk", "cosmic_ray_rate_s", dd.cosmic_ray_rate_s);
        q.interstellar_fuv_habing = self.real(
            disk,
            "disk",
            "interstellar_fuv_habing",
            dd.interstellar_fuv_habing,
        );
        q.age_myr = self.real(disk, "disk", "age_myr", dd.age_myr);
        q.midplane_temperature_scale = self.real(
            disk,
            "disk",
            "midplane_temperature_scale",
            dd.midplane_temperature_scale,
        );

        // Ices.
        let ices = self.object(top.and_then(|m| m.get("ices")), "ices");
        if let Some(i) = self.choice(ices, "ices", "desorption") {
            p.ices.desorption = [
                DesorptionModel::ZerothOrder,
                DesorptionModel::FirstOrder,
                DesorptionModel::FixedTemperature,
            ][i];
        }
        p.ices.sticking = self.real(ices, "ices", "sticking", d.ices.sticking);
        p.ices.photodesorption =
            self.boolean(ices, "ices", "photodesorption", d.ices.photodesorption);
        p.ices.cosmic_ray_desorption = self.boolean(
            ices,
            "ices",
            "cosmic_ray_desorption",
            d.ices.cosmic_ray_desorption,
        );
        // "pure_ices" is the former name of "hhl92_frequency_legacy": files saved before stay readable.
        if ices
            .and_then(|m| m.get("binding_energies"))
            .and_then(Value::as_str)
            == Some("pure_ices")
        {
            p.ices.binding_energy_set = BindingEnergySet::Hhl92FrequencyLegacy;
        } else if let Some(i) = self.choice(ices, "ices", "binding_energies") {
            p.ices.binding_energy_set = BindingEnergySet::ALL[i];
        }
        if let Some(i) = self.choice(ices, "ices", "initial_state") {
            p.ices.initial_state = InitialIceState::ALL[i];
        }
        let overrides = self.object(
            ices.and_then(|m| m.get("species_overrides")),
            "ices.species_overrides",
        );
        for s in Species::ALL {
            let sp = join("ices.species_overrides", s.key());
            let Some(o) = self.object(overrides.and_then(|m| m.get(s.key())), &sp) else {
                continue;
            };
            let slot = &mut p.ices.overrides[s.index()];
            let opt = |r: &mut Reader, key: &str| {
                o.contains_key(key)
                    .then(|| r.real(Some(o), &sp, key, f64::NAN))
            };
            slot.binding_energy_k = opt(self, "binding_energy_k");
            slot.attempt_frequency_s = opt(self, "attempt_frequency_s");
            slot.photodesorption_yield = opt(self, "photodesorption_yield");
            slot.condensation_temperature_k = opt(self, "condensation_temperature_k");
            // A rejected value came back as NaN: drop it (the problem is already recorded).
            for v in [
                &mut slot.binding_energy_k,
                &mut slot.attempt_frequency_s,
                &mut slot.photodesorption_yield,
                &mut slot.condensation_temperature_k,
            ] {
                if v.is_some_and(f64::is_nan) {
                    *v = None;
                }
            }
        }

        // Composition.
        let comp = self.object(top.and_then(|m| m.get("composition")), "composition");
        let before_comp = self.problems.len();
        let dc = &d.composition;
        let c = self.fractions(
            comp,
            "composition",
            "carbon",
            [
                dc.carbon.co,
                dc.carbon.co2,
                dc.carbon.ch4,
                dc.carbon.ch3oh,
                dc.carbon.hcn,
                dc.carbon.refractory,
            ],
        );
        p.composition.carbon = CarbonFractions {
            co: c[0],
            co2: c[1],
            ch4: c[2],
            ch3oh: c[3],
            hcn: c[4],
            refractory: c[5],
        };
        let n = self.fractions(
            comp,
            "composition",
            "nitrogen",
            [dc.nitrogen.n2, dc.nitrogen.nh3],
        );
        p.composition.nitrogen = NitrogenFractions {
            n2: n[0],
            nh3: n[1],
        };
        let s = self.fractions(
            comp,
            "composition",
            "sulfur",
            [dc.sulfur.h2s, dc.sulfur.refractory],
        );
        p.composition.sulfur = SulfurFractions {
            h2s: s[0],
            refractory: s[1],
        };
        p.composition.oxygen_per_silicon = self.real(
            comp,
            "composition",
            "oxygen_per_silicon",
            dc.oxygen_per_silicon,
        );
        p.composition.soot_line_k = self.real(comp, "composition", "soot_line_k", dc.soot_line_k);
        if let Some(i) = self.choice(comp, "composition", "soot_line") {
            p.composition.soot_line = [SootLine::Irreversible, SootLine::Reversible][i];
        }
        p.composition.sulfide_release_k = self.real(
            comp,
            "composition",
            "sulfide_release_k",
            dc.sulfide_release_k,
        );
        p.composition.silicate_sublimation_k = self.real(
            comp,
            "composition",
            "silicate_sublimation_k",
            dc.silicate_sublimation_k,
        );
        if star_ok && self.problems.len() == before_comp {
            if let Err(e) = Carriers::new(
                stellar_abundances_per_h(&p.star),
                &p.composition,
                &SpeciesTable::built_in(),
            ) {
                // The carriers' check concerns the composition as a whole; its field, value and range are data of the error.
                self.problems.push(Problem {
                    path: "composition".into(),
                    ..Problem::from_physics(&e)
                });
            }
        }

        // Grid.
        let grid = self.object(top.and_then(|m| m.get("grid")), "grid");
        p.grid.radial_cells = self.integer(grid, "grid", "radial_cells", d.grid.radial_cells);
        p.grid.vertical_cells = self.integer(grid, "grid", "vertical_cells", d.grid.vertical_cells);
        p.grid.max_height_scale_heights = self.real(
            grid,
            "grid",
            "max_height_scale_heights",
            d.grid.max_height_scale_heights,
        );
        // The optional evolution section (its own reader, crate::evolution).
        let (evolution, problems) =
            crate::read_evolution(top.and_then(|m| m.get("evolution")), &f.parameters);
        self.problems.extend(problems);
        f.evolution = evolution;
        let p = &mut f.parameters;
        let samples = p.grid.radial_cells * (p.grid.vertical_cells + 1);
        let bytes = samples * crate::MODEL_BYTES_PER_SAMPLE;
        if bytes > crate::MAX_MODEL_BYTES {
            self.problems.push(
                Problem::new(
                    "grid.radial_cells",
                    format!(
                        "a grid of {} x {} cells ({samples} samples) needs about {} MiB for the model ({} bytes per sample), more than the {} MiB limit; lower grid.radial_cells or grid.vertical_cells",
                        p.grid.radial_cells,
                        p.grid.vertical_cells,
                        bytes >> 20,
                        crate::MODEL_BYTES_PER_SAMPLE,
                        crate::MAX_MODEL_BYTES >> 20
                    ),
                )
                .with_value(format!("{} x {}", p.grid.radial_cells, p.grid.vertical_cells))
                .with_allowed(format!("at most {} samples", crate::MAX_MODEL_BYTES / crate::MODEL_BYTES_PER_SAMPLE)),
            );
        }
        f
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn problems(text: &str) -> Vec<String> {
        parse_disk_json(text)
            .unwrap_err()
            .0
            .iter()
            .map(|p| p.to_string())
            .collect()
    }

    #[test]
    fn ice_history_and_frequency_fields() {
        let p = parse_disk_json(
            r#"{"ices": {"initial_state": "gas", "binding_energies": "on_water_ice", "species_overrides": {"CO": {"attempt_frequency_s": 1e15}}}}"#,
        )
        .unwrap()
        .parameters;
        assert_eq!(p.ices.initial_state, InitialIceState::Gas);
        assert_eq!(p.ices.binding_energy_set, BindingEnergySet::OnWaterIce);
        assert_eq!(
            p.ices.overrides[Species::CO.index()].attempt_frequency_s,
            Some(1e15)
        );
        // The former name of the legacy set stays readable.
        let legacy = parse_disk_json(r#"{"ices": {"binding_energies": "pure_ices"}}"#)
            .unwrap()
            .parameters;
        assert_eq!(
            legacy.ices.binding_energy_set,
            BindingEnergySet::Hhl92FrequencyLegacy
        );
        assert_eq!(
            ModelParameters::defaults().ices.initial_state,
            InitialIceState::Inherited
        );
        assert_eq!(
            problems(
                r#"{"ices": {"initial_state": "frozen", "species_overrides": {"H2O": {"attempt_frequency_s": 10}}}}"#
            ),
            vec![
                "ices.initial_state: must be one of inherited, gas, equilibrium, got \"frozen\""
                    .to_string(),
                problems(
                    r#"{"ices": {"species_overrides": {"H2O": {"attempt_frequency_s": 10}}}}"#
                )[0]
                .clone(),
            ]
        );
        assert!(problems(
            r#"{"ices": {"species_overrides": {"H2O": {"attempt_frequency_s": 10}}}}"#
        )[0]
        .starts_with("ices.species_overrides.H2O.attempt_frequency_s:"));
    }

    #[test]
    fn empty_object_is_the_default_disk() {
        assert_eq!(
            parse_disk_json("{}").unwrap().parameters,
            ModelParameters::defaults()
        );
    }

    #[test]
    fn every_problem_is_reported_at_once() {
        let p = problems(
            r#"{"star": {"mass_msun": -1, "effective_temperature_k": 100},
            "disk": {"surface_density_index": 2, "inner_radius_au": 10, "outer_radius_au": 5, "gas_mass_msum": 1},
            "grid": {"radial_cells": 4, "vertical_cells": 10.5}}"#,
        );
        assert_eq!(
            p,
            vec![
                "star.mass_msun: must be in [0.01, 150], got -1",
                "star.effective_temperature_k: must be in [2000, 50000], got 100",
                "disk.gas_mass_msum: unknown field; did you mean gas_mass_msun?",
                "disk.surface_density_index: must be in [-2, 2), got 2",
                "disk.inner_radius_au: must be < disk.outer_radius_au (5), got 10",
                "grid.radial_cells: must be a whole number in [8, 4096], got 4",
                "grid.vertical_cells: must be a whole number in [8, 4096], got 10.5",
            ]
        );
    }

    #[test]
    fn did_you_mean_for_misspelt_field() {
        assert_eq!(
            problems(r#"{"disk": {"gass_mass_msun": 1}}"#),
            vec!["disk.gass_mass_msun: unknown field; did you mean gas_mass_msun?"]
        );
        assert_eq!(
            problems(r#"{"ices": {"species_overrides": {"C0": {}}}}"#)[0],
            "ices.species_overrides.C0: unknown field; did you mean CO?"
        );
    }

    #[test]
    fn strings_are_not_numbers_and_integers_are_reals() {
        assert_eq!(
            problems(r#"{"star": {"mass_msun": "1"}}"#),
            vec![r#"star.mass_msun: must be a number in [0.01, 150], got "1""#]
        );
        assert_eq!(
            parse_disk_json(r#"{"star": {"mass_msun": 2}}"#)
                .unwrap()
                .parameters
                .star
                .mass_msun,
            2.0
        );
    }

    #[test]
    fn fractions_renormalise_or_report_the_sum() {
        let f = parse_disk_json(
            r#"{"composition": {"sulfur": {"H2S": 0.2000001, "refractory": 0.8}}}"#,
        )
        .unwrap();
        assert!(
            (f.parameters.composition.sulfur.h2s + f.parameters.composition.sulfur.refractory
                - 1.0)
                .abs()
                < 1e-15
        );
        let p = problems(r#"{"composition": {"nitrogen": {"N2": 0.5}}}"#);
        assert_eq!(p, vec!["composition.nitrogen: fractions must sum to 1 (within 1e-6), got N2 0.5 + NH3 0 = 0.5"]);
    }

    #[test]
    fn carbon_rich_star_is_rejected_with_numbers() {
        let p = problems(r#"{"star": {"abundances": {"offset_dex": {"C": 0.5}}}}"#);
        assert_eq!(p.len(), 1);
        assert!(
            p[0].starts_with("composition: oxygen runs out before water (star C/O = 1.738)"),
            "{}",
            p[0]
        );
    }

    #[test]
    fn inner_radius_inside_star_is_rejected() {
        let p = problems(
            r#"{"star": {"luminosity_lsun": 100, "effective_temperature_k": 3000}, "disk": {"inner_radius_au": 0.01}}"#,
        );
        assert_eq!(p.len(), 1);
        assert!(
            p[0].starts_with("disk.inner_radius_au: must exceed the stellar radius"),
            "{}",
            p[0]
        );
    }

    #[test]
    fn syntax_errors_and_wrong_schema() {
        assert!(problems("{")
            .iter()
            .all(|p| p.starts_with("(file): not valid JSON")));
        assert_eq!(
            problems(r#"{"schema": "other/2"}"#),
            vec![r#"schema: must be "nivalis-disk/1", got "other/2""#]
        );
        assert_eq!(problems("[1]"), vec!["(file): must be an object, got [1]"]);
    }

    #[test]
    fn gas_mass_between_edges_and_the_old_meaning() {
        use nivalis_physics::params::GasMassMeaning;
        let f = parse_disk_json(r#"{"disk": {"gas_mass_msun": 0.03}}"#).unwrap();
        assert_eq!(
            f.parameters.disk.gas_mass_meaning,
            GasMassMeaning::BetweenEdges
        );
        let f = parse_disk_json(r#"{"disk": {"gas_mass_profile_total_msun": 0.03}}"#).unwrap();
        assert_eq!(
            f.parameters.disk.gas_mass_meaning,
            GasMassMeaning::ProfileTotal
        );
        assert_eq!(f.parameters.disk.gas_mass_msun, 0.03);
        let p =
            problems(r#"{"disk": {"gas_mass_msun": 0.03, "gas_mass_profile_total_msun": 0.03}}"#);
        assert_eq!(p.len(), 1);
        assert!(
            p[0].starts_with("disk.gas_mass_profile_total_msun: give either"),
            "{}",
            p[0]
        );
        assert_eq!(
            problems(r#"{"disk": {"gas_mass_profile_total": 1}}"#),
            vec!["disk.gas_mass_profile_total: unknown field; did you mean gas_mass_profile_total_msun?"]
        );
    }

    #[test]
    fn edges_that_cut_off_most_of_the_profile_warn() {
        // R_c = 4000 au, 0.1-500 au: the edges hold 11.7 % of the profile (issue 11 item 7).
        let f = parse_disk_json(
            r#"{"disk": {"characteristic_radius_au": 4000, "gas_mass_msun": 0.03}}"#,
        )
        .unwrap();
        let w: Vec<String> = f.warnings.iter().map(|p| p.to_string()).collect();
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(w[0].starts_with("disk.inner_radius_au: the edges 0.1-500 au cut off 88.3 % of the surface-density profile"), "{}", w[0]);
        assert!(
            w[1].starts_with("disk.gas_mass_msun: now the gas mass between the edges (0.03 Msun; the whole profile holds 2.5537e-1 Msun)"),
            "{}",
            w[1]
        );
        // The default disk's edges hold 99.8 % of its profile: no warning.
        assert!(parse_disk_json("{}").unwrap().warnings.is_empty());
        assert!(parse_disk_json(r#"{"disk": {"gas_mass_msun": 0.02}}"#)
            .unwrap()
            .warnings
            .is_empty());
        // The old meaning warns about the cut, not about the migration.
        let f = parse_disk_json(
            r#"{"disk": {"characteristic_radius_au": 4000, "gas_mass_profile_total_msun": 0.03}}"#,
        )
        .unwrap();
        assert_eq!(f.warnings.len(), 1);
        // Edges holding almost nothing of the profile are an error when the mass is between them.
        let p = problems(
            r#"{"disk": {"characteristic_radius_au": 1, "inner_radius_au": 100, "outer_radius_au": 200}}"#,
        );
        assert!(
            p[0].starts_with("disk.gas_mass_msun: the edges 100-200 au hold only"),
            "{p:?}"
        );
    }

    #[test]
    fn soot_line_choice_and_early_phase() {
        use nivalis_physics::params::SootLine;
        assert_eq!(
            parse_disk_json("{}")
                .unwrap()
                .parameters
                .composition
                .soot_line,
            SootLine::Irreversible
        );
        let f = parse_disk_json(r#"{"composition": {"soot_line": "reversible"}}"#).unwrap();
        assert_eq!(f.parameters.composition.soot_line, SootLine::Reversible);
        assert_eq!(
            problems(r#"{"composition": {"soot_line": "irreversable"}}"#),
            vec![
                r#"composition.soot_line: must be one of irreversible, reversible, got "irreversable"; did you mean irreversible?"#
            ]
        );
        // Early phase defaults: L* + 0.8 G M* Mdot / R* and Mdot_early / Mdot.
        let f = parse_disk_json(r#"{"disk": {"accretion_rate_msun_per_yr": 1e-7, "early_phase": {"accretion_rate_msun_per_yr": 2e-6}}}"#).unwrap();
        let e = &f.parameters.disk.early_phase;
        assert!((e.surface_density_scale - 20.0).abs() < 1e-9, "{e:?}");
        let d = ModelParameters::defaults().disk.early_phase;
        assert!(
            ((e.luminosity_lsun - 1.0) / (d.luminosity_lsun - 1.0) - 2.0).abs() < 1e-9,
            "{e:?} {d:?}"
        );
        let f = parse_disk_json(r#"{"disk": {"accretion_rate_msun_per_yr": 0}}"#).unwrap();
        assert_eq!(f.parameters.disk.early_phase.surface_density_scale, 1.0);
        assert_eq!(
            problems(r#"{"disk": {"early_phase": {"surface_density_scale": 0}}}"#),
            vec!["disk.early_phase.surface_density_scale: must be in [0.001, 10000], got 0"]
        );
        assert_eq!(
            problems(r#"{"disk": {"early_phase": {"accretion_rate_msun_per_yr": 0.01}}}"#),
            vec!["disk.early_phase.accretion_rate_msun_per_yr: must be in [0, 0.001], got 0.01"]
        );
        let w = parse_disk_json(r#"{"disk": {"self_consistent_flaring": true, "temperature": {"kind": "power_law", "midplane_1au_k": 150, "midplane_index": 0.5}}}"#)
            .unwrap()
            .warnings;
        assert!(
            w.len() == 1 && w[0].path == "disk.self_consistent_flaring",
            "{w:?}"
        );
    }

    #[test]
    fn observed_temperature_law() {
        use nivalis_physics::params::TemperatureLaw;
        let f = parse_disk_json(r#"{"disk": {"temperature": {"kind": "power_law", "midplane_1au_k": 120, "midplane_index": 0.55}}}"#).unwrap();
        assert_eq!(
            f.parameters.disk.temperature,
            TemperatureLaw::PowerLaw {
                midplane_1au_k: 120.0,
                midplane_index: 0.55,
                atmosphere: None
            }
        );
        let f = parse_disk_json(
            r#"{"disk": {"temperature": {"kind": "power_law", "midplane_1au_k": 120, "midplane_index": 0.55, "atmosphere_1au_k": 400}}}"#,
        )
        .unwrap();
        assert_eq!(
            f.parameters.disk.temperature,
            TemperatureLaw::PowerLaw {
                midplane_1au_k: 120.0,
                midplane_index: 0.55,
                atmosphere: Some((400.0, 0.55))
            }
        );
        assert_eq!(
            problems(r#"{"disk": {"temperature": {"kind": "power_law", "midplane_1au_k": 120}}}"#),
            vec![
                "disk.temperature.midplane_index: required when disk.temperature.kind is power_law"
            ]
        );
        assert_eq!(
            problems(r#"{"disk": {"temperature": {"midplane_1au_k": 120}}}"#),
            vec!["disk.temperature.midplane_1au_k: applies only when disk.temperature.kind is power_law"]
        );
        assert_eq!(
            problems(r#"{"disk": {"temperature": {"kind": "powerlaw"}}}"#)[0],
            r#"disk.temperature.kind: must be one of energy_balance, power_law, got "powerlaw"; did you mean power_law?"#
        );
    }

    #[test]
    fn problems_carry_path_value_and_allowed_as_data() {
        let p = parse_disk_json(r#"{"star": {"mass_msun": -1}, "grid": {"radial_cells": 4}, "ices": {"desorption": "third"}}"#).unwrap_err().0;
        assert_eq!(p[0].path, "star.mass_msun");
        assert_eq!(p[0].value.as_deref(), Some("-1"));
        assert_eq!(p[0].allowed.as_deref(), Some("in [0.01, 150]"));
        assert_eq!(
            p[0].to_string(),
            "star.mass_msun: must be in [0.01, 150], got -1"
        );
        assert_eq!(p[1].path, "ices.desorption");
        assert_eq!(p[1].value.as_deref(), Some("\"third\""));
        assert_eq!(
            p[1].allowed.as_deref(),
            Some("one of zeroth_order, first_order, fixed_temperature")
        );
        assert_eq!(p[2].path, "grid.radial_cells");
        assert_eq!(p[2].allowed.as_deref(), Some("a whole number in [8, 4096]"));
        // The carriers' check: the composition as a whole, with the error's own numbers.
        let c = parse_disk_json(r#"{"star": {"abundances": {"offset_dex": {"C": 0.5}}}}"#)
            .unwrap_err()
            .0;
        assert_eq!(c[0].path, "composition");
        assert!(
            c[0].message.starts_with("oxygen runs out before water"),
            "{}",
            c[0].message
        );
    }

    /// Issue 15 item 5: the reproductions of physically absurd values that
    /// `check` used to accept, each now refused with its allowed range.
    #[test]
    fn physically_absurd_values_are_refused() {
        for (text, expected) in [
            (r#"{"disk": {"accretion_rate_msun_per_yr": 1e300}}"#, "disk.accretion_rate_msun_per_yr: must be in [0, 0.001], got 1e+300"),
            (r#"{"disk": {"gas_mass_msun": 1e278}}"#, "disk.gas_mass_msun: must be in (0, 150], got 1e+278"),
            (r#"{"disk": {"gas_mass_msun": 1.5}}"#, "disk.gas_mass_msun: must be <= star.mass_msun (1), got 1.5"),
            (r#"{"disk": {"opacity": {"rosseland_cm2_per_g": 1e300}}}"#, "disk.opacity.rosseland_cm2_per_g: must be in [1e-5, 100000], got 1e+300"),
            (r#"{"disk": {"outer_radius_au": 1e93}}"#, "disk.outer_radius_au: must be in (0, 10000], got 1e+93"),
            (r#"{"disk": {"age_myr": 888888888888888888888881.0e-8}}"#, "disk.age_myr: must be in (0, 10000], got 8888888888888889.0"),
            (r#"{"disk": {"cosmic_ray_rate_s": 1.333e51}}"#, "disk.cosmic_ray_rate_s: must be in [0, 1e-12], got 1.333e+51"),
            (r#"{"star": {"mass_msun": 1e-300}}"#, "star.mass_msun: must be in [0.01, 150], got 1e-300"),
            (r#"{"ices": {"species_overrides": {"CO": {"binding_energy_k": 1e9}}}}"#, "ices.species_overrides.CO.binding_energy_k: must be in (0, 100000], got 1000000000.0"),
        ] {
            assert_eq!(problems(text), vec![expected.to_string()], "{text}");
        }
        // Just inside the bounds is accepted.
        assert!(parse_disk_json(r#"{"star": {"mass_msun": 2}, "disk": {"gas_mass_msun": 2, "accretion_rate_msun_per_yr": 1e-3}}"#).is_ok());
    }

    #[test]
    fn grids_beyond_the_memory_limit_are_refused_with_the_estimate() {
        let p = problems(r#"{"grid": {"radial_cells": 4096, "vertical_cells": 4096}}"#);
        assert_eq!(p.len(), 1);
        assert!(p[0].starts_with("grid.radial_cells: a grid of 4096 x 4096 cells (16781312 samples) needs about 3328 MiB"), "{}", p[0]);
        // 4096 x 1024 = 4.2 M samples x 208 B = 832 MiB: accepted.
        assert!(
            parse_disk_json(r#"{"grid": {"radial_cells": 4096, "vertical_cells": 1024}}"#).is_ok()
        );
    }

    #[test]
    fn an_empty_key_has_a_visible_path() {
        assert!(problems(r#"{"": 1}"#)[0]
            .starts_with(r#""": unknown field; expected one of schema, name"#));
        assert!(problems(r#"{"disk": {"": 1}}"#)[0].starts_with(r#"disk."": unknown field"#));
    }
}
