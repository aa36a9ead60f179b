// Keyboard operation of the chart (the overlay canvas is focusable). Keys (README, "Gestures"):
//   ← / →                 focus the previous / next axis (Tab / Shift+Tab too, leaving the chart at its ends)
//   Home / End            focus the first / last axis
//   Shift+← / Shift+→     move the focused axis one slot left / right
//   F                     flip the focused axis
//   number, date, duration axes:
//     Enter or N          a new range in the middle fifth of the axis
//     ↑ / ↓               move the active range (the one with the largest values) by 1/50 of the axis
//                         (Page Up / Page Down: 1/10)
//     Shift+↑ / Shift+↓   widen / narrow the active range (both ends, 1/50 of the axis each)
//   category and yes/no axes:
//     ↑ / ↓               move the band cursor
//     Enter or Space      pick / unpick the band under the cursor
//   M                     pick / unpick the missing-values lane (axes with missing values)
//   Delete, Backspace     clear the focused axis; Shift+Delete clears every axis
//   I                     invert the selection on the focused axis (see invert.ts)
//   Ctrl+Z / Ctrl+Shift+Z, Ctrl+Y   undo / redo a selection edit (⌘ on a Mac)

import { clickedSel, draggedSel, type Hit } from "./brush";
import type { Layout } from "./layout";
import type { AxisScale } from "./scales";
import { cloneSel, emptyAxis, own, tidy, type Sel } from "./selection";

export type Command =
  | { do: "focus"; by: number }
  | { do: "tab"; by: number }
  | { do: "focus-at"; at: "first" | "last" }
  | { do: "move-axis"; by: number }
  | { do: "flip" | "new-range" | "toggle" | "lane" | "clear" | "clear-all" | "invert" | "undo" | "redo" }
  | { do: "nudge"; by: number; big: boolean }
  | { do: "resize"; by: number };

export interface KeyInfo {
  key: string;
  shiftKey?: boolean;
  altKey?: boolean;
  ctrlKey?: boolean;
  metaKey?: boolean;
}

/** The command a key press asks for, or null (the key is left to the page). */
export function keyCommand(e: KeyInfo): Command | null {
  const mod = !!(e.ctrlKey || e.metaKey);
  const key = e.key.length === 1 ? e.key.toLowerCase() : e.key;
  if (mod) {
    if (key === "z") return { do: e.shiftKey ? "redo" : "undo" };
    if (key === "y") return { do: "redo" };
    return null;
  }
  if (e.altKey) return null;
  switch (key) {
    case "ArrowLeft":
      return e.shiftKey ? { do: "move-axis", by: -1 } : { do: "focus", by: -1 };
    case "ArrowRight":
      return e.shiftKey ? { do: "move-axis", by: 1 } : { do: "focus", by: 1 };
    case "Tab":
      return { do: "tab", by: e.shiftKey ? -1 : 1 };
    case "Home":
      return { do: "focus-at", at: "first" };
    case "End":
      return { do: "focus-at", at: "last" };
    case "ArrowUp":
      return e.shiftKey ? { do: "resize", by: 1 } : { do: "nudge", by: 1, big: false };
    case "ArrowDown":
      return e.shiftKey ? { do: "resize", by: -1 } : { do: "nudge", by: -1, big: false };
    case "PageUp":
      return { do: "nudge", by: 1, big: true };
    case "PageDown":
      return { do: "nudge", by: -1, big: true };
    case "Enter":
    case "n":
      return { do: "new-range" };
    case " ":
      return { do: "toggle" };
    case "f":
      return { do: "flip" };
    case "m":
      return { do: "lane" };
    case "i":
      return { do: "invert" };
    case "Delete":
    case "Backspace":
      return { do: e.shiftKey ? "clear-all" : "clear" };
  }
  return null;
}

/** Pixels a range moves per key press on an axis: 1/50 of its height (1/10 for big steps), at least one whole value on whole-number axes. */
function stepPx(sc: AxisScale, big: boolean): number {
  const h = Math.abs(sc.bottom - sc.top);
  let d = h / (big ? 10 : 50);
  const a = sc.axis;
  if (a.kind === "integer" && a.hi > a.lo && !a.log) d = Math.max(d, h / (a.hi - a.lo));
  return d;
}

