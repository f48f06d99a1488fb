//! `cargo xtask dist`: builds the single-file page `target/site/nivalis.html`
//! from `crates/web` (compiled to wasm32-unknown-unknown) and `web/`.
//!
//! Steps:
//! 1. make sure the wasm target is installed (`rustup target add` when missing);
//! 2. `cargo build -p nivalis-web --target wasm32-unknown-unknown` with the
//!    size-optimised `wasm-release` profile (or the dev profile for `--dev`;
//!    `nivalis-physics`, `nivalis-charts` and `nivalis-web` at opt-level 3, see
//!    the workspace's Cargo.toml) and
//!    WebAssembly SIMD (`+simd128`) for this build only;
//! 3. generate the JavaScript glue with the `wasm-bindgen-cli-support` library
//!    (target `web`, no TypeScript, name and producers sections removed), so no
//!    separately installed `wasm-bindgen` CLI is needed and the glue always
//!    matches the pinned `wasm-bindgen` of the web crate;
//! 4. optionally shrink the module with `wasm-opt` from npm's `binaryen`
//!    package, when `tests/browser/node_modules/.bin/wasm-opt` exists
//!    (Debian's older binaryen is never used: its output fails at start-up);
//! 5. fill the template `web/index.html`: the CSS (`web/style.css`), every
//!    `demo_disks/*.json` as one JSON object in a `<script type="application/json">`,
//!    and ONE inline `<script type="module">` holding the glue, the wasm as
//!    base85 text (decoded and compiled with `initSync`) and the app's modules
//!    (`web/util.js`, `web/replay.js`, `web/core.js`, `web/controls.js`, `web/app.js`, then
//!    `web/planet.js`, the planet panel and figure downloads; CSS likewise
//!    `web/style.css` then `web/planet.css`; the wasm is compressed with raw
//!    DEFLATE by `zopfli`, written as [`base85`] text, and the page decodes it
//!    (`decodeBase85` in web/core.js) and inflates it with the browser's
//!    `DecompressionStream("deflate-raw")` before compiling it),
//!    and the Web Worker's script as inert text (`<script type="text/plain">`:
//!    the no-modules glue and `web/worker.js`), which the page starts from a
//!    blob: URL for large grids, handing it the compiled module. In the
//!    release build all of this JavaScript is first minified by npm's
//!    `esbuild` (whitespace and syntax only; names kept), when installed.
//!
//! Nothing is loaded from a second file: Chromium refuses `fetch()` and module
//! imports from `file://`, and the page's Content-Security-Policy (in the
//! template) forbids every network connection anyway.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::{cargo, relative, repo_root, run};

/// The target the page is compiled to.
const WASM_TARGET: &str = "wasm32-unknown-unknown";

/// Where the template asks for each piece; each must appear exactly once.
const STYLE_SLOT: &str = "<!-- nivalis:style -->";
const DEMO_SLOT: &str = "<!-- nivalis:demo-disks -->";
const SCRIPT_SLOT: &str = "<!-- nivalis:script -->";
const WORKER_SLOT: &str = "<!-- nivalis:worker -->";

/// The page's scripts, inlined in this order into the one module script. Each
/// is one module: a namespace object built by an immediately invoked function
/// (`const Util = (() => {...})();`), using only the modules before it, passed
/// in as arguments or named explicitly (web/util.js explains the pattern).
const SCRIPTS: [&str; 9] = [
    "web/util.js",
    "web/replay.js",
    "web/core.js",
    "web/controls.js",
    "web/app.js",
    "web/planet.js",
    "web/uncertainty.js",
    "web/evolution.js",
    "web/evolution_fit.js",
];
/// The page's style sheets, inlined in this order.
const STYLES: [&str; 2] = ["web/style.css", "web/planet.css"];

