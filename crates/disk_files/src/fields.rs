//! The one table of the disk file's fields (issue 9 item 2).
//!
//! Every field of `nivalis-disk/1` is one [`Field`] here: its dotted path,
//! kind, unit, allowed range with the reason, default with its source, label,
//! and the page's slider. This table drives
//!
//! - the reader (`reader.rs`): every range, whole-number bound, choice list
//!   and list of known keys (for unknown-key did-you-mean) is looked up here;
//! - the writer (`writer.rs`): a test checks that it writes exactly the
//!   table's fields, in the table's order;
//! - the page: `Explorer.fieldTable()` hands [`fields_json`] to `web/app.js`,
//!   which builds its controls from it and keeps no copy of its own;
//! - the docs: a test checks that the field tables of `docs/disk-file.md`
//!   list exactly these paths with the same ranges, choices and defaults.
//!
//! Defaults are not typed twice: [`Field::default`] is read from the resolved
//! default disk (`ModelParameters::defaults()` written by the writer), and
//! the source of each is [`Field::source`].
//!
//! Tools that work on dotted paths (`--set PATH=VALUE`, uncertainty inputs,
//! sweeps) use [`field_by_path`], [`suggest_path`], [`parse_value_text`] and
//! [`set_at_path`]:
//!
//! ```
//! use nivalis_disk_files::{field_by_path, set_at_path, suggest_path, parse_disk_json};
//! let f = field_by_path("star.luminosity_lsun").unwrap();
//! assert_eq!(f.unit, "Lsun");
//! assert_eq!(suggest_path("star.luminosity_lsn"), Some("star.luminosity_lsun"));
//! let mut disk = serde_json::json!({});
//! set_at_path(&mut disk, "star.luminosity_lsun", serde_json::json!(2.0)).unwrap();
//! let file = nivalis_disk_files::from_value(&disk).unwrap();
//! assert_eq!(file.parameters.star.luminosity_lsun, 2.0);
//! ```

use crate::{shorten, DiskFile, Problem};
use nivalis_physics::error::num;
use nivalis_physics::params::{Element, InitialIceState};
use nivalis_physics::{BindingEnergySet, Species};
use serde_json::{json, Map, Value};
use std::collections::HashMap;
use std::sync::OnceLock;

/// An allowed range of a real number (or of a whole number).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Range {
    /// x > 0.
    Positive,
    /// x >= 0.
    NonNegative,
    /// a <= x <= b.
    Closed(f64, f64),
    /// a < x <= b.
    OpenClosed(f64, f64),
    /// a <= x < b.
    ClosedOpen(f64, f64),
}

impl Range {
    /// Whether `x` is finite and inside the range.
    pub fn contains(self, x: f64) -> bool {
        x.is_finite()
            && match self {
                Range::Positive => x > 0.0,
                Range::NonNegative => x >= 0.0,
                Range::Closed(a, b) => x >= a && x <= b,
                Range::OpenClosed(a, b) => x > a && x <= b,
                Range::ClosedOpen(a, b) => x >= a && x < b,
            }
    }

    /// The range in words, as the reader's messages give it: `in [0.01, 150]`, `> 0 and finite`.
    pub fn describe(self) -> String {
        match self {
            Range::Positive => "> 0 and finite".into(),
            Range::NonNegative => ">= 0 and finite".into(),
            Range::Closed(a, b) => format!("in [{}, {}]", num(a), num(b)),
            Range::OpenClosed(a, b) => format!("in ({}, {}]", num(a), num(b)),
            Range::ClosedOpen(a, b) => format!("in [{}, {})", num(a), num(b)),
        }
    }

    /// The lower and upper bounds (`None` when open-ended) and whether each is included.
    pub fn bounds(self) -> (Option<Bound>, Option<Bound>) {
        match self {
            Range::Positive => (Some((0.0, false)), None),
            Range::NonNegative => (Some((0.0, true)), None),
            Range::Closed(a, b) => (Some((a, true)), Some((b, true))),
            Range::OpenClosed(a, b) => (Some((a, false)), Some((b, true))),
            Range::ClosedOpen(a, b) => (Some((a, true)), Some((b, false))),
        }
    }
}

/// One end of a range: the value and whether it is included.
pub type Bound = (f64, bool);

/// What a field holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// A real number within [`Field::range`].
    Number,
    /// A whole number within [`Field::range`].
    Integer,
    /// One of [`Field::options`].
    Choice,
    /// `true` or `false`.
    Bool,
    /// A string (one line).
    Text,
    /// A string that may span lines (notes).
    LongText,
    /// An object whose fields are listed under it.
    Object,
    /// A group of fractions summing to 1 (its keys are listed under it); a
    /// group given in a file replaces the default group whole.
    Fractions,
}

impl Kind {
    /// The kind's name in [`fields_json`]: `number`, `integer`, `choice`, `bool`, `text`, `long_text`, `object`, `fractions`.
    pub fn key(self) -> &'static str {
        match self {
            Kind::Number => "number",
            Kind::Integer => "integer",
            Kind::Choice => "choice",
            Kind::Bool => "bool",
            Kind::Text => "text",
            Kind::LongText => "long_text",
            Kind::Object => "object",
            Kind::Fractions => "fractions",
        }
    }
}

/// The page's slider for a number: its sweep range, logarithmic or linear.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Slider {
    /// Left end.
    pub min: f64,
    /// Right end.
    pub max: f64,
    /// Whether the slider moves in log10 of the value.
    pub log: bool,
}

/// One field of the disk file.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    /// Full dotted path, e.g. `star.luminosity_lsun`, `ices.species_overrides.CO.binding_energy_k`.
    pub path: String,
    /// What the field holds.
    pub kind: Kind,
    /// Unit as the page shows it (`Msun`, `au`, `K`; empty when dimensionless).
    pub unit: &'static str,
    /// Allowed range (numbers and whole numbers).
    pub range: Option<Range>,
    /// Why the range is what it is (status letters: M from memory, C common practice, D derived).
    pub reason: &'static str,
    /// Checks across fields beyond the range, in words (e.g. `<= star.mass_msun`).
    pub constraint: &'static str,
    /// The choices: (key in the file, label for people).
    pub options: Vec<(String, String)>,
    /// The default as the writer writes it for `{}` (`None` when there is none
    /// or it depends on other fields, see [`Field::default_note`]).
    pub default: Option<Value>,
    /// How a default that depends on other fields is found (empty otherwise).
    pub default_note: &'static str,
    /// Where the default comes from.
    pub source: &'static str,
    /// Label for people (the page's control).
    pub label: String,
    /// The page's slider, if it has one.
    pub slider: Option<Slider>,
    /// The page's group that shows this field (`None`: not shown on the page).
    pub page: Option<&'static str>,
    /// Blank means "not given" (the built-in value is used): the species overrides.
    pub optional: bool,
}

