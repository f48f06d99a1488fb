// evolution.test.mjs: the page's evolving-disk panel (issue 13) in headless Chromium from
// file://: a run in the panel's Web Worker with progress, the three views drawn for the
// chosen age, the age slider and Play, a run cancelled, and the JSON download equal to
// `nivalis evolve DISK --format json` for the page's own saved disk (same core, same exports).

import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync } from "node:fs";
import { canvasStats, downloadText, execFileSync, join, newPage, withBrowserAndCli } from "./helpers.mjs";

let browser;
let cli;
let scratch;

withBrowserAndCli("evolution", (s) => ({ browser, cli, scratch } = s));

const state = (page) => page.$eval("#evolution", (e) => e.dataset.evoState);

test("a run draws the snowline tracks, C/O at the age and the map, and its JSON equals the CLI's", async () => {
  const { page, errors } = await newPage(browser.context);
  assert.equal(await state(page), "idle");
  await page.fill("#evo-until", "0.3");
  await page.fill("#evo-snapshots", "4");
  await page.click("#evo-run");
  await page.waitForFunction(() => ["ready", "failed"].includes(document.querySelector("#evolution").dataset.evoState), null, { timeout: 120000 });
  assert.equal(await state(page), "ready", await page.$eval("#evo-status", (e) => e.textContent));
  assert.equal(await page.$eval("#evo-age", (e) => e.max), "3");
  for (const id of ["evo-tracks", "evo-profile", "evo-map"]) {
    const s = await canvasStats(page, id);
    assert.ok(s.colours > 4 && s.nonBackground > 0.01, `${id}: ${JSON.stringify(s)}`);
  }
  // The slider redraws for another age.
  const before = await page.$eval("#evo-profile", (c) => c.toDataURL());
  await page.$eval("#evo-age", (e) => { e.value = "1"; e.dispatchEvent(new Event("input")); });
  assert.match(await page.$eval("#evo-age-value", (e) => e.textContent), /Myr$/);
  assert.notEqual(await page.$eval("#evo-profile", (c) => c.toDataURL()), before);
  // The download is the CLI's JSON for the same disk, byte for byte.
  const { text } = await downloadText(page, "#evo-export-json");
  const json = JSON.parse(text);
  assert.deepEqual(json.times_myr.length, 4);
  const disk = join(scratch, "disk.json");
  writeFileSync(disk, JSON.stringify(json.disk));
  const out = join(scratch, "cli.json");
  execFileSync(cli, ["evolve", disk, "--until-myr", "0.3", "--snapshots", "4", "--format", "json", "--out", out]);
  assert.equal(text, readFileSync(out, "utf8"));
  assert.deepEqual(errors, []);
  await page.close();
});

test("a run can be cancelled and the page stays usable", async () => {
  const { page, errors } = await newPage(browser.context);
  await page.fill("#evo-until", "10");
  await page.click("#evo-run");
  assert.equal(await state(page), "running");
  await page.click("#evo-cancel");
  assert.equal(await state(page), "cancelled");
  assert.equal(await page.$eval("#evo-run", (e) => e.disabled), false);
  // Bad input is refused with a message, never NaN.
  await page.fill("#evo-until", "50");
  await page.click("#evo-run");
  assert.equal(await state(page), "failed");
  assert.doesNotMatch(await page.$eval("#evo-status", (e) => e.textContent), /NaN/);
  assert.deepEqual(errors, []);
  await page.close();
});
