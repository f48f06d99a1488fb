//! Fuzz target: the address-fragment decoder (`#disk=<base64url of compact
//! JSON>`) must never panic on any text; every rejected fragment gives at least
//! one problem, every accepted one is a JSON object that encodes and decodes
//! back to itself. Inputs are used both as the fragment text itself and, to
//! reach the JSON layer behind the base64url decoding, encoded first.
#![no_main]

use libfuzzer_sys::fuzz_target;
use nivalis_disk_files::fragment::{decode_fragment, encode_base64url, encode_fragment};

fn check(text: &str) {
    match decode_fragment(text) {
        Err(problems) => assert!(!problems.0.is_empty()),
        Ok(value) => {
            assert!(value.is_object());
            assert_eq!(decode_fragment(&encode_fragment(&value)).expect("an encoded fragment decodes"), value);
        }
    }
}

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        check(text);
    }
    check(&encode_base64url(data));
});
