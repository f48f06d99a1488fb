//! Physical and astronomical constants in cgs, each with its published source.
//!
//! Everything inside the core is cgs (cm, g, s, K, erg). Display units (au,
//! solar masses, years) appear only at the edges; convert with these constants.

/// Gravitational constant G [cm^3 g^-1 s^-2]. CODATA 2018 (= CODATA 2022).
pub const GRAVITATIONAL_CONSTANT_CGS: f64 = 6.674_30e-8;
/// Boltzmann constant k_B [erg K^-1]. Exact since the SI redefinition of 2019.
pub const BOLTZMANN_ERG_PER_K: f64 = 1.380_649e-16;
/// Planck constant h [erg s]. Exact since the SI redefinition of 2019.
pub const PLANCK_ERG_S: f64 = 6.626_070_15e-27;
/// Speed of light c [cm s^-1]. Exact (SI).
pub const SPEED_OF_LIGHT_CM_PER_S: f64 = 2.997_924_58e10;
/// Stefan-Boltzmann constant sigma [erg cm^-2 s^-1 K^-4]. CODATA 2018 (exact from k, h, c).
pub const STEFAN_BOLTZMANN_CGS: f64 = 5.670_374_419e-5;
/// Atomic mass constant u [g]. CODATA 2022 (1.66053906892e-27 kg).
pub const ATOMIC_MASS_UNIT_G: f64 = 1.660_539_068_92e-24;
/// Mass of the hydrogen atom m_H [g]: 1.007825031898 u (AME2020 atomic mass of 1H; CODATA 2022 m_p + m_e - binding gives the same to 1e-10) times u.
pub const HYDROGEN_MASS_G: f64 = 1.007_825_031_898 * ATOMIC_MASS_UNIT_G;
/// Astronomical unit [cm]. Exact, IAU 2012 Resolution B2.
pub const AU_CM: f64 = 1.495_978_707e13;
/// Nominal solar mass parameter GM_sun [cm^3 s^-2]. Exact, IAU 2015 Resolution B3.
pub const SOLAR_MASS_PARAMETER_CGS: f64 = 1.327_124_4e26;
/// Solar mass [g] = GM_sun / G, as astropy derives it (IAU 2015 B3 with CODATA G).
pub const SOLAR_MASS_G: f64 = SOLAR_MASS_PARAMETER_CGS / GRAVITATIONAL_CONSTANT_CGS;
/// Nominal solar luminosity [erg s^-1]. Exact, IAU 2015 Resolution B3.
pub const SOLAR_LUMINOSITY_ERG_PER_S: f64 = 3.828e33;
/// Nominal solar radius [cm]. Exact, IAU 2015 Resolution B3.
pub const SOLAR_RADIUS_CM: f64 = 6.957e10;
/// Julian year [s] (365.25 d), the IAU year. Not scipy's 365-day `year`.
pub const JULIAN_YEAR_S: f64 = 3.155_76e7;
/// Habing field G0 [erg cm^-2 s^-1] between 6 and 13.6 eV (Habing 1968, BAN 19, 421).
pub const HABING_ERG_PER_CM2_S: f64 = 1.6e-3;
/// FUV photon flux of one Habing field [photons cm^-2 s^-1]: 1.6e-3 erg / ~10 eV (common practice in photodesorption work).
pub const HABING_PHOTONS_PER_CM2_S: f64 = 1.0e8;
/// Mean molecular weight per free particle, mu = 2.37 (Kauffmann et al. 2008, A&A 487, 993), used everywhere (docs/model.md section 5).
pub const MEAN_MOLECULAR_WEIGHT: f64 = 2.37;
/// Mass per H nucleus in units of m_H, 1.4, accounting for helium (docs/model.md section 5).
pub const MASS_PER_HYDROGEN_NUCLEUS_AMU_H: f64 = 1.4;
/// Surface density of binding sites N_s [cm^-2] (Hasegawa, Herbst & Leung 1992, ApJS 82, 167).
pub const BINDING_SITES_PER_CM2: f64 = 1.5e15;
/// Hydrogen column per magnitude of visual extinction [cm^-2 mag^-1] (Bohlin, Savage & Drake 1978, ApJ 224, 132; R_V = 3.1).
pub const HYDROGEN_COLUMN_PER_AV_CM2: f64 = 1.87e21;
/// Cosmic-ray attenuation column [g cm^-2] (Umebayashi & Nakano 1981, PASJ 33, 617).
pub const COSMIC_RAY_ATTENUATION_G_PER_CM2: f64 = 96.0;
/// Reference cosmic-ray ionisation rate per H2 [s^-1] used to scale CR-driven processes (Spitzer & Tomasko 1968 value common in networks).
pub const REFERENCE_COSMIC_RAY_RATE_S: f64 = 1.3e-17;

/// Grams per solar mass per year to g s^-1.
pub const MSUN_PER_YR_TO_G_PER_S: f64 = SOLAR_MASS_G / JULIAN_YEAR_S;
/// Centimetres per micron.
pub const MICRON_CM: f64 = 1.0e-4;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solar_mass_matches_iau_derivation() {
        // astropy's M_sun = 1.98840987e30 kg (IAU 2015 B3 / CODATA 2018 G).
        assert!((SOLAR_MASS_G / 1.988_409_87e33 - 1.0).abs() < 1e-8);
    }

    #[test]
    fn hydrogen_atom_mass() {
        // m_H = 1.6735328e-24 g from 1.00782503 u (AME2020); the first specification quoted 1.6735575e-24
        // (M, an older rounded table value); they agree to 2e-5.
        assert!((HYDROGEN_MASS_G / 1.673_532_8e-24 - 1.0).abs() < 1e-7);
        assert!((HYDROGEN_MASS_G / 1.673_557_5e-24 - 1.0).abs() < 2e-5);
    }
}
