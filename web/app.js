// app.js: the page's behaviour. `cargo xtask dist` puts it in the page's one
// inline module script, after the wasm-bindgen glue (which defines `initSync`
// and `Explorer` in this same module scope) and the constant
// `NIVALIS_WASM_DEFLATE_BASE64` (the module, compressed). It holds no physics: every number comes from the
// Rust core through `Explorer`; this file builds the controls, keeps the state
// (URL fragment, undo), schedules recomputation and hands canvases to Rust.
// Grids too large for a frame are computed in a Web Worker (web/worker.js)
// that runs the same Rust code and sends back what the views need.

/* global initSync, Explorer, NIVALIS_WASM_DEFLATE_BASE64, wasm */

// ---------------------------------------------------------------------------
// The inputs. One entry per field of the nivalis-disk/1 file, grouped as the
// page shows them. `path` is the field's dotted path in the disk file, which is
// also what the reader's problem messages name. `range` is the allowed range
// in words (the reader enforces it); `slider` gives the sweep range of the
// slider, `log` when the quantity spans decades.
// ---------------------------------------------------------------------------

const GROUPS = [
  {
    title: "Scenario", id: "scenario", paths: ["name", "notes"],
    fields: [
      { path: "name", label: "Name of this disk", kind: "text" },
      { path: "notes", label: "Notes (where the values come from)", kind: "textarea" },
    ],
  },
  {
    title: "Star", id: "star", paths: ["star"],
    fields: [
      { path: "star.mass_msun", label: "Stellar mass", unit: "Msun", range: "> 0", slider: { min: 0.05, max: 10, log: true } },
      { path: "star.luminosity_lsun", label: "Stellar luminosity", unit: "Lsun", range: "> 0", slider: { min: 0.01, max: 1000, log: true } },
      { path: "star.effective_temperature_k", label: "Effective temperature", unit: "K", range: "2000 to 50000" },
      { path: "star.abundances.reference", label: "Solar abundance reference", kind: "select",
        options: [["asplund2009", "Asplund et al. 2009"], ["asplund2021", "Asplund, Amarsi & Grevesse 2021"]] },
      { subgroup: "star.abundances.offset_dex", title: "Stellar abundances relative to that reference [dex]", fields:
        ["C", "O", "N", "S", "Si", "Mg", "Fe"].map((e) => ({ path: `star.abundances.offset_dex.${e}`, label: `[${e}/H] offset`, unit: "dex", range: "-2 to 2" })) },
    ],
  },
  {
    title: "Disk", id: "disk", paths: ["disk.gas_mass_msun", "disk.characteristic_radius_au", "disk.surface_density_index", "disk.inner_radius_au",
      "disk.outer_radius_au", "disk.accretion_rate_msun_per_yr", "disk.flaring_angle", "disk.self_consistent_flaring", "disk.opacity",
      "disk.vertical_temperature", "disk.background_temperature_k", "disk.age_myr", "disk.midplane_temperature_scale"],
    note: "Ṁ is constant in radius; with the surface density it implies a radius-dependent α.",
    fields: [
      { path: "disk.gas_mass_msun", label: "Disk gas mass", unit: "Msun", range: "> 0", slider: { min: 1e-5, max: 1, log: true } },
      { path: "disk.characteristic_radius_au", label: "Characteristic radius R_c", unit: "au", range: "> 0", slider: { min: 1, max: 1000, log: true } },
      { path: "disk.surface_density_index", label: "Surface density index γ", unit: "", range: "-2 to below 2" },
      { path: "disk.inner_radius_au", label: "Inner edge", unit: "au", range: "> stellar radius, < outer edge" },
      { path: "disk.outer_radius_au", label: "Outer edge", unit: "au", range: "> inner edge" },
      { path: "disk.accretion_rate_msun_per_yr", label: "Accretion rate Ṁ", unit: "Msun/yr", range: "≥ 0 (0 = passive)", slider: { min: 1e-11, max: 1e-5, log: true } },
      { path: "disk.flaring_angle", label: "Flaring (grazing) angle φ", unit: "rad", range: "> 0 to 1", slider: { min: 0.005, max: 1, log: true } },
      { path: "disk.self_consistent_flaring", label: "Solve the grazing angle self-consistently (ignores φ)", kind: "checkbox" },
      { path: "disk.opacity.kind", label: "Opacity for accretion heating", kind: "select",
        options: [["constant", "constant Rosseland mean"], ["bell_lin_1994", "Bell & Lin 1994 power laws"]] },
      { path: "disk.opacity.rosseland_cm2_per_g", label: "Rosseland mean opacity (constant kind)", unit: "cm²/g of gas", range: "> 0" },
      { path: "disk.vertical_temperature.kind", label: "Vertical temperature", kind: "select",
        options: [["two_layer", "two layers (warm surface)"], ["isothermal", "isothermal columns"]] },
      { path: "disk.vertical_temperature.superheating", label: "Surface superheating factor", unit: "", range: "0.1 to 10" },
      { path: "disk.vertical_temperature.transition_scale_heights", label: "Height of the warm layer z_q", unit: "H", range: "> 0 to 20" },
      { path: "disk.vertical_temperature.delta", label: "Steepness of the transition δ", unit: "", range: "> 0 to 10" },
      { path: "disk.background_temperature_k", label: "Background temperature floor", unit: "K", range: "0 to 10000" },
      { path: "disk.midplane_temperature_scale", label: "Midplane temperature multiplier", unit: "", range: "0.1 to 10" },
      { path: "disk.age_myr", label: "Disk age (compared with equilibration times)", unit: "Myr", range: "> 0" },
    ],
  },
  {
    title: "Dust and radiation", id: "radiation", paths: ["disk.dust_to_gas", "disk.grain_radius_um", "disk.grain_density_g_cm3",
      "disk.cosmic_ray_rate_s", "disk.interstellar_fuv_habing", "star.fuv_1au_habing"],
    fields: [
      { path: "disk.dust_to_gas", label: "Dust-to-gas mass ratio", unit: "", range: "> 0 to 1" },
      { path: "disk.grain_radius_um", label: "Grain radius", unit: "µm", range: "> 0", slider: { min: 0.01, max: 1000, log: true } },
      { path: "disk.grain_density_g_cm3", label: "Grain material density", unit: "g/cm³", range: "> 0" },
      { path: "disk.cosmic_ray_rate_s", label: "Cosmic-ray ionisation rate at the surface", unit: "1/s per H₂", range: "≥ 0", slider: { min: 1e-20, max: 1e-14, log: true } },
      { path: "star.fuv_1au_habing", label: "Stellar FUV field at 1 au", unit: "G₀ (Habing)", range: "≥ 0" },
      { path: "disk.interstellar_fuv_habing", label: "Interstellar FUV field", unit: "G₀ (Habing)", range: "≥ 0" },
    ],
  },
  {
    title: "Ices", id: "ices", paths: ["ices"],
    note: "Every species is an independent pure ice: no mixing with or trapping in water ice.",
    fields: [
      { path: "ices.desorption", label: "Desorption", kind: "select",
        options: [["zeroth_order", "zeroth order (multilayer ice)"], ["first_order", "first order"], ["fixed_temperature", "step model (fixed condensation temperatures)"]] },
      { path: "ices.binding_energies", label: "Binding-energy set", kind: "select", options: [] /* filled from the core */ },
      { path: "ices.sticking", label: "Sticking coefficient", unit: "", range: "> 0 to 1" },
      { path: "ices.photodesorption", label: "Photodesorption", kind: "checkbox" },
      { path: "ices.cosmic_ray_desorption", label: "Cosmic-ray desorption", kind: "checkbox" },
      { overrides: true },
    ],
  },
  {
    title: "Composition", id: "composition", paths: ["composition"],
    fields: [
      { subgroup: "composition.carbon", title: "Carbon carriers (fractions of all carbon, sum 1)", fields:
        [["CO", "CO"], ["CO2", "CO₂"], ["CH4", "CH₄"], ["CH3OH", "CH₃OH"], ["HCN", "HCN"], ["refractory", "refractory"]].map(([k, l]) => (
          { path: `composition.carbon.${k}`, label: `Carbon in ${l}`, unit: "", range: "0 to 1", optionalZero: true })) },
      { subgroup: "composition.nitrogen", title: "Nitrogen carriers (fractions of the nitrogen left after HCN, sum 1)", fields:
        [["N2", "N₂"], ["NH3", "NH₃"]].map(([k, l]) => ({ path: `composition.nitrogen.${k}`, label: `Nitrogen in ${l}`, unit: "", range: "0 to 1", optionalZero: true })) },
      { subgroup: "composition.sulfur", title: "Sulfur carriers (fractions of all sulfur, sum 1)", fields:
        [["H2S", "H₂S"], ["refractory", "refractory sulfide"]].map(([k, l]) => ({ path: `composition.sulfur.${k}`, label: `Sulfur in ${l}`, unit: "", range: "0 to 1", optionalZero: true })) },
      { path: "composition.oxygen_per_silicon", label: "Oxygen atoms per silicon in silicates", unit: "", range: "0 to 10" },
      { path: "composition.soot_line_k", label: "Soot line (refractory carbon released)", unit: "K", range: "> 0" },
      { path: "composition.sulfide_release_k", label: "Sulfide release temperature", unit: "K", range: "> 0" },
      { path: "composition.silicate_sublimation_k", label: "Silicate sublimation temperature", unit: "K", range: "> 0" },
    ],
  },
  {
    title: "Grid", id: "grid", paths: ["grid"],
    fields: [
      { path: "grid.radial_cells", label: "Radial cells (log-spaced)", unit: "", range: "whole number 8 to 4096" },
      { path: "grid.vertical_cells", label: "Vertical cells per column", unit: "", range: "whole number 8 to 4096" },
      { path: "grid.max_height_scale_heights", label: "Top of each column", unit: "H", range: "1 to 20" },
    ],
  },
];

