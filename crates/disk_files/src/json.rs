//! The JSON text layer every front end shares: a size limit, a UTF-8 byte
//! order mark, a nesting-depth limit checked before deserialising, and
//! duplicate keys (which `serde_json::Value` would silently collapse, keeping
//! the last) reported with both places named.

use crate::{shorten, Problem, Problems};
use serde_json::Value;
use std::collections::HashMap;

/// Largest disk file read, in bytes (1 MiB = 1,048,576 bytes). A complete
/// resolved disk file is about 2.5 kB, so this leaves room for long notes while
/// bounding the work a bad input can cause (issue 15 item 7).
pub const MAX_DISK_FILE_BYTES: usize = 1 << 20;

/// Deepest nesting of objects and arrays accepted. The disk file nests at most
/// 4 levels (`ices.species_overrides.CO.binding_energy_k`); 32 leaves room for
/// future fields and keeps a recursive reader far from any stack limit.
pub const MAX_NESTING_DEPTH: usize = 32;

/// Most problems listed for one file; the rest are counted in a last line
/// "and N more problems".
pub const MAX_LISTED_PROBLEMS: usize = 50;

/// Cuts a list of problems to [`MAX_LISTED_PROBLEMS`], ending with a count of the rest.
pub fn cap_problems(mut problems: Vec<Problem>) -> Vec<Problem> {
    if problems.len() > MAX_LISTED_PROBLEMS {
        let more = problems.len() - MAX_LISTED_PROBLEMS;
        problems.truncate(MAX_LISTED_PROBLEMS);
        problems.push(
            Problem::new("(file)", format!("and {more} more problems"))
                .with_value(more.to_string()),
        );
    }
    problems
}

/// Parses disk-file text into a JSON value, as the CLI and the page both do.
///
/// - A leading UTF-8 byte order mark (U+FEFF) is accepted and removed, as a
///   browser's text decoding does (WHATWG Encoding, "UTF-8 decode").
/// - Text over [`MAX_DISK_FILE_BYTES`] is refused before parsing.
/// - Nesting deeper than [`MAX_NESTING_DEPTH`] is refused before deserialising.
/// - A key given twice in one object is a problem naming the field path and
///   the line and column of both places (RFC 8259 section 4: names "SHOULD be
///   unique"; readers differ on which one wins, so neither is guessed).
pub fn parse_json_text(text: &str) -> Result<Value, Problems> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.len() > MAX_DISK_FILE_BYTES {
        return Err(Problems(vec![Problem::new(
            "(file)",
            format!(
                "is {} bytes; a disk file may hold at most {MAX_DISK_FILE_BYTES} bytes (1 MiB)",
                text.len()
            ),
        )
        .with_value(text.len().to_string())
        .with_allowed(format!("at most {MAX_DISK_FILE_BYTES} bytes"))]));
    }
    let scan = scan(text);
    if let Some(p) = scan.too_deep {
        return Err(Problems(vec![p]));
    }
    let value = serde_json::from_str::<Value>(text)
        .map_err(|e| Problems(vec![Problem::new("(file)", format!("not valid JSON: {e}"))]))?;
    if !scan.duplicates.is_empty() {
        return Err(Problems(cap_problems(scan.duplicates)));
    }
    Ok(value)
}

struct Frame {
    is_object: bool,
    path: String,
    /// Keys seen in this object, with their first place (line, byte offset of that line, byte offset).
    keys: HashMap<String, (usize, usize, usize)>,
    /// Object: the last key read (the name of the value that follows).
    key: Option<String>,
    expecting_key: bool,
    /// Array: index of the current element.
    index: usize,
}

struct Scan {
    too_deep: Option<Problem>,
    duplicates: Vec<Problem>,
}

fn child_path(parent: &Frame) -> String {
    if parent.is_object {
        let key = match parent.key.as_deref() {
            None | Some("") => "\"\"".to_string(),
            Some(k) => shorten(k),
        };
        if parent.path.is_empty() {
            key
        } else {
            format!("{}.{key}", parent.path)
        }
    } else {
        format!("{}[{}]", parent.path, parent.index)
    }
}

