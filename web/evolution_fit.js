// evolution_fit.js: the evolution panel's fit over formation radius x formation age (issue 13;
// docs/model.md section 12.9; docs/page.md "The disk in time"). A module (web/util.js explains
// the pattern), inlined by `cargo xtask dist` after evolution.js; it receives App (`$`, the live
// disk `App.state`, `download`, `slug`, `themeName`, `fitRequest` of the planet panel), Util and
// Core (the compiled module).
// It takes the planet panel's observed envelope (the same request builder as
// `nivalis fit`, through App.fitRequest, as the uncertainty panel's posterior does) and an age
// window, and runs `nivalis fit DISK ... --over-age-myr T1,T2,N` in its own Web Worker (the
// page's worker script with the handler below in place of the views' one): progress, Cancel
// (which terminates the worker), the map drawn as the SVG figure, and JSON/CSV/ECSV/SVG/PNG
// downloads made by the worker's `AgeFitRunner` (the CLI's functions, so the files are the
// CLI's byte for byte).
// Test hook: the block's data-fit-state is "idle" | "running" | "ready" | "cancelled" | "failed".
const EvolutionFitBlock = ((App, Core, Util) => {
const { $, download, slug, themeName } = App;
const { clone, prune, startWorker } = Util;
const nivalisModule = Core.module;

const AGE_FIT_WORKER_TAIL = `
let ageFit = null;
self.onmessage = (event) => {
  const m = event.data;
  try {
    if (m.type === "init") {
      initCore(m);
    } else if (m.type === "run") {
      ageFit = new wasm_bindgen.AgeFitRunner(m.disk, m.request, m.window, progressReporter());
      // No map when no cell has a defined chi-square (the figure says why); the tables still exist.
      let svg = null;
      let figureProblem = null;
      try {
        svg = new TextDecoder().decode(ageFit.figure({ format: "svg", theme: m.theme }));
      } catch (error) {
        figureProblem = String(error && error.message ? error.message : error);
      }
      self.postMessage({ type: "result", summary: ageFit.summary(), svg, figureProblem });
    } else if (m.type === "text") {
      self.postMessage({ type: "file", name: m.name, mime: m.mime, content: ageFit.text(m.format) });
    } else if (m.type === "figure") {
      self.postMessage({ type: "file", name: m.name, mime: m.mime, content: ageFit.figure(m.options) });
    }
  } catch (error) {
    const problems = error && error.problems ? error.problems : [{ path: "(age fit)", message: String(error && error.message ? error.message : error) }];
    self.postMessage({ type: "error", problems });
  }
};`;

const host = $("evo-fit");
const fit = { worker: null, ready: false, svgUrl: null };

host.innerHTML = `
  <h3 id="evo-fit-title">Where and when did the planet form?</h3>
  <p>The observed envelope typed in the planet panel's fit (C/O, [C/H], [O/H], [M/H] with errors) fitted over formation radius and formation age on this evolving disk, the solid-to-gas ratio profiled out per cell: the same run as <code>nivalis fit DISK … --over-age-myr T1,T2,N</code>.</p>
  <div class="evolution-controls">
    <label>Ages from <input id="evo-fit-from" type="number" min="0.01" max="20" step="any" value="0.1" style="width:5em"></label>
    <label>to <input id="evo-fit-to" type="number" min="0.01" max="20" step="any" value="3" style="width:5em"> Myr</label>
    <label>at least <input id="evo-fit-count" type="number" min="1" max="100" step="1" value="6" style="width:4em"> ages</label>
    <button type="button" id="evo-fit-run">Fit over radius × age</button>
    <button type="button" id="evo-fit-cancel" disabled>Cancel</button>
    <progress id="evo-fit-progress" max="1" value="0" hidden></progress>
    <span id="evo-fit-status" role="status" aria-live="polite"></span>
  </div>
  <p id="evo-fit-problems" class="problem" role="alert" hidden></p>
  <figure><img id="evo-fit-map" style="width:100%;height:auto;max-width:36em" alt="Delta chi-square over formation radius and formation age, 1- and 2-sigma contours, best fit marked"><figcaption>Δχ² above the best fit over formation radius and age; contours at 1σ and 2σ (Δχ² = 2.30, 6.18 for two parameters); cross: the best cell.</figcaption></figure>
  <div class="export-buttons">
    <button type="button" data-evo-fit-text="json" disabled>Radius × age fit (JSON)</button>
    <button type="button" data-evo-fit-text="csv" disabled>CSV</button>
    <button type="button" data-evo-fit-text="ecsv" disabled>ECSV</button>
    <code>nivalis fit DISK … --over-age-myr T1,T2,N --format F</code>
    <button type="button" data-evo-fit-figure="svg" disabled>Map (SVG)</button>
    <button type="button" data-evo-fit-figure="png" disabled>Map (PNG)</button>
    <code>… --figure FILE.svg|png</code>
  </div>`;

function fitSetState(name, message = "") {
  host.dataset.fitState = name;
  $("evo-fit-status").textContent = message;
  const running = name === "running";
  $("evo-fit-run").disabled = running;
  $("evo-fit-cancel").disabled = !running;
  $("evo-fit-progress").hidden = !running;
  for (const b of host.querySelectorAll("[data-evo-fit-text],[data-evo-fit-figure]")) b.disabled = running || !fit.ready;
}

function fitProblems(problems) {
  const p = $("evo-fit-problems");
  p.hidden = problems.length === 0;
  p.textContent = problems.map((q) => `${q.path}: ${q.message}`).join("\n");
}

function fitStop() {
  if (fit.worker) fit.worker.terminate();
  fit.worker = null;
}

function fitShow(svg) {
  if (fit.svgUrl) URL.revokeObjectURL(fit.svgUrl);
  fit.svgUrl = svg ? URL.createObjectURL(new Blob([svg], { type: "image/svg+xml" })) : null;
  const img = $("evo-fit-map");
  if (fit.svgUrl) img.src = fit.svgUrl;
  else img.removeAttribute("src");
}

// The age window as `--over-age-myr` reads it ("T1,T2,N"); the core checks it.
function fitWindow() {
  return `${$("evo-fit-from").value.trim()},${$("evo-fit-to").value.trim()},${$("evo-fit-count").value.trim()}`;
}

function fitRun() {
  fitStop();
  fit.ready = false;
  fitProblems([]);
  fitShow(null);
  const request = App.fitRequest ? App.fitRequest() : {};
  const ages = fitWindow();
  fit.worker = startWorker(AGE_FIT_WORKER_TAIL);
  $("evo-fit-progress").value = 0;
  fitSetState("running", "Evolving and fitting…");
  fit.worker.onmessage = (event) => {
    const m = event.data;
    if (m.type === "ready") {
      fit.worker.postMessage({ type: "run", disk: prune(clone(App.state)), request, window: ages, theme: themeName() });
    } else if (m.type === "progress") {
      $("evo-fit-progress").value = m.value;
      $("evo-fit-status").textContent = `Evolving and fitting… ${Math.round(100 * m.value)} %`;
    } else if (m.type === "result") {
      fit.ready = true;
      fitShow(m.svg);
      if (m.figureProblem) fitProblems([{ path: "figure", message: m.figureProblem }]);
      const s = m.summary;
      const b = s.best_fit;
      const best = b ? `best fit ${Number(b.radius_au.toPrecision(3))} au at ${Number(b.time_myr.toPrecision(3))} Myr (χ² ${Number(b.chi2.toPrecision(3))})` : "no cell gives defined values";
      const warn = s.warnings.length ? `; ${s.warnings.join("; ")}` : "";
      fitSetState("ready", `${s.ages_myr.snapshots.length} ages: ${best}${warn}.`);
    } else if (m.type === "file") {
      download(m.name, m.content, m.mime);
    } else if (m.type === "error") {
      if (!fit.ready) {
        fitStop();
        fitProblems(m.problems);
        fitSetState("failed", "Not fitted: fix the problems shown.");
      } else {
        fitProblems(m.problems);
      }
    }
  };
  fit.worker.onerror = (e) => { fitStop(); fitSetState("failed", `The fit failed: ${e.message}`); };
  fit.worker.postMessage({ type: "init", module: nivalisModule });
}

function fitName(ext) {
  return `${slug(App.state.name)}-age-fit.${ext}`;
}

$("evo-fit-run").addEventListener("click", fitRun);
$("evo-fit-cancel").addEventListener("click", () => {
  fitStop();
  fit.ready = false;
  fitSetState("cancelled", "Cancelled.");
});
for (const b of host.querySelectorAll("[data-evo-fit-text]")) {
  b.addEventListener("click", () => {
    if (!fit.worker || !fit.ready) return;
    const format = b.dataset.evoFitText;
    const mime = { json: "application/json", csv: "text/csv", ecsv: "text/plain" }[format];
    fit.worker.postMessage({ type: "text", format, name: fitName(format), mime });
  });
}
for (const b of host.querySelectorAll("[data-evo-fit-figure]")) {
  b.addEventListener("click", () => {
    if (!fit.worker || !fit.ready) return;
    const format = b.dataset.evoFitFigure;
    // The page's figure options (width, dpi, theme), as the other figure downloads use them.
    const value = (id, fallback) => { const e = document.getElementById(id); return e ? e.value : fallback; };
    const options = { format, width: value("figure-width", "single"), dpi: value("figure-dpi", "300"), theme: value("figure-theme", "light") };
    fit.worker.postMessage({ type: "figure", options, name: `${slug(App.state.name)}-chi2_age_map.${format}`, mime: format === "svg" ? "image/svg+xml" : "image/png" });
  });
}
fitSetState("idle");

return {};
})(App, Core, Util);
