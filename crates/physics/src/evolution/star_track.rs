//! The star's pre-main-sequence luminosity and effective temperature versus age
//! (docs/model.md section 12.2).

use crate::math::{exp, ln, pow};

/// One row of a user star track.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StarTrackPoint {
    /// Age [Myr].
    pub age_myr: f64,
    /// Luminosity [Lsun].
    pub luminosity_lsun: f64,
    /// Effective temperature [K].
    pub effective_temperature_k: f64,
}

/// How L and T_eff change with the disk's age.
#[derive(Debug, Clone, PartialEq)]
pub enum StarTrack {
    /// Contraction down the Hayashi track at constant T_eff: L = L_ref (t / t_ref)^(-2/3), with
    /// (L_ref, T_eff) the disk file's star at the disk's age t_ref. Default. Derivation (Hayashi
    /// 1961; Kippenhahn, Weigert & Weiss 2012, sections 24-25): a fully convective star (n = 3/2
    /// polytrope) radiates its gravitational energy, L = -d/dt[-(3/7) G M^2 / R]/2 (virial), at
    /// constant T_eff, so L = 4 pi R^2 sigma T_eff^4 ∝ R^2 and dR/dt ∝ -R^4, giving R ∝ t^(-1/3)
    /// and L ∝ t^(-2/3). Valid until the radiative core forms (some Myr for 1 Msun).
    HayashiContraction,
    /// The disk file's star at every age.
    Fixed,
    /// A user table of (age, L, T_eff), ages strictly increasing: ln L and ln T_eff interpolated
    /// linearly in ln t, constant beyond the first and last rows.
    Table(Vec<StarTrackPoint>),
}

impl StarTrack {
    /// Key in disk files.
    pub fn key(&self) -> &'static str {
        match self {
            StarTrack::HayashiContraction => "hayashi_contraction",
            StarTrack::Fixed => "fixed",
            StarTrack::Table(_) => "table",
        }
    }

    /// (L [Lsun], T_eff [K]) at age `age_myr`, for the disk file's star (`luminosity_lsun`,
    /// `effective_temperature_k`) seen at `reference_age_myr`.
    pub fn at(
        &self,
        luminosity_lsun: f64,
        effective_temperature_k: f64,
        reference_age_myr: f64,
        age_myr: f64,
    ) -> (f64, f64) {
        match self {
            StarTrack::Fixed => (luminosity_lsun, effective_temperature_k),
            StarTrack::HayashiContraction => (
                luminosity_lsun * pow(age_myr / reference_age_myr, -2.0 / 3.0),
                effective_temperature_k,
            ),
            StarTrack::Table(rows) => table_at(rows, age_myr),
        }
    }
}

fn table_at(rows: &[StarTrackPoint], age_myr: f64) -> (f64, f64) {
    let first = rows[0];
    let last = rows[rows.len() - 1];
    if age_myr <= first.age_myr {
        return (first.luminosity_lsun, first.effective_temperature_k);
    }
    if age_myr >= last.age_myr {
        return (last.luminosity_lsun, last.effective_temperature_k);
    }
    let k = rows.partition_point(|r| r.age_myr <= age_myr) - 1;
    let (a, b) = (rows[k], rows[k + 1]);
    let w = (ln(age_myr) - ln(a.age_myr)) / (ln(b.age_myr) - ln(a.age_myr));
    let lerp = |x: f64, y: f64| exp(ln(x) + w * (ln(y) - ln(x)));
    (
        lerp(a.luminosity_lsun, b.luminosity_lsun),
        lerp(a.effective_temperature_k, b.effective_temperature_k),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hayashi_contraction_is_two_thirds_power_law() {
        // L ∝ t^(-2/3) at constant T_eff (Hayashi 1961 contraction; derivation in the doc comment):
        // a factor 10 in age is a factor 10^(2/3) = 4.6416 in L.
        let (l1, t1) = StarTrack::HayashiContraction.at(1.0, 4000.0, 1.0, 0.1);
        assert!((l1 - 4.641_588_833_612_779).abs() < 1e-12, "{l1}");
        assert_eq!(t1, 4000.0);
        let (l2, _) = StarTrack::HayashiContraction.at(1.0, 4000.0, 1.0, 1.0);
        assert_eq!(l2, 1.0);
    }

    #[test]
    fn table_interpolates_log_log_and_clamps() {
        let rows = vec![
            StarTrackPoint {
                age_myr: 0.1,
                luminosity_lsun: 10.0,
                effective_temperature_k: 4000.0,
            },
            StarTrackPoint {
                age_myr: 10.0,
                luminosity_lsun: 0.1,
                effective_temperature_k: 4000.0,
            },
        ];
        let t = StarTrack::Table(rows);
        let (l, _) = t.at(1.0, 1.0, 1.0, 1.0);
        assert!((l - 1.0).abs() < 1e-12, "{l}");
        assert_eq!(t.at(1.0, 1.0, 1.0, 0.01).0, 10.0);
        assert_eq!(t.at(1.0, 1.0, 1.0, 100.0).0, 0.1);
    }
}
