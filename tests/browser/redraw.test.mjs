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

const VIEWS = { "canvas-c-to-o": "c_to_o", "canvas-temperature": "temperature", "canvas-ice-map": "ice_map", "canvas-c-to-o-map": "c_to_o_map", "canvas-abundances": "abundances" };

// A view is three stacked canvases (web/replay.js, crates/web/src/layers.rs): the back of its
// display list on the layer under the chart canvas, the middle on the chart canvas, the front
// on the layer over it, and after an edit only the middle is drawn again. The composite must
// be the picture of the same list drawn on ONE canvas (the `oneCanvas` test hook of
// Explorer.draw). A line or label drawn on the chart canvas or the layer over it where that is
// transparent is blended twice in 8-bit premultiplied RGBA (onto the transparent canvas, then
// in the composite) instead of once, which rounds anti-aliased edge pixels differently: at most
// 3 of 255 per channel (a pixel covered by edges on both upper canvases is rounded three times)
// on at most 0.8 % of a view's pixels. Measured here on the five views after ice and
// structure edits, both themes: at most 3, on at most 0.65 % (the dark ice map; common
// practice for 8-bit compositing, no source). A layer composited in the wrong order, a layer with stale content (lines of an
// earlier list) or a part drawn twice changes far more pixels, by far more.
const MAX_CHANNEL_DIFF = 3;
const MAX_DIFFERING = 0.008;

// For each view: its composited pixels against the one-canvas drawing of its current list
// (pixels differing, largest channel difference), the SHA-256 of that one-canvas drawing, the
// split of its list ([back, middle, front] operations) and the stacking of its canvases.
async function againstOneCanvas(page) {
  await page.evaluate(() => window.nivalis.whenDrawn());
  return page.evaluate(async (views) => {
    const hex = async (data) => Array.from(new Uint8Array(await crypto.subtle.digest("SHA-256", data)), (b) => b.toString(16).padStart(2, "0")).join("");
    let theme = document.documentElement.dataset.theme;
    if (theme !== "dark" && theme !== "light") theme = matchMedia("(prefers-color-scheme: dark)").matches ? "dark" : "light";
    const out = {};
    for (const [id, view] of Object.entries(views)) {
      const chart = document.getElementById(id);
      const flat = document.createElement("canvas");
      // A new id each time: the explorer leaves a canvas it already drew the same list on as it is.
      flat.id = `one-canvas-${id}-${performance.now()}`;
      flat.width = chart.width;
      flat.height = chart.height;
      document.body.append(flat);
      window.nivalis.explorer.draw(view, flat.id, { theme, species: chart.dataset.species, pixelRatio: window.devicePixelRatio, oneCanvas: true, canvas: flat });
      const one = flat.getContext("2d").getImageData(0, 0, flat.width, flat.height).data;
      flat.remove();
      const shown = window.nivalis.viewPixels(id).data;
      let differing = 0, maxDiff = 0;
      for (let p = 0; p < one.length; p += 4) {
        let d = 0;
        for (let k = 0; k < 4; k++) d = Math.max(d, Math.abs(one[p + k] - shown[p + k]));
        if (d) { differing += 1; maxDiff = Math.max(maxDiff, d); }
      }
      const box = chart.parentElement;
      const stack = Array.from(box.children, (c) => `${c.id}:${getComputedStyle(c).position}:${getComputedStyle(c).pointerEvents}`);
      out[id] = {
        size: `${chart.width}x${chart.height}`, differing: differing / (one.length / 4), maxDiff, one: `${chart.width}x${chart.height}:` + await hex(one),
        shown: `${chart.width}x${chart.height}:` + await hex(shown), split: Array.from(window.nivalis.explorer.layerSplit(id)), stack,
      };
    }
    return out;
  }, VIEWS);
}

// Every view within the bound of its one-canvas drawing, on its three stacked canvases.
function assertWithinBound(r, what) {
  for (const [id, v] of Object.entries(r)) {
    const text = `${what} ${id}: ${JSON.stringify({ ...v, one: undefined, shown: undefined })}`;
    assert.deepEqual(v.stack, [`${id}-under:absolute:none`, `${id}:relative:auto`, `${id}-over:absolute:none`], text);
    assert.equal(v.split.length, 3, text);
    assert.ok(v.maxDiff <= MAX_CHANNEL_DIFF, text);
    assert.ok(v.differing <= MAX_DIFFERING, text);
  }
}

