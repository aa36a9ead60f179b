// Selection tools on the page: history, invert, axis numbers, colour by kept groups, keyboard reducers,
// the "no values" label. References: plain comparisons on the values each test starts from.
import { test } from "node:test";
import assert from "node:assert/strict";
import { axisStats, statsText } from "../axisstats";
import { CODE_MAX, CODE_MISSING, decodeTable, type RawTable } from "../data";
import { savedGroups, savedColouring } from "../groups";
import { SelectionHistory } from "../history";
import { gaps, invertedSel, nextDown, nextUp } from "../invert";
import { keyCommand, keyedSel } from "../keyboard";
import { holdsNoValue } from "../overlay";
import { AxisScale } from "../scales";
import { previewMask, record, selKey, toTrait, fromTrait, type AxisSel, type Sel } from "../selection";
import { selectionSummary } from "../tools";

const sel = (spans: [number, number][] = [], bands: number[] = [], lane = false): AxisSel => ({ spans, bands, lane });
const selOf = (o: Record<string, AxisSel>): Sel => Object.assign(record<AxisSel>(), o);
const dv = (a: number[]) => new DataView(new Uint16Array(a).buffer);

/** A table with a number axis x (exact on its codes: values are multiples of the code step), an
 * integer axis k (0/1), a category axis c, with some missing values. */
function fixture() {
  const n = 400;
  const xs: number[] = [];
  const ks: number[] = [];
  const cs: number[] = [];
  for (let i = 0; i < n; i++) {
    xs.push(i % 37 === 0 ? NaN : ((i * 7919) % 1000) / 10); // 0..99.9
    ks.push(i % 3 === 0 ? 1 : 0);
    cs.push(i % 11 === 0 ? NaN : i % 4);
  }
  const code = (v: number, lo: number, hi: number) => (Number.isNaN(v) ? CODE_MISSING : Math.round(((v - lo) / (hi - lo)) * CODE_MAX));
  const raw: RawTable = {
    n,
    columns: [
      { name: "x", kind: "number", lo: 0, hi: 99.9, missing: xs.filter(Number.isNaN).length, codes: dv(xs.map((v) => code(v, 0, 99.9))) },
      { name: "k", kind: "integer", lo: 0, hi: 1, values: [0, 1], missing: 0, codes: dv(ks.map((v) => code(v, 0, 1))) },
      { name: "c", kind: "category", labels: ["a", "b", "c", "d"], counts: [0, 1, 2, 3].map((b) => cs.filter((v) => v === b).length), missing: cs.filter(Number.isNaN).length, codes: dv(cs.map((v) => (Number.isNaN(v) ? CODE_MISSING : v))) },
    ],
  };
  return { table: decodeTable(raw), xs, ks, cs, n };
}

test("history: undo and redo walk the recorded selections; a new edit drops the undone ones", () => {
  const a = selOf({});
  const b = selOf({ x: sel([[1, 2]]) });
  const c = selOf({ x: sel([[1, 5]]) });
  const h = new SelectionHistory(a);
  assert.equal(h.canUndo, false);
  assert.ok(h.record(b));
  assert.equal(h.record(selOf({ x: sel([[1, 2]]) })), false, "the same selection again is not a step");
  h.record(c);
  assert.equal(selKey(h.undo()!), selKey(b));
  assert.equal(selKey(h.undo()!), selKey(a));
  assert.equal(h.undo(), null);
  assert.equal(selKey(h.redo()!), selKey(b));
  h.record(selOf({ k: sel([[0, 0]]) }));
  assert.equal(h.canRedo, false, "a new edit after undo forgets the redo steps");
  const small = new SelectionHistory(a, 2);
  for (let i = 1; i <= 5; i++) small.record(selOf({ x: sel([[0, i]]) }));
  assert.ok(small.undo() && small.undo() && small.undo() === null, "at most `limit` steps are kept");
});

test("nextUp / nextDown are the neighbouring float64 values", () => {
  assert.equal(nextUp(1), 1 + Number.EPSILON);
  assert.equal(nextDown(1), 1 - Number.EPSILON / 2);
  assert.equal(nextUp(0), Number.MIN_VALUE);
  assert.equal(nextDown(0), -Number.MIN_VALUE);
  assert.equal(nextUp(-1), -1 + Number.EPSILON / 2);
  for (const v of [3.1, -2.5e-300, 1e300, 7]) assert.ok(nextUp(v) > v && nextDown(v) < v && (nextUp(v) + v) / 2 !== (nextUp(v) === v ? 0 : NaN));
});

