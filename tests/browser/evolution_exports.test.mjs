// evolution_exports.test.mjs: the evolving-disk panel's figure and methods downloads (issue 13
// exports) equal the CLI's for the page's own run: `nivalis figure DISK --view <evolution view>
// --age-myr T` (SVG and PNG) and `nivalis evolve DISK --methods FILE`, byte for byte, the disk
// being the run's resolved disk from the page's JSON download (same core, same exports).

import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync } from "node:fs";
import { downloadText, execFileSync, join, newPage, withBrowserAndCli } from "./helpers.mjs";

let browser;
let cli;
let scratch;

withBrowserAndCli("evolution-exports", (s) => ({ browser, cli, scratch } = s));

async function downloadBytes(page, selector) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return { name: download.suggestedFilename(), bytes: readFileSync(await download.path()) };
}

test("the evolution panel's figures and methods equal the CLI's", async () => {
  const { page, errors } = await newPage(browser.context);
  await page.fill("#evo-until", "0.3");
  await page.fill("#evo-snapshots", "4");
  await page.click("#evo-run");
  await page.waitForFunction(() => ["ready", "failed"].includes(document.querySelector("#evolution").dataset.evoState), null, { timeout: 120000 });
  assert.equal(await page.$eval("#evolution", (e) => e.dataset.evoState), "ready");
  // The age the figures show: snapshot 1.
  await page.$eval("#evo-age", (e) => { e.value = "1"; e.dispatchEvent(new Event("input")); });
  const { text } = await downloadText(page, "#evo-export-json");
  const json = JSON.parse(text);
  const age = json.times_myr[1];
  const disk = join(scratch, "disk.json");
  writeFileSync(disk, JSON.stringify(json.disk));
  // Methods: the run's paragraph, as `nivalis evolve --methods` writes it.
  const methods = await downloadText(page, "#evo-export-methods");
  assert.match(methods.name, /-evolution-methods\.txt$/);
  const methodsFile = join(scratch, "methods.txt");
  execFileSync(cli, ["evolve", disk, "--methods", methodsFile, "--out", join(scratch, "ignored.csv")]);
  assert.equal(methods.text, readFileSync(methodsFile, "utf8"));
  assert.match(methods.text, /Birnstiel/);
  for (const view of ["snowline_tracks", "evolved_c_to_o", "c_to_o_time_map"]) {
    await page.selectOption("#evo-figure-view", view);
    for (const format of ["svg", "png"]) {
      const got = await downloadBytes(page, `#evo-figure-${format}`);
      assert.ok(got.name.endsWith(`-${view}.${format}`), got.name);
      const out = join(scratch, `${view}.${format}`);
      execFileSync(cli, ["figure", disk, "--view", view, "--age-myr", String(age), "--format", format, "--out", out]);
      const want = readFileSync(out);
      assert.ok(want.length > 1000, `${view}.${format} is a real figure`);
      assert.ok(got.bytes.equals(want), `${view}.${format}: page ${got.bytes.length} bytes vs CLI ${want.length}`);
    }
  }
  assert.deepEqual(errors, []);
  await page.close();
});
