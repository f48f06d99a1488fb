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
    /// A result of the run is not a finite number (checked after every run).
    NonFiniteResult {
        /// The result, in words (e.g. "midplane temperature").
        quantity: &'static str,
        /// Radius of the first non-finite value [au] (NaN if unknown).
        radius_au: f64,
        /// The input field that most likely caused it (a disk-file path, or two joined by " / ").
        likely_input: &'static str,
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

/// A number as short text: plain decimals for ordinary magnitudes, the
/// shortest round-trip exponent form (`1e-320`) for tiny or huge ones, so a
/// message never spells out hundreds of digits.
pub fn num(x: f64) -> String {
    if x != 0.0 && x.is_finite() && (x.abs() < 1e-4 || x.abs() >= 1e15) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

impl PhysicsError {
    /// The input field this error concerns, as data (a disk-file path such as
    /// `disk.inner_radius_au` or a request parameter name), or `None` when the
    /// error has no single field (e.g. a failed temperature solve).
    pub fn path(&self) -> Option<&str> {
        match self {
            PhysicsError::InnerRadiusInsideStar { .. } => Some("disk.inner_radius_au"),
            PhysicsError::OxygenExhausted { .. } => Some("composition"),
            PhysicsError::NitrogenExhausted { .. } => Some("composition.carbon.HCN"),
            PhysicsError::FlaringNotConverged { .. } => Some("disk.self_consistent_flaring"),
            PhysicsError::NoTemperatureSolution { .. } | PhysicsError::NoSolutionInRange { .. } => {
                None
            }
            // The first named input is the field the problem is shown beside.
            PhysicsError::NonFiniteResult { likely_input, .. } => likely_input.split(" / ").next(),
            PhysicsError::RadiusOutsideDisk { name, .. }
            | PhysicsError::OutOfRange { name, .. }
            | PhysicsError::NotIncreasing { name, .. }
            | PhysicsError::NoSolidsToAccrete { name, .. }
            | PhysicsError::InvalidChoice { name, .. } => Some(name),
        }
    }

    /// The offending value as short text, when the error has one.
    pub fn value(&self) -> Option<String> {
        match self {
            PhysicsError::InnerRadiusInsideStar {
                inner_radius_au, ..
            } => Some(num(*inner_radius_au)),
            PhysicsError::NitrogenExhausted { hcn_per_h, .. } => Some(format!("{hcn_per_h:.4e}")),
            PhysicsError::NoTemperatureSolution { radius_au } => Some(format!("{radius_au:.4}")),
            PhysicsError::RadiusOutsideDisk { radius_au, .. } => Some(num(*radius_au)),
            PhysicsError::OutOfRange { value, .. }
            | PhysicsError::NotIncreasing { value, .. }
            | PhysicsError::NoSolidsToAccrete { value, .. } => Some(num(*value)),
            PhysicsError::InvalidChoice { got, .. } => Some(got.clone()),
            PhysicsError::OxygenExhausted { .. }
            | PhysicsError::FlaringNotConverged { .. }
            | PhysicsError::NoSolutionInRange { .. }
            | PhysicsError::NonFiniteResult { .. } => None,
        }
    }

    /// The allowed range or options in words, when the error has one.
    pub fn allowed(&self) -> Option<String> {
        match self {
            PhysicsError::InnerRadiusInsideStar {
                stellar_radius_au, ..
            } => Some(format!("> {stellar_radius_au:.4} au (the stellar radius)")),
            PhysicsError::RadiusOutsideDisk {
                inner_au, outer_au, ..
            } => Some(format!("in [{inner_au}, {outer_au}] au")),
            PhysicsError::OutOfRange { allowed, .. }
            | PhysicsError::InvalidChoice { allowed, .. } => Some(allowed.to_string()),
            PhysicsError::NotIncreasing {
                lower_name, lower, ..
            } => Some(format!("> {lower_name} = {lower}")),
            PhysicsError::NoSolidsToAccrete { .. } => Some("0".into()),
            _ => None,
        }
    }

    /// What is wrong, without the field path (the text after `path: ` in the
    /// [`Display`](fmt::Display) form).
    pub fn detail(&self) -> String {
        match self {
            PhysicsError::InnerRadiusInsideStar { inner_radius_au, stellar_radius_au } => format!(
                "must exceed the stellar radius {stellar_radius_au:.4} au (from luminosity and effective temperature), got {inner_radius_au}"
            ),
            PhysicsError::OxygenExhausted {
                oxygen_per_h,
                silicate_oxygen_per_h,
                co_oxygen_per_h,
                co2_oxygen_per_h,
                ch3oh_oxygen_per_h,
                star_c_to_o,
            } => format!(
                "oxygen runs out before water (star C/O = {star_c_to_o:.3}): O/H = {oxygen_per_h:.4e} but silicates take {silicate_oxygen_per_h:.4e}, CO {co_oxygen_per_h:.4e}, CO2 {co2_oxygen_per_h:.4e}, CH3OH {ch3oh_oxygen_per_h:.4e}; lower the CO/CO2/CH3OH carbon fractions, oxygen_per_silicon or the carbon offset"
            ),
            PhysicsError::NitrogenExhausted { nitrogen_per_h, hcn_per_h } => {
                format!("HCN/H = {hcn_per_h:.4e} needs more nitrogen than the star has (N/H = {nitrogen_per_h:.4e})")
            }
            PhysicsError::FlaringNotConverged { iterations, max_relative_change } => format!(
                "the grazing-angle iteration did not converge after {iterations} iterations (last relative change {max_relative_change:.2e}, need < 1e-6); use a fixed flaring angle"
            ),
            PhysicsError::NoTemperatureSolution { radius_au } => format!(
                "no midplane temperature below 1e6 K balances the heating at r = {radius_au:.4} au; lower the accretion rate or the opacity"
            ),
            PhysicsError::RadiusOutsideDisk { radius_au, inner_au, outer_au, .. } => {
                format!("must lie in the disk [{inner_au}, {outer_au}] au, got {}", num(*radius_au))
            }
            PhysicsError::OutOfRange { value, allowed, .. } => format!("must be {allowed}, got {}", num(*value)),
            PhysicsError::NoSolutionInRange { what } => what.clone(),
            PhysicsError::NotIncreasing { value, lower_name, lower, .. } => {
                format!("must be greater than {lower_name} = {}, got {}", num(*lower), num(*value))
            }
            PhysicsError::NoSolidsToAccrete { value, inner_au, outer_au, .. } => {
                if inner_au == outer_au {
                    format!("must be 0 at {inner_au} au, where the disk holds no solids, got {}", num(*value))
                } else {
                    format!("must be 0 over {inner_au}-{outer_au} au, where the disk holds no solids, got {}", num(*value))
                }
            }
            PhysicsError::InvalidChoice { allowed, got, .. } => format!("must be {allowed}, got {got}"),
            PhysicsError::NonFiniteResult { quantity, radius_au, likely_input } => format!(
                "the {quantity} at r = {} au is not a finite number; the most likely cause is {likely_input} (an extreme value the model cannot represent)",
                num(*radius_au)
            ),
        }
    }
}

impl fmt::Display for PhysicsError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.path() {
            Some(path) => write!(f, "{path}: {}", self.detail()),
            None => write!(f, "{}", self.detail()),
        }
    }
}