/// Builds the page and returns the path of the finished HTML file.
/// `release` selects the size-optimised `wasm-release` profile; `false` is a
/// faster unoptimised build for development.
pub fn dist(release: bool) -> Result<PathBuf, String> {
    let root = repo_root();
    crate::test::ensure_wasm_target()?;
    let profile = if release { "wasm-release" } else { "dev" };
    // `strip = "debuginfo"` instead of the profile's `strip = true`: a full strip
    // also drops the `target_features` section wasm-bindgen reads to know which
    // wasm features the module uses. The name section (symbols) is removed by
    // wasm-bindgen below, so the module is as small either way.
    run(cargo().current_dir(&root).args([
        "build",
        "-p",
        "nivalis-web",
        "--lib",
        "--target",
        WASM_TARGET,
        "--profile",
        profile,
        "--config",
        "profile.wasm-release.strip=\"debuginfo\"",
        // WebAssembly SIMD (128-bit) for the page's module only: LLVM vectorises
        // the core's loops with it (no FMA, no relaxed SIMD: the same IEEE
        // operations, so the same bits as native; the browser tests compare).
        "--config",
        "target.wasm32-unknown-unknown.rustflags=[\"-C\",\"target-feature=+simd128\"]",
    ]))?;
    let target_dir = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| root.join("target"));
    // Cargo names the dev profile's output directory `debug`.
    let profile_dir = if release { "wasm-release" } else { "debug" };
    let wasm_path = target_dir
        .join(WASM_TARGET)
        .join(profile_dir)
        .join("nivalis_web.wasm");

    let (glue, worker_glue, mut wasm) = bindgen(&wasm_path)?;
    if release && std::env::var_os("NIVALIS_KEEP_NAMES").is_none() {
        // wasm-opt comes from npm's binaryen, a dev dependency of the browser
        // tests; without npm the page is still built, only larger.
        if let Err(message) = crate::test::ensure_browser_packages() {
            println!("could not install the npm packages of tests/browser ({message}); skipping wasm-opt");
        }
        wasm = optimise(&root, wasm)?;
    }

    let read = |path: &Path| {
        std::fs::read_to_string(path).map_err(|e| format!("cannot read {}: {e}", relative(path)))
    };
    let template = read(&root.join("web/index.html"))?;
    // Several sources per element, joined in this fixed order: each module
    // script receives the interfaces of the ones before it (planet.js gets
    // app.js's `App`), all in the one module scope.
    let join = |paths: &[&str]| -> Result<String, String> {
        let mut out = String::new();
        for p in paths {
            out.push_str(&read(&root.join(p))?);
            out.push('\n');
        }
        Ok(out)
    };
    let style = join(&STYLES)?;
    let app = join(&SCRIPTS)?;
    // worker.js, then the uncertainty panel's handler, which wraps worker.js's.
    let worker = join(&["web/worker.js", "web/uncertainty-worker.js"])?;
    let mut worker_source = format!("{worker_glue}\n{worker}");
    // The release page's JavaScript without its comments and layout (names
    // kept): the room it frees lets the drawing code be built for speed
    // within the size limit (docs/page.md "Size").
    let (glue, app) = if release {
        worker_source = minify_js(&root, &worker_source)?;
        (minify_js(&root, &glue)?, minify_js(&root, &app)?)
    } else {
        (glue, app)
    };
    let demos = demo_disks_json(&root.join("demo_disks"))?;

    // Raw DEFLATE by Zopfli: the page inflates it with
    // DecompressionStream("deflate-raw") before compiling it.
    let deflated = deflate(&wasm)?;
    let encoded = base85(&deflated, BASE85_ALPHABET);
    let script = format!(
        "{glue}\n// The WebAssembly module, raw DEFLATE (RFC 1951) then base85 (digits 0..84 are the\n// alphabet's characters; inlined so the page is one file; cargo xtask dist, crates/xtask/src/dist.rs).\nconst NIVALIS_WASM_BASE85_ALPHABET = \"{}\";\nconst NIVALIS_WASM_DEFLATE_BASE85 = \"{encoded}\";\n{app}",
        std::str::from_utf8(BASE85_ALPHABET).expect("the alphabet is ASCII"),
    );
    for (what, text) in [
        (
            "the page's modules (web/*.js) with the glue",
            script.as_str(),
        ),
        ("web/worker.js with the glue", worker_source.as_str()),
        ("web/style.css and web/planet.css", style.as_str()),
    ] {
        if text.to_ascii_lowercase().contains("</script")
            || text.to_ascii_lowercase().contains("</style")
        {
            return Err(format!("{what} contains a closing </script> or </style> tag, which would end its inline element early"));
        }
    }
    let html = fill(&template, STYLE_SLOT, &format!("<style>\n{style}</style>"))?;
    let html = fill(
        &html,
        DEMO_SLOT,
        &format!("<script type=\"application/json\" id=\"demo-disks\">{demos}</script>"),
    )?;
    // The worker's script, as text the page turns into a blob: URL (a
    // text/plain script element is never executed by the page itself).
    let html = fill(
        &html,
        WORKER_SLOT,
        &format!("<script type=\"text/plain\" id=\"worker-source\">\n{worker_source}\n</script>"),
    )?;
    let html = fill(
        &html,
        SCRIPT_SLOT,
        &format!("<script type=\"module\">\n{script}\n</script>"),
    )?;

    let site = target_dir.join("site");
    std::fs::create_dir_all(&site)
        .map_err(|e| format!("cannot create {}: {e}", relative(&site)))?;
    let page = site.join("nivalis.html");
    std::fs::write(&page, &html).map_err(|e| format!("cannot write {}: {e}", relative(&page)))?;
    println!(
        "page: {} ({} bytes: wasm {} bytes, {} deflated, {} as base85; glue {} bytes)",
        relative(&page),
        html.len(),
        wasm.len(),
        deflated.len(),
        encoded.len(),
        glue.len()
    );
    Ok(page)
}

