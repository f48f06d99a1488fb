// core.js: starts the Rust core (the page's third module, after web/replay.js). `cargo xtask dist`
// puts the wasm-bindgen glue (which defines `initSync`, `Explorer` and the
// module-scope `wasm`) and the constants `NIVALIS_WASM_DEFLATE_BASE85` (the
// module, compressed, as text) and `NIVALIS_WASM_BASE85_ALPHABET` before the
// page's modules in the same module script;
// this module is the only one that touches them. It holds no physics.

/* global initSync, setCanvasReplay, Replay, Explorer, NIVALIS_WASM_DEFLATE_BASE85, NIVALIS_WASM_BASE85_ALPHABET, wasm */

const Core = await (async () => {
  // The module is embedded DEFLATE-compressed (cargo xtask dist): inflated with
  // the browser's own DecompressionStream, then compiled. Top-level await: the
  // page's other modules run once it is ready.
  async function inflateRaw(bytes) {
    const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream("deflate-raw"));
    return new Uint8Array(await new Response(stream).arrayBuffer());
  }
  // The compressed module is base85 text (crates/xtask/src/dist.rs `base85`):
  // each 5 characters, digits 0..84 in `alphabet`'s order, most significant
  // first, are 4 bytes (a big-endian 32-bit number); a last group of k + 1 < 5
  // characters is k bytes, read as if padded with the highest digit (Ascii85's
  // rule). A few ms for the module (docs/page.md); tests/browser/base85.test.mjs.
  function decodeBase85(text, alphabet) {
    const digit = new Uint8Array(128);
    for (let i = 0; i < 85; i++) digit[alphabet.charCodeAt(i)] = i;
    const groups = Math.floor(text.length / 5);
    const rest = text.length % 5;
    if (rest === 1) throw new Error("base85 text cannot end with a single character");
    const out = new Uint8Array(groups * 4 + (rest > 0 ? rest - 1 : 0));
    let o = 0;
    for (let i = 0; i < groups * 5; i += 5) {
      const n = (((digit[text.charCodeAt(i)] * 85 + digit[text.charCodeAt(i + 1)]) * 85
        + digit[text.charCodeAt(i + 2)]) * 85 + digit[text.charCodeAt(i + 3)]) * 85 + digit[text.charCodeAt(i + 4)];
      out[o] = n >>> 24;
      out[o + 1] = n >>> 16;
      out[o + 2] = n >>> 8;
      out[o + 3] = n;
      o += 4;
    }
    if (rest > 0) {
      let n = 0;
      for (let j = 0; j < 5; j++) n = n * 85 + (j < rest ? digit[text.charCodeAt(groups * 5 + j)] : 84);
      for (let j = 0; j < rest - 1; j++) out[o + j] = n >>> (24 - 8 * j);
    }
    return out;
  }
  const wasmBytes = await inflateRaw(decodeBase85(NIVALIS_WASM_DEFLATE_BASE85, NIVALIS_WASM_BASE85_ALPHABET));
  // Compiled once: the page instantiates it here, and the worker (large grids) gets the same module.
  const compiled = new WebAssembly.Module(wasmBytes);
  initSync({ module: compiled });
  // The charts' display lists are drawn by web/replay.js (one call per chart).
  setCanvasReplay(Replay);
  // Rebuilt after a trap in the core (rebuild below); the other modules read it through `Core.explorer`.
  let explorer = new Explorer();
  let restarts = 0;

  // A trap in the core (a WebAssembly RuntimeError: out of memory, a stack
  // overflow, a Rust panic, which aborts) leaves its instance unusable: any
  // later call fails with "recursive use of an object detected".
  function isFailure(error) {
    if (typeof WebAssembly !== "undefined" && error instanceof WebAssembly.RuntimeError) return true;
    const text = String(error && error.message ? error.message : error);
    return /recursive use of an object detected|memory access out of bounds|unreachable|Maximum call stack size exceeded/.test(text);
  }

  // A new instance of the compiled module and a new Explorer on it. The glue's
  // module-scope `wasm` (same inline module script) is reset so `initSync`
  // instantiates again; the old Explorer is freed first so its finaliser cannot
  // later free a pointer of the new instance.
  function rebuild() {
    try { explorer.free(); } catch (_) { /* the trapped instance may refuse; its finaliser is unregistered either way */ }
    wasm = undefined;
    initSync({ module: compiled });
    setCanvasReplay(Replay);
    explorer = new Explorer();
    restarts += 1;
  }

  return {
    /** The running Explorer (a new one after `rebuild`). */
    get explorer() { return explorer; },
    /** How often the core was rebuilt after a trap. */
    get restarts() { return restarts; },
    /** The compiled module (the worker instantiates the same one). */
    module: compiled,
    isFailure,
    rebuild,
    /** The default disk, every field resolved (what `{}` means). */
    defaults: Explorer.defaultDisk(),
    /** The disk file's field table (crates/disk_files/src/fields.rs): the controls are built from it. */
    fieldTable: Explorer.fieldTable(),
    /** Built-in species data and binding-energy sets; `species` lists the species in the core's order. */
    speciesInfo: Explorer.speciesInfo(),
    encodeFragment: (disk) => Explorer.encodeFragment(disk),
    decodeFragment: (text) => Explorer.decodeFragment(text),
    /** Test hook: makes the allocator abort (a request of 4 GiB - 16 bytes, more than wasm32 can address). */
    trapAllocator: () => wasm.__wbindgen_malloc(0xfffffff0, 8),
  };
})();