test("gaps: the complement of merged ranges, ends excluded", () => {
  assert.deepEqual(gaps([[2, 4], [6, 8]], 1), [[-Infinity, 1], [5, 5], [9, Infinity]]);
  assert.deepEqual(gaps([[-Infinity, 4]], 1), [[5, Infinity]]);
  assert.deepEqual(gaps([[-Infinity, Infinity]], 1), []);
  assert.deepEqual(gaps([[2, 4], [5, 8]], 1), [[-Infinity, 1], [9, Infinity]], "adjacent whole ranges leave no gap");
  const [[, below], [above]] = gaps([[2.5, 3.5]]);
  assert.equal(below, nextDown(2.5));
  assert.equal(above, nextUp(3.5));
});

test("invert picks exactly the rows the axis's selection left out (missing lane included)", () => {
  const { table, xs, cs, n } = fixture();
  const start = selOf({ x: sel([[10, 30], [50.5, 70]]), c: sel([], [1, 3], true) });
  // reference: the plain predicate per axis, negated
  const inX = (v: number) => (v >= 10 && v <= 30) || (v >= 50.5 && v <= 70);
  const inC = (v: number) => (Number.isNaN(v) ? true : v === 1 || v === 3);
  const invX = invertedSel(table, start, "x")!;
  const mask = previewMask(table, invX).mask;
  for (let i = 0; i < n; i++) assert.equal(mask[i], !(Number.isNaN(xs[i]) ? false : inX(xs[i])) && inC(cs[i]) ? 1 : 0, `row ${i}`);
  assert.equal(invX.x.lane, true, "x has missing values: the lane is picked after the invert");
  const invC = invertedSel(table, start, "c")!;
  assert.deepEqual(invC.c, sel([], [0, 2], false));
  // inverting twice gives the selection back, on every row
  const back = invertedSel(table, invX, "x")!;
  assert.deepEqual(Array.from(previewMask(table, back).mask), Array.from(previewMask(table, start).mask));
  assert.equal(invertedSel(table, start, "k"), null, "an axis without a selection has nothing to invert");
});

test("invert of a whole-number range sends whole ends; an empty complement is refused", () => {
  const { table } = fixture();
  const inv = invertedSel(table, selOf({ k: sel([[0.2, 1]]) }), "k")!;
  assert.deepEqual(toTrait(table, inv, {}).k, [[null, 0], [2, null]]); // 0.2..1 holds only 1
  assert.equal(invertedSel(table, selOf({ c: sel([], [0, 1, 2, 3], true) }), "c"), null, "the complement of everything is refused");
  assert.equal(invertedSel(table, selOf({ k: sel([[-Infinity, Infinity]]) }), "k"), null);
});

test("axis numbers: counts, median and most common label against a direct computation", () => {
  const { table, xs, cs, n } = fixture();
  const mask = new Uint8Array(n).map((_, i) => (i % 5 < 2 ? 1 : 0));
  const st = axisStats(table.byName.get("x")!, mask);
  const median = (v: number[]) => {
    // reference: the textbook median (mean of the two middle values of the sorted list)
    const s = [...v].sort((a, b) => a - b);
    return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
  };
  const present = xs.filter((v) => !Number.isNaN(v));
  const picked = xs.filter((v, i) => mask[i] && !Number.isNaN(v));
  const step = 99.9 / CODE_MAX;
  assert.ok(Math.abs(st.all.median - median(present)) <= step, `${st.all.median} vs ${median(present)}`);
  assert.ok(Math.abs(st.selected.median - median(picked)) <= step);
  assert.equal(st.all.rows, n);
  assert.equal(st.selected.rows, mask.reduce((a, b) => a + b, 0));
  assert.equal(st.all.missing, xs.filter(Number.isNaN).length);
  assert.equal(st.selected.missing, xs.filter((v, i) => mask[i] && Number.isNaN(v)).length);
  const cst = axisStats(table.byName.get("c")!, mask);
  const counts = [0, 1, 2, 3].map((b) => cs.filter((v, i) => mask[i] && v === b).length);
  assert.equal(cst.selected.modeRows, Math.max(...counts));
  assert.equal(cst.selected.mode, counts.indexOf(Math.max(...counts)));
  const text = statsText(cst, "category", String, (b) => ["a", "b", "c", "d"][b]);
  assert.match(text, /most common/);
  assert.match(text, /missing/);
  // no selection: selected equals all
  assert.deepEqual(axisStats(table.byName.get("x")!, null).selected, st.all);
});

test("colour by kept groups: first kept group wins, rows in none get the last group", () => {
  const { table, xs, cs, n } = fixture();
  const saved = { first: { c: ["b"] }, second: { x: [[20, 60] as [number, number]], c: ["b", "c"] } };
  const { names, group } = savedGroups(table, saved);
  assert.deepEqual(names, ["first", "second"]);
  for (let i = 0; i < n; i++) {
    // reference: the same rule as AxesWidget.labels(), on the values
    const first = cs[i] === 1;
    const second = !Number.isNaN(xs[i]) && xs[i] >= 20 && xs[i] <= 60 && (cs[i] === 1 || cs[i] === 2);
    assert.equal(group[i], first ? 0 : second ? 1 : 2, `row ${i}`);
  }
  const c = savedColouring(table, saved, [0, 0, 1]);
  assert.equal(c.legend.kind, "categories");
  if (c.legend.kind === "categories") assert.deepEqual(c.legend.labels, ["first", "second", "in no group"]);
  assert.equal(savedColouring(table, {}, [0, 0, 1]).group, null, "no kept groups: one colour");
});

