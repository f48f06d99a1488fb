// page.test.mjs: end-to-end tests of the single-file page target/site/nivalis.html
// in headless Chromium, opened from file:// as a user would by double-click.
// Run with `cargo xtask test` (which builds the page first) or `node --test tests/browser/`.
//
// What the page must do (issue 4): work offline with zero network requests;
// draw non-blank charts for the default disk; move the water snowline outward
// when the luminosity rises (common practice: the snowline sits where the
// midplane reaches the water sublimation temperature, and a brighter star heats
// the disk); export a CSV byte-identical to `nivalis model --format csv` for the
// same disk; show the reader's message beside an invalid field while keeping
// the previous result; restore the state from the URL; leave a screenshot.

import { test } from "node:test";
import assert from "node:assert/strict";
import { writeFileSync } from "node:fs";
import {
  canvasStats, viewPicture, downloadText, execFileSync, generation, join, nextResult, openPage, pageUrl, repoRoot, settle,
  waterSnowlines, withBrowserAndCli,
} from "./helpers.mjs";
import { newPage } from "./helpers.mjs";

const CANVASES = ["canvas-c-to-o", "canvas-temperature", "canvas-ice-map", "canvas-c-to-o-map", "canvas-abundances"];

let browser;
let cli;
let scratch;

withBrowserAndCli("page", (s) => ({ browser, cli, scratch } = s));

// A new tab with the page loaded and drawn (helpers.mjs newPage).
function freshPage(url) {
  return newPage(browser.context, url || pageUrl);
}

// Types into a field like a person (the value is replaced) and waits for the redraw.
async function setField(page, path, value) {
  const id = "#f-" + path.replace(/[^A-Za-z0-9_]/g, "-");
  await page.fill(id, String(value));
  await settle(page);
}

test("opens from file:// and makes zero network requests", async () => {
  const page = await browser.context.newPage();
  const others = [];
  // Every request other than the page file itself is counted and refused.
  await page.route("**/*", (route) => {
    const url = route.request().url().split("#")[0];
    if (url === pageUrl) return route.continue();
    others.push(url);
    return route.abort();
  });
  // The listener sees every request, the page's own included: that one proves it is live.
  const seen = [];
  page.on("request", (r) => {
    const url = r.url().split("#")[0];
    seen.push(url);
    if (url !== pageUrl && !others.includes(url)) others.push(url);
  });
  await page.goto(pageUrl);
  await page.waitForSelector("body[data-ready=true]", { timeout: 60000 });
  // Interact a little: a redraw, a demo disk, a readout must not fetch anything either.
  await page.selectOption("#demo-picker", { index: 1 });
  await settle(page);
  await page.hover("#canvas-c-to-o", { position: { x: 300, y: 150 } });
  assert.deepEqual(others, [], `requests other than the page: ${others.join(", ")}`);
  assert.ok(seen.includes(pageUrl), "the request listener did not see the page itself");
  assert.match(await page.textContent("#status"), /Computed in/);
  await page.close();
});

test("the default disk draws non-blank charts and a snowline table", async () => {
  const { page, errors } = await freshPage();
  for (const id of CANVASES) {
    const s = await canvasStats(page, id);
    // A blank or background-only canvas has 1 colour; axes and text alone give a
    // few percent of pixels; every view here also draws data (lines or a map).
    assert.ok(s.colours > 50, `${id}: only ${s.colours} colours`);
    assert.ok(s.nonBackground > 0.03, `${id}: only ${(100 * s.nonBackground).toFixed(2)} % of pixels drawn`);
  }
  // The two maps are filled by the rasterised cells: most of their area is coloured.
  for (const id of ["canvas-ice-map", "canvas-c-to-o-map"]) {
    assert.ok((await canvasStats(page, id)).nonBackground > 0.3, `${id} map cells missing`);
  }
  const water = await waterSnowlines(page);
  assert.ok(water.length >= 1 && water[0] > 0.3 && water[0] < 20, `water snowline ${water}`);
  const hover = await page.locator("#canvas-c-to-o").boundingBox();
  await page.mouse.move(hover.x + hover.width * 0.5, hover.y + hover.height * 0.5);
  assert.match(await page.textContent("#readout-c-to-o"), /^r = [\d.]+ au: C\/O gas/);
  await page.locator("#canvas-ice-map").scrollIntoViewIfNeeded();
  const mapBox = await page.locator("#canvas-ice-map").boundingBox();
  await page.mouse.move(mapBox.x + mapBox.width * 0.5, mapBox.y + mapBox.height * 0.8);
  assert.match(await page.textContent("#readout-ice-map"), /z\/r = [\d.]+: H₂O ice fraction/);
  assert.deepEqual(errors, []);
  await page.close();
});

