// Spacing-phase maps (www/ui/map.js, www/map-worker.js): a small map completes and draws, a
// click loads the cell into the live view, a cell equals `finwake simulate` on that case,
// Cancel stops a map, worker failures and bad settings reach the user as messages, the map's
// settings travel in the link with strict validation, and the palettes keep a monotone lightness.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { serve, openReady, consoleErrors, withPage, simulateCli, ARTIFACTS, CLI, SITE } from "./harness.mjs";

let server;
before(async () => { server = await serve(); });
after(async () => { await server.close(); });



/** The same number to 3 significant figures (the page's readout rule, as page.test.mjs). */
function assertSig3(pageValue, cliValue, what) {
  assert.equal(Number(Number(pageValue).toPrecision(3)), Number(cliValue.toPrecision(3)), `${what}: map ${pageValue}, command line ${cliValue}`);
}

/** Pauses the live run and makes the case cheap: 40 panels, 40 steps per cycle, 3 cycles. */
async function coarse(page) {
  await page.click("#run-toggle");
  await page.waitForSelector('body[data-run-state="paused"]');
  await page.fill('[name="numerics.panels"]', "40");
  await page.fill('[name="numerics.steps_per_cycle"]', "40");
  await page.fill('[name="numerics.cycles"]', "3");
  await page.waitForFunction(() => JSON.parse(document.getElementById("case-json").value).numerics.cycles === 3);
}

async function setAxes(page, x, y) {
  for (const [name, a] of [["x", x], ["y", y]]) {
    if (a.key) await page.selectOption(`[name="map.${name}.key"]`, a.key);
    await page.fill(`[name="map.${name}.start"]`, String(a.start));
    await page.fill(`[name="map.${name}.stop"]`, String(a.stop));
    await page.fill(`[name="map.${name}.count"]`, String(a.count));
  }
}

/** Page coordinates of cell (i, j) of an nx x ny map (the plot box of MapView.layout()). */
async function cellPoint(page, i, j, nx, ny) {
  const r = await page.locator("#map-canvas").boundingBox();
  const left = 64, right = r.width - 104, top = 16, bottom = r.height - 48;
  return { x: r.x + left + ((i + 0.5) * (right - left)) / nx, y: r.y + bottom - ((j + 0.5) * (bottom - top)) / ny };
}

test("the palettes: lightness runs monotone along each leg, and the diverging map is neutral at a ratio of 1", async () => {
  const m = await import(pathToFileURL(join(SITE, "ui", "map.js")).href);
  // CIELAB lightness of an sRGB colour (CIE 15:2004 formulas, D65 white).
  const L = ([r, g, b]) => m.hexToLab(`#${[r, g, b].map((c) => c.toString(16).padStart(2, "0")).join("")}`)[0];
  const sample = (fn, a, b) => Array.from({ length: 51 }, (_, k) => L(fn(a + ((b - a) * k) / 50)));
  const down = sample(m.diverging, 0, 0.5), up = sample(m.diverging, 0.5, 1), seq = sample(m.sequential, 0, 1);
  // 0.5 L units: the rounding of each channel to 8 bits moves L by well under that.
  for (let k = 1; k <= 50; k++) {
    assert.ok(down[k] >= down[k - 1] - 0.5, `diverging lightness falls towards 1 at ${k}: ${down[k - 1]} -> ${down[k]}`);
    assert.ok(up[k] <= up[k - 1] + 0.5, `diverging lightness rises away from 1 at ${k}`);
    assert.ok(seq[k] >= seq[k - 1] - 0.5, `sequential lightness falls at ${k}: ${seq[k - 1]} -> ${seq[k]}`);
  }
  assert.ok(down[50] - down[0] > 40 && up[0] - up[50] > 40, "the diverging map has little lightness contrast");
  assert.ok(Math.abs(down[0] - up[50]) < 8, `the two ends of the diverging map differ in lightness: ${down[0]}, ${up[50]}`);
  assert.ok(seq[50] - seq[0] > 60, "the sequential map has little lightness contrast");
});