test("each view on its three canvases gives the picture of the one-canvas drawing: exactly when first drawn, within the bound after edits", async () => {
  for (const theme of ["light", "dark"]) {
    const { page, errors } = await newPage(browser.context, theme === "dark" ? pageUrlWith("theme=dark") : undefined);
    // First drawn: the whole list on the layer under the chart, the picture of one canvas.
    const first = await againstOneCanvas(page);
    for (const [id, v] of Object.entries(first)) {
      assert.equal(v.maxDiff, 0, `${theme} ${id} first draw: ${JSON.stringify(v.split)}`);
      assert.deepEqual(v.split.slice(1), [0, 0], `${theme} ${id}`);
    }
    assertWithinBound(first, theme);
    // Edits split the lists: only what changed is on the chart canvas, drawn again per edit.
    for (const [path, value] of [["ices.sticking", 0.6], ["ices.sticking", 0.7], ["star.luminosity_lsun", 1.5], ["star.luminosity_lsun", 1.2]]) {
      await setField(page, path, value);
      const r = await againstOneCanvas(page);
      assertWithinBound(r, `${theme} ${path} = ${value}`);
    }
    const split = await againstOneCanvas(page);
    for (const [id, v] of Object.entries(split)) {
      assert.ok(v.split[0] + v.split[2] > 0 && v.split[1] > 0, `${theme} ${id} was not split after edits: ${v.split}`);
    }
    assert.deepEqual(errors, []);
    await page.close();
  }
});

test("after an edit that changes the axes, a theme switch, a resize and a grid change, every view is within the bound of a fresh page's drawing", async () => {
  const { page, errors } = await newPage(browser.context);
  const first = await againstOneCanvas(page);
  await setField(page, "star.luminosity_lsun", 1.5);
  await setField(page, "ices.sticking", 0.5);
  const edited = await againstOneCanvas(page);
  for (const id of CANVASES.filter((c) => c !== "canvas-temperature")) assert.notEqual(edited[id].one, first[id].one, `${id} did not change`);
  assertWithinBound(edited, "edited");
  // A big luminosity change moves the axes (the temperature range, the snowlines).
  await setField(page, "star.luminosity_lsun", 40);
  const bright = await againstOneCanvas(page);
  for (const id of CANVASES) assert.notEqual(bright[id].one, edited[id].one, `${id} did not change with the luminosity`);
  assertWithinBound(bright, "bright");
  // system -> light -> dark: the address then names the theme.
  await page.click("#theme-button");
  await page.click("#theme-button");
  await settle(page);
  assertWithinBound(await againstOneCanvas(page), "dark");
  // A narrower window: every canvas gets another size.
  await page.setViewportSize({ width: 1100, height: 1000 });
  await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
  const narrow = await againstOneCanvas(page);
  for (const id of CANVASES) assert.notEqual(narrow[id].size, bright[id].size, `${id} was not resized`);
  assertWithinBound(narrow, "narrow");
  await setField(page, "grid.radial_cells", 90);
  await setField(page, "ices.sticking", 0.8);
  await page.selectOption("#map-species", "CO");
  await settle(page);
  await setField(page, "star.luminosity_lsun", 30);
  const shown = await againstOneCanvas(page);
  assertWithinBound(shown, "shown");
  assert.match(page.url(), /theme=dark/);
  // A fresh page of the same address and size draws each list once, on the layer under: the
  // one-canvas picture the edited page's lists give, to the byte.
  const { page: fresh } = await newPage(browser.context, page.url());
  await fresh.setViewportSize({ width: 1100, height: 1000 });
  await fresh.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
  const again = await againstOneCanvas(fresh);
  for (const id of CANVASES) {
    assert.equal(again[id].shown, again[id].one, `${id}: the fresh page's view is not its one-canvas picture`);
    assert.equal(again[id].one, shown[id].one, `${id}: the edited page's list differs from the fresh page's`);
  }
  assert.deepEqual(errors, []);
  await fresh.close();
  await page.close();
});

// How many times each view's layers (under and over the chart canvas) were drawn again.
function layerRedraws(page) {
  return page.evaluate((ids) => Object.fromEntries(ids.map((id) => [id, window.nivalis.explorer.layerRedraws(id)])), CANVASES);
}

test("after a first edit of a kind, the next small edit of that kind redraws only the middle of each list (the layers are left as they are)", async () => {
  const { page, errors } = await newPage(browser.context);
  for (const [path, values, views] of [
    ["ices.sticking", [0.5, 0.6, 0.7], CANVASES.filter((c) => c !== "canvas-temperature")],
    ["star.luminosity_lsun", [1.5, 1, 1.5, 1.2], CANVASES],
  ]) {
    for (const v of values.slice(0, -1)) await setField(page, path, v);
    const [draws, layers] = [await drawCounts(page), await layerRedraws(page)];
    await setField(page, path, values[values.length - 1]);
    const [drawsAfter, layersAfter] = [await drawCounts(page), await layerRedraws(page)];
    for (const id of views) {
      assert.equal(drawsAfter[id], draws[id] + 1, `${id} was not redrawn after ${path}`);
      assert.equal(layersAfter[id], layers[id], `${id}: ${path} = ${values[values.length - 1]} drew the layers again (not the fast path)`);
    }
    assertWithinBound(await againstOneCanvas(page), path);
  }
  assert.deepEqual(errors, []);
  await page.close();
});
