// planet.test.mjs: the planet panel and the paper downloads of the page
// target/site/nivalis.html, in headless Chromium from file://, checked against
// the native CLI (target/debug/nivalis) for the same disk file, byte for byte:
//
// - a planet placed by typing a radius and a solid-to-gas ratio: its envelope
//   C/O and the planet JSON/CSV equal `nivalis planet ... --format json|csv`;
// - the observed-planet map: CSV/ECSV/JSON equal `nivalis fit ...`, and the
//   map figure equals `nivalis fit ... --figure FILE.svg|FILE.png`;
// - figure downloads equal `nivalis figure DISK --view ...` (SVG and PNG);
// - the methods text and BibTeX equal `nivalis methods DISK [--bibtex FILE]`;
// - anchoring writes the disk `nivalis anchor` writes, as an undoable edit;
// - invalid planet input shows a message beside its field, never NaN;
// - the planet state round-trips through the URL;
// - a screenshot with the planet panel is written to target/site/screenshot-planet.png.
//
// The disk file given to the CLI is the page's own Save (the resolved disk).

import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync } from "node:fs";
import { canvasStats, viewPicture, execFileSync, generation, join, nextResult, pageUrl, repoRoot, settle, withBrowserAndCli } from "./helpers.mjs";
import { newPage } from "./helpers.mjs";

let browser;
let cli;
let scratch;

withBrowserAndCli("planet", (s) => ({ browser, cli, scratch } = s));

// A new tab with the page loaded and drawn (helpers.mjs newPage).
function freshPage(url) {
  return newPage(browser.context, url || pageUrl);
}

// The bytes of a download started by clicking `selector`.
async function downloadBytes(page, selector) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return { name: download.suggestedFilename(), bytes: readFileSync(await download.path()) };
}

async function downloadText(page, selector) {
  const { name, bytes } = await downloadBytes(page, selector);
  return { name, text: bytes.toString("utf8") };
}

// The page's resolved disk file, saved where the CLI can read it.
async function savedDisk(page, name) {
  const { text } = await downloadText(page, "#save-button");
  const file = join(scratch, name);
  writeFileSync(file, text);
  return file;
}

// The CLI's notes on stderr (degeneracies, anchoring) are not part of its output files.
const run = (args, encoding = "utf8") => execFileSync(cli, args, { encoding, maxBuffer: 1 << 28, stdio: ["ignore", "pipe", "pipe"] });

// Types into a planet-panel field and waits for the panel's frame.
async function typePlanet(page, path, value) {
  await page.fill("#pp-" + path.replace(/[^A-Za-z0-9_]/g, "-"), String(value));
  await settle(page);
  await page.evaluate(() => window.nivalis.planet.whenDone());
}

test("a typed planet's envelope C/O and files equal `nivalis planet`", async () => {
  const { page, errors } = await freshPage();
  await page.selectOption("#demo-picker", "planet_host_example.json");
  await settle(page);
  await typePlanet(page, "planet.radius_au", "12");
  await typePlanet(page, "planet.solid_to_gas", "0.05");
  await typePlanet(page, "planet.mix", "0.5");
  const disk = await savedDisk(page, "planet-disk.json");
  const json = await downloadText(page, '[data-planet-export="planet_json"]');
  const csv = await downloadText(page, '[data-planet-export="planet_csv"]');
  const args = ["planet", disk, "--radius-au", "12", "--solid-to-gas", "0.05", "--mix", "0.5"];
  const native = run([...args, "--format", "json"]);
  assert.ok(json.text === native, "page planet JSON differs from `nivalis planet --format json`");
  assert.ok(csv.text === run([...args, "--format", "csv"]), "page planet CSV differs from `nivalis planet --format csv`");
  // The number on screen is the CLI's envelope C/O, to the three digits shown.
  const cliCToO = JSON.parse(native).envelope.c_to_o;
  assert.ok(cliCToO > 0, `CLI envelope C/O ${cliCToO}`);
  assert.equal(await page.textContent("#planet-c-to-o"), String(Number(cliCToO.toPrecision(3))));
  // The slider follows the typed ratio (log10 0.05 = -1.30).
  assert.ok(Math.abs(Number(await page.inputValue("#pp-planet-solid_to_gas-slider")) - Math.log10(0.05)) < 0.006);

  // A migrating planet: averaged over 12-20 au, as `--to-radius-au 20`.
  await typePlanet(page, "planet.to_radius_au", "20");
  const migrating = await downloadText(page, '[data-planet-export="planet_json"]');
  assert.ok(migrating.text === run([...args, "--to-radius-au", "20", "--format", "json"]), "migration JSON differs from the CLI's");
  assert.match(await page.textContent("#planet-table caption"), /averaged over 12–20 au/);

  // Gas only (the checkbox): the envelope C/O is the local gas C/O (docs/model.md section 9).
  await typePlanet(page, "planet.to_radius_au", "");
  await page.check("#pp-planet-solid_to_gas-zero");
  await settle(page);
  await page.evaluate(() => window.nivalis.planet.whenDone());
  assert.equal(await page.inputValue("#pp-planet-solid_to_gas"), "0");
  const gasOnly = JSON.parse((await downloadText(page, '[data-planet-export="planet_json"]')).text);
  assert.equal(gasOnly.envelope.c_to_o, gasOnly.local.gas_c_to_o);
  assert.deepEqual(errors, []);
  await page.close();
});

