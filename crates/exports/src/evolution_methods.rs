//! The methods of an evolving run (`nivalis evolve`, docs/model.md section 12): the static
//! model's methods followed by the evolution's, each with its references, and the methods
//! paragraph with the run's own simplifications (the static paragraph says "no radial drift,
//! vapour transport or evolution", which an evolving run does not share).

use crate::bibtex::{push_methods, software_citation};
use crate::methods::{methods, MethodEntry};
use crate::provenance::Provenance;
use nivalis_physics::evolution::star_track::StarTrack;
use nivalis_physics::evolution::EvolutionParameters;
use nivalis_physics::params::{ModelParameters, SootLine};

fn entry(topic: &'static str, text: String, references: &[&'static str]) -> MethodEntry {
    MethodEntry {
        topic,
        text,
        references: references.to_vec(),
    }
}

/// The methods of an evolving run: those of the static model (at each age) and the evolution's.
pub fn evolution_methods(p: &ModelParameters, e: &EvolutionParameters) -> Vec<MethodEntry> {
    let mut out = methods(p);
    out.push(entry(
        "gas evolution",
        format!(
            "the gas surface density evolves by viscous diffusion with a constant α = {} from the profile above at {} Myr to {} Myr, started from and checked against the similarity solution, with the accretion rate onto the star heating the disk at each age",
            e.alpha, e.start_myr, e.until_myr
        ),
        &["lyndenbell1974", "hartmann1998", "shakura1973", "pringle1981"],
    ));
    out.push(match &e.star_track {
        StarTrack::HayashiContraction => entry(
            "stellar evolution",
            format!(
                "the star contracts along its Hayashi track at constant effective temperature, L ∝ t^(−2/3), through {} L☉ at {} Myr",
                p.star.luminosity_lsun, p.disk.age_myr
            ),
            &["hayashi1961"],
        ),
        StarTrack::Fixed => entry(
            "stellar evolution",
            "the star keeps its luminosity and effective temperature at every age".to_string(),
            &[],
        ),
        StarTrack::Table(rows) => entry(
            "stellar evolution",
            format!(
                "the star's luminosity and effective temperature follow a user table of {} ages, interpolated logarithmically",
                rows.len()
            ),
            &[],
        ),
    });
    let d = &e.dust;
    out.push(entry(
        "dust evolution",
        if d.drift {
            format!(
                "the dust follows the two-population model with monomers of {} µm, a fragmentation velocity of {} m/s and a material density of {} g cm⁻³, drifting radially at the speed of particles of its Stokes numbers",
                d.monomer_radius_um, d.fragmentation_velocity_cm_s / 100.0, d.material_density_g_cm3
            )
        } else {
            "the dust moves with the gas (no radial drift)".to_string()
        },
        if d.drift {
            &["birnstiel2012", "weidenschilling1977", "takeuchi2002"]
        } else {
            &[]
        },
    ));
    out.push(entry(
        "volatile transport",
        format!(
            "the vapour of every volatile moves with the gas and its ice with the dust{}, and they exchange at the rates of the ice balance at the midplane in every step",
            if e.diffusion {
                format!(", both diffusing turbulently with a Schmidt number of {}", e.schmidt_number)
            } else {
                String::new()
            }
        ),
        &["birnstiel2010", "booth2017"],
    ));
    if p.composition.soot_line == SootLine::Irreversible {
        out.push(entry(
            "soot-line history",
            "refractory carbon goes to the gas for good wherever the evolving midplane reaches the soot line".to_string(),
            &["li2021"],
        ));
    }
    if let Some(c) = e.co_processing {
        out.push(entry(
            "CO processing",
            format!(
                "gas-phase CO is converted to methanol on grains with an e-folding time of {} Myr where the midplane is at or below {} K, a parametrisation",
                c.timescale_myr, c.max_temperature_k
            ),
            &["bosman2018", "krijt2020"],
        ));
    }
    out
}

/// A plain-text methods paragraph for an evolving run, with citations in words.
pub fn evolution_methods_paragraph(
    p: &ModelParameters,
    e: &EvolutionParameters,
    provenance: &Provenance,
) -> String {
    let g = &p.grid;
    let mut text = format!(
        "We evolved the disk with Nivalis version {} ({}) from the disk file whose SHA-256 hash begins {}, on {} logarithmically spaced radial cells from {} to {} au, with the midplane conditions of each age from {} vertical cells per column up to {} midplane scale heights.",
        env!("CARGO_PKG_VERSION"),
        software_citation(),
        provenance.disk_hash,
        g.radial_cells,
        p.disk.inner_radius_au,
        p.disk.outer_radius_au,
        g.vertical_cells,
        g.max_height_scale_heights
    );
    push_methods(&mut text, &evolution_methods(p, e));
    text.push_str(
        " The evolving model simplifies in five ways: transport is one-dimensional in radius, and the ices exchange with the gas at the midplane; the volatiles are independent pure ices; the ices ride on the dust in proportion to its mass, and the adsorption uses the small grains of the static model; the silicates and sulfides move with the dust even where they would sublimate; and there is no gas-phase chemistry besides the optional CO processing.",
    );
    text.push('\n');
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use nivalis_physics::references::reference;

    #[test]
    fn every_cited_key_exists_and_switches_change_the_citations() {
        let p = ModelParameters::defaults();
        let mut e = EvolutionParameters::defaults();
        let keys = |e: &EvolutionParameters| crate::methods::cited_keys(&evolution_methods(&p, e));
        for k in keys(&e) {
            assert!(reference(k).is_some(), "{k}");
        }
        assert!(keys(&e).contains(&"birnstiel2012"));
        assert!(!keys(&e).contains(&"bosman2018"));
        e.dust.drift = false;
        e.co_processing = Some(nivalis_physics::evolution::CoProcessing {
            timescale_myr: 1.0,
            max_temperature_k: 30.0,
        });
        assert!(!keys(&e).contains(&"birnstiel2012"));
        assert!(keys(&e).contains(&"bosman2018"));
    }
}
