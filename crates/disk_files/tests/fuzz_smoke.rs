//! A deterministic "fuzz smoke" test on stable Rust (issue 15 item 14): the
//! same properties as the cargo-fuzz targets in `fuzz/`, checked on 100,000
//! inputs per target from a seeded generator (xorshift64*, Vigna 2016) that
//! splices the field-name dictionary `fuzz/disk_file.dict`, the demo disks and
//! random bytes. It runs with `cargo test`; the coverage-guided fuzzing
//! itself is `cargo xtask fuzz` (nightly + cargo-fuzz).

use nivalis_disk_files::fragment::{decode_fragment, encode_base64url, encode_fragment};
use nivalis_disk_files::{parse_disk_json, to_json_string, MAX_LISTED_PROBLEMS};
use std::path::Path;

struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        // xorshift64* (Vigna 2016, "An experimental exploration of Marsaglia's xorshift generators").
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

fn repo() -> &'static Path {
    Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/../.."))
}

/// The quoted entries of a libFuzzer dictionary (`name="value"`, escapes `\\`, `\"`, `\xNN`).
fn dictionary() -> Vec<Vec<u8>> {
    let text = std::fs::read_to_string(repo().join("fuzz/disk_file.dict"))
        .expect("fuzz/disk_file.dict exists");
    let mut out = Vec::new();
    for line in text
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
    {
        let start = line.find('"').expect("a quoted entry") + 1;
        let body = &line.as_bytes()[start..line.len() - 1];
        let mut v = Vec::new();
        let mut i = 0;
        while i < body.len() {
            if body[i] == b'\\' && i + 1 < body.len() {
                if body[i + 1] == b'x' && i + 3 < body.len() {
                    v.push(
                        u8::from_str_radix(std::str::from_utf8(&body[i + 2..i + 4]).unwrap(), 16)
                            .unwrap(),
                    );
                    i += 4;
                } else {
                    v.push(body[i + 1]);
                    i += 2;
                }
            } else {
                v.push(body[i]);
                i += 1;
            }
        }
        out.push(v);
    }
    out
}

fn seeds() -> Vec<Vec<u8>> {
    let mut out: Vec<Vec<u8>> = std::fs::read_dir(repo().join("fuzz/corpus_seed"))
        .unwrap()
        .map(|e| std::fs::read(e.unwrap().path()).unwrap())
        .collect();
    out.sort();
    out
}

/// One input: a seed mutated by splicing dictionary entries, random bytes,
/// deletions and duplications of slices.
fn input(rng: &mut Rng, dict: &[Vec<u8>], seeds: &[Vec<u8>]) -> Vec<u8> {
    let mut v = if rng.below(4) == 0 {
        Vec::new()
    } else {
        seeds[rng.below(seeds.len())].clone()
    };
    for _ in 0..1 + rng.below(8) {
        let at = rng.below(v.len() + 1);
        match rng.below(5) {
            0 | 1 => {
                let word = &dict[rng.below(dict.len())];
                v.splice(at..at, word.iter().copied());
            }
            2 => {
                let n = 1 + rng.below(4);
                let bytes: Vec<u8> = (0..n).map(|_| rng.next() as u8).collect();
                v.splice(at..at, bytes);
            }
            3 if !v.is_empty() => {
                let end = (at + 1 + rng.below(16)).min(v.len());
                v.drain(at.min(end)..end);
            }
            _ => {
                let end = (at + rng.below(32)).min(v.len());
                let slice = v[at.min(end)..end].to_vec();
                v.splice(at..at, slice);
            }
        }
    }
    v
}

const INPUTS: usize = 100_000;

#[test]
fn disk_file_reader_never_panics_and_round_trips() {
    let (dict, seeds) = (dictionary(), seeds());
    assert!(dict.len() > 80 && seeds.len() >= 6);
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    let (mut accepted, mut rejected) = (0, 0);
    for _ in 0..INPUTS {
        let data = input(&mut rng, &dict, &seeds);
        let Ok(text) = std::str::from_utf8(&data) else {
            continue;
        };
        match parse_disk_json(text) {
            Err(problems) => {
                rejected += 1;
                assert!(
                    !problems.0.is_empty() && problems.0.len() <= MAX_LISTED_PROBLEMS + 1,
                    "{text}"
                );
                assert!(
                    problems
                        .0
                        .iter()
                        .all(|p| !p.message.is_empty() && !p.path.is_empty()),
                    "{text}"
                );
            }
            Ok(file) => {
                accepted += 1;
                let again =
                    parse_disk_json(&to_json_string(&file)).expect("resolved file reads back");
                assert_eq!(again, file, "{text}");
            }
        }
    }
    // Both outcomes are exercised (otherwise the generator is broken).
    assert!(
        accepted > 1000 && rejected > 1000,
        "accepted {accepted}, rejected {rejected}"
    );
}

#[test]
fn fragment_decoder_never_panics_and_round_trips() {
    let (dict, seeds) = (dictionary(), seeds());
    let mut rng = Rng(0x0123_4567_89ab_cdef);
    let mut objects = 0;
    for n in 0..INPUTS {
        let data = input(&mut rng, &dict, &seeds);
        let text = if n % 2 == 0 {
            encode_base64url(&data)
        } else {
            String::from_utf8_lossy(&data).into_owned()
        };
        match decode_fragment(&text) {
            Err(problems) => assert!(!problems.0.is_empty()),
            Ok(value) => {
                objects += 1;
                assert!(value.is_object());
                assert_eq!(decode_fragment(&encode_fragment(&value)).unwrap(), value);
            }
        }
    }
    assert!(objects > 1000, "{objects}");
}