test("clicking the C/O profile places a planet there and marks it", async () => {
  const { page } = await freshPage();
  const before1 = await viewPicture(page, "canvas-c-to-o");
  const box = await page.locator("#canvas-c-to-o").boundingBox();
  await page.mouse.click(box.x + box.width * 0.55, box.y + box.height * 0.5);
  await settle(page);
  await page.evaluate(() => window.nivalis.planet.whenDone());
  const radius = Number(await page.inputValue("#pp-planet-radius_au"));
  // The default disk spans 0.1-500 au; the middle of the plot is a few to tens of au.
  assert.ok(radius > 0.5 && radius < 200, `clicked radius ${radius}`);
  assert.match(await page.textContent("#planet-c-to-o"), /^\d/);
  assert.notEqual(await viewPicture(page, "canvas-c-to-o"), before1, "the planet is not marked on the profile");
  await page.close();
});

test("invalid planet input shows a message beside the field and no NaN", async () => {
  const { page } = await freshPage();
  await typePlanet(page, "planet.radius_au", "1000");
  const problem = page.locator("#pp-planet-radius_au-problem");
  assert.equal(await problem.isVisible(), true);
  // The core's message (nivalis_physics::planet, RadiusOutsideDisk), as `nivalis planet` prints it.
  assert.equal(await problem.textContent(), "must lie in the disk [0.1, 500] au, got 1000");
  assert.equal(await page.getAttribute("#pp-planet-radius_au", "aria-invalid"), "true");
  await typePlanet(page, "planet.radius_au", "5");
  await typePlanet(page, "planet.mix", "abc");
  assert.equal(await page.textContent("#pp-planet-mix-problem"), 'must be a finite number, got "abc"');
  await typePlanet(page, "planet.mix", "1.5");
  assert.equal(await page.textContent("#pp-planet-mix-problem"), "must be in [0, 1], got 1.5");
  await typePlanet(page, "fit.c_to_o", "0.8");
  await typePlanet(page, "fit.c_to_o_sigma", "-1");
  assert.equal(await page.textContent("#pp-fit-c_to_o_sigma-problem"), "must be >= 1e-6 and finite, got -1");
  const text = await page.textContent("#planet-panel");
  assert.ok(!/NaN/.test(text), "the panel shows NaN");
  await typePlanet(page, "planet.mix", "1");
  assert.equal(await page.isVisible("#pp-planet-mix-problem"), false);
  assert.equal(await page.isVisible("#pp-planet-radius_au-problem"), false);
  await page.close();
});

