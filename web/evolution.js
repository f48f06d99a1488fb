// evolution.js: the page's evolving-disk panel (issue 13; docs/model.md section 12).
// A module (web/util.js explains the pattern), inlined by `cargo xtask dist` after the
// uncertainty panel: it receives App (`$`, the live disk `App.state`, `download`, `slug`,
// `themeName`, `sizeCanvas`), Util and Core (the compiled module), and calls the glue's
// `drawEvolution`.
// The run happens in its own Web Worker (the page's worker script with the handler
// below in place of the views' one), which reports progress; Cancel terminates it. The
// worker is started when the page is idle after loading and kept between runs, so a click
// does not wait for a worker to start and instantiate the module (issue 13: the 5 Myr run
// within about a second); after a cancel or a failure a fresh one is started.
// The result is the JSON text of `nivalis evolve DISK --format json`, drawn per
// snapshot (age slider, Play) into three canvases and downloadable as is.
// Test hook: the panel's data-evo-state is "idle" | "running" | "ready" | "cancelled" | "failed";
// after a run its data-evo-timings holds the split of the last run in milliseconds (the run in
// the worker, click to result, the three views drawn), which tests/browser/bench.mjs prints.
const EvolutionPanel = ((App, Core, Util) => {
// The module interface it uses (see web/util.js for the pattern): App's helpers and live disk,
// Util's JSON helpers, and the compiled core the workers instantiate.
const { $, download, slug, themeName, sizeCanvas } = App;
const { clone, prune, startWorker } = Util;
const nivalisModule = Core.module;

const evoPanel = $("evolution");
let evoWorker = null;
let evoWorkerReady = false;
let evoPending = null; // the run asked for before the worker was ready
let evoClickMs = 0;
let evoText = null;
let evoTimes = [];
let evoPlaying = null;

const EVOLUTION_WORKER_TAIL = `
self.onmessage = (event) => {
  const m = event.data;
  try {
    if (m.type === "init") {
      initCore(m);
    } else if (m.type === "evolve") {
      const t0 = performance.now();
      const out = wasm_bindgen.evolveDisk(m.disk, m.until, m.snapshots, progressReporter());
      self.postMessage({ type: "result", result: out, ms: performance.now() - t0 });
    }
  } catch (error) {
    self.postMessage({ type: "error", message: String(error && error.message ? error.message : error) });
  }
};`;

function evoSetState(name, message = "") {
  evoPanel.dataset.evoState = name;
  $("evo-status").textContent = message;
  const running = name === "running";
  $("evo-run").disabled = running;
  $("evo-cancel").disabled = !running;
  $("evo-progress").hidden = !running;
  const ready = evoText !== null;
  for (const id of ["evo-age", "evo-play", "evo-export-json", "evo-export-methods", "evo-figure-svg", "evo-figure-png"]) $(id).disabled = running || !ready;
}

function evoStop() {
  if (evoWorker) evoWorker.terminate();
  evoWorker = null;
  evoWorkerReady = false;
  evoPending = null;
}

// Start the worker and instantiate the module in it; a run asked for meanwhile waits in evoPending.
function evoSpawn() {
  evoWorker = startWorker(EVOLUTION_WORKER_TAIL);
  evoWorker.onmessage = evoMessage;
  evoWorker.onerror = (e) => {
    const running = evoPanel.dataset.evoState === "running";
    evoStop();
    if (running) evoSetState("failed", `The run failed: ${e.message}`);
  };
  evoWorker.postMessage({ type: "init", module: nivalisModule });
}

function evoRun() {
  const until = Number($("evo-until").value);
  const snapshots = Math.round(Number($("evo-snapshots").value));
  if (!(until > 0 && until <= 20) || !(snapshots >= 2 && snapshots <= 500)) {
    evoSetState("failed", "Until must be in (0, 20] Myr and the snapshots a whole number in [2, 500].");
    return;
  }
  evoClickMs = performance.now();
  if (!evoWorker) evoSpawn();
  $("evo-progress").value = 0;
  evoSetState("running", "Evolving…");
  const request = { type: "evolve", disk: prune(clone(App.state)), until, snapshots };
  if (evoWorkerReady) evoWorker.postMessage(request);
  else evoPending = request;
}

function evoMessage(event) {
  const m = event.data;
  if (m.type === "ready") {
    evoWorkerReady = true;
    if (evoPending) evoWorker.postMessage(evoPending);
    evoPending = null;
  } else if (m.type === "progress") {
    $("evo-progress").value = m.value;
    $("evo-status").textContent = `Evolving… ${Math.round(100 * m.value)} %`;
  } else if (m.type === "result") {
    // The worker stays for the next run.
    if (m.result.ok) {
      const received = performance.now();
      evoText = m.result.text;
      evoTimes = m.result.times_myr;
      const age = $("evo-age");
      age.max = String(evoTimes.length - 1);
      age.value = String(evoTimes.length - 1);
      evoSetState("ready", `${evoTimes.length} snapshots from ${evoTimes[0]} to ${evoTimes[evoTimes.length - 1]} Myr.`);
      const drawStart = performance.now();
      evoDraw();
      evoPanel.dataset.evoTimings = JSON.stringify({
        "run in the worker": m.ms,
        "click to result in the page": received - evoClickMs,
        "three views drawn": performance.now() - drawStart,
      });
    } else {
      evoSetState("failed", m.result.problems.map((p) => `${p.path}: ${p.message}`).join("; "));
    }
  } else if (m.type === "error") {
    evoStop();
    evoSetState("failed", `The run failed: ${m.message}`);
  }
}

function evoDraw() {
  if (evoText === null) return;
  const k = Number($("evo-age").value);
  const t = evoTimes[k];
  $("evo-age-value").textContent = t === undefined ? "" : `${Number(t.toPrecision(3))} Myr`;
  let ratio = 1;
  for (const id of ["evo-tracks", "evo-profile", "evo-map"]) ratio = sizeCanvas($(id));
  try {
    drawEvolution(evoText, k, "evo-tracks", "evo-profile", "evo-map", themeName() === "dark", ratio * 96 / 72 * 1.2);
  } catch (error) {
    evoSetState("failed", `Cannot draw: ${error && error.message ? error.message : error}`);
  }
}

function evoPlay() {
  if (evoPlaying) {
    clearInterval(evoPlaying);
    evoPlaying = null;
    $("evo-play").textContent = "Play";
    return;
  }
  const age = $("evo-age");
  if (Number(age.value) >= evoTimes.length - 1) age.value = "0";
  $("evo-play").textContent = "Pause";
  evoPlaying = setInterval(() => {
    const next = Number(age.value) + 1;
    if (next > evoTimes.length - 1) { evoPlay(); return; }
    age.value = String(next);
    evoDraw();
  }, 400);
}

$("evo-run").addEventListener("click", evoRun);
$("evo-cancel").addEventListener("click", () => { evoStop(); evoSetState("cancelled", "Cancelled."); evoSpawn(); });
$("evo-age").addEventListener("input", evoDraw);
$("evo-play").addEventListener("click", evoPlay);
$("evo-export-json").addEventListener("click", () => {
  if (evoText !== null) download(`${slug(App.state.name)}-evolution.json`, evoText, "application/json");
});
$("evo-export-methods").addEventListener("click", () => {
  // The run's methods text, as `nivalis evolve DISK --methods FILE` writes it.
  if (evoText !== null) download(`${slug(App.state.name)}-evolution-methods.txt`, JSON.parse(evoText).methods_text, "text/plain");
});
function evoSaveFigure(format) {
  if (evoText === null) return;
  const problem = $("evo-figure-problem");
  problem.hidden = true;
  const view = $("evo-figure-view").value;
  // The page's figure options (width, dpi, theme), as the other figure downloads use them.
  const value = (id, fallback) => { const e = document.getElementById(id); return e ? e.value : fallback; };
  const options = { format, width: value("figure-width", "single"), dpi: value("figure-dpi", "300"), theme: value("figure-theme", "light") };
  try {
    const bytes = evolutionFigure(evoText, Number($("evo-age").value), view, options);
    download(`${slug(App.state.name)}-${view}.${format}`, bytes, format === "svg" ? "image/svg+xml" : "image/png");
  } catch (error) {
    problem.hidden = false;
    problem.textContent = `The figure could not be made: ${error && error.message ? error.message : error}`;
  }
}
$("evo-figure-svg").addEventListener("click", () => evoSaveFigure("svg"));
$("evo-figure-png").addEventListener("click", () => evoSaveFigure("png"));
matchMedia("(prefers-color-scheme: dark)").addEventListener("change", evoDraw);
evoSetState("idle");
// The worker starts once the page is idle after loading (its first views come first).
(self.requestIdleCallback || setTimeout)(() => { if (!evoWorker) evoSpawn(); });

return {};
})(App, Core, Util);
