// ---------------------------------------------------------------------------
// The uncertainty panel (docs/model.md section 13; docs/page.md "Uncertainty").
// A module (web/util.js explains the pattern) run after planet.js; it receives
// App (`$`, the live disk `App.state`, `download`), Util (`clone`, `prune`) and
// Core (the compiled module its worker instantiates). The Monte Carlo runs in its own Web
// Worker (the page's worker script: glue + worker.js + uncertainty-worker.js),
// with progress, partial bands as chunks arrive, and Cancel (which ends the
// worker). Figures come back as SVG text for the screen; the figure downloads (SVG, PNG, the
// CLI's bytes) and the exports are the CLI's files.
// ---------------------------------------------------------------------------
const UncertaintyPanel = ((App, Core, Util) => {
// The module interface it uses (see web/util.js for the pattern): App's helpers and live disk,
// Util's JSON helpers, and the compiled core the workers instantiate.
const { $, download, slug, themeName, sizeCanvas } = App;
const { clone, prune } = Util;
const nivalisModule = Core.module;

const UNC_EXAMPLE = {
  "star.luminosity_lsun": { distribution: "lognormal", sigma_dex: 0.1 },
  "star.abundances.offset_dex.C": { distribution: "normal", sigma: 0.05 },
  "star.abundances.offset_dex.O": { distribution: "normal", sigma: 0.05 },
  "ices.binding_energies": { distribution: "choice", options: ["transition_state", "on_water_ice"] },
  "composition.carbon": { distribution: "dirichlet", concentration: 30 },
};
const UNC_QUANTITIES = ["c_to_o_gas", "c_to_o_ice", "c_to_o_solid", "c_to_h_gas", "c_to_h_ice", "c_to_h_solid", "o_to_h_gas", "o_to_h_ice", "o_to_h_solid"];
// The species in the core's order, from the core (no second copy of the list here).
const UNC_SPECIES = App.SPECIES;

const unc = { worker: null, id: 0, running: false, finished: false, figures: {}, lastRun: null, posteriorSvg: null, posterior: null };

function uncBuildPanel() {
  const host = $("uncertainty-panel");
  if (!host) return;
  const section = (App.state && App.state.uncertainty) || UNC_EXAMPLE;
  host.innerHTML = `
    <h2 id="uncertainty-title">How sure? Uncertainty bands</h2>
    <p>Monte Carlo over the uncertain inputs below (dotted disk-file paths and distributions, docs/disk-file.md “Uncertainty”): bands of the midplane C/O, C/H and O/H, snowline histograms, which input moves the results most, and the formation-radius posterior. Same seed, same numbers as <code>nivalis uncertainty DISK --samples N --seed S</code>.</p>
    <label for="unc-section">Uncertain inputs (JSON)</label>
    <textarea id="unc-section" rows="8" spellcheck="false" style="width:100%;font-family:monospace"></textarea>
    <div class="unc-controls" style="display:flex;flex-wrap:wrap;gap:0.6em;align-items:center;margin:0.4em 0">
      <label>Samples <input id="unc-samples" type="number" min="1" max="100000" step="1" value="1000" style="width:6em"></label>
      <label>Seed <input id="unc-seed" type="number" min="0" step="1" value="1" style="width:7em"></label>
      <label>Sensitivity at <input id="unc-at" type="number" min="0" step="any" value="1" style="width:5em"> au</label>
      <label>Quantity <select id="unc-quantity">${UNC_QUANTITIES.map((q) => `<option value="${q}">${q}</option>`).join("")}</select></label>
      <label>Snowline <select id="unc-species">${UNC_SPECIES.map((s) => `<option value="${s}">${s}</option>`).join("")}</select></label>
      <button type="button" id="unc-run">Run</button>
      <button type="button" id="unc-cancel" disabled>Cancel</button>
    </div>
    <div><progress id="unc-progress" max="1" value="0" style="width:16em"></progress> <span id="unc-status" role="status" aria-live="polite">Not run yet.</span></div>
    <div id="unc-problems" class="problems" role="alert"></div>
    <div class="unc-figures" style="display:grid;grid-template-columns:repeat(auto-fit,minmax(320px,1fr));gap:0.6em">
      <figure><img style="width:100%;height:auto;max-width:36em" id="unc-fig-bands" alt="Percentile bands against radius"><figcaption>Median, 68 % and 95 % bands; dashed: the nominal disk. <span class="figure-downloads">Figure for a paper: <button type="button" data-unc-figure="bands" data-format="svg">SVG</button> <button type="button" data-unc-figure="bands" data-format="png">PNG</button></span></figcaption></figure>
      <figure><img style="width:100%;height:auto;max-width:36em" id="unc-fig-histogram" alt="Snowline radius histogram"><figcaption>Snowline radius over the samples; dashed: 16th, 50th, 84th percentiles. <span class="figure-downloads">Figure for a paper: <button type="button" data-unc-figure="histogram" data-format="svg">SVG</button> <button type="button" data-unc-figure="histogram" data-format="png">PNG</button></span></figcaption></figure>
      <figure><img style="width:100%;height:auto;max-width:36em" id="unc-fig-sensitivity" alt="Sensitivity of the gas C/O"><figcaption>Which input moves the gas C/O most (one at a time, 16th–84th percentile). <span class="figure-downloads">Figure for a paper: <button type="button" data-unc-figure="sensitivity" data-format="svg">SVG</button> <button type="button" data-unc-figure="sensitivity" data-format="png">PNG</button></span></figcaption></figure>
      <figure><img style="width:100%;height:auto;max-width:36em" id="unc-fig-sensitivity-snowline" alt="Sensitivity of the snowline"><figcaption>Which input moves the chosen snowline most. <span class="figure-downloads">Figure for a paper: <button type="button" data-unc-figure="sensitivity-snowline" data-format="svg">SVG</button> <button type="button" data-unc-figure="sensitivity-snowline" data-format="png">PNG</button></span></figcaption></figure>
    </div>
    <div class="unc-posterior" style="margin:0.4em 0">
      <strong>Formation radius of the observed planet</strong> (its C/O, [C/H], [O/H], [M/H] with errors, relative to the star or the Sun, as typed in the planet panel's fit; the same request as <code>nivalis fit DISK … --uncertainty</code>):
      <label>over <input id="unc-post-samples" type="number" min="1" max="100000" step="1" value="100" style="width:5em"> samples</label>
      <button type="button" id="unc-posterior" disabled>Marginalised posterior</button>
      <span id="unc-post-status"></span>
      <button type="button" id="unc-post-json" disabled>Posterior (JSON)</button>
      <figure><img style="width:100%;height:auto;max-width:36em" id="unc-fig-posterior" alt="Formation-radius posterior"><figcaption>Posterior per radial cell, marginalised over the uncertain inputs and the solid-to-gas ratio; shaded: 68 % and 95 % credible intervals. <span class="figure-downloads">Figure for a paper: <button type="button" data-unc-figure="posterior" data-format="svg">SVG</button> <button type="button" data-unc-figure="posterior" data-format="png">PNG</button></span></figcaption></figure>
    </div>
    <div class="export-buttons">
      <button type="button" data-unc-export="json">All results (JSON)</button> <code>nivalis uncertainty DISK --format json</code><br>
      <button type="button" data-unc-export="csv:bands">Bands (CSV)</button>
      <button type="button" data-unc-export="ecsv:bands">Bands (ECSV)</button>
      <button type="button" data-unc-export="csv:snowlines">Snowlines (CSV)</button>
      <button type="button" data-unc-export="csv:sensitivity">Sensitivity (CSV)</button>
      <button type="button" data-unc-export="methods">Methods text</button>
      <button type="button" data-unc-export="bibtex">References (BibTeX)</button>
    </div>
    <p class="unc-figure-note">The SVG and PNG buttons under each figure write the same file as <code>nivalis uncertainty DISK --samples N --seed S --figure VIEW --format svg|png</code> (the posterior: <code>nivalis fit DISK … --uncertainty --figure FILE</code>) with the figure options of “Figures, methods and references for a paper” (width, PNG resolution, colours); each file carries the disk, its hash, the seed and the number of samples.</p>
    <p class="problem" id="unc-figure-problem" hidden></p>`;
  $("unc-section").value = JSON.stringify(section, null, 2);
  $("unc-run").addEventListener("click", uncRun);
  $("unc-cancel").addEventListener("click", uncCancel);
  $("unc-quantity").addEventListener("change", uncRefreshFigures);
  $("unc-species").addEventListener("change", uncRefreshFigures);
  $("unc-posterior").addEventListener("click", uncPosterior);
  $("unc-post-json").addEventListener("click", () => {
    if (unc.posterior) download(`uncertainty-posterior-seed${unc.posterior.seed}.json`, unc.posterior.text, "application/json");
  });
  for (const b of host.querySelectorAll("[data-unc-export]")) b.addEventListener("click", () => uncExport(b.dataset.uncExport));
  for (const b of host.querySelectorAll("[data-unc-figure]")) b.addEventListener("click", () => uncSaveFigure(b.dataset.uncFigure, b.dataset.format));
  uncButtons();
}

function uncButtons() {
  $("unc-run").disabled = unc.running;
  $("unc-cancel").disabled = !unc.running;
  $("unc-posterior").disabled = unc.running || !unc.finished;
  $("unc-post-json").disabled = unc.running || !unc.posterior;
  for (const b of document.querySelectorAll("[data-unc-export],[data-unc-figure]")) {
    b.disabled = unc.running || !unc.finished || (b.dataset.uncFigure === "posterior" && !unc.posterior);
  }
}

function uncDark() {
  return document.documentElement.dataset.theme === "dark" || (document.documentElement.dataset.theme !== "light" && matchMedia("(prefers-color-scheme: dark)").matches);
}

function uncStartWorker() {
  const url = URL.createObjectURL(new Blob([$("worker-source").textContent], { type: "text/javascript" }));
  unc.worker = new Worker(url);
  unc.worker.onmessage = uncOnMessage;
  unc.worker.onerror = (e) => { uncShowProblems([{ path: "(worker)", message: e.message || "the background computation failed" }]); uncStopped("Failed."); };
  unc.worker.postMessage({ type: "init", module: nivalisModule });
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}

function uncShowProblems(problems) {
  $("unc-problems").textContent = problems.map((p) => `${p.path}: ${p.message}`).join("\n");
}

function uncStopped(text) {
  unc.running = false;
  $("unc-status").textContent = text;
  uncButtons();
}

function uncWhole(id, lo, hi) {
  const v = Number($(id).value);
  return Number.isInteger(v) && v >= lo && v <= hi ? v : null;
}

function uncRun() {
  uncShowProblems([]);
  let section;
  try {
    section = JSON.parse($("unc-section").value);
  } catch (e) {
    uncShowProblems([{ path: "uncertainty", message: `not valid JSON: ${e.message}` }]);
    return;
  }
  const samples = uncWhole("unc-samples", 1, 100000);
  const seed = uncWhole("unc-seed", 0, Number.MAX_SAFE_INTEGER);
  const atAu = Number($("unc-at").value);
  const bad = [];
  if (samples === null) bad.push({ path: "samples", message: `must be a whole number in [1, 100000], got ${$("unc-samples").value}` });
  if (seed === null) bad.push({ path: "seed", message: `must be a whole number in [0, 2^53), got ${$("unc-seed").value}` });
  if (bad.length) return uncShowProblems(bad);
  const disk = prune(clone(App.state));
  disk.uncertainty = section;
  if (!unc.worker) uncStartWorker();
  unc.running = true;
  unc.finished = false;
  unc.lastRun = { samples, seed };
  $("unc-progress").max = samples;
  $("unc-progress").value = 0;
  $("unc-status").textContent = `Running 0 of ${samples} samples…`;
  uncButtons();
  unc.worker.postMessage({ type: "uncertainty-run", id: ++unc.id, disk, seed, atAu, samples, chunk: 25, quantity: $("unc-quantity").value, species: $("unc-species").value, dark: uncDark() });
}

function uncCancel() {
  if (unc.worker) unc.worker.terminate();
  unc.worker = null;
  uncStopped(`Cancelled after ${$("unc-progress").value} of ${$("unc-progress").max} samples; the partial bands stay shown.`);
}

function uncSetImage(id, svg) {
  const img = $(id);
  if (!img) return;
  if (img.dataset.url) URL.revokeObjectURL(img.dataset.url);
  if (!svg) { img.removeAttribute("src"); delete img.dataset.url; return; }
  const url = URL.createObjectURL(new Blob([svg], { type: "image/svg+xml" }));
  img.dataset.url = url;
  img.src = url;
}

function uncShowFigures(figures) {
  unc.figures = figures;
  uncSetImage("unc-fig-bands", figures.bands);
  uncSetImage("unc-fig-histogram", figures.histogram);
  uncSetImage("unc-fig-sensitivity", figures.sensitivity_c_to_o);
  uncSetImage("unc-fig-sensitivity-snowline", figures.sensitivity_snowline);
}

function uncOnMessage(event) {
  const m = event.data;
  if (!m || typeof m.type !== "string" || !m.type.startsWith("uncertainty-")) return;
  if (m.id !== unc.id) return;
  if (m.type === "uncertainty-progress") {
    $("unc-progress").value = m.done;
    $("unc-status").textContent = `Running ${m.done} of ${m.total} samples (${(m.ms / 1000).toFixed(1)} s); partial bands shown.`;
    if (m.figures) uncShowFigures(m.figures);
  } else if (m.type === "uncertainty-done") {
    $("unc-progress").value = m.done;
    unc.finished = true;
    uncShowFigures(m.figures);
    const s = m.summary;
    const failed = s.samples - s.samples_succeeded;
    uncStopped(`${s.samples} samples (seed ${s.seed}) in ${(m.ms / 1000).toFixed(1)} s${failed ? `, ${failed} failed` : ""}${s.redraws ? `, ${s.redraws} redraws` : ""}.`);
    document.body.dataset.uncertaintyMs = String(m.ms);
    document.body.dataset.uncertaintyDone = String(s.samples);
  } else if (m.type === "uncertainty-figures") {
    uncShowFigures(m.figures);
  } else if (m.type === "uncertainty-export") {
    download(m.name, m.text, m.mime);
  } else if (m.type === "uncertainty-figure-file") {
    if (m.problem) {
      $("unc-figure-problem").hidden = false;
      $("unc-figure-problem").textContent = `The figure could not be made: ${m.problem}`;
    } else {
      download(m.name, m.bytes, m.mime);
    }
  } else if (m.type === "uncertainty-posterior") {
    const r = m.result;
    unc.posteriorPending = false;
    unc.posterior = r;
    unc.posteriorSvg = r.svg;
    uncSetImage("unc-fig-posterior", r.svg);
    const i95 = r.radius_interval_95_au;
    $("unc-post-status").textContent = r.radius_median_au == null ? "No sample fits anywhere." : `median ${r.radius_median_au.toPrecision(3)} au, 95 % interval ${i95[0].toPrecision(3)}–${i95[1].toPrecision(3)} au over ${r.samples_succeeded} samples.`;
    uncButtons();
  } else if (m.type === "uncertainty-error" && unc.posteriorPending) {
    unc.posteriorPending = false;
    uncShowProblems(m.problems);
    $("unc-post-status").textContent = "Not fitted: fix the problems above (the planet panel's fit fields).";
    uncButtons();
  } else if (m.type === "uncertainty-error") {
    uncShowProblems(m.problems);
    uncStopped("Not run: fix the problems above.");
  }
}

function uncRefreshFigures() {
  if (unc.worker && !unc.running && unc.finished) {
    unc.worker.postMessage({ type: "uncertainty-figures", id: unc.id, quantity: $("unc-quantity").value, species: $("unc-species").value, dark: uncDark() });
  }
}

function uncPosterior() {
  if (!unc.worker || !unc.finished) return;
  const samples = uncWhole("unc-post-samples", 1, 100000);
  if (samples === null) return uncShowProblems([{ path: "posterior samples", message: "must be a whole number in [1, 100000]" }]);
  $("unc-post-status").textContent = `Fitting over ${samples} samples…`;
  $("unc-posterior").disabled = true;
  const request = App.fitRequest ? App.fitRequest() : {};
  unc.posterior = null;
  unc.posteriorPending = true;
  uncShowProblems([]);
  uncButtons();
  unc.worker.postMessage({ type: "uncertainty-posterior", id: unc.id, request, samples, dark: uncDark() });
}

function uncExport(what) {
  if (!unc.worker || !unc.finished) return;
  const [format, table] = what.includes(":") ? what.split(":") : [what, "bands"];
  const ext = { json: "json", csv: "csv", ecsv: "ecsv", methods: "txt", bibtex: "bib" }[format];
  const mime = { json: "application/json", csv: "text/csv", ecsv: "text/plain", methods: "text/plain", bibtex: "application/x-bibtex" }[format];
  const name = `uncertainty-${format === "json" || format === "methods" || format === "bibtex" ? format : table}-seed${unc.lastRun.seed}.${ext}`;
  unc.worker.postMessage({ type: "uncertainty-export", id: unc.id, format, table, name, mime });
}

// The view names of nivalis_charts::UncertaintyView (`nivalis uncertainty --figure VIEW`) of
// each figure on the panel, for the current quantity and snowline.
function uncFigureView(which) {
  const q = $("unc-quantity").value;
  const s = $("unc-species").value;
  return { bands: `bands:${q}`, histogram: `snowlines:${s}`, sensitivity: "sensitivity", "sensitivity-snowline": `sensitivity:${s}`, posterior: "posterior" }[which];
}

function uncSaveFigure(which, format) {
  if (!unc.worker || !unc.finished) return;
  $("unc-figure-problem").hidden = true;
  // The page's figure options (width, dpi, theme), as the other figure downloads use them.
  const value = (id, fallback) => { const e = document.getElementById(id); return e ? e.value : fallback; };
  const options = { format, width: value("figure-width", "single"), dpi: value("figure-dpi", "300"), theme: value("figure-theme", "light") };
  const view = uncFigureView(which);
  const name = `uncertainty-${view.replace(":", "-")}-seed${unc.lastRun.seed}.${format}`;
  unc.worker.postMessage({ type: "uncertainty-figure-file", id: unc.id, view, options, name, mime: format === "svg" ? "image/svg+xml" : "image/png" });
}

uncBuildPanel();

return {};
})(App, Core, Util);
