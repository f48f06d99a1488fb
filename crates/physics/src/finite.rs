//! The after-run check: every result of a run is a finite number, or the run
//! is a typed error naming the result, the radius and the input that most
//! likely caused it (issue 15 item 5). Valid inputs within the disk file's
//! physical bounds never trip it; it guards the boundary so that no NaN or
//! infinity can reach a file or the screen as a silently empty cell.

use crate::error::PhysicsError;
use crate::model::Model;
use crate::units::AU_CM;

/// The first non-finite value among the run's results, if any: the radial
/// fields, the per-sample fields and the ice fractions. (Equilibration times
/// are NaN by definition where no exchange happens, docs/model.md section 6,
/// and are not checked.)
pub fn check_finite(model: &Model) -> Result<(), PhysicsError> {
    check_structure_finite(model.structure())?;
    let st = model.structure();
    let per_column = st.samples_per_column.max(1);
    let radius_of = |j: usize| st.radius_cm.get(j).map_or(f64::NAN, |r| r / AU_CM);
    for species in crate::species::Species::ALL {
        if let Some(k) = first_non_finite(model.ices().ice_fraction(species)) {
            return Err(PhysicsError::NonFiniteResult {
                quantity: "ice fraction",
                radius_au: radius_of(k / per_column),
                likely_input: "ices.species_overrides / ices.sticking",
            });
        }
    }
    Ok(())
}

/// The index of the first value that is NaN or infinite. The common case, all finite, is one
/// branch-free pass ([`all_finite`]); the index is looked for only when there is one.
fn first_non_finite(values: &[f64]) -> Option<usize> {
    if all_finite(values) {
        None
    } else {
        values.iter().position(|x| !x.is_finite())
    }
}

/// Whether every value is finite (neither NaN nor infinite), without a branch per value:
/// natively a fold the compiler vectorises (blocks of 256 values, so a non-finite value
/// stops the pass early).
#[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
fn all_finite(values: &[f64]) -> bool {
    values
        .chunks(256)
        .all(|block| block.iter().fold(true, |all, x| all & x.is_finite()))
}

/// Whether every value is finite, in WebAssembly with simd128: four values per step in two
/// vectors, `|x| < inf` per lane (false for NaN) and-ed into a mask. The page's build
/// optimises the whole module for size after linking, which leaves the native form's fold
/// scalar (one branch-free compare per value); this is its explicit vector form, with the
/// same answer (`tests::all_finite_finds_every_non_finite_value` runs as WebAssembly with
/// simd128 in `cargo xtask test` stage 3).
#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
fn all_finite(values: &[f64]) -> bool {
    use crate::math::simd128::{load2, splat};
    use core::arch::wasm32::{f64x2_abs, f64x2_lt, i64x2_all_true, i64x2_splat, v128_and};
    let infinity = splat(f64::INFINITY);
    // Every lane true so far.
    let (mut a, mut b) = (i64x2_splat(-1), i64x2_splat(-1));
    let blocks = values.len() / 4;
    for i in 0..blocks {
        a = v128_and(a, f64x2_lt(f64x2_abs(load2(values, 4 * i)), infinity));
        b = v128_and(b, f64x2_lt(f64x2_abs(load2(values, 4 * i + 2)), infinity));
    }
    i64x2_all_true(v128_and(a, b)) && values[4 * blocks..].iter().all(|x| x.is_finite())
}

