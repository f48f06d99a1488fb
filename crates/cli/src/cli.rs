//! Argument parsing and the commands.

use clap::{Parser, Subcommand, ValueEnum};
use nivalis_disk_files::{apply_assignments, from_value, parse_json_text, DiskFile, Problems};
use nivalis_exports::formats::json_text;
use nivalis_exports::methods::methods;
use nivalis_exports::{
    export_text, map_table, model_table, structure_table, to_csv, ExportKind, MapQuantity,
    Provenance, Table,
};
use nivalis_physics::params::Element;
use nivalis_physics::Model;
use std::io::{Read, Write};
use std::path::PathBuf;
use std::process::ExitCode;

/// Protoplanetary-disk structure, ice lines and C/O ratios from a disk description file.
///
/// DISK is a `nivalis-disk/1` JSON file (see docs/disk-file.md); every field is optional and
/// `{}` is the default disk. Use `-` to read the file from standard input.
/// Units are in the column names: au (astronomical units), K, g/cm2, H nuclei per cm3,
/// yr, s-1; ratios (C/O, ice fractions) are dimensionless.
#[derive(Parser, Debug)]
#[command(name = "nivalis", version, about, long_about = None)]
pub struct Args {
    #[command(subcommand)]
    command: Command,
    /// Set one field of the disk before it is read, e.g. `--set star.luminosity_lsun=3` (repeatable;
    /// a later one wins). PATH is the field's dotted path (docs/disk-file.md); VALUE is JSON
    /// (a number, true/false, a quoted string, an object) or plain text taken as a string.
    /// The changed disk is validated like the file itself.
    #[arg(long = "set", value_name = "PATH=VALUE", global = true)]
    set: Vec<String>,
}

/// Table formats.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum TableFormat {
    /// Comma-separated values: `#` lines with the version, disk hash and resolved disk, then one header line of column names (units in the names).
    Csv,
    /// Enhanced Character-Separated Values 1.0 (astropy reads it) with units, descriptions, the resolved disk and the methods.
    Ecsv,
    /// JSON with provenance, column descriptions and one array per column.
    Json,
}

/// Figure file formats.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum FigureFormat {
    /// Scalable vector graphics.
    Svg,
    /// Portable network graphics.
    Png,
}

/// Journal widths.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum FigureWidth {
    /// One column, 252 pt.
    Single,
    /// Two columns, 511 pt.
    Double,
}

/// Figure colour themes.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum FigureTheme {
    /// Dark text on white.
    Light,
    /// Light text on dark grey.
    Dark,
}

/// Memory a per-cell map export takes per sample while it is written, besides the model
/// (about 870 bytes per sample measured for `map --format json` at large grids; rounded up).
const MAP_EXPORT_BYTES_PER_SAMPLE: usize = 900;

/// Parse a figure view name such as `ice_map:CO` (the names live in `nivalis_charts::View`).
pub fn parse_view(text: &str) -> Result<nivalis_charts::AnyView, String> {
    nivalis_charts::AnyView::from_key(text).map_err(|e| format!("--view: {e}"))
}

/// The figure of an evolution view (docs/model.md section 12): the disk evolved with its file's
/// `evolution` section (or the defaults), drawn from the JSON of `nivalis evolve` at the snapshot
/// nearest `age_myr` in log age (the last without it), as the page draws it. Returns the figure
/// and the provenance of the resolved file with its evolution section.
fn evolution_figure(
    mut file: DiskFile,
    view: nivalis_charts::EvolutionView,
    age_myr: Option<f64>,
) -> Result<(nivalis_charts::Figure, Provenance), Failure> {
    let e = file
        .evolution
        .clone()
        .unwrap_or_else(nivalis_physics::evolution::EvolutionParameters::defaults);
    let flags = [("evolution.until_myr", "--set evolution.until_myr")];
    e.check().map_err(|err| option_failure(&err, &flags))?;
    // The static models on the run's own structures (the same bits as `static_model_at`).
    let (run, statics) =
        nivalis_physics::evolution::evolve_with_statics(&file.parameters, &e, &mut |_| true)
            .map_err(|err| option_failure(&err, &flags))?
            .expect("never cancelled");
    file.evolution = Some(e.clone());
    let provenance = Provenance::of(&file);
    // Through the JSON text, as the page holds it, so both draw the very same numbers.
    let text = json_text(&nivalis_exports::evolution::evolution_json(
        &run,
        &statics,
        &file.parameters,
        &e,
        &provenance,
    ));
    let v: serde_json::Value =
        serde_json::from_str(&text).map_err(|err| Failure::input(vec![err.to_string()]))?;
    let times = run.times_myr();
    let k = match age_myr {
        None => times.len() - 1,
        Some(t) if t > 0.0 && t.is_finite() => (0..times.len())
            .min_by(|&a, &b| {
                let ln = nivalis_physics::math::ln;
                ln(times[a] / t).abs().total_cmp(&ln(times[b] / t).abs())
            })
            .unwrap_or(0),
        Some(t) => {
            return Err(Failure::input(vec![format!(
                "--age-myr: must be a positive age in Myr, got {t}"
            )]))
        }
    };
    Ok((nivalis_charts::evolution_figure(view, &v, k), provenance))
}

/// Planet output formats.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum PlanetFormat {
    /// JSON with the envelope, each element's origin and provenance.
    Json,
    /// `#` provenance lines, one header line and one row.
    Csv,
}

/// Which table `evolve` writes as CSV or ECSV.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum EvolveTable {
    /// One row per snapshot and radius: surface densities, grain size, temperature, gas and solid
    /// C/O, gas [C/H] and [O/H] with the static model's at the same age, and each species' gas per H.
    Profiles,
    /// One row per snapshot: the star, the accretion rate, the soot-line history and each species'
    /// snowline radius with the inward pebble (ice) and vapour mass fluxes through it.
    Snowlines,
}

/// Averaging of a migration range.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum Weighting {
    /// Weighted by the accreted mass, Sigma_gas 2 pi r dr (solids by their own mass).
    #[value(name = "accreted_mass")]
    AccretedMass,
    /// Uniform in radius.
    Uniform,
    /// Uniform in log radius.
    #[value(name = "log_radius")]
    LogRadius,
}

/// Delta chi-square conventions.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum Convention {
    /// Two mapped parameters: 2.30 and 6.18.
    #[value(name = "mapped_parameters")]
    MappedParameters,
    /// The number of fitted quantities: 1.00 and 4.00 for C/O alone.
    #[value(name = "fitted_quantities")]
    FittedQuantities,
}

/// Reference of the metallicities.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum RelativeTo {
    /// The star: the reference compilation plus the star's offsets.
    Star,
    /// The Sun: the reference compilation alone.
    Sun,
}

/// Anchoring parameters.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum Adjust {
    /// disk.flaring_angle.
    #[value(name = "flaring_angle")]
    FlaringAngle,
    /// disk.midplane_temperature_scale.
    #[value(name = "temperature_scale")]
    TemperatureScale,
}

#[derive(clap::Args, Debug)]
struct Output {
    /// Output format.
    #[arg(long, value_enum, default_value_t = TableFormat::Csv)]
    format: TableFormat,
    /// Write to this file instead of standard output.
    #[arg(long, value_name = "FILE")]
    out: Option<PathBuf>,
}

