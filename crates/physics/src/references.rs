//! The bibliography: every published source the model uses, kept once with its
//! full record. Data files and methods text refer to these by `key`.
//!
//! Records were written from the authors' memory of the literature and checked
//! for internal consistency; DOIs are given only where we are confident of them.

/// One bibliographic record.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Reference {
    /// Citation key, also the BibTeX key.
    pub key: &'static str,
    /// Authors in "Last, F. and Last, F." form (BibTeX convention), in UTF-8
    /// (`Öberg`); the BibTeX writer turns accents into LaTeX commands.
    pub authors: &'static str,
    /// Publication year.
    pub year: u16,
    /// Title of the article.
    pub title: &'static str,
    /// Journal (abbreviated as in ADS).
    pub journal: &'static str,
    /// Volume (or empty).
    pub volume: &'static str,
    /// First page or article id.
    pub pages: &'static str,
    /// DOI without the resolver prefix, empty where none or not known.
    pub doi: &'static str,
    /// Short text citation, e.g. "Hasegawa, Herbst & Leung 1992".
    pub citation: &'static str,
}

macro_rules! reference {
    ($key:literal, $authors:literal, $year:literal, $title:literal, $journal:literal, $volume:literal, $pages:literal, $doi:literal, $citation:literal) => {
        Reference {
            key: $key,
            authors: $authors,
            year: $year,
            title: $title,
            journal: $journal,
            volume: $volume,
            pages: $pages,
            doi: $doi,
            citation: $citation,
        }
    };
}

