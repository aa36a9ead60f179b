// Colour by kept selections: `color_by = "@saved"` colours each row by the first kept selection (the
// `saved` trait, in the order the groups were kept) that contains it, as `AxesWidget.labels()` does in
// Python; rows in no group are grey. Membership is evaluated on the page from the wire codes with the
// preview evaluator: exact for category, yes/no and missing-value picks, and for number/date ranges
// exact except for values within half a quantisation step (1/131,070 of the axis span) outside a
// range end, which may be counted in.

import { colouring, hexToRgb, OKABE_ITO, type Colouring, type RGB } from "./colour";
import type { Table } from "./data";
import { fromTrait, previewMask, type TraitRanges } from "./selection";

/** The `color_by` value that colours by kept selections (a column of that name takes precedence). */
export const SAVED_GROUPS = "@saved";

const NO_GROUP: RGB = [0.62, 0.62, 0.62];

/** Group index per row (first kept group that holds the row; groups.length for none). */
export function savedGroups(table: Table, saved: Record<string, TraitRanges> | null | undefined): { names: string[]; group: Uint8Array } {
  const names = Object.keys(saved ?? {}).slice(0, 255);
  const group = new Uint8Array(table.n).fill(Math.min(255, names.length));
  for (let g = names.length - 1; g >= 0; g--) {
    const { mask } = previewMask(table, fromTrait(table, saved![names[g]]));
    for (let i = 0; i < table.n; i++) if (mask[i]) group[i] = g;
  }
  return { names, group };
}

/** The colouring for `color_by = "@saved"`: Okabe–Ito per group (the eighth and later share grey). */
export function savedColouring(table: Table, saved: Record<string, TraitRanges> | null | undefined, single: RGB): Colouring {
  const { names, group } = savedGroups(table, saved);
  if (!names.length) return colouring(undefined, single);
  const palette: RGB[] = names.map((_, g) => (g < OKABE_ITO.length ? hexToRgb(OKABE_ITO[g]) : NO_GROUP));
  palette.push(NO_GROUP);
  const labels = names.slice(0, OKABE_ITO.length).concat(names.length > OKABE_ITO.length ? ["later groups"] : []);
  return {
    group,
    palette,
    legend: { kind: "categories", labels: [...labels, "in no group"], colours: [...palette.slice(0, labels.length), NO_GROUP] },
  };
}
