// Kernel sync in node: a fake model and a fake kernel that answers each edit exactly, late and in pieces.
import { test } from "node:test";
import assert from "node:assert/strict";
import { CODE_MAX, decodeTable, type Table } from "../data";
import type { Traits, WidgetModel } from "../model";
import { previewMask, type Sel } from "../selection";
import { KernelSync, SYNC_MS } from "../sync";

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** numpy.packbits(mask, bitorder="little") */
function packLittle(mask: boolean[]): DataView {
  const out = new Uint8Array(Math.ceil(mask.length / 8));
  mask.forEach((m, i) => {
    if (m) out[i >> 3] |= 1 << (i & 7);
  });
  return new DataView(out.buffer);
}

/** A model like anywidget's: set() fires change events at once; save_changes() hands the changes on. */
class FakeModel {
  attrs: Partial<Traits> = {};
  private listeners = new Map<string, (() => void)[]>();
  private pending: Partial<Traits> = {};
  sent: Partial<Traits>[] = [];
  onSave: (changes: Partial<Traits>) => void = () => {};
  get<K extends keyof Traits>(k: K): Traits[K] {
    return this.attrs[k] as Traits[K];
  }
  set<K extends keyof Traits>(k: K, v: Traits[K]) {
    this.attrs[k] = v;
    this.pending[k] = v;
    this.fire(`change:${k}`);
  }
  save_changes() {
    const changes = this.pending;
    this.pending = {};
    this.sent.push(changes);
    this.onSave(changes);
  }
  on(ev: string, cb: () => void) {
    this.listeners.set(ev, [...(this.listeners.get(ev) ?? []), cb]);
  }
  off(ev?: string | null, cb?: unknown) {
    if (ev) this.listeners.set(ev, (this.listeners.get(ev) ?? []).filter((f) => f !== cb));
  }
  /** A kernel -> page update of one trait. */
  receive<K extends keyof Traits>(k: K, v: Traits[K]) {
    this.attrs[k] = v;
    this.fire(`change:${k}`);
  }
  private fire(ev: string) {
    for (const cb of this.listeners.get(ev) ?? []) cb();
  }
}

/** One number axis "x" over [0, 1] with its exact values and their wire codes. */
function numberTable(values: number[]): Table {
  const codes = new Uint16Array(values.map((v) => Math.round(v * CODE_MAX)));
  return decodeTable({ n: values.length, columns: [{ name: "x", kind: "number", lo: 0, hi: 1, missing: 0, codes: new DataView(codes.buffer) }] });
}

// values spread over [0, 1], plus values just outside 0.5 that share its code (the preview takes them in)
const values = Array.from({ length: 997 }, (_, i) => ((i * 7919) % 997) / 996).concat([0.5 + 1e-7, 0.5 + 2e-7, 0.2 - 1e-7]);
/** reference: the plain inclusive comparison on the exact values, as the kernel makes it */
const exact = (lo: number, hi: number) => values.map((v) => v >= lo && v <= hi);
const span = (lo: number, hi: number): Sel => ({ x: { spans: [[lo, hi]], bands: [], lane: false } });

function setUp(standalone: boolean) {
  const model = new FakeModel();
  const table = numberTable(values);
  Object.assign(model.attrs, {
    ranges: {},
    count: values.length,
    mask_bits: packLittle(values.map(() => true)),
    answered_seq: 0,
    edit_seq: 0,
    dragging: false,
    _standalone: standalone,
  });
  let redraws = 0;
  const sync = new KernelSync(model as unknown as WidgetModel, { table: () => table, invalidate: () => redraws++ });
  return { model, table, sync, redraws: () => redraws };
}