test("map settings in a link: a round trip, and every bad field reset and listed", async () => {
  const m = await import(pathToFileURL(join(SITE, "ui", "map.js")).href);
  assert.equal(m.mapFragment(m.MAP_DEFAULTS), "", "default settings should add nothing to the link");
  const s = { x: { key: "foils.1.phase", start: 0, stop: 300, count: 11 }, y: { key: "foils.1.y", start: -1, stop: 1.5, count: 5 }, quantity: "pair_efficiency" };
  const f = m.mapFragment(s);
  assert.deepEqual(m.parseMapFragment(f.slice("map=".length)), { settings: s, notes: [] });
  const bad = m.parseMapFragment("foils.1.x:0.5:99:6,bogus.key:0:1:2,<b>x</b>");
  assert.equal(bad.notes.length, 3, bad.notes.join(" | "));
  assert.deepEqual(bad.settings, m.MAP_DEFAULTS);
  assert.match(bad.notes[0], /map\.x\.stop: “99”.*from 0 to 20 c/);
  assert.match(bad.notes[1], /map\.y\.key: “bogus\.key”/);
  assert.match(bad.notes[2], /map\.quantity: “<b>x<\/b>”/);
  assert.match(m.parseMapFragment("foils.1.x:1:2:1.5,foils.1.phase:0:90:2,hind_thrust").notes[0], /map\.x\.count: “1\.5”.*whole number from 1 to 40/);
});

