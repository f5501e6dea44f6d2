// A link whose case the solver rejects (here the hind foil overlaps the fore foil) must not leave
// a blank page: the wake view says why, the control is marked, and fixing the value starts the run.
import { test } from "node:test";
import assert from "node:assert/strict";
import { serve, browser, consoleErrors } from "./harness.mjs";

test("a link with overlapping foils says why and starts once fixed", async () => {
  const server = await serve();
  const b = await browser();
  try {
    // Hind foil's leading edge 2 cm behind the fore leading edge: the foils overlap.
    await b.page.goto(`${server.origin}/#v1;foils=2;1.x=0.02;1.phase=90`);
    await b.page.waitForFunction(() => !document.getElementById("wake-message").hidden, null, { timeout: 60000 });
    const text = await b.page.textContent("#wake-message");
    assert.match(text, /cannot run/);
    assert.match(text, /foils\.1/);
    assert.equal(await b.page.getAttribute("body", "data-ready"), null);
    // The gap control (chords of the fore foil) back to two chords.
    await b.page.fill('[name="foils.1.x"]', "2");
    await b.page.press('[name="foils.1.x"]', "Enter");
    await b.page.waitForSelector("body[data-ready]", { timeout: 60000 });
    assert.ok(await b.page.isHidden("#wake-message"));
    assert.deepEqual(consoleErrors(b.log), []);
  } finally {
    await b.close();
    await server.close();
  }
});
