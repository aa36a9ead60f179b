import { test } from "node:test";
import assert from "node:assert/strict";
import { CODE_MAX, CODE_MISSING, decodeTable, unpackMask } from "../data";
import { previewMask, rangesKey, tidy } from "../selection";
import { formatValue, niceTicks } from "../scales";

function tableOf(values: number[], lo: number, hi: number) {
  const codes = new Uint16Array(values.map((v) => (Number.isNaN(v) ? CODE_MISSING : Math.round(((v - lo) / (hi - lo)) * CODE_MAX))));
  return decodeTable({ n: values.length, columns: [{ name: "x", kind: "number", lo, hi, missing: 0, codes: new DataView(codes.buffer) }] });
}

test("preview mask from codes matches a direct range test on the values", () => {
  const values = Array.from({ length: 1000 }, (_, i) => (i * 7919) % 1000);
  const t = tableOf(values, 0, 999);
  const { mask, count } = previewMask(t, { x: [[100, 250], [700, 701]] });
  // reference: the plain inclusive comparison on the original values
  const ref = values.map((v) => (v >= 100 && v <= 250) || (v >= 700 && v <= 701));
  assert.deepEqual(Array.from(mask, Boolean), ref);
  assert.equal(count, ref.filter(Boolean).length);
});

test("missing codes are never inside a range", () => {
  const t = tableOf([1, NaN, 3], 1, 3);
  assert.deepEqual(Array.from(previewMask(t, { x: [[-1e9, 1e9]] }).mask), [1, 0, 1]);
});

test("tidy merges overlapping spans and drops empty axes; keys ignore axis order", () => {
  assert.deepEqual(tidy({ a: [[5, 6], [1, 3], [2, 4]], b: [] }), { a: [[1, 4], [5, 6]] });
  assert.equal(rangesKey({ a: [[1, 2]], b: [[3, 4]] }), rangesKey({ b: [[3, 4]], a: [[1, 2]] }));
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
});
