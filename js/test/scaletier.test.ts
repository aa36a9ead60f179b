// The scale tier's drawing inputs (pair lookup by name, status text, readouts from rank_matrix), and the
// page's speed-ups checked against plain recomputation: density counts kept and updated by changed rows,
// the preview for the dragged axis only, the mask unpacked by byte.
import { test } from "node:test";
import assert from "node:assert/strict";
import { neighbourReadouts, RankLookup } from "../association";
import { CODE_MAX, CODE_MISSING, decodeTable, unpackMask } from "../data";
import { DensityCounts, histOfBin, type CountSpec } from "../densitycount";
import { Previewer } from "../preview";
import { PairLookup, countsFrom, estimateOf, pairCountsOf, statusText } from "../scaletier";
import { previewMask, type AxisSel, type Sel } from "../selection";
import { DENSITY_BINS, HIST_BINS, histBin } from "../wire";

/** A small deterministic generator (mulberry32), so failures repeat. */
function rng(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const u32 = (values: number[]) => new DataView(new Uint32Array(values).buffer);

// -- pair lookup by name ------------------------------------------------------------------------------

test("kernel pairs are found by name for the current order; a reversed pair is read transposed; a missing one is null", () => {
  const bins = 2; // 3 x 3 cells
  const cells = (bins + 1) * (bins + 1);
  const ab = Array.from({ length: cells }, (_, c) => c + 1);
  const bc = Array.from({ length: cells }, (_, c) => 100 + c);
  const trait = { bins, order: ["a", "b", "c"], seq: 4, pairs: [
    { left: "a", right: "b", all: u32(ab), selected: u32(ab.map((v) => v >> 1)) },
    { left: "b", right: "c", all: u32(bc), selected: null },
  ] };
  const look = new PairLookup(pairCountsOf(trait));
  assert.equal(look.seq, 4);
  // the order the page shows while a header is dragged: (b, a) reversed, (a, c) not sent
  const got = look.forOrder(["b", "a", "c"]);
  assert.equal(got.length, 2);
  assert.equal(got[0]!.transposed, true);
  assert.deepEqual(Array.from(got[0]!.all), ab);
  assert.deepEqual(Array.from(got[0]!.selected!), ab.map((v) => v >> 1));
  assert.equal(got[1], null);
  const same = look.forOrder(["a", "b", "c"]);
  assert.equal(same[0]!.transposed, false);
  assert.equal(same[1]!.selected, null);
  assert.deepEqual(Array.from(same[1]!.all), bc);
  // not a scale-tier trait: {} or nonsense gives no pairs
  assert.equal(pairCountsOf({}), null);
  assert.equal(pairCountsOf({ bins: 0, pairs: [] }), null);
  assert.deepEqual(new PairLookup(pairCountsOf({})).forOrder(["a", "b"]), [null]);
});

test("counts are read as little-endian uint32 from an unaligned buffer too, and a wrong length is refused", () => {
  const raw = new Uint8Array(1 + 4 * 4);
  const vals = [1, 70000, 0, 4294967295];
  const dv = new DataView(raw.buffer, 1, 16);
  vals.forEach((v, i) => dv.setUint32(i * 4, v, true));
  assert.deepEqual(Array.from(countsFrom(dv, 4)!), vals);
  assert.equal(countsFrom(dv, 5), null);
  assert.equal(countsFrom(null, 4), null);
});

// -- status text --------------------------------------------------------------------------------------

test("the estimate while dragging is round(previewCount * N / k), then the kernel's exact count", () => {
  assert.equal(estimateOf(1234, 5_000_000, 100_000), 61_700);
  assert.equal(estimateOf(1, 3, 2), 2); // 1.5 rounds up
  const preview = statusText({ count: 1234, preview: true, n: 100_000, total: 5_000_000, sampled: true, mode: "density" });
  assert.equal(preview.text, "≈ 61,700 of 5,000,000 rows selected (estimate from a 100,000-row sample)");
  assert.equal(preview.count, 61_700);
  const exact = statusText({ count: 61_688, preview: false, n: 100_000, total: 5_000_000, sampled: true, mode: "density" });
  assert.equal(exact.text, "61,688 of 5,000,000 rows selected");
  const lines = statusText({ count: 61_688, preview: false, n: 100_000, total: 5_000_000, sampled: true, mode: "lines" });
  assert.match(lines.text, /^61,688 of 5,000,000 rows selected · lines show a 100,000-row sample$/);
  // the normal tier keeps its wording
  assert.equal(statusText({ count: 12, preview: true, n: 30, total: 30, sampled: false, mode: "lines" }).text, "≈ 12 of 30 rows selected (checking…)");
  assert.equal(statusText({ count: 12, preview: false, n: 30, total: 30, sampled: false, mode: "lines" }).text, "12 of 30 rows selected");
});

// -- readouts from rank_matrix --------------------------------------------------------------------------

test("readouts are looked up in rank_matrix, negated when exactly one axis of the pair is flipped", () => {
  const ranks = new RankLookup({ axes: ["a", "b", "c", "d"], values: [
    [1, 0.5, -0.25, null],
    [0.5, 1, 0.75, 0.1],
    [-0.25, 0.75, 1, 0.2],
    [null, 0.1, 0.2, 1],
  ] });
  const order = ["a", "b", "c", "d", "a"];
  const plain = neighbourReadouts(order, new Set(), ranks);
  assert.deepEqual(plain.map((r) => [r.left, r.right]), [["a", "b"], ["b", "c"], ["c", "d"], ["d", "a"]]);
  assert.deepEqual(plain.slice(0, 3).map((r) => r.value), [0.5, 0.75, 0.2]);
  assert.ok(Number.isNaN(plain[3].value)); // NaN in the kernel's matrix (null in JSON): no readout
  const flipped = neighbourReadouts(["a", "b", "c"], new Set(["b"]), ranks);
  assert.deepEqual(flipped.map((r) => r.value), [-0.5, -0.75]); // b flipped: both of its pairs turn
  const both = neighbourReadouts(["a", "b"], new Set(["a", "b"]), ranks);
  assert.deepEqual(both.map((r) => r.value), [0.5]); // both flipped: the sign stays
  // no matrix yet, or an axis the matrix does not know: no value
  for (const r of neighbourReadouts(["a", "b"], new Set(), new RankLookup({}))) assert.ok(Number.isNaN(r.value));
  for (const r of neighbourReadouts(["a", "zz"], new Set(), ranks)) assert.ok(Number.isNaN(r.value));
  for (const r of neighbourReadouts(["a", "b"], new Set(), new RankLookup(undefined))) assert.ok(Number.isNaN(r.value));
});

// -- the mask unpacked by byte -------------------------------------------------------------------------

test("the packed mask unpacks as numpy.unpackbits(bitorder='little') would, for any length", () => {
  const r = rng(3);
  for (const n of [0, 1, 7, 8, 9, 63, 64, 1001]) {
    const bytes = new Uint8Array(Math.ceil(n / 8) + 2).map(() => Math.floor(r() * 256));
    const got = unpackMask(new DataView(bytes.buffer), n)!;
    // reference: bit i of byte i >> 3, least significant first (numpy.unpackbits with bitorder="little")
    const ref = Array.from({ length: n }, (_, i) => (bytes[i >> 3] >> (i & 7)) & 1);
    assert.deepEqual(Array.from(got), ref);
  }
  assert.equal(unpackMask(new DataView(new ArrayBuffer(1)), 9), null);
});

// -- density counts --------------------------------------------------------------------------------

function randomTable(n: number, k: number, seed: number) {
  const r = rng(seed);
  const columns = Array.from({ length: k }, (_, a) => {
    const codes = new Uint16Array(n);
    const category = a === 1;
    for (let i = 0; i < n; i++) {
      if (r() < 0.03) codes[i] = CODE_MISSING;
      else codes[i] = category ? Math.floor(r() * 5) : Math.floor(r() * (CODE_MAX + 1));
    }
    return category
      ? { name: `c${a}`, kind: "category" as const, missing: 0, labels: ["p", "q", "r", "s", "t"], counts: [1, 1, 1, 1, 1], codes: new DataView(codes.buffer) }
      : { name: `c${a}`, kind: "number" as const, lo: 0, hi: 1, missing: 0, codes: new DataView(codes.buffer) };
  });
  return decodeTable({ n, columns });
}

/** reference: every row binned and counted directly (floor(code * bins / 65535), band numbers, missing last). */
function directCounts(spec: CountSpec, mask: Uint8Array | null) {
  const B1 = spec.bins + 1;
  const cells = B1 * B1;
  const bin = (a: number, c: number) =>
    c === CODE_MISSING ? spec.bins : spec.categorical[a] ? Math.min(spec.bins - 1, c) : Math.floor((c * spec.bins) / CODE_MISSING);
  const sel = spec.codes.slice(1).map(() => new Array(spec.groups * cells).fill(0));
  const hist = spec.codes.map(() => new Array(HIST_BINS).fill(0));
  for (let i = 0; i < spec.n; i++) {
    if (mask && !mask[i]) continue;
    const g = spec.group ? spec.group[i] : 0;
    for (let a = 0; a + 1 < spec.codes.length; a++) sel[a][g * cells + bin(a, spec.codes[a][i]) * B1 + bin(a + 1, spec.codes[a + 1][i])]++;
    spec.codes.forEach((c, a) => {
      if (!spec.categorical[a] && c[i] !== CODE_MISSING) hist[a][histBin(c[i])]++;
    });
  }
  return { sel, hist };
}

test("density counts kept between redraws and moved by changed rows equal a direct count after every edit", async () => {
  const n = 3000;
  const t = randomTable(n, 4, 7);
  const r = rng(11);
  const group = new Uint8Array(n).map(() => Math.floor(r() * 3));
  const spec: CountSpec = { n, codes: t.axes.map((a) => a.codes), categorical: t.axes.map((a) => a.kind === "category"), bins: DENSITY_BINS, group, groups: 3, key: [t] };
  const counts = new DensityCounts();
  const go = async () => true;
  const check = (mask: Uint8Array | null, what: string) => {
    const ref = directCounts(spec, mask);
    counts.sel.forEach((s, a) => assert.deepEqual(Array.from(s), ref.sel[a], `${what}: pair ${a}`));
    counts.histSel.forEach((h, a) => assert.deepEqual(Array.from(h), ref.hist[a], `${what}: histogram ${a}`));
  };
  assert.ok(await counts.prepare(spec, null, go));
  assert.equal(counts.lastWork.how, "all");
  check(null, "no selection");
  const all = directCounts(spec, null);
  counts.all.forEach((s, a) => assert.deepEqual(Array.from(s), all.sel[a]));
  // a drag: a narrow range widening step by step on axis 0, then most rows, then a different axis
  const codes0 = spec.codes[0];
  const hows = new Set<string>();
  for (const hi of [0.05, 0.06, 0.08, 0.3, 0.9, 0.95]) {
    const mask = new Uint8Array(n).map((_, i) => (codes0[i] !== CODE_MISSING && codes0[i] <= hi * CODE_MAX ? 1 : 0));
    assert.ok(await counts.prepare(spec, mask, go));
    hows.add(counts.lastWork.how);
    check(mask, `range up to ${hi}`);
  }
  // every way of updating was used: counting the few selected, moving the changed rows, counting the few left out
  assert.deepEqual([...hows].sort(), ["changed", "left out", "selected"]);
  const other = new Uint8Array(n).map((_, i) => (spec.codes[2][i] < CODE_MAX / 2 ? 1 : 0));
  assert.ok(await counts.prepare(spec, other, go));
  check(other, "another axis");
  // an abandoned pass leaves nothing half done: the next one is exact
  let calls = 0;
  const stopAtOnce = async () => ++calls > 100;
  const big = randomTable(100_000, 3, 5);
  const bigSpec: CountSpec = { n: 100_000, codes: big.axes.map((a) => a.codes), categorical: big.axes.map((a) => a.kind === "category"), bins: DENSITY_BINS, group: null, groups: 1, key: [big] };
  assert.equal(await counts.prepare(bigSpec, null, stopAtOnce), false);
  assert.ok(await counts.prepare(bigSpec, null, go));
  const ref = directCounts(bigSpec, null);
  counts.all.forEach((s, a) => assert.deepEqual(Array.from(s), ref.sel[a]));
});

test("each density bin lies inside one histogram bin (so histograms come from the pair counts)", () => {
  const map = histOfBin(DENSITY_BINS);
  assert.ok(map, "the wire contract's bins nest");
  for (let c = 0; c < CODE_MISSING; c += 97) assert.equal(map![Math.floor((c * DENSITY_BINS) / CODE_MISSING)], histBin(c));
  assert.equal(histOfBin(100), null); // 100 bins do not nest in 64: histograms are then counted from the rows
});

// -- the preview for the dragged axis only ---------------------------------------------------------

test("the preview updated for the dragged axis only equals a fresh preview mask at every step", () => {
  const n = 5000;
  const t = randomTable(n, 4, 21);
  const p = new Previewer();
  const span = (lo: number, hi: number): AxisSel => ({ spans: [[lo, hi]], bands: [], lane: false });
  const base: Sel = Object.assign(Object.create(null), { c2: span(0.2, 0.7), c1: { spans: [], bands: [0, 3], lane: false } });
  const steps: Sel[] = [];
  for (const hi of [0.3, 0.35, 0.5, 0.51, 0.9]) steps.push(Object.assign(Object.create(null), base, { c0: span(0.1, hi) }));
  steps.push(Object.assign(Object.create(null), base, { c0: span(0.1, 0.9), c3: { spans: [], bands: [], lane: true } }));
  steps.push(Object.assign(Object.create(null), base)); // c0 and c3 cleared
  steps.push(Object.assign(Object.create(null), base));
  const work: string[] = [];
  for (const s of steps) {
    const got = p.mask(t, s);
    work.push(p.lastWork);
    const ref = previewMask(t, s); // reference: the whole mask built afresh
    assert.deepEqual(Array.from(got.mask), Array.from(ref.mask));
    assert.equal(got.count, ref.count);
  }
  assert.deepEqual(work, ["full", "one axis", "one axis", "one axis", "one axis", "one axis", "full", "same"]);
});
