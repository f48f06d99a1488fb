// uncertainty.test.mjs: the uncertainty panel of target/site/nivalis.html in headless
// Chromium (issue 12 item 5), checked against the native CLI:
//
// - a run in the panel's Web Worker reports progress with partial bands before it ends,
//   then shows the bands, histogram and sensitivity figures;
// - its JSON, bands CSV and methods exports equal `nivalis uncertainty DISK --samples N
//   --seed S` for the page's own saved disk plus the same section, byte for byte (the same
//   seed gives the same numbers natively and in WebAssembly);
// - Cancel stops a long run and keeps the partial bands;
// - a bad section shows the reader's problem (with its did-you-mean), never NaN;
// - the marginalised posterior is drawn;
// - the figure downloads (SVG and PNG, with the page's figure options) equal `nivalis uncertainty
//   DISK --figure VIEW --format svg|png` and, for the posterior, `nivalis fit ... --uncertainty
//   --figure FILE`, byte for byte (and differ from the CLI's file at another dpi).

import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync } from "node:fs";
import { downloadText, execFileSync, join, newPage, withBrowserAndCli } from "./helpers.mjs";

let browser;
let cli;
let scratch;

// Inputs that leave the structure alone, so the samples are quick in the page.
const SECTION = {
  "star.abundances.offset_dex.C": { distribution: "normal", sigma: 0.05 },
  "ices.sticking": { distribution: "uniform", low: 0.8, high: 1 },
  "composition.carbon": { distribution: "dirichlet", concentration: 30 },
};

withBrowserAndCli("unc", (s) => ({ browser, cli, scratch } = s));

async function downloadBytes(page, selector) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return { name: download.suggestedFilename(), bytes: readFileSync(await download.path()) };
}

async function startRun(page, section, samples, seed) {
  await page.fill("#unc-section", JSON.stringify(section, null, 2));
  await page.fill("#unc-samples", String(samples));
  await page.fill("#unc-seed", String(seed));
  await page.click("#unc-run");
}

