// Pointer gestures on the chart.
//
// Number, date and duration axes:
//   drag on empty axis space        -> a new range (several per axis combine with OR; overlaps merge)
//   drag inside a range             -> move it
//   drag a range's end (±5 px)      -> resize it
//   double-click a range            -> remove that range only
// Category axes:
//   click a band                    -> pick / unpick that category
//   drag across bands               -> pick every band swept over
// Every axis:
//   click the box below the axis    -> pick / unpick the missing-values lane
//   click on empty axis space       -> clear everything picked on that axis
//   drag the header sideways        -> move the axis to another slot
//   click the header                -> flip the axis (largest values at the bottom)

import { axisAt, type Layout } from "./layout";
import type { AxisScale } from "./scales";
import { cloneSel, emptyAxis, isEmpty, own, tidy, type Sel } from "./selection";

export interface BrushHost {
  layout(): Layout;
  scales(): AxisScale[];
  selection(): Sel;
  /** selection while a gesture is in progress */
  preview(s: Sel): void;
  /** final selection at the end of a gesture */
  commit(s: Sel): void;
  /** turn an axis upside down */
  flip(axis: string): void;
  /** a new axis order (while dragging a header, then final) */
  reorder(order: string[], final: boolean): void;
  /** the pointer rests at (x, y) away from the axes (hover a line) */
  hover(x: number, y: number): void;
  /** what the pointer is over while no gesture runs (null: nothing), e.g. to name a header in full */
  over?(hit: Hit | null): void;
  /** a click away from the axes: pin or unpin the hovered line */
  pin(): void;
  /** page position (relative to the canvas) to the logical layout's coordinates */
  toLogical(x: number, y: number): { x: number; y: number };
}

export type Hit =
  | { kind: "create" | "lane" | "empty" | "header"; axis: string; index: number }
  | { kind: "band"; axis: string; index: number; band: number }
  | { kind: "move" | "lo" | "hi"; axis: string; index: number; span: number };

const END_PX = 5;
const CLICK_PX = 3;

/** What the pointer at (x, y) would act on. */
export function hitTest(host: BrushHost, x: number, y: number): Hit | null {
  const layout = host.layout();
  if (y < layout.top - 10) {
    const h = headerAt(layout, x);
    return h < 0 ? null : { kind: "header", axis: layout.slots[h].name, index: h };
  }
  const index = axisAt(layout, x);
  if (index < 0) return null;
  const name = layout.slots[index].name;
  if (Math.abs(y - layout.laneY) <= layout.laneHalf + 3) return { kind: "lane", axis: name, index };
  if (y < layout.top - 8 || y > layout.bottom + 8) return null;
  const sc = host.scales()[index];
  if (sc.categorical) {
    const band = sc.bandAt(y);
    return band >= 0 ? { kind: "band", axis: name, index, band } : { kind: "empty", axis: name, index };
  }
  const spans = own(host.selection(), name)?.spans ?? [];
  const px = spans.map(([lo, hi]) => [sc.toPixel(hi), sc.toPixel(lo)]);
  // ends first (they may sit just outside a thin band), then bodies
  for (let s = 0; s < spans.length; s++) {
    const [yHi, yLo] = px[s];
    const room = Math.abs(yLo - yHi) > 2 * END_PX - 1;
    if (room && Math.abs(y - yHi) <= END_PX) return { kind: "hi", axis: name, index, span: s };
    if (room && Math.abs(y - yLo) <= END_PX) return { kind: "lo", axis: name, index, span: s };
  }
  for (let s = 0; s < spans.length; s++) {
    const [yHi, yLo] = px[s];
    if (y >= Math.min(yHi, yLo) - 2 && y <= Math.max(yHi, yLo) + 2) return { kind: "move", axis: name, index, span: s };
  }
  return { kind: "create", axis: name, index };
}

/** Index of the axis whose header column contains x (half the gap either side), or -1. */
function headerAt(layout: Layout, x: number): number {
  const k = layout.slots.length;
  if (!k) return -1;
  const half = k > 1 ? (layout.slots[1].x - layout.slots[0].x) / 2 : layout.width / 2;
  return layout.slots.findIndex((s) => Math.abs(s.x - x) <= half);
}

/** The order with one axis moved to the slot nearest x. */
export function movedOrder(layout: Layout, from: number, x: number): string[] {
  const names = layout.slots.map((s) => s.name);
  let to = 0;
  let best = Infinity;
  layout.slots.forEach((s, i) => {
    if (Math.abs(s.x - x) < best) {
      best = Math.abs(s.x - x);
      to = i;
    }
  });
  const [name] = names.splice(from, 1);
  names.splice(to, 0, name);
  return names;
}

const CURSOR: Record<string, string> = {
  create: "crosshair",
  move: "grab",
  lo: "ns-resize",
  hi: "ns-resize",
  band: "pointer",
  lane: "pointer",
  empty: "default",
  header: "grab",
};

// -- gesture reducers: the selection a gesture makes (pure; unit-tested in js/test/brush.test.ts) ------

