// The colour legend in the bar above the chart: category swatches, or the viridis ramp between the ends
// of the colour column.

import { toCss, viridis, type Colouring } from "./colour";
import type { AxisScale } from "./scales";

/** Fill `box` with the legend of `colours` (by column `by`; `scale`: that column's scale, if shown). */
export function renderLegend(box: HTMLElement, colours: Colouring, by: string, scale: AxisScale | undefined): void {
  const lg = colours.legend;
  box.replaceChildren();
  if (lg.kind === "none") return;
  const title = document.createElement("span");
  title.className = "axw-legend-title";
  title.textContent = `colour: ${by}`;
  box.append(title);
  if (lg.kind === "categories") {
    lg.labels.forEach((label, i) => {
      const item = document.createElement("span");
      item.className = "axw-legend-item";
      const swatch = document.createElement("span");
      swatch.className = "axw-swatch";
      swatch.style.background = toCss(lg.colours[i]);
      const text = document.createElement("span");
      text.textContent = label;
      item.append(swatch, text);
      box.append(item);
    });
    return;
  }
  const lo = document.createElement("span");
  const hi = document.createElement("span");
  lo.textContent = scale ? scale.format(lg.axis.lo) : "";
  hi.textContent = scale ? scale.format(lg.axis.hi) : "";
  const ramp = document.createElement("span");
  ramp.className = "axw-ramp";
  const stops = Array.from({ length: 9 }, (_, i) => toCss(viridis(i / 8))).join(",");
  ramp.style.background = `linear-gradient(to right,${stops})`;
  box.append(lo, ramp, hi);
}
