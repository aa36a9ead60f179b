// What the lines layer is asked to draw now (a PaintJob) from the view's state: the rows shown, colours,
// opacity, curves and bundling, and in the scale tier's density view the kernel's pair counts over every
// row (drawn in the line colour, each sample row standing for N / k rows).

import { hexToRgb, type Colouring } from "./colour";
import type { Table } from "./data";
import type { Layout } from "./layout";
import type { WidgetModel } from "./model";
import { autoAlpha, type rowPlacement, type Theme } from "./overlay";
import type { Mode, PaintJob } from "./paint";
import type { AxisScale } from "./scales";
import { PairLookup, pairCountsOf } from "./scaletier";
import type { KernelSync } from "./sync";
import { DENSITY_ROWS } from "./wire";

export interface JobInput {
  model: WidgetModel;
  table: Table;
  layout: Layout;
  scales: AxisScale[];
  /** where rows sit on each axis (asked for in the lines view only) */
  placement: () => ReturnType<typeof rowPlacement>;
  spread: Float32Array;
  sync: KernelSync;
  theme: Theme;
  mode: Mode;
  /** the colour groups of the rows (asked for outside the scale tier only) */
  colouring: () => Colouring;
  dpr: number;
}

/** "lines" or "density": the user's choice (`view_mode`), or by row count when "auto". */
export function modeOf(model: WidgetModel, table: Table): Mode {
  const m = model.get("view_mode") ?? "auto";
  if (m === "lines" || m === "density") return m;
  return table.sampled || table.n > DENSITY_ROWS ? "density" : "lines";
}

export class LinesJobs {
  /** the kernel's pair counts (scale tier), decoded on first use */
  private kernelPairs: PairLookup | null = null;

  /** The kernel sent new pair counts: decode them when next needed. */
  forgetPairs() {
    this.kernelPairs = null;
  }

  /** What the lines layer should show now, drawn at a pixel ratio. */
  job(s: JobInput): PaintJob {
    const { model, table, layout, mode, theme } = s;
    const shown = s.sync.shown();
    const userOpacity = Number(model.get("opacity") ?? 0);
    const bundleBy = model.get("bundle_by");
    const bundleAxis = bundleBy ? layout.slots.findIndex((sl) => sl.name === bundleBy) : -1;
    const strength = Math.min(1, Math.max(0, Number(model.get("bundle_strength") ?? 0.5)));
    // scale tier, density view: the kernel's pair counts over every row, in the line colour
    const scaleTier = table.sampled && mode === "density";
    let kernel: PaintJob["kernel"] = null;
    if (scaleTier) {
      this.kernelPairs ??= new PairLookup(pairCountsOf(model.get("pair_counts")));
      kernel = { pairs: this.kernelPairs.forOrder(layout.slots.map((sl) => sl.name)), selectedFresh: s.sync.answers(this.kernelPairs.seq) };
    }
    const line = hexToRgb(theme.line);
    const rowWeight = table.total / Math.max(1, table.n);
    return {
      table,
      layout,
      scales: s.scales,
      // the density view does not place rows (hover computes the placement when it needs it)
      place: mode === "lines" ? s.placement() : [],
      spread: s.spread,
      mask: shown.mask,
      colouring: scaleTier ? { group: null, palette: [line], legend: { kind: "none" } } : s.colouring(),
      faded: hexToRgb(theme.faded),
      // in the scale tier a sample row stands for N / k rows: the opacity of as many rows as that
      opacity: userOpacity > 0 ? Math.min(1, userOpacity) : autoAlpha(scaleTier ? shown.count * rowWeight : shown.count),
      mode,
      follow: s.sync.dragging,
      kernel,
      rowWeight,
      curves: !!model.get("curves"),
      bundle: bundleAxis >= 0 ? { axis: bundleAxis, strength } : null,
      dpr: s.dpr,
      transpose: layout.horizontal,
    };
  }
}