/** The selection a drag from y0 to y makes, starting from `start` (`sc`: the scale of the hit axis). */
export function draggedSel(start: Sel, hit: Hit, sc: AxisScale, y0: number, y: number): Sel {
  const out = cloneSel(start);
  const s = (out[hit.axis] ??= emptyAxis());
  const v = sc.toValue(y);
  if (hit.kind === "band") {
    const a = sc.bandAt(y0);
    let b = sc.bandAt(y);
    if (b < 0) b = y < y0 ? sc.bands.length - 1 : 0;
    for (let c = Math.min(a, b); c <= Math.max(a, b); c++) if (!s.bands.includes(c)) s.bands.push(c);
  } else if (hit.kind === "create") {
    const v0 = sc.toValue(y0);
    s.spans.push([Math.min(v0, v), Math.max(v0, v)]);
  } else if (hit.kind === "move") {
    const [lo, hi] = start[hit.axis].spans[hit.span];
    const finite = isFinite(lo) && isFinite(hi);
    let delta = v - sc.toValue(y0);
    if (finite) delta = Math.min(Math.max(delta, sc.axis.lo - lo), sc.axis.hi - hi);
    s.spans[hit.span] = [lo + delta, hi + delta];
  } else if (hit.kind === "lo" || hit.kind === "hi") {
    const [lo, hi] = start[hit.axis].spans[hit.span];
    s.spans[hit.span] = hit.kind === "hi" ? [Math.min(lo, v), Math.max(lo, v)] : [Math.min(v, hi), Math.max(v, hi)];
  }
  return out;
}

/** The selection after a click (no drag) on `hit`. */
export function clickedSel(start: Sel, hit: Hit): Sel {
  const out = cloneSel(start);
  const s = (out[hit.axis] ??= emptyAxis());
  if (hit.kind === "lane") s.lane = !s.lane;
  else if (hit.kind === "band") {
    const at = s.bands.indexOf(hit.band);
    if (at >= 0) s.bands.splice(at, 1);
    else s.bands.push(hit.band);
  } else if (hit.kind === "create" || hit.kind === "empty") delete out[hit.axis];
  if (isEmpty(out[hit.axis])) delete out[hit.axis];
  return out;
}

/** The selection without one range of an axis (a double-click on it). */
export function withoutSpan(start: Sel, axis: string, span: number): Sel {
  const out = cloneSel(start);
  out[axis].spans.splice(span, 1);
  if (isEmpty(out[axis])) delete out[axis];
  return out;
}

export function attachBrush(canvas: HTMLElement, host: BrushHost): () => void {
  let drag: { hit: Hit; x0: number; y0: number; start: Sel; moved: boolean; order: string[] } | null = null;

  const local = (e: PointerEvent | MouseEvent) => {
    const r = canvas.getBoundingClientRect();
    return host.toLogical(e.clientX - r.left, e.clientY - r.top);
  };

  /** The selection the drag in progress describes, with the pointer at y. */
  const dragged = (y: number): Sel => draggedSel(drag!.start, drag!.hit, host.scales()[drag!.hit.index], drag!.y0, y);
  const clicked = (): Sel => clickedSel(drag!.start, drag!.hit);

  const down = (e: PointerEvent) => {
    if (e.button !== 0) return;
    const { x, y } = local(e);
    const hit = hitTest(host, x, y);
    if (!hit) {
      host.pin();
      return;
    }
    e.preventDefault();
    canvas.setPointerCapture?.(e.pointerId);
    const order = host.layout().slots.map((s) => s.name);
    drag = { hit, x0: x, y0: y, start: cloneSel(host.selection()), moved: false, order };
    canvas.style.cursor = hit.kind === "move" ? "grabbing" : CURSOR[hit.kind];
  };

  const move = (e: PointerEvent) => {
    const { x, y } = local(e);
    if (!drag) {
      const hit = hitTest(host, x, y);
      canvas.style.cursor = hit ? CURSOR[hit.kind] : "default";
      host.hover(hit ? -1 : x, hit ? -1 : y);
      host.over?.(hit);
      return;
    }
    if (drag.hit.kind === "header") {
      if (!drag.moved && Math.abs(x - drag.x0) < CLICK_PX) return;
      drag.moved = true;
      canvas.style.cursor = "grabbing";
      const layout = host.layout();
      const from = layout.slots.findIndex((s) => s.name === drag!.hit.axis);
      const next = movedOrder(layout, from, x);
      if (next.join("\u0000") !== layout.slots.map((s) => s.name).join("\u0000")) host.reorder(next, false);
      return;
    }
    if (!drag.moved && Math.abs(y - drag.y0) < CLICK_PX) return;
    if (drag.hit.kind === "lane" || drag.hit.kind === "empty") return;
    drag.moved = true;
    host.preview(dragged(y));
  };

  const up = (e: PointerEvent) => {
    if (!drag) return;
    if (drag.hit.kind === "header") {
      const d = drag;
      drag = null;
      canvas.style.cursor = "default";
      if (d.moved) host.reorder(host.layout().slots.map((s) => s.name), true);
      else host.flip(d.hit.axis);
      return;
    }
    const result = drag.moved ? dragged(local(e).y) : clicked();
    drag = null;
    canvas.style.cursor = "default";
    host.commit(tidy(result));
  };

  const dbl = (e: MouseEvent) => {
    const { x, y } = local(e);
    const hit = hitTest(host, x, y);
    if (!hit || hit.kind !== "move") return;
    host.commit(tidy(withoutSpan(host.selection(), hit.axis, hit.span)));
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
