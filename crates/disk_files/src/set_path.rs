//! Setting one field of a disk by its dotted path (`star.luminosity_lsun=3`),
//! for `nivalis --set`, the sweep and the Python module's `with_values`.
//!
//! The setter works on the disk's JSON value, before the reader: the changed
//! value then goes through [`crate::from_value`] like any file, so a value out
//! of range or an unknown path gets the reader's own problem (with its
//! did-you-mean suggestion), never a second set of rules.

use crate::{shorten, Problem, Problems};
use serde_json::{Map, Value};

/// The value of a `PATH=VALUE` assignment as typed on a command line: JSON
/// when it parses as JSON (a number `3`, `1e-8`, `true`, `null`, `"CO"`, an
/// object or array), else the text itself as a string (`bell_lin`, `CO`).
pub fn parse_value_text(text: &str) -> Value {
    serde_json::from_str(text.trim()).unwrap_or_else(|_| Value::String(text.to_string()))
}

/// Split `PATH=VALUE` into the path and the value ([`parse_value_text`]).
/// The problem names `--set`, the text and the expected form.
pub fn parse_assignment(text: &str) -> Result<(String, Value), Problem> {
    let bad = |message: String| {
        Problem::new("--set", message)
            .with_value(text)
            .with_allowed("PATH=VALUE, e.g. star.luminosity_lsun=3")
    };
    let Some((path, value)) = text.split_once('=') else {
        return Err(bad(format!(
            "expected PATH=VALUE (e.g. star.luminosity_lsun=3), got {:?}",
            shorten(text)
        )));
    };
    let path = path.trim();
    check_path(path).map_err(|m| bad(m.message))?;
    Ok((path.to_string(), parse_value_text(value)))
}

/// A dotted path is one or more non-empty keys separated by dots.
fn check_path(path: &str) -> Result<(), Problem> {
    if path.is_empty() || path.split('.').any(str::is_empty) {
        return Err(Problem::new(
            if path.is_empty() { "(path)" } else { path },
            format!(
                "a field path is keys separated by dots (e.g. star.luminosity_lsun), got {:?}",
                shorten(path)
            ),
        )
        .with_value(path)
        .with_allowed("keys separated by dots"));
    }
    Ok(())
}

/// Set the field at the dotted `path` of the disk value `root` to `value`,
/// creating the objects on the way (`disk.gas_mass_msun` in `{}` gives
/// `{"disk": {"gas_mass_msun": ...}}`). An unknown key is set all the same:
/// the reader then reports it with its suggestion. Only a path through
/// something that is not an object (e.g. `star.mass_msun.x`) is refused here.
pub fn set_path(root: &mut Value, path: &str, value: Value) -> Result<(), Problem> {
    check_path(path)?;
    let keys: Vec<&str> = path.split('.').collect();
    let mut here = root;
    for (i, key) in keys.iter().enumerate() {
        if here.is_null() {
            *here = Value::Object(Map::new());
        }
        let Value::Object(map) = here else {
            let through = keys[..i].join(".");
            let through = if through.is_empty() {
                "(file)".to_string()
            } else {
                through
            };
            return Err(Problem::new(
                path,
                format!(
                    "cannot set {path}: {through} is {}, not an object",
                    shorten(&here.to_string())
                ),
            )
            .with_value(here.to_string())
            .with_allowed("a path through objects"));
        };
        if i + 1 == keys.len() {
            map.insert((*key).to_string(), value);
            return Ok(());
        }
        here = map.entry((*key).to_string()).or_insert(Value::Null);
    }
    Ok(())
}

/// Apply every `PATH=VALUE` assignment in order (a later one wins); every
/// malformed assignment is reported at once.
pub fn apply_assignments(root: &mut Value, assignments: &[String]) -> Result<(), Problems> {
    let mut problems = Vec::new();
    for text in assignments {
        match parse_assignment(text).and_then(|(p, v)| set_path(root, &p, v)) {
            Ok(()) => {}
            Err(p) => problems.push(p),
        }
    }
    if problems.is_empty() {
        Ok(())
    } else {
        Err(Problems(problems))
    }
}

/// Whether a reader problem says that the field at its path does not exist
/// (as opposed to a value out of range), for callers that must tell a typo in
/// a path from a bad value (the sweep refuses the first up front).
pub fn is_unknown_field(problem: &Problem) -> bool {
    problem.message.starts_with("unknown field")
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn values_parse_as_json_or_text() {
        assert_eq!(parse_value_text("3"), json!(3));
        assert_eq!(parse_value_text("1e-8"), json!(1e-8));
        assert_eq!(parse_value_text("true"), json!(true));
        assert_eq!(parse_value_text("\"CO\""), json!("CO"));
        assert_eq!(parse_value_text("bell_lin"), json!("bell_lin"));
        assert_eq!(parse_value_text("{\"a\": 1}"), json!({"a": 1}));
    }

    #[test]
    fn set_creates_objects_and_replaces() {
        let mut v = json!({"star": {"mass_msun": 1}});
        set_path(&mut v, "star.luminosity_lsun", json!(3)).unwrap();
        set_path(&mut v, "disk.gas_mass_msun", json!(0.02)).unwrap();
        set_path(&mut v, "star.mass_msun", json!(2)).unwrap();
        assert_eq!(
            v,
            json!({"star": {"mass_msun": 2, "luminosity_lsun": 3}, "disk": {"gas_mass_msun": 0.02}})
        );
    }

    #[test]
    fn set_through_a_number_is_refused() {
        let mut v = json!({"star": {"mass_msun": 1}});
        let e = set_path(&mut v, "star.mass_msun.x", json!(1)).unwrap_err();
        assert_eq!(e.path, "star.mass_msun.x");
        assert!(e.message.contains("star.mass_msun is 1, not an object"));
    }

    #[test]
    fn malformed_assignments() {
        assert!(parse_assignment("star.luminosity_lsun").is_err());
        assert!(parse_assignment("=3").is_err());
        assert!(parse_assignment("star..x=3").is_err());
        let (p, v) = parse_assignment("star.luminosity_lsun = 3").unwrap();
        assert_eq!((p.as_str(), v), ("star.luminosity_lsun", json!(3)));
    }
}