#[derive(Subcommand, Debug)]
// Parsed once per run, so the size of its largest variant (the fit options) does not matter.
#[allow(clippy::large_enum_variant)]
enum Command {
    /// Validate a disk file and list every problem (field, value, allowed range).
    Check {
        /// The disk file.
        disk: PathBuf,
    },
    /// Radial structure profile: radius_au, surface_density_g_cm2, midplane_temperature_k,
    /// irradiation_temperature_k, accretion_temperature_k, midplane_density_h_cm3, scale_height_au, aspect_ratio.
    Structure {
        /// The disk file.
        disk: PathBuf,
        #[command(flatten)]
        output: Output,
    },
    /// Radial model profile: C/O of gas, ice and solids, gas C/H and O/H relative to the star,
    /// and the midplane ice fraction of each species.
    Model {
        /// The disk file.
        disk: PathBuf,
        #[command(flatten)]
        output: Output,
    },
    /// Midplane abundance per H nucleus of C, O, N, S, Si, Mg and Fe in the gas, the ices,
    /// the refractory solids and all solids, per radius.
    Elements {
        /// The disk file.
        disk: PathBuf,
        #[command(flatten)]
        output: Output,
    },
    /// An r-z map as long-form rows radius_au, height_au, z_over_r, value (one row per cell).
    Map {
        /// The disk file.
        disk: PathBuf,
        /// The mapped quantity: temperature_k [K], density_h_cm3 [H nuclei cm-3], fuv_flux_habing [G0],
        /// ionization_rate_s [s-1], visual_extinction_mag [mag], ice_fraction:<SPECIES> [0-1],
        /// c_to_o_gas, equilibration_time_yr:<SPECIES> [yr], out_of_equilibrium:<SPECIES> [1 where the ice has
        /// not reached equilibrium within the disk's age, else 0], gas_density_cm3:<SPECIES> and
        /// ice_density_cm3:<SPECIES> [molecules cm-3], <PHASE>_abundance:<ELEMENT> [per H nucleus]
        /// with PHASE gas, ice, refractory or solid and ELEMENT C O N S Si Mg Fe.
        /// SPECIES: H2O CO CO2 CH4 N2 NH3 CH3OH H2S HCN.
        #[arg(long)]
        quantity: String,
        #[command(flatten)]
        output: Output,
    },
    /// Every snowline (midplane f_ice = 0.5 crossing, radius in au, inner first, with its direction and
    /// whether it is out of equilibrium at the disk's age) and the snow surface (height in au and z/r) of each species at each radius, as JSON.
    Snowlines {
        /// The disk file.
        disk: PathBuf,
        /// Write to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// The envelope composition of a planet that accreted gas and solids at one radius
    /// (or averaged over a migration range): C/O, [C/H], [O/H], N/H and S/H relative to the star,
    /// and how much of each element came with the solids.
    Planet {
        /// The disk file.
        disk: PathBuf,
        /// Formation radius [au] (the inner end of a migration range with --to-radius-au).
        #[arg(long = "radius-au", value_name = "AU", allow_negative_numbers = true)]
        radius_au: f64,
        /// Outer end of a migration range [au]; gas and solids are averaged over 200 midpoints.
        #[arg(
            long = "to-radius-au",
            value_name = "AU",
            allow_negative_numbers = true
        )]
        to_radius_au: Option<f64>,
        /// Formation age [Myr]: the planet accretes from the evolved disk at this age (docs/model.md
        /// section 12.8; the disk file's evolution section, run to this age) instead of the static disk.
        #[arg(long = "age-myr", value_name = "MYR", allow_negative_numbers = true)]
        age_myr: Option<f64>,
        /// End of a formation window [Myr] with --age-myr as its start: gas and solids are averaged
        /// over the snapshots in the window and the cells in the radius range, by gas mass.
        #[arg(long = "to-age-myr", value_name = "MYR", allow_negative_numbers = true)]
        to_age_myr: Option<f64>,
        /// How the migration range is averaged: by accreted mass (default), uniform in radius or in log radius.
        #[arg(long, value_enum, default_value_t = Weighting::AccretedMass)]
        weighting: Weighting,
        /// Accreted solid mass over accreted gas mass, M_solid / M_gas (>= 0).
        #[arg(
            long = "solid-to-gas",
            value_name = "RATIO",
            allow_negative_numbers = true
        )]
        solid_to_gas: f64,
        /// Fraction of the solids' atoms that enter the envelope, in [0, 1].
        #[arg(
            long,
            value_name = "F",
            default_value_t = 1.0,
            allow_negative_numbers = true
        )]
        mix: f64,
        /// Output format.
        #[arg(long, value_enum, default_value_t = PlanetFormat::Json)]
        format: PlanetFormat,
        /// Also write the planet methods text (the page's planet methods download for this planet).
        #[arg(long, value_name = "FILE")]
        methods: Option<PathBuf>,
        /// Write to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// Which formation places fit an observed envelope: any of C/O, [C/H], [O/H] and [M/H]
    /// (optionally with their covariance): a chi-square map over formation radius x solid-to-gas ratio
    /// (log-spaced), with the goodness of fit, the best fit, the 1- and 2-sigma radius ranges at each
    /// ratio and the degeneracies.
    Fit {
        /// The disk file.
        disk: PathBuf,
        /// Observed envelope C/O (linear number ratio).
        #[arg(long = "c-to-o", value_name = "C/O", allow_negative_numbers = true)]
        c_to_o: Option<f64>,
        /// Its 1-sigma error (> 0).
        #[arg(
            long = "c-to-o-sigma",
            value_name = "SIGMA",
            allow_negative_numbers = true
        )]
        c_to_o_sigma: Option<f64>,
        /// Observed [C/H] [dex], relative to --relative-to.
        #[arg(long = "c-to-h-dex", value_name = "DEX", allow_negative_numbers = true)]
        c_to_h_dex: Option<f64>,
        /// 1-sigma error of [C/H] [dex].
        #[arg(
            long = "c-to-h-sigma",
            value_name = "DEX",
            allow_negative_numbers = true
        )]
        c_to_h_sigma: Option<f64>,
        /// Observed [O/H] [dex], relative to --relative-to.
        #[arg(long = "o-to-h-dex", value_name = "DEX", allow_negative_numbers = true)]
        o_to_h_dex: Option<f64>,
        /// 1-sigma error of [O/H] [dex].
        #[arg(
            long = "o-to-h-sigma",
            value_name = "DEX",
            allow_negative_numbers = true
        )]
        o_to_h_sigma: Option<f64>,
        /// Observed [M/H] [dex] = (C+O+N+S)/H, relative to --relative-to.
        #[arg(long = "m-to-h-dex", value_name = "DEX", allow_negative_numbers = true)]
        m_to_h_dex: Option<f64>,
        /// 1-sigma error of [M/H] [dex].
        #[arg(
            long = "m-to-h-sigma",
            value_name = "DEX",
            allow_negative_numbers = true
        )]
        m_to_h_sigma: Option<f64>,
        /// Covariance matrix of the given quantities in the order C/O, [C/H], [O/H], [M/H]: rows
        /// separated by ';', entries by ',' (e.g. "0.0025,0.001;0.001,0.04"); replaces the sigmas.
        #[arg(long, value_name = "MATRIX", value_parser = nivalis_exports::planet::parse_covariance)]
        covariance: Option<Vec<f64>>,
        /// What [C/H], [O/H] and [M/H] are relative to: the star (its offsets applied) or the Sun.
        #[arg(long = "relative-to", value_enum, default_value_t = RelativeTo::Star)]
        relative_to: RelativeTo,
        /// Fraction of the solids' atoms that enter the envelope, fixed over the map, in [0, 1].
        #[arg(
            long,
            value_name = "F",
            default_value_t = 1.0,
            allow_negative_numbers = true
        )]
        mix: f64,
        /// Number of log-spaced solid-to-gas values (40-1000).
        #[arg(
            long = "ratio-count",
            visible_alias = "ratios",
            value_name = "N",
            default_value_t = 48,
            allow_negative_numbers = true
        )]
        ratio_count: i64,
        /// Smallest solid-to-gas ratio of the grid (> 0).
        #[arg(
            long = "ratio-min",
            value_name = "RATIO",
            default_value_t = 1e-3,
            allow_negative_numbers = true
        )]
        ratio_min: f64,
        /// Largest solid-to-gas ratio of the grid (at most 1000).
        #[arg(
            long = "ratio-max",
            value_name = "RATIO",
            default_value_t = 1.0,
            allow_negative_numbers = true
        )]
        ratio_max: f64,
        /// Flat prior on the formation radius [au]: only places in MIN,MAX are fitted.
        #[arg(long = "radius-prior-au", value_name = "MIN,MAX", value_parser = nivalis_exports::planet::parse_range)]
        radius_prior_au: Option<(f64, f64)>,
        /// Flat prior on the solid-to-gas ratio: only ratios in MIN,MAX are fitted.
        #[arg(long = "solid-to-gas-prior", value_name = "MIN,MAX", value_parser = nivalis_exports::planet::parse_range)]
        solid_to_gas_prior: Option<(f64, f64)>,
        /// Take 20 % of the envelope's oxygen as hidden in the planet's own condensates before
        /// comparing (Burrows & Sharp 1999).
        #[arg(long = "oxygen-correction")]
        oxygen_correction: bool,
        /// Planet mass [M_Jup]: places whose feeding zone holds less gas than the envelope are infeasible.
        #[arg(
            long = "planet-mass-mjup",
            value_name = "MJUP",
            allow_negative_numbers = true
        )]
        planet_mass_mjup: Option<f64>,
        /// Feeding-zone half-width [Hill radii] (default 2 sqrt 3 = 3.46, Lissauer 1993).
        #[arg(long = "feeding-zone-hill-radii", value_name = "N", default_value_t = nivalis_physics::planet::DEFAULT_FEEDING_ZONE_HILL_RADII, allow_negative_numbers = true)]
        feeding_zone_hill_radii: f64,
        /// Delta chi-square thresholds: for the two mapped parameters (2.30, 6.18; default) or
        /// for the number of fitted quantities (1.00, 4.00 with C/O alone).
        #[arg(long, value_enum, default_value_t = Convention::MappedParameters)]
        convention: Convention,
        /// Also draw the map with its 1- and 2-sigma contours and the best fit into this file
        /// (SVG, or PNG when the name ends in .png); with --over-age-myr the radius x age map
        /// (view chi2_age_map). --width, --dpi and --theme as `nivalis figure` takes them.
        #[arg(long, value_name = "FILE")]
        figure: Option<PathBuf>,
        /// Figure width (with --figure): single column (252 pt) or double column (511 pt).
        #[arg(long, value_enum, default_value_t = FigureWidth::Single)]
        width: FigureWidth,
        /// PNG resolution of --figure [dots per inch], 36-1200.
        #[arg(long, default_value_t = 300.0, allow_negative_numbers = true)]
        dpi: f64,
        /// Colours of --figure: light (paper) or dark.
        #[arg(long, value_enum, default_value_t = FigureTheme::Light)]
        theme: FigureTheme,
        /// Also write the planet methods text for this map (the page's planet methods download
        /// when only the map is shown).
        #[arg(long, value_name = "FILE")]
        methods: Option<PathBuf>,
        /// Marginalise the map over the disk file's `uncertainty` section: the posterior of the
        /// formation radius (and radius x solid-to-gas) averaged over --samples disks.
        #[arg(long)]
        uncertainty: bool,
        /// Fit over formation radius x formation age on the evolving disk (the file's
        /// `evolution` section or its defaults): T1,T2[,N] ages in Myr and at least N snapshots
        /// in the window (default 6); the solid-to-gas ratio is profiled (best per cell).
        #[arg(long = "over-age-myr", value_name = "T1,T2[,N]", value_parser = nivalis_exports::evolution_fit::parse_age_window)]
        over_age_myr: Option<(f64, f64, usize)>,
        /// Samples of the marginalised fit (1-100000; with --uncertainty).
        #[arg(long, default_value_t = 1000, allow_negative_numbers = true)]
        samples: i64,
        /// Seed of the marginalised fit (with --uncertainty).
        #[arg(long, default_value_t = 1)]
        seed: u64,
        #[command(flatten)]
        output: Output,
    },
    /// Adjust the flaring angle or a midplane-temperature scale so the model's snowline of a species
    /// lies at an observed radius, and write the anchored disk file.
    Anchor {
        /// The disk file.
        disk: PathBuf,
        /// The species whose snowline was observed: H2O CO CO2 CH4 N2 NH3 CH3OH H2S HCN.
        #[arg(long)]
        species: String,
        /// Observed snowline radius [au].
        #[arg(long = "radius-au", value_name = "AU", allow_negative_numbers = true)]
        radius_au: f64,
        /// Its 1-sigma error [au]; the parameter values at radius +- sigma are reported.
        #[arg(
            long = "sigma-au",
            value_name = "AU",
            default_value_t = 0.0,
            allow_negative_numbers = true
        )]
        sigma_au: f64,
        /// Which parameter to adjust.
        #[arg(long, value_enum, default_value_t = Adjust::FlaringAngle)]
        adjust: Adjust,
        /// Write the anchored disk file here instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// Monte Carlo over the disk file's `uncertainty` section (docs/disk-file.md "Uncertainty"):
    /// percentile bands (2.5, 16, 50, 84, 97.5) of the midplane C/O, C/H and O/H of gas, ice and
    /// solids per radius, each snowline's distribution, and which input moves each most.
    /// JSON holds everything; CSV/ECSV hold the table chosen with --table. The seed is in every file.
    Uncertainty {
        /// The disk file (with an `uncertainty` section).
        disk: PathBuf,
        /// Number of samples (1-100000).
        #[arg(long, default_value_t = 1000, allow_negative_numbers = true)]
        samples: i64,
        /// Seed of the random streams (any unsigned 64-bit integer); the same seed gives the same numbers.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Radius [au] at which the sensitivity of the gas C/O is taken.
        #[arg(
            long = "at-au",
            value_name = "AU",
            default_value_t = 1.0,
            allow_negative_numbers = true
        )]
        at_au: f64,
        /// The table written as CSV or ECSV: bands, snowlines or sensitivity.
        #[arg(long, default_value = "bands")]
        table: String,
        /// Also write the methods text (sampling, seed, N, distributions, references) here.
        #[arg(long, value_name = "FILE")]
        methods: Option<PathBuf>,
        /// Write a figure instead of a table: bands:<QUANTITY> (percentile bands of c_to_o_gas,
        /// c_to_o_ice, c_to_o_solid, c_to_h_*, o_to_h_* with the nominal disk), snowlines:<SPECIES>
        /// (histogram of a snowline's radius), sensitivity (swing of the gas C/O at --at-au per
        /// input), sensitivity:<SPECIES> (swing of that snowline). The seed and sample count are
        /// embedded with the disk. The posterior is `nivalis fit ... --uncertainty --figure FILE`.
        #[arg(long, value_name = "VIEW")]
        figure: Option<String>,
        /// Output format: csv (default), ecsv or json for the tables; with --figure svg (default)
        /// or png.
        #[arg(long, value_name = "FORMAT")]
        format: Option<String>,
        /// With --figure: journal width, single column (252 pt, 3.5 in; default) or double column
        /// (511 pt, 7.1 in); height 0.75 x width.
        #[arg(long, value_enum)]
        width: Option<FigureWidth>,
        /// With --figure: PNG resolution [dots per inch], 36-1200 (default 300).
        #[arg(long, allow_negative_numbers = true)]
        dpi: Option<f64>,
        /// With --figure: colours, light (paper; default) or dark.
        #[arg(long, value_enum)]
        theme: Option<FigureTheme>,
        /// Write to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// A journal-ready figure of one view: SVG (true vectors, text as text) or PNG at a chosen DPI,
    /// one- or two-column width, with the program version, disk hash and resolved disk embedded.
    Figure {
        /// The disk file.
        disk: PathBuf,
        /// The view: c_to_o (C/O of gas, ice and solids vs radius, snowlines marked),
        /// temperature (midplane temperature and surface density), abundances (gas and ice per species),
        /// ice_map:<SPECIES> (r-z ice fraction with the snow surface), c_to_o_map (r-z gas C/O);
        /// of the evolving disk (docs/model.md section 12): snowline_tracks (snowline radius vs
        /// age), evolved_c_to_o (gas C/O vs radius at one age with the static model's),
        /// c_to_o_time_map (gas C/O over radius x age).
        #[arg(long)]
        view: String,
        /// File format.
        #[arg(long, value_enum, default_value_t = FigureFormat::Svg)]
        format: FigureFormat,
        /// Journal width: single column (252 pt, 3.5 in) or double column (511 pt, 7.1 in); height 0.75 x width.
        #[arg(long, value_enum, default_value_t = FigureWidth::Single)]
        width: FigureWidth,
        /// PNG resolution [dots per inch], 36-1200.
        #[arg(long, default_value_t = 300.0, allow_negative_numbers = true)]
        dpi: f64,
        /// Colours: light (paper) or dark.
        #[arg(long, value_enum, default_value_t = FigureTheme::Light)]
        theme: FigureTheme,
        /// For the evolution views: the age [Myr] whose nearest snapshot is drawn (default the
        /// last; the run follows the file's `evolution` section).
        #[arg(long = "age-myr", value_name = "MYR", allow_negative_numbers = true)]
        age_myr: Option<f64>,
        /// Write to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// A parameter sweep (docs/sweep.md): every grid point of SWEEP.json (a base disk and axes of
    /// dotted paths) run into Parquet files under --out, optionally one shard of a job array;
    /// `nivalis sweep merge DIR` verifies the shards' checksums and joins them into DIR/sweep.parquet.
    #[command(args_conflicts_with_subcommands = true)]
    Sweep {
        #[command(subcommand)]
        action: Option<SweepAction>,
        /// The sweep file (`nivalis-sweep/1`, JSON).
        sweep: Option<PathBuf>,
        /// Output folder: manifest.json and shards/ (created if missing).
        #[arg(long, value_name = "DIR")]
        out: Option<PathBuf>,
        /// Run only shard I of N (1 <= I <= N): a contiguous block of the grid points, for one task
        /// of a job array. A shard already complete in DIR is skipped.
        #[arg(long, value_name = "I/N", value_parser = nivalis_sweep::ShardSpec::parse)]
        shard: Option<nivalis_sweep::ShardSpec>,
    },
    /// Evolve the disk in time (docs/model.md section 12): viscous gas, drifting two-population
    /// dust, vapour and ice of every volatile carried and exchanged, the star on its track.
    /// Snapshots log-spaced in age; JSON holds every snapshot (times_myr, radius_au, per-snapshot
    /// profiles, snowlines.<SPECIES> [au], pebble and vapour fluxes [g/s], conservation per
    /// element, the static model at each age, methods); CSV and ECSV write one table (--table).
    /// The disk file's optional `evolution` section sets the parameters (docs/disk-file.md).
    Evolve {
        /// The disk file.
        disk: PathBuf,
        /// End age [Myr], above evolution.start_myr (default 0.01) and at most 20; default the
        /// file's evolution.until_myr (5).
        #[arg(long = "until-myr", value_name = "MYR", allow_negative_numbers = true)]
        until_myr: Option<f64>,
        /// Number of snapshots, log-spaced in age from start to end (2-500); default the file's
        /// evolution.snapshots (20).
        #[arg(long, value_name = "N", allow_negative_numbers = true)]
        snapshots: Option<i64>,
        /// For CSV and ECSV: the radius x time profiles or the snowline tracks.
        #[arg(long, value_enum, default_value_t = EvolveTable::Profiles)]
        table: EvolveTable,
        /// Also write the methods text of this run (with its citations) into this file: the
        /// page's evolution methods download.
        #[arg(long, value_name = "FILE")]
        methods: Option<PathBuf>,
        #[command(flatten)]
        output: Output,
    },
    /// A plain-text methods paragraph for exactly this configuration (methods, parameter values,
    /// binding-energy set, abundance reference, grid, simplifications) with citations, and
    /// optionally a BibTeX file of exactly the references cited.
    Methods {
        /// The disk file.
        disk: PathBuf,
        /// Also write the BibTeX file of the cited references here.
        #[arg(long, value_name = "FILE")]
        bibtex: Option<PathBuf>,
        /// Write the paragraph to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
}

/// What `nivalis sweep` does besides running a sweep.
#[derive(Subcommand, Debug)]
pub(crate) enum SweepAction {
    /// Verify the manifest and every shard's SHA-256, and join the shards into DIR/sweep.parquet.
    Merge {
        /// The sweep's output folder.
        dir: PathBuf,
    },
}

/// A failure with its exit code; each line of the message is printed on stderr.
pub struct Failure {
    pub(crate) code: u8,
    pub(crate) lines: Vec<String>,
}

impl Failure {
    pub(crate) fn input(lines: Vec<String>) -> Failure {
        Failure { code: 2, lines }
    }
}

fn read_disk(path: &PathBuf, sets: &[String]) -> Result<DiskFile, Failure> {
    read_disk_value(path, sets).map(|(file, _)| file)
}

/// The disk file and the JSON value it was read from, after the `--set`
/// assignments (the value keeps its `uncertainty` section).
fn read_disk_value(
    path: &PathBuf,
    sets: &[String],
) -> Result<(DiskFile, serde_json::Value), Failure> {
    use nivalis_disk_files::MAX_DISK_FILE_BYTES;
    let label = path.display().to_string();
    // Read at most the size limit (plus a byte order mark and one byte to detect an oversized file),
    // so a huge input costs no memory or time before it is refused.
    let limit = (MAX_DISK_FILE_BYTES + 4) as u64;
    let mut bytes = Vec::new();
    let read = if label == "-" {
        std::io::stdin()
            .lock()
            .take(limit)
            .read_to_end(&mut bytes)
            .map(|_| ())
    } else {
        std::fs::File::open(path)
            .and_then(|f| f.take(limit).read_to_end(&mut bytes))
            .map(|_| ())
    };
    if let Err(e) = read {
        return Err(Failure::input(vec![format!(
            "{label}: cannot read the disk file: {e}"
        )]));
    }
    if bytes.len() as u64 >= limit {
        return Err(Failure::input(vec![format!(
            "{label}: (file): is larger than {MAX_DISK_FILE_BYTES} bytes (1 MiB), the most a disk file may hold"
        )]));
    }
    let text = match String::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            return Err(Failure::input(vec![format!(
                "{label}: (file): not UTF-8 text (invalid byte at offset {})",
                e.utf8_error().valid_up_to()
            )]))
        }
    };
    let listed = |problems: Problems| {
        Failure::input(problems.0.iter().map(|p| format!("{label}: {p}")).collect())
    };
    let mut value = parse_json_text(&text).map_err(listed)?;
    if !sets.is_empty() {
        // `--set`: change the JSON value, then validate it with the same reader as the file.
        apply_assignments(&mut value, sets).map_err(|problems| {
            Failure::input(
                problems
                    .0
                    .iter()
                    .map(|p| format!("{}: {}", p.path, p.message))
                    .collect(),
            )
        })?;
    }
    let file = from_value(&value).map_err(listed)?;
    Ok((file, value))
}

