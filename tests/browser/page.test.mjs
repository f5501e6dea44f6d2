// End-to-end checks of the live view in real headless Chromium (Debian's), driven by
// playwright-core against the site that `cargo xtask site` builds.
import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { serve, openReady, readout, runToEnd, consoleErrors, withPage as withBrowser, simulateCli, ARTIFACTS, CLI, SITE } from "./harness.mjs";

let server;
const allRequests = [];
const origins = []; // every origin these tests serve the site from
before(async () => { server = await serve(); origins.push(server.origin); });
after(async () => { await server.close(); });

const withPage = (fn, opts) => withBrowser(fn, opts, (b) => allRequests.push(...b.log.requests));

/** A cheap fingerprint of the wake canvas pixels. */
async function canvasPrint(page) {
  return page.evaluate(() => {
    const c = document.getElementById("wake");
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let h = 0, lit = 0;
    for (let i = 0; i < d.length; i += 4) {
      h = (h * 31 + d[i] + 7 * d[i + 1] + 13 * d[i + 2]) >>> 0;
      // The background is #0f1822; count clearly brighter pixels (particles, foils, labels).
      if (d[i] + d[i + 1] + d[i + 2] > 200) lit += 1;
    }
    return { h, lit, width: c.width, height: c.height, cssWidth: c.getBoundingClientRect().width };
  });
}


/** Equal to 3 significant figures: the readout text against the command line's full value. */
function assertSig3(text, value, what) {
  if (value === null || value === undefined) {
    assert.equal(text, "—", `${what}: the command line gives no value, the page shows ${text}`);
    return;
  }
  assert.equal(Number(text), Number(value.toPrecision(3)), `${what}: page ${text}, command line ${value}`);
}

test("the page loads with no console errors, and the wake canvas draws and animates", async () => {
  await withPage(async ({ page, log }) => {
    await openReady(page, server.origin);
    await page.waitForTimeout(1500);
    const a = await canvasPrint(page);
    await page.waitForTimeout(1000);
    const b = await canvasPrint(page);
    assert.ok(a.lit > 200, `the wake canvas shows almost nothing (${a.lit} lit pixels)`);
    assert.notEqual(a.h, b.h, "the wake canvas did not change in one second");
    assert.equal(a.width, Math.round(a.cssWidth), "backing store should match CSS size at device pixel ratio 1");
    const t = Number(await page.locator('[data-stat="time"]').getAttribute("data-value"));
    assert.ok(t > 1, `simulated time after 2.5 s at real-time speed is only ${t} s`);
    assert.deepEqual(consoleErrors(log), [], "console errors");
    const stepped = Number(await page.locator('[data-stat="step"]').getAttribute("data-value"));
    assert.ok(stepped > 0);
  });
});

test("the canvas is sharp on a high-DPI screen (backing store at device pixels)", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await page.waitForTimeout(800);
    const p = await canvasPrint(page);
    assert.equal(p.width, Math.round(2 * p.cssWidth), `backing store ${p.width} px for ${p.cssWidth} CSS px at DPR 2`);
    await page.screenshot({ path: join(ARTIFACTS, "page-dpr2.png") });
  }, { deviceScaleFactor: 2, viewport: { width: 1280, height: 900 } });
});

test("moving the hind foil's phase changes its thrust readout", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await page.fill('[name="numerics.cycles"]', "3");
    await runToEnd(page);
    const before = await readout(page, "foils.1.thrust_coefficient");
    assert.notEqual(before.text, "—");
    // Move the slider beside the phase field (fill sets its value and fires input).
    await page.locator('#ctl-foils\\.1\\.phase').locator("xpath=preceding-sibling::input[@type='range']").fill("270");
    assert.equal(await page.inputValue('[name="foils.1.phase"]'), "270");
    await page.waitForSelector('body[data-run-state="running"], body[data-run-state="finished"]');
    await runToEnd(page);
    const afterMove = await readout(page, "foils.1.thrust_coefficient");
    assert.notEqual(afterMove.value, before.value, `phase 90 -> 270 left the hind foil's thrust coefficient at ${before.value}`);
    const fore = await readout(page, "foils.0.thrust_coefficient");
    assert.notEqual(fore.text, "—");
  });
});

