// The selection tools in the bar (clear all, undo, redo, invert), the line that shows an error raised
// by a Python callback (`callback_error`), and a visually hidden live region that tells screen readers
// the selection ("1,234 of 20,000 rows selected; efficiency_pct 52–61.5").

import type { Table } from "./data";
import { SelectionHistory } from "./history";
import { invertedSel } from "./invert";
import { holdsNoValue } from "./overlay";
import { formatValue, type AxisScale } from "./scales";
import { own, type Sel } from "./selection";

const fmt = (v: number) => v.toLocaleString("en-US");

/** A value of an axis as the summaries print it: plain numbers to 3 significant decimals, else the axis's format. */
export function valueText(sc: AxisScale, v: number): string {
  return sc.axis.kind === "number" && !sc.axis.log && isFinite(v) ? formatValue(v) : sc.format(v);
}

/** One phrase per axis with a selection, in the drawn order: "efficiency_pct 52–61.5". */
export function selectionPhrases(table: Table, sel: Sel, scales: AxisScale[]): string[] {
  const out: string[] = [];
  for (const sc of scales) {
    const name = sc.axis.name;
    const s = own(sel, name);
    if (!s) continue;
    const parts: string[] = [];
    for (const [lo, hi] of s.spans) {
      const a = lo === -Infinity ? "open" : valueText(sc, lo);
      const b = hi === Infinity ? "open" : valueText(sc, hi);
      parts.push(holdsNoValue(sc, lo, hi) ? `${formatValue(lo)}–${formatValue(hi)} (no values)` : `${a}–${b}`);
    }
    for (const b of s.bands) parts.push(sc.bandLabel(b));
    if (s.lane) parts.push("missing");
    if (parts.length) out.push(`${name} ${parts.join(", ")}`);
  }
  void table;
  return out;
}

/** The live summary: "1,234 of 20,000 rows selected; efficiency_pct 52–61.5". */
export function selectionSummary(table: Table, sel: Sel, scales: AxisScale[], count: number, preview: boolean): string {
  const phrases = selectionPhrases(table, sel, scales);
  const head = `${preview ? "about " : ""}${fmt(count)} of ${fmt(table.total ?? table.n)} rows selected`;
  return phrases.length ? `${head}; ${phrases.join("; ")}` : `${head}; no ranges`;
}

export interface ToolsHost {
  table(): Table;
  selection(): Sel;
  /** a final selection edit, sent to the kernel */
  commit(s: Sel): void;
  /** the axis the tools act on (keyboard focus, else the axis edited or hovered last) */
  activeAxis(): string | null;
}

function button(label: string, title: string, onClick: () => void): HTMLButtonElement {
  const b = document.createElement("button");
  b.type = "button";
  b.className = "axw-tool";
  b.textContent = label;
  b.title = title;
  b.addEventListener("click", onClick);
  return b;
}

export class SelectionTools {
  readonly history: SelectionHistory;
  readonly box = document.createElement("span");
  readonly live = document.createElement("div");
  readonly errorLine = document.createElement("div");
  private clearButton: HTMLButtonElement;
  private undoButton: HTMLButtonElement;
  private redoButton: HTMLButtonElement;
  private invertButton: HTMLButtonElement;
  private errorText = document.createElement("span");
  private dismissed = "";
  private spoken = "";

  constructor(private host: ToolsHost) {
    this.history = new SelectionHistory(host.selection());
    this.box.className = "axw-tools";
    this.clearButton = button("clear all", "remove the ranges on every axis", () => this.clearAll());
    this.undoButton = button("undo", "undo the last selection edit (Ctrl+Z)", () => this.undo());
    this.redoButton = button("redo", "redo the edit undone last (Ctrl+Shift+Z)", () => this.redo());
    this.invertButton = button("invert", "", () => this.invert());
    this.box.append(this.clearButton, this.undoButton, this.redoButton, this.invertButton);
    this.live.className = "axw-live";
    this.live.setAttribute("role", "status");
    this.live.setAttribute("aria-live", "polite");
    this.errorLine.className = "axw-callback-error";
    this.errorLine.setAttribute("role", "alert");
    const close = button("×", "hide this message", () => {
      this.dismissed = this.errorText.textContent ?? "";
      this.errorLine.style.display = "none";
    });
    close.className = "axw-dismiss";
    close.setAttribute("aria-label", "hide the callback error");
    this.errorLine.append(this.errorText, close);
    this.errorLine.style.display = "none";
    this.refresh();
  }

  /** A final selection reached the page (an edit of its own, an undo, or one from the kernel). */
  recorded(sel: Sel) {
    this.history.record(sel);
    this.refresh();
  }

  private apply(next: Sel | null) {
    if (!next) return;
    this.host.commit(next);
    this.history.settle(this.host.selection()); // as sent (ends rounded as the kernel reads them)
    this.refresh();
  }

  undo() {
    this.apply(this.history.undo());
  }

  redo() {
    this.apply(this.history.redo());
  }

  clearAll() {
    if (Object.keys(this.host.selection()).length) this.host.commit({});
  }

  /** Invert the selection on an axis (invert.ts); says so in the live region when there is nothing to invert. */
  invert(axis: string | null = this.host.activeAxis()) {
    if (!axis) return;
    const next = invertedSel(this.host.table(), this.host.selection(), axis);
    if (next) this.host.commit(next);
    else this.speak(`nothing to invert on ${axis}: it has no selection, or its selection takes every row`);
  }

  /** Enable the buttons that can act now, and say what invert would act on. */
  refresh() {
    const sel = this.host.selection();
    const axis = this.host.activeAxis();
    this.clearButton.disabled = Object.keys(sel).length === 0;
    this.undoButton.disabled = !this.history.canUndo;
    this.redoButton.disabled = !this.history.canRedo;
    const can = !!axis && !!own(sel, axis);
    this.invertButton.disabled = !can;
    this.invertButton.title = can
      ? `invert the selection on ${axis}: pick exactly the rows its ranges leave out (I)`
      : "invert the selection on the focused or last edited axis (I); that axis has no selection";
  }

  /** Put a text in the live region (only when it changed, so screen readers are not flooded). */
  speak(text: string) {
    if (text === this.spoken) return;
    this.spoken = text;
    this.live.textContent = text;
  }

  /** The error a Python callback raised ("" for none): shown until dismissed or replaced. */
  showError(text: string) {
    this.errorText.textContent = text ? `⚠ ${text}` : "";
    if (!text) this.dismissed = "";
    this.errorLine.style.display = text && this.errorText.textContent !== this.dismissed ? "" : "none";
  }
}
