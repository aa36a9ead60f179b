// The page's side of tests/test_conformance.py: reads JSON requests line by line on stdin and answers each
// with the page's own code (decoding, preview, bins, mask unpacking, selection round trips).
import { createInterface } from "node:readline";
import { codeToValue, decodeTable, unpackMask, type AxisData, type RawTable } from "../data";
import { fromTrait, previewMask, toTrait, type TraitRanges } from "../selection";
import { CODE_MAX, CODE_MISSING, DENSITY_BINS, densityBins, HIST_BINS, histBin, OPTIONS } from "../wire";
import { PNG_MAX_BYTES, PNG_MAX_SCALE, PNG_MESSAGE } from "../snapshot";

type Args = Record<string, any>;

const view = (b64: string) => {
  const b = Buffer.from(b64, "base64");
  return new DataView(b.buffer, b.byteOffset, b.byteLength);
};
/** The table trait with its codes base64-encoded (the test's transport). */
const table = (raw: Args) =>
  decodeTable({ n: raw.n, columns: raw.columns.map((c: Args) => ({ ...c, codes: view(c.codes) })) } as RawTable);
/** A decoded value, with non-finite ones as text (JSON has no NaN or Infinity). */
const decoded = (a: AxisData, c: number) => {
  const v = codeToValue(a, c);
  return Number.isFinite(v) ? v : String(v);
};

const handlers: Record<string, (args: Args) => unknown> = {
  contract: () => ({ CODE_MAX, CODE_MISSING, HIST_BINS, DENSITY_BINS, OPTIONS, PNG_MESSAGE, PNG_MAX_SCALE, PNG_MAX_BYTES }),
  decode: ({ raw }) => table(raw).axes.map((a) => Array.from(a.codes, (c) => decoded(a, c))),
  preview: ({ raw, ranges }) => {
    const t = table(raw);
    return ranges.map((r: TraitRanges) => Array.from(previewMask(t, fromTrait(t, r)).mask));
  },
  hist: ({ codes }) => codes.map((c: number) => (c === CODE_MISSING ? -1 : histBin(c))),
  density: ({ bins, categorical }) => Array.from(densityBins(bins, categorical)),
  unpack: ({ bits, n }) => Array.from(unpackMask(view(bits), n) ?? []),
  addRange: ({ raw, ranges, axis, span }) => {
    // the user adds one range on `axis` to a selection the kernel set
    const t = table(raw);
    const sel = fromTrait(t, ranges);
    (sel[axis] ??= { spans: [], bands: [], lane: false }).spans.push(span);
    return toTrait(t, sel, ranges);
  },
  roundTrip: ({ raw, ranges }) => {
    const t = table(raw);
    return ranges.map((r: TraitRanges) => toTrait(t, fromTrait(t, r), null));
  },
};

createInterface({ input: process.stdin }).on("line", (line) => {
  const { op, ...args } = JSON.parse(line);
  process.stdout.write(JSON.stringify(handlers[op](args)) + "\n");
});
