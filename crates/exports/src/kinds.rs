//! The names of the exports and what each one writes, once for every front
//! end (issue 9 item 4): the page's `exportText(what)` takes these keys, the
//! CLI's `model`, `structure`, `snowlines` and `methods` commands write the
//! same texts through [`table_text`] and [`export_text`], so a file from
//! either is byte-identical for the same disk.

use nivalis_disk_files::{to_json_string, DiskFile};
use nivalis_physics::Model;

use crate::bibtex::{bibtex, methods_paragraph};
use crate::formats::{json_text, Format};
use crate::methods::methods;
use crate::snowlines::snowlines_json;
use crate::{model_table, structure_table, to_csv, to_ecsv, to_json, Provenance, Table};

impl Format {
    /// Every table format, in the order the CLI lists them.
    pub const ALL: [Format; 3] = [Format::Csv, Format::Ecsv, Format::Json];

    /// The format's name: `csv`, `ecsv` or `json` (the CLI's `--format` value).
    pub fn key(self) -> &'static str {
        match self {
            Format::Csv => "csv",
            Format::Ecsv => "ecsv",
            Format::Json => "json",
        }
    }

    /// The format of a name; `None` for any other text.
    pub fn from_key(key: &str) -> Option<Format> {
        Format::ALL.into_iter().find(|f| f.key() == key)
    }
}

/// A table of a disk's result in a format, with the disk's provenance (and, in
/// ECSV and JSON, the methods used), as `nivalis model|structure|elements|map
/// --format F` writes it.
pub fn table_text(table: &Table, format: Format, file: &DiskFile) -> String {
    match format {
        Format::Csv => to_csv(table, &Provenance::of(file)),
        Format::Ecsv => to_ecsv(table, &Provenance::of(file), &methods(&file.parameters)),
        Format::Json => json_text(&to_json(
            table,
            &Provenance::of(file),
            &methods(&file.parameters),
        )),
    }
}

/// What a front end may export of one computed disk; each is byte-identical
/// to a CLI command's output.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExportKind {
    /// `nivalis model DISK --format csv`.
    ProfileCsv,
    /// `nivalis model DISK --format ecsv`.
    ProfileEcsv,
    /// `nivalis model DISK --format json`.
    ProfileJson,
    /// `nivalis structure DISK --format csv`.
    StructureCsv,
    /// `nivalis snowlines DISK`.
    SnowlinesJson,
    /// The resolved disk file, as `nivalis` writes it (the page's Save).
    DiskFile,
    /// `nivalis methods DISK`: the methods paragraph.
    MethodsText,
    /// `nivalis methods DISK --bibtex FILE`: the BibTeX of exactly the cited references.
    Bibtex,
}

impl ExportKind {
    /// Every export, in the page's order.
    pub const ALL: [ExportKind; 8] = [
        ExportKind::ProfileCsv,
        ExportKind::ProfileEcsv,
        ExportKind::ProfileJson,
        ExportKind::StructureCsv,
        ExportKind::SnowlinesJson,
        ExportKind::DiskFile,
        ExportKind::MethodsText,
        ExportKind::Bibtex,
    ];

    /// The export's name, as the page's `exportText(what)` takes it.
    pub fn key(self) -> &'static str {
        match self {
            ExportKind::ProfileCsv => "profile_csv",
            ExportKind::ProfileEcsv => "profile_ecsv",
            ExportKind::ProfileJson => "profile_json",
            ExportKind::StructureCsv => "structure_csv",
            ExportKind::SnowlinesJson => "snowlines_json",
            ExportKind::DiskFile => "disk",
            ExportKind::MethodsText => "methods_text",
            ExportKind::Bibtex => "bibtex",
        }
    }

    /// The export of a name; `None` for any other text.
    pub fn from_key(key: &str) -> Option<ExportKind> {
        ExportKind::ALL.into_iter().find(|k| k.key() == key)
    }
}

/// One export of a disk and its model as text.
pub fn export_text(kind: ExportKind, file: &DiskFile, model: &Model) -> String {
    match kind {
        ExportKind::ProfileCsv => table_text(&model_table(model), Format::Csv, file),
        ExportKind::ProfileEcsv => table_text(&model_table(model), Format::Ecsv, file),
        ExportKind::ProfileJson => table_text(&model_table(model), Format::Json, file),
        ExportKind::StructureCsv => table_text(&structure_table(model), Format::Csv, file),
        ExportKind::SnowlinesJson => json_text(&snowlines_json(model, &Provenance::of(file))),
        ExportKind::DiskFile => to_json_string(file),
        ExportKind::MethodsText => methods_paragraph(
            &file.parameters,
            &methods(&file.parameters),
            &Provenance::of(file),
        ),
        ExportKind::Bibtex => bibtex(&methods(&file.parameters)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_name_reads_back_and_no_other() {
        for k in ExportKind::ALL {
            assert_eq!(ExportKind::from_key(k.key()), Some(k));
        }
        for f in Format::ALL {
            assert_eq!(Format::from_key(f.key()), Some(f));
        }
        for k in crate::planet_tools::PlanetExport::ALL {
            assert_eq!(
                crate::planet_tools::PlanetExport::from_key(k.key()),
                Some(k)
            );
        }
        assert_eq!(ExportKind::from_key("profile_xml"), None);
        assert_eq!(Format::from_key("CSV"), None);
    }

    #[test]
    fn exports_are_the_writers_own_texts() {
        let file = DiskFile::defaults();
        let model = Model::run(&file.parameters).unwrap();
        let prov = Provenance::of(&file);
        let used = methods(&file.parameters);
        assert_eq!(
            export_text(ExportKind::ProfileCsv, &file, &model),
            to_csv(&model_table(&model), &prov)
        );
        assert_eq!(
            export_text(ExportKind::ProfileEcsv, &file, &model),
            to_ecsv(&model_table(&model), &prov, &used)
        );
        assert_eq!(
            export_text(ExportKind::ProfileJson, &file, &model),
            json_text(&to_json(&model_table(&model), &prov, &used))
        );
        assert_eq!(
            export_text(ExportKind::StructureCsv, &file, &model),
            to_csv(&structure_table(&model), &prov)
        );
        assert_eq!(
            export_text(ExportKind::DiskFile, &file, &model),
            to_json_string(&file)
        );
        assert_eq!(
            export_text(ExportKind::Bibtex, &file, &model),
            bibtex(&used)
        );
        assert!(export_text(ExportKind::SnowlinesJson, &file, &model).starts_with('{'));
    }
}