/// Runs wasm-bindgen on the compiled module twice: the ES-module glue (target
/// `web`) for the page, and a classic-script glue (target `no-modules`, global
/// `wasm_bindgen`) for the page's Web Worker, because Chromium will not start a
/// module worker from a blob: URL of a file:// page. Both glues must drive the
/// same module bytes, which is checked.
fn bindgen(wasm_path: &Path) -> Result<(String, String, Vec<u8>), String> {
    if !wasm_path.is_file() {
        return Err(format!("the build did not produce {}", relative(wasm_path)));
    }
    let (page_glue, page_wasm) = bindgen_target(wasm_path, false)?;
    let (worker_glue, worker_wasm) = bindgen_target(wasm_path, true)?;
    if page_wasm != worker_wasm {
        return Err(
            "wasm-bindgen produced different modules for the page and the worker glue".to_string(),
        );
    }
    Ok((page_glue, worker_glue, page_wasm))
}

fn bindgen_target(wasm_path: &Path, classic: bool) -> Result<(String, Vec<u8>), String> {
    // NIVALIS_KEEP_NAMES=1 keeps the function names, so a browser profile of
    // the page names Rust functions (for performance work; the page is larger).
    let keep_names = std::env::var_os("NIVALIS_KEEP_NAMES").is_some_and(|v| v == "1");
    let mut bindgen = wasm_bindgen_cli_support::Bindgen::new();
    bindgen.input_path(wasm_path);
    if classic {
        bindgen
            .no_modules(true)
            .map_err(|e| format!("wasm-bindgen: {e:#}"))?;
    } else {
        bindgen
            .web(true)
            .map_err(|e| format!("wasm-bindgen: {e:#}"))?;
    }
    bindgen
        .typescript(false)
        .debug(false)
        .remove_name_section(!keep_names)
        .remove_producers_section(true);
    let mut output = bindgen
        .generate_output()
        .map_err(|e| format!("wasm-bindgen: {e:#}"))?;
    if !output.snippets().values().all(Vec::is_empty) || !output.local_modules().is_empty() {
        // Snippets would be extra JS files; the page must stay one file.
        return Err(
            "wasm-bindgen produced JS snippets or local modules; the page cannot inline them"
                .to_string(),
        );
    }
    let glue = output.js().to_string();
    let wasm = output.wasm_mut().emit_wasm();
    Ok((glue, wasm))
}

