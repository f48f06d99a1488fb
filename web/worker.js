// worker.js: the page's Web Worker, for grids too large to compute within an
// animation frame. `cargo xtask dist` embeds it as inert text after the
// classic-script ("no-modules") wasm-bindgen glue, which defines the global
// `wasm_bindgen`; the page starts it from a blob: URL and sends it the already
// compiled WebAssembly module. It runs the same Rust `Explorer` as the page:
// `computePacket` validates, runs the model and packs what the page draws and
// exports into transferable parts; the page never needs the model itself.

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
      const t0 = performance.now();
      const result = explorer.computePacket(message.disk, message.species);
      result.computeMs = performance.now() - t0;
      self.postMessage({ type: "result", id: message.id, result }, buffers(result));
    } else if (message.type === "map") {
      const parts = explorer.mapPacket(message.species);
      self.postMessage({ type: "map", id: message.id, species: message.species, parts }, buffers(parts));
    }
  } catch (error) {
    self.postMessage({ type: "error", id: message.id, message: String(error && error.message ? error.message : error) });
  }
};