impl Field {
    fn new(path: impl Into<String>, kind: Kind, label: impl Into<String>) -> Field {
        Field {
            path: path.into(),
            kind,
            unit: "",
            range: None,
            reason: "",
            constraint: "",
            options: Vec::new(),
            default: None,
            default_note: "",
            source: "",
            label: label.into(),
            slider: None,
            page: None,
            optional: false,
        }
    }
    fn number(
        path: impl Into<String>,
        unit: &'static str,
        range: Range,
        label: impl Into<String>,
    ) -> Field {
        Field {
            unit,
            range: Some(range),
            ..Field::new(path, Kind::Number, label)
        }
    }
    fn choice(path: &str, options: &[(&str, &str)], label: &str) -> Field {
        Field {
            options: options
                .iter()
                .map(|(k, l)| (k.to_string(), l.to_string()))
                .collect(),
            ..Field::new(path, Kind::Choice, label)
        }
    }
    fn why(mut self, reason: &'static str) -> Field {
        self.reason = reason;
        self
    }
    fn src(mut self, source: &'static str) -> Field {
        self.source = source;
        self
    }
    fn on(mut self, page: &'static str) -> Field {
        self.page = Some(page);
        self
    }
    fn slide(mut self, min: f64, max: f64, log: bool) -> Field {
        self.slider = Some(Slider { min, max, log });
        self
    }
    fn also(mut self, constraint: &'static str) -> Field {
        self.constraint = constraint;
        self
    }
    fn derived(mut self, note: &'static str) -> Field {
        self.default_note = note;
        self
    }

    /// The key of this field in its parent object (the last path segment).
    pub fn key(&self) -> &str {
        self.path.rsplit('.').next().unwrap_or(&self.path)
    }

    /// The path of the parent object (`""` at the top level).
    pub fn parent(&self) -> &str {
        self.path.rfind('.').map_or("", |i| &self.path[..i])
    }

