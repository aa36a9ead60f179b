// Keeping the page's selection in step with the kernel.
//
// The page sends intent (the `ranges` trait, with a bumped `edit_seq`; `dragging` while a gesture is in
// progress, throttled to one send per SYNC_MS) and previews the result from its quantised codes (for the
// dragged axis only, preview.ts; in the scale tier from the sample rows on the page). The
// kernel answers with the exact `count` and `mask_bits` and the `answered_seq` they belong to; the page
// adopts an answer once it answers the latest edit sent (coalescing the up to three trait changes of one
// answer into one adoption). That is how the page's count ends equal to the kernel's. Without a kernel
// (an exported page, `_standalone`) the page's own mask is final.

import { unpackMask, type Table } from "./data";
import type { WidgetModel } from "./model";
import { Previewer } from "./preview";
import { fromTrait, selKey, toTrait, type Sel } from "./selection";

export const SYNC_MS = 60;

export interface SyncHost {
  /** the table the selection refers to */
  table(): Table;
  /** something shown changed: redraw the overlay, and the lines too when `lines` */
  invalidate(lines: boolean): void;
}

export class KernelSync {
  /** the page's selection (what is drawn) */
  sel: Sel = {};
  /** true while a gesture is in progress */
  dragging = false;
  private kernelMask: Uint8Array | null = null;
  /** the kernel's exact count over all rows of the table */
  private kernelCount = 0;
  /** selected rows of the kernel's mask among the page's rows (the sample in the scale tier) */
  private kernelShown = 0;
  private previewer = new Previewer();
  /** set while the page shows its own preview instead of the kernel's answer */
  private preview: { mask: Uint8Array; count: number } | null = null;
  private seqSent = 0;
  private lastSync = -Infinity;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private cleanup: (() => void)[] = [];

  constructor(
    private model: WidgetModel,
    private host: SyncHost,
  ) {
    this.sel = this.fromRanges();
    this.adopt();
    this.listen("change:ranges", () => {
      // while an edit of this page is unanswered, the kernel's ranges answer an older edit (its
      // rounding of it, say): the page's newer selection stands until the latest answer arrives
      if (this.dragging || !this.answered()) return;
      const s = this.fromRanges();
      if (selKey(s) === selKey(this.sel)) return;
      this.sel = s;
      this.host.invalidate(false);
    });
    // one kernel answer changes up to three traits: adopt it once, after all of them have arrived
    let queued = false;
    const onAnswer = () => {
      if (queued) return;
      queued = true;
      queueMicrotask(() => {
        queued = false;
        if (!this.dragging && this.answered()) this.adopt();
      });
    };
    this.listen("change:answered_seq", onAnswer);
    this.listen("change:mask_bits", onAnswer);
    this.listen("change:count", onAnswer);
  }

  private listen(event: `change:${string}`, cb: () => void) {
    this.model.on(event, cb);
    this.cleanup.push(() => this.model.off(event, cb));
  }

  private fromRanges(): Sel {
    return fromTrait(this.host.table(), this.model.get("ranges"));
  }

  /** The kernel has answered the latest edit this page sent. */
  private answered(): boolean {
    return (this.model.get("answered_seq") ?? 0) >= this.seqSent;
  }

  /** A new table: read the selection again and take the kernel's answer. */
  tableChanged() {
    this.sel = this.fromRanges();
    this.preview = null;
    this.previewer.reset();
    this.adopt();
  }

  /** Take the kernel's mask and count as the truth (they are exact). */
  private adopt() {
    const table = this.host.table();
    const n = table.n;
    this.kernelMask = unpackMask(this.model.get("mask_bits"), n);
    this.kernelCount = this.model.get("count") ?? table.total;
    let shown = this.kernelCount;
    if (table.sampled) {
      shown = n;
      if (this.kernelMask) {
        shown = 0;
        for (let i = 0; i < n; i++) shown += this.kernelMask[i];
      }
    }
    this.kernelShown = shown;
    this.preview = null;
    // the answer to the latest edit: the kernel's reading of the ranges (ends rounded) is the truth
    const s = this.fromRanges();
    if (selKey(s) !== selKey(this.sel)) this.sel = s;
    this.host.invalidate(true);
  }

  /** A selection made on the page: `final` at the end of a gesture, else an intermediate one. */
  edit(s: Sel, final: boolean) {
    this.sel = s;
    this.dragging = !final;
    this.preview = this.previewer.mask(this.host.table(), s);
    this.host.invalidate(true);
    if (final) {
      this.send();
      if (this.model.get("_standalone") && this.preview) {
        // no kernel behind this page (an exported file): the page's own mask is the answer
        this.kernelMask = this.preview.mask;
        this.kernelCount = this.kernelShown = this.preview.count;
        this.preview = null;
        this.host.invalidate(true);
      }
      return;
    }
    const wait = SYNC_MS - (performance.now() - this.lastSync);
    if (wait <= 0) this.send();
    else if (this.timer === undefined) this.timer = setTimeout(() => this.send(), wait);
  }

  /** Send the ranges to the kernel (throttled while dragging; always on release). */
  private send() {
    clearTimeout(this.timer);
    this.timer = undefined;
    this.lastSync = performance.now();
    const table = this.host.table();
    const sent = this.model.get("ranges");
    if (selKey(fromTrait(table, sent)) === selKey(this.sel)) {
      // nothing new for the kernel: its last answer stands (but a finished drag is news)
      if (!this.dragging && this.model.get("dragging")) {
        this.model.set("dragging", false);
        this.model.save_changes();
      }
      if (!this.dragging && this.answered()) this.adopt();
      return;
    }
    const value = toTrait(table, this.sel, sent);
    if (!this.dragging) {
      // draw what is sent: ends as the kernel will read them (whole values on integer axes, ms on dates)
      this.sel = fromTrait(table, value);
      this.preview = this.previewer.mask(table, this.sel);
      this.host.invalidate(true);
    }
    this.seqSent = Math.max(this.seqSent, this.model.get("edit_seq") ?? 0) + 1;
    this.model.set("ranges", value);
    this.model.set("edit_seq", this.seqSent);
    this.model.set("dragging", this.dragging);
    this.model.save_changes();
  }

  /** The rows shown as selected (null: no selection, every row), their count, and whether it is a preview. */
  shown(): { mask: Uint8Array | null; count: number; preview: boolean } {
    const table = this.host.table();
    const n = table.n;
    const anyRange = Object.keys(this.sel).length > 0 || (this.kernelMask !== null && this.kernelCount < table.total);
    const mask = this.preview ? this.preview.mask : this.kernelMask;
    const count = this.preview ? this.preview.count : this.kernelShown;
    return { mask: anyRange ? mask : null, count: anyRange ? count : n, preview: this.preview !== null };
  }

  /** The kernel has answered the latest edit (`seq` is at least the last edit this page sent). */
  answers(seq: number): boolean {
    return this.preview === null && seq >= this.seqSent;
  }

  /**
   * The count the status line shows, and whether it is a preview: the preview's count over the page's
   * rows while checking, else the kernel's exact count over all rows.
   */
  status(): { count: number; preview: boolean } {
    return this.preview ? { count: this.preview.count, preview: true } : { count: this.kernelCount, preview: false };
  }

  dispose() {
    clearTimeout(this.timer);
    for (const f of this.cleanup.splice(0)) f();
  }
}
