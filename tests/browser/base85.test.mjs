// base85.test.mjs: the page's embedded WebAssembly module, without a browser.
// `cargo xtask dist` stores the module raw-DEFLATE-compressed as base85 text
// (crates/xtask/src/dist.rs `base85`, Rust unit tests beside it); web/core.js
// decodes it with `decodeBase85` before DecompressionStream inflates it. Here:
// that decoder against published Ascii85 values, the built page's module text
// (decodes, inflates with Node's zlib and validates as WebAssembly), and the
// page's size limit (issue 9: the page file is at most 1.2 MB).

import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, statSync } from "node:fs";
import { join } from "node:path";
import { inflateRawSync } from "node:zlib";
import { ensurePage, pagePath, repoRoot } from "./helpers.mjs";

// The decoder as the page runs it: its source cut out of web/core.js.
function loadDecoder() {
  const core = readFileSync(join(repoRoot, "web", "core.js"), "utf8");
  const source = core.match(/\n {2}function decodeBase85\(text, alphabet\) \{[\s\S]*?\n {2}\}\n/);
  assert.ok(source, "web/core.js defines decodeBase85(text, alphabet)");
  return new Function(`${source[0]}; return decodeBase85;`)();
}

// Adobe's Ascii85 alphabet, "!" (33) to "u" (117).
const ASCII85 = Array.from({ length: 85 }, (_, i) => String.fromCharCode(33 + i)).join("");

test("decodeBase85 reads Ascii85 text as Python's base64.a85encode writes it", () => {
  const decodeBase85 = loadDecoder();
  // Expected values: Python 3's base64.a85encode (the reference library) of
  // these inputs; "Man is distinguished" also opens the Ascii85 example of the
  // Wikipedia article on Ascii85. The same table is in crates/xtask/src/dist.rs.
  const cases = [
    ["", ""],
    ["M", "9`"],
    ["Ma", "9jn"],
    ["Man", "9jqo"],
    ["Man ", "9jqo^"],
    ["Man i", "9jqo^B`"],
    ["\xff\xff\xff\xff", "s8W-!"],
    ["\xff\xff\xff\xff\xff", "s8W-!rr"],
    ["Man is distinguished", "9jqo^BlbD-BleB1DJ+*+F(f,q"],
  ];
  for (const [bytes, text] of cases) {
    const expected = Uint8Array.from(bytes, (c) => c.charCodeAt(0));
    assert.deepEqual(decodeBase85(text, ASCII85), expected, text);
  }
  assert.throws(() => decodeBase85("9jqo^B", ASCII85), /single character/);
});

test("the built page's module text decodes and inflates to a valid WebAssembly module; the page is at most 1.2 MB", () => {
  ensurePage();
  const decodeBase85 = loadDecoder();
  const html = readFileSync(pagePath, "utf8");
  const alphabet = html.match(/const NIVALIS_WASM_BASE85_ALPHABET = "([^"]*)";/);
  const text = html.match(/const NIVALIS_WASM_DEFLATE_BASE85 = "([^"]*)";/);
  assert.ok(alphabet && text, "the page holds the alphabet and the module text");
  assert.equal(new Set(alphabet[1]).size, 85, "85 distinct digit characters");
  for (const c of "\"'`\\<>&$%") assert.ok(!alphabet[1].includes(c), `no ${c} in the alphabet`);
  assert.ok([...text[1]].every((c) => alphabet[1].includes(c)), "the module text uses only the alphabet");
  const deflated = decodeBase85(text[1], alphabet[1]);
  const wasm = inflateRawSync(deflated);
  assert.deepEqual([...wasm.subarray(0, 4)], [0, 0x61, 0x73, 0x6d], "the WebAssembly magic number \\0asm");
  assert.ok(WebAssembly.validate(wasm), "a valid module (SIMD included)");
  // Issue 9: "The page file is at most 1.2 MB" (1,200,000 bytes).
  const bytes = statSync(pagePath).size;
  assert.ok(bytes <= 1_200_000, `the page is ${bytes} bytes, over 1,200,000`);
});
