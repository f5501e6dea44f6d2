// The rig-check panel in the page: it runs the check of the current case in its own worker and
// shows each check with its status, threshold and source, the loads with the screening caution,
// and the same water properties as `finwake check --json` on the same case.
import { test } from "node:test";
import assert from "node:assert/strict";
import { execFileSync } from "node:child_process";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { serve, browser, openReady, consoleErrors, ARTIFACTS, CLI } from "./harness.mjs";

test("the rig check runs from the page and matches the command line", async () => {
  const server = await serve();
  const b = await browser();
  try {
    await openReady(b.page, server.origin);
    const panel = b.page.locator("#rig-check");
    await panel.locator("button.rig-run").click();
    await b.page.waitForSelector('#rig-check[data-state="done"]', { timeout: 120000 });
    const text = await panel.textContent();
    assert.match(text, /screening estimates, not design loads/);
    assert.match(text, /usual practice|caution|outside what the model can predict/);
    const density = Number(await panel.locator('[data-quantity="water.density"]').first().getAttribute("data-value"));
    assert.ok(density > 990 && density < 1030, `density ${density}`);
    await panel.screenshot({ path: join(ARTIFACTS, "rig-check.png") });
    if (CLI) {
      // The same case through `finwake check --json`.
      const caseJson = await b.page.locator("#case-json").inputValue();
      const file = join(tmpdir(), `finwake-rig-${process.pid}.json`);
      writeFileSync(file, caseJson);
      const report = JSON.parse(execFileSync(CLI, ["check", file, "--json"], { encoding: "utf8" }));
      assert.equal(density, report.water.density);
    }
    assert.deepEqual(consoleErrors(b.log), []);
  } finally {
    await b.close();
    await server.close();
  }
});
