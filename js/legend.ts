// The colour legend in the bar above the chart: category swatches, or the viridis ramp between the ends
// of the colour column; and the colouring of the rows it describes (`color_by`).

import { colouring, toCss, viridis, type Colouring, type RGB } from "./colour";
import type { Table } from "./data";
import { SAVED_GROUPS, savedColouring } from "./groups";
import type { WidgetModel } from "./model";
import type { AxisScale } from "./scales";

/**
 * The rows' colour groups by the `color_by` trait (the kept selections for "@saved"; `single`: the line
 * colour when there is no colour column), with the legend drawn into `box`.
 */
export function colouringWithLegend(model: WidgetModel, table: Table, single: RGB, box: HTMLElement, root: HTMLElement, scales: () => AxisScale[]): Colouring {
  const by = model.get("color_by");
  if (by === SAVED_GROUPS && !table.byName.has(by)) {
    const colours = savedColouring(table, model.get("saved"), single);
    renderLegend(box, colours, "kept groups", undefined);
    // test hook: rows per colour group (the last one: in no group)
    const counts = new Array(colours.palette.length).fill(0);
    for (const g of colours.group ?? []) counts[g]++;
    root.dataset.colourGroups = JSON.stringify(counts);
    return colours;
  }
  const colours = colouring(by ? table.byName.get(by) : undefined, single);
  renderLegend(box, colours, by, scales().find((x) => x.axis.name === by));
  return colours;
}

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