/// Shrinks the module with npm binaryen's `wasm-opt -Oz` when it is installed
/// in `tests/browser/node_modules`; otherwise returns it unchanged.
fn optimise(root: &Path, wasm: Vec<u8>) -> Result<Vec<u8>, String> {
    let tool = root.join("tests/browser/node_modules/.bin/wasm-opt");
    if !tool.is_file() {
        println!("wasm-opt (npm binaryen) not installed in tests/browser; module left as built");
        return Ok(wasm);
    }
    let dir = std::env::temp_dir().join(format!("nivalis-dist-{}", std::process::id()));
    std::fs::create_dir_all(&dir).map_err(|e| format!("cannot create {}: {e}", dir.display()))?;
    let (input, output) = (dir.join("in.wasm"), dir.join("out.wasm"));
    std::fs::write(&input, &wasm).map_err(|e| format!("cannot write {}: {e}", input.display()))?;
    // The features match what rustc's wasm32 target emits by default, plus
    // SIMD, which the page's build enables (`+simd128` above).
    let outcome = run(Command::new(&tool)
        .arg("-Oz")
        .args([
            "--enable-simd",
            "--enable-bulk-memory",
            "--enable-nontrapping-float-to-int",
            "--enable-sign-ext",
            "--enable-mutable-globals",
            "--enable-multivalue",
            "--enable-reference-types",
        ])
        .arg(&input)
        .arg("-o")
        .arg(&output));
    let result = match outcome {
        Ok(()) => {
            std::fs::read(&output).map_err(|e| format!("cannot read {}: {e}", output.display()))
        }
        Err(message) => {
            println!("wasm-opt failed ({message}); module left as built");
            Ok(wasm)
        }
    };
    let _ = std::fs::remove_dir_all(&dir);
    result
}

/// Removes the comments, layout and redundant syntax of a script with npm
/// esbuild's transform (`--minify-whitespace --minify-syntax`): names are
/// kept, so error messages and browser profiles still name the page's
/// functions. Without esbuild in `tests/browser/node_modules` the script is
/// returned unchanged (the page is then larger; `cargo xtask test` installs it).
fn minify_js(root: &Path, script: &str) -> Result<String, String> {
    use std::io::Write;
    let tool = root.join("tests/browser/node_modules/.bin/esbuild");
    if !tool.is_file() {
        println!("esbuild (npm) not installed in tests/browser; JavaScript left as written");
        return Ok(script.to_string());
    }
    let mut child = Command::new(&tool)
        .args([
            "--loader=js",
            "--minify-whitespace",
            "--minify-syntax",
            "--charset=utf8",
            "--log-level=warning",
        ])
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .map_err(|e| format!("could not start {}: {e}", relative(&tool)))?;
    let mut stdin = child.stdin.take().expect("stdin is piped");
    // Written from a thread so a full stdout pipe cannot stall the write.
    let text = script.to_string();
    let writer = std::thread::spawn(move || stdin.write_all(text.as_bytes()));
    let output = child
        .wait_with_output()
        .map_err(|e| format!("esbuild: {e}"))?;
    writer
        .join()
        .map_err(|_| "esbuild: the writing thread panicked".to_string())?
        .map_err(|e| format!("esbuild: cannot write the script: {e}"))?;
    if !output.status.success() {
        return Err(format!("esbuild failed ({})", output.status));
    }
    String::from_utf8(output.stdout)
        .map_err(|e| format!("esbuild wrote text that is not UTF-8: {e}"))
}

/// Zopfli's iterations per block for the page's module. One iteration is
/// already about 4 % smaller than miniz_oxide's best level (10); the count is
/// a trade of build time against bytes (docs/page.md "Size" has the numbers).
const ZOPFLI_ITERATIONS: u64 = 5;

/// Raw DEFLATE (RFC 1951) of `bytes` by Zopfli (the `zopfli` crate, an
/// exhaustive-search encoder whose output any inflater reads, the browser's
/// DecompressionStream("deflate-raw") included), checked by inflating it back
/// with miniz_oxide.
fn deflate(bytes: &[u8]) -> Result<Vec<u8>, String> {
    let options = zopfli::Options {
        iteration_count: std::num::NonZeroU64::new(ZOPFLI_ITERATIONS).expect("not zero"),
        ..zopfli::Options::default()
    };
    let mut deflated = Vec::new();
    zopfli::compress(options, zopfli::Format::Deflate, bytes, &mut deflated)
        .map_err(|e| format!("Zopfli (DEFLATE) failed: {e}"))?;
    if miniz_oxide::inflate::decompress_to_vec(&deflated)
        .ok()
        .as_deref()
        != Some(bytes)
    {
        return Err(
            "the DEFLATE-compressed wasm module does not inflate back to the module".to_string(),
        );
    }
    Ok(deflated)
}