/// One pass over the text's structure (strings, brackets, commas and colons):
/// depth and duplicate keys. Invalid JSON gives no panic, only meaningless
/// findings, which the parser's own error then replaces.
fn scan(text: &str) -> Scan {
    let bytes = text.as_bytes();
    let mut stack: Vec<Frame> = Vec::new();
    let mut out = Scan {
        too_deep: None,
        duplicates: Vec::new(),
    };
    let (mut line, mut line_start) = (1usize, 0usize);
    let mut i = 0;
    let column = |i: usize, line_start: usize| text[line_start..i].chars().count() + 1;
    while i < bytes.len() {
        match bytes[i] {
            b'\n' => {
                line += 1;
                line_start = i + 1;
            }
            b'"' => {
                let start = i;
                i += 1;
                let mut escaped = false;
                while i < bytes.len() && (bytes[i] != b'"' || escaped) {
                    escaped = bytes[i] == b'\\' && !escaped;
                    i += 1;
                }
                let end = i.min(bytes.len());
                if let Some(top) = stack.last_mut() {
                    if top.is_object && top.expecting_key {
                        let raw = &text[start..(end + 1).min(text.len())];
                        let key = if raw.contains('\\') {
                            serde_json::from_str::<String>(raw).unwrap_or_else(|_| raw.to_string())
                        } else {
                            raw.trim_matches('"').to_string()
                        };
                        if let Some(&(l, l_start, at)) = top.keys.get(&key) {
                            let (c, here) =
                                (column(at, l_start), (line, column(start, line_start)));
                            let shown = if key.is_empty() {
                                "\"\"".to_string()
                            } else {
                                shorten(&key)
                            };
                            let path = if top.path.is_empty() {
                                shown
                            } else {
                                format!("{}.{shown}", top.path)
                            };
                            out.duplicates.push(
                                Problem::new(
                                    path.clone(),
                                    format!(
                                        "duplicate key: {path} is given at line {l} column {c} and again at line {} column {}; give it once",
                                        here.0, here.1
                                    ),
                                )
                                .with_value(shorten(&key))
                                .with_allowed("each key once per object"),
                            );
                        } else {
                            top.keys.insert(key.clone(), (line, line_start, start));
                        }
                        top.key = Some(key);
                        top.expecting_key = false;
                    }
                }
            }
            b'{' | b'[' => {
                let path = stack.last().map(child_path).unwrap_or_default();
                if stack.len() >= MAX_NESTING_DEPTH {
                    out.too_deep = Some(
                        Problem::new(
                            if path.is_empty() { "(file)".to_string() } else { path },
                            format!(
                                "nests objects and arrays deeper than {MAX_NESTING_DEPTH} levels (at line {line} column {}); a disk file nests at most 4",
                                column(i, line_start)
                            ),
                        )
                        .with_allowed(format!("at most {MAX_NESTING_DEPTH} levels")),
                    );
                    return out;
                }
                stack.push(Frame {
                    is_object: bytes[i] == b'{',
                    path,
                    keys: HashMap::new(),
                    key: None,
                    expecting_key: true,
                    index: 0,
                });
            }
            b'}' | b']' => {
                stack.pop();
            }
            b',' => {
                if let Some(top) = stack.last_mut() {
                    if top.is_object {
                        top.expecting_key = true;
                    } else {
                        top.index += 1;
                    }
                }
            }
            _ => {}
        }
        i += 1;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn messages(text: &str) -> Vec<String> {
        parse_json_text(text)
            .unwrap_err()
            .0
            .iter()
            .map(|p| p.to_string())
            .collect()
    }

    #[test]
    fn duplicate_keys_name_both_places() {
        let text = "{\"disk\": {\"age_myr\": 1},\n \"disk\": {\"age_myr\": 2}}";
        assert_eq!(messages(text), vec!["disk: duplicate key: disk is given at line 1 column 2 and again at line 2 column 2; give it once"]);
        let nested = r#"{"star": {"mass_msun": 1, "luminosity_lsun": 2, "mass_msun": 1}}"#;
        let p = parse_json_text(nested).unwrap_err().0;
        assert_eq!(p[0].path, "star.mass_msun");
        assert!(
            p[0].message
                .contains("line 1 column 11 and again at line 1 column 49"),
            "{}",
            p[0].message
        );
        // Escapes are compared after decoding: "a" and "\u0061" are the same key.
        assert_eq!(
            parse_json_text(r#"{"a": 1, "\u0061": 2}"#).unwrap_err().0[0].path,
            "a"
        );
        // The same key in different objects, or inside strings, is no duplicate.
        assert!(parse_json_text(
            r#"{"star": {"x": 1}, "disk": {"x": 1}, "notes": "\"star\": 1, \"star\": 2"}"#
        )
        .is_ok());
        assert!(parse_json_text(r#"{"a": [{"k": 1}, {"k": 2}]}"#).is_ok());
    }

    #[test]
    fn byte_order_mark_is_accepted_and_removed() {
        assert_eq!(
            parse_json_text("\u{feff}{\"name\": \"x\"}").unwrap(),
            serde_json::json!({"name": "x"})
        );
    }

    #[test]
    fn size_and_depth_are_checked_before_parsing() {
        let big = format!("{{\"notes\": \"{}\"}}", "x".repeat(MAX_DISK_FILE_BYTES));
        let p = parse_json_text(&big).unwrap_err().0;
        assert_eq!(p.len(), 1);
        assert!(
            p[0].message.contains("at most 1048576 bytes"),
            "{}",
            p[0].message
        );
        // 5000 nested brackets (the page's crash in issue 15 item 8): a clear problem, no stack overflow.
        let deep = "[".repeat(5000) + &"]".repeat(5000);
        let p = parse_json_text(&deep).unwrap_err().0;
        assert!(
            p[0].message.contains("deeper than 32 levels"),
            "{}",
            p[0].message
        );
        let ok = "[".repeat(32) + &"]".repeat(32);
        assert!(parse_json_text(&ok).is_ok());
        let p = parse_json_text(&("{\"a\":".repeat(40) + "1" + &"}".repeat(40)))
            .unwrap_err()
            .0;
        assert_eq!(
            p[0].path,
            "a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a"
        );
    }

    #[test]
    fn many_problems_are_capped() {
        let keys: Vec<String> = (0..500)
            .map(|i| format!("\"k{i}\": 1, \"k{i}\": 2"))
            .collect();
        let p = parse_json_text(&format!("{{{}}}", keys.join(", ")))
            .unwrap_err()
            .0;
        assert_eq!(p.len(), MAX_LISTED_PROBLEMS + 1);
        assert_eq!(
            p.last().unwrap().to_string(),
            "(file): and 450 more problems"
        );
    }

    #[test]
    fn invalid_text_never_panics() {
        for t in [
            "",
            "\"",
            "{\"",
            "{\"a\\",
            "}}}]]",
            "[\"\\\"",
            "{\"é\u{2028}\": 1, \"é\u{2028}\": 1}",
            "\u{feff}",
        ] {
            let _ = parse_json_text(t);
        }
    }
}
