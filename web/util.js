// util.js: the page's small helpers, no state and no core: the first of the
// page's modules (`cargo xtask dist` inlines web/util.js, web/replay.js, web/core.js,
// web/controls.js, web/app.js and web/planet.js, in this order, into one
// module script). Each module is one namespace object built by an immediately
// invoked function; a module uses only the namespaces of the modules before
// it, passed in or named explicitly, and shares no other names.

const Util = (() => {
  const $ = (id) => document.getElementById(id);
  const clone = (v) => JSON.parse(JSON.stringify(v));
  const pathId = (path) => "f-" + path.replace(/[^A-Za-z0-9_]/g, "-");

  function getPath(obj, path) {
    let v = obj;
    for (const k of path.split(".")) {
      if (v == null || typeof v !== "object") return undefined;
      v = v[k];
    }
    return v;
  }

  function setPath(obj, path, value) {
    const keys = path.split(".");
    let v = obj;
    for (const k of keys.slice(0, -1)) {
      if (v[k] == null || typeof v[k] !== "object") v[k] = {};
      v = v[k];
    }
    const last = keys[keys.length - 1];
    if (value === undefined) delete v[last];
    else v[last] = value;
  }

  // Prunes empty objects left behind by deleted optional fields (an empty
  // override object is the same disk, but keeps the URL short).
  function prune(obj) {
    for (const [k, v] of Object.entries(obj)) {
      if (v && typeof v === "object" && !Array.isArray(v)) {
        prune(v);
        if (Object.keys(v).length === 0 && k !== "species_overrides") delete obj[k];
      }
    }
    return obj;
  }

  // Four significant digits: what a slider position means. Short decimals also
  // parse to the same double in every JSON reader, so the CLI sees the page's numbers exactly.
  const roundSlider = (x) => Number(x.toPrecision(4));

  // Typed text as a value for the reader: a finite number when it reads as one,
  // otherwise the text itself, so the reader's message names what was typed.
  function parseTyped(text) {
    const t = text.trim();
    if (t !== "" && /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t)) {
      const x = Number(t);
      if (Number.isFinite(x)) return x;
    }
    return text;
  }

  const showNumber = (v) => (typeof v === "number" ? String(v) : v == null ? "" : String(v));

  // The fragment holds the disk as base64url of its compact JSON (only what differs from the defaults).
  function base64urlEncode(text) {
    const bytes = new TextEncoder().encode(text);
    let binary = "";
    for (const b of bytes) binary += String.fromCharCode(b);
    return btoa(binary).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
  }

  function base64urlDecode(text) {
    const b64 = text.replace(/-/g, "+").replace(/_/g, "/");
    const binary = atob(b64 + "===".slice((b64.length + 3) % 4));
    return new TextDecoder().decode(Uint8Array.from(binary, (c) => c.charCodeAt(0)));
  }

  // The leaves of `disk` that differ from `base` (objects recursed, everything else compared by value).
  function difference(disk, base) {
    const out = {};
    for (const [k, v] of Object.entries(disk)) {
      const b = base ? base[k] : undefined;
      if (v && typeof v === "object" && !Array.isArray(v) && b && typeof b === "object") {
        const d = difference(v, b);
        if (Object.keys(d).length > 0) out[k] = d;
      } else if (JSON.stringify(v) !== JSON.stringify(b)) {
        out[k] = v;
      }
    }
    return out;
  }

  function merge(base, extra) {
    const out = clone(base);
    for (const [k, v] of Object.entries(extra || {})) {
      if (v && typeof v === "object" && !Array.isArray(v) && out[k] && typeof out[k] === "object") out[k] = merge(out[k], v);
      else out[k] = v;
    }
    return out;
  }

  // Saves text or bytes (a Uint8Array) as a file named `name`.
  function download(name, content, type) {
    const url = URL.createObjectURL(new Blob([content], { type }));
    const a = document.createElement("a");
    a.href = url;
    a.download = name;
    document.body.append(a);
    a.click();
    a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 1000);
  }

  // ---------------------------------------------------------------------------
  // Input bounds, checked before anything from the address, an opened file or
  // the typed inputs is deserialised (JSON.parse here, serde in the core): a
  // disk file is at most 1,000,000 bytes (the reader's documented limit for
  // disk files) and nests at most 64 arrays/objects deep (a valid disk file
  // nests 4 deep). Deeper input would overflow a recursive parser's stack.
  // ---------------------------------------------------------------------------

  const INPUT_LIMITS = { bytes: 1000000, depth: 64 };

  // A problem with `text` as a disk file's JSON, or null: its size, then its
  // nesting depth, found by one scan that skips strings (a bracket in a string
  // does not nest).
  function checkJsonBounds(text, what) {
    // UTF-16 code units never outnumber UTF-8 bytes, so this first test is safe.
    if (text.length > INPUT_LIMITS.bytes) return tooLarge(what, text.length);
    // A UTF-16 code unit is at most 3 UTF-8 bytes: short texts need no encoding to count them.
    if (text.length * 3 > INPUT_LIMITS.bytes) {
      const bytes = new TextEncoder().encode(text).length;
      if (bytes > INPUT_LIMITS.bytes) return tooLarge(what, bytes);
    }
    let depth = 0;
    let inString = false;
    for (let i = 0; i < text.length; i += 1) {
      const c = text.charCodeAt(i);
      if (inString) {
        if (c === 92) i += 1; // backslash: skip the escaped character
        else if (c === 34) inString = false;
      } else if (c === 34) inString = true;
      else if (c === 123 || c === 91) { // { [
        depth += 1;
        if (depth > INPUT_LIMITS.depth) return `${what} nests more than ${INPUT_LIMITS.depth} objects or arrays deep; a disk file nests at most 4 deep`;
      } else if (c === 125 || c === 93) depth -= 1;
    }
    return null;
  }

  const tooLarge = (what, size) => `${what} is ${size.toLocaleString("en")} bytes or more, over the limit of ${INPUT_LIMITS.bytes.toLocaleString("en")} bytes for a disk file`;

  const slug = (name) => (name || "disk").toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "").slice(0, 60) || "disk";

  // A chemical formula with subscript digits (CO2 -> CO₂), for labels the page builds itself.
  const SUBSCRIPT = { 0: "₀", 1: "₁", 2: "₂", 3: "₃", 4: "₄", 5: "₅", 6: "₆", 7: "₇", 8: "₈", 9: "₉" };
  const formula = (key) => key.replace(/\d/g, (d) => SUBSCRIPT[d]);

  // The panels' own Web Workers (evolution, evolution fit): the page's worker
  // script (#worker-source) with TAIL after it, where TAIL sets a
  // `self.onmessage` in place of the views' one. Before TAIL come two helpers
  // the tails share: `initCore(m)` answers the "init" message (instantiates the
  // compiled module, replies "ready") and `progressReporter()` gives a callback
  // that posts {type: "progress", value} at most every 40 ms.
  const WORKER_SHARED = `
function initCore(m) {
  wasm_bindgen.initSync({ module: m.module });
  self.postMessage({ type: "ready" });
}
function progressReporter() {
  let last = 0;
  return (f) => {
    const now = performance.now();
    if (now - last > 40) { last = now; self.postMessage({ type: "progress", value: f }); }
  };
}`;

  function startWorker(tail) {
    const source = $("worker-source").textContent + "\n" + WORKER_SHARED + "\n" + tail;
    const url = URL.createObjectURL(new Blob([source], { type: "text/javascript" }));
    const worker = new Worker(url);
    URL.revokeObjectURL(url);
    return worker;
  }

  return {
    $, clone, pathId, getPath, setPath, prune, roundSlider, parseTyped, showNumber, base64urlEncode, base64urlDecode,
    difference, merge, download, INPUT_LIMITS, checkJsonBounds, tooLarge, slug, formula, startWorker,
  };
})();
