// Wide tables on the page: the axis picker hooked to the `hidden` trait, and the sideways scroll of the
// chart with its hint ("axes 1–7 of 31 in view"). Widths and label thinning are wide.ts.

import { AxisPicker } from "./axispicker";
import type { ChartLayout } from "./chartlayout";
import type { WidgetModel } from "./model";

export interface WideHost {
  /** axes with something picked on them (they cannot be hidden) */
  withRange(): Set<string>;
  /** the shown axes changed: lay the chart out again */
  relayout(): void;
  /** the chart scrolled sideways */
  scrolled(): void;
}

export class WideChart {
  readonly picker: AxisPicker;
  private scroller: HTMLElement | null = null;
  private hint: HTMLElement | null = null;
  private cleanup: (() => void)[] = [];

  constructor(
    model: WidgetModel,
    private chart: ChartLayout,
    private host: WideHost,
  ) {
    this.picker = new AxisPicker({
      axes: () => chart.allAxes(),
      hidden: () => chart.hiddenAxes(),
      withRange: () => host.withRange(),
      setHidden: (names) => {
        model.set("hidden", names);
        model.save_changes();
        this.hiddenChanged();
      },
    });
    this.cleanup.push(() => this.picker.dispose());
  }

  /** Follow the scrolling of `scroller`, naming the axes in view in `hint`. */
  attach(scroller: HTMLElement, hint: HTMLElement) {
    this.scroller = scroller;
    this.hint = hint;
    const onScroll = () => {
      this.updateHint();
      this.host.scrolled();
    };
    scroller.addEventListener("scroll", onScroll, { passive: true });
    this.cleanup.push(() => scroller.removeEventListener("scroll", onScroll));
  }

  /** The `hidden` trait changed (here or from Python): read the shown axes and lay out again. */
  hiddenChanged() {
    this.chart.readOrder();
    this.picker.refresh();
    this.host.relayout();
  }

  /** Which axes are in view when the chart is wider than the page (else no hint). */
  updateHint() {
    const scroller = this.scroller;
    const hint = this.hint;
    if (!scroller || !hint) return;
    const x0 = scroller.scrollLeft;
    const x1 = x0 + scroller.clientWidth;
    const slots = this.chart.horizontal ? [] : this.chart.layout().slots;
    const inView = slots.map((s, i) => (s.x >= x0 && s.x <= x1 ? i : -1)).filter((i) => i >= 0);
    const all = inView.length === slots.length || inView.length === 0;
    hint.hidden = all;
    if (!all) hint.textContent = `axes ${inView[0] + 1}–${inView[inView.length - 1] + 1} of ${slots.length} in view ⇆`;
  }

  dispose() {
    for (const f of this.cleanup) f();
  }
}
