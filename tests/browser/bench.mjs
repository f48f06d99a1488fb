// bench.mjs: the in-browser benchmark of the page (run by `cargo xtask bench`,
// or `node tests/browser/bench.mjs` after `cargo xtask dist`). In headless
// Chromium it times, with performance.now(), exactly what the page does after
// an input change: "compute" = validate the disk and recompute what the edit
// changed (Explorer.update), "draw" = draw all five charts and fill the
// snowline table (a view whose input did not change is left as it is), and the
// page's own path, which draws only the views on screen at once and the
// others when the browser is idle. Two kinds of edit, 50 repeats each (after 50 untimed warm-up edits, WARMUP),
// alternating two values so every repeat is a real recomputation: a structure
// edit (the star's luminosity, 1.5 <-> 1 Lsun: the whole model runs) and an ice
// edit (the sticking coefficient, 0.5 <-> 1: only the ice balance is re-solved,
// `Model::set_ices`; the temperature view is not redrawn). At the default grid
// (200 x 80) and at 400 x 160 (timed on the main thread), and 10 repeats of the
// Web Worker path at 800 x 320. Prints the medians (and the 10th/90th
// percentiles) in milliseconds.
//
// The in-page floor, timed in the same page: one Math.exp and one Math.sqrt
// per cell-species at the default grid, in plain JavaScript, written into a
// preallocated Float64Array laid out like the model's ice fractions (species
// major). Cell-species: radial cells x (vertical cells + 1) samples (the
// midplane and each vertical cell centre) x 9 species = 200 x 81 x 9 = 145 800,
// the count of the native floor in crates/physics/benches/model.rs. Inputs are
// realistic and prepared before timing: the default disk's sample
// temperatures from the native CLI (`model` for the midplane, `map --quantity
// temperature_k` for the cells) and each species' binding energy (the
// default `transition_state` set, as the native floor) and mass from crates/physics/data. Per cell-species:
// exp(-E_b / T) * sqrt(8 k T / (pi m)). The ratio `edit redraw / floor`
// divides the median of "total (compute + all 5 charts)" at 200 x 80 by the
// floor's median, per kind of edit, with compute and draw apart; issue 9
// targets at most 7.
// After it, the uncertainty panel (1000 samples) and the evolution panel (the default disk
// evolved to 5 Myr with 20 snapshots: Evolve clicked to the three views drawn, 7 runs; see
// evolutionBench). `--only uncertainty` or `--only evolution` runs one of those alone.
// Percentiles: linear interpolation between order statistics (numpy's default).
//
// Options: `--only edits` times only the two edits at the default grid (and the
// floor), with each view's draw split into its steps (Explorer.drawTimings:
// data, record (of which rasterising a map), replay); `--only uncertainty` / `--only evolution` only that panel;
// `--page PATH` opens another built page (e.g. a copy of target/site from an
// earlier commit), so two builds can be timed alternately in the same conditions.

import { execFileSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join, resolve } from "node:path";
import { pathToFileURL } from "node:url";
import { ensureCli, ensurePage, launch, newPage, openPage, pageUrl, repoRoot } from "./helpers.mjs";

const REPEATS = 50;
// Untimed runs before the timed ones, the same number for the floor and for each kind of edit: the
// browser first runs code with its baseline compilers (V8: Ignition for JavaScript, Liftoff for
// WebAssembly) and swaps in optimised code for the hot functions in the background (dynamic
// tiering), so the first few dozen edits of a fresh page are slower than the steady state a user
// dragging a slider sees (on this machine, medians of 10 structure edits: 8.3-9.8 ms over the first
// 20, 6.7-7.8 ms after 50). Both sides of the ratio are timed warm.
const WARMUP = 50;
const GRIDS = [[200, 80], [400, 160]];
// The edits timed: a field, the two values alternated (the second is the
// default, so each kind leaves the disk as it found it), and what the page's
// update must report it recomputed (checked, so the ice edit is known to skip the structure).
const EDITS = [
  { kind: "structure edit", path: "star.luminosity_lsun", values: [1.5, 1.0], recomputed: "everything" },
  { kind: "ice edit", path: "ices.sticking", values: [0.5, 1.0], recomputed: "ices" },
];
// The page's five view canvases (web/app.js VIEWS).
const CANVASES = ["canvas-c-to-o", "canvas-temperature", "canvas-ice-map", "canvas-c-to-o-map", "canvas-abundances"];
const SPECIES = ["H2O", "CO", "CO2", "CH4", "N2", "NH3", "CH3OH", "H2S", "HCN"];
const BOLTZMANN_ERG_PER_K = 1.380649e-16; // exact (SI 2019), as crates/physics/src/units.rs
const ATOMIC_MASS_UNIT_G = 1.66053906892e-24; // CODATA 2022, as crates/physics/src/units.rs

