// Links, case files and exports in real headless Chromium: a link written by `finwake link`
// opens the same case and "Copy link" gives it back; hostile links run nothing and list what
// they ignored (with the command line's own words); the Content-Security-Policy holds; a bad
// case file gets the command line's message and changes nothing; drop and Undo; and every
// export parses back and agrees with `finwake simulate` on the same case.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { inflateSync } from "node:zlib";
import { serve, runToEnd, consoleErrors, withPage, CLI, SITE } from "./harness.mjs";

const NEEDS_CLI = !CLI && "FINWAKE_CLI is not set (run through `cargo xtask test`)";
let server;
before(async () => { server = await serve(); });
after(async () => { await server.close(); });


const scratch = mkdtempSync(join(tmpdir(), "finwake-share-"));
function caseFile(name, text) {
  const path = join(scratch, name);
  writeFileSync(path, text);
  return path;
}

/** `finwake ARGS`: status, stdout, stderr. */
function cli(args, input) {
  const r = spawnSync(CLI, args, { encoding: "utf8", input });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

function linkOf(caseObj, base) {
  const r = cli(["link", caseFile("link-case.json", JSON.stringify(caseObj, null, 2)), "--base", base]);
  assert.equal(r.status, 0, r.stderr);
  return r.stdout.trim();
}

const TANDEM = JSON.parse(readFileSync(join(SITE, "cases", "tandem-two-chords.json"), "utf8"));

/** A small two-foil case, quick to run, with values away from every link default. */
function smallCase() {
  const c = structuredClone(TANDEM);
  c.flow = { speed: 0.42, water: "sea", temperature: 15.5 };
  c.frequency = 1.2;
  c.foils[1] = { ...c.foils[1], chord: 0.08, x: 0.31, y: -0.015, phase: 120, pitch: 12.5 };
  c.numerics = { panels: 40, steps_per_cycle: 40, cycles: 3, ramp_cycles: 1 };
  return c;
}

async function openAt(page, url) {
  await page.goto(url);
  await page.waitForSelector("body[data-ready]", { timeout: 60000 });
}

async function pageCase(page) {
  return JSON.parse(await page.inputValue("#case-json"));
}

test("a link from `finwake link` opens the same case, and Copy link gives the same link back", { skip: NEEDS_CLI }, async () => {
  await withPage(async ({ page, ctx, log }) => {
    await ctx.grantPermissions(["clipboard-read", "clipboard-write"], { origin: server.origin });
    const c = smallCase();
    const link = linkOf(c, `${server.origin}/`);
    assert.match(link, /#v1;U=0\.42;water=sea;T=15\.5;f=1\.2;foils=2;/);
    const decoded = JSON.parse(cli(["link", "--decode", link]).stdout);
    await openAt(page, link);
    assert.deepEqual(await pageCase(page), decoded, "the case the page runs differs from `finwake link --decode`");
    assert.equal(await page.inputValue('[name="flow.speed"]'), "0.42");
    assert.equal(await page.inputValue('[name="flow.water"]'), "sea");
    assert.equal(await page.inputValue('[name="flow.temperature"]'), "15.5");
    assert.equal(await page.inputValue('[name="foils.1.phase"]'), "120");
    assert.equal(await page.inputValue('[name="foils.1.chord"]'), "0.08");
    assert.equal(await page.inputValue('[name="numerics.cycles"]'), "3");
    assert.equal(await page.getAttribute("body", "data-link-notices"), "0");
    assert.equal(await page.locator('[data-notice="link"]').count(), 0, "a clean link showed a notice");
    await page.click("#share-copy");
    await page.waitForFunction(() => document.getElementById("share-link").value.length > 0);
    assert.equal(await page.inputValue("#share-link"), link, "Copy link wrote another link");
    assert.equal(await page.evaluate(() => navigator.clipboard.readText()), link);
    // An edit changes the link; the new one decodes to the edited case.
    await page.fill('[name="foils.1.phase"]', "200");
    await page.waitForFunction(() => JSON.parse(document.getElementById("case-json").value).foils[1].phase === 200);
    await page.click("#share-copy");
    await page.waitForFunction((old) => document.getElementById("share-link").value !== old, link);
    const edited = await page.inputValue("#share-link");
    assert.deepEqual(JSON.parse(cli(["link", "--decode", edited]).stdout), await pageCase(page));
    assert.match(page.url(), /#v1;/, "the address bar does not hold the link");
    assert.deepEqual(consoleErrors(log), []);
  });
});

/** Values and keys that try to become markup or script. Each sets window.__pwned if it runs. */
const HOSTILE_ITEMS = [
  "U=<script>window.__pwned=1</script>",
  "<img src=x onerror=window.__pwned=2>=1",
  "1.y=javascript:window.__pwned=3",
  "T=\"><svg onload=window.__pwned=4>",
  "0.chord=0.1';window.__pwned=5;//",
  "water=<iframe src=javascript:window.__pwned=6>",
  "f=1e999",
  "%3Cb%3Ebold%3C%2Fb%3E=1",
  "1.bogus=${window.__pwned=7}",
];

test("hostile links run nothing, open no dialog, and a notice lists each field with the command line's words", { skip: NEEDS_CLI }, async () => {
  await withPage(async ({ page, log }) => {
    const dialogs = [];
    page.on("dialog", (d) => { dialogs.push(`${d.type()}: ${d.message()}`); d.dismiss().catch(() => {}); });
    await page.addInitScript(() => {
      window.__violations = [];
      document.addEventListener("securitypolicyviolation", (e) => window.__violations.push(`${e.violatedDirective} ${e.blockedURI}`));
    });
    const fragment = ["v1", ...HOSTILE_ITEMS, "foils=2", "1.x=0.3", "1.phase=135"].join(";");
    await openAt(page, `${server.origin}/#${fragment}`);
    const notice = page.locator('[data-notice="link"]');
    await notice.waitFor();
    const shown = await notice.locator("li").allTextContents();
    // The page decodes what the browser put in location.hash; the command line the same text.
    const hash = await page.evaluate(() => location.hash);
    const r = cli(["link", "--decode", hash]);
    assert.equal(r.status, 2);
    const expected = r.stderr.trim().split("\n").filter((l) => l.startsWith("finwake: link: ")).map((l) => l.slice("finwake: link: ".length));
    // `;` inside an item splits it, so there can be more notices than items.
    assert.ok(expected.length >= HOSTILE_ITEMS.length, r.stderr);
    assert.deepEqual(shown, expected, "the notice does not list the fields as `finwake link --decode` does");
    assert.ok(shown.some((t) => t.includes("<script>window.__pwned=1</script>")), `the hostile value is not shown as text: ${shown.join(" | ")}`);
    assert.ok(shown.some((t) => t.includes("<img src=x onerror=window.__pwned=2>")));
    // The rest of the link applies.
    const c = await pageCase(page);
    assert.equal(c.foils.length, 2);
    assert.equal(c.foils[1].phase, 135);
    assert.deepEqual(JSON.parse(r.stdout), c);
    await page.waitForTimeout(500);
    assert.equal(await page.evaluate(() => window.__pwned), undefined, "a hostile string ran");
    assert.deepEqual(dialogs, [], "a dialog opened");
    assert.deepEqual(await page.evaluate(() => window.__violations), [], "something tried to run or load against the policy");
    const injected = await page.evaluate(() => document.querySelectorAll('img[src="x"], iframe, #notices svg, #notices b, script:not([src])').length);
    assert.equal(injected, 0, "markup from the link reached the page");
    assert.deepEqual(consoleErrors(log), []);
  });
});

test("a link that is not one (or from a newer finwake) says why and opens an example", async () => {
  await withPage(async ({ page }) => {
    for (const [fragment, words] of [["v2;U=1", /version 2.*newer finwake/], ["hello<script>", /not a finwake case link/]]) {
      await openAt(page, `${server.origin}/#${fragment}`);
      const text = await page.locator('[data-notice="link"]').textContent();
      assert.match(text, words);
      assert.equal((await pageCase(page)).foils.length, TANDEM.foils.length, "the default example did not open");
    }
  });
});

test("the Content-Security-Policy forbids inline script, string evaluation and other origins", async () => {
  await withPage(async ({ page }) => {
    await openAt(page, `${server.origin}/`);
    const policy = await page.getAttribute('meta[http-equiv="Content-Security-Policy"]', "content");
    const d = Object.fromEntries(policy.split(";").map((p) => p.trim().split(/\s+/)).filter((p) => p[0]).map(([k, ...v]) => [k, v]));
    assert.deepEqual(d["script-src"], ["'self'", "'wasm-unsafe-eval'"]);
    assert.deepEqual(d["default-src"], ["'self'"]);
    assert.deepEqual(d["connect-src"], ["'self'"]);
    assert.deepEqual(d["object-src"], ["'none'"]);
    for (const [k, v] of Object.entries(d)) {
      assert.ok(!v.includes("'unsafe-inline'") && !v.includes("'unsafe-eval'") && !v.includes("*"), `${k}: ${v.join(" ")}`);
      assert.ok(v.every((s) => s.startsWith("'") || s === "data:" || s === "blob:"), `${k} names another origin: ${v.join(" ")}`);
    }
    assert.ok(d["img-src"].every((s) => ["'self'", "data:", "blob:"].includes(s)));
    const probe = await page.evaluate(async () => {
      const seen = [];
      document.addEventListener("securitypolicyviolation", (e) => seen.push(e.violatedDirective));
      const s = document.createElement("script");
      s.textContent = "window.__inline = 1";
      document.body.append(s);
      // Code from a string (the test's own evaluate() is exempt from the policy; a timer's is not).
      setTimeout("window.__fromString = 1", 0);
      const img = document.createElement("img");
      img.src = "http://127.0.0.2:9/x.png";
      document.body.append(img);
      let fetched = true;
      try { await fetch("http://127.0.0.2:9/x"); } catch { fetched = false; }
      await new Promise((ok) => setTimeout(ok, 200));
      return { inline: window.__inline, fromString: window.__fromString, fetched, seen };
    });
    assert.equal(probe.inline, undefined, "an inline script ran");
    assert.equal(probe.fromString, undefined, "code from a string ran");
    assert.equal(probe.fetched, false, "a request to another origin went out");
    assert.ok(probe.seen.some((s) => s.startsWith("script-src-elem")), `no inline-script violation reported: ${probe.seen}`);
    assert.ok(probe.seen.some((s) => s === "script-src"), `no string-evaluation violation reported: ${probe.seen}`);
    assert.ok(probe.seen.some((s) => s.startsWith("img-src")), `no image-origin violation reported: ${probe.seen}`);
    assert.ok(probe.seen.some((s) => s.startsWith("connect-src")), `no connect-src violation reported: ${probe.seen}`);
  });
});

test("a bad case file gets the command line's message and leaves the case as it was", { skip: NEEDS_CLI }, async () => {
  const good = readFileSync(join(SITE, "cases", "tandem-two-chords.json"), "utf8");
  const files = [
    ["negative-chord.json", Buffer.from(good.replace('"chord": 0.1', '"chord": -0.1'))],
    ["typo.json", Buffer.from(good.replace('"span"', '"spam"'))],
    ["not-json.json", Buffer.from('{ "version": 1, "flow": { "speed": 0.5, } }')],
    ["latin1.json", Buffer.from([0x7b, 0x22, 0xe9, 0x22, 0x7d])],
  ];
  await withPage(async ({ page }) => {
    await openAt(page, `${server.origin}/`);
    await page.click(".case-file summary");
    const before = await page.inputValue("#case-json");
    for (const [name, bytes] of files) {
      const path = caseFile(name, bytes);
      const r = cli(["simulate", path]);
      assert.equal(r.status, 2, r.stderr);
      // `finwake: PATH: message` (or `finwake: case file PATH: ...`); the page names the file.
      const want = r.stderr.trim().replace(/^finwake: /, "").replace(path, name);
      await page.setInputFiles("#case-import", { name, mimeType: "application/json", buffer: bytes });
      await page.waitForFunction((w) => document.body.dataset.fileError === w, want, { timeout: 10000 })
        .catch(async () => assert.fail(`page: ${await page.getAttribute("body", "data-file-error")}\ncli:  ${want}`));
      const text = await page.locator('[data-notice="file"]').textContent();
      assert.ok(text.includes(want), `${name}: the notice says ${text}`);
      assert.equal(await page.inputValue("#case-json"), before, `${name}: the case changed`);
    }
  });
});

test("dropping a case file opens it; Undo brings back the unsaved edits it replaced; leaving asks first", async () => {
  const single = readFileSync(join(SITE, "cases", "single-efficient.json"), "utf8");
  await withPage(async ({ page }) => {
    await openAt(page, `${server.origin}/`);
    await page.click('[name="flow.speed"]');
    await page.fill('[name="flow.speed"]', "0.61");
    await page.waitForFunction(() => JSON.parse(document.getElementById("case-json").value).flow.speed === 0.61);
    await page.evaluate((text) => {
      const dt = new DataTransfer();
      dt.items.add(new File([text], "single.json", { type: "application/json" }));
      for (const type of ["dragenter", "dragover", "drop"]) {
        document.body.dispatchEvent(new DragEvent(type, { dataTransfer: dt, bubbles: true, cancelable: true }));
      }
    }, single);
    await page.waitForFunction(() => JSON.parse(document.getElementById("case-json").value).foils.length === 1);
    assert.equal(await page.inputValue('[name="flow.speed"]'), "0.5");
    const undo = page.locator('[data-notice="undo"] [data-action="undo"]');
    await undo.click();
    await page.waitForFunction(() => JSON.parse(document.getElementById("case-json").value).foils.length === 2);
    assert.equal(await page.inputValue('[name="flow.speed"]'), "0.61", "Undo did not bring the edit back");
    // Removing the hind foil can be undone too.
    await page.click("#foil-count");
    await page.waitForFunction(() => document.querySelectorAll('[name^="foils.1."]').length === 0);
    await page.locator('[data-notice="undo"] [data-action="undo"]').click();
    await page.waitForFunction(() => document.querySelectorAll('[name^="foils.1."]').length > 0);
    // With unsaved edits, leaving the page asks; after saving it does not.
    const asked = [];
    page.on("dialog", (d) => { asked.push(d.type()); d.dismiss().catch(() => {}); });
    await page.close({ runBeforeUnload: true });
    await new Promise((ok) => setTimeout(ok, 500));
    assert.deepEqual(asked, ["beforeunload"], "leaving with unsaved edits did not ask");
  });
  await withPage(async ({ page }) => {
    await openAt(page, `${server.origin}/`);
    await page.click('[name="flow.speed"]');
    await page.fill('[name="flow.speed"]', "0.61");
    await page.click(".case-file summary");
    const [saved] = await Promise.all([page.waitForEvent("download"), page.click("#case-export")]);
    const text = readFileSync(await saved.path(), "utf8");
    assert.equal(JSON.parse(text).flow.speed, 0.61);
    const r = cli(["link", caseFile("saved.json", text)]);
    assert.equal(r.status, 0, `the saved case file does not read in finwake: ${r.stderr}`);
    const asked = [];
    page.on("dialog", (d) => { asked.push(d.type()); d.dismiss().catch(() => {}); });
    await page.close({ runBeforeUnload: true });
    await new Promise((ok) => setTimeout(ok, 500));
    assert.deepEqual(asked, [], "leaving after saving asked anyway");
  });
});

// ---------------------------------------------------------------------------------------------
// Exports.

/** The chunks of a PNG file, each CRC-checked (PNG spec, ISO/IEC 15948, section 5.3). */
function pngChunks(buf) {
  assert.deepEqual([...buf.subarray(0, 8)], [137, 80, 78, 71, 13, 10, 26, 10], "not a PNG signature");
  const table = Array.from({ length: 256 }, (_, n) => {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    return c >>> 0;
  });
  const crc = (bytes) => {
    let c = 0xffffffff;
    for (const b of bytes) c = table[(c ^ b) & 0xff] ^ (c >>> 8);
    return (c ^ 0xffffffff) >>> 0;
  };
  const chunks = [];
  for (let at = 8; at < buf.length;) {
    const len = buf.readUInt32BE(at);
    const type = buf.subarray(at + 4, at + 8).toString("latin1");
    const data = buf.subarray(at + 8, at + 8 + len);
    assert.equal(buf.readUInt32BE(at + 8 + len), crc(buf.subarray(at + 4, at + 8 + len)), `bad CRC in ${type}`);
    chunks.push({ type, data });
    at += 12 + len;
  }
  assert.equal(chunks[0].type, "IHDR");
  assert.equal(chunks[chunks.length - 1].type, "IEND");
  return chunks;
}

/** Width and height of a PNG, after checking that its pixel data inflates to the right size. */
function pngSize(buf) {
  const chunks = pngChunks(buf);
  const h = chunks[0].data;
  const width = h.readUInt32BE(0), height = h.readUInt32BE(4), depth = h[8], colour = h[9];
  const channels = { 0: 1, 2: 3, 3: 1, 4: 2, 6: 4 }[colour];
  const raw = inflateSync(Buffer.concat(chunks.filter((c) => c.type === "IDAT").map((c) => c.data)));
  assert.equal(raw.length, height * (1 + Math.ceil((width * channels * depth) / 8)), "pixel data of the wrong size");
  return { width, height };
}

async function download(page, button) {
  const [d] = await Promise.all([page.waitForEvent("download"), page.click(button)]);
  return { name: d.suggestedFilename(), bytes: readFileSync(await d.path()) };
}

test("every export parses back and agrees with `finwake simulate` on the same case", { skip: NEEDS_CLI }, async () => {
  const c = smallCase();
  const path = caseFile("export-case.json", JSON.stringify(c, null, 2));
  const historyPath = join(scratch, "cli-history.csv");
  const cliSummary = JSON.parse(execFileSync(CLI, ["simulate", path, "--json", "--history", historyPath], { encoding: "utf8" }));
  const cliRows = readFileSync(historyPath, "utf8").trim().split("\n");
  const version = execFileSync(CLI, ["--version"], { encoding: "utf8" }).trim(); // "finwake 0.1.0"
  await withPage(async ({ page, log }) => {
    await openAt(page, linkOf(c, `${server.origin}/`));
    await runToEnd(page);

    // History CSV: header block, then one row per foil per step, equal to the command line's
    // history in every shared column, bit for bit: the site's wasm build steps exactly like the
    // native one (tests/wasm/parity.test.mjs), so any difference is another case, step or build.
    const csv = await download(page, "#export-csv");
    assert.equal(csv.name, "finwake-history.csv");
    const lines = csv.bytes.toString("utf8").trimEnd().split("\n");
    const header = lines.filter((l) => l.startsWith("#"));
    const body = lines.filter((l) => !l.startsWith("#"));
    assert.equal(lines.indexOf(body[0]), header.length, "comment lines after the column row");
    assert.equal(header[0], `# ${version} time history`);
    for (const must of [
      "# flow.speed = 0.42 m/s", "# flow.water = sea", "# flow.temperature = 15.5 deg C", "# frequency = 1.2 Hz",
      "# foils.1.x = 0.31 m", "# foils.1.phase = 120 deg", "# foils.1.chord = 0.08 m", "# numerics.steps_per_cycle = 40",
    ]) assert.ok(header.includes(must), `no "${must}" in the header`);
    const joined = header.join("\n");
    for (const word of ["phase sign", "lags foil 0", "gap:", "trailing edge to the hind foil's leading edge", "0.5 rho U^2", "(q c_i s_i)", "screening"]) {
      assert.ok(joined.includes(word), `the header does not define "${word}"`);
    }
    assert.ok(header.some((l) => /^# columns: time \(s\), foil .*heave \(m\), pitch \(deg\)/.test(l)), "no columns line with units");
    const names = body[0].split(",");
    const rows = body.slice(1).map((l) => l.split(",").map(Number));
    assert.equal(rows.length, 3 * 40 * 2, "rows: 3 cycles x 40 steps x 2 foils");
    assert.ok(rows.every((r) => r.length === names.length && r.every(Number.isFinite)), "a row with a bad number");
    const cliNames = cliRows[0].split(",");
    const cliData = cliRows.slice(1).map((l) => l.split(",").map(Number));
    assert.equal(cliData.length, rows.length);
    let compared = 0;
    for (const [k, name] of cliNames.entries()) {
      const j = names.indexOf(name);
      assert.ok(j >= 0, `the page's CSV has no column ${name}`);
      for (let r = 0; r < rows.length; r++) {
        const [a, b] = [rows[r][j], cliData[r][k]];
        assert.equal(a, b, `row ${r + 1}, ${name}: page ${a}, command line ${b}`);
        compared += 1;
      }
    }

    // Summary JSON: every key of `finwake simulate --json`, the same numbers, plus the case.
    const sum = await download(page, "#export-summary");
    const s = JSON.parse(sum.bytes.toString("utf8"));
    for (const key of Object.keys(cliSummary)) assert.deepEqual(s[key], cliSummary[key], `summary key ${key}`);
    assert.equal(`finwake ${s.finwake_version}`, version);
    assert.deepEqual(s.case, JSON.parse(cli(["link", "--decode", s.link]).stdout));
    assert.equal(s.run_complete, true);

    // The wake view as PNG, at the canvas's own pixels.
    const wakeSize = await page.evaluate(() => ({ width: document.getElementById("wake").width, height: document.getElementById("wake").height }));
    const wake = await download(page, "#export-wake");
    assert.deepEqual(pngSize(wake.bytes), wakeSize);
    // The plots as PNG (stacked) and as SVG.
    const plotSize = await page.evaluate(() => {
      const cs = ["plot-thrust", "plot-lift", "plot-power"].map((id) => document.getElementById(id));
      return { width: Math.max(...cs.map((c) => c.width)), height: cs.reduce((h, c) => h + c.height, 0) };
    });
    assert.deepEqual(pngSize((await download(page, "#export-plots-png")).bytes), plotSize);
    const svg = (await download(page, "#export-plots-svg")).bytes.toString("utf8");
    const parsed = await page.evaluate((text) => {
      const doc = new DOMParser().parseFromString(text, "image/svg+xml");
      if (doc.querySelector("parsererror")) return { error: doc.querySelector("parsererror").textContent };
      return {
        plots: [...doc.querySelectorAll("g[data-plot]")].map((g) => ({
          unit: g.getAttribute("data-plot"),
          lines: [...g.querySelectorAll("polyline")].map((p) => p.getAttribute("points").trim().split(/\s+/).length),
          title: g.querySelector("text").textContent,
        })),
        scripts: doc.querySelectorAll("script").length,
      };
    }, svg);
    assert.equal(parsed.error, undefined, parsed.error);
    assert.deepEqual(parsed.plots.map((p) => p.unit), ["C_T", "C_L", "P (W)"]);
    for (const p of parsed.plots) {
      assert.equal(p.lines.length, 2, `${p.unit}: one line per foil`);
      assert.ok(p.lines.every((n) => n >= 3 * 40 - 1), `${p.unit}: lines of ${p.lines} points for 3 cycles of 40 steps`);
    }
    assert.equal(parsed.scripts, 0);
    console.log(`# exports: CSV ${rows.length} rows, ${compared} numbers against \`finwake simulate --history\` equal bit for bit; summary equal to --json; PNG ${wakeSize.width}x${wakeSize.height}; SVG ${parsed.plots.length} plots`);
    assert.deepEqual(consoleErrors(log), []);
  });
});
