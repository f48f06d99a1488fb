// bench.mjs: the in-browser benchmark of the page (run by `cargo xtask bench`,
// or `node tests/browser/bench.mjs` after `cargo xtask dist`). In headless
// Chromium it times, with performance.now(), exactly what the page does after
// an input change: "compute" = validate the disk and run the model
// (Explorer.update), "draw" = draw all five charts and fill the snowline
// table, and the page's own path, which draws only the views on screen at
// once and the others when the browser is idle. 50 repeats of each, alternating two luminosities so every repeat is a
// real recomputation, at the default grid (200 x 80) and at 400 x 160 (timed
// on the main thread), and 10 repeats of the Web Worker path at 800 x 320.
// Prints the medians (and the 10th/90th percentiles) in milliseconds.

import { ensurePage, launch, openPage } from "./helpers.mjs";

const REPEATS = 50;
const GRIDS = [[200, 80], [400, 160]];

function percentile(values, q) {
  const s = [...values].sort((a, b) => a - b);
  const i = (s.length - 1) * q;
  const lo = Math.floor(i);
  const hi = Math.ceil(i);
  return s[lo] + (s[hi] - s[lo]) * (i - lo);
}

ensurePage();
const { context, close } = await launch();
try {
  const { page, errors } = await openPage(context);
  const rows = [];
  for (const [radial, vertical] of GRIDS) {
    const result = await page.evaluate(({ radial, vertical, repeats }) => {
      const n = window.nivalis;
      n.setQuietly("grid.radial_cells", radial);
      n.setQuietly("grid.vertical_cells", vertical);
      const compute = [];
      const draw = [];
      for (let i = 0; i < repeats; i++) {
        n.setQuietly("star.luminosity_lsun", i % 2 === 0 ? 1.5 : 1.0);
        const t0 = performance.now();
        const outcome = n.computeOnce();
        const t1 = performance.now();
        if (!outcome.ok) throw new Error(JSON.stringify(outcome.problems));
        n.drawOnce();
        const t2 = performance.now();
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
        n.setQuietly("star.luminosity_lsun", i % 2 === 0 ? 1.5 : 1.0);
        n.recompute();
        if (n.computing) {
          visible.length = 0;
          break;
        }
        visible.push(n.timings.drawMs);
      }
      return { compute, draw, visible };
    }, { radial, vertical, repeats: REPEATS });
    rows.push({ grid: `${radial}x${vertical}`, ...result });
  }
  // The worker path, taken by grids predicted to need more than about two
  // frames: time from the edit to the result drawn on screen, and the compute
  // (with packing) inside the worker.
  const WORKER_GRID = [800, 320];
  const WORKER_REPEATS = 10;
  const background = await page.evaluate(async ({ radial, vertical, repeats }) => {
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
  console.log(`in-browser benchmark (headless Chromium, ${REPEATS} repeats each, milliseconds; one frame at 60 Hz is 16.7 ms)`);
  console.log("  grid       step                              median     p10     p90");
  for (const r of rows) {
    for (const [name, values] of [["compute (validate + Model::run)", r.compute], ["draw (5 charts + snowline table)", r.draw],
      ["draw (views on screen + table)", r.visible]]) {
      if (values.length === 0) {
        console.log(`  ${r.grid.padEnd(10)} ${name.padEnd(33)}   (the page computes this grid in the worker)`);
        continue;
      }
      console.log(`  ${r.grid.padEnd(10)} ${name.padEnd(33)} ${f(percentile(values, 0.5))} ${f(percentile(values, 0.1))} ${f(percentile(values, 0.9))}`);
    }
    const total = r.compute.map((c, i) => c + r.draw[i]);
    console.log(`  ${r.grid.padEnd(10)} ${"total (compute + all 5 charts)".padEnd(33)} ${f(percentile(total, 0.5))} ${f(percentile(total, 0.1))} ${f(percentile(total, 0.9))}`);
  }
  const grid = `${WORKER_GRID[0]}x${WORKER_GRID[1]}`;
  console.log(`  worker path (${WORKER_REPEATS} repeats; the page keeps responding meanwhile):`);
  console.log(`  ${grid.padEnd(10)} ${"compute (validate + run), worker".padEnd(33)} ${f(percentile(background.inWorker, 0.5))} ${f(percentile(background.inWorker, 0.1))} ${f(percentile(background.inWorker, 0.9))}`);
  console.log(`  ${grid.padEnd(10)} ${"pack the result for the page".padEnd(33)} ${f(percentile(background.packing, 0.5))} ${f(percentile(background.packing, 0.1))} ${f(percentile(background.packing, 0.9))}`);
  console.log(`  ${grid.padEnd(10)} ${"edit to result on screen".padEnd(33)} ${f(percentile(background.roundTrip, 0.5))} ${f(percentile(background.roundTrip, 0.1))} ${f(percentile(background.roundTrip, 0.9))}`);
} finally {
  await close();
}
