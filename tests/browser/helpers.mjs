// helpers.mjs: shared set-up of the browser tests and the benchmark. Paths are
// found from this file's own location (tests/browser/ in the repository), so
// nothing depends on where the repository lives.
//
// The browser is the system's Chromium (Debian's `chromium` package at
// /usr/bin/chromium, or CHROMIUM_PATH), driven by playwright-core: no browser
// is ever downloaded. Each launch gets a fresh profile in a temporary directory.

import { execFileSync } from "node:child_process";
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { after, before } from "node:test";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

export const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), "..", "..");
export const pagePath = join(repoRoot, "target", "site", "nivalis.html");
export const pageUrl = pathToFileURL(pagePath).href;

const CHROMIUM = process.env.CHROMIUM_PATH || "/usr/bin/chromium";

/// Builds the page with `cargo xtask dist` unless it exists (cargo xtask test
/// builds it before running these tests; a direct `node --test` may not have).
export function ensurePage() {
  if (!existsSync(pagePath)) {
    execFileSync("cargo", ["xtask", "dist"], { cwd: repoRoot, stdio: "inherit" });
  }
  return pagePath;
}

/// Builds the native CLI (debug) and returns the path of its binary.
export function ensureCli() {
  execFileSync("cargo", ["build", "--quiet", "-p", "nivalis-cli"], { cwd: repoRoot, stdio: "inherit" });
  const exe = process.platform === "win32" ? "nivalis.exe" : "nivalis";
  const targetDir = process.env.CARGO_TARGET_DIR ? resolve(process.env.CARGO_TARGET_DIR) : join(repoRoot, "target");
  return join(targetDir, "debug", exe);
}

/// A fresh headless Chromium context (temporary profile) and a cleanup function.
export async function launch(options = {}) {
  const profile = mkdtempSync(join(tmpdir(), "nivalis-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    acceptDownloads: true,
    viewport: { width: 1400, height: 1000 },
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
      "--disable-sync", "--no-first-run"],
    ...options,
  });
  const close = async () => {
    await context.close();
    rmSync(profile, { recursive: true, force: true });
  };
  return { context, close };
}

/// The set-up most test files share, as node:test hooks of the calling file:
/// before all tests the page is built (if missing), the CLI built, a scratch
/// directory `nivalis-NAME-test-XXXXXX` made and a browser launched; after
/// them the browser is closed and the scratch directory removed. `set` gets
/// `{ browser, cli, scratch }` once they exist, e.g.
/// `withBrowserAndCli("page", (s) => ({ browser, cli, scratch } = s));`.
export function withBrowserAndCli(name, set) {
  const env = {};
  before(async () => {
    ensurePage();
    env.cli = ensureCli();
    env.scratch = mkdtempSync(join(tmpdir(), `nivalis-${name}-test-`));
    env.browser = await launch();
    set(env);
  });
  after(async () => {
    await env.browser?.close();
    if (env.scratch) rmSync(env.scratch, { recursive: true, force: true });
  });
}

/// Opens the page and waits until its first result is on screen. Errors in the
/// page's console or uncaught exceptions are collected in `errors`.
export async function openPage(context, url = pageUrl) {
  return loadPage(context.pages()[0] || (await context.newPage()), url);
}

/// Like `openPage`, but always in a new tab of `context`.
export async function newPage(context, url = pageUrl) {
  return loadPage(await context.newPage(), url);
}

async function loadPage(page, url) {
  const errors = [];
  page.on("pageerror", (e) => errors.push(String(e)));
  page.on("console", (m) => { if (m.type() === "error") errors.push(m.text()); });
  await page.goto(url);
  await page.waitForSelector("body[data-ready=true]", { timeout: 60000 });
  await page.evaluate(() => window.nivalis.whenDrawn());
  return { page, errors };
}

/// The page's result counter (body[data-generation]): it grows by one per result drawn.
export async function generation(page) {
  return page.evaluate(() => Number(document.body.dataset.generation));
}

/// Waits, with no time limit of its own (the test runner's applies), until a
/// result newer than generation `after` is drawn and the page is "ready"
/// (body[data-state]); explicit page state, never a timing.
export async function nextResult(page, after) {
  await page.waitForFunction((g) => Number(document.body.dataset.generation) > g && document.body.dataset.state === "ready",
    after, { timeout: 300000, polling: 50 });
  await page.evaluate(() => window.nivalis.whenDrawn());
}

/// The text of a download started by clicking `selector`.
export async function downloadText(page, selector) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  const file = await download.path();
  const { readFileSync } = await import("node:fs");
  return { name: download.suggestedFilename(), text: readFileSync(file, "utf8") };
}

/// The water snowline radii [au] in the page's snowline table (full precision, from data-radius-au).
export async function waterSnowlines(page) {
  return page.$$eval('#snowline-table tr[data-species="H2O"] td[data-radius-au]', (cells) => cells.map((c) => Number(c.dataset.radiusAu)));
}

/// Sets a typed input like a person: select its text, type the new value.
export async function typeInto(page, selector, value) {
  await page.fill(selector, String(value));
}

/// Waits for the page's next compute-and-draw (one animation frame after an edit).
export async function settle(page) {
  await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
  await page.evaluate(() => window.nivalis.whenDrawn());
}

/// Statistics of a canvas: the number of distinct colours and the fraction of
/// pixels that differ from the top-left (background) pixel. The pixels are what
/// the view shows (`window.nivalis.viewPixels`: the chart canvas composited
/// between the layers under and over it, web/replay.js).
export async function canvasStats(page, id) {
  return page.$eval(`#${id}`, (canvas) => {
    const { data } = window.nivalis.viewPixels(canvas.id);
    const bg = [data[0], data[1], data[2], data[3]];
    const colours = new Set();
    let different = 0;
    for (let i = 0; i < data.length; i += 4) {
      const key = (data[i] << 16) | (data[i + 1] << 8) | data[i + 2];
      colours.add(key);
      if (data[i] !== bg[0] || data[i + 1] !== bg[1] || data[i + 2] !== bg[2] || data[i + 3] !== bg[3]) different += 1;
    }
    return { width: canvas.width, height: canvas.height, colours: colours.size, nonBackground: different / (data.length / 4) };
  });
}

/// What a view shows, as a string to compare: its size and the SHA-256 of its
/// composited pixels (`window.nivalis.viewPixels`: a view is three stacked
/// canvases, web/replay.js, so the chart canvas alone is not the picture).
export async function viewPicture(page, id) {
  return page.evaluate(async (id) => {
    const pixels = window.nivalis.viewPixels(id);
    const digest = new Uint8Array(await crypto.subtle.digest("SHA-256", pixels.data));
    return `${pixels.width}x${pixels.height}:` + Array.from(digest, (b) => b.toString(16).padStart(2, "0")).join("");
  }, id);
}

export { execFileSync, existsSync, join };