/// A core error about a command-line option, naming the flag instead of the
/// core's parameter name (`--c-to-o-sigma`, not `c_to_o_sigma`). `flags` maps
/// the core's names ([`nivalis_physics::PhysicsError::path`]) to flags; an
/// error about something else keeps its own text.
fn option_failure(error: &nivalis_physics::PhysicsError, flags: &[(&str, &str)]) -> Failure {
    match error
        .path()
        .and_then(|p| flags.iter().find(|(core, _)| *core == p))
    {
        Some((_, flag)) => Failure::input(vec![format!("{flag}: {}", error.detail())]),
        None => Failure::input(vec![error.to_string()]),
    }
}

fn run_model(file: &DiskFile) -> Result<Model, Failure> {
    Model::run(&file.parameters).map_err(|e| Failure::input(vec![e.to_string()]))
}

/// Draws a figure in `options` and writes it with its provenance (`view` as recorded there).
/// `extra` are further provenance pairs (a Monte Carlo's seed and samples).
fn write_figure(
    out: &Option<PathBuf>,
    figure: &nivalis_charts::Figure,
    options: &nivalis_charts::FigureOptions,
    provenance: &Provenance,
    view: &str,
    extra: &[(&str, String)],
) -> Result<(), Failure> {
    use nivalis_charts::RenderedFigure;
    use nivalis_exports::figures::{embed_png_provenance_with, embed_svg_provenance_with};
    let rendered = options
        .render(figure)
        .map_err(|e| Failure::input(vec![e.to_string()]))?;
    match rendered {
        RenderedFigure::Svg(svg) => write_output(
            out,
            &embed_svg_provenance_with(&svg, provenance, view, extra),
        ),
        RenderedFigure::Png(png) => write_bytes(
            out,
            &embed_png_provenance_with(&png, provenance, view, extra),
        ),
    }
}

