// redraw.test.mjs: an edit recomputes and redraws only what it changes (issue 9
// item 7), and the results of the staged path are the CLI's to the byte.
//
// The page's update re-runs only the stages an edit touches
// (nivalis_physics::rerun: an ice-parameter edit re-solves the ice balance and
// keeps the structure, a name edit computes nothing) and reports it as
// `recomputed`; a view whose data did not change is not drawn again
// (Explorer.draw compares the data and the display list with what the canvas
// shows; Explorer.drawCount counts the canvases actually drawn). Counts and
// states only, never a timing.

import { test } from "node:test";
import assert from "node:assert/strict";
import { writeFileSync } from "node:fs";
import {
  canvasStats, downloadText, execFileSync, join, newPage, pageUrl, settle, withBrowserAndCli,
} from "./helpers.mjs";

const pageUrlWith = (fragment) => `${pageUrl}#${fragment}`;

const CANVASES = ["canvas-c-to-o", "canvas-temperature", "canvas-ice-map", "canvas-c-to-o-map", "canvas-abundances"];

let browser;
let cli;
let scratch;

withBrowserAndCli("redraw", (s) => ({ browser, cli, scratch } = s));

// How many times each view's canvas has been drawn (not counting views left as they were).
function drawCounts(page) {
  return page.evaluate((ids) => Object.fromEntries(ids.map((id) => [id, window.nivalis.explorer.drawCount(id)])), CANVASES);
}

// Types into a field like a person and waits until every view shows the result.
async function setField(page, path, value) {
  await page.fill("#f-" + path.replace(/[^A-Za-z0-9_]/g, "-"), String(value));
  await settle(page);
}

// The stages the page's core re-ran for the current input (a fresh update of the same disk reports "nothing").
function recomputedAgain(page) {
  return page.evaluate(() => window.nivalis.computeOnce().recomputed);
}

test("an ice edit skips the structure and leaves the temperature view as it was; a name edit redraws nothing", async () => {
  const { page, errors } = await newPage(browser.context);
  const first = await drawCounts(page);
  for (const id of CANVASES) assert.ok(first[id] >= 1, `${id} was never drawn`);
  const temperaturePixels = await canvasStats(page, "canvas-temperature");

  // The sticking coefficient changes the ice balance only.
  await setField(page, "ices.sticking", 0.5);
  assert.equal(await page.evaluate(() => window.nivalis.state.ices.sticking), 0.5);
  const afterIce = await drawCounts(page);
  assert.equal(afterIce["canvas-temperature"], first["canvas-temperature"], "the temperature view was redrawn after an ice edit");
  for (const id of CANVASES.filter((c) => c !== "canvas-temperature")) {
    assert.equal(afterIce[id], first[id] + 1, `${id} was not redrawn exactly once after the ice edit`);
  }
  assert.deepEqual(await canvasStats(page, "canvas-temperature"), temperaturePixels);
  // The temperature view left as it was still answers the pointer.
  const box = await page.locator("#canvas-temperature").boundingBox();
  await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.3);
  assert.match(await page.textContent("#readout-temperature"), /au/);
  assert.equal(await recomputedAgain(page), "nothing");

  // The name is not a model input: nothing is recomputed or redrawn.
  await setField(page, "name", "Renamed disk");
  assert.deepEqual(await drawCounts(page), afterIce);

  // The luminosity changes the structure: every view is redrawn.
  await setField(page, "star.luminosity_lsun", 2);
  const afterStar = await drawCounts(page);
  for (const id of CANVASES) assert.equal(afterStar[id], afterIce[id] + 1, `${id} was not redrawn after a structure edit`);
  assert.deepEqual(errors, []);
  await page.close();
});

test("after staged edits (ices, composition) the exports equal the CLI's for the saved disk, byte for byte", async () => {
  const { page, errors } = await newPage(browser.context);
  await setField(page, "star.luminosity_lsun", 1.7);
  await setField(page, "ices.sticking", 0.3);
  await setField(page, "composition.oxygen_per_silicon", 3.5);
  const csv = await downloadText(page, '[data-export="profile_csv"]');
  const structure = await downloadText(page, '[data-export="structure_csv"]');
  const snowlines = await downloadText(page, '[data-export="snowlines_json"]');
  const disk = await downloadText(page, "#save-button");
  const saved = JSON.parse(disk.text);
  assert.equal(saved.ices.sticking, 0.3);
  assert.equal(saved.composition.oxygen_per_silicon, 3.5);
  const diskFile = join(scratch, "staged-disk.json");
  writeFileSync(diskFile, disk.text);
  const run = (args) => execFileSync(cli, args, { encoding: "utf8" });
  assert.ok(csv.text === run(["model", diskFile, "--format", "csv"]), "page CSV differs from `nivalis model --format csv` after staged edits");
  assert.ok(structure.text === run(["structure", diskFile]), "page structure CSV differs from `nivalis structure`");
  assert.ok(snowlines.text === run(["snowlines", diskFile]), "page snowlines differ from `nivalis snowlines`");
  assert.deepEqual(errors, []);
  await page.close();
});

