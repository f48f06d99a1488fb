//! The volatile species and their laboratory data, read from the data files in
//! `data/` that are compiled into the core (`species.csv`, `binding_energies.csv`).
//!
//! The tables are parsed by [`SpeciesTable::built_in`]; a unit test guarantees
//! they parse, so the `expect`s there state a build-time invariant.

use crate::references::is_known_source;
use crate::units::ATOMIC_MASS_UNIT_G;

const SPECIES_CSV: &str = include_str!("../data/species.csv");
const BINDING_CSV: &str = include_str!("../data/binding_energies.csv");

/// Number of volatile species.
pub const SPECIES_COUNT: usize = 9;

/// A volatile species. The order is the order of every per-species array.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Species {
    /// Water.
    H2O,
    /// Carbon monoxide.
    CO,
    /// Carbon dioxide.
    CO2,
    /// Methane.
    CH4,
    /// Molecular nitrogen.
    N2,
    /// Ammonia.
    NH3,
    /// Methanol.
    CH3OH,
    /// Hydrogen sulfide.
    H2S,
    /// Hydrogen cyanide.
    HCN,
}

impl Species {
    /// All species, in array order.
    pub const ALL: [Species; SPECIES_COUNT] = [
        Species::H2O,
        Species::CO,
        Species::CO2,
        Species::CH4,
        Species::N2,
        Species::NH3,
        Species::CH3OH,
        Species::H2S,
        Species::HCN,
    ];

    /// The exact key used in files and column names, e.g. "CH3OH".
    pub fn key(self) -> &'static str {
        match self {
            Species::H2O => "H2O",
            Species::CO => "CO",
            Species::CO2 => "CO2",
            Species::CH4 => "CH4",
            Species::N2 => "N2",
            Species::NH3 => "NH3",
            Species::CH3OH => "CH3OH",
            Species::H2S => "H2S",
            Species::HCN => "HCN",
        }
    }

    /// Index into per-species arrays.
    pub fn index(self) -> usize {
        self as usize
    }

    /// Parse an exact key ("CO2"); `None` for anything else.
    pub fn from_key(key: &str) -> Option<Species> {
        Species::ALL.iter().copied().find(|s| s.key() == key)
    }
}

/// A named set of binding energies, each paired with the attempt frequency its source used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BindingEnergySet {
    /// Transition-state-theory frequencies (Ligterink & Minissale 2023 mass relation) with
    /// energies matched to laboratory sublimation pressures (default; see `data/binding_energies.csv`).
    TransitionState,
    /// Pure-ice energies with the Hasegawa, Herbst & Leung 1992 frequency (the original default, kept
    /// for comparison; sublimates water about 27 K too hot against the ice vapour pressure).
    Hhl92FrequencyLegacy,
    /// Desorption from a water-ice surface (network values, Garrod & Herbst 2006) with the HHL92 frequency:
    /// the first-monolayer regime.
    OnWaterIce,
}

impl BindingEnergySet {
    /// Every set.
    pub const ALL: [BindingEnergySet; 3] = [
        BindingEnergySet::TransitionState,
        BindingEnergySet::Hhl92FrequencyLegacy,
        BindingEnergySet::OnWaterIce,
    ];
    /// Key in files, e.g. "transition_state".
    pub fn key(self) -> &'static str {
        match self {
            BindingEnergySet::TransitionState => "transition_state",
            BindingEnergySet::Hhl92FrequencyLegacy => "hhl92_frequency_legacy",
            BindingEnergySet::OnWaterIce => "on_water_ice",
        }
    }
    /// Parse a key.
    pub fn from_key(key: &str) -> Option<Self> {
        Self::ALL.iter().copied().find(|s| s.key() == key)
    }
}

/// How a set gives the attempt frequency nu of thermal desorption.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FrequencyRule {
    /// nu = sqrt(2 N_s k E_b/(pi^2 m)) with the energy in use (Hasegawa, Herbst & Leung 1992).
    Hhl92,
    /// A fixed value [s^-1] (it stays with the species when its energy is overridden).
    Value(f64),
}

