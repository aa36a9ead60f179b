// Hover finds rows along the lines as the rasteriser draws them: straight, curved and bundled.
import { test } from "node:test";
import assert from "node:assert/strict";
import { CODE_MAX, decodeTable } from "../data";
import { nearestRow, type LineGeometry } from "../hover";
import { computeLayout } from "../layout";
import { BUNDLE_SLOTS } from "../linespass";
import { rowPlacement, scalesFor } from "../overlay";
import { rowSpread } from "../data";

// axis a: two categories (rows 0, 1 in band 0; row 2 in band 1); axis b: numbers over [0, 1]
const table = decodeTable({
  n: 3,
  columns: [
    { name: "a", kind: "category", labels: ["p", "q"], counts: [2, 1], missing: 0, codes: new DataView(new Uint16Array([0, 0, 1]).buffer) },
    { name: "b", kind: "number", lo: 0, hi: 1, missing: 0, codes: new DataView(new Uint16Array([0, CODE_MAX, CODE_MAX / 2]).buffer) },
  ],
});
const layout = computeLayout(600, 400, ["a", "b"], true);
const place = rowPlacement(scalesFor(table, layout), layout);
const spread = rowSpread(3);
const [xa, xb] = layout.slots.map((s) => s.x);
const y = (axis: number, row: number) => {
  const c = table.axes[axis].codes[row];
  return place[axis].base[c] + spread[row] * place[axis].height[c];
};
const geometry = (curves: boolean, bundle: LineGeometry["bundle"] = null): LineGeometry => ({ table, layout, place, spread, curves, bundle });

/** reference: the cubic Bézier with control points (0,0), (1/2,0), (1/2,1), (1,1) in Bernstein form */
function bezier(t: number): [number, number] {
  const b = [(1 - t) ** 3, 3 * t * (1 - t) ** 2, 3 * t * t * (1 - t), t ** 3];
  return [b[1] * 0.5 + b[2] * 0.5 + b[3], b[2] + b[3]];
}
function bezierYAtX(x: number): number {
  let lo = 0;
  let hi = 1;
  for (let k = 0; k < 60; k++) {
    const t = (lo + hi) / 2;
    if (bezier(t)[0] < x) lo = t;
    else hi = t;
  }
  return bezier((lo + hi) / 2)[1];
}

test("straight lines: the row under the pointer between two axes", () => {
  const x = xa + 0.3 * (xb - xa);
  for (const row of [0, 1, 2]) assert.equal(nearestRow(geometry(false), x, y(0, row) + 0.3 * (y(1, row) - y(0, row))), row);
  assert.equal(nearestRow(geometry(false), xa - 30, y(0, 0)), -1, "left of the first axis");
});

test("curved lines are found on the curve, not on the chord", () => {
  const f = 0.2;
  const x = xa + f * (xb - xa);
  const row = 1; // from the bottom band up to the top of b: a long climb
  const onCurve = y(0, row) + bezierYAtX(f) * (y(1, row) - y(0, row));
  const onChord = y(0, row) + f * (y(1, row) - y(0, row));
  assert.ok(Math.abs(onCurve - onChord) > 20, "the test needs curve and chord apart");
  assert.equal(nearestRow(geometry(true), x, onCurve), row);
  assert.notEqual(nearestRow(geometry(true), x, onChord), row);
});

test("bundled lines pass through their category's centre between the axes", () => {
  const centres = new Float64Array(BUNDLE_SLOTS);
  centres[0] = layout.top + 20; // band p's rows are pulled toward the top
  centres[1] = layout.bottom - 20;
  const bundle = { axis: 0, strength: 0.8, centres };
  const xm = (xa + xb) / 2;
  const row = 0;
  const mid = 0.2 * ((y(0, row) + y(1, row)) / 2) + 0.8 * centres[0];
  assert.equal(nearestRow(geometry(false, bundle), xm, mid), row);
  // halfway to the mid point the line follows the curve from the axis to the bundled mid point
  const x = xa + 0.25 * (xb - xa);
  const onCurve = y(0, row) + bezierYAtX(0.5) * (mid - y(0, row));
  assert.equal(nearestRow(geometry(false, bundle), x, onCurve), row);
  // without bundling nothing runs there
  assert.equal(nearestRow(geometry(false), xm, mid), -1);
});