test("raising the luminosity moves the water snowline outward", async () => {
  const { page } = await freshPage();
  const [before1] = await waterSnowlines(page);
  await setField(page, "star.luminosity_lsun", 10);
  const [after10] = await waterSnowlines(page);
  // With the star-dependent default grazing angle phi = 0.02 (L/Lsun)^(-1/3) (docs/model.md section 4),
  // T_irr scales as L^(1/6), so an irradiation-set snowline moves as L^(1/3) (x2.15 for 10x L); viscous
  // heating, which the luminosity does not change, dilutes that near 2 au: well over x1.25 all the same.
  assert.ok(after10 > before1 * 1.25, `water snowline ${before1} au at 1 Lsun, ${after10} au at 10 Lsun`);
  // The slider follows the typed value (log scale: log10(10) = 1).
  assert.equal(Number(await page.inputValue("#f-star-luminosity_lsun-slider")), 1);
  // And the slider drives the field: a brighter star again moves it further out.
  await page.fill("#f-star-luminosity_lsun-slider", "2");
  await page.dispatchEvent("#f-star-luminosity_lsun-slider", "input");
  await settle(page);
  assert.equal(await page.inputValue("#f-star-luminosity_lsun"), "100");
  const [after100] = await waterSnowlines(page);
  assert.ok(after100 > after10, `water snowline ${after10} au at 10 Lsun, ${after100} au at 100 Lsun`);
  await page.close();
});

test("the exported CSV and ECSV equal the CLI's output for the same disk, byte for byte", async () => {
  const { page } = await freshPage();
  // A non-default disk: a demo file plus a slider-set luminosity and a typed accretion rate.
  await page.selectOption("#demo-picker", "luminous_herbig.json");
  await settle(page);
  await setField(page, "star.luminosity_lsun", 23.7);
  await setField(page, "disk.accretion_rate_msun_per_yr", "3e-8");
  const csv = await downloadText(page, '[data-export="profile_csv"]');
  const ecsv = await downloadText(page, '[data-export="profile_ecsv"]');
  const disk = await downloadText(page, "#save-button");
  assert.match(csv.name, /\.csv$/);
  const diskFile = join(scratch, "exported-disk.json");
  writeFileSync(diskFile, disk.text);
  const native = execFileSync(cli, ["model", diskFile, "--format", "csv"], { encoding: "utf8" });
  const nativeEcsv = execFileSync(cli, ["model", diskFile, "--format", "ecsv"], { encoding: "utf8" });
  assert.ok(csv.text.split("\n").length > 100, "the CSV has the radial profile rows");
  assert.ok(csv.text === native, "page CSV differs from `nivalis model --format csv`");
  assert.ok(ecsv.text === nativeEcsv, "page ECSV differs from `nivalis model --format ecsv`");
  // The saved disk file is what the page shows: luminosity and accretion rate as set.
  const saved = JSON.parse(disk.text);
  assert.equal(saved.star.luminosity_lsun, 23.7);
  assert.equal(saved.disk.accretion_rate_msun_per_yr, 3e-8);
  await page.close();
});