const SPECIES = ["H2O", "CO", "CO2", "CH4", "N2", "NH3", "CH3OH", "H2S", "HCN"];
const OVERRIDE_FIELDS = [
  ["binding_energy_k", "Binding energy", "K"],
  ["photodesorption_yield", "Photodesorption yield", "per photon"],
  ["condensation_temperature_k", "Condensation temperature (step model)", "K"],
];
const SUBSCRIPT = { 0: "₀", 1: "₁", 2: "₂", 3: "₃", 4: "₄", 5: "₅", 6: "₆", 7: "₇", 8: "₈", 9: "₉" };
const formula = (key) => key.replace(/\d/g, (d) => SUBSCRIPT[d]);

// The views: canvas id, what Rust draws there, and the readout element.
const VIEWS = [
  { view: "c_to_o", canvas: "canvas-c-to-o", readout: "readout-c-to-o" },
  { view: "temperature", canvas: "canvas-temperature", readout: "readout-temperature" },
  { view: "ice_map", canvas: "canvas-ice-map", readout: "readout-ice-map" },
  { view: "c_to_o_map", canvas: "canvas-c-to-o-map", readout: "readout-c-to-o-map" },
  { view: "abundances", canvas: "canvas-abundances", readout: "readout-abundances" },
];

// ---------------------------------------------------------------------------
// Small helpers.
// ---------------------------------------------------------------------------

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

function download(name, text, type) {
  const url = URL.createObjectURL(new Blob([text], { type }));
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
  const bytes = new TextEncoder().encode(text).length;
  if (bytes > INPUT_LIMITS.bytes) return tooLarge(what, bytes);
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

// ---------------------------------------------------------------------------
// Start the core.
// ---------------------------------------------------------------------------

// The module is embedded DEFLATE-compressed (cargo xtask dist): inflated with
// the browser's own DecompressionStream, then compiled. Top-level await: the
// rest of the page's script (and planet.js after it) runs once it is ready.
async function inflateRaw(bytes) {
  const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream("deflate-raw"));
  return new Uint8Array(await new Response(stream).arrayBuffer());
}
const wasmBytes = await inflateRaw(Uint8Array.from(atob(NIVALIS_WASM_DEFLATE_BASE64), (c) => c.charCodeAt(0)));
// Compiled once: the page instantiates it here, and the worker (large grids) gets the same module.
const nivalisModule = new WebAssembly.Module(wasmBytes);
initSync({ module: nivalisModule });
// `let`: rebuilt after a trap in the core (rebuildCore below); web/planet.js
// reads this same binding.
let explorer = new Explorer();
const DEFAULTS = Explorer.defaultDisk();
const SPECIES_INFO = Explorer.speciesInfo();
const DEMOS = JSON.parse($("demo-disks").textContent);

// Extension points for web/planet.js (the planet panel and figure downloads),
// which `cargo xtask dist` inlines after this file and which fills them in
// once app.js has started: `afterResult` runs after every new valid result is
// drawn, `fragmentParts` adds its state to the address, and `initialHash` is
// the address as opened (the first result rewrites location.hash before
// planet.js runs).
// `snapshot` and `restore` let undo cover the planet panel's inputs too: each
// undo step holds the disk and `snapshot()` of the page's other inputs.
const pageHooks = { afterResult: () => {}, fragmentParts: () => [], initialHash: location.hash, snapshot: () => null, restore: () => {} };

// Test hooks (documented in docs/page.md; used by tests/browser): the page's
// query string `?worker=force` sends every computation to the Web Worker and
// `?worker=never` keeps every one on the main thread, whatever the grid and
// the measured speed, so a test of either path does not depend on machine
// speed. Without a query the page chooses by predicted compute time.
const TEST_OPTIONS = new URLSearchParams(location.search);
const WORKER_MODE = ["force", "never"].includes(TEST_OPTIONS.get("worker")) ? TEST_OPTIONS.get("worker") : "auto";

