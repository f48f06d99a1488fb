//! The methods paragraph and BibTeX read like text written by hand (issue 11
//! item 5): for every demo disk and variants that switch each method (each
//! desorption model, both opacity laws, self-consistent flaring, isothermal
//! columns, the other binding-energy set and abundance reference, overrides),
//! the paragraph names references by their citations and never by an internal
//! key, has no doubled parentheses, writes ± (not "+-") and proper Unicode
//! author names (not ASCII substitutes such as "Oberg"), and cites the software
//! with its version; the BibTeX is ASCII with LaTeX accents and holds the
//! software's own entry.

use nivalis_disk_files::{parse_disk_json, DiskFile};
use nivalis_exports::bibtex::{bibtex, methods_paragraph, software_citation, SOFTWARE_KEY};
use nivalis_exports::methods::{cited_keys, methods};
use nivalis_exports::Provenance;
use nivalis_physics::params::{AbundanceReference, DesorptionModel, Opacity, VerticalTemperature};
use nivalis_physics::references::{REFERENCES, UNPUBLISHED_SOURCES};
use nivalis_physics::species::BindingEnergySet;
use std::path::Path;

fn demo_disks() -> Vec<(String, DiskFile)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../demo_disks");
    let mut out = Vec::new();
    let mut paths: Vec<_> = std::fs::read_dir(&dir)
        .expect("demo_disks is readable")
        .map(|e| e.expect("entry").path())
        .collect();
    paths.sort();
    for path in paths
        .into_iter()
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
    {
        let text = std::fs::read_to_string(&path).expect("demo disk is readable");
        let file = parse_disk_json(&text).unwrap_or_else(|e| panic!("{}: {e:?}", path.display()));
        out.push((
            path.file_name().unwrap().to_string_lossy().into_owned(),
            file,
        ));
    }
    assert!(
        out.len() >= 5,
        "the demo disks were not found in {}",
        dir.display()
    );
    out
}

/// The demo disks and, from the default disk, one variant per method switch.
fn configurations() -> Vec<(String, DiskFile)> {
    let mut out = demo_disks();
    let base = parse_disk_json("{}").expect("the default disk is valid");
    let variant = |name: &str, change: &dyn Fn(&mut DiskFile)| {
        let mut f = base.clone();
        change(&mut f);
        (name.to_string(), f)
    };
    out.push(variant("default", &|_| {}));
    out.push(variant("first_order", &|f| {
        f.parameters.ices.desorption = DesorptionModel::FirstOrder
    }));
    out.push(variant("zeroth_order", &|f| {
        f.parameters.ices.desorption = DesorptionModel::ZerothOrder
    }));
    out.push(variant("fixed_temperature", &|f| {
        f.parameters.ices.desorption = DesorptionModel::FixedTemperature
    }));
    out.push(variant("fixed_temperature_override", &|f| {
        f.parameters.ices.desorption = DesorptionModel::FixedTemperature;
        f.parameters.ices.overrides[1].condensation_temperature_k = Some(22.0);
    }));
    out.push(variant("bell_lin", &|f| {
        f.parameters.disk.opacity = Opacity::BellLin1994
    }));
    out.push(variant("constant_opacity", &|f| {
        f.parameters.disk.opacity = Opacity::Constant {
            rosseland_cm2_per_g: 3.0,
        }
    }));
    out.push(variant("self_consistent_flaring", &|f| {
        f.parameters.disk.self_consistent_flaring = true
    }));
    out.push(variant("isothermal", &|f| {
        f.parameters.disk.vertical_temperature = VerticalTemperature::Isothermal
    }));
    out.push(variant("on_water_ice", &|f| {
        f.parameters.ices.binding_energy_set = BindingEnergySet::OnWaterIce
    }));
    out.push(variant("asplund2021_offsets", &|f| {
        f.parameters.star.abundance_reference = AbundanceReference::Asplund2021;
        f.parameters.star.offset_dex[0] = 0.1;
        f.parameters.star.offset_dex[1] = -0.05;
    }));
    out.push(variant("binding_override", &|f| {
        f.parameters.ices.overrides[1].binding_energy_k = Some(1150.0)
    }));
    out.push(variant("passive_no_photo_no_cr", &|f| {
        f.parameters.disk.accretion_rate_msun_per_yr = 0.0;
        f.parameters.ices.photodesorption = false;
        f.parameters.ices.cosmic_ray_desorption = false;
    }));
    out
}

/// Every internal key that must never appear in prose.
fn internal_keys() -> Vec<String> {
    let mut keys: Vec<String> = REFERENCES.iter().map(|r| r.key.to_string()).collect();
    keys.extend(
        UNPUBLISHED_SOURCES
            .iter()
            .map(|(k, _)| k.to_string())
            .filter(|k| k.contains('_')),
    );
    keys.extend(BindingEnergySet::ALL.iter().map(|s| s.key().to_string()));
    for d in [
        DesorptionModel::ZerothOrder,
        DesorptionModel::FirstOrder,
        DesorptionModel::FixedTemperature,
    ] {
        keys.push(d.key().to_string());
    }
    for a in [
        AbundanceReference::Asplund2009,
        AbundanceReference::Asplund2021,
    ] {
        keys.push(a.key().to_string());
    }
    // Disk-file enum values (docs/disk-file.md): opacity and vertical-temperature kinds.
    keys.extend(["bell_lin_1994", "two_layer"].map(String::from));
    keys
}

