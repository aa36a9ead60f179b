// The widget's traits as the page sees them: one interface mirroring AxesWidget's traits (widget.py),
// and the slice of the anywidget model API the page uses (a stand-in can provide it in tests).

import type { AnyModel } from "@anywidget/types";
import type { RawTable } from "./data";
import type { TraitRanges } from "./selection";

/** One neighbouring pair's counts: little-endian uint32, (bins+1)^2 cells, cell = left_bin * (bins+1) + right_bin. */
export interface PairCountsEntry {
  left: string;
  right: string;
  all: DataView | ArrayBuffer | Uint8Array;
  /** rows selected by the kernel's exact mask (answers edit `seq` of the trait) */
  selected: DataView | ArrayBuffer | Uint8Array | null;
}

/** The `pair_counts` trait (see SCALE_CONTRACT / DEVELOPERS.md). */
export interface PairCountsTrait {
  bins: number;
  order: string[];
  /** the answered_seq the selected counts answer */
  seq: number;
  pairs: PairCountsEntry[];
}

/** The `rank_matrix` trait: values[i][j] between axes[i] and axes[j]; null (NaN) for no value. */
export interface RankMatrixTrait {
  axes: string[];
  values: (number | null)[][];
}

export interface Traits {
  /** kernel → page: the axes and their wire codes */
  table: RawTable;
  /** both: axis names in drawing order */
  order: string[];
  /** both: the selection in the kernel's form */
  ranges: TraitRanges;
  /** both: numeric axes on a log scale */
  log_axes: string[];
  /** both: axes drawn upside down */
  flipped: string[];
  /** kernel → page: exact number of selected rows */
  count: number;
  /** kernel → page: exact mask, packed little bit order */
  mask_bits: DataView | null;
  /** page → kernel: bumped with every ranges edit the page sends */
  edit_seq: number;
  /** page → kernel: the edit is an intermediate one */
  dragging: boolean;
  /** both: named selections */
  saved: Record<string, TraitRanges>;
  /** kernel → page: the edit_seq that count/mask_bits answer */
  answered_seq: number;
  height: number;
  /** page → kernel: ids of live views */
  views: string[];
  color_by: string;
  opacity: number;
  view_mode: "auto" | "lines" | "density";
  curves: boolean;
  bundle_by: string;
  bundle_strength: number;
  histograms: boolean;
  /** both: row pinned on the page, -1 for none */
  pinned: number;
  /** both: axes hidden from the page (never ones with a range) */
  hidden: string[];
  orientation: "vertical" | "horizontal";
  /** kernel → page: the error the last Python selection callback raised ("" for none); shown in a dismissible line */
  callback_error?: string;
  /** kernel → page: up to 3 axes where the selected rows differ most from the rest (w.contrast()); marked on their headers */
  contrast_axes?: string[];
  /** kernel → page, scale tier only (`{}` otherwise): binned pair counts between neighbouring axes over all rows */
  pair_counts?: PairCountsTrait | Record<string, never> | null;
  /** kernel → page, all tiers: Spearman's rho between every pair of axes (readouts between neighbours) */
  rank_matrix?: RankMatrixTrait | Record<string, never> | null;
  /** set only in an exported page: there is no kernel behind it */
  _standalone?: boolean;
}

/** What the page uses of the anywidget model. */
export type WidgetModel = Pick<AnyModel<Traits>, "get" | "set" | "on" | "off" | "save_changes"> & Partial<Pick<AnyModel<Traits>, "send">>;