/// Rows of one of the core's data files as objects keyed by the header.
function dataRows(name) {
  const lines = readFileSync(join(repoRoot, "crates", "physics", "data", name), "utf8")
    .split("\n").map((l) => l.trim()).filter((l) => l && !l.startsWith("#"));
  const header = lines[0].split(",").map((h) => h.trim());
  return lines.slice(1).map((l) => Object.fromEntries(l.split(",").map((v, i) => [header[i], v.trim()])));
}

/// The floor's inputs at the default grid: per sample T [K], per species -E_b [K] and 8 k / (pi m).
function floorInputs() {
  const cli = ensureCli();
  const run = (args) => execFileSync(cli, args, { input: "{}", maxBuffer: 1 << 28 }).toString();
  const midplane = JSON.parse(run(["model", "-", "--format", "json"])).data.midplane_temperature_k;
  // The CSV opens with "#" provenance lines, then its header.
  const cells = run(["map", "-", "--quantity", "temperature_k"]).trim().split("\n")
    .filter((l) => !l.startsWith("#")).slice(1)
    .map((l) => Number(l.split(",")[3]));
  const vertical = cells.length / midplane.length;
  if (!Number.isInteger(vertical)) throw new Error(`${cells.length} map cells for ${midplane.length} radii`);
  // Sample 0 of each column is the midplane, samples 1..N_z the cell centres (the model's layout).
  const temperature = [];
  midplane.forEach((t, j) => temperature.push(t, ...cells.slice(j * vertical, (j + 1) * vertical)));
  if (!temperature.every((t) => t > 0 && Number.isFinite(t))) throw new Error("bad sample temperatures");
  const species = Object.fromEntries(dataRows("species.csv").map((r) => [r.species, r]));
  const binding = Object.fromEntries(dataRows("binding_energies.csv").filter((r) => r.set === "transition_state")
    .map((r) => [r.species, Number(r.binding_energy_k)]));
  const minusBinding = SPECIES.map((s) => -binding[s]);
  const thermal = SPECIES.map((s) => 8 * BOLTZMANN_ERG_PER_K / (Math.PI * Number(species[s].mass_amu) * ATOMIC_MASS_UNIT_G));
  if (![...minusBinding, ...thermal].every(Number.isFinite)) throw new Error("species data not found");
  return { radial: midplane.length, vertical, temperature, minusBinding, thermal };
}

function percentile(values, q) {
  const s = [...values].sort((a, b) => a - b);
  const i = (s.length - 1) * q;
  const lo = Math.floor(i);
  const hi = Math.ceil(i);
  return s[lo] + (s[hi] - s[lo]) * (i - lo);
}

// The uncertainty panel (issue 12 item 6): 1000 samples of the default disk at the default
// grid, with the inputs that leave the structure alone (as tests/browser/uncertainty.test.mjs
// and crates/xtask/src/uncertainty_bench.rs), run as a user would (Run, wait for the end).
// Timed: the samples in the worker (as the panel reports them) and click to "done" (samples,
// progress figures, sensitivity, summary and final figures). Target: 1000 samples within 2 s.
const UNC_SAMPLES = 1000;
const UNC_REPEATS = 3;
const UNC_SECTION = {
  "star.abundances.offset_dex.C": { distribution: "normal", sigma: 0.05 },
  "ices.sticking": { distribution: "uniform", low: 0.8, high: 1 },
  "composition.carbon": { distribution: "dirichlet", concentration: 30 },
};