test("keys map to commands", () => {
  assert.deepEqual(keyCommand({ key: "ArrowRight" }), { do: "focus", by: 1 });
  assert.deepEqual(keyCommand({ key: "ArrowLeft", shiftKey: true }), { do: "move-axis", by: -1 });
  assert.deepEqual(keyCommand({ key: "z", ctrlKey: true }), { do: "undo" });
  assert.deepEqual(keyCommand({ key: "Z", metaKey: true, shiftKey: true }), { do: "redo" });
  assert.deepEqual(keyCommand({ key: "Delete", shiftKey: true }), { do: "clear-all" });
  assert.deepEqual(keyCommand({ key: "F" }), { do: "flip" });
  assert.equal(keyCommand({ key: "q" }), null);
  assert.equal(keyCommand({ key: "ArrowUp", altKey: true }), null);
});

test("keyboard ranges: create in the middle fifth, nudge keeps the width, resize widens both ends", () => {
  const { table } = fixture();
  const sc = new AxisScale(table.byName.get("x")!, 0, 100); // y = 100 - v * 100 / 99.9
  const made = keyedSel(selOf({}), { do: "new-range" }, "x", sc, -1)!;
  const [lo, hi] = made.x.spans[0];
  assert.ok(Math.abs(lo - 0.4 * 99.9) < 1e-9 && Math.abs(hi - 0.6 * 99.9) < 1e-9, `${lo}..${hi}`);
  const up = keyedSel(made, { do: "nudge", by: 1, big: false }, "x", sc, -1)!.x.spans[0];
  assert.ok(Math.abs(up[0] - lo - 99.9 / 50) < 1e-9 && Math.abs(up[1] - hi - 99.9 / 50) < 1e-9, `${up}`);
  const wide = keyedSel(made, { do: "resize", by: 1 }, "x", sc, -1)!.x.spans[0];
  assert.ok(Math.abs(lo - wide[0] - 99.9 / 50) < 1e-9 && Math.abs(wide[1] - hi - 99.9 / 50) < 1e-9, `${wide}`);
  // the range stops at the end of the axis
  let s = made;
  for (let i = 0; i < 60; i++) s = keyedSel(s, { do: "nudge", by: 1, big: true }, "x", sc, -1) ?? s;
  assert.ok(Math.abs(s.x.spans[0][1] - 99.9) < 1e-9 && Math.abs(s.x.spans[0][1] - s.x.spans[0][0] - (hi - lo)) < 1e-9);
  // whole-number axes move by at least one whole value
  const ksc = new AxisScale(table.byName.get("k")!, 0, 100);
  const k0 = selOf({ k: sel([[0, 0]]) });
  assert.deepEqual(keyedSel(k0, { do: "nudge", by: 1, big: false }, "k", ksc, -1)!.k.spans[0], [1, 1]);
  assert.deepEqual(keyedSel(selOf({}), { do: "new-range" }, "k", ksc, -1)!.k.spans[0], [0, 1], "a new range on 0/1 holds whole values");
  // a category axis: Enter toggles the band under the cursor
  const csc = new AxisScale(table.byName.get("c")!, 0, 100);
  assert.deepEqual(keyedSel(selOf({}), { do: "toggle" }, "c", csc, 2)!.c.bands, [2]);
  assert.equal(keyedSel(selOf({ c: sel([], [2]) }), { do: "toggle" }, "c", csc, 2)!.c, undefined);
});

test("an empty range on a whole-number axis is said to hold no values; the summary names ranges", () => {
  const { table } = fixture();
  const k = new AxisScale(table.byName.get("k")!, 0, 100);
  assert.equal(holdsNoValue(k, 0.2, 0.8), true);
  assert.equal(holdsNoValue(k, 0.2, 1), false);
  const x = new AxisScale(table.byName.get("x")!, 0, 100);
  assert.equal(holdsNoValue(x, 0.2, 0.8), false);
  const s = selOf({ x: sel([[52, 61.5]]), k: sel([[0.2, 0.8]]) });
  const text = selectionSummary(table, s, [x, k], 1234, false);
  assert.match(text, /^1,234 of 400 rows selected; x 52–61\.5; k 0\.2–0\.8 \(no values\)$/);
  assert.deepEqual(fromTrait(table, toTrait(table, s, {})).k.spans, [[0.2, 0.8]], "kept as drawn (holds nothing)");
});