/// The structure part of [`check_finite`]: the radial and per-sample fields.
pub fn check_structure_finite(st: &crate::structure::DiskStructure) -> Result<(), PhysicsError> {
    let per_column = st.samples_per_column.max(1);
    let radius_of = |j: usize| st.radius_cm.get(j).map_or(f64::NAN, |r| r / AU_CM);
    let radial: [(&'static str, &'static str, &[f64]); 7] = [
        (
            "radius",
            "disk.inner_radius_au / disk.outer_radius_au",
            &st.radius_cm,
        ),
        (
            "surface density",
            "disk.gas_mass_msun / disk.characteristic_radius_au",
            &st.surface_density_g_cm2,
        ),
        (
            "midplane temperature",
            "disk.accretion_rate_msun_per_yr / disk.opacity",
            &st.midplane_temperature_k,
        ),
        (
            "irradiation temperature",
            "star.luminosity_lsun / disk.flaring_angle",
            &st.irradiation_temperature_k,
        ),
        (
            "accretion temperature",
            "disk.accretion_rate_msun_per_yr / disk.opacity",
            &st.accretion_temperature_k,
        ),
        ("scale height", "star.mass_msun", &st.scale_height_cm),
        ("flaring angle", "disk.flaring_angle", &st.flaring_angle),
    ];
    for (quantity, likely_input, values) in radial {
        if let Some(j) = first_non_finite(values) {
            return Err(PhysicsError::NonFiniteResult {
                quantity,
                radius_au: radius_of(j),
                likely_input,
            });
        }
    }
    let s = &st.samples;
    let samples: [(&'static str, &'static str, &[f64]); 8] = [
        ("height", "star.mass_msun", &s.height_cm),
        (
            "temperature",
            "disk.accretion_rate_msun_per_yr / disk.opacity",
            &s.temperature_k,
        ),
        ("gas density", "disk.gas_mass_msun", &s.density_g_cm3),
        (
            "hydrogen density",
            "disk.gas_mass_msun",
            &s.hydrogen_density_cm3,
        ),
        ("gas column", "disk.gas_mass_msun", &s.column_above_g_cm2),
        (
            "visual extinction",
            "disk.dust_to_gas",
            &s.visual_extinction_mag,
        ),
        (
            "FUV flux",
            "star.fuv_1au_habing / disk.interstellar_fuv_habing",
            &s.fuv_photon_flux_cm2_s,
        ),
        (
            "ionisation rate",
            "disk.cosmic_ray_rate_s",
            &s.ionization_rate_s,
        ),
    ];
    for (quantity, likely_input, values) in samples {
        if let Some(k) = first_non_finite(values) {
            return Err(PhysicsError::NonFiniteResult {
                quantity,
                radius_au: radius_of(k / per_column),
                likely_input,
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::params::Opacity;
    use crate::ModelParameters;

    fn small() -> ModelParameters {
        let mut p = ModelParameters::defaults();
        p.grid.radial_cells = 16;
        p.grid.vertical_cells = 8;
        p
    }

    /// The reproductions of issue 15 item 5, run past the disk file's bounds
    /// (as a library user could): each run is an error or wholly finite, never
    /// a model holding NaN or infinity.
    #[test]
    fn absurd_inputs_give_an_error_or_finite_results() {
        let mut cases: Vec<(&str, ModelParameters)> = Vec::new();
        let mut p = small();
        p.disk.accretion_rate_msun_per_yr = 1e300;
        cases.push(("Mdot 1e300", p));
        let mut p = small();
        p.disk.gas_mass_msun = 1e278;
        cases.push(("disk mass 1e278", p));
        let mut p = small();
        p.disk.opacity = Opacity::Constant {
            rosseland_cm2_per_g: 1e300,
        };
        p.disk.accretion_rate_msun_per_yr = 1e-7;
        cases.push(("kappa 1e300", p));
        let mut p = small();
        p.disk.outer_radius_au = 1e93;
        cases.push(("outer radius 1e93", p));
        let mut non_finite_errors = 0;
        for (what, p) in cases {
            match Model::run(&p) {
                Ok(m) => {
                    assert!(check_finite(&m).is_ok(), "{what}");
                    assert!(
                        m.structure()
                            .midplane_temperature_k
                            .iter()
                            .all(|t| t.is_finite()),
                        "{what}"
                    );
                }
                Err(e) => {
                    if matches!(e, PhysicsError::NonFiniteResult { .. }) {
                        non_finite_errors += 1;
                        assert!(e.path().is_some_and(|p| p.contains('.')), "{what}: {e}");
                    }
                }
            }
        }
        assert!(non_finite_errors > 0, "no case reached the after-run check");
    }

    /// `all_finite` and `first_non_finite` (explicit vectors in WebAssembly with simd128)
    /// find a NaN, +inf or -inf at every position of slices of every length up to 11
    /// (the vector steps and the remainder), and pass the extremes of the finite range
    /// (derived, D).
    #[test]
    fn all_finite_finds_every_non_finite_value() {
        let finite = [
            0.0,
            -0.0,
            f64::MAX,
            f64::MIN,
            f64::MIN_POSITIVE,
            5e-324,
            1.0,
        ];
        for len in 0..12 {
            let values: Vec<f64> = (0..len).map(|i| finite[i % finite.len()]).collect();
            assert!(all_finite(&values), "{len}");
            assert_eq!(first_non_finite(&values), None);
            for k in 0..len {
                for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -f64::NAN] {
                    let mut v = values.clone();
                    v[k] = bad;
                    assert!(!all_finite(&v), "{len} {k} {bad}");
                    assert_eq!(first_non_finite(&v), Some(k), "{len} {k} {bad}");
                    // The first of two is named.
                    if k + 1 < len {
                        v[len - 1] = f64::NAN;
                        assert_eq!(first_non_finite(&v), Some(k), "{len} {k} {bad}");
                    }
                }
            }
        }
    }

    #[test]
    fn a_non_finite_value_is_named_with_its_likely_input() {
        let m = Model::run(&small()).unwrap();
        assert!(check_finite(&m).is_ok());
        let mut st = m.structure().clone();
        let k = st.samples_per_column * 3;
        st.samples.ionization_rate_s[k] = f64::INFINITY;
        let e = check_structure_finite(&st).unwrap_err();
        assert_eq!(e.path(), Some("disk.cosmic_ray_rate_s"));
        assert!(e.to_string().contains("the ionisation rate at r ="), "{e}");
    }
}
