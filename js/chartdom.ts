// The view's DOM skeleton: the bar (status, legend, scroll hint, mode switch), the sideways scroller with
// the stage (the two canvases, the progress bar, the floating values box) and the dock below the chart.

/** A new element of `tag` with a class. */
export function element<K extends keyof HTMLElementTagNameMap>(tag: K, className: string): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  el.className = className;
  return el;
}

/** A blank canvas for a w x h chart (CSS px) at `scale` device pixels per CSS pixel. */
export function blankCanvas(w: number, h: number, scale: number): HTMLCanvasElement {
  const c = document.createElement("canvas");
  c.width = Math.round(w * scale);
  c.height = Math.round(h * scale);
  return c;
}

export class ChartDom {
  readonly root = element("div", "axw-root");
  readonly bar = element("div", "axw-bar");
  readonly status = element("div", "axw-status");
  readonly legend = element("div", "axw-legend");
  readonly modeButton = element("button", "axw-mode");
  /** scrolls the chart sideways when its axes do not fit at the minimum spacing */
  readonly scroller = element("div", "axw-scroll");
  readonly stage = element("div", "axw-stage");
  /** the pinned row's values, docked below the chart */
  readonly dock = element("div", "axw-dock");
  /** "axes 1–7 of 31 in view": shown while the chart scrolls sideways */
  readonly scrollHint = element("span", "axw-scroll-hint");
  readonly linesCanvas = element("canvas", "axw-lines");
  readonly overlayCanvas = element("canvas", "axw-overlay");
  readonly progress = element("div", "axw-progress");
  /** the floating values box (hovered row, or the numbers of the axis under the pointer) */
  readonly tip = element("div", "axw-tip");

  /** Build the skeleton with the axis picker's button and panel in place. */
  constructor(picker: { button: HTMLElement; panel: HTMLElement }) {
    this.modeButton.type = "button";
    this.modeButton.title = "switch between one line per row and the density view";
    this.bar.append(this.status, this.legend, this.scrollHint, picker.button, this.modeButton);
    this.progress.setAttribute("role", "progressbar");
    this.stage.append(this.linesCanvas, this.overlayCanvas, this.progress, this.tip);
    this.scroller.append(this.stage);
    this.dock.hidden = true;
    this.root.append(this.bar, picker.panel, this.scroller, this.dock);
    this.overlayCanvas.setAttribute("role", "application");
    this.overlayCanvas.setAttribute("aria-roledescription", "parallel coordinates chart");
    this.overlayCanvas.setAttribute(
      "aria-label",
      "parallel coordinates chart: left and right arrows choose an axis, Enter makes a range, up and down arrows move it, Delete clears the axis",
    );
  }

  /** The selection tools: their box in the bar, the error line above the chart, the live summary last. */
  placeTools(tools: { box: HTMLElement; errorLine: HTMLElement; live: HTMLElement }) {
    this.bar.insertBefore(tools.box, this.legend);
    this.root.insertBefore(tools.errorLine, this.scroller);
    this.root.append(tools.live);
  }

  /** The progress bar at a fraction (null: hidden). */
  showProgress(fraction: number | null) {
    this.progress.style.display = fraction === null ? "none" : "block";
    if (fraction !== null) this.progress.style.width = `${Math.round(fraction * 100)}%`;
  }

  /** Size the stage and both canvases to the chart (CSS px) at a pixel ratio. */
  size(width: number, height: number, dpr: number) {
    this.stage.style.height = `${height}px`;
    this.stage.style.width = `${width}px`;
    this.root.dataset.scrolls = String(width > this.scroller.clientWidth + 1);
    for (const c of [this.linesCanvas, this.overlayCanvas]) {
      c.width = Math.round(width * dpr);
      c.height = Math.round(height * dpr);
      c.style.width = `${width}px`;
      c.style.height = `${height}px`;
    }
  }
}