test("the readouts equal `finwake simulate` on the same case after the same cycles (3 significant figures)", { skip: !CLI && "FINWAKE_CLI is not set" }, async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await runToEnd(page);
    const caseObj = JSON.parse(await page.inputValue("#case-json"));
    const defaultCase = JSON.parse(readFileSync(join(SITE, "cases", "tandem-two-chords.json"), "utf8"));
    assert.deepEqual(caseObj.foils, defaultCase.foils, "the page opens with the default tandem case");
    const cli = simulateCli(caseObj);
    let compared = 0;
    for (const [i, f] of cli.foils.entries()) {
      for (const key of ["thrust", "thrust_coefficient", "power", "efficiency", "max_angle_of_attack"]) {
        const r = await readout(page, `foils.${i}.${key}`);
        assertSig3(r.text, f[key], `foils.${i}.${key}`);
        compared += 1;
      }
    }
    for (const key of ["thrust", "thrust_coefficient", "power", "efficiency"]) {
      assertSig3((await readout(page, `total.${key}`)).text, cli.total[key], `total.${key}`);
      compared += 1;
    }
    // The background single-foil reference: the hind foil alone, phase 0 (foil 0's reference).
    const single = simulateCli({ ...caseObj, foils: [{ ...caseObj.foils[1], x: 0, y: 0, phase: 0 }] });
    const s = single.foils[0];
    await page.waitForFunction(() => document.querySelector('[data-quantity="single.thrust"]')?.dataset.value !== undefined);
    assertSig3((await readout(page, "single.thrust")).text, s.thrust, "single.thrust");
    assertSig3((await readout(page, "relative.thrust_ratio")).text, cli.foils[1].thrust / s.thrust, "relative.thrust_ratio");
    const eff = cli.foils[1].efficiency !== null && s.efficiency !== null ? cli.foils[1].efficiency / s.efficiency : null;
    assertSig3((await readout(page, "relative.efficiency_ratio")).text, eff, "relative.efficiency_ratio");
    const averaged = await page.textContent("#averaged");
    assert.match(averaged, new RegExp(`cycles ${cli.first_cycle_averaged + 1}–${cli.first_cycle_averaged + cli.cycles_averaged} of 8`));
    console.log(`# readouts: ${compared + 3} values equal the command line to 3 significant figures (${averaged.trim()})`);
  });
});

test("the single-foil reference keeps at most two cycles ahead of a paused live run, and finishes with it", async () => {
  await withPage(async ({ page }) => {
    // 20 cycles: unchecked, the single-foil reference (2,000 steps of one foil) would be done in
    // a few seconds here while the live run stays paused.
    await page.goto(`${server.origin}/#v1;foils=2;1.x=0.3;1.phase=90;cycles=20`);
    await page.waitForSelector("body[data-ready]", { timeout: 60000 });
    await page.click("#run-toggle");
    await page.waitForSelector('body[data-run-state="paused"]');
    await page.waitForTimeout(5000);
    const live = Number(await page.locator('[data-stat="cycle"]').getAttribute("data-value"));
    const ahead = Number(await page.getAttribute("body", "data-reference-cycles"));
    assert.ok(ahead >= 1, `the reference ran ${ahead} cycles`);
    assert.ok(ahead <= Math.floor(live) + 2, `the reference ran ${ahead} cycles while the live run was paused at cycle ${live}`);
    // Once the live run has finished, the reference runs to its end.
    await page.selectOption('select[name="run.speed"]', "max");
    await page.click("#run-toggle");
    await page.waitForSelector('body[data-run-state="finished"]', { timeout: 120000 });
    await page.waitForFunction(() => document.body.dataset.referenceCycles === "20", null, { timeout: 60000 });
    console.log(`# reference: ${ahead} cycles ahead of a live run paused at cycle ${live.toFixed(2)}; 20 of 20 once it finished`);
  });
});

test("moving the hind foil's spacing or phase keeps the single-foil reference; changing its section starts a new one", async () => {
  await withPage(async ({ page }) => {
    await page.goto(`${server.origin}/#v1;foils=2;1.x=0.3;1.phase=90;cycles=4`);
    await page.waitForSelector("body[data-ready]", { timeout: 60000 });
    await page.selectOption('select[name="run.speed"]', "max");
    await page.waitForSelector('body[data-run-state="finished"]', { timeout: 120000 });
    await page.waitForFunction(() => document.body.dataset.referenceCycles === "4", null, { timeout: 60000 });
    const first = await page.getAttribute("body", "data-reference-run");
    const caseNow = () => page.evaluate(() => JSON.parse(document.querySelector("#case-json").value));
    // The single-foil case leaves out the hind foil's position and phase. (The `foils.1.x`
    // control is the gap from the fore foil's trailing edge, in its chords: 2.5 puts the hind
    // foil's leading edge at 0.1 + 0.25 = 0.35 m.)
    await page.fill('[name="foils.1.x"]', "2.5");
    await page.fill('[name="foils.1.phase"]', "120");
    await page.waitForFunction(() => { const c = JSON.parse(document.querySelector("#case-json").value); return Math.abs(c.foils[1].x - 0.35) < 1e-9 && c.foils[1].phase === 120; });
    assert.equal(await page.getAttribute("body", "data-reference-run"), first, "the reference run was started again");
    await page.waitForSelector('body[data-run-state="finished"]', { timeout: 120000 });
    // The kept summaries give the ratios of the new case, as the command line does.
    const caseObj = await caseNow();
    const cli = simulateCli(caseObj);
    const single = simulateCli({ ...caseObj, foils: [{ ...caseObj.foils[1], x: 0, y: 0, phase: 0 }] });
    await page.waitForFunction(() => document.querySelector('[data-quantity="relative.thrust_ratio"]')?.dataset.value !== undefined);
    assertSig3((await readout(page, "single.thrust")).text, single.foils[0].thrust, "single.thrust");
    assertSig3((await readout(page, "relative.thrust_ratio")).text, cli.foils[1].thrust / single.foils[0].thrust, "relative.thrust_ratio");
    // A new section is a new single-foil case.
    await page.fill('[name="foils.1.chord"]', "0.12");
    await page.waitForFunction(() => JSON.parse(document.querySelector("#case-json").value).foils[1].chord === 0.12);
    assert.equal(Number(await page.getAttribute("body", "data-reference-run")), Number(first) + 1, "a new single-foil case should start a new reference run");
  });
});

