// The page's step pacing (www/loop.js, no browser needed): the time owed at a set speed is
// counted on every animation frame, also while a batch is in flight; a run too far behind drops
// the debt instead of piling it up; the fastest speed's batches last about one display frame.
import { test } from "node:test";
import assert from "node:assert/strict";
import { StepPacer } from "../../www/loop.js";

const FRAME = 1 / 60; // s, a 60 Hz display

test("time owed while a batch is out is asked for when it comes back", () => {
  const p = new StepPacer();
  // Three frames pass at 1 x real time (one batch in flight, so nothing is asked for).
  for (let i = 0; i < 3; i++) p.frame(FRAME, 1);
  // 0.05 s owed at a time step of 0.01 s: five steps (under the cap of 40 ms / 5 ms = 8 steps).
  assert.deepEqual(p.next(1, 0.01), { steps: 5, budgetMs: 45 });
  // They are no longer owed.
  assert.equal(p.next(1, 0.01).steps, 0);
});

test("nothing is owed while paused, finished or at the fastest speed", () => {
  const p = new StepPacer();
  for (let i = 0; i < 10; i++) p.frame(FRAME, 0);
  assert.equal(p.next(1, 0.01).steps, 0);
});

test("a run too far behind takes one capped batch and drops the rest of the debt", () => {
  const p = new StepPacer();
  // Steps of 20 ms: the estimate goes from 5 to 0.8 * 5 + 0.2 * 20 = 8 ms, so the cap is 5 steps.
  p.observe(1, 20);
  p.frame(0.1, 1); // 10 steps owed
  assert.equal(p.next(1, 0.01).steps, 5);
  assert.equal(p.next(1, 0.01).steps, 0, "the debt beyond the cap was kept");
});

test("a batch at the fastest speed lasts about one display frame less 3 ms, at least 4 ms", () => {
  const p = new StepPacer();
  for (let i = 0; i < 200; i++) p.frame(1 / 120, 0);
  const b = p.next("max", 0.01);
  assert.equal(b.steps, 1e6);
  // 8.33 ms - 3 ms, to within the running average's memory of the 60 Hz start (0.9^200).
  assert.ok(Math.abs(b.budgetMs - (1000 / 120 - 3)) < 1e-6, `budget ${b.budgetMs} ms`);
  for (let i = 0; i < 200; i++) p.frame(0.001, 0);
  assert.equal(p.fastest().budgetMs, 4);
});