test("the observed-planet map and its files equal `nivalis fit`", async () => {
  const { page, errors } = await freshPage();
  await page.selectOption("#demo-picker", "planet_host_example.json");
  await settle(page);
  const profileBefore = await viewPicture(page, "canvas-c-to-o");
  await typePlanet(page, "fit.c_to_o", "0.8");
  await typePlanet(page, "fit.c_to_o_sigma", "0.1");
  const disk = await savedDisk(page, "fit-disk.json");
  const args = ["fit", disk, "--c-to-o", "0.8", "--c-to-o-sigma", "0.1"];
  const csv = await downloadText(page, '[data-planet-export="fit_csv"]');
  assert.ok(csv.text.split("\n").length > 1000, "the map has its long-form rows");
  assert.ok(csv.text === run([...args, "--format", "csv"]), "page fit CSV differs from `nivalis fit --format csv`");
  const ecsv = await downloadText(page, '[data-planet-export="fit_ecsv"]');
  assert.ok(ecsv.text === run([...args, "--format", "ecsv"]), "page fit ECSV differs from `nivalis fit --format ecsv`");
  const json = await downloadText(page, '[data-planet-export="fit_json"]');
  assert.ok(json.text === run([...args, "--format", "json"]), "page fit JSON differs from `nivalis fit --format json`");
  // The map figure equals `nivalis fit --figure` (SVG, and PNG at its 300 dpi).
  const svg = await downloadText(page, '[data-planet-export="chi2_svg"]');
  const png = await downloadBytes(page, '[data-planet-export="chi2_png"]');
  const svgFile = join(scratch, "fit.svg");
  const pngFile = join(scratch, "fit.png");
  run([...args, "--format", "csv", "--figure", svgFile]);
  run([...args, "--format", "csv", "--figure", pngFile]);
  assert.ok(svg.text === readFileSync(svgFile, "utf8"), "page map SVG differs from `nivalis fit --figure FILE.svg`");
  assert.ok(png.bytes.equals(readFileSync(pngFile)), "page map PNG differs from `nivalis fit --figure FILE.png`");
  // Drawn with contours on the page, the allowed radii shaded on the profile, the degeneracies in words.
  const chi2 = await canvasStats(page, "canvas-chi2");
  assert.ok(chi2.colours > 50 && chi2.nonBackground > 0.3, `chi-square canvas looks blank: ${JSON.stringify(chi2)}`);
  assert.notEqual(await viewPicture(page, "canvas-c-to-o"), profileBefore, "allowed radii not marked on the profile");
  assert.match(await page.textContent("#fit-best"), /^Best fit: [\d.]+ au with solid-to-gas/);
  assert.match(await page.textContent("#fit-union"), /Allowed at 1σ for some solid-to-gas ratio: [\d.]+–[\d.]+ au/);
  const words = await page.$$eval("#fit-explanation li", (items) => items.map((i) => i.textContent));
  assert.ok(words.some((w) => /two unknowns/.test(w)), words.join(" | "));
  const summary = JSON.parse(json.text).fit.degeneracies;
  for (const sentence of summary) assert.ok(words.some((w) => w.toLowerCase().startsWith(sentence.toLowerCase().slice(0, 40))), `missing: ${sentence}`);

  // With an observed [O/H] as well, as `--o-to-h-dex 0.3 --o-to-h-sigma 0.2`, and the other Δχ² convention.
  await typePlanet(page, "fit.o_to_h_dex", "0.3");
  await typePlanet(page, "fit.o_to_h_sigma", "0.2");
  await page.selectOption("#pp-fit-convention", "fitted_quantities");
  await settle(page);
  await page.evaluate(() => window.nivalis.planet.whenDone());
  const withMetal = await downloadText(page, '[data-planet-export="fit_csv"]');
  const metalArgs = [...args, "--o-to-h-dex", "0.3", "--o-to-h-sigma", "0.2", "--convention", "fitted_quantities", "--format", "csv"];
  assert.ok(withMetal.text === run(metalArgs), "page fit CSV with [O/H] differs from the CLI's");

  // An observation out of the disk's reach (issue 11): unacceptable, no radius allowed, the same JSON as the CLI.
  // (This page's disk reaches envelope C/O ~1.5 with solid-rich accretion inside the soot line, so 2.5 is used.)
  await typePlanet(page, "fit.o_to_h_dex", "");
  await typePlanet(page, "fit.o_to_h_sigma", "");
  await page.selectOption("#pp-fit-convention", "mapped_parameters");
  await typePlanet(page, "fit.c_to_o", "2.5");
  await typePlanet(page, "fit.c_to_o_sigma", "0.05");
  assert.match(await page.textContent("#fit-best"), /^No place in the disk is acceptable/);
  assert.match(await page.textContent("#fit-union"), /^No radius is allowed/);
  const impossible = await downloadText(page, '[data-planet-export="fit_json"]');
  assert.ok(impossible.text === run(["fit", disk, "--c-to-o", "2.5", "--c-to-o-sigma", "0.05", "--format", "json"]), "page fit JSON (impossible) differs from the CLI's");
  assert.equal(JSON.parse(impossible.text).fit.goodness.acceptable, false);
  assert.deepEqual(errors, []);
  await page.close();
});