    /// What is allowed, in words (the `allowed` of a problem about this field).
    pub fn allowed(&self) -> String {
        match self.kind {
            Kind::Number => self.range.map_or("a number".into(), Range::describe),
            Kind::Integer => match self.range {
                Some(Range::Closed(a, b)) => format!("a whole number in [{a}, {b}]"),
                _ => "a whole number".into(),
            },
            Kind::Choice => format!(
                "one of {}",
                self.options
                    .iter()
                    .map(|(k, _)| k.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            Kind::Bool => "true or false".into(),
            Kind::Text | Kind::LongText => "a string".into(),
            Kind::Object => "an object".into(),
            Kind::Fractions => "fractions in [0, 1] summing to 1".into(),
        }
    }

    /// The field as a JSON object (what [`fields_json`] lists).
    pub fn to_json(&self) -> Value {
        let mut m = Map::new();
        m.insert("path".into(), json!(self.path));
        m.insert("key".into(), json!(self.key()));
        m.insert("parent".into(), json!(self.parent()));
        m.insert("kind".into(), json!(self.kind.key()));
        m.insert("label".into(), json!(self.label));
        m.insert("unit".into(), json!(self.unit));
        m.insert("allowed".into(), json!(self.allowed()));
        if let Some(r) = self.range {
            let (lo, hi) = r.bounds();
            m.insert(
                "range".into(),
                json!({"min": lo.map(|b| b.0), "min_included": lo.map(|b| b.1),
                       "max": hi.map(|b| b.0), "max_included": hi.map(|b| b.1)}),
            );
        }
        m.insert("reason".into(), json!(self.reason));
        m.insert("constraint".into(), json!(self.constraint));
        if self.kind == Kind::Choice {
            m.insert(
                "options".into(),
                json!(self
                    .options
                    .iter()
                    .map(|(k, l)| json!([k, l]))
                    .collect::<Vec<_>>()),
            );
        }
        m.insert(
            "default".into(),
            self.default.clone().unwrap_or(Value::Null),
        );
        m.insert("default_note".into(), json!(self.default_note));
        m.insert("source".into(), json!(self.source));
        if let Some(s) = self.slider {
            m.insert(
                "slider".into(),
                json!({"min": s.min, "max": s.max, "log": s.log}),
            );
        }
        m.insert("page".into(), json!(self.page));
        m.insert("optional".into(), json!(self.optional));
        Value::Object(m)
    }
}

/// A chemical formula with subscript digits, e.g. `CO₂` for `CO2` (labels).
pub fn formula(key: &str) -> String {
    key.chars()
        .map(|c| match c.to_digit(10) {
            Some(d) => char::from_u32(0x2080 + d).unwrap_or(c),
            None => c,
        })
        .collect()
}

fn build() -> Vec<Field> {
    use Kind::*;
    use Range::*;
    let mut f = vec![
        Field::new("schema", Text, "Format identifier").src("must be \"nivalis-disk/1\""),
        Field::new("name", Text, "Name of this disk")
            .src("free-text name of the scenario")
            .on("scenario"),
        Field::new("notes", LongText, "Notes (where the values come from)")
            .src("free text, e.g. where each value comes from (a project addition)")
            .on("scenario"),
        // Star (docs/model.md section 1).
        Field::new("star", Object, "Star"),
        Field::number("star.mass_msun", "Msun", Closed(0.01, 150.0), "Stellar mass")
            .why("disks are seen around substellar hosts down to ~0.01 Msun; ~150 Msun is the observed upper stellar mass (M)")
            .src("a solar-mass T Tauri star")
            .slide(0.05, 10.0, true)
            .on("star"),
        Field::number("star.luminosity_lsun", "Lsun", Closed(1e-5, 1e7), "Stellar luminosity")
            .why("faintest brown-dwarf hosts (~1e-5 Lsun) to beyond the most luminous stars (~5e6 Lsun) (M)")
            .src("a solar-mass T Tauri star")
            .slide(0.01, 1000.0, true)
            .on("star"),
        Field::number("star.effective_temperature_k", "K", Closed(2000.0, 50000.0), "Effective temperature")
            .src("the T Tauri star of Chiang & Goldreich 1997")
            .on("star"),
        Field::number("star.fuv_1au_habing", "G₀ (Habing)", Closed(0.0, 1e15), "Stellar FUV field at 1 au")
            .why("a 1e6 Lsun O star gives ~4e14 G0 at 1 au: half of L in the FUV / (4 pi au^2) / 1.6e-3 erg cm-2 s-1 (D)")
            .src("order of T Tauri FUV luminosities, 1e31-1e32 erg/s (common practice)")
            .on("radiation"),
        Field::new("star.abundances", Object, "Stellar abundances"),
        Field::choice(
            "star.abundances.reference",
            &[("asplund2009", "Asplund et al. 2009"), ("asplund2021", "Asplund, Amarsi & Grevesse 2021")],
            "Solar abundance reference",
        )
        .src("Asplund et al. 2009 Table 1 photosphere")
        .on("star"),
        Field::new("star.abundances.offset_dex", Object, "Stellar abundances relative to that reference [dex]").on("star"),
    ];
    for e in Element::ALL {
        f.push(
            Field::number(
                format!("star.abundances.offset_dex.{}", e.symbol()),
                "dex",
                Closed(-2.0, 2.0),
                format!("[{}/H] offset", e.symbol()),
            )
            .src("the star's [X/H] relative to the chosen solar set")
            .on("star"),
        );
    }
    f.extend([
        // Disk (docs/model.md sections 3-6).
        Field::new("disk", Object, "Disk"),
        Field::number("disk.gas_mass_msun", "Msun", OpenClosed(0.0, 150.0), "Disk gas mass")
            .why("a disk heavier than its star is gravitationally unstable long before (Toomre Q << 1) and not a Keplerian disk around that star")
            .also("<= star.mass_msun; the mass between the edges, which must hold at least 1e-9 of the profile")
            .src("about the minimum-mass solar nebula (Hayashi 1981)")
            .slide(1e-5, 1.0, true)
            .on("disk"),
        Field::number("disk.gas_mass_profile_total_msun", "Msun", OpenClosed(0.0, 150.0), "Disk gas mass, whole profile")
            .why("as disk.gas_mass_msun")
            .also("<= star.mass_msun; give this or disk.gas_mass_msun, not both")
            .derived("not given: disk.gas_mass_msun is used")
            .src("the total of the profile from 0 to infinity (the meaning of gas_mass_msun before issue 11)"),
        Field::number("disk.characteristic_radius_au", "au", Closed(0.01, 1e4), "Characteristic radius R_c")
            .why("observed R_c are 1-300 au (M); 1e4 au (0.05 pc) is the size of a cloud core, not a disk")
            .src("inside the 14-200 au of Andrews et al. 2009, 2010")
            .slide(1.0, 1000.0, true)
            .on("disk"),
        Field::number("disk.surface_density_index", "", ClosedOpen(-2.0, 2.0), "Surface density index γ")
            .src("Hartmann et al. 1998 (Andrews et al. 2009 median about 0.9)")
            .on("disk"),
        Field::number("disk.inner_radius_au", "au", OpenClosed(0.0, 1e3), "Inner edge")
            .why("transition-disk holes reach ~100 au (M)")
            .also("> the stellar radius (from L and T_eff), < disk.outer_radius_au")
            .src("project choice")
            .on("disk"),
        Field::number("disk.outer_radius_au", "au", OpenClosed(0.0, 1e4), "Outer edge")
            .why("the largest disks are ~1000 au (M); 1e4 au is a cloud core")
            .also("> disk.inner_radius_au")
            .src("project choice")
            .on("disk"),
        Field::number("disk.accretion_rate_msun_per_yr", "Msun/yr", Closed(0.0, 1e-3), "Accretion rate Ṁ")
            .why("FU Orionis outbursts peak near 1e-4 Msun/yr (Hartmann & Kenyon 1996, M); at 1e-3 a solar-mass star doubles within 1000 yr; 0 is a passive disk")
            .src("typical T Tauri value (Hartmann et al. 1998)")
            .slide(1e-11, 1e-5, true)
            .on("disk"),
        Field::number("disk.flaring_angle", "rad", OpenClosed(0.0, 1.0), "Flaring (grazing) angle φ")
            .derived("0.02 (L*/Lsun)^(-1/3) clamped to [1e-3, 0.1], from star.luminosity_lsun")
            .src("choice \"Default grazing angle by star type\" (params::default_flaring_angle)")
            .slide(0.005, 1.0, true)
            .on("disk"),
        Field::new("disk.self_consistent_flaring", Bool, "Solve the grazing angle self-consistently (ignores φ)")
            .src("off: the fixed angle")
            .on("disk"),
        Field::new("disk.opacity", Object, "Opacity for accretion heating"),
        Field::choice(
            "disk.opacity.kind",
            &[("constant", "constant Rosseland mean"), ("bell_lin_1994", "Bell & Lin 1994 power laws")],
            "Opacity for accretion heating",
        )
        .src("project choice")
        .on("disk"),
        Field::number("disk.opacity.rosseland_cm2_per_g", "cm²/g of gas", Closed(1e-5, 1e5), "Rosseland mean opacity (constant kind)")
            .why("dust-free gas ~1e-4-1e-3 to the largest dust opacities ~1e4 cm2/g (M); kappa = 1e300 gave T ~ 1e76 K")
            .src("Bell & Lin 1994's ice-grain law gives 2 cm2/g at 100 K")
            .on("disk"),
        Field::new("disk.vertical_temperature", Object, "Vertical temperature"),
        Field::choice(
            "disk.vertical_temperature.kind",
            &[("isothermal", "isothermal columns"), ("two_layer", "two layers (warm surface)")],
            "Vertical temperature",
        )
        .src("Dartois et al. 2003 as used by Williams & Best 2014")
        .on("disk"),
        Field::number("disk.vertical_temperature.superheating", "", Closed(0.1, 10.0), "Surface superheating factor")
            .src("common practice")
            .on("disk"),
        Field::number("disk.vertical_temperature.transition_scale_heights", "H", OpenClosed(0.0, 20.0), "Height of the warm layer z_q")
            .src("Williams & Best 2014")
            .on("disk"),
        Field::number("disk.vertical_temperature.delta", "", OpenClosed(0.0, 10.0), "Steepness of the transition δ")
            .src("Dartois et al. 2003; Williams & Best 2014")
            .on("disk"),
        Field::new("disk.temperature", Object, "Temperature law"),
        Field::choice(
            "disk.temperature.kind",
            &[("energy_balance", "energy balance"), ("power_law", "observed power law")],
            "Temperature law",
        )
        .src("choice \"Observed temperature law\""),
        Field::number("disk.temperature.midplane_1au_k", "K", OpenClosed(0.0, 1e4), "Midplane temperature at 1 au")
            .also("required with power_law")
            .derived("required with power_law")
            .src("the law observers fit (e.g. Andrews & Williams 2005; Williams & Best 2014)"),
        Field::number("disk.temperature.midplane_index", "", Closed(-1.0, 3.0), "Midplane temperature index q")
            .also("required with power_law")
            .derived("required with power_law")
            .src("q of the midplane law"),
        Field::number("disk.temperature.atmosphere_1au_k", "K", OpenClosed(0.0, 1e4), "Atmosphere temperature at 1 au")
            .derived("disk.temperature.midplane_1au_k")
            .src("the two-layer profile's atmosphere law"),
        Field::number("disk.temperature.atmosphere_index", "", Closed(-1.0, 3.0), "Atmosphere temperature index")
            .derived("disk.temperature.midplane_index")
            .src("the two-layer profile's atmosphere law"),
        Field::new("disk.early_phase", Object, "Early phase"),
        Field::number("disk.early_phase.accretion_rate_msun_per_yr", "Msun/yr", Closed(0.0, 1e-3), "Early accretion rate")
            .why("above FU Orionis outbursts, about 1e-4 Msun/yr (Hartmann & Kenyon 1996; M)")
            .src("Class 0/I accretion rates (Hartmann et al. 1998; Dunham et al. 2014; M)"),
        Field::number("disk.early_phase.luminosity_lsun", "Lsun", Positive, "Early luminosity")
            .derived("L* + 0.8 G M* Mdot_early / R*, from the star and disk.early_phase.accretion_rate_msun_per_yr")
            .src("accretion luminosity with infall from 5 R* (Gullbring et al. 1998)"),
        Field::number("disk.early_phase.surface_density_scale", "", Closed(1e-3, 1e4), "Early surface-density scale")
            .derived("Mdot_early / Mdot clamped to [1e-3, 1e4], or 1 when Mdot = 0")
            .src("a steady viscous disk at the same viscosity, Mdot = 3 pi nu Sigma (Pringle 1981)"),
        Field::number("disk.background_temperature_k", "K", Closed(0.0, 1e4), "Background temperature floor")
            .src("project choice")
            .on("disk"),
        Field::number("disk.dust_to_gas", "", OpenClosed(0.0, 1.0), "Dust-to-gas mass ratio")
            .src("interstellar value (e.g. Bohlin et al. 1978)")
            .on("radiation"),
        Field::number("disk.grain_radius_um", "µm", Closed(1e-3, 1e5), "Grain radius")
            .why("1 nm (the smallest grains) to 10 cm pebbles (C)")
            .src("typical interstellar grain")
            .slide(0.01, 1000.0, true)
            .on("radiation"),
        Field::number("disk.grain_density_g_cm3", "g/cm³", Closed(0.01, 10.0), "Grain material density")
            .why("fluffy aggregates (~0.01-0.1) to iron (7.87 g/cm3, CRC Handbook) (C)")
            .src("silicate")
            .on("radiation"),
        Field::number("disk.cosmic_ray_rate_s", "1/s per H₂", Closed(0.0, 1e-12), "Cosmic-ray ionisation rate at the surface")
            .why("Galactic 1e-17-1e-16 s-1, near strong sources ~1e-14 (M); 1e-12 bounds it")
            .src("the common network value (Spitzer & Tomasko 1968)")
            .slide(1e-20, 1e-14, true)
            .on("radiation"),
        Field::number("disk.interstellar_fuv_habing", "G₀ (Habing)", Closed(0.0, 1e8), "Interstellar FUV field")
            .why("the strongest cluster fields near O stars are ~1e5-1e7 G0 (M)")
            .src("the interstellar field")
            .on("radiation"),
        Field::number("disk.age_myr", "Myr", OpenClosed(0.0, 1e4), "Disk age (compared with equilibration times)")
            .why("positive; 10 Gyr is older than any gas disk (C)")
            .src("the time over which the ices follow the rate equation (choice \"The disk's age enters the ices\")")
            .on("disk"),
        Field::number("disk.midplane_temperature_scale", "", Closed(0.1, 10.0), "Midplane temperature multiplier")
            .src("1: no scaling; set by anchoring to an observed snowline")
            .on("disk"),
        // Ices (docs/model.md section 7).
        Field::new("ices", Object, "Ices"),
        Field::choice(
            "ices.desorption",
            &[
                ("zeroth_order", "zeroth order (multilayer ice)"),
                ("first_order", "first order"),
                ("fixed_temperature", "step model (fixed condensation temperatures)"),
            ],
            "Desorption",
        )
        .src("multilayer ice")
        .on("ices"),
        Field::number("ices.sticking", "", OpenClosed(0.0, 1.0), "Sticking coefficient")
            .src("standard below ~20 K; Bisschop et al. 2006 measure at least 0.87")
            .on("ices"),
        Field::new("ices.photodesorption", Bool, "Photodesorption")
            .src("on; off also removes the cosmic-ray induced photons")
            .on("ices"),
        Field::new("ices.cosmic_ray_desorption", Bool, "Cosmic-ray desorption")
            .src("Hasegawa & Herbst 1993 (choice \"Cosmic-ray desorption at most once\")")
            .on("ices"),
    ]);
    let sets: Vec<(String, String)> = BindingEnergySet::ALL
        .iter()
        .map(|s| (s.key().to_string(), s.key().replace('_', " ")))
        .collect();
    f.push(Field {
        options: sets,
        ..Field::new("ices.binding_energies", Kind::Choice, "Binding-energy set")
            .src("choice \"Binding energies come with the prefactor\" (crates/physics/data/binding_energies.csv)")
            .on("ices")
    });
    let states: Vec<(String, String)> = InitialIceState::ALL
        .iter()
        .map(|s| (s.key().to_string(), s.key().replace('_', " ")))
        .collect();
    f.push(Field {
        options: states,
        ..Field::new("ices.initial_state", Kind::Choice, "State of the ices at the disk's birth")
            .src("all frozen, inherited from the envelope (common practice; choice \"The disk's age enters the ices\")")
    });
    f.push(
        Field::new(
            "ices.species_overrides",
            Object,
            "Per-species data (blank = built-in value, shown greyed)",
        )
        .on("ices"),
    );
    for s in Species::ALL {
        let sp = formula(s.key());
        let base = format!("ices.species_overrides.{}", s.key());
        f.push(Field::new(base.clone(), Object, sp.clone()).on("ices"));
        let o = |f: Field| Field {
            optional: true,
            ..f
        };
        f.extend([
            o(Field::number(
                format!("{base}.binding_energy_k"),
                "K",
                OpenClosed(0.0, 1e5),
                format!("{sp} binding energy"),
            )
            .why("physisorption (~100 K) to refractory binding (~7e4 K) (M)")
            .derived("the binding-energy set's value")
            .src("crates/physics/data/binding_energies.csv")
            .on("ices")),
            o(Field::number(
                format!("{base}.attempt_frequency_s"),
                "1/s",
                Closed(1e6, 1e22),
                format!("{sp} attempt frequency"),
            )
            .derived("the binding-energy set's rule")
            .src("crates/physics/data/binding_energies.csv")),
            o(Field::number(
                format!("{base}.photodesorption_yield"),
                "per photon",
                Closed(0.0, 1.0),
                format!("{sp} photodesorption yield"),
            )
            .derived("the built-in value")
            .src("crates/physics/data/species.csv")
            .on("ices")),
            o(Field::number(
                format!("{base}.condensation_temperature_k"),
                "K",
                OpenClosed(0.0, 5000.0),
                format!("{sp} condensation temperature (step model)"),
            )
            .why("every solid sublimates below ~2000 K (C)")
            .derived("the built-in value")
            .src("crates/physics/data/species.csv")
            .on("ices")),
        ]);
    }
    // Composition (docs/model.md section 8).
    f.push(Field::new("composition", Object, "Composition"));
    type Group<'a> = (&'a str, &'a str, &'a str, &'a [(&'a str, &'a str)], &'a str);
    let groups: [Group; 3] = [
        ("carbon", "Carbon carriers (fractions of all carbon, sum 1)", "Carbon in",
         &[("CO", "CO"), ("CO2", "CO₂"), ("CH4", "CH₄"), ("CH3OH", "CH₃OH"), ("HCN", "HCN"), ("refractory", "refractory")],
         "refractory half: Bergin et al. 2015, Li et al. 2021; volatile split guided by Öberg et al. 2011 ice medians plus gas-phase CO (common practice)"),
        ("nitrogen", "Nitrogen carriers (fractions of the nitrogen left after HCN, sum 1)", "Nitrogen in",
         &[("N2", "N₂"), ("NH3", "NH₃")], "common practice"),
        ("sulfur", "Sulfur carriers (fractions of all sulfur, sum 1)", "Sulfur in",
         &[("H2S", "H₂S"), ("refractory", "refractory sulfide")], "most sulfur in FeS (common practice)"),
    ];
    for (key, title, lead, keys, source) in groups {
        f.push(
            Field::new(format!("composition.{key}"), Kind::Fractions, title)
                .src(source)
                .on("composition"),
        );
        for (k, l) in keys {
            f.push(
                Field::number(
                    format!("composition.{key}.{k}"),
                    "",
                    Closed(0.0, 1.0),
                    format!("{lead} {l}"),
                )
                .also("the group sums to 1 (within 1e-6); a key left out of a given group is 0")
                .src(source)
                .on("composition"),
            );
        }
    }
    f.extend([
        Field::number(
            "composition.oxygen_per_silicon",
            "",
            Closed(0.0, 10.0),
            "Oxygen atoms per silicon in silicates",
        )
        .src("MgSiO3-like, about 20 % of O (interstellar depletion studies)")
        .on("composition"),
        Field::number(
            "composition.soot_line_k",
            "K",
            OpenClosed(0.0, 5000.0),
            "Soot line (refractory carbon released)",
        )
        .why("every solid sublimates below ~2000 K at disk pressures (C)")
        .src("Li et al. 2021")
        .on("composition"),
        Field::choice(
            "composition.soot_line",
            &[
                ("irreversible", "irreversible"),
                ("reversible", "reversible"),
            ],
            "Soot line",
        )
        .src("choice \"Irreversible soot line\" (Li et al. 2021)"),
        Field::number(
            "composition.sulfide_release_k",
            "K",
            OpenClosed(0.0, 5000.0),
            "Sulfide release temperature",
        )
        .why("as the soot line")
        .src("FeS condensation about 704 K, Lodders 2003 (from memory)")
        .on("composition"),
        Field::number(
            "composition.silicate_sublimation_k",
            "K",
            OpenClosed(0.0, 5000.0),
            "Silicate sublimation temperature",
        )
        .why("as the soot line")
        .src("common practice")
        .on("composition"),
        // Grid (docs/model.md section 2).
        Field::new("grid", Object, "Grid"),
        Field {
            range: Some(Closed(8.0, 4096.0)),
            ..Field::new(
                "grid.radial_cells",
                Kind::Integer,
                "Radial cells (log-spaced)",
            )
            .also("radial_cells x (vertical_cells + 1) within the grid memory limit")
            .src("project choice")
            .on("grid")
        },
        Field {
            range: Some(Closed(8.0, 4096.0)),
            ..Field::new(
                "grid.vertical_cells",
                Kind::Integer,
                "Vertical cells per column",
            )
            .also("radial_cells x (vertical_cells + 1) within the grid memory limit")
            .src("project choice")
            .on("grid")
        },
        Field::number(
            "grid.max_height_scale_heights",
            "H",
            Closed(1.0, 20.0),
            "Top of each column",
        )
        .src("at least ~8 keeps the gas that shields the snow surfaces")
        .on("grid"),
    ]);
    // Defaults: read from the resolved default disk, never typed here.
    let defaults = crate::to_value(&DiskFile::defaults());
    for field in &mut f {
        if matches!(field.kind, Kind::Object | Kind::Fractions) || !field.default_note.is_empty() {
            continue;
        }
        field.default = get_at_path(&defaults, &field.path).cloned();
    }
    f
}

/// FNV-1a (64-bit; Fowler, Noll and Vo, as published at
/// <http://www.isthe.com/chongo/tech/comp/fnv/>) for the table's lookups by
/// path: the reader looks a path up for every field a disk gives, on every
/// edit in the page, and std's default SipHash costs more than the lookup
/// needs (the keys are the table's own paths, not adversarial input: an
/// unknown path only misses).
#[derive(Clone, Copy)]
pub(crate) struct Fnv1a(u64);

impl Default for Fnv1a {
    fn default() -> Self {
        Fnv1a(0xcbf2_9ce4_8422_2325)
    }
}

impl std::hash::Hasher for Fnv1a {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0 ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01b3);
        }
    }
}