/// The figure options of `--format --width --dpi --theme` (`nivalis figure`'s flags, also
/// `nivalis uncertainty --figure`), checked as the page checks them (`nivalis_charts::options`).
fn figure_options(
    format: FigureFormat,
    width: FigureWidth,
    dpi: f64,
    theme: FigureTheme,
) -> Result<nivalis_charts::FigureOptions, Failure> {
    let options = nivalis_charts::FigureOptions {
        format: match format {
            FigureFormat::Svg => nivalis_charts::FigureFormat::Svg,
            FigureFormat::Png => nivalis_charts::FigureFormat::Png,
        },
        double_column: width == FigureWidth::Double,
        dpi,
        dark: theme == FigureTheme::Dark,
    };
    options
        .check()
        .map_err(|e| Failure::input(vec![format!("--{e}")]))?;
    Ok(options)
}

fn write_output(out: &Option<PathBuf>, text: &str) -> Result<(), Failure> {
    write_bytes(out, text.as_bytes())
}

fn write_bytes(out: &Option<PathBuf>, bytes: &[u8]) -> Result<(), Failure> {
    match out {
        Some(path) => write_atomic(path, bytes).map_err(|e| Failure {
            code: 1,
            lines: vec![format!("{}: cannot write: {e}", path.display())],
        }),
        None => {
            let mut stdout = std::io::stdout().lock();
            // Every error counts, a closed pipe included: output that did not arrive is a failure (exit 1).
            stdout
                .write_all(bytes)
                .and_then(|_| stdout.flush())
                .map_err(|e| Failure {
                    code: 1,
                    lines: vec![format!("cannot write to standard output: {e}")],
                })
        }
    }
}