async function uncertaintyBench(context, url) {
  const { page, errors } = await newPage(context, url);
  const samplesMs = [];
  const roundTrip = [];
  for (let r = 0; r < UNC_REPEATS; r++) {
    await page.fill("#unc-section", JSON.stringify(UNC_SECTION, null, 2));
    await page.fill("#unc-samples", String(UNC_SAMPLES));
    await page.fill("#unc-seed", String(r + 1));
    await page.evaluate(() => { delete document.body.dataset.uncertaintyDone; });
    const t0 = await page.evaluate(() => performance.now());
    await page.click("#unc-run");
    await page.waitForSelector(`body[data-uncertainty-done='${UNC_SAMPLES}']`, { timeout: 600000, polling: 5 });
    const { t1, ms } = await page.evaluate(() => ({ t1: performance.now(), ms: Number(document.body.dataset.uncertaintyMs) }));
    if (!Number.isFinite(ms)) throw new Error("the panel reported no sampling time");
    samplesMs.push(ms);
    roundTrip.push(t1 - t0);
  }
  if (errors.length) throw new Error(`page errors: ${errors.join("; ")}`);
  const f = (x) => x.toFixed(0).padStart(7);
  const row = (name, v) => console.log(`  ${name.padEnd(48)} ${f(percentile(v, 0.5))} ${f(percentile(v, 0.1))} ${f(percentile(v, 0.9))}`);
  console.log(`uncertainty panel (headless Chromium, ${UNC_SAMPLES} samples, default disk 200 x 80, ${UNC_REPEATS} runs, milliseconds; target 2000):`);
  console.log(`  ${"step".padEnd(48)}  median     p10     p90`);
  row(`${UNC_SAMPLES} samples in the worker (chunks of 25)`, samplesMs);
  row("Run clicked to results shown (+ sensitivity)", roundTrip);
  await page.close();
}

// The evolution panel (issue 13): the default disk evolved from 0.01 to 5 Myr with 20 snapshots
// at the default radial resolution, run as a user would: the page loaded and left alone for
// EVO_SETTLE_MS (so whatever the page prepares at load is ready, as it is for a person who reads
// the panel before clicking), then Evolve clicked. Timed in the page with performance.now(): from
// the click to the panel's data-evo-state turning "ready" (set in the same task as the three
// views are drawn, so a MutationObserver, which runs after that task, sees all three drawn).
// EVO_REPEATS runs in one page, one after another. Where the page reports its own split
// (data-evo-timings: the run in the worker, the transfer and the drawing), it is printed too.
// Target (issue 13): about 1 s.
const EVO_REPEATS = 7;
const EVO_SETTLE_MS = 1500;

