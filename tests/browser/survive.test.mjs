// survive.test.mjs: the page survives bad and extreme input (issue 15 item 8).
//
// - Input bounds are checked before anything is deserialised: 5000 nested
//   brackets in the address, a 112 MB file (made in the page as a Blob, no file
//   on disk), a file just over the 1,000,000-byte limit and one nested 100 deep
//   are refused with a message, and the page stays ready.
// - A trap in the WebAssembly core (the test hook `__nivalisTest.trapCore`,
//   a trap inside an Explorer method, then `trapAllocator`, an allocator abort)
//   is caught: the core is rebuilt, a banner says so,
//   and later edits work and still give CLI-identical exports.
// - An invalid disk in the address on first load falls back to the default
//   disk with the problems shown.
// - A state too large for the address is not silently dropped: a warning
//   offers to save it as a file.
// Every wait is on the page's explicit state (body[data-state],
// body[data-generation]), never on a timing.

import { test } from "node:test";
import assert from "node:assert/strict";
import { writeFileSync } from "node:fs";
import {
  downloadText, execFileSync, generation, join, newPage, nextResult, pageUrl, waterSnowlines, withBrowserAndCli,
} from "./helpers.mjs";

let browser;
let cli;
let scratch;

withBrowserAndCli("survive", (s) => ({ browser, cli, scratch } = s));

// A guard against a hang only (no check depends on it): waits are on page state.
const WAIT = 300000;

const b64url = (text) => Buffer.from(text, "utf8").toString("base64").replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
const withDisk = (text) => `${pageUrl}#disk=${b64url(text)}`;

// The default disk's water snowline, from a page opened with no address.
let defaultWater;
async function defaultWaterSnowline() {
  if (defaultWater === undefined) {
    const { page } = await newPage(browser.context);
    defaultWater = await waterSnowlines(page);
    await page.close();
  }
  return defaultWater;
}

// Opens `url`, waits until the page shows a result, and checks it is the default disk's.
async function opensWithDefaultDisk(url) {
  const { page, errors } = await newPage(browser.context, url);
  assert.equal(await page.evaluate(() => document.body.dataset.state), "ready");
  assert.doesNotMatch(await page.textContent("#status"), /Loading/);
  assert.deepEqual(await waterSnowlines(page), await defaultWaterSnowline());
  return { page, errors };
}