test("a 3 x 2 map completes and draws, hover shows a cell, a click loads it into the live view, and the cell equals `finwake simulate`", async () => {
  await withPage(async ({ page, log }) => {
    await openReady(page, server.origin);
    await coarse(page);
    await setAxes(page, { start: 1, stop: 2, count: 3 }, { start: 0, stop: 180, count: 2 });
    const t0 = Date.now();
    await page.click("#map-start");
    await page.waitForSelector('#map-canvas[data-state="done"]', { timeout: 300000 });
    const seconds = (Date.now() - t0) / 1000;
    console.log(`map 3 x 2 (40 panels, 40 steps per cycle, 3 cycles) done in ${seconds.toFixed(1)} s; ${await page.textContent("#map-status")}`);
    assert.equal(await page.getAttribute("#map-canvas", "data-cells"), "6");
    const colours = await page.evaluate(() => {
      const c = document.getElementById("map-canvas");
      const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
      const seen = new Set();
      for (let i = 0; i < d.length; i += 16) if (!(d[i] === 255 && d[i + 1] === 255 && d[i + 2] === 255)) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
      return seen.size;
    });
    assert.ok(colours > 20, `the map canvas shows only ${colours} colours`);
    await page.locator("#map-canvas").screenshot({ path: join(ARTIFACTS, "map.png") });
    // Exports: a CSV with one row per cell, and a PNG file.
    const [csv] = await Promise.all([page.waitForEvent("download"), page.click("#map-csv")]);
    assert.equal(csv.suggestedFilename(), "finwake-map.csv");
    const rows = readFileSync(await csv.path(), "utf8").trim().split("\n").filter((l) => !l.startsWith("#"));
    assert.equal(rows[0].split(",").slice(0, 3).join(","), "index,foils.1.x,foils.1.phase");
    assert.equal(rows.length, 7, rows.join("\n"));
    assert.equal(rows[6].split(",").slice(0, 3).join(","), "5,2,180");
    const [png] = await Promise.all([page.waitForEvent("download"), page.click("#map-png")]);
    assert.equal(png.suggestedFilename(), "finwake-map.png");
    assert.deepEqual([...readFileSync(await png.path()).subarray(1, 4)], [0x50, 0x4e, 0x47], "not a PNG file");

    // Hover the cell gap 2 c, phase 180 deg (i = 2, j = 1).
    const p = await cellPoint(page, 2, 1, 3, 2);
    await page.mouse.move(p.x, p.y);
    await page.waitForSelector("#map-readout[data-cell='5']");
    assert.equal(await page.getAttribute("#map-readout [data-x]", "data-x"), "2");
    assert.equal(await page.getAttribute("#map-readout [data-y]", "data-y"), "180");
    const value = async (key) => Number(await page.getAttribute(`#map-readout [data-map-quantity="${key}"]`, "data-value"));
    const hover = { total: await value("total.thrust"), hind: await value("foils.1.thrust"), ratio: await value("foils.1.thrust_ratio") };
    assert.ok(Number.isFinite(hover.total) && Number.isFinite(hover.hind) && Number.isFinite(hover.ratio), JSON.stringify(hover));

    // The keyboard reaches the cells too: one cell left of the hovered one is gap 1.5 c.
    await page.focus("#map-canvas");
    await page.keyboard.press("ArrowLeft");
    await page.waitForSelector("#map-readout[data-cell='4']");
    assert.equal(await page.getAttribute("#map-readout [data-x]", "data-x"), "1.5");
    await page.mouse.click(p.x, p.y);
    await page.waitForFunction(() => document.querySelector('[name="foils.1.phase"]').value === "180");
    assert.equal(await page.inputValue('[name="foils.1.x"]'), "2");
    await page.waitForFunction(() => JSON.parse(document.getElementById("case-json").value).foils[1].phase === 180);
    const caseObj = JSON.parse(await page.inputValue("#case-json"));
    assert.equal(caseObj.numerics.cycles, 3, "the loaded cell keeps the coarse numerics");

    if (CLI) {
      const cli = simulateCli(caseObj);
      assertSig3(hover.total, cli.total.thrust, "total.thrust");
      assertSig3(hover.hind, cli.foils[1].thrust, "foils.1.thrust");
      // The ratio's baseline: the hind foil alone, phase 0, at the origin (crate/src/sweep.rs `isolated`).
      const alone = structuredClone(caseObj);
      alone.foils = [{ ...caseObj.foils[1], x: 0, y: 0, phase: 0 }];
      assertSig3(hover.ratio, cli.foils[1].thrust / simulateCli(alone).foils[0].thrust, "foils.1.thrust_ratio");
    }
    assert.deepEqual(consoleErrors(log), [], "console errors");
  });
});

test("Cancel stops a running map and keeps its finished cells", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await page.click("#run-toggle");
    await setAxes(page, { start: 0.5, stop: 3, count: 8 }, { start: 0, stop: 315, count: 8 });
    await page.click("#map-start");
    await page.waitForSelector('#map-canvas[data-state="running"]');
    await page.waitForTimeout(500);
    await page.click("#map-cancel");
    await page.waitForSelector('#map-canvas[data-state="cancelled"]');
    const cells = await page.getAttribute("#map-canvas", "data-cells");
    assert.match(await page.textContent("#map-status"), /Cancelled: \d+ of 64 cells finished/);
    await page.waitForTimeout(3000);
    assert.equal(await page.getAttribute("#map-canvas", "data-cells"), cells, "cells still arrive after Cancel");
    assert.ok(Number(cells) < 64);
    assert.equal(await page.isEnabled("#map-start"), true);
  });
});

