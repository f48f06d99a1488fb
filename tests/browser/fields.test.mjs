// fields.test.mjs: the page's disk controls come from the core's field table
// (crates/disk_files/src/fields.rs, handed over as Explorer.fieldTable()),
// and the page's JavaScript keeps no copy of the schema, the defaults or the
// species list (issue 9 item 2).

import { after, before, test } from "node:test";
import assert from "node:assert/strict";
import { readdirSync, readFileSync } from "node:fs";
import { ensurePage, join, launch, newPage, repoRoot, settle } from "./helpers.mjs";

let browser;

before(async () => {
  ensurePage();
  browser = await launch();
});

after(async () => {
  await browser?.close();
});

const pathId = (path) => "f-" + path.replace(/[^A-Za-z0-9_]/g, "-");

test("every field the table puts on the page has a control with the table's label and range, and no other control exists", async () => {
  const { page, errors } = await newPage(browser.context);
  const table = await page.evaluate(() => window.nivalis.explorer.constructor.fieldTable());
  const leaves = table.filter((f) => f.page && f.kind !== "object" && f.kind !== "fractions");
  assert.ok(leaves.length > 60, `only ${leaves.length} fields on the page`);
  const shown = await page.$$eval("#controls [name]", (els) => els.map((e) => e.name));
  assert.deepEqual([...shown].sort(), leaves.map((f) => f.path).sort(), "the page's controls are not the table's");
  for (const f of leaves) {
    const id = pathId(f.path);
    const label = await page.textContent(`label[for="${id}"]`);
    assert.ok(label.startsWith(f.label), `${f.path}: label ${label} is not the table's ${f.label}`);
    if (f.kind === "number" || f.kind === "integer") {
      const range = await page.textContent(`#${id}-range`);
      assert.ok(range.startsWith(`allowed: ${f.allowed}`), `${f.path}: ${range}`);
    }
    if (f.kind === "choice") {
      const options = await page.$$eval(`#${id} option`, (os) => os.map((o) => o.value));
      assert.deepEqual(options, f.options.map(([k]) => k), `${f.path}: choices`);
    }
  }
  // The controls show the table's defaults (read by the core from the resolved default disk).
  for (const f of leaves.filter((x) => typeof x.default === "number")) {
    assert.equal(Number(await page.inputValue(`#${pathId(f.path)}`)), f.default, `${f.path}: default`);
  }
  // A value outside the table's range gets the reader's message, which names that range.
  const mass = table.find((f) => f.path === "star.mass_msun");
  await page.fill(`#${pathId(mass.path)}`, "1000");
  await settle(page);
  assert.match(await page.textContent(`#${pathId(mass.path)}-problem`), new RegExp(`must be ${mass.allowed.replace(/[[\]().]/g, "\\$&")}`));
  assert.deepEqual(errors, []);
  await page.close();
});

test("the page's scripts hold no copy of the field labels, the defaults' sources or the species list", () => {
  const dir = join(repoRoot, "web");
  const sources = readdirSync(dir).filter((f) => f.endsWith(".js")).map((f) => [f, readFileSync(join(dir, f), "utf8")]);
  // The table's labels and sources are long, distinctive phrases; none may be typed in the page's JS.
  const fieldsRs = readFileSync(join(repoRoot, "crates", "disk_files", "src", "fields.rs"), "utf8");
  const phrases = [...fieldsRs.matchAll(/"(Stellar mass|Disk gas mass|Characteristic radius R_c|Sticking coefficient|Grain radius|Radial cells \(log-spaced\)|Per-species data[^"]*)"/g)].map((m) => m[1]);
  assert.ok(phrases.length >= 6, "the phrases to look for were not found in fields.rs");
  for (const [file, text] of sources) {
    for (const p of phrases) assert.ok(!text.includes(p), `web/${file} repeats the field table's "${p}"`);
    assert.ok(!/"H2O",\s*"CO",\s*"CO2"/.test(text), `web/${file} holds a species list`);
    assert.ok(!/mass_msun:\s*[\d.]/.test(text), `web/${file} holds a default`);
  }
});