test("every control is reachable and changeable from the keyboard", async () => {
  await withPage(async ({ page, log }) => {
    await openReady(page, server.origin);
    await page.click("#run-toggle"); // pause, so the checks below see settled values
    const names = await page.$$eval("#controls [name]", (els) => els.map((e) => e.name));
    // Flow 4, fore foil 8, hind foil 11 (with phase, gap, offset), numerics 8.
    assert.equal(names.length, 31, `named controls: ${names.join(", ")}`);
    for (const must of ["flow.speed", "flow.water", "flow.temperature", "frequency", "foils.0.chord", "foils.1.phase", "foils.1.x", "foils.1.y"]) {
      assert.ok(names.includes(must), `no control named ${must}`);
    }
    // Tab from the top of the page through everything once.
    await page.locator("body").focus();
    const reached = new Set();
    const buttons = new Set();
    for (let i = 0; i < 200; i++) {
      await page.keyboard.press("Tab");
      const info = await page.evaluate(() => ({ name: document.activeElement?.getAttribute("name"), id: document.activeElement?.id }));
      if (info.name) reached.add(info.name);
      if (info.id) buttons.add(info.id);
    }
    for (const n of names) assert.ok(reached.has(n), `Tab never reaches ${n}`);
    for (const id of ["run-toggle", "run-step", "run-reset", "run-speed", "preset", "foil-count", "wake", "view-fit"]) {
      assert.ok(buttons.has(id), `Tab never reaches #${id}`);
    }
    // Change each control with keys alone, and see the change reach the case the solver runs.
    for (const n of names) {
      const loc = page.locator(`#controls [name="${n}"]`);
      await loc.focus();
      const tag = await loc.evaluate((e) => e.tagName);
      const before = await loc.inputValue();
      const caseBefore = await page.inputValue("#case-json");
      await page.keyboard.press(tag === "SELECT" ? "ArrowDown" : "ArrowUp");
      let after = await loc.inputValue();
      if (after === before) { await page.keyboard.press(tag === "SELECT" ? "ArrowUp" : "ArrowDown"); after = await loc.inputValue(); }
      assert.notEqual(after, before, `${n}: the arrow keys do not change it`);
      await page.waitForFunction((old) => document.getElementById("case-json").value !== old, caseBefore, { timeout: 10000 })
        .catch(() => assert.fail(`${n}: changed to ${after} by keyboard but the run did not restart with it`));
    }
    // The wake view pans and zooms from the keyboard too.
    await page.locator("#wake").focus();
    const a = await canvasPrint(page);
    await page.keyboard.press("+");
    await page.keyboard.press("ArrowLeft");
    await page.waitForTimeout(100);
    const b = await canvasPrint(page);
    assert.notEqual(a.h, b.h, "+ and ArrowLeft on the wake view changed nothing");
    assert.deepEqual(consoleErrors(log), []);
  });
});

test("a bad value gets a clear message and is kept as typed", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await page.fill('[name="foils.0.thickness"]', "0.9");
    const err = page.locator('[id="err-foils.0.thickness"]');
    await page.waitForFunction(() => document.getElementById("err-foils.0.thickness").textContent.length > 0);
    const text = await err.textContent();
    assert.match(text, /foils\.0\.thickness/);
    assert.match(text, /0\.9/);
    assert.match(text, /0\.01 to 0\.30/);
    assert.equal(await page.inputValue('[name="foils.0.thickness"]'), "0.9", "the typed value was changed");
    await page.fill('[name="flow.speed"]', "fast");
    assert.match(await page.textContent('[id="err-flow.speed"]'), /flow\.speed = "fast": enter a number/);
    assert.equal(await page.inputValue('[name="flow.speed"]'), "fast");
  });
});