test("a map worker that cannot load, and bad map settings, reach the user as readable messages", async () => {
  const blocked = await serve({ block: ["map-worker.js"] });
  try {
    await withPage(async ({ page }) => {
      await openReady(page, blocked.origin);
      await page.click("#run-toggle");
      await setAxes(page, { start: 1, stop: 2, count: 2 }, { start: 0, stop: 90, count: 2 });
      await page.click("#map-start");
      await page.waitForSelector('#map-canvas[data-state="error"]', { timeout: 30000 });
      assert.match(await page.textContent("#map-status"), /The map stopped: A map worker stopped with an error: .*map-worker\.js/);
      assert.equal(await page.isEnabled("#map-start"), true);
      // Bad settings: the message names the field, its value and the allowed range.
      await page.fill('[name="map.x.start"]', "abc");
      await page.click("#map-start");
      assert.match(await page.textContent("#map-status"), /map\.x\.start: “abc” is not allowed; give a number from 0 to 20 c/);
      await page.fill('[name="map.x.start"]', "1");
      await page.fill('[name="map.x.count"]', "0");
      await page.click("#map-start");
      assert.match(await page.textContent("#map-status"), /map\.x\.count: “0” is not allowed; give a whole number from 1 to 40/);
    });
  } finally {
    await blocked.close();
  }
});

test("a cell the crate rejects shows the crate's message; the other cells run", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await coarse(page);
    // A hind foil with no gap at all overlaps the fore foil as they move.
    await setAxes(page, { start: 0, stop: 1, count: 2 }, { start: 0, stop: 0, count: 1 });
    await page.click("#map-start");
    await page.waitForSelector('#map-canvas[data-state="done"]', { timeout: 120000 });
    const status = await page.textContent("#map-status");
    const p = await cellPoint(page, 0, 0, 2, 1);
    await page.mouse.move(p.x, p.y);
    await page.waitForSelector("#map-readout[data-cell='0']");
    const text = await page.textContent("#map-readout");
    assert.match(status, /Done: 2 cells .* 1 cell could not run \(hover for why\); first: foils\.1 = .*overlap/);
    assert.match(text, /cannot run: foils\.1 = .*overlap/);
    assert.equal(await page.getAttribute("#map-canvas", "data-cells"), "2");
  });
});

test("the map's settings travel in the link, and bad ones show in the page's notice", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await setAxes(page, { key: "foils.1.phase", start: 0, stop: 300, count: 11 }, { key: "foils.1.y", start: -1, stop: 1.5, count: 5 });
    await page.selectOption('[name="map.quantity"]', "pair_efficiency");
    await page.click("#share-copy");
    await page.waitForFunction(() => document.getElementById("share-link").value.length > 0);
    const link = await page.inputValue("#share-link");
    assert.match(link, /#v1;.*&map=foils\.1\.phase:0:300:11,foils\.1\.y:-1:1\.5:5,pair_efficiency$/);
    await page.goto("about:blank");
    await page.goto(link);
    await page.waitForSelector("body[data-ready]", { timeout: 60000 });
    assert.equal(await page.inputValue('[name="map.x.key"]'), "foils.1.phase");
    assert.equal(await page.inputValue('[name="map.y.stop"]'), "1.5");
    assert.equal(await page.inputValue('[name="map.quantity"]'), "pair_efficiency");
    assert.equal(await page.locator('[data-notice="link"]').count(), 0, "the map part made the case link show a notice");
    // A bad map part: the good fields apply, the bad ones are listed in the notice.
    await page.goto("about:blank");
    await page.goto(`${server.origin}/#v1;foils=2;1.x=0.3&map=foils.1.x:0.5:99:6,foils.1.phase:0:90:4,hind_thrust`);
    await page.waitForSelector("body[data-ready]", { timeout: 60000 });
    const notice = page.locator('[data-notice="map-link"]');
    await notice.waitFor();
    const lines = await notice.locator("li").allTextContents();
    assert.equal(lines.length, 1, lines.join(" | "));
    assert.match(lines[0], /map\.x\.stop: “99” is not allowed/);
    assert.equal(await page.inputValue('[name="map.x.stop"]'), "3", "the bad axis is back at its default");
    assert.equal(await page.inputValue('[name="map.y.count"]'), "4", "the good axis of the link is applied");
    assert.equal(await page.inputValue('[name="map.quantity"]'), "hind_thrust");
  });
});