test("a run shows partial bands, then figures and exports equal to the CLI's", async () => {
  const { page, errors } = await newPage(browser.context);
  // Every status the run shows, recorded as it is set: a MutationObserver's
  // callback runs after each worker message the page handles, so progress is
  // seen even when a fast worker's messages arrive together (polling the text
  // missed it then and waited for "Running 25|50" after the run had ended).
  await page.evaluate(() => {
    window.__uncStatuses = [];
    const status = document.getElementById("unc-status");
    new MutationObserver(() => {
      window.__uncStatuses.push([status.textContent, document.getElementById("unc-fig-bands").src.startsWith("blob:")]);
    }).observe(status, { childList: true, characterData: true, subtree: true });
  });
  await startRun(page, SECTION, 60, 5);
  await page.waitForSelector("body[data-uncertainty-done='60']", { timeout: 300000 });
  // Progress with partial bands before the end (chunks of 25 samples).
  const statuses = await page.evaluate(() => window.__uncStatuses);
  const partial = statuses.filter(([text]) => /Running (25|50) of 60/.test(text));
  assert.ok(partial.length > 0, `progress shown before the end; statuses: ${JSON.stringify(statuses.map(([text]) => text))}`);
  assert.ok(partial.every(([, bands]) => bands), "partial bands drawn with the progress");
  for (const id of ["unc-fig-bands", "unc-fig-histogram", "unc-fig-sensitivity", "unc-fig-sensitivity-snowline"]) {
    const ok = await page.$eval(`#${id}`, (img) => img.complete && img.naturalWidth > 0);
    assert.ok(ok, `${id} shows an image`);
  }
  const status = await page.textContent("#unc-status");
  assert.match(status, /60 samples \(seed 5\)/);
  assert.doesNotMatch(status, /NaN/);

  // The CLI on the page's saved disk plus the same section.
  const [saved] = await Promise.all([page.waitForEvent("download"), page.click("#save-button")]);
  const disk = JSON.parse(await (await import("node:fs")).promises.readFile(await saved.path(), "utf8"));
  disk.uncertainty = SECTION;
  const file = join(scratch, "disk.json");
  writeFileSync(file, JSON.stringify(disk, null, 2));
  const run = (...args) => execFileSync(cli, ["uncertainty", file, "--samples", "60", "--seed", "5", ...args], { encoding: "utf8" });
  const json = await downloadText(page, "[data-unc-export='json']");
  assert.equal(json.name, "uncertainty-json-seed5.json");
  assert.equal(json.text, run("--format", "json"), "JSON equals the CLI's");
  const csv = await downloadText(page, "[data-unc-export='csv:bands']");
  assert.equal(csv.text, run("--format", "csv"), "bands CSV equals the CLI's");
  const methods = await downloadText(page, "[data-unc-export='methods']");
  const methodsFile = join(scratch, "methods.txt");
  run("--format", "json", "--methods", methodsFile);
  assert.equal(methods.text, (await import("node:fs")).readFileSync(methodsFile, "utf8"), "methods text equals the CLI's");
  assert.match(methods.text, /seed 5/);
  // The references of the methods text as BibTeX, each once (the same function as the Rust test).
  const bib = await downloadText(page, "[data-unc-export='bibtex']");
  for (const key of ["blackman2021", "steele2014", "marsaglia1964", "marsaglia2000", "hyndman1996", "sobol1993", "saltelli2008"]) {
    assert.equal(bib.text.split(`{${key},`).length, 2, `${key} once in the BibTeX`);
  }

  // Figure downloads: the CLI's bytes for the same disk, samples, seed, view and options.
  const figure = (...args) => execFileSync(cli, ["uncertainty", file, "--samples", "60", "--seed", "5", ...args]);
  const bandsSvg = await downloadBytes(page, '[data-unc-figure="bands"][data-format="svg"]');
  assert.equal(bandsSvg.name, "uncertainty-bands-c_to_o_gas-seed5.svg");
  assert.ok(bandsSvg.bytes.equals(figure("--figure", "bands:c_to_o_gas")), "page bands SVG differs from `nivalis uncertainty --figure bands:c_to_o_gas`");
  assert.match(bandsSvg.bytes.toString("utf8"), / seed="5" samples="60">/);
  // PNG in the page's figure options: two columns at 150 dpi, dark.
  await page.selectOption("#figure-width", "double");
  await page.fill("#figure-dpi", "150");
  await page.selectOption("#figure-theme", "dark");
  await page.selectOption("#unc-species", "CO");
  const histPng = await downloadBytes(page, '[data-unc-figure="histogram"][data-format="png"]');
  assert.equal(histPng.name, "uncertainty-snowlines-CO-seed5.png");
  const nativeHist = figure("--figure", "snowlines:CO", "--format", "png", "--width", "double", "--dpi", "150", "--theme", "dark");
  assert.ok(histPng.bytes.equals(nativeHist), "page histogram PNG differs from `nivalis uncertainty --figure snowlines:CO --format png --width double --dpi 150 --theme dark`");
  // 511 pt at 150 dpi: 1065 px wide (7.1 in x 150); another dpi gives another file.
  assert.equal(histPng.bytes.readUInt32BE(16), 1065);
  assert.ok(!histPng.bytes.equals(figure("--figure", "snowlines:CO", "--format", "png", "--width", "double", "--dpi", "300", "--theme", "dark")), "the dpi reaches the page's PNG");
  const sensPng = await downloadBytes(page, '[data-unc-figure="sensitivity-snowline"][data-format="png"]');
  assert.ok(sensPng.bytes.equals(figure("--figure", "sensitivity:CO", "--format", "png", "--width", "double", "--dpi", "150", "--theme", "dark")), "page sensitivity PNG differs");
  const sensSvg = await downloadBytes(page, '[data-unc-figure="sensitivity"][data-format="svg"]');
  assert.ok(sensSvg.bytes.equals(figure("--figure", "sensitivity", "--width", "double", "--theme", "dark")), "page sensitivity SVG differs");
  // A resolution out of range is named, as in the other figure downloads.
  await page.fill("#figure-dpi", "20");
  await page.click('[data-unc-figure="bands"][data-format="png"]');
  await page.waitForFunction(() => !document.getElementById("unc-figure-problem").hidden, null, { timeout: 300000 });
  assert.match(await page.textContent("#unc-figure-problem"), /dpi: must be a number between 36 and 1200, got "20"/);
  // Back to the defaults of `nivalis fit --figure` (one column, 300 dpi, light).
  await page.selectOption("#figure-width", "single");
  await page.fill("#figure-dpi", "300");
  await page.selectOption("#figure-theme", "light");
  assert.equal(await page.$eval('[data-unc-figure="posterior"][data-format="png"]', (b) => b.disabled), true, "no posterior yet");

  // The marginalised posterior of the planet typed in the planet panel's fit (C/O and [C/H]
  // relative to the Sun), equal to `nivalis fit ... --uncertainty --format json`.
  for (const [key, value] of [["c_to_o", "0.6"], ["c_to_o_sigma", "0.05"], ["c_to_h_dex", "0.1"], ["c_to_h_sigma", "0.2"]]) {
    await page.fill(`#pp-fit-${key}`, value);
  }
  await page.selectOption("#pp-fit-relative_to", "sun");
  await page.fill("#unc-post-samples", "8");
  await page.click("#unc-posterior");
  await page.waitForFunction(() => /median .* au, 95 % interval/.test(document.getElementById("unc-post-status").textContent), null, { timeout: 300000 });
  assert.ok(await page.$eval("#unc-fig-posterior", (img) => img.src.startsWith("blob:")));
  const posterior = await downloadText(page, "#unc-post-json");
  const fit = execFileSync(cli, ["fit", file, "--c-to-o", "0.6", "--c-to-o-sigma", "0.05", "--c-to-h-dex", "0.1", "--c-to-h-sigma", "0.2",
    "--relative-to", "sun", "--uncertainty", "--samples", "8", "--seed", "5", "--format", "json"], { encoding: "utf8" });
  assert.equal(posterior.text, fit, "page posterior JSON equals `nivalis fit --uncertainty --format json`");
  assert.equal(JSON.parse(posterior.text).samples, 8);
  // Its figure equals `nivalis fit ... --uncertainty --figure FILE` (PNG and SVG).
  for (const format of ["png", "svg"]) {
    const got = await downloadBytes(page, `[data-unc-figure="posterior"][data-format="${format}"]`);
    const out = join(scratch, `posterior.${format}`);
    execFileSync(cli, ["fit", file, "--c-to-o", "0.6", "--c-to-o-sigma", "0.05", "--c-to-h-dex", "0.1", "--c-to-h-sigma", "0.2",
      "--relative-to", "sun", "--uncertainty", "--samples", "8", "--seed", "5", "--format", "json", "--figure", out]);
    assert.ok(got.bytes.equals(readFileSync(out)), `page posterior ${format} differs from \`nivalis fit --uncertainty --figure\``);
  }
  // A bad fit field is named, never fitted.
  await page.fill("#pp-fit-c_to_o_sigma", "-1");
  await page.click("#unc-posterior");
  await page.waitForFunction(() => /Not fitted/.test(document.getElementById("unc-post-status").textContent), null, { timeout: 300000 });
  assert.match(await page.textContent("#unc-problems"), /fit\.c_to_o_sigma: must be >= 1e-6/);
  await page.fill("#pp-fit-c_to_o_sigma", "0.05");
  assert.deepEqual(errors, []);
  await page.close();
});

test("cancel keeps the partial bands; a bad section is named", async () => {
  const { page, errors } = await newPage(browser.context);
  await startRun(page, SECTION, 5000, 1);
  // The first chunk's progress (not the "Running 0" shown at the start).
  await page.waitForFunction(() => Number(document.getElementById("unc-progress").value) > 0, null, { timeout: 300000, polling: 20 });
  await page.click("#unc-cancel");
  assert.match(await page.textContent("#unc-status"), /Cancelled after \d+ of 5000 samples/);
  assert.ok(await page.$eval("#unc-fig-bands", (img) => img.src.startsWith("blob:")), "partial bands stay");
  assert.equal(await page.$eval("#unc-run", (b) => b.disabled), false);

  await startRun(page, { "star.luminosity_lsn": { distribution: "lognormal", sigma_dex: 0.1 } }, 10, 1);
  await page.waitForFunction(() => document.getElementById("unc-problems").textContent.length > 0, null, { timeout: 300000 });
  const problems = await page.textContent("#unc-problems");
  assert.match(problems, /uncertainty\.star\.luminosity_lsn: unknown disk-file path .*did you mean luminosity_lsun\?/);
  assert.deepEqual(errors, []);
  await page.close();
});
