// bench.mjs: the in-browser benchmark of the page (run by `cargo xtask bench`,
// or `node tests/browser/bench.mjs` after `cargo xtask dist`). In headless
// Chromium it times, with performance.now(), exactly what the page does after
// an input change: "compute" = validate the disk and run the model
// (Explorer.update), "draw" = draw all five charts and fill the snowline
// table, and the page's own path, which draws only the views on screen at
// once and the others when the browser is idle. 50 repeats of each, alternating two luminosities so every repeat is a
// real recomputation, at the default grid (200 x 80) and at 400 x 160. Prints
// the medians (and the 10th/90th percentiles) in milliseconds.

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
      n.edit("grid.radial_cells", radial);
      n.edit("grid.vertical_cells", vertical);
      const compute = [];
      const draw = [];
      for (let i = 0; i < repeats; i++) {
        n.edit("star.luminosity_lsun", i % 2 === 0 ? 1.5 : 1.0);
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
      window.scrollTo(0, 0);
      const visible = [];
      for (let i = 0; i < repeats; i++) {
        n.edit("star.luminosity_lsun", i % 2 === 0 ? 1.5 : 1.0);
        n.recompute();
        visible.push(n.timings.drawMs);
      }
      return { compute, draw, visible };
    }, { radial, vertical, repeats: REPEATS });
    rows.push({ grid: `${radial}x${vertical}`, ...result });
  }
  if (errors.length) throw new Error(`page errors: ${errors.join("; ")}`);
  const f = (x) => x.toFixed(1).padStart(7);
  console.log(`in-browser benchmark (headless Chromium, ${REPEATS} repeats each, milliseconds; one frame at 60 Hz is 16.7 ms)`);
  console.log("  grid       step                              median     p10     p90");
  for (const r of rows) {
    for (const [name, values] of [["compute (validate + Model::run)", r.compute], ["draw (5 charts + snowline table)", r.draw],
      ["draw (views on screen + table)", r.visible]]) {
      console.log(`  ${r.grid.padEnd(10)} ${name.padEnd(33)} ${f(percentile(values, 0.5))} ${f(percentile(values, 0.1))} ${f(percentile(values, 0.9))}`);
    }
    const total = r.compute.map((c, i) => c + r.draw[i]);
    console.log(`  ${r.grid.padEnd(10)} ${"total (compute + all 5 charts)".padEnd(33)} ${f(percentile(total, 0.5))} ${f(percentile(total, 0.1))} ${f(percentile(total, 0.9))}`);
  }
} finally {
  await close();
}