type FnvMap<K, V> = HashMap<K, V, std::hash::BuildHasherDefault<Fnv1a>>;

struct Table {
    fields: Vec<Field>,
    index: FnvMap<String, usize>,
}

fn table() -> &'static Table {
    static TABLE: OnceLock<Table> = OnceLock::new();
    TABLE.get_or_init(|| {
        let fields = build();
        let index = fields
            .iter()
            .enumerate()
            .map(|(i, f)| (f.path.clone(), i))
            .collect();
        Table { fields, index }
    })
}

/// Every field of the disk file, objects before their fields, in the order
/// the writer writes them.
pub fn fields() -> &'static [Field] {
    &table().fields
}

/// The field at a dotted path (`star.luminosity_lsun`,
/// `ices.species_overrides.CO.binding_energy_k`, `composition.carbon`), or
/// `None` for a path the format does not have (see [`suggest_path`]).
pub fn field_by_path(path: &str) -> Option<&'static Field> {
    let t = table();
    t.index.get(path).map(|&i| &t.fields[i])
}

/// The fields directly inside the object at `parent` (`""` for the top level), in order.
pub fn children(parent: &str) -> impl Iterator<Item = &'static Field> + '_ {
    fields().iter().filter(move |f| f.parent() == parent)
}

/// The keys of the fields directly inside the object at `parent`, in order:
/// `children(parent).map(Field::key)`, grouped once for all calls (the reader
/// asks for the known keys of every object a disk gives); empty for a path
/// that is not an object of the table.
pub fn child_keys(parent: &str) -> &'static [&'static str] {
    static KEYS: OnceLock<FnvMap<&'static str, Vec<&'static str>>> = OnceLock::new();
    let keys = KEYS.get_or_init(|| {
        let mut keys: FnvMap<&'static str, Vec<&'static str>> = FnvMap::default();
        for f in fields() {
            keys.entry(f.parent()).or_default().push(f.key());
        }
        keys
    });
    keys.get(parent).map_or(&[], Vec::as_slice)
}