test("an invalid field shows the reader's message beside it and keeps the previous result", async () => {
  const { page } = await freshPage();
  const table = await page.innerHTML("#snowline-table tbody");
  const picture = await viewPicture(page, "canvas-c-to-o");
  await setField(page, "star.luminosity_lsun", -3);
  const problem = page.locator("#f-star-luminosity_lsun-problem");
  assert.equal(await problem.isVisible(), true);
  // The same message as `nivalis check` prints for this file (crates/disk_files reader).
  assert.equal(await problem.textContent(), "must be in [1e-5, 10000000], got -3");
  assert.equal(await page.getAttribute("#f-star-luminosity_lsun", "aria-invalid"), "true");
  assert.match(await page.textContent("#banner"), /last valid disk/);
  assert.equal(await page.innerHTML("#snowline-table tbody"), table, "snowline table changed");
  assert.equal(await viewPicture(page, "canvas-c-to-o"), picture, "chart changed");
  // A problem the reader finds between fields lands on the field it names.
  await setField(page, "star.luminosity_lsun", 1);
  await setField(page, "disk.inner_radius_au", 600);
  assert.match(await page.textContent("#f-disk-inner_radius_au-problem"), /must be < disk\.outer_radius_au \(500\), got 600/);
  // Text that is not a number gets the reader's message too.
  await setField(page, "disk.inner_radius_au", "abc");
  assert.match(await page.textContent("#f-disk-inner_radius_au-problem"), /must be a number in \(0, 1000\], got "abc"/);
  // Fixing the field clears the message and computes again.
  await setField(page, "disk.inner_radius_au", 0.2);
  assert.equal(await problem.isVisible(), false);
  assert.equal(await page.isVisible("#banner"), false);
  await page.close();
});