// Explicit page state for tests and assistive tools, on <body>:
// data-state = "loading" | "computing" (the worker holds a job) | "ready"
// (the views show the current input's result) | "invalid" (the input is not
// valid; the views show the last valid result) | "failed" (the core could not
// be restarted); data-generation counts the results drawn since loading, so a
// test waits for "the next result" by generation, never by a timeout.
let generation = 0;
function setPageState(name) {
  document.body.dataset.state = name;
  document.body.dataset.generation = String(generation);
}
function resultShown() {
  generation += 1;
  lastGoodState = JSON.stringify(state);
}

// The last state whose result was drawn, for the restart after a trap.
let lastGoodState = null;

// ---------------------------------------------------------------------------
// State: `state` is the disk as edited (it may be invalid); the core keeps the
// last valid result. `history` holds earlier states for undo.
// ---------------------------------------------------------------------------

let state = clone(DEFAULTS);
let mapSpecies = "H2O";
let theme = "system"; // system | light | dark
const undoStack = [];
const redoStack = [];
let lastEditAt = 0;
let lastEditPath = null;
let valid = false;
const timings = { computeMs: NaN, drawMs: NaN, path: "main thread" };

// One undo step: the disk and the other inputs of the page (the planet panel's).
const undoEntry = () => JSON.stringify({ disk: state, page: pageHooks.snapshot() });

function restoreEntry(text) {
  const entry = JSON.parse(text);
  state = entry.disk;
  pageHooks.restore(entry.page);
}

function pushUndo(path) {
  // A run of edits of one field within a second (a slider drag, typing) is one undo step.
  const now = performance.now();
  if (path !== lastEditPath || now - lastEditAt > 1000) {
    undoStack.push(undoEntry());
    if (undoStack.length > 200) undoStack.shift();
    redoStack.length = 0;
  }
  lastEditAt = now;
  lastEditPath = path;
  updateUndoButtons();
}

function updateUndoButtons() {
  $("undo-button").disabled = undoStack.length === 0;
  $("redo-button").disabled = redoStack.length === 0;
}

function undo() {
  if (undoStack.length === 0) return;
  redoStack.push(undoEntry());
  restoreEntry(undoStack.pop());
  lastEditPath = null;
  afterStateChange();
}

function redo() {
  if (redoStack.length === 0) return;
  undoStack.push(undoEntry());
  restoreEntry(redoStack.pop());
  lastEditPath = null;
  afterStateChange();
}

function afterStateChange() {
  updateUndoButtons();
  fillControls();
  schedule();
}

// ---------------------------------------------------------------------------
// Controls.
// ---------------------------------------------------------------------------

const controls = new Map(); // path -> { input, slider, field }

function problemSlot(path) {
  const p = document.createElement("p");
  p.className = "problem";
  p.id = pathId(path) + "-problem";
  p.dataset.path = path;
  p.hidden = true;
  return p;
}

function buildField(field, container) {
  const id = pathId(field.path);
  const row = document.createElement("div");
  row.className = "field";
  const label = document.createElement("label");
  label.htmlFor = id;
  label.textContent = field.unit ? `${field.label} [${field.unit}]` : field.label;
  let input;
  let slider = null;
  if (field.kind === "select") {
    input = document.createElement("select");
    for (const [value, text] of field.options) input.add(new Option(text, value));
  } else if (field.kind === "checkbox") {
    input = document.createElement("input");
    input.type = "checkbox";
    row.classList.add("check");
  } else if (field.kind === "textarea") {
    input = document.createElement("textarea");
    input.rows = 2;
  } else {
    input = document.createElement("input");
    input.type = "text";
    if (field.kind !== "text") {
      input.inputMode = "decimal";
      input.spellcheck = false;
      input.autocomplete = "off";
      input.className = "number";
    }
  }
  input.id = id;
  input.name = field.path;
  const problem = problemSlot(field.path);
  input.setAttribute("aria-describedby", problem.id + (field.range ? " " + id + "-range" : ""));
  if (field.kind === "checkbox") {
    row.append(input, label);
  } else {
    row.append(label);
    const line = document.createElement("div");
    line.className = "inputs";
    if (field.slider) {
      slider = document.createElement("input");
      slider.type = "range";
      slider.id = id + "-slider";
      const s = field.slider;
      slider.min = s.log ? Math.log10(s.min) : s.min;
      slider.max = s.log ? Math.log10(s.max) : s.max;
      slider.step = s.log ? 0.01 : (s.max - s.min) / 200;
      const sliderLabel = document.createElement("label");
      sliderLabel.htmlFor = slider.id;
      sliderLabel.className = "visually-hidden";
      sliderLabel.textContent = `${label.textContent}, ${s.log ? "logarithmic " : ""}slider from ${s.min} to ${s.max}`;
      line.append(sliderLabel, slider);
      slider.addEventListener("input", () => {
        const x = Number(slider.value);
        const value = roundSlider(s.log ? 10 ** x : x);
        input.value = showNumber(value);
        edit(field.path, value);
      });
    }
    line.append(input);
    row.append(line);
    if (field.range) {
      const range = document.createElement("span");
      range.className = "range";
      range.id = id + "-range";
      range.textContent = `allowed: ${field.range}` + (field.slider ? `; slider ${field.slider.min} to ${field.slider.max}${field.slider.log ? " (log)" : ""}` : "");
      row.append(range);
    }
  }
  row.append(problem);
  container.append(row);

  const onEdit = () => {
    let value;
    if (field.kind === "checkbox") value = input.checked;
    else if (field.kind === "select" || field.kind === "text" || field.kind === "textarea") value = input.value;
    else if (field.optional && input.value.trim() === "") value = undefined; // blank override = built-in value
    else if (field.optionalZero && input.value.trim() === "") value = 0;
    else value = parseTyped(input.value);
    if (slider && typeof value === "number") setSlider(field, slider, value);
    edit(field.path, value);
  };
  input.addEventListener(field.kind === "checkbox" || field.kind === "select" ? "change" : "input", onEdit);
  controls.set(field.path, { input, slider, field });
}

function setSlider(field, slider, value) {
  const s = field.slider;
  if (s.log) slider.value = value > 0 ? Math.log10(value) : slider.min;
  else slider.value = value;
}

