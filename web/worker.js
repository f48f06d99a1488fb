// worker.js: the page's Web Worker, for grids too large to compute within an
// animation frame. `cargo xtask dist` embeds it as inert text after the
// classic-script ("no-modules") wasm-bindgen glue, which defines the global
// `wasm_bindgen`; the page starts it from a blob: URL and sends it the already
// compiled WebAssembly module. It runs the same Rust `Explorer` as the page:
// `update` validates and runs the model, `packCurrent` packs what the page draws and
// exports into transferable parts; the page never needs the model itself.
// `update` and `packCurrent` are timed apart so the page learns the compute speed.

/* global wasm_bindgen */

let explorer = null;

// The ArrayBuffers of every Float64Array in a packet, to transfer rather than copy.
function buffers(value, out = []) {
  if (value instanceof Float64Array) out.push(value.buffer);
  else if (value && typeof value === "object") for (const v of Object.values(value)) buffers(v, out);
  return out;
}

self.onmessage = (event) => {
  const message = event.data;
  try {
    if (message.type === "init") {
      wasm_bindgen.initSync({ module: message.module });
      explorer = new wasm_bindgen.Explorer();
      self.postMessage({ type: "ready" });
    } else if (message.type === "compute") {
      // Timed apart: the compute alone tells the page how fast the model runs
      // here; packing the result for the page is the worker path's own cost.
      const t0 = performance.now();
      const outcome = explorer.update(message.disk);
      const t1 = performance.now();
      const result = outcome.ok ? explorer.packCurrent(message.species) : outcome;
      result.computeMs = t1 - t0;
      result.packMs = performance.now() - t1;
      self.postMessage({ type: "result", id: message.id, result }, buffers(result));
    } else if (message.type === "map") {
      const parts = explorer.mapPacket(message.species);
      self.postMessage({ type: "map", id: message.id, species: message.species, parts }, buffers(parts));
    }
  } catch (error) {
    self.postMessage({ type: "error", id: message.id, message: String(error && error.message ? error.message : error) });
  }
};
