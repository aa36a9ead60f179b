// The values box: one row's values, wrapped into columns inside a bounded box (a wide row never runs
// off the chart). Hovering shows it floating beside the pointer, inside the visible part of the chart;
// a pinned row's box docks below the chart (outside the canvases: never over the axes, never in a PNG).
// Its title is the row's index label as the kernel sent it (`df.loc[label]`), else its position.

import { indexLabel, type Table } from "./data";

/** Height of one line of the box (CSS px; the stylesheet's 11px × 1.35). */
const LINE_PX = 15;

/**
 * The box's title: the row's index label (what `df.loc` takes) and its position (what `w.pinned`
 * holds); the position only when the kernel sent no index.
 */
export function rowTitle(table: Table, row: number, pinned: boolean): string {
  const label = indexLabel(table, row);
  const name = label !== null ? `index ${label} · row ${row}` : `row ${row}`;
  return pinned ? `${name} · pinned` : name;
}

/** Lines per column so that the box fits in `height` px (title and padding included). */
export function linesPerColumn(height: number): number {
  return Math.max(4, Math.floor((height - 2 * LINE_PX - 10) / LINE_PX));
}

/**
 * Fill `box` with a title and the entries, split into columns of at most `perColumn` lines
 * (`perColumn` 0: one flowing grid, as wide as the box allows). Text goes in with textContent only.
 */
export function fillBox(box: HTMLElement, title: string, entries: { name: string; value: string }[], perColumn: number): void {
  const head = document.createElement("div");
  head.className = "axw-vb-title";
  head.textContent = title;
  const cols = document.createElement("div");
  cols.className = perColumn > 0 ? "axw-vb-cols" : "axw-vb-grid";
  const entry = (e: { name: string; value: string }) => {
    const line = document.createElement("div");
    line.className = "axw-vb-entry";
    line.title = `${e.name}: ${e.value}`;
    const name = document.createElement("span");
    name.className = "axw-vb-name";
    name.textContent = e.name;
    const value = document.createElement("span");
    value.className = "axw-vb-value";
    value.textContent = e.value;
    line.append(name, ": ", value); // reads "name: value" (also as text, e.g. copied or read aloud)
    return line;
  };
  if (perColumn > 0) {
    for (let i = 0; i < entries.length; i += perColumn) {
      const col = document.createElement("div");
      col.className = "axw-vb-col";
      col.append(...entries.slice(i, i + perColumn).map(entry));
      cols.append(col);
    }
  } else cols.append(...entries.map(entry));
  box.replaceChildren(head, cols);
}

/**
 * Place a floating box beside the pointer (stage px) on the side with more room, inside the visible
 * window [x0, x1] of the stage (the chart may scroll sideways) and its height.
 */
export function placeFloating(box: HTMLElement, pointer: { x: number; y: number }, visible: { x0: number; x1: number; h: number }): void {
  box.style.maxWidth = `${Math.max(120, visible.x1 - visible.x0 - 8)}px`;
  box.style.maxHeight = `${Math.max(60, visible.h - 8)}px`;
  const w = box.offsetWidth;
  const h = box.offsetHeight;
  let left = pointer.x + 16;
  if (left + w > visible.x1 - 4) left = pointer.x - 16 - w;
  left = Math.max(visible.x0 + 4, Math.min(left, visible.x1 - 4 - w));
  const top = Math.min(Math.max(4, pointer.y - h / 2), Math.max(4, visible.h - h - 4));
  box.style.left = `${left}px`;
  box.style.top = `${top}px`;
}

/**
 * A floating box with more columns than fit: drop the columns that would be cut off and say in the
 * title how many values are not shown (pinning the row shows them all, docked below the chart).
 */
export function trimToFit(box: HTMLElement): number {
  const cols = box.querySelector(".axw-vb-cols");
  if (!cols || box.scrollWidth <= box.clientWidth + 1) return 0;
  const right = box.getBoundingClientRect().right - 6;
  let dropped = 0;
  const all = Array.from(cols.children) as HTMLElement[];
  for (let i = all.length - 1; i >= 1 && all[i].getBoundingClientRect().right > right; i--) {
    dropped += all[i].childElementCount;
    all[i].remove();
  }
  if (dropped) {
    const note = document.createElement("span");
    note.className = "axw-vb-more";
    note.textContent = `+${dropped} more: click to pin the row and see all`;
    box.querySelector(".axw-vb-title")?.append(note);
  }
  return dropped;
}
