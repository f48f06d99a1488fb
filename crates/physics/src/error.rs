//! The core's error type: physically impossible inputs and numerical failures
//! that a scientist must see, each with the numbers that explain it.

use std::fmt;

/// Everything the core can refuse or fail at.
#[derive(Debug, Clone, PartialEq)]
pub enum PhysicsError {
    /// The inner radius lies inside the star (R* = sqrt(L / (4 pi sigma T^4))).
    InnerRadiusInsideStar {
        /// Given inner radius [au].
        inner_radius_au: f64,
        /// Stellar radius [au].
        stellar_radius_au: f64,
    },
    /// Water would need negative oxygen: a carbon-rich star (docs/model.md section 8).
    OxygenExhausted {
        /// Stellar O/H.
        oxygen_per_h: f64,
        /// O/H held by silicates.
        silicate_oxygen_per_h: f64,
        /// O/H held by CO.
        co_oxygen_per_h: f64,
        /// O/H held by CO2.
        co2_oxygen_per_h: f64,
        /// O/H held by CH3OH.
        ch3oh_oxygen_per_h: f64,
        /// The star's C/O.
        star_c_to_o: f64,
    },
    /// HCN needs more nitrogen than the star has.
    NitrogenExhausted {
        /// Stellar N/H.
        nitrogen_per_h: f64,
        /// HCN/H asked for.
        hcn_per_h: f64,
    },
    /// The self-consistent flaring iteration did not converge.
    FlaringNotConverged {
        /// Iterations done.
        iterations: usize,
        /// Largest relative change of T_mid in the last iteration.
        max_relative_change: f64,
    },
    /// No midplane temperature below 1e6 K balances heating at this radius.
    NoTemperatureSolution {
        /// Radius [au].
        radius_au: f64,
    },
    /// A radius asked for lies outside the disk.
    RadiusOutsideDisk {
        /// Parameter name.
        name: &'static str,
        /// Given value [au].
        radius_au: f64,
        /// Inner edge [au].
        inner_au: f64,
        /// Outer edge [au].
        outer_au: f64,
    },
    /// A value outside its allowed range, in a computation request (not a disk file).
    OutOfRange {
        /// Parameter name.
        name: &'static str,
        /// Given value.
        value: f64,
        /// Allowed range, in words.
        allowed: &'static str,
    },
    /// A root solve found no value in the allowed range.
    NoSolutionInRange {
        /// What was solved for.
        what: String,
    },
    /// The upper end of a range is not above its lower end (planet migration range).
    NotIncreasing {
        /// Parameter name of the upper end.
        name: &'static str,
        /// Given upper end.
        value: f64,
        /// Parameter name of the lower end.
        lower_name: &'static str,
        /// Given lower end.
        lower: f64,
    },
    /// A positive solid-to-gas ratio where the disk holds no solids (everything sublimated).
    NoSolidsToAccrete {
        /// Parameter name.
        name: &'static str,
        /// Given ratio.
        value: f64,
        /// Inner end of the place [au].
        inner_au: f64,
        /// Outer end of the place [au] (equal to the inner end for one radius).
        outer_au: f64,
    },
    /// A choice that does not apply to this disk (e.g. anchoring an absent species).
    InvalidChoice {
        /// Parameter name.
        name: &'static str,
        /// What is allowed, in words.
        allowed: &'static str,
        /// What was given.
        got: String,
    },
}

impl fmt::Display for PhysicsError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            PhysicsError::InnerRadiusInsideStar { inner_radius_au, stellar_radius_au } => write!(
                f,
                "disk.inner_radius_au: must exceed the stellar radius {stellar_radius_au:.4} au (from luminosity and effective temperature), got {inner_radius_au}"
            ),
            PhysicsError::OxygenExhausted {
                oxygen_per_h,
                silicate_oxygen_per_h,
                co_oxygen_per_h,
                co2_oxygen_per_h,
                ch3oh_oxygen_per_h,
                star_c_to_o,
            } => write!(
                f,
                "composition: oxygen runs out before water (star C/O = {star_c_to_o:.3}): O/H = {oxygen_per_h:.4e} but silicates take {silicate_oxygen_per_h:.4e}, CO {co_oxygen_per_h:.4e}, CO2 {co2_oxygen_per_h:.4e}, CH3OH {ch3oh_oxygen_per_h:.4e}; lower the CO/CO2/CH3OH carbon fractions, oxygen_per_silicon or the carbon offset"
            ),
            PhysicsError::NitrogenExhausted { nitrogen_per_h, hcn_per_h } => write!(
                f,
                "composition.carbon.HCN: HCN/H = {hcn_per_h:.4e} needs more nitrogen than the star has (N/H = {nitrogen_per_h:.4e})"
            ),
            PhysicsError::FlaringNotConverged { iterations, max_relative_change } => write!(
                f,
                "disk.self_consistent_flaring: the grazing-angle iteration did not converge after {iterations} iterations (last relative change {max_relative_change:.2e}, need < 1e-6); use a fixed flaring angle"
            ),
            PhysicsError::NoTemperatureSolution { radius_au } => write!(
                f,
                "no midplane temperature below 1e6 K balances the heating at r = {radius_au:.4} au; lower the accretion rate or the opacity"
            ),
            PhysicsError::RadiusOutsideDisk { name, radius_au, inner_au, outer_au } => {
                write!(f, "{name}: must lie in the disk [{inner_au}, {outer_au}] au, got {radius_au}")
            }
            PhysicsError::OutOfRange { name, value, allowed } => write!(f, "{name}: must be {allowed}, got {value}"),
            PhysicsError::NoSolutionInRange { what } => write!(f, "{what}"),
            PhysicsError::NotIncreasing { name, value, lower_name, lower } => {
                write!(f, "{name}: must be greater than {lower_name} = {lower}, got {value}")
            }
            PhysicsError::NoSolidsToAccrete { name, value, inner_au, outer_au } => {
                if inner_au == outer_au {
                    write!(f, "{name}: must be 0 at {inner_au} au, where the disk holds no solids, got {value}")
                } else {
                    write!(f, "{name}: must be 0 over {inner_au}-{outer_au} au, where the disk holds no solids, got {value}")
                }
            }
            PhysicsError::InvalidChoice { name, allowed, got } => write!(f, "{name}: must be {allowed}, got {got}"),
        }
    }
}

impl std::error::Error for PhysicsError {}