/// Writes `bytes` to `path` atomically: into a temporary file in the same
/// folder, flushed to disk (fsync), then renamed over `path`. A reader sees
/// the old file or the complete new one, never a partial one; on any error
/// the temporary file is removed and `path` is untouched (so
/// `anchor disk.json --out disk.json` cannot destroy its input on a full disk).
fn write_atomic(path: &std::path::Path, bytes: &[u8]) -> std::io::Result<()> {
    let name = path
        .file_name()
        .ok_or_else(|| std::io::Error::new(std::io::ErrorKind::InvalidInput, "not a file name"))?;
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut temp_name = std::ffi::OsString::from(".");
    temp_name.push(name);
    temp_name.push(format!(".{}.tmp", std::process::id()));
    let temp = dir.join(temp_name);
    let result = (|| {
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&temp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        drop(f);
        std::fs::rename(&temp, path)?;
        // Make the rename itself durable where the platform allows opening a folder.
        if let Ok(d) = std::fs::File::open(&dir) {
            let _ = d.sync_all();
        }
        Ok(())
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&temp);
    }
    result
}

fn render(table: &Table, format: TableFormat, file: &DiskFile) -> String {
    nivalis_exports::table_text(table, format.shared(), file)
}

impl TableFormat {
    /// The shared crate's format of the same name (`nivalis_exports::Format`).
    fn shared(self) -> nivalis_exports::Format {
        match self {
            TableFormat::Csv => nivalis_exports::Format::Csv,
            TableFormat::Ecsv => nivalis_exports::Format::Ecsv,
            TableFormat::Json => nivalis_exports::Format::Json,
        }
    }
}

/// `nivalis fit ... --uncertainty`: the posterior marginalised over the disk's uncertain inputs.
#[allow(clippy::too_many_arguments)]
fn fit_marginalised(
    disk: &std::path::Path,
    file: &DiskFile,
    root: &serde_json::Value,
    model: Model,
    (samples, seed): (i64, u64),
    observed: &nivalis_physics::planet::ObservedEnvelope,
    settings: &nivalis_physics::planet::MapSettings,
    output: &Output,
    figure: Option<(&std::path::Path, &nivalis_charts::FigureOptions)>,
) -> Result<(), Failure> {
    use nivalis_exports::uncertainty::{marginal_fit_json, posterior_csv, posterior_ecsv};
    let samples =
        crate::uncertainty::check_samples(samples).map_err(|e| Failure::input(vec![e]))?;
    let label = disk.display().to_string();
    let spec = crate::uncertainty::spec_of(root, file, &label).map_err(Failure::input)?;
    let swings = crate::uncertainty::posterior_median_swings(&model, &spec, observed, settings)
        .map_err(|e| Failure::input(vec![e]))?;
    let (post, failed) =
        crate::uncertainty::posterior(model, &spec, samples, seed, observed, settings)
            .map_err(|e| Failure::input(vec![e]))?;
    if failed > 0 {
        eprintln!(
            "warning: {failed} of {samples} samples failed and are left out of the posterior"
        );
    }
    if post.radius_median_au.is_none() {
        eprintln!("warning: no sample fits anywhere inside the priors; the posterior is empty");
    }
    let prov = Provenance::of(file);
    let text = match output.format {
        TableFormat::Csv => posterior_csv(&post, seed, failed, &prov),
        TableFormat::Ecsv => posterior_ecsv(
            &post,
            seed,
            failed,
            &spec,
            &prov,
            &methods(&file.parameters),
        ),
        TableFormat::Json => {
            let j = marginal_fit_json(&post, seed, failed, &spec, &prov, &swings);
            json_text(&j)
        }
    };
    if let (Some(m), Some((a, b))) = (post.radius_median_au, post.radius_interval_95_au) {
        eprintln!(
            "note: formation radius {} au (median), 95 % credible interval {}-{} au, marginalised over {} samples",
            nivalis_exports::formats::number(m),
            nivalis_exports::formats::number(a),
            nivalis_exports::formats::number(b),
            post.samples
        );
    }
    if let Some((path, options)) = figure {
        // The posterior figure, as the page's uncertainty panel downloads it.
        let fig = nivalis_charts::Figure::Uncertainty(nivalis_charts::posterior_figure(&post));
        write_figure(
            &Some(path.to_path_buf()),
            &fig,
            options,
            &prov,
            "posterior",
            &nivalis_exports::figures::monte_carlo_provenance(seed, samples),
        )?;
    }
    write_output(&output.out, &text)
}

/// `nivalis planet ... --age-myr T [--to-age-myr T2]`: the envelope of a planet accreting from
/// the evolved disk in a formation window (docs/model.md section 12.8).
fn planet_in_window(
    mut file: DiskFile,
    (inner_au, outer_au): (f64, f64),
    (from_myr, to_age_myr): (f64, Option<f64>),
    (solid_to_gas, mix): (f64, f64),
    format: PlanetFormat,
    out: &Option<PathBuf>,
) -> Result<(), Failure> {
    use nivalis_physics::planet::{FormationPlace, Planet, RadialWeighting};
    let mut e = file
        .evolution
        .clone()
        .unwrap_or_else(nivalis_physics::evolution::EvolutionParameters::defaults);
    let to_myr = to_age_myr.unwrap_or(from_myr);
    e.until_myr = to_myr;
    let flags = [
        (
            "evolution.until_myr",
            if to_age_myr.is_some() {
                "--to-age-myr"
            } else {
                "--age-myr"
            },
        ),
        ("from_myr", "--age-myr"),
        ("inner_radius_au", "--radius-au"),
        ("solid_to_gas", "--solid-to-gas"),
        ("solid_mixing_fraction", "--mix"),
    ];
    e.check().map_err(|err| option_failure(&err, &flags))?;
    let run = nivalis_physics::evolution::evolve(&file.parameters, &e)
        .map_err(|err| option_failure(&err, &flags))?;
    let phases = run
        .accreted_phases(inner_au, outer_au, from_myr, to_myr)
        .map_err(|err| option_failure(&err, &flags))?;
    let envelope = phases
        .envelope(1.0, solid_to_gas, mix)
        .map_err(|err| option_failure(&err, &flags))?;
    let result = Planet { phases, envelope };
    file.evolution = Some(e);
    let provenance = Provenance::of(&file);
    let place = if outer_au > inner_au {
        FormationPlace::Migration {
            inner_radius_au: inner_au,
            outer_radius_au: outer_au,
            weighting: RadialWeighting::AccretedMass,
        }
    } else {
        FormationPlace::Radius {
            radius_au: inner_au,
        }
    };
    let text = match format {
        PlanetFormat::Json => {
            let mut v = nivalis_exports::planet::planet_json(&result, &place, &provenance);
            if let Some(m) = v.as_object_mut() {
                m.insert(
                    "formation_window_myr".into(),
                    serde_json::json!([from_myr, to_myr]),
                );
            }
            json_text(&v)
        }
        PlanetFormat::Csv => to_csv(&nivalis_exports::planet::planet_table(&result), &provenance),
    };
    write_output(out, &text)
}