test("the snowline table rewritten in place after edits is the table built afresh for the same disk", async () => {
  const { page, errors } = await newPage(browser.context);
  const html = () => page.innerHTML("#snowline-table tbody");
  const before = await html();
  // A mark on the first radius cell: it survives only if the table is rewritten in place.
  await page.evaluate(() => { document.querySelector("#snowline-table td[data-radius-au]").dataset.mark = "kept"; });
  const marked = await html();
  await setField(page, "star.luminosity_lsun", 1.7);
  await setField(page, "ices.sticking", 0.4);
  const edited = await html();
  assert.notEqual(edited, marked, "the edits did not change the table");
  assert.equal(await page.locator('#snowline-table td[data-mark="kept"]').count(), 1,
    "the table was rebuilt rather than rewritten in place (same rows and spans)");
  // The same disk opened afresh (from the address) builds the table from scratch: same HTML, less the mark.
  const { page: again } = await newPage(browser.context, page.url());
  assert.equal(await again.innerHTML("#snowline-table tbody"), edited.replace(' data-mark="kept"', ""));
  // Back to the first disk: the first table again.
  await setField(page, "star.luminosity_lsun", 1);
  await setField(page, "ices.sticking", 1);
  assert.equal((await html()).replace(' data-mark="kept"', ""), before);
  assert.deepEqual(errors, []);
  await again.close();
  await page.close();
});

// SHA-256 of each view canvas's pixels, once every view shows the current result.
async function canvasDigests(page) {
  await page.evaluate(() => window.nivalis.whenDrawn());
  return page.evaluate(async (ids) => {
    const out = {};
    for (const id of ids) {
      const c = document.getElementById(id);
      // What the view shows: a map's chart composited over its cells' layer.
      const pixels = window.nivalis.viewPixels(id).data;
      const digest = new Uint8Array(await crypto.subtle.digest("SHA-256", pixels));
      out[id] = `${c.width}x${c.height}:` + Array.from(digest, (b) => b.toString(16).padStart(2, "0")).join("");
    }
    return out;
  }, CANVASES);
}

test("after edits, a theme switch and a grid change, every view shows the pixels a fresh page draws for the same address", async () => {
  const { page, errors } = await newPage(browser.context);
  const first = await canvasDigests(page);
  await setField(page, "star.luminosity_lsun", 1.5);
  await setField(page, "ices.sticking", 0.5);
  const edited = await canvasDigests(page);
  for (const id of CANVASES.filter((c) => c !== "canvas-temperature")) assert.notEqual(edited[id], first[id], `${id} did not change`);
  // system -> light -> dark: the address then names the theme.
  await page.click("#theme-button");
  await page.click("#theme-button");
  await settle(page);
  await setField(page, "grid.radial_cells", 90);
  await setField(page, "ices.sticking", 0.8);
  await page.selectOption("#map-species", "CO");
  await settle(page);
  const shown = await canvasDigests(page);
  assert.match(page.url(), /theme=dark/);
  const { page: fresh } = await newPage(browser.context, page.url());
  assert.deepEqual(await canvasDigests(fresh), shown);
  assert.deepEqual(errors, []);
  await fresh.close();
  await page.close();
});