/// One entry of a binding-energy set: the energy, the frequency rule, and their sources.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DesorptionPair {
    /// E_b/k [K].
    pub binding_energy_k: f64,
    /// Source key of the energy.
    pub energy_source: &'static str,
    /// The attempt frequency.
    pub frequency: FrequencyRule,
    /// Source key of the frequency.
    pub frequency_source: &'static str,
}

/// Laboratory data of one species.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesData {
    /// Which species.
    pub species: Species,
    /// Chemical formula.
    pub formula: &'static str,
    /// Molecular mass [amu].
    pub mass_amu: f64,
    /// Atoms of C, O, N, S in one molecule.
    pub atoms_c_o_n_s: [u8; 4],
    /// Photodesorption yield [molecules per photon].
    pub photodesorption_yield: f64,
    /// Source key of the yield (see `references`).
    pub yield_source: &'static str,
    /// Condensation temperature of the step model [K].
    pub condensation_temperature_k: f64,
    /// Source key of the condensation temperature.
    pub condensation_source: &'static str,
    /// The desorption pair of each set, in `BindingEnergySet::ALL` order.
    pub desorption: [DesorptionPair; 3],
}

impl SpeciesData {
    /// Molecular mass [g].
    pub fn mass_g(&self) -> f64 {
        self.mass_amu * ATOMIC_MASS_UNIT_G
    }
    /// Binding energy [K] of a set, with its source key.
    pub fn binding_energy(&self, set: BindingEnergySet) -> (f64, &'static str) {
        let d = &self.desorption[set as usize];
        (d.binding_energy_k, d.energy_source)
    }
    /// The desorption pair (energy and frequency rule) of a set.
    pub fn pair(&self, set: BindingEnergySet) -> &DesorptionPair {
        &self.desorption[set as usize]
    }
}

/// The built-in species table.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesTable {
    /// One entry per species, in `Species::ALL` order.
    pub entries: Vec<SpeciesData>,
}