/// Levenshtein distance, for did-you-mean suggestions.
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j] + usize::from(ca != *cb))
                .min(prev[j + 1] + 1)
                .min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// The closest of `known` to `key` (case-insensitive edit distance at most a
/// third of the candidate's length, at least 2), or `None`.
pub(crate) fn closest<'a>(key: &str, known: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    // A key far longer than any field name suggests nothing (and costs no quadratic edit distance).
    if key.len() > 2 * crate::MAX_SHOWN_CHARS {
        return None;
    }
    let lower = key.to_lowercase();
    known
        .into_iter()
        .map(|k| (edit_distance(&lower, &k.to_lowercase()), k))
        .filter(|(d, k)| *d <= (k.len() / 3).max(2))
        .min()
        .map(|(_, k)| k)
}

/// The known dotted path closest to an unknown one (did-you-mean), or `None`
/// when nothing is close: `disk.gass_mass_msun` gives `disk.gas_mass_msun`.
pub fn suggest_path(path: &str) -> Option<&'static str> {
    closest(path, fields().iter().map(|f| f.path.as_str()))
}

/// A problem for a path the format does not have, with a suggestion when one is close.
pub fn unknown_path(path: &str) -> Problem {
    let message = match suggest_path(path) {
        Some(s) => format!("unknown field; did you mean {s}?"),
        None => "unknown field of the disk file (docs/disk-file.md lists them)".to_string(),
    };
    Problem::new(shorten(path), message)
        .with_value(path)
        .with_allowed("a field path of docs/disk-file.md")
}

