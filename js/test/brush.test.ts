// The brush gesture reducers: the selection each gesture makes, without a browser.
import { test } from "node:test";
import assert from "node:assert/strict";
import { clickedSel, draggedSel, movedOrder, withoutSpan, type Hit } from "../brush";
import { CODE_MISSING, decodeTable } from "../data";
import { computeLayout } from "../layout";
import { AxisScale } from "../scales";
import { cloneSel, record, tidy, type AxisSel, type Sel } from "../selection";

const sel = (spans: [number, number][] = [], bands: number[] = [], lane = false): AxisSel => ({ spans, bands, lane });
const selOf = (o: Record<string, AxisSel>): Sel => Object.assign(record<AxisSel>(), o);

const table = decodeTable({
  n: 2,
  columns: [
    { name: "v", kind: "number", lo: 0, hi: 100, missing: 0, codes: new DataView(new Uint16Array([0, 1]).buffer) },
    { name: "c", kind: "category", labels: ["a", "b", "c", "d"], counts: [1, 1, 1, 1], missing: 0, codes: new DataView(new Uint16Array([0, CODE_MISSING]).buffer) },
  ],
});
// pixel y = 100 - v on [0, 100] (top 0 = largest value): reference for every value below
const num = new AxisScale(table.byName.get("v")!, 0, 100);
const cat = new AxisScale(table.byName.get("c")!, 0, 100);
const near = (a: number, b: number) => Math.abs(a - b) < 1e-9;
const hit = (kind: string, axis: string, extra: object = {}) => ({ kind, axis, index: 0, ...extra }) as Hit;

test("a drag on empty axis space makes a new range between the two pointer values", () => {
  const start = selOf({ v: sel([[5, 10]]) });
  const out = draggedSel(start, hit("create", "v"), num, 80, 30);
  assert.equal(out.v.spans.length, 2);
  const [lo, hi] = out.v.spans[1];
  assert.ok(near(lo, 20) && near(hi, 70), `${lo}..${hi}`);
  assert.deepEqual(start.v.spans, [[5, 10]], "the start selection is not changed");
  // dragging upward or downward gives the same range
  assert.deepEqual(draggedSel(start, hit("create", "v"), num, 30, 80).v.spans[1], out.v.spans[1]);
});

test("moving a range keeps its width and stops at the ends of the domain", () => {
  const start = selOf({ v: sel([[20, 40]]) });
  const moved = draggedSel(start, hit("move", "v", { span: 0 }), num, 70, 50).v.spans[0];
  assert.ok(near(moved[0], 40) && near(moved[1], 60), `${moved}`);
  const stopped = draggedSel(start, hit("move", "v", { span: 0 }), num, 70, -500).v.spans[0];
  assert.ok(near(stopped[0], 80) && near(stopped[1], 100), `${stopped}`);
});

test("dragging an end past the other one swaps them", () => {
  const start = selOf({ v: sel([[20, 40]]) });
  const hi = draggedSel(start, hit("hi", "v", { span: 0 }), num, 60, 90).v.spans[0];
  assert.ok(near(hi[0], 10) && near(hi[1], 20), `${hi}`);
  const lo = draggedSel(start, hit("lo", "v", { span: 0 }), num, 80, 30).v.spans[0];
  assert.ok(near(lo[0], 40) && near(lo[1], 70), `${lo}`);
});

test("a drag across category bands picks every band swept over", () => {
  const y = (b: number) => (cat.bands[b].y0 + cat.bands[b].y1) / 2;
  const out = draggedSel(selOf({}), hit("band", "c", { band: 0 }), cat, y(0), y(2));
  assert.deepEqual([...out.c.bands].sort(), [0, 1, 2]);
  // past the end of the axis: up to the last band that way
  const past = draggedSel(selOf({}), hit("band", "c", { band: 1 }), cat, y(1), -50);
  assert.deepEqual([...past.c.bands].sort(), [1, 2, 3]);
});

test("clicks toggle a band or the lane, and clear an axis on empty space", () => {
  const start = selOf({ c: sel([], [1]), v: sel([[1, 2]]) });
  assert.deepEqual(clickedSel(start, hit("band", "c", { band: 2 })).c.bands, [1, 2]);
  assert.equal(clickedSel(start, hit("band", "c", { band: 1 })).c, undefined, "the last band unpicked drops the axis");
  assert.equal(clickedSel(start, hit("lane", "v")).v.lane, true);
  const cleared = clickedSel(start, hit("create", "v"));
  assert.deepEqual(Object.keys(cleared), ["c"]);
  assert.deepEqual(start.v.spans, [[1, 2]]);
});

test("a double-click removes one range; the axis goes when nothing is left", () => {
  const start = selOf({ v: sel([[1, 2], [5, 6]]) });
  assert.deepEqual(withoutSpan(start, "v", 0).v.spans, [[5, 6]]);
  assert.deepEqual(Object.keys(withoutSpan(withoutSpan(start, "v", 0), "v", 0)), []);
});

test("axis names that are keys of every JS object are plain keys of a selection", () => {
  for (const name of ["constructor", "toString", "valueOf", "hasOwnProperty", "__proto__"]) {
    const lane = clickedSel(selOf({}), hit("lane", name));
    assert.deepEqual(Object.keys(lane), [name]);
    assert.equal(lane[name].lane, true);
    const made = draggedSel(selOf({}), hit("create", name), num, 80, 30);
    assert.deepEqual(Object.keys(tidy(cloneSel(made))), [name]);
    assert.equal(made[name].spans.length, 1);
    assert.equal(Object.getPrototypeOf(made), null);
  }
  assert.equal(({} as Record<string, unknown>).lane, undefined, "no prototype was touched");
});

test("a header dragged sideways moves its axis to the nearest slot", () => {
  const layout = computeLayout(500, 300, ["a", "b", "c", "d"]);
  assert.deepEqual(movedOrder(layout, 0, layout.slots[2].x + 3), ["b", "c", "a", "d"]);
  assert.deepEqual(movedOrder(layout, 3, 0), ["d", "a", "b", "c"]);
});
