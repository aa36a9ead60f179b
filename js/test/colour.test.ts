// Colour groups of a whole-number colour column with few values (class labels): one swatch per value.
import { test } from "node:test";
import assert from "node:assert/strict";
import { colouring, OKABE_ITO, hexToRgb, DISCRETE_COLOURS } from "../colour";
import { CODE_MAX, CODE_MISSING, type AxisData } from "../data";

/** Codes as the kernel quantises a linear axis (encode.quantise: round((v - lo) / (hi - lo) * CODE_MAX)). */
function integerAxis(values: (number | null)[], distinct: number[]): AxisData {
  const lo = Math.min(...distinct);
  const hi = Math.max(...distinct);
  const codes = Uint16Array.from(values, (v) => (v === null ? CODE_MISSING : Math.round(((v - lo) / (hi - lo)) * CODE_MAX)));
  return { name: "target", kind: "integer", lo, hi, log: false, tz: null, missing: 0, inf: [0, 0], values: distinct, codes };
}

test("a 0/1/2 class column gets one Okabe–Ito swatch per value, missing values grey", () => {
  const rows = [0, 1, 2, 2, null, 1, 0];
  const c = colouring(integerAxis(rows, [0, 1, 2]), [0, 0, 0]);
  assert.deepEqual(Array.from(c.group!), [0, 1, 2, 2, 3, 1, 0]); // group = position of the row's value
  assert.deepEqual(c.palette.slice(0, 3), OKABE_ITO.slice(0, 3).map(hexToRgb));
  assert.equal(c.legend.kind, "categories");
  if (c.legend.kind === "categories") assert.deepEqual(c.legend.labels, ["0", "1", "2"]);
});

test("ten digit classes get ten distinct swatches; more values than DISCRETE_COLOURS keep the ramp", () => {
  const digits = Array.from({ length: 10 }, (_, i) => i);
  const c = colouring(integerAxis(digits, digits), [0, 0, 0]);
  assert.deepEqual(Array.from(c.group!), digits);
  assert.equal(new Set(c.palette.slice(0, 10).map((p) => p.join())).size, 10);
  const many = Array.from({ length: DISCRETE_COLOURS + 1 }, (_, i) => i * 3);
  assert.equal(colouring(integerAxis(many, many), [0, 0, 0]).legend.kind, "scale");
});
