//! Writers of a [`Table`] as CSV, ECSV (Enhanced Character-Separated Values,
//! the open format astropy reads, version 1.0) and JSON. Numbers are written
//! with 7 significant digits in Rust's exponent form (`1.581234e0`); undefined
//! cells are empty in CSV/ECSV (ECSV's missing value) and null in JSON.

use crate::methods::MethodEntry;
use crate::provenance::Provenance;
use crate::tables::Table;
use serde_json::{json, Map, Value};

/// Output format of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Comma-separated values: `#` provenance lines, one header line of column names, the rows.
    Csv,
    /// ECSV 1.0 with units, descriptions and provenance in the header.
    Ecsv,
    /// JSON with provenance, column specs and column arrays.
    Json,
}

/// A number as written in CSV and ECSV.
pub fn number(x: f64) -> String {
    format!("{x:.6e}")
}

fn data_lines(table: &Table, out: &mut String) {
    let names: Vec<&str> = table.columns.iter().map(|c| c.name.as_str()).collect();
    out.push_str(&names.join(","));
    out.push('\n');
    for row in &table.rows {
        for (i, cell) in row.iter().enumerate() {
            if i > 0 {
                out.push(',');
            }
            if let Some(x) = cell {
                out.push_str(&number(*x));
            }
        }
        out.push('\n');
    }
}

/// The `#` comment lines that open every CSV file: the program version, the
/// disk hash and where to get the resolved disk file (issue 11 item 6).
/// Readers that skip `#` lines (astropy's `comment="#"`, pandas'
/// `comment="#"`, Python's csv after filtering) read the table unchanged.
pub fn csv_provenance_lines(provenance: &Provenance) -> String {
    format!(
        "# {}\n# disk hash {}: the first 12 hex digits of the SHA-256 of the resolved disk file\n# resolved disk file: the \"disk\" field of `nivalis model DISK --format json`, or the page's disk-file download (its sha256sum begins with the hash)\n",
        provenance.program, provenance.disk_hash
    )
}

/// CSV: the provenance as `#` comment lines ([`csv_provenance_lines`]), a
/// header line of column names (units are in the names) and the rows.
pub fn to_csv(table: &Table, provenance: &Provenance) -> String {
    let mut out = csv_provenance_lines(provenance);
    data_lines(table, &mut out);
    out
}

/// Whether a character may stand unescaped in a YAML scalar of the ECSV
/// header: YAML 1.1 section 5.1 "printable" characters (which ECSV's readers
/// use), minus the characters YAML treats as line breaks (U+0085, U+2028,
/// U+2029, section 5.4) and the byte order mark U+FEFF.
fn yaml_printable(c: char) -> bool {
    matches!(c, ' '..='~' | '\u{a0}'..='\u{d7ff}' | '\u{e000}'..='\u{fffd}' | '\u{10000}'..)
        && !matches!(c, '\u{2028}' | '\u{2029}' | '\u{feff}')
}

/// A YAML scalar for the ECSV header: single-quoted ('' escapes a quote) when
/// every character is printable, otherwise double-quoted with every other
/// character escaped as `\uXXXX` or `\UXXXXXXXX` (YAML 1.1 section 5.7), so
/// control characters, C1 controls, U+007F, U+FFFE and the Unicode line and
/// paragraph separators in a disk's name or notes cannot break the header.
fn yaml_quoted(s: &str) -> String {
    if s.chars().all(yaml_printable) {
        return format!("'{}'", s.replace('\'', "''"));
    }
    let mut out = String::with_capacity(s.len() + 8);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if yaml_printable(c) => out.push(c),
            c if (c as u32) <= 0xffff => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push_str(&format!("\\U{:08X}", c as u32)),
        }
    }
    out.push('"');
    out
}

