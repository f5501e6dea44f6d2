// Shared set-up of the browser tests: a static server for the built site on 127.0.0.1, Debian's
// Chromium driven by playwright-core with the offline flags, and collectors for console messages,
// page errors and requests.
import { createServer } from "node:http";
import { execFileSync } from "node:child_process";
import { mkdtempSync, mkdirSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { extname, join, normalize, sep } from "node:path";
import { chromium } from "playwright-core";

export const SITE = process.env.FINWAKE_SITE;
export const CHROMIUM = process.env.FINWAKE_CHROMIUM || "/usr/bin/chromium";
export const ARTIFACTS = process.env.FINWAKE_ARTIFACTS || join(tmpdir(), "finwake-browser");
export const CLI = process.env.FINWAKE_CLI;

if (!SITE) throw new Error("FINWAKE_SITE is not set: run the browser tests through `cargo xtask test`");
mkdirSync(ARTIFACTS, { recursive: true });

const TYPES = {
  ".html": "text/html; charset=utf-8", ".js": "text/javascript; charset=utf-8", ".mjs": "text/javascript; charset=utf-8",
  ".css": "text/css; charset=utf-8", ".json": "application/json", ".wasm": "application/wasm", ".png": "image/png",
  ".svg": "image/svg+xml",
};

/** Serves SITE on 127.0.0.1 at a free port. `block` may name paths to answer with 404. */
export async function serve({ block = [] } = {}) {
  const root = normalize(SITE);
  const server = createServer((req, res) => {
    const path = decodeURIComponent(new URL(req.url, "http://x").pathname);
    const rel = path.endsWith("/") ? `${path}index.html` : path;
    const file = normalize(join(root, rel));
    if (!file.startsWith(root + sep) || block.some((b) => rel.endsWith(b))) {
      res.writeHead(404).end("not found");
      return;
    }
    try {
      if (!statSync(file).isFile()) throw new Error("not a file");
      res.writeHead(200, { "Content-Type": TYPES[extname(file)] || "application/octet-stream", "Cache-Control": "no-cache" });
      res.end(readFileSync(file));
    } catch {
      res.writeHead(404).end("not found");
    }
  });
  await new Promise((ok) => server.listen(0, "127.0.0.1", ok));
  const origin = `http://127.0.0.1:${server.address().port}`;
  return { origin, close: () => new Promise((ok) => server.close(ok)) };
}

/** A fresh headless Chromium profile with the flags from the toolchain notes. */
export async function browser({ deviceScaleFactor = 1, viewport = { width: 1440, height: 1000 } } = {}) {
  const profile = mkdtempSync(join(tmpdir(), "chromium-profile-"));
  const ctx = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport,
    deviceScaleFactor,
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
      "--disable-background-networking", "--disable-component-update", "--disable-sync"],
  });
  const log = { console: [], errors: [], requests: [] };
  ctx.on("request", (r) => log.requests.push(r.url()));
  const watch = (page) => {
    page.on("console", (m) => log.console.push({ type: m.type(), text: m.text() }));
    page.on("pageerror", (e) => log.errors.push(String(e)));
  };
  const page = ctx.pages()[0] || (await ctx.newPage());
  watch(page);
  return {
    ctx, page, log,
    close: async () => { await ctx.close(); rmSync(profile, { recursive: true, force: true }); },
  };
}

/** Opens the page and waits until the solver runs (body[data-ready]). */
export async function openReady(page, origin, timeout = 60000) {
  await page.goto(`${origin}/`);
  await page.waitForSelector("body[data-ready]", { timeout });
}

/** The text and value of a readout. */
export async function readout(page, key) {
  const loc = page.locator(`[data-quantity="${key}"]`);
  return { text: (await loc.textContent()).trim(), value: await loc.getAttribute("data-value") };
}

/** Sets the run speed to "as fast as it goes" and waits until the run has finished. */
export async function runToEnd(page, timeout = 300000) {
  await page.selectOption('select[name="run.speed"]', "max");
  await page.waitForSelector('body[data-run-state="finished"]', { timeout });
}

export function consoleErrors(log) {
  return log.console.filter((m) => m.type === "error").map((m) => m.text).concat(log.errors);
}

/** Runs `fn` with a fresh browser (options as `browser`), closing it afterwards; `onClose(b)`
 * sees the browser's logs just before it closes. */
export async function withPage(fn, opts, onClose) {
  const b = await browser(opts);
  try {
    return await fn(b);
  } finally {
    if (onClose) onClose(b);
    await b.close();
  }
}

/** `finwake simulate CASE --json` (the CLI at FINWAKE_CLI) on a case object. */
export function simulateCli(caseObj) {
  const dir = mkdtempSync(join(tmpdir(), "finwake-case-"));
  const file = join(dir, "case.json");
  writeFileSync(file, JSON.stringify(caseObj, null, 2));
  return JSON.parse(execFileSync(CLI, ["simulate", file, "--json"], { encoding: "utf8" }));
}
