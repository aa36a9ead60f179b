// Where things go: axis positions and the vertical bands of the chart, in CSS pixels.

export interface AxisSlot {
  name: string;
  x: number;
}

export interface Layout {
  width: number;
  height: number;
  /** y of the top (largest value) and bottom (smallest value) of every axis */
  top: number;
  bottom: number;
  /** centre y of the missing-values lane, below a gap */
  laneY: number;
  laneHalf: number;
  slots: AxisSlot[];
  /** half-width of the zone around an axis that reacts to the pointer */
  grab: number;
  /**
   * Horizontal orientation: everything is laid out as if vertical (these logical coordinates), and
   * shown transposed — logical (x, y) is drawn at physical (y, x). Axes then run left to right
   * (with flipped scales, so values grow to the right) and are stacked top to bottom.
   */
  horizontal: boolean;
}

export const HEADER = 48;
/** logical header band in horizontal orientation: names sit left of the axes */
export const SIDE_HEADER = 128;
const FOOTER = 42;
const SIDE = 64;

/** Room left of the first axis plus right of the last (vertical orientation), CSS px. */
export function sideMargins(wideLeft: boolean): number {
  return 2 * SIDE + (wideLeft ? 36 : 0);
}

/** `wideLeft`: the first axis carries labels on its left (a category axis) and needs more room. */
export function computeLayout(width: number, height: number, order: string[], wideLeft = false, horizontal = false): Layout {
  const top = horizontal ? SIDE_HEADER : HEADER;
  const bottom = Math.max(top + 40, height - FOOTER);
  const laneY = bottom + 24;
  const k = order.length;
  const side = horizontal ? 34 : SIDE;
  const left = wideLeft && !horizontal ? SIDE + 36 : side;
  const inner = Math.max(10, width - left - side);
  const slots = order.map((name, i) => ({ name, x: k === 1 ? width / 2 : left + (i * inner) / (k - 1) }));
  const gap = k > 1 ? inner / (k - 1) : inner;
  return { width, height, top, bottom, laneY, laneHalf: 7, slots, grab: Math.max(8, Math.min(16, gap / 4)), horizontal };
}

/** Index of the axis whose grab zone contains x, or -1. */
export function axisAt(layout: Layout, x: number): number {
  let best = -1;
  let bestD = Infinity;
  layout.slots.forEach((s, i) => {
    const d = Math.abs(s.x - x);
    if (d <= layout.grab && d < bestD) {
      best = i;
      bestD = d;
    }
  });
  return best;
}