test("figure downloads equal `nivalis figure`, and methods text and BibTeX equal `nivalis methods`", async () => {
  const { page, errors } = await freshPage();
  await page.selectOption("#demo-picker", "young_sun.json");
  await settle(page);
  const disk = await savedDisk(page, "figure-disk.json");
  // SVG, one column, light (the CLI's defaults).
  const svg = await downloadText(page, '#view-c-to-o [data-format="svg"]');
  assert.ok(svg.text.startsWith("<svg") && svg.text.includes("C/O"), "not an SVG with its axis label");
  assert.ok(svg.text === run(["figure", disk, "--view", "c_to_o", "--format", "svg"]), "page C/O SVG differs from `nivalis figure --view c_to_o`");
  // PNG, two columns, 150 dpi, dark.
  await page.selectOption("#figure-width", "double");
  await page.fill("#figure-dpi", "150");
  await page.selectOption("#figure-theme", "dark");
  const png = await downloadBytes(page, '#view-temperature [data-format="png"]');
  const native = run(["figure", disk, "--view", "temperature", "--format", "png", "--width", "double", "--dpi", "150", "--theme", "dark"], "buffer");
  assert.ok(png.bytes.equals(native), "page temperature PNG differs from `nivalis figure --format png --width double --dpi 150 --theme dark`");
  // 511 pt at 150 dpi = 1065 px wide (FigureSize::pixels_at_dpi).
  assert.equal(png.bytes.readUInt32BE(16), 1065);
  // The ice map of the species shown, as `--view ice_map:CO`.
  await page.selectOption("#map-species", "CO");
  await settle(page);
  await page.selectOption("#figure-width", "single");
  await page.selectOption("#figure-theme", "light");
  await page.fill("#figure-dpi", "300");
  const map = await downloadText(page, '#view-ice-map [data-format="svg"]');
  assert.match(map.name, /ice_map-CO\.svg$/);
  assert.ok(map.text === run(["figure", disk, "--view", "ice_map:CO", "--format", "svg"]), "page CO ice-map SVG differs from the CLI's");
  const abundances = await downloadBytes(page, '#view-abundances [data-format="png"]');
  assert.ok(abundances.bytes.equals(run(["figure", disk, "--view", "abundances", "--format", "png"], "buffer")), "page abundances PNG differs");
  // A bad resolution is refused beside its field, nothing is downloaded.
  await page.fill("#figure-dpi", "5000");
  await page.click('#view-c-to-o [data-format="png"]');
  assert.match(await page.textContent("#figure-problem"), /dpi: must be a number between 36 and 1200, got "5000"/);

  const bibFile = join(scratch, "refs.bib");
  const methods = run(["methods", disk, "--bibtex", bibFile]);
  const text = await downloadText(page, '[data-export="methods_text"]');
  const bib = await downloadText(page, '[data-export="bibtex"]');
  assert.ok(text.text === methods, "page methods text differs from `nivalis methods`");
  assert.ok(bib.text === readFileSync(bibFile, "utf8"), "page BibTeX differs from `nivalis methods --bibtex`");
  assert.match(bib.text, /^@misc\{nivalis,/); // the software itself first, then the references

  // The planet methods paragraph states the assumptions and ends with the disk's paragraph.
  await typePlanet(page, "planet.radius_au", "3");
  await typePlanet(page, "planet.mix", "0.4");
  const planetMethods = await downloadText(page, '[data-planet-export="planet_methods"]');
  assert.match(planetMethods.text, /local accretion/);
  assert.match(planetMethods.text, /f_mix = 0\.4/);
  assert.match(planetMethods.text, /rate equation over the disk's age/);
  assert.ok(planetMethods.text.endsWith(methods), "the planet methods text does not end with `nivalis methods` for the disk");
  // The same text from the CLI (issue 9 item 4: built once, in nivalis_exports::planet_tools).
  const planetMethodsFile = join(scratch, "planet-methods.txt");
  run(["planet", disk, "--radius-au", "3", "--solid-to-gas", "0.01", "--mix", "0.4", "--methods", planetMethodsFile]);
  assert.ok(planetMethods.text === readFileSync(planetMethodsFile, "utf8"), "page planet methods text differs from `nivalis planet --methods`");
  const planetBib = await downloadText(page, '[data-planet-export="planet_bibtex"]');
  assert.match(planetBib.text, /@article\{oberg2011,/);
  assert.deepEqual(errors, []);
  await page.close();
});

test("anchoring to an observed snowline writes `nivalis anchor`'s disk and can be undone", async () => {
  const { page } = await freshPage();
  const disk = await savedDisk(page, "anchor-before.json");
  const phi0 = await page.evaluate(() => window.nivalis.state.disk.flaring_angle);
  await page.selectOption("#pp-anchor-species", "CO");
  await page.fill("#pp-anchor-radius_au", "40");
  await page.fill("#pp-anchor-sigma_au", "5");
  await page.click("#anchor-button");
  await page.waitForSelector("#anchor-summary", { timeout: 60000 });
  await settle(page);
  const anchored = await downloadText(page, "#save-button");
  const native = run(["anchor", disk, "--species", "CO", "--radius-au", "40", "--sigma-au", "5"]);
  assert.ok(anchored.text === native, "the anchored disk differs from `nivalis anchor`'s");
  assert.match(await page.textContent("#anchor-summary"), /anchored disk\.flaring_angle = /);
  // The model's CO snowline now lies at the observed radius (within the anchor's solve).
  const co = await page.$$eval('#snowline-table tr[data-species="CO"] td[data-radius-au]', (c) => c.map((x) => Number(x.dataset.radiusAu)));
  assert.ok(Math.abs(co[0] / 40 - 1) < 0.02, `CO snowline ${co[0]} au after anchoring to 40 au`);
  await page.click("#undo-button");
  await settle(page);
  assert.equal(await page.evaluate(() => window.nivalis.state.disk.flaring_angle), phi0);
  // A radius outside the disk is named beside its field.
  await page.fill("#pp-anchor-radius_au", "900");
  await page.click("#anchor-button");
  await page.waitForFunction(() => !document.getElementById("pp-anchor-radius_au-problem").hidden, null, { timeout: 30000 });
  assert.match(await page.textContent("#pp-anchor-radius_au-problem"), /must lie in the disk \[0\.1, 500\] au, got 900/);
  await page.close();
});

test("the planet state round-trips through the URL", async () => {
  const { page } = await freshPage();
  await typePlanet(page, "planet.radius_au", "7.5");
  await typePlanet(page, "planet.solid_to_gas", "0.2");
  await typePlanet(page, "planet.mix", "0.3");
  await typePlanet(page, "fit.c_to_o", "0.55");
  await typePlanet(page, "fit.c_to_o_sigma", "0.05");
  await typePlanet(page, "fit.c_to_h_dex", "0.4");
  await typePlanet(page, "fit.c_to_h_sigma", "0.1");
  const url = page.url();
  assert.match(url, /&planet=[A-Za-z0-9_-]+/);
  const table = await page.innerHTML("#planet-table");
  const best = await page.textContent("#fit-best");
  const csv = (await downloadText(page, '[data-planet-export="fit_csv"]')).text;

  const { page: again, errors } = await freshPage(url);
  await again.evaluate(() => window.nivalis.planet.whenDone());
  for (const [id, value] of [["#pp-planet-radius_au", "7.5"], ["#pp-planet-solid_to_gas", "0.2"], ["#pp-planet-mix", "0.3"],
    ["#pp-fit-c_to_o", "0.55"], ["#pp-fit-c_to_o_sigma", "0.05"], ["#pp-fit-c_to_h_dex", "0.4"], ["#pp-fit-c_to_h_sigma", "0.1"]]) {
    assert.equal(await again.inputValue(id), value, id);
  }
  assert.equal(await again.innerHTML("#planet-table"), table);
  assert.equal(await again.textContent("#fit-best"), best);
  assert.ok((await downloadText(again, '[data-planet-export="fit_csv"]')).text === csv, "the restored map differs");
  assert.equal(again.url(), url, "the restored page rewrote its address differently");
  assert.deepEqual(errors, []);
  await again.close();
  await page.close();
});

test("a grid computed in the Web Worker still gives CLI-identical figures and methods; the planet tools say why they wait", async () => {
  // `?worker=force` (a documented test hook) sends every computation to the
  // worker, whatever this machine's speed; the test waits on the page's
  // explicit state (a newer result generation, data-state="ready").
  const { page, errors } = await freshPage(pageUrl.replace(/(#.*)?$/, "?worker=force"));
  await typePlanet(page, "planet.radius_au", "5");
  const before = await generation(page);
  await page.fill("#f-grid-radial_cells", "400");
  await page.fill("#f-grid-vertical_cells", "160");
  await page.waitForFunction(() => /400 × 160 cells/.test(document.getElementById("status").textContent), null, { timeout: 300000, polling: 50 });
  await nextResult(page, before);
  assert.match(await page.textContent("#status"), /in the background/);
  await page.evaluate(() => window.nivalis.planet.whenDone());
  const disk = await savedDisk(page, "worker-disk.json");
  const svg = await downloadText(page, '#view-c-to-o [data-format="svg"]');
  assert.ok(svg.text === run(["figure", disk, "--view", "c_to_o", "--format", "svg"]), "worker-result SVG differs from `nivalis figure`");
  const methods = await downloadText(page, '[data-export="methods_text"]');
  assert.ok(methods.text === run(["methods", disk]), "worker-result methods text differs from `nivalis methods`");
  // The planet tools need the model itself, which stays in the worker: a message, no stale numbers, no NaN.
  assert.match(await page.textContent("#planet-message"), /computed in the background/);
  assert.equal(await page.isDisabled('[data-planet-export="planet_json"]'), true);
  assert.ok(!/NaN/.test(await page.textContent("#planet-panel")));
  assert.deepEqual(errors, []);
  await page.close();
});

test("planet and fit inputs are part of undo and redo, in order with the disk's edits", async () => {
  const { page, errors } = await freshPage();
  const luminosity = await page.inputValue("#f-star-luminosity_lsun");
  await typePlanet(page, "planet.radius_au", "5");
  await typePlanet(page, "fit.c_to_o", "0.6");
  await page.fill("#f-star-luminosity_lsun", "2");
  await settle(page);
  await typePlanet(page, "fit.c_to_o_sigma", "0.05");
  const steps = [
    ["#pp-fit-c_to_o_sigma", ""], ["#f-star-luminosity_lsun", luminosity], ["#pp-fit-c_to_o", ""], ["#pp-planet-radius_au", ""],
  ];
  for (const [id, before] of steps) {
    await page.click("#undo-button");
    await settle(page);
    await page.evaluate(() => window.nivalis.planet.whenDone());
    assert.equal(await page.inputValue(id), before, `undo did not restore ${id}`);
  }
  assert.equal(await page.isDisabled("#undo-button"), true);
  // Redo brings them back in order, the planet result included.
  for (const [id, value] of [["#pp-planet-radius_au", "5"], ["#pp-fit-c_to_o", "0.6"], ["#f-star-luminosity_lsun", "2"], ["#pp-fit-c_to_o_sigma", "0.05"]]) {
    await page.click("#redo-button");
    await settle(page);
    await page.evaluate(() => window.nivalis.planet.whenDone());
    assert.equal(await page.inputValue(id), value, `redo did not restore ${id}`);
  }
  assert.match(await page.textContent("#planet-table"), /C\/O/);
  assert.ok(!/NaN/.test(await page.textContent("#planet-panel")));
  assert.deepEqual(errors, []);
  await page.close();
});

test("a screenshot with the planet panel is written for the record", async () => {
  const { page } = await freshPage();
  await page.selectOption("#demo-picker", "planet_host_example.json");
  await settle(page);
  await typePlanet(page, "planet.radius_au", "12");
  await typePlanet(page, "planet.solid_to_gas", "0.05");
  await typePlanet(page, "fit.c_to_o", "0.8");
  await typePlanet(page, "fit.c_to_o_sigma", "0.1");
  await page.setViewportSize({ width: 1400, height: 2200 });
  await settle(page);
  await page.locator("#view-c-to-o").scrollIntoViewIfNeeded();
  await page.evaluate(() => document.getElementById("view-c-to-o").scrollIntoView({ block: "start" }));
  await settle(page);
  await page.screenshot({ path: join(repoRoot, "target", "site", "screenshot-planet.png") });
  await page.close();
});
