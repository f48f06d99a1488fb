//! The methods paragraph and the BibTeX file of exactly the references a
//! configuration used (issue "paper-ready output"). Records come from
//! `nivalis_physics::references`, where each is kept once.

use crate::methods::{cited_keys, MethodEntry};
use crate::provenance::Provenance;
use nivalis_physics::params::ModelParameters;
use nivalis_physics::references::{reference, Reference};

/// Escape the characters BibTeX and LaTeX treat specially in field values.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("\\&"),
            '%' => out.push_str("\\%"),
            '#' => out.push_str("\\#"),
            '_' => out.push_str("\\_"),
            '$' => out.push_str("\\$"),
            '{' | '}' => {}
            c => out.push(c),
        }
    }
    out
}

/// One BibTeX `@article` entry.
pub fn bibtex_entry(r: &Reference) -> String {
    let mut s = format!("@article{{{},\n", r.key);
    s.push_str(&format!("  author = {{{}}},\n", escape(r.authors)));
    s.push_str(&format!("  title = {{{{{}}}}},\n", escape(r.title)));
    s.push_str(&format!("  journal = {{{}}},\n", escape(r.journal)));
    s.push_str(&format!("  year = {{{}}},\n", r.year));
    if !r.volume.is_empty() {
        s.push_str(&format!("  volume = {{{}}},\n", escape(r.volume)));
    }
    if !r.pages.is_empty() {
        s.push_str(&format!("  pages = {{{}}},\n", escape(r.pages)));
    }
    if !r.doi.is_empty() {
        s.push_str(&format!("  doi = {{{}}},\n", r.doi));
    }
    s.push_str("}\n");
    s
}

/// The BibTeX file of every reference the methods cite, in order of first citation.
pub fn bibtex(methods: &[MethodEntry]) -> String {
    cited_keys(methods)
        .into_iter()
        .filter_map(reference)
        .map(bibtex_entry)
        .collect::<Vec<_>>()
        .join("\n")
}

fn citation_list(keys: &[&'static str]) -> String {
    keys.iter()
        .filter_map(|k| reference(k))
        .map(|r| r.citation)
        .collect::<Vec<_>>()
        .join("; ")
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

/// A plain-text methods paragraph for exactly this configuration: each method
/// with its parameter values and citations, the grid, and the model's stated
/// simplifications (independent pure ices, 1+1D radiation, equilibrium at one moment).
pub fn methods_paragraph(
    parameters: &ModelParameters,
    methods: &[MethodEntry],
    provenance: &Provenance,
) -> String {
    let g = &parameters.grid;
    let mut text = format!(
        "We computed the disk with {}, disk file hash {}, on {} logarithmically spaced radial cells from {} to {} au and {} vertical cells per column up to {} midplane scale heights.",
        provenance.program,
        provenance.disk_hash,
        g.radial_cells,
        parameters.disk.inner_radius_au,
        parameters.disk.outer_radius_au,
        g.vertical_cells,
        g.max_height_scale_heights
    );
    text.push_str(&format!(
        " The star has M = {} Msun, L = {} Lsun and Teff = {} K.",
        parameters.star.mass_msun,
        parameters.star.luminosity_lsun,
        parameters.star.effective_temperature_k
    ));
    for m in methods {
        text.push_str(&format!(
            " {}: {} ({}).",
            capitalised(m.topic),
            m.text,
            citation_list(&m.references)
        ));
    }
    text.push_str(
        " Simplifications: the volatiles are treated as independent pure ices (no entrapment or mixed-ice binding); radiation is treated in 1+1D, in vertical columns with starlight entering at the grazing angle; gas and dust share one temperature; and the disk is in freeze-out/desorption equilibrium at one moment, with no radial drift, vapour transport, evolution or gas-phase chemistry.",
    );
    text.push('\n');
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::methods::methods;

    #[test]
    fn bibtex_has_one_entry_per_cited_key() {
        let p = ModelParameters::defaults();
        let m = methods(&p);
        let bib = bibtex(&m);
        assert_eq!(bib.matches("@article{").count(), cited_keys(&m).len());
        assert!(bib.contains("journal = {A\\&A}"), "{bib}");
    }
}