/// The fit's core field names and the flags the user typed for them.
const FIT_FLAGS: [(&str, &str); 15] = [
    ("c_to_o", "--c-to-o"),
    ("c_to_o_sigma", "--c-to-o-sigma"),
    ("c_to_h_dex", "--c-to-h-dex"),
    ("c_to_h_sigma", "--c-to-h-sigma"),
    ("o_to_h_dex", "--o-to-h-dex"),
    ("o_to_h_sigma", "--o-to-h-sigma"),
    ("m_to_h_dex", "--m-to-h-dex"),
    ("m_to_h_sigma", "--m-to-h-sigma"),
    ("covariance", "--covariance"),
    ("ratio_count", "--ratio-count"),
    ("ratio_min", "--ratio-min"),
    ("ratio_max", "--ratio-max"),
    ("solid_mixing_fraction", "--mix"),
    ("planet_mass_mjup", "--planet-mass-mjup"),
    ("feeding_zone_hill_radii", "--feeding-zone-hill-radii"),
];

/// `nivalis fit ... --over-age-myr T1,T2[,N] [--figure FILE]`: the chi-square map over
/// formation radius x formation age on the evolving disk (docs/model.md section 12.9), run by
/// the function the page runs (`nivalis_exports::evolution_fit::run_age_fit`).
fn fit_over_age(
    file: DiskFile,
    window: (f64, f64, usize),
    observed: &nivalis_physics::planet::ObservedEnvelope,
    settings: &nivalis_physics::planet::MapSettings,
    output: &Output,
    figure: Option<(&PathBuf, &nivalis_charts::FigureOptions)>,
) -> Result<(), Failure> {
    use nivalis_exports::evolution_fit::{run_age_fit, AgeFitError, AgeFitRequest};
    let request = AgeFitRequest {
        window,
        observed: observed.clone(),
        settings: *settings,
    };
    let mut flags = vec![
        ("evolution.until_myr", "--over-age-myr"),
        ("from_myr", "--over-age-myr"),
    ];
    flags.extend(FIT_FLAGS);
    let fit = run_age_fit(&file, &request, &mut |_| true).map_err(|e| match e {
        AgeFitError::Window(m) => Failure::input(vec![format!("--over-age-myr: {m}")]),
        AgeFitError::Physics(err) => option_failure(&err, &flags),
        AgeFitError::Cancelled => Failure::input(vec!["cancelled".to_string()]),
    })?;
    let text = fit.text(match output.format {
        TableFormat::Csv => nivalis_exports::Format::Csv,
        TableFormat::Ecsv => nivalis_exports::Format::Ecsv,
        TableFormat::Json => nivalis_exports::Format::Json,
    });
    if let Some(w) = fit.warning() {
        eprintln!("warning: {w}");
    }
    if let Some((path, options)) = figure {
        let fig = nivalis_charts::age_fit::age_fit_figure(&fit.map);
        write_figure(
            &Some(path.clone()),
            &fig,
            options,
            &fit.provenance(),
            nivalis_charts::age_fit::CHI2_AGE_MAP_VIEW,
            &[],
        )?;
    }
    write_output(&output.out, &text)
}