/// All references, sorted by key.
pub const REFERENCES: &[Reference] = &[
    reference!("andrews2005", "Andrews, S. M. and Williams, J. P.", 2005, "Circumstellar Dust Disks in Taurus-Auriga: The Submillimeter Perspective", "ApJ", "631", "1134", "10.1086/432712", "Andrews & Williams 2005"),
    reference!("andrews2009", "Andrews, S. M. and Wilner, D. J. and Hughes, A. M. and Qi, C. and Dullemond, C. P.", 2009, "Protoplanetary Disk Structures in Ophiuchus", "ApJ", "700", "1502", "10.1088/0004-637X/700/2/1502", "Andrews et al. 2009"),
    reference!("asplund2009", "Asplund, M. and Grevesse, N. and Sauval, A. J. and Scott, P.", 2009, "The Chemical Composition of the Sun", "ARA&A", "47", "481", "10.1146/annurev.astro.46.060407.145222", "Asplund et al. 2009"),
    reference!("asplund2021", "Asplund, M. and Amarsi, A. M. and Grevesse, N.", 2021, "The chemical make-up of the Sun: A 2020 vision", "A&A", "653", "A141", "10.1051/0004-6361/202140445", "Asplund, Amarsi & Grevesse 2021"),
    reference!("bell1994", "Bell, K. R. and Lin, D. N. C.", 1994, "Using FU Orionis outbursts to constrain self-regulated protostellar disk models", "ApJ", "427", "987", "10.1086/174206", "Bell & Lin 1994"),
    reference!("bergin2015", "Bergin, E. A. and Blake, G. A. and Ciesla, F. and Hirschmann, M. M. and Li, J.", 2015, "Tracing the ingredients for a habitable earth from interstellar space through planet formation", "PNAS", "112", "8965", "10.1073/pnas.1500954112", "Bergin et al. 2015"),
    reference!("bertin2016", "Bertin, M. and Romanzin, C. and Doronin, M. and others", 2016, "UV Photodesorption of Methanol in Pure and CO-rich Ices: Desorption Rates of the Intact Molecule and of the Photofragments", "ApJL", "817", "L12", "10.3847/2041-8205/817/2/L12", "Bertin et al. 2016"),
    reference!("birnstiel2010", "Birnstiel, T. and Dullemond, C. P. and Brauer, F.", 2010, "Gas- and dust evolution in protoplanetary disks", "A&A", "513", "A79", "10.1051/0004-6361/200913731", "Birnstiel, Dullemond & Brauer 2010"),
    reference!("birnstiel2012", "Birnstiel, T. and Klahr, H. and Ercolano, B.", 2012, "A simple model for the evolution of the dust population in protoplanetary disks", "A&A", "539", "A148", "10.1051/0004-6361/201118136", "Birnstiel, Klahr & Ercolano 2012"),
    reference!("blackman2021", "Blackman, D. and Vigna, S.", 2021, "Scrambled Linear Pseudorandom Number Generators", "ACM Trans. Math. Softw.", "47", "36", "10.1145/3460772", "Blackman & Vigna 2021"),
    reference!("bohlin1978", "Bohlin, R. C. and Savage, B. D. and Drake, J. F.", 1978, "A survey of interstellar H I from L-alpha absorption measurements. II", "ApJ", "224", "132", "10.1086/156357", "Bohlin, Savage & Drake 1978"),
    reference!("bohren1983", "Bohren, C. F. and Huffman, D. R.", 1983, "Absorption and Scattering of Light by Small Particles", "Wiley, New York", "", "", "", "Bohren & Huffman 1983"),
    reference!("booth2017", "Booth, R. A. and Clarke, C. J. and Madhusudhan, N. and Ilee, J. D.", 2017, "Chemical enrichment of giant planets and discs due to pebble drift", "MNRAS", "469", "3994", "10.1093/mnras/stx1103", "Booth et al. 2017"),
    reference!("bosman2018", "Bosman, A. D. and Walsh, C. and van Dishoeck, E. F.", 2018, "CO destruction in protoplanetary disk midplanes: Inside versus outside the CO snow surface", "A&A", "618", "A182", "", "Bosman, Walsh & van Dishoeck 2018"),
    reference!("brown1980", "Brown, G. N. and Ziegler, W. T.", 1980, "Vapor pressure and heats of vaporization and sublimation of liquids and solids of interest in cryogenics below 1-atm pressure", "Adv. Cryog. Eng.", "25", "662", "", "Brown & Ziegler 1980"),
    reference!("brown2007", "Brown, W. A. and Bolina, A. S.", 2007, "Fundamental data on the desorption of pure interstellar ices", "MNRAS", "374", "1006", "10.1111/j.1365-2966.2006.11216.x", "Brown & Bolina 2007"),
    reference!("chiang1997", "Chiang, E. I. and Goldreich, P.", 1997, "Spectral Energy Distributions of T Tauri Stars with Passive Circumstellar Disks", "ApJ", "490", "368", "10.1086/304869", "Chiang & Goldreich 1997"),
    reference!("dartois2003", "Dartois, E. and Dutrey, A. and Guilloteau, S.", 2003, "Structure of the DM Tau Outer Disk: Probing the vertical kinetic temperature gradient", "A&A", "399", "773", "10.1051/0004-6361:20021638", "Dartois, Dutrey & Guilloteau 2003"),
    reference!("dullemond2001", "Dullemond, C. P. and Dominik, C. and Natta, A.", 2001, "Passive Irradiated Circumstellar Disks with an Inner Hole", "ApJ", "560", "957", "10.1086/323057", "Dullemond, Dominik & Natta 2001"),
    reference!("dullemond2018", "Dullemond, C. P. and Birnstiel, T. and Huang, J. and others", 2018, "The Disk Substructures at High Angular Resolution Project (DSHARP). VI. Dust Trapping in Thin-ringed Protoplanetary Disks", "ApJL", "869", "L46", "10.3847/2041-8213/aaf742", "Dullemond et al. 2018"),
    reference!("dunham2014", "Dunham, M. M. and Stutz, A. M. and Allen, L. E. and others", 2014, "The Evolution of Protostars: Insights from Ten Years of Infrared Surveys with Spitzer and Herschel", "Protostars and Planets VI", "", "195", "", "Dunham et al. 2014"),
    reference!("fraser2001", "Fraser, H. J. and Collings, M. P. and McCoustra, M. R. S. and Williams, D. A.", 2001, "Thermal desorption of water ice in the interstellar medium", "MNRAS", "327", "1165", "10.1046/j.1365-8711.2001.04835.x", "Fraser et al. 2001"),
    reference!("fray2009", "Fray, N. and Schmitt, B.", 2009, "Sublimation of ices of astrophysical interest: A bibliographic review", "Planet. Space Sci.", "57", "2053", "10.1016/j.pss.2009.09.011", "Fray & Schmitt 2009"),
    reference!("garrod2006", "Garrod, R. T. and Herbst, E.", 2006, "Formation of methyl formate and other organic species in the warm-up phase of hot molecular cores", "A&A", "457", "927", "10.1051/0004-6361:20065560", "Garrod & Herbst 2006"),
    reference!("gullbring1998", "Gullbring, E. and Hartmann, L. and Briceño, C. and Calvet, N.", 1998, "Disk Accretion Rates for T Tauri Stars", "ApJ", "492", "323", "10.1086/305032", "Gullbring et al. 1998"),
    reference!("habing1968", "Habing, H. J.", 1968, "The interstellar radiation density between 912 A and 2400 A", "BAN", "19", "421", "", "Habing 1968"),
    reference!("hartmann1998", "Hartmann, L. and Calvet, N. and Gullbring, E. and D'Alessio, P.", 1998, "Accretion and the Evolution of T Tauri Disks", "ApJ", "495", "385", "10.1086/305277", "Hartmann et al. 1998"),
    reference!("hasegawa1992", "Hasegawa, T. I. and Herbst, E. and Leung, C. M.", 1992, "Models of Gas-Grain Chemistry in Dense Interstellar Clouds with Complex Organic Molecules", "ApJS", "82", "167", "10.1086/191713", "Hasegawa, Herbst & Leung 1992"),
    reference!("hasegawa1993", "Hasegawa, T. I. and Herbst, E.", 1993, "New gas-grain chemical models of quiescent dense interstellar clouds: the effects of H2 tunnelling reactions and cosmic ray induced desorption", "MNRAS", "261", "83", "10.1093/mnras/261.1.83", "Hasegawa & Herbst 1993"),
    reference!("hayashi1961", "Hayashi, C.", 1961, "Stellar evolution in early phases of gravitational contraction", "PASJ", "13", "450", "", "Hayashi 1961"),
    reference!("huang2018", "Huang, J. and Andrews, S. M. and Dullemond, C. P. and others", 2018, "The Disk Substructures at High Angular Resolution Project (DSHARP). II. Characteristics of Annular Substructures", "ApJL", "869", "L42", "10.3847/2041-8213/aaf740", "Huang et al. 2018"),
    reference!("hyndman1996", "Hyndman, R. J. and Fan, Y.", 1996, "Sample Quantiles in Statistical Packages", "Am. Stat.", "50", "361", "10.1080/00031305.1996.10473566", "Hyndman & Fan 1996"),
    reference!("kauffmann2008", "Kauffmann, J. and Bertoldi, F. and Bourke, T. L. and Evans, N. J. and Lee, C. W.", 2008, "MAMBO mapping of Spitzer c2d small clouds and cores", "A&A", "487", "993", "10.1051/0004-6361:200809481", "Kauffmann et al. 2008"),
    reference!("krijt2020", "Krijt, S. and Bosman, A. D. and Zhang, K. and others", 2020, "CO Depletion in Protoplanetary Disks: A Unified Picture Combining Physical Sequestration and Chemical Processing", "ApJ", "899", "134", "", "Krijt et al. 2020"),
    reference!("li2021", "Li, J. and Bergin, E. A. and Blake, G. A. and Ciesla, F. J. and Hirschmann, M. M.", 2021, "Earth's carbon deficit caused by early loss through irreversible sublimation", "Sci. Adv.", "7", "eabd3632", "10.1126/sciadv.abd3632", "Li et al. 2021"),
    reference!("ligterink2023", "Ligterink, N. F. W. and Minissale, M.", 2023, "An overview of desorption parameters of Volatile and Complex Organic Molecules: A systematic dig on experimental literature", "A&A", "", "", "", "Ligterink & Minissale 2023"),
    reference!("lodders2003", "Lodders, K.", 2003, "Solar System Abundances and Condensation Temperatures of the Elements", "ApJ", "591", "1220", "10.1086/375492", "Lodders 2003"),
    reference!("lynden-bell1974", "Lynden-Bell, D. and Pringle, J. E.", 1974, "The evolution of viscous discs and the origin of the nebular variables", "MNRAS", "168", "603", "10.1093/mnras/168.3.603", "Lynden-Bell & Pringle 1974"),
    reference!("lyndenbell1974", "Lynden-Bell, D. and Pringle, J. E.", 1974, "The evolution of viscous discs and the origin of the nebular variables", "MNRAS", "168", "603", "10.1093/mnras/168.3.603", "Lynden-Bell & Pringle 1974"),
    reference!("marsaglia1964", "Marsaglia, G. and Bray, T. A.", 1964, "A Convenient Method for Generating Normal Variables", "SIAM Rev.", "6", "260", "10.1137/1006063", "Marsaglia & Bray 1964"),
    reference!("marsaglia2000", "Marsaglia, G. and Tsang, W. W.", 2000, "A Simple Method for Generating Gamma Variables", "ACM Trans. Math. Softw.", "26", "363", "10.1145/358407.358414", "Marsaglia & Tsang 2000"),
    reference!("minissale2022", "Minissale, M. and Aikawa, Y. and Bergin, E. and others", 2022, "Thermal Desorption of Interstellar Ices: A Review on the Controlling Parameters and Their Implications from Snowlines to Chemical Complexity", "ACS Earth Space Chem.", "6", "597", "", "Minissale et al. 2022"),
    reference!("murphy2005", "Murphy, D. M. and Koop, T.", 2005, "Review of the vapour pressures of ice and supercooled water for atmospheric applications", "Q. J. R. Meteorol. Soc.", "131", "1539", "10.1256/qj.04.94", "Murphy & Koop 2005"),
    reference!("oberg2005", "Öberg, K. I. and van Broekhuizen, F. and Fraser, H. J. and Bisschop, S. E. and van Dishoeck, E. F. and Schlemmer, S.", 2005, "Competition between CO and N2 Desorption from Interstellar Ices", "ApJL", "621", "L33", "10.1086/428901", "Öberg et al. 2005"),
    reference!("oberg2009co", "Öberg, K. I. and van Dishoeck, E. F. and Linnartz, H.", 2009, "Photodesorption of ices I: CO, N2, and CO2", "A&A", "496", "281", "10.1051/0004-6361/200810207", "Öberg, van Dishoeck & Linnartz 2009"),
    reference!("oberg2009water", "Öberg, K. I. and Linnartz, H. and Visser, R. and van Dishoeck, E. F.", 2009, "Photodesorption of Ices. II. H2O and D2O", "ApJ", "693", "1209", "10.1088/0004-637X/693/2/1209", "Öberg et al. 2009"),
    reference!("oberg2011", "Öberg, K. I. and Murray-Clay, R. and Bergin, E. A.", 2011, "The Effects of Snowlines on C/O in Planetary Atmospheres", "ApJL", "743", "L16", "10.1088/2041-8205/743/1/L16", "Öberg, Murray-Clay & Bergin 2011"),
    reference!("oberg2016", "Öberg, K. I. and Bergin, E. A.", 2016, "Excess C/O and C/H in Outer Protoplanetary Disk Gas", "ApJL", "831", "L19", "10.3847/2041-8205/831/2/L19", "Öberg & Bergin 2016"),
    reference!("penteado2017", "Penteado, E. M. and Walsh, C. and Cuppen, H. M.", 2017, "Sensitivity Analysis of Grain Surface Chemistry to Binding Energies of Ice Species", "ApJ", "844", "71", "10.3847/1538-4357/aa78f9", "Penteado, Walsh & Cuppen 2017"),
    reference!("prasad1983", "Prasad, S. S. and Tarafdar, S. P.", 1983, "UV radiation field inside dense clouds: its possible existence and chemical implications", "ApJ", "267", "603", "10.1086/160896", "Prasad & Tarafdar 1983"),
    reference!("pringle1981", "Pringle, J. E.", 1981, "Accretion discs in astrophysics", "ARA&A", "19", "137", "10.1146/annurev.aa.19.090181.001033", "Pringle 1981"),
    reference!("qi2013", "Qi, C. and Öberg, K. I. and Wilner, D. J. and others", 2013, "Imaging of the CO Snow Line in a Solar Nebula Analog", "Science", "341", "630", "10.1126/science.1239560", "Qi et al. 2013"),
    reference!("qi2015", "Qi, C. and Öberg, K. I. and Andrews, S. M. and others", 2015, "Chemical Imaging of the CO Snow Line in the HD 163296 Disk", "ApJ", "813", "128", "10.1088/0004-637X/813/2/128", "Qi et al. 2015"),
    reference!("saltelli2008", "Saltelli, A. and Ratto, M. and Andres, T. and Campolongo, F. and Cariboni, J. and Gatelli, D. and Saisana, M. and Tarantola, S.", 2008, "Global Sensitivity Analysis: The Primer", "Wiley, Chichester", "", "", "10.1002/9780470725184", "Saltelli et al. 2008"),
    reference!("sandford1990", "Sandford, S. A. and Allamandola, L. J.", 1990, "The physical and infrared spectral properties of CO2 in astrophysical ice analogs", "Icarus", "87", "188", "", "Sandford & Allamandola 1990"),
    reference!("sandford1993", "Sandford, S. A. and Allamandola, L. J.", 1993, "Condensation and vaporization studies of CH3OH and NH3 ices: major implications for astrochemistry", "ApJ", "417", "815", "10.1086/173361", "Sandford & Allamandola 1993"),
    reference!("schoonenberg2017", "Schoonenberg, D. and Ormel, C. W.", 2017, "Planetesimal formation near the snowline: in or out?", "A&A", "602", "A21", "10.1051/0004-6361/201630013", "Schoonenberg & Ormel 2017"),
    reference!("shakura1973", "Shakura, N. I. and Sunyaev, R. A.", 1973, "Black holes in binary systems. Observational appearance", "A&A", "24", "337", "", "Shakura & Sunyaev 1973"),
    reference!("shen2004", "Shen, C. J. and Greenberg, J. M. and Schutte, W. A. and van Dishoeck, E. F.", 2004, "Cosmic ray induced explosive chemical desorption in dense clouds", "A&A", "415", "203", "10.1051/0004-6361:20031669", "Shen et al. 2004"),
    reference!("sobol1993", "Sobol, I. M.", 1993, "Sensitivity Estimates for Nonlinear Mathematical Models", "Math. Model. Comput. Exp.", "1", "407", "", "Sobol 1993"),
    reference!("steele2014", "Steele, G. L. and Lea, D. and Flood, C. H.", 2014, "Fast Splittable Pseudorandom Number Generators", "ACM SIGPLAN Notices", "49", "453", "10.1145/2714064.2660195", "Steele, Lea & Flood 2014"),
    reference!("takeuchi2002", "Takeuchi, T. and Lin, D. N. C.", 2002, "Radial Flow of Dust Particles in Accretion Disks", "ApJ", "581", "1344", "10.1086/344437", "Takeuchi & Lin 2002"),
    reference!("umebayashi1981", "Umebayashi, T. and Nakano, T.", 1981, "Fluxes of Energetic Particles and the Ionization Rate in Very Dense Interstellar Clouds", "PASJ", "33", "617", "", "Umebayashi & Nakano 1981"),
    reference!("vandehulst1957", "van de Hulst, H. C.", 1957, "Light Scattering by Small Particles", "Wiley, New York", "", "", "", "van de Hulst 1957"),
    reference!("weidenschilling1977", "Weidenschilling, S. J.", 1977, "Aerodynamics of solid bodies in the solar nebula", "MNRAS", "180", "57", "10.1093/mnras/180.1.57", "Weidenschilling 1977"),
    reference!("williams2014", "Williams, J. P. and Best, W. M. J.", 2014, "A Parametric Modeling Approach to Measuring the Gas Masses of Circumstellar Disks", "ApJ", "788", "59", "10.1088/0004-637X/788/1/59", "Williams & Best 2014"),
    reference!("zhang2017", "Zhang, K. and Bergin, E. A. and Blake, G. A. and Cleeves, L. I. and Schwarz, K. R.", 2017, "Mass inventory of the giant-planet formation zone in a solar nebula analogue", "Nat. Astron.", "1", "0130", "10.1038/s41550-017-0130", "Zhang et al. 2017"),
];