// A map's cells are on a canvas of their own under the chart canvas (web/replay.js): the
// composite must be the picture the same display list gives drawn on ONE canvas (the
// `oneCanvas` test hook of Explorer.draw: the image put on a scratch canvas and drawn onto
// the chart with drawImage, as the page did before the layer). Outside the cells' rectangle
// the pixels are equal; inside it, lines and labels drawn over the cells are blended once in
// 8-bit premultiplied RGBA on one canvas but twice (onto the transparent chart canvas, then
// the composite) with the layer, which rounds their anti-aliased edge pixels differently: at
// most 2 of 255 per channel on at most 2 % of the rectangle's pixels (bounds measured here,
// at most 2 and about 0.3 %; common practice for 8-bit compositing, no source). A missing or
// misplaced layer, an uncleared hole or a background over the cells breaks far more pixels.
async function layeredAgainstOneCanvas(page, id, view, theme) {
  return page.evaluate(({ id, view, theme }) => {
    const chart = document.getElementById(id);
    const under = document.getElementById(id + "-under");
    const flat = document.createElement("canvas");
    flat.id = "one-canvas-" + id;
    flat.width = chart.width;
    flat.height = chart.height;
    document.body.append(flat);
    window.nivalis.explorer.draw(view, flat.id, { theme, species: chart.dataset.species, pixelRatio: window.devicePixelRatio, oneCanvas: true });
    const one = flat.getContext("2d").getImageData(0, 0, flat.width, flat.height).data;
    flat.remove();
    const shown = window.nivalis.viewPixels(id).data;
    // The cells' rectangle: the layer's opaque pixels.
    const layer = under.getContext("2d").getImageData(0, 0, under.width, under.height).data;
    let [x0, y0, x1, y1] = [Infinity, Infinity, -1, -1];
    for (let y = 0; y < under.height; y++) {
      for (let x = 0; x < under.width; x++) {
        if (layer[(y * under.width + x) * 4 + 3] === 255) {
          x0 = Math.min(x0, x); y0 = Math.min(y0, y); x1 = Math.max(x1, x); y1 = Math.max(y1, y);
        }
      }
    }
    const top = chart.getContext("2d").getImageData(0, 0, chart.width, chart.height).data;
    let outside = 0, inside = 0, maxDiff = 0, holes = 0;
    for (let y = 0; y < chart.height; y++) {
      for (let x = 0; x < chart.width; x++) {
        const p = (y * chart.width + x) * 4;
        const inRect = x >= x0 && x <= x1 && y >= y0 && y <= y1;
        if (inRect && top[p + 3] === 0) holes += 1;
        let differs = false;
        for (let k = 0; k < 4; k++) {
          const d = Math.abs(shown[p + k] - one[p + k]);
          if (d) { differs = true; maxDiff = Math.max(maxDiff, d); }
        }
        if (differs) { if (inRect) inside += 1; else outside += 1; }
      }
    }
    const area = (x1 - x0 + 1) * (y1 - y0 + 1);
    return { size: [chart.width, chart.height], layerSize: [under.width, under.height], rect: [x0, y0, x1, y1], area, holes, outside, inside, maxDiff };
  }, { id, view, theme });
}

test("a map's cells on the layer under its chart give the picture of the one-canvas drawing", async () => {
  for (const theme of ["light", "dark"]) {
    const { page, errors } = await newPage(browser.context, theme === "dark" ? pageUrlWith("theme=dark") : undefined);
    await setField(page, "ices.sticking", 0.6);
    for (const [id, view] of [["canvas-ice-map", "ice_map"], ["canvas-c-to-o-map", "c_to_o_map"]]) {
      const r = await layeredAgainstOneCanvas(page, id, view, theme);
      const what = `${theme} ${id}: ${JSON.stringify(r)}`;
      assert.deepEqual(r.layerSize, r.size, what);
      // The cells cover most of the map's plotting rectangle, and the chart canvas is transparent there.
      assert.ok(r.area > 0.3 * r.size[0] * r.size[1], what);
      assert.ok(r.holes > 0.5 * r.area, what);
      assert.equal(r.outside, 0, what);
      assert.ok(r.maxDiff <= 2, what);
      assert.ok(r.inside <= 0.02 * r.area, what);
    }
    if (theme === "light") {
      // Another list on a layered canvas whose cells' rectangle differs (the gas C/O map's
      // colour bar labels are narrower than the ice map's): the layer holds only the new
      // cells, and the view shows what the gas C/O map's own canvas shows, pixel for pixel.
      const same = await page.evaluate(async () => {
        const [a, b] = ["canvas-ice-map", "canvas-c-to-o-map"].map((id) => document.getElementById(id));
        const options = { theme: "light", pixelRatio: window.devicePixelRatio };
        window.nivalis.explorer.draw("c_to_o_map", a.id, options);
        const digest = async (id) => Array.from(new Uint8Array(await crypto.subtle.digest("SHA-256", window.nivalis.viewPixels(id).data))).join(",");
        const layerDigest = async (id) => {
          const u = document.getElementById(id + "-under");
          return Array.from(new Uint8Array(await crypto.subtle.digest("SHA-256", u.getContext("2d").getImageData(0, 0, u.width, u.height).data))).join(",");
        };
        return { sizes: [a.width, a.height, b.width, b.height], view: (await digest(a.id)) === (await digest(b.id)), layer: (await layerDigest(a.id)) === (await layerDigest(b.id)) };
      });
      assert.equal(same.sizes[0], same.sizes[2]);
      assert.equal(same.sizes[1], same.sizes[3]);
      assert.ok(same.layer, "the layer keeps cells of the list drawn before");
      assert.ok(same.view, "the redrawn canvas differs from the gas C/O map's");
    }
    assert.deepEqual(errors, []);
    await page.close();
  }
});