test("a wasm or worker failure shows a readable message, not a blank canvas", async () => {
  for (const [blocked, expect] of [["finwake_bg.wasm", /could not be loaded|did not start/], ["worker.js", /worker/]]) {
    const s = await serve({ block: [blocked] });
    origins.push(s.origin);
    try {
      await withPage(async ({ page }) => {
        await page.goto(`${s.origin}/`);
        await page.waitForSelector("#fault:not([hidden])", { timeout: 30000 });
        const text = await page.textContent("#fault");
        assert.match(text, expect, `with ${blocked} missing the page says: ${text}`);
        assert.ok(await page.isVisible("#wake-message"), "the wake view shows no message");
        assert.equal(await page.getAttribute("body", "data-ready"), null);
      });
    } finally {
      await s.close();
    }
  }
});

test("it keeps working offline once loaded, and no request leaves the page's origin", async () => {
  await withPage(async ({ page, ctx, log }) => {
    await openReady(page, server.origin);
    await page.waitForFunction(() => navigator.serviceWorker?.controller !== null || false, null, { timeout: 15000 }).catch(() => {});
    await page.evaluate(async () => { await navigator.serviceWorker.ready; });
    await ctx.setOffline(true);
    await page.fill('[name="numerics.cycles"]', "2");
    await runToEnd(page);
    assert.notEqual((await readout(page, "foils.1.thrust")).text, "—");
    await page.selectOption("#preset", { label: "single efficient" }); // a one-foil example
    await page.waitForFunction(() => document.querySelectorAll('[name^="foils.1."]').length === 0);
    // Reload with the network still off: the service worker serves the cached build.
    await page.reload();
    await page.waitForSelector("body[data-ready]", { timeout: 30000 });
    await ctx.setOffline(false);
    assert.deepEqual(consoleErrors(log).filter((e) => !/ERR_INTERNET_DISCONNECTED/.test(e)), []);
  });
  const foreign = allRequests.filter((u) => !origins.some((o) => u.startsWith(`${o}/`)) && !u.startsWith("data:") && !u.startsWith("blob:"));
  assert.deepEqual(foreign, [], "requests that left the page's origin");
  assert.ok(allRequests.length > 10);
});

test("screenshot for review, and the measured speed of the default case", async () => {
  await withPage(async ({ page }) => {
    await openReady(page, server.origin);
    await page.waitForTimeout(6000); // real-time speed: about six cycles of the default case
    const realTime = await stats(page);
    await page.screenshot({ path: join(ARTIFACTS, "page.png"), fullPage: true });
    await page.locator(".wake-box").screenshot({ path: join(ARTIFACTS, "wake.png") });
    // As fast as it goes: the default case's 8 cycles end within a second at full speed, before
    // the first reading, so the same case runs for 100 cycles through a link.
    await page.goto(`${server.origin}/#v1;foils=2;1.x=0.3;1.phase=90;cycles=100`);
    await page.waitForSelector("body[data-ready]", { timeout: 60000 });
    await page.selectOption('select[name="run.speed"]', "max");
    await page.waitForTimeout(2500);
    const flat = await stats(page);
    const report = { realTime, asFastAsItGoes: flat, wasmBytes: wasmSize() };
    writeFileSync(join(ARTIFACTS, "measurements.json"), JSON.stringify(report, null, 2));
    console.log(`# default case, headless Chromium: at 1x real time ${realTime.frameRate.toFixed(0)} frames/s drawn ` +
      `(${realTime.callbacks.toFixed(0)} animation callbacks/s), solver ${realTime.stepsPerSecond.toFixed(0)} steps/s of work; ` +
      `as fast as it goes (run for 100 cycles) ${flat.stepsPerSecond.toFixed(0)} solver steps/s at ${flat.frameRate.toFixed(0)} frames/s; ` +
      `wasm ${report.wasmBytes} bytes; screenshots in ${ARTIFACTS}`);
    assert.ok(flat.stepsPerSecond > 0 && realTime.frameRate > 0, "no measurements were taken");
  });
});

async function stats(page) {
  return page.evaluate(() => {
    const q = (k) => document.querySelector(`[data-stat="${k}"]`);
    return {
      stepsPerSecond: Number(q("steps_per_second").dataset.value),
      frameRate: Number(q("frame_rate").dataset.value),
      callbacks: Number(q("frame_rate").dataset.callbacks),
      step: Number(q("step").dataset.value),
      particles: Number(q("particles").dataset.value),
    };
  });
}

function wasmSize() {
  return readFileSync(join(SITE, "pkg", "finwake_bg.wasm")).length;
}