/// ECSV 1.0: `# %ECSV 1.0` header with each column's unit and description,
/// and as metadata the program version, the resolved disk file (compact JSON
/// in a string), its hash and the methods with their reference keys.
pub fn to_ecsv(table: &Table, provenance: &Provenance, methods: &[MethodEntry]) -> String {
    to_ecsv_with_meta(table, provenance, methods, &[])
}

/// [`to_ecsv`] with extra metadata entries (each value written as a quoted YAML string).
pub fn to_ecsv_with_meta(
    table: &Table,
    provenance: &Provenance,
    methods: &[MethodEntry],
    extra: &[(&str, String)],
) -> String {
    let mut out = String::from("# %ECSV 1.0\n# ---\n# delimiter: ','\n# datatype:\n");
    for c in &table.columns {
        out.push_str(&format!("# - {{name: {}, datatype: float64", c.name));
        if !c.unit.is_empty() {
            out.push_str(&format!(", unit: {}", yaml_quoted(c.unit)));
        }
        out.push_str(&format!(
            ", description: {}}}\n",
            yaml_quoted(&c.description)
        ));
    }
    out.push_str("# meta:\n");
    out.push_str(&format!(
        "#   program: {}\n",
        yaml_quoted(&provenance.program)
    ));
    out.push_str(&format!(
        "#   disk_hash: {}\n",
        yaml_quoted(&provenance.disk_hash)
    ));
    out.push_str(&format!(
        "#   disk_file: {}\n",
        yaml_quoted(&provenance.disk_value().to_string())
    ));
    out.push_str("#   methods:\n");
    for m in methods {
        out.push_str(&format!(
            "#   - {{topic: {}, method: {}, references: [{}]}}\n",
            yaml_quoted(m.topic),
            yaml_quoted(&m.text),
            m.references.join(", ")
        ));
    }
    for (key, value) in extra {
        out.push_str(&format!("#   {key}: {}\n", yaml_quoted(value)));
    }
    out.push_str("# schema: astropy-2.0\n");
    data_lines(table, &mut out);
    out
}

/// JSON: provenance, methods, column specs and the data as one array per column.
pub fn to_json(table: &Table, provenance: &Provenance, methods: &[MethodEntry]) -> Value {
    let columns: Vec<Value> = table
        .columns
        .iter()
        .map(|c| json!({"name": c.name, "unit": c.unit, "description": c.description}))
        .collect();
    let mut data = Map::new();
    for (i, c) in table.columns.iter().enumerate() {
        let values: Vec<Value> = table
            .rows
            .iter()
            .map(|r| r[i].map_or(Value::Null, |x| json!(x)))
            .collect();
        data.insert(c.name.clone(), Value::Array(values));
    }
    json!({
        "program": provenance.program,
        "disk_hash": provenance.disk_hash,
        "disk": provenance.disk_value(),
        "methods": crate::methods::to_json(methods),
        "columns": columns,
        "data": data,
    })
}

/// Pretty JSON text with a final newline.
pub fn json_text(value: &Value) -> String {
    // Invariant: values built here hold only finite numbers, so serialisation cannot fail.
    let mut s = serde_json::to_string_pretty(value).expect("JSON serialises");
    s.push('\n');
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn yaml_scalars_escape_every_non_printable_character() {
        assert_eq!(yaml_quoted("it's"), "'it''s'");
        assert_eq!(yaml_quoted("a\u{2028}b\"c\\"), "\"a\\u2028b\\\"c\\\\\"");
        for c in [
            '\u{2028}', '\u{2029}', '\u{85}', '\u{7f}', '\u{80}', '\u{9f}', '\u{fffe}', '\u{feff}',
            '\t', '\u{1}',
        ] {
            let q = yaml_quoted(&format!("x{c}y"));
            assert!(
                q.starts_with('"') && q.chars().all(|ch| ch == ' ' || ch.is_ascii_graphic()),
                "{c:?}: {q}"
            );
        }
        assert_eq!(yaml_quoted("\u{1F600}é"), "'\u{1F600}é'");
    }
}