fn execute(args: Args) -> Result<(), Failure> {
    let sets = args.set;
    match args.command {
        Command::Check { disk } => {
            let file = read_disk(&disk, &sets)?;
            // Physics-level checks (e.g. a self-consistent flaring solve that cannot converge) need a run.
            run_model(&file)?;
            for w in &file.warnings {
                eprintln!("{}: warning: {w}", disk.display());
            }
            write_output(
                &None,
                &format!(
                    "{}: valid {} file\n",
                    disk.display(),
                    nivalis_disk_files::SCHEMA
                ),
            )
        }
        Command::Structure { disk, output } => {
            let file = read_disk(&disk, &sets)?;
            let model = run_model(&file)?;
            write_output(
                &output.out,
                &render(&structure_table(&model), output.format, &file),
            )
        }
        Command::Model { disk, output } => {
            let file = read_disk(&disk, &sets)?;
            let model = run_model(&file)?;
            write_output(
                &output.out,
                &render(&model_table(&model), output.format, &file),
            )
        }
        Command::Elements { disk, output } => {
            let file = read_disk(&disk, &sets)?;
            let model = run_model(&file)?;
            write_output(
                &output.out,
                &render(
                    &nivalis_exports::elements_table(&model),
                    output.format,
                    &file,
                ),
            )
        }
        Command::Map {
            disk,
            quantity,
            output,
        } => {
            let q = MapQuantity::parse(&quantity).map_err(|e| Failure::input(vec![e]))?;
            let file = read_disk(&disk, &sets)?;
            // A per-cell export holds its rows as text besides the model: up to about 4x the
            // model's own memory while it is written (measured ~870 B per sample for JSON).
            // The reader bounds the model alone; refuse here what the export would not fit.
            let g = &file.parameters.grid;
            let samples = g.radial_cells * (g.vertical_cells + 1);
            let per_sample =
                nivalis_disk_files::MODEL_BYTES_PER_SAMPLE + MAP_EXPORT_BYTES_PER_SAMPLE;
            if samples.saturating_mul(per_sample) > nivalis_disk_files::MAX_MODEL_BYTES {
                return Err(Failure::input(vec![format!(
                    "grid.radial_cells: a map of {} x {} cells ({samples} samples) needs about {} MiB to export, more than the {} MiB allowed; use a coarser grid (at most {} samples)",
                    g.radial_cells,
                    g.vertical_cells,
                    samples.saturating_mul(per_sample) >> 20,
                    nivalis_disk_files::MAX_MODEL_BYTES >> 20,
                    nivalis_disk_files::MAX_MODEL_BYTES / per_sample
                )]));
            }
            let model = run_model(&file)?;
            let name = quantity.replace(':', "_");
            write_output(
                &output.out,
                &render(&map_table(&model, q, &name), output.format, &file),
            )
        }
        Command::Evolve {
            disk,
            until_myr,
            snapshots,
            table,
            methods: methods_file,
            output,
        } => {
            use nivalis_exports::evolution::{
                evolution_json, evolution_table, snowline_tracks_table,
            };
            use nivalis_exports::evolution_methods::evolution_methods;
            let mut file = read_disk(&disk, &sets)?;
            let mut e = file
                .evolution
                .clone()
                .unwrap_or_else(nivalis_physics::evolution::EvolutionParameters::defaults);
            if let Some(t) = until_myr {
                e.until_myr = t;
            }
            if let Some(n) = snapshots {
                if !(2..=500).contains(&n) {
                    return Err(Failure::input(vec![format!(
                        "--snapshots: must be a whole number in [2, 500], got {n}"
                    )]));
                }
                e.snapshots = n as usize;
            }
            let flags = [("evolution.until_myr", "--until-myr")];
            e.check().map_err(|err| option_failure(&err, &flags))?;
            // The static models on the run's own structures (the same bits as
            // `static_model_at`, tests/evolution.rs).
            let (run, statics) =
                nivalis_physics::evolution::evolve_with_statics(&file.parameters, &e, &mut |_| {
                    true
                })
                .map_err(|err| option_failure(&err, &flags))?
                .expect("never cancelled");
            file.evolution = Some(e.clone());
            let provenance = Provenance::of(&file);
            if let Some(path) = &methods_file {
                let text = nivalis_exports::evolution_methods::evolution_methods_paragraph(
                    &file.parameters,
                    &e,
                    &provenance,
                );
                write_output(&Some(path.clone()), &text)?;
            }
            let t = match table {
                EvolveTable::Profiles => evolution_table(&run, &statics),
                EvolveTable::Snowlines => snowline_tracks_table(&run),
            };
            let text = match output.format {
                TableFormat::Csv => to_csv(&t, &provenance),
                TableFormat::Ecsv => nivalis_exports::formats::to_ecsv_with_meta(
                    &t,
                    &provenance,
                    &evolution_methods(&file.parameters, &e),
                    &[(
                        "conservation",
                        Element::ALL
                            .iter()
                            .map(|el| {
                                format!(
                                    "{} {:e}",
                                    el.symbol(),
                                    run.conservation_relative_error[*el as usize]
                                )
                            })
                            .collect::<Vec<_>>()
                            .join(", "),
                    )],
                ),
                TableFormat::Json => json_text(&evolution_json(
                    &run,
                    &statics,
                    &file.parameters,
                    &e,
                    &provenance,
                )),
            };
            write_output(&output.out, &text)
        }
        Command::Snowlines { disk, out } => {
            let file = read_disk(&disk, &sets)?;
            let model = run_model(&file)?;
            write_output(&out, &export_text(ExportKind::SnowlinesJson, &file, &model))
        }
        Command::Planet {
            disk,
            radius_au,
            to_radius_au,
            age_myr,
            to_age_myr,
            weighting,
            solid_to_gas,
            mix,
            format,
            methods: methods_file,
            out,
        } => {
            use nivalis_exports::planet::PlanetOptions;
            use nivalis_physics::planet::{planet, RadialWeighting};
            let file = read_disk(&disk, &sets)?;
            if let Some(from) = age_myr {
                return planet_in_window(
                    file,
                    (radius_au, to_radius_au.unwrap_or(radius_au)),
                    (from, to_age_myr),
                    (solid_to_gas, mix),
                    format,
                    &out,
                );
            }
            if to_age_myr.is_some() {
                return Err(Failure::input(vec![
                    "--to-age-myr: needs --age-myr, the start of the formation window".to_string(),
                ]));
            }
            let model = run_model(&file)?;
            let weighting = match weighting {
                Weighting::AccretedMass => RadialWeighting::AccretedMass,
                Weighting::Uniform => RadialWeighting::Uniform,
                Weighting::LogRadius => RadialWeighting::LogRadius,
            };
            // The same request the page builds (PlanetOptions, shared).
            let request = PlanetOptions {
                radius_au,
                to_radius_au,
                weighting,
                solid_to_gas,
                mix,
            }
            .request();
            let place = request.place;
            let flags = [
                ("radius_au", "--radius-au"),
                ("inner_radius_au", "--radius-au"),
                ("outer_radius_au", "--to-radius-au"),
                ("solid_to_gas", "--solid-to-gas"),
                ("solid_mixing_fraction", "--mix"),
            ];
            let result = planet(&model, &request).map_err(|e| option_failure(&e, &flags))?;
            if let Some(path) = &methods_file {
                let text = nivalis_exports::planet_tools::planet_methods_text(
                    &file,
                    Some((&place, &result)),
                    None,
                );
                write_output(&Some(path.clone()), &text)?;
            }
            let text = match format {
                PlanetFormat::Json => json_text(&nivalis_exports::planet::planet_json(
                    &result,
                    &place,
                    &Provenance::of(&file),
                )),
                PlanetFormat::Csv => to_csv(
                    &nivalis_exports::planet::planet_table(&result),
                    &Provenance::of(&file),
                ),
            };
            write_output(&out, &text)
        }
        Command::Fit {
            disk,
            c_to_o,
            c_to_o_sigma,
            c_to_h_dex,
            c_to_h_sigma,
            o_to_h_dex,
            o_to_h_sigma,
            m_to_h_dex,
            m_to_h_sigma,
            covariance,
            relative_to,
            mix,
            ratio_count,
            ratio_min,
            ratio_max,
            radius_prior_au,
            solid_to_gas_prior,
            oxygen_correction,
            planet_mass_mjup,
            feeding_zone_hill_radii,
            convention,
            figure,
            width,
            dpi,
            theme,
            methods: methods_file,
            uncertainty,
            over_age_myr,
            samples,
            seed,
            output,
        } => {
            use nivalis_exports::planet::FitOptions;
            use nivalis_physics::planet::{
                chi_square_map, ConfidenceConvention, MetallicityReference,
            };
            let options = FitOptions {
                c_to_o,
                c_to_o_sigma,
                c_to_h_dex,
                c_to_h_sigma,
                o_to_h_dex,
                o_to_h_sigma,
                m_to_h_dex,
                m_to_h_sigma,
                covariance,
                relative_to: match relative_to {
                    RelativeTo::Star => MetallicityReference::Star,
                    RelativeTo::Sun => MetallicityReference::Sun,
                },
                mix,
                ratio_min,
                ratio_max,
                ratio_count: usize::try_from(ratio_count).map_err(|_| {
                    Failure::input(vec![format!(
                        "--ratio-count: must be in [{}, {}], got {ratio_count}",
                        nivalis_physics::planet::MIN_MAP_RATIO_COUNT,
                        nivalis_physics::planet::MAX_MAP_RATIO_COUNT
                    )])
                })?,
                radius_prior_au,
                solid_to_gas_prior,
                oxygen_correction,
                planet_mass_mjup,
                feeding_zone_hill_radii,
                convention: match convention {
                    Convention::MappedParameters => ConfidenceConvention::MappedParameters,
                    Convention::FittedQuantities => ConfidenceConvention::FittedQuantities,
                },
            };
            let (observed, settings) = options.build().map_err(|ps| {
                Failure::input(
                    ps.iter()
                        .map(|p| format!("--{}: {}", p.option.replace('_', "-"), p.message))
                        .collect(),
                )
            })?;
            // The figure's options, read as `nivalis figure` reads them (nivalis_charts::options);
            // the format follows the file name (.png, else SVG).
            let figure_options = nivalis_charts::FigureOptions {
                format: if figure
                    .as_ref()
                    .is_some_and(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("png")))
                {
                    nivalis_charts::FigureFormat::Png
                } else {
                    nivalis_charts::FigureFormat::Svg
                },
                double_column: width == FigureWidth::Double,
                dpi,
                dark: theme == FigureTheme::Dark,
            };
            figure_options
                .check()
                .map_err(|e| Failure::input(vec![format!("--{e}")]))?;
            let (file, root) = read_disk_value(&disk, &sets)?;
            if let Some(window) = over_age_myr {
                if uncertainty || methods_file.is_some() {
                    return Err(Failure::input(vec![
                        "--over-age-myr: not combined with --uncertainty or --methods".to_string(),
                    ]));
                }
                return fit_over_age(
                    file,
                    window,
                    &observed,
                    &settings,
                    &output,
                    figure.as_ref().map(|p| (p, &figure_options)),
                );
            }
            let model = run_model(&file)?;
            if uncertainty {
                return fit_marginalised(
                    &disk,
                    &file,
                    &root,
                    model,
                    (samples, seed),
                    &observed,
                    &settings,
                    &output,
                    figure.as_deref().map(|p| (p, &figure_options)),
                );
            }
            // Errors of the core name its fields; the user typed flags.
            let flags = FIT_FLAGS;
            let map = chi_square_map(&model, &observed, &settings)
                .map_err(|e| option_failure(&e, &flags))?;
            let prov = Provenance::of(&file);
            let used = methods(&file.parameters);
            let text = match output.format {
                TableFormat::Csv => to_csv(&nivalis_exports::planet::fit_table(&map), &prov),
                TableFormat::Ecsv => nivalis_exports::planet::fit_ecsv(&map, &prov, &used),
                TableFormat::Json => {
                    json_text(&nivalis_exports::planet::fit_json(&map, &prov, &used))
                }
            };
            if let Some(path) = &methods_file {
                let union = nivalis_exports::planet_tools::allowed_union(&map);
                let text = nivalis_exports::planet_tools::planet_methods_text(
                    &file,
                    None,
                    Some((&map, &union)),
                );
                write_output(&Some(path.clone()), &text)?;
            }
            for line in nivalis_exports::planet::fit_warnings(&map) {
                eprintln!("warning: {line}");
            }
            if map.goodness.acceptable {
                for line in map.degeneracy_summary() {
                    eprintln!("note: {line}");
                }
            }
            if let Some(path) = &figure {
                use nivalis_charts::{Chi2Data, Figure};
                let fig = Figure::Chi2(Chi2Data::from_map(&map));
                write_figure(
                    &Some(path.clone()),
                    &fig,
                    &figure_options,
                    &prov,
                    "chi2_map",
                    &[],
                )?;
            }
            write_output(&output.out, &text)
        }
        Command::Anchor {
            disk,
            species,
            radius_au,
            sigma_au,
            adjust,
            out,
        } => {
            use nivalis_physics::anchor::{anchor_to_snowline, AnchorParameter, AnchorRequest};
            let sp = nivalis_physics::Species::from_key(&species).ok_or_else(|| {
                Failure::input(vec![format!(
                    "--species: unknown species {species:?}; expected one of {}",
                    nivalis_physics::Species::ALL.map(|s| s.key()).join(", ")
                )])
            })?;
            let file = read_disk(&disk, &sets)?;
            let parameter = match adjust {
                Adjust::FlaringAngle => AnchorParameter::FlaringAngle,
                Adjust::TemperatureScale => AnchorParameter::MidplaneTemperatureScale,
            };
            let anchored = anchor_to_snowline(
                &file.parameters,
                &AnchorRequest::new(sp, radius_au, sigma_au, parameter),
            )
            .map_err(|e| {
                option_failure(
                    &e,
                    &[
                        ("observed_radius_au", "--radius-au"),
                        ("sigma_au", "--sigma-au"),
                        ("species", "--species"),
                    ],
                )
            })?;
            let summary = nivalis_exports::planet::anchor_summary(&anchored);
            for line in &summary {
                eprintln!("{line}");
            }
            let mut anchored_file = file.clone();
            anchored_file.parameters = anchored.parameters.clone();
            let note = format!(
                "[{}] {}.",
                nivalis_exports::provenance::program_version(),
                summary[0]
            );
            anchored_file.notes = if file.notes.is_empty() {
                note
            } else {
                format!("{} {note}", file.notes)
            };
            // The original uncertainty section is kept; --sigma-au adds the anchored parameter's range.
            if sigma_au > 0.0
                && !nivalis_disk_files::uncertainty::add_anchor_entry(
                    &mut anchored_file,
                    anchored.parameter.name(),
                    anchored.at_minus_sigma.value,
                    anchored.at_plus_sigma.value,
                )
            {
                eprintln!(
                    "warning: the range at radius +- sigma has no value at one end, so it is not written into the uncertainty section"
                );
            }
            let written = nivalis_disk_files::to_value(&anchored_file);
            write_output(&out, &json_text(&written))
        }
        Command::Uncertainty {
            disk,
            samples,
            seed,
            at_au,
            table,
            methods: methods_out,
            figure,
            format,
            width,
            dpi,
            theme,
            out,
        } => {
            use nivalis_charts::UncertaintyView;
            use nivalis_exports::uncertainty::{self as ux, UncertaintyResult, UncertaintyTable};
            let samples =
                crate::uncertainty::check_samples(samples).map_err(|e| Failure::input(vec![e]))?;
            // A figure (with its options) or a table format, checked before any sample runs.
            let drawing = match &figure {
                Some(view) => {
                    let v = UncertaintyView::from_key(view)
                        .map_err(|e| Failure::input(vec![format!("--figure: {e}")]))?;
                    if v == UncertaintyView::Posterior {
                        return Err(Failure::input(vec![
                            "--figure: posterior is drawn by `nivalis fit DISK ... --uncertainty --figure FILE`".to_string(),
                        ]));
                    }
                    let f = match format.as_deref() {
                        None | Some("svg") => FigureFormat::Svg,
                        Some("png") => FigureFormat::Png,
                        Some(other) => {
                            return Err(Failure::input(vec![format!(
                                "--format: must be svg or png with --figure, got {other:?}"
                            )]))
                        }
                    };
                    let options = figure_options(
                        f,
                        width.unwrap_or(FigureWidth::Single),
                        dpi.unwrap_or(nivalis_charts::options::DEFAULT_DPI),
                        theme.unwrap_or(FigureTheme::Light),
                    )?;
                    Some((v, options))
                }
                None => {
                    if width.is_some() || dpi.is_some() || theme.is_some() {
                        return Err(Failure::input(vec![
                            "--width, --dpi, --theme: only with --figure".to_string(),
                        ]));
                    }
                    None
                }
            };
            let table_format = match (&drawing, format.as_deref()) {
                (Some(_), _) | (None, None | Some("csv")) => TableFormat::Csv,
                (None, Some("ecsv")) => TableFormat::Ecsv,
                (None, Some("json")) => TableFormat::Json,
                (None, Some(other)) => {
                    return Err(Failure::input(vec![format!(
                    "--format: must be csv, ecsv or json (svg or png with --figure), got {other:?}"
                )]))
                }
            };
            let which = UncertaintyTable::from_key(&table).ok_or_else(|| {
                Failure::input(vec![format!(
                    "--table: must be one of bands, snowlines, sensitivity, got {table:?}"
                )])
            })?;
            let (file, root) = read_disk_value(&disk, &sets)?;
            let label = disk.display().to_string();
            let spec = crate::uncertainty::spec_of(&root, &file, &label).map_err(Failure::input)?;
            let model = run_model(&file)?;
            ux::check_sensitivity_radius(&file.parameters, at_au)
                .map_err(|e| Failure::input(vec![format!("--at-au: {e}")]))?;
            let run = crate::uncertainty::run(model, &spec, samples, seed, at_au);
            let mc = &run.monte_carlo;
            if mc.succeeded == 0 {
                return Err(Failure::input(
                    std::iter::once(format!("{label}: no sample ran; the first failures:"))
                        .chain(
                            mc.failures
                                .iter()
                                .take(5)
                                .map(|(i, m)| format!("sample {i}: {m}")),
                        )
                        .collect(),
                ));
            }
            if mc.succeeded < mc.samples {
                eprintln!(
                    "warning: {} of {} samples failed and are left out of the bands; the first: sample {}: {}",
                    mc.samples - mc.succeeded,
                    mc.samples,
                    mc.failures[0].0,
                    mc.failures[0].1
                );
            }
            let prov = Provenance::of(&file);
            let used = methods(&file.parameters);
            let result = UncertaintyResult {
                monte_carlo: mc,
                spec: &spec,
                sensitivity: Some(&run.sensitivity),
                sensitivity_radius_au: at_au,
                provenance: &prov,
                methods: &used,
            };
            if let Some(path) = &methods_out {
                write_output(&Some(path.clone()), &ux::methods_file(&spec, mc))?;
            }
            if let (Some((v, options)), Some(view)) = (drawing, &figure) {
                let source = nivalis_charts::UncertaintySource {
                    monte_carlo: mc,
                    nominal: run.nominal.as_ref(),
                    sensitivity: Some(&run.sensitivity),
                    sensitivity_radius_au: at_au,
                };
                let fig = nivalis_charts::uncertainty_figure(v, &source)
                    .map_err(|e| Failure::input(vec![format!("--figure: {e}")]))?;
                return write_figure(
                    &out,
                    &nivalis_charts::Figure::Uncertainty(fig),
                    &options,
                    &prov,
                    view,
                    &nivalis_exports::figures::monte_carlo_provenance(seed, mc.samples),
                );
            }
            let text = ux::uncertainty_text(&result, table_format.shared(), which);
            write_output(&out, &text)
        }
        Command::Figure {
            disk,
            view,
            format,
            width,
            dpi,
            theme,
            age_myr,
            out,
        } => {
            use nivalis_charts::{AnyView, Figure};
            // The page's figure downloads read the same options (nivalis_charts::options).
            let options = figure_options(format, width, dpi, theme)?;
            let v = parse_view(&view).map_err(|e| Failure::input(vec![e]))?;
            let file = read_disk(&disk, &sets)?;
            let (figure, prov) = match v {
                AnyView::Model(v) => {
                    if age_myr.is_some() {
                        return Err(Failure::input(vec![
                            "--age-myr: only for the evolution views".to_string(),
                        ]));
                    }
                    let model = run_model(&file)?;
                    (Figure::from_model(v, &model), Provenance::of(&file))
                }
                AnyView::Evolution(v) => evolution_figure(file, v, age_myr)?,
            };
            write_figure(&out, &figure, &options, &prov, &view, &[])
        }
        Command::Sweep {
            action,
            sweep,
            out,
            shard,
        } => crate::sweep_cmd::execute(action, sweep, out, shard, &sets),
        Command::Methods { disk, bibtex, out } => {
            let file = read_disk(&disk, &sets)?;
            let model = run_model(&file)?;
            if let Some(path) = &bibtex {
                write_output(
                    &Some(path.clone()),
                    &export_text(ExportKind::Bibtex, &file, &model),
                )?;
            }
            write_output(&out, &export_text(ExportKind::MethodsText, &file, &model))
        }
    }
}

/// Parse the arguments, run the command and turn failures into exit codes.
pub fn run() -> ExitCode {
    let args = Args::parse();
    match execute(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            for line in f.lines {
                eprintln!("error: {line}");
            }
            ExitCode::from(f.code)
        }
    }
}
