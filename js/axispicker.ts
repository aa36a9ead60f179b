// The axis picker: a compact button in the bar ("axes 29 / 31") opening a list with a check box per
// axis, to show or hide axes on the page (the `hidden` trait). An axis with a range cannot be hidden
// (its range would filter rows invisibly): its box is disabled until the range is cleared. The last
// shown axis cannot be hidden either.

export interface PickerHost {
  /** every axis, in drawing order (hidden ones included) */
  axes(): string[];
  hidden(): Set<string>;
  /** axes with something picked on them */
  withRange(): Set<string>;
  setHidden(names: string[]): void;
}

export class AxisPicker {
  readonly button = document.createElement("button");
  readonly panel = document.createElement("div");
  private filter = document.createElement("input");
  private list = document.createElement("div");
  private showAll = document.createElement("button");
  private cleanup: (() => void)[] = [];
  private drawn = "";

  constructor(private host: PickerHost) {
    this.button.type = "button";
    this.button.className = "axw-pick-button";
    this.button.title = "show or hide axes";
    this.button.setAttribute("aria-haspopup", "true");
    this.button.setAttribute("aria-expanded", "false");
    this.panel.className = "axw-pick";
    this.panel.hidden = true;
    this.filter.type = "search";
    this.filter.placeholder = "filter axes";
    this.filter.className = "axw-pick-filter";
    this.filter.setAttribute("aria-label", "filter axes by name");
    this.showAll.type = "button";
    this.showAll.className = "axw-pick-all";
    this.showAll.textContent = "show all";
    this.list.className = "axw-pick-list";
    const top = document.createElement("div");
    top.className = "axw-pick-top";
    top.append(this.filter, this.showAll);
    this.panel.append(top, this.list);
    this.button.addEventListener("click", () => this.toggle());
    this.filter.addEventListener("input", () => this.refresh());
    this.showAll.addEventListener("click", () => this.host.setHidden([]));
    const outside = (e: Event) => {
      if (this.panel.hidden) return;
      const path = e.composedPath();
      if (!path.includes(this.panel) && !path.includes(this.button)) this.toggle(false);
    };
    const escape = (e: KeyboardEvent) => {
      if (e.key === "Escape" && !this.panel.hidden) this.toggle(false);
    };
    document.addEventListener("pointerdown", outside, true);
    this.panel.addEventListener("keydown", escape);
    this.cleanup.push(() => document.removeEventListener("pointerdown", outside, true));
  }

  toggle(open = this.panel.hidden) {
    this.panel.hidden = !open;
    this.button.setAttribute("aria-expanded", String(open));
    if (open) {
      this.refresh();
      this.filter.focus();
    }
  }

  /** Redraw the button's count and, when open, the list. */
  refresh() {
    const axes = this.host.axes();
    const hidden = this.host.hidden();
    const shown = axes.filter((a) => !hidden.has(a)).length;
    this.button.textContent = `axes ${shown} / ${axes.length}`;
    this.showAll.disabled = shown === axes.length;
    if (this.panel.hidden) return;
    const ranged = this.host.withRange();
    const needle = this.filter.value.trim().toLowerCase();
    const key = JSON.stringify([axes, [...hidden], [...ranged], needle]);
    if (key === this.drawn && this.list.childElementCount) return;
    this.drawn = key;
    this.list.replaceChildren(
      ...axes
        .filter((a) => !needle || a.toLowerCase().includes(needle))
        .map((name) => {
          const row = document.createElement("label");
          row.className = "axw-pick-item";
          const box = document.createElement("input");
          box.type = "checkbox";
          box.checked = !hidden.has(name);
          box.dataset.axis = name;
          const locked = box.checked && (ranged.has(name) || shown === 1);
          box.disabled = locked;
          if (locked) row.title = ranged.has(name) ? "this axis has a range: clear it to hide the axis" : "one axis stays shown";
          box.addEventListener("change", () => {
            const next = new Set(this.host.hidden());
            if (box.checked) next.delete(name);
            else next.add(name);
            this.host.setHidden(axes.filter((a) => next.has(a)));
          });
          const text = document.createElement("span");
          text.textContent = name;
          row.append(box, text);
          return row;
        }),
    );
  }

  dispose() {
    for (const f of this.cleanup) f();
  }
}