function buildOverrides(container) {
  const box = document.createElement("fieldset");
  box.className = "subgroup overrides";
  const legend = document.createElement("legend");
  legend.textContent = "Per-species data (blank = built-in value, shown greyed)";
  box.append(legend, problemSlot("ices.species_overrides"));
  for (const sp of SPECIES) {
    const details = document.createElement("details");
    const summary = document.createElement("summary");
    summary.textContent = formula(sp);
    details.append(summary, problemSlot(`ices.species_overrides.${sp}`));
    for (const [key, label, unit] of OVERRIDE_FIELDS) {
      buildField({ path: `ices.species_overrides.${sp}.${key}`, label: `${formula(sp)} ${label.toLowerCase()}`, unit, optional: true,
        range: key === "photodesorption_yield" ? "0 to 1; blank = built-in" : "> 0; blank = built-in" }, details);
    }
    box.append(details);
  }
  container.append(box);
}

function buildControls() {
  const form = $("controls");
  const setSelect = (path, options) => {
    for (const g of GROUPS) for (const f of g.fields) if (f.path === path) f.options = options;
  };
  setSelect("ices.binding_energies", SPECIES_INFO.binding_energy_sets.map((k) => [k, k.replace(/_/g, " ")]));
  for (const group of GROUPS) {
    const fs = document.createElement("fieldset");
    fs.className = "group";
    fs.id = "group-" + group.id;
    const legend = document.createElement("legend");
    legend.textContent = group.title;
    fs.append(legend);
    if (group.note) {
      const note = document.createElement("p");
      note.className = "note";
      note.textContent = group.note;
      fs.append(note);
    }
    for (const p of group.paths) if (!p.includes(".") || group.id === "star" || group.id === "ices") fs.append(problemSlot(p));
    for (const field of group.fields) {
      if (field.overrides) buildOverrides(fs);
      else if (field.subgroup) {
        const sub = document.createElement("fieldset");
        sub.className = "subgroup compact";
        const l = document.createElement("legend");
        l.textContent = field.title;
        sub.append(l, problemSlot(field.subgroup));
        for (const f of field.fields) buildField(f, sub);
        fs.append(sub);
      } else buildField(field, fs);
    }
    form.append(fs);
  }
  // Problem slots for objects whose fields are all listed under other paths.
  for (const path of ["disk.opacity", "disk.vertical_temperature", "disk", "star.abundances", "(file)", "(model)"]) {
    if (!document.getElementById(pathId(path) + "-problem")) {
      const anchor = path === "disk.opacity" ? controls.get("disk.opacity.kind").input.closest(".field")
        : path === "disk.vertical_temperature" ? controls.get("disk.vertical_temperature.kind").input.closest(".field")
        : path.startsWith("disk") ? $("group-disk").querySelector("legend")
        : path.startsWith("star") ? $("group-star").querySelector("legend") : null;
      if (anchor) anchor.after(problemSlot(path));
    }
  }
}

// Shows `state` in the controls (after undo, a demo, a file, the URL).
function fillControls() {
  for (const [path, { input, slider, field }] of controls) {
    const v = getPath(state, path);
    if (field.kind === "checkbox") input.checked = Boolean(v);
    else if (field.kind === "select") input.value = v == null ? input.options[0].value : v;
    else input.value = showNumber(v);
    if (slider && typeof v === "number") setSlider(field, slider, v);
  }
  refreshPlaceholders();
  $("map-species").value = mapSpecies;
}

// Blank override fields show the built-in value of the chosen binding-energy set.
function refreshPlaceholders() {
  const set = getPath(state, "ices.binding_energies");
  for (const info of SPECIES_INFO.species) {
    const base = `ices.species_overrides.${info.species}.`;
    const values = {
      binding_energy_k: info.binding_energy_k[set] ?? Object.values(info.binding_energy_k)[0],
      photodesorption_yield: info.photodesorption_yield,
      condensation_temperature_k: info.condensation_temperature_k,
    };
    for (const [key, value] of Object.entries(values)) {
      const c = controls.get(base + key);
      if (c) c.input.placeholder = String(value);
    }
  }
}

function clearNotice() {
  const banner = $("banner");
  if (banner.dataset.kind === "notice") {
    banner.dataset.kind = "";
    banner.hidden = true;
    banner.textContent = "";
  }
}

function edit(path, value) {
  clearNotice();
  pushUndo(path);
  setPath(state, path, value);
  if (path === "ices.binding_energies") refreshPlaceholders();
  schedule();
}

// ---------------------------------------------------------------------------
// Compute and draw, at most once per animation frame.
// ---------------------------------------------------------------------------

let framePending = false;
let drawnOnce = false;
let lastSamples = 200 * 81;

// Above this predicted compute time (three frames) the model runs in the
// page's Web Worker, so the page keeps responding; below it, on the main
// thread, where the result is drawn in the same frame. Grids up to twice the
// default's samples always stay on the main thread: the worker's packing and
// hand-over would cost them more than they save, and a single slow run on a
// busy machine must not send the default grid there.
const WORKER_ABOVE_MS = 50;
const MAIN_THREAD_SAMPLES = 2 * 200 * 81;

function schedule() {
  if (framePending) return;
  framePending = true;
  requestAnimationFrame(runNow);
}

function sampleCount(disk) {
  const r = Number(getPath(disk, "grid.radial_cells"));
  const z = Number(getPath(disk, "grid.vertical_cells"));
  return Number.isFinite(r) && Number.isFinite(z) ? r * (z + 1) : lastSamples;
}

// Compute time per sample on the main thread: the fastest of the last few runs
// (the first run after loading is slower while the engine warms up, and must
// not send the default grid to the worker). The worker's own rate (with the
// packing of its result) only feeds its progress estimate.
const recentPerSample = [];
let workerPerSample = NaN;
let warmedUp = false;

function notePerSample(ms, samples) {
  if (!warmedUp) {
    // The page's first run includes the engine's first compilation of the module.
    warmedUp = true;
    return;
  }
  recentPerSample.push(ms / Math.max(1, samples));
  if (recentPerSample.length > 5) recentPerSample.shift();
}

// Before any measurement: about 1.5 µs per sample, what the default disk took
// in headless Chromium on a shared two-core machine (cargo xtask bench).
const PRIOR_MS_PER_SAMPLE = 0.0015;

function predictedMs(samples) {
  return samples * (recentPerSample.length ? Math.min(...recentPerSample) : PRIOR_MS_PER_SAMPLE);
}

function useWorker(samples) {
  if (typeof Worker === "undefined" || WORKER_MODE === "never") return false;
  if (WORKER_MODE === "force") return true;
  return samples > MAIN_THREAD_SAMPLES && predictedMs(samples) > WORKER_ABOVE_MS;
}

function runNow() {
  framePending = false;
  try {
    computeAndDraw();
  } catch (error) {
    if (!isCoreFailure(error)) throw error;
    recoverFromTrap(error);
  }
}

// The typed inputs' size, checked before the state goes to the core (text
// fields are the only way to make a state large; nothing typed can nest).
function typedInputProblem(disk) {
  const problem = checkJsonBounds(JSON.stringify(disk), "The disk as typed");
  return problem ? [{ path: "(file)", message: problem }] : [];
}