async function evolutionBench(context, url) {
  const { page, errors } = await newPage(context, url);
  await page.fill("#evo-until", "5");
  await page.fill("#evo-snapshots", "20");
  await page.waitForTimeout(EVO_SETTLE_MS);
  const clickToDrawn = [];
  const parts = {};
  for (let r = 0; r < EVO_REPEATS; r++) {
    const result = await page.evaluate(() => new Promise((resolve, reject) => {
      const panel = document.querySelector("#evolution");
      const observer = new MutationObserver(() => {
        const state = panel.dataset.evoState;
        if (state === "ready") {
          const t1 = performance.now();
          observer.disconnect();
          resolve({ ms: t1 - t0, timings: panel.dataset.evoTimings ? JSON.parse(panel.dataset.evoTimings) : null });
        } else if (state === "failed" || state === "cancelled") {
          observer.disconnect();
          reject(new Error(`the run ended ${state}: ${document.querySelector("#evo-status").textContent}`));
        }
      });
      observer.observe(panel, { attributes: true, attributeFilter: ["data-evo-state"] });
      const t0 = performance.now();
      document.querySelector("#evo-run").click();
    }));
    clickToDrawn.push(result.ms);
    for (const [k, v] of Object.entries(result.timings ?? {})) (parts[k] ??= []).push(v);
    await page.waitForTimeout(EVO_SETTLE_MS);
  }
  if (errors.length) throw new Error(`page errors: ${errors.join("; ")}`);
  const f = (x) => x.toFixed(0).padStart(7);
  const row = (name, v) => console.log(`  ${name.padEnd(48)} ${f(percentile(v, 0.5))} ${f(percentile(v, 0.1))} ${f(percentile(v, 0.9))}`);
  console.log(`evolution panel (headless Chromium, default disk 200 radial cells, 0.01 to 5 Myr, 20 snapshots, ${EVO_REPEATS} runs, milliseconds; target about 1000):`);
  console.log(`  ${"step".padEnd(48)}  median     p10     p90`);
  for (const [k, v] of Object.entries(parts)) row(`  ${k}`, v);
  row("Evolve clicked to all three views drawn", clickToDrawn);
  await page.close();
}

