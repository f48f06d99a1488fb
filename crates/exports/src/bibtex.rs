//! The methods paragraph and the BibTeX file of exactly the references a
//! configuration used (issue "paper-ready output"). Records come from
//! `nivalis_physics::references`, where each is kept once; the software
//! itself is cited too, with its version ([`software_entry`]).
//!
//! The paragraph is UTF-8 prose (Öberg, ±). The BibTeX is plain ASCII: letters
//! with accents are written as LaTeX accent commands in braces (`{\"O}berg`),
//! which classic BibTeX, every journal's style file and bibtexparser's LaTeX
//! decoding all read (tests/python/check_bibtex.py checks the last).

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

/// The LaTeX accent command, in braces, of a letter outside ASCII
/// (`Ö` -> `{\"O}`), or `None` for a character without one here.
fn latex_letter(ch: char) -> Option<&'static str> {
    Some(match ch {
        'Ä' => "{\\\"A}",
        'Ö' => "{\\\"O}",
        'Ü' => "{\\\"U}",
        'ä' => "{\\\"a}",
        'ö' => "{\\\"o}",
        'ü' => "{\\\"u}",
        'ë' => "{\\\"e}",
        'ï' => "{\\\"i}",
        'é' => "{\\'e}",
        'É' => "{\\'E}",
        'á' => "{\\'a}",
        'í' => "{\\'i}",
        'ó' => "{\\'o}",
        'ú' => "{\\'u}",
        'è' => "{\\`e}",
        'à' => "{\\`a}",
        'ñ' => "{\\~n}",
        'ç' => "{\\c c}",
        'ā' => "{\\=a}",
        'ø' => "{\\o}",
        'Ø' => "{\\O}",
        'å' => "{\\aa}",
        'ß' => "{\\ss}",
        'š' => "{\\v s}",
        'č' => "{\\v c}",
        _ => return None,
    })
}

/// A field value for BibTeX: special characters escaped, then accented
/// letters as LaTeX accent commands (so the file stays ASCII).
fn bibtex_text(text: &str) -> String {
    let escaped = escape(text);
    let mut out = String::with_capacity(escaped.len());
    for ch in escaped.chars() {
        match latex_letter(ch) {
            Some(latex) => out.push_str(latex),
            None => out.push(ch),
        }
    }
    out
}

/// The year of this version of Nivalis, for its citation (update with the
/// version in the workspace Cargo.toml and CITATION.cff).
pub const SOFTWARE_YEAR: u16 = 2026;

/// BibTeX key of the software's own entry.
pub const SOFTWARE_KEY: &str = "nivalis";

/// How the methods paragraph cites the software, e.g. "The Nivalis developers 2026".
pub fn software_citation() -> String {
    format!("The Nivalis developers {SOFTWARE_YEAR}")
}

/// The BibTeX entry of Nivalis itself with its version (as in CITATION.cff).
/// `@misc`, which every BibTeX style knows, with the version in `version`
/// (read by biblatex and the AAS styles) and in `howpublished` (printed by
/// the classic styles).
pub fn software_entry() -> String {
    let version = env!("CARGO_PKG_VERSION");
    format!(
        "@misc{{{SOFTWARE_KEY},\n  author = {{{{The Nivalis developers}}}},\n  title = {{{{Nivalis: an offline explorer of protoplanetary-disk chemistry}}}},\n  year = {{{SOFTWARE_YEAR}}},\n  version = {{{version}}},\n  howpublished = {{Computer software, version {version}}},\n}}\n"
    )
}

/// One BibTeX `@article` entry.
pub fn bibtex_entry(r: &Reference) -> String {
    let mut s = format!("@article{{{},\n", r.key);
    s.push_str(&format!("  author = {{{}}},\n", bibtex_text(r.authors)));
    s.push_str(&format!("  title = {{{{{}}}}},\n", bibtex_text(r.title)));
    s.push_str(&format!("  journal = {{{}}},\n", bibtex_text(r.journal)));
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

/// The BibTeX file of every reference the methods paragraph cites, in order
/// of first citation: the software itself first, then the publications.
pub fn bibtex(methods: &[MethodEntry]) -> String {
    std::iter::once(software_entry())
        .chain(
            cited_keys(methods)
                .into_iter()
                .filter_map(reference)
                .map(bibtex_entry),
        )
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

/// Each method as a sentence with its citations in words, appended to `text`.
pub fn push_methods(text: &mut String, methods: &[MethodEntry]) {
    for m in methods {
        let citations = citation_list(&m.references);
        if citations.is_empty() {
            text.push_str(&format!(" {}.", capitalised(&m.text)));
        } else {
            text.push_str(&format!(" {} ({citations}).", capitalised(&m.text)));
        }
    }
}

/// A plain-text methods paragraph for exactly this configuration: each method
/// with its parameter values and citations, the grid, and the model's stated
/// simplifications (independent pure ices, 1+1D radiation, one moment of a static disk).
pub fn methods_paragraph(
    parameters: &ModelParameters,
    methods: &[MethodEntry],
    provenance: &Provenance,
) -> String {
    let g = &parameters.grid;
    let mut text = format!(
        "We computed the disk with Nivalis version {} ({}) from the disk file whose SHA-256 hash begins {}, on {} logarithmically spaced radial cells from {} to {} au and {} vertical cells per column up to {} midplane scale heights.",
        env!("CARGO_PKG_VERSION"),
        software_citation(),
        provenance.disk_hash,
        g.radial_cells,
        parameters.disk.inner_radius_au,
        parameters.disk.outer_radius_au,
        g.vertical_cells,
        g.max_height_scale_heights
    );
    text.push_str(&format!(
        " The star has a mass of {} M☉, a luminosity of {} L☉ and an effective temperature of {} K.",
        parameters.star.mass_msun, parameters.star.luminosity_lsun, parameters.star.effective_temperature_k
    ));
    push_methods(&mut text, methods);
    text.push_str(
        " The model simplifies in four ways: the volatiles are treated as independent pure ices, with no entrapment and no binding in mixed ices; radiation is treated in 1+1D, in vertical columns with starlight entering at the grazing angle; gas and dust share one temperature; and the disk is static: the ices of each cell follow the freeze-out/desorption rate equation over the disk's age, whose long-time limit is the equilibrium, with no radial drift, vapour transport, structural evolution or gas-phase chemistry.",
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