function computeAndDraw() {
  const samples = sampleCount(state);
  const disk = prune(clone(state));
  const tooBig = typedInputProblem(disk);
  if (tooBig.length) {
    cancelWorkerJob();
    showProblems(tooBig);
    lastRunOk = false;
    finishRun();
    return;
  }
  if (useWorker(samples)) {
    computeInWorker(samples);
    return;
  }
  // A main-thread result replaces whatever a worker was still computing.
  cancelWorkerJob();
  const t0 = performance.now();
  const result = explorer.update(disk);
  const t1 = performance.now();
  showProblems(result.problems || []);
  if (result.ok) {
    valid = true;
    timings.computeMs = t1 - t0;
    lastSamples = result.summary.samples;
    notePerSample(timings.computeMs, lastSamples);
    const t2 = performance.now();
    // The first result draws everything (nothing is known to be on screen yet).
    timings.drewAll = !drawnOnce;
    drawAll(!drawnOnce);
    drawnOnce = true;
    fillSnowlineTable();
    timings.drawMs = performance.now() - t2;
    writeFragment();
    timings.path = "main thread";
    showStatus(result.summary);
    resultShown();
    pageHooks.afterResult();
  }
  lastRunOk = result.ok;
  finishRun();
  afterFirstAddressResult(result);
}

// Whether the latest computed input was valid (its result is on screen).
let lastRunOk = false;

function finishRun() {
  document.body.dataset.ready = "true";
  setPageState(job ? "computing" : lastRunOk ? "ready" : "invalid");
  if (dirty.size === 0) settleWaiters();
}

// ---------------------------------------------------------------------------
// A trap in the core (a WebAssembly RuntimeError: out of memory, a stack
// overflow, a Rust panic, which aborts) leaves its instance unusable: any later
// call fails with "recursive use of an object detected". The page then builds
// a new instance from the same compiled module, returns to the last state
// whose result was drawn (the state that trapped is not tried again), and says
// so in a banner. A second trap while restoring falls back to the default
// disk; a third stops with a banner (data-state="failed").
// ---------------------------------------------------------------------------

let coreRestarts = 0;
let recovering = false;

function isCoreFailure(error) {
  if (typeof WebAssembly !== "undefined" && error instanceof WebAssembly.RuntimeError) return true;
  const text = String(error && error.message ? error.message : error);
  return /recursive use of an object detected|memory access out of bounds|unreachable|Maximum call stack size exceeded/.test(text);
}

// A new instance of the compiled module and a new Explorer on it. The glue's
// module-scope `wasm` (same inline module script) is reset so `initSync`
// instantiates again; the old Explorer is freed first so its finaliser cannot
// later free a pointer of the new instance.
function rebuildCore() {
  try { explorer.free(); } catch (_) { /* the trapped instance may refuse; its finaliser is unregistered either way */ }
  wasm = undefined;
  initSync({ module: nivalisModule });
  explorer = new Explorer();
  coreRestarts += 1;
}

function recoverFromTrap(error, attempt = 1) {
  if (recovering && attempt === 1) return;
  recovering = true;
  const what = String(error && error.message ? error.message : error);
  try {
    cancelWorkerJob();
    rebuildCore();
    valid = false;
    drawnOnce = false;
    state = attempt === 1 && lastGoodState ? JSON.parse(lastGoodState) : clone(DEFAULTS);
    fillControls();
    computeAndDraw();
    showBanner(`The computation core stopped (${what}) and was restarted; `
      + (attempt === 1 && lastGoodState ? "the inputs are back at the last disk that gave a result." : "the default disk is shown."));
  } catch (again) {
    if (attempt < 2 && isCoreFailure(again)) {
      recoverFromTrap(again, attempt + 1);
    } else {
      showBanner(`The computation core stopped (${what}) and could not be restarted: ${again && again.message ? again.message : again}. Reload the page.`);
      setPageState("failed");
    }
  } finally {
    if (attempt === 1) recovering = false;
  }
}

// Traps in event handlers (the planet panel, downloads, readouts) reach here.
window.addEventListener("error", (event) => {
  if (isCoreFailure(event.error || event.message)) {
    event.preventDefault();
    recoverFromTrap(event.error || new Error(event.message));
  }
});
window.addEventListener("unhandledrejection", (event) => {
  if (isCoreFailure(event.reason)) {
    event.preventDefault();
    recoverFromTrap(event.reason);
  }
});

function showStatus(summary) {
  $("status").textContent = `${summary.name || "Unnamed disk"}: ${summary.radial_cells} × ${summary.vertical_cells} cells, star C/O ${summary.star_c_to_o.toFixed(3)}. `
    + `Computed ${timings.path === "worker" ? "in the background " : ""}in ${timings.computeMs.toFixed(1)} ms, ${timings.drewAll ? "all views (first drawing)" : "views on screen"} drawn in ${timings.drawMs.toFixed(1)} ms.`;
}

// ---------------------------------------------------------------------------
// The Web Worker for large grids. Its script is the no-modules glue plus
// worker.js, embedded as inert text and started from a blob: URL (the page's
// CSP allows `worker-src blob:` for exactly this). A new edit while it computes
// ends it (terminate) and starts afresh, so only the latest state is computed.
// ---------------------------------------------------------------------------

let worker = null;
let jobId = 0;
let job = null; // { id, started, predicted, samples }

function startWorker() {
  const url = URL.createObjectURL(new Blob([$("worker-source").textContent], { type: "text/javascript" }));
  worker = new Worker(url);
  worker.onmessage = onWorkerMessage;
  worker.onerror = (e) => {
    showBanner(`The background computation failed: ${e.message || "unknown error"}. Showing the last result.`);
    job = null;
    hideProgress();
    lastRunOk = false;
    finishRun();
  };
  worker.postMessage({ type: "init", module: nivalisModule });
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}

function cancelWorkerJob() {
  if (!job) return;
  worker.terminate();
  worker = null;
  job = null;
  hideProgress();
}

function computeInWorker(samples) {
  cancelWorkerJob();
  if (!worker) startWorker();
  const expected = Number.isFinite(workerPerSample) ? samples * workerPerSample : 1.5 * predictedMs(samples);
  job = { id: ++jobId, started: performance.now(), predicted: expected, samples };
  worker.postMessage({ type: "compute", id: job.id, disk: prune(clone(state)), species: mapSpecies });
  showProgress();
  setPageState("computing");
}

function showProgress() {
  const box = $("busy");
  box.hidden = false;
  document.body.classList.add("is-busy");
  const tick = () => {
    if (!job) return;
    const elapsed = performance.now() - job.started;
    $("busy-progress").value = Math.min(0.95, elapsed / Math.max(1, job.predicted));
    $("busy-text").textContent = `Computing ${job.samples.toLocaleString("en")} samples in the background: ${(elapsed / 1000).toFixed(1)} s of about ${(job.predicted / 1000).toFixed(1)} s. The views show the last result meanwhile.`;
    requestAnimationFrame(tick);
  };
  tick();
}