/**
 * The selection after a selection command on one axis (pure; unit-tested). `band`: the band cursor on a
 * category axis. Returns null when the command changes nothing there.
 */
export function keyedSel(sel: Sel, cmd: Command, axis: string, sc: AxisScale, band: number): Sel | null {
  const out = keyedRaw(sel, cmd, axis, sc, band);
  if (!out || sc.axis.kind !== "integer") return out;
  // whole-number axes: ends on whole values (a key press moves by whole values, never to "no values")
  const s = own(out, axis);
  if (s) s.spans = s.spans.map(([lo, hi]) => [isFinite(lo) ? Math.round(lo) : lo, isFinite(hi) ? Math.round(hi) : hi]);
  return out;
}

function keyedRaw(sel: Sel, cmd: Command, axis: string, sc: AxisScale, band: number): Sel | null {
  const s = own(sel, axis);
  const spans = s?.spans ?? [];
  const last = spans.length - 1;
  const at = (kind: Hit["kind"], extra: object = {}) => ({ kind, axis, index: 0, ...extra }) as Hit;
  if (sc.categorical) {
    if ((cmd.do === "toggle" || cmd.do === "new-range") && band >= 0) return tidy(clickedSel(sel, at("band", { band })));
    return null;
  }
  switch (cmd.do) {
    case "new-range": {
      const y0 = sc.top + 0.4 * (sc.bottom - sc.top);
      const y1 = sc.top + 0.6 * (sc.bottom - sc.top);
      return draggedSel(sel, at("create"), sc, y0, y1); // the new range is the last one (active)
    }
    case "nudge": {
      if (last < 0) return null;
      const [lo, hi] = spans[last];
      const y = sc.toPixel(isFinite(hi) ? hi : lo);
      const out = draggedSel(sel, at("move", { span: last }), sc, y, y - cmd.by * stepPx(sc, cmd.big));
      return own(out, axis)!.spans[last].join() === spans[last].join() ? null : out;
    }
    case "resize": {
      if (last < 0) return null;
      const [lo, hi] = spans[last];
      const d = stepPx(sc, false) * cmd.by;
      // the top of the range moves up and its bottom down (on a flipped axis the ends trade places)
      const dir = sc.flipped ? -1 : 1;
      const out = cloneSel(sel);
      let next: [number, number] = [lo, hi];
      if (isFinite(hi)) next[1] = sc.toValue(sc.toPixel(hi) - dir * d);
      if (isFinite(lo)) next[0] = sc.toValue(sc.toPixel(lo) + dir * d);
      if (next[0] > next[1]) {
        const mid = (lo + hi) / 2;
        next = [mid, mid];
      }
      out[axis] = { ...own(out, axis)!, spans: [...spans.slice(0, last), next] };
      return next.join() === spans[last].join() ? null : out;
    }
  }
  return null;
}

export interface KeyboardHost {
  layout(): Layout;
  scales(): AxisScale[];
  selection(): Sel;
  commit(s: Sel): void;
  flip(axis: string): void;
  reorder(order: string[], final: boolean): void;
  undo(): void;
  redo(): void;
  invert(axis: string): void;
  /** focus or band cursor moved (redraw the focus mark, announce the axis) */
  focused(axis: string | null): void;
}

/** Keyboard focus within the chart: the focused axis and, on a category axis, the band cursor. */
export class KeyboardFocus {
  axis: string | null = null;
  band = -1;
  /** the chart has the keyboard focus */
  active = false;
  private cleanup: (() => void)[] = [];