const option = (name) => (process.argv.includes(name) ? process.argv[process.argv.indexOf(name) + 1] : null);
const only = option("--only");
if (only !== null && !["uncertainty", "evolution", "edits"].includes(only)) {
  throw new Error(`bench.mjs: --only takes "edits", "uncertainty" or "evolution", got ${only}`);
}
// --page FILE: time another build of the page (e.g. one from an earlier commit, for a
// before/after comparison in the same conditions).
const otherPage = option("--page");
const url = otherPage ? pathToFileURL(resolve(otherPage)).href : pageUrl;
if (!otherPage) ensurePage();
if (only === "uncertainty" || only === "evolution") {
  const { context, close } = await launch();
  try {
    if (only === "uncertainty") await uncertaintyBench(context, url);
    else await evolutionBench(context, url);
  } finally {
    await close();
  }
  process.exit(0);
}
const inputs = floorInputs();
const { context, close } = await launch();
try {
  const { page, errors } = await openPage(context, url);
  // The floor first, in the same page, before the page's own work below.
  const floor = await page.evaluate(({ temperature, minusBinding, thermal, repeats, warmup }) => {
    const n = temperature.length;
    const t = Float64Array.from(temperature);
    const invT = t.map((v) => 1 / v);
    const out = new Float64Array(minusBinding.length * n);
    const times = [];
    let check = 0;
    for (let r = 0; r < repeats + warmup; r++) {
      const t0 = performance.now();
      for (let i = 0; i < minusBinding.length; i++) {
        const e = minusBinding[i];
        const a = thermal[i];
        const base = i * n;
        for (let k = 0; k < n; k++) out[base + k] = Math.exp(e * invT[k]) * Math.sqrt(a * t[k]);
      }
      const t1 = performance.now();
      check += out[(r * 7919) % out.length];
      if (r >= warmup) times.push(t1 - t0); // the first runs warm the JIT up (WARMUP)
    }
    if (!Number.isFinite(check)) throw new Error("the floor produced a non-finite value");
    return { times, count: out.length };
  }, { ...inputs, repeats: REPEATS, warmup: WARMUP });
  const rows = [];
  for (const [radial, vertical] of only === "edits" ? GRIDS.slice(0, 1) : GRIDS) {
    for (const edit of EDITS) {
      const result = await page.evaluate(({ radial, vertical, repeats, warmup, edit, canvases }) => {
        const n = window.nivalis;
        n.setQuietly("grid.radial_cells", radial);
        n.setQuietly("grid.vertical_cells", vertical);
        // A first result at this grid, so every timed repeat is an edit of a computed disk.
        n.setQuietly(edit.path, edit.values[1]);
        const first = n.computeOnce();
        if (!first.ok) throw new Error(JSON.stringify(first.problems));
        n.drawOnce();
        // Warm-up edits (WARMUP), untimed, each checked like the timed ones.
        for (let i = 0; i < warmup; i++) {
          n.setQuietly(edit.path, edit.values[i % 2]);
          const outcome = n.computeOnce();
          if (!outcome.ok) throw new Error(JSON.stringify(outcome.problems));
          n.drawOnce();
        }
        const compute = [];
        const draw = [];
        // Per canvas and step (data, record, replay, raster within record) [ms], from Explorer.drawTimings.
        const steps = Object.fromEntries(canvases.map((c) => [c, [[], [], [], []]]));
        for (let i = 0; i < repeats; i++) {
          n.setQuietly(edit.path, edit.values[i % 2]);
          const t0 = performance.now();
          const outcome = n.computeOnce();
          const t1 = performance.now();
          if (!outcome.ok) throw new Error(JSON.stringify(outcome.problems));
          if (outcome.recomputed !== edit.recomputed) {
            throw new Error(`${edit.path}: the page recomputed ${outcome.recomputed}, expected ${edit.recomputed}`);
          }
          n.drawOnce();
          const t2 = performance.now();
          for (const c of canvases) n.explorer.drawTimings(c).forEach((ms, k) => steps[c][k].push(ms));
          compute.push(t1 - t0);
          draw.push(t2 - t1);
        }
        // The page's own path after an edit, with the page scrolled to the top:
        // compute, then only the views on screen (the rest follow when idle).
        // Grids predicted to take more than two frames go to the worker instead
        // (timed below), so this is measured where the page stays on the main thread.
        window.scrollTo(0, 0);
        const visible = [];
        for (let i = 0; i < repeats; i++) {
          n.setQuietly(edit.path, edit.values[i % 2]);
          n.recompute();
          if (n.computing) {
            visible.length = 0;
            break;
          }
          visible.push(n.timings.drawMs);
        }
        return { compute, draw, visible, steps };
      }, { radial, vertical, repeats: REPEATS, warmup: WARMUP, edit, canvases: CANVASES });
      rows.push({ grid: `${radial}x${vertical}`, kind: edit.kind, field: edit.path, ...result });
    }
  }
  // The worker path, taken by grids predicted to need more than about two
  // frames: time from the edit to the result drawn on screen, and the compute
  // (with packing) inside the worker.
  const WORKER_GRID = [800, 320];
  const WORKER_REPEATS = 10;
  const background = only === "edits" ? null : await page.evaluate(async ({ radial, vertical, repeats }) => {
    const n = window.nivalis;
    n.setQuietly("grid.radial_cells", radial);
    n.setQuietly("grid.vertical_cells", vertical);
    const idle = () => new Promise((resolve) => { const check = () => (n.computing ? setTimeout(check, 1) : resolve()); check(); });
    const roundTrip = [];
    const inWorker = [];
    const packing = [];
    for (let i = 0; i < repeats; i++) {
      n.setQuietly("star.luminosity_lsun", i % 2 === 0 ? 1.5 : 1.0);
      const t0 = performance.now();
      n.recompute();
      await idle();
      if (n.timings.path !== "worker") throw new Error(`expected the worker path, got ${n.timings.path}`);
      roundTrip.push(performance.now() - t0);
      inWorker.push(n.timings.computeMs);
      packing.push(n.timings.packMs);
    }
    return { roundTrip, inWorker, packing };
  }, { radial: WORKER_GRID[0], vertical: WORKER_GRID[1], repeats: WORKER_REPEATS });
  if (errors.length) throw new Error(`page errors: ${errors.join("; ")}`);
  const f = (x) => x.toFixed(1).padStart(7);
  console.log(`in-browser benchmark (headless Chromium, ${REPEATS} repeats each after ${WARMUP} untimed warm-up runs, milliseconds; one frame at 60 Hz is 16.7 ms)`);
  console.log("  grid       step                              median     p10     p90");
  const line = (grid, name, values) => console.log(`  ${grid.padEnd(10)} ${name.padEnd(33)} ${f(percentile(values, 0.5))} ${f(percentile(values, 0.1))} ${f(percentile(values, 0.9))}`);
  for (const r of rows) {
    console.log(`  ${r.grid.padEnd(10)} ${r.kind} (${r.field}):`);
    for (const [name, values] of [["  compute (validate + recompute)", r.compute], ["  draw (5 charts + snowline table)", r.draw],
      ["  draw (views on screen + table)", r.visible]]) {
      if (values.length === 0) {
        console.log(`  ${r.grid.padEnd(10)} ${name.padEnd(33)}   (the page computes this grid in the worker)`);
        continue;
      }
      line(r.grid, name, values);
    }
    line(r.grid, "  total (compute + all 5 charts)", r.compute.map((c, i) => c + r.draw[i]));
    if (only === "edits") {
      // What the draw spends outside the five views' own steps: the snowline table, the page's glue.
      const rest = r.draw.map((d, i) => d - CANVASES.reduce((sum, c) => sum + r.steps[c][0][i] + r.steps[c][1][i] + r.steps[c][2][i], 0));
      console.log(`  ${r.grid.padEnd(10)}     ${"table and page glue".padEnd(20)} ${percentile(rest, 0.5).toFixed(2)} (median)`);
      for (const c of CANVASES) {
        const [data, record, replay, raster] = r.steps[c].map((v) => percentile(v, 0.5).toFixed(2));
        console.log(`  ${r.grid.padEnd(10)}     ${c.padEnd(20)} data ${data}  record ${record} (raster ${raster})  replay ${replay} (medians)`);
      }
    }
  }
  const floorGrid = `${inputs.radial}x${inputs.vertical}`;
  const floorMedian = percentile(floor.times, 0.5);
  console.log(`  ${floorGrid.padEnd(10)} ${"floor: exp + sqrt per cell-species".padEnd(33)} ${f(percentile(floor.times, 0.5))} ${f(percentile(floor.times, 0.1))} ${f(percentile(floor.times, 0.9))}`);
  console.log(`             (${floor.count} = ${inputs.radial} x ${inputs.vertical + 1} samples x ${SPECIES.length} species, plain JS, ${REPEATS} repeats after ${WARMUP} warm-up runs)`);
  if (background) {
    const grid = `${WORKER_GRID[0]}x${WORKER_GRID[1]}`;
    console.log(`  worker path (${WORKER_REPEATS} repeats; the page keeps responding meanwhile):`);
    console.log(`  ${grid.padEnd(10)} ${"compute (validate + run), worker".padEnd(33)} ${f(percentile(background.inWorker, 0.5))} ${f(percentile(background.inWorker, 0.1))} ${f(percentile(background.inWorker, 0.9))}`);
    console.log(`  ${grid.padEnd(10)} ${"pack the result for the page".padEnd(33)} ${f(percentile(background.packing, 0.5))} ${f(percentile(background.packing, 0.1))} ${f(percentile(background.packing, 0.9))}`);
    console.log(`  ${grid.padEnd(10)} ${"edit to result on screen".padEnd(33)} ${f(percentile(background.roundTrip, 0.5))} ${f(percentile(background.roundTrip, 0.1))} ${f(percentile(background.roundTrip, 0.9))}`);
  }
  console.log(`  ratios of medians to the in-page floor at ${floorGrid} (this page, this run; target: edit redraw <= 7, issue 9):`);
  for (const r of rows.filter((row) => row.grid === floorGrid)) {
    const ratio = (values) => (percentile(values, 0.5) / floorMedian).toFixed(2).padStart(7);
    const total = r.compute.map((c, i) => c + r.draw[i]);
    console.log(`    ${r.kind.padEnd(15)} edit redraw (compute + all 5 charts) / floor ${ratio(total)}   compute / floor ${ratio(r.compute)}   draw / floor ${ratio(r.draw)}`);
  }
  if (only !== "edits") {
    await uncertaintyBench(context, url);
    await evolutionBench(context, url);
  }
} finally {
  await close();
}
