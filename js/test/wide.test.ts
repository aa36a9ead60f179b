// Wide tables: chart width at the minimum axis spacing, label thinning, index labels of rows.
import { test } from "node:test";
import assert from "node:assert/strict";
import { decodeTable, indexLabel } from "../data";
import { chartWidth, MIN_AXIS_GAP, thinLabels } from "../wide";

test("the chart keeps the page's width while the axes fit, and grows by the minimum gap beyond", () => {
  assert.equal(chartWidth(850, 5, 128), 850);
  assert.equal(chartWidth(850, 1, 128), 850);
  // 31 axes: 30 gaps of 64 px plus the margins
  assert.equal(chartWidth(850, 31, 128), 128 + 30 * MIN_AXIS_GAP);
  assert.ok(chartWidth(850, 65, 128) >= 64 * MIN_AXIS_GAP);
});

test("thinned labels keep their distance; picked ones always stay, then the largest bands", () => {
  const centres = Array.from({ length: 40 }, (_, i) => 300 - i * 6); // 6 px apart: too crowded
  const counts = centres.map((_, i) => 100 - i);
  const picked = new Set([7, 8]);
  const drawn = thinLabels(centres, 12, (i) => picked.has(i), (i) => counts[i]);
  assert.ok(drawn.includes(7) && drawn.includes(8), "picked labels are drawn even when they crowd each other");
  const others = drawn.filter((i) => !picked.has(i));
  for (const i of others) for (const j of drawn) if (i !== j) assert.ok(Math.abs(centres[i] - centres[j]) >= 12, `${i} vs ${j}`);
  assert.ok(others.length >= 15, "as many as fit are drawn"); // 40 × 6 px = 234 px / 12 px ≈ 19 slots
  assert.ok(others.includes(0), "the largest band is labelled");
  assert.deepEqual(drawn, [...drawn].sort((a, b) => a - b));
  // room for all: nothing is dropped
  assert.deepEqual(thinLabels([10, 30, 50], 12), [0, 1, 2]);
});

test("a row's index label: range index, text labels, or none", () => {
  const col = { name: "x", kind: "number" as const, lo: 0, hi: 1, missing: 0, codes: new DataView(new Uint16Array(3).buffer) };
  assert.equal(indexLabel(decodeTable({ n: 3, index: { start: 10, step: 5 }, columns: [col] }), 2), "20");
  assert.equal(indexLabel(decodeTable({ n: 3, index: { labels: ["a", "b", "c"] }, columns: [col] }), 1), "b");
  assert.equal(indexLabel(decodeTable({ n: 3, columns: [col] }), 1), null);
});