/// Replaces the one occurrence of `slot` in `template`.
fn fill(template: &str, slot: &str, content: &str) -> Result<String, String> {
    match template.matches(slot).count() {
        1 => Ok(template.replacen(slot, content, 1)),
        n => Err(format!(
            "web/index.html must contain {slot} exactly once, found {n}"
        )),
    }
}

/// Every `*.json` in `dir` as one JSON object `{"file.json": <file's JSON>, ...}`,
/// sorted by name. Each file is embedded as written (it is JSON already); `</`
/// becomes `<\/`, an escape JSON allows and that cannot end the `<script>` early
/// (outside strings JSON has no `<`).
fn demo_disks_json(dir: &Path) -> Result<String, String> {
    let mut files: Vec<PathBuf> = match std::fs::read_dir(dir) {
        Ok(entries) => entries.filter_map(|e| e.ok().map(|e| e.path())).collect(),
        Err(_) => Vec::new(),
    };
    files.retain(|p| p.is_file() && p.extension().is_some_and(|x| x == "json"));
    files.sort();
    let mut out = String::from("{");
    for (i, file) in files.iter().enumerate() {
        let text = std::fs::read_to_string(file)
            .map_err(|e| format!("cannot read {}: {e}", relative(file)))?;
        let trimmed = text.trim();
        if !trimmed.starts_with('{') || !trimmed.ends_with('}') {
            return Err(format!("{} is not a JSON object", relative(file)));
        }
        // Invariant: file_name exists because read_dir lists entries by name.
        let name = file
            .file_name()
            .expect("listed file has a name")
            .to_string_lossy();
        if i > 0 {
            out.push(',');
        }
        out.push_str(&json_string(&name));
        out.push(':');
        out.push_str(&trimmed.replace("</", "<\\/"));
    }
    out.push('}');
    Ok(out)
}

