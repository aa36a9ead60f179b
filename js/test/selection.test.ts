import { test } from "node:test";
import assert from "node:assert/strict";
import { CODE_MAX, CODE_MISSING, decodeTable, unpackMask, type RawTable } from "../data";
import { fromTrait, previewMask, selKey, tidy, toTrait, type AxisSel } from "../selection";
import { AxisScale, formatValue, niceTicks, timeTicks } from "../scales";

/** Selections keyed by axis name are records without a prototype (axis names are data). */
const rec = <T>(o: Record<string, T>): Record<string, T> => Object.assign(Object.create(null), o);

const sel = (spans: [number, number][] = [], bands: number[] = [], lane = false): AxisSel => ({ spans, bands, lane });

function tableOf(values: number[], lo: number, hi: number) {
  const codes = new Uint16Array(values.map((v) => (Number.isNaN(v) ? CODE_MISSING : Math.round(((v - lo) / (hi - lo)) * CODE_MAX))));
  return decodeTable({ n: values.length, columns: [{ name: "x", kind: "number", lo, hi, missing: 0, codes: new DataView(codes.buffer) }] });
}

test("preview mask from codes matches a direct range test on the values", () => {
  const values = Array.from({ length: 1000 }, (_, i) => (i * 7919) % 1000);
  const t = tableOf(values, 0, 999);
  const { mask, count } = previewMask(t, { x: sel([[100, 250], [700, 701]]) });
  // reference: the plain inclusive comparison on the original values
  const ref = values.map((v) => (v >= 100 && v <= 250) || (v >= 700 && v <= 701));
  assert.deepEqual(Array.from(mask, Boolean), ref);
  assert.equal(count, ref.filter(Boolean).length);
});

test("missing codes are only picked through the lane", () => {
  const t = tableOf([1, NaN, 3], 1, 3);
  assert.deepEqual(Array.from(previewMask(t, { x: sel([[-Infinity, Infinity]]) }).mask), [1, 0, 1]);
  assert.deepEqual(Array.from(previewMask(t, { x: sel([], [], true) }).mask), [0, 1, 0]);
});

test("category bands are picked by code", () => {
  const codes = new Uint16Array([0, 1, 2, 1, CODE_MISSING]);
  const raw: RawTable = { n: 5, columns: [{ name: "c", kind: "category", labels: ["a", "b", "c"], counts: [1, 2, 1], missing: 1, codes: new DataView(codes.buffer) }] };
  const t = decodeTable(raw);
  const s = fromTrait(t, { c: ["b", null] });
  assert.deepEqual(s.c, sel([], [1], true));
  assert.deepEqual(Array.from(previewMask(t, s).mask), [0, 1, 0, 1, 1]);
  assert.deepEqual(toTrait(t, s, {}), rec({ c: ["b", null] }));
});

test("tidy merges overlapping spans and drops empty axes; keys ignore axis order", () => {
  assert.deepEqual(tidy({ a: sel([[5, 6], [1, 3], [2, 4]]), b: sel() }), rec({ a: sel([[1, 4], [5, 6]]) }));
  assert.equal(selKey({ a: sel([[1, 2]]), b: sel([[3, 4]]) }), selKey({ b: sel([[3, 4]]), a: sel([[1, 2]]) }));
});

test("datetime ends travel as ISO strings; untouched axes keep the kernel's exact text", () => {
  const codes = new Uint16Array([0, CODE_MAX]);
  const lo = Date.UTC(2024, 0, 1) * 1e6;
  const hi = Date.UTC(2025, 0, 1) * 1e6;
  const t = decodeTable({ n: 2, columns: [{ name: "d", kind: "datetime", lo, hi, missing: 0, codes: new DataView(codes.buffer) }] });
  const prev = { d: [["2024-03-01T00:00:00.000000001", null]] as [string, null][] };
  const s = fromTrait(t, prev);
  assert.equal(s.d.spans[0][0], Date.UTC(2024, 2, 1) * 1e6); // naive text is wall-clock UTC
  assert.deepEqual(toTrait(t, s, prev), rec(prev));
  s.d.spans[0] = [Date.UTC(2024, 5, 1) * 1e6, Infinity];
  // the kernel's normal form (reference: pandas.Timestamp("2024-06-01").isoformat())
  assert.deepEqual(toTrait(t, s, prev), rec({ d: [["2024-06-01T00:00:00", null]] }));
});

