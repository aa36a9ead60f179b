// anywidget entry point: wiring only. Each output cell showing the widget gets its own View.

import type { WidgetModel } from "./model";
import { attachSharing } from "./snapshot";
import { ensureStyles } from "./style";
import { View } from "./view";

function render({ model, el }: { model: WidgetModel; el: HTMLElement }) {
  let view: View;
  try {
    view = new View(model, el);
  } catch (err) {
    // never a blank widget: say what went wrong
    const box = document.createElement("pre");
    box.className = "axw-error";
    box.textContent = `axeswidget could not draw this table: ${(err as Error)?.message ?? err}`;
    el.appendChild(box);
    ensureStyles(box);
    return () => box.remove();
  }
  // a page without a kernel (an exported file) has nobody to register with or answer
  const detach = model.get("_standalone") ? () => {} : attachSharing(model, view.root);
  return () => {
    detach();
    view.destroy();
  };
}

export default { render };