/// A JSON string literal.
fn json_string(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '<' => out.push_str("\\u003c"),
            c if (c as u32) < 0x20 => out.push_str(&format!("\\u{:04x}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// The 85 characters of the page's base85 text, digit values 0 to 84 in this
/// order: printable ASCII (`!` to `~`) less the nine that could matter inside a
/// double-quoted JavaScript string in an inline `<script>`: the quotes `"` `'`
/// and backtick, the backslash, `<` and `>` (no `</script` or `<!--` can
/// appear), `&`, `$` and `%`.
const BASE85_ALPHABET: &[u8; 85] =
    b"!#()*+,-./0123456789:;=?@ABCDEFGHIJKLMNOPQRSTUVWXYZ[]^_abcdefghijklmnopqrstuvwxyz{|}~";

/// Base85 text of `bytes` with the digit characters `alphabet`: each group of
/// four bytes, read as a big-endian 32-bit number, becomes five base-85 digits,
/// most significant first; a last group of k < 4 bytes is padded with zero
/// bytes and only its first k + 1 digits are written. That is Adobe's Ascii85
/// (PostScript Language Reference, 3rd ed., section 3.13.3) without its `z`
/// abbreviation and `~>` end mark; with the Ascii85 alphabet (`!` to `u`) it
/// gives Python's `base64.a85encode` output for data without a zero group.
/// 25 % larger than the bytes, against 33 % for base64. The page decodes it
/// with `decodeBase85` in web/core.js.
fn base85(bytes: &[u8], alphabet: &[u8; 85]) -> String {
    let mut out = String::with_capacity(bytes.len().div_ceil(4) * 5);
    for chunk in bytes.chunks(4) {
        let mut group = [0u8; 4];
        group[..chunk.len()].copy_from_slice(chunk);
        let mut n = u32::from_be_bytes(group);
        let mut digits = [0u8; 5];
        for digit in digits.iter_mut().rev() {
            *digit = alphabet[(n % 85) as usize];
            n /= 85;
        }
        for &d in &digits[..chunk.len() + 1] {
            out.push(d as char);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The inverse of `base85`, written as web/core.js's `decodeBase85` is (the
    /// last partial group padded with the highest digit, 84).
    fn unbase85(text: &str, alphabet: &[u8; 85]) -> Vec<u8> {
        let value = |c: u8| alphabet.iter().position(|&a| a == c).unwrap() as u64;
        let mut out = Vec::new();
        for chunk in text.as_bytes().chunks(5) {
            let mut n = 0u64;
            for i in 0..5 {
                n = n * 85 + chunk.get(i).map_or(84, |&c| value(c));
            }
            out.extend_from_slice(&(n as u32).to_be_bytes()[..chunk.len() - 1]);
        }
        out
    }

    /// Adobe's Ascii85 alphabet, `!` (33) to `u` (117).
    fn ascii85_alphabet() -> [u8; 85] {
        std::array::from_fn(|i| b'!' + i as u8)
    }

    #[test]
    fn base85_matches_python_a85encode() {
        // Expected values: Python 3's base64.a85encode (the reference library),
        // run on these inputs; "Man is distinguished" is also the opening of the
        // Ascii85 example text in the Wikipedia article on Ascii85.
        let ascii85 = ascii85_alphabet();
        for (input, expected) in [
            (&b""[..], ""),
            (b"M", "9`"),
            (b"Ma", "9jn"),
            (b"Man", "9jqo"),
            (b"Man ", "9jqo^"),
            (b"Man i", "9jqo^B`"),
            (b"\xff\xff\xff\xff", "s8W-!"),
            (b"\xff\xff\xff\xff\xff", "s8W-!rr"),
            (b"Man is distinguished", "9jqo^BlbD-BleB1DJ+*+F(f,q"),
        ] {
            assert_eq!(base85(input, &ascii85), expected, "{input:?}");
            assert_eq!(unbase85(expected, &ascii85), input, "{expected}");
        }
    }

    #[test]
    fn base85_of_the_page_round_trips_and_is_safe_in_a_script_string() {
        let mut alphabet = BASE85_ALPHABET.to_vec();
        alphabet.sort_unstable();
        alphabet.dedup();
        assert_eq!(alphabet.len(), 85, "85 distinct characters");
        for c in BASE85_ALPHABET {
            assert!(c.is_ascii_graphic(), "{}", *c as char);
            assert!(!b"\"'`\\<>&$%".contains(c), "{}", *c as char);
        }
        // Every length modulo 4, zero groups and the largest group included.
        let data: Vec<u8> = (0..=255u8).chain([0; 8]).chain([255; 8]).collect();
        for len in 0..data.len() {
            let text = base85(&data[..len], BASE85_ALPHABET);
            assert_eq!(
                text.len(),
                len / 4 * 5 + if len % 4 > 0 { len % 4 + 1 } else { 0 }
            );
            assert_eq!(
                unbase85(&text, BASE85_ALPHABET),
                &data[..len],
                "length {len}"
            );
        }
    }

    #[test]
    fn slots_must_appear_once() {
        assert_eq!(fill("a<!-- x -->b", "<!-- x -->", "Z").unwrap(), "aZb");
        assert!(fill("ab", "<!-- x -->", "Z").is_err());
        assert!(fill("<!-- x --><!-- x -->", "<!-- x -->", "Z").is_err());
    }

    #[test]
    fn demo_disks_become_one_object_that_cannot_close_the_script() {
        let dir = std::env::temp_dir().join(format!("xtask-demo-disks-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("b.json"), "{\"name\": \"x</script>\"}\n").unwrap();
        std::fs::write(dir.join("a.json"), "{}").unwrap();
        std::fs::write(dir.join("notes.md"), "not a disk").unwrap();
        let json = demo_disks_json(&dir).unwrap();
        std::fs::remove_dir_all(&dir).unwrap();
        assert_eq!(
            json,
            "{\"a.json\":{},\"b.json\":{\"name\": \"x<\\/script>\"}}"
        );
    }
}