test("the URL fragment round-trips the state, and undo restores an edit", async () => {
  const { page } = await freshPage();
  await setField(page, "star.luminosity_lsun", 3.2);
  await page.selectOption("#f-ices-desorption", "first_order");
  await settle(page);
  await page.click("#group-ices summary >> text=CO");
  await setField(page, "ices.species_overrides.CO.binding_energy_k", 1000);
  await page.selectOption("#map-species", "CO");
  await settle(page);
  const url = page.url();
  assert.match(url, /#disk=[A-Za-z0-9_-]+/);
  const state = await page.evaluate(() => window.nivalis.state);
  const table = await page.innerHTML("#snowline-table tbody");

  const { page: again } = await freshPage(url);
  assert.deepEqual(await again.evaluate(() => window.nivalis.state), state);
  assert.equal(await again.inputValue("#f-star-luminosity_lsun"), "3.2");
  assert.equal(await again.inputValue("#f-ices-desorption"), "first_order");
  assert.equal(await again.inputValue("#f-ices-species_overrides-CO-binding_energy_k"), "1000");
  assert.equal(await again.inputValue("#map-species"), "CO");
  assert.equal(await again.innerHTML("#snowline-table tbody"), table);
  await again.close();

  // Undo (Ctrl+Z) goes back one edit at a time, and the URL follows.
  await page.locator("body").click({ position: { x: 5, y: 5 } });
  await page.keyboard.press("Control+z");
  await settle(page);
  assert.equal(await page.inputValue("#f-ices-species_overrides-CO-binding_energy_k"), "");
  await page.click("#undo-button");
  await settle(page);
  assert.equal(await page.inputValue("#f-ices-desorption"), "zeroth_order");
  await page.close();
});

test("Open reads a disk file through the same reader", async () => {
  const { page } = await freshPage();
  await page.setInputFiles("#open-file", join(repoRoot, "demo_disks", "cool_dwarf.json"));
  await page.waitForFunction(() => window.nivalis.state.star.mass_msun === 0.3);
  assert.equal(await page.inputValue("#f-star-mass_msun"), "0.3");
  const bad = join(scratch, "bad-disk.json");
  writeFileSync(bad, '{"disk": {"gass_mass_msun": 1}}');
  await page.setInputFiles("#open-file", bad);
  await page.waitForFunction(() => !document.getElementById("banner").hidden);
  assert.match(await page.textContent("#banner"), /disk\.gass_mass_msun: unknown field; did you mean gas_mass_msun\?/);
  assert.equal(await page.inputValue("#f-star-mass_msun"), "0.3", "a rejected file must not change the inputs");
  await page.close();
});

test("a large grid is computed in a Web Worker while the page keeps responding", async () => {
  // `?worker=force` (a documented test hook) sends every computation to the
  // worker, so this test does not depend on how fast this machine computes.
  const { page, errors } = await freshPage(pageUrl.replace(/(#.*)?$/, "?worker=force"));
  const [waterDefault] = await waterSnowlines(page);
  assert.match(await page.textContent("#status"), /Computed in the background/, "the hook did not send the first result to the worker");
  // Worker replies are held (test hook) so the pending state can be looked at without racing the worker.
  await page.evaluate(() => window.__nivalisTest.holdWorkerResults(true));
  const before = await generation(page);
  await page.fill("#f-grid-radial_cells", "1200");
  await page.fill("#f-grid-vertical_cells", "300");
  await page.waitForFunction(() => document.body.dataset.state === "computing" && window.__nivalisTest.heldWorkerMessages > 0, null, { timeout: 300000, polling: 50 });
  assert.equal(await page.isVisible("#busy"), true, "no progress indicator while computing");
  // The main thread is free while the worker holds the job: animation frames
  // run and an edit elsewhere is taken (it restarts the job with the new state).
  const frames = await page.evaluate(() => new Promise((resolve) => {
    let count = 0;
    const loop = () => (++count >= 5 ? resolve(count) : requestAnimationFrame(loop));
    requestAnimationFrame(loop);
  }));
  assert.equal(frames, 5);
  assert.equal(await generation(page), before, "a result was drawn while the worker's replies were held");
  await page.evaluate(() => window.__nivalisTest.holdWorkerResults(false));
  await nextResult(page, before);
  assert.match(await page.textContent("#status"), /1200 × 300 cells.*Computed in the background/);
  assert.equal(await page.isVisible("#busy"), false);
  const [waterLarge] = await waterSnowlines(page);
  // The same disk on a finer grid: the snowline moves by far less than a default cell (about 4 %).
  assert.ok(Math.abs(waterLarge / waterDefault - 1) < 0.05, `water snowline ${waterDefault} au (default grid) vs ${waterLarge} au`);
  for (const id of CANVASES) assert.ok((await canvasStats(page, id)).colours > 50, `${id} blank after the worker result`);
  // Another species' map comes from the worker, which holds the model.
  await page.selectOption("#map-species", "CO");
  await page.waitForFunction(() => document.getElementById("canvas-ice-map").dataset.species === "CO", null, { timeout: 300000, polling: 50 });
  await page.locator("#canvas-ice-map").scrollIntoViewIfNeeded();
  const box = await page.locator("#canvas-ice-map").boundingBox();
  await page.mouse.move(box.x + box.width * 0.6, box.y + box.height * 0.8);
  assert.match(await page.textContent("#readout-ice-map"), /CO ice fraction/);
  // The exports were made in the worker from the same code: still byte-identical to the CLI.
  const csv = await downloadText(page, '[data-export="profile_csv"]');
  const disk = await downloadText(page, "#save-button");
  const diskFile = join(scratch, "large-grid-disk.json");
  writeFileSync(diskFile, disk.text);
  assert.ok(csv.text === execFileSync(cli, ["model", diskFile, "--format", "csv"], { encoding: "utf8", maxBuffer: 1 << 28 }), "worker CSV differs from the CLI's");
  const lines = csv.text.trim().split("\n");
  assert.equal(lines.filter((l) => l.startsWith("#")).length, 3, "three provenance comment lines (version, disk hash, where the resolved disk is)");
  assert.equal(lines.filter((l) => !l.startsWith("#")).length, 1201, "one header line and 1200 radial rows");
  assert.deepEqual(errors, []);
  await page.close();
});

test("a screenshot of the page is written for the record", async () => {
  const { page } = await freshPage();
  const file = join(repoRoot, "target", "site", "screenshot.png");
  await page.screenshot({ path: file });
  const dark = join(repoRoot, "target", "site", "screenshot-dark.png");
  await page.click("#theme-button"); // system -> light
  await page.click("#theme-button"); // light -> dark
  await settle(page);
  assert.equal(await page.getAttribute("html", "data-theme"), "dark");
  await page.screenshot({ path: dark });
  await page.close();
});
