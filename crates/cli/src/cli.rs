//! Argument parsing and the commands.

use clap::{Parser, Subcommand, ValueEnum};
use nivalis_disk_files::{parse_disk_json, DiskFile};
use nivalis_exports::formats::json_text;
use nivalis_exports::methods::methods;
use nivalis_exports::snowlines::snowlines_json;
use nivalis_exports::{map_table, model_table, structure_table, to_csv, to_ecsv, to_json, MapQuantity, Provenance, Table};
use nivalis_physics::Model;
use std::io::{Read, Write};
use std::path::PathBuf;
use std::process::ExitCode;

/// Protoplanetary-disk structure, ice lines and C/O ratios from a disk description file.
///
/// DISK is a `nivalis-disk/1` JSON file (see DISK_FILE.md); every field is optional and
/// `{}` is the default disk. Use `-` to read the file from standard input.
/// Units are in the column names: au (astronomical units), K, g/cm2, H nuclei per cm3,
/// yr, s-1; ratios (C/O, ice fractions) are dimensionless.
#[derive(Parser, Debug)]
#[command(name = "nivalis", version, about, long_about = None)]
pub struct Args {
    #[command(subcommand)]
    command: Command,
}

/// Table formats.
#[derive(Copy, Clone, Debug, PartialEq, Eq, ValueEnum)]
enum TableFormat {
    /// Comma-separated values, one header line of column names (units in the names).
    Csv,
    /// Enhanced Character-Separated Values 1.0 (astropy reads it) with units, descriptions, the resolved disk and the methods.
    Ecsv,
    /// JSON with provenance, column descriptions and one array per column.
    Json,
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
    /// An r-z map as long-form rows radius_au, height_au, z_over_r, value (one row per cell).
    Map {
        /// The disk file.
        disk: PathBuf,
        /// The mapped quantity: temperature_k [K], density_h_cm3 [H nuclei cm-3], fuv_flux_habing [G0],
        /// ionization_rate_s [s-1], visual_extinction_mag [mag], ice_fraction:<SPECIES> [0-1],
        /// c_to_o_gas, equilibration_time_yr:<SPECIES> [yr]. SPECIES: H2O CO CO2 CH4 N2 NH3 CH3OH H2S HCN.
        #[arg(long)]
        quantity: String,
        #[command(flatten)]
        output: Output,
    },
    /// Every snowline (midplane f_ice = 0.5 crossing, radius in au, inner first, with its direction)
    /// and the snow surface (height in au and z/r) of each species at each radius, as JSON.
    Snowlines {
        /// The disk file.
        disk: PathBuf,
        /// Write to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
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

/// A failure with its exit code; each line of the message is printed on stderr.
pub struct Failure {
    code: u8,
    lines: Vec<String>,
}

impl Failure {
    fn input(lines: Vec<String>) -> Failure {
        Failure { code: 2, lines }
    }
}

fn read_disk(path: &PathBuf) -> Result<DiskFile, Failure> {
    let label = path.display().to_string();
    let mut text = String::new();
    let read = if label == "-" {
        std::io::stdin().read_to_string(&mut text).map(|_| ())
    } else {
        std::fs::read_to_string(path).map(|t| text = t)
    };
    if let Err(e) = read {
        return Err(Failure::input(vec![format!("{label}: cannot read the disk file: {e}")]));
    }
    parse_disk_json(&text).map_err(|problems| Failure::input(problems.0.iter().map(|p| format!("{label}: {p}")).collect()))
}

fn run_model(file: &DiskFile) -> Result<Model, Failure> {
    Model::run(&file.parameters).map_err(|e| Failure::input(vec![e.to_string()]))
}

fn write_output(out: &Option<PathBuf>, text: &str) -> Result<(), Failure> {
    match out {
        Some(path) => std::fs::write(path, text)
            .map_err(|e| Failure { code: 1, lines: vec![format!("{}: cannot write: {e}", path.display())] }),
        None => {
            let mut stdout = std::io::stdout().lock();
            match stdout.write_all(text.as_bytes()).and_then(|_| stdout.flush()) {
                Ok(()) => Ok(()),
                // A closed pipe (e.g. `| head`) is not an error of ours.
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
                Err(e) => Err(Failure { code: 1, lines: vec![format!("cannot write to standard output: {e}")] }),
            }
        }
    }
}

fn render(table: &Table, format: TableFormat, file: &DiskFile) -> String {
    match format {
        TableFormat::Csv => to_csv(table),
        TableFormat::Ecsv => to_ecsv(table, &Provenance::of(file), &methods(&file.parameters)),
        TableFormat::Json => json_text(&to_json(table, &Provenance::of(file), &methods(&file.parameters))),
    }
}

fn execute(args: Args) -> Result<(), Failure> {
    match args.command {
        Command::Check { disk } => {
            let file = read_disk(&disk)?;
            // Physics-level checks (e.g. a self-consistent flaring solve that cannot converge) need a run.
            run_model(&file)?;
            println!("{}: valid {} file", disk.display(), nivalis_disk_files::SCHEMA);
            Ok(())
        }
        Command::Structure { disk, output } => {
            let file = read_disk(&disk)?;
            let model = run_model(&file)?;
            write_output(&output.out, &render(&structure_table(&model), output.format, &file))
        }
        Command::Model { disk, output } => {
            let file = read_disk(&disk)?;
            let model = run_model(&file)?;
            write_output(&output.out, &render(&model_table(&model), output.format, &file))
        }
        Command::Map { disk, quantity, output } => {
            let q = MapQuantity::parse(&quantity).map_err(|e| Failure::input(vec![e]))?;
            let file = read_disk(&disk)?;
            let model = run_model(&file)?;
            let name = quantity.replace(':', "_");
            write_output(&output.out, &render(&map_table(&model, q, &name), output.format, &file))
        }
        Command::Snowlines { disk, out } => {
            let file = read_disk(&disk)?;
            let model = run_model(&file)?;
            write_output(&out, &json_text(&snowlines_json(&model, &Provenance::of(&file))))
        }
        Command::Methods { disk, bibtex, out } => {
            let file = read_disk(&disk)?;
            run_model(&file)?;
            let used = methods(&file.parameters);
            if let Some(path) = &bibtex {
                write_output(&Some(path.clone()), &nivalis_exports::bibtex::bibtex(&used))?;
            }
            write_output(&out, &nivalis_exports::bibtex::methods_paragraph(&file.parameters, &used, &Provenance::of(&file)))
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