impl std::error::Error for PhysicsError {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn message_is_field_then_detail() {
        let cases = [
            (
                PhysicsError::InnerRadiusInsideStar {
                    inner_radius_au: 0.001,
                    stellar_radius_au: 0.0093,
                },
                Some("disk.inner_radius_au"),
                "disk.inner_radius_au: must exceed the stellar radius 0.0093 au (from luminosity and effective temperature), got 0.001",
            ),
            (
                PhysicsError::NitrogenExhausted {
                    nitrogen_per_h: 6.8e-5,
                    hcn_per_h: 1e-4,
                },
                Some("composition.carbon.HCN"),
                "composition.carbon.HCN: HCN/H = 1.0000e-4 needs more nitrogen than the star has (N/H = 6.8000e-5)",
            ),
            (
                PhysicsError::OutOfRange {
                    name: "sigma_au",
                    value: -1.0,
                    allowed: ">= 0",
                },
                Some("sigma_au"),
                "sigma_au: must be >= 0, got -1",
            ),
            (
                PhysicsError::NoTemperatureSolution { radius_au: 0.5 },
                None,
                "no midplane temperature below 1e6 K balances the heating at r = 0.5000 au; lower the accretion rate or the opacity",
            ),
        ];
        for (e, field, message) in cases {
            assert_eq!(e.path(), field);
            assert_eq!(e.to_string(), message);
            let expected_detail = match field {
                Some(f) => message.strip_prefix(&format!("{f}: ")).unwrap().to_string(),
                None => message.to_string(),
            };
            assert_eq!(e.detail(), expected_detail);
        }
    }
}
