// app.js: the page's behaviour (its fifth module; see web/util.js for the
// order). It holds no physics and no schema: every number comes from the Rust
// core through `Core.explorer`, the controls from the field table
// (web/controls.js); this module keeps the state (URL fragment, undo),
// schedules recomputation and hands canvases to Rust. Grids too large for a
// frame are computed in a Web Worker (web/worker.js) that runs the same Rust
// code and sends back what the views need.
//
// Its interface is the object `App` returned at the end: web/planet.js (the
// planet panel and figure downloads) receives it and uses nothing else of
// this file.

const App = ((util, core, controls) => {
  const {
    $, clone, getPath, setPath, prune, base64urlEncode, base64urlDecode, difference, merge, download,
    INPUT_LIMITS, checkJsonBounds, tooLarge, slug, formula, roundSlider,
  } = util;
  const Core = core;
  const Controls = controls;
  const DEFAULTS = core.defaults;
  const SPECIES = controls.SPECIES;

  // The views: canvas id, what Rust draws there, and the readout element.
  const VIEWS = [
    { view: "c_to_o", canvas: "canvas-c-to-o", readout: "readout-c-to-o" },
    { view: "temperature", canvas: "canvas-temperature", readout: "readout-temperature" },
    { view: "ice_map", canvas: "canvas-ice-map", readout: "readout-ice-map" },
    { view: "c_to_o_map", canvas: "canvas-c-to-o-map", readout: "readout-c-to-o-map" },
    { view: "abundances", canvas: "canvas-abundances", readout: "readout-abundances" },
  ];

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
  // Controls: built from the field table by web/controls.js.
  // ---------------------------------------------------------------------------

  // Shows `state` in the controls (after undo, a demo, a file, the URL).
  function fillControls() {
    Controls.fill(state);
    $("map-species").value = mapSpecies;
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
    if (path === "ices.binding_energies") Controls.refreshPlaceholders(state);
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
      if (!Core.isFailure(error)) throw error;
      recoverFromTrap(error);
    }
  }

  // The typed inputs' size, checked before the state goes to the core (text
  // fields are the only way to make a state large; nothing typed can nest).
  function typedInputProblem(text) {
    const problem = checkJsonBounds(text, "The disk as typed");
    return problem ? [{ path: "(file)", message: problem }] : [];
  }

  // Validates and runs a disk: it crosses to the core as its JSON text (one
  // string, parsed in Rust; Explorer.updateJson), the object itself only when
  // that text does not parse there (a lone surrogate in a typed string).
  function updateCore(disk, text = JSON.stringify(disk)) {
    const outcome = Core.explorer.updateJson(text);
    return outcome === undefined ? Core.explorer.update(disk) : outcome;
  }

  function computeAndDraw() {
    const samples = sampleCount(state);
    const disk = prune(clone(state));
    const text = JSON.stringify(disk);
    const tooBig = typedInputProblem(text);
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
    const result = updateCore(disk, text);
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

  let recovering = false;

  function recoverFromTrap(error, attempt = 1) {
    if (recovering && attempt === 1) return;
    recovering = true;
    const what = String(error && error.message ? error.message : error);
    try {
      cancelWorkerJob();
      Core.rebuild();
      valid = false;
      drawnOnce = false;
      state = attempt === 1 && lastGoodState ? JSON.parse(lastGoodState) : clone(DEFAULTS);
      fillControls();
      computeAndDraw();
      showBanner(`The computation core stopped (${what}) and was restarted; `
        + (attempt === 1 && lastGoodState ? "the inputs are back at the last disk that gave a result." : "the default disk is shown."));
    } catch (again) {
      if (attempt < 2 && Core.isFailure(again)) {
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
    if (Core.isFailure(event.error || event.message)) {
      event.preventDefault();
      recoverFromTrap(event.error || new Error(event.message));
    }
  });
  window.addEventListener("unhandledrejection", (event) => {
    if (Core.isFailure(event.reason)) {
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
    worker.postMessage({ type: "init", module: Core.module });
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
      if (!Core.isFailure(error)) throw error;
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
        Core.explorer.loadPacket(result);
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
      Core.explorer.loadView("ice_map", message.species, message.parts);
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
      const slot = Controls.findSlot(p.path);
      if (slot) {
        slot.hidden = false;
        slot.textContent = (slot.textContent ? slot.textContent + " " : "") + (slot.dataset.path === p.path ? p.message : `${p.path}: ${p.message}`);
        const c = Controls.get(p.path);
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

  // The system's colour scheme, asked once and then kept by its change event
  // (reading `matches` evaluates the media query: a cost on every drawn view).
  // This listener is added before any other on `darkScheme`, so it runs first.
  const darkScheme = matchMedia("(prefers-color-scheme: dark)");
  let systemDark = darkScheme.matches;
  darkScheme.addEventListener("change", () => { systemDark = darkScheme.matches; });

  function themeName() {
    if (theme !== "system") return theme;
    return systemDark ? "dark" : "light";
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

  // A view's canvas element, looked up once (and again only if it left the document).
  function canvasOf(v) {
    if (!v.element || !v.element.isConnected) v.element = $(v.canvas);
    return v.element;
  }

  function drawView(v, shownTheme = themeName()) {
    const canvas = canvasOf(v);
    const options = { theme: shownTheme, species: mapSpecies, pixelRatio: sizeCanvas(canvas), canvas };
    try {
      Core.explorer.draw(v.view, v.canvas, options);
      if (v.view === "ice_map" && canvas.dataset.species !== mapSpecies) canvas.dataset.species = mapSpecies;
    } catch (e) {
      $(v.readout).textContent = `This view could not be drawn: ${e.message || e}`;
    }
    dirty.delete(v.view);
  }

  // Draws the views on screen now (all of them with `everything`), the rest later.
  function drawAll(everything = false) {
    if (!valid) return;
    const shown = themeName();
    for (const v of VIEWS) {
      if (everything || onScreen.has(v.canvas)) drawView(v, shown);
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

  const sig = (x, n = 3) => (x == null ? "–" : Number(x.toPrecision(n)).toString());

  // Species keys as typeset formulas, made once per species (the table asks after every edit).
  const formulaOf = new Map();
  const typesetOnce = (key) => {
    let text = formulaOf.get(key);
    if (text === undefined) formulaOf.set(key, (text = formula(key)));
    return text;
  };

  // The snowline table as rows of cells, each `{tag, text, attrs: [[name, value], ...]}`.
  function snowlineRowsSpec(rows) {
    const out = [];
    for (const row of rows) {
      const lines = row.snowlines.length ? row.snowlines : [null];
      const span = String(lines.length);
      lines.forEach((line, i) => {
        const cells = [];
        if (i === 0) cells.push({ tag: "th", text: typesetOnce(row.species), attrs: [["scope", "row"], ["rowspan", span]] });
        if (line) {
          cells.push({ tag: "td", text: sig(line.radius_au), attrs: [["data-radius-au", String(line.radius_au)]] },
            { tag: "td", text: (line.direction === "freeze_out" ? "freezes out (ice outside)" : "desorbs (gas outside)")
              + (line.out_of_equilibrium ? "; not in equilibrium at the disk's age" : ""), attrs: [] },
            { tag: "td", text: sig(line.midplane_temperature_k), attrs: [] });
        } else {
          const why = row.inner_edge === "absent" ? "species absent (no carrier)"
            : row.inner_edge === "ice_at_inner_edge" ? "none: ice everywhere on the grid" : "none: gas everywhere on the grid";
          cells.push({ tag: "td", text: why, attrs: [["colspan", "3"]] });
        }
        if (i === 0) {
          cells.push({ tag: "td", text: sig(row.condensation_temperature_k), attrs: [["rowspan", span]] },
            { tag: "td", text: sig(row.binding_energy_k, 4), attrs: [["rowspan", span]] },
            { tag: "td", text: row.abundance_per_h > 0 ? row.abundance_per_h.toExponential(2) : "0", attrs: [["rowspan", span]] });
        }
        out.push({ species: row.species, cells });
      });
    }
    return out;
  }

  // What the table shows: its rows as last filled in (the core's JSON text), its
  // shape (rows, cells and their attribute names and spans, all set by the
  // species and their numbers of snowlines) and per cell its element and
  // spec. An edit that leaves the rows as they were (the name, a field of no
  // effect) touches nothing; one that keeps the shape (most: the radii and
  // temperatures move) rewrites only the cells whose text or attributes changed;
  // any other rebuilds the table. Either way the table's HTML is the same.
  let shownTable = "";
  let shownShape = "";
  let shownCells = [];

  // A cell's text: its one text node's data rewritten in place (cheaper than
  // textContent, which replaces the node), else textContent.
  function setText(el, text) {
    const node = el.firstChild;
    if (node && node.nodeType === Node.TEXT_NODE && !node.nextSibling && text !== "") node.data = text;
    else el.textContent = text;
  }

  function fillSnowlineTable() {
    // The core's JSON text of the rows: compared as text, parsed only when it changed.
    const text = Core.explorer.snowlineTableJson();
    if (text === shownTable) return;
    shownTable = text;
    const rows = JSON.parse(text) || [];
    const spec = snowlineRowsSpec(rows);
    // The shape (tags, attribute names, spans) follows from the species and their numbers of snowlines.
    let shape = "";
    for (const r of rows) shape += `${r.species}:${r.snowlines.length} `;
    if (shape === shownShape) {
      // Same shape, so the same cells in the same order: only changed texts and attributes are written.
      let i = 0;
      for (const row of spec) {
        for (const c of row.cells) {
          const shown = shownCells[i++];
          if (shown.spec.text !== c.text) setText(shown.el, c.text);
          const attrs = c.attrs;
          for (let j = 0; j < attrs.length; j++) {
            if (shown.spec.attrs[j][1] !== attrs[j][1]) shown.el.setAttribute(attrs[j][0], attrs[j][1]);
          }
          shown.spec = c;
        }
      }
      return;
    }
    shownShape = shape;
    shownCells = [];
    const body = $("snowline-table").tBodies[0];
    body.replaceChildren();
    for (const row of spec) {
      const tr = document.createElement("tr");
      tr.dataset.species = row.species;
      for (const c of row.cells) {
        const el = document.createElement(c.tag);
        for (const [k, v] of c.attrs) el.setAttribute(k, v);
        el.textContent = c.text;
        tr.append(el);
        shownCells.push({ el, spec: c });
      }
      body.append(tr);
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
    const parts = [`disk=${Core.encodeFragment(diff)}`];
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
    const decoded = Core.decodeFragment(params.get("disk"));
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
    state = Core.explorer.resolvedDisk();
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
      loadDisk(Core.explorer.update(file ? DEMOS[file] : {}), file ? `Demo ${file}` : "The default disk");
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
        const text = Core.explorer.readout(v.canvas, x, y);
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
    Controls.build($("controls"), edit);
    buildDiskPicker();
    const speciesPicker = $("map-species");
    for (const sp of SPECIES) speciesPicker.add(new Option(formula(sp), sp));
    speciesPicker.addEventListener("change", () => {
      mapSpecies = speciesPicker.value;
      const view = VIEWS.find((v) => v.view === "ice_map");
      if (valid) {
        // After a worker result, another species' map comes from the worker (it holds the model).
        if (Core.explorer.hasView("ice_map", mapSpecies)) drawView(view);
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
    darkScheme.addEventListener("change", () => { if (theme === "system") drawAll(); });
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
        else loadDisk(Core.explorer.updateFromText(text), `File ${file.name}`);
      };
      reader.onerror = () => showBanner(`File ${file.name} could not be read: ${reader.error}`);
      reader.readAsText(file);
    });
    $("save-button").addEventListener("click", () => {
      const text = Core.explorer.exportText("disk");
      if (text) download(`${slug(getPath(state, "name"))}.json`, text, "application/json");
    });
    const extensions = { profile_csv: "-profile.csv", profile_ecsv: "-profile.ecsv", profile_json: "-profile.json",
      structure_csv: "-structure.csv", snowlines_json: "-snowlines.json", disk: ".json" };
    for (const button of document.querySelectorAll("[data-export]")) {
      button.addEventListener("click", () => {
        const what = button.dataset.export;
        const text = Core.explorer.exportText(what);
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
    get explorer() { return Core.explorer; },
    timings,
    get generation() { return generation; },
    get coreRestarts() { return Core.restarts; },
    get state() { return clone(state); },
    computeOnce: () => updateCore(prune(clone(state))),
    drawOnce: () => { drawAll(true); fillSnowlineTable(); },
    // The page's own path after an edit (compute, views on screen, table); times land in `timings`.
    recompute: () => runNow(),
    // Resolves once every view shows the current result (off-screen ones are drawn when idle).
    whenDrawn: () => new Promise((resolve) => { if (dirty.size === 0 && !framePending && !job) resolve(); else drawnWaiters.push(resolve); }),
    get computing() { return job !== null; },
    edit,
    // Sets a field without scheduling a recompute (the benchmark times `recompute` itself).
    setQuietly: (path, value) => setPath(state, path, value),
    // The pixels a view shows (ImageData): its chart canvas composited between the layers under and over it.
    viewPixels: (id) => Replay.pixels($(id)),
  };

  // Test hooks (tests/browser): `trapCore` makes the core trap inside an
  // Explorer method (Explorer.testTrap: "RuntimeError: unreachable" while the
  // Explorer is borrowed, as an out-of-memory abort in `update` would leave it);
  // `trapAllocator` makes the allocator abort (a request of 4 GiB - 16 bytes,
  // more than wasm32 can address). Both run from an event callback, as a trap in
  // any handler would, so the tests can check that the page restarts the core.
  window.__nivalisTest = {
    trapCore: () => setTimeout(() => Core.explorer.testTrap()),
    trapAllocator: () => setTimeout(() => Core.trapAllocator()),
    // While held, the worker's replies wait here; releasing delivers them in order.
    holdWorkerResults: (hold) => {
      holdWorker = Boolean(hold);
      if (!holdWorker) for (const event of heldMessages.splice(0)) onWorkerMessage(event);
    },
    // The held replies that carry a result.
    get heldWorkerMessages() { return heldMessages.filter((e) => e.data && e.data.type === "result").length; },
  };

  start();


  return {
    /** The running Explorer (a new one after the core restarts). */
    get explorer() { return Core.explorer; },
    /** The disk as edited (may be invalid); read-only for other modules. */
    get state() { return state; },
    /** Whether the views show a valid result. */
    get valid() { return valid; },
    /** The species of the ice map. */
    get mapSpecies() { return mapSpecies; },
    VIEWS,
    SPECIES,
    pageHooks,
    drawView,
    loadDisk,
    themeName,
    sizeCanvas,
    writeFragment,
    pushUndo,
    $, download, slug, getPath, formula, base64urlEncode, base64urlDecode, roundSlider, checkJsonBounds,
  };
})(Util, Core, Controls);