/// Sources that are not publications: values taken from memory or common practice.
/// They are named in the data and in the methods text, never cited in BibTeX.
pub const UNPUBLISHED_SOURCES: &[(&str, &str)] = &[
    ("common_practice", "common practice, no single source"),
    (
        "converted_legacy",
        "energy converted from the HHL92-paired pure-ice value to the transition-state frequency at constant vapour pressure at the legacy half-freezing temperature (n_H = 1e12 cm^-3, x = 1e-5); derived, low confidence",
    ),
    ("memory", "approximate value from memory of the literature, no single source"),
    ("memory_ch4", "pure CH4 ice, laboratory TPD value of about 1100 K, from memory (low confidence)"),
];

/// The record with this key, if it is a publication.
pub fn reference(key: &str) -> Option<&'static Reference> {
    REFERENCES.iter().find(|r| r.key == key)
}

/// Whether `key` names a publication or one of the documented unpublished sources.
pub fn is_known_source(key: &str) -> bool {
    reference(key).is_some() || UNPUBLISHED_SOURCES.iter().any(|(k, _)| *k == key)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_are_sorted_and_unique() {
        for pair in REFERENCES.windows(2) {
            assert!(
                pair[0].key < pair[1].key,
                "{} !< {}",
                pair[0].key,
                pair[1].key
            );
        }
    }
}