  constructor(
    el: HTMLElement,
    private host: KeyboardHost,
  ) {
    el.tabIndex = 0;
    // keys pressed in the chart are the chart's: a host's shortcuts (JupyterLab's command mode: M makes a
    // Markdown cell, arrows move between cells) must not see them
    el.setAttribute("data-lm-suppress-shortcuts", "true");
    el.setAttribute("data-p-suppress-shortcuts", "true");
    const on = <K extends keyof HTMLElementEventMap>(type: K, f: (e: HTMLElementEventMap[K]) => void) => {
      el.addEventListener(type, f);
      this.cleanup.push(() => el.removeEventListener(type, f));
    };
    on("keydown", (e) => {
      if (!this.active && keyCommand(e)) this.show(); // focused by a click: the frame appears with the first key
      this.key(e);
    });
    on("focus", () => {
      // the frame shows for keyboard focus only (a click with the mouse focuses the chart too)
      let visible = true;
      try {
        visible = el.matches(":focus-visible");
      } catch {
        // a browser without :focus-visible: always show it
      }
      if (visible) this.show();
    });
    on("blur", () => {
      this.active = false;
      this.host.focused(null);
    });
  }

  private show() {
    this.active = true;
    if (this.index() < 0) this.focusAt(0);
    else this.host.focused(this.axis);
  }

  /** Index of the focused axis in the drawn order, or -1. */
  index(): number {
    return this.axis === null ? -1 : this.host.layout().slots.findIndex((s) => s.name === this.axis);
  }

  private focusAt(i: number) {
    const slots = this.host.layout().slots;
    if (!slots.length) return;
    const k = Math.max(0, Math.min(slots.length - 1, i));
    if (slots[k].name !== this.axis) this.band = -1;
    this.axis = slots[k].name;
    const sc = this.host.scales()[k];
    if (sc.categorical && this.band < 0 && sc.bands.length) {
      // start on the top band
      let top = 0;
      sc.bands.forEach((b, c) => {
        if (b.y0 < sc.bands[top].y0) top = c;
      });
      this.band = top;
    }
    this.host.focused(this.axis);
  }

  private key(e: KeyboardEvent) {
    const cmd = keyCommand(e);
    if (!cmd) return;
    const slots = this.host.layout().slots;
    let i = this.index();
    if (i < 0) {
      this.focusAt(0);
      i = this.index();
    }
    if (i < 0) return;
    const axis = slots[i].name;
    const sc = this.host.scales()[i];
    if (cmd.do === "tab") {
      const j = i + cmd.by;
      if (j < 0 || j >= slots.length) return; // leave the chart: the browser moves the focus on
      e.preventDefault();
      e.stopPropagation();
      this.focusAt(j);
      return;
    }
    e.preventDefault();
    e.stopPropagation();
    switch (cmd.do) {
      case "focus":
        return this.focusAt(i + cmd.by);
      case "focus-at":
        return this.focusAt(cmd.at === "first" ? 0 : slots.length - 1);
      case "move-axis": {
        const j = i + cmd.by;
        if (j < 0 || j >= slots.length) return;
        const order = slots.map((s) => s.name);
        [order[i], order[j]] = [order[j], order[i]];
        this.host.reorder(order, true);
        return this.host.focused(axis);
      }
      case "flip":
        this.host.flip(axis);
        return this.host.focused(axis);
      case "undo":
        return this.host.undo();
      case "redo":
        return this.host.redo();
      case "invert":
        return this.host.invert(axis);
      case "clear-all":
        return this.host.commit({});
      case "clear": {
        const out = cloneSel(this.host.selection());
        delete out[axis];
        return this.host.commit(out);
      }
      case "lane": {
        if (!sc.axis.missing && !own(this.host.selection(), axis)?.lane) return;
        const out = cloneSel(this.host.selection());
        const s = (out[axis] ??= emptyAxis());
        s.lane = !s.lane;
        return this.host.commit(tidy(out));
      }
    }
    if (sc.categorical && cmd.do === "nudge") {
      // the band cursor moves in screen direction: up is the band above
      const order = sc.bands.map((b, c) => [b.y0, c]).sort((p, q) => p[0] - q[0]).map((p) => p[1]);
      const at = Math.max(0, order.indexOf(this.band));
      this.band = order[Math.max(0, Math.min(order.length - 1, at - cmd.by))];
      return this.host.focused(axis);
    }
    const next = keyedSel(this.host.selection(), cmd, axis, sc, this.band);
    if (next) this.host.commit(tidy(next));
  }

  dispose() {
    for (const f of this.cleanup.splice(0)) f();
  }
}
