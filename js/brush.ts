// Pointer gestures on the chart: create, move, resize and clear ranges on an axis.
//
//   drag on empty axis space        -> a new range (several per axis are allowed; overlaps merge)
//   drag inside a range             -> move it
//   drag a range's end (±5 px)      -> resize it
//   click on empty axis space       -> clear every range on that axis
//   double-click a range            -> remove that range only

import { axisAt, type Layout } from "./layout";
import type { AxisScale } from "./scales";
import { tidy, type Ranges, type Span } from "./selection";

export interface BrushHost {
  layout(): Layout;
  scales(): AxisScale[];
  ranges(): Ranges;
  /** ranges while a gesture is in progress */
  preview(r: Ranges): void;
  /** final ranges at the end of a gesture */
  commit(r: Ranges): void;
}

type Hit =
  | { kind: "create"; axis: string; index: number }
  | { kind: "move" | "lo" | "hi"; axis: string; index: number; span: number };

const END_PX = 5;
const CLICK_PX = 3;

function clone(r: Ranges): Ranges {
  const out: Ranges = {};
  for (const [k, v] of Object.entries(r)) out[k] = v.map((s) => [s[0], s[1]] as Span);
  return out;
}

/** What the pointer at (x, y) would act on. */
export function hitTest(host: BrushHost, x: number, y: number): Hit | null {
  const layout = host.layout();
  const index = axisAt(layout, x);
  if (index < 0 || y < layout.top - 8 || y > layout.bottom + 8) return null;
  const sc = host.scales()[index];
  const name = layout.slots[index].name;
  const spans = host.ranges()[name] ?? [];
  // ends first (they may sit just outside a thin band), then bodies
  for (let s = 0; s < spans.length; s++) {
    const yHi = sc.toPixel(spans[s][1]);
    const yLo = sc.toPixel(spans[s][0]);
    if (Math.abs(y - yHi) <= END_PX && Math.abs(yLo - yHi) > 2 * END_PX - 1) return { kind: "hi", axis: name, index, span: s };
    if (Math.abs(y - yLo) <= END_PX && Math.abs(yLo - yHi) > 2 * END_PX - 1) return { kind: "lo", axis: name, index, span: s };
  }
  for (let s = 0; s < spans.length; s++) {
    const yHi = sc.toPixel(spans[s][1]);
    const yLo = sc.toPixel(spans[s][0]);
    if (y >= Math.min(yHi, yLo) - 2 && y <= Math.max(yHi, yLo) + 2) return { kind: "move", axis: name, index, span: s };
  }
  return { kind: "create", axis: name, index };
}

const CURSOR: Record<string, string> = { create: "crosshair", move: "grab", lo: "ns-resize", hi: "ns-resize" };

export function attachBrush(canvas: HTMLElement, host: BrushHost): () => void {
  let drag: { hit: Hit; y0: number; start: Ranges; moved: boolean; span: number } | null = null;

  const local = (e: PointerEvent | MouseEvent) => {
    const r = canvas.getBoundingClientRect();
    return { x: e.clientX - r.left, y: e.clientY - r.top };
  };

  const current = (e: PointerEvent): Ranges => {
    if (!drag) return host.ranges();
    const { y } = local(e);
    const sc = host.scales()[drag.hit.index];
    const out = clone(drag.start);
    const spans = (out[drag.hit.axis] ??= []);
    const hit = drag.hit;
    const v = sc.toValue(y);
    if (hit.kind === "create") {
      const v0 = sc.toValue(drag.y0);
      spans[drag.span] = [Math.min(v0, v), Math.max(v0, v)];
    } else if (hit.kind === "move") {
      const [lo, hi] = drag.start[hit.axis][hit.span];
      let delta = v - sc.toValue(drag.y0);
      delta = Math.min(Math.max(delta, sc.axis.lo - lo), sc.axis.hi - hi);
      spans[hit.span] = [lo + delta, hi + delta];
    } else {
      const [lo, hi] = drag.start[hit.axis][hit.span];
      spans[hit.span] = hit.kind === "hi" ? [Math.min(lo, v), Math.max(lo, v)] : [Math.min(v, hi), Math.max(v, hi)];
    }
    return out;
  };

  const down = (e: PointerEvent) => {
    if (e.button !== 0) return;
    const { x, y } = local(e);
    const hit = hitTest(host, x, y);
    if (!hit) return;
    e.preventDefault();
    canvas.setPointerCapture?.(e.pointerId);
    const start = clone(host.ranges());
    const span = hit.kind === "create" ? (start[hit.axis]?.length ?? 0) : hit.span;
    drag = { hit, y0: y, start, moved: false, span };
    canvas.style.cursor = hit.kind === "move" ? "grabbing" : CURSOR[hit.kind];
  };

  const move = (e: PointerEvent) => {
    if (!drag) {
      const { x, y } = local(e);
      const hit = hitTest(host, x, y);
      canvas.style.cursor = hit ? CURSOR[hit.kind] : "default";
      return;
    }
    if (!drag.moved && Math.abs(local(e).y - drag.y0) < CLICK_PX) return;
    drag.moved = true;
    host.preview(current(e));
  };

  const up = (e: PointerEvent) => {
    if (!drag) return;
    const d = drag;
    let result: Ranges;
    if (!d.moved) {
      result = clone(d.start);
      if (d.hit.kind === "create") delete result[d.hit.axis]; // a click on empty axis space clears it
    } else {
      result = current(e);
    }
    drag = null;
    canvas.style.cursor = "default";
    host.commit(tidy(result));
  };

  const dbl = (e: MouseEvent) => {
    const { x, y } = local(e);
    const hit = hitTest(host, x, y);
    if (!hit || hit.kind === "create") return;
    const r = clone(host.ranges());
    r[hit.axis].splice(hit.span, 1);
    if (!r[hit.axis].length) delete r[hit.axis];
    host.commit(r);
  };

  canvas.addEventListener("pointerdown", down);
  canvas.addEventListener("pointermove", move);
  canvas.addEventListener("pointerup", up);
  canvas.addEventListener("pointercancel", up);
  canvas.addEventListener("dblclick", dbl);
  return () => {
    canvas.removeEventListener("pointerdown", down);
    canvas.removeEventListener("pointermove", move);
    canvas.removeEventListener("pointerup", up);
    canvas.removeEventListener("pointercancel", up);
    canvas.removeEventListener("dblclick", dbl);
  };
}
