// evolution_fit.test.mjs: the evolution panel's fit over formation radius x formation age
// (issue 13; docs/model.md section 12.9; docs/page.md "The disk in time") in headless Chromium:
// the planet panel's observed envelope fitted over an age window in a Web Worker with progress,
// the map drawn, a run cancelled, bad input named, and the JSON, CSV, ECSV, SVG and PNG
// downloads equal to `nivalis fit DISK ... --over-age-myr T1,T2,N [--figure FILE]` for the
// page's own saved disk, byte for byte.

import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync } from "node:fs";
import { downloadText, execFileSync, join, newPage, withBrowserAndCli } from "./helpers.mjs";

let browser;
let cli;
let scratch;

withBrowserAndCli("evolution-fit", (s) => ({ browser, cli, scratch } = s));

const state = (page) => page.$eval("#evo-fit", (e) => e.dataset.fitState);
const settled = (page) => page.waitForFunction(() => ["ready", "failed", "cancelled"].includes(document.querySelector("#evo-fit").dataset.fitState), null, { timeout: 300000 });

async function downloadBytes(page, selector) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return { name: download.suggestedFilename(), bytes: readFileSync(await download.path()) };
}

async function typeObservation(page) {
  for (const [key, value] of [["c_to_o", "0.5"], ["c_to_o_sigma", "0.05"], ["c_to_h_dex", "0.2"], ["c_to_h_sigma", "0.3"]]) {
    await page.fill(`#pp-fit-${key}`, value);
  }
}

test("the radius x age fit runs, draws its map and its downloads equal the CLI's", async () => {
  const { page, errors } = await newPage(browser.context);
  assert.equal(await state(page), "idle");
  await typeObservation(page);
  await page.fill("#evo-fit-from", "0.05");
  await page.fill("#evo-fit-to", "0.3");
  await page.fill("#evo-fit-count", "3");
  await page.click("#evo-fit-run");
  assert.equal(await state(page), "running");
  await settled(page);
  assert.equal(await state(page), "ready", await page.textContent("#evo-fit-status"));
  const status = await page.textContent("#evo-fit-status");
  assert.match(status, /ages: best fit .* au at .* Myr/);
  assert.doesNotMatch(status, /NaN|undefined/);
  await page.waitForFunction(() => { const i = document.getElementById("evo-fit-map"); return i.complete && i.naturalWidth > 0; });

  // The CLI on the page's saved disk with the same observation and window.
  const [saved] = await Promise.all([page.waitForEvent("download"), page.click("#save-button")]);
  const disk = join(scratch, "disk.json");
  writeFileSync(disk, readFileSync(await saved.path()));
  const args = ["fit", disk, "--c-to-o", "0.5", "--c-to-o-sigma", "0.05", "--c-to-h-dex", "0.2", "--c-to-h-sigma", "0.3", "--over-age-myr", "0.05,0.3,3"];
  for (const format of ["json", "csv", "ecsv"]) {
    const got = await downloadText(page, `[data-evo-fit-text='${format}']`);
    assert.ok(got.name.endsWith(`-age-fit.${format}`), got.name);
    const want = execFileSync(cli, [...args, "--format", format], { encoding: "utf8" });
    assert.equal(got.text, want, `${format} equals the CLI's`);
  }
  for (const format of ["svg", "png"]) {
    const got = await downloadBytes(page, `[data-evo-fit-figure='${format}']`);
    assert.ok(got.name.endsWith(`-chi2_age_map.${format}`), got.name);
    const out = join(scratch, `map.${format}`);
    execFileSync(cli, [...args, "--figure", out, "--out", join(scratch, "ignored.csv")]);
    const want = readFileSync(out);
    assert.ok(want.length > 1000, `${format} is a real figure`);
    assert.ok(got.bytes.equals(want), `${format}: page ${got.bytes.length} bytes vs CLI ${want.length}`);
  }
  assert.deepEqual(errors, []);
  await page.close();
});

test("the fit can be cancelled, and bad input is named", async () => {
  const { page, errors } = await newPage(browser.context);
  await typeObservation(page);
  await page.fill("#evo-fit-from", "0.1");
  await page.fill("#evo-fit-to", "10");
  await page.fill("#evo-fit-count", "20");
  await page.click("#evo-fit-run");
  assert.equal(await state(page), "running");
  await page.click("#evo-fit-cancel");
  assert.equal(await state(page), "cancelled");
  assert.equal(await page.$eval("#evo-fit-run", (e) => e.disabled), false);
  assert.equal(await page.$eval("[data-evo-fit-text='json']", (e) => e.disabled), true);
  // A window the CLI refuses is refused with its field named.
  await page.fill("#evo-fit-from", "2");
  await page.fill("#evo-fit-to", "1");
  await page.click("#evo-fit-run");
  await settled(page);
  assert.equal(await state(page), "failed");
  assert.match(await page.textContent("#evo-fit-problems"), /age_window: ages must satisfy 0 < T1 <= T2 <= 20 Myr/);
  // A bad fit field is named as the planet panel names it.
  await page.fill("#evo-fit-from", "0.05");
  await page.fill("#evo-fit-to", "0.3");
  await page.fill("#pp-fit-c_to_o_sigma", "-1");
  await page.click("#evo-fit-run");
  await settled(page);
  assert.equal(await state(page), "failed");
  assert.match(await page.textContent("#evo-fit-problems"), /fit\.c_to_o_sigma/);
  assert.doesNotMatch(await page.textContent("#evo-fit-status"), /NaN/);
  assert.deepEqual(errors, []);
  await page.close();
});
