// Marks drawn over the overlay: the keyboard focus (a frame around the focused axis, and the band
// cursor on a category axis) and the small marker on the headers of the axes where the selected rows
// differ most from the others (`contrast_axes`, computed by the kernel with `w.contrast()`).

import type { Layout } from "./layout";
import type { AxisScale } from "./scales";
import type { Theme } from "./theme";

/** The keyboard focus: a dashed frame from the header to the missing-values lane, and the band cursor. */
export function drawFocus(ctx: CanvasRenderingContext2D, layout: Layout, scales: AxisScale[], axis: string, band: number, theme: Theme) {
  const i = layout.slots.findIndex((s) => s.name === axis);
  if (i < 0) return;
  const x = Math.round(layout.slots[i].x) + 0.5;
  ctx.save();
  ctx.strokeStyle = theme.fg;
  ctx.globalAlpha = 0.8;
  ctx.lineWidth = 1.5;
  ctx.setLineDash([4, 3]);
  const half = Math.max(10, Math.min(layout.grab + 4, 26));
  ctx.strokeRect(x - half, 2, 2 * half, layout.laneY + layout.laneHalf + 4 - 2);
  const sc = scales[i];
  if (sc.categorical && band >= 0 && band < sc.bands.length) {
    const b = sc.bands[band];
    ctx.setLineDash([]);
    ctx.lineWidth = 2;
    ctx.strokeRect(x - 11, b.y0 - 1, 22, b.y1 - b.y0 + 2);
  }
  ctx.restore();
}

/**
 * A short bar in the selection colour under the header of each axis in `axes` (most different first,
 * the first one strongest): the axes where the selected rows differ most from the rest.
 */
export function drawContrastMarks(ctx: CanvasRenderingContext2D, layout: Layout, axes: string[], theme: Theme) {
  ctx.save();
  axes.forEach((name, rank) => {
    const slot = layout.slots.find((s) => s.name === name);
    if (!slot) return;
    const x = Math.round(slot.x);
    ctx.globalAlpha = 0.95 - rank * 0.2;
    ctx.fillStyle = theme.bandEdge;
    if (layout.horizontal) ctx.fillRect(x - 7, layout.top - 10, 14, 3); // just before the axis starts
    else ctx.fillRect(x - 10, 38, 20, 3);
  });
  ctx.restore();
}
