// Undo and redo of selection edits on the page: a bounded list of past selections, the present one,
// and the undone ones (cleared by any new edit). Every final selection is recorded, whether made on the
// page or set from Python; an undo or redo is sent to the kernel as an ordinary edit.

import { cloneSel, selKey, type Sel } from "./selection";

export const HISTORY_LIMIT = 100;

export class SelectionHistory {
  private past: Sel[] = [];
  private future: Sel[] = [];
  private present: Sel;

  constructor(
    start: Sel,
    private limit = HISTORY_LIMIT,
  ) {
    this.present = cloneSel(start);
  }

  get canUndo(): boolean {
    return this.past.length > 0;
  }

  get canRedo(): boolean {
    return this.future.length > 0;
  }

  /** A new final selection; returns false when it equals the present one (nothing recorded). */
  record(sel: Sel): boolean {
    if (selKey(sel) === selKey(this.present)) return false;
    this.past.push(this.present);
    if (this.past.length > this.limit) this.past.shift();
    this.present = cloneSel(sel);
    this.future = [];
    return true;
  }

  /** The selection before the present one (it becomes the present), or null when there is none. */
  undo(): Sel | null {
    const prev = this.past.pop();
    if (!prev) return null;
    this.future.push(this.present);
    this.present = prev;
    return cloneSel(prev);
  }

  /** The selection undone last (it becomes the present again), or null. */
  redo(): Sel | null {
    const next = this.future.pop();
    if (!next) return null;
    this.past.push(this.present);
    this.present = next;
    return cloneSel(next);
  }

  /** The present selection (a copy). */
  get current(): Sel {
    return cloneSel(this.present);
  }

  /** Replace the present selection without a new step (the same edit as read back from the kernel). */
  settle(sel: Sel): void {
    this.present = cloneSel(sel);
  }

  /** Forget every step (a new table). */
  reset(sel: Sel): void {
    this.past = [];
    this.future = [];
    this.present = cloneSel(sel);
  }
}