function hideProgress() {
  $("busy").hidden = true;
  document.body.classList.remove("is-busy");
}

// Test hook: worker messages held back (see window.__nivalisTest), so a test
// can look at the page while a job is pending without racing the worker.
let holdWorker = false;
const heldMessages = [];

function onWorkerMessage(event) {
  if (holdWorker) {
    heldMessages.push(event);
    return;
  }
  try {
    handleWorkerMessage(event);
  } catch (error) {
    if (!isCoreFailure(error)) throw error;
    recoverFromTrap(error);
  }
}

function handleWorkerMessage(event) {
  const message = event.data;
  if (message.type === "result" && job && message.id === job.id) {
    const { result } = message;
    const samples = job.samples;
    job = null;
    hideProgress();
    showProblems(result.problems || []);
    if (result.ok) {
      explorer.loadPacket(result);
      valid = true;
      timings.computeMs = result.computeMs;
      timings.packMs = result.packMs;
      timings.path = "worker";
      lastSamples = samples;
      notePerSample(result.computeMs, samples);
      workerPerSample = (result.computeMs + result.packMs) / Math.max(1, samples);
      const t2 = performance.now();
      timings.drewAll = !drawnOnce;
      drawAll(!drawnOnce);
      drawnOnce = true;
      fillSnowlineTable();
      timings.drawMs = performance.now() - t2;
      writeFragment();
      showStatus(result.summary);
      resultShown();
      pageHooks.afterResult();
    }
    lastRunOk = result.ok;
    finishRun();
    afterFirstAddressResult(result);
  } else if (message.type === "map") {
    explorer.loadView("ice_map", message.species, message.parts);
    if (message.species === mapSpecies) drawView(VIEWS.find((v) => v.view === "ice_map"));
  } else if (message.type === "error") {
    if (job && message.id === job.id) {
      job = null;
      hideProgress();
    }
    showBanner(`The background computation failed: ${message.message}`);
    // Its core may be left unusable (a trap); the next job starts a new worker.
    if (worker && !job) {
      worker.terminate();
      worker = null;
    }
    lastRunOk = false;
    finishRun();
  }
}

function showProblems(problems) {
  for (const el of document.querySelectorAll(".problem")) {
    el.hidden = true;
    el.textContent = "";
  }
  for (const el of document.querySelectorAll("[aria-invalid]")) el.removeAttribute("aria-invalid");
  const banner = $("banner");
  if (problems.length === 0) {
    // A notice (a refused file, a cancelled computation) stays until the next edit.
    if (banner.dataset.kind !== "notice") {
      banner.hidden = true;
      banner.textContent = "";
    }
    return;
  }
  banner.dataset.kind = "problems";
  const unplaced = [];
  for (const p of problems) {
    const slot = findSlot(p.path);
    if (slot) {
      slot.hidden = false;
      slot.textContent = (slot.textContent ? slot.textContent + " " : "") + (slot.dataset.path === p.path ? p.message : `${p.path}: ${p.message}`);
      const c = controls.get(p.path);
      if (c) c.input.setAttribute("aria-invalid", "true");
      const details = slot.closest("details");
      if (details) details.open = true;
    } else unplaced.push(`${p.path}: ${p.message}`);
  }
  banner.hidden = false;
  banner.className = "banner warn";
  banner.textContent = (valid ? "This input is not valid, so the results below are still those of the last valid disk. " : "This input is not valid. ")
    + (unplaced.length ? unplaced.join(" · ") : `${problems.length} problem${problems.length > 1 ? "s" : ""}, shown beside the field${problems.length > 1 ? "s" : ""}.`);
}

// The slot of a problem: the field's own, else that of the nearest enclosing object.
function findSlot(path) {
  let p = path;
  while (p) {
    const el = document.getElementById(pathId(p) + "-problem");
    if (el) return el;
    const i = p.lastIndexOf(".");
    if (i < 0) break;
    p = p.slice(0, i);
  }
  return null;
}

// The system's colour scheme, asked once (a new query per drawn view cost time on every edit).
const darkScheme = matchMedia("(prefers-color-scheme: dark)");

function themeName() {
  if (theme !== "system") return theme;
  return darkScheme.matches ? "dark" : "light";
}

// Canvas sizes in CSS pixels, kept by a ResizeObserver: asking the layout
// (getBoundingClientRect) while drawing would force a layout of the whole page
// after every change of the snowline table.
const cssSizes = new Map();
// Views on screen (IntersectionObserver): drawn in the same frame as the
// compute; the others are marked dirty and drawn when the browser is idle or
// when they scroll into view.
const onScreen = new Set();
const dirty = new Set();
let idleHandle = 0;
const drawnWaiters = [];

function sizeCanvas(canvas) {
  const ratio = window.devicePixelRatio || 1;
  let size = cssSizes.get(canvas.id);
  if (!size) {
    const rect = canvas.getBoundingClientRect();
    size = { width: rect.width, height: rect.height };
    cssSizes.set(canvas.id, size);
  }
  const w = Math.max(200, Math.round(size.width * ratio));
  const h = Math.max(150, Math.round(size.height * ratio));
  if (canvas.width !== w || canvas.height !== h) {
    canvas.width = w;
    canvas.height = h;
  }
  return ratio;
}

function drawView(v) {
  const canvas = $(v.canvas);
  const options = { theme: themeName(), species: mapSpecies, pixelRatio: sizeCanvas(canvas) };
  try {
    explorer.draw(v.view, v.canvas, options);
    if (v.view === "ice_map") canvas.dataset.species = mapSpecies;
  } catch (e) {
    $(v.readout).textContent = `This view could not be drawn: ${e.message || e}`;
  }
  dirty.delete(v.view);
}

// Draws the views on screen now (all of them with `everything`), the rest later.
function drawAll(everything = false) {
  if (!valid) return;
  for (const v of VIEWS) {
    if (everything || onScreen.has(v.canvas)) drawView(v);
    else dirty.add(v.view);
  }
  if (dirty.size > 0 && !idleHandle) idleHandle = requestIdleCallback(drawDirty, { timeout: 400 });
  if (dirty.size === 0) settleWaiters();
}

function drawDirty() {
  idleHandle = 0;
  for (const v of VIEWS) if (dirty.has(v.view)) drawView(v);
  settleWaiters();
}

function settleWaiters() {
  while (drawnWaiters.length) drawnWaiters.pop()();
}