/// The value at a dotted path of a JSON disk value, if there is one.
pub fn get_at_path<'v>(disk: &'v Value, path: &str) -> Option<&'v Value> {
    path.split('.').try_fold(disk, |v, key| v.get(key))
}

/// Sets the value at a dotted path of a JSON disk value, creating the objects
/// on the way. The path must be a field of the table (else a problem with a
/// did-you-mean); the value is not range-checked here: read the result with
/// [`crate::from_value`], which checks every field as for a file.
pub fn set_at_path(disk: &mut Value, path: &str, value: Value) -> Result<(), Problem> {
    if field_by_path(path).is_none() {
        return Err(unknown_path(path));
    }
    // The walk itself is the one of `--set`, the sweep and the Python module.
    crate::set_path(disk, path, value)
}

/// Reads typed text (a command line's `PATH=VALUE`, a sweep's value) as the
/// JSON value of a field: a number for numbers and whole numbers, `true` or
/// `false`, a choice's key (checked, with did-you-mean), text as it is; an
/// object or fraction group as JSON text. Ranges are checked by the reader.
pub fn parse_value_text(field: &Field, text: &str) -> Result<Value, Problem> {
    let t = text.trim();
    let bad = |message: String| {
        Problem::new(field.path.clone(), message)
            .with_value(text)
            .with_allowed(field.allowed())
    };
    match field.kind {
        Kind::Number | Kind::Integer => {
            // Rust's float parser also reads "inf" and "NaN"; neither is a value of a disk file.
            let looks_numeric = !t.is_empty()
                && t.chars()
                    .all(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'));
            match t.parse::<f64>() {
                Ok(x) if looks_numeric && x.is_finite() => {
                    if field.kind == Kind::Integer && x.fract() == 0.0 && x.abs() < 9.0e15 {
                        Ok(json!(x as i64))
                    } else {
                        Ok(json!(x))
                    }
                }
                _ => Err(bad(format!(
                    "must be {}, got {:?}",
                    field.allowed(),
                    shorten(text)
                ))),
            }
        }
        Kind::Bool => match t {
            "true" => Ok(Value::Bool(true)),
            "false" => Ok(Value::Bool(false)),
            _ => Err(bad(format!(
                "must be true or false, got {:?}",
                shorten(text)
            ))),
        },
        Kind::Choice => {
            if field.options.iter().any(|(k, _)| k == t) {
                Ok(json!(t))
            } else {
                let hint = closest(t, field.options.iter().map(|(k, _)| k.as_str()))
                    .map(|c| format!("; did you mean {c}?"))
                    .unwrap_or_default();
                Err(bad(format!(
                    "must be {}, got {:?}{hint}",
                    field.allowed(),
                    shorten(text)
                )))
            }
        }
        Kind::Text | Kind::LongText => Ok(json!(text)),
        Kind::Object | Kind::Fractions => serde_json::from_str::<Value>(t)
            .ok()
            .filter(Value::is_object)
            .ok_or_else(|| bad(format!("must be a JSON object, got {:?}", shorten(text)))),
    }
}

/// Applies `PATH=VALUE` text to a JSON disk value: the path is looked up
/// ([`field_by_path`], with did-you-mean), the text read as the field's kind
/// ([`parse_value_text`]) and set ([`set_at_path`]).
pub fn apply_setting(disk: &mut Value, setting: &str) -> Result<(), Problem> {
    let Some((path, text)) = setting.split_once('=') else {
        return Err(Problem::new(
            "(setting)",
            format!("must be PATH=VALUE, got {:?}", shorten(setting)),
        )
        .with_value(setting)
        .with_allowed("PATH=VALUE"));
    };
    let path = path.trim();
    let field = field_by_path(path).ok_or_else(|| unknown_path(path))?;
    let value = parse_value_text(field, text)?;
    set_at_path(disk, path, value)
}

/// The whole table as a JSON array of [`Field::to_json`] objects: what the
/// page receives as `Explorer.fieldTable()`.
pub fn fields_json() -> Value {
    Value::Array(fields().iter().map(Field::to_json).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{parse_disk_json, to_value};

    #[test]
    fn child_keys_are_the_children_s_keys_for_every_object() {
        let mut parents: Vec<&str> = fields().iter().map(Field::parent).collect();
        parents.extend(["", "no.such.object"]);
        let mut objects_with_children = 0;
        for parent in parents {
            let expected: Vec<&str> = children(parent).map(Field::key).collect();
            assert_eq!(child_keys(parent), expected.as_slice(), "{parent:?}");
            objects_with_children += usize::from(!expected.is_empty());
        }
        assert!(child_keys("star").contains(&"luminosity_lsun"));
        assert!(objects_with_children > 10, "{objects_with_children}");
    }

    #[test]
    fn fnv1a_gives_the_published_test_vectors() {
        use std::hash::Hasher;
        // FNV-1a 64-bit of "" (the offset basis) and "a": the FNV page's test vectors (from memory).
        let hash = |bytes: &[u8]| {
            let mut h = Fnv1a::default();
            h.write(bytes);
            h.finish()
        };
        assert_eq!(hash(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(hash(b"a"), 0xaf63_dc4c_8601_ec8c);
        // Every path of the table is found through the index.
        for f in fields() {
            assert_eq!(field_by_path(&f.path).map(|g| &g.path), Some(&f.path));
        }
    }

    /// Every leaf path of a JSON value, in order.
    fn leaves(v: &Value, prefix: &str, out: &mut Vec<String>) {
        if let Value::Object(m) = v {
            for (k, x) in m {
                let p = if prefix.is_empty() {
                    k.clone()
                } else {
                    format!("{prefix}.{k}")
                };
                if x.is_object() && !x.as_object().is_some_and(|o| o.is_empty()) {
                    leaves(x, &p, out);
                } else if !x.is_object() {
                    out.push(p);
                }
            }
        }
    }

    #[test]
    fn every_path_is_unique_and_its_parent_is_an_object() {
        let mut seen = std::collections::HashSet::new();
        for f in fields() {
            assert!(seen.insert(f.path.clone()), "{} twice", f.path);
            if !f.parent().is_empty() {
                let p =
                    field_by_path(f.parent()).unwrap_or_else(|| panic!("no parent of {}", f.path));
                assert!(
                    matches!(p.kind, Kind::Object | Kind::Fractions),
                    "{}",
                    f.path
                );
            }
            match f.kind {
                Kind::Number | Kind::Integer => assert!(f.range.is_some(), "{}", f.path),
                Kind::Choice => assert!(!f.options.is_empty(), "{}", f.path),
                _ => {}
            }
            // A default lies in its own range.
            if let (Some(r), Some(d)) = (f.range, f.default.as_ref().and_then(Value::as_f64)) {
                assert!(
                    r.contains(d),
                    "{}: default {d} outside {}",
                    f.path,
                    r.describe()
                );
            }
        }
    }

    /// The writer writes exactly the table's fields, in the table's order
    /// (for the default disk and for one using the other forms).
    #[test]
    fn the_writer_writes_the_table_in_order() {
        let order: Vec<&str> = fields().iter().map(|f| f.path.as_str()).collect();
        for text in [
            "{}",
            r#"{"disk": {"gas_mass_profile_total_msun": 0.02, "temperature": {"kind": "power_law", "midplane_1au_k": 150,
               "midplane_index": 0.5, "atmosphere_1au_k": 500, "atmosphere_index": 0.4}},
               "ices": {"species_overrides": {"CO": {"binding_energy_k": 900, "attempt_frequency_s": 1e12,
               "photodesorption_yield": 0.01, "condensation_temperature_k": 25}}}}"#,
        ] {
            let mut written = Vec::new();
            leaves(&to_value(&parse_disk_json(text).unwrap()), "", &mut written);
            let mut last = 0;
            for p in &written {
                let i = order
                    .iter()
                    .position(|o| o == p)
                    .unwrap_or_else(|| panic!("the writer writes {p}, which the table lacks"));
                assert!(i >= last, "{p} is written out of the table's order");
                last = i;
            }
        }
        // Every leaf of the table is written for some disk (the default one, or the one above).
        for f in fields() {
            if matches!(f.kind, Kind::Object | Kind::Fractions) {
                continue;
            }
            assert!(
                f.default.is_some() || !f.default_note.is_empty(),
                "{} has neither a default nor a note",
                f.path
            );
        }
    }

    #[test]
    fn defaults_come_from_the_resolved_default_disk() {
        assert_eq!(
            field_by_path("star.mass_msun").unwrap().default,
            Some(json!(1.0))
        );
        assert_eq!(
            field_by_path("grid.radial_cells").unwrap().default,
            Some(json!(200))
        );
        assert_eq!(
            field_by_path("ices.binding_energies").unwrap().default,
            Some(json!("transition_state"))
        );
        assert_eq!(field_by_path("disk.flaring_angle").unwrap().default, None);
    }

    #[test]
    fn paths_are_found_suggested_and_set() {
        assert!(field_by_path("ices.species_overrides.CH3OH.binding_energy_k").is_some());
        assert!(field_by_path("star.nope").is_none());
        assert_eq!(
            suggest_path("disk.gass_mass_msun"),
            Some("disk.gas_mass_msun")
        );
        assert_eq!(suggest_path("Star.Mass_Msun"), Some("star.mass_msun"));
        assert_eq!(suggest_path("completely.different.thing"), None);
        assert_eq!(
            unknown_path("star.luminosity").to_string(),
            "star.luminosity: unknown field; did you mean star.luminosity_lsun?"
        );
        let mut disk = json!({"star": {"mass_msun": 2}});
        apply_setting(&mut disk, "star.luminosity_lsun=3.5").unwrap();
        apply_setting(
            &mut disk,
            "ices.species_overrides.CO.binding_energy_k = 900",
        )
        .unwrap();
        apply_setting(&mut disk, "disk.self_consistent_flaring=true").unwrap();
        apply_setting(&mut disk, "grid.radial_cells=64").unwrap();
        apply_setting(&mut disk, "ices.desorption=first_order").unwrap();
        let p = crate::from_value(&disk).unwrap().parameters;
        assert_eq!((p.star.mass_msun, p.star.luminosity_lsun), (2.0, 3.5));
        assert_eq!(
            p.ices.overrides[Species::CO.index()].binding_energy_k,
            Some(900.0)
        );
        assert!(p.disk.self_consistent_flaring);
        assert_eq!(p.grid.radial_cells, 64);
        assert_eq!(
            apply_setting(&mut disk, "ices.desorption=first_ordr").unwrap_err().to_string(),
            "ices.desorption: must be one of zeroth_order, first_order, fixed_temperature, got \"first_ordr\"; did you mean first_order?"
        );
        assert_eq!(
            apply_setting(&mut disk, "star.mass_msun=inf")
                .unwrap_err()
                .to_string(),
            "star.mass_msun: must be in [0.01, 150], got \"inf\""
        );
        assert!(apply_setting(&mut disk, "disk.age=3")
            .unwrap_err()
            .message
            .contains("did you mean disk.age_myr?"));
        assert!(apply_setting(&mut disk, "no equals sign").is_err());
        // Out of range is the reader's to say, with its own message.
        apply_setting(&mut disk, "star.mass_msun=1000").unwrap();
        assert_eq!(
            crate::from_value(&disk).unwrap_err().to_string(),
            "star.mass_msun: must be in [0.01, 150], got 1000.0"
        );
        // Setting inside a value that is not an object is a problem, not a panic.
        let mut odd = json!({"star": 3});
        assert!(set_at_path(&mut odd, "star.mass_msun", json!(1))
            .unwrap_err()
            .message
            .contains("star is 3, not an object"));
    }

    #[test]
    fn the_page_table_is_json_with_every_field() {
        let v = fields_json();
        let list = v.as_array().unwrap();
        assert_eq!(list.len(), fields().len());
        let lum = list
            .iter()
            .find(|f| f["path"] == "star.luminosity_lsun")
            .unwrap();
        assert_eq!(
            lum["slider"],
            json!({"min": 0.01, "max": 1000.0, "log": true})
        );
        assert_eq!(lum["allowed"], "in [1e-5, 10000000]");
        assert_eq!(lum["page"], "star");
        let sets = list
            .iter()
            .find(|f| f["path"] == "ices.binding_energies")
            .unwrap();
        assert_eq!(
            sets["options"].as_array().unwrap().len(),
            BindingEnergySet::ALL.len()
        );
    }

    /// docs/disk-file.md lists exactly the table's fields, with the same
    /// ranges, choices and (where the doc gives a number or a key) defaults.
    #[test]
    fn the_docs_list_the_table() {
        let doc = include_str!("../../../docs/disk-file.md");
        let section = doc
            .split("\n## Fields")
            .nth(1)
            .expect("a ## Fields section");
        let section = section.split("\n## ").next().unwrap_or(section);
        let mut prefix = String::new();
        let mut documented: Vec<String> = Vec::new();
        for line in section.lines() {
            if let Some(h) = line.strip_prefix("### ") {
                prefix = match h.split('`').nth(1) {
                    Some(p) => format!("{p}."),
                    None => String::new(),
                };
                continue;
            }
            if !line.starts_with("| `") {
                continue;
            }
            let cells: Vec<&str> = line.trim_matches('|').split('|').map(str::trim).collect();
            let name = cells[0].split('`').nth(1).unwrap();
            // Expand `X` (elements, species) and fraction groups with their keys.
            let mut paths = Vec::new();
            if name.contains(".X") {
                let xs: Vec<&str> = if name.starts_with("abundances") {
                    Element::ALL.iter().map(|e| e.symbol()).collect()
                } else {
                    Species::ALL.iter().map(|s| s.key()).collect()
                };
                for x in xs {
                    paths.push(format!("{prefix}{}", name.replace(".X", &format!(".{x}"))));
                }
            } else if cells[0].contains("(keys") {
                for k in cells[0]
                    .split("(keys")
                    .nth(1)
                    .unwrap()
                    .split('`')
                    .skip(1)
                    .step_by(2)
                {
                    paths.push(format!("{prefix}{name}.{k}"));
                }
            } else {
                paths.push(format!("{prefix}{name}"));
            }
            let allowed_cell = if prefix.is_empty() { "" } else { cells[2] };
            let default_cell = if prefix.is_empty() {
                cells[2]
            } else {
                cells[3]
            };
            for path in paths {
                let f = field_by_path(&path).unwrap_or_else(|| {
                    panic!("docs/disk-file.md lists {path}, which the field table lacks")
                });
                check_doc_row(f, allowed_cell, default_cell);
                documented.push(path);
            }
        }
        for f in fields() {
            if matches!(f.kind, Kind::Object | Kind::Fractions) {
                continue;
            }
            assert!(
                documented.contains(&f.path),
                "the field table has {}, which docs/disk-file.md does not list",
                f.path
            );
        }
    }

    fn doc_number(text: &str) -> Option<f64> {
        text.trim().replace('−', "-").replace('`', "").parse().ok()
    }

    fn check_doc_row(f: &Field, allowed: &str, default: &str) {
        match f.kind {
            Kind::Number | Kind::Integer => {
                let r = f.range.unwrap();
                let a = allowed.replace('−', "-");
                let a = a.strip_prefix("whole number in ").unwrap_or(&a);
                let a = a.strip_prefix("each ").unwrap_or(a);
                if let Some(rest) = a.strip_prefix("> 0") {
                    assert_eq!(r, Range::Positive, "{}: the doc says > 0{rest}", f.path);
                } else {
                    let open = a.chars().next().unwrap();
                    let close_at = a
                        .find([']', ')'])
                        .unwrap_or_else(|| panic!("{}: no range in {a:?}", f.path));
                    let inner: Vec<f64> = a[1..close_at]
                        .split(',')
                        .map(|x| {
                            doc_number(x)
                                .unwrap_or_else(|| panic!("{}: bound {x:?} in {a:?}", f.path))
                        })
                        .collect();
                    let close = a.as_bytes()[close_at] as char;
                    let doc = match (open, close) {
                        ('[', ']') => Range::Closed(inner[0], inner[1]),
                        ('(', ']') => Range::OpenClosed(inner[0], inner[1]),
                        ('[', ')') => Range::ClosedOpen(inner[0], inner[1]),
                        _ => panic!("{}: range {a:?}", f.path),
                    };
                    assert_eq!(doc, r, "{}: docs/disk-file.md says {a:?}", f.path);
                }
                if let (Some(d), Some(t)) = (
                    doc_number(default),
                    f.default.as_ref().and_then(Value::as_f64),
                ) {
                    assert_eq!(d, t, "{}: default in docs/disk-file.md", f.path);
                }
            }
            Kind::Choice => {
                let listed: Vec<&str> = allowed
                    .split(';')
                    .next()
                    .unwrap()
                    .split('`')
                    .skip(1)
                    .step_by(2)
                    .collect();
                let keys: Vec<&str> = f.options.iter().map(|(k, _)| k.as_str()).collect();
                assert_eq!(listed, keys, "{}: choices in docs/disk-file.md", f.path);
                let d = default.split('`').nth(1);
                assert_eq!(
                    d,
                    f.default.as_ref().and_then(Value::as_str),
                    "{}: default choice",
                    f.path
                );
            }
            Kind::Bool => {
                let d = default.trim() == "true";
                assert_eq!(
                    Some(&Value::Bool(d)),
                    f.default.as_ref(),
                    "{}: default",
                    f.path
                );
            }
            _ => {}
        }
    }
}