test("5000 nested brackets in the address: refused before parsing, the default disk shown", async () => {
  for (const text of ["[".repeat(5000), '{"disk":'.repeat(5000) + "1" + "}".repeat(5000)]) {
    const { page, errors } = await opensWithDefaultDisk(withDisk(text));
    // The Rust decoder (crates/disk_files fragment.rs) refuses it before deserialising.
    assert.match(await page.textContent("#banner"), /cannot be read \(.*nests objects and arrays deeper than 32 levels/);
    assert.deepEqual(errors, []);
    await page.close();
  }
});

// Makes a File in the page (`kind`: "huge" = a valid disk with `n` MiB of
// spaces as notes, "big" = a disk of exactly `n` bytes, "deep" = notes nested
// `n` arrays deep) and hands it to the Open control, as a picked file would be.
async function openInPage(page, kind, n) {
  await page.evaluate(([k, count]) => {
    let file;
    if (k === "huge") {
      const chunk = " ".repeat(1 << 20);
      file = new File(['{"name": "huge", "notes": "', ...Array(count).fill(chunk), '"}'], "huge.json", { type: "application/json" });
    } else if (k === "big") {
      const head = '{"name": "big", "notes": "';
      file = new File([head + "x".repeat(count - head.length - 2) + '"}'], "big.json");
    } else {
      file = new File(['{"notes": ' + "[".repeat(count) + "]".repeat(count) + "}"], "deep.json");
    }
    const input = document.getElementById("open-file");
    const transfer = new DataTransfer();
    transfer.items.add(file);
    input.files = transfer.files;
    input.dispatchEvent(new Event("change", { bubbles: true }));
  }, [kind, n]);
}

test("a 112 MB file, a file just over the limit and a deeply nested file are refused; the page keeps working", async () => {
  const { page, errors } = await newPage(browser.context);
  const water = (await waterSnowlines(page))[0];
  // 112 MB: a valid disk whose notes are 112 million spaces, generated in the page.
  await openInPage(page, "huge", 112);
  await page.waitForFunction(() => /File huge\.json was not loaded/.test(document.getElementById("banner").textContent), null, { timeout: WAIT, polling: 50 });
  assert.match(await page.textContent("#banner"), /117,440,541 bytes or more, over the limit of 1,000,000 bytes/);
  // Just over the limit (1,000,001 bytes), so the size, not the parser, refuses it.
  await openInPage(page, "big", 1000001);
  await page.waitForFunction(() => /File big\.json was not loaded/.test(document.getElementById("banner").textContent), null, { timeout: WAIT, polling: 50 });
  assert.match(await page.textContent("#banner"), /1,000,001 bytes or more/);
  // Small but nested 100 deep: refused by the depth check.
  await openInPage(page, "deep", 100);
  await page.waitForFunction(() => /File deep\.json was not loaded/.test(document.getElementById("banner").textContent), null, { timeout: WAIT, polling: 50 });
  assert.match(await page.textContent("#banner"), /nests more than 64 objects or arrays deep/);
  // The page still computes: a brighter star moves the water snowline outward.
  const before = await generation(page);
  await page.fill("#f-star-luminosity_lsun", "3");
  await nextResult(page, before);
  assert.ok((await waterSnowlines(page))[0] > water, "no new result after the refused files");
  assert.deepEqual(errors, []);
  await page.close();
});

test("a trap in the core is caught: the core is rebuilt with a banner, and later edits work", async () => {
  const { page, errors } = await newPage(browser.context);
  const before = await generation(page);
  await page.fill("#f-star-luminosity_lsun", "2");
  await nextResult(page, before);
  const water = await waterSnowlines(page);
  // The trap inside an Explorer method leaves the old instance borrowed: before
  // the restart every call to it would fail with "recursive use of an object detected".
  await page.evaluate(() => window.__nivalisTest.trapCore());
  await page.waitForFunction(() => window.nivalis.coreRestarts === 1 && document.body.dataset.state === "ready", null, { timeout: WAIT, polling: 50 });
  assert.match(await page.textContent("#banner"), /The computation core stopped \(.*unreachable.*\) and was restarted; the inputs are back at the last disk that gave a result/);
  assert.equal(await page.inputValue("#f-star-luminosity_lsun"), "2");
  assert.deepEqual(await waterSnowlines(page), water, "the restarted core gives another result for the same disk");
  // Later edits work (no "recursive use of an object detected"), and the exports still match the CLI.
  for (const value of ["4", "5"]) {
    const g = await generation(page);
    await page.fill("#f-star-luminosity_lsun", value);
    await nextResult(page, g);
  }
  assert.ok((await waterSnowlines(page))[0] > water[0]);
  const csv = await downloadText(page, '[data-export="profile_csv"]');
  const disk = await downloadText(page, "#save-button");
  const diskFile = join(scratch, "after-trap.json");
  writeFileSync(diskFile, disk.text);
  assert.ok(csv.text === execFileSync(cli, ["model", diskFile, "--format", "csv"], { encoding: "utf8" }), "CSV after the restart differs from the CLI's");
  // An allocator abort (the other kind of trap) is recovered the same way.
  await page.evaluate(() => window.__nivalisTest.trapAllocator());
  await page.waitForFunction(() => window.nivalis.coreRestarts === 2 && document.body.dataset.state === "ready", null, { timeout: WAIT, polling: 50 });
  assert.equal(await page.inputValue("#f-star-luminosity_lsun"), "5");
  const g = await generation(page);
  await page.fill("#f-star-luminosity_lsun", "6");
  await nextResult(page, g);
  // The only page errors are the traps themselves.
  assert.ok(errors.every((e) => /unreachable/.test(e)), errors.join("\n"));
  await page.close();
});

test("an invalid disk in the address on first load: the default disk, with the problems shown", async () => {
  const { page, errors } = await opensWithDefaultDisk(withDisk('{"disk": {"gas_mass_msun": -1}, "star": {"mass_msun": "heavy"}}'));
  const banner = await page.textContent("#banner");
  assert.match(banner, /The disk in the address is not valid, so the default disk is shown/);
  assert.match(banner, /disk\.gas_mass_msun/);
  assert.match(banner, /star\.mass_msun/);
  assert.notEqual(await page.inputValue("#f-disk-gas_mass_msun"), "-1");
  // Not JSON at all, and JSON that is not an object: the same fallback.
  for (const text of ["{not json", "[1, 2]"]) {
    const again = await opensWithDefaultDisk(withDisk(text));
    assert.match(await again.page.textContent("#banner"), /cannot be read/);
    await again.page.close();
  }
  assert.deepEqual(errors, []);
  await page.close();
});

test("a state too large for the address: a warning and a save offered, never a silently older address", async () => {
  const { page, errors } = await newPage(browser.context);
  let g = await generation(page);
  // 70,000 characters of notes: about 93,000 in the address, over its 65,536 limit.
  const notes = "A long note. ".repeat(5400);
  await page.fill("#f-notes", notes);
  await nextResult(page, g);
  assert.equal(await page.isVisible("#address-warning"), true);
  assert.match(await page.textContent("#address-warning"), /too large for the address.*Save it as a disk file/);
  assert.equal(new URL(page.url()).hash, "#disk=too-large");
  const saved = await downloadText(page, "#address-save");
  assert.equal(JSON.parse(saved.text).notes, notes);
  // Short again: the warning goes and the address holds the disk.
  g = await generation(page);
  await page.fill("#f-notes", "short");
  await nextResult(page, g);
  assert.equal(await page.isVisible("#address-warning"), false);
  assert.match(new URL(page.url()).hash, /^#disk=[A-Za-z0-9_-]+/);
  // Over the 1,000,000-byte input limit when typed: a problem, not a crash.
  await page.fill("#f-notes", "x".repeat(1000001));
  await page.waitForFunction(() => document.body.dataset.state === "invalid", null, { timeout: WAIT, polling: 50 });
  assert.match(await page.textContent("#banner"), /The disk as typed is [\d,]+ bytes or more, over the limit of 1,000,000 bytes/);
  // A reload of a too-large address says what happened.
  const { page: reloaded } = await opensWithDefaultDisk(`${pageUrl}#disk=too-large`);
  assert.match(await reloaded.textContent("#banner"), /too large to be kept/);
  await reloaded.close();
  assert.deepEqual(errors, []);
  await page.close();
});