function observeCanvases() {
  const sizes = new ResizeObserver((entries) => {
    let changed = false;
    for (const e of entries) {
      const box = e.contentBoxSize && e.contentBoxSize[0];
      const size = box ? { width: box.inlineSize, height: box.blockSize } : { width: e.contentRect.width, height: e.contentRect.height };
      const old = cssSizes.get(e.target.id);
      if (!old || old.width !== size.width || old.height !== size.height) {
        cssSizes.set(e.target.id, size);
        changed = true;
      }
    }
    if (changed && valid) drawAll();
  });
  const seen = new IntersectionObserver((entries) => {
    for (const e of entries) {
      if (e.isIntersecting) {
        onScreen.add(e.target.id);
        const v = VIEWS.find((x) => x.canvas === e.target.id);
        if (v && dirty.has(v.view) && valid) drawView(v);
      } else onScreen.delete(e.target.id);
    }
  }, { rootMargin: "200px 0px" });
  for (const v of VIEWS) {
    sizes.observe($(v.canvas));
    seen.observe($(v.canvas));
  }
}

function cell(text, attrs = {}) {
  const td = document.createElement("td");
  td.textContent = text;
  for (const [k, v] of Object.entries(attrs)) td.setAttribute(k, v);
  return td;
}

const sig = (x, n = 3) => (x == null ? "–" : Number(x.toPrecision(n)).toString());

// The table's rows as last filled in (JSON): an edit that leaves them as they
// were (the name, a field of no effect) does not rebuild the table.
let shownTable = "";

function fillSnowlineTable() {
  const rows = explorer.snowlineTable();
  const text = JSON.stringify(rows);
  if (text === shownTable) return;
  shownTable = text;
  const body = $("snowline-table").tBodies[0];
  body.replaceChildren();
  for (const row of rows) {
    const lines = row.snowlines.length ? row.snowlines : [null];
    lines.forEach((line, i) => {
      const tr = document.createElement("tr");
      tr.dataset.species = row.species;
      if (i === 0) {
        const th = document.createElement("th");
        th.scope = "row";
        th.rowSpan = lines.length;
        th.textContent = formula(row.species);
        tr.append(th);
      }
      if (line) {
        tr.append(cell(sig(line.radius_au), { "data-radius-au": String(line.radius_au) }),
          cell((line.direction === "freeze_out" ? "freezes out (ice outside)" : "desorbs (gas outside)")
            + (line.out_of_equilibrium ? "; not in equilibrium at the disk's age" : "")),
          cell(sig(line.midplane_temperature_k)));
      } else {
        const why = row.inner_edge === "absent" ? "species absent (no carrier)"
          : row.inner_edge === "ice_at_inner_edge" ? "none: ice everywhere on the grid" : "none: gas everywhere on the grid";
        tr.append(cell(why, { colspan: "3" }));
      }
      if (i === 0) {
        tr.append(cell(sig(row.condensation_temperature_k), { rowspan: String(lines.length) }),
          cell(sig(row.binding_energy_k, 4), { rowspan: String(lines.length) }),
          cell(row.abundance_per_h > 0 ? row.abundance_per_h.toExponential(2) : "0", { rowspan: String(lines.length) }));
      }
      body.append(tr);
    });
  }
}

// ---------------------------------------------------------------------------
// The URL fragment: #disk=<base64url of the compact disk JSON>&species=..&theme=..
// ---------------------------------------------------------------------------

// The longest address the page writes. Chromium refuses addresses over 2 MB
// (its documented URL limit) and other browsers less; past this the state is
// not put in the address (which would silently keep an older one) and the page
// says so, offering to save a disk file instead.
const ADDRESS_LIMIT = 64 * 1024;

function writeFragment() {
  const diff = difference(prune(clone(state)), DEFAULTS);
  const parts = [`disk=${Explorer.encodeFragment(diff)}`];
  if (mapSpecies !== "H2O") parts.push(`species=${mapSpecies}`);
  if (theme !== "system") parts.push(`theme=${theme}`);
  parts.push(...pageHooks.fragmentParts());
  let hash = "#" + parts.join("&");
  const tooLong = hash.length > ADDRESS_LIMIT;
  if (tooLong) hash = "#disk=too-large";
  $("address-warning").hidden = !tooLong;
  if (tooLong) {
    $("address-warning-text").textContent = `This disk is too large for the address (${(parts.join("&").length + 1).toLocaleString("en")} characters, limit ${ADDRESS_LIMIT.toLocaleString("en")}), so a bookmark or a reload will not restore it. Save it as a disk file to keep it.`;
  }
  if (location.hash !== hash) history.replaceState(null, "", hash);
}

function readFragment() {
  const params = new URLSearchParams(location.hash.slice(1));
  if (params.has("species") && SPECIES.includes(params.get("species"))) mapSpecies = params.get("species");
  if (["light", "dark", "system"].includes(params.get("theme"))) theme = params.get("theme");
  if (!params.has("disk")) return false;
  if (params.get("disk") === "too-large") {
    showBanner("The disk of this address was too large to be kept in it; showing the default disk.");
    return false;
  }
  // Decoded in Rust (crates/disk_files fragment.rs): size and nesting depth are checked before deserialising.
  const decoded = Explorer.decodeFragment(params.get("disk"));
  if (!decoded.ok) {
    const why = decoded.problems.map((p) => `${p.path}: ${p.message}`).join(" · ");
    showBanner(`The address holds a disk that cannot be read (${why}); showing the default disk.`);
    return false;
  }
  state = merge(DEFAULTS, decoded.disk);
  return true;
}

function showBanner(text) {
  const banner = $("banner");
  banner.dataset.kind = "notice";
  banner.hidden = false;
  banner.className = "banner warn";
  banner.textContent = text;
}

// ---------------------------------------------------------------------------
// Disk files: demos, Open, Save.
// ---------------------------------------------------------------------------

// Loads a whole disk (demo or file). Valid: it becomes the state (resolved, so
// every control shows a value). Invalid: nothing changes but the message.
function loadDisk(result, what) {
  if (!result.ok) {
    showBanner(`${what} was not loaded: ` + result.problems.map((p) => `${p.path}: ${p.message}`).join(" · "));
    return;
  }
  undoStack.push(undoEntry());
  redoStack.length = 0;
  lastEditPath = null;
  state = explorer.resolvedDisk();
  valid = true;
  clearNotice();
  showProblems([]);
  afterStateChange();
}

function buildDiskPicker() {
  const picker = $("demo-picker");
  picker.add(new Option("default disk", ""));
  for (const [file, disk] of Object.entries(DEMOS)) picker.add(new Option(disk.name || file, file));
  picker.addEventListener("change", () => {
    const file = picker.value;
    loadDisk(explorer.update(file ? DEMOS[file] : {}), file ? `Demo ${file}` : "The default disk");
  });
}

// ---------------------------------------------------------------------------
// Hover readouts: Rust maps the canvas pixel back to data (ChartLayout).
// ---------------------------------------------------------------------------