/// What is wrong with a piece of prose, one line per problem.
fn prose_problems(text: &str) -> Vec<String> {
    let mut problems = Vec::new();
    for key in internal_keys() {
        if text.contains(&key) {
            problems.push(format!("internal key {key:?}"));
        }
    }
    for bad in [
        "((", "))", ") (", "+-", "Oberg", "Msun", "Lsun", "  ", " ,", " ;", " .",
    ] {
        if text.contains(bad) {
            problems.push(format!("contains {bad:?}"));
        }
    }
    for sentence in text.split(". ").skip(1) {
        if sentence.chars().next().is_some_and(|c| c.is_lowercase()) {
            problems.push(format!(
                "sentence starts in lower case: {:?}",
                &sentence[..sentence.len().min(40)]
            ));
        }
    }
    problems
}

#[test]
fn methods_paragraph_has_no_internal_keys_or_substitutes() {
    let configs = configurations();
    for (name, file) in &configs {
        let used = methods(&file.parameters);
        let text = methods_paragraph(&file.parameters, &used, &Provenance::of(file));
        let problems = prose_problems(&text);
        assert!(problems.is_empty(), "{name}: {problems:?}\n{text}");
        assert!(
            text.contains(&format!(
                "Nivalis version {} ({})",
                env!("CARGO_PKG_VERSION"),
                software_citation()
            )),
            "{name}: the software is not cited\n{text}"
        );
        if cited_keys(&used).contains(&"oberg2011") {
            assert!(
                text.contains("Öberg, Murray-Clay & Bergin 2011"),
                "{name}: Öberg not spelled with its umlaut\n{text}"
            );
        }
    }
}

#[test]
fn the_checker_catches_what_it_looks_for() {
    // The checks above can fail: each known bad form is caught.
    for bad in [
        "Stellar abundances from asplund2009 photospheric values.",
        "Binding energies: set transition_state.",
        "The solids enter the envelope (full mixing) (solids at every place mixed alike).",
        "C/O = 0.8 +- 0.1.",
        "Values of Oberg et al. 2011.",
        "Ice. the next sentence.",
    ] {
        assert!(!prose_problems(bad).is_empty(), "{bad}");
    }
    assert!(prose_problems("C/O = 0.8 ± 0.1 (Öberg, Murray-Clay & Bergin 2011).").is_empty());
}

#[test]
fn bibtex_is_ascii_with_latex_accents_and_cites_the_software() {
    for (name, file) in configurations() {
        let bib = bibtex(&methods(&file.parameters));
        assert!(bib.is_ascii(), "{name}: BibTeX is not ASCII");
        assert!(
            bib.starts_with(&format!("@misc{{{SOFTWARE_KEY},")),
            "{name}: no software entry first"
        );
        assert!(
            bib.contains(&format!("version = {{{}}}", env!("CARGO_PKG_VERSION"))),
            "{name}"
        );
        assert!(!bib.contains("Oberg"), "{name}: ASCII substitute in BibTeX");
        if bib.contains("@article{oberg2011,") {
            assert!(
                bib.contains("author = {{\\\"O}berg, K. I. and Murray-Clay, R. and Bergin, E. A.}"),
                "{name}:\n{bib}"
            );
        }
    }
}

#[test]
fn citation_cff_names_this_version() {
    let cff =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("../../CITATION.cff"))
            .expect("CITATION.cff exists");
    assert!(cff.lines().any(|l| l == "cff-version: 1.2.0"), "{cff}");
    assert!(
        cff.lines()
            .any(|l| l == format!("version: \"{}\"", env!("CARGO_PKG_VERSION"))),
        "CITATION.cff version differs from the workspace's"
    );
    assert!(cff.contains("- name: \"The Nivalis developers\""), "{cff}");
}

#[test]
fn evolution_methods_paragraph_has_no_internal_keys_or_substitutes() {
    // The evolving run's paragraph (issue 13) passes the same prose checks, with every switch.
    use nivalis_exports::evolution_methods::evolution_methods_paragraph;
    use nivalis_physics::evolution::star_track::{StarTrack, StarTrackPoint};
    use nivalis_physics::evolution::{CoProcessing, EvolutionParameters};
    let mut variants = vec![EvolutionParameters::defaults()];
    let mut e = EvolutionParameters::defaults();
    e.dust.drift = false;
    e.diffusion = false;
    e.star_track = StarTrack::Fixed;
    variants.push(e);
    let mut e = EvolutionParameters::defaults();
    e.co_processing = Some(CoProcessing {
        timescale_myr: 2.0,
        max_temperature_k: 25.0,
    });
    e.star_track = StarTrack::Table(vec![StarTrackPoint {
        age_myr: 1.0,
        luminosity_lsun: 1.0,
        effective_temperature_k: 4000.0,
    }]);
    variants.push(e);
    for (name, file) in configurations() {
        for e in &variants {
            let text = evolution_methods_paragraph(&file.parameters, e, &Provenance::of(&file));
            let problems = prose_problems(&text);
            assert!(problems.is_empty(), "{name}: {problems:?}\n{text}");
            assert!(
                !text.contains("no radial drift, vapour transport"),
                "{name}"
            );
        }
    }
}