fn data_rows(text: &'static str) -> impl Iterator<Item = Vec<&'static str>> {
    text.lines()
        .map(str::trim)
        .filter(|l| !l.is_empty() && !l.starts_with('#'))
        .skip(1) // header
        .map(|l| l.split(',').map(str::trim).collect())
}

fn parse_table() -> Result<SpeciesTable, String> {
    let mut entries = Vec::new();
    for row in data_rows(SPECIES_CSV) {
        if row.len() != 11 {
            return Err(format!(
                "species.csv: row {row:?} has {} columns, expected 11",
                row.len()
            ));
        }
        let species = Species::from_key(row[0])
            .ok_or_else(|| format!("species.csv: unknown species {}", row[0]))?;
        let num = |s: &str| {
            s.parse::<f64>()
                .map_err(|e| format!("species.csv: {s}: {e}"))
        };
        let atoms = |s: &str| {
            s.parse::<u8>()
                .map_err(|e| format!("species.csv: {s}: {e}"))
        };
        entries.push(SpeciesData {
            species,
            formula: row[1],
            mass_amu: num(row[2])?,
            atoms_c_o_n_s: [
                atoms(row[3])?,
                atoms(row[4])?,
                atoms(row[5])?,
                atoms(row[6])?,
            ],
            photodesorption_yield: num(row[7])?,
            yield_source: row[8],
            condensation_temperature_k: num(row[9])?,
            condensation_source: row[10],
            desorption: [DesorptionPair {
                binding_energy_k: f64::NAN,
                energy_source: "",
                frequency: FrequencyRule::Hhl92,
                frequency_source: "",
            }; 3],
        });
    }
    if entries.iter().map(|e| e.species).collect::<Vec<_>>() != Species::ALL {
        return Err("species.csv: rows must list every species once, in Species::ALL order".into());
    }
    for row in data_rows(BINDING_CSV) {
        if row.len() != 6 {
            return Err(format!(
                "binding_energies.csv: row {row:?} has {} columns, expected 6",
                row.len()
            ));
        }
        let set = BindingEnergySet::from_key(row[0])
            .ok_or_else(|| format!("binding_energies.csv: unknown set {}", row[0]))?;
        let species = Species::from_key(row[1])
            .ok_or_else(|| format!("binding_energies.csv: unknown species {}", row[1]))?;
        let value = row[2]
            .parse::<f64>()
            .map_err(|e| format!("binding_energies.csv: {}: {e}", row[2]))?;
        let frequency = match row[4] {
            "hhl92" => FrequencyRule::Hhl92,
            text => {
                let nu = text
                    .parse::<f64>()
                    .map_err(|e| format!("binding_energies.csv: {text}: {e}"))?;
                if !(nu > 0.0 && nu.is_finite()) {
                    return Err(format!(
                        "binding_energies.csv: attempt frequency {text} is not positive"
                    ));
                }
                FrequencyRule::Value(nu)
            }
        };
        entries[species.index()].desorption[set as usize] = DesorptionPair {
            binding_energy_k: value,
            energy_source: row[3],
            frequency,
            frequency_source: row[5],
        };
    }
    for e in &entries {
        for d in e.desorption {
            if !(d.binding_energy_k > 0.0) {
                return Err(format!(
                    "binding_energies.csv: {} lacks a value in some set",
                    e.species.key()
                ));
            }
            for source in [d.energy_source, d.frequency_source] {
                if !is_known_source(source) {
                    return Err(format!("binding_energies.csv: unknown source {source}"));
                }
            }
        }
        for source in [e.yield_source, e.condensation_source] {
            if !is_known_source(source) {
                return Err(format!("species.csv: unknown source {source}"));
            }
        }
    }
    Ok(SpeciesTable { entries })
}

impl SpeciesTable {
    /// The table compiled into the core from `data/*.csv`.
    pub fn built_in() -> SpeciesTable {
        // Parsed once per process (every run and every disk check asks for it); a copy of
        // that. Invariant: the compiled-in data parse (checked by the unit test
        // `built_in_table_parses`).
        static TABLE: std::sync::OnceLock<SpeciesTable> = std::sync::OnceLock::new();
        TABLE
            .get_or_init(|| parse_table().expect("built-in species data parse"))
            .clone()
    }
    /// Data of one species.
    pub fn get(&self, species: Species) -> &SpeciesData {
        &self.entries[species.index()]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn built_in_table_parses() {
        let table = parse_table().unwrap();
        assert_eq!(table.entries.len(), SPECIES_COUNT);
    }

    #[test]
    fn binding_energy_ordering_holds_in_every_set() {
        // N2 < CO < CH4 < CO2 < NH3, CH3OH < H2O (docs/check-values.md section 4a, common practice; holds in every listed
        // set). Energies compare only at a common prefactor: the HHL92 sets. The transition-state set's
        // frequencies span 2.7e15-1.3e18 s^-1, so its order is checked on sublimation temperatures instead
        // (tests/published_ices.rs, `sublimation_order_in_every_set`).
        let t = SpeciesTable::built_in();
        for set in [
            BindingEnergySet::Hhl92FrequencyLegacy,
            BindingEnergySet::OnWaterIce,
        ] {
            let e = |s: Species| t.get(s).binding_energy(set).0;
            assert!(e(Species::N2) < e(Species::CO), "{set:?}");
            assert!(e(Species::CO) < e(Species::CH4), "{set:?}");
            assert!(e(Species::CH4) < e(Species::CO2), "{set:?}");
            assert!(
                e(Species::CO2) < e(Species::NH3).min(e(Species::CH3OH)),
                "{set:?}"
            );
            assert!(
                e(Species::NH3).max(e(Species::CH3OH)) < e(Species::H2O),
                "{set:?}"
            );
        }
    }
}
