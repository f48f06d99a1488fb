// uncertainty-worker.js: the uncertainty panel's part of the page's Web Worker
// (docs/model.md section 13). `cargo xtask dist` appends it to worker.js, so the
// worker's script is the no-modules glue, worker.js, then this. It wraps
// worker.js's message handler and answers the "uncertainty-*" messages: it runs
// the Monte Carlo in chunks, posting progress and partial figures after each
// chunk (the page cancels by terminating the worker), then the sensitivity, the
// summary, the figures as SVG, the figure files (SVG or PNG bytes with provenance) and the
// export files (the CLI's own functions).

/* global wasm_bindgen */

(() => {
  const base = self.onmessage;
  let runner = null;
  const post = (message) => self.postMessage(message);
  const problemsOf = (error) => (error && error.problems ? error.problems : [{ path: "(uncertainty)", message: String(error && error.message ? error.message : error) }]);
  self.onmessage = (event) => {
    const m = event.data;
    if (!m || typeof m.type !== "string" || !m.type.startsWith("uncertainty-")) return base(event);
    try {
      if (m.type === "uncertainty-run") {
        runner = new wasm_bindgen.UncertaintyRunner(m.disk, m.seed, m.atAu);
        const chunk = Math.max(1, m.chunk || 25);
        const started = performance.now();
        // Partial figures summarise every sample so far (percentiles per radius), so they are
        // drawn after the first chunk and then at most every FIGURE_MS; progress is posted after
        // every chunk. The samples, and so the results, do not depend on this.
        const FIGURE_MS = 500;
        let figuresAt = -Infinity;
        for (let start = 0; start < m.samples; start += chunk) {
          const count = Math.min(chunk, m.samples - start);
          runner.runChunk(start, count);
          const done = start + count;
          if (done < m.samples) {
            const now = performance.now();
            const draw = now - figuresAt >= FIGURE_MS;
            if (draw) figuresAt = now;
            post({ type: "uncertainty-progress", id: m.id, done, total: m.samples, ms: now - started, figures: draw ? runner.figures(m.quantity, m.species, m.dark) : null });
          }
        }
        const sampleMs = performance.now() - started;
        runner.finish();
        post({ type: "uncertainty-done", id: m.id, done: m.samples, total: m.samples, ms: sampleMs, summary: runner.summary(), figures: runner.figures(m.quantity, m.species, m.dark) });
      } else if (m.type === "uncertainty-figures") {
        if (runner) post({ type: "uncertainty-figures", id: m.id, figures: runner.figures(m.quantity, m.species, m.dark) });
      } else if (m.type === "uncertainty-export") {
        if (runner) post({ type: "uncertainty-export", id: m.id, name: m.name, mime: m.mime, text: runner.export(m.format, m.table) });
      } else if (m.type === "uncertainty-figure-file") {
        if (runner) {
          let bytes = null;
          let problem = null;
          try {
            bytes = runner.figureFile(m.view, m.options);
          } catch (error) {
            problem = String(error && error.message ? error.message : error);
          }
          post({ type: "uncertainty-figure-file", id: m.id, name: m.name, mime: m.mime, bytes, problem });
        }
      } else if (m.type === "uncertainty-posterior") {
        if (runner) post({ type: "uncertainty-posterior", id: m.id, result: runner.posterior(m.request, m.samples, m.dark) });
      }
    } catch (error) {
      post({ type: "uncertainty-error", id: m.id, problems: problemsOf(error) });
    }
  };
})();
