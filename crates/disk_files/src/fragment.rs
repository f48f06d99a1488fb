//! The page's address fragment `#disk=<base64url of the compact disk JSON>`:
//! decoding with the size checked before decoding and the nesting depth
//! checked before deserialising (through [`crate::parse_json_text`]), so a
//! hostile address gives a problem, never a crash (issue 15 item 8).
//!
//! The alphabet is base64url (RFC 4648 section 5); padding `=` is optional on
//! input and never written.

use crate::{Problem, Problems, MAX_DISK_FILE_BYTES};
use serde_json::Value;

/// Longest encoded fragment value accepted, in characters: the base64url form
/// of a [`MAX_DISK_FILE_BYTES`] disk file (4 characters per 3 bytes), plus padding.
pub const MAX_FRAGMENT_CHARS: usize = MAX_DISK_FILE_BYTES.div_ceil(3) * 4 + 4;

const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_";

fn problem(message: String) -> Problems {
    Problems(vec![Problem::new("(address)", message)])
}

fn sextet(c: u8) -> Option<u32> {
    Some(match c {
        b'A'..=b'Z' => c - b'A',
        b'a'..=b'z' => c - b'a' + 26,
        b'0'..=b'9' => c - b'0' + 52,
        b'-' | b'+' => 62,
        b'_' | b'/' => 63,
        _ => return None,
    } as u32)
}

/// Decodes base64url text (RFC 4648 section 5; the standard alphabet's `+`
/// and `/` are accepted too, padding optional) into bytes.
pub fn decode_base64url(text: &str) -> Result<Vec<u8>, Problems> {
    let body = text.trim_end_matches('=');
    if body.len() % 4 == 1 {
        return Err(problem(format!(
            "the disk in the address is cut short ({} base64url characters)",
            body.len()
        )));
    }
    let mut out = Vec::with_capacity(body.len() / 4 * 3 + 2);
    let (mut acc, mut bits) = (0u32, 0u32);
    for (i, &c) in body.as_bytes().iter().enumerate() {
        let v = sextet(c).ok_or_else(|| {
            problem(format!(
                "the disk in the address holds {:?} at position {i}, which is not base64url",
                body[i..].chars().next().unwrap_or('?')
            ))
        })?;
        acc = (acc << 6) | v;
        bits += 6;
        if bits >= 8 {
            bits -= 8;
            out.push((acc >> bits) as u8);
            acc &= (1 << bits) - 1;
        }
    }
    Ok(out)
}

/// Encodes bytes as base64url without padding.
pub fn encode_base64url(bytes: &[u8]) -> String {
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let n = chunk
            .iter()
            .enumerate()
            .fold(0u32, |acc, (i, &b)| acc | (b as u32) << (16 - 8 * i));
        let chars = chunk.len() + 1;
        for i in 0..chars {
            out.push(ALPHABET[((n >> (18 - 6 * i)) & 63) as usize] as char);
        }
    }
    out
}

/// The disk JSON value held by a fragment's `disk=` value (base64url of
/// compact JSON). The length is checked before decoding, and the text then
/// goes through the disk file's own JSON layer (size, nesting depth, byte
/// order mark, duplicate keys). The value is not validated as a disk here;
/// [`crate::from_value`] does that.
pub fn decode_fragment(text: &str) -> Result<Value, Problems> {
    if text.len() > MAX_FRAGMENT_CHARS {
        return Err(problem(format!(
            "the disk in the address is {} characters long; at most {MAX_FRAGMENT_CHARS} are read (a {MAX_DISK_FILE_BYTES}-byte disk file)",
            text.len()
        )));
    }
    let bytes = decode_base64url(text)?;
    let json = String::from_utf8(bytes).map_err(|e| {
        problem(format!(
            "the disk in the address is not UTF-8 text (invalid byte at offset {})",
            e.utf8_error().valid_up_to()
        ))
    })?;
    let value = crate::parse_json_text(&json).map_err(|p| {
        Problems(
            p.0.into_iter()
                .map(|p| {
                    if p.path == "(file)" {
                        Problem {
                            path: "(address)".into(),
                            ..p
                        }
                    } else {
                        p
                    }
                })
                .collect(),
        )
    })?;
    if !value.is_object() {
        return Err(problem(format!(
            "the disk in the address must be a JSON object, got {}",
            crate::shorten(&value.to_string())
        )));
    }
    Ok(value)
}

/// The fragment's `disk=` value for a disk JSON value: base64url (no padding) of its compact JSON.
pub fn encode_fragment(value: &Value) -> String {
    encode_base64url(value.to_string().as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn base64url_matches_the_rfc_4648_test_vectors() {
        // RFC 4648 section 10 (the base64 vectors; these contain no '+' or '/').
        for (plain, encoded) in [
            ("", ""),
            ("f", "Zg"),
            ("fo", "Zm8"),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg"),
            ("fooba", "Zm9vYmE"),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(encode_base64url(plain.as_bytes()), encoded);
            assert_eq!(decode_base64url(encoded).unwrap(), plain.as_bytes());
            assert_eq!(
                decode_base64url(&format!("{encoded}==")).unwrap(),
                plain.as_bytes()
            );
        }
        // The url-safe characters: bytes fb ff give "-_8" (base64 "+/8").
        assert_eq!(encode_base64url(&[0xfb, 0xff]), "-_8");
        assert_eq!(decode_base64url("+/8").unwrap(), vec![0xfb, 0xff]);
    }

    #[test]
    fn fragments_round_trip() {
        let disk = json!({"name": "Ærø ✓", "disk": {"age_myr": 1.3792569329517467e-11}, "grid": {"radial_cells": 64}});
        let text = encode_fragment(&disk);
        assert!(text
            .bytes()
            .all(|c| c.is_ascii_alphanumeric() || c == b'-' || c == b'_'));
        assert_eq!(decode_fragment(&text).unwrap(), disk);
    }

    #[test]
    fn hostile_fragments_are_problems() {
        let first = |t: &str| decode_fragment(t).unwrap_err().0[0].to_string();
        // 5000 nested brackets (issue 15 item 8): refused before deserialising.
        let deep = encode_base64url(("[".repeat(5000) + &"]".repeat(5000)).as_bytes());
        assert!(
            first(&deep).contains("deeper than 32 levels"),
            "{}",
            first(&deep)
        );
        assert!(
            first("%%%").starts_with("(address): the disk in the address holds '%' at position 0")
        );
        assert!(first("Zm9vY").contains("cut short"));
        assert!(first(&encode_base64url(&[0xff, 0xfe])).contains("not UTF-8"));
        assert!(first(&encode_base64url(b"[1]")).contains("must be a JSON object"));
        assert!(first(&encode_base64url(b"{\"a\": ")).starts_with("(address): not valid JSON"));
        assert!(first(&encode_base64url(b"{\"disk\": {}, \"disk\": {}}")).contains("duplicate key"));
        assert!(first(&"A".repeat(MAX_FRAGMENT_CHARS + 1)).contains("at most"));
    }
}