test("unpackMask reads numpy's little bit order", () => {
  // numpy.packbits([1,0,1,1,0,0,0,0, 1], bitorder="little") == [13, 1]
  const m = unpackMask(new DataView(new Uint8Array([13, 1]).buffer), 9)!;
  assert.deepEqual(Array.from(m), [1, 0, 1, 1, 0, 0, 0, 0, 1]);
});

test("nice ticks are round numbers inside the domain", () => {
  const { values, step } = niceTicks(0.13, 9.7, 5);
  assert.equal(step, 2);
  assert.deepEqual(values, [2, 4, 6, 8]);
  assert.equal(formatValue(0.1 + 0.2, 0.1), "0.3");
  assert.equal(formatValue(100), "100");
});

test("calendar ticks fall on month starts and years", () => {
  const t = timeTicks(Date.UTC(2024, 0, 15), Date.UTC(2024, 11, 20), 5);
  for (const v of t.values) assert.equal(new Date(v).getUTCDate(), 1);
  const y = timeTicks(Date.UTC(2001, 5, 1), Date.UTC(2024, 5, 1), 5);
  for (const v of y.values) assert.equal(new Date(v).getUTCMonth(), 0);
});

test("category bands stack bottom to top with heights growing with counts", () => {
  const codes = new Uint16Array([0]);
  const t = decodeTable({ n: 1, columns: [{ name: "c", kind: "category", labels: ["a", "b"], counts: [10, 30], missing: 0, codes: new DataView(codes.buffer) }] });
  const sc = new AxisScale(t.axes[0], 0, 200);
  assert.ok(sc.bands[0].y0 > sc.bands[1].y1, "band 0 below band 1");
  assert.ok(sc.bands[1].y1 - sc.bands[1].y0 > sc.bands[0].y1 - sc.bands[0].y0);
  assert.equal(sc.bandAt((sc.bands[1].y0 + sc.bands[1].y1) / 2), 1);
});

test("integer axes round range ends inward to whole values", () => {
  const codes = new Uint16Array([0, CODE_MAX]);
  const t = decodeTable({ n: 2, columns: [{ name: "y", kind: "integer", lo: 2008, hi: 2025, missing: 0, codes: new DataView(codes.buffer) }] });
  assert.deepEqual(toTrait(t, { y: sel([[2010.4, 2013.6]]) }, {}), rec({ y: [[2011, 2013]] }));
  // no whole value inside: the range is kept as drawn (it selects nothing)
  assert.deepEqual(toTrait(t, { y: sel([[2010.2, 2010.8]]) }, {}), rec({ y: [[2010.2, 2010.8]] }));
});

test("a range the kernel set keeps its text when another range is added on its axis", () => {
  // the axis holds -inf values: an end dragged onto the bottom takes them in, an end the kernel set does not
  const codes = new Uint16Array([0, 0, CODE_MAX]);
  const t = decodeTable({ n: 3, columns: [{ name: "x", kind: "number", lo: 0, hi: 10, missing: 0, inf: [1, 0], codes: new DataView(codes.buffer) }] });
  const prev = { x: [[0, 5]] as [number, number][] };
  const s = fromTrait(t, prev);
  s.x.spans.push([7, 8]);
  assert.deepEqual(toTrait(t, s, prev), rec({ x: [[0, 5], [7, 8]] }));
  // a new range dragged onto the bottom end is open there
  s.x.spans = [[0, 2]];
  assert.deepEqual(toTrait(t, s, prev), rec({ x: [[null, 2]] }));
});

test("sameRows agrees with comparing the preview masks row by row", async () => {
  const { sameRows, previewMask } = await import("../selection");
  const { decodeTable } = await import("../data");
  const n = 400;
  const codes = Uint16Array.from({ length: n }, (_, i) => (i * 977) % 65535);
  const bytes = new DataView(codes.buffer);
  const table = decodeTable({ n, columns: [{ name: "x", kind: "number", missing: 0, lo: 0, hi: 1, log: false, codes: bytes }] } as never);
  const ends = [0.1, 0.1000001, 0.25, 0.5, 0.5000004, 0.9];
  for (const a0 of ends)
    for (const a1 of ends)
      for (const b0 of ends) {
        if (a1 < a0) continue;
        const a = Object.assign(Object.create(null), { x: { spans: [[a0, a1]], bands: [], lane: false } });
        const b = Object.assign(Object.create(null), { x: { spans: [[b0, a1]], bands: [], lane: false } });
        const ma = previewMask(table, a).mask;
        const mb = previewMask(table, b).mask;
        const reference = ma.every((v, i) => v === mb[i]); // reference: the row-by-row definition
        assert.equal(sameRows(table, a, b), reference, `${a0}..${a1} vs ${b0}..${a1}`);
      }
});
