// Wide tables: the chart's width with a minimum spacing between axes (the page scrolls sideways when
// the axes do not fit), and label thinning (labels drop until the ones drawn do not collide; picked
// ones first).

/** Smallest distance between neighbouring axes (CSS px): room for tick labels, a histogram and a readout. */
export const MIN_AXIS_GAP = 64;

/**
 * Width of the chart (CSS px) for `axes` axes in a visible width: the visible width when the axes fit
 * at the minimum spacing, else wider (the chart then scrolls sideways). `margins`: the room left of the
 * first axis plus right of the last.
 */
export function chartWidth(visible: number, axes: number, margins: number): number {
  if (axes < 2) return visible;
  return Math.max(visible, Math.ceil(margins + (axes - 1) * MIN_AXIS_GAP));
}

/**
 * Which labels to draw along one axis so that no two are closer than `minGap` px (centre to centre).
 * `centres`: the y of each label; `keep`: labels that must be drawn (picked bands) — they are placed
 * first, then the others in order of `rank` (higher first; e.g. row counts), each only where it fits.
 * Returns the indexes to draw, in input order.
 */
export function thinLabels(centres: number[], minGap: number, keep: (i: number) => boolean = () => false, rank: (i: number) => number = () => 0): number[] {
  const idx = centres.map((_, i) => i);
  const kept = idx.filter(keep);
  const rest = idx.filter((i) => !keep(i)).sort((a, b) => rank(b) - rank(a) || a - b);
  const placed: number[] = [];
  const fits = (i: number) => placed.every((j) => Math.abs(centres[i] - centres[j]) >= minGap);
  for (const i of kept) placed.push(i); // the picked ones always, even when they crowd each other
  for (const i of rest) if (fits(i)) placed.push(i);
  return placed.sort((a, b) => a - b);
}