function attachReadouts() {
  for (const v of VIEWS) {
    const canvas = $(v.canvas);
    const out = $(v.readout);
    const show = (ev) => {
      const rect = canvas.getBoundingClientRect();
      const x = (ev.clientX - rect.left) * (canvas.width / rect.width);
      const y = (ev.clientY - rect.top) * (canvas.height / rect.height);
      const text = explorer.readout(v.canvas, x, y);
      out.textContent = text || "Point inside the plotting area for values.";
    };
    canvas.addEventListener("mousemove", show);
    canvas.addEventListener("mouseleave", () => { out.textContent = "Point at the chart for values."; });
  }
}

// ---------------------------------------------------------------------------
// Wiring.
// ---------------------------------------------------------------------------

function setTheme(next) {
  theme = next;
  document.documentElement.dataset.theme = theme;
  $("theme-button").textContent = `Theme: ${theme}`;
  drawAll();
  if (valid) writeFragment();
}

function start() {
  buildControls();
  buildDiskPicker();
  const speciesPicker = $("map-species");
  for (const sp of SPECIES) speciesPicker.add(new Option(formula(sp), sp));
  speciesPicker.addEventListener("change", () => {
    mapSpecies = speciesPicker.value;
    const view = VIEWS.find((v) => v.view === "ice_map");
    if (valid) {
      // After a worker result, another species' map comes from the worker (it holds the model).
      if (explorer.hasView("ice_map", mapSpecies)) drawView(view);
      else if (worker && !job) worker.postMessage({ type: "map", id: 0, species: mapSpecies });
      writeFragment();
    }
  });

  const fromAddress = readFragment();
  document.documentElement.dataset.theme = theme;
  $("theme-button").textContent = `Theme: ${theme}`;
  fillControls();
  $("address-save").addEventListener("click", () => $("save-button").click());

  $("theme-button").addEventListener("click", () => setTheme({ system: "light", light: "dark", dark: "system" }[theme]));
  matchMedia("(prefers-color-scheme: dark)").addEventListener("change", () => { if (theme === "system") drawAll(); });
  $("cancel-button").addEventListener("click", () => {
    cancelWorkerJob();
    showBanner("The background computation was cancelled; the views show the last result.");
    lastRunOk = false;
    finishRun();
  });
  $("undo-button").addEventListener("click", undo);
  $("redo-button").addEventListener("click", redo);
  document.addEventListener("keydown", (ev) => {
    if (!(ev.ctrlKey || ev.metaKey)) return;
    const key = ev.key.toLowerCase();
    if (key === "z" && !ev.shiftKey) { ev.preventDefault(); undo(); }
    else if ((key === "z" && ev.shiftKey) || key === "y") { ev.preventDefault(); redo(); }
  });
  $("open-button").addEventListener("click", () => $("open-file").click());
  $("open-file").addEventListener("change", () => {
    const file = $("open-file").files[0];
    if (!file) return;
    $("open-file").value = "";
    // The size is known before reading: a file over the limit is never read.
    if (file.size > INPUT_LIMITS.bytes) {
      showBanner(`File ${file.name} was not loaded: ${tooLarge("it", file.size)}.`);
      return;
    }
    const reader = new FileReader();
    reader.onload = () => {
      const text = String(reader.result);
      const problem = checkJsonBounds(text, "it");
      if (problem) showBanner(`File ${file.name} was not loaded: ${problem}.`);
      else loadDisk(explorer.updateFromText(text), `File ${file.name}`);
    };
    reader.onerror = () => showBanner(`File ${file.name} could not be read: ${reader.error}`);
    reader.readAsText(file);
  });
  $("save-button").addEventListener("click", () => {
    const text = explorer.exportText("disk");
    if (text) download(`${slug(getPath(state, "name"))}.json`, text, "application/json");
  });
  const extensions = { profile_csv: "-profile.csv", profile_ecsv: "-profile.ecsv", profile_json: "-profile.json",
    structure_csv: "-structure.csv", snowlines_json: "-snowlines.json", disk: ".json" };
  for (const button of document.querySelectorAll("[data-export]")) {
    button.addEventListener("click", () => {
      const what = button.dataset.export;
      const text = explorer.exportText(what);
      if (text) download(slug(getPath(state, "name")) + extensions[what], text, what.endsWith("csv") ? "text/csv" : "text/plain");
    });
  }
  attachReadouts();
  observeCanvases();

  addressPending = fromAddress;
  runNow();
}

// Set while the disk read from the address has not been computed yet.
let addressPending = false;

// After each computed result: an invalid disk from the address on first load
// gives way to the default disk, with the address disk's problems listed, so
// the page never waits on nothing.
function afterFirstAddressResult(result) {
  if (!addressPending) return;
  addressPending = false;
  if (result.ok) return;
  const problems = (result.problems || []).map((p) => `${p.path}: ${p.message}`);
  state = clone(DEFAULTS);
  fillControls();
  schedule();
  showBanner(`The disk in the address is not valid, so the default disk is shown. Its problems: ${problems.join(" · ") || "unknown"}`);
}

// For the browser tests and the benchmark (tests/browser): the running core and
// the page's own compute and draw steps, so they time exactly what the page does.
window.nivalis = {
  get explorer() { return explorer; },
  timings,
  get generation() { return generation; },
  get coreRestarts() { return coreRestarts; },
  get state() { return clone(state); },
  computeOnce: () => explorer.update(prune(clone(state))),
  drawOnce: () => { drawAll(true); fillSnowlineTable(); },
  // The page's own path after an edit (compute, views on screen, table); times land in `timings`.
  recompute: () => runNow(),
  // Resolves once every view shows the current result (off-screen ones are drawn when idle).
  whenDrawn: () => new Promise((resolve) => { if (dirty.size === 0 && !framePending && !job) resolve(); else drawnWaiters.push(resolve); }),
  get computing() { return job !== null; },
  edit,
  // Sets a field without scheduling a recompute (the benchmark times `recompute` itself).
  setQuietly: (path, value) => setPath(state, path, value),
};

// Test hooks (tests/browser): `trapCore` makes the core trap inside an
// Explorer method (Explorer.testTrap: "RuntimeError: unreachable" while the
// Explorer is borrowed, as an out-of-memory abort in `update` would leave it);
// `trapAllocator` makes the allocator abort (a request of 4 GiB - 16 bytes,
// more than wasm32 can address). Both run from an event callback, as a trap in
// any handler would, so the tests can check that the page restarts the core.
window.__nivalisTest = {
  trapCore: () => setTimeout(() => explorer.testTrap()),
  trapAllocator: () => setTimeout(() => wasm.__wbindgen_malloc(0xfffffff0, 8)),
  // While held, the worker's replies wait here; releasing delivers them in order.
  holdWorkerResults: (hold) => {
    holdWorker = Boolean(hold);
    if (!holdWorker) for (const event of heldMessages.splice(0)) onWorkerMessage(event);
  },
  // The held replies that carry a result.
  get heldWorkerMessages() { return heldMessages.filter((e) => e.data && e.data.type === "result").length; },
};

start();