test("the page's count ends equal to the kernel's answer, however late and piecemeal it comes", async () => {
  const { model, table, sync } = setUp(false);
  // the kernel answers every edit exactly, later (when the test lets it), one trait at a time
  const answers: (() => void)[] = [];
  let kernelCount = -1;
  model.onSave = (changes) => {
    if (!("ranges" in changes)) return;
    const [[lo, hi]] = (changes.ranges as Record<string, [number, number][]>).x;
    const seq = changes.edit_seq!;
    const mask = exact(lo ?? -Infinity, hi ?? Infinity);
    answers.push(() => {
      kernelCount = mask.filter(Boolean).length;
      model.receive("count", kernelCount);
      model.receive("mask_bits", packLittle(mask));
      model.receive("answered_seq", seq);
    });
  };
  // a drag: intermediate edits (throttled), then the release
  for (const hi of [0.3, 0.4, 0.45, 0.48]) {
    sync.edit(span(0.2, hi), false);
    await sleep(SYNC_MS / 3);
  }
  sync.edit(span(0.2, 0.5), true);
  const preview = previewMask(table, span(0.2, 0.5));
  assert.deepEqual(sync.status(), { count: preview.count, preview: true });
  const sentRanges = model.sent.filter((c) => "ranges" in c);
  assert.ok(sentRanges.length >= 2 && sentRanges.length <= 5, `${sentRanges.length} sends for 5 edits`);
  assert.deepEqual(
    sentRanges.map((c) => c.edit_seq),
    sentRanges.map((_, i) => i + 1),
  );
  assert.equal(sentRanges.at(-1)!.dragging, false);
  assert.equal(answers.length, sentRanges.length);
  // answers to earlier edits arrive first: none of them is adopted
  while (answers.length > 1) {
    answers.shift()!();
    await sleep(0);
    assert.equal(sync.status().preview, true, "an answer to an older edit was adopted");
  }
  answers.shift()!();
  await sleep(0);
  const reference = exact(0.2, 0.5);
  const refCount = reference.filter(Boolean).length;
  // the preview took in the three rows within half a step outside the ends; the exact answer does not
  assert.equal(preview.count, refCount + 3);
  assert.equal(kernelCount, refCount);
  assert.deepEqual(sync.status(), { count: refCount, preview: false });
  const shown = sync.shown();
  assert.equal(shown.count, refCount);
  assert.deepEqual(Array.from(shown.mask!, Boolean), reference);
  sync.dispose();
});

test("one kernel answer (three trait changes) is adopted once", async () => {
  const { model, sync, redraws } = setUp(false);
  sync.edit(span(0.1, 0.2), true);
  const before = redraws();
  const mask = exact(0.1, 0.2);
  model.receive("count", mask.filter(Boolean).length);
  model.receive("mask_bits", packLittle(mask));
  model.receive("answered_seq", 1);
  await sleep(0);
  assert.equal(redraws() - before, 1);
  assert.equal(sync.status().count, mask.filter(Boolean).length);
  sync.dispose();
});

test("standalone rule: without a kernel the page's own mask is final at the end of a gesture", async () => {
  const { model, table, sync } = setUp(true);
  sync.edit(span(0.2, 0.4), false);
  assert.equal(sync.status().preview, true);
  sync.edit(span(0.2, 0.5), true);
  const own = previewMask(table, span(0.2, 0.5));
  assert.deepEqual(sync.status(), { count: own.count, preview: false });
  assert.deepEqual(Array.from(sync.shown().mask!), Array.from(own.mask));
  // nobody answers, and nothing else changes it
  await sleep(SYNC_MS * 2);
  assert.deepEqual(sync.status(), { count: own.count, preview: false });
  assert.equal(model.get("answered_seq"), 0);
  sync.dispose();
});

test("a range set by the kernel is read into the page's selection; the page's echo is not news", () => {
  const { model, sync } = setUp(false);
  model.receive("ranges", { x: [[0.25, null]] });
  assert.deepEqual(sync.sel.x.spans, [[0.25, Infinity]]);
  sync.edit(sync.sel, true); // the same selection: only a finished drag would be news
  assert.equal(model.sent.filter((c) => "ranges" in c).length, 0);
  // the kernel's last answer stands: no preview left waiting for an answer that will not come
  assert.equal(sync.status().preview, false);
  sync.dispose();
});
